"""Tamper evidence: recompute the SHA-256 of every input a report (or a review or audit record) names.

Each input is one of:

* ``match`` -- the file is there and its SHA-256 is the recorded one;
* ``differs`` -- the file is there but its content changed (any byte);
* ``missing`` -- no file at the recorded path (relative paths resolve against ``root``);
* ``unreadable`` -- a file is there but cannot be read (permissions, a folder in its place).

Only ``match`` for every input means the inputs are the ones the report was made from.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from bracer.errors import InputError
from bracer.report.provenance import sha256_of
from bracer.report.records import read_record

__all__ = ["InputCheck", "Verification", "verify_record"]


@dataclass(frozen=True, slots=True)
class InputCheck:
    role: str
    path: str  # as recorded
    resolved: str  # where it was looked for
    expected: str
    actual: str | None
    status: str  # match, differs, missing, unreadable
    detail: str = ""


@dataclass(frozen=True, slots=True)
class Verification:
    report: str
    kind: str
    checks: tuple[InputCheck, ...]

    def count(self, status: str) -> int:
        return sum(c.status == status for c in self.checks)

    @property
    def all_match(self) -> bool:
        return bool(self.checks) and all(c.status == "match" for c in self.checks)


def _check(role: str, recorded: str, expected: str, root: Path) -> InputCheck:
    p = Path(recorded)
    where = p if p.is_absolute() else root / p
    if not where.exists():
        return InputCheck(role, recorded, str(where), expected, None, "missing")
    try:
        actual = sha256_of(where)
    except OSError as exc:
        return InputCheck(role, recorded, str(where), expected, None, "unreadable", exc.strerror or str(exc))
    status = "match" if actual == expected.lower() else "differs"
    return InputCheck(role, recorded, str(where), expected, actual, status)


def verify_record(report: str | Path, root: str | Path | None = None) -> Verification:
    """Check every input the record at ``report`` names.

    Raises
    ------
    InputError
        The record cannot be read, is not a bracer record, or names no input at all.
    """
    rec = read_record(report)
    base = Path(root) if root is not None else Path.cwd()
    if root is not None and not base.is_dir():
        raise InputError.single("--root is not a folder", base)
    inputs = rec.data["inputs"]
    if not inputs:
        raise InputError.single(
            "the record names no input file, so there is nothing to verify", report, field="inputs"
        )
    checks = tuple(
        _check(str(i.get("role") or "input"), str(i["path"]), str(i["sha256"]), base) for i in inputs
    )
    return Verification(str(report), rec.kind, checks)
