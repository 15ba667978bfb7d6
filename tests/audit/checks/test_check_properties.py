"""Hypothesis properties of the audit checks on random sessions.

* Scaling a log further inside its limits never adds a violation: every violation of the scaled log lies
  within a violation of the original with the same code, subject, quantity, layer and direction.
* Every finding's span lies inside the log, and its sample indices inside the stream.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from checkkit import DELETE, context, deg, protocol, stream
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bracer.audit.checks import ALL
from bracer.audit.context import AuditContext
from bracer.findings import Finding, Kind

RATE = 1000.0

PATCH: dict[str, Any] = {
    "joints": {
        "elbow": {"acceleration": {"planned": "3000 deg/s^2"}},
        "wrist": {
            "motion": "forearm supination–pronation",
            "positive": "supination",
            "negative": "pronation",
            "range": {
                "planned": {"min": "-30 deg", "max": "30 deg"},
                "mechanical": {"min": "-60 deg", "max": "60 deg"},
            },
            "speed": {"planned": "45 deg/s"},
            "stop_deceleration": "900 deg/s^2",
            "channels": {"position": {"column": "wr_pos", "unit": "deg"}},
        },
    },
    "locked_joints": {"wrist": {"tolerance": "2 deg"}},
    "near_miss": {"position": {"absolute": "3 deg"}, "speed": {"fraction": 0.1}, "force": {"fraction": 0.1}},
    "logging": {
        "triggers": {"emergency_stop": {"column": "estop", "active": [1]}},
        "protections": {"soft": {"column": "soft_on", "allowed": [1], "description": "software limits on"}},
    },
    "participants": {
        "AV-P9": {
            "rom": {"elbow": {"min": "5 deg", "max": "110 deg", "date": "2027-01-02", "method": "goniometry"}}
        }
    },
}
#: A point inside every range layer and the participant's range, with room for the hysteresis band.
CENTRE = {"elbow": deg(55.0), "wrist": 0.0}

points = st.lists(st.floats(-1.0, 1.0), min_size=2, max_size=7)


def _curve(pts: list[float], n: int, lo: float, hi: float) -> np.ndarray:
    """Piecewise-linear curve through ``pts`` (in [-1, 1]) mapped onto [lo, hi], n samples."""
    xp = np.linspace(0, n - 1, len(pts))
    return lo + (np.interp(np.arange(n), xp, pts) + 1) / 2 * (hi - lo)


@st.composite
def sessions(draw: st.DrawFn) -> dict[str, Any]:
    n = draw(st.integers(80, 400))
    logged_velocity = draw(st.booleans())
    d = {
        "n": n,
        "logged_velocity": logged_velocity,
        "elb_pos": _curve(draw(points), n, deg(-30.0), deg(150.0)),
        "elb_vel": _curve(draw(points), n, deg(-150.0), deg(150.0)),
        "elb_tau": _curve(draw(points), n, -20.0, 20.0),
        "wr_pos": _curve(draw(points), n, deg(-40.0), deg(40.0)),
        "fx": _curve(draw(points), n, -130.0, 130.0),
        "fy": _curve(draw(points), n, -60.0, 60.0),
        "fz": _curve(draw(points), n, -60.0, 60.0),
    }
    if draw(st.booleans()):  # hold the force over a level for a while: sustained and quasi-static events
        a = draw(st.integers(0, n - 1))
        d["fx"][a:] = draw(st.floats(30.0, 120.0))
    nan_at = draw(
        st.lists(
            st.tuples(
                st.sampled_from(["elb_pos", "elb_vel", "elb_tau", "fx", "wr_pos"]),
                st.integers(0, n - 1),
                st.integers(1, 30),
            ),
            max_size=3,
        )
    )
    for col, start, length in nan_at:
        d[col] = d[col].copy()
        d[col][start : start + length] = np.nan
    toggles = sorted(draw(st.lists(st.integers(0, n - 1), max_size=4, unique=True)))
    estop = np.zeros(n)
    for k, i in enumerate(toggles):
        estop[i:] = float((k + 1) % 2)
    d["estop"] = estop
    soft = np.ones(n)
    off = draw(st.lists(st.tuples(st.integers(0, n - 1), st.integers(1, 80)), max_size=2))
    for start, length in off:
        soft[start : start + length] = 0.0
    d["soft_on"] = soft
    d["participant"] = draw(st.sampled_from([None, "AV-P9"]))
    d["sustained"] = draw(st.sampled_from(["30 ms", "100 ms"]))
    d["transient"] = draw(st.sampled_from(["20 ms", "100 ms"]))
    return d


def _context(d: dict[str, Any], k: float = 1.0) -> AuditContext:
    n = d["n"]
    t = np.arange(n) / RATE
    ch = {
        "elb_pos": CENTRE["elbow"] + k * (d["elb_pos"] - CENTRE["elbow"]),
        "wr_pos": CENTRE["wrist"] + k * (d["wr_pos"] - CENTRE["wrist"]),
        "elb_tau": k * d["elb_tau"],
        "fx": k * d["fx"],
        "fy": k * d["fy"],
        "fz": k * d["fz"],
    }
    cuff = {
        "sustained": {"max_duration": d["sustained"]},
        "force": {"transient_max_duration": d["transient"]},
    }
    patches: list[dict[str, Any]] = [PATCH, {"contacts": {"cuff": cuff}}]
    if d["logged_velocity"]:
        ch["elb_vel"] = k * d["elb_vel"]
    else:
        patches.append({"joints": {"elbow": {"channels": {"velocity": DELETE}}}})
    s = stream(t, ch, states={"estop": d["estop"], "soft_on": d["soft_on"]})
    return context(protocol(*patches), s, participant=d["participant"])


LIMIT_CHECKS = tuple(m for m in ALL if m.CHECK.code[:2] == "A1" or m.CHECK.code == "A301")


def _violations(ctx: AuditContext) -> list[Finding]:
    return [f for m in LIMIT_CHECKS for f in m.run(ctx) if f.kind is Kind.VIOLATION]


def _ident(f: Finding) -> tuple[Any, ...]:
    return (f.code, f.subject, f.quantity, f.layer, f.direction)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(d=sessions(), k=st.floats(0.0, 0.999))
def test_scaling_further_inside_the_limits_never_adds_a_violation(d: dict[str, Any], k: float) -> None:
    before = _violations(_context(d))
    after = _violations(_context(d, k))
    for f in after:
        assert f.i_start is not None and f.i_end is not None
        assert any(
            _ident(g) == _ident(f)
            and g.i_start is not None
            and g.i_end is not None
            and g.i_start <= f.i_start
            and f.i_end <= g.i_end
            for g in before
        ), f"new violation after scaling by {k}: {f.message}"


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(d=sessions())
def test_every_finding_span_lies_inside_the_log(d: dict[str, Any]) -> None:
    ctx = _context(d)
    t = ctx.session.streams["main"].time
    for m in ALL:
        for f in m.run(ctx):
            for v in (f.t_start, f.t_end, f.t_peak):
                assert v is None or t[0] <= v <= t[-1], f.message
            if f.t_start is not None and f.t_end is not None:
                assert f.t_start <= f.t_end, f.message
                if f.t_peak is not None:
                    assert f.t_start <= f.t_peak <= f.t_end, f.message
            for i in (f.i_start, f.i_end):
                assert i is None or 0 <= i < d["n"], f.message
            if f.i_start is not None and f.i_end is not None:
                assert f.i_start <= f.i_end
            assert f.message and f.code == m.CHECK.code
