"""The closed-form physics of the review, against worked examples outside the project."""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from bracer.review import physics


def test_stopping_distance_and_time_kinematics_example() -> None:
    # Constant deceleration after a reaction delay, any kinematics text (REFERENCES.md, [V]):
    # v0 = 0.5 m/s, a = 2 m/s^2, t_r = 50 ms -> d = v0*t_r + v0^2/(2a) = 87.5 mm, t = t_r + v0/a = 300 ms.
    assert physics.stopping_distance(0.5, 0.050, 2.0) == pytest.approx(0.0875, rel=1e-12)
    assert physics.stopping_time(0.5, 0.050, 2.0) == pytest.approx(0.300, rel=1e-12)


def test_stopping_angular_analogue_same_numbers_in_rad() -> None:
    # The same example for a joint: 0.5 rad/s, 2 rad/s^2, 50 ms -> 0.0875 rad in 300 ms (REFERENCES.md, [V]).
    assert physics.stopping_distance(0.5, 0.05, 2.0) == pytest.approx(0.0875)
    assert physics.stopping_time(0.5, 0.05, 2.0) == pytest.approx(0.3)


def test_inverse_gives_back_the_speed_of_the_example() -> None:
    # Inverse of the kinematics example (REFERENCES.md, [V]): v = a(−t_r + √(t_r² + 2d/a));
    # d = 87.5 mm -> 0.5 m/s.
    assert physics.largest_speed_within_distance(0.0875, 0.05, 2.0) == pytest.approx(0.5, rel=1e-12)


def test_largest_speed_within_time() -> None:
    # t = t_r + v/a solved for v: budget 300 ms, t_r 50 ms, a 2 m/s^2 -> 0.5 m/s (same example).
    assert physics.largest_speed_within_time(0.3, 0.05, 2.0) == pytest.approx(0.5)
    assert physics.largest_speed_within_time(0.04, 0.05, 2.0) == 0.0


def test_no_room_means_no_speed_and_bad_inputs_raise() -> None:
    assert physics.largest_speed_within_distance(0.0, 0.05, 2.0) == 0.0
    with pytest.raises(ValueError, match="room"):
        physics.largest_speed_within_distance(-0.1, 0.05, 2.0)
    with pytest.raises(ValueError, match="deceleration"):
        physics.stopping_distance(0.5, 0.05, 0.0)


@given(room=st.floats(1e-6, 10.0), t_r=st.floats(0.0, 1.0), a=st.floats(1e-2, 1e4))
def test_inverse_is_the_inverse(room: float, t_r: float, a: float) -> None:
    v = physics.largest_speed_within_distance(room, t_r, a)
    assert physics.stopping_distance(v, t_r, a) == pytest.approx(room, rel=1e-6, abs=1e-12)


@given(v=st.floats(0.0, 10.0), dv=st.floats(1e-3, 1.0), t_r=st.floats(0.0, 1.0), a=st.floats(1e-2, 1e4))
def test_stopping_distance_grows_with_speed(v: float, dv: float, t_r: float, a: float) -> None:
    assert physics.stopping_distance(v + dv, t_r, a) > physics.stopping_distance(v, t_r, a)


def test_transient_contact_worked_example_hand() -> None:
    # ISO/TS 15066:2016 Annex A two-body model, worked check in REFERENCES.md ([C2] formula, [V] numbers):
    # hand & fingers, transient F = 280 N (2 x 140 N), k = 75 N/mm, m_H = 0.6 kg (Table A.3):
    # E = F^2/(2k) = 0.5227 J; v_max = F/sqrt(mu k): m_R = 1 kg -> 1.670 m/s, 5 kg -> 1.397, 20 kg -> 1.340.
    k = 75e3  # N/m
    assert physics.transient_energy(280.0, k) == pytest.approx(0.5227, abs=5e-5)
    for m_r, v in ((1.0, 1.670), (5.0, 1.397), (20.0, 1.340)):
        assert physics.transient_speed_limit(280.0, k, 0.6, m_r) == pytest.approx(v, abs=5e-4)


def test_reduced_mass_and_energy_balance() -> None:
    # Energy balance of the same model: E = ½ μ v² at v_max equals F²/(2k) (Annex A, [C2]).
    mu = physics.reduced_mass(0.6, 5.0)
    assert mu == pytest.approx(1 / (1 / 0.6 + 1 / 5.0))
    v = physics.transient_speed_limit(280.0, 75e3, 0.6, 5.0)
    assert 0.5 * mu * v**2 == pytest.approx(physics.transient_energy(280.0, 75e3))
    with pytest.raises(ValueError):
        physics.reduced_mass(0.0, 1.0)
    assert math.isfinite(physics.transient_speed_limit(1.0, 1.0, 1.0, 1.0))
