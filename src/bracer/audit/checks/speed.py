"""A102 joint-speed: joint speed above a speed limit.

Speed is the joint's velocity channel, or, when the log has none, the Savitzky–Golay derivative of position
(:mod:`bracer.audit.derive`; window ``audit.derivative_window``, centred, no phase delay -- every finding on a
derived speed states its window).  Each direction is compared with each declared layer; each run of samples
above a limit is one ``violation`` (quantity ``speed``; peak as a magnitude in the limit's declared unit).
Severity: warning for the planned layer, error otherwise.  No usable velocity or position channel: an
error-level ``not_assessable`` finding.
"""

from __future__ import annotations

from bracer.audit.checks._limits import joint_limit_findings
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Severity, register

CHECK = register(
    Check(
        "A102",
        "joint-speed",
        "Joint speed above a speed limit",
        Severity.ERROR,
        needs=("velocity or position",),
    )
)


def run(ctx: AuditContext) -> list[Finding]:
    """Speed violations of every joint."""
    return joint_limit_findings(CHECK, ctx, "speed")
