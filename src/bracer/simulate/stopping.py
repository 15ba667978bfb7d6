"""A stop: a reaction delay, then constant deceleration to standstill.

After a stop request at t = 0 a joint moving at speed v0 keeps that speed for the reaction time t_r, then
brakes at constant deceleration a until it stands still.  In closed form (any kinematics text):

    stop time      t_stop = t_r + v0/a
    stop distance  d      = v0·t_r + v0²/(2a)
    below a speed threshold v_s (0 ≤ v_s < v0) from  t_r + (v0 − v_s)/a

The simulator evaluates the same profile sample by sample, so the latency and distance that a log shows are
known exactly.  Inputs in any consistent unit system (the simulator uses rad, rad/s, rad/s², s).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["StopProfile", "stop_kinematics"]


@dataclass(frozen=True, slots=True)
class StopProfile:
    """Closed-form stop of one joint.

    Attributes
    ----------
    v0 : float
        Signed speed at the stop request (joint unit per second).
    deceleration : float
        Magnitude of the braking deceleration, above zero.
    reaction : float
        Reaction time t_r (s), at least zero.
    """

    v0: float
    deceleration: float
    reaction: float

    def __post_init__(self) -> None:
        if not self.deceleration > 0:
            raise ValueError(f"deceleration must be above zero, found {self.deceleration}")
        if self.reaction < 0:
            raise ValueError(f"reaction time must be at least zero, found {self.reaction}")

    @property
    def braking_time(self) -> float:
        """v0/a: time spent braking (s)."""
        return abs(self.v0) / self.deceleration

    @property
    def latency(self) -> float:
        """t_r + v0/a: time from the request to standstill (s); zero for a joint already at rest."""
        return 0.0 if self.v0 == 0 else self.reaction + self.braking_time

    @property
    def distance(self) -> float:
        """v0·t_r + v0²/(2a): signed distance travelled from the request to standstill."""
        return float(np.sign(self.v0)) * (
            abs(self.v0) * self.reaction + self.v0**2 / (2.0 * self.deceleration)
        )

    def time_below(self, threshold: float) -> float:
        """Time from the request until |v| falls below ``threshold`` (s): t_r + (|v0| − v_s)/a, or 0."""
        if abs(self.v0) <= threshold:
            return 0.0
        return self.reaction + (abs(self.v0) - threshold) / self.deceleration

    def evaluate(self, t: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
        """Displacement, velocity and acceleration at times ``t`` (n,) after the request; see
        :func:`stop_kinematics`."""
        tt = np.asarray(t, dtype=np.float64)
        return stop_kinematics(
            tt,
            np.full_like(tt, self.v0),
            np.full_like(tt, self.deceleration),
            np.full_like(tt, self.reaction),
        )


def stop_kinematics(
    t: NDArray[np.float64],
    v0: NDArray[np.float64],
    deceleration: NDArray[np.float64],
    reaction: NDArray[np.float64],
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """The stop profile, elementwise over broadcastable arrays.

    Parameters
    ----------
    t : ndarray
        Seconds since the stop request (negative values are treated as 0).
    v0 : ndarray
        Signed speed at the request.
    deceleration : ndarray
        Braking deceleration magnitude (> 0 wherever ``v0`` is not 0).
    reaction : ndarray
        Reaction time, s.

    Returns
    -------
    x, v, a : ndarray
        Displacement since the request, velocity, acceleration (broadcast shape).
    """
    tt = np.maximum(t, 0.0)
    sgn = np.sign(v0)
    speed0 = np.abs(v0)
    decel = np.where(deceleration > 0, deceleration, 1.0)
    t_brake = speed0 / decel
    tb = np.clip(tt - reaction, 0.0, t_brake)
    x = sgn * (speed0 * np.minimum(tt, reaction) + speed0 * tb - 0.5 * decel * tb * tb)
    v = np.where(tt <= reaction, v0, sgn * (speed0 - decel * tb))
    braking = (tt > reaction) & (tt < reaction + t_brake)
    a = np.where(braking, -sgn * decel, 0.0)
    return x, v, a
