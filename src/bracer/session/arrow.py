"""Arrow IPC session logs: the file format (Feather v2, magic ``ARROW1``) and the stream format.

The file format is memory-mapped and only the needed columns are read (``pyarrow.feather.read_table`` with
``columns=``); the stream format has no index, so it is read whole and the needed columns kept.
"""

from __future__ import annotations

from pathlib import Path

from bracer.errors import InputError
from bracer.session.columns import RawTable, arrays_from_table

__all__ = ["columns", "read"]


def columns(path: Path, stream: bool = False) -> tuple[str, ...]:
    """Column names from the schema at the start (stream) or in the footer (file)."""
    import pyarrow as pa
    import pyarrow.ipc as ipc

    try:
        with pa.memory_map(str(path)) as source:
            reader = ipc.open_stream(source) if stream else ipc.open_file(source)
            return tuple(reader.schema.names)
    except (pa.ArrowException, OSError) as exc:
        raise InputError.single(f"cannot read the Arrow IPC schema: {exc}", path) from None


def read(
    path: Path, time_columns: list[str], numeric: list[str], states: list[str], stream: bool = False
) -> RawTable:
    import pyarrow as pa
    import pyarrow.feather as feather
    import pyarrow.ipc as ipc

    wanted = list(dict.fromkeys([*time_columns, *numeric, *states]))
    try:
        if stream:
            with pa.memory_map(str(path)) as source:
                holder = [ipc.open_stream(source).read_all().select(wanted)]
        else:
            holder = [feather.read_table(str(path), columns=wanted, memory_map=True)]
    except (pa.ArrowException, OSError) as exc:
        raise InputError.single(f"cannot read the Arrow IPC data: {exc}", path) from None
    return arrays_from_table(holder, path, time_columns, numeric, states)
