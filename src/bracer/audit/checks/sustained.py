"""A113 sustained-force: contact force at or above the sustained level for longer than allowed.

For contacts that declare ``sustained: {level, max_duration}``: samples with force at or above ``level`` are
grouped into events (hysteresis from ``protocol.audit``); an event lasting longer than ``max_duration`` is a
``violation`` with quantity ``sustained_force``.  Its ``peak`` is the time spent at or above the level and its
``limit`` the allowed duration, both in the unit declared for ``max_duration``; the peak force is in
``extra``. Severity error.  No usable force channel: an error-level ``not_assessable``.
"""

from __future__ import annotations

from bracer.audit.checks._common import (
    TIME_EPS,
    Unavailable,
    finding,
    fmt,
    fmt_t,
    in_unit,
    not_assessable,
    span_text,
)
from bracer.audit.checks._contact import contact_force
from bracer.audit.context import AuditContext
from bracer.audit.events import find_events
from bracer.findings import Check, Finding, Kind, Severity, register

CHECK = register(
    Check(
        "A113",
        "sustained-force",
        "Contact force held at or above the sustained level too long",
        Severity.ERROR,
        needs=("force",),
    )
)


def run(ctx: AuditContext) -> list[Finding]:
    """Sustained-force violations of every contact that declares a sustained-force limit."""
    p = ctx.resolution.protocol
    out: list[Finding] = []
    for name, contact in p.contacts.items():
        sus = contact.sustained
        if sus is None:
            continue
        cf = contact_force(ctx, name)
        if isinstance(cf, Unavailable):
            out.append(
                not_assessable(
                    CHECK,
                    cf,
                    subject=name,
                    subject_kind="contact",
                    quantity="sustained_force",
                    what=f"sustained-force limit of contact '{name}'",
                )
            )
            continue
        level = sus.level.si
        events = find_events(
            cf.t,
            cf.f,
            cf.valid,
            level,
            band=p.audit.hysteresis * level,
            min_duration=sus.max_duration.si,
            inclusive=True,
        )
        unit = str(sus.max_duration.unit)
        force_unit = str(sus.level.unit)
        for ev in events:
            if ev.duration <= sus.max_duration.si + TIME_EPS:
                continue  # exactly the allowed duration is allowed
            held = in_unit(ev.duration, unit)
            limit = float(sus.max_duration.magnitude)
            msg = (
                f"{name} contact force held at or above the sustained level {sus.level} for "
                f"{fmt(held, unit)}, longer than the {sus.max_duration} allowed: "
                f"{span_text(ev.t_start, ev.t_end)}"
                f", peak force {fmt(in_unit(ev.peak, force_unit), force_unit)} at {fmt_t(ev.t_peak)}; "
                f"force is the {cf.how}."
            )
            out.append(
                finding(
                    CHECK,
                    Kind.VIOLATION,
                    Severity.ERROR,
                    msg,
                    subject=name,
                    subject_kind="contact",
                    quantity="sustained_force",
                    layer="sustained",
                    channel=cf.channel,
                    event=ev,
                    peak=held,
                    limit=limit,
                    margin=limit - held,
                    unit=unit,
                    extra=(
                        ("level", float(sus.level.magnitude)),
                        ("level_unit", force_unit),
                        ("peak_force", in_unit(ev.peak, force_unit)),
                        ("duration_s", ev.duration),
                    ),
                )
            )
    return out
