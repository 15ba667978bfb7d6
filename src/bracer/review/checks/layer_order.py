"""R102 layer order: planned inside device inside mechanical, and planned inside the participant's range.

For every joint and direction (the positive end of the range is its ``max``, the negative end its ``min``;
speed, torque and acceleration limits are magnitudes) each declared layer must lie inside the next declared
layer outward.  Margins are signed so that a positive margin means "inside", and are given in the unit of the
innermost declared limit.

The participant's range of motion is the measured one where recorded, else the normative (AAOS) reference --
a warning, because a population value may not fit this participant.  Where the mechanical end stop lies beyond
the participant's range, the direction has **one layer of protection only**: the planned and device limits are
both enforced by the controller, so with the mechanical stop outside the participant's range only the
controller keeps the joint inside it.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import Any, Literal

from bracer.findings import Check, Finding, Severity, register
from bracer.protocol.model import LAYERS, Joint
from bracer.protocol.resolve import ParticipantRange, Resolution, participant_range
from bracer.review.checks._base import (
    DIRECTIONS,
    CheckResult,
    Direction,
    difference,
    end_label,
    fmt,
    review_finding,
    value_in,
)
from bracer.units import Quantity

__all__ = ["CHECK", "LayerMargin", "LayerOrderResult", "Protection", "run"]

CHECK = register(
    Check(
        code="R102",
        name="layer-order",
        summary="Planned inside device inside mechanical limits, and planned inside the participant's range.",
        severity=Severity.ERROR,
        needs=("joints.range", "joints.speed", "joints.torque", "participants.rom"),
    )
)

Layers = Literal["controller and mechanical stop", "controller only", "not assessable"]


@dataclass(frozen=True, slots=True)
class LayerMargin:
    """One limit against the next one outward (``outer`` is a layer name or ``participant``).

    ``inner_value`` and ``outer_value`` are signed values for range (the joint's sign convention) and
    magnitudes otherwise; ``margin`` is how far ``inner`` lies inside ``outer`` (negative: beyond it), all in
    ``unit``.
    """

    joint: str
    quantity: str
    direction: Direction
    inner: str
    outer: str
    inner_value: float
    outer_value: float
    margin: float
    unit: str
    inside: bool


@dataclass(frozen=True, slots=True)
class Protection:
    """How many layers keep one direction of a joint inside the participant's range.

    ``mechanical_beyond`` is how far the mechanical end stop lies beyond the participant's range (positive:
    beyond it, so only the controller protects that direction).
    """

    joint: str
    direction: Direction
    participant: float | None
    source: str | None
    planned: float | None
    device: float | None
    mechanical: float | None
    unit: str
    mechanical_beyond: float | None
    layers: Layers
    note: str


@dataclass(frozen=True, slots=True)
class LayerOrderResult(CheckResult):
    margins: tuple[LayerMargin, ...] = ()
    protection: tuple[Protection, ...] = ()

    def tables(self) -> dict[str, tuple[Any, ...]]:
        return {"margins": self.margins, "protection": self.protection}


def run(resolution: Resolution) -> LayerOrderResult:
    """Compare every joint's layers with each other and with the participant's range of motion."""
    p = resolution.protocol
    findings: list[Finding] = []
    margins: list[LayerMargin] = []
    protection: list[Protection] = []
    for name, joint in p.joints.items():
        rom = participant_range(p, name, resolution.participant)
        for direction in DIRECTIONS:
            margins += _layers(findings, name, joint, direction)
            prot, rows = _participant(findings, name, joint, direction, rom, resolution.participant_code)
            margins += rows
            if prot is not None:
                protection.append(prot)
        _normative(findings, name, rom, resolution.participant_code)
    return LayerOrderResult(CHECK, tuple(findings), tuple(margins), tuple(protection))


def _outward(quantity: str, direction: Direction) -> float:
    """+1 where a larger value lies further out, -1 for the negative end of a range."""
    return -1.0 if quantity == "range" and direction == "negative" else 1.0


def _declared(joint: Joint, quantity: str, direction: Direction) -> list[tuple[str, Quantity]]:
    layers = getattr(joint, quantity)
    out: list[tuple[str, Quantity]] = []
    for layer in LAYERS:
        value = layers.layer(layer)
        if value is not None:
            out.append((layer, value.get(direction)))
    return out


def _layers(findings: list[Finding], name: str, joint: Joint, direction: Direction) -> list[LayerMargin]:
    rows = []
    for quantity in ("range", "speed", "torque", "acceleration"):
        values = _declared(joint, quantity, direction)
        if len(values) < 2:
            continue
        unit = values[0][1].unit
        sign = _outward(quantity, direction)
        for (inner_layer, inner), (outer_layer, outer) in itertools.pairwise(values):
            margin = sign * difference(outer, inner, unit)
            row = LayerMargin(
                name,
                quantity,
                direction,
                inner_layer,
                outer_layer,
                value_in(inner, unit),
                value_in(outer, unit),
                margin,
                unit,
                margin >= 0,
            )
            rows.append(row)
            if margin < 0:
                findings.append(
                    review_finding(
                        CHECK,
                        Severity.ERROR,
                        f"joint '{name}' {end_label(joint, direction)}: the {inner_layer} {quantity} limit "
                        f"({fmt(row.inner_value, unit)}) lies {fmt(-margin, unit)} beyond the {outer_layer} "
                        "limit "
                        f"({fmt(row.outer_value, unit)})",
                        subject=name,
                        subject_kind="joint",
                        quantity=quantity,
                        direction=direction,
                        layer=inner_layer,
                        value=row.inner_value,
                        limit=row.outer_value,
                        margin=margin,
                        unit=unit,
                    )
                )
    return rows


def _participant(
    findings: list[Finding],
    name: str,
    joint: Joint,
    direction: Direction,
    rom: ParticipantRange,
    code: str | None,
) -> tuple[Protection | None, list[LayerMargin]]:
    values = _declared(joint, "range", direction)
    if not values:
        return None, []
    by_layer = dict(values)
    inner_layer, inner = values[0]
    unit = inner.unit
    sign = _outward("range", direction)
    limit, source = rom.get(direction)
    who = f"participant {code}" if code else "the nominal review (no participant)"

    def value(layer: str) -> float | None:
        q = by_layer.get(layer)
        return value_in(q, unit) if q is not None else None

    if limit is None:
        findings.append(
            review_finding(
                CHECK,
                Severity.WARNING,
                f"joint '{name}' {end_label(joint, direction)}: no measured or normative range of motion for "
                f"{who}; "
                "the planned limit and the layers of protection in this direction are not assessed",
                subject=name,
                subject_kind="joint",
                quantity="range",
                direction=direction,
                layer="participant",
            )
        )
        prot = Protection(
            name,
            direction,
            None,
            None,
            value("planned"),
            value("device"),
            value("mechanical"),
            unit,
            None,
            "not assessable",
            "no participant range in this direction",
        )
        return prot, []

    rom_value = value_in(limit, unit)
    margin = sign * difference(limit, inner, unit)
    row = LayerMargin(
        name,
        "range",
        direction,
        inner_layer,
        "participant",
        value_in(inner, unit),
        rom_value,
        margin,
        unit,
        margin >= 0,
    )
    if margin < 0:
        severity = Severity.ERROR if source == "measured" else Severity.WARNING
        findings.append(
            review_finding(
                CHECK,
                severity,
                f"joint '{name}' {end_label(joint, direction)}: the {inner_layer} range limit "
                f"({fmt(row.inner_value, unit)}) "
                f"lies {fmt(-margin, unit)} beyond the {source} range of motion of {who} "
                f"({fmt(rom_value, unit)})",
                subject=name,
                subject_kind="joint",
                quantity="range",
                direction=direction,
                layer=inner_layer,
                value=row.inner_value,
                limit=rom_value,
                margin=margin,
                unit=unit,
                extra=(("rom_source", source),),
            )
        )

    mechanical = by_layer.get("mechanical")
    if mechanical is None:
        layers: Layers = "controller only"
        beyond = None
        note = "no mechanical end stop declared"
        detail = "no mechanical end stop is declared"
    else:
        beyond = sign * difference(mechanical, limit, unit)
        layers = "controller only" if beyond > 0 else "controller and mechanical stop"
        note = (
            f"mechanical end stop {fmt(beyond, unit)} beyond the participant's range"
            if beyond > 0
            else "mechanical end stop at or inside the participant's range"
        )
        detail = (
            f"the mechanical end stop ({fmt(value('mechanical'), unit)}) lies {fmt(beyond, unit)} beyond the "
            f"{source} range of motion ({fmt(rom_value, unit)})"
        )
    if layers == "controller only":
        device = by_layer.get("device")
        also = ""
        if device is not None and sign * difference(device, limit, unit) > 0:
            also = "; the device limit lies beyond it too, so only the planned limit keeps the joint in it"
        findings.append(
            review_finding(
                CHECK,
                Severity.WARNING,
                f"joint '{name}' {end_label(joint, direction)}: one layer of protection only — {detail}; the "
                "planned and "
                "device limits are both enforced by the controller, so only the controller keeps the joint "
                "inside "
                f"the participant's range in this direction{also}",
                subject=name,
                subject_kind="joint",
                quantity="range",
                direction=direction,
                layer="mechanical",
                value=value("mechanical"),
                limit=rom_value,
                margin=-beyond if beyond is not None else None,
                unit=unit,
                extra=(("rom_source", source), ("protection", "one layer")),
            )
        )
    prot = Protection(
        name,
        direction,
        rom_value,
        source,
        value("planned"),
        value("device"),
        value("mechanical"),
        unit,
        beyond,
        layers,
        note,
    )
    return prot, [row]


def _normative(findings: list[Finding], name: str, rom: ParticipantRange, code: str | None) -> None:
    if "normative" not in (rom.min_source, rom.max_source):
        return
    who = (
        f"participant {code} has no measured range of motion for this joint"
        if code
        else "no participant is selected (nominal review)"
    )
    findings.append(
        review_finding(
            CHECK,
            Severity.WARNING,
            f"joint '{name}': {who}, so the normative reference range is used "
            f"({rom.note.removeprefix('normative reference: ')}); a population value, which the responsible "
            "clinician "
            "should confirm for the participant",
            subject=name,
            subject_kind="joint",
            quantity="range",
            layer="participant",
            extra=(("rom_source", "normative"),),
        )
    )
