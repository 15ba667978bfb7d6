"""A121 near-miss and A122 predicted-stop-position on tiny logs."""

from __future__ import annotations

import numpy as np
import pytest
from checkkit import (
    DELETE,
    clock,
    context,
    deg,
    keys,
    only,
    plateau,
    protocol,
    quiet_cuff,
    still_joint,
    stream,
)

from bracer.audit.checks import near_miss, predicted_stop
from bracer.findings import Kind, Severity

DT = 1e-3
MARGINS = {
    "near_miss": {
        "position": {"absolute": "3 deg"},
        "speed": {"fraction": 0.1},
        "torque": {"fraction": 0.1},
        "force": {"fraction": 0.1, "absolute": "5 N"},
        "pressure": {"fraction": 0.1},
    }
}


def ctx_with(t: np.ndarray, proto=None, participant=None, **ch: np.ndarray):  # type: ignore[no-untyped-def]
    channels = still_joint(t) | quiet_cuff(t)
    channels.update(ch)
    return context(proto or protocol(MARGINS), stream(t, channels), participant=participant)


def test_position_within_the_absolute_band_of_the_planned_limit() -> None:
    t = clock(2.0)
    f = only(near_miss.run(ctx_with(t, elb_pos=deg(plateau(t, 50.0, 98.0, 0.5, 0.8)))))
    assert (f.code, f.kind, f.layer, f.direction, f.quantity) == (
        "A121",
        Kind.NEAR_MISS,
        "planned",
        "positive",
        "position",
    )
    assert f.severity is Severity.INFO  # planned layer
    assert f.peak == pytest.approx(98.0) and f.limit == 100.0 and f.margin == pytest.approx(2.0)
    assert f.t_start == pytest.approx(0.5, abs=DT) and f.t_end == pytest.approx(0.8, abs=DT)
    assert "came within 2 deg" in f.message


def test_exceeding_the_limit_is_a_violation_not_a_near_miss() -> None:
    t = clock(2.0)
    # 105 deg: beyond planned (no near miss of it); 15 deg from the device limit: outside its 3 deg band
    assert near_miss.run(ctx_with(t, elb_pos=deg(plateau(t, 50.0, 105.0, 0.5, 0.8)))) == []


def test_beyond_one_layer_near_the_next() -> None:
    t = clock(2.0)
    f = only(near_miss.run(ctx_with(t, elb_pos=deg(plateau(t, 50.0, 118.5, 0.5, 0.8)))))
    assert (f.layer, f.severity, f.margin) == ("device", Severity.WARNING, pytest.approx(1.5))


def test_a_crossing_shorter_than_the_minimum_duration_is_still_reported_as_a_near_miss() -> None:
    t = clock(2.0)
    pos = plateau(t, 50.0, 98.0, 0.5, 0.8)
    pos[600:603] = 101.0  # 2 ms over the planned limit: below the 5 ms minimum event duration
    f = only(near_miss.run(ctx_with(t, elb_pos=deg(pos))))
    assert f.margin == pytest.approx(-1.0) and "less than the minimum event duration" in f.message


def test_speed_fraction_band() -> None:
    t = clock(2.0)
    vel = deg(plateau(t, 0.0, 85.0, 1.0, 1.1))  # device 90: band 9 deg/s; over planned 60 (a violation there)
    f = only(near_miss.run(ctx_with(t, elb_vel=vel)))
    assert (f.quantity, f.layer, f.peak, f.margin) == (
        "speed",
        "device",
        pytest.approx(85.0),
        pytest.approx(5.0),
    )


def test_force_band_is_the_wider_of_fraction_and_absolute() -> None:
    # quasi-static 60 N: 10 % = 6 N beats 5 N, so 54.5 N is a near miss and 53.5 N is not
    t = clock(2.0)
    near = ctx_with(t, fx=plateau(t, 5.0, 54.5, 0.5, 1.0))
    f = only(near_miss.run(near))
    assert (f.subject, f.quantity, f.layer, f.unit) == ("cuff", "force", "quasi_static", "N")
    assert dict(f.extra)["near_miss_band"] == pytest.approx(6.0)
    assert near_miss.run(ctx_with(t, fx=plateau(t, 5.0, 53.5, 0.5, 1.0))) == []


