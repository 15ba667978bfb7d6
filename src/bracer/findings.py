"""Findings and the check registry, shared by the pre-trial review and the post-session audit.

A *check* is a small registered unit with a stable code (letters + three digits), a kebab-case name, a
one-line summary and a default severity.  A *finding* is a frozen, typed record of one thing a check found;
report writers render findings, they never parse them back out of strings.

Codes in use (retired codes are never reused):

* ``R1xx`` pre-trial review checks (bracer.review.checks)
* ``Qxxx`` data-quality checks of the audit (bracer.audit)
* ``Axxx`` limit checks of the audit (bracer.audit)
"""

from __future__ import annotations

import enum
import re
from collections.abc import Iterable
from dataclasses import asdict, dataclass, field
from typing import Any

__all__ = [
    "CHECKS",
    "Check",
    "Finding",
    "Kind",
    "Severity",
    "register",
]


class Severity(enum.IntEnum):
    """Ordered: a finding at or above ``--fail-on`` makes the command exit 1."""

    INFO = 10
    WARNING = 20
    ERROR = 30

    @property
    def label(self) -> str:
        return self.name.lower()

    @classmethod
    def parse(cls, text: str) -> Severity:
        try:
            return cls[text.strip().upper()]
        except KeyError:
            raise ValueError(f"unknown severity '{text}'; use one of info, warning, error") from None


class Kind(enum.StrEnum):
    # audit
    VIOLATION = "violation"
    NEAR_MISS = "near_miss"
    STOP = "stop"
    DATA_QUALITY = "data_quality"
    NOT_ASSESSABLE = "not_assessable"
    # review
    REVIEW = "review"


_CODE = re.compile(r"^[A-Z]{1,2}\d{3}$")
_NAME = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")


@dataclass(frozen=True, slots=True)
class Check:
    """Identity of a check; the function that runs it lives in the check's own module."""

    code: str
    name: str
    summary: str
    severity: Severity
    needs: tuple[str, ...] = ()  # quantities / channels it reads, for documentation and "not assessable"


CHECKS: dict[str, Check] = {}
_RETIRED: frozenset[str] = frozenset()


def register(check: Check) -> Check:
    """Add a check to the registry; refuse a malformed, duplicate or retired code or name."""
    if not _CODE.match(check.code):
        raise ValueError(f"check code '{check.code}' must be 1-2 capital letters and 3 digits, e.g. 'R101'")
    if not _NAME.match(check.name):
        raise ValueError(f"check name '{check.name}' must be kebab-case, e.g. 'layer-order'")
    if check.code in _RETIRED:
        raise ValueError(f"check code '{check.code}' is retired and may not be reused")
    if check.code in CHECKS:
        raise ValueError(f"duplicate check code '{check.code}' ({CHECKS[check.code].name} and {check.name})")
    if any(c.name == check.name for c in CHECKS.values()):
        raise ValueError(f"duplicate check name '{check.name}'")
    CHECKS[check.code] = check
    return check


@dataclass(frozen=True, slots=True)
class Finding:
    """One thing found.  Numbers are in ``unit`` (the unit the protocol declared for that limit).

    Times are seconds on the log's own clock and sample indices are row numbers in that log stream
    (audit only); review findings leave them None.
    """

    code: str
    name: str
    severity: Severity
    kind: Kind
    message: str
    subject: str | None = None  # joint or contact name from the protocol; None for the whole protocol/session
    quantity: str | None = None  # position, speed, torque, force, pressure, sustained_force, stop_latency …
    direction: str | None = None  # positive / negative, where a limit has two
    layer: str | None = None  # planned / device / mechanical / participant
    channel: str | None = None
    t_start: float | None = None
    t_end: float | None = None
    t_peak: float | None = None
    i_start: int | None = None
    i_end: int | None = None
    peak: float | None = None
    limit: float | None = None
    margin: float | None = None  # limit - peak, in unit, signed so that negative means beyond the limit
    unit: str | None = None
    extra: tuple[tuple[str, Any], ...] = field(default=())  # further typed figures, as (name, value) pairs

    @property
    def duration(self) -> float | None:
        if self.t_start is None or self.t_end is None:
            return None
        return self.t_end - self.t_start

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        d["severity"] = self.severity.label
        d["kind"] = self.kind.value
        d["extra"] = dict(self.extra)
        return d


def worst(findings: Iterable[Finding]) -> Severity | None:
    """The highest severity among ``findings``, or None when there are none."""
    return max((f.severity for f in findings), default=None)
