"""Tell a session log's format from its first bytes, and name a mistaken file for what it is.

Magic bytes decide first (``PAR1`` Parquet, ``ARROW1`` Arrow IPC file / Feather v2, ``FF FF FF FF`` Arrow IPC
stream); otherwise a text file is read as CSV.  A protocol YAML, a JSON record, a spreadsheet, a compressed
file or a robot bag given as a log gets an error saying what it looks like and what bracer expects.
"""

from __future__ import annotations

import difflib
import re
from pathlib import Path
from typing import Literal

from bracer.errors import InputError

__all__ = ["EXPECTED", "LogFormat", "identify"]

LogFormat = Literal["csv", "parquet", "arrow", "arrow-stream"]

#: What bracer reads, for the end of every "not a log" message.
EXPECTED = (
    "bracer reads session logs as CSV (header row + one row per sample), Parquet or Arrow IPC/Feather v2"
)

_BINARY: tuple[tuple[bytes, str], ...] = (
    (
        b"FEA1",
        "a legacy Feather v1 file; write it again as Feather v2 (pyarrow.feather.write_feather) or Parquet",
    ),
    (b"\xd0\xcf\x11\xe0", "a legacy Office file (an Excel .xls workbook?); export the sheet as CSV"),
    (
        b"\x1f\x8b",
        "a gzip-compressed file; decompress it first (gunzip), or store the log as Parquet, which "
        "compresses by itself",
    ),
    (b"BZh", "a bzip2-compressed file; decompress it first (bunzip2)"),
    (
        b"\x28\xb5\x2f\xfd",
        "a zstd-compressed file; decompress it first (unzstd), or store the log as Parquet with "
        "zstd compression",
    ),
    (b"\xfd7zXZ", "an xz-compressed file; decompress it first (unxz)"),
    (b"\x89HDF", "an HDF5 file; export the channels as CSV or Parquet"),
    (b"#ROSBAG", "a ROS 1 bag; export the topics as CSV or Parquet"),
    (b"\x89MCAP", "an MCAP recording (ROS 2); export the topics as CSV or Parquet"),
    (b"SQLite format 3", "an SQLite database (a ROS 2 .db3 bag?); export the topics as CSV or Parquet"),
    (b"%PDF", "a PDF document"),
    (b"MATLAB", "a MATLAB .mat file; export the variables as CSV or Parquet"),
    (b"\x89PNG", "a PNG image"),
)
_BINARY_SUFFIXES = {
    ".parquet": "Parquet",
    ".pq": "Parquet",
    ".feather": "Feather",
    ".arrow": "Arrow IPC",
    ".ipc": "Arrow IPC",
    ".arrows": "Arrow IPC stream",
}
_YAML_KEY = re.compile(r"^[A-Za-z_][\w\-]*:(\s|$)")


