"""The report's JSON record: the document itself (every row and figure caption, no plot data) and the review
and audit records it was built from, so that one file carries the whole evidence.

Layout (format version 1)::

    {"record": "bracer-report", "format_version": 1, "tool": {"name", "version"},
     "analysis_time": "...Z", "analysis_time_source": "SOURCE_DATE_EPOCH" | "system clock",
     "title": {...}, "inputs": [{"role", "path", "sha256", "size"}], "software": {...}, "records": [...],
     "statement", "summary": [...], "coverage": {...}, "incidents": [...], "stops": [...], "findings": [...],
     "figures": [{"id", "title", "caption", "group"}], "review": {...} | null, "sign_off": {...},
     "statements": [...], "standards": [...], "sources": {"review": {...} | null, "audit": {...} | null}}

``inputs`` is what ``bracer verify`` checks.  Keys keep their order and floats their shortest repr, so the
same document gives the same bytes.
"""

from __future__ import annotations

import dataclasses
import json
import math
from typing import Any

from bracer.report.document import Document

__all__ = ["FORMAT_VERSION", "dumps", "report_record"]

FORMAT_VERSION = 1


def _plain(value: Any) -> Any:
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: _plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [_plain(v) for v in value]
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, str | int | float | bool) or value is None:
        return value
    return str(value)


def _finding(row: Any) -> dict[str, Any]:
    d = _plain(row)
    d["extra"] = {k: _plain(v) for k, v in row.extra}
    d["duration"] = row.duration
    return d  # type: ignore[no-any-return]


def report_record(doc: Document) -> dict[str, Any]:
    """The JSON-ready record of ``doc``, with the review and audit records it was built from."""
    p = doc.provenance
    sw = p.software
    return _plain(
        {
            "record": "bracer-report",
            "format_version": FORMAT_VERSION,
            "tool": {"name": "bracer", "version": sw.bracer},
            "analysis_time": p.analysis.iso,
            "analysis_time_source": p.analysis.source,
            "title": doc.title,
            "inputs": list(p.inputs),
            "software": {"bracer": sw.bracer, "python": sw.python, "libraries": dict(sw.libraries)},
            "records": list(p.records),
            "provenance_notes": list(p.notes),
            "statement": doc.statement,
            "summary": list(doc.summary),
            "coverage": doc.coverage,
            "incidents": list(doc.incidents),
            "stops": list(doc.stops),
            "findings": [_finding(f) for f in doc.findings],
            "figures": [
                {"id": f.id, "title": f.title, "caption": f.caption, "group": f.group} for f in doc.figures
            ],
            "figure_notes": list(doc.figure_notes),
            "review": doc.review,
            "sign_off": doc.sign_off,
            "statements": list(doc.statements),
            "standards": [{"standard": s, "use": w} for s, w in doc.standards],
            "sources": doc.sources,
        }
    )  # type: ignore[no-any-return]


def dumps(record: dict[str, Any]) -> str:
    """The record as JSON text (UTF-8, indented, strict: no NaN)."""
    return json.dumps(record, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
