"""Q110 unit-suspect: values that fit the declared unit so badly that the unit is probably wrong.

Signs looked for (thresholds: common practice, no source):

* time: the median step is 1000× (or 10⁶×, 1/1000×, 60×) the declared period -- a time column in ms read as
  s; the whole stream is not analysed;
* a position declared in rad beyond a full turn (|x| > 2π): degrees, surely (error);
* a position declared in deg that, without a velocity channel to compare, spans less than 5 % of the joint's
  declared range while its values would span a plausible range if they were radians (warning; locked joints
  are not judged);
* a velocity that is not the rate of change of its position: the median ratio of the two while the joint
  moves is outside [0.67, 1.5] (named when it is close to 180/π, 1000 or 60), or negative;
* a torque or force whose 10th-largest magnitude exceeds 50× the largest limit the protocol declares for it
  (mN or N*mm declared as N or N*m, raw sensor counts ...).

A suspected channel is not analysed: a wrong unit can hide a violation as easily as invent one.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality.base import Invalidation, QualityResult, make_finding
from bracer.audit.quality.channels import LoggedChannel, extremes, logged_channels, valid_of
from bracer.audit.quality.motion import rate_samples
from bracer.audit.quality.timebase import median_step, time_valid
from bracer.findings import Check, Finding, Severity, register
from bracer.protocol.model import Protocol
from bracer.units import Quantity, format_number

CHECK = register(
    Check(
        "Q110",
        "unit-suspect",
        "Values do not fit the declared unit (degrees logged as radians, ms as s, mN as N ...).",
        Severity.ERROR,
        needs=("time", "position", "velocity", "torque", "force"),
    )
)

#: Factors a unit slip produces, and how to say them.
FACTORS: tuple[tuple[float, str], ...] = (
    (180 / math.pi, "180/π (degrees against radians)"),
    (math.pi / 180, "π/180 (radians against degrees)"),
    (1e3, "1000 (a milli- unit against the base unit)"),
    (1e-3, "1/1000 (the base unit against a milli- unit)"),
    (1e6, "10⁶ (micro- against the base unit)"),
    (1e-6, "10⁻⁶ (the base unit against micro-)"),
    (60.0, "60 (per minute against per second)"),
    (1 / 60, "1/60 (per second against per minute)"),
)
PLAUSIBLE = 50.0  # torque/force peaks above this multiple of the largest declared limit
SPAN_FRACTION = 0.05  # a position moving less than this fraction of the joint's declared range
RATIO_BOUNDS = (0.67, 1.5)  # velocity / rate of change of position
MIN_MOVING = 50  # samples of clear motion needed to compare velocity and position
SAMPLED = 100_000  # at most about this many of them enter the median


def named_factor(ratio: float, within: float = 0.15) -> str | None:
    for f, words in FACTORS:
        if abs(ratio / f - 1) < within:
            return words
    return None


def run(ctx: AuditContext) -> QualityResult:
    findings: list[Finding] = []
    invalid: list[Invalidation] = []
    for f, inv in (*_time(ctx), *_channels(ctx)):
        findings.append(f)
        invalid.append(inv)
    return QualityResult(tuple(findings), tuple(invalid))


# ----------------------------------------------------------------------------------------------------- time


def _time(ctx: AuditContext) -> list[tuple[Finding, Invalidation]]:
    out = []
    for stream in ctx.session.streams.values():
        tv = time_valid(ctx, stream)
        t = stream.time[tv]
        if t.size < 10:
            continue
        ratio = median_step(t) * stream.expected_rate
        words = named_factor(ratio, 0.1)
        if words is None or abs(ratio - 1) < 0.5:
            continue
        out.append(
            (
                make_finding(
                    CHECK,
                    f"time column '{stream.time_column}': the median step is {ratio:.4g} × the declared "
                    "period "
                    f"({1e3 / stream.expected_rate:g} ms at {stream.expected_rate:g} Hz), a factor of "
                    f"{words}: the "
                    "time unit is probably not the declared one; stream not analysed",
                    stream=stream.name,
                    quantity="unit",
                    channel=stream.time_column,
                    t_start=float(t[0]),
                    t_end=float(t[-1]),
                    i_start=0,
                    i_end=stream.n - 1,
                    peak=ratio,
                    extra=(("factor", ratio),),
                ),
                Invalidation(stream.name, None, np.ones(stream.n, dtype=bool)),
            )
        )
    return out


# ------------------------------------------------------------------------------------------------- channels


def _channels(ctx: AuditContext) -> list[tuple[Finding, Invalidation]]:
    protocol = ctx.resolution.protocol
    participant = ctx.resolution.participant
    locked = (
        set(participant.locked_joints)
        if participant and participant.locked_joints is not None
        else set(protocol.locked_joints)
    )
    channels = {(ch.stream.name, ch.column): ch for ch in logged_channels(ctx)}
    out: list[tuple[Finding, Invalidation]] = []
    for ch in channels.values():
        role = ch.use.role
        if role == "position":
            velocity_ref = protocol.joints[ch.use.owner or ""].channels.velocity
            velocity = channels.get((velocity_ref.stream, velocity_ref.column)) if velocity_ref else None
            out += _position(
                ctx, ch, protocol, has_velocity=velocity is not None, locked=ch.use.owner in locked
            )
            if velocity is not None:
                out += _velocity(ctx, ch, velocity, protocol)
        elif role in ("torque", "force"):
            out += _magnitude(ctx, ch, protocol)
    return out


def _mask(ctx: AuditContext, ch: LoggedChannel) -> np.ndarray:
    return valid_of(ctx, ch)


def _whole(
    ctx: AuditContext,
    ch: LoggedChannel,
    message: str,
    severity: Severity,
    **fields: Any,
) -> tuple[Finding, Invalidation]:
    ok = _mask(ctx, ch)
    idx = np.flatnonzero(ok)
    t = ch.stream.time
    f = make_finding(
        CHECK,
        message + "; channel not analysed",
        severity=severity,
        stream=ch.stream.name,
        subject=ch.use.subject,
        quantity="unit",
        channel=ch.column,
        t_start=float(t[idx[0]]),
        t_end=float(t[idx[-1]]),
        i_start=int(idx[0]),
        i_end=int(idx[-1]),
        **fields,
    )
    return f, Invalidation(ch.stream.name, ch.column, ok)


def _position(
    ctx: AuditContext,
    ch: LoggedChannel,
    protocol: Protocol,
    has_velocity: bool,
    locked: bool,
) -> list[tuple[Finding, Invalidation]]:
    ext = extremes(ctx, ch)
    if ext.count < 2:
        return []
    unit = ch.use.unit
    biggest = max(abs(ext.lo), abs(ext.hi))
    if math.isclose(ch.use.factor, 1.0) and biggest > 2 * math.pi:
        return [
            _whole(
                ctx,
                ch,
                f"'{ch.column}' ({ch.use.describe()}) is declared in {unit} but reaches "
                f"{format_number(biggest)} {unit}, more than a full turn: probably degrees",
                Severity.ERROR,
                peak=ch.declared(biggest),
                unit=unit,
            )
        ]
    if has_velocity or locked or not math.isclose(ch.use.factor, math.pi / 180):
        return []
    joint = protocol.joints[ch.use.owner or ""]
    bounds = next((b for b in (joint.range.planned, joint.range.device, joint.range.mechanical) if b), None)
    if bounds is None:
        return []
    width = bounds.max.si - bounds.min.si
    span = ext.hi - ext.lo
    as_radians = span * 180 / math.pi
    if (
        0 < span < SPAN_FRACTION * width
        and 0.2 * width <= as_radians <= 1.5 * width
        and biggest * 180 / math.pi <= 2 * math.pi * 1.05
    ):
        return [
            _whole(
                ctx,
                ch,
                f"'{ch.column}' ({ch.use.describe()}) is declared in {unit} but spans only "
                f"{format_number(ch.declared(span))} {unit} of the joint's "
                f"{format_number(ch.declared(width))} {unit} "
                f"range, and all its values lie within ±2π: probably radians",
                Severity.WARNING,
                peak=ch.declared(span),
                unit=unit,
            )
        ]
    return []


def _velocity(
    ctx: AuditContext,
    pos: LoggedChannel,
    vel: LoggedChannel,
    protocol: Protocol,
) -> list[tuple[Finding, Invalidation]]:
    if pos.stream is not vel.stream:
        return []
    window = protocol.audit.derivative_window.si
    # evenly spread samples: a median needs no hour of them
    idx, rate = rate_samples(pos.stream.time, pos.x, _mask(ctx, pos), window, SAMPLED)
    keep = np.isfinite(rate) & _mask(ctx, vel)[idx]
    idx, rate = idx[keep], rate[keep]
    if idx.size < MIN_MOVING:
        return []
    threshold = max(
        protocol.stop.standstill.speed.si if protocol.stop else 0.0, 0.05 * float(np.abs(rate).max())
    )
    moving = np.abs(rate) > threshold
    if np.count_nonzero(moving) < MIN_MOVING:
        return []
    ratio = float(np.median(vel.x[idx[moving]] / rate[moving]))  # the median: robust to a few bad windows
    lo, hi = RATIO_BOUNDS
    if lo <= ratio <= hi:
        return []
    what = (
        f"'{vel.column}' ({vel.use.unit}) is {format_number(ratio)} × the rate of change of '{pos.column}' "
        f"({pos.use.unit}), expected 1"
    )
    if ratio < 0:
        message = f"{what}: the velocity's sign is opposite to the position's (sign conventions differ)"
        severity = Severity.WARNING
    else:
        words = named_factor(ratio)
        message = (
            f"{what}: a factor of {words}, one of them is in the wrong unit"
            if words
            else f"{what}: their units or scaling disagree"
        )
        severity = Severity.ERROR if words else Severity.WARNING
    return [_whole(ctx, vel, message, severity, peak=ratio), _whole(ctx, pos, message, severity, peak=ratio)]


def _largest_limit(ch: LoggedChannel, protocol: Protocol) -> Quantity | None:
    owner = ch.use.owner or ""
    limits: list[Quantity] = []
    if ch.use.role == "torque":
        layers = protocol.joints[owner].torque
        for name in ("planned", "device", "mechanical"):
            d = layers.layer(name)
            if d is not None:
                limits += [d.positive, d.negative]
    else:
        force = protocol.contacts[owner].force
        limits += [q for q in (force.quasi_static, force.transient) if q is not None]
    return max(limits, key=lambda q: q.si, default=None)


def _magnitude(
    ctx: AuditContext, ch: LoggedChannel, protocol: Protocol
) -> list[tuple[Finding, Invalidation]]:
    limit = _largest_limit(ch, protocol)
    ext = extremes(ctx, ch)
    if limit is None or ext.count < 20 or max(abs(ext.lo), abs(ext.hi)) <= PLAUSIBLE * limit.si:
        return []
    values = np.abs(ch.x[_mask(ctx, ch)])
    k = min(10, values.size)
    robust = float(np.partition(values, values.size - k)[values.size - k])  # the k-th largest
    if robust <= PLAUSIBLE * limit.si:
        return []
    unit = ch.use.unit
    return [
        _whole(
            ctx,
            ch,
            f"'{ch.column}' ({ch.use.describe()}) reaches {format_number(ch.declared(robust))} {unit} "
            "(10th-largest "
            f"magnitude), {robust / limit.si:.0f} × the largest declared limit {limit}: implausible for this "
            "device; the "
            f"unit is probably not {unit} (mN, N*mm, raw counts?)",
            Severity.ERROR,
            peak=ch.declared(robust),
            limit=ch.declared(PLAUSIBLE * limit.si),
            unit=unit,
        )
    ]
