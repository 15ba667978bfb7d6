"""Q102 dropped-row: a row the reader left out, such as a truncated last line (the write was cut off).

The rows before it were read; the time after the last complete sample is not in the analysed data.
"""

from __future__ import annotations

from typing import Any

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import QualityResult, fmt_s, make_finding
from bracer.audit.quality.timebase import time_valid
from bracer.findings import Check, Finding, Severity, register

CHECK = register(
    Check(
        "Q102",
        "dropped-row",
        "A malformed row at the end of a log file (a truncated last line) was left out.",
        Severity.WARNING,
        needs=("log rows",),
    )
)


def run(ctx: AuditContext) -> QualityResult:
    findings: list[Finding] = []
    for d in ctx.session.dropped:
        names: list[str | None] = [s for s in d.streams if s in ctx.session.streams] or [None]
        for name in names:
            where: dict[str, Any] = {}
            after = ""
            if name is not None:
                stream = ctx.session.streams[name]
                t = stream.time[time_valid(ctx, stream)]
                if t.size:
                    where = {
                        "t_start": float(t[-1]),
                        "t_end": float(t[-1]),
                        "i_start": stream.n - 1,
                        "i_end": stream.n - 1,
                    }
                    last = fmt_s(float(t[-1]))
                    after = f"; the session after {last} (the last complete sample) is not analysed"
            findings.append(
                make_finding(
                    CHECK,
                    f"{d.path}:{d.line}: {d.reason}{after}",
                    stream=name,
                    quantity="missing",
                    extra=(("path", d.path), ("line", d.line)),
                    **where,
                )
            )
    return QualityResult(tuple(findings))
