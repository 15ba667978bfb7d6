"""A201 stop-latency: time from each stop trigger to standstill, against ``stop.latency_budget``.

Triggers and episodes as in :mod:`bracer.audit.checks._stopping`: emergency stop, protective stop,
safety-state change (``logging.triggers``) and exceedances of the layers in ``stop.stop_on_exceedance``.  For
each stop episode one finding, quantity ``stop_latency``, ``peak`` = time to standstill and ``limit`` = the
budget, in the budget's declared unit:

* standstill within the budget: kind ``stop``, severity info;
* standstill later than the budget: kind ``violation``, severity error;
* no standstill before the log ends (for an exceedance: the required stop never came): kind ``violation``,
  severity error, ``peak`` None and ``t_end`` the end of the log.

Not assessable: a trigger column missing from the log (error); no stop function declared or no joint speed at
all (error); a joint left out of the standstill test (error, one finding per joint); a trigger already active
at the first sample, which cannot be timed (warning).
"""

from __future__ import annotations

from bracer.audit.checks._common import TIME_EPS, finding, fmt, fmt_t, in_unit, not_assessable
from bracer.audit.checks._stopping import Episode, stop_analysis, stop_finding
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Kind, Severity, register

CHECK = register(
    Check(
        "A201",
        "stop-latency",
        "Time from a stop trigger to standstill against the latency budget",
        Severity.ERROR,
        needs=("triggers", "speed"),
    )
)


def run(ctx: AuditContext) -> list[Finding]:
    """One finding per stop episode, plus what could not be assessed."""
    p = ctx.resolution.protocol
    sa = stop_analysis(ctx)
    out: list[Finding] = []
    for kind, missing in sa.missing_triggers:
        out.append(
            not_assessable(
                CHECK,
                missing,
                subject=None,
                subject_kind="session",
                quantity="stop_latency",
                what=f"stops requested by the {kind.replace('_', ' ')} trigger",
            )
        )
    for trig in sa.at_start:
        out.append(
            finding(
                CHECK,
                Kind.NOT_ASSESSABLE,
                Severity.WARNING,
                f"{trig.label} was already active at the first sample ({fmt_t(trig.t)}); its stop latency "
                "cannot be "
                "timed from this log.",
                subject=None,
                subject_kind="session",
                quantity="stop_latency",
                channel=trig.channel,
                t_start=trig.t,
                t_end=trig.t,
                i_start=trig.i,
                i_end=trig.i,
            )
        )
    if sa.no_standstill is not None:
        if p.logging.triggers or sa.episodes or p.stop is not None:
            out.append(
                not_assessable(
                    CHECK,
                    sa.no_standstill,
                    subject=None,
                    subject_kind="session",
                    quantity="stop_latency",
                    what="time to standstill after stop triggers",
                )
            )
        return out
    if sa.episodes:
        for joint, why in sa.standstill_missing:
            out.append(
                not_assessable(
                    CHECK,
                    why,
                    subject=joint,
                    subject_kind="joint",
                    quantity="stop_latency",
                    what=f"standstill of joint '{joint}' after stop triggers",
                )
            )
    left_out = tuple(j for j, _ in sa.standstill_missing)
    out.extend(_episode(ctx, ep, left_out, sa.derived_note) for ep in sa.episodes)
    return out


def _episode(ctx: AuditContext, ep: Episode, left_out: tuple[str, ...], derived_note: str) -> Finding:
    stop = ctx.resolution.protocol.stop
    assert stop is not None
    budget = stop.latency_budget
    unit = str(budget.unit)
    trig = ep.trigger
    rule = f"all joints below {stop.standstill.speed} for {stop.standstill.hold}"
    extra: list[tuple[str, object]] = [
        ("trigger", trig.source),
        ("trigger_label", trig.label),
        ("folded_triggers", tuple(f"{f.label} at {fmt_t(f.t)}" for f in ep.folded)),
        ("standstill_rule", rule),
    ]
    tail = ""
    if ep.folded:
        tail += "; also requested during this stop: " + "; ".join(
            f"{f.label} at {fmt_t(f.t)}" for f in ep.folded
        )
    if left_out:
        tail += f"; standstill judged without {', '.join(left_out)} (not assessable)"
    if derived_note:
        tail += f"; {derived_note}"
    latency = ep.latency
    t_still = ep.t_standstill
    if latency is None or t_still is None:
        needed = (
            "the protocol requires a stop after it; the required stop never came"
            if trig.required
            else "no standstill followed"
        )
        msg = (
            f"{trig.label} at {fmt_t(trig.t)}: {needed} -- no standstill ({rule}) before the log ends at "
            f"{fmt_t(ep.t_log_end)} ({fmt(ep.t_log_end - trig.t, 's')} later); latency budget {budget}{tail}."
        )
        kind, severity, t_end, i_end, value, margin = (
            Kind.VIOLATION,
            Severity.ERROR,
            ep.t_log_end,
            None,
            None,
            None,
        )
    else:
        value = in_unit(latency, unit)
        margin = float(budget.magnitude) - value
        t_end = t_still
        i_end = ep.i_standstill if ep.motion_stream == trig.stream else None
        extra.append(("latency_s", latency))
        late = latency > budget.si + TIME_EPS
        kind, severity = (Kind.VIOLATION, Severity.ERROR) if late else (Kind.STOP, Severity.INFO)
        verdict = (
            f"{fmt(-margin, unit)} over the latency budget of {budget}"
            if late
            else f"within the latency budget of {budget}"
        )
        what = "required stop after " if trig.required else ""
        msg = (
            f"{what}{trig.label} at {fmt_t(trig.t)}: standstill ({rule}) after {fmt(value, unit)}, at "
            f"{fmt_t(t_still)}; {verdict} (timing resolution about one sample, "
            f"{fmt(ep.sample_period * 1e3)} ms){tail}."
        )
    return stop_finding(
        CHECK,
        kind,
        severity,
        msg,
        trig,
        quantity="stop_latency",
        t_end=t_end,
        i_end=i_end,
        peak=value,
        limit=float(budget.magnitude),
        margin=margin,
        unit=unit,
        extra=tuple(extra),
    )
