"""R106 cautions: every caution and override applied to the participant, with each limit it changed.

Rows list each caution (its text and population) and each override, with every limit it touched, before →
after in the unit of the limit before; a change a caution could not make because the limit in force was
already tighter is listed as not applied.  Problems found while applying them
(:class:`bracer.protocol.resolve.ResolveProblem`, e.g. a caution changing a layer the protocol does not
declare, or an override loosening a limit without a written justification) are error findings.  An override
that loosens a limit with a justification is still a warning: a clinician must have seen it.

A caution naming an unknown joint or contact never gets here: the loader refuses the file.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from bracer.findings import Check, Finding, Severity, register
from bracer.protocol.resolve import Change, Resolution
from bracer.review.checks._base import CheckResult, SubjectKind, fmt, review_finding, value_in

__all__ = ["CHECK", "CautionRow", "CautionsResult", "ChangeRow", "run"]

CHECK = register(
    Check(
        code="R106",
        name="cautions",
        summary="Cautions and overrides applied to the participant, with every limit changed before → after.",
        severity=Severity.ERROR,
        needs=("cautions", "participants"),
    )
)


@dataclass(frozen=True, slots=True)
class ChangeRow:
    """One limit a caution or override touched; ``before`` and ``after`` are in ``unit``."""

    target_kind: str
    target: str
    quantity: str
    part: str
    before: float
    after: float
    unit: str
    applied: bool
    loosens: bool
    justification: str | None
    note: str


@dataclass(frozen=True, slots=True)
class CautionRow:
    """A caution (``source_kind`` caution, ``source`` its id) or an override (``source`` 'override 1' ...).

    ``applied`` is False for the cautions of a nominal review, which lists them without applying them.
    """

    source_kind: str
    source: str
    text: str | None
    population: str | None
    applied: bool
    changes: tuple[ChangeRow, ...]


@dataclass(frozen=True, slots=True)
class CautionsResult(CheckResult):
    sources: tuple[CautionRow, ...] = ()

    def tables(self) -> dict[str, tuple[Any, ...]]:
        return {"sources": self.sources}


def _row(change: Change) -> ChangeRow:
    unit = change.before.unit
    return ChangeRow(
        change.target_kind,
        change.target,
        change.quantity,
        change.part,
        change.before.magnitude,
        value_in(change.after, unit),
        unit,
        change.applied,
        change.loosens,
        change.justification,
        change.note,
    )


def run(resolution: Resolution) -> CautionsResult:
    """List the cautions and overrides of ``resolution`` with their changes; flag problems and loosening."""
    p = resolution.protocol
    findings: list[Finding] = []

    def add(
        severity: Severity, message: str, subject: str | None, kind: SubjectKind | None, **fields: Any
    ) -> None:
        findings.append(
            review_finding(CHECK, severity, message, subject=subject, subject_kind=kind, **fields)
        )

    if resolution.participant is None:
        rows = tuple(
            CautionRow("caution", cid, c.text, c.population, False, ()) for cid, c in p.cautions.items()
        )
        add(
            Severity.INFO,
            "nominal review (no participant): no caution or override is applied"
            + (f"; the protocol declares {len(rows)} caution(s): {', '.join(p.cautions)}" if rows else ""),
            None,
            "protocol",
            quantity="caution",
        )
        return CautionsResult(CHECK, tuple(findings), rows)

    rows_list = []
    for cid in resolution.cautions:
        caution = p.cautions[cid]
        changes = tuple(_row(c) for c in resolution.changes if c.source_kind == "caution" and c.source == cid)
        rows_list.append(CautionRow("caution", cid, caution.text, caution.population, True, changes))
        if not caution.effects:
            add(
                Severity.INFO,
                f"caution '{cid}' has no structured effect on any limit; it is shown to the "
                "clinician as written",
                None,
                "protocol",
                quantity="caution",
                extra=(("caution", cid),),
            )
    for i, override in enumerate(resolution.participant.overrides, start=1):
        source = f"override {i}"  # as bracer.protocol.resolve names them
        changes = tuple(
            _row(c) for c in resolution.changes if c.source_kind == "override" and c.source == source
        )
        rows_list.append(CautionRow("override", source, override.justification, None, True, changes))

    for change in resolution.changes:
        if change.loosens and change.justification:
            row = _row(change)
            add(
                Severity.WARNING,
                f"{change.source} loosens the {change.quantity} limit {change.part} of {change.target_kind} "
                f"'{change.target}' from {fmt(row.before, row.unit)} to {fmt(row.after, row.unit)}; "
                f'justification given: "{change.justification}" — the responsible clinician must have '
                "approved it",
                change.target,
                change.target_kind,
                quantity=change.quantity,
                layer=change.part.split(".")[0] if change.target_kind == "joint" else None,
                value=row.after,
                limit=row.before,
                unit=row.unit,
                extra=(("source", change.source), ("part", change.part)),
            )
    for problem in resolution.problems:
        kind: SubjectKind | None = (
            "joint" if problem.target in p.joints else "contact" if problem.target in p.contacts else None
        )
        severity = Severity.WARNING if problem.severity == "warning" else Severity.ERROR
        label = f"caution '{problem.source}'" if problem.source_kind == "caution" else problem.source
        add(
            severity,
            f"{label}: {problem.message}",
            problem.target or None,
            kind,
            extra=(("source", problem.source),),
        )
    return CautionsResult(CHECK, tuple(findings), tuple(rows_list))
