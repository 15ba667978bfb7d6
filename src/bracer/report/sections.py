"""The report's sections and the rows of its tables, as plain text cells, shared by every writer.

Markdown, HTML and PDF lay out the same sections in the same order with the same headings, columns and cell
texts, taken from here; only the markup differs.  Nothing here computes a figure: cells render the document's
numbers with :mod:`bracer.report.wording`.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from bracer.report.document import CautionEntry, Document, FindingRow, Incident, LimitChange, StopRow
from bracer.report.wording import KIND_LABELS, SEVERITY_LABELS, duration, percent, signed, time_s, value

__all__ = [
    "HEADINGS",
    "NOT_STATED",
    "Table",
    "finding_table",
    "incident_table",
    "input_table",
    "software_lines",
    "stop_joint_table",
    "stop_table",
    "summary_table",
    "title_rows",
]

NOT_STATED = "not stated"

HEADINGS = {
    "summary": "Summary per limit class",
    "incidents": "For the clinician: candidate incidents",
    "stops": "Stops",
    "findings": "Findings",
    "plots": "Plots",
    "coverage": "Analysed data",
    "review": "Pre-trial review",
    "cautions": "Cautions and overrides applied (before → after)",
    "ranges": "Range-of-motion limits in force",
    "references": "Contact limits against ISO/TS 15066 reference values",
    "provenance": "Provenance",
    "standards": "Standards and vocabulary",
    "sign_off": "Sign-off",
}

INCIDENT_INTRO = (
    "Findings that may be reportable, in the vocabulary of ISO 14155:2020: an adverse event is an untoward "
    "medical occurrence in a participant; a device deficiency is an inadequacy of the device in identity, "
    "quality, durability, reliability, safety or performance, including malfunction and use error. bracer "
    "cannot "
    "tell whether the participant was harmed: the categories below are suggestions from the data, and "
    "seriousness and relatedness are left blank for the responsible clinician to assess."
)
NO_INCIDENTS = (
    "No exceedance in the analysed data suggests a candidate incident. This does not replace the clinician's "
    "own observation of the session."
)
SIGN_OFF_INTRO = (
    "By signing, the responsible clinician and the responsible engineer record that they have read this "
    "report. "
    "The signatures do not turn the report into a certification."
)


@dataclass(frozen=True, slots=True)
class Table:
    header: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]


def _or(text: str | None) -> str:
    return text if text else NOT_STATED


def title_rows(doc: Document) -> tuple[tuple[str, str], ...]:
    t = doc.title
    protocol = f"{t.protocol_id}, version {t.protocol_version}" + (
        f" ({t.protocol_date})" if t.protocol_date else ""
    )
    rows = [
        ("Study", _or(t.study)),
        ("Protocol", protocol),
        ("Protocol title", _or(t.protocol_title)),
        ("Site", _or(t.site)),
        ("Device", _or(t.device)),
        ("Participant", t.participant or "none (nominal protocol: no cautions or overrides applied)"),
    ]
    if doc.has_audit:
        rows += [("Session", _or(t.session)), ("Session date", _or(t.session_date))]
    rows.append(("Analysis date", f"{t.analysis_date} (UTC)"))
    return tuple(rows)


def summary_table(doc: Document) -> Table:
    rows = tuple((c.label, str(c.violations), str(c.near_misses), c.statement) for c in doc.summary)
    return Table(("Limit class", "Exceedances", "Near misses", "What the analysed data show"), rows)


def _when(f: FindingRow) -> str:
    return time_s(f.t_start) if f.t_start is not None else "–"


def finding_table(findings: Sequence[FindingRow]) -> Table:
    rows = tuple(
        (
            f.ref,
            _when(f),
            duration(f.duration) if f.duration is not None else "–",
            value(f.peak, None),
            value(f.limit, None),
            signed(f.margin, None),
            f.unit or "–",
            f"{SEVERITY_LABELS.get(f.severity, f.severity)} · {KIND_LABELS.get(f.kind, f.kind)} · {f.code} "
            f"{f.name}: {f.message}",
        )
        for f in findings
    )
    return Table(("#", "Time", "Duration", "Peak", "Limit", "Margin", "Unit", "Message"), rows)


def stop_table(stops: Sequence[StopRow]) -> Table:
    rows = tuple(
        (
            s.ref,
            time_s(s.t_trigger),
            s.label,
            f"{value(s.latency, s.latency_unit)} of {value(s.latency_budget, s.latency_unit)}: "
            f"{s.latency_status}",
            f"{value(s.torque_off, s.torque_unit)} of {value(s.torque_budget, s.torque_unit)}: "
            f"{s.torque_status}",
            s.category_status,
        )
        for s in stops
    )
    return Table(
        (
            "#",
            "Trigger time",
            "Trigger",
            "Time to standstill (budget)",
            "Time to torque off (budget)",
            "Category check",
        ),
        rows,
    )


def stop_joint_table(stops: Sequence[StopRow]) -> Table:
    rows = tuple(
        (
            s.ref,
            j.joint,
            value(j.distance, j.unit),
            value(j.predicted, j.unit) if j.predicted is not None else "not predicted",
            value(j.speed_at_trigger, j.speed_unit) if j.speed_at_trigger is not None else "not valid",
            j.ref,
        )
        for s in stops
        for j in s.joints
    )
    return Table(
        ("Stop", "Joint", "Distance travelled", "Declared stop predicts", "Speed at trigger", "Finding"), rows
    )


def incident_table(incidents: Sequence[Incident]) -> Table:
    rows = tuple(
        (
            i.ref,
            time_s(i.t) if i.t is not None else "–",
            i.finding,
            i.event,
            " or ".join(i.categories) + "?",
            "",
            "",
        )
        for i in incidents
    )
    return Table(
        ("#", "Time", "Finding", "What the data show", "Consider", "Seriousness", "Relatedness"), rows
    )


def input_table(doc: Document) -> Table:
    rows = tuple(
        (d.role, d.path, d.sha256, str(d.size) if d.size is not None else "–") for d in doc.provenance.inputs
    )
    return Table(("Role", "Path", "SHA-256", "Bytes"), rows)


def software_lines(doc: Document) -> tuple[str, ...]:
    sw = doc.provenance.software
    libs = ", ".join(f"{name} {ver or 'not installed'}" for name, ver in sw.libraries)
    a = doc.provenance.analysis
    lines = [
        f"bracer {sw.bracer}; Python {sw.python}; {libs}.",
        f"Analysis time {a.iso} from the {a.source}"
        + (
            " (reproducible: the same inputs give the same report)."
            if a.source == "SOURCE_DATE_EPOCH"
            else "."
        ),
    ]
    for r in doc.provenance.records:
        where = f"read from {r.path}" if r.path else "computed in this run"
        made = f", created {r.created}" if r.created else ""
        tool = f" by bracer {r.tool_version}" if r.tool_version else ""
        lines.append(f"The {r.kind} record: {where}{made}{tool}.")
    lines += list(doc.provenance.notes)
    return tuple(lines)


def coverage_lines(doc: Document) -> tuple[str, ...]:
    c = doc.coverage
    if c is None:
        return ()
    lines = [
        f"Session time {time_s(c.session_start)} to {time_s(c.session_end)} ({duration(c.session_s)}); "
        "analysed "
        f"with every analysed channel covered: {duration(c.analysed_s)}, {percent(c.fraction)} of session "
        "time."
    ]
    for name, path, samples, declared, measured in c.streams:
        lines.append(
            f"Stream '{name}' ({path}): {samples} samples, declared {value(declared, 'Hz')}, measured "
            f"{value(measured, 'Hz')}."
        )
    if c.not_analysed:
        lines.append("Not analysed at all: " + "; ".join(c.not_analysed) + ".")
    return tuple(lines)


def review_lines(doc: Document) -> tuple[str, ...]:
    r = doc.review
    if r is None:
        return ()
    who = (
        f"participant {r.participant}" if r.participant else "the nominal protocol (no participant selected)"
    )
    e, w, i = r.counts
    return (f"Review of {who}: {e} error(s), {w} warning(s), {i} info.", r.statement)


def review_check_table(doc: Document) -> Table:
    assert doc.review is not None
    rows = tuple(
        (c.code, c.name, c.summary, str(c.errors), str(c.warnings), str(c.infos)) for c in doc.review.checks
    )
    return Table(("Code", "Check", "What it checks", "Errors", "Warnings", "Info"), rows)


def review_finding_table(doc: Document) -> Table:
    assert doc.review is not None
    rows = tuple(
        (f.ref, SEVERITY_LABELS.get(f.severity, f.severity), f.code, f.subject or "–", f.message)
        for f in doc.review.findings
    )
    return Table(("#", "Severity", "Code", "Subject", "Message"), rows)


def caution_table(changes: Sequence[LimitChange]) -> Table:
    rows = tuple(
        (
            c.target,
            c.limit,
            f"{value(c.before, c.unit)} → {value(c.after, c.unit)}",
            c.status + (f"; justification: {c.justification}" if c.justification else ""),
        )
        for c in changes
    )
    return Table(("Target", "Limit", "Before → after", "Status"), rows)


def caution_heading(entry: CautionEntry) -> str:
    text = entry.source + (f" — {entry.population}" if entry.population else "")
    return text + ("" if entry.applied else " (listed, not applied: nominal review)")


def no_change_text(entry: CautionEntry) -> str:
    """What to say under a caution that changed no limit."""
    if not entry.applied:
        return "Not applied: this review is of the nominal protocol, for no participant."
    return "Changes no limit."


#: Under the contact reference table, in every format.
REFERENCE_CAVEAT = (
    "Ratios of each limit to the ISO/TS 15066:2016 Annex A value of its body region: reference values from "
    "healthy adults, not clinical limits; the protocol's own limits govern."
)


def range_table(doc: Document) -> Table:
    """Range-of-motion limits in force for the participant, per joint end (R102)."""
    assert doc.review is not None
    rows = tuple(
        (
            r.joint,
            "+ (positive)" if r.direction == "positive" else "− (negative)",
            value(r.planned, r.unit),
            value(r.device, r.unit),
            value(r.mechanical, r.unit),
            f"{value(r.participant, r.unit)} ({r.source})" if r.participant is not None else "not known",
            r.layers,
        )
        for r in doc.review.ranges
    )
    return Table(
        ("Joint", "End", "Planned", "Device", "Mechanical", "Participant", "In the participant's range by"),
        rows,
    )


def reference_table(doc: Document) -> Table:
    """Contact limits against the ISO/TS 15066 reference values (R104)."""
    assert doc.review is not None
    rows = tuple(
        (
            r.contact + (f" ({r.area})" if r.area else ""),
            r.limit,
            r.basis,
            value(r.value, r.unit),
            value(r.reference, r.unit),
            value(r.ratio, None, 3) if r.ratio is not None else "not permissible",
        )
        for r in doc.review.contact_references
    )
    return Table(("Contact", "Limit", "Basis", "Value", "Reference", "Ratio"), rows)
