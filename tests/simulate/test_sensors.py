"""Sensor model: offset, noise and quantisation per channel."""

from __future__ import annotations

import math

import numpy as np
import pytest

from bracer.simulate.params import SensorModel, SensorSet
from bracer.simulate.sensors import channel_rng, measure, quantise


def test_encoder_quantisation_lands_on_counts() -> None:
    # A 17-bit encoder resolves 2π/2¹⁷ rad (common practice, no source): every reading is a whole count.
    step = 2 * math.pi / 2**17
    x = np.linspace(-1.0, 2.0, 10_001)
    q = quantise(x, step)
    counts = q / step
    np.testing.assert_allclose(counts, np.round(counts), atol=1e-9)
    assert np.max(np.abs(q - x)) <= step / 2 + 1e-15


def test_decimal_step_prints_as_short_decimals() -> None:
    q = quantise(np.array([20.4899999, 1.0051, -3.14159]), 0.01)
    assert [repr(float(v)) for v in q] == ["20.49", "1.01", "-3.14"]


def test_measure_adds_offset_noise_and_steps() -> None:
    model = SensorModel(noise=0.2, offset=0.3, step=1000 / 2**16)
    x = np.full(200_000, 10.0)
    reading, offset = measure(x, model, channel_rng(5, "main/ua_fz"))
    assert abs(offset) <= 0.3
    assert np.mean(reading) == pytest.approx(10.0 + offset, abs=0.005)  # mean of 2·10⁵ samples, σ/√n = 4.5e-4
    assert np.std(reading) == pytest.approx(math.hypot(0.2, model.step / math.sqrt(12)), rel=0.02)
    steps = reading / model.step
    np.testing.assert_allclose(steps, np.round(steps), atol=1e-9)


def test_each_channel_has_its_own_repeatable_noise() -> None:
    model = SensorSet().torque
    x = np.zeros(1000)
    a1, _ = measure(x, model, channel_rng(1, "main/elb_tau"))
    a2, _ = measure(x, model, channel_rng(1, "main/elb_tau"))
    b, _ = measure(x, model, channel_rng(1, "main/sh_flex_tau"))
    c, _ = measure(x, model, channel_rng(2, "main/elb_tau"))
    np.testing.assert_array_equal(a1, a2)
    assert not np.array_equal(a1, b) and not np.array_equal(a1, c)
