"""A203 stop-distance: how far each joint travelled after a stop trigger.

For every stop episode and every joint that moved during it (speed above ``stop.standstill.speed`` at some
valid sample from the trigger to standstill), one finding of kind ``stop``, quantity ``stop_distance``:
``peak`` is the largest excursion of the position from where it was at the trigger, up to standstill (or to
the end of the log when none came), in the unit of the joint's range limits.  Where the joint declares a
``stop_deceleration``, ``limit`` is the distance the declared stop predicts, ``|v0|·t_r + v0²/(2a)`` with the
speed ``v0`` at the trigger and ``stop.reaction_time``; travelling further than that (by more than one sample
of travel at ``v0``) is reported at warning level, otherwise info.  Not assessable when a joint has no
position channel (reported once per joint by A101).
"""

from __future__ import annotations

from bracer.audit.checks._common import finding, fmt, fmt_t, in_unit
from bracer.audit.checks._joint import angle_unit, speed_unit
from bracer.audit.checks._stopping import Episode, JointStop, stop_analysis
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Kind, Severity, register

CHECK = register(
    Check(
        "A203",
        "stop-distance",
        "Distance each joint travelled after a stop trigger",
        Severity.WARNING,
        needs=("position", "speed"),
    )
)


def run(ctx: AuditContext) -> list[Finding]:
    """One finding per stop episode and joint in motion."""
    sa = stop_analysis(ctx)
    if sa.no_standstill is not None:
        return []
    return [
        _joint(ctx, ep, js) for ep in sa.episodes for js in ep.joints if js.moved and js.distance is not None
    ]


def _joint(ctx: AuditContext, ep: Episode, js: JointStop) -> Finding:
    p = ctx.resolution.protocol
    assert p.stop is not None and js.distance is not None
    joint = p.joints[js.joint]
    unit = angle_unit(joint)
    trig = ep.trigger
    value = in_unit(js.distance, unit)
    until = (
        f"standstill at {fmt_t(ep.t_standstill)}"
        if ep.t_standstill is not None
        else f"the end of the log at {fmt_t(js.t_end)} (no standstill came)"
    )
    v_unit = speed_unit(joint)
    speed = (
        f"speed at the trigger {fmt(in_unit(js.v0, v_unit), v_unit)}"
        if js.v0 is not None
        else "speed at the trigger not valid"
    )
    limit = margin = None
    severity = Severity.INFO
    note = ""
    a = joint.stop_deceleration
    if a is not None and js.v0 is not None:
        v0 = abs(js.v0)
        predicted = v0 * p.stop.reaction_time.si + v0 * v0 / (2 * a.si)
        limit = in_unit(predicted, unit)
        margin = limit - value
        tolerance = v0 * ep.sample_period
        if js.distance > predicted + tolerance:
            severity = Severity.WARNING
            note = (
                f"; further than the {fmt(limit, unit)} the declared stop predicts (reaction time "
                f"{p.stop.reaction_time}, stop deceleration {a})"
            )
        else:
            note = (
                f"; the declared stop predicts {fmt(limit, unit)} (reaction time "
                f"{p.stop.reaction_time}, stop "
                f"deceleration {a})"
            )
    msg = (
        f"{js.joint} travelled {fmt(value, unit)} after the {trig.label} at {fmt_t(trig.t)}, until {until} "
        f"({speed}){note}."
    )
    return finding(
        CHECK,
        Kind.STOP,
        severity,
        msg,
        subject=js.joint,
        subject_kind="joint",
        quantity="stop_distance",
        channel=js.channel,
        t_start=trig.t,
        t_end=js.t_end,
        i_start=js.i_start,
        i_end=js.i_end,
        peak=value,
        limit=limit,
        margin=margin,
        unit=unit,
        extra=(
            ("trigger", trig.source),
            ("speed_at_trigger", None if js.v0 is None else in_unit(js.v0, v_unit)),
            ("speed_unit", v_unit),
        ),
    )
