"""Q104 time-gap: a step in time longer than ``audit.gap_tolerance`` × the declared sample period.

A gap holds no samples: the time inside it is not analysed (the coverage leaves it out).  The samples on
either side are sound and stay valid, so an event that runs across the gap is not cut in two.
"""

from __future__ import annotations

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import QualityResult, fmt_s, make_finding
from bracer.audit.quality.runs import capped
from bracer.audit.quality.timebase import SLACK, time_valid
from bracer.findings import Check, Finding, Severity, register
from bracer.session.model import Stream

CHECK = register(
    Check(
        "Q104",
        "time-gap",
        "A step in time longer than the declared gap tolerance: the time inside it is not analysed.",
        Severity.WARNING,
        needs=("time",),
    )
)


def run(ctx: AuditContext) -> QualityResult:
    tol = ctx.resolution.protocol.audit.gap_tolerance
    findings: list[Finding] = []
    for stream in ctx.session.streams.values():
        tv = time_valid(ctx, stream)
        idx = np.arange(stream.n) if tv.all() else np.flatnonzero(tv)
        if idx.size < 2:
            continue
        t = stream.time if idx.size == stream.n else stream.time[idx]
        allowed = tol / stream.expected_rate
        dt = np.diff(t)
        at = np.flatnonzero(dt > allowed * (1 + SLACK))
        if at.size:
            findings += _report(stream, t, idx, at, allowed, tol)
    return QualityResult(tuple(findings))


def _report(
    stream: Stream, t: np.ndarray, idx: np.ndarray, at: np.ndarray, allowed: float, tol: float
) -> list[Finding]:
    period = 1.0 / stream.expected_rate

    def one(k: int, _: int) -> Finding:
        a, b = float(t[k]), float(t[k + 1])
        return make_finding(
            CHECK,
            f"gap of {fmt_s(b - a)} from {fmt_s(a)} to {fmt_s(b)} (samples {int(idx[k])} to "
            f"{int(idx[k + 1])}); "
            f"allowed {fmt_s(allowed)} ({tol:g} × the declared period {fmt_s(period)}); the time inside is "
            "not "
            "analysed",
            stream=stream.name,
            quantity="gap",
            channel=stream.time_column,
            t_start=a,
            t_end=b,
            i_start=int(idx[k]),
            i_end=int(idx[k + 1]),
            peak=b - a,
            limit=allowed,
            margin=allowed - (b - a),
            unit="s",
        )

    def rest(s: np.ndarray, _: np.ndarray) -> Finding:
        lost = float((t[s + 1] - t[s]).sum())
        longest = float((t[s + 1] - t[s]).max())
        return make_finding(
            CHECK,
            f"{s.size} more gaps between {fmt_s(float(t[s[0]]))} and {fmt_s(float(t[s[-1] + 1]))}, "
            f"{fmt_s(lost)} in all, the longest {fmt_s(longest)}; the time inside them is not analysed",
            stream=stream.name,
            quantity="gap",
            channel=stream.time_column,
            t_start=float(t[s[0]]),
            t_end=float(t[s[-1] + 1]),
            i_start=int(idx[s[0]]),
            i_end=int(idx[s[-1] + 1]),
            peak=longest,
            limit=allowed,
            margin=allowed - longest,
            unit="s",
            extra=(("gaps", int(s.size)), ("lost_s", lost)),
        )

    return capped(at, at, one, rest)
