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

from dataclasses import dataclass
from typing import Literal

import numpy as np

__all__ = ["Event", "find_events", "first_sustained", "latch", "runs"]

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
    m = np.asarray(mask, dtype=bool).view(np.int8)
    edges = np.diff(m, prepend=np.int8(0), append=np.int8(0))
    starts = np.flatnonzero(edges == 1)
    ends = np.flatnonzero(edges == -1) - 1
    return starts, ends


def latch(on: np.ndarray, off: np.ndarray) -> np.ndarray:
    """A latch: True from a sample in ``on`` until the next sample in ``off`` (neither: keep the last state).

    Parameters
    ----------
    on, off : ndarray of bool, shape (n,)
        Samples that set and reset the latch (``on`` wins where both are True).

    Returns
    -------
    ndarray of bool, shape (n,)

    Vectorised: the index of the last sample that decided the state is carried forward with
    ``np.maximum.accumulate``; before the first deciding sample the state is False.
    """
    n = on.shape[0]
    idx = np.where(on | off, np.arange(n, dtype=np.int64), -1)
    np.maximum.accumulate(idx, out=idx)
    state = on[np.maximum(idx, 0)]
    state &= idx >= 0
    return state


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
    if above:
        over = np.greater_equal(x, limit) if inclusive else np.greater(x, limit)
    else:
        over = np.less_equal(x, limit) if inclusive else np.less(x, limit)
    over &= valid
    if not over.any():
        return ()
    if band > 0:
        release = limit - band if above else limit + band
        inside = np.less_equal(x, release) if above else np.greater_equal(x, release)
        inside |= ~valid
        on = latch(over, inside)
    else:
        on = over
    starts, ends = runs(on)
    keep = (t[ends] - t[starts]) >= (min_duration - _TIME_EPS)
    starts, ends = starts[keep], ends[keep]
    events = []
    pick = np.argmax if above else np.argmin
    for s, e in zip(starts.tolist(), ends.tolist(), strict=True):  # a loop over events, not samples
        k = s + int(pick(x[s : e + 1]))
        events.append(Event(s, e, k, float(t[s]), float(t[e]), float(t[k]), float(x[k])))
    return tuple(events)


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
