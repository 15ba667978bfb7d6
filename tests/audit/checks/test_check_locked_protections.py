"""A301 locked-joint and A302 protection-state on tiny logs."""

from __future__ import annotations

import numpy as np
import pytest
from checkkit import clock, context, deg, keys, only, plateau, protocol, quiet_cuff, still_joint, stream

from bracer.audit.checks import locked, protections
from bracer.findings import Kind, Severity

DT = 1e-3

WRIST = {
    "joints": {
        "wrist": {
            "motion": "forearm supination–pronation",
            "positive": "supination",
            "negative": "pronation",
            "range": {"mechanical": {"min": "-60 deg", "max": "60 deg"}},
            "channels": {"position": {"column": "wr_pos", "unit": "deg"}},
        }
    },
    "locked_joints": {"wrist": {"tolerance": "2 deg"}},
}


def wrist_ctx(wr_deg: np.ndarray, t: np.ndarray, *patches, participant=None):  # type: ignore[no-untyped-def]
    ch = still_joint(t) | quiet_cuff(t) | {"wr_pos": deg(wr_deg)}
    return context(protocol(WRIST, *patches), stream(t, ch), participant=participant)


def test_locked_joint_moving_beyond_its_tolerance() -> None:
    t = clock(2.0)
    wr = 10.0 + plateau(t, 0.0, -3.0, 0.5, 0.9)  # 3 deg from where it started, tolerance 2 deg
    f = only(locked.run(wrist_ctx(wr, t)))
    assert (f.code, f.kind, f.subject, f.quantity, f.direction) == (
        "A301",
        Kind.VIOLATION,
        "wrist",
        "locked_motion",
        "negative",
    )
    assert (f.peak, f.limit, f.unit, f.severity) == (pytest.approx(3.0), 2.0, "deg", Severity.ERROR)
    assert f.t_start == pytest.approx(0.5, abs=DT) and f.t_end == pytest.approx(0.9, abs=DT)
    assert dict(f.extra)["reference_position"] == pytest.approx(10.0)
    assert dict(f.extra)["range_used"] == pytest.approx(3.0)


def test_locked_joint_within_tolerance_and_measured_from_the_first_valid_sample() -> None:
    t = clock(2.0)
    wr = np.full(t.size, 10.0)
    wr[:100] = np.nan  # the first valid sample is at 0.1 s
    wr[100:] = 20.0
    wr[1000:1200] = 21.5
    assert locked.run(wrist_ctx(wr, t)) == []


def test_locked_joint_reference_is_the_first_valid_sample() -> None:
    t = clock(2.0)
    wr = np.full(t.size, 20.0)
    wr[:100] = np.nan
    wr[1000:1200] = 23.0  # 3 deg from the first valid sample (20 deg)
    f = only(locked.run(wrist_ctx(wr, t)))
    assert dict(f.extra)["reference_position"] == pytest.approx(20.0)
    assert (f.i_start, f.i_end, f.direction) == (1000, 1199, "positive")
    assert f"{t[100]:.3f} s" in f.message


def test_participant_list_replaces_the_protocols() -> None:
    t = clock(2.0)
    wr = 10.0 + plateau(t, 0.0, 5.0, 0.5, 0.9)
    assert (
        locked.run(wrist_ctx(wr, t, {"participants": {"AV-T1": {"locked_joints": []}}}, participant="AV-T1"))
        == []
    )
    f = only(
        locked.run(
            wrist_ctx(wr, t, {"participants": {"AV-T1": {"locked_joints": ["elbow"]}}}, participant="AV-T1")
        )
    )
    assert (f.kind, f.subject) == (Kind.NOT_ASSESSABLE, "elbow") and "no tolerance" in f.message


def test_locked_joint_without_position_is_not_assessable() -> None:
    t = clock(1.0)
    ctx = context(protocol(WRIST), stream(t, still_joint(t) | quiet_cuff(t)))
    f = only(locked.run(ctx))
    assert (f.kind, f.severity, f.channel) == (Kind.NOT_ASSESSABLE, Severity.ERROR, "wr_pos")


