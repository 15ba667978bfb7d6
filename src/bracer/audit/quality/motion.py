"""Joint speed and rest, as the data-quality pass needs them (rest for the force offset, the rate of change of
position for the unit check).

The rate of change of position is a centred difference over the audit's derivative window,
(x[i+k] − x[i−k]) / (t[i+k] − t[i−k]) over valid samples -- robust to sensor noise, not the Savitzky–Golay
derivative the limit checks use.
"""

from __future__ import annotations

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality.timebase import time_valid
from bracer.session.model import Stream

__all__ = ["JointMotion", "joint_motion", "position_rate", "rest_on"]


class JointMotion:
    """A joint's speed magnitude (rad/s) on its stream's valid samples, sorted by time."""

    __slots__ = ("joint", "speed", "stream", "t")

    def __init__(self, joint: str, stream: str, t: np.ndarray, speed: np.ndarray) -> None:
        self.joint = joint
        self.stream = stream
        self.t = t  # shape (m,), increasing
        self.speed = speed  # shape (m,), NaN where unknown


def position_rate(t: np.ndarray, x: np.ndarray, valid: np.ndarray, window: float) -> np.ndarray:
    """Rate of change of ``x`` (unit of x per s), shape (n,); NaN where the window leaves the valid samples or
    spans a gap (its length more than 25 % off 2k median steps).

    Parameters
    ----------
    t, x : ndarray, shape (n,)
        Time (s, increasing over ``valid``) and values.
    valid : ndarray of bool, shape (n,)
    window : float
        Width of the centred difference, s.
    """
    out = np.full(x.shape, np.nan)
    idx = np.flatnonzero(valid & np.isfinite(x))
    if idx.size < 3:
        return out
    tv, xv = t[idx], x[idx]
    step = float(np.median(np.diff(tv)))
    k = max(1, round(window / step / 2)) if step > 0 else 1
    if idx.size <= 2 * k:
        return out
    span = tv[2 * k :] - tv[: -2 * k]
    rate = (xv[2 * k :] - xv[: -2 * k]) / span
    # a window across a gap or a jump of the clock measures nothing: leave it out
    regular = np.abs(span - 2 * k * step) <= 0.25 * 2 * k * step
    out[idx[k:-k]] = np.where(regular, rate, np.nan)
    return out


def joint_motion(ctx: AuditContext) -> list[JointMotion]:
    """Speed of every joint that logs a velocity or a position (velocity preferred)."""
    protocol = ctx.resolution.protocol
    window = protocol.audit.derivative_window.si
    out: list[JointMotion] = []
    for name, joint in protocol.joints.items():
        ch = joint.channels
        for ref, derive in ((ch.velocity, False), (ch.position, True)):
            if ref is None:
                continue
            sig = ctx.session.signal(ref.stream, ref.column)
            stream = ctx.session.streams.get(ref.stream)
            if sig is None or stream is None:
                continue
            tv = time_valid(ctx, stream)
            speed = np.abs(
                position_rate(sig.t, sig.x, sig.valid, window)
                if derive
                else np.where(sig.valid, sig.x, np.nan)
            )
            out.append(JointMotion(name, ref.stream, sig.t[tv], speed[tv]))
            break
    return out


def rest_on(stream: Stream, valid: np.ndarray, motions: list[JointMotion], threshold: float) -> np.ndarray:
    """True at samples of ``stream`` where every joint's last known speed is below ``threshold`` (rad/s).

    A joint whose speed is unknown at that time (before its first sample, NaN) counts as not at rest.
    """
    t = stream.time
    rest = valid.copy()
    for m in motions:
        if m.t.size == 0:
            return np.zeros(t.shape, dtype=bool)
        k = np.searchsorted(m.t, np.where(np.isfinite(t), t, -np.inf), side="right") - 1
        inside = (k >= 0) & (t <= m.t[-1] + 1e-12)
        speed = m.speed[np.clip(k, 0, m.t.size - 1)]
        with np.errstate(invalid="ignore"):
            rest &= inside & (speed < threshold)
    return rest