def test_pressure_near_miss_and_transient_near_miss() -> None:
    # 75 N / 40 cm² = 1.875 N/cm²: within 10 % of 2 N/cm² (and 75 N is a transient contact above 60 N for
    # 0.1 s, near the 90 N transient limit? 90 - 75 = 15 N > 9 N band: no)
    t = clock(2.0)
    found = near_miss.run(ctx_with(t, fx=plateau(t, 5.0, 75.0, 0.5, 0.6)))
    assert keys(found) == {("A121", "near_miss", "cuff", "pressure", "quasi_static", None)}
    found = near_miss.run(ctx_with(t, fx=plateau(t, 5.0, 85.0, 0.5, 0.6)))
    assert keys(found) == {("A121", "near_miss", "cuff", "force", "transient", None)}


def test_no_margin_declared_means_no_near_miss_analysis() -> None:
    t = clock(2.0)
    assert near_miss.run(ctx_with(t, protocol(), elb_pos=deg(plateau(t, 50.0, 99.0, 0.5, 0.8)))) == []


# -------------------------------------------------------------------------------------------- predicted stop


def test_predicted_stop_beyond_the_mechanical_end_stop() -> None:
    # Moving at 100 deg/s with reaction 30 ms and stop deceleration 600 deg/s²: stopping distance
    # 100·0.03 + 100²/(2·600) = 3 + 8.333 = 11.333 deg (constant deceleration after a delay, REFERENCES.md).
    # The joint ramps 100 -> 125 deg at 100 deg/s (0.5 s to 0.75 s) and holds: the predicted stop passes the
    # 130 deg end stop once the position passes 118.667 deg, i.e. from t = 0.68667 s until the ramp ends.
    t = clock(2.0)
    ramp = (t >= 0.5) & (t < 0.75)
    vel = np.where(ramp, 100.0, 0.0)
    pos = 100.0 + 100.0 * np.clip(t - 0.5, 0.0, 0.25)
    f = only(predicted_stop.run(ctx_with(t, elb_pos=deg(pos), elb_vel=deg(vel))))
    assert (f.code, f.kind, f.layer, f.direction, f.severity) == (
        "A122",
        Kind.NEAR_MISS,
        "mechanical",
        "positive",
        Severity.WARNING,
    )
    d = 100 * 0.03 + 100**2 / (2 * 600)
    assert f.t_start == pytest.approx(0.5 + (130 - d - 100) / 100, abs=DT)
    assert f.t_end == pytest.approx(0.749, abs=DT)
    assert f.peak == pytest.approx(124.9 + d, abs=1e-6) and f.limit == 130.0
    assert f.margin == pytest.approx(130 - 124.9 - d, abs=1e-6)
    assert dict(f.extra)["speed_at_peak"] == pytest.approx(100.0)


def test_predicted_stop_against_the_participant_range_in_the_negative_direction() -> None:
    proto = protocol(
        {
            "participants": {
                "AV-T1": {
                    "rom": {
                        "elbow": {
                            "min": "20 deg",
                            "max": "125 deg",
                            "date": "2027-01-02",
                            "method": "goniometry",
                        }
                    }
                }
            }
        }
    )
    t = clock(2.0)
    # moving at -60 deg/s from 40 deg to 23.2 deg (0.5 s to 0.78 s): stopping distance 60·0.03 + 60²/(2·600)
    # = 1.8 + 3 = 4.8 deg, so the predicted stop passes the measured 20 deg once the joint is below 24.8 deg;
    # holding at 23.2 deg it is back by more than the hysteresis (2 % of the 105 deg span).
    vel = np.where((t >= 0.5) & (t < 0.78), -60.0, 0.0)
    pos = 40.0 - 60.0 * np.clip(t - 0.5, 0.0, 0.28)
    f = only(predicted_stop.run(ctx_with(t, proto, participant="AV-T1", elb_pos=deg(pos), elb_vel=deg(vel))))
    assert (f.layer, f.direction) == ("participant", "negative")
    assert f.t_start == pytest.approx(0.5 + (40 - 20 - 4.8) / 60, abs=DT)
    assert f.t_end == pytest.approx(0.779, abs=DT) and f.limit == 20.0


def test_predicted_stop_needs_a_declared_deceleration() -> None:
    proto = protocol({"joints": {"elbow": {"stop_deceleration": DELETE}}})
    t = clock(1.0)
    f = only(predicted_stop.run(ctx_with(t, proto)))
    assert (f.kind, f.severity) == (
        Kind.NOT_ASSESSABLE,
        Severity.WARNING,
    ) and "stop_deceleration" in f.message


def test_slow_motion_far_from_the_end_predicts_nothing() -> None:
    t = clock(2.0)
    vel = np.where((t >= 0.5) & (t < 1.0), 20.0, 0.0)
    pos = 50.0 + 20.0 * np.clip(t - 0.5, 0.0, 0.5)
    assert predicted_stop.run(ctx_with(t, elb_pos=deg(pos), elb_vel=deg(vel))) == []
