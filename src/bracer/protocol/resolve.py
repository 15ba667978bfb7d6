"""The limits that apply to one participant: the protocol's limits, tightened by the participant's cautions,
then changed by the participant's overrides.

A caution only ever tightens: where its result would be looser than the limit already in force, the limit is
kept and the change is recorded as "not applied (already tighter)".  An override may loosen, but a loosening
override without a written justification is a problem the review reports as an error; a justified one is
still flagged.  Every change is kept with its before -> after values for the review and the report.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Literal

from bracer.protocol.model import (
    Bounds,
    Contact,
    Effect,
    Joint,
    Override,
    Participant,
    Protocol,
)
from bracer.protocol.quantities import Directional
from bracer.reference import rom_reference
from bracer.units import DIMENSIONS, Quantity, dimension_name

__all__ = ["Change", "ParticipantRange", "Resolution", "ResolveProblem", "participant_range", "resolve"]


@dataclass(frozen=True, slots=True)
class Change:
    """One limit changed (or left) by a caution or an override."""

    source_kind: Literal["caution", "override"]
    source: str  # caution id, or "override 1" (1-based)
    target_kind: Literal["joint", "contact"]
    target: str
    quantity: str
    part: str  # "planned.max", "device.positive", "quasi_static", "level" ...
    before: Quantity
    after: Quantity
    applied: bool
    loosens: bool = False
    justification: str | None = None
    note: str = ""


@dataclass(frozen=True, slots=True)
class ResolveProblem:
    """A caution or override that could not be applied as written."""

    source_kind: Literal["caution", "override"]
    source: str
    target: str
    message: str
    severity: Literal["warning", "error"] = "error"


@dataclass(frozen=True, slots=True)
class Resolution:
    """The effective protocol for one participant (or the nominal protocol when ``participant`` is None)."""

    protocol: Protocol
    participant_code: str | None
    participant: Participant | None
    changes: tuple[Change, ...] = ()
    problems: tuple[ResolveProblem, ...] = ()
    cautions: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class ParticipantRange:
    """The participant's range of motion for a joint, in the joint's sign convention.

    ``source`` is "measured" (the participant's own record), "normative" (reference table; a warning), or
    None for a direction with no value at all.
    """

    min: Quantity | None
    max: Quantity | None
    min_source: Literal["measured", "normative"] | None
    max_source: Literal["measured", "normative"] | None
    note: str = ""

    def get(self, direction: str) -> tuple[Quantity | None, str | None]:
        if direction == "positive":
            return self.max, self.max_source
        return self.min, self.min_source


def _deg(value: float) -> Quantity:
    from bracer.units import quantity

    return quantity(value, "deg")


def participant_range(protocol: Protocol, joint: str, participant: Participant | None) -> ParticipantRange:
    """Measured passive range where recorded, else the AAOS normative values of the joint's motions."""
    j = protocol.joints[joint]
    if participant is not None and joint in participant.rom:
        m = participant.rom[joint]
        note = f"measured {m.date.isoformat()} by {m.method}" + (" (passive)" if m.passive else " (active)")
        return ParticipantRange(m.min, m.max, "measured", "measured", note)
    pos = rom_reference(j.reference.positive) if j.reference.positive else None
    neg = rom_reference(j.reference.negative) if j.reference.negative else None
    parts = []
    if pos is not None:
        parts.append(f"{pos.motion} {pos.degrees:g} deg ({pos.source})")
    if neg is not None:
        parts.append(f"{neg.motion} {neg.degrees:g} deg ({neg.source})")
    return ParticipantRange(
        _deg(-neg.degrees) if neg is not None else None,
        _deg(pos.degrees) if pos is not None else None,
        "normative" if neg is not None else None,
        "normative" if pos is not None else None,
        "normative reference: " + "; ".join(parts) if parts else "no measured or normative range",
    )


# ----------------------------------------------------------------------------------------- resolution


@dataclass
class _State:
    joints: dict[str, dict[str, Any]]
    contacts: dict[str, dict[str, Any]]
    changes: list[Change] = field(default_factory=list)
    problems: list[ResolveProblem] = field(default_factory=list)


def resolve(protocol: Protocol, participant_code: str | None = None) -> Resolution:
    """Apply the participant's cautions, then overrides, to the protocol's limits.

    Raises
    ------
    KeyError
        ``participant_code`` is not in the protocol (the CLI turns it into a usage error with suggestions).
    """
    if participant_code is None:
        return Resolution(protocol, None, None)
    participant = protocol.participants[participant_code]
    state = _State(
        joints={
            n: {q: getattr(j, q) for q in ("range", "speed", "torque", "acceleration")}
            for n, j in protocol.joints.items()
        },
        contacts={
            n: {q: getattr(c, q) for q in ("force", "pressure", "sustained")}
            for n, c in protocol.contacts.items()
        },
    )
    for cid in participant.cautions:
        for eff in protocol.cautions[cid].effects:
            _apply(state, protocol, participant, eff, "caution", cid)
    for i, ovr in enumerate(participant.overrides, start=1):
        _apply(state, protocol, participant, ovr, "override", f"override {i}")

    joints: dict[str, Joint] = {n: j.model_copy(update=state.joints[n]) for n, j in protocol.joints.items()}
    contacts: dict[str, Contact] = {
        n: c.model_copy(update=state.contacts[n]) for n, c in protocol.contacts.items()
    }
    effective = protocol.model_copy(update={"joints": joints, "contacts": contacts})
    return Resolution(
        effective,
        participant_code,
        participant,
        tuple(state.changes),
        tuple(state.problems),
        tuple(participant.cautions),
    )


def _apply(
    state: _State,
    protocol: Protocol,
    participant: Participant,
    eff: Effect,
    kind: Literal["caution", "override"],
    source: str,
) -> None:
    target = eff.joint or eff.contact or ""

    def problem(message: str) -> None:
        state.problems.append(ResolveProblem(kind, source, target, message))

    if eff.joint is not None:
        limits = state.joints[eff.joint]
        layers = limits[eff.quantity]
        current = layers.layer(eff.layer)
        if current is None:
            problem(
                f"changes the {eff.layer} {eff.quantity} limit of joint '{target}', which the protocol "
                "does not declare"
            )
            return
        if eff.quantity == "range":
            new_bounds = _apply_range(state, protocol, participant, eff, kind, source, current, problem)
            if new_bounds is not None:
                limits["range"] = layers.model_copy(update={eff.layer: new_bounds})
            return
        dim = {"speed": "angular speed", "torque": "torque", "acceleration": "angular acceleration"}[
            eff.quantity
        ]
        updated: Directional = current
        for direction in _directions(eff.direction):
            before = current.get(direction)
            after = _new_value(eff, before, dim, problem)
            if after is None:
                return
            if after.si <= 0:
                problem(
                    f"would set the {eff.layer} {eff.quantity} limit to {after}; a limit must stay above zero"
                )
                return
            accepted = _record(
                state,
                eff,
                kind,
                source,
                "joint",
                target,
                f"{eff.layer}.{direction}",
                before,
                after,
                tighter=after.si <= before.si,
            )
            if accepted:
                updated = updated.replace(direction, after)
        if eff.direction == "both" and updated.positive == updated.negative:
            updated = Directional(updated.positive, updated.negative, True)
        limits[eff.quantity] = layers.model_copy(update={eff.layer: updated})
        return

    # contact
    assert eff.contact is not None
    limits = state.contacts[eff.contact]
    group = limits[eff.quantity]
    if group is None:
        problem(
            f"changes the {eff.quantity} limit of contact '{target}', which the protocol does not declare"
        )
        return
    item = eff.item
    valid = {
        "force": ("quasi_static", "transient"),
        "pressure": ("quasi_static", "transient"),
        "sustained": ("level", "max_duration"),
    }[eff.quantity]
    if item not in valid:
        if eff.quantity == "sustained" and item == "quasi_static":
            item = "level"  # the default item of a contact effect means the sustained level
        else:
            problem(f"item '{item}' does not apply to {eff.quantity}; use one of {', '.join(valid)}")
            return
    before = getattr(group, item)
    if before is None:
        problem(
            f"changes the {item.replace('_', '-')} {eff.quantity} limit of contact '{target}', which the "
            "protocol does not declare"
        )
        return
    dim = {"force": "force", "pressure": "pressure", "sustained": "force" if item == "level" else "time"}[
        eff.quantity
    ]
    after = _new_value(eff, before, dim, problem)
    if after is None:
        return
    if after.si <= 0:
        problem(f"would set the {eff.quantity} limit to {after}; a limit must stay above zero")
        return
    if _record(
        state, eff, kind, source, "contact", target, item, before, after, tighter=after.si <= before.si
    ):
        limits[eff.quantity] = group.model_copy(update={item: after})


def _apply_range(
    state: _State,
    protocol: Protocol,
    participant: Participant,
    eff: Effect,
    kind: Literal["caution", "override"],
    source: str,
    current: Bounds,
    problem: Any,
) -> Bounds | None:
    """The new bounds of one range layer, or None when the effect cannot be applied (a problem is recorded).

    Inward is tighter: down for the max end (positive direction), up for the min end (negative direction).
    The changes are recorded only once the resulting range is known to be non-empty.
    """
    target = eff.joint or ""
    proposed: list[tuple[str, Quantity, Quantity, bool]] = []  # direction, before, after, tighter
    for direction in _directions(eff.direction):
        before = current.get(direction)
        if eff.measured_minus is not None:
            if target not in participant.rom:
                problem(
                    f"needs the participant's measured range of motion for joint '{target}', and none is "
                    "recorded; the limit was left unchanged"
                )
                return None
            rom = participant.rom[target]
            margin = eff.measured_minus.si
            si = rom.max.si - margin if direction == "positive" else rom.min.si + margin
            after = before.with_si(si)
        else:
            if eff.set is not None and eff.direction == "both":
                problem(
                    "a range 'set' needs a direction (positive for the max end, negative for the min end)"
                )
                return None
            maybe = _new_value(eff, before, "angle", problem)
            if maybe is None:
                return None
            after = maybe
        tighter = after.si <= before.si if direction == "positive" else after.si >= before.si
        proposed.append((direction, before, after, tighter))

    new_min, new_max = current.min, current.max
    for direction, _before, after, tighter in proposed:
        if kind == "override" or tighter:
            if direction == "positive":
                new_max = after
            else:
                new_min = after
    if not new_min.si < new_max.si:
        problem(
            f"would leave an empty {eff.layer} range [{new_min}, {new_max}] for joint '{target}'; "
            "the limit was left unchanged"
        )
        return None
    new_min, new_max = current.min, current.max
    for direction, before, after, tighter in proposed:
        end = "max" if direction == "positive" else "min"
        if _record(
            state, eff, kind, source, "joint", target, f"{eff.layer}.{end}", before, after, tighter=tighter
        ):
            if direction == "positive":
                new_max = after
            else:
                new_min = after
    return Bounds.model_construct(min=new_min, max=new_max)


def _directions(direction: str) -> tuple[str, ...]:
    return ("positive", "negative") if direction == "both" else (direction,)


def _new_value(eff: Effect, before: Quantity, dim: str, problem: Any) -> Quantity | None:
    if eff.scale is not None:
        return before.scaled(eff.scale)
    if eff.set is not None:
        if eff.set.dimension != DIMENSIONS[dim][0]:
            problem(
                f"sets {eff.set} ({dimension_name(eff.set.dimension)}) where {dim} ({DIMENSIONS[dim][1]}) "
                "is expected"
            )
            return None
        return eff.set
    problem(f"'measured_minus' applies to range limits only, not {eff.quantity}")
    return None


def _record(
    state: _State,
    eff: Effect,
    kind: Literal["caution", "override"],
    source: str,
    target_kind: Literal["joint", "contact"],
    target: str,
    part: str,
    before: Quantity,
    after: Quantity,
    *,
    tighter: bool,
) -> bool:
    """Record a change; return whether the new value is taken."""
    same = abs(after.si - before.si) <= 1e-12 * max(1.0, abs(before.si))
    if kind == "caution":
        applied = tighter or same
        note = "" if applied else "not applied: the limit in force is already tighter"
        state.changes.append(
            Change(
                kind,
                source,
                target_kind,
                target,
                eff.quantity,
                part,
                before,
                after,
                applied,
                False,
                None,
                note,
            )
        )
        return applied and not same
    justification = eff.justification if isinstance(eff, Override) else None
    loosens = not (tighter or same)
    note = ""
    if loosens:
        note = "loosens the limit" + (
            f"; justification: {justification}" if justification else "; no written justification given"
        )
        if not justification:
            state.problems.append(
                ResolveProblem(
                    kind,
                    source,
                    target,
                    f"loosens {eff.quantity} {part} of {target_kind} '{target}' "
                    f"from {before} to {after} without a written justification",
                )
            )
    state.changes.append(
        Change(
            kind,
            source,
            target_kind,
            target,
            eff.quantity,
            part,
            before,
            after,
            True,
            loosens,
            justification,
            note,
        )
    )
    return True
