"""Q105 sample-rate: the measured sample rate and its jitter against the declared rate.

The rate is 1 / the mean of the regular steps (positive steps no longer than gap-tolerance × the declared
period, or × the median step where that is longer), the jitter is their standard deviation.  A rate more
than 1 % from the declared one, or a jitter above 25 % of the declared period, is a warning (thresholds:
common practice, no source); the measured figures are always in the record.
"""

from __future__ import annotations

from typing import Any

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import QualityResult, StreamTiming, fmt_s, make_finding
from bracer.audit.quality.timebase import timing
from bracer.findings import Check, Finding, Severity, register

CHECK = register(
    Check(
        "Q105",
        "sample-rate",
        "The measured sample rate differs from the declared one, or the sampling is irregular.",
        Severity.WARNING,
        needs=("time",),
    )
)

RATE_TOLERANCE = 0.01  # relative deviation of the measured from the declared rate
JITTER_TOLERANCE = 0.25  # standard deviation of the steps, as a fraction of the declared period


def run(ctx: AuditContext) -> QualityResult:
    timings: list[StreamTiming] = []
    findings: list[Finding] = []
    for stream in ctx.session.streams.values():
        tm = timing(ctx, stream)
        timings.append(tm)
        if tm.rate is None or tm.jitter is None or tm.t_first is None or tm.t_last is None:
            continue
        span: dict[str, Any] = {
            "t_start": tm.t_first,
            "t_end": tm.t_last,
            "i_start": 0,
            "i_end": stream.n - 1,
        }
        declared = stream.expected_rate
        if abs(tm.rate / declared - 1) > RATE_TOLERANCE:
            findings.append(
                make_finding(
                    CHECK,
                    f"measured sample rate {tm.rate:.6g} Hz, declared {declared:g} Hz "
                    f"({(tm.rate / declared - 1) * 100:+.1f} %); gaps and durations use the declared rate",
                    stream=stream.name,
                    quantity="sample_rate",
                    channel=stream.time_column,
                    peak=tm.rate,
                    limit=declared,
                    margin=None,
                    unit="Hz",
                    extra=(("jitter_s", tm.jitter),),
                    **span,
                )
            )
        period = 1.0 / declared
        if tm.jitter > JITTER_TOLERANCE * period:
            findings.append(
                make_finding(
                    CHECK,
                    f"irregular sampling: the steps vary by {fmt_s(tm.jitter)} (standard deviation), "
                    f"{tm.jitter / period * 100:.0f} % of the declared period {fmt_s(period)}",
                    stream=stream.name,
                    quantity="sample_rate",
                    channel=stream.time_column,
                    peak=tm.jitter,
                    limit=JITTER_TOLERANCE * period,
                    margin=JITTER_TOLERANCE * period - tm.jitter,
                    unit="s",
                    extra=(("rate_hz", tm.rate),),
                    **span,
                )
            )
    return QualityResult(tuple(findings), timings=tuple(timings))
