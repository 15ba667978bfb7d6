"""``read_session()``: read the log files a protocol's channel map needs, whatever their format.

Each file's format is told from its first bytes (:mod:`bracer.session.sniff`).  Files are assigned to streams
by the columns they hold: a stream is read from the file that has its time column and its channels, so a log
may be one table holding every stream (rows where a stream's time cell is empty are not samples of that
stream) or one file per stream, each with its own clock.  Only the needed columns are read, and values are
converted once, here, to bracer's internal units.

A column the protocol names that no file holds is recorded in :attr:`Session.missing` (the audit reports it as
"not assessable", with the closest column names); a file that feeds no stream, a stream split over two files,
an unreadable file or a non-numeric cell is an :class:`~bracer.errors.InputError`.
"""

from __future__ import annotations

import dataclasses
import difflib
import hashlib
from collections import Counter
from collections.abc import Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from bracer.errors import InputError, Problem
from bracer.session import arrow as arrow_format
from bracer.session import csv as csv_format
from bracer.session import parquet as parquet_format
from bracer.session.channelmap import StreamNeeds, channel_map
from bracer.session.columns import RawTable
from bracer.session.model import DroppedRow, InputFile, MissingColumn, Session, Stream
from bracer.session.sniff import LogFormat, identify

if TYPE_CHECKING:
    from bracer.protocol.model import Protocol

__all__ = ["read_session", "sha256_file"]

_FORMAT_NAME: dict[LogFormat, str] = {
    "csv": "csv",
    "parquet": "parquet",
    "arrow": "arrow",
    "arrow-stream": "arrow",
}


@dataclass(frozen=True, slots=True)
class _Source:
    path: Path
    format: LogFormat
    size: int
    columns: tuple[str, ...]
    csv: csv_format.CsvLayout | None = None


def sha256_file(path: Path) -> str:
    """SHA-256 of a file's bytes, hex."""
    h = hashlib.sha256()
    with path.open("rb") as fh:
        while chunk := fh.read(1 << 22):
            h.update(chunk)
    return h.hexdigest()


def read_session(protocol: Protocol, paths: Sequence[str | Path] | str | Path) -> Session:
    """Read a session's log files into streams on the protocol's channel map.

    Parameters
    ----------
    protocol
        The (effective) protocol; its channel map picks and converts the columns.
    paths
        One log file or several (CSV, Parquet, Arrow IPC/Feather), in any order.

    Raises
    ------
    InputError
        Unreadable, empty or mistaken file; non-numeric cell (file:line, column, text); malformed row other
        than a truncated last line; a file that feeds no stream; a stream split over two files.
    """
    files = _paths(paths)
    sources = [_open(p) for p in files]
    with ThreadPoolExecutor(max_workers=1, thread_name_prefix="bracer-sha256") as pool:
        hashes = [pool.submit(sha256_file, s.path) for s in sources]
        needs = channel_map(protocol)
        plan = _assign(needs, sources)
        missing = _missing(needs, sources, plan)
        streams: dict[str, Stream] = {}
        dropped: list[DroppedRow] = []
        inputs: list[InputFile] = []
        for source, digest in zip(sources, hashes, strict=True):
            served = [name for name, src in plan.items() if src is source]
            raw = _read(source, [needs[n] for n in served])
            info = InputFile(str(source.path), digest.result(), source.size, _FORMAT_NAME[source.format])
            inputs.append(info)
            counts = Counter(c for name in served for c in needs[name].columns())
            shared = {c for c, k in counts.items() if k > 1}
            for name in served:
                streams[name] = _stream(needs[name], raw, info, several=len(served) > 1, shared=shared)
            dropped.extend(dataclasses.replace(d, streams=tuple(served)) for d in raw.dropped)
    ordered = {name: streams[name] for name in needs if name in streams}
    _release_arrow_memory()
    return Session(ordered, tuple(inputs), missing=tuple(missing), dropped=tuple(dropped))


