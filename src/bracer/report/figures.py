"""The report's plots, built from the session's signals and the findings.

* per joint: position with every range layer drawn as zones beyond its limits and the participant's range as a
  dotted line; speed and torque against their limits (signed: the positive-direction limit above zero, the
  negative-direction one below);
* per contact: the force magnitude against its quasi-static and transient limits, with the sustained-force
  level and the force each pressure limit corresponds to (pressure × contact area);
* a zoom on each exceedance (its span hatched) and on each stop (every joint's speed and torque with the
  standstill and torque-off levels, the trigger, standstill and torque-off times);
* the stop timings against their budgets.

Every line is decimated to the plot's pixel columns keeping each column's minimum and maximum
(:mod:`bracer.report.decimate`), so no peak can vanish however long the session.  Samples the data-quality
pass found unfit to analyse are not drawn: the line has a gap there.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from bracer.audit.checks._common import Unavailable
from bracer.audit.checks._contact import contact_force
from bracer.audit.checks._joint import angle_unit, joint_signal, speed_unit
from bracer.audit.context import AuditContext
from bracer.protocol.model import Contact, Joint
from bracer.protocol.resolve import participant_range
from bracer.report.decimate import decimate
from bracer.report.document import Figure, FindingRow, StopRow
from bracer.report.plots import PLOT_COLUMNS, Band, Bar, BarChart, Chart, Level, Marker, Panel, Series, Span
from bracer.report.wording import value
from bracer.units import parse_unit

__all__ = ["MAX_ZOOMS", "FigureSet", "build_figures"]

#: At most this many zoom plots of exceedances (the findings table lists every one).
MAX_ZOOMS = 40

_JOINT_PANEL = {
    "position": "position",
    "locked_motion": "position",
    "speed": "speed",
    "acceleration": "speed",
    "torque": "torque",
}
_CONTACT_Q = ("force", "pressure", "sustained_force")
#: ISO/TS 15066 body-region keys in words
_REGION_WORDS = {
    "skull_forehead": "skull and forehead",
    "back_shoulders": "back and shoulders",
    "upper_arm_elbow": "upper arm and elbow",
    "lower_arm_wrist": "lower arm and wrist",
    "hand_fingers": "hand and fingers",
    "thigh_knee": "thigh and knee",
    "lower_leg": "lower leg",
}
_STOP_Q = ("stop_latency", "torque_off", "stop_category", "stop_distance")


@dataclass(frozen=True, eq=False)
class FigureSet:
    figures: tuple[Figure, ...]
    #: finding ref -> figure id; stop ref -> figure id
    links: dict[str, str]
    notes: tuple[str, ...]


def _factor(unit: str) -> float:
    return parse_unit(unit)[0]


def _torque_unit(joint: Joint) -> str:
    for layer in ("planned", "device", "mechanical"):
        d = joint.torque.layer(layer)
        if d is not None:
            return str(d.get("positive").unit)
    return joint.channels.torque.unit if joint.channels.torque is not None else "N*m"


def _accel_unit(joint: Joint) -> str:
    for layer in ("planned", "device", "mechanical"):
        d = joint.acceleration.layer(layer)
        if d is not None:
            return str(d.get("positive").unit)
    return "deg/s^2"


def _line(
    t: np.ndarray,
    x: np.ndarray,
    valid: np.ndarray,
    t0: float,
    t1: float,
    gap: float | None,
    label: str,
    style: int = 0,
) -> Series:
    d = decimate(t, x, valid, t0, t1, PLOT_COLUMNS, gap)
    return Series(label, tuple(d.pieces()), style)


class _Builder:
    def __init__(self, ctx: AuditContext, findings: Sequence[FindingRow], stops: Sequence[StopRow]) -> None:
        self.ctx = ctx
        self.protocol = ctx.resolution.protocol
        self.findings = findings
        self.stops = stops
        self.figures: list[Figure] = []
        self.links: dict[str, str] = {}
        self.notes: list[str] = []
        starts = [
            float(s.time[np.isfinite(s.time)][0])
            for s in ctx.session.streams.values()
            if np.isfinite(s.time).any()
        ]
        ends = [
            float(s.time[np.isfinite(s.time)][-1])
            for s in ctx.session.streams.values()
            if np.isfinite(s.time).any()
        ]
        self.t0 = min(starts, default=0.0)
        self.t1 = max(ends, default=1.0)
        if self.t1 <= self.t0:
            self.t1 = self.t0 + 1.0
        self.home = self._homes()

    def _homes(self) -> dict[str, str]:
        """For each finding without a joint or contact (e.g. a gap in a stream), the overview that shows it:
        the first joint, else the first contact, logged on the finding's stream."""
        first: dict[str, str] = {}
        for name, joint in self.protocol.joints.items():
            ref = joint.channels.position or joint.channels.velocity or joint.channels.torque
            if ref is not None:
                first.setdefault(ref.stream, f"joint-{name}")
        for name, contact in self.protocol.contacts.items():
            if contact.channels.force is not None:
                first.setdefault(contact.channels.force.stream, f"contact-{name}")
        homes = {}
        for f in self.findings:
            stream = f.get("stream")
            if f.subject is None and f.kind in ("data_quality", "not_assessable") and stream in first:
                homes[f.ref] = first[stream]
        return homes

    def gap(self, stream: str) -> float | None:
        s = self.ctx.session.streams.get(stream)
        if s is None or s.expected_rate <= 0:
            return None
        return self.protocol.audit.gap_tolerance / s.expected_rate

    # ------------------------------------------------------------------------------------ joint panels

    def joint_limits(self, joint: Joint, name: str, panel: str, unit: str) -> tuple[list[Band], list[Level]]:
        f = _factor(unit)
        bands: list[Band] = []
        levels: list[Level] = []
        if panel == "position":
            for layer in ("planned", "device", "mechanical"):
                b = joint.range.layer(layer)
                if b is None:
                    continue
                hi, lo = b.max.si / f, b.min.si / f
                bands.append(Band(hi, +1, layer, f"{layer} {value(hi, unit)}"))  # type: ignore[arg-type]
                bands.append(Band(lo, -1, layer, f"{layer} {value(lo, unit)}"))  # type: ignore[arg-type]
            pr = participant_range(self.protocol, name, self.ctx.resolution.participant)
            for q, src in ((pr.max, pr.max_source), (pr.min, pr.min_source)):
                if q is not None:
                    v = q.si / f
                    levels.append(Level(v, "participant", f"participant {value(v, unit)} ({src})"))
            return bands, levels
        layers = {"speed": joint.speed, "torque": joint.torque, "acceleration": joint.acceleration}[panel]
        for layer in ("planned", "device", "mechanical"):
            d = layers.layer(layer)
            if d is None:
                continue
            pos, neg = d.get("positive").si / f, d.get("negative").si / f
            bands.append(Band(pos, +1, layer, f"{layer} +{value(pos, unit)}"))  # type: ignore[arg-type]
            bands.append(Band(-neg, -1, layer, f"{layer} −{value(neg, unit)}"))  # type: ignore[arg-type]
        return bands, levels

    def joint_panel(
        self, name: str, panel: str, t0: float, t1: float, spans: Sequence[Span], markers: Sequence[Marker]
    ) -> Panel:
        joint = self.protocol.joints[name]
        unit = {
            "position": angle_unit(joint),
            "speed": speed_unit(joint),
            "torque": _torque_unit(joint),
            "acceleration": _accel_unit(joint),
        }[panel]
        bands, levels = self.joint_limits(joint, name, panel, unit)
        label = f"{panel} ({unit})"
        sig = joint_signal(self.ctx, name, panel)  # type: ignore[arg-type]
        if isinstance(sig, Unavailable):
            return Panel(
                label,
                (),
                tuple(bands),
                tuple(levels),
                tuple(spans),
                tuple(markers),
                note=f"{panel} not available: {sig.reason}",
            )
        series = _line(
            sig.t,
            sig.x / _factor(unit),
            sig.valid,
            t0,
            t1,
            self.gap(sig.stream),
            "derived" if sig.derived else "",
        )
        return Panel(label, (series,), tuple(bands), tuple(levels), tuple(spans), tuple(markers))

    def spans_for(
        self, subject: str, panel_of: dict[str, str], panel: str, zoom: str | None = None
    ) -> list[Span]:
        out = []
        for f in self.findings:
            if f.subject != subject or f.t_start is None or f.kind not in ("violation", "near_miss"):
                continue
            if panel_of.get(f.quantity or "") != panel:
                continue
            if zoom is not None and f.ref != zoom and f.kind != "violation":
                continue
            t_end = f.t_end if f.t_end is not None else f.t_start
            out.append(Span(f.t_start, t_end, f.ref, "violation" if f.kind == "violation" else "near_miss"))
        return out

    def stop_markers(self, t0: float, t1: float, detail: bool = False) -> list[Marker]:
        out = []
        for s in self.stops:
            if t0 <= s.t_trigger <= t1:
                out.append(Marker(s.t_trigger, s.ref, "trigger"))
            if detail and s.t_standstill is not None:
                out.append(Marker(s.t_standstill, "standstill", "standstill"))
            if detail and s.torque_off is not None and s.torque_unit:
                t_off = s.t_trigger + s.torque_off * _factor(s.torque_unit)
                out.append(Marker(t_off, "torque off", "torque_off"))
        return out

    def joint_overview(self, name: str) -> None:
        joint = self.protocol.joints[name]
        panels = []
        markers = self.stop_markers(self.t0, self.t1)
        fid = f"joint-{name}"
        notes = self.stream_notes(fid)
        for panel in ("position", "speed", "torque"):
            spans = self.spans_for(name, _JOINT_PANEL, panel) + notes
            panels.append(self.joint_panel(name, panel, self.t0, self.t1, spans, markers))
        self.figures.append(
            Figure(
                fid,
                f"Joint {name}: position, speed and torque",
                f"{joint.motion}; + {joint.positive} / − {joint.negative}. Position against every range "
                "layer and the participant's range; speed and torque against their limits in each direction.",
                Chart(tuple(panels), self.t0, self.t1),
                "overview",
            )
        )
        for f in self.findings:
            if f.subject == name and f.ref not in self.links:
                self.links[f.ref] = fid

    def stream_notes(self, fid: str) -> list[Span]:
        """Spans of the session-wide findings (a gap, dropped rows …) shown on figure ``fid``: each is drawn
        on the first overview of a joint or contact logged on its stream, and linked to it."""
        return [
            Span(f.t_start, f.t_end if f.t_end is not None else f.t_start, f.ref, "note")
            for f in self.findings
            if self.home.get(f.ref) == fid and f.t_start is not None
        ]

    # ------------------------------------------------------------------------------------ contact panels

    def contact_limits(self, contact: Contact) -> tuple[list[Band], list[Level], str]:
        unit = str(contact.force.quasi_static.unit)
        f = _factor(unit)
        qs = contact.force.quasi_static.si / f
        bands = [Band(qs, +1, "planned", f"quasi-static {value(qs, unit)}")]
        levels: list[Level] = []
        if contact.force.transient is not None:
            tr = contact.force.transient.si / f
            bands.append(Band(tr, +1, "device", f"transient {value(tr, unit)}"))
        if contact.sustained is not None:
            lv = contact.sustained.level.si / f
            levels.append(
                Level(lv, "reference", f"sustained {value(lv, unit)} ≤ {contact.sustained.max_duration}")
            )
        if contact.pressure is not None:
            for item in ("quasi_static", "transient"):
                p = getattr(contact.pressure, item)
                if p is not None:
                    eq = p.si * contact.area.si / f
                    words = "quasi-static" if item == "quasi_static" else "transient"
                    levels.append(Level(eq, "near", f"pressure {words} ≙ {value(eq, unit)}"))
        return bands, levels, unit

    def contact_panel(
        self, name: str, t0: float, t1: float, spans: Sequence[Span], markers: Sequence[Marker]
    ) -> Panel:
        contact = self.protocol.contacts[name]
        bands, levels, unit = self.contact_limits(contact)
        label = f"force ({unit})"
        cf = contact_force(self.ctx, name)
        if isinstance(cf, Unavailable):
            return Panel(
                label,
                (),
                tuple(bands),
                tuple(levels),
                tuple(spans),
                tuple(markers),
                note=f"force not available: {cf.reason}",
                y_include=(0.0,),
            )
        series = _line(cf.t, cf.f / _factor(unit), cf.valid, t0, t1, self.gap(cf.stream), "")
        return Panel(
            label, (series,), tuple(bands), tuple(levels), tuple(spans), tuple(markers), y_include=(0.0,)
        )

    def contact_overview(self, name: str) -> None:
        contact = self.protocol.contacts[name]
        panel_of = dict.fromkeys(_CONTACT_Q, "force")
        fid = f"contact-{name}"
        spans = self.spans_for(name, panel_of, "force") + self.stream_notes(fid)
        panel = self.contact_panel(name, self.t0, self.t1, spans, self.stop_markers(self.t0, self.t1))
        region = _REGION_WORDS.get(contact.body_region, contact.body_region.replace("_", " "))
        if contact.specific_area:
            region += f" ({contact.specific_area})"
        self.figures.append(
            Figure(
                fid,
                f"Contact {name}: force magnitude",
                f"{contact.kind} on the {region}, area {contact.area}. Force against the quasi-static and "
                "transient limits; the sustained-force level and the force each pressure limit corresponds "
                "to (pressure × contact area) as lines.",
                Chart((panel,), self.t0, self.t1),
                "overview",
            )
        )
        for f in self.findings:
            if f.subject == name and f.ref not in self.links:
                self.links[f.ref] = fid

    # ------------------------------------------------------------------------------------ zooms

    def window(self, a: float, b: float, least: float = 0.4) -> tuple[float, float]:
        span = max(b - a, 0.0)
        pad = max(span * 0.6, least / 2)
        return max(self.t0, a - pad), min(self.t1, b + pad)

    def zoom(self, f: FindingRow) -> bool:
        if f.subject is None or f.t_start is None:
            return False
        t_end = f.t_end if f.t_end is not None else f.t_start
        t0, t1 = self.window(f.t_start, t_end)
        if t1 <= t0:
            return False
        if f.subject in self.protocol.joints and f.quantity in _JOINT_PANEL:
            panel = _JOINT_PANEL[f.quantity]
            if f.quantity == "acceleration":
                panel = "acceleration"
            spans = self.spans_for(
                f.subject, {**_JOINT_PANEL, "acceleration": "acceleration"}, panel, zoom=f.ref
            )
            p = self.joint_panel(f.subject, panel, t0, t1, spans, self.stop_markers(t0, t1))
            p = dataclasses.replace(p, fit="data")
            what = f"joint {f.subject} {panel}"
        elif f.subject in self.protocol.contacts and f.quantity in _CONTACT_Q:
            spans = self.spans_for(f.subject, dict.fromkeys(_CONTACT_Q, "force"), "force", zoom=f.ref)
            p = self.contact_panel(f.subject, t0, t1, spans, self.stop_markers(t0, t1))
            p = dataclasses.replace(p, fit="data")
            what = f"contact {f.subject} force"
        else:
            return False
        fid = f"zoom-{f.ref}"
        self.figures.append(
            Figure(
                fid,
                f"{f.ref}: {what}, {t0:.3f}–{t1:.3f} s",
                f"Zoom on {f.ref} ({f.code} {f.name}): peak {value(f.peak, f.unit)}, limit "
                f"{value(f.limit, f.unit)}; "
                "the exceedance is hatched.",
                Chart((p,), t0, t1),
                "zoom",
            )
        )
        self.links[f.ref] = fid
        return True

    def stop_zoom(self, s: StopRow) -> None:
        ends = [s.t_standstill or s.t_trigger]
        if s.torque_off is not None and s.torque_unit:
            ends.append(s.t_trigger + s.torque_off * _factor(s.torque_unit))
        if s.latency_budget is not None and s.latency_unit:
            ends.append(s.t_trigger + s.latency_budget * _factor(s.latency_unit))
        t0, t1 = self.window(s.t_trigger, max(ends), least=0.3)
        t0 = max(self.t0, min(t0, s.t_trigger - 0.1))
        markers = [
            m
            for m in self.stop_markers(t0, t1, detail=True)
            if m.label in (s.ref, "standstill", "torque off") and _belongs(m, s)
        ]
        stop = self.protocol.stop
        panels = []
        for quantity in ("speed", "torque"):
            series: list[Series] = []
            unit = None
            for k, name in enumerate(self.protocol.joints):
                joint = self.protocol.joints[name]
                sig = joint_signal(self.ctx, name, quantity)  # type: ignore[arg-type]
                if isinstance(sig, Unavailable):
                    continue
                unit = unit or (speed_unit(joint) if quantity == "speed" else _torque_unit(joint))
                series.append(
                    _line(
                        sig.t, sig.x / _factor(unit), sig.valid, t0, t1, self.gap(sig.stream), name, style=k
                    )
                )
            if unit is None:
                continue
            levels: list[Level] = []
            if stop is not None and quantity == "speed":
                v = stop.standstill.speed.si / _factor(unit)
                levels = [Level(v, "near", f"standstill ±{value(v, unit)}"), Level(-v, "near", "")]
            if stop is not None and quantity == "torque" and stop.torque_off is not None:
                v = stop.torque_off.level.si / _factor(unit)
                levels = [Level(v, "near", f"torque off ±{value(v, unit)}"), Level(-v, "near", "")]
            panels.append(Panel(f"{quantity} ({unit})", tuple(series), (), tuple(levels), (), tuple(markers)))
        if not panels:
            return
        fid = f"stop-{s.ref}"
        self.figures.append(
            Figure(
                fid,
                f"{s.ref}: {s.label} at {s.t_trigger:.3f} s",
                f"Every joint's speed and torque around stop {s.ref}: trigger (solid line), standstill "
                "(dashed) and "
                f"torque off (dotted). Time to standstill {value(s.latency, s.latency_unit)} "
                f"({s.latency_status}); "
                f"torque off {value(s.torque_off, s.torque_unit)} ({s.torque_status}).",
                Chart(tuple(panels), t0, t1),
                "stop",
            )
        )
        self.links[s.ref] = fid
        for ref in s.refs:
            self.links[ref] = fid

    def latency_chart(self) -> None:
        if not self.stops:
            return
        unit = next((s.latency_unit for s in self.stops if s.latency_unit), "ms")
        f = _factor(unit)
        bars: list[Bar] = []
        cap = 0.0
        for s in self.stops:
            tail = (self.t1 - s.t_trigger) / f
            cap = max(cap, tail)

            def conv(v: float | None, u: str | None) -> float | None:
                return None if v is None or u is None else v * _factor(u) / f

            lat = conv(s.latency, s.latency_unit)
            budget = conv(s.latency_budget, s.latency_unit)
            bars.append(
                Bar(
                    f"{s.ref} to standstill",
                    lat,
                    budget,
                    unit,
                    "standstill",
                    _bar_note(lat, budget, unit, "no standstill before log end"),
                )
            )
            if s.torque_budget is not None or s.torque_off is not None:
                off = conv(s.torque_off, s.torque_unit)
                budget = conv(s.torque_budget, s.torque_unit)
                bars.append(
                    Bar(
                        f"{s.ref} to torque off",
                        off,
                        budget,
                        unit,
                        "torque_off",
                        _bar_note(off, budget, unit, "not off before log end"),
                    )
                )
        values = [b.value for b in bars if b.value is not None] + [
            b.budget for b in bars if b.budget is not None
        ]
        shown_cap = min(cap, max(values, default=cap) * 1.5) if values else cap
        self.figures.append(
            Figure(
                "stop-latency",
                "Stop timings against their budgets",
                "Time from each trigger to standstill (solid bars) and to torque off (hatched bars); the "
                "dashed "
                "marks are the budgets the protocol declares. A dashed outline: the event did not come "
                "before the "
                "log ended.",
                BarChart(
                    tuple(bars),
                    f"time after the trigger ({unit})",
                    cap=shown_cap if math.isfinite(shown_cap) else None,
                ),
                "latency",
            )
        )


