"""A102 joint-speed, A103 joint-torque, A104 joint-acceleration on tiny logs."""

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

from bracer.audit.checks import acceleration, torque
from bracer.audit.checks import speed as speed_check
from bracer.findings import Kind, Severity

DT = 1e-3
NO_VELOCITY = {"joints": {"elbow": {"channels": {"velocity": DELETE}}}}


def channels(t: np.ndarray, **override: np.ndarray) -> dict[str, np.ndarray]:
    ch = still_joint(t) | quiet_cuff(t)
    ch.update(override)
    return ch


def test_logged_speed_over_planned_and_device_in_the_negative_direction() -> None:
    t = clock(2.0)
    vel = deg(plateau(t, 0.0, -95.0, 0.4, 0.6))
    found = speed_check.run(context(protocol(), stream(t, channels(t, elb_vel=vel))))
    assert keys(found) == {
        ("A102", "violation", "elbow", "speed", "planned", "negative"),
        ("A102", "violation", "elbow", "speed", "device", "negative"),
    }
    dev = next(f for f in found if f.layer == "device")
    assert dev.peak == pytest.approx(95.0) and dev.limit == 90.0 and dev.unit == "deg/s"
    assert dev.margin == pytest.approx(-5.0)
    assert dev.t_start == pytest.approx(0.4, abs=DT) and dev.t_end == pytest.approx(0.6, abs=DT)
    assert dev.channel == "elb_vel" and ("source", "logged") in dev.extra
    assert "extension" in dev.message


def test_speed_derived_from_position_states_its_window_and_delay() -> None:
    # position ramps at 70 deg/s from 0.5 s to 1.0 s: over the planned 60 deg/s, under the device 90 deg/s
    t = clock(2.0)
    pos = 30.0 + 70.0 * np.clip(t - 0.5, 0.0, 0.5)
    ch = channels(t, elb_pos=deg(pos))
    del ch["elb_vel"]
    f = only(speed_check.run(context(protocol(NO_VELOCITY), stream(t, ch))))
    assert (f.layer, f.direction, f.channel) == ("planned", "positive", "elb_pos")
    assert f.peak == pytest.approx(70.0, rel=1e-6)
    # the ramp's corners are smeared over half the 21-sample window on each side
    assert f.t_start == pytest.approx(0.5, abs=11 * DT) and f.t_end == pytest.approx(1.0, abs=11 * DT)
    extra = dict(f.extra)
    assert extra["source"] == "derived" and extra["derivative_window_samples"] == 21
    assert extra["derivative_delay_s"] == 0.0
    assert "Savitzky–Golay" in f.message and "21 samples" in f.message and "no phase delay" in f.message


def test_declared_velocity_missing_from_log_falls_back_to_position_and_says_so() -> None:
    t = clock(2.0)
    pos = 30.0 + 70.0 * np.clip(t - 0.5, 0.0, 0.5)
    ch = channels(t, elb_pos=deg(pos))
    del ch["elb_vel"]
    f = only(speed_check.run(context(protocol(), stream(t, ch))))
    assert dict(f.extra)["source"] == "derived"
    assert "velocity channel unusable" in f.message and "elb_vel" in f.message


def test_speed_without_velocity_or_position_is_not_assessable() -> None:
    t = clock(1.0)
    ch = channels(t)
    del ch["elb_vel"], ch["elb_pos"]
    f = only(speed_check.run(context(protocol(), stream(t, ch))))
    assert (f.kind, f.severity, f.quantity) == (Kind.NOT_ASSESSABLE, Severity.ERROR, "speed")


def test_per_direction_speed_limits() -> None:
    proto = protocol(
        {
            "joints": {
                "elbow": {
                    "speed": {
                        "planned": {"positive": "60 deg/s", "negative": "30 deg/s"},
                        "device": "90 deg/s",
                    }
                }
            }
        }
    )
    t = clock(2.0)
    vel = plateau(t, 0.0, 45.0, 0.2, 0.4) - plateau(t, 0.0, 45.0, 1.2, 1.4)
    f = only(speed_check.run(context(proto, stream(t, channels(t, elb_vel=deg(vel))))))
    assert (f.direction, f.limit) == ("negative", 30.0)
    assert f.t_start == pytest.approx(1.2, abs=DT)


