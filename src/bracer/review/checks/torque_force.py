"""R105 torque against contact force: how hard can each joint press into each contact?

For every lever arm a contact declares, the force a joint's torque limit can press into the contact is
``F = τ / r`` (torque limit ÷ lever arm), for the planned and the device torque limit (the larger of the two
directions).  Where that force exceeds the contact's quasi-static force limit, the actuator alone can exceed
the force limit: keeping to it depends on force sensing alone, and the review says so (a warning).

Only single joints are modelled: several joints pressing together, gravity and inertia are not.  A lever arm
declared ``not modelled`` is listed as such (info); a contact with no lever arm at all is a warning, since
nothing about it is assessed.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Literal

from bracer.findings import Check, Finding, Severity, register
from bracer.protocol.model import Contact, Protocol
from bracer.protocol.resolve import Resolution
from bracer.review.checks._base import CheckResult, fmt, in_unit, review_finding
from bracer.units import Quantity

__all__ = ["CHECK", "PressingForce", "TorqueForceResult", "run"]

CHECK = register(
    Check(
        code="R105",
        name="torque-contact-force",
        summary="The force each joint's torque limit can press into each contact, against its force limit.",
        severity=Severity.WARNING,
        needs=("joints.torque", "contacts.lever_arms", "contacts.force"),
    )
)

_LAYERS = ("planned", "device")
Status = Literal["within the force limit", "can exceed the force limit", "not modelled", "no torque limit"]


@dataclass(frozen=True, slots=True)
class PressingForce:
    """One joint's torque limit turned into a force at one contact.

    ``torque`` in ``torque_unit``, ``lever_arm`` in ``length_unit``, ``force`` and ``force_limit`` (the
    contact's quasi-static force limit) in ``force_unit``; ``ratio`` is force / force_limit.  Figures are None
    for a lever arm that is not modelled.
    """

    contact: str
    joint: str
    layer: str | None
    direction: str | None
    torque: float | None
    torque_unit: str | None
    lever_arm: float | None
    length_unit: str | None
    force: float | None
    force_limit: float
    force_unit: str
    ratio: float | None
    status: Status


@dataclass(frozen=True, slots=True)
class TorqueForceResult(CheckResult):
    pressing: tuple[PressingForce, ...] = ()

    def tables(self) -> dict[str, tuple[Any, ...]]:
        return {"pressing": self.pressing}


def run(resolution: Resolution) -> TorqueForceResult:
    """Torque ÷ lever arm for every joint that can load every contact of the effective protocol."""
    findings: list[Finding] = []
    rows: list[PressingForce] = []
    p = resolution.protocol
    for name, contact in p.contacts.items():
        rows += _contact(findings, p, name, contact)
    return TorqueForceResult(CHECK, tuple(findings), tuple(rows))


def _largest(limits: Any) -> tuple[Quantity, str]:
    pos, neg = limits.positive, limits.negative
    if pos.si == neg.si:
        return pos, "both"
    return (pos, "positive") if pos.si > neg.si else (neg, "negative")


def _contact(findings: list[Finding], p: Protocol, name: str, contact: Contact) -> list[PressingForce]:
    def add(severity: Severity, message: str, **fields: Any) -> None:
        findings.append(
            review_finding(CHECK, severity, message, subject=name, subject_kind="contact", **fields)
        )

    limit = contact.force.quasi_static
    f_unit = limit.unit
    f_limit = in_unit(limit.si, f_unit)
    if not contact.lever_arms:
        add(
            Severity.WARNING,
            f"contact '{name}': no lever arm is declared, so the force the joints can press into "
            "it is not assessed",
            quantity="force",
        )
        return []
    rows = []
    for jname, declared in contact.lever_arms.items():
        arm: object = declared  # a length, or the words 'not modelled'
        if not isinstance(arm, Quantity):
            rows.append(
                PressingForce(
                    name,
                    jname,
                    None,
                    None,
                    None,
                    None,
                    None,
                    None,
                    None,
                    f_limit,
                    f_unit,
                    None,
                    "not modelled",
                )
            )
            add(
                Severity.INFO,
                f"contact '{name}': the lever arm of joint '{jname}' is not modelled, so the force "
                "that joint can press into the contact is not assessed",
                quantity="force",
                extra=(("joint", jname),),
            )
            continue
        joint = p.joints[jname]
        layers = [
            (layer, joint.torque.layer(layer)) for layer in _LAYERS if joint.torque.layer(layer) is not None
        ]
        if not layers:
            rows.append(
                PressingForce(
                    name,
                    jname,
                    None,
                    None,
                    None,
                    None,
                    in_unit(arm.si, arm.unit),
                    arm.unit,
                    None,
                    f_limit,
                    f_unit,
                    None,
                    "no torque limit",
                )
            )
            add(
                Severity.WARNING,
                f"contact '{name}': joint '{jname}' has no planned or device torque limit, so the "
                "force it can press into the contact is unbounded by the review",
                quantity="force",
                extra=(("joint", jname),),
            )
            continue
        for layer, limits in layers:
            torque, direction = _largest(limits)
            force_si = torque.si / arm.si
            ratio = force_si / limit.si
            exceeds = force_si > limit.si
            row = PressingForce(
                name,
                jname,
                layer,
                direction,
                in_unit(torque.si, torque.unit),
                torque.unit,
                in_unit(arm.si, arm.unit),
                arm.unit,
                in_unit(force_si, f_unit),
                f_limit,
                f_unit,
                ratio,
                "can exceed the force limit" if exceeds else "within the force limit",
            )
            rows.append(row)
            if exceeds:
                add(
                    Severity.WARNING,
                    f"contact '{name}': the {layer} torque limit of joint '{jname}' "
                    f"({fmt(row.torque, torque.unit)}) "
                    f"over its lever arm ({fmt(row.lever_arm, arm.unit)}) can press {fmt(row.force, f_unit)} "
                    "into "
                    f"the contact, {ratio:.2f}× its quasi-static force limit ({fmt(f_limit, f_unit)}): the "
                    "force "
                    "limit depends on force sensing alone",
                    quantity="force",
                    layer=layer,
                    direction=None if direction == "both" else direction,
                    value=row.force,
                    limit=f_limit,
                    margin=f_limit - (row.force or 0.0),
                    unit=f_unit,
                    extra=(("joint", jname), ("ratio", ratio)),
                )
    return rows
