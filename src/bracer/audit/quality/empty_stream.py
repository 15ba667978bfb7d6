"""Q111 empty-stream: a stream with fewer than two samples (e.g. a file with a header and no rows).

Nothing on its clock can be assessed: an error-level "not assessable" finding naming what it feeds.
"""

from __future__ import annotations

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import QualityResult, make_finding
from bracer.audit.quality.channels import needs_of
from bracer.audit.quality.timebase import session_span
from bracer.findings import Check, Finding, Kind, Severity, register

CHECK = register(
    Check(
        "Q111",
        "empty-stream",
        "A stream has fewer than two samples: nothing on its clock is assessable.",
        Severity.ERROR,
        needs=("log rows",),
    )
)


def run(ctx: AuditContext) -> QualityResult:
    findings: list[Finding] = []
    needs = needs_of(ctx)
    for name, stream in ctx.session.streams.items():
        if stream.n >= 2:
            continue
        fed = ", ".join(dict.fromkeys(u.describe() for u in needs[name].uses)) or "no channels"
        rows = "no rows after the header" if stream.n == 0 else "a single row"
        findings.append(
            make_finding(
                CHECK,
                f"stream '{name}' ({stream.source.path}) has {rows}; not assessable: {fed}",
                kind=Kind.NOT_ASSESSABLE,
                stream=name,
                quantity="time",
                channel=stream.time_column,
                extra=(("samples", stream.n),),
                **session_span(ctx),
            )
        )
    return QualityResult(tuple(findings))
