"""R101 completeness: every declared limit layer, every channel that measures a limit, and the stop function.

What is required
----------------
* Each joint has a range, speed, torque (and acceleration) limit in every layer that ``device.layers``
  declares for that quantity.  A limit in a layer the protocol does not declare is reviewed anyway and noted
  (info).
* Each limit has a channel that measures it: joint position for range; a velocity channel, or speed derived
  from position, for speed; a torque channel for torque; acceleration derived from velocity or position.
* Each contact has a force limit (the protocol format requires one) and a force channel; pressure is derived
  from force ÷ contact area, so it needs the force channel too.  A contact without a pressure or
  sustained-force limit is noted (info).
* A stop function exists, and trigger channels let the audit time each stop: no trigger at all is an error,
  no emergency-stop trigger a warning.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Literal

from bracer.findings import Check, Finding, Severity, register
from bracer.protocol.model import LAYERS, ChannelRef, Contact, Joint, Protocol
from bracer.protocol.resolve import Resolution
from bracer.review.checks._base import CheckResult, SubjectKind, review_finding

__all__ = ["CHECK", "CompletenessResult", "Requirement", "run"]

CHECK = register(
    Check(
        code="R101",
        name="completeness",
        summary="Every declared limit layer, force limit, measuring channel and the stop function is there.",
        severity=Severity.ERROR,
        needs=("device.layers", "joints", "contacts", "stop", "logging"),
    )
)

Status = Literal["present", "missing", "derived", "undeclared layer", "not declared"]

_JOINT_QUANTITIES = ("range", "speed", "torque", "acceleration")


@dataclass(frozen=True, slots=True)
class Requirement:
    """One thing a complete protocol has, and whether this one has it.

    ``item`` names it (``range.device``, ``channel.torque``, ``stop function``, ``trigger.emergency_stop``);
    ``detail`` says what was found (the column and unit of a channel, or what is missing).
    """

    subject_kind: SubjectKind
    subject: str | None
    item: str
    status: Status
    detail: str


@dataclass(frozen=True, slots=True)
class CompletenessResult(CheckResult):
    requirements: tuple[Requirement, ...] = ()

    def tables(self) -> dict[str, tuple[Any, ...]]:
        return {"requirements": self.requirements}


class _Collector:
    def __init__(self) -> None:
        self.rows: list[Requirement] = []
        self.findings: list[Finding] = []

    def row(self, kind: SubjectKind, subject: str | None, item: str, status: Status, detail: str) -> None:
        self.rows.append(Requirement(kind, subject, item, status, detail))

    def finding(
        self, severity: Severity, message: str, kind: SubjectKind, subject: str | None, **fields: Any
    ) -> None:
        self.findings.append(
            review_finding(CHECK, severity, message, subject=subject, subject_kind=kind, **fields)
        )


def run(resolution: Resolution) -> CompletenessResult:
    """Check the effective protocol of ``resolution`` for missing limits, channels and stop elements."""
    p = resolution.protocol
    out = _Collector()
    for name, joint in p.joints.items():
        _joint_layers(out, p, name, joint)
        _joint_channels(out, name, joint)
    for name, contact in p.contacts.items():
        _contact(out, name, contact)
    _stop(out, p)
    return CompletenessResult(CHECK, tuple(out.findings), tuple(out.rows))


def _joint_layers(out: _Collector, p: Protocol, name: str, joint: Joint) -> None:
    for quantity in _JOINT_QUANTITIES:
        declared = getattr(p.device.layers, quantity)
        layers = getattr(joint, quantity)
        for layer in LAYERS:
            value = layers.layer(layer)
            item = f"{quantity}.{layer}"
            if layer in declared and value is None:
                out.row(
                    "joint", name, item, "missing", f"device.layers.{quantity} declares the {layer} layer"
                )
                out.finding(
                    Severity.ERROR,
                    f"joint '{name}' has no {layer} {quantity} limit, which the protocol declares "
                    f"(device.layers.{quantity}: {', '.join(declared)})",
                    "joint",
                    name,
                    quantity=quantity,
                    layer=layer,
                )
            elif value is not None and layer not in declared:
                out.row("joint", name, item, "undeclared layer", str(value))
                out.finding(
                    Severity.INFO,
                    f"joint '{name}' gives a {layer} {quantity} limit ({value}) although "
                    f"device.layers.{quantity} "
                    f"does not list the {layer} layer; it is reviewed all the same",
                    "joint",
                    name,
                    quantity=quantity,
                    layer=layer,
                )
            elif value is not None:
                out.row("joint", name, item, "present", str(value))


def _has_limit(joint: Joint, quantity: str) -> bool:
    layers = getattr(joint, quantity)
    return any(layers.layer(layer) is not None for layer in LAYERS)


def _channel_text(ref: ChannelRef) -> str:
    return f"column '{ref.column}' [{ref.unit}] in stream '{ref.stream}'"


def _joint_channels(out: _Collector, name: str, joint: Joint) -> None:
    ch = joint.channels
    needs_position = _has_limit(joint, "range")
    if ch.position is not None:
        out.row("joint", name, "channel.position", "present", _channel_text(ch.position))
    elif needs_position:
        out.row("joint", name, "channel.position", "missing", "range limits need a position channel")
        out.finding(
            Severity.ERROR,
            f"joint '{name}' has range limits but no position channel measures them",
            "joint",
            name,
            quantity="position",
        )

    if _has_limit(joint, "speed"):
        if ch.velocity is not None:
            out.row("joint", name, "channel.velocity", "present", _channel_text(ch.velocity))
        elif ch.position is not None:
            out.row(
                "joint",
                name,
                "channel.velocity",
                "derived",
                f"speed derived from position ({_channel_text(ch.position)})",
            )
        else:
            out.row(
                "joint",
                name,
                "channel.velocity",
                "missing",
                "no velocity channel and no position to derive it",
            )
            out.finding(
                Severity.ERROR,
                f"joint '{name}' has speed limits but neither a velocity channel nor a position channel "
                "to derive speed from",
                "joint",
                name,
                quantity="speed",
            )

    if _has_limit(joint, "torque"):
        if ch.torque is not None:
            out.row("joint", name, "channel.torque", "present", _channel_text(ch.torque))
        else:
            out.row("joint", name, "channel.torque", "missing", "torque limits need a torque channel")
            out.finding(
                Severity.ERROR,
                f"joint '{name}' has torque limits but no torque channel measures them",
                "joint",
                name,
                quantity="torque",
            )

    if _has_limit(joint, "acceleration"):
        source = ch.velocity or ch.position
        if source is not None:
            out.row(
                "joint",
                name,
                "channel.acceleration",
                "derived",
                f"acceleration derived from {'velocity' if ch.velocity else 'position'} "
                f"({_channel_text(source)})",
            )
        else:
            out.row("joint", name, "channel.acceleration", "missing", "no velocity or position to derive it")
            out.finding(
                Severity.ERROR,
                f"joint '{name}' has acceleration limits but no velocity or position channel to derive "
                "acceleration from",
                "joint",
                name,
                quantity="acceleration",
            )


def _contact(out: _Collector, name: str, contact: Contact) -> None:
    out.row("contact", name, "force.quasi_static", "present", str(contact.force.quasi_static))
    if contact.force.transient is not None:
        out.row("contact", name, "force.transient", "present", str(contact.force.transient))
    else:
        out.row("contact", name, "force.transient", "not declared", "no separate transient force limit")
    for group in ("pressure", "sustained"):
        limits = getattr(contact, group)
        if limits is None:
            out.row("contact", name, group, "not declared", f"no {group} limit")
            out.finding(
                Severity.INFO,
                f"contact '{name}' declares no {group} limit; it is not reviewed or audited",
                "contact",
                name,
                quantity=group,
            )
        else:
            first = limits.quasi_static if group == "pressure" else limits.level
            out.row("contact", name, group, "present", str(first))

    force = contact.channels.force
    if force is not None:
        cols = ", ".join(f"'{c}'" for c in force.all_columns)
        how = f" ({force.use}{' ' + force.axis if force.axis else ''})" if force.columns else ""
        out.row(
            "contact",
            name,
            "channel.force",
            "present",
            f"column(s) {cols}{how} [{force.unit}] in stream '{force.stream}'",
        )
        out.row("contact", name, "channel.pressure", "derived", f"force ÷ contact area ({contact.area})")
    else:
        out.row("contact", name, "channel.force", "missing", "the force limit needs a force channel")
        out.row("contact", name, "channel.pressure", "missing", "pressure is derived from the force channel")
        out.finding(
            Severity.ERROR,
            f"contact '{name}' has no force channel: its force, pressure (force ÷ area) and sustained-force "
            "limits cannot be measured",
            "contact",
            name,
            quantity="force",
        )


def _stop(out: _Collector, p: Protocol) -> None:
    if p.stop is None:
        out.row("protocol", None, "stop function", "missing", "no 'stop' section")
        out.finding(
            Severity.ERROR,
            "no stop function declared: stop category, latency budget, reaction time and "
            "standstill are all unknown",
            "protocol",
            None,
            quantity="stop",
        )
    else:
        s = p.stop
        out.row(
            "protocol",
            None,
            "stop function",
            "present",
            f"category {s.category}, budget {s.latency_budget}, reaction {s.reaction_time}",
        )
    triggers = p.logging.triggers
    for kind in ("emergency_stop", "protective_stop", "safety_state"):
        trig = triggers.get(kind)  # type: ignore[call-overload]
        if trig is not None:
            out.row(
                "protocol",
                None,
                f"trigger.{kind}",
                "present",
                f"column '{trig.column}' in stream '{trig.stream}'",
            )
        else:
            out.row("protocol", None, f"trigger.{kind}", "not declared", "no trigger channel")
    if not triggers:
        out.finding(
            Severity.ERROR,
            "no stop trigger channel (emergency stop, protective stop or safety state) is "
            "logged: no stop can be found or timed in a session log",
            "protocol",
            None,
            quantity="trigger",
        )
    elif "emergency_stop" not in triggers:
        out.finding(
            Severity.WARNING,
            "no emergency-stop trigger channel is logged: emergency stops cannot be timed "
            "against the latency budget",
            "protocol",
            None,
            quantity="trigger",
        )
