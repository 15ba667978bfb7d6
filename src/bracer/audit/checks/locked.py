"""A301 locked-joint: a joint declared locked moved more than its tolerance.

Locked joints are ``participant.locked_joints`` when the participant gives that list, else the keys of
``protocol.locked_joints``; the tolerance is ``protocol.locked_joints.<joint>.tolerance``.  The motion is
measured from the joint's position at its first valid sample: each run of samples further than the tolerance
from it (hysteresis from ``protocol.audit``, as a fraction of the tolerance) is one ``violation`` with
quantity ``locked_motion``, direction ``positive`` / ``negative``; ``peak`` is the largest excursion (a
magnitude) and ``limit`` the tolerance, in the tolerance's declared unit; the range used over the whole
session is in ``extra``.  Severity error.  Not assessable (error): no usable position channel, or a locked
joint without a declared tolerance.
"""

from __future__ import annotations

from typing import Literal

import numpy as np

from bracer.audit.checks._common import Unavailable, finding, fmt, fmt_t, in_unit, not_assessable, span_text
from bracer.audit.checks._joint import joint_signal
from bracer.audit.context import AuditContext
from bracer.audit.events import find_events
from bracer.findings import Check, Finding, Kind, Severity, register

CHECK = register(
    Check(
        "A301",
        "locked-joint",
        "A joint declared locked moved more than its tolerance",
        Severity.ERROR,
        needs=("position",),
    )
)


def locked_joints(ctx: AuditContext) -> tuple[str, ...]:
    """The joints locked for this audit (the participant's list replaces the protocol's)."""
    part = ctx.resolution.participant
    if part is not None and part.locked_joints is not None:
        return tuple(part.locked_joints)
    return tuple(ctx.resolution.protocol.locked_joints)


def run(ctx: AuditContext) -> list[Finding]:
    """Motion of every locked joint beyond its tolerance."""
    p = ctx.resolution.protocol
    out: list[Finding] = []
    for name in locked_joints(ctx):
        decl = p.locked_joints.get(name)
        if decl is None:
            why = Unavailable(
                None,
                f"joint '{name}' is locked for this participant but protocol.locked_joints "
                "declares no tolerance for it",
            )
            out.append(
                not_assessable(
                    CHECK,
                    why,
                    subject=name,
                    subject_kind="joint",
                    quantity="locked_motion",
                    what=f"locked joint '{name}'",
                )
            )
            continue
        pos = joint_signal(ctx, name, "position")
        if isinstance(pos, Unavailable):
            out.append(
                not_assessable(
                    CHECK,
                    pos,
                    subject=name,
                    subject_kind="joint",
                    quantity="locked_motion",
                    what=f"locked joint '{name}'",
                )
            )
            continue
        tol = decl.tolerance
        unit = str(tol.unit)
        i0 = int(np.argmax(pos.valid))
        x0 = float(pos.x[i0])
        hi = float(np.max(pos.x, where=pos.valid, initial=-np.inf))
        lo = float(np.min(pos.x, where=pos.valid, initial=np.inf))
        used = in_unit(hi - lo, unit)
        band = p.audit.hysteresis * tol.si
        sides: tuple[tuple[str, Literal["above", "below"], float], ...] = (
            ("positive", "above", x0 + tol.si),
            ("negative", "below", x0 - tol.si),
        )
        for direction, side, thr in sides:
            if (side == "above" and hi <= thr) or (side == "below" and lo >= thr):
                continue
            for ev in find_events(
                pos.t,
                pos.x,
                pos.valid,
                thr,
                side=side,
                band=band,
                min_duration=p.audit.min_event_duration.si,
            ):
                moved = in_unit(abs(ev.peak - x0), unit)
                limit = float(tol.magnitude)
                msg = (
                    f"locked joint {name} moved {fmt(moved, unit)} from its position at the first valid "
                    "sample "
                    f"({fmt(in_unit(x0, unit), unit)} at {fmt_t(float(pos.t[i0]))}), in the {direction} "
                    f"direction, beyond the {tol} tolerance: largest at {fmt_t(ev.t_peak)}, "
                    f"{span_text(ev.t_start, ev.t_end)}; range used over the session {fmt(used, unit)}."
                )
                out.append(
                    finding(
                        CHECK,
                        Kind.VIOLATION,
                        Severity.ERROR,
                        msg,
                        subject=name,
                        subject_kind="joint",
                        quantity="locked_motion",
                        direction=direction,
                        channel=pos.channel,
                        event=ev,
                        peak=moved,
                        limit=limit,
                        margin=limit - moved,
                        unit=unit,
                        extra=(
                            ("reference_position", in_unit(x0, unit)),
                            ("range_used", used),
                            ("duration_s", ev.duration),
                        ),
                    )
                )
    return out
