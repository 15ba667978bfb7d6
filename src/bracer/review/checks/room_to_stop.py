"""R103 room to stop: can a joint at its planned speed stop before the next layer and the participant's end?

With the planned speed limit ``v`` of the direction of travel, the stop's reaction time ``t``
(``stop.reaction_time``) and the joint's ``stop_deceleration`` ``a``, the stopping distance is
``d = v·t + v²/(2a)`` and the stopping time ``t + v/a`` (:mod:`bracer.review.physics`).  The distance is
compared with the room between the planned range limit and

* the next layer outward (device, else mechanical): not enough room is a warning -- that layer would be
  exceeded during the stop;
* the participant's range of motion: not enough room is an error when the range was measured, a warning when
  it is the normative reference;

and the time with ``stop.latency_budget`` (an error when it is exceeded).  Each row also gives the largest
speed that would stop in time: ``a·(−t + √(t² + 2·room/a))`` for a room, ``a·(budget − t)`` for the budget.

Where a layer is missing the innermost declared one stands in (e.g. the device speed limit when no planned
speed limit is declared), and the row names it.  A joint without a stop deceleration, or a protocol without a
stop function, is not assessable: an error finding, never a silent pass.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from bracer.findings import Check, Finding, Severity, register
from bracer.protocol.model import LAYERS, Joint, StopFunction
from bracer.protocol.resolve import Resolution, participant_range
from bracer.review import physics
from bracer.review.checks._base import (
    DIRECTIONS,
    CheckResult,
    Direction,
    difference,
    end_label,
    fmt,
    in_unit,
    review_finding,
    value_in,
)
from bracer.units import Quantity

__all__ = ["CHECK", "RoomToStopResult", "StopRoom", "run"]

CHECK = register(
    Check(
        code="R103",
        name="room-to-stop",
        summary="Stopping distance and time at the planned speed against the room to the next layer, the "
        "participant's range and the latency budget.",
        severity=Severity.ERROR,
        needs=(
            "joints.speed",
            "joints.range",
            "joints.stop_deceleration",
            "stop.reaction_time",
            "stop.latency_budget",
        ),
    )
)


@dataclass(frozen=True, slots=True)
class StopRoom:
    """Stopping at one end of one joint's range, each figure in the unit named beside it.

    Speeds are in ``speed_unit``, distances and rooms in ``distance_unit``, times in ``time_unit``.  A room is
    None where the layer (or the participant's range) is not known; ``fits_*`` is None then too.
    """

    joint: str
    direction: Direction
    speed_layer: str
    speed: float
    speed_unit: str
    reaction_time: float
    deceleration: float
    deceleration_unit: str
    distance: float
    distance_unit: str
    range_layer: str | None
    outer_layer: str | None
    room_outer: float | None
    fits_outer: bool | None
    largest_speed_outer: float | None
    participant_source: str | None
    room_participant: float | None
    fits_participant: bool | None
    largest_speed_participant: float | None
    stop_time: float
    budget: float
    time_unit: str
    within_budget: bool
    largest_speed_budget: float


@dataclass(frozen=True, slots=True)
class RoomToStopResult(CheckResult):
    stops: tuple[StopRoom, ...] = ()

    def tables(self) -> dict[str, tuple[Any, ...]]:
        return {"stops": self.stops}


def run(resolution: Resolution) -> RoomToStopResult:
    """Stopping distance and time for every joint and direction of the effective protocol."""
    p = resolution.protocol
    findings: list[Finding] = []
    rows: list[StopRoom] = []
    if p.stop is None:
        findings.append(
            review_finding(
                CHECK,
                Severity.ERROR,
                "room to stop not assessable: the protocol declares no stop function "
                "(reaction time and latency budget unknown)",
                subject_kind="protocol",
                quantity="stop",
            )
        )
        return RoomToStopResult(CHECK, tuple(findings))
    for name, joint in p.joints.items():
        rows += _joint(findings, resolution, name, joint, p.stop)
    return RoomToStopResult(CHECK, tuple(findings), tuple(rows))


def _innermost(joint: Joint, quantity: str) -> tuple[str, Any] | None:
    layers = getattr(joint, quantity)
    for layer in LAYERS:
        value = layers.layer(layer)
        if value is not None:
            return layer, value
    return None


def _joint(
    findings: list[Finding], resolution: Resolution, name: str, joint: Joint, stop: StopFunction
) -> list[StopRoom]:
    def add(severity: Severity, message: str, **fields: Any) -> None:
        findings.append(
            review_finding(CHECK, severity, message, subject=name, subject_kind="joint", **fields)
        )

    speed = _innermost(joint, "speed")
    if speed is None:
        add(
            Severity.ERROR,
            f"joint '{name}': room to stop not assessable, the joint has no speed limit",
            quantity="speed",
        )
        return []
    if joint.stop_deceleration is None:
        add(
            Severity.ERROR,
            f"joint '{name}': room to stop not assessable, no stop_deceleration is declared "
            "(the deceleration the device applies to this joint during a stop)",
            quantity="stop_deceleration",
        )
        return []
    speed_layer, speed_limits = speed
    a = joint.stop_deceleration
    t = stop.reaction_time
    budget = stop.latency_budget
    rom = participant_range(resolution.protocol, name, resolution.participant)
    range_layers = [(layer, b) for layer in LAYERS if (b := joint.range.layer(layer)) is not None]
    if not range_layers:
        add(
            Severity.WARNING,
            f"joint '{name}': no range limit, so the room to stop is not assessed (stopping time is)",
            quantity="range",
        )

    rows = []
    for direction in DIRECTIONS:
        v: Quantity = speed_limits.get(direction)
        unit = (
            range_layers[0][1].get(direction).unit if range_layers else ("deg" if "deg" in v.unit else "rad")
        )
        d_si = physics.stopping_distance(v.si, t.si, a.si)
        sign = -1.0 if direction == "negative" else 1.0

        range_layer = outer_layer = None
        room_outer = largest_outer = None
        fits_outer: bool | None = None
        if range_layers:
            range_layer, inner_bounds = range_layers[0]
            inner = inner_bounds.get(direction)
            if len(range_layers) > 1:
                outer_layer, outer_bounds = range_layers[1]
                room_outer, fits_outer, largest_outer = _room(
                    outer_bounds.get(direction), inner, sign, unit, d_si, t, a
                )
        rom_q, rom_source = rom.get(direction)
        room_p = largest_p = None
        fits_p: bool | None = None
        if range_layers and rom_q is not None:
            room_p, fits_p, largest_p = _room(rom_q, inner, sign, unit, d_si, t, a)

        stop_time = physics.stopping_time(v.si, t.si, a.si)
        row = StopRoom(
            joint=name,
            direction=direction,
            speed_layer=speed_layer,
            speed=v.magnitude,
            speed_unit=v.unit,
            reaction_time=value_in(t, budget.unit),
            deceleration=a.magnitude,
            deceleration_unit=a.unit,
            distance=in_unit(d_si, unit),
            distance_unit=unit,
            range_layer=range_layer,
            outer_layer=outer_layer,
            room_outer=room_outer,
            fits_outer=fits_outer,
            largest_speed_outer=_maybe(largest_outer, v.unit),
            participant_source=rom_source if room_p is not None else None,
            room_participant=room_p,
            fits_participant=fits_p,
            largest_speed_participant=_maybe(largest_p, v.unit),
            stop_time=in_unit(stop_time, budget.unit),
            budget=budget.magnitude,
            time_unit=budget.unit,
            within_budget=stop_time <= budget.si,
            largest_speed_budget=in_unit(physics.largest_speed_within_time(budget.si, t.si, a.si), v.unit),
        )
        rows.append(row)
        where = f"joint '{name}' {end_label(joint, direction)}"
        stopping = (
            f"stopping from the {speed_layer} speed {fmt(row.speed, v.unit)} takes {fmt(row.distance, unit)} "
            f"({fmt(row.reaction_time, budget.unit)} reaction, {fmt(row.deceleration, a.unit)})"
        )
        if fits_outer is False:
            add(
                Severity.WARNING,
                f"{where}: {stopping}, but the room from the {range_layer} limit to the {outer_layer} limit "
                "is "
                f"{fmt(row.room_outer, unit)}: the {outer_layer} limit would be passed during the stop"
                + _largest(row.largest_speed_outer, v.unit),
                quantity="stopping_distance",
                direction=direction,
                layer=outer_layer,
                value=row.distance,
                limit=row.room_outer,
                margin=_diff(row.room_outer, row.distance),
                unit=unit,
            )
        if fits_p is False:
            add(
                Severity.ERROR if rom_source == "measured" else Severity.WARNING,
                f"{where}: {stopping}, but the room from the {range_layer} limit to the participant's "
                f"{rom_source} "
                f"range of motion is {fmt(row.room_participant, unit)}: the joint could pass the "
                "participant's range "
                "during the stop" + _largest(row.largest_speed_participant, v.unit),
                quantity="stopping_distance",
                direction=direction,
                layer="participant",
                value=row.distance,
                limit=row.room_participant,
                margin=_diff(row.room_participant, row.distance),
                unit=unit,
                extra=(("rom_source", rom_source),),
            )

    _time_findings(add, name, joint, rows)
    return rows


def _time_findings(add: Any, name: str, joint: Joint, rows: list[StopRoom]) -> None:
    late = [r for r in rows if not r.within_budget]
    if not late:
        return
    same = len(late) == 2 and late[0].speed == late[1].speed
    for r in late[:1] if same else late:
        where = f"joint '{name}'" + ("" if same else f" {end_label(joint, r.direction)}")
        add(
            Severity.ERROR,
            f"{where}: stopping from the {r.speed_layer} speed {fmt(r.speed, r.speed_unit)} takes "
            f"{fmt(r.stop_time, r.time_unit)}, longer than the stop latency budget of "
            f"{fmt(r.budget, r.time_unit)}; "
            f"the largest speed that stops within the budget is {fmt(r.largest_speed_budget, r.speed_unit)}",
            quantity="stop_time",
            direction=None if same else r.direction,
            layer=r.speed_layer,
            value=r.stop_time,
            limit=r.budget,
            margin=r.budget - r.stop_time,
            unit=r.time_unit,
        )


def _room(
    outer: Quantity, inner: Quantity, sign: float, unit: str, distance_si: float, t: Quantity, a: Quantity
) -> tuple[float, bool, float | None]:
    """The room from ``inner`` out to ``outer`` in ``unit`` (from the declared magnitudes where possible),
    whether the stopping distance fits in it, and the largest speed that stops within it (SI; None: no
    room)."""
    r_si = sign * (outer.si - inner.si)
    largest = physics.largest_speed_within_distance(r_si, t.si, a.si) if r_si >= 0 else None
    return sign * difference(outer, inner, unit), distance_si <= r_si, largest


def _maybe(si: float | None, unit: str) -> float | None:
    return None if si is None else in_unit(si, unit)


def _diff(a: float | None, b: float) -> float | None:
    return None if a is None else a - b


def _largest(speed: float | None, unit: str) -> str:
    if speed is None:
        return "; there is no room at all: the limit already lies beyond it"
    return f"; the largest speed that stops in time is {fmt(speed, unit)}"
