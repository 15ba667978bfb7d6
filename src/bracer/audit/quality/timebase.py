"""Facts about a stream's clock shared by the time checks and the coverage."""

from __future__ import annotations

from typing import Any

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import StreamTiming
from bracer.session.model import Stream

__all__ = ["SLACK", "median_step", "regular_steps", "time_valid", "timing"]

#: Relative slack on step comparisons: a step of exactly the allowed length, off by float rounding in the
#: log's time stamps (0.501 - 0.499 = 0.0020000000000000018), is not longer than allowed.
SLACK = 1e-9


def time_valid(ctx: AuditContext, stream: Stream) -> np.ndarray:
    """The stream's time mask so far (all True before the time checks ran)."""
    tv = ctx.session.time_valid.get(stream.name)
    return np.isfinite(stream.time) if tv is None else tv


def median_step(t: np.ndarray) -> float:
    """Median step of an increasing time vector, from up to three stretches of 20 000 steps (start, middle,
    end) so that an hour at 1 kHz costs no full-length median."""
    n = t.size
    if n < 2:
        return 0.0
    if n <= 60_001:
        return float(np.median(np.diff(t)))
    parts = [np.diff(t[a : a + 20_001]) for a in (0, n // 2 - 10_000, n - 20_001)]
    return float(np.median(np.concatenate(parts)))


def regular_steps(t: np.ndarray, valid: np.ndarray, tolerance: float, period: float) -> np.ndarray:
    """Steps between consecutive valid samples that are positive and at most ``tolerance`` × the reference
    step: the declared ``period``, or the median step where that is longer (a stream logged slower than
    declared still has a measurable rate).

    Returns
    -------
    ndarray, shape (m,), float64
        The regular steps, s (empty when there are fewer than two valid samples).
    """
    tv = t[valid] if not valid.all() else t
    if tv.size < 2:
        return np.zeros(0)
    dt = np.diff(tv)  # positive: valid times increase (the time checks ran first)
    dt = dt[dt > 0]
    if dt.size == 0:
        return dt
    reference = max(median_step(tv), period)
    return dt[dt <= tolerance * reference * (1 + SLACK)]


def timing(ctx: AuditContext, stream: Stream) -> StreamTiming:
    """Measured rate (1 / mean regular step) and jitter (standard deviation of the regular steps)."""
    tv = time_valid(ctx, stream)
    steps = regular_steps(
        stream.time, tv, ctx.resolution.protocol.audit.gap_tolerance, 1 / stream.expected_rate
    )
    t_ok = stream.time[tv] if not tv.all() else stream.time
    first = float(t_ok[0]) if t_ok.size else None
    last = float(t_ok[-1]) if t_ok.size else None
    rate = jitter = None
    if steps.size >= 2:
        mean = float(steps.mean())
        rate, jitter = 1.0 / mean, float(steps.std())
    return StreamTiming(
        stream.name, stream.source.path, stream.n, first, last, stream.expected_rate, rate, jitter
    )


def stream_span(ctx: AuditContext, name: str) -> dict[str, Any]:
    """``t_start``, ``t_end``, ``i_start``, ``i_end`` of a stream's valid samples (empty when it has none)."""
    stream = ctx.session.streams.get(name)
    if stream is None:
        return {}
    idx = np.flatnonzero(time_valid(ctx, stream))
    if idx.size == 0:
        return {}
    return {
        "t_start": float(stream.time[idx[0]]),
        "t_end": float(stream.time[idx[-1]]),
        "i_start": int(idx[0]),
        "i_end": int(idx[-1]),
    }


def session_span(ctx: AuditContext) -> dict[str, Any]:
    """``t_start`` and ``t_end`` of the session: the earliest and latest valid time of any stream."""
    spans = [stream_span(ctx, name) for name in ctx.session.streams]
    starts = [s["t_start"] for s in spans if s]
    ends = [s["t_end"] for s in spans if s]
    return {"t_start": float(min(starts)), "t_end": float(max(ends))} if starts else {}
