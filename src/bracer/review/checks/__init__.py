"""The pre-trial review checks, one module per check; each registers its :class:`bracer.findings.Check` and
exposes ``run(resolution)`` returning a typed result (findings plus the rows a reviewer reads).

=====  ====================  ==================================================================
code   name                  module
=====  ====================  ==================================================================
R101   completeness          :mod:`~bracer.review.checks.completeness`
R102   layer-order           :mod:`~bracer.review.checks.layer_order`
R103   room-to-stop          :mod:`~bracer.review.checks.room_to_stop`
R104   contact-reference     :mod:`~bracer.review.checks.contact_reference`
R105   torque-contact-force  :mod:`~bracer.review.checks.torque_force`
R106   cautions              :mod:`~bracer.review.checks.cautions`
R107   logging-rate          :mod:`~bracer.review.checks.logging_rate`
=====  ====================  ==================================================================
"""

from __future__ import annotations

from bracer.review.checks import (
    cautions,
    completeness,
    contact_reference,
    layer_order,
    logging_rate,
    room_to_stop,
    torque_force,
)

#: In the order the review runs and reports them.
MODULES = (completeness, layer_order, room_to_stop, contact_reference, torque_force, cautions, logging_rate)

__all__ = ["MODULES"]
