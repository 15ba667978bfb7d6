"""CSV session logs, read with pyarrow.csv: only the columns the protocol needs are parsed.

A log is a header row naming the columns, then one row per sample.  Leading ``#`` comment lines are skipped;
the delimiter (comma, semicolon, tab or bar) is taken from the header.  Empty cells and the usual NaN
spellings (``NaN``, ``NA``, ``null`` ...) are missing values.  Errors name the file, the line and the column:

* a cell that is not a number: file:line, column name, the text found;
* a row with too few or too many fields: file:line; a short *last* row (the write was cut off) is left out
  and reported as a data-quality finding, since the rows before it are sound.
"""

from __future__ import annotations

import csv as _csv
import mmap
import re
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from bracer.errors import InputError, Problem
from bracer.session.columns import RawTable, arrays_from_table, value_array
from bracer.session.model import DroppedRow

if TYPE_CHECKING:
    import pyarrow as pa

__all__ = ["CsvLayout", "layout", "read"]

_DELIMITERS = (",", ";", "\t", "|")
_BLOCK = 1 << 24  # bytes per parse block: fewer, larger chunks read faster than pyarrow's 1 MiB default


@dataclass(frozen=True, slots=True)
class CsvLayout:
    """Where the header is and how fields are separated."""

    delimiter: str
    header_line: int  # 1-based line of the header row
    columns: tuple[str, ...]


def layout(path: Path) -> CsvLayout:
    """Read the header row (after any ``#`` comment lines) and guess the delimiter from it."""
    with path.open("rb") as fh:
        head = fh.read(1 << 16)
    text = head.decode("utf-8-sig", errors="replace")
    lines = text.splitlines()
    skip = 0
    while skip < len(lines) and (not lines[skip].strip() or lines[skip].lstrip().startswith("#")):
        skip += 1
    if skip >= len(lines):
        raise InputError.single("no header row: the file holds only comments or blank lines", path, 1)
    header = lines[skip]
    delimiter = max(_DELIMITERS, key=lambda d: _count_outside_quotes(header, d))
    if _count_outside_quotes(header, delimiter) == 0:
        delimiter = ","
    names = tuple(next(_csv.reader([header], delimiter=delimiter)))
    return CsvLayout(delimiter, skip + 1, names)


def _count_outside_quotes(line: str, delimiter: str) -> int:
    return len(re.sub(r'"[^"]*"', "", line).split(delimiter)) - 1


def read(
    path: Path, lay: CsvLayout, time_columns: list[str], numeric: list[str], states: list[str]
) -> RawTable:
    """Parse the needed columns: time and channels as float64, status columns as text first.

    Raises
    ------
    InputError
        A non-numeric cell (file:line, column, text), a malformed row that is not the last one, or a CSV the
        parser cannot read.
    """
    import pyarrow as pa
    import pyarrow.csv as pcsv

    invalid: list[Any] = []

    def on_invalid(row: Any) -> str:
        invalid.append(row)
        return "skip"

    include = list(dict.fromkeys([*time_columns, *numeric, *states]))
    types: dict[str, pa.DataType] = {c: pa.string() for c in states}
    types.update({c: pa.float64() for c in [*time_columns, *numeric]})
    try:
        holder = [
            pcsv.read_csv(
                path,
                read_options=pcsv.ReadOptions(
                    skip_rows=lay.header_line - 1, use_threads=True, block_size=_BLOCK
                ),
                parse_options=pcsv.ParseOptions(delimiter=lay.delimiter, invalid_row_handler=on_invalid),
                convert_options=pcsv.ConvertOptions(include_columns=include, column_types=types),
            )
        ]
    except pa.ArrowInvalid as exc:
        if "conversion error" in str(exc):
            _raise_first_non_number(path, lay, [*time_columns, *numeric])
        raise InputError.single(f"cannot parse the CSV: {_pyarrow_text(exc)}", path) from None
    except (pa.ArrowKeyError, KeyError) as exc:  # a column listed in the header but not parsed as such
        raise InputError.single(
            f"cannot parse the CSV header: {_pyarrow_text(exc)}", path, lay.header_line
        ) from None
    dropped = _judge_invalid_rows(path, lay, invalid) if invalid else []
    if invalid and not dropped:  # pragma: no cover - _judge_invalid_rows raises or returns rows
        raise AssertionError("invalid rows neither dropped nor reported")
    lines = _LineIndex(path, lay, dropped)
    raw = arrays_from_table(holder, path, time_columns, numeric, states, lines.locate)
    raw.dropped.extend(dropped)
    return raw


def _pyarrow_text(exc: BaseException) -> str:
    return str(exc).strip().replace("\n", " ")


# ------------------------------------------------------------------------------------------------ error paths


class _LineIndex:
    """Maps data-row indices to 1-based file lines (computed only when an error needs a line number)."""

    def __init__(self, path: Path, lay: CsvLayout, dropped: list[DroppedRow]) -> None:
        self.path = path
        self.lay = lay
        self.skipped = sorted(d.line for d in dropped)
        self._lines: np.ndarray | None = None

    def nonempty_lines(self) -> np.ndarray:
        """1-based numbers of the file's non-empty lines (pyarrow skips empty ones)."""
        if self._lines is None:
            self._lines = _nonempty_lines(self.path)
        return self._lines

    def locate(self, index: int) -> tuple[int | None, str]:
        lines = self.nonempty_lines()
        data = lines[lines > self.lay.header_line]
        if self.skipped:
            data = data[~np.isin(data, self.skipped)]
        if index < data.size:
            line = int(data[index])
            return line, f"line {line}"
        return None, f"data row {index + 1}"


