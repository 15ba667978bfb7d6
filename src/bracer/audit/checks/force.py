"""A111 contact-force: contact force above the quasi-static or transient limit.

Force per contact is the vector magnitude of its force columns, or the absolute value of its declared axis or
single column (:mod:`bracer.audit.checks._contact`).  The protocol's transient rule applies: an event over the
quasi-static limit lasting at most ``force.transient_max_duration`` is a transient contact, judged against the
transient limit; a longer one is a quasi-static violation (layer ``quasi_static``); every event over the
transient limit is a transient violation (layer ``transient``).  Kind ``violation``, severity error, values in
the declared force unit.  A contact without a usable force channel gives an error-level ``not_assessable``.
"""

from __future__ import annotations

from bracer.audit.checks._common import Unavailable, not_assessable
from bracer.audit.checks._contact import contact_force, contact_violations
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Severity, register

CHECK = register(
    Check(
        "A111",
        "contact-force",
        "Contact force above the quasi-static or transient limit",
        Severity.ERROR,
        needs=("force",),
    )
)


def run(ctx: AuditContext) -> list[Finding]:
    """Force violations of every contact."""
    out: list[Finding] = []
    for name in ctx.resolution.protocol.contacts:
        cf = contact_force(ctx, name)
        if isinstance(cf, Unavailable):
            out.append(
                not_assessable(
                    CHECK,
                    cf,
                    subject=name,
                    subject_kind="contact",
                    quantity="force",
                    what=f"force limits of contact '{name}'",
                )
            )
            continue
        out.extend(contact_violations(CHECK, ctx, name, "force", cf))
    return out
