"""Event grouping: run boundaries, hysteresis, minimum duration, invalid samples, sustained conditions."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from bracer.audit.events import Event, find_events, first_sustained, hold_last, overlapping, runs

T10 = np.arange(10) / 10.0


@pytest.mark.parametrize(
    ("mask", "starts", "ends"),
    [
        ([0, 0, 0], [], []),
        ([1, 1, 1], [0], [2]),
        ([1, 0, 1], [0, 2], [0, 2]),
        ([0, 1, 1, 0, 0, 1], [1, 5], [2, 5]),
        ([], [], []),
    ],
)
def test_runs(mask: list[int], starts: list[int], ends: list[int]) -> None:
    s, e = runs(np.array(mask, dtype=bool))
    assert s.tolist() == starts and e.tolist() == ends


def test_hold_last_carries_known_values_over_unknown_runs() -> None:
    values = np.array([1, 1, 0, 0, 1, 0, 0, 1], dtype=bool)
    known = np.array([0, 1, 0, 1, 1, 0, 0, 1], dtype=bool)
    assert hold_last(values, known).tolist() == [False, True, True, False, True, True, True, True]
    assert hold_last(values, np.ones(8, bool)).tolist() == values.tolist()


def test_event_fields() -> None:
    x = np.array([0, 0, 2, 5, 3, 0, 0, 0, 4, 0], dtype=float)
    ev = find_events(T10, x, np.ones(10, bool), 1.0)
    assert ev == (
        Event(2, 4, 3, 0.2, 0.4, 0.3, 5.0),
        Event(8, 8, 8, 0.8, 0.8, 0.8, 4.0),
    )
    assert ev[0].duration == pytest.approx(0.2) and ev[0].n_samples == 3


def test_strict_and_inclusive_comparison() -> None:
    x = np.array([0, 1, 1, 0, 0, 0, 0, 0, 0, 0], dtype=float)
    assert find_events(T10, x, np.ones(10, bool), 1.0) == ()
    assert len(find_events(T10, x, np.ones(10, bool), 1.0, inclusive=True)) == 1


def test_below_side_reports_the_minimum() -> None:
    x = np.array([0, -2, -5, -1, 0, 0, 0, 0, 0, 0], dtype=float)
    (ev,) = find_events(T10, x, np.ones(10, bool), -1.5, side="below")
    assert (ev.i_start, ev.i_end, ev.peak, ev.t_peak) == (1, 2, -5.0, 0.2)


def test_hysteresis_merges_dips_inside_the_band_and_ends_below_it() -> None:
    x = np.array([0, 11, 9.5, 11, 9.5, 8.9, 11, 0, 0, 0], dtype=float)
    valid = np.ones(10, bool)
    assert len(find_events(T10, x, valid, 10.0)) == 3
    evs = find_events(T10, x, valid, 10.0, band=1.0)  # ends at <= 9
    assert [(e.i_start, e.i_end) for e in evs] == [(1, 4), (6, 6)]


def test_minimum_duration_drops_short_events() -> None:
    x = np.array([0, 5, 0, 5, 5, 5, 0, 0, 0, 0], dtype=float)
    evs = find_events(T10, x, np.ones(10, bool), 1.0, min_duration=0.2)
    assert [(e.i_start, e.i_end) for e in evs] == [(3, 5)]


def test_invalid_samples_split_and_never_count() -> None:
    x = np.array([0, 5, 5, 5, 5, 5, 0, 0, 0, 0], dtype=float)
    valid = np.ones(10, bool)
    valid[3] = False
    evs = find_events(T10, x, valid, 1.0, band=0.5)
    assert [(e.i_start, e.i_end) for e in evs] == [(1, 2), (4, 5)]
    nan = x.copy()
    nan[:] = np.nan
    assert find_events(T10, nan, np.zeros(10, bool), 1.0) == ()


def test_first_sustained() -> None:
    t = np.arange(20) / 10.0
    mask = np.zeros(20, bool)
    mask[3:5] = True  # 0.1 s: too short for 0.3 s
    mask[8:14] = True  # 0.5 s
    s, e = runs(mask)
    assert first_sustained(t, s, e, 0, 0.3) == 8
    assert first_sustained(t, s, e, 10, 0.3) == 10  # inside a run: from i_from
    assert first_sustained(t, s, e, 12, 0.3) is None  # only 0.1 s left of the run
    mask[15:] = True  # runs to the end of the log: 0.4 s, not shown to hold 0.5 s
    s, e = runs(mask)
    assert first_sustained(t, s, e, 14, 0.5) is None
    assert first_sustained(t, s, e, 14, 0.4) == 15


@settings(max_examples=200, deadline=None)
@given(
    x=arrays(np.float64, st.integers(1, 60), elements=st.floats(-10, 10, allow_nan=False)),
    limit=st.floats(-5, 5),
    band=st.floats(0, 3),
    data=st.data(),
)
def test_events_are_ordered_disjoint_valid_and_cover_every_sample_over(x, limit, band, data) -> None:  # type: ignore[no-untyped-def]
    n = x.shape[0]
    valid = data.draw(arrays(np.bool_, n))
    t = np.arange(n) * 0.01
    evs = find_events(t, x, valid, limit, band=band)
    covered = np.zeros(n, bool)
    last_end = -1
    for e in evs:
        assert last_end < e.i_start <= e.i_peak <= e.i_end < n
        assert valid[e.i_start : e.i_end + 1].all()
        assert x[e.i_start] > limit  # an event starts on a sample over the limit
        assert e.peak == x[e.i_start : e.i_end + 1].max()
        assert t[0] <= e.t_start <= e.t_peak <= e.t_end <= t[-1]
        covered[e.i_start : e.i_end + 1] = True
        last_end = e.i_end
    over = valid & (x > limit)
    assert not (over & ~covered).any()  # no minimum duration: every sample over is in an event
    inside = x <= limit - band
    assert not (covered & inside).any()  # an event ends once the value is back by the band


def _oracle(x: np.ndarray, valid: np.ndarray, limit: float, band: float) -> list[tuple[int, int]]:
    """Sample-by-sample reference of the hysteresis rule (a plain loop, as a person would apply it)."""
    out: list[tuple[int, int]] = []
    start = None
    for i, (v, ok) in enumerate(zip(x.tolist(), valid.tolist(), strict=True)):
        if start is None:
            if ok and v > limit:
                start = i
        elif not ok or v <= limit - band:
            out.append((start, i - 1))
            start = None
    if start is not None:
        out.append((start, len(x) - 1))
    return out


@settings(max_examples=300, deadline=None)
@given(
    x=arrays(np.float64, st.integers(1, 80), elements=st.floats(-10, 10, allow_nan=False)),
    limit=st.floats(-5, 5),
    band=st.floats(0, 3),
    data=st.data(),
)
def test_events_match_a_sample_by_sample_reference(x, limit, band, data) -> None:  # type: ignore[no-untyped-def]
    valid = data.draw(arrays(np.bool_, x.shape[0]))
    t = np.arange(x.shape[0]) * 0.01
    got = [(e.i_start, e.i_end) for e in find_events(t, x, valid, limit, band=band)]
    assert got == _oracle(x, valid, limit, band)
    below = [(e.i_start, e.i_end) for e in find_events(t, -x, valid, -limit, side="below", band=band)]
    assert below == got


@settings(max_examples=200, deadline=None)
@given(
    a=st.lists(st.tuples(st.integers(0, 50), st.integers(0, 5)), max_size=8),
    b=st.lists(st.tuples(st.integers(0, 50), st.integers(0, 5)), max_size=8),
)
def test_overlapping_matches_pairwise_comparison(a, b) -> None:  # type: ignore[no-untyped-def]
    def events(spec: list[tuple[int, int]]) -> tuple[Event, ...]:
        out, last = [], -1
        for s, length in sorted(spec):
            if s <= last:
                continue
            out.append(Event(s, s + length, s, 0.0, 0.0, 0.0, 0.0))
            last = s + length
        return tuple(out)

    ea, eb = events(a), events(b)
    assert overlapping(ea, eb) == [any(e.overlaps(o) for o in eb) for e in ea]
