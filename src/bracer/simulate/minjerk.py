"""Minimum-jerk point-to-point movement (Flash & Hogan 1985, J. Neurosci. 5:1688).

A movement from ``x0`` to ``xf`` in time ``T`` that minimises the integrated squared jerk follows

    x(τ) = x0 + (xf − x0)·s(τ),   s(τ) = 10τ³ − 15τ⁴ + 6τ⁵,   τ = t/T ∈ [0, 1]

with zero speed and acceleration at both ends.  Peak speed is ``1.875·D/T`` at mid-time (D = xf − x0) and peak
acceleration ``(10/√3)·D/T²`` at τ = ½ ∓ √3/6.  Every function here takes whole arrays; units are whatever the
caller uses for ``x`` and ``t`` (the simulator uses rad and s).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = [
    "PEAK_ACCELERATION_FACTOR",
    "PEAK_SPEED_FACTOR",
    "duration_for",
    "shape",
    "shape_acceleration",
    "shape_speed",
]

#: Peak speed of a minimum-jerk movement is this times D/T (at τ = 0.5).
PEAK_SPEED_FACTOR = 1.875
#: Peak |acceleration| is this times D/T² (at τ = 0.5 ∓ √3/6).
PEAK_ACCELERATION_FACTOR = 10.0 / math.sqrt(3.0)


def shape(tau: ArrayLike) -> NDArray[np.float64]:
    """Normalised position s(τ) = 10τ³ − 15τ⁴ + 6τ⁵ (τ clipped to [0, 1]); shape as ``tau``."""
    t = np.clip(np.asarray(tau, dtype=np.float64), 0.0, 1.0)
    return t * t * t * (10.0 + t * (-15.0 + 6.0 * t))


def shape_speed(tau: ArrayLike) -> NDArray[np.float64]:
    """ds/dτ = 30τ²(1 − τ)² (zero outside [0, 1])."""
    t = np.clip(np.asarray(tau, dtype=np.float64), 0.0, 1.0)
    u = t * (1.0 - t)
    return 30.0 * u * u


def shape_acceleration(tau: ArrayLike) -> NDArray[np.float64]:
    """d²s/dτ² = 60τ(1 − τ)(1 − 2τ) (zero outside [0, 1])."""
    t = np.clip(np.asarray(tau, dtype=np.float64), 0.0, 1.0)
    return 60.0 * t * (1.0 - t) * (1.0 - 2.0 * t)


def duration_for(
    distance: ArrayLike,
    peak_speed: ArrayLike,
    peak_acceleration: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Shortest duration whose minimum-jerk movement over ``distance`` stays within the given peaks.

    Parameters
    ----------
    distance : array_like
        |xf − x0| per movement (any shape).
    peak_speed : array_like
        Largest allowed speed (same unit per time), broadcast against ``distance``; must be above zero.
    peak_acceleration : array_like, optional
        Largest allowed acceleration; None for no acceleration bound.

    Returns
    -------
    ndarray
        Duration ``T = max(1.875·D/v, √(5.7735·D/a))`` per movement, in the time unit of the inputs.
    """
    d = np.abs(np.asarray(distance, dtype=np.float64))
    t = PEAK_SPEED_FACTOR * d / np.asarray(peak_speed, dtype=np.float64)
    if peak_acceleration is not None:
        t = np.maximum(
            t, np.sqrt(PEAK_ACCELERATION_FACTOR * d / np.asarray(peak_acceleration, dtype=np.float64))
        )
    return np.asarray(t, dtype=np.float64)
