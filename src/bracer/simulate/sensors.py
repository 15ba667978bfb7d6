"""Sensor error: a constant offset, Gaussian noise and quantisation, applied to a whole channel at once."""

from __future__ import annotations

import math
import zlib

import numpy as np
from numpy.typing import NDArray

from bracer.simulate.params import SensorModel

__all__ = ["channel_rng", "measure", "quantise"]


def channel_rng(seed: int, column: str) -> np.random.Generator:
    """A generator of its own for each column, so that a channel's noise depends only on the seed and its
    name."""
    return np.random.default_rng([seed, zlib.crc32(column.encode("utf-8"))])


def quantise(x: NDArray[np.float64], step: float) -> NDArray[np.float64]:
    """Round to the nearest multiple of ``step`` (no rounding when ``step`` is 0); shape as ``x``.

    A decimal step (0.01, 0.1 ...) rounds to that many decimals, so that values print as short decimals.
    """
    return _quantise_into(x.copy(), step)


def _quantise_into(x: NDArray[np.float64], step: float) -> NDArray[np.float64]:
    """:func:`quantise`, overwriting ``x`` (no temporaries: whole channels are long)."""
    if step <= 0:
        return x
    decimals = -math.log10(step)
    if abs(decimals - round(decimals)) < 1e-9:
        return np.round(x, round(decimals), out=x)
    np.divide(x, step, out=x)
    np.round(x, out=x)
    x *= step
    return x


def measure(
    x: NDArray[np.float64], model: SensorModel, rng: np.random.Generator
) -> tuple[NDArray[np.float64], float]:
    """What the sensor logs for the true signal ``x`` (n,): ``quantise(x + offset + noise)``.

    Returns
    -------
    reading : ndarray, shape (n,)
        Same unit as ``x``.
    offset : float
        The channel's offset, drawn uniformly in ±``model.offset``.
    """
    offset = float(rng.uniform(-model.offset, model.offset)) if model.offset > 0 else 0.0
    noisy = x + offset
    if model.noise > 0:  # single-precision draws: twice as fast, and noise needs no more digits
        noise = rng.standard_normal(x.shape[0], dtype=np.float32)
        noise *= np.float32(model.noise)  # type: ignore[assignment]  # in-place keeps float32
        noisy += noise
    return _quantise_into(noisy, model.step), offset
