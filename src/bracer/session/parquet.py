"""Parquet session logs, read with pyarrow.parquet: only the columns the protocol needs are decoded."""

from __future__ import annotations

from pathlib import Path

from bracer.errors import InputError
from bracer.session.columns import RawTable, arrays_from_table

__all__ = ["columns", "read"]


def columns(path: Path) -> tuple[str, ...]:
    """Top-level column names, from the file's footer (no data is read)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    try:
        return tuple(pq.read_schema(path).names)
    except (pa.ArrowException, OSError) as exc:
        raise InputError.single(f"cannot read the Parquet footer: {exc}", path) from None


def read(path: Path, time_columns: list[str], numeric: list[str], states: list[str]) -> RawTable:
    """Decode the needed columns (``columns=``), then convert them to arrays."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    wanted = list(dict.fromkeys([*time_columns, *numeric, *states]))
    try:
        holder = [pq.read_table(path, columns=wanted, use_threads=True)]
    except (pa.ArrowException, OSError) as exc:
        raise InputError.single(f"cannot read the Parquet data: {exc}", path) from None
    return arrays_from_table(holder, path, time_columns, numeric, states)
