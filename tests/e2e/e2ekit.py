"""Matching an audit's findings against a simulated session's ground truth (``truth.json``).

The simulator writes, for every scripted incident, what happened on the noise-free signal: the first and last
sample past the limit (or inside the near-miss band), the peak, the limit in the protocol's unit and, for a
stop, the closed-form latency and distance (t = t_r + v0/a, d = v0·t_r + v0²/(2a); any kinematics text,
REFERENCES.md [V]).  The audit sees the logged signal instead: the same motion plus each channel's offset,
noise and quantisation (listed per column in ``truth.json``), grouped into events by the protocol's own rules.

The matching rule
-----------------
A finding matches a truth entry when it has the same **subject** (joint, contact; for a stop the trigger; for
a gap the stream), the same **quantity** and direction, the kind the entry implies, and when its **times** and
**values** agree within what the sampling, the sensors and the protocol's declared thresholds allow:

* ``Δt``: one sample period of the entry's stream.
* ``ε``: the sensor error of the logged channel, ``|offset| + 4σ + step`` from the truth's sensor model (for
  a force, the norm over its axes).  Where the signal crosses a threshold with slope ``s`` (fitted to the
  logged samples around the crossing), ``ε`` moves the crossing by ``ε/|s|``.
* start: ``|t_start(audit) − t_start(truth)| ≤ Δt + ε/|s|``, plus half the derivative window when a speed is
  derived from position (the window is centred: no phase delay, but its corner spreads over half a window).
  The **minimum event duration** delays no start (an event keeps its first sample); it only drops shorter
  runs, so every scripted run here is checked to last at least that long.
* end: the **hysteresis** keeps an event open until the value falls the hysteresis band below the
  threshold (``audit.hysteresis`` × the layer's span for a range limit, × the limit for speed and force, × the
  level for sustained force).  The audit's end must lie between ``t_end(truth) − Δt − ε/|s|`` and the first
  logged sample after it that is past the release level by more than ``ε``, plus ``Δt``.
* values: the peak within ``ε`` of the truth's (a sustained-force duration within the start and end
  allowances); the limit equal to the truth's effective limit (the participant's cautions applied).
* stops: trigger time within ``Δt``; latency (request to standstill) and torque-off time within ``Δt`` of the
  closed form (the brief's "one sample period"); each joint's distance within two position readings' error
  (``2·(4σ + |offset|)`` cancels to ``8σ``), one resolution step, one sample of travel at ``v0`` and the
  travel below the standstill speed, ``v_s²/(2a)``, which comes after standstill is declared; the predicted
  distance within ``(t_r + v0/a)·(4σ_v + step_v)`` of the closed form (it rests on one noisy speed sample).
  Besides the latency, torque-off and distance entries, each scripted stop yields one stop-category finding
  (A204), expected with the truth's category and torque-off time.
* gaps: start, end and length within ``Δt``.

"Exactly the scripted incidents": each expectation is met by exactly one finding, and no finding is left over
at any severity.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pyarrow.parquet as pq

from bracer.protocol.load import load_protocol
from bracer.protocol.model import Protocol
from bracer.protocol.resolve import resolve
from bracer.units import parse_unit

SIGMAS = 4.0


def convert(value: float, unit: str, to: str) -> float:
    return value * parse_unit(unit)[0] / parse_unit(to)[0]


@dataclass(frozen=True)
class DemoRun:
    """A run of ``bracer demo``: its folder, exit code, printed output and manifest (bracer-demo.json)."""

    folder: Path
    exit_code: int
    output: str
    manifest: dict[str, Any]

    def session(self, participant: str, session: str) -> dict[str, Any]:
        return next(
            s
            for s in self.manifest["sessions"]
            if s["participant"] == participant and s["session"] == session
        )


@dataclass
class Session:
    """One simulated session as the tests read it back: truth, audit record, logs and effective protocol."""

    folder: Path
    truth: dict[str, Any]
    audit: dict[str, Any]
    protocol: Protocol  # effective limits of the session's participant
    _columns: dict[tuple[str, str], np.ndarray] = field(default_factory=dict)

    @classmethod
    def load(cls, folder: Path) -> Session:
        truth = json.loads((folder / "truth.json").read_text(encoding="utf-8"))
        audit = json.loads((folder / "audit.json").read_text(encoding="utf-8"))
        loaded = load_protocol(truth["protocol"]["path"])
        return cls(folder, truth, audit, resolve(loaded.protocol, truth["participant"]).protocol)

    @property
    def findings(self) -> list[dict[str, Any]]:
        return list(self.audit["findings"])

    def stream(self, name: str) -> dict[str, Any]:
        return next(s for s in self.truth["streams"] if s["name"] == name)

    def period(self, stream: str) -> float:
        return 1.0 / float(self.stream(stream)["sample_rate"])

    def column(self, stream: str, column: str) -> np.ndarray:
        key = (stream, column)
        if key not in self._columns:
            table = pq.read_table(self.folder / self.stream(stream)["file"], columns=[column])
            self._columns[key] = table.column(column).to_numpy().astype(np.float64)
        return self._columns[key]

    def time(self, stream: str) -> np.ndarray:
        return self.column(stream, self.stream(stream)["time_column"])

    def sensor(self, column: str) -> dict[str, Any]:
        return next(c for c in self.truth["channels"] if c["column"] == column)

    def error(self, column: str) -> float:
        """Sensor error bound of a logged column, in its unit: |offset| + 4 sigma + step."""
        c = self.sensor(column)
        return abs(float(c["offset"])) + SIGMAS * float(c["noise"]) + float(c["step"])


@dataclass(frozen=True)
class Signal:
    """The logged signal an entry is about, in the entry's unit, with its sensor error bound."""

    t: np.ndarray
    x: np.ndarray
    error: float
    derived_window: float  # s: half a derivative window when the speed is derived from position, else 0


