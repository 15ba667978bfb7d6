"""The windowed sustained-condition search and the change-point run finder agree with their whole-log forms.

The references are written out here from their definitions (a padded ``np.diff`` of the mask for the runs;
the runs of the whole-log mask for the sustained search), so a faster form cannot drift from them.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from bracer.audit.events import first_sustained, first_sustained_where, runs


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
