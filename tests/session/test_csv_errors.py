"""Bad CSV logs: each a clear error naming file, line and column, or a row left out and recorded -- never a
traceback and never silently read."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

from bracer.errors import InputError
from bracer.protocol.load import load_protocol
from bracer.session.read import read_session

PROTOCOL = load_protocol(logmaker.PROTOCOL).protocol


def _main_csv(folder: Path, duration: float = 0.1) -> tuple[Path, list[str]]:
    path = logmaker.write(logmaker.main_table(duration), folder / "main.csv")
    return path, path.read_text().splitlines()


def _put(path: Path, lines: list[str], end: str = "\n") -> None:
    path.write_text("\n".join(lines) + end)


def _cell(lines: list[str], line: int, column: str, text: str) -> None:
    """Set the cell of ``column`` on 1-based file line ``line``."""
    names = [c.strip('"') for c in lines[0].split(",")]
    cells = lines[line - 1].split(",")
    cells[names.index(column)] = text
    lines[line - 1] = ",".join(cells)


def _error(paths: list[Path]) -> InputError:
    with pytest.raises(InputError) as info:
        read_session(PROTOCOL, paths)
    return info.value


def test_non_numeric_cell_names_file_line_column_and_text(tmp_path: Path) -> None:
    path, lines = _main_csv(tmp_path)
    _cell(lines, 42, "elb_pos", "12,5".replace(",", "."))  # a number: fine
    _cell(lines, 57, "elb_pos", "n/a?")
    _put(path, lines)
    err = _error([path])
    (p,) = err.problems
    assert (p.path, p.line, p.field) == (str(path), 57, "elb_pos")
    assert "expected a number, found 'n/a?'" in p.message and "column 'elb_pos'" in p.message
    assert str(err).startswith(f"{path}:57:")


def test_non_numeric_cells_are_counted_and_the_first_one_reported(tmp_path: Path) -> None:
    path, lines = _main_csv(tmp_path)
    for line in (30, 31, 80):
        _cell(lines, line, "sh_flex_tau", "ERR")
    _put(path, lines)
    (p,) = _error([path]).problems
    assert p.line == 30 and "2 more such cell(s)" in p.message and "line 31" in p.message


def test_non_numeric_time(tmp_path: Path) -> None:
    path, lines = _main_csv(tmp_path)
    _cell(lines, 10, "t", "2027-01-20T10:00:00")
    _put(path, lines)
    (p,) = _error([path]).problems
    assert p.line == 10 and p.field == "t" and "2027-01-20T10:00:00" in p.message


def test_line_numbers_count_comment_and_blank_lines(tmp_path: Path) -> None:
    path, lines = _main_csv(tmp_path)
    _cell(lines, 20, "elb_vel", "fast")  # line 20 before the extra lines are added
    lines = ["# Alder-4 logger", "# session S03", *lines[:10], "", *lines[10:]]
    _put(path, lines)
    (p,) = _error([path]).problems
    assert p.line == 23 and path.read_text().splitlines()[22].count("fast") == 1


def test_truncated_last_line_is_left_out_and_recorded(tmp_path: Path) -> None:
    path, lines = _main_csv(tmp_path)
    n_rows = len(lines) - 1
    lines[-1] = lines[-1][: len(lines[-1]) // 3]
    _put(path, lines, end="")  # the write stopped mid-row: no final newline
    session = read_session(PROTOCOL, [path])
    assert session.streams["main"].n == n_rows - 1
    (d,) = session.dropped
    assert (d.path, d.line, d.streams) == (str(path), n_rows + 1, ("main",))
    assert "truncated last line" in d.reason


def test_short_row_in_the_middle_is_an_error_with_its_line(tmp_path: Path) -> None:
    path, lines = _main_csv(tmp_path)
    lines[33] = lines[33].rsplit(",", 3)[0]
    _put(path, lines)
    (p,) = _error([path]).problems
    assert p.line == 34 and "expected 19 fields as in the header (line 1), found 16" in p.message


def test_row_with_extra_fields_is_an_error(tmp_path: Path) -> None:
    path, lines = _main_csv(tmp_path)
    lines[5] += ",1,2"
    _put(path, lines)
    (p,) = _error([path]).problems
    assert p.line == 6 and "found 21" in p.message


def test_several_malformed_rows_are_listed(tmp_path: Path) -> None:
    path, lines = _main_csv(tmp_path)
    for i in range(10, 80, 10):
        lines[i] = lines[i].rsplit(",", 1)[0]
    _put(path, lines)
    problems = _error([path]).problems
    assert [p.line for p in problems[:5]] == [11, 21, 31, 41, 51]
    assert "2 more malformed rows" in problems[5].message


def test_header_only_gives_an_empty_stream(tmp_path: Path) -> None:
    path, lines = _main_csv(tmp_path)
    _put(path, lines[:1])
    stream = read_session(PROTOCOL, [path]).streams["main"]
    assert stream.n == 0 and stream.channels["elb_pos"].shape == (0,)


def test_only_comments(tmp_path: Path) -> None:
    path = tmp_path / "main.csv"
    path.write_text("# nothing was logged\n# the logger crashed\n")
    (p,) = _error([path]).problems
    assert "no header row" in p.message


def test_empty_channel_reads_as_nan(tmp_path: Path) -> None:
    path, lines = _main_csv(tmp_path, 0.02)
    for line in range(2, len(lines) + 1):
        _cell(lines, line, "elb_tau", "")
    _put(path, lines)
    assert np.isnan(read_session(PROTOCOL, [path]).streams["main"].channels["elb_tau"]).all()