def signal(s: Session, e: dict[str, Any]) -> Signal:
    """Position, speed or force magnitude of an entry, from the logs (upper direction positive)."""
    t = s.time(e["stream"])
    cols = e["columns"]
    sign = -1.0 if e.get("direction") == "negative" else 1.0
    unit = s.sensor(cols[0])["unit"]
    if e["quantity"] in ("force", "pressure", "sustained_force"):
        f = np.sqrt(sum(s.column(e["stream"], c) ** 2 for c in cols))
        err = float(np.sqrt(sum(s.error(c) ** 2 for c in cols)))
        if e["quantity"] == "pressure":
            area = s.protocol.contacts[e["subject"]].area.si  # m²
            to = parse_unit(e["unit"])[0]
            return Signal(t, f * parse_unit(unit)[0] / area / to, err * parse_unit(unit)[0] / area / to, 0.0)
        target = e["level_unit"] if e["quantity"] == "sustained_force" else e["unit"]
        return Signal(t, convert(1.0, unit, target) * f, convert(err, unit, target), 0.0)
    x = s.column(e["stream"], cols[0])
    err = s.error(cols[0])
    half = 0.0
    if e["quantity"] == "speed" and s.sensor(cols[0])["kind"] == "position":
        # speed derived from position, as the audit does when no velocity channel is logged
        window = s.protocol.audit.derivative_window.si
        half = window / 2
        dt = s.period(e["stream"])
        x = np.gradient(x, dt)
        err = err * np.sqrt(2) / dt  # a difference quotient's error; generous against a Savitzky-Golay fit
        unit = f"{unit}/s"
    return Signal(t, sign * convert(1.0, unit, e["unit"]) * x, convert(err, unit, e["unit"]), half)


def crossing_time_spread(sig: Signal, when: float, samples: int = 5) -> float:
    """How far the sensor error moves a threshold crossing at ``when``: ε / |slope| (slope fitted to the
    logged samples within ``samples`` either side)."""
    i = int(np.searchsorted(sig.t, when))
    lo, hi = max(0, i - samples), min(sig.t.size, i + samples + 1)
    slope = np.polyfit(sig.t[lo:hi] - sig.t[i], sig.x[lo:hi], 1)[0]
    return float(sig.error / abs(slope)) if slope != 0 else float("inf")


def _range_layer(p: Protocol, joint: str, layer: str, unit: str) -> tuple[float, float]:
    """(min, max) of a protocol range layer (planned, device, mechanical), in ``unit``."""
    b = p.joints[joint].range.layer(layer)  # type: ignore[arg-type]
    assert b is not None, f"{joint}: no range layer '{layer}' (a participant-range entry needs its own rule)"
    return b.min.to(unit), b.max.to(unit)


def near_miss_band(p: Protocol, e: dict[str, Any]) -> float:
    """Width of the near-miss band of the entry's limit, in its unit: the wider of ``fraction`` × base and
    ``absolute`` (base: the layer's span for a range, the limit otherwise), as the protocol format says."""
    margin = getattr(p.near_miss, e["quantity"])
    base = abs(e["limit"])
    if e["quantity"] == "position":
        lo, hi = _range_layer(p, e["subject"], e["layer"].split(".")[0], e["unit"])
        base = hi - lo
    widths = [0.0]
    if margin.fraction is not None:
        widths.append(margin.fraction * base)
    if margin.absolute is not None:
        widths.append(margin.absolute.to(e["unit"]))
    return max(widths)


