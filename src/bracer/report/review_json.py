"""The pre-trial review as a JSON record: the same content as the terminal view, machine-readable.

Layout (format version 1)::

    {"record": "bracer-review", "format_version": 1,
     "tool": {"name", "version"}, "protocol": {"id", "version", "date", "title"},
     "participant": code or null, "inputs": [{"role", "path", "sha256"}],
     "summary": {"error": n, "warning": n, "info": n},
     "checks": [{"code", "name", "summary", "default_severity", "counts", "tables": {name: [row, ...]}}],
     "findings": [Finding.to_dict(), ...], "statement": "..."}

Rows are the checks' frozen dataclasses as objects; every number sits beside the field naming its unit.
"""

from __future__ import annotations

import dataclasses
import json
from pathlib import Path
from typing import Any

from bracer import __version__
from bracer.findings import Severity
from bracer.review import STATEMENT, ReviewResult

__all__ = ["FORMAT_VERSION", "review_record", "write_review_json"]

FORMAT_VERSION = 1


def _counts(findings: Any) -> dict[str, int]:
    return {s.label: sum(f.severity == s for f in findings) for s in sorted(Severity, reverse=True)}


def review_record(result: ReviewResult) -> dict[str, Any]:
    """The review as plain JSON-ready data."""
    ident = result.resolution.protocol.protocol
    return {
        "record": "bracer-review",
        "format_version": FORMAT_VERSION,
        "tool": {"name": "bracer", "version": __version__},
        "protocol": {
            "id": ident.id,
            "version": ident.version,
            "date": ident.date.isoformat(),
            "title": ident.title,
        },
        "participant": result.participant,
        "cautions_applied": list(result.resolution.cautions),
        "inputs": [dataclasses.asdict(i) for i in result.inputs],
        "summary": _counts(result.findings),
        "checks": [
            {
                "code": r.check.code,
                "name": r.check.name,
                "summary": r.check.summary,
                "default_severity": r.check.severity.label,
                "counts": _counts(r.findings),
                "tables": {
                    name: [dataclasses.asdict(row) for row in rows] for name, rows in r.tables().items()
                },
            }
            for r in result.checks
        ],
        "findings": [f.to_dict() for f in result.findings],
        "statement": STATEMENT,
    }


def write_review_json(result: ReviewResult, path: str | Path) -> None:
    """Write :func:`review_record` to ``path`` (UTF-8, indented, no NaN).

    Raises
    ------
    OSError
        The file cannot be written.
    """
    text = json.dumps(review_record(result), indent=2, ensure_ascii=False, allow_nan=False)
    Path(path).write_text(text + "\n", encoding="utf-8")
