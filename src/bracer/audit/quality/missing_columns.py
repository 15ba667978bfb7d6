"""Q101 missing-column: a column the protocol's channel map names that no log file holds.

What the column feeds cannot be assessed: an error-level "not assessable" finding, never a pass, spanning
the whole stream (or, for a missing stream, the whole session).  A stream whose time column is in no file
is reported once, naming every channel it would have carried.
"""

from __future__ import annotations

from typing import Any

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import QualityResult, make_finding
from bracer.audit.quality.timebase import session_span, stream_span
from bracer.findings import Check, Finding, Kind, Severity, register
from bracer.session.model import MissingColumn

CHECK = register(
    Check(
        "Q101",
        "missing-column",
        "A column the protocol names is in no log file: what it feeds is not assessable.",
        Severity.ERROR,
        needs=("log columns",),
    )
)

#: What a missing column makes unassessable, as a finding's quantity.
QUANTITY = {
    "position": "position",
    "velocity": "speed",
    "torque": "torque",
    "force": "force",
    "trigger": "stop",
    "protection": "protection",
    "time": "time",
}


def run(ctx: AuditContext) -> QualityResult:
    missing = ctx.session.missing
    gone_streams = {m.stream for m in missing if m.role == "time"}
    findings: list[Finding] = []
    for stream in dict.fromkeys(m.stream for m in missing if m.stream in gone_streams):
        items = [m for m in missing if m.stream == stream]
        findings.append(_stream_finding(stream, items, session_span(ctx)))
    for m in missing:
        if m.stream not in gone_streams:
            findings.append(_column_finding(m, stream_span(ctx, m.stream)))
    return QualityResult(tuple(findings))


def _did_you_mean(m: MissingColumn) -> str:
    return f"; did you mean {', '.join(repr(c) for c in m.candidates)}?" if m.candidates else ""


def _stream_finding(stream: str, items: list[MissingColumn], span: dict[str, Any]) -> Finding:
    time = next(m for m in items if m.role == "time")
    fed = [m.feeds for m in items if m.role != "time"]
    what = f"; not assessable: {', '.join(dict.fromkeys(fed))}" if fed else ""
    return make_finding(
        CHECK,
        f"stream '{stream}' is not in the log: {time.note}{_did_you_mean(time)}{what}",
        kind=Kind.NOT_ASSESSABLE,
        stream=stream,
        quantity="time",
        channel=time.column,
        extra=(
            ("candidates", time.candidates),
            ("columns", tuple(m.column for m in items if m.role != "time")),
        ),
        **span,
    )


def _column_finding(m: MissingColumn, span: dict[str, Any]) -> Finding:
    return make_finding(
        CHECK,
        f"column '{m.column}' ({m.feeds}, stream '{m.stream}') is not in the log: "
        f"{m.note}{_did_you_mean(m)}; "
        f"{m.feeds} is not assessable",
        kind=Kind.NOT_ASSESSABLE,
        stream=m.stream,
        subject=m.owner if m.role in ("position", "velocity", "torque", "force") else None,
        quantity=QUANTITY[m.role],
        channel=m.column,
        extra=(("candidates", m.candidates), ("role", m.role), ("owner", m.owner)),
        **span,
    )
