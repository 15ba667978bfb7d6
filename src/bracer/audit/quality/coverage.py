"""Analysed coverage: how much of the session's time each channel, and the session as a whole, was analysed.

A channel covers the time between two consecutive valid samples when that step is no longer than the gap
tolerance × the declared period (a shorter hole, e.g. one missing sample, is bridged as the gap rule allows).
The session's time runs from the earliest to the latest valid time of any stream.  The session's coverage is
the time during which *every* channel that was analysed at all was covered; channels with no analysed time
(missing, empty, frozen, wrong unit) are counted apart, so that one dead sensor does not hide what the
others show, and is never mistaken for a pass.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from bracer.audit.quality.runs import runs
from bracer.audit.quality.timebase import SLACK
from bracer.session.channelmap import StreamNeeds
from bracer.session.model import Session

__all__ = ["ChannelCoverage", "Coverage", "coverage"]


@dataclass(frozen=True, slots=True)
class ChannelCoverage:
    """One protocol column: present in the log or not, and the time it was analysed."""

    stream: str
    column: str
    role: str
    subject: str | None  # joint or contact; trigger or protection name for status columns
    present: bool
    analysed_s: float
    fraction: float  # of the session's time, 0..1


@dataclass(frozen=True, slots=True)
class Coverage:
    session_start: float | None  # s on the log clock
    session_end: float | None
    session_s: float
    analysed_s: float  # time during which every analysed channel was covered
    fraction: float  # analysed_s / session_s (0 when the session has no time)
    channels: tuple[ChannelCoverage, ...]

    @property
    def not_analysed(self) -> tuple[ChannelCoverage, ...]:
        """Channels the protocol names with no analysed time at all (missing or wholly invalid)."""
        return tuple(c for c in self.channels if c.analysed_s <= 0)


def _intervals(t: np.ndarray, valid: np.ndarray, allowed: float) -> tuple[np.ndarray, np.ndarray, float]:
    """Covered intervals [start, end] (s) and their total length, from the valid samples."""
    tv = t if valid.all() else t[valid]
    if tv.size < 2:
        empty = np.zeros(0)
        return empty, empty, 0.0
    dt = np.diff(tv)
    ok = (dt > 0) & (dt <= allowed * (1 + SLACK))
    first, last = runs(ok)
    return tv[first], tv[last + 1], float(dt[ok].sum())


def _intersection(intervals: list[tuple[np.ndarray, np.ndarray]]) -> float:
    """Length of the time covered by every one of the interval sets (a sweep over all boundaries)."""
    if not intervals:
        return 0.0
    k = len(intervals)
    times = np.concatenate([a for a, _ in intervals] + [b for _, b in intervals])
    delta = np.concatenate([np.ones(a.size) for a, _ in intervals] + [-np.ones(b.size) for _, b in intervals])
    order = np.lexsort((delta, times))  # at equal times, ends (-1) before starts (+1)
    times, count = times[order], np.cumsum(delta[order])
    return float(np.diff(times)[count[:-1] == k].sum())


def coverage(session: Session, needs: dict[str, StreamNeeds], gap_tolerance: float) -> Coverage:
    """Coverage per protocol column and for the session, from the masks the data-quality pass set."""
    bounds = []
    for name, s in session.streams.items():
        valid = session.time_valid.get(name, np.isfinite(s.time))
        if valid.any():  # first and last valid time, without a copy of the clock
            first, last = int(np.argmax(valid)), valid.size - 1 - int(np.argmax(valid[::-1]))
            bounds += [float(s.time[first]), float(s.time[last])]
    start, end = (min(bounds), max(bounds)) if bounds else (None, None)
    total = (end - start) if start is not None and end is not None else 0.0

    # Channels sharing one mask object share its intervals; the cache holds the mask so its id stays unique.
    cache: dict[int, tuple[np.ndarray, np.ndarray, np.ndarray, float]] = {}
    rows: list[ChannelCoverage] = []
    analysed: list[tuple[np.ndarray, np.ndarray]] = []
    for name, sn in needs.items():
        stream = session.streams.get(name)
        for column in sn.columns()[1:]:
            use = sn.uses_of(column)[0]
            valid = _valid(session, name, column) if stream is not None else None
            if stream is None or valid is None:
                rows.append(ChannelCoverage(name, column, use.role, use.owner, False, 0.0, 0.0))
                continue
            key = id(valid)
            if key not in cache:
                cache[key] = (valid, *_intervals(stream.time, valid, gap_tolerance / stream.expected_rate))
            _, a, b, length = cache[key]
            rows.append(
                ChannelCoverage(
                    name, column, use.role, use.owner, True, length, length / total if total > 0 else 0.0
                )
            )
            if length > 0:
                analysed.append((a, b))
    both = _intersection(analysed)
    return Coverage(start, end, total, both, both / total if total > 0 else 0.0, tuple(rows))


def _valid(session: Session, stream: str, column: str) -> np.ndarray | None:
    s = session.streams[stream]
    if column in s.channels:
        sig = session.signal(stream, column)
        return sig.valid if sig is not None else None
    if column in s.states:
        x = s.states[column]
        tv = session.time_valid.get(stream, np.isfinite(s.time))
        filled = np.isfinite(x) if x.dtype.kind == "f" else (x != "")
        return tv if filled.all() else filled & tv
    return None
