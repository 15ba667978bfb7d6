"""The pre-trial review: the checks R101–R107 on one participant's effective limits.

>>> from bracer.protocol.load import load_protocol
>>> result = review(load_protocol("protocols/alder4-upper-limb.yaml"), "AV-P01")  # doctest: +SKIP

The review is verification evidence for a study team, not a certification of the device; decisions rest with
the responsible clinician, the ethics committee and local regulations.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from pathlib import Path

from bracer.findings import Finding, Severity
from bracer.protocol.load import LoadedProtocol
from bracer.protocol.resolve import Resolution, resolve
from bracer.review.checks import (
    cautions,
    completeness,
    contact_reference,
    layer_order,
    logging_rate,
    room_to_stop,
    torque_force,
)
from bracer.review.checks._base import CheckResult
from bracer.review.checks.cautions import CautionsResult
from bracer.review.checks.completeness import CompletenessResult
from bracer.review.checks.contact_reference import ContactReferenceResult
from bracer.review.checks.layer_order import LayerOrderResult
from bracer.review.checks.logging_rate import LoggingResult
from bracer.review.checks.room_to_stop import RoomToStopResult
from bracer.review.checks.torque_force import TorqueForceResult

__all__ = ["STATEMENT", "InputRecord", "ReviewResult", "review", "run_checks"]

#: What every rendering of a review says about itself.
STATEMENT = (
    "This review is verification evidence for the study team, not a certification of the device or the "
    "protocol. "
    "Reference values are from healthy adults and are not clinical limits. Decisions rest with the "
    "responsible "
    "clinician, the ethics committee and local regulations."
)


@dataclass(frozen=True, slots=True)
class InputRecord:
    """A file the review read, for provenance: its role, path and SHA-256."""

    role: str  # "protocol" or "reference table"
    path: str
    sha256: str


@dataclass(frozen=True, slots=True)
class ReviewResult:
    """Everything the review found for one participant (``participant`` None: the nominal protocol)."""

    resolution: Resolution
    completeness: CompletenessResult
    layer_order: LayerOrderResult
    room_to_stop: RoomToStopResult
    contact_reference: ContactReferenceResult
    torque_force: TorqueForceResult
    cautions: CautionsResult
    logging: LoggingResult
    inputs: tuple[InputRecord, ...] = ()

    @property
    def participant(self) -> str | None:
        return self.resolution.participant_code

    @property
    def checks(self) -> tuple[CheckResult, ...]:
        """The check results in the order the review runs them (R101 … R107)."""
        return (
            self.completeness,
            self.layer_order,
            self.room_to_stop,
            self.contact_reference,
            self.torque_force,
            self.cautions,
            self.logging,
        )

    @property
    def findings(self) -> tuple[Finding, ...]:
        return tuple(f for result in self.checks for f in result.findings)

    def count(self, severity: Severity) -> int:
        return sum(f.severity == severity for f in self.findings)

    def at_or_above(self, severity: Severity) -> tuple[Finding, ...]:
        return tuple(f for f in self.findings if f.severity >= severity)


def run_checks(resolution: Resolution, inputs: tuple[InputRecord, ...] = ()) -> ReviewResult:
    """Run R101–R107 on an already resolved protocol (for callers that build protocols in code)."""
    return ReviewResult(
        resolution,
        completeness.run(resolution),
        layer_order.run(resolution),
        room_to_stop.run(resolution),
        contact_reference.run(resolution),
        torque_force.run(resolution),
        cautions.run(resolution),
        logging_rate.run(resolution),
        inputs=inputs,
    )


def review(loaded: LoadedProtocol, participant_code: str | None = None) -> ReviewResult:
    """Review a loaded protocol for one participant, or the nominal protocol (``participant_code`` None).

    Raises
    ------
    KeyError
        ``participant_code`` is not in the protocol (the CLI checks it first and suggests a close code).
    """
    from bracer.reference import sha256, table_paths

    resolution = resolve(loaded.protocol, participant_code)
    tables = [InputRecord("reference table", str(path), sha256(path)) for path in table_paths().values()]
    inputs = (InputRecord("protocol", str(loaded.path), _sha256(loaded.path)), *tables)
    return run_checks(resolution, inputs)


def _sha256(path: Path) -> str:
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()
