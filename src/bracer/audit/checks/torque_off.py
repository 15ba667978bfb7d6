"""A202 torque-off: time from each stop trigger until every joint's torque has fallen to
``stop.torque_off.level``.

For stop categories 0 and 1 (IEC 60204-1:2016 clause 9.2.2: power to the actuators is removed, at once or
after standstill) and when the protocol declares ``stop.torque_off``.  A joint's torque counts as off from the
first time at or after the trigger when ``|torque| <= level`` for ``stop.standstill.hold``; the episode's time
is the latest joint's.  One finding per stop episode, quantity ``torque_off``, in the unit of
``torque_off.within`` (else seconds):

* off within ``torque_off.within`` (or no budget declared): kind ``stop``, severity info;
* later than ``within``: kind ``violation``, severity error;
* not off on every joint before the log ends: kind ``violation``, severity error, ``peak`` None.

Category 2 keeps power by design: no torque-off timing (A204 checks that the torque was kept).  Not
assessable: a joint whose torque column is missing from the log or has no valid sample (error, once per
joint), a joint the protocol maps no torque channel for (warning), and a category 0/1 stop without
``stop.torque_off`` in the protocol (warning, once).
"""

from __future__ import annotations

from bracer.audit.checks._common import TIME_EPS, Unavailable, fmt, fmt_t, in_unit, not_assessable
from bracer.audit.checks._stopping import Episode, stop_analysis, stop_finding
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Kind, Severity, register

CHECK = register(
    Check(
        "A202",
        "torque-off",
        "Time from a stop trigger until the joint torques are off",
        Severity.ERROR,
        needs=("torque",),
    )
)


def run(ctx: AuditContext) -> list[Finding]:
    """One finding per stop episode of a category 0 or 1 stop, plus what could not be assessed."""
    stop = ctx.resolution.protocol.stop
    if stop is None or stop.category == 2:
        return []
    sa = stop_analysis(ctx)
    if not sa.episodes or sa.no_standstill is not None:
        return []
    if stop.torque_off is None:
        why = Unavailable(
            None, f"the protocol declares no stop.torque_off level for its category {stop.category} stop"
        )
        return [
            not_assessable(
                CHECK,
                why,
                subject=None,
                subject_kind="session",
                quantity="torque_off",
                what="torque off after stop triggers",
                severity=Severity.WARNING,
            )
        ]
    out = [
        not_assessable(
            CHECK,
            why,
            subject=joint,
            subject_kind="joint",
            quantity="torque_off",
            what=f"torque off of joint '{joint}' after stop triggers",
            # a column the protocol maps but the log lacks is a data problem (error); a joint the protocol
            # maps no torque channel for is a protocol gap the review reports (warning)
            severity=Severity.ERROR if why.channel is not None else Severity.WARNING,
        )
        for joint, why in sa.torque_missing
    ]
    if len(sa.torque_missing) == len(ctx.resolution.protocol.joints):
        return out
    out.extend(_episode(ctx, ep) for ep in sa.episodes)
    return out


def _episode(ctx: AuditContext, ep: Episode) -> Finding:
    stop = ctx.resolution.protocol.stop
    assert stop is not None and stop.torque_off is not None
    level = stop.torque_off.level
    within = stop.torque_off.within
    unit = str(within.unit) if within is not None else "s"
    trig = ep.trigger
    t_off = ep.t_torque_off
    never = [j for j, t in ep.torque_off if t is None]
    limit = float(within.magnitude) if within is not None else None
    extra = (
        ("trigger", trig.source),
        ("level", float(level.magnitude)),
        ("level_unit", str(level.unit)),
        ("per_joint_s", tuple((j, None if t is None else t - trig.t) for j, t in ep.torque_off)),
    )
    value: float | None = None
    margin: float | None = None
    if t_off is None:
        msg = (
            f"{trig.label} at {fmt_t(trig.t)}: torque did not fall to {level} or below (held for "
            f"{stop.standstill.hold}) on {', '.join(never)} before the log ends at {fmt_t(ep.t_log_end)}; a "
            f"category {stop.category} stop removes power to the actuators."
        )
        kind, severity, t_end = Kind.VIOLATION, Severity.ERROR, ep.t_log_end
    else:
        value = in_unit(t_off - trig.t, unit)
        margin = None if limit is None else limit - value
        late = within is not None and t_off - trig.t > within.si + TIME_EPS
        if within is None:
            verdict = "no torque-off budget declared"
        elif late:
            verdict = f"{fmt(value - float(within.magnitude), unit)} over the {within} allowed"
        else:
            verdict = f"within the {within} allowed"
        msg = (
            f"{trig.label} at {fmt_t(trig.t)}: every joint's torque at or below {level} after "
            f"{fmt(value, unit)} (at {fmt_t(t_off)}); {verdict}."
        )
        kind, severity = (Kind.VIOLATION, Severity.ERROR) if late else (Kind.STOP, Severity.INFO)
        t_end = t_off
    return stop_finding(
        CHECK,
        kind,
        severity,
        msg,
        trig,
        quantity="torque_off",
        t_end=t_end,
        peak=value,
        limit=limit,
        margin=margin,
        unit=unit,
        extra=extra,
    )
