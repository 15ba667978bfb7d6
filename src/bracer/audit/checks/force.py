"""A111 contact-force: contact force above the quasi-static or transient limit.

Force per contact is the vector magnitude of its force columns, or the absolute value of its declared axis or
single column (:mod:`bracer.audit.checks._contact`).  The protocol's transient rule applies: an event over the
quasi-static limit lasting at most ``force.transient_max_duration`` is a transient contact, judged against the
transient limit; a longer one is a quasi-static violation (layer ``quasi_static``); every event over the
transient limit is a transient violation (layer ``transient``).  Kind ``violation``, severity error, values in
the declared force unit.  A contact without a usable force channel gives an error-level ``not_assessable``.
"""

from __future__ import annotations

from bracer.audit.checks._contact import contact_limit_findings
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
    return contact_limit_findings(CHECK, ctx, "force")