# ---------------------------------------------------------------------------------------------- protections

PROTECT = {
    "logging": {
        "protections": {
            "soft_limits": {"column": "soft_on", "allowed": [1], "description": "software limits enabled"}
        }
    }
}


def moving_ctx(t: np.ndarray, soft: np.ndarray, vel_deg: np.ndarray | None = None):  # type: ignore[no-untyped-def]
    ch = still_joint(t) | quiet_cuff(t)
    if vel_deg is not None:
        ch["elb_vel"] = deg(vel_deg)
    return context(protocol(PROTECT), stream(t, ch, states={"soft_on": soft}))


def test_protection_off_while_moving() -> None:
    t = clock(3.0)
    vel = plateau(t, 0.0, 20.0, 1.0, 2.0)  # moving 1.0–2.0 s (standstill speed 2 deg/s)
    soft = plateau(t, 1.0, 0.0, 1.5, 2.5)  # software limits off 1.5–2.5 s
    f = only(protections.run(moving_ctx(t, soft, vel)))
    assert (f.code, f.kind, f.subject, f.quantity, f.channel) == (
        "A302",
        Kind.VIOLATION,
        "soft_limits",
        "protection",
        "soft_on",
    )
    assert f.t_start == pytest.approx(1.5, abs=DT) and f.t_end == pytest.approx(2.0, abs=DT)
    assert dict(f.extra)["values_seen"] == ("0",) and "'0'" in f.message


def test_protection_off_at_rest_is_allowed() -> None:
    t = clock(3.0)
    assert protections.run(moving_ctx(t, plateau(t, 1.0, 0.0, 1.5, 2.5))) == []


def test_unknown_motion_is_not_taken_as_rest() -> None:
    t = clock(3.0)
    vel = np.zeros(t.size)
    vel[1500:1700] = np.nan  # speed not valid: motion unknown
    f = only(protections.run(moving_ctx(t, plateau(t, 1.0, 0.0, 1.0, 2.0), vel)))
    assert dict(f.extra)["motion_unknown"] is True and "not known" in f.message
    assert (f.i_start, f.i_end) == (1500, 1699)


def test_empty_state_cell_is_not_an_allowed_value_and_text_columns_work() -> None:
    t = clock(3.0)
    soft = np.where((t >= 1.2) & (t <= 1.4), "", "1")
    keys_ = keys(protections.run(moving_ctx(t, soft, plateau(t, 0.0, 20.0, 1.0, 2.0))))
    assert keys_ == {("A302", "violation", "soft_limits", "protection", None, None)}


def test_missing_protection_column_is_not_assessable() -> None:
    t = clock(1.0)
    ctx = context(protocol(PROTECT), stream(t, still_joint(t) | quiet_cuff(t)))
    f = only(protections.run(ctx))
    assert (f.kind, f.severity, f.channel) == (Kind.NOT_ASSESSABLE, Severity.ERROR, "soft_on")


def test_protection_on_another_stream_uses_motion_mapped_onto_its_clock() -> None:
    proto = protocol(
        PROTECT,
        {
            "logging": {
                "streams": {"status": {"time": {"column": "ts"}, "sample_rate": "10 Hz"}},
                "protections": {"soft_limits": {"stream": "status"}},
            }
        },
    )
    t = clock(3.0)
    ts = clock(3.0, 10.0)
    ch = still_joint(t) | quiet_cuff(t)
    ch["elb_vel"] = deg(plateau(t, 0.0, 20.0, 1.0, 2.0))
    status = stream(ts, {}, name="status", states={"soft_on": plateau(ts, 1.0, 0.0, 1.5, 2.5)}, rate=10.0)
    f = only(protections.run(context(proto, stream(t, ch), status)))
    assert f.t_start == pytest.approx(1.5) and f.t_end == pytest.approx(2.0)
