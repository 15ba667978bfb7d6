"""Build the report's :class:`~bracer.report.document.Document` from a review record and/or an audit record.

The records are the JSON records ``bracer review --json`` and ``bracer audit --json`` write (or the same
records built in this run): a report built from records read back is the same document as one built by running
the analysis.  The protocol (for the title block and the plots' limits) and the session's signals (for the
plots) are optional: without them the report says what it could not show.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from bracer.errors import InputError
from bracer.report.classes import Declared, summarise_classes
from bracer.report.document import (
    STATEMENTS,
    CautionEntry,
    ClassSummary,
    ContactReferenceRow,
    CoverageBlock,
    Document,
    Figure,
    FindingRow,
    Incident,
    LimitChange,
    Provenance,
    RangeRow,
    RecordNote,
    ReviewCheckLine,
    ReviewFindingRow,
    ReviewSection,
    SignOff,
    StopRow,
    TitleBlock,
)
from bracer.report.incidents import candidate_incidents
from bracer.report.provenance import AnalysisTime, InputDigest, display_path, software
from bracer.report.records import SourceRecord
from bracer.report.stops import stop_rows

if TYPE_CHECKING:
    from bracer.audit.context import AuditContext
    from bracer.protocol.model import Protocol

__all__ = ["SIGN_OFF_ROLES", "build_document", "finding_rows"]

#: Who signs a report off.
SIGN_OFF_ROLES = ("Responsible clinician", "Responsible engineer")

_FINDING_FIELDS = (
    "code",
    "name",
    "severity",
    "kind",
    "subject",
    "quantity",
    "direction",
    "layer",
    "channel",
    "t_start",
    "t_end",
    "t_peak",
    "peak",
    "limit",
    "margin",
    "unit",
    "message",
)


def _num(v: Any) -> float | None:
    return float(v) if isinstance(v, int | float) and not isinstance(v, bool) else None


def finding_rows(findings: Sequence[dict[str, Any]], prefix: str = "F") -> tuple[FindingRow, ...]:
    """Findings of a record as numbered rows (F1, F2, … in the record's order, which is time order)."""
    rows = []
    for k, f in enumerate(findings, start=1):
        extra = f.get("extra") or {}
        rows.append(
            FindingRow(
                ref=f"{prefix}{k}",
                code=str(f["code"]),
                name=str(f.get("name") or ""),
                severity=str(f["severity"]),
                kind=str(f["kind"]),
                subject=f.get("subject"),
                quantity=f.get("quantity"),
                direction=f.get("direction"),
                layer=f.get("layer"),
                channel=f.get("channel"),
                t_start=_num(f.get("t_start")),
                t_end=_num(f.get("t_end")),
                t_peak=_num(f.get("t_peak")),
                peak=_num(f.get("peak")),
                limit=_num(f.get("limit")),
                margin=_num(f.get("margin")),
                unit=f.get("unit"),
                message=str(f["message"]),
                extra=tuple((str(k2), _freeze(v)) for k2, v in extra.items())
                if isinstance(extra, dict)
                else (),
            )
        )
    return tuple(rows)


def _freeze(v: Any) -> Any:
    if isinstance(v, list):
        return tuple(_freeze(x) for x in v)
    return v


# ------------------------------------------------------------------------------------------------ parts


def _consistent(review: SourceRecord | None, audit: SourceRecord | None) -> None:
    """A review and an audit in one report must be about the same protocol version and participant."""
    if review is None or audit is None:
        return
    r, a = review.data, audit.data
    for key in ("id", "version"):
        if (r.get("protocol") or {}).get(key) != (a.get("protocol") or {}).get(key):
            raise InputError.single(
                f"the review record is of protocol {key} {(r.get('protocol') or {}).get(key)!r} but the "
                "audit "
                f"record of {(a.get('protocol') or {}).get(key)!r}; one report covers one protocol version",
                audit.path or review.path,
                field=f"protocol.{key}",
            )
    if r.get("participant") != a.get("participant"):
        raise InputError.single(
            f"the review record is for participant {r.get('participant')!r} but the audit record for "
            f"{a.get('participant')!r}; one report covers one participant",
            audit.path or review.path,
            field="participant",
        )


def _inputs(records: Sequence[SourceRecord]) -> tuple[tuple[InputDigest, ...], tuple[str, ...]]:
    """Every input the records name, once each (protocol first, then logs, then reference tables)."""
    seen: dict[tuple[str, str], InputDigest] = {}
    for rec in records:
        for item in rec.data.get("inputs") or []:
            role = str(item.get("role") or "input")
            path = display_path(str(item["path"]))
            key = (path, str(item["sha256"]))
            size = item.get("size")
            if key in seen:
                if seen[key].size is None and isinstance(size, int):
                    seen[key] = dataclasses.replace(seen[key], size=size)
                continue
            seen[key] = InputDigest(role, path, str(item["sha256"]), size if isinstance(size, int) else None)
    order = {"protocol": 0, "log": 1, "reference table": 2}
    inputs = tuple(sorted(seen.values(), key=lambda d: (order.get(d.role, 3), d.path)))
    notes = []
    by_path: dict[str, list[InputDigest]] = {}
    for d in inputs:
        by_path.setdefault(d.path, []).append(d)
    for path, digests in by_path.items():
        if len(digests) > 1:
            notes.append(
                f"the records name two versions of {path} (sha256 "
                + " and ".join(d.sha256[:12] + "…" for d in digests)
                + "): the file changed between the review and the audit"
            )
    return inputs, tuple(notes)


def _title(
    review: SourceRecord | None,
    audit: SourceRecord | None,
    protocol: Protocol | None,
    when: AnalysisTime,
    session_date: str | None,
) -> TitleBlock:
    first = audit or review
    assert first is not None
    ident = first.data.get("protocol") or {}
    review_ident = (review.data.get("protocol") or {}) if review else {}
    kind = (
        "Pre-trial review and session audit"
        if review and audit
        else ("Session audit" if audit else "Pre-trial review")
    )
    pid = protocol.protocol if protocol is not None else None
    device = None
    if protocol is not None:
        d = protocol.device
        parts = [d.name, d.kind, d.manufacturer, f"firmware {d.firmware}" if d.firmware else None]
        device = " · ".join(p for p in parts if p)
    return TitleBlock(
        kind=kind,
        study=pid.study if pid is not None else None,
        protocol_id=str(ident.get("id")),
        protocol_version=str(ident.get("version")),
        protocol_date=review_ident.get("date") or (pid.date.isoformat() if pid is not None else None),
        protocol_title=ident.get("title") or (pid.title if pid is not None else None),
        site=pid.site if pid is not None else None,
        device=device,
        participant=first.data.get("participant"),
        session=audit.data.get("session") if audit else None,
        session_date=session_date,
        analysis_date=when.iso,
    )


def _coverage(audit: dict[str, Any]) -> CoverageBlock:
    cov = audit.get("coverage") or {}
    streams = tuple(
        (
            str(s.get("name")),
            display_path(str(s.get("path"))),
            int(s.get("samples") or 0),
            _num(s.get("declared_rate_hz")),
            _num(s.get("measured_rate_hz")),
        )
        for s in audit.get("streams") or []
    )
    missing = []
    for c in cov.get("channels") or []:
        if not c.get("present"):
            missing.append(f"{c.get('column')} ({c.get('role')} of {c.get('subject')}): not in the log")
        elif (c.get("analysed_s") or 0) <= 0:
            missing.append(
                f"{c.get('column')} ({c.get('role')} of {c.get('subject')}): no sample fit to analyse"
            )
    return CoverageBlock(
        _num(cov.get("session_start")),
        _num(cov.get("session_end")),
        float(cov.get("session_s") or 0.0),
        float(cov.get("analysed_s") or 0.0),
        float(cov.get("fraction") or 0.0),
        streams,
        tuple(missing),
    )


def _declared(protocol: Protocol | None, participant: str | None, audit: dict[str, Any]) -> Declared:
    summary = audit.get("summary") or {}
    derived = frozenset(
        str(j.get("joint")) for j in summary.get("joints") or [] if j.get("speed_source") == "derived"
    )
    if protocol is None:
        return Declared(None, None, derived)
    joints = protocol.joints.values()
    classes = set()
    if any(j.range.layer(x) is not None for j in joints for x in ("planned", "device", "mechanical")):
        classes.add("range")
    for q in ("speed", "torque", "acceleration"):
        if any(
            getattr(j, q).layer(x) is not None for j in joints for x in ("planned", "device", "mechanical")
        ):
            classes.add(q)
    contacts = protocol.contacts.values()
    if contacts:
        classes.add("force")
    if any(c.pressure is not None for c in contacts):
        classes.add("pressure")
    if any(c.sustained is not None for c in contacts):
        classes.add("sustained")
    if protocol.stop is not None or protocol.logging.triggers:
        classes.add("stops")
    locked = set(protocol.locked_joints)
    part = protocol.participants.get(participant) if participant else None
    if part is not None and part.locked_joints is not None:
        locked = set(part.locked_joints)
    if locked:
        classes.add("locked")
    if protocol.logging.protections:
        classes.add("protections")
    return Declared(frozenset(classes), frozenset(locked), derived)


def _change_status(c: dict[str, Any]) -> str:
    if c.get("loosens"):
        return "applied; loosens the limit"
    if c.get("applied"):
        return "applied"
    return str(c.get("note") or "not applied")


def _review_section(review: dict[str, Any]) -> ReviewSection:
    checks = []
    cautions: list[CautionEntry] = []
    for c in review.get("checks") or []:
        counts = c.get("counts") or {}
        checks.append(
            ReviewCheckLine(
                str(c.get("code")),
                str(c.get("name")),
                str(c.get("summary") or ""),
                int(counts.get("error") or 0),
                int(counts.get("warning") or 0),
                int(counts.get("info") or 0),
            )
        )
        for src in (c.get("tables") or {}).get("sources") or []:
            label = (
                src.get("source") if src.get("source_kind") == "override" else f"caution {src.get('source')}"
            )
            cautions.append(
                CautionEntry(
                    source=str(label),
                    population=src.get("population"),
                    text=src.get("text"),
                    applied=bool(src.get("applied")),
                    changes=tuple(
                        LimitChange(
                            target=f"{ch.get('target_kind')} {ch.get('target')}",
                            limit=f"{ch.get('quantity')} {ch.get('part')}",
                            before=float(ch.get("before")),
                            after=float(ch.get("after")),
                            unit=str(ch.get("unit") or ""),
                            status=_change_status(ch),
                            justification=ch.get("justification"),
                        )
                        for ch in src.get("changes") or []
                    ),
                )
            )
    findings = tuple(
        ReviewFindingRow(f"R{k}", str(f["code"]), str(f["severity"]), f.get("subject"), str(f["message"]))
        for k, f in enumerate(sorted(review.get("findings") or [], key=_review_order), start=1)
    )
    summary = review.get("summary") or {}
    counts = (int(summary.get("error") or 0), int(summary.get("warning") or 0), int(summary.get("info") or 0))
    tables = {c.get("code"): c.get("tables") or {} for c in review.get("checks") or []}
    return ReviewSection(
        review.get("participant"),
        counts,
        tuple(checks),
        findings,
        tuple(cautions),
        str(review.get("statement") or ""),
        ranges=tuple(_range_row(r) for r in tables.get("R102", {}).get("protection") or []),
        contact_references=tuple(_reference_row(r) for r in tables.get("R104", {}).get("references") or []),
    )


def _range_row(r: dict[str, Any]) -> RangeRow:
    return RangeRow(
        joint=str(r.get("joint")),
        direction=str(r.get("direction")),
        planned=_num(r.get("planned")),
        device=_num(r.get("device")),
        mechanical=_num(r.get("mechanical")),
        participant=_num(r.get("participant")),
        source=r.get("source"),
        unit=str(r.get("unit") or ""),
        layers=str(r.get("layers") or ""),
    )


def _reference_row(r: dict[str, Any]) -> ContactReferenceRow:
    return ContactReferenceRow(
        contact=str(r.get("contact")),
        area=r.get("specific_area"),
        limit=f"{r.get('quantity')} {str(r.get('item') or '').replace('_', '-')}",
        basis=str(r.get("basis") or ""),
        value=float(r.get("value") or 0.0),
        reference=float(r.get("reference") or 0.0),
        unit=str(r.get("unit") or ""),
        ratio=_num(r.get("ratio")),
    )


def _review_order(f: dict[str, Any]) -> tuple[int, str]:
    rank = {"error": 0, "warning": 1, "info": 2}
    return rank.get(str(f.get("severity")), 3), str(f.get("code"))


# ------------------------------------------------------------------------------------------------ document


def build_document(
    *,
    review: SourceRecord | None,
    audit: SourceRecord | None,
    when: AnalysisTime,
    protocol: Protocol | None = None,
    context: AuditContext | None = None,
    session_date: str | None = None,
    figure_notes: Sequence[str] = (),
) -> Document:
    """The report of a review and/or an audit.

    Parameters
    ----------
    review, audit
        The records (at least one).  ``SourceRecord.path`` None means the record was built in this run.
    when
        The analysis time (``SOURCE_DATE_EPOCH`` or the clock).
    protocol
        The protocol as loaded (title block: study, site, device; which limit classes it declares).
    context
        The session's signals with the audit's masks, for the plots; None: no plots (``figure_notes`` say
        why).

    Raises
    ------
    InputError
        No record, or a review and an audit about different protocols or participants.
    """
    if review is None and audit is None:
        raise InputError.single("a report needs a review record, an audit record or both")
    _consistent(review, audit)
    records = [r for r in (review, audit) if r is not None]
    inputs, notes = _inputs(records)
    provenance = Provenance(
        inputs=inputs,
        software=software(),
        analysis=when,
        records=tuple(
            RecordNote(
                r.kind,
                display_path(r.path) if r.path else None,
                r.data.get("created"),
                (r.data.get("tool") or {}).get("version"),
            )
            for r in records
        ),
        notes=notes,
    )
    title = _title(review, audit, protocol, when, session_date)
    findings: tuple[FindingRow, ...] = ()
    summary: tuple[ClassSummary, ...] = ()
    coverage: CoverageBlock | None = None
    statement: str | None = None
    stops: tuple[StopRow, ...] = ()
    incidents: tuple[Incident, ...] = ()
    figures: tuple[Figure, ...] = ()
    fnotes = list(figure_notes)
    if audit is not None:
        findings = finding_rows(audit.data["findings"])
        stops = stop_rows(findings)
        incidents = candidate_incidents(findings)
        summary = summarise_classes(findings, audit.data, _declared(protocol, title.participant, audit.data))
        coverage = _coverage(audit.data)
        statement = str(audit.data.get("statement"))
        if context is not None:
            from bracer.report.figures import build_figures

            fs = build_figures(context, findings, stops)
            figures = fs.figures
            fnotes += fs.notes
            findings = tuple(dataclasses.replace(f, plot=fs.links.get(f.ref)) for f in findings)
            stops = tuple(dataclasses.replace(s, plot=fs.links.get(s.ref)) for s in stops)
    return Document(
        title=title,
        provenance=provenance,
        statement=statement,
        summary=summary,
        coverage=coverage,
        review=_review_section(review.data) if review is not None else None,
        findings=findings,
        stops=stops,
        incidents=incidents,
        figures=figures,
        figure_notes=tuple(fnotes),
        sign_off=SignOff(SIGN_OFF_ROLES),
        sources={"review": review.data if review else None, "audit": audit.data if audit else None},
        # the sentence about analysed data belongs to reports that analysed data
        statements=STATEMENTS if audit is not None else STATEMENTS[:2],
    )
