"""Minimum-jerk movements against the closed form of Flash & Hogan 1985 (J. Neurosci. 5:1688)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.polynomial import Polynomial

from bracer.simulate.minjerk import (
    PEAK_ACCELERATION_FACTOR,
    PEAK_SPEED_FACTOR,
    duration_for,
    shape,
    shape_acceleration,
    shape_speed,
)
from bracer.simulate.timeline import HOLD, MOVE, Segment, Timeline

# Flash & Hogan 1985: x(τ) = x0 + (xf − x0)(10τ³ − 15τ⁴ + 6τ⁵).  The polynomial and its derivatives, computed
# by numpy's polynomial class (an independent route to the same closed form).
QUINTIC = Polynomial([0, 0, 0, 10, -15, 6])


def test_shape_is_the_published_quintic_and_its_derivatives() -> None:
    tau = np.linspace(0.0, 1.0, 1001)
    np.testing.assert_allclose(shape(tau), QUINTIC(tau), atol=1e-14)
    np.testing.assert_allclose(shape_speed(tau), QUINTIC.deriv(1)(tau), atol=1e-12)
    np.testing.assert_allclose(shape_acceleration(tau), QUINTIC.deriv(2)(tau), atol=1e-11)


def test_rest_to_rest_ends() -> None:
    # Flash & Hogan 1985: the movement starts and ends at rest, with zero acceleration.
    ends = np.array([0.0, 1.0])
    np.testing.assert_array_equal(shape(ends), [0.0, 1.0])
    np.testing.assert_array_equal(shape_speed(ends), [0.0, 0.0])
    np.testing.assert_array_equal(shape_acceleration(ends), [0.0, 0.0])


def test_peak_speed_is_1_875_d_over_t_at_mid_time() -> None:
    # Flash & Hogan 1985: peak speed 1.875·D/T at τ = 1/2 (30·(1/4)² = 15/8).
    tau = np.linspace(0.0, 1.0, 100_001)
    speed = shape_speed(tau)
    assert PEAK_SPEED_FACTOR == 1.875
    assert tau[np.argmax(speed)] == pytest.approx(0.5, abs=1e-5)
    assert speed.max() == pytest.approx(1.875, rel=1e-12)


def test_peak_acceleration_is_10_over_root_3() -> None:
    # d²s/dτ² = 60τ(1 − τ)(1 − 2τ) is largest at τ = 1/2 − √3/6, where it equals 10/√3 (calculus on the
    # quintic).
    tau = np.linspace(0.0, 1.0, 100_001)
    acc = shape_acceleration(tau)
    assert tau[np.argmax(acc)] == pytest.approx(0.5 - math.sqrt(3) / 6, abs=1e-5)
    assert acc.max() == pytest.approx(10 / math.sqrt(3), rel=1e-9)
    assert pytest.approx(5.773502691896258) == PEAK_ACCELERATION_FACTOR


def test_a_timeline_move_has_the_closed_form_speed_at_every_sample() -> None:
    # A 60 deg move in 2 s: peak 1.875·60/2 = 56.25 deg/s at t = 1 s (Flash & Hogan 1985).
    x0, xf, t_move = np.radians([10.0]), np.radians([70.0]), 2.0
    tl = Timeline.from_segments([Segment(0.0, MOVE, x0, xf, t_move), Segment(t_move, HOLD, xf, xf)], joints=1)
    t = np.arange(0, 2001) / 1000.0
    q, qd, qdd = tl.evaluate(t)
    assert np.degrees(qd[1000, 0]) == pytest.approx(56.25, rel=1e-12)
    assert np.degrees(qd[:, 0]).max() == pytest.approx(56.25, rel=1e-12)
    assert qd[0, 0] == 0 and qd[-1, 0] == 0 and qdd[0, 0] == 0 and abs(qdd[-1, 0]) < 1e-15
    np.testing.assert_allclose(q[:, 0], x0 + (xf - x0) * QUINTIC(t / t_move), atol=1e-14)


@settings(max_examples=50, deadline=None)
@given(
    distance=st.floats(0.01, 3.0),
    speed=st.floats(0.05, 5.0),
    accel=st.one_of(st.none(), st.floats(0.1, 50.0)),
)
def test_duration_for_keeps_both_peaks_and_meets_one(
    distance: float, speed: float, accel: float | None
) -> None:
    # Inverting peak speed 1.875·D/T and peak acceleration (10/√3)·D/T²: the result meets the tighter bound.
    t = float(duration_for(distance, speed, accel))
    peak_v = PEAK_SPEED_FACTOR * distance / t
    peak_a = PEAK_ACCELERATION_FACTOR * distance / t**2
    assert peak_v <= speed * (1 + 1e-12)
    if accel is None:
        assert peak_v == pytest.approx(speed)
    else:
        assert peak_a <= accel * (1 + 1e-12)
        assert peak_v == pytest.approx(speed) or peak_a == pytest.approx(accel)
