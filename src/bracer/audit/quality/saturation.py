"""Q108 saturation: a flat run at a channel's range end -- its largest (or smallest) value, held exactly for
many samples -- where the sensor has probably clipped and the true value may lie beyond.

Checked on speed, torque and force channels; not on positions, where a joint held at the end of its range
reads flat at the session's extreme by design.  A plateau at exactly zero is an actuator or sensor at rest,
not a clipped one.  "Many samples" is at least 10 samples and 20 ms (common practice, no source).  The
plateau's samples are not analysed.
"""

from __future__ import annotations

import math

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import Invalidation, QualityResult, fmt_s, make_finding
from bracer.audit.quality.channels import LoggedChannel, extremes, logged_channels, valid_of
from bracer.audit.quality.runs import capped, mask_of, runs
from bracer.findings import Check, Finding, Severity, register
from bracer.units import format_number

CHECK = register(
    Check(
        "Q108",
        "saturation",
        "A channel sits exactly at its largest or smallest value for many samples: the sensor may have "
        "clipped.",
        Severity.WARNING,
        needs=("velocity", "torque", "force"),
    )
)

MIN_SAMPLES = 10
MIN_DURATION = 0.020  # s
ROLES = ("velocity", "torque", "force")


def min_run(rate: float) -> int:
    """Shortest flat run, in samples, that counts as saturation at ``rate`` Hz."""
    return max(MIN_SAMPLES, math.ceil(MIN_DURATION * rate - 1e-9))


def run(ctx: AuditContext) -> QualityResult:
    findings: list[Finding] = []
    invalid: list[Invalidation] = []
    for ch in logged_channels(ctx):
        if ch.use.role not in ROLES:
            continue
        ext = extremes(ctx, ch)
        if ext.count < 2 or ext.lo == ext.hi:
            continue  # nothing to judge, or constant: Q107
        ok = valid_of(ctx, ch)
        every = ext.count == ok.size
        flagged = np.zeros(ch.x.shape, dtype=bool)
        for end, value in (("largest", ext.hi), ("smallest", ext.lo)):
            if value == 0.0:
                continue
            plateau = ch.x == value if every else ok & (ch.x == value)
            if np.count_nonzero(plateau) < min_run(ch.stream.expected_rate):
                continue
            starts, ends = runs(plateau)
            long = (ends - starts + 1) >= min_run(ch.stream.expected_rate)
            starts, ends = starts[long], ends[long]
            if not starts.size:
                continue
            flagged |= mask_of(starts, ends, ch.x.size)
            findings += _report(ch, starts, ends, end, value)
        if flagged.any():
            invalid.append(Invalidation(ch.stream.name, ch.column, flagged))
    return QualityResult(tuple(findings), tuple(invalid))


def _report(ch: LoggedChannel, starts: np.ndarray, ends: np.ndarray, end: str, value: float) -> list[Finding]:
    t = ch.stream.time
    shown = f"{format_number(ch.declared(value))} {ch.use.unit}"

    def one(i0: int, i1: int) -> Finding:
        return make_finding(
            CHECK,
            f"'{ch.column}' ({ch.use.describe()}) holds its {end} value {shown} for {i1 - i0 + 1} samples "
            f"({fmt_s(float(t[i1] - t[i0]))}): the sensor may have saturated, the true value may be beyond; "
            "not analysed",
            stream=ch.stream.name,
            subject=ch.use.subject,
            quantity="saturation",
            channel=ch.column,
            t_start=float(t[i0]),
            t_end=float(t[i1]),
            i_start=i0,
            i_end=i1,
            peak=ch.declared(value),
            unit=ch.use.unit,
            extra=(("samples", i1 - i0 + 1),),
        )

    def rest(s: np.ndarray, e: np.ndarray) -> Finding:
        return make_finding(
            CHECK,
            f"{s.size} more flat runs of '{ch.column}' at its {end} value {shown}, between "
            f"{fmt_s(float(t[s[0]]))} and {fmt_s(float(t[e[-1]]))}; not analysed",
            stream=ch.stream.name,
            subject=ch.use.subject,
            quantity="saturation",
            channel=ch.column,
            t_start=float(t[s[0]]),
            t_end=float(t[e[-1]]),
            i_start=int(s[0]),
            i_end=int(e[-1]),
            peak=ch.declared(value),
            unit=ch.use.unit,
            extra=(("runs", int(s.size)),),
        )

    return capped(starts, ends, one, rest)
