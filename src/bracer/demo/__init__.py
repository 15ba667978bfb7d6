"""The demo study behind ``bracer demo``: an invented upper-limb study, simulated, reviewed, audited and
reported in one run (:func:`run_demo`), with the ground truth of every scripted incident beside each log.

The study (participants, sessions, incidents) is in :mod:`bracer.demo.study`; its protocol is the data file
``protocols/alder4-demo-study.yaml``.  This package imports numpy and the report writers only inside
:func:`run_demo`.
"""

from bracer.demo.run import MANIFEST, Counts, DemoResult, ReviewOutcome, SessionOutcome, Step, run_demo
from bracer.demo.study import PROTOCOL_FILE, STUDY, DemoParticipant, DemoSession

__all__ = [
    "MANIFEST",
    "PROTOCOL_FILE",
    "STUDY",
    "Counts",
    "DemoParticipant",
    "DemoResult",
    "DemoSession",
    "ReviewOutcome",
    "SessionOutcome",
    "Step",
    "run_demo",
]
