"""A122 predicted-stop-position: had a stop been triggered at a sample, the joint would have stopped beyond
the mechanical end stop or the participant's range.

At every sample, with the joint's speed ``v`` (logged, or derived from position), the stop's reaction time
``t_r`` (``stop.reaction_time``) and the joint's declared stop deceleration ``a`` (``stop_deceleration``), the
stopping distance in the direction of motion is ``|v|·t_r + v²/(2a)`` (constant deceleration after a reaction
delay), so the predicted stop position is ``p + v·t_r + v·|v|/(2a)``.  Each run of samples whose predicted
stop position lies beyond the mechanical range (layer ``mechanical``) or the participant's range (layer
``participant``, when the audit names a participant) while the joint itself is still inside it is one finding
of kind ``near_miss``, severity warning; ``peak`` is the most extreme predicted stop position, in the unit of
the limit.  Samples where the joint is already beyond the limit are range violations (A101), not repeated
here.

A joint without a declared stop deceleration, or a protocol without a stop function, gives a warning-level
``not_assessable`` (a protocol gap the review also reports); missing channels are reported by A101/A102.
"""

from __future__ import annotations

import numpy as np

from bracer.audit.checks._common import (
    Unavailable,
    extremes,
    finding,
    fmt,
    fmt_t,
    in_unit,
    not_assessable,
    span_text,
)
from bracer.audit.checks._joint import JointSignal, joint_signal, speed_unit
from bracer.audit.checks._limits import LimitSpec, limit_specs
from bracer.audit.context import AuditContext
from bracer.audit.events import Event, find_events
from bracer.findings import Check, Finding, Kind, Severity, register

CHECK = register(
    Check(
        "A122",
        "predicted-stop-position",
        "A stop triggered at that moment would have ended beyond the end stop or the participant's range",
        Severity.WARNING,
        needs=("position", "speed"),
    )
)

_BOUND_LAYERS = ("mechanical", "participant")


def _aligned(speed: JointSignal, pos: JointSignal) -> tuple[np.ndarray, np.ndarray]:
    """Speed on the position's clock (interpolated when the two channels are on different streams)."""
    if speed.t is pos.t or (speed.t.shape == pos.t.shape and np.array_equal(speed.t, pos.t)):
        return speed.x, speed.valid
    v = np.interp(pos.t, speed.t, np.where(speed.valid, speed.x, np.nan))
    return v, np.isfinite(v)


def run(ctx: AuditContext) -> list[Finding]:
    """Predicted stop positions of every joint against its mechanical range and the participant's range."""
    p = ctx.resolution.protocol
    out: list[Finding] = []
    for name, joint in p.joints.items():
        specs = [s for s in limit_specs(ctx, name, "position") if s.layer in _BOUND_LAYERS]
        if not specs:
            continue
        if p.stop is None or joint.stop_deceleration is None:
            missing = (
                "a stop function (stop:)" if p.stop is None else f"a stop_deceleration for joint '{name}'"
            )
            out.append(
                not_assessable(
                    CHECK,
                    Unavailable(None, f"the protocol declares no {missing}"),
                    subject=name,
                    subject_kind="joint",
                    quantity="position",
                    what=f"predicted stop position of joint '{name}'",
                    severity=Severity.WARNING,
                )
            )
            continue
        pos = joint_signal(ctx, name, "position")
        speed = joint_signal(ctx, name, "speed")
        if isinstance(pos, Unavailable) or isinstance(speed, Unavailable):
            continue
        t_r = p.stop.reaction_time.si
        a = joint.stop_deceleration.si
        # quick bound: the farthest any sample could reach, from the channels' extremes
        vx = extremes(ctx, (name, "speed"), speed.x, speed.valid)
        v_max = max(abs(vx.max), abs(vx.min)) if np.isfinite(vx.max) else 0.0
        reach = v_max * t_r + v_max * v_max / (2 * a)
        px = extremes(ctx, (name, "position"), pos.x, pos.valid)
        p_hi, p_lo = px.max, px.min
        todo = [
            s
            for s in specs
            if (s.side == "above" and p_hi + reach > s.threshold)
            or (s.side == "below" and p_lo - reach < s.threshold)
        ]
        if not todo:
            continue
        v, v_valid = _aligned(speed, pos)
        both = pos.valid & v_valid
        stop_at = v * t_r
        stop_at += v * np.abs(v) / (2 * a)
        stop_at += pos.x
        audit = p.audit
        for spec in todo:
            inside = both & (pos.x <= spec.threshold if spec.side == "above" else pos.x >= spec.threshold)
            for ev in find_events(
                pos.t,
                stop_at,
                inside,
                spec.threshold,
                side=spec.side,
                band=spec.band,
                min_duration=audit.min_event_duration.si,
            ):
                out.append(_finding(ctx, spec, pos, v, ev, t_r, a))
    return out


def _finding(
    ctx: AuditContext, spec: LimitSpec, pos: JointSignal, v: np.ndarray, ev: Event, t_r: float, a: float
) -> Finding:
    p = ctx.resolution.protocol
    joint = p.joints[spec.joint]
    assert p.stop is not None and joint.stop_deceleration is not None
    unit = spec.unit
    peak = in_unit(ev.peak, unit)
    limit = float(spec.declared.magnitude)
    margin = spec.margin_to(ev.peak)
    v_unit = speed_unit(joint)
    v_peak = in_unit(float(v[ev.i_peak]), v_unit)
    at = in_unit(float(pos.x[ev.i_peak]), unit)
    where = "the mechanical end stop" if spec.layer == "mechanical" else "the participant's range"
    anatomical = joint.positive if spec.direction == "positive" else joint.negative
    msg = (
        f"predicted near miss: had a stop been triggered at {fmt_t(ev.t_peak)} ({spec.joint} at "
        f"{fmt(at, unit)}, moving at {fmt(v_peak, v_unit)}), the joint would have stopped at about "
        f"{fmt(peak, unit)}, beyond {where} ({anatomical} end, {fmt(limit, unit)}) by {fmt(-margin, unit)}; "
        f"reaction time {p.stop.reaction_time}, stop deceleration {joint.stop_deceleration}; "
        f"{span_text(ev.t_start, ev.t_end)}"
    )
    if spec.source_note:
        msg += f"; limit from {spec.source_note}"
    return finding(
        CHECK,
        Kind.NEAR_MISS,
        Severity.WARNING,
        msg + ".",
        subject=spec.joint,
        subject_kind="joint",
        quantity="position",
        direction=spec.direction,
        layer=spec.layer,
        channel=pos.channel,
        event=ev,
        peak=peak,
        limit=limit,
        margin=margin,
        unit=unit,
        extra=(
            ("prediction", "stop_position"),
            ("position_at_peak", at),
            ("speed_at_peak", v_peak),
            ("speed_unit", v_unit),
            ("reaction_time_s", t_r),
            ("stop_deceleration_si", a),
            ("duration_s", ev.duration),
        ),
    )
