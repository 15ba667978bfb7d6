"""Provenance of a report: the inputs with their SHA-256, the analysis time, and the software that computed
it.

The analysis time follows the reproducible-builds convention: when ``SOURCE_DATE_EPOCH`` is set (integer
seconds since 1970-01-01 UTC) it *is* the analysis time, so the same inputs give byte-identical Markdown, HTML
and JSON.

Paths are recorded as they are shown to a person: relative to the current directory when the file lies under
it, absolute otherwise, always with forward slashes.  ``bracer verify --root DIR`` resolves relative paths
against ``DIR``.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import os
import platform
from dataclasses import dataclass
from importlib import metadata
from pathlib import Path

from bracer import __version__
from bracer.errors import InputError

__all__ = [
    "LIBRARIES",
    "AnalysisTime",
    "InputDigest",
    "Software",
    "analysis_time",
    "display_path",
    "file_digest",
    "software",
]

#: The libraries whose code computes or reads the numbers of a review or an audit, in the order reports list
#: them.
LIBRARIES: tuple[str, ...] = ("numpy", "scipy", "pandas", "pyarrow", "pydantic", "PyYAML")

_CHUNK = 1 << 20


@dataclass(frozen=True, slots=True)
class InputDigest:
    """One input file: its role (protocol, log, reference table), path as recorded, SHA-256 and size in
    bytes."""

    role: str
    path: str
    sha256: str
    size: int | None


@dataclass(frozen=True, slots=True)
class AnalysisTime:
    """When the analysis ran (UTC, whole seconds) and where the time came from."""

    when: dt.datetime
    source: str  # "SOURCE_DATE_EPOCH" or "system clock"

    @property
    def iso(self) -> str:
        return self.when.strftime("%Y-%m-%dT%H:%M:%SZ")

    @property
    def date(self) -> str:
        return self.when.strftime("%Y-%m-%d")


@dataclass(frozen=True, slots=True)
class Software:
    """bracer's version, Python's, and each library's (None when the library is not installed)."""

    bracer: str
    python: str
    libraries: tuple[tuple[str, str | None], ...]


def analysis_time(environ: dict[str, str] | None = None) -> AnalysisTime:
    """The analysis time: ``SOURCE_DATE_EPOCH`` when set, else the system clock (UTC, whole seconds).

    Raises
    ------
    InputError
        ``SOURCE_DATE_EPOCH`` is set but is not a non-negative integer number of seconds.
    """
    env = os.environ if environ is None else environ
    raw = env.get("SOURCE_DATE_EPOCH")
    if raw is None or raw.strip() == "":
        now = dt.datetime.now(dt.UTC).replace(microsecond=0)
        return AnalysisTime(now, "system clock")
    text = raw.strip()
    if not text.isdigit():
        raise InputError.single(
            f"SOURCE_DATE_EPOCH must be a whole number of seconds since 1970-01-01 UTC, found '{raw}'",
            field="SOURCE_DATE_EPOCH",
        )
    try:
        when = dt.datetime.fromtimestamp(int(text), dt.UTC)
    except (OverflowError, OSError, ValueError):
        raise InputError.single(
            f"SOURCE_DATE_EPOCH is out of range for a date, found '{raw}'", field="SOURCE_DATE_EPOCH"
        ) from None
    return AnalysisTime(when, "SOURCE_DATE_EPOCH")


def sha256_of(path: Path) -> str:
    """SHA-256 of a file's bytes, read in 1 MiB chunks (hex digest)."""
    h = hashlib.sha256()
    with Path(path).open("rb") as handle:
        while chunk := handle.read(_CHUNK):
            h.update(chunk)
    return h.hexdigest()


def display_path(path: str | Path, cwd: Path | None = None) -> str:
    """``path`` relative to ``cwd`` (default: the current directory) when it lies under it, else absolute."""
    p = Path(path)
    base = (cwd or Path.cwd()).resolve()
    full = p if p.is_absolute() else base / p
    full = Path(os.path.normpath(full))
    try:
        return full.relative_to(base).as_posix()
    except ValueError:
        return full.as_posix()


def file_digest(path: str | Path, role: str) -> InputDigest:
    """Hash one input file.

    Raises
    ------
    InputError
        The file cannot be read.
    """
    p = Path(path)
    try:
        digest = sha256_of(p)
        size = p.stat().st_size
    except OSError as exc:
        raise InputError.single(f"cannot read the {role} to hash it: {exc.strerror or exc}", p) from None
    return InputDigest(role, display_path(p), digest, size)


def software() -> Software:
    """Versions of bracer, Python and :data:`LIBRARIES`, from the installed distributions' metadata."""
    versions: list[tuple[str, str | None]] = []
    for name in LIBRARIES:
        try:
            versions.append((name, metadata.version(name)))
        except metadata.PackageNotFoundError:
            versions.append((name, None))
    return Software(__version__, platform.python_version(), tuple(versions))
