"""Decimation for plots: no extreme may vanish, whatever the data, the mask or the plot width."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from bracer.report.decimate import decimate


def _columns_of(t: np.ndarray, t0: float, t1: float, columns: int) -> np.ndarray:
    """The pixel column of each time, computed independently of the module (plain arithmetic, clipped)."""
    if t1 <= t0:
        return np.zeros(t.size, dtype=np.int64)
    return np.clip(np.floor((t - t0) / (t1 - t0) * columns), 0, columns - 1).astype(np.int64)


@st.composite
def signals(draw: st.DrawFn) -> tuple[np.ndarray, np.ndarray, np.ndarray, int]:
    n = draw(st.integers(1, 400))
    steps = draw(hnp.arrays(np.float64, n, elements=st.floats(1e-3, 1.0)))
    t = np.cumsum(steps)
    x = draw(hnp.arrays(np.float64, n, elements=st.floats(-1e6, 1e6) | st.just(float("nan"))))
    valid = draw(hnp.arrays(np.bool_, n))
    columns = draw(st.integers(1, 60))
    return t, x, valid, columns


@settings(max_examples=300, deadline=None)
@given(signals())
def test_every_column_keeps_its_minimum_and_maximum(
    sig: tuple[np.ndarray, np.ndarray, np.ndarray, int],
) -> None:
    t, x, valid, columns = sig
    t0, t1 = float(t[0]), float(t[-1])
    d = decimate(t, x, valid, t0, t1, columns)
    ok = valid & np.isfinite(x)
    # the kept samples are original samples, in time order, and only valid ones
    assert np.array_equal(d.t, t[d.index]) and np.array_equal(d.x, x[d.index])
    assert np.all(np.diff(d.index) > 0)
    assert np.all(ok[d.index])
    # every sample's extreme survives: per pixel column the kept min and max equal the original min and max
    col_all = _columns_of(t, t0, t1, columns)
    col_kept = _columns_of(d.t, t0, t1, columns)
    for c in np.unique(col_all[ok]):
        original = x[ok & (col_all == c)]
        kept = d.x[col_kept == c]
        assert kept.size > 0
        assert kept.min() == original.min() and kept.max() == original.max()
    # at most four samples per column and piece of line
    assert d.n <= 4 * columns * (1 + int(np.count_nonzero(np.diff(ok.astype(int)) == 1)))


@settings(max_examples=200, deadline=None)
@given(signals())
def test_the_line_is_broken_at_every_invalid_sample(
    sig: tuple[np.ndarray, np.ndarray, np.ndarray, int],
) -> None:
    t, x, valid, columns = sig
    d = decimate(t, x, valid, float(t[0]), float(t[-1]), columns)
    ok = valid & np.isfinite(x)
    for i, j, same in zip(d.index[:-1], d.index[1:], np.diff(d.piece) == 0, strict=True):
        # two kept samples are joined only when every sample between them is valid
        assert same == bool(ok[i : j + 1].all())


def test_a_one_sample_spike_in_a_million_survives() -> None:
    # An hour-long channel would hide a 1 ms spike under every-n-th subsampling; min/max decimation keeps it.
    n = 1_000_000
    t = np.arange(n) / 1000.0
    x = np.sin(t)
    x[654_321] = 50.0
    d = decimate(t, x, None, 0.0, float(t[-1]), 544)
    assert d.x.max() == 50.0
    assert d.t[np.argmax(d.x)] == t[654_321]
    assert d.n <= 4 * 544


def test_a_long_step_in_time_breaks_the_line() -> None:
    t = np.array([0.0, 0.001, 0.002, 0.5, 0.501])
    d = decimate(t, np.ones(5), None, 0.0, 0.501, 1000, gap=0.002)
    assert [p[0].tolist() for p in d.pieces()] == [[0.0, 0.001, 0.002], [0.5, 0.501]]


def test_columns_must_be_positive() -> None:
    with pytest.raises(ValueError, match="at least 1"):
        decimate(np.zeros(1), np.zeros(1), None, 0.0, 1.0, 0)
