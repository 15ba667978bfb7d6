"""A session log in memory: one or more streams, each with its own clock.

Readers (one module per file format) produce :class:`Stream` objects; values are converted once, at load time,
from the units the protocol's channel map declares to bracer's internal units (SI, angles in rad; see
:mod:`bracer.units`).  Sample indices are row numbers of the stream's samples (0-based, header excluded), so a
finding can be traced back to the row it came from; when one table holds several streams, ``Stream.rows``
maps a stream's sample index to the table's data row.

All streams of a session are read as seconds on one common log clock (they may differ in rate, not in epoch):
the audit compares events across streams, e.g. rest of the joints with the cuffs' force at that time.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["DroppedRow", "InputFile", "MissingColumn", "Session", "Signal", "Stream"]


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
        Seconds on the log's own clock, as recorded (not sorted, not repaired); NaN where the cell was empty.
    channels : dict of str to ndarray, shape (n,), float64
        Column name -> values in the internal unit; NaN where the cell was empty or unreadable.
    units : dict of str to str
        Column name -> the unit the protocol declared for it (what reports show).
    states : dict of str to ndarray, shape (n,)
        Status columns (stop triggers, safety state, modes) as recorded, not unit-converted: float64 when the
        column is numeric, otherwise an array of str (missing cells as "").
    expected_rate : float
        Sample rate the protocol declares for this stream, Hz.
    time_column : str
        Name of the time column in the file (for messages).
    rows : ndarray, shape (n,), int64, or None
        Data-row index in the source table of each sample, when the table holds other streams' rows too;
        None when sample ``i`` is data row ``i``.
    """

    name: str
    source: InputFile
    time: np.ndarray
    channels: dict[str, np.ndarray]
    units: dict[str, str]
    expected_rate: float
    states: dict[str, np.ndarray] = field(default_factory=dict)
    time_column: str = "t"
    rows: np.ndarray | None = None

    @property
    def n(self) -> int:
        return int(self.time.shape[0])


@dataclass(frozen=True, eq=False)
class Signal:
    """One channel on its stream's clock, with the mask of samples fit to analyse.

    ``valid`` is False where the value is NaN, where time does not increase, and where the data-quality pass
    found the channel untrustworthy (saturated, frozen, suspected unit error): a check must treat those
    samples as not analysed, never as within limits.  Gaps hold no samples; their extent is in the
    data-quality findings and the coverage.
    """

    stream: str
    column: str
    t: np.ndarray
    x: np.ndarray
    valid: np.ndarray
    unit: str  # declared unit of the column


@dataclass(frozen=True, slots=True)
class MissingColumn:
    """A column the protocol's channel map names that no log file provides.

    ``feeds`` says what it would have measured (``"joint 'elbow_flexion' torque"``); ``candidates`` are
    close column names found in the files, best first; ``note`` explains a near miss (e.g. the column is in a
    file that lacks the stream's time column).
    """

    stream: str
    column: str
    role: str  # time, position, velocity, torque, force, trigger, protection
    owner: str | None  # joint, contact, trigger or protection name (None for a time column)
    feeds: str
    candidates: tuple[str, ...] = ()
    note: str = ""


@dataclass(frozen=True, slots=True)
class DroppedRow:
    """A row the reader could not use and left out (e.g. a truncated last line)."""

    path: str
    line: int  # 1-based line in the file
    reason: str
    streams: tuple[str, ...] = ()


@dataclass(frozen=True, eq=False)
class Session:
    streams: dict[str, Stream]
    inputs: tuple[InputFile, ...] = ()
    #: per stream: samples fit to analyse as far as the time base goes (set by the data-quality pass)
    time_valid: dict[str, np.ndarray] = field(default_factory=dict)
    #: per stream and column: the full mask of samples fit to analyse (finite, time valid, channel trusted),
    #: set by the data-quality pass; when absent, :meth:`signal` derives it from NaNs and ``time_valid``
    channel_valid: dict[str, dict[str, np.ndarray]] = field(default_factory=dict)
    #: columns the protocol names that no file provides
    missing: tuple[MissingColumn, ...] = ()
    #: rows the readers left out
    dropped: tuple[DroppedRow, ...] = ()

    def signal(self, stream: str, column: str) -> Signal | None:
        """The channel ``column`` of ``stream``, or None when the log lacks it."""
        s = self.streams.get(stream)
        if s is None or column not in s.channels:
            return None
        x = s.channels[column]
        valid = self.channel_valid.get(stream, {}).get(column)
        if valid is None:
            tv = self.time_valid.get(stream)
            valid = np.isfinite(x) if tv is None else (np.isfinite(x) & tv)
        return Signal(stream, column, s.time, x, valid, s.units.get(column, ""))
