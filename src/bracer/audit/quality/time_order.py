"""Q103 time-order: time must increase from sample to sample.

A sample whose time is not above every time before it -- a step back or a repeated time -- lies on a part of
the clock already used; it is marked not analysed until the clock passes the time already reached.  A sample
with no time is not analysed either.  Steps back are errors (the clock cannot be trusted there); repeated
times and missing times are warnings.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import Invalidation, QualityResult, fmt_s, make_finding
from bracer.audit.quality.runs import capped, runs
from bracer.findings import Check, Finding, Severity, register
from bracer.session.model import Stream

CHECK = register(
    Check(
        "Q103",
        "time-order",
        "Time steps back, repeats, or is missing: those samples are not analysed.",
        Severity.ERROR,
        needs=("time",),
    )
)


def run(ctx: AuditContext) -> QualityResult:
    findings: list[Finding] = []
    invalid: list[Invalidation] = []
    for stream in ctx.session.streams.values():
        if stream.n == 0:
            continue
        t = stream.time
        if np.isfinite(np.add.reduce(t)) and bool(np.all(t[1:] > t[:-1])):
            continue  # every time finite and above the one before: nothing to mark (the common case)
        finite = np.isfinite(t)
        reached = np.maximum.accumulate(np.where(finite, t, -np.inf))
        before = np.empty_like(reached)
        before[0] = -np.inf
        before[1:] = reached[:-1]
        back = finite & (t < before)
        repeat = finite & (t == before)
        bad = back | repeat | ~finite
        if not bad.any():
            continue
        invalid.append(Invalidation(stream.name, None, bad))
        findings += _back(stream, back, before)
        findings += _repeat(stream, repeat)
        findings += _missing(stream, ~finite, reached)
    return QualityResult(tuple(findings), tuple(invalid))


def _after(t: np.ndarray, i1: int, fallback: float) -> float:
    """Time of the first sample after a bad run, if it has one."""
    return float(t[i1 + 1]) if i1 + 1 < t.size and np.isfinite(t[i1 + 1]) else fallback


def _back(stream: Stream, back: np.ndarray, before: np.ndarray) -> list[Finding]:
    t = stream.time
    starts, ends = runs(back)

    def one(i0: int, i1: int) -> Finding:
        reached = float(before[i0])
        step = reached - float(t[i0])
        return make_finding(
            CHECK,
            f"time steps back by {fmt_s(step)} at sample {i0} (from {fmt_s(reached)} to "
            f"{fmt_s(float(t[i0]))}); "
            f"{i1 - i0 + 1} sample(s) up to sample {i1} lie before the time already reached and are not "
            "analysed",
            stream=stream.name,
            quantity="time_order",
            channel=stream.time_column,
            t_start=reached,
            t_end=max(reached, _after(t, i1, reached)),
            t_peak=reached,
            i_start=i0,
            i_end=i1,
            peak=step,
            unit="s",
        )

    def rest(s: np.ndarray, e: np.ndarray) -> Finding:
        count = int((e - s + 1).sum())
        return make_finding(
            CHECK,
            f"{s.size} more steps back in time, {count} sample(s) not analysed, between samples {int(s[0])} "
            "and "
            f"{int(e[-1])}",
            stream=stream.name,
            quantity="time_order",
            channel=stream.time_column,
            t_start=float(before[s[0]]),
            t_end=max(float(before[s[0]]), _after(t, int(e[-1]), float(before[s[0]]))),
            i_start=int(s[0]),
            i_end=int(e[-1]),
            extra=(("runs", int(s.size)), ("samples", count)),
        )

    return capped(starts, ends, one, rest)


def _repeat(stream: Stream, repeat: np.ndarray) -> list[Finding]:
    t = stream.time
    starts, ends = runs(repeat)

    def one(i0: int, i1: int) -> Finding:
        k = i1 - i0 + 1
        return make_finding(
            CHECK,
            f"time {fmt_s(float(t[i0]))} repeats at sample {i0}"
            + (f" ({k} samples, to sample {i1})" if k > 1 else "")
            + "; the repeated sample(s) are not analysed",
            severity=Severity.WARNING,
            stream=stream.name,
            quantity="time_order",
            channel=stream.time_column,
            t_start=float(t[i0]),
            t_end=float(t[i1]),
            i_start=i0,
            i_end=i1,
            extra=(("samples", k),),
        )

    def rest(s: np.ndarray, e: np.ndarray) -> Finding:
        count = int((e - s + 1).sum())
        return make_finding(
            CHECK,
            f"{s.size} more repeated times, {count} sample(s) not analysed, between {fmt_s(float(t[s[0]]))} "
            "and "
            f"{fmt_s(float(t[e[-1]]))}",
            severity=Severity.WARNING,
            stream=stream.name,
            quantity="time_order",
            channel=stream.time_column,
            t_start=float(t[s[0]]),
            t_end=float(t[e[-1]]),
            i_start=int(s[0]),
            i_end=int(e[-1]),
            extra=(("runs", int(s.size)), ("samples", count)),
        )

    return capped(starts, ends, one, rest)


def _missing(stream: Stream, missing: np.ndarray, reached: np.ndarray) -> list[Finding]:
    starts, ends = runs(missing)
    t = stream.time
    finite_t = t[np.isfinite(t)]
    t0 = float(finite_t[0]) if finite_t.size else None

    def span(i0: int, i1: int) -> dict[str, Any]:
        if t0 is None:
            return {}
        a = float(reached[i0]) if np.isfinite(reached[i0]) else t0
        return {"t_start": a, "t_end": max(a, _after(t, i1, a))}

    def one(i0: int, i1: int) -> Finding:
        k = i1 - i0 + 1
        return make_finding(
            CHECK,
            f"no time in {k} sample(s), samples {i0} to {i1}; they are not analysed",
            severity=Severity.WARNING,
            stream=stream.name,
            quantity="missing",
            channel=stream.time_column,
            i_start=i0,
            i_end=i1,
            extra=(("samples", k),),
            **span(i0, i1),
        )

    def rest(s: np.ndarray, e: np.ndarray) -> Finding:
        count = int((e - s + 1).sum())
        return make_finding(
            CHECK,
            f"{s.size} more runs without time, {count} sample(s) not analysed, between samples {int(s[0])} "
            "and "
            f"{int(e[-1])}",
            severity=Severity.WARNING,
            stream=stream.name,
            quantity="missing",
            channel=stream.time_column,
            i_start=int(s[0]),
            i_end=int(e[-1]),
            extra=(("runs", int(s.size)), ("samples", count)),
            **span(int(s[0]), int(e[-1])),
        )

    return capped(starts, ends, one, rest)
