"""Q109 force-offset: a force sensor reads more than ``audit.force_offset_tolerance`` while the device rests.

Rest is every joint below ``stop.standstill.speed`` for at least ``stop.standstill.hold``.  The offset is the
median reading over the rest periods: per axis, combined as a vector magnitude (or the declared axis alone,
as the contact's ``use`` says).  An offset biases every reading of the sensor, so the finding spans the whole
stream; the readings stay in the analysis (masking them would hide real exceedances).
"""

from __future__ import annotations

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import QualityResult, fmt_s, make_finding
from bracer.audit.quality.motion import rest_by_stream, rest_on
from bracer.audit.quality.runs import mask_of, runs
from bracer.findings import Check, Finding, Severity, register
from bracer.units import format_number, parse_unit

CHECK = register(
    Check(
        "Q109",
        "force-offset",
        "A force sensor reads more than the declared tolerance while every joint rests.",
        Severity.WARNING,
        needs=("force", "velocity or position"),
    )
)


def run(ctx: AuditContext) -> QualityResult:
    protocol = ctx.resolution.protocol
    contacts = {n: c.channels.force for n, c in protocol.contacts.items() if c.channels.force is not None}
    if not contacts:
        return QualityResult()
    tol = protocol.audit.force_offset_tolerance
    if protocol.stop is None:
        return QualityResult(
            (
                make_finding(
                    CHECK,
                    "force sensor offsets not checked: the protocol declares no standstill speed "
                    "(stop.standstill)",
                    severity=Severity.INFO,
                    quantity="offset",
                ),
            )
        )
    standstill = protocol.stop.standstill
    rests = rest_by_stream(ctx, standstill.speed.si)
    if rests is None:
        return QualityResult(
            (
                make_finding(
                    CHECK,
                    "force sensor offsets not checked: no joint logs a velocity or position, so rest cannot "
                    "be found",
                    severity=Severity.INFO,
                    quantity="offset",
                ),
            )
        )
    findings: list[Finding] = []
    rest_of: dict[str, np.ndarray] = {}
    factor = parse_unit(tol.unit)[0]
    for name, ch in contacts.items():
        stream = ctx.session.streams.get(ch.stream)
        signals = [ctx.session.signal(ch.stream, c) for c in ch.all_columns]
        if stream is None or stream.n < 2 or any(s is None for s in signals):
            continue  # missing stream or column: Q101 / Q111
        valid = np.logical_and.reduce([s.valid for s in signals if s is not None])
        if ch.stream not in rest_of:  # contacts on one stream share its rest
            rest_of[ch.stream] = rest_on(stream, rests)
        rest = rest_of[ch.stream] & valid
        starts, ends = runs(rest)
        t = stream.time
        long = (t[ends] - t[starts]) >= standstill.hold.si
        if not long.any():
            findings.append(
                make_finding(
                    CHECK,
                    f"contact '{name}': no rest of at least {standstill.hold} (all joints below "
                    f"{standstill.speed}) "
                    "with valid force readings; the sensor's offset was not checked",
                    severity=Severity.INFO,
                    stream=ch.stream,
                    subject=name,
                    quantity="offset",
                )
            )
            continue
        at = mask_of(starts[long], ends[long], t.size)
        # s.x[at] is a fresh copy: the median may partition it in place (no second copy of the rest samples)
        medians = {
            s.column: float(np.median(s.x[at], overwrite_input=True)) for s in signals if s is not None
        }
        if ch.use == "axis" and ch.axis is not None:
            offset = abs(medians[ch.axis])
        else:
            offset = float(np.sqrt(sum(v * v for v in medians.values())))
        if offset <= tol.si:
            continue
        rest_s = float((t[ends[long]] - t[starts[long]]).sum())
        shown = offset / factor
        idx = np.flatnonzero(valid)
        findings.append(
            make_finding(
                CHECK,
                f"contact '{name}' force reads {format_number(shown)} {tol.unit} at rest (median over "
                f"{fmt_s(rest_s)} "
                f"of rest in {int(long.sum())} period(s)), above the tolerance {tol}: an offset biases every "
                "reading of "
                "this sensor (zero it before the session)",
                stream=ch.stream,
                subject=name,
                quantity="offset",
                t_start=float(t[idx[0]]),
                t_end=float(t[idx[-1]]),
                i_start=int(idx[0]),
                i_end=int(idx[-1]),
                peak=shown,
                limit=tol.magnitude,
                margin=tol.magnitude - shown,
                unit=tol.unit,
                extra=(
                    ("columns", tuple(ch.all_columns)),
                    ("rest_s", rest_s),
                    ("axis_medians", tuple(m / factor for m in medians.values())),
                ),
            )
        )
    return QualityResult(tuple(findings))