def hysteresis_band(p: Protocol, e: dict[str, Any]) -> float:
    h = p.audit.hysteresis
    if e["quantity"] == "position":
        lo, hi = _range_layer(p, e["subject"], e["layer"].split(".")[0], e["unit"])
        return h * (hi - lo)
    if e["quantity"] == "sustained_force":
        return h * e["level"]
    return h * abs(e["limit"])


def threshold(p: Protocol, e: dict[str, Any]) -> float:
    """The level whose crossing starts the entry's event, in the entry's unit, upper direction positive."""
    if e["quantity"] == "sustained_force":
        return e["level"]
    limit = e["limit"] if e.get("direction") != "negative" or e["quantity"] != "position" else -e["limit"]
    if e["kind"] == "near_miss":
        return limit - near_miss_band(p, e)
    return limit


@dataclass(frozen=True)
class Expectation:
    """What one truth entry (or one scripted stop's category) should produce, and why a finding does not."""

    label: str
    entry: dict[str, Any]
    category: bool = False  # the A204 expectation of a scripted stop

    def mismatch(self, s: Session, f: dict[str, Any]) -> str | None:
        """None when ``f`` meets this expectation, else the first reason it does not."""
        if self.category:
            return _category(s, self.entry, f)
        e = self.entry
        q = e["quantity"]
        if f["quantity"] != q:
            return "quantity"
        if q in ("stop_latency", "torque_off"):
            return _stop_timing(s, e, f)
        if q == "stop_distance":
            return _stop_distance(s, e, f)
        if q == "gap":
            return _gap(s, e, f)
        return _event(s, e, f)


def expectations(s: Session) -> list[Expectation]:
    out = []
    for e in s.truth["incidents"]:
        out.append(Expectation(f"{e['incident']} {e['subject']} {e['quantity']} at {e['t_start']:.3f} s", e))
        if e["quantity"] == "stop_latency":
            out.append(
                Expectation(f"{e['incident']} stop category at {e['t_start']:.3f} s", e, category=True)
            )
    return out


def _close(a: float | None, b: float, tol: float) -> bool:
    return a is not None and abs(a - b) <= tol


def _event(s: Session, e: dict[str, Any], f: dict[str, Any]) -> str | None:
    p = s.protocol
    if f["kind"] != e["kind"] or f["subject"] != e["subject"]:
        return "kind or subject"
    if e.get("direction") and f["direction"] not in (None, e["direction"]):
        return "direction"
    sig = signal(s, e)
    dt = s.period(e["stream"])
    spread_start = crossing_time_spread(sig, e["t_start"])
    spread_end = crossing_time_spread(sig, e["t_end"])
    if not _close(f["t_start"], e["t_start"], dt + spread_start + sig.derived_window):
        return (
            f"start {f['t_start']} vs {e['t_start']} (allowed {dt + spread_start + sig.derived_window:.4f} s)"
        )
    release = threshold(p, e) - hysteresis_band(p, e) - sig.error
    after = np.flatnonzero((sig.t > e["t_end"]) & (sig.x < release))
    latest = (sig.t[after[0]] if after.size else sig.t[-1]) + dt + sig.derived_window
    earliest = e["t_end"] - dt - spread_end - sig.derived_window
    if f["t_end"] is None or not earliest <= f["t_end"] <= latest:
        return f"end {f['t_end']} outside [{earliest:.4f}, {latest:.4f}] s"
    if e["quantity"] == "sustained_force":
        allowed = 2 * dt + spread_start + (latest - e["t_end"])
        if not _close(f["peak"], e["peak"], allowed):
            return f"held {f['peak']} s vs {e['peak']} s (allowed {allowed:.4f} s)"
    elif not _close(f["peak"], e["peak"], sig.error):
        return f"peak {f['peak']} vs {e['peak']} {e['unit']} (allowed {sig.error:.4g})"
    if f["unit"] != e["unit"] or not _close(f["limit"], e["limit"], 1e-9 * max(1.0, abs(e["limit"]))):
        return f"limit {f['limit']} {f['unit']} vs {e['limit']} {e['unit']}"
    return None


def _stop_timing(s: Session, e: dict[str, Any], f: dict[str, Any]) -> str | None:
    if (f["extra"] or {}).get("trigger") != e["subject"]:
        return "trigger"
    dt = s.period(e["stream"])
    if f["kind"] != ("violation" if e["exceeds"] else "stop"):
        return f"kind {f['kind']} for a stop that {'exceeds' if e['exceeds'] else 'keeps'} its limit"
    if not _close(f["t_start"], e["t_start"], dt):
        return f"trigger at {f['t_start']} vs {e['t_start']} s"
    if not _close(f["peak"], e["peak"], convert(dt, "s", e["unit"])):
        return f"{e['quantity']} {f['peak']} vs {e['peak']} {e['unit']} (allowed one sample, {dt} s)"
    if f["unit"] != e["unit"] or not _close(f["limit"], e["limit"], 1e-9):
        return "limit"
    return None


