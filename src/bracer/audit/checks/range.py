"""A101 range-of-motion: joint position beyond a range limit.

For every joint and direction, the position is compared with each declared range layer (planned, device,
mechanical) and, when the audit names a participant, with the participant's range of motion
(:func:`bracer.protocol.resolve.participant_range`: measured where recorded, else the normative reference,
which is reported at warning level).  Each run of samples beyond a limit is one finding (kind ``violation``,
quantity ``position``, layer ``planned`` / ``device`` / ``mechanical`` / ``participant``), with hysteresis and
a minimum duration from ``protocol.audit``.  Severity: warning for the planned layer, error otherwise.  A
joint with range limits and no usable position channel gives an error-level ``not_assessable`` finding.
"""

from __future__ import annotations

from bracer.audit.checks._limits import joint_limit_findings
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Severity, register

CHECK = register(
    Check(
        "A101",
        "range-of-motion",
        "Joint position beyond a range limit or the participant's range",
        Severity.ERROR,
        needs=("position",),
    )
)


def run(ctx: AuditContext) -> list[Finding]:
    """Range violations of every joint."""
    return joint_limit_findings(CHECK, ctx, "position")
