"""Faster forms of the event machinery agree with references written from their definitions: the windowed
sustained-condition search, the change-point run finder, and event grouping on long quiet signals.

The references are written out here from their definitions (a padded ``np.diff`` of the mask for the runs;
the runs of the whole-log mask for the sustained search), so a faster form cannot drift from them.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from bracer.audit.events import find_events, first_sustained, first_sustained_where, runs


def _runs_by_diff(mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Runs of True from the padded first difference of the mask (the textbook form)."""
    edges = np.diff(mask.astype(np.int8), prepend=np.int8(0), append=np.int8(0))
    return np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1


@settings(max_examples=300, deadline=None)
@given(arrays(np.bool_, st.integers(0, 60)))
def test_runs_match_the_padded_difference(mask: np.ndarray) -> None:
    starts, ends = runs(mask)
    ref_starts, ref_ends = _runs_by_diff(mask)
    assert starts.dtype == ref_starts.dtype and ends.dtype == ref_ends.dtype
    assert starts.tolist() == ref_starts.tolist() and ends.tolist() == ref_ends.tolist()


def test_windowed_search_on_a_worked_case() -> None:
    # the case of test_events.test_first_sustained, with a one-sample first window so that every answer needs
    # the window to grow past runs that touch its end
    t = np.arange(20) / 10.0
    mask = np.zeros(20, bool)
    mask[3:5] = True  # 0.1 s: too short for 0.3 s
    mask[8:14] = True  # 0.5 s

    def cond(lo: int, hi: int) -> np.ndarray:
        return mask[lo:hi]

    assert first_sustained_where(t, cond, 0, 0.3, first_window=1) == 8
    assert first_sustained_where(t, cond, 10, 0.3, first_window=1) == 10
    assert first_sustained_where(t, cond, 12, 0.3, first_window=1) is None
    mask[15:] = True  # runs to the end of the log: 0.4 s, not shown to hold 0.5 s
    assert first_sustained_where(t, cond, 14, 0.5, first_window=1) is None
    assert first_sustained_where(t, cond, 14, 0.4, first_window=1) == 15
    assert first_sustained_where(t, cond, 20, 0.1) is None  # from beyond the log


@settings(max_examples=400, deadline=None)
@given(
    mask=arrays(np.bool_, st.integers(1, 80)),
    steps=st.lists(st.sampled_from([0.01, 0.01, 0.01, 0.03, -0.02, 0.0]), min_size=80, max_size=80),
    i_from=st.integers(0, 85),
    hold=st.sampled_from([0.0, 0.01, 0.02, 0.05, 0.2]),
    first_window=st.integers(1, 40),
)
def test_windowed_search_equals_whole_log_search(
    mask: np.ndarray, steps: list[float], i_from: int, hold: float, first_window: int
) -> None:
    # clocks with repeated stamps, longer steps and steps back: the windowed search must not assume order
    t = np.cumsum(np.asarray(steps[: mask.shape[0]]))
    starts, ends = runs(mask)
    expected = first_sustained(t, starts, ends, i_from, hold) if i_from < t.shape[0] else None

    def cond(lo: int, hi: int) -> np.ndarray:
        assert 0 <= lo < hi <= mask.shape[0]
        return mask[lo:hi].copy()

    assert first_sustained_where(t, cond, i_from, hold, first_window=first_window) == expected


def _oracle(
    x: np.ndarray, valid: np.ndarray, limit: float, band: float, inclusive: bool
) -> list[tuple[int, int]]:
    """Sample-by-sample reference of the hysteresis rule for limits with and without ``inclusive``."""

    def over(v: float) -> bool:
        return v >= limit if inclusive else v > limit

    def beyond(v: float) -> bool:
        return v > limit - band if band > 0 else over(v)

    out: list[tuple[int, int]] = []
    start = None
    for i, (v, ok) in enumerate(zip(x.tolist(), valid.tolist(), strict=True)):
        if start is None:
            if ok and over(v):
                start = i
        elif not ok or not beyond(v):
            out.append((start, i - 1))
            start = None
    if start is not None:
        out.append((start, len(x) - 1))
    return out


@settings(max_examples=150, deadline=None)
@given(
    seed=st.integers(0, 2**32 - 1),
    n=st.integers(50, 3000),
    spikes=st.integers(0, 12),
    band=st.sampled_from([0.0, 0.05, 0.3, 1.0]),
    inclusive=st.booleans(),
    invalid=st.sampled_from([0.0, 0.01, 0.3]),
)
def test_events_on_long_quiet_signals_match_the_reference(
    seed: int, n: int, spikes: int, band: float, inclusive: bool, invalid: float
) -> None:
    # long logs with a few excursions: the over and beyond samples are few (the grouping from their indices)
    rng = np.random.default_rng(seed)
    x = np.round(rng.normal(0.0, 0.2, n), 2)
    for at in rng.integers(0, n, spikes):
        width = int(rng.integers(1, 40))
        x[at : at + width] += np.round(rng.uniform(0.5, 2.0), 2)
    valid = rng.random(n) >= invalid
    t = np.arange(n) * 0.001
    limit = 1.0
    got = [(e.i_start, e.i_end) for e in find_events(t, x, valid, limit, band=band, inclusive=inclusive)]
    assert got == _oracle(x, valid, limit, band, inclusive)
    mirrored = find_events(t, -x, valid, -limit, side="below", band=band, inclusive=inclusive)
    assert [(e.i_start, e.i_end) for e in mirrored] == got