def test_torque_over_device_limit_positive() -> None:
    t = clock(1.0)
    tau = plateau(t, 1.0, 13.0, 0.3, 0.35)
    found = torque.run(context(protocol(), stream(t, channels(t, elb_tau=tau))))
    assert keys(found) == {
        ("A103", "violation", "elbow", "torque", "planned", "positive"),
        ("A103", "violation", "elbow", "torque", "device", "positive"),
    }
    dev = next(f for f in found if f.layer == "device")
    assert (dev.peak, dev.limit, dev.unit, dev.severity) == (pytest.approx(13.0), 12.0, "N*m", Severity.ERROR)


def test_torque_missing_is_not_assessable() -> None:
    t = clock(1.0)
    ch = channels(t)
    del ch["elb_tau"]
    f = only(torque.run(context(protocol(), stream(t, ch))))
    assert f.kind is Kind.NOT_ASSESSABLE and f.channel == "elb_tau"


def test_acceleration_only_when_declared() -> None:
    t = clock(1.0)
    assert acceleration.run(context(protocol(), stream(t, channels(t)))) == []


def test_acceleration_from_position_second_derivative_constant_acceleration() -> None:
    # x = ½ a t² with a = 500 deg/s² between 0.2 s and 0.6 s (then constant speed): a closed-form 500 deg/s²
    proto = protocol(NO_VELOCITY, {"joints": {"elbow": {"acceleration": {"planned": "400 deg/s^2"}}}})
    t = clock(1.0)
    a = 500.0
    tt = np.clip(t - 0.2, 0.0, 0.4)
    pos = 20.0 + 0.5 * a * tt**2 + a * 0.4 * np.clip(t - 0.6, 0.0, None)
    ch = channels(t, elb_pos=deg(pos))
    del ch["elb_vel"]
    f = only(acceleration.run(context(proto, stream(t, ch))))
    assert (f.layer, f.direction, f.unit) == ("planned", "positive", "deg/s^2")
    assert f.peak == pytest.approx(a, rel=1e-6)
    assert f.t_start == pytest.approx(0.2, abs=11 * DT) and f.t_end == pytest.approx(0.6, abs=11 * DT)


def test_acceleration_from_the_velocity_channel() -> None:
    proto = protocol({"joints": {"elbow": {"acceleration": {"device": "400 deg/s^2"}}}})
    t = clock(1.0)
    vel = -500.0 * np.clip(t - 0.5, 0.0, 0.2)  # -500 deg/s² from 0.5 s to 0.7 s
    f = only(acceleration.run(context(proto, stream(t, channels(t, elb_vel=deg(vel))))))
    assert (f.direction, f.layer, f.limit) == ("negative", "device", 400.0)
    assert f.peak == pytest.approx(500.0, rel=1e-6) and f.channel == "elb_vel"


def test_acceleration_declared_without_any_usable_channel_is_not_assessable() -> None:
    proto = protocol({"joints": {"elbow": {"acceleration": {"device": "400 deg/s^2"}}}})
    t = clock(1.0)
    ch = channels(t)
    del ch["elb_vel"], ch["elb_pos"]
    f = only(acceleration.run(context(proto, stream(t, ch))))
    assert (f.code, f.kind, f.severity, f.quantity) == (
        "A104",
        Kind.NOT_ASSESSABLE,
        Severity.ERROR,
        "acceleration",
    )


def test_a_log_shorter_than_the_derivative_window_is_not_assessable_for_derived_speed() -> None:
    t = clock(0.01)  # 11 samples, window 21
    ch = channels(t)
    del ch["elb_vel"]
    f = only(speed_check.run(context(protocol(NO_VELOCITY), stream(t, ch))))
    assert f.kind is Kind.NOT_ASSESSABLE and "21-sample window" in f.message
