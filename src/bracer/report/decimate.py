"""Decimation for plots that cannot hide an extreme.

A session of an hour at 1 kHz has 3.6 million samples per channel; a plot 640 pixels wide can show 640
columns. Plain subsampling (every n-th sample) drops peaks: a 20 ms force spike vanishes.  Here the samples
are grouped by the pixel column their time falls in, and for every column the first, the last, the smallest
and the largest sample are kept (in time order).  The line drawn through the kept samples therefore reaches,
in every column, exactly the minimum and the maximum of the original samples of that column -- no extreme can
vanish -- and it joins neighbouring columns where the original line did.

Samples that are not valid (NaN, or masked out by the data-quality pass) are never drawn and break the line,
as do steps in time longer than ``gap`` seconds; the line is drawn in *pieces*, one per run of valid samples.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Decimated", "decimate"]


@dataclass(frozen=True, eq=False)
class Decimated:
    """Kept samples of one channel.

    Attributes
    ----------
    t, x : ndarray, shape (m,), float64
        Times (s) and values of the kept samples, in time order.
    index : ndarray, shape (m,), int64
        Index of each kept sample in the original arrays.
    piece : ndarray, shape (m,), int64
        Run of valid samples each kept sample belongs to; the line is broken between pieces.
    """

    t: np.ndarray
    x: np.ndarray
    index: np.ndarray
    piece: np.ndarray

    @property
    def n(self) -> int:
        return int(self.t.shape[0])

    def pieces(self) -> list[tuple[np.ndarray, np.ndarray]]:
        """(t, x) of each unbroken piece of the line, in time order."""
        if self.n == 0:
            return []
        cuts = np.flatnonzero(np.diff(self.piece)) + 1
        return list(zip(np.split(self.t, cuts), np.split(self.x, cuts), strict=True))


def decimate(
    t: np.ndarray,
    x: np.ndarray,
    valid: np.ndarray | None,
    t0: float,
    t1: float,
    columns: int,
    gap: float | None = None,
) -> Decimated:
    """Keep, per pixel column of ``[t0, t1]``, the first, last, minimum and maximum valid sample.

    Parameters
    ----------
    t : ndarray, shape (n,), float64
        Sample times, s (increasing where valid; samples with non-finite times are ignored).
    x : ndarray, shape (n,), float64
        Values, any unit.
    valid : ndarray of bool, shape (n,), or None
        Samples fit to draw; None: every finite sample.
    t0, t1 : float
        Time span of the plot, s (samples outside it are ignored).
    columns : int
        Pixel columns across the span (at least 1).
    gap : float or None
        A step in time longer than this (s) breaks the line; None: only invalid samples break it.

    Returns
    -------
    Decimated
        At most ``4 · columns`` samples per piece of line, usually far fewer.
    """
    if columns < 1:
        raise ValueError(f"columns must be at least 1, found {columns}")
    t = np.asarray(t, dtype=np.float64)
    x = np.asarray(x, dtype=np.float64)
    ok = np.isfinite(t) & np.isfinite(x)
    if valid is not None:
        ok &= np.asarray(valid, dtype=bool)
    ok &= (t >= t0) & (t <= t1)
    idx = np.flatnonzero(ok)
    empty = np.zeros(0, dtype=np.float64)
    if idx.size == 0:
        return Decimated(empty, empty, np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64))
    # Pieces: consecutive valid samples with no invalid sample and no long step between them.
    brk = np.diff(idx) > 1
    if gap is not None:
        brk |= np.diff(t[idx]) > gap
    piece = np.concatenate(([0], np.cumsum(brk))).astype(np.int64)
    span = t1 - t0
    if span > 0:
        col = np.floor((t[idx] - t0) / span * columns).astype(np.int64)
        np.clip(col, 0, columns - 1, out=col)
    else:
        col = np.zeros(idx.size, dtype=np.int64)
    # Groups: one per (piece, column); both are non-decreasing along idx, so groups are contiguous.
    change = (np.diff(piece) != 0) | (np.diff(col) != 0)
    starts = np.concatenate(([0], np.flatnonzero(change) + 1))
    ends = np.concatenate((starts[1:], [idx.size])) - 1
    sizes = np.diff(np.concatenate((starts, [idx.size])))
    group = np.repeat(np.arange(starts.size), sizes)
    values = x[idx]
    # per group the first sample holding its minimum and the first holding its maximum (O(n), no sort)
    i_min = _first_per_group(values == np.minimum.reduceat(values, starts)[group], group)
    i_max = _first_per_group(values == np.maximum.reduceat(values, starts)[group], group)
    keep = np.unique(np.concatenate((starts, ends, i_min, i_max)))
    kept = idx[keep]
    return Decimated(t[kept], x[kept], kept.astype(np.int64), piece[keep])


def _first_per_group(hit: np.ndarray, group: np.ndarray) -> np.ndarray:
    """Position of the first True of ``hit`` in each group (``group`` non-decreasing; every group has one)."""
    pos = np.flatnonzero(hit)
    g = group[pos]
    first = np.concatenate(([True], g[1:] != g[:-1]))
    return pos[first]