def _bar_note(v: float | None, budget: float | None, unit: str, never: str) -> str:
    """The text beside a timing bar: the time, and whether it is over its budget (said in words)."""
    if v is None:
        return never
    over = budget is not None and v > budget
    return value(v, unit) + (f", over the {value(budget, unit)} budget" if over else "")


def _belongs(m: Marker, s: StopRow) -> bool:
    if m.style == "trigger":
        return m.label == s.ref
    if m.style == "standstill":
        return s.t_standstill is not None and abs(m.t - s.t_standstill) < 1e-9
    if m.style == "torque_off":
        return (
            s.torque_off is not None
            and s.torque_unit is not None
            and abs(m.t - (s.t_trigger + s.torque_off * _factor(s.torque_unit))) < 1e-9
        )
    return False


def build_figures(ctx: AuditContext, findings: Sequence[FindingRow], stops: Sequence[StopRow]) -> FigureSet:
    """Every plot of the report, and which figure shows each finding and each stop."""
    b = _Builder(ctx, findings, stops)
    for name in b.protocol.joints:
        b.joint_overview(name)
    for name in b.protocol.contacts:
        b.contact_overview(name)
    b.links.update({ref: fid for ref, fid in b.home.items() if ref not in b.links})
    b.latency_chart()
    for s in stops:
        b.stop_zoom(s)
    zooms = 0
    skipped = 0
    for f in findings:
        if f.kind != "violation" or (f.quantity or "") in _STOP_Q:
            continue
        if zooms >= MAX_ZOOMS:
            skipped += 1
            continue
        if b.zoom(f):
            zooms += 1
    if skipped:
        b.notes.append(
            f"{skipped} further exceedance(s) have no zoom plot of their own (at most {MAX_ZOOMS} per "
            "report); "
            "each is in the findings table and on its joint's or contact's overview plot."
        )
    return FigureSet(tuple(b.figures), b.links, tuple(b.notes))
