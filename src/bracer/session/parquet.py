"""Parquet session logs, read with pyarrow.parquet: only the columns the protocol needs are decoded.

Plain numeric columns (floating, integer, boolean) -- all of a typical log -- are decoded one column chunk
(row group × column) at a time straight into preallocated float64 arrays, on a few threads: the whole table is
never held in Arrow memory beside its numpy copy, so an hour-long log costs about its decoded size, and no
concatenation of chunks follows (nor the pandas import that Arrow's own numpy conversion brings).  Any other
column type (text status columns, dictionaries, durations, timestamps ...) goes through
:func:`~bracer.session.columns.arrays_from_table` like the other readers, which
gives the same arrays and the same errors.
"""

from __future__ import annotations

import threading
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from bracer.errors import InputError
from bracer.session.columns import RawTable, arrays_from_table

if TYPE_CHECKING:
    import pyarrow as pa
    import pyarrow.parquet as pq

__all__ = ["columns", "read"]

#: Most threads that decode column chunks at once.
_MAX_THREADS = 4


def columns(path: Path) -> tuple[str, ...]:
    """Top-level column names, from the file's footer (no data is read)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    try:
        return tuple(pq.read_schema(path).names)
    except (pa.ArrowException, OSError) as exc:
        raise InputError.single(f"cannot read the Parquet footer: {exc}", path) from None


def read(path: Path, time_columns: list[str], numeric: list[str], states: list[str]) -> RawTable:
    """Decode the needed columns (plain numeric ones chunk by chunk into float64 arrays, see the module
    docstring), then convert any other ones from an Arrow table of just those columns."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    wanted = list(dict.fromkeys([*time_columns, *numeric, *states]))
    try:
        schema = pq.read_schema(path)
        plain = [c for c in wanted if _plain_numeric(schema.field(c).type)]
        n, decoded = _decode_plain(path, plain)
        other = [c for c in wanted if c not in decoded]
        table = pq.read_table(path, columns=other, use_threads=True) if other else None
    except (pa.ArrowException, OSError) as exc:
        raise InputError.single(f"cannot read the Parquet data: {exc}", path) from None
    rest = None
    if table is not None:
        n = table.num_rows
        rest = arrays_from_table(
            [table],
            path,
            [c for c in time_columns if c in other],
            [c for c in numeric if c in other],
            [c for c in states if c in other],
        )
        del table
    raw = RawTable(n)
    for name in wanted:
        if name not in decoded:
            assert rest is not None  # every column is decoded or in the other table
            if name in rest.values:
                raw.values[name] = rest.values[name]
            if name in rest.states:
                raw.states[name] = rest.states[name]
            continue
        x = decoded[name]
        if name in time_columns or name in numeric:
            raw.values[name] = x
            if name in states:  # the channel may be scaled in place; the status column keeps its values
                raw.states[name] = x.copy()
        elif name in states:
            raw.states[name] = x
    pa.default_memory_pool().release_unused()
    return raw


def _plain_numeric(typ: pa.DataType) -> bool:
    import pyarrow.types as pt

    return bool(pt.is_floating(typ) or pt.is_integer(typ) or pt.is_boolean(typ))


def _copy_float64(values: pa.Array, dest: np.ndarray) -> None:
    """Copy a float64 Arrow array into ``dest`` (same length), NaN where it is null.

    Read from the array's buffers: ``Array.to_numpy`` would import pandas (about 0.2 s) for no gain here.
    """
    buffers = values.buffers()
    k, offset = len(values), values.offset
    dest[:] = np.frombuffer(buffers[1], dtype=np.float64, count=k, offset=offset * 8)  # type: ignore[arg-type]
    if values.null_count:
        bits = np.frombuffer(buffers[0], dtype=np.uint8)  # type: ignore[arg-type]
        present = np.unpackbits(bits, count=offset + k, bitorder="little")[offset:]
        dest[present == 0] = np.nan


def _decode_plain(path: Path, names: list[str]) -> tuple[int, dict[str, np.ndarray]]:
    """Decode ``names`` (plain numeric columns) into float64 arrays, NaN for nulls, a column chunk at a time.

    Returns
    -------
    n : int
        Rows in the file.
    arrays : dict of str to ndarray, shape (n,), float64
    """
    import pyarrow as pa
    import pyarrow.parquet as pq

    meta = pq.read_metadata(path)
    sizes = [meta.row_group(i).num_rows for i in range(meta.num_row_groups)]
    offsets = np.concatenate(([0], np.cumsum(sizes, dtype=np.int64))).tolist()
    n = int(offsets[-1])
    out = {c: np.empty(n, dtype=np.float64) for c in names}
    if not names or n == 0:
        return n, out
    # One reader per thread: a Parquet reader object is not shared between threads.
    local = threading.local()
    opened: list[pq.ParquetFile] = []
    lock = threading.Lock()

    def reader() -> pq.ParquetFile:
        pf: pq.ParquetFile | None = getattr(local, "pf", None)
        if pf is None:
            pf = pq.ParquetFile(path)
            local.pf = pf
            with lock:
                opened.append(pf)
        return pf

    f64 = pa.float64()

    def decode(job: tuple[int, str]) -> None:
        group, name = job
        col = reader().read_row_group(group, columns=[name], use_threads=False).column(0)
        at, dest = offsets[group], out[name]
        for chunk in col.chunks:
            k = len(chunk)
            if k:
                _copy_float64(chunk if chunk.type == f64 else chunk.cast(f64), dest[at : at + k])
            at += k
        if at != offsets[group + 1]:  # pragma: no cover - the footer and the data disagree
            raise pa.ArrowInvalid(f"row group {group} of column '{name}' holds {at - offsets[group]} rows")

    jobs = [(group, name) for name in names for group in range(len(sizes))]
    threads = max(1, min(_MAX_THREADS, pa.cpu_count(), len(jobs)))
    try:
        with ThreadPoolExecutor(max_workers=threads, thread_name_prefix="bracer-parquet") as pool:
            for _ in pool.map(decode, jobs):
                pass
    finally:
        for pf in opened:
            pf.close()
    return n, out
