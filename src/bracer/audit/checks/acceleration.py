"""A104 joint-acceleration: joint acceleration above an acceleration limit (only where one is declared).

Acceleration is the Savitzky–Golay derivative of the velocity channel, or the second derivative of position
when no velocity is logged (:mod:`bracer.audit.derive`; the window and its delay are stated in each finding).
Each run of samples above a limit is one ``violation`` (quantity ``acceleration``).  Severity: warning for the
planned layer, error otherwise.  No usable channel: an error-level ``not_assessable`` finding.
"""

from __future__ import annotations

from bracer.audit.checks._limits import joint_limit_findings
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Severity, register

CHECK = register(
    Check(
        "A104",
        "joint-acceleration",
        "Joint acceleration above a declared acceleration limit",
        Severity.ERROR,
        needs=("velocity or position",),
    )
)


def run(ctx: AuditContext) -> list[Finding]:
    """Acceleration violations of every joint that declares an acceleration limit."""
    return joint_limit_findings(CHECK, ctx, "acceleration")
