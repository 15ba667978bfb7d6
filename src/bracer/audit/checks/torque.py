"""A103 joint-torque: joint torque above a torque limit.

The torque channel of each joint, per direction (sign of the torque) against each declared layer; each run of
samples above a limit is one ``violation`` (quantity ``torque``, peak as a magnitude in the declared unit).
Severity: warning for the planned layer, error otherwise.  No usable torque channel for a joint with torque
limits: an error-level ``not_assessable`` finding.
"""

from __future__ import annotations

from bracer.audit.checks._limits import joint_limit_findings
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Severity, register

CHECK = register(
    Check("A103", "joint-torque", "Joint torque above a torque limit", Severity.ERROR, needs=("torque",))
)


def run(ctx: AuditContext) -> list[Finding]:
    """Torque violations of every joint."""
    return joint_limit_findings(CHECK, ctx, "torque")
