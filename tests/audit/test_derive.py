"""Savitzky–Golay derivative against published coefficients, scipy, polynomials and a min-jerk movement."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bracer.audit.derive import sample_period, savgol_derivative, window_length


def test_five_point_first_derivative_matches_the_published_coefficients() -> None:
    # Savitzky & Golay 1964, Anal. Chem. 36:1627 (REFERENCES.md [V]): 5-point quadratic first derivative
    # (-2, -1, 0, 1, 2) / (10 Δt).
    dt = 0.004
    t = np.arange(200) * dt
    rng = np.random.default_rng(7)
    x = np.cumsum(rng.normal(size=t.size))
    d = savgol_derivative(t, x, np.ones(t.size, bool), 5 * dt)
    assert d.window_samples == 5
    published = np.array([-2, -1, 0, 1, 2]) / (10 * dt)
    # np.convolve flips the kernel; correlate applies it as written
    expected = np.correlate(x, published, mode="valid")
    np.testing.assert_allclose(d.x[2:-2], expected, rtol=1e-10, atol=1e-9)


def test_matches_scipy_savgol_filter() -> None:
    # scipy.signal.savgol_filter(deriv=1) as the reference implementation, interior and edges (mode="interp")
    from scipy.signal import savgol_filter

    dt = 1e-3
    t = np.arange(3000) * dt
    x = np.sin(2 * np.pi * 1.3 * t) + 0.01 * np.random.default_rng(3).normal(size=t.size)
    d = savgol_derivative(t, x, np.ones(t.size, bool), 0.021)
    ref = savgol_filter(x, 21, 2, deriv=1, delta=dt, mode="interp")
    np.testing.assert_allclose(d.x, ref, rtol=1e-12, atol=1e-9)
    assert d.valid.all()


@pytest.mark.parametrize("deriv", [1, 2])
def test_exact_for_a_quadratic_including_the_edges(deriv: int) -> None:
    # A least-squares quadratic fit reproduces a quadratic exactly (Savitzky & Golay 1964): x = 3 + 2t - 4t²
    # has x' = 2 - 8t and x'' = -8 everywhere, the first and last half-windows included.
    t = np.arange(500) * 2e-3
    x = 3 + 2 * t - 4 * t**2
    d = savgol_derivative(t, x, np.ones(t.size, bool), 0.03, deriv=deriv)
    expected = 2 - 8 * t if deriv == 1 else np.full(t.size, -8.0)
    np.testing.assert_allclose(d.x, expected, atol=1e-8)


def test_min_jerk_peak_speed() -> None:
    # Flash & Hogan 1985, J. Neurosci. 5:1688: x(τ) = D (10τ³ − 15τ⁴ + 6τ⁵), τ = t/T, has its peak speed
    # 1.875 D/T at τ = 0.5.  D = 60 deg over T = 0.8 s, logged at 1 kHz, speed derived with the 21 ms window.
    D, T = np.deg2rad(60.0), 0.8
    t = np.arange(0, 1.2, 1e-3)
    tau = np.clip(t / T, 0, 1)
    x = D * (10 * tau**3 - 15 * tau**4 + 6 * tau**5)
    d = savgol_derivative(t, x, np.ones(t.size, bool), 0.021)
    k = int(np.argmax(d.x))
    assert d.x[k] == pytest.approx(1.875 * D / T, rel=1e-3)
    assert t[k] == pytest.approx(T / 2, abs=1e-3)  # a centred window: no phase delay


def test_centred_window_has_no_delay_on_a_ramp() -> None:
    t = np.arange(1000) * 1e-3
    x = np.where(t < 0.5, 0.0, (t - 0.5) * 2.0)  # a kink at 0.5 s
    d = savgol_derivative(t, x, np.ones(t.size, bool), 0.021)
    assert d.delay_s == 0.0
    # the derivative reaches half the final speed at the kink itself: symmetric about it
    crossing = t[np.argmax(d.x >= 1.0)]
    assert crossing == pytest.approx(0.5, abs=1e-3)


@pytest.mark.parametrize(
    ("window", "dt", "expected"),
    [(0.021, 1e-3, 21), (0.020, 1e-3, 21), (0.0, 1e-3, 3), (0.021, 2e-3, 11), (0.05, 0.01, 5)],
)
def test_window_length_is_odd_and_nearest(window: float, dt: float, expected: int) -> None:
    assert window_length(window, dt) == expected


def test_invalid_samples_invalidate_their_half_window_both_sides() -> None:
    t = np.arange(200) * 1e-3
    x = np.sin(t)
    valid = np.ones(t.size, bool)
    valid[100] = False
    x[100] = np.nan
    d = savgol_derivative(t, x, valid, 0.021)
    assert not d.valid[90:111].any()
    assert d.valid[:90].all() and d.valid[111:].all()
    assert np.isfinite(d.x[d.valid]).all() and np.isnan(d.x[~d.valid]).all()


def test_a_time_gap_invalidates_windows_across_it() -> None:
    t = np.arange(200) * 1e-3
    t[100:] += 0.05  # 50 sample periods missing
    d = savgol_derivative(t, np.sin(t), np.ones(t.size, bool), 0.021)
    assert not d.valid[95:105].any()
    assert d.valid[:89].all() and d.valid[111:].all()


def test_a_log_shorter_than_the_window_gives_no_valid_sample() -> None:
    t = np.arange(10) * 1e-3
    d = savgol_derivative(t, t.copy(), np.ones(10, bool), 0.021)
    assert not d.valid.any()


def test_describe_states_window_and_delay() -> None:
    t = np.arange(100) * 1e-3
    text = savgol_derivative(t, t.copy(), np.ones(100, bool), 0.021).describe()
    assert "21 samples" in text and "21 ms" in text and "no phase delay (0 s)" in text


def test_sample_period_is_the_median_step() -> None:
    t = np.array([0.0, 0.001, 0.002, 0.010, 0.011, 0.012])
    assert sample_period(t) == pytest.approx(0.001)
    assert np.isnan(sample_period(np.array([1.0])))


@settings(max_examples=50, deadline=None)
@given(a=st.floats(-100, 100), b=st.floats(-100, 100), c=st.floats(-100, 100), w=st.sampled_from([5, 11, 21]))
def test_derivative_is_linear_and_exact_on_quadratics(a: float, b: float, c: float, w: int) -> None:
    t = np.arange(100) * 1e-3
    x = a + b * t + c * t**2
    d = savgol_derivative(t, x, np.ones(t.size, bool), w * 1e-3)
    np.testing.assert_allclose(d.x, b + 2 * c * t, atol=1e-6 * (1 + abs(b) + abs(c)))
