"""A112 contact-pressure: contact pressure (force ÷ contact area) above the quasi-static or transient limit.

Same force and the same transient rule as A111 (``force.transient_max_duration``), compared with
``pressure limit × contacts.<name>.area``; peaks and limits are reported in the declared pressure unit
(e.g. ``N/cm^2``).  Kind ``violation``, severity error; only for contacts that declare pressure limits.  A
contact with pressure limits and no usable force channel gives an error-level ``not_assessable``.
"""

from __future__ import annotations

from bracer.audit.checks._common import Unavailable, not_assessable
from bracer.audit.checks._contact import contact_force, contact_violations
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Severity, register

CHECK = register(
    Check(
        "A112",
        "contact-pressure",
        "Contact pressure above the quasi-static or transient limit",
        Severity.ERROR,
        needs=("force",),
    )
)


def run(ctx: AuditContext) -> list[Finding]:
    """Pressure violations of every contact that declares pressure limits."""
    out: list[Finding] = []
    for name, contact in ctx.resolution.protocol.contacts.items():
        if contact.pressure is None:
            continue
        cf = contact_force(ctx, name)
        if isinstance(cf, Unavailable):
            out.append(
                not_assessable(
                    CHECK,
                    cf,
                    subject=name,
                    subject_kind="contact",
                    quantity="pressure",
                    what=f"pressure limits of contact '{name}'",
                )
            )
            continue
        out.extend(contact_violations(CHECK, ctx, name, "pressure", cf))
    return out
