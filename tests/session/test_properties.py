"""Properties of the readers: the order of the columns in a file changes nothing."""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

from bracer.protocol.load import load_protocol
from bracer.session.read import read_session

PROTOCOL = load_protocol(logmaker.PROTOCOL).protocol
MAIN = logmaker.main_table(0.05)
CUFFS = logmaker.cuff_table(0.05)
COMBINED = logmaker.combined_table(MAIN, CUFFS)


def _streams(paths: list[Path]) -> dict[str, dict[str, np.ndarray]]:
    session = read_session(PROTOCOL, paths)
    out: dict[str, dict[str, np.ndarray]] = {}
    for name, s in session.streams.items():
        out[name] = {"<time>": s.time, **s.channels, **{f"<state>{k}": v for k, v in s.states.items()}}
    return out


def _same(a: dict[str, dict[str, np.ndarray]], b: dict[str, dict[str, np.ndarray]]) -> None:
    assert a.keys() == b.keys()
    for name in a:
        assert a[name].keys() == b[name].keys()
        for col in a[name]:
            np.testing.assert_array_equal(a[name][col], b[name][col])


with tempfile.TemporaryDirectory() as _folder:
    REFERENCE = {
        suffix: _streams([logmaker.write(COMBINED, Path(_folder) / f"ref{suffix}")])
        for suffix in (".csv", ".parquet", ".feather")
    }


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(order=st.permutations(COMBINED.column_names), suffix=st.sampled_from([".csv", ".parquet", ".feather"]))
def test_shuffling_column_order_changes_nothing(order: list[str], suffix: str) -> None:
    with tempfile.TemporaryDirectory() as folder:
        path = logmaker.write(COMBINED.select(order), Path(folder) / f"log{suffix}")
        _same(_streams([path]), REFERENCE[suffix])


@settings(max_examples=10, deadline=None)
@given(order=st.permutations(MAIN.column_names), extra=st.integers(0, 3))
def test_shuffled_and_padded_two_file_logs_agree(order: list[str], extra: int) -> None:
    import pyarrow as pa

    table = MAIN.select(order)
    for k in range(extra):  # columns the protocol does not name are ignored, wherever they are
        table = table.add_column(
            k * 2 % (table.num_columns + 1), f"unused_{k}", pa.array(["x"] * table.num_rows)
        )
    with tempfile.TemporaryDirectory() as folder:
        got = _streams(logmaker.write_logs(Path(folder), ".csv", table, CUFFS))
    with tempfile.TemporaryDirectory() as folder:
        reference = _streams(logmaker.write_logs(Path(folder), ".csv", MAIN, CUFFS))
    _same(got, reference)
