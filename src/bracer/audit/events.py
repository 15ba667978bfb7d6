"""Grouping samples over a limit into events.

A check compares a whole channel with a limit at once; the samples over it are then grouped into *events* on
run boundaries (``np.diff`` of a boolean mask), never sample by sample.  Two rules keep sensor noise from
producing a storm of findings:

* **hysteresis** -- once over the limit, an event only ends when the value falls ``band`` below the limit
  (the protocol's ``audit.hysteresis`` is a fraction of the limit; the caller turns it into ``band``);
* **minimum duration** -- events shorter than ``min_duration`` (``audit.min_event_duration``) are dropped.

Samples that are not valid (NaN, time not increasing, inside a gap) are never part of an event and always
split one: a value that was not analysed is neither over nor within a limit.

Times are seconds on the stream's own clock; indices are row numbers of that stream (``i_end`` inclusive).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Literal

import numpy as np

__all__ = [
    "Event",
    "find_events",
    "first_sustained",
    "first_sustained_where",
    "hold_last",
    "overlapping",
    "runs",
]

#: Slack for comparing durations built from float timestamps (hour-long logs: |t| ~ 3.6e3 s, ulp ~ 5e-13 s).
_TIME_EPS = 1e-9


@dataclass(frozen=True, slots=True)
class Event:
    """One run of samples over a limit.

    Attributes
    ----------
    i_start, i_end : int
        First and last sample of the event (inclusive), row numbers of the stream.
    i_peak : int
        Sample with the most extreme value (the first one where several are equal).
    t_start, t_end, t_peak : float
        Times of those samples, s.
    peak : float
        Value at ``i_peak``, in the unit of the signal (internal SI unit for checks).
    """

    i_start: int
    i_end: int
    i_peak: int
    t_start: float
    t_end: float
    t_peak: float
    peak: float

    @property
    def duration(self) -> float:
        """``t_end - t_start``, s (0 for a one-sample event)."""
        return self.t_end - self.t_start

    @property
    def n_samples(self) -> int:
        return self.i_end - self.i_start + 1

    def overlaps(self, other: Event) -> bool:
        """Whether the two sample spans share at least one sample."""
        return self.i_start <= other.i_end and other.i_start <= self.i_end


def runs(mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Start and inclusive end indices of the runs of True in a boolean mask.

    Parameters
    ----------
    mask : ndarray of bool, shape (n,)

    Returns
    -------
    starts, ends : ndarray of intp, shape (k,)
        ``mask[starts[j]:ends[j] + 1]`` is the j-th run of True.
    """
    m = np.asarray(mask, dtype=bool)
    n = m.shape[0]
    if n == 0:
        empty = np.zeros(0, dtype=np.intp)
        return empty, empty
    # One pass for the change points (about 3x cheaper than a diff of the padded mask); runs then alternate
    # start, end + 1, start, end + 1 ..., with 0 and n added when the mask begins / ends inside a run.
    change = np.flatnonzero(m[1:] != m[:-1])
    change += 1
    first, last = bool(m[0]), bool(m[-1])
    if first or last:
        head = np.zeros(1 if first else 0, dtype=np.intp)
        tail = np.full(1 if last else 0, n, dtype=np.intp)
        change = np.concatenate((head, change, tail))
    ends = change[1::2] - 1
    return change[0::2], ends


