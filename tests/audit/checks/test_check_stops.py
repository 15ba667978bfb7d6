"""A201 stop-latency, A202 torque-off, A203 stop-distance, A204 stop-category.

The external check is a stop with a reaction delay followed by constant deceleration, whose stopping time and
distance are known in closed form (any kinematics text; REFERENCES.md, [V]): t = t_r + v0/a, d = v0·t_r +
v0²/(2a).  REFERENCES.md's example v0 = 0.5 m/s, a = 2 m/s², t_r = 50 ms gives 87.5 mm and 300 ms; here its
angular analogue, v0 = 0.5 rad/s, a = 2 rad/s², t_r = 50 ms: 0.0875 rad and 300 ms, measured within one sample
period (1 ms at 1 kHz).
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pytest
from checkkit import DELETE, clock, context, deg, keys, only, protocol, quiet_cuff, stream

from bracer.audit.checks import stop_category, stop_distance, stop_latency, torque_off
from bracer.audit.checks._stopping import stop_analysis
from bracer.findings import Finding, Kind, Severity

DT = 1e-3
V0, A, T_R = 0.5, 2.0, 0.050  # rad/s, rad/s², s
T_TRIG = 1.0

# Standstill speed far below v0 so that "below it" is within a sample of "stopped": v < 0.001 rad/s is reached
# 0.5 ms before v = 0.
STOP = {
    "joints": {"elbow": {"stop_deceleration": "2 rad/s^2"}},
    "stop": {
        "category": 1,
        "latency_budget": "300 ms",
        "reaction_time": "50 ms",
        "standstill": {"speed": "0.001 rad/s", "hold": "50 ms"},
        "torque_off": {"level": "0.5 N*m", "within": "400 ms"},
    },
    "logging": {
        "triggers": {
            "emergency_stop": {"column": "estop", "active": [1]},
            "protective_stop": {"column": "pstop", "active": [1]},
        }
    },
}


def kinematics(
    t: np.ndarray, v0: float = V0, a: float = A, t_r: float = T_R, t_trig: float = T_TRIG, p0: float = 0.9
) -> tuple[np.ndarray, np.ndarray]:
    """Constant speed v0, then (from t_trig + t_r) constant deceleration a to rest; closed-form position."""
    tb = t_trig + t_r
    tau = np.clip(t - tb, 0.0, v0 / a)
    v = np.where(t < tb, v0, v0 - a * tau)
    p = p0 + v0 * np.minimum(t, tb) + v0 * tau - 0.5 * a * tau**2
    return p, v


def torque_cat1(t: np.ndarray, t_still: float) -> np.ndarray:
    """Driving 2 N*m, braking -5 N*m after the reaction time, ramping to 0 over 20 ms after standstill."""
    tau = np.where(t < T_TRIG + T_R, 2.0, -5.0)
    ramp = (t >= t_still) & (t < t_still + 0.02)
    tau[ramp] = -5.0 * (1 - (t[ramp] - t_still) / 0.02)
    tau[t >= t_still + 0.02] = 0.0
    return tau


def torque_cat0(t: np.ndarray) -> np.ndarray:
    """Power removed 20 ms after the trigger (a brake the torque sensor does not see stops the joint)."""
    return np.where(t < T_TRIG + 0.02, 2.0, 0.0)


def build(
    *patches: dict[str, Any],
    t: np.ndarray | None = None,
    pos: np.ndarray | None = None,
    vel: np.ndarray | None = None,
    tau: np.ndarray | None = None,
    estop: np.ndarray | None = None,
    pstop: np.ndarray | None = None,
    velocity: bool = True,
    states: dict[str, np.ndarray] | None = None,
):  # type: ignore[no-untyped-def]
    t = clock(2.0) if t is None else t
    p, v = kinematics(t)
    pos = p if pos is None else pos
    vel = v if vel is None else vel
    tau = torque_cat1(t, T_TRIG + T_R + V0 / A) if tau is None else tau
    ch = {"elb_pos": pos, "elb_tau": tau} | quiet_cuff(t)
    if velocity:
        ch["elb_vel"] = vel
    st = {
        "estop": (t >= T_TRIG).astype(float) if estop is None else estop,
        "pstop": np.zeros(t.size) if pstop is None else pstop,
    }
    if states is not None:
        st = states
    proto = (
        protocol(STOP, *patches)
        if velocity
        else protocol(STOP, {"joints": {"elbow": {"channels": {"velocity": DELETE}}}}, *patches)
    )
    return context(proto, stream(t, ch, states=st))


def run_all(ctx) -> list[Finding]:  # type: ignore[no-untyped-def]
    return stop_latency.run(ctx) + torque_off.run(ctx) + stop_distance.run(ctx) + stop_category.run(ctx)


# ------------------------------------------------------------------------------------ closed-form stop


@pytest.mark.parametrize("velocity", [True, False], ids=["logged-velocity", "derived-speed"])
def test_closed_form_latency_and_distance(velocity: bool) -> None:
    found = run_all(build({"stop": {"latency_budget": "320 ms"}}, velocity=velocity))
    assert keys(found) == {
        ("A201", "stop", None, "stop_latency", None, None),
        ("A202", "stop", None, "torque_off", None, None),
        ("A203", "stop", "elbow", "stop_distance", None, None),
        ("A204", "stop", None, "stop_category", None, None),
    }
    lat = next(f for f in found if f.code == "A201")
    # t = t_r + v0/a = 0.05 + 0.25 = 0.300 s, within one sample period with the logged velocity.  A speed
    # derived over the centred 21-sample window rounds the corner at standstill: it reads "still" up to half a
    # window (10 samples) later, never earlier.
    assert lat.unit == "ms"
    if velocity:
        assert lat.peak == pytest.approx(300.0, abs=1.0)
    else:
        assert 300.0 - 1.0 <= lat.peak <= 300.0 + 11.0
    assert lat.t_start == pytest.approx(T_TRIG) and lat.severity is Severity.INFO
    assert "emergency stop" in lat.message and "within the latency budget" in lat.message
    dist = next(f for f in found if f.code == "A203")
    # d = v0·t_r + v0²/(2a) = 0.025 + 0.0625 = 0.0875 rad, reported in the joint's declared unit (deg)
    assert dist.unit == "deg"
    assert np.deg2rad(dist.peak) == pytest.approx(0.0875, abs=V0 * DT)
    assert np.deg2rad(dist.limit) == pytest.approx(0.0875, rel=1e-9 if velocity else 1e-3)
    assert dist.severity is Severity.INFO


def test_closed_form_with_the_published_numbers_scaled_to_another_rate() -> None:
    # Same stop logged at 500 Hz: latency within one sample period (2 ms)
    t = clock(2.0, 500.0)
    ctx = build({"logging": {"streams": {"main": {"sample_rate": "500 Hz"}}}}, t=t)
    lat = only(stop_latency.run(ctx))
    assert lat.peak == pytest.approx(300.0, abs=2.0)


def test_latency_over_budget_is_a_violation_in_the_declared_unit() -> None:
    f = only(stop_latency.run(build({"stop": {"latency_budget": "0.25 s"}})))
    assert (f.kind, f.severity, f.unit, f.limit) == (Kind.VIOLATION, Severity.ERROR, "s", 0.25)
    assert f.peak == pytest.approx(0.300, abs=DT) and f.margin == pytest.approx(-0.05, abs=DT)
    assert "over the latency budget" in f.message


def test_no_standstill_before_the_log_ends() -> None:
    t = clock(2.0)
    ctx = build(t=t, pos=0.2 + V0 * t, vel=np.full(t.size, V0), tau=np.full(t.size, 2.0))
    found = run_all(ctx)
    lat = next(f for f in found if f.code == "A201")
    assert (lat.kind, lat.severity, lat.peak) == (Kind.VIOLATION, Severity.ERROR, None)
    assert lat.t_end == pytest.approx(2.0) and "no standstill" in lat.message
    off = next(f for f in found if f.code == "A202")
    assert off.kind is Kind.VIOLATION and "did not fall" in off.message
    cat = next(f for f in found if f.code == "A204")
    assert cat.kind is Kind.VIOLATION and "no standstill followed" in cat.message
    dist = next(f for f in found if f.code == "A203")
    assert "no standstill came" in dist.message and dist.t_end == pytest.approx(2.0)


def test_torque_off_late() -> None:
    f = only(torque_off.run(build({"stop": {"torque_off": {"within": "300 ms"}}})))
    # torque falls to 0.5 N*m 18 ms into its 20 ms ramp after standstill at 1.300 s: 0.318 s after the trigger
    assert (f.kind, f.unit) == (Kind.VIOLATION, "ms") and f.peak == pytest.approx(318.0, abs=1.0)


# ------------------------------------------------------------------------------------------ stop category


@pytest.mark.parametrize(
    ("category", "profile", "matches", "severity"),
    [
        (1, "cat1", True, Severity.INFO),
        (1, "cat0", False, Severity.ERROR),  # torque gone while the joint still moves: uncontrolled
        (0, "cat0", True, Severity.INFO),
        (0, "cat1", False, Severity.ERROR),  # torque kept until standstill: not an immediate removal
        (2, "cat2", True, Severity.INFO),
        (2, "cat1", False, Severity.WARNING),  # torque fell after standstill: power was removed
        (1, "cat2", False, Severity.ERROR),  # torque never fell: power kept
    ],
)
def test_stop_category(category: int, profile: str, matches: bool, severity: Severity) -> None:
    t = clock(2.0)
    t_still = T_TRIG + T_R + V0 / A
    tau = {
        "cat1": torque_cat1(t, t_still),
        "cat0": torque_cat0(t),
        "cat2": np.where(t < T_TRIG + T_R, 2.0, np.where(t < t_still, -5.0, 1.5)),
    }[profile]
    f = only(stop_category.run(build({"stop": {"category": category}}, t=t, tau=tau)))
    assert f.kind is (Kind.STOP if matches else Kind.VIOLATION)
    assert f.severity is severity
    assert f"category {category}" in f.message


def test_category_2_has_no_torque_off_timing() -> None:
    assert torque_off.run(build({"stop": {"category": 2}})) == []


def test_stop_category_needs_torque_off_level() -> None:
    f = only(stop_category.run(build({"stop": {"torque_off": DELETE}})))
    assert (f.kind, f.severity) == (Kind.NOT_ASSESSABLE, Severity.WARNING)
    g = only(torque_off.run(build({"stop": {"torque_off": DELETE}})))
    assert g.kind is Kind.NOT_ASSESSABLE


def test_missing_torque_channel() -> None:
    t = clock(2.0)
    p, v = kinematics(t)
    ctx = context(
        protocol(STOP),
        stream(
            t,
            {"elb_pos": p, "elb_vel": v} | quiet_cuff(t),
            states={"estop": (t >= T_TRIG).astype(float), "pstop": np.zeros(t.size)},
        ),
    )
    off = only(torque_off.run(ctx))
    assert (off.kind, off.severity, off.subject) == (Kind.NOT_ASSESSABLE, Severity.ERROR, "elbow")
    cat = only(stop_category.run(ctx))
    assert cat.kind is Kind.NOT_ASSESSABLE


def test_torque_channel_not_mapped_is_a_protocol_gap_warning() -> None:
    t = clock(2.0)
    p, v = kinematics(t)
    proto = protocol(STOP, {"joints": {"elbow": {"channels": {"torque": DELETE}, "torque": DELETE}}})
    ctx = context(
        proto,
        stream(
            t,
            {"elb_pos": p, "elb_vel": v} | quiet_cuff(t),
            states={"estop": (t >= T_TRIG).astype(float), "pstop": np.zeros(t.size)},
        ),
    )
    off = only(torque_off.run(ctx))
    assert (off.kind, off.severity, off.channel) == (Kind.NOT_ASSESSABLE, Severity.WARNING, None)


# --------------------------------------------------------------------------------------------- distance


def test_distance_further_than_the_declared_stop_predicts_is_a_warning() -> None:
    t = clock(2.0)
    p, v = kinematics(t, a=1.0)  # the device brakes at half the declared 2 rad/s²
    f = only(stop_distance.run(build(t=t, pos=p, vel=v)))
    assert f.severity is Severity.WARNING and "further than" in f.message
    # measured d = 0.5·0.05 + 0.5²/(2·1) = 0.15 rad; the declared 2 rad/s² predicts 0.0875 rad
    assert np.deg2rad(f.peak) == pytest.approx(0.15, abs=V0 * DT)
    assert np.deg2rad(f.limit) == pytest.approx(0.0875)


def test_a_joint_at_rest_at_the_trigger_gets_no_distance_finding() -> None:
    t = clock(2.0)
    ctx = build(t=t, pos=np.full(t.size, 0.9), vel=np.zeros(t.size), tau=torque_cat0(t))
    assert stop_distance.run(ctx) == []
    lat = only(stop_latency.run(ctx))
    assert lat.peak == pytest.approx(0.0)  # already still: standstill at the trigger


# ---------------------------------------------------------------------------------------------- triggers


def test_a_trigger_during_a_stop_in_progress_is_folded_into_it() -> None:
    t = clock(2.0)
    pstop = (t >= T_TRIG + 0.05).astype(float)
    ctx = build(t=t, pstop=pstop)
    lat = only(stop_latency.run(ctx))
    assert "protective stop" in lat.message and "also requested" in lat.message
    assert len(stop_analysis(ctx).episodes) == 1


def test_two_separate_stops() -> None:
    # stop at 1.0 s; the joint moves again from 1.6 s, and a protective stop at 1.8 s never reaches standstill
    t = clock(2.5)
    p, v = kinematics(t)
    v = np.where(t >= 1.6, 0.3, v)
    p = np.where(t >= 1.6, p[1600] + 0.3 * (t - 1.6), p)
    estop = ((t >= 1.0) & (t < 1.5)).astype(float)
    pstop = (t >= 1.8).astype(float)
    found = stop_latency.run(build(t=t, pos=p, vel=v, estop=estop, pstop=pstop))
    assert sorted((f.kind.value, dict(f.extra)["trigger"]) for f in found) == [
        ("stop", "emergency_stop"),
        ("violation", "protective_stop"),
    ]


def test_safety_state_normal_values_and_text_columns() -> None:
    t = clock(2.0)
    text = np.where(t >= T_TRIG, "FAULT", "OK")
    ctx = build(
        {
            "logging": {
                "triggers": {
                    "emergency_stop": DELETE,
                    "protective_stop": DELETE,
                    "safety_state": {"column": "state", "normal": ["OK"]},
                }
            }
        },
        t=t,
        states={"state": text},
    )
    f = only(stop_latency.run(ctx))
    assert dict(f.extra)["trigger"] == "safety_state" and f.t_start == pytest.approx(T_TRIG)
    assert "FAULT" in f.message


def test_numeric_rule_matches_a_text_column_written_as_float() -> None:
    t = clock(2.0)
    st = {"estop": np.where(t >= T_TRIG, "1.0", "0.0"), "pstop": np.full(t.size, "0")}
    f = only(stop_latency.run(build(t=t, states=st)))
    assert f.t_start == pytest.approx(T_TRIG)


def test_missing_cells_keep_the_last_state() -> None:
    t = clock(2.0)
    estop = (t >= T_TRIG).astype(float)
    estop[1100:1150] = np.nan  # a gap in the status column during the stop is not a new trigger
    assert len(stop_analysis(build(t=t, estop=estop)).episodes) == 1


def test_missing_trigger_column_is_not_assessable() -> None:
    t = clock(2.0)
    ctx = build(t=t, states={"estop": (t >= T_TRIG).astype(float)})
    found = stop_latency.run(ctx)
    na = [f for f in found if f.kind is Kind.NOT_ASSESSABLE]
    assert len(na) == 1 and na[0].severity is Severity.ERROR and na[0].channel == "pstop"


def test_trigger_active_from_the_first_sample_cannot_be_timed() -> None:
    t = clock(2.0)
    f = only(
        stop_latency.run(
            build(
                t=t,
                pos=np.full(t.size, 0.9),
                vel=np.zeros(t.size),
                tau=np.zeros(t.size),
                estop=np.ones(t.size),
            )
        )
    )
    assert (f.kind, f.severity) == (Kind.NOT_ASSESSABLE, Severity.WARNING) and "first sample" in f.message


def test_no_stop_function_declared() -> None:
    t = clock(1.0)
    ctx = build({"stop": DELETE, "joints": {"elbow": {"stop_deceleration": DELETE}}}, t=t)
    f = only(stop_latency.run(ctx))
    assert f.kind is Kind.NOT_ASSESSABLE and "no stop function" in f.message
    assert torque_off.run(ctx) == stop_category.run(ctx) == stop_distance.run(ctx) == []


# ------------------------------------------------------------------------------- stops after exceedances


def _speeding(t: np.ndarray, t_exc: float, stops: bool) -> tuple[np.ndarray, np.ndarray]:
    """Speeds up to 100 deg/s at t_exc (device limit 90 deg/s); then, if ``stops``, brakes at 1000 deg/s²."""
    v_hi = deg(100.0)
    v = np.where(t < t_exc, deg(30.0), v_hi)
    if stops:
        tb = t_exc + 0.05
        v = np.where(t >= tb, np.maximum(v_hi - deg(1000.0) * (t - tb), 0.0), v)
    p = 0.2 + np.concatenate(([0.0], np.cumsum(0.5 * (v[1:] + v[:-1]) * np.diff(t))))
    return p, v


def test_exceedance_followed_by_a_stop() -> None:
    t = clock(2.0)
    p, v = _speeding(t, 1.0, stops=True)
    ctx = build(
        {"stop": {"standstill": {"speed": "2 deg/s"}}},
        t=t,
        pos=p,
        vel=v,
        tau=torque_cat0(t),
        estop=np.zeros(t.size),
    )
    f = only(stop_latency.run(ctx))
    assert (f.kind, f.subject, dict(f.extra)["trigger"]) == (Kind.STOP, "elbow", "exceedance")
    # 50 ms, then 100 -> 2 deg/s at 1000 deg/s² takes 98 ms: the speed is exactly 2 deg/s at 148 ms, so the
    # first sample strictly below the standstill speed is at 149 ms after the first sample over the limit
    assert f.peak == pytest.approx(149.0) and "required stop" in f.message


def test_required_stop_after_an_exceedance_never_comes() -> None:
    t = clock(2.0)
    p, v = _speeding(t, 1.0, stops=False)
    ctx = build(
        {"stop": {"standstill": {"speed": "2 deg/s"}}},
        t=t,
        pos=p,
        vel=v,
        tau=np.full(t.size, 2.0),
        estop=np.zeros(t.size),
    )
    f = only(stop_latency.run(ctx))
    assert (f.kind, f.severity, f.subject) == (Kind.VIOLATION, Severity.ERROR, "elbow")
    assert "the required stop never came" in f.message and "device speed limit" in f.message


def test_planned_exceedance_does_not_require_a_stop_by_default() -> None:
    t = clock(2.0)
    v = np.where(t < 1.0, deg(30.0), deg(70.0))  # over planned 60, under device 90
    p = 0.2 + np.cumsum(v) * DT
    ctx = build({"stop": {"standstill": {"speed": "2 deg/s"}}}, t=t, pos=p, vel=v, estop=np.zeros(t.size))
    assert stop_latency.run(ctx) == []


def test_a_clock_glitch_before_the_trigger_does_not_move_the_stop() -> None:
    # 20 samples logged with a time stamp 0.2 s back (the data-quality pass marks them not valid): the trigger
    # and the standstill keep their own rows, so the latency is still 300 ms
    t = clock(2.0)
    p, v = kinematics(t)
    glitched = t.copy()
    glitched[500:520] -= 0.2
    tv = np.ones(t.size, bool)
    tv[500:520] = False
    ch = {"elb_pos": p, "elb_vel": v, "elb_tau": torque_cat1(t, 1.3)} | quiet_cuff(t)
    states = {"estop": (t >= T_TRIG).astype(float), "pstop": np.zeros(t.size)}
    ctx = context(protocol(STOP), stream(glitched, ch, states=states), time_valid={"main": tv})
    f = only(stop_latency.run(ctx))
    assert f.peak == pytest.approx(300.0, abs=1.0) and f.i_start == 1000