def identify(path: Path) -> tuple[LogFormat, int]:
    """The format of the log at ``path`` and its size in bytes.

    Raises
    ------
    InputError
        Missing, empty, unreadable, damaged or mistaken file, with what it looks like and what bracer expects.
    """
    if not path.exists():
        raise InputError.single(f"no such file{_similar_files(path)}", path)
    if path.is_dir():
        inside = sorted(
            p.name
            for p in path.iterdir()
            if p.suffix.lower() in {".csv", ".parquet", ".feather", ".arrow", ".tsv"}
        )
        listed = f"; log files in it: {', '.join(inside[:8])}" if inside else ""
        raise InputError.single(
            f"this is a folder, not a log file; give the log files themselves{listed}", path
        )
    try:
        size = path.stat().st_size
        with path.open("rb") as fh:
            head = fh.read(4096)
            tail = b""
            if size >= 8:
                fh.seek(max(0, size - 8))
                tail = fh.read()
    except OSError as exc:
        raise InputError.single(f"cannot read the file: {exc.strerror or exc}", path) from None
    if size == 0 or not head.strip():
        raise InputError.single(f"empty file ({size} bytes): no header and no samples; {EXPECTED}", path, 1)
    if head.startswith(b"PAR1"):
        if not tail.endswith(b"PAR1"):
            raise InputError.single(
                "Parquet file without its footer: the file is truncated (was the write interrupted?)", path
            )
        return "parquet", size
    if head.startswith(b"ARROW1"):
        if not tail.endswith(b"ARROW1"):
            raise InputError.single(
                "Arrow IPC / Feather file without its footer: the file is truncated (was the write "
                "interrupted?)",
                path,
            )
        return "arrow", size
    if head.startswith(b"\xff\xff\xff\xff"):
        return "arrow-stream", size
    if head.startswith(b"PK\x03\x04"):
        raise InputError.single(f"{_zip_kind(head)}; {EXPECTED}", path)
    for magic, what in _BINARY:
        if head.startswith(magic):
            raise InputError.single(f"this looks like {what}; {EXPECTED}", path)
    if b"\x00" in head:
        raise InputError.single(f"binary file of a kind bracer does not know; {EXPECTED}", path)
    suffix = path.suffix.lower()
    if suffix in _BINARY_SUFFIXES:
        raise InputError.single(
            f"named '{suffix}' but holds text, not {_BINARY_SUFFIXES[suffix]} (which starts with its magic "
            "bytes); "
            "if it is CSV, name it .csv",
            path,
        )
    _refuse_mistaken_text(head, path)
    return "csv", size


def _refuse_mistaken_text(head: bytes, path: Path) -> None:
    try:
        text = head.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        # A multi-byte character cut at the end of the 4 KiB sample is fine.
        if exc.start < len(head) - 4:
            raise InputError.single(
                f"not UTF-8 text (byte 0x{head[exc.start]:02x} at offset {exc.start}); save the CSV as UTF-8",
                path,
            ) from None
        text = head[: exc.start].decode("utf-8-sig")
    body = text.lstrip()
    if body.startswith(("{", "[")):
        if '"tool"' in body and "bracer" in body:
            raise InputError.single(
                "this is a bracer JSON record (the output of 'bracer audit --json' or 'bracer review "
                "--json'), "
                f"not a session log; {EXPECTED}",
                path,
            )
        raise InputError.single(f"this looks like a JSON document, not a session log; {EXPECTED}", path)
    if body.startswith("<"):
        raise InputError.single(f"this looks like XML or HTML, not a session log; {EXPECTED}", path)
    lines = [ln for ln in body.splitlines() if ln.strip() and not ln.lstrip().startswith("#")]
    if re.search(r"^bracer_protocol\s*:", text, re.MULTILINE):
        raise InputError.single(
            "this is a bracer protocol file (YAML), not a session log; the protocol comes first, the logs "
            "after "
            "it: bracer audit PROTOCOL LOG...",
            path,
        )
    first = lines[0] if lines else ""
    if body.startswith("---") or (_YAML_KEY.match(first) and not any(d in first for d in ",;\t|")):
        raise InputError.single(f"this looks like a YAML file, not a session log; {EXPECTED}", path)


def _zip_kind(head: bytes) -> str:
    if b"xl/" in head or (b"[Content_Types].xml" in head and b"xl" in head):
        return "this looks like an Excel workbook (.xlsx); export the sheet as CSV (comma-separated, UTF-8)"
    if b"opendocument.spreadsheet" in head:
        return "this looks like an OpenDocument spreadsheet (.ods); export the sheet as CSV"
    if b"word/" in head:
        return "this looks like a Word document (.docx), not a session log"
    return "this is a ZIP archive; unpack it and give the log files inside"


def _similar_files(path: Path) -> str:
    folder = path.parent if str(path.parent) else Path(".")
    try:
        names = [p.name for p in folder.iterdir() if p.is_file()]
    except OSError:
        return ""
    close = difflib.get_close_matches(path.name, names, n=3, cutoff=0.6)
    return f"; did you mean {', '.join(repr(str(folder / c)) for c in close)}?" if close else ""
