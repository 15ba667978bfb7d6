"""R107 logging adequacy: is each stream sampled fast enough to time a stop against its budget?

A stop latency measured between two logged events is quantised to about one sample period, so each stream's
declared sample rate must put at least :data:`MIN_SAMPLES` samples inside the stop-latency budget (common
practice, no source).  A warning below that: the audit could still run, but its stop timings would be coarse.

No bandwidth rule (rate ≥ 2× the highest frequency of the motion) is applied: the protocol declares no
bandwidth, and no published figure for the bandwidth of these movements is at hand to justify one.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from bracer.findings import Check, Finding, Severity, register
from bracer.protocol.model import Protocol
from bracer.protocol.resolve import Resolution
from bracer.review.checks._base import CheckResult, fmt, in_unit, review_finding

__all__ = ["CHECK", "MIN_SAMPLES", "LoggingResult", "StreamRate", "run"]

#: Samples required inside the stop-latency budget (common practice, no source).
MIN_SAMPLES = 10

CHECK = register(
    Check(
        code="R107",
        name="logging-rate",
        summary=f"Each stream's sample rate gives at least {MIN_SAMPLES} samples in the stop-latency budget.",
        severity=Severity.WARNING,
        needs=("logging.streams", "stop.latency_budget"),
    )
)


@dataclass(frozen=True, slots=True)
class StreamRate:
    """One stream's sample rate against the budget.

    ``sample_rate`` and ``required_rate`` in ``rate_unit``; ``budget`` in ``budget_unit``; ``channels`` the
    number of declared channels (limits, triggers, protections) the stream carries.  Budget figures are None
    without a stop function.
    """

    stream: str
    sample_rate: float
    rate_unit: str
    channels: int
    budget: float | None
    budget_unit: str | None
    samples_in_budget: float | None
    required_rate: float | None
    adequate: bool | None


@dataclass(frozen=True, slots=True)
class LoggingResult(CheckResult):
    streams: tuple[StreamRate, ...] = ()

    def tables(self) -> dict[str, tuple[Any, ...]]:
        return {"streams": self.streams}


def _channel_counts(p: Protocol) -> dict[str, int]:
    counts = dict.fromkeys(p.logging.streams, 0)
    refs: list[str] = []
    for joint in p.joints.values():
        refs += [
            ref.stream
            for ref in (joint.channels.position, joint.channels.velocity, joint.channels.torque)
            if ref is not None
        ]
    refs += [c.channels.force.stream for c in p.contacts.values() if c.channels.force is not None]
    refs += [t.stream for t in p.logging.triggers.values()]
    refs += [x.stream for x in p.logging.protections.values()]
    for stream in refs:
        counts[stream] = counts.get(stream, 0) + 1
    return counts


def run(resolution: Resolution) -> LoggingResult:
    """Samples inside the stop-latency budget for every declared stream."""
    p = resolution.protocol
    findings: list[Finding] = []
    rows: list[StreamRate] = []
    counts = _channel_counts(p)
    budget = p.stop.latency_budget if p.stop is not None else None
    if budget is None:
        findings.append(
            review_finding(
                CHECK,
                Severity.WARNING,
                "logging adequacy not assessable: no stop function, so no stop-latency budget "
                "to compare the sample rates with",
                subject_kind="protocol",
                quantity="sample_rate",
            )
        )
    for name, stream in p.logging.streams.items():
        rate = stream.sample_rate
        unit = rate.unit
        if budget is None:
            rows.append(
                StreamRate(name, in_unit(rate.si, unit), unit, counts[name], None, None, None, None, None)
            )
        else:
            samples = rate.si * budget.si
            required = MIN_SAMPLES / budget.si
            row = StreamRate(
                name,
                in_unit(rate.si, unit),
                unit,
                counts[name],
                in_unit(budget.si, budget.unit),
                budget.unit,
                samples,
                in_unit(required, unit),
                samples >= MIN_SAMPLES,
            )
            rows.append(row)
            if not row.adequate:
                findings.append(
                    review_finding(
                        CHECK,
                        Severity.WARNING,
                        f"stream '{name}': {fmt(row.sample_rate, unit)} gives {samples:.3g} samples inside "
                        "the stop "
                        f"latency budget of {fmt(row.budget, budget.unit)}; at least {MIN_SAMPLES} are "
                        "needed to time a "
                        f"stop (common practice), i.e. {fmt(row.required_rate, unit)} or more",
                        subject=name,
                        subject_kind="stream",
                        quantity="sample_rate",
                        value=row.sample_rate,
                        limit=row.required_rate,
                        margin=row.sample_rate - (row.required_rate or 0.0),
                        unit=unit,
                        extra=(("samples_in_budget", samples),),
                    )
                )
        if counts[name] == 0:
            findings.append(
                review_finding(
                    CHECK,
                    Severity.INFO,
                    f"stream '{name}' carries no declared channel",
                    subject=name,
                    subject_kind="stream",
                    quantity="sample_rate",
                )
            )
    return LoggingResult(CHECK, tuple(findings), tuple(rows))