def _stop_distance(s: Session, e: dict[str, Any], f: dict[str, Any]) -> str | None:
    if f["kind"] != "stop" or f["subject"] != e["subject"]:
        return "kind or subject"
    if f["severity"] != ("warning" if e["exceeds"] else "info"):
        return (
            f"severity {f['severity']} for a stop that {'exceeds' if e['exceeds'] else 'keeps'} its distance"
        )
    dt = s.period(e["stream"])
    if not _close(f["t_start"], e["t_start"], dt):
        return "trigger time"
    j = next(j for j in e["stop"]["joints"] if j["joint"] == e["subject"])
    unit = e["unit"]
    pos = s.sensor(e["columns"][0])
    v0 = abs(convert(j["v0"], j["speed_unit"], f"{unit}/s"))
    a = convert(j["deceleration"], j["deceleration_unit"], f"{unit}/s^2")
    below = j["latency"] - j["latency_to_standstill_speed"]  # s spent below the standstill speed
    measured = (
        convert(2 * SIGMAS * pos["noise"] + pos["step"], pos["unit"], unit) + v0 * dt + 0.5 * a * below**2
    )
    if not _close(f["peak"], e["peak"], measured):
        return f"distance {f['peak']} vs {e['peak']} {unit} (allowed {measured:.4g})"
    vel_column = next(
        (c for c in s.truth["channels"] if c["subject"] == e["subject"] and c["kind"] == "velocity"), None
    )
    if vel_column is not None:
        t_stop = e["stop"]["reaction_time"] + v0 / a
        err_v = convert(SIGMAS * vel_column["noise"] + vel_column["step"], vel_column["unit"], f"{unit}/s")
        if not _close(f["limit"], e["limit"], t_stop * err_v):
            return f"predicted {f['limit']} vs {e['limit']} {unit} (allowed {t_stop * err_v:.4g})"
    return None


def _category(s: Session, e: dict[str, Any], f: dict[str, Any]) -> str | None:
    stop = e["stop"]
    extra = f["extra"] or {}
    dt = s.period(e["stream"])
    if f["quantity"] != "stop_category" or extra.get("trigger") != stop["trigger"]:
        return "quantity or trigger"
    if f["kind"] != "stop" or extra.get("category") != stop["category"]:
        return f"category {extra.get('category')} ({f['kind']}) vs {stop['category']}"
    if not _close(f["t_start"], stop["t_trigger"], dt):
        return "trigger time"
    if stop["torque_off_latency"] is not None and not _close(f["peak"], stop["torque_off_latency"], dt):
        return f"torque off after {f['peak']} s vs {stop['torque_off_latency']} s"
    return None


def _gap(s: Session, e: dict[str, Any], f: dict[str, Any]) -> str | None:
    if f["kind"] != "data_quality" or (f["extra"] or {}).get("stream") != e["subject"]:
        return "kind or stream"
    dt = s.period(e["stream"])
    if not (_close(f["t_start"], e["t_start"], dt) and _close(f["t_end"], e["t_end"], dt)):
        return f"gap {f['t_start']}-{f['t_end']} vs {e['t_start']}-{e['t_end']} s"
    if not _close(f["peak"], e["peak"], 2 * dt):
        return "length"
    return None


def match(s: Session) -> tuple[list[str], list[dict[str, Any]]]:
    """Pair each expectation with the one finding that meets it.

    Returns the problems (an expectation met by no finding, or by several, with the nearest reasons) and the
    findings no expectation took.
    """
    findings = s.findings
    taken: set[int] = set()
    problems: list[str] = []
    for exp in expectations(s):
        reasons = {i: exp.mismatch(s, f) for i, f in enumerate(findings) if i not in taken}
        hits = [i for i, r in reasons.items() if r is None]
        if len(hits) == 1:
            taken.add(hits[0])
            continue
        if not hits:
            near = [
                f"{findings[i]['code']}: {r}"
                for i, r in reasons.items()
                if r
                not in ("quantity", "kind or subject", "trigger", "quantity or trigger", "kind or stream")
            ]
            problems.append(f"{exp.label}: no finding meets it ({'; '.join(near) or 'none of its kind'})")
        else:
            problems.append(
                f"{exp.label}: {len(hits)} findings meet it ({[findings[i]['code'] for i in hits]})"
            )
    return problems, [f for i, f in enumerate(findings) if i not in taken]
