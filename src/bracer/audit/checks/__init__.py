"""The audit's limit, near-miss, stop and protection checks, one module per check.

Each module registers its :class:`bracer.findings.Check` (``CHECK``) and exposes
``run(ctx: AuditContext) -> list[Finding]``.  Codes are stable; a retired code is never reused.

=====  ========================  =======================================================================
code   name                      module
=====  ========================  =======================================================================
A101   range-of-motion           :mod:`~bracer.audit.checks.range`
A102   joint-speed               :mod:`~bracer.audit.checks.speed`
A103   joint-torque              :mod:`~bracer.audit.checks.torque`
A104   joint-acceleration        :mod:`~bracer.audit.checks.acceleration`
A111   contact-force             :mod:`~bracer.audit.checks.force`
A112   contact-pressure          :mod:`~bracer.audit.checks.pressure`
A113   sustained-force           :mod:`~bracer.audit.checks.sustained`
A121   near-miss                 :mod:`~bracer.audit.checks.near_miss`
A122   predicted-stop-position   :mod:`~bracer.audit.checks.predicted_stop`
A201   stop-latency              :mod:`~bracer.audit.checks.stop_latency`
A202   torque-off                :mod:`~bracer.audit.checks.torque_off`
A203   stop-distance             :mod:`~bracer.audit.checks.stop_distance`
A204   stop-category             :mod:`~bracer.audit.checks.stop_category`
A301   locked-joint              :mod:`~bracer.audit.checks.locked`
A302   protection-state          :mod:`~bracer.audit.checks.protections`
=====  ========================  =======================================================================

Shared machinery lives in the underscore modules: ``_common`` (per-audit cache, units, finding builders),
``_joint`` (joint channels, derived speed, device motion), ``_limits`` (joint limit specs and events),
``_contact`` (contact force and the transient rule), ``_stopping`` (triggers and stop episodes).
"""

from __future__ import annotations

from bracer.audit.checks import (
    acceleration,
    force,
    locked,
    near_miss,
    predicted_stop,
    pressure,
    protections,
    stop_category,
    stop_distance,
    stop_latency,
    sustained,
    torque,
    torque_off,
)
from bracer.audit.checks import range as range_  # the module is named for the check; avoid shadowing range()
from bracer.audit.checks import speed as speed_

#: Every audit check module, in the order the audit runs and reports them.
ALL = (
    range_,
    speed_,
    torque,
    acceleration,
    force,
    pressure,
    sustained,
    near_miss,
    predicted_stop,
    stop_latency,
    torque_off,
    stop_distance,
    stop_category,
    locked,
    protections,
)

__all__ = ["ALL"]