def _paths(paths: Sequence[str | Path] | str | Path) -> list[Path]:
    items = [paths] if isinstance(paths, str | Path) else list(paths)
    if not items:
        raise InputError.single("no log files given; give one or more session logs after the protocol")
    out: list[Path] = []
    seen: dict[Path, Path] = {}
    for item in items:
        p = Path(item)
        key = p.resolve()
        if key in seen:
            raise InputError.single(f"the same log file is given twice (also as '{seen[key]}')", p)
        seen[key] = p
        out.append(p)
    return out


def _open(path: Path) -> _Source:
    fmt, size = identify(path)
    if fmt == "csv":
        lay = csv_format.layout(path)
        return _Source(path, fmt, size, lay.columns, lay)
    if fmt == "parquet":
        return _Source(path, fmt, size, parquet_format.columns(path))
    return _Source(path, fmt, size, arrow_format.columns(path, stream=fmt == "arrow-stream"))


# ------------------------------------------------------------------------------------------------ assignment


def _assign(needs: dict[str, StreamNeeds], sources: list[_Source]) -> dict[str, _Source]:
    """Which file each stream is read from (streams absent from every file are left out)."""
    plan: dict[str, _Source] = {}
    problems: list[Problem] = []
    for name, sn in needs.items():
        holders = [s for s in sources if sn.time.column in s.columns]
        channels = sn.columns()[1:]
        carrying = [s for s in holders if any(c in s.columns for c in channels)]
        if len(carrying) > 1:
            parts = "; ".join(
                f"{s.path.name} ({', '.join(c for c in channels if c in s.columns)})" for s in carrying
            )
            problems.append(
                Problem(
                    f"stream '{name}' (time column '{sn.time.column}') is split over several files: "
                    f"{parts}; bracer "
                    "reads each stream from one file; give each file its own stream and time column in the "
                    "protocol",
                    str(carrying[1].path),
                )
            )
            continue
        chosen = carrying[0] if carrying else (holders[0] if holders else None)
        if chosen is not None:
            plan[name] = chosen
    for s in sources:
        for column in {c for c in s.columns if s.columns.count(c) > 1} & _needed(needs):
            problems.append(
                Problem(
                    f"column '{column}' appears more than once in the header",
                    str(s.path),
                    s.csv.header_line if s.csv else None,
                    field=column,
                )
            )
    for s in sources:
        if s not in plan.values():
            problems.append(Problem(_feeds_nothing(s, needs, plan), str(s.path)))
    if problems:
        raise InputError(problems)
    return plan


def _needed(needs: dict[str, StreamNeeds]) -> set[str]:
    return {c for sn in needs.values() for c in sn.columns()}


def _feeds_nothing(s: _Source, needs: dict[str, StreamNeeds], plan: dict[str, _Source]) -> str:
    times = {sn.time.column: name for name, sn in needs.items()}
    held = [c for c in times if c in s.columns]
    if held:
        name = times[held[0]]
        other = plan.get(name)
        where = f", which is read from {other.path.name}" if other is not None else ""
        return (
            f"this file holds only the time column '{held[0]}' of stream '{name}'{where}, and none of the "
            "stream's channels; leave it out or check the protocol's channel map"
        )
    wanted = ", ".join(f"'{c}' (stream '{n}')" for c, n in times.items())
    close = _close(list(times), list(s.columns))
    did = f"; did you mean {close}?" if close else ""
    found = ", ".join(s.columns[:8]) + (", ..." if len(s.columns) > 8 else "")
    return (
        f"no stream's time column in this file: the protocol expects {wanted}; the file has "
        f"{found or 'no columns'}{did}"
    )


def _close(wanted: list[str], available: list[str]) -> str:
    hits: list[str] = []
    for w in wanted:
        hits.extend(_candidates(w, available)[:1])
    return ", ".join(f"'{h}'" for h in dict.fromkeys(hits))


def _candidates(column: str, available: list[str]) -> tuple[str, ...]:
    """Column names close to ``column``: same name up to case/space first, then by similarity."""
    folded = [a for a in available if a.strip().casefold() == column.strip().casefold() and a != column]
    similar = difflib.get_close_matches(column, [a for a in available if a != column], n=3, cutoff=0.6)
    return tuple(dict.fromkeys([*folded, *similar]))[:3]


