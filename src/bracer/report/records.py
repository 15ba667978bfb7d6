"""Reading the JSON records a report is built from: a pre-trial review record (``bracer review --json``) and a
post-session audit record (``bracer audit --json``), or the record of a report itself (``bracer verify``).

A record that cannot be used is an :class:`~bracer.errors.InputError` naming the file, the line (for JSON
syntax) or the field, what was expected and what was found -- never a traceback.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from bracer.errors import InputError

__all__ = ["KINDS", "SourceRecord", "check_fields", "load_json", "read_record"]

#: The ``record`` field of each kind of record bracer writes.
KINDS = {"bracer-review": "review", "bracer-audit": "audit", "bracer-report": "report"}
_SUPPORTED = {"review": (1,), "audit": (1,), "report": (1,)}
_REQUIRED = {
    "review": ("protocol", "participant", "inputs", "checks", "findings", "statement"),
    "audit": ("protocol", "participant", "inputs", "findings", "coverage", "statement"),
    "report": ("inputs",),
}


@dataclass(frozen=True, slots=True)
class SourceRecord:
    """A record as read: its kind (review, audit, report), its data and the file it came from (None: this
    run)."""

    kind: str
    data: dict[str, Any]
    path: str | None = None


def load_json(path: str | Path) -> Any:
    """Parse a JSON file.

    Raises
    ------
    InputError
        The file cannot be read, is not UTF-8 or is not JSON (with the line and column of the syntax error).
    """
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError.single("file not found", p) from None
    except IsADirectoryError:
        raise InputError.single("is a directory, expected a JSON record file", p) from None
    except UnicodeDecodeError as exc:
        raise InputError.single(f"not UTF-8 text (byte {exc.start}); expected a JSON record", p) from None
    except OSError as exc:
        raise InputError.single(f"cannot read: {exc.strerror or exc}", p) from None
    try:
        return json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError.single(f"not valid JSON: {exc.msg}", p, exc.lineno, exc.colno) from None


def check_fields(data: dict[str, Any], kind: str, path: str | Path | None) -> None:
    """Refuse a record of ``kind`` that lacks a field the report needs, or whose format version is unknown."""
    version = data.get("format_version")
    if version not in _SUPPORTED[kind]:
        raise InputError.single(
            f"unsupported format_version {version!r} of a bracer {kind} record; this bracer reads "
            f"{', '.join(map(str, _SUPPORTED[kind]))}",
            path,
            field="format_version",
        )
    for key in _REQUIRED[kind]:
        if key not in data:
            raise InputError.single(f"the {kind} record has no '{key}' field", path, field=key)
    inputs = data["inputs"]
    if not isinstance(inputs, list):
        raise InputError.single(
            f"expected a list of inputs, found {type(inputs).__name__}", path, field="inputs"
        )
    for i, item in enumerate(inputs):
        if (
            not isinstance(item, dict)
            or not isinstance(item.get("path"), str)
            or not isinstance(item.get("sha256"), str)
        ):
            raise InputError.single(
                "expected an object with 'path' and 'sha256' strings", path, field=f"inputs[{i}]"
            )
    if "findings" in _REQUIRED[kind]:
        findings = data["findings"]
        if not isinstance(findings, list) or not all(isinstance(f, dict) for f in findings):
            raise InputError.single("expected a list of finding objects", path, field="findings")
        for i, f in enumerate(findings):
            for key in ("code", "severity", "kind", "message"):
                if not isinstance(f.get(key), str):
                    raise InputError.single(
                        f"finding has no '{key}' text", path, field=f"findings[{i}].{key}"
                    )


def read_record(path: str | Path) -> SourceRecord:
    """Read a bracer JSON record and tell its kind.

    Raises
    ------
    InputError
        Unreadable, not JSON, not a bracer record, or missing a field the report needs.
    """
    data = load_json(path)
    if not isinstance(data, dict):
        raise InputError.single(
            f"expected a JSON object (a bracer record), found {type(data).__name__}", path
        )
    name = data.get("record")
    if name not in KINDS:
        known = ", ".join(sorted(KINDS))
        raise InputError.single(
            f"not a bracer record: field 'record' is {name!r}, expected one of {known}", path, field="record"
        )
    kind = KINDS[name]
    check_fields(data, kind, path)
    return SourceRecord(kind, data, str(path))
