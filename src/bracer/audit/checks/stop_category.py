"""A204 stop-category: does each stop behave like the declared stop category?

IEC 60204-1:2016 clause 9.2.2: category 0 removes power to the actuators at once; category 1 decelerates under
control with power kept until standstill, then removes it; category 2 decelerates under control and leaves
power available.  bracer judges this from the logged torques (``stop.torque_off.level``; a joint's torque is
off from the first time ``|torque| <= level`` for ``stop.standstill.hold``), with a tolerance of one sample
period ``Δt`` of the joints' clock:

* category 0: every joint's torque off no later than ``stop.reaction_time + Δt`` after the trigger;
* category 1: standstill reached, and the torque not off earlier than ``standstill.hold + Δt`` before
  standstill (torque off while the joints still move means an uncontrolled stop), and off before the log ends;
* category 2: the torque not off on every joint from the trigger until ``standstill.hold`` after standstill
  (torque near zero on all joints is consistent with power removed; a joint needing no holding torque makes
  this an inference, which the message says).

One finding per stop episode, quantity ``stop_category``: kind ``stop`` / info when the behaviour matches,
kind ``violation`` when it does not (error for categories 0 and 1, warning for category 2).  ``peak`` is the
time from the trigger to torque off and ``limit`` the time the rule allows, in seconds, where they apply.  Not
assessable (warning, once): no ``stop.torque_off`` declared, or no joint with a torque channel.
"""

from __future__ import annotations

from dataclasses import dataclass

from bracer.audit.checks._common import Unavailable, fmt, fmt_t, not_assessable
from bracer.audit.checks._stopping import Episode, stop_analysis, stop_finding
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Kind, Severity, register

CHECK = register(
    Check(
        "A204",
        "stop-category",
        "Stop behaviour against the declared IEC 60204-1 stop category",
        Severity.ERROR,
        needs=("torque", "speed"),
    )
)


@dataclass(frozen=True, slots=True)
class _Verdict:
    matches: bool
    reason: str
    peak: float | None = None  # s from trigger to torque off
    limit: float | None = None  # s the rule allows (category 0), or the earliest allowed (category 1)


def run(ctx: AuditContext) -> list[Finding]:
    """One finding per stop episode, plus what could not be assessed."""
    stop = ctx.resolution.protocol.stop
    if stop is None:
        return []
    sa = stop_analysis(ctx)
    if not sa.episodes or sa.no_standstill is not None:
        return []
    if stop.torque_off is None or len(sa.torque_missing) == len(ctx.resolution.protocol.joints):
        reason = (
            "the protocol declares no stop.torque_off level"
            if stop.torque_off is None
            else "no joint has a usable torque channel"
        )
        return [
            not_assessable(
                CHECK,
                Unavailable(None, reason),
                subject=None,
                subject_kind="session",
                quantity="stop_category",
                what=f"category {stop.category} stop behaviour",
                severity=Severity.WARNING,
            )
        ]
    return [_episode(ctx, ep) for ep in sa.episodes]


def _verdict(ctx: AuditContext, ep: Episode) -> _Verdict:
    stop = ctx.resolution.protocol.stop
    assert stop is not None and stop.torque_off is not None
    level = stop.torque_off.level
    t0 = ep.trigger.t
    t_off = ep.t_torque_off
    t_still = ep.t_standstill
    dt = ep.sample_period
    hold = stop.standstill.hold.si
    off = None if t_off is None else t_off - t0
    if stop.category == 0:
        allowed = stop.reaction_time.si + dt
        if off is None:
            return _Verdict(False, f"the torque never fell to {level} on every joint", None, allowed)
        if off <= allowed:
            return _Verdict(
                True,
                f"torque off after {fmt(off, 's')}, within the reaction time "
                f"{stop.reaction_time} (+ one sample)",
                off,
                allowed,
            )
        return _Verdict(
            False,
            f"torque fell to {level} only {fmt(off, 's')} after the trigger, later than the "
            f"reaction time {stop.reaction_time} (+ one sample): power was not removed at once",
            off,
            allowed,
        )
    if stop.category == 1:
        if t_still is None:
            return _Verdict(False, "no standstill followed, so no controlled stop to standstill", off)
        earliest = t_still - t0 - hold - dt
        if off is None:
            return _Verdict(
                False,
                f"standstill at {fmt_t(t_still)}, but the torque never fell to {level} on "
                "every joint afterwards: power was not removed (behaves like category 2)",
                None,
                earliest,
            )
        if off < earliest:
            return _Verdict(
                False,
                f"torque fell to {level} {fmt(off, 's')} after the trigger, before the joints "
                f"had stopped (standstill at {fmt(t_still - t0, 's')}): not a controlled "
                "deceleration (behaves like category 0)",
                off,
                earliest,
            )
        return _Verdict(
            True,
            f"controlled deceleration to standstill {fmt(t_still - t0, 's')} after the trigger, then torque "
            f"off {fmt(off, 's')} after it",
            off,
            earliest,
        )
    # category 2
    window_end = (t_still + hold) if t_still is not None else ep.t_log_end
    if t_off is not None and t_off <= window_end:
        return _Verdict(
            False,
            f"torque fell to {level} or below on every joint {fmt(off, 's')} after the trigger, "
            "consistent with power removed, which a category 2 stop does not do (inferred from "
            "torque: a joint that needs no holding torque reads near zero with power on)",
            off,
        )
    return _Verdict(True, "torque was kept on at least one joint through the stop", off)


def _episode(ctx: AuditContext, ep: Episode) -> Finding:
    stop = ctx.resolution.protocol.stop
    assert stop is not None
    v = _verdict(ctx, ep)
    trig = ep.trigger
    declared = {
        0: "category 0 (power removed at once)",
        1: "category 1 (controlled deceleration, then power removed)",
        2: "category 2 (controlled deceleration, power kept)",
    }[stop.category]
    t_end = ep.t_standstill if ep.t_standstill is not None else ep.t_log_end
    if ep.t_torque_off is not None:
        t_end = max(t_end, ep.t_torque_off)
    if v.matches:
        kind, severity = Kind.STOP, Severity.INFO
        msg = f"{trig.label} at {fmt_t(trig.t)} behaved as the declared {declared}: {v.reason}."
    else:
        kind = Kind.VIOLATION
        severity = Severity.WARNING if stop.category == 2 else Severity.ERROR
        msg = f"{trig.label} at {fmt_t(trig.t)} did not behave as the declared {declared}: {v.reason}."
    return stop_finding(
        CHECK,
        kind,
        severity,
        msg,
        trig,
        quantity="stop_category",
        t_end=t_end,
        peak=v.peak,
        limit=v.limit,
        unit="s",
        extra=(
            ("category", stop.category),
            ("trigger", trig.source),
            ("standstill_s", None if ep.latency is None else ep.latency),
        ),
    )
