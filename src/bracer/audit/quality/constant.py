"""Q107 constant-channel: a physical channel that holds one value for the whole session.

A sensor that never changes is more likely disconnected or frozen than measuring: its samples are treated as
not analysed, so that a flat zero cannot read as "within limits".  Status columns are not checked (a stop
trigger that stays off is normal).
"""

from __future__ import annotations

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import Invalidation, QualityResult, make_finding
from bracer.audit.quality.channels import extremes, logged_channels, valid_of
from bracer.findings import Check, Finding, Severity, register
from bracer.units import format_number

CHECK = register(
    Check(
        "Q107",
        "constant-channel",
        "A channel holds one value for the whole session (disconnected or frozen sensor?): not analysed.",
        Severity.WARNING,
        needs=("channels",),
    )
)


def run(ctx: AuditContext) -> QualityResult:
    findings: list[Finding] = []
    invalid: list[Invalidation] = []
    for ch in logged_channels(ctx):
        ext = extremes(ctx, ch)
        if ext.count < 2 or ext.lo != ext.hi:
            continue
        ok = valid_of(ctx, ch)
        idx = np.flatnonzero(ok)
        t = ch.stream.time
        value = ch.declared(ext.lo)
        invalid.append(Invalidation(ch.stream.name, ch.column, ok))
        findings.append(
            make_finding(
                CHECK,
                f"column '{ch.column}' ({ch.use.describe()}) holds one value, {format_number(value)} "
                f"{ch.use.unit}, "
                f"in all {ext.count} samples: a disconnected or frozen sensor? Treated as not analysed",
                stream=ch.stream.name,
                subject=ch.use.subject,
                quantity="constant",
                channel=ch.column,
                t_start=float(t[idx[0]]),
                t_end=float(t[idx[-1]]),
                i_start=int(idx[0]),
                i_end=int(idx[-1]),
                peak=value,
                unit=ch.use.unit,
            )
        )
    return QualityResult(tuple(findings), tuple(invalid))
