"""Joint speed and rest, as the data-quality pass needs them (rest for the force offset, the rate of change of
position for the unit check).

The rate of change of position is a centred difference over the audit's derivative window,
(x[i+k] − x[i−k]) / (t[i+k] − t[i−k]) over valid samples -- robust to sensor noise, not the Savitzky–Golay
derivative the limit checks use.
"""

from __future__ import annotations

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality.timebase import median_step, time_valid
from bracer.session.model import Stream

__all__ = ["position_rate", "rate_samples", "rest_by_stream", "rest_on"]


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
    ok = valid & np.isfinite(x)
    whole = bool(ok.all())
    idx = None if whole else np.flatnonzero(ok)
    tv, xv = (t, x) if idx is None else (t[idx], x[idx])
    if tv.size < 3:
        return out
    step = median_step(tv)
    k = max(1, round(window / step / 2)) if step > 0 else 1
    if tv.size <= 2 * k:
        return out
    span = tv[2 * k :] - tv[: -2 * k]
    rate = (xv[2 * k :] - xv[: -2 * k]) / span
    # a window across a gap or a jump of the clock measures nothing: leave it out
    rate[np.abs(span - 2 * k * step) > 0.25 * 2 * k * step] = np.nan
    if idx is None:
        out[k:-k] = rate
    else:
        out[idx[k:-k]] = rate
    return out


def rate_samples(
    t: np.ndarray, x: np.ndarray, valid: np.ndarray, window: float, count: int
) -> tuple[np.ndarray, np.ndarray]:
    """The rate of change of ``x`` (as :func:`position_rate`) at about ``count`` evenly spread samples.

    Returns
    -------
    idx : ndarray of int, shape (m,)
        Sample indices.
    rate : ndarray, shape (m,)
        Rate of change there (NaN where the window spans a gap).
    """
    if not (valid.all() and np.isfinite(x).all()):
        full = position_rate(t, x, valid, window)
        idx = np.flatnonzero(np.isfinite(full))
        idx = idx[:: max(1, idx.size // count)]
        return idx, full[idx]
    step = median_step(t)
    k = max(1, round(window / step / 2)) if step > 0 else 1
    if t.size <= 2 * k:
        return np.zeros(0, dtype=np.int64), np.zeros(0)
    idx = np.arange(k, t.size - k, max(1, (t.size - 2 * k) // count))
    span = t[idx + k] - t[idx - k]
    rate = (x[idx + k] - x[idx - k]) / span
    rate[np.abs(span - 2 * k * step) > 0.25 * 2 * k * step] = np.nan
    return idx, rate


def _below(
    ctx: AuditContext, joint: str, window: float, threshold: float, scratch: dict[str, np.ndarray]
) -> tuple[str, np.ndarray] | None:
    """Where a joint's speed magnitude is known and below ``threshold`` (rad/s), on its stream; velocity
    preferred to position.  ``scratch`` holds one |v| buffer per stream, shared by its joints."""
    ch = ctx.resolution.protocol.joints[joint].channels
    for ref, derive in ((ch.velocity, False), (ch.position, True)):
        if ref is None:
            continue
        sig = ctx.session.signal(ref.stream, ref.column)
        if sig is None:
            continue
        if derive:
            return ref.stream, np.abs(position_rate(sig.t, sig.x, sig.valid, window)) < threshold
        speed = scratch.get(ref.stream)
        if speed is None or speed.shape != sig.x.shape:
            speed = scratch[ref.stream] = np.empty(sig.x.shape, dtype=np.float64)
        np.abs(sig.x, out=speed)
        below = np.less(speed, threshold)  # NaN compares False: unknown is not rest
        below &= sig.valid
        return ref.stream, below
    return None


def rest_by_stream(ctx: AuditContext, threshold: float) -> dict[str, tuple[np.ndarray, np.ndarray]] | None:
    """Per joint stream: the valid times (increasing) and whether every joint on it is below ``threshold``.

    None when no joint logs a velocity or a position.  A joint whose speed is unknown counts as moving.
    """
    window = ctx.resolution.protocol.audit.derivative_window.si
    still: dict[str, np.ndarray] = {}
    scratch: dict[str, np.ndarray] = {}
    for joint in ctx.resolution.protocol.joints:
        found = _below(ctx, joint, window, threshold, scratch)
        if found is None:
            continue
        name, below = found
        if name in still:
            still[name] &= below  # the first joint's mask is this function's own
        else:
            still[name] = below
    del scratch
    if not still:
        return None
    out: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    for name, mask in still.items():
        s = ctx.session.streams[name]
        tv = time_valid(ctx, s)
        out[name] = (s.time, mask & tv) if tv.all() else (s.time[tv], mask[tv])
    return out


def rest_on(stream: Stream, rests: dict[str, tuple[np.ndarray, np.ndarray]]) -> np.ndarray:
    """True at the samples of ``stream`` where every joint stream is at rest (its last sample at or before
    that time).  Before a joint stream's first or after its last sample there is no rest."""
    t = stream.time
    rest = np.ones(t.shape, dtype=bool)
    for name, (tj, still) in rests.items():
        if tj.size == 0:
            return np.zeros(t.shape, dtype=bool)
        if name == stream.name and tj.size == t.size:
            rest &= still
            continue
        k = np.searchsorted(tj, np.where(np.isfinite(t), t, -np.inf), side="right") - 1
        inside = (k >= 0) & (t <= tj[-1] + 1e-12)
        rest &= inside & still[np.clip(k, 0, tj.size - 1)]
    return rest
