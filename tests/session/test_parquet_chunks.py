"""The Parquet reader's chunk-by-chunk decode gives exactly the arrays of the table path every reader shares
(:func:`bracer.session.columns.arrays_from_table` over ``pyarrow.parquet.read_table``), whatever the row
groups, nulls and column types."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from bracer.errors import InputError
from bracer.session import parquet
from bracer.session.columns import arrays_from_table


def _table(n: int) -> pa.Table:
    rng = np.random.default_rng(5)
    x = rng.normal(0.0, 1.0, n)
    x[::7] = np.nan  # NaN values, not nulls
    nulls = np.zeros(n, bool)
    nulls[3::11] = True
    return pa.table(
        {
            "t": pa.array(np.arange(n) / 1000.0),
            "pos": pa.array(x),
            "vel": pa.array(rng.normal(0.0, 1.0, n), mask=nulls),  # float nulls
            "tau": pa.array(rng.integers(-5, 5, n).astype(np.int32), mask=np.roll(nulls, 1)),  # int nulls
            "f16": pa.array(rng.normal(0.0, 1.0, n).astype(np.float16)),
            "flag": pa.array(rng.random(n) < 0.5),
            "estop": pa.array(rng.integers(0, 2, n).astype(np.int8)),
            "mode": pa.array(rng.choice(["run", "hold", ""], n)).dictionary_encode(),
            "state": pa.array(rng.choice(["0", "1", "2"], n)),
        }
    )


def _reference(path: Path, times: list[str], numeric: list[str], states: list[str]):  # type: ignore[no-untyped-def]
    wanted = list(dict.fromkeys([*times, *numeric, *states]))
    return arrays_from_table([pq.read_table(path, columns=wanted)], path, times, numeric, states)


@pytest.mark.parametrize("row_group_size", [None, 1, 97, 1000])
def test_chunked_decode_equals_the_table_path(tmp_path: Path, row_group_size: int | None) -> None:
    path = tmp_path / "log.parquet"
    pq.write_table(_table(1500), path, row_group_size=row_group_size, compression="zstd")
    times, numeric, states = ["t"], ["pos", "vel", "tau", "f16", "flag", "estop"], ["estop", "mode", "state"]
    got = parquet.read(path, times, numeric, states)
    ref = _reference(path, times, numeric, states)
    assert got.n == ref.n == 1500
    assert list(got.values) == list(ref.values) and list(got.states) == list(ref.states)
    for name, arr in ref.values.items():
        assert got.values[name].dtype == arr.dtype
        assert np.array_equal(got.values[name], arr, equal_nan=True), name
    for name, arr in ref.states.items():
        assert got.states[name].dtype == arr.dtype
        assert np.array_equal(got.states[name], arr, equal_nan=arr.dtype.kind == "f"), name
    # a column that is both a channel and a status column: two arrays, so scaling one leaves the other
    assert got.values["estop"] is not got.states["estop"]


def test_empty_file_and_duration_time(tmp_path: Path) -> None:
    empty = tmp_path / "empty.parquet"
    pq.write_table(_table(0), empty)
    raw = parquet.read(empty, ["t"], ["pos"], ["estop"])
    assert raw.n == 0 and raw.values["pos"].shape == (0,) and raw.states["estop"].shape == (0,)

    timed = tmp_path / "timed.parquet"
    table = _table(50)
    ms = pa.array(np.arange(50, dtype=np.int64), type=pa.duration("ms"))
    pq.write_table(table.set_column(0, "t", ms), timed, row_group_size=16)
    got = parquet.read(timed, ["t"], ["pos"], [])
    assert np.array_equal(got.values["t"], np.arange(50) / 1000.0)
    assert np.array_equal(
        got.values["pos"], _reference(timed, ["t"], ["pos"], []).values["pos"], equal_nan=True
    )


def test_a_damaged_file_is_an_input_error(tmp_path: Path) -> None:
    path = tmp_path / "log.parquet"
    pq.write_table(_table(3000), path, row_group_size=1000)
    data = path.read_bytes()
    middle = len(data) // 2
    path.write_bytes(
        data[:middle] + data[middle + 200 :]
    )  # bytes cut from the data: the footer's offsets miss
    assert parquet.columns(path) == tuple(_table(0).column_names)  # the footer itself still reads
    with pytest.raises(InputError, match="cannot read the Parquet data"):
        parquet.read(path, ["t"], ["pos", "vel", "tau"], [])


def test_plain_columns_are_read_without_importing_pandas(tmp_path: Path) -> None:
    # pandas costs about 0.2 s to import; Arrow's own numpy conversion would bring it in (start-up budget)
    import subprocess
    import sys

    path = tmp_path / "log.parquet"
    pq.write_table(_table(300).select(["t", "pos", "vel", "tau", "flag", "estop"]), path, row_group_size=64)
    code = (
        "import sys; from pathlib import Path; from bracer.session import parquet; "
        f"raw = parquet.read(Path({str(path)!r}), ['t'], ['pos', 'vel', 'tau', 'flag'], ['estop']); "
        "print(raw.n, 'pandas' in sys.modules)"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.split() == ["300", "False"]
