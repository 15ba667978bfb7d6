"""The stop profile against its closed form: t = t_r + v0/a, d = v0·t_r + v0²/(2a)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bracer.simulate.stopping import StopProfile


def test_references_worked_example() -> None:
    # REFERENCES.md "Stopping performance" [V]: v0 = 0.5, a = 2, t_r = 50 ms -> d = 87.5 mm, t = 300 ms
    # (constant deceleration after a reaction delay, any kinematics text).
    stop = StopProfile(v0=0.5, deceleration=2.0, reaction=0.05)
    assert stop.distance * 1000 == pytest.approx(87.5, abs=1e-12)
    assert stop.latency * 1000 == pytest.approx(300.0, abs=1e-12)


def test_sampled_profile_reaches_the_closed_form() -> None:
    # The same example sampled at 1 kHz: standstill at sample 300 with 87.5 mm travelled, speed constant for
    # the 50 ms reaction, then falling by a·dt = 2 mm/s per sample.
    stop = StopProfile(v0=0.5, deceleration=2.0, reaction=0.05)
    t = np.arange(0, 501) / 1000.0
    x, v, a = stop.evaluate(t)
    assert x[300] == pytest.approx(0.0875, abs=1e-15)
    assert np.all(x[300:] == x[300])
    assert np.all(v[:51] == 0.5)
    np.testing.assert_allclose(np.diff(v[50:301]), -0.002, atol=1e-15)
    assert v[299] > 0 and v[300] == 0
    assert np.all(a[51:300] == -2.0) and np.all(a[301:] == 0)
    # below a 0.105 m/s threshold from t_r + (v0 − v_s)/a = 0.05 + 0.1975 = 247.5 ms: first sample at 248 ms
    assert stop.time_below(0.105) == pytest.approx(0.2475)
    assert t[np.argmax(v < 0.105)] == pytest.approx(0.248)


def test_negative_speed_stops_the_other_way() -> None:
    stop = StopProfile(v0=-0.5, deceleration=2.0, reaction=0.05)
    assert stop.distance == pytest.approx(-0.0875)
    x, v, _ = stop.evaluate(np.array([0.3, 1.0]))
    assert x[0] == pytest.approx(-0.0875) and v[1] == 0


def test_a_joint_at_rest_has_no_latency() -> None:
    assert StopProfile(0.0, 5.0, 0.03).latency == 0.0


@pytest.mark.parametrize("bad", [dict(deceleration=0.0, reaction=0.1), dict(deceleration=1.0, reaction=-0.1)])
def test_refuses_impossible_parameters(bad: dict[str, float]) -> None:
    with pytest.raises(ValueError):
        StopProfile(v0=1.0, **bad)


@settings(max_examples=60, deadline=None)
@given(
    v0=st.floats(-3.0, 3.0).filter(lambda v: abs(v) > 1e-3), a=st.floats(0.5, 50.0), tr=st.floats(0.0, 0.5)
)
def test_integrated_speed_is_the_closed_form_distance(v0: float, a: float, tr: float) -> None:
    # Trapezoidal integral of the sampled speed (exact for a piecewise-linear speed up to the sample grid)
    # against d = v0·t_r + v0²/(2a).
    stop = StopProfile(v0, a, tr)
    t = np.linspace(0.0, stop.latency + 0.1, 200_001)
    _, v, _ = stop.evaluate(t)
    assert np.trapezoid(v, t) == pytest.approx(stop.distance, rel=1e-4, abs=1e-8)
    x, _, _ = stop.evaluate(np.array([stop.latency]))
    assert x[0] == pytest.approx(stop.distance, rel=1e-12, abs=1e-15)
