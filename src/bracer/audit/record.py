"""The audit's JSON record, and its published JSON Schema (``audit-record.schema.json`` beside this module,
printed by ``bracer schema audit-record``).

The record is built from the same :class:`~bracer.audit.run.AuditResult` as the terminal summary, so the two
cannot disagree.  Numbers that are not finite become null (JSON has no NaN).  This module imports nothing
heavy: printing the schema must stay fast.
"""

from __future__ import annotations

import datetime as dt
import json
import math
from dataclasses import asdict, is_dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from bracer.audit.run import AuditResult

__all__ = ["FORMAT_VERSION", "SCHEMA_PATH", "build_record", "dumps", "schema"]

FORMAT_VERSION = 1
SCHEMA_PATH = Path(__file__).resolve().with_name("audit-record.schema.json")


def schema() -> dict[str, Any]:
    """The JSON Schema of the audit record (draft 2020-12)."""
    return json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))  # type: ignore[no-any-return]


def build_record(result: AuditResult, created: dt.datetime | None = None) -> dict[str, Any]:
    """The JSON-ready record of one audit."""
    when = (created or dt.datetime.now(dt.UTC)).astimezone(dt.UTC).isoformat(timespec="seconds")
    protocol_file = next((i for i in result.inputs if i.format == "yaml"), None)
    cov = result.coverage
    record: dict[str, Any] = {
        "record": "bracer-audit",
        "format_version": FORMAT_VERSION,
        "tool": {"name": "bracer", "version": result.tool_version},
        "created": when.replace("+00:00", "Z"),
        "protocol": {
            "id": result.protocol_id,
            "version": result.protocol_version,
            "title": result.protocol_title,
            "path": protocol_file.path if protocol_file else None,
            "sha256": protocol_file.sha256 if protocol_file else None,
        },
        "participant": result.participant,
        "session": result.session,
        "inputs": [
            {"role": "protocol" if i.format == "yaml" else "log", "path": i.path, "sha256": i.sha256,
             "size": i.size, "format": i.format}
            for i in result.inputs
        ],
        "statement": result.statement,
        "caution": result.caution,
        "worst_severity": result.worst.label if result.worst is not None else None,
        "counts": _counts(result),
        "checks": {"ran": list(result.checks), "limit_checks_available": result.limit_checks},
        "streams": [
            {"name": s.stream, "path": s.path, "samples": s.samples, "t_first": s.t_first, "t_last": s.t_last,
             "declared_rate_hz": s.declared_rate, "measured_rate_hz": s.rate, "jitter_s": s.jitter}
            for s in result.streams
        ],
        "coverage": {
            "session_start": cov.session_start,
            "session_end": cov.session_end,
            "session_s": cov.session_s,
            "analysed_s": cov.analysed_s,
            "fraction": cov.fraction,
            "channels": [asdict(c) for c in cov.channels],
        },
        "summary": _summary(result.summary),
        "findings": [f.to_dict() for f in result.findings],
    }
    return _plain(record)  # type: ignore[no-any-return]


def dumps(record: dict[str, Any]) -> str:
    """The record as JSON text (UTF-8, indented, strict: no NaN)."""
    return json.dumps(record, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def _counts(result: AuditResult) -> dict[str, dict[str, int]]:
    kinds = ("violation", "near_miss", "stop", "data_quality", "not_assessable")
    by_kind = dict.fromkeys(kinds, 0)
    by_severity = {"error": 0, "warning": 0, "info": 0}
    for f in result.findings:
        by_kind[f.kind.value] = by_kind.get(f.kind.value, 0) + 1
        by_severity[f.severity.label] += 1
    return {"by_kind": by_kind, "by_severity": by_severity}


def _summary(summary: Any) -> dict[str, Any] | None:
    if summary is None:
        return None
    if hasattr(summary, "to_dict"):
        return summary.to_dict()  # type: ignore[no-any-return]
    if is_dataclass(summary) and not isinstance(summary, type):
        return asdict(summary)
    raise TypeError(f"summary figures of type {type(summary).__name__} cannot go into the record")


def _plain(value: Any) -> Any:
    """JSON-ready: tuples to lists, numpy scalars to Python numbers, non-finite floats to None."""
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [_plain(v) for v in value]
    if type(value).__module__ == "numpy" and hasattr(value, "item"):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, str | int | float | bool) or value is None:
        return value
    return str(value)
