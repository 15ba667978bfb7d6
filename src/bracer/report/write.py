"""Write a report's formats into a folder: ``<stem>.md`` (with ``<stem>.plots/``), ``<stem>.html``,
``<stem>.pdf`` and ``<stem>.json``.  Files are written whole or not at all (a temporary file renamed into
place)."""

from __future__ import annotations

import os
import re
import shutil
import tempfile
from collections.abc import Sequence
from pathlib import Path

from bracer.errors import InputError
from bracer.report.document import Document

__all__ = ["FORMATS", "parse_formats", "report_stem", "write_report"]

FORMATS = ("md", "html", "pdf", "json")


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


_UMASK = _umask()


def parse_formats(text: str) -> tuple[str, ...]:
    """``"md,html"`` -> ("md", "html"); ``all`` means every format.

    Raises
    ------
    ValueError
        An unknown format name (with the known ones).
    """
    names = [t.strip().lower() for t in text.split(",") if t.strip()]
    if names == ["all"]:
        return FORMATS
    aliases = {"markdown": "md", "htm": "html"}
    out: list[str] = []
    for n in names:
        n = aliases.get(n, n)
        if n not in FORMATS:
            raise ValueError(
                f"unknown report format '{n}'; use any of {', '.join(FORMATS)} (comma-separated) or all"
            )
        if n not in out:
            out.append(n)
    if not out:
        raise ValueError(f"no report format given; use any of {', '.join(FORMATS)}")
    return tuple(out)


def report_stem(doc: Document) -> str:
    """``bracer-report_AVRU-EXO-01_v1.2_AV-P01_S01``: protocol, version, participant, session (safe
    characters)."""
    t = doc.title
    parts = ["bracer-report", t.protocol_id, f"v{t.protocol_version}", t.participant or "nominal"]
    if t.session:
        parts.append(t.session)
    return "_".join(re.sub(r"[^A-Za-z0-9.\-]+", "-", p).strip("-") or "x" for p in parts)


def _atomic(path: Path, data: bytes) -> None:
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
        os.chmod(tmp, 0o666 & ~_UMASK)  # mkstemp makes the file private; a report is an ordinary file
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def write_report(
    doc: Document, out_dir: str | Path, formats: Sequence[str], stem: str | None = None
) -> list[Path]:
    """Write the formats asked for; return the paths written (plot files of the Markdown not listed).

    Raises
    ------
    InputError
        The folder cannot be created or a file cannot be written.
    """
    folder = Path(out_dir)
    stem = stem or report_stem(doc)
    written: list[Path] = []
    try:
        folder.mkdir(parents=True, exist_ok=True)
        if "md" in formats:
            from bracer.report.markdown import render_markdown

            plots = f"{stem}.plots"
            text, files = render_markdown(doc, plots)
            plot_dir = folder / plots
            if plot_dir.exists():
                shutil.rmtree(plot_dir)
            if files:
                plot_dir.mkdir()
                for name, svg in files.items():
                    _atomic(plot_dir / name, svg.encode("utf-8"))
            written.append(folder / f"{stem}.md")
            _atomic(written[-1], text.encode("utf-8"))
        if "html" in formats:
            from bracer.report.html import render_html

            written.append(folder / f"{stem}.html")
            _atomic(written[-1], render_html(doc).encode("utf-8"))
        if "json" in formats:
            from bracer.report.report_json import dumps, report_record

            written.append(folder / f"{stem}.json")
            _atomic(written[-1], dumps(report_record(doc)).encode("utf-8"))
        if "pdf" in formats:
            from bracer.report.pdf import write_pdf

            written.append(folder / f"{stem}.pdf")
            write_pdf(doc, written[-1])
    except OSError as exc:
        raise InputError.single(
            f"cannot write the report: {exc.strerror or exc}", exc.filename or folder
        ) from None
    return written
