"""Q106 missing-values: runs of empty or NaN cells in a channel.

A run of k missing samples leaves a hole of k + 1 sample periods.  A hole the gap tolerance allows is
reported as info; a longer one as a warning.  A channel with no value at all is "not assessable" (error).
Missing samples are never analysed (the :class:`~bracer.session.model.Signal` mask leaves them out).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import QualityResult, fmt_s, make_finding
from bracer.audit.quality.channels import LoggedChannel, logged_channels
from bracer.audit.quality.runs import capped, runs
from bracer.audit.quality.timebase import time_valid
from bracer.findings import Check, Finding, Kind, Severity, register

CHECK = register(
    Check(
        "Q106",
        "missing-values",
        "Empty or NaN cells in a channel: those samples are not analysed.",
        Severity.WARNING,
        needs=("channels",),
    )
)


def empty(x: np.ndarray) -> np.ndarray:
    """True where a cell holds no value: NaN for numbers, "" for text."""
    if x.dtype.kind == "f":
        return ~np.isfinite(x)
    return np.asarray(x == "", dtype=bool)


def run(ctx: AuditContext) -> QualityResult:
    tol = ctx.resolution.protocol.audit.gap_tolerance
    findings: list[Finding] = []
    for ch in logged_channels(ctx, states=True):
        if ch.stream.n == 0:
            continue
        if ch.x.dtype.kind == "f" and np.isfinite(np.add.reduce(ch.x)):
            continue  # a finite sum: every value is finite, no cell is empty (one pass, no mask)
        tv = time_valid(ctx, ch.stream)
        hole = empty(ch.x) & tv
        if not hole.any():
            continue
        if hole.sum() == tv.sum():
            findings.append(_all_empty(ch))
        else:
            findings += _runs(ch, hole, tol)
    return QualityResult(tuple(findings))


def _all_empty(ch: LoggedChannel) -> Finding:
    return make_finding(
        CHECK,
        f"column '{ch.column}' ({ch.use.describe()}) has no values in any of its {ch.stream.n} samples; "
        f"{ch.use.describe()} is not assessable",
        severity=Severity.ERROR,
        kind=Kind.NOT_ASSESSABLE,
        stream=ch.stream.name,
        subject=ch.use.subject,
        quantity="missing",
        channel=ch.column,
        i_start=0,
        i_end=ch.stream.n - 1,
        **_span(ch, 0, ch.stream.n - 1),
    )


def _span(ch: LoggedChannel, i0: int, i1: int) -> dict[str, Any]:
    """Times bounding samples i0..i1: from the sample before the run to the sample after it, where known."""
    t = ch.stream.time
    lo, hi = max(i0 - 1, 0), min(i1 + 1, t.size - 1)
    a, b = t[lo], t[hi]
    if not (np.isfinite(a) and np.isfinite(b)):
        return {}
    return {"t_start": float(min(a, b)), "t_end": float(max(a, b))}


def _runs(ch: LoggedChannel, hole: np.ndarray, tol: float) -> list[Finding]:
    starts, ends = runs(hole)
    period = 1.0 / ch.stream.expected_rate

    def severity(k: np.ndarray | int) -> Severity:
        return Severity.WARNING if np.max(np.asarray(k) + 1) > tol else Severity.INFO

    def one(i0: int, i1: int) -> Finding:
        k = i1 - i0 + 1
        return make_finding(
            CHECK,
            f"{k} missing value(s) in '{ch.column}' ({ch.use.describe()}), samples {i0} to {i1} "
            f"(about {fmt_s((k + 1) * period)} without a value); not analysed",
            severity=severity(k),
            stream=ch.stream.name,
            subject=ch.use.subject,
            quantity="missing",
            channel=ch.column,
            i_start=i0,
            i_end=i1,
            extra=(("samples", k),),
            **_span(ch, i0, i1),
        )

    def rest(s: np.ndarray, e: np.ndarray) -> Finding:
        counts = e - s + 1
        return make_finding(
            CHECK,
            f"{s.size} more runs of missing values in '{ch.column}', {int(counts.sum())} sample(s), between "
            f"samples {int(s[0])} and {int(e[-1])}; not analysed",
            severity=severity(counts),
            stream=ch.stream.name,
            subject=ch.use.subject,
            quantity="missing",
            channel=ch.column,
            i_start=int(s[0]),
            i_end=int(e[-1]),
            extra=(("runs", int(s.size)), ("samples", int(counts.sum()))),
            **_span(ch, int(s[0]), int(e[-1])),
        )

    return capped(starts, ends, one, rest)
