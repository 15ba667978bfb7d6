"""What every review check shares: the result base class, the finding builder and direction wording."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Literal

from bracer.findings import Check, Finding, Kind, Severity
from bracer.protocol.model import Joint
from bracer.units import Quantity, format_number, parse_unit

__all__ = [
    "DIRECTIONS",
    "CheckResult",
    "Direction",
    "SubjectKind",
    "difference",
    "end_label",
    "fmt",
    "in_unit",
    "review_finding",
    "value_in",
]

Direction = Literal["positive", "negative"]
DIRECTIONS: tuple[Direction, Direction] = ("positive", "negative")
SubjectKind = Literal["joint", "contact", "stream", "protocol"]


@dataclass(frozen=True, slots=True)
class CheckResult:
    """Findings of one check.  Subclasses add the typed rows a reviewer reads, listed by :meth:`tables`."""

    check: Check
    findings: tuple[Finding, ...]

    def tables(self) -> dict[str, tuple[Any, ...]]:
        """The check's row tables by name (rows are frozen dataclasses)."""
        return {}


def review_finding(
    check: Check,
    severity: Severity,
    message: str,
    *,
    subject: str | None = None,
    subject_kind: SubjectKind | None = None,
    quantity: str | None = None,
    direction: str | None = None,
    layer: str | None = None,
    channel: str | None = None,
    value: float | None = None,
    limit: float | None = None,
    margin: float | None = None,
    unit: str | None = None,
    extra: tuple[tuple[str, Any], ...] = (),
) -> Finding:
    """A review finding.  ``value`` goes to ``Finding.peak``: the figure under review, in ``unit``.

    ``subject_kind`` (joint, contact, stream or protocol) travels in ``extra`` so that reports can group
    findings without guessing whether a name is a joint or a contact.
    """
    kind_extra: tuple[tuple[str, Any], ...] = (("subject_kind", subject_kind),) if subject_kind else ()
    return Finding(
        code=check.code,
        name=check.name,
        severity=severity,
        kind=Kind.REVIEW,
        message=message,
        subject=subject,
        quantity=quantity,
        direction=direction,
        layer=layer,
        channel=channel,
        peak=value,
        limit=limit,
        margin=margin,
        unit=unit,
        extra=kind_extra + extra,
    )


def in_unit(si: float, unit: str) -> float:
    """Express an internal (SI, rad) value in ``unit``."""
    factor, _ = parse_unit(unit)
    return si / factor


def value_in(q: Quantity, unit: str) -> float:
    """``q`` in ``unit``: the declared magnitude itself when ``q`` was declared in ``unit``."""
    return q.magnitude if q.unit == unit else in_unit(q.si, unit)


def difference(a: Quantity, b: Quantity, unit: str) -> float:
    """``a − b`` in ``unit``, from the declared magnitudes when both were declared in ``unit``."""
    return value_in(a, unit) - value_in(b, unit)


def fmt(value: float | None, unit: str | None = None) -> str:
    """``12.5 deg``; a dash for a missing value."""
    if value is None:
        return "–"
    text = format_number(value)
    return f"{text} {unit}" if unit else text


def end_label(joint: Joint, direction: str) -> str:
    """The anatomical name of one end of a joint's range, e.g. ``flexion (+)``."""
    if direction == "positive":
        return f"{joint.positive} (+)"
    return f"{joint.negative} (−)"
