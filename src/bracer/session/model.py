"""A session log in memory: one or more streams, each with its own clock.

Readers (one module per file format) produce :class:`Stream` objects; values are converted once, at load time,
from the units the protocol's channel map declares to bracer's internal units (SI, angles in rad; see
:mod:`bracer.units`).  Sample indices are row numbers of the stream's data rows (0-based, header excluded), so a
finding can be traced back to the row it came from.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["InputFile", "Session", "Signal", "Stream"]


@dataclass(frozen=True, slots=True)
class InputFile:
    """An input file as analysed: for provenance and tamper evidence."""

    path: str
    sha256: str
    size: int
    format: str  # "csv", "parquet", "arrow", "yaml" ...


@dataclass(frozen=True, eq=False)
class Stream:
    """One time base: a time vector and the channels sampled on it.

    Attributes
    ----------
    time : ndarray, shape (n,), float64
        Seconds on the log's own clock, as recorded (not sorted, not repaired).
    channels : dict of str to ndarray, shape (n,), float64
        Column name -> values in the internal unit; NaN where the cell was empty or unreadable.
    units : dict of str to str
        Column name -> the unit the protocol declared for it (what reports show).
    states : dict of str to ndarray, shape (n,)
        Status columns (stop triggers, safety state, modes) as recorded, not unit-converted: float64 when the
        column is numeric, otherwise an array of str (missing cells as "").
    expected_rate : float
        Sample rate the protocol declares for this stream, Hz.
    """

    name: str
    source: InputFile
    time: np.ndarray
    channels: dict[str, np.ndarray]
    units: dict[str, str]
    expected_rate: float
    states: dict[str, np.ndarray] = field(default_factory=dict)

    @property
    def n(self) -> int:
        return int(self.time.shape[0])


@dataclass(frozen=True, eq=False)
class Signal:
    """One channel on its stream's clock, with the mask of samples fit to analyse.

    ``valid`` is False where the value is NaN, where time does not increase, and inside gaps: a check must treat
    those samples as not analysed, never as within limits.
    """

    stream: str
    column: str
    t: np.ndarray
    x: np.ndarray
    valid: np.ndarray
    unit: str  # declared unit of the column


@dataclass(frozen=True, eq=False)
class Session:
    streams: dict[str, Stream]
    inputs: tuple[InputFile, ...] = ()
    #: per stream: samples fit to analyse as far as the time base goes (set by the data-quality pass)
    time_valid: dict[str, np.ndarray] = field(default_factory=dict)

    def signal(self, stream: str, column: str) -> Signal | None:
        """The channel ``column`` of ``stream``, or None when the log lacks it."""
        s = self.streams.get(stream)
        if s is None or column not in s.channels:
            return None
        x = s.channels[column]
        tv = self.time_valid.get(stream)
        valid = np.isfinite(x) if tv is None else (np.isfinite(x) & tv)
        return Signal(stream, column, s.time, x, valid, s.units.get(column, ""))
