"""Turn Arrow columns into the arrays a :class:`~bracer.session.model.Stream` holds.

Shared by every reader, so that CSV, Parquet and Arrow IPC give identical arrays for the same data: physical
channels and time as float64 (NaN where a cell is empty), status columns as float64 when every value is a
number, else as str (missing cells as ``""``).  pyarrow is imported inside the functions (start-up budget).
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from bracer.errors import InputError

if TYPE_CHECKING:
    import pyarrow as pa

__all__ = ["NUMBER_PATTERN", "Locator", "bad_numbers", "state_array", "time_array", "value_array"]

#: A cell that reads as a number (what pyarrow's CSV float parser accepts, and the words for NaN/infinity).
NUMBER_PATTERN = r"^\s*[+-]?((\d+\.?\d*|\.\d+)([eE][+-]?\d+)?|inf|infinity|nan)\s*$"

#: Row index (0-based data row) -> (1-based line in the file or None, text naming the place).
Locator = Callable[[int], tuple[int | None, str]]


def row_locator(index: int) -> tuple[int | None, str]:
    """Locator for tables without lines (Parquet, Arrow): 1-based data row."""
    return None, f"row {index + 1}"


def value_array(col: pa.ChunkedArray, name: str, path: Path, locate: Locator = row_locator) -> np.ndarray:
    """A physical channel as float64 in the file's unit (the caller converts units); NaN for empty cells.

    Raises
    ------
    InputError
        The column holds text that is not a number, timestamps, or nested values.
    """
    import pyarrow as pa
    import pyarrow.types as pt

    typ = col.type
    if pt.is_dictionary(typ):
        col = col.cast(typ.value_type)
        typ = col.type
    if pt.is_null(typ):
        return np.full(len(col), np.nan)
    if pt.is_floating(typ) or pt.is_integer(typ) or pt.is_boolean(typ) or pt.is_decimal(typ):
        if typ != pa.float64():
            col = col.cast(pa.float64())
        return _float_numpy(col)
    if pt.is_string(typ) or pt.is_large_string(typ):
        bad = bad_numbers(col)
        if bad.size:
            _raise_not_numeric(col, bad, name, path, locate)
        return _float_numpy(col.cast(pa.float64()))
    if pt.is_temporal(typ):
        raise InputError.single(
            f"column '{name}' holds {typ} values; bracer expects plain numbers in the unit the protocol "
            "declares",
            path,
            field=name,
        )
    raise InputError.single(f"column '{name}' holds {typ} values; expected numbers", path, field=name)


def time_array(col: pa.ChunkedArray, name: str, path: Path, locate: Locator = row_locator) -> np.ndarray:
    """The time column as float64 in the file's unit; a duration column is read in seconds."""
    import pyarrow as pa
    import pyarrow.types as pt

    if pt.is_duration(col.type):
        per_second = {"s": 1.0, "ms": 1e3, "us": 1e6, "ns": 1e9}[col.type.unit]
        return _float_numpy(col.cast(pa.int64()).cast(pa.float64())) / per_second
    if pt.is_timestamp(col.type) or pt.is_date(col.type) or pt.is_time(col.type):
        raise InputError.single(
            f"time column '{name}' holds {col.type} values (wall-clock times); bracer expects the log's own "
            "clock "
            "as a number of seconds (or the unit the protocol declares for it)",
            path,
            field=name,
        )
    return value_array(col, name, path, locate)


def state_array(col: pa.ChunkedArray) -> np.ndarray:
    """A status column as recorded: float64 if every value is a number, else str with missing cells as ""."""
    import pyarrow as pa
    import pyarrow.compute as pc
    import pyarrow.types as pt

    typ = col.type
    if pt.is_dictionary(typ):
        col = col.cast(typ.value_type)
        typ = col.type
    if pt.is_null(typ):
        return np.full(len(col), np.nan)
    if pt.is_floating(typ) or pt.is_integer(typ) or pt.is_boolean(typ) or pt.is_decimal(typ):
        return _float_numpy(col.cast(pa.float64()))
    if not (pt.is_string(typ) or pt.is_large_string(typ)):
        col = col.cast(pa.string())
    blank = pc.equal(col, "")
    if pc.any(blank).as_py():  # empty cells are missing values, not text
        col = pc.if_else(blank, pa.scalar(None, pa.string()), col)
    if col.null_count < len(col):
        try:
            return _float_numpy(col.cast(pa.float64()))  # every value a number
        except pa.ArrowInvalid:
            pass
        return np.asarray(pc.fill_null(col, "").to_numpy(zero_copy_only=False), dtype=str)
    return np.full(len(col), np.nan)