def _nonempty_lines(path: Path) -> np.ndarray:
    with path.open("rb") as fh:
        if path.stat().st_size == 0:
            return np.zeros(0, dtype=np.int64)
        with mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ) as mm:
            buf = np.frombuffer(mm, dtype=np.uint8)
            ends = np.flatnonzero(buf == 10)
            if ends.size == 0 or ends[-1] != buf.size - 1:
                ends = np.append(ends, buf.size)
            starts = np.concatenate(([0], ends[:-1] + 1))
            length = ends - starts
            cr = (length > 0) & (buf[np.minimum(ends - 1, buf.size - 1)] == 13)
            content = length - cr
            del buf
    return np.flatnonzero(content > 0) + 1


def _raise_first_non_number(path: Path, lay: CsvLayout, columns: list[str]) -> None:
    """Re-read the numeric columns as text and report the first cell that is not a number."""
    import pyarrow as pa
    import pyarrow.csv as pcsv

    invalid: list[Any] = []

    def on_invalid(row: Any) -> str:
        invalid.append(row)
        return "skip"

    columns = list(dict.fromkeys(columns))
    table = pcsv.read_csv(
        path,
        read_options=pcsv.ReadOptions(skip_rows=lay.header_line - 1, use_threads=False),
        parse_options=pcsv.ParseOptions(delimiter=lay.delimiter, invalid_row_handler=on_invalid),
        convert_options=pcsv.ConvertOptions(
            include_columns=columns, column_types=dict.fromkeys(columns, pa.string())
        ),
    )
    index = _LineIndex(path, lay, [])
    nonempty = index.nonempty_lines()
    index.skipped = [int(nonempty[r.number - 1]) for r in invalid if r.number and r.number <= nonempty.size]
    for name in columns:
        value_array(table.column(name), name, path, index.locate)  # raises at the first non-number
    raise InputError.single(
        "a value could not be read as a number (pyarrow found it; bracer could not locate it)", path
    )


def _judge_invalid_rows(path: Path, lay: CsvLayout, invalid: list[Any]) -> list[DroppedRow]:
    """A short last row is dropped (a write cut off); any other malformed row is an error with its line."""
    nonempty = _nonempty_lines(path)
    last_line = int(nonempty[-1]) if nonempty.size else 1
    width = len(lay.columns)
    last_text = _last_line_text(path)
    if len(invalid) == 1:
        row = invalid[0]
        if row.actual_columns < row.expected_columns and row.text.rstrip("\r") == last_text:
            return [
                DroppedRow(
                    str(path),
                    last_line,
                    f"truncated last line: {row.actual_columns} of {row.expected_columns} fields (the write "
                    "was "
                    "probably cut off); the row was left out",
                )
            ]
    rows = _numbered(path, lay, invalid, nonempty)
    problems = []
    for line, row in rows[:5]:
        problems.append(
            Problem(
                f"expected {width} fields as in the header (line {lay.header_line}), found "
                f"{row.actual_columns}: "
                f"'{_clip(row.text)}'",
                str(path),
                line,
            )
        )
    if len(rows) > 5:
        problems.append(Problem(f"{len(rows) - 5} more malformed rows", str(path)))
    raise InputError(problems)


def _numbered(
    path: Path, lay: CsvLayout, invalid: list[Any], nonempty: np.ndarray
) -> list[tuple[int | None, Any]]:
    """Physical line numbers of malformed rows (a threaded parse does not know them: parse again in order)."""
    if any(r.number is None for r in invalid):
        import pyarrow.csv as pcsv

        invalid = []

        def on_invalid(row: Any) -> str:
            invalid.append(row)
            return "skip"

        pcsv.read_csv(
            path,
            read_options=pcsv.ReadOptions(skip_rows=lay.header_line - 1, use_threads=False),
            parse_options=pcsv.ParseOptions(delimiter=lay.delimiter, invalid_row_handler=on_invalid),
            convert_options=pcsv.ConvertOptions(include_columns=[lay.columns[0]]),
        )
    out: list[tuple[int | None, Any]] = []
    for r in invalid:
        # pyarrow counts non-empty lines (including skipped comment lines)
        line = int(nonempty[r.number - 1]) if r.number and r.number <= nonempty.size else None
        out.append((line, r))
    return out


def _last_line_text(path: Path) -> str:
    size = path.stat().st_size
    with path.open("rb") as fh:
        fh.seek(max(0, size - (1 << 16)))
        tail = fh.read()
    lines = [ln for ln in tail.decode("utf-8", errors="replace").splitlines() if ln.strip()]
    return lines[-1].rstrip("\r") if lines else ""


def _clip(text: str, width: int = 80) -> str:
    return text if len(text) <= width else text[: width - 3] + "..."
