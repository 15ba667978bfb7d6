"""A112 contact-pressure: contact pressure (force ÷ contact area) above the quasi-static or transient limit.

Same force and the same transient rule as A111 (``force.transient_max_duration``), compared with
``pressure limit × contacts.<name>.area``; peaks and limits are reported in the declared pressure unit
(e.g. ``N/cm^2``).  Kind ``violation``, severity error; only for contacts that declare pressure limits.  A
contact with pressure limits and no usable force channel gives an error-level ``not_assessable``.
"""

from __future__ import annotations

from bracer.audit.checks._contact import contact_limit_findings
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
    return contact_limit_findings(CHECK, ctx, "pressure")