def _missing(
    needs: dict[str, StreamNeeds], sources: list[_Source], plan: dict[str, _Source]
) -> list[MissingColumn]:
    everything = list(dict.fromkeys(c for s in sources for c in s.columns))
    out: list[MissingColumn] = []
    for name, sn in needs.items():
        chosen = plan.get(name)
        for column in sn.columns():
            if chosen is not None and column in chosen.columns:
                continue
            elsewhere = [s.path.name for s in sources if column in s.columns]
            if chosen is None:
                note = f"no file has the time column '{sn.time.column}' of stream '{name}'" + (
                    f"; '{column}' is in {', '.join(elsewhere)}, which lacks it" if elsewhere else ""
                )
            elif elsewhere:
                note = (
                    f"'{column}' is in {', '.join(elsewhere)}, but stream '{name}' is read from "
                    f"{chosen.path.name} (the file with its time column '{sn.time.column}')"
                )
            else:
                note = f"not in {chosen.path.name}"
            for use in sn.uses_of(column):
                out.append(
                    MissingColumn(
                        name,
                        column,
                        use.role,
                        use.owner,
                        use.describe(),
                        _candidates(column, everything),
                        note,
                    )
                )
    return out


# ------------------------------------------------------------------------------------------------ reading


def _read(source: _Source, served: list[StreamNeeds]) -> RawTable:
    cols = set(source.columns)
    times = [sn.time.column for sn in served]
    numeric = [c for sn in served for c in sn.numeric_columns() if c in cols]
    states = [c for sn in served for c in sn.state_columns() if c in cols]
    times, numeric, states = (list(dict.fromkeys(x)) for x in (times, numeric, states))
    if source.format == "csv":
        assert source.csv is not None
        return csv_format.read(source.path, source.csv, times, numeric, states)
    if source.format == "parquet":
        return parquet_format.read(source.path, times, numeric, states)
    return arrow_format.read(source.path, times, numeric, states, stream=source.format == "arrow-stream")


def _stream(sn: StreamNeeds, raw: RawTable, info: InputFile, several: bool, shared: set[str]) -> Stream:
    """Assemble one stream: keep its rows, convert to internal units (the only conversion anywhere)."""
    time = raw.values[sn.time.column]
    rows: np.ndarray | None = None
    if several:  # one table, several clocks: a row with no time for this stream is not its sample
        present = np.isfinite(time)
        if not present.all():
            rows = np.flatnonzero(present)

    def pick(a: np.ndarray) -> np.ndarray:
        return a if rows is None else a[rows]

    channels: dict[str, np.ndarray] = {}
    units: dict[str, str] = {}
    for use in sn.uses:
        if use.is_state or use.column not in raw.values or use.column in channels:
            continue
        own = use.column not in shared
        x = pick(raw.values.pop(use.column) if own else raw.values[use.column])  # popped: freed once scaled
        channels[use.column] = _scaled(x, use.factor, in_place=own or rows is not None)
        units[use.column] = use.unit
    states = {c: pick(raw.states[c]) for c in sn.state_columns() if c in raw.states}
    t = _scaled(pick(time), sn.time.factor, in_place=sn.time.column not in shared or rows is not None)
    return Stream(sn.name, info, t, channels, units, sn.rate, states, sn.time.column, rows)


def _scaled(x: np.ndarray, factor: float, in_place: bool) -> np.ndarray:
    """``x`` × ``factor``; in place when allowed (the array is this stream's alone) and writable."""
    if factor == 1.0:
        return x
    if in_place and x.flags.writeable:
        return np.multiply(x, factor, out=x)
    return x * factor


def _release_arrow_memory() -> None:
    """Hand the decoded Arrow buffers, now copied or freed, back to the system (peak memory of long logs)."""
    import pyarrow as pa

    pa.default_memory_pool().release_unused()
