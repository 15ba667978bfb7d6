"""Write a rendered stream as CSV, Parquet or Arrow IPC (pyarrow), one file per stream named after it."""

from __future__ import annotations

from pathlib import Path
from typing import Literal

from bracer.simulate.render import RenderedStream

__all__ = ["EXTENSIONS", "Format", "write_stream"]

Format = Literal["csv", "parquet", "arrow"]
EXTENSIONS: dict[str, str] = {"csv": ".csv", "parquet": ".parquet", "arrow": ".arrow"}


def write_stream(stream: RenderedStream, folder: Path, fmt: Format) -> Path:
    """Write ``stream`` to ``folder/<name><ext>`` and return the path.

    Each column keeps its declared unit in the file's field metadata (``unit``); the schema metadata marks the
    file as simulated.  CSV has no metadata: the protocol's channel map carries the units.
    """
    import pyarrow as pa

    fields = []
    arrays = []
    units = {c.column: c.unit for c in stream.channels}
    for column, values in stream.columns.items():
        array = pa.array(values)
        meta = {b"unit": units[column].encode()} if units.get(column) else None
        fields.append(pa.field(column, array.type, metadata=meta))
        arrays.append(array)
    schema = pa.schema(
        fields, metadata={b"bracer.simulated": b"true", b"bracer.stream": stream.name.encode()}
    )
    table = pa.Table.from_arrays(arrays, schema=schema)
    path = folder / f"{stream.name}{EXTENSIONS[fmt]}"
    if fmt == "parquet":
        import pyarrow.parquet as pq

        pq.write_table(table, path)
    elif fmt == "arrow":
        import pyarrow.ipc as ipc

        with pa.OSFile(str(path), "wb") as sink, ipc.new_file(sink, table.schema) as writer:
            writer.write_table(table)
    else:
        import pyarrow.csv as pcsv

        pcsv.write_csv(table, path)
    return path