def bad_numbers(col: pa.ChunkedArray) -> np.ndarray:
    """Indices of cells that are neither empty nor a number (vectorised regex over the whole column)."""
    import pyarrow.compute as pc

    text = pc.utf8_trim_whitespace(col)
    ok = pc.or_kleene(pc.equal(text, ""), pc.match_substring_regex(text, NUMBER_PATTERN, ignore_case=True))
    ok = pc.fill_null(ok, True)
    return np.flatnonzero(~np.asarray(ok.to_numpy(zero_copy_only=False), dtype=bool))


def _float_numpy(col: Any) -> np.ndarray:
    # Several chunks: one numpy concatenation (ChunkedArray.to_numpy over hundreds of CSV blocks is several
    # times slower), which also gives a writable array the reader may scale in place.
    if getattr(col, "num_chunks", 1) > 1:
        arr = np.concatenate([c.to_numpy(zero_copy_only=False) for c in col.chunks]).astype(
            np.float64, copy=False
        )
    else:
        arr = np.asarray(col.to_numpy(zero_copy_only=False), dtype=np.float64)
    if col.null_count and not np.isnan(arr).any():  # pragma: no cover - pyarrow always maps nulls to NaN
        raise AssertionError("nulls lost in conversion")
    return arr


def _raise_not_numeric(col: pa.ChunkedArray, bad: np.ndarray, name: str, path: Path, locate: Locator) -> None:
    first = int(bad[0])
    text = col[first].as_py()
    line, where = locate(first)
    more = ""
    if bad.size > 1:
        others = ", ".join(locate(int(i))[1] for i in bad[1:4])
        more = (
            f"; {bad.size - 1} more such cell(s) in this column ({others}{', ...' if bad.size > 4 else ''})"
        )
    raise InputError.single(
        f"column '{name}', {where}: expected a number, found '{text}'{more}", path, line, field=name
    )


class RawTable:
    """Columns read from one file, in the file's units, before streams are assembled.

    Attributes
    ----------
    n : int
        Number of data rows.
    values : dict of str to ndarray, shape (n,), float64
        Time and physical channels, NaN for empty cells.
    states : dict of str to ndarray, shape (n,)
        Status columns (see :func:`state_array`).
    dropped : list of DroppedRow
        Rows the reader left out.
    """

    __slots__ = ("dropped", "n", "states", "values")

    def __init__(self, n: int) -> None:
        from bracer.session.model import DroppedRow

        self.n = n
        self.values: dict[str, np.ndarray] = {}
        self.states: dict[str, np.ndarray] = {}
        self.dropped: list[DroppedRow] = []


def arrays_from_table(
    holder: list[pa.Table],
    path: Path,
    time_columns: list[str],
    numeric: list[str],
    states: list[str],
    locate: Locator = row_locator,
) -> RawTable:
    """Convert the needed columns of the table in ``holder`` (a one-item list the table is taken out of, so
    that no caller keeps it alive); each Arrow column is released once converted (peak memory)."""
    import pyarrow as pa

    pool = pa.default_memory_pool()
    table = holder.pop()
    raw = RawTable(table.num_rows)
    for name in dict.fromkeys([*time_columns, *numeric, *states]):
        col = table.column(name)
        if name in time_columns:
            raw.values[name] = time_array(col, name, path, locate)
        elif name in numeric:
            raw.values[name] = value_array(col, name, path, locate)
        if name in states:
            raw.states[name] = state_array(col)
        table = table.drop_columns([name])
        del col
        pool.release_unused()  # the allocator would otherwise keep the freed column resident for a while
    return raw