def _runs_of(mask: np.ndarray, idx: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """:func:`runs` of ``mask``, given ``idx = np.flatnonzero(mask)``: grouped from the indices when they are
    few (no further full-length pass), else from the mask's change points."""
    if idx.shape[0] * 8 >= mask.shape[0]:
        return runs(mask)
    breaks = np.flatnonzero(np.diff(idx) != 1)
    starts = np.concatenate((idx[:1], idx[breaks + 1]))
    ends = np.concatenate((idx[breaks], idx[-1:]))
    return starts, ends


def hold_last(values: np.ndarray, known: np.ndarray) -> np.ndarray:
    """Carry the last known value of a boolean series across unknown samples (False before the first known).

    Parameters
    ----------
    values : ndarray of bool, shape (n,)
        Meaningful where ``known``.
    known : ndarray of bool, shape (n,)

    Returns
    -------
    ndarray of bool, shape (n,)
        ``values`` where known; elsewhere the value of the last known sample before the run of unknowns.

    Vectorised on run boundaries: each run of unknown samples takes the value just before it.
    """
    out = values & known
    if known.all():
        return out
    starts, ends = runs(~known)
    before = out[np.maximum(starts - 1, 0)] & (starts > 0)
    out[~known] = np.repeat(before, ends - starts + 1)
    return out


def find_events(
    t: np.ndarray,
    x: np.ndarray,
    valid: np.ndarray,
    limit: float,
    *,
    side: Literal["above", "below"] = "above",
    band: float = 0.0,
    min_duration: float = 0.0,
    inclusive: bool = False,
) -> tuple[Event, ...]:
    """Group the samples of ``x`` beyond ``limit`` into events.

    Parameters
    ----------
    t : ndarray, shape (n,), float64
        Sample times, s.
    x : ndarray, shape (n,)
        Values, in the same unit as ``limit`` and ``band``.
    valid : ndarray of bool, shape (n,)
        Samples fit to analyse; the others never belong to an event and split events.
    limit : float
        The limit.  ``side="above"``: a sample is over when ``x > limit`` (``>=`` with ``inclusive``);
        ``side="below"``: when ``x < limit`` (``<=``).
    band : float
        Hysteresis, >= 0, in the unit of ``x``: an event ends only when the value is back ``band`` inside the
        limit (``x <= limit - band`` above, ``x >= limit + band`` below).
    min_duration : float
        Events with ``t_end - t_start`` shorter than this (s) are dropped.
    inclusive : bool
        Count a value exactly at the limit as over it (used for "at or above a level").

    Returns
    -------
    tuple of Event
        In time order.  ``peak`` is the largest value (``above``) or the smallest (``below``).
    """
    above = side == "above"
    release = (limit - band if above else limit + band) if band > 0 else limit
    # Every sample over the limit is beyond the release level -- unless an inclusive limit meets a band below
    # the limit's float resolution (release == limit), which takes the general path below.
    over_within = not inclusive or (release < limit if above else release > limit)
    if band > 0 and over_within:
        # With hysteresis an event starts at a sample over the limit and lasts to the end of the run of valid
        # samples beyond the release level that holds it.  One full-length comparison finds both: the over
        # samples are among the (usually few) beyond ones.
        beyond = np.greater(x, release) if above else np.less(x, release)
        beyond &= valid
        b_idx = np.flatnonzero(beyond)
        if b_idx.shape[0] == 0:
            return ()
        xb = x[b_idx]
        if above:
            is_over = np.greater_equal(xb, limit) if inclusive else np.greater(xb, limit)
        else:
            is_over = np.less_equal(xb, limit) if inclusive else np.less(xb, limit)
        over_idx = b_idx[is_over]
        if over_idx.shape[0] == 0:
            return ()
        run_start, run_end = _runs_of(beyond, b_idx)
        # the first over sample at or after a run's start, if inside the run, starts the event
        j = np.searchsorted(over_idx, run_start)
        has = j < over_idx.shape[0]
        has[has] = over_idx[j[has]] <= run_end[has]
        starts, ends = over_idx[j[has]], run_end[has]
    else:
        if above:
            over = np.greater_equal(x, limit) if inclusive else np.greater(x, limit)
        else:
            over = np.less_equal(x, limit) if inclusive else np.less(x, limit)
        over &= valid
        o_idx = np.flatnonzero(over)
        if o_idx.shape[0] == 0:
            return ()
        if band > 0:  # inclusive, release == limit: an event starts at the first sample of an over-run
            release_beyond = np.greater(x, release) if above else np.less(x, release)
            release_beyond &= valid
            run_start, run_end = runs(release_beyond)
            over_at, _ = _runs_of(over, o_idx)
            j = np.searchsorted(over_at, run_start)
            has = j < over_at.shape[0]
            has[has] = over_at[j[has]] <= run_end[has]
            starts, ends = over_at[j[has]], run_end[has]
        else:
            starts, ends = _runs_of(over, o_idx)
    keep = (t[ends] - t[starts]) >= (min_duration - _TIME_EPS)
    starts, ends = starts[keep], ends[keep]
    events = []
    pick = np.argmax if above else np.argmin
    for s, e in zip(starts.tolist(), ends.tolist(), strict=True):  # a loop over events, not samples
        k = s + int(pick(x[s : e + 1]))
        events.append(Event(s, e, k, float(t[s]), float(t[e]), float(t[k]), float(x[k])))
    return tuple(events)


def overlapping(events: tuple[Event, ...], others: tuple[Event, ...]) -> list[bool]:
    """For each of ``events``, whether it shares a sample with one of ``others`` (both ordered, disjoint).

    O((m + k) log k) with a binary search on the others' ends, not a comparison of every pair.
    """
    if not others or not events:
        return [False] * len(events)
    o_start = np.fromiter((o.i_start for o in others), dtype=np.int64, count=len(others))
    o_end = np.fromiter((o.i_end for o in others), dtype=np.int64, count=len(others))
    e_start = np.fromiter((e.i_start for e in events), dtype=np.int64, count=len(events))
    e_end = np.fromiter((e.i_end for e in events), dtype=np.int64, count=len(events))
    k = np.searchsorted(o_end, e_start, side="left")  # first other ending at or after the event's start
    hit = k < o_end.shape[0]
    hit[hit] = o_start[k[hit]] <= e_end[hit]
    return hit.tolist()  # type: ignore[no-any-return]


def first_sustained(
    t: np.ndarray, starts: np.ndarray, ends: np.ndarray, i_from: int, hold: float
) -> int | None:
    """The first sample at or after ``i_from`` from which a condition holds for at least ``hold`` seconds.

    Parameters
    ----------
    t : ndarray, shape (n,)
        Sample times, s.
    starts, ends : ndarray of intp
        Runs of samples where the condition holds, as returned by :func:`runs`.
    i_from : int
        Earliest sample to consider.
    hold : float
        Time the condition must hold without a break, s.  A run that reaches the end of the log before
        ``hold`` has passed does not count: the condition was not shown to hold.

    Returns
    -------
    int or None
        The sample index, or None when no such time exists in the log.
    """
    k0 = int(np.searchsorted(ends, i_from, side="left"))
    if k0 >= ends.shape[0]:
        return None
    first = np.maximum(starts[k0:], i_from)
    ok = (t[ends[k0:]] - t[first]) >= (hold - _TIME_EPS)
    if not ok.any():
        return None
    return int(first[int(np.argmax(ok))])


#: First window of :func:`first_sustained_where`, samples (4 s at 1 kHz); it grows fourfold while undecided.
_FIRST_WINDOW = 4096


def first_sustained_where(
    t: np.ndarray,
    condition: Callable[[int, int], np.ndarray],
    i_from: int,
    hold: float,
    *,
    first_window: int = _FIRST_WINDOW,
) -> int | None:
    """:func:`first_sustained` of the runs of ``condition`` from ``i_from`` on, evaluated on a growing window.

    The same answer as ``first_sustained(t, *runs(mask), i_from, hold)`` for the whole-log mask, without
    building that mask: a stop settles within a second or so, so a short window after the trigger usually
    decides.  A run that reaches the window's end is undecided (it may go on) until the window grows past it
    or reaches the end of the log.

    Parameters
    ----------
    t : ndarray, shape (n,)
        Sample times, s.
    condition : callable (lo, hi) -> ndarray of bool, shape (hi - lo,)
        Whether the condition holds at samples ``lo .. hi - 1``.
    i_from : int
        Earliest sample to consider.
    hold : float
        Time the condition must hold without a break, s.
    first_window : int
        Samples in the first window (>= 1).

    Returns
    -------
    int or None
        The sample index, or None when no such time exists in the log.
    """
    n = t.shape[0]
    if i_from >= n:
        return None
    size = max(1, first_window)
    while True:
        hi = min(n, i_from + size)
        starts, ends = runs(condition(i_from, hi))
        decided = ends.shape[0]
        if hi < n and decided and ends[-1] == hi - i_from - 1:
            decided -= 1  # the last run touches the window's end: its true end is not known yet
        if decided:
            first = starts[:decided] + i_from
            ok = (t[ends[:decided] + i_from] - t[first]) >= (hold - _TIME_EPS)
            if ok.any():
                return int(first[int(np.argmax(ok))])
        if hi == n:
            return None
        size *= 4
