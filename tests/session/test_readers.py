"""Readers: CSV, Parquet and Arrow IPC give the same streams; only the needed columns are read; one table or
one file per stream; units converted once, at load time (pint is the oracle for the factors)."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pint
import pyarrow as pa
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

from bracer.errors import InputError
from bracer.protocol.load import load_protocol
from bracer.session.model import Session
from bracer.session.read import read_session

PROTOCOL = load_protocol(logmaker.PROTOCOL).protocol
UREG = pint.UnitRegistry()
FORMATS = (".csv", ".parquet", ".feather")


def assert_same_streams(a: Session, b: Session) -> None:
    assert list(a.streams) == list(b.streams)
    for name in a.streams:
        sa, sb = a.streams[name], b.streams[name]
        np.testing.assert_array_equal(sa.time, sb.time)
        assert list(sa.channels) == list(sb.channels)
        for col in sa.channels:
            np.testing.assert_array_equal(sa.channels[col], sb.channels[col])
        assert sa.units == sb.units
        assert list(sa.states) == list(sb.states)
        for col in sa.states:
            assert sa.states[col].dtype.kind == sb.states[col].dtype.kind
            np.testing.assert_array_equal(sa.states[col], sb.states[col])
        assert sa.expected_rate == sb.expected_rate
        assert (sa.rows is None) == (sb.rows is None)
        if sa.rows is not None:
            np.testing.assert_array_equal(sa.rows, sb.rows)


@pytest.mark.parametrize("suffix", FORMATS[1:])
def test_formats_give_identical_streams_two_files(tmp_path: Path, suffix: str) -> None:
    csv = read_session(PROTOCOL, logmaker.write_logs(tmp_path, ".csv"))
    other = read_session(PROTOCOL, logmaker.write_logs(tmp_path, suffix))
    assert_same_streams(csv, other)
    assert [i.format for i in other.inputs] == [{".parquet": "parquet", ".feather": "arrow"}[suffix]] * 2


@pytest.mark.parametrize("suffix", FORMATS)
def test_one_table_holding_both_streams(tmp_path: Path, suffix: str) -> None:
    main, cuffs = logmaker.main_table(), logmaker.cuff_table()
    one = read_session(
        PROTOCOL, [logmaker.write(logmaker.combined_table(main, cuffs), tmp_path / f"s{suffix}")]
    )
    two = read_session(PROTOCOL, logmaker.write_logs(tmp_path, ".parquet", main, cuffs))
    assert one.streams["main"].n == 1000 and one.streams["cuffs"].n == 500
    # rows of the table that carry a cuff sample: every other one
    np.testing.assert_array_equal(one.streams["cuffs"].rows, np.arange(0, 1000, 2))
    for name in ("main", "cuffs"):
        np.testing.assert_array_equal(one.streams[name].time, two.streams[name].time)
        for col, x in two.streams[name].channels.items():
            np.testing.assert_array_equal(one.streams[name].channels[col], x)


def test_each_stream_keeps_its_own_clock(tmp_path: Path) -> None:
    session = read_session(PROTOCOL, logmaker.write_logs(tmp_path))
    main, cuffs = session.streams["main"], session.streams["cuffs"]
    assert (main.expected_rate, cuffs.expected_rate) == (1000.0, 500.0)
    assert main.time_column == "t" and cuffs.time_column == "t_cuff"
    np.testing.assert_allclose(np.diff(main.time), 1e-3, rtol=1e-6)
    np.testing.assert_allclose(np.diff(cuffs.time), 2e-3, rtol=1e-6)
    assert set(cuffs.channels) == {"ua_fx", "ua_fy", "ua_fz", "fa_fx", "fa_fy", "fa_fz"}
    assert set(main.states) == {"estop", "pstop", "safety_state", "soft_limits_on"}


def test_file_order_does_not_matter(tmp_path: Path) -> None:
    paths = logmaker.write_logs(tmp_path, ".parquet")
    assert_same_streams(read_session(PROTOCOL, paths), read_session(PROTOCOL, paths[::-1]))


def test_values_converted_once_to_internal_units(tmp_path: Path) -> None:
    main = logmaker.main_table()
    session = read_session(PROTOCOL, logmaker.write_logs(tmp_path, ".parquet", main))
    stream = session.streams["main"]
    deg = main.column("elb_pos").to_numpy()
    # pint as the external oracle for the factor deg -> rad
    expected = (deg * UREG.degree).to(UREG.radian).magnitude
    np.testing.assert_allclose(stream.channels["elb_pos"], expected, rtol=1e-15)
    vel = (
        (main.column("elb_vel").to_numpy() * UREG.degree / UREG.second)
        .to(UREG.radian / UREG.second)
        .magnitude
    )
    np.testing.assert_allclose(stream.channels["elb_vel"], vel, rtol=1e-15)
    np.testing.assert_array_equal(
        stream.channels["elb_tau"], main.column("elb_tau").to_numpy()
    )  # N*m is internal
    assert stream.units["elb_pos"] == "deg"
    # reading a signal converts nothing again: the very array the reader made
    sig = session.signal("main", "elb_pos")
    assert sig is not None and sig.x is stream.channels["elb_pos"] and sig.unit == "deg"


def test_time_and_torque_units_from_the_protocol(tmp_path: Path) -> None:
    proto = load_protocol(
        logmaker.protocol_variant(
            tmp_path,
            ("main: {time: {column: t, unit: s}", "main: {time: {column: t, unit: ms}"),
            ("torque: {column: elb_tau, unit: N*m}", "torque: {column: elb_tau, unit: mN*m}"),
        )
    ).protocol
    main = logmaker.main_table()
    main = logmaker.replace_column(main, "t", main.column("t").to_numpy() * 1000)
    session = read_session(proto, logmaker.write_logs(tmp_path, ".csv", main))
    stream = session.streams["main"]
    ms = (main.column("t").to_numpy() * UREG.millisecond).to(UREG.second).magnitude
    np.testing.assert_allclose(stream.time, ms, rtol=1e-15)
    mnm = (main.column("elb_tau").to_numpy() * UREG.millinewton * UREG.meter).to(UREG.newton * UREG.meter)
    np.testing.assert_allclose(stream.channels["elb_tau"], mnm.magnitude, rtol=1e-15)
    assert stream.units["elb_tau"] == "mN*m"


def _spy(monkeypatch: pytest.MonkeyPatch, module: object, name: str, key: str) -> list[list[str]]:
    seen: list[list[str]] = []
    real = getattr(module, name)

    def spy(*args: object, **kwargs: object) -> object:
        opts = kwargs.get(key)
        seen.append(list(opts.include_columns) if key == "convert_options" else list(opts))  # type: ignore[union-attr, call-overload]
        return real(*args, **kwargs)

    monkeypatch.setattr(module, name, spy)
    return seen


def _spy_parquet(monkeypatch: pytest.MonkeyPatch, paths: list[Path]) -> list[set[str]]:
    """Every column decoded from each Parquet file, by any of the calls that decode data, in ``paths`` order
    (each set fills as the files are read)."""
    import pyarrow.parquet as pq

    decoded: dict[str, set[str]] = {str(p): set() for p in paths}
    real_table, real_group = pq.read_table, pq.ParquetFile.read_row_group
    owner: dict[int, str] = {}
    real_init = pq.ParquetFile.__init__

    def init(self: pq.ParquetFile, source: object, *args: object, **kwargs: object) -> None:
        owner[id(self)] = str(source)
        real_init(self, source, *args, **kwargs)  # type: ignore[arg-type]

    def read_table(source: object, *args: object, **kwargs: object) -> object:
        decoded[str(source)].update(kwargs["columns"])  # type: ignore[arg-type]
        return real_table(source, *args, **kwargs)  # type: ignore[arg-type]

    def read_row_group(self: pq.ParquetFile, i: int, *args: object, **kwargs: object) -> object:
        decoded[owner[id(self)]].update(kwargs["columns"])  # type: ignore[arg-type]
        return real_group(self, i, *args, **kwargs)  # type: ignore[arg-type]

    monkeypatch.setattr(pq, "read_table", read_table)
    monkeypatch.setattr(pq.ParquetFile, "__init__", init)
    monkeypatch.setattr(pq.ParquetFile, "read_row_group", read_row_group)
    return list(decoded.values())


def _with_extra_columns(table: pa.Table) -> pa.Table:
    n = table.num_rows
    table = table.append_column("operator_note", pa.array(["not a number"] * n))
    return table.append_column("motor_temperature", pa.array(np.full(n, 41.0)))


@pytest.mark.parametrize("suffix", FORMATS)
def test_only_the_needed_columns_are_read(
    tmp_path: Path, suffix: str, monkeypatch: pytest.MonkeyPatch
) -> None:
    import pyarrow.csv
    import pyarrow.feather
    import pyarrow.parquet

    main = _with_extra_columns(logmaker.main_table())
    paths = logmaker.write_logs(tmp_path, suffix, main)
    seen: list[list[str]] | list[set[str]]
    if suffix == ".parquet":  # the reader decodes column chunks (row group x column), or whole tables
        seen = _spy_parquet(monkeypatch, paths)
    else:
        spied = {
            ".csv": (pyarrow.csv, "read_csv", "convert_options"),
            ".feather": (pyarrow.feather, "read_table", "columns"),
        }[suffix]
        seen = _spy(monkeypatch, *spied)
    session = read_session(PROTOCOL, paths)
    needed_main = [c for c in logmaker.main_table().column_names]
    assert sorted(seen[0]) == sorted(needed_main)
    assert sorted(seen[1]) == sorted(logmaker.cuff_table().column_names)
    assert "operator_note" not in session.streams["main"].channels


def test_a_column_missing_from_every_file_is_recorded_with_close_names(tmp_path: Path) -> None:
    main = logmaker.main_table().rename_columns(
        [{"elb_tau": "elb_tau_Nm"}.get(c, c) for c in logmaker.main_table().column_names]
    )
    session = read_session(PROTOCOL, logmaker.write_logs(tmp_path, ".csv", main))
    (m,) = session.missing
    assert (m.stream, m.column, m.role, m.owner) == ("main", "elb_tau", "torque", "elbow_flexion")
    assert m.candidates[0] == "elb_tau_Nm"
    assert "elb_tau" not in session.streams["main"].channels


def test_a_whole_stream_missing(tmp_path: Path) -> None:
    session = read_session(PROTOCOL, [logmaker.write(logmaker.main_table(), tmp_path / "main.csv")])
    assert "cuffs" not in session.streams
    assert {m.column for m in session.missing} == {
        "t_cuff",
        "ua_fx",
        "ua_fy",
        "ua_fz",
        "fa_fx",
        "fa_fy",
        "fa_fz",
    }
    assert all("t_cuff" in m.note for m in session.missing)


def test_channel_in_the_wrong_file_is_explained(tmp_path: Path) -> None:
    main = logmaker.main_table()
    cuffs = logmaker.cuff_table()
    moved = cuffs.column("ua_fx").to_numpy()
    main = main.append_column("ua_fx", pa.array(np.repeat(moved, 2)))
    cuffs = cuffs.drop_columns(["ua_fx"])
    session = read_session(PROTOCOL, logmaker.write_logs(tmp_path, ".parquet", main, cuffs))
    (m,) = session.missing
    assert m.column == "ua_fx" and "main.parquet" in m.note and "t_cuff" in m.note


def test_a_file_that_feeds_no_stream_is_an_error(tmp_path: Path) -> None:
    main = logmaker.main_table()
    main = main.rename_columns(["T" if c == "t" else c for c in main.column_names])
    paths = logmaker.write_logs(tmp_path, ".csv", main)
    with pytest.raises(InputError) as info:
        read_session(PROTOCOL, paths)
    text = str(info.value)
    assert "main.csv" in text and "no stream's time column" in text and "did you mean 'T'" in text


def test_a_stream_split_over_two_files_is_an_error(tmp_path: Path) -> None:
    main = logmaker.main_table()
    left = main.select(["t", "sh_flex_pos", "sh_flex_vel"])
    right = main.select(["t", "elb_pos", "elb_vel"])
    paths = [logmaker.write(left, tmp_path / "a.csv"), logmaker.write(right, tmp_path / "b.csv")]
    with pytest.raises(InputError, match="split over several files"):
        read_session(PROTOCOL, paths)


def test_the_same_file_twice_is_an_error(tmp_path: Path) -> None:
    path = logmaker.write(logmaker.main_table(), tmp_path / "main.csv")
    with pytest.raises(InputError, match="given twice"):
        read_session(PROTOCOL, [path, tmp_path / "." / "main.csv"])


def test_duplicate_header_column_is_an_error(tmp_path: Path) -> None:
    path = logmaker.write(logmaker.main_table(0.05), tmp_path / "main.csv")
    lines = path.read_text().splitlines()
    lines[0] = lines[0].replace('"sh_abd_pos"', '"elb_pos"')
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(InputError) as info:
        read_session(PROTOCOL, [path])
    assert "'elb_pos' appears more than once" in str(info.value) and f"{path}:1" in str(info.value)


def test_semicolons_comments_and_bom(tmp_path: Path) -> None:
    reference = read_session(PROTOCOL, [logmaker.write(logmaker.main_table(0.05), tmp_path / "ref.csv")])
    text = (tmp_path / "ref.csv").read_text().replace(",", ";").replace('"', "")
    path = tmp_path / "eu.csv"
    path.write_bytes("\ufeff# written by the Alder-4 logger\n# firmware 3.4.1\n".encode() + text.encode())
    session = read_session(PROTOCOL, [path])
    assert_same_streams(
        Session({"main": reference.streams["main"]}), Session({"main": session.streams["main"]})
    )


def test_text_status_values_and_missing_cells(tmp_path: Path) -> None:
    main = logmaker.main_table(0.02)
    states = np.array(["ok"] * main.num_rows, dtype=object)
    states[3] = None
    states[5] = "fault"
    main = logmaker.replace_column(main, "safety_state", pa.array(states, type=pa.string()))
    for suffix in (".csv", ".parquet"):
        stream = read_session(PROTOCOL, [logmaker.write(main, tmp_path / f"m{suffix}")]).streams["main"]
        got = stream.states["safety_state"]
        assert got.dtype.kind == "U"
        assert got[3] == "" and got[5] == "fault" and got[0] == "ok"


def test_missing_value_spellings_read_as_nan(tmp_path: Path) -> None:
    path = logmaker.write(logmaker.main_table(0.02), tmp_path / "main.csv")
    lines = path.read_text().splitlines()
    for row, word in zip(range(1, 6), ("", "NaN", "nan", "NA", "null"), strict=True):
        cells = lines[row].split(",")
        cells[10] = word  # elb_pos
        lines[row] = ",".join(cells)
    path.write_text("\n".join(lines) + "\n")
    x = read_session(PROTOCOL, [path]).streams["main"].channels["elb_pos"]
    assert np.isnan(x[:5]).all() and np.isfinite(x[5:]).all()


def test_sha256_of_each_input(tmp_path: Path) -> None:
    import hashlib

    paths = logmaker.write_logs(tmp_path, ".parquet")
    session = read_session(PROTOCOL, paths)
    for path, info in zip(paths, session.inputs, strict=True):
        assert info.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
        assert info.size == path.stat().st_size and info.path == str(path)
    assert math.isclose(session.streams["main"].time[-1], 0.999)
