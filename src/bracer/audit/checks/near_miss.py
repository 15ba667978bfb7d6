"""A121 near-miss: a value inside the protocol's near-miss band below a limit, without exceeding it.

For every joint limit (range per layer and the participant's range, speed, torque, acceleration) and every
contact limit (force and pressure, quasi-static and transient) whose quantity has a margin in
``protocol.near_miss`` -- a ``fraction`` of the limit (of the layer's span for range) and/or an ``absolute``
value, the wider band wins -- each run of samples inside the band that overlaps no reported exceedance of the
same limit is one finding of kind ``near_miss`` (hysteresis and minimum duration as for violations).  A run
that crossed the limit only for less than the minimum event duration is still reported here, and its message
says so.  Severity: info for the planned layer, warning otherwise.  Missing channels are reported by the limit
checks (A101–A112), not again here.
"""

from __future__ import annotations

from bracer.audit.checks._common import Unavailable
from bracer.audit.checks._contact import ContactQuantity, contact_force, contact_limits, contact_near_miss
from bracer.audit.checks._contact import near_events as contact_near_events
from bracer.audit.checks._joint import JointQuantity, joint_signal
from bracer.audit.checks._limits import limit_specs, margin_band, near_events, near_miss
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Severity, register

CHECK = register(
    Check(
        "A121",
        "near-miss",
        "Value inside the near-miss band of a limit without exceeding it",
        Severity.WARNING,
        needs=("position", "speed", "torque", "acceleration", "force"),
    )
)

_JOINT_QUANTITIES: tuple[JointQuantity, ...] = ("position", "speed", "torque", "acceleration")
_CONTACT_QUANTITIES: tuple[ContactQuantity, ...] = ("force", "pressure")


def run(ctx: AuditContext) -> list[Finding]:
    """Near misses of every joint and contact limit that has a declared near-miss margin."""
    p = ctx.resolution.protocol
    out: list[Finding] = []
    for name in p.joints:
        for quantity in _JOINT_QUANTITIES:
            margin = getattr(p.near_miss, quantity)
            if margin is None:
                continue
            specs = limit_specs(ctx, name, quantity)
            if not specs:
                continue
            sig = joint_signal(ctx, name, quantity)
            if isinstance(sig, Unavailable):
                continue
            for spec in specs:
                width = margin_band(margin, spec.base, spec.declared)
                if width is None:
                    continue
                out.extend(
                    near_miss(CHECK, ctx, spec, sig, ev, width) for ev in near_events(ctx, spec, sig, width)
                )
    min_duration = p.audit.min_event_duration.si
    for name in p.contacts:
        for cq in _CONTACT_QUANTITIES:
            margin = getattr(p.near_miss, cq)
            limits = contact_limits(ctx, name, cq)
            if margin is None or not limits:
                continue
            cf = contact_force(ctx, name)
            if isinstance(cf, Unavailable):
                continue
            for lim in limits:
                width = margin_band(margin, lim.declared.si, lim.declared)
                if width is None:
                    continue
                width_force = width / lim.scale  # band in N (pressure band × area)
                out.extend(
                    contact_near_miss(CHECK, lim, cf, ev, width_force, min_duration)
                    for ev in contact_near_events(ctx, lim, cf, width_force)
                )
    return out
