"""Turn a scenario item (recipe + optional subject) into an incident block for one protocol and participant.

This is where a recipe meets the protocol: which joint, contact, trigger or stream it acts on (the one named,
or the first that fits), and the numbers that follow from the effective limits.  A recipe the protocol cannot
carry (no channel to log it, no limit to exceed) is a :class:`SimulationError` that says what is missing.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

from bracer.simulate.blocks import (
    Block,
    ExcursionBlock,
    FastMoveBlock,
    GapBlock,
    PushBlock,
    StopBlock,
    StreamClock,
)
from bracer.simulate.envelope import ContactEnvelope, Envelope, JointEnvelope, band
from bracer.simulate.minjerk import PEAK_ACCELERATION_FACTOR, PEAK_SPEED_FACTOR, duration_for
from bracer.simulate.params import SimulationParameters
from bracer.simulate.recipes import CuffPush, Excursion, FastMove, LoggingGap, ScenarioItem, StopRequest

__all__ = ["BuildContext", "SimulationError", "incident_block", "supported"]

Direction = Literal["positive", "negative"]


class SimulationError(ValueError):
    """The protocol, participant or scenario cannot produce the requested session; the message says why."""


@dataclass(frozen=True, slots=True)
class BuildContext:
    envelope: Envelope
    params: SimulationParameters
    joint_names: tuple[str, ...]
    clocks: dict[str, StreamClock]


def _pick(item: ScenarioItem, kind: str, known: list[str], eligible: dict[str, str | None]) -> str:
    """The subject: the one named (if it is eligible), else the first eligible one.

    ``eligible`` maps every candidate to None when it fits, or to the reason it does not.
    """
    name = item.recipe.name
    if item.subject is not None:
        if item.subject not in eligible:
            close = [k for k in known if k.startswith(item.subject)] or difflib.get_close_matches(
                item.subject, known, n=1
            )
            did = f"; did you mean '{close[0]}'?" if close else ""
            raise SimulationError(
                f"incident '{name}': the protocol has no {kind} '{item.subject}'{did} "
                f"({kind}s: {', '.join(known) or 'none'})"
            )
        reason = eligible[item.subject]
        if reason is not None:
            raise SimulationError(f"incident '{name}' cannot act on {kind} '{item.subject}': {reason}")
        return item.subject
    fits = [n for n, reason in eligible.items() if reason is None]
    if not fits:
        reasons = "; ".join(f"{n}: {r}" for n, r in eligible.items()) or f"the protocol declares no {kind}s"
        raise SimulationError(f"incident '{name}' needs a {kind} it can act on, and none fits ({reasons})")
    return fits[0]


def _joint_reason(j: JointEnvelope, need_speed: bool = False) -> str | None:
    if j.locked:
        return "it is locked"
    if j.range_lo is None:
        return "it declares no range limit"
    if j.channels.position is None and not (need_speed and j.channels.velocity is not None):
        return "it has no position channel"
    if need_speed and j.speed is None:
        return "it declares no speed limit"
    return None


def _distal_first(reasons: dict[str, str | None]) -> dict[str, str | None]:
    """Candidates from the last-declared joint back: distal joints carry the least torque."""
    return dict(reversed(list(reasons.items())))


def _outer_room(limit: float, outer: float | None, outer_band: float, reach: float, sign: float) -> float:
    """Where an excursion past ``limit`` ends: (reach − 1) of the way to the outer limit, 2 bands clear of
    it."""
    if outer is None:
        return limit + sign * (reach - 1.0) * math.radians(10.0)
    gap = abs(outer - limit)
    return limit + sign * min((reach - 1.0) * gap, gap - 2.0 * outer_band)


def _excursion(item: ScenarioItem, spec: Excursion, ctx: BuildContext) -> Block:
    env = ctx.envelope
    reasons = _distal_first({n: _joint_reason(j) for n, j in env.joints.items()})
    name = _pick(item, "joint", list(env.joints), reasons)
    j = env.joints[name]
    positive = spec.direction == "positive"
    limit_q = j.range_hi if positive else j.range_lo
    assert limit_q is not None
    limit = limit_q.si
    sign = 1.0 if positive else -1.0
    width = j.band_hi if positive else j.band_lo
    if spec.reach < 1.0:
        if width <= 0:
            raise SimulationError(
                f"incident '{item.recipe.name}': the protocol declares no near-miss margin for position "
                "(near_miss.position), so no near miss can be scripted"
            )
        target = limit - sign * (1.0 - spec.reach) * width
        kind: Literal["violation", "near_miss"] = "near_miss"
    else:
        outer_q = j.outer_hi if positive else j.outer_lo
        outer_band = band(outer_q, env.protocol.near_miss.position)
        target = _outer_room(limit, None if outer_q is None else outer_q.si, outer_band, spec.reach, sign)
        if sign * (target - limit) < math.radians(0.5):
            raise SimulationError(
                f"incident '{item.recipe.name}': joint '{name}' has too little room between its "
                f"{j.range_layer} limit {limit_q} and its next layer's limit to exceed one without the other"
            )
        kind = "violation"
    direction: Direction = "positive" if positive else "negative"
    speed_limit = j.speed_limit(direction)
    speed = spec.speed_fraction * (speed_limit.si if speed_limit is not None else math.radians(60))
    move = float(duration_for(abs(target - j.rest), speed, j.acceleration_cap(direction)))
    return ExcursionBlock(item, name, ctx.joint_names.index(name), target, max(move, 0.8), direction, kind)


def _fast_move(item: ScenarioItem, spec: FastMove, ctx: BuildContext) -> Block:
    env = ctx.envelope
    reasons = {n: _joint_reason(j, need_speed=True) for n, j in env.joints.items()}
    with_velocity = {n: r for n, r in reasons.items() if env.joints[n].channels.velocity is not None}
    ordered = _distal_first(with_velocity) | _distal_first(reasons)
    name = _pick(item, "joint", list(env.joints), ordered)
    j = env.joints[name]
    direction = spec.direction
    limit_q = j.speed_limit(direction)
    assert limit_q is not None
    peak = spec.factor * limit_q.si
    outer = None if j.outer_speed is None else j.outer_speed.get(direction)
    if outer is not None:
        peak = min(peak, outer.si - 2.0 * band(outer, env.protocol.near_miss.speed))
    if peak < 1.02 * limit_q.si:
        raise SimulationError(
            f"incident '{item.recipe.name}': joint '{name}' has too little room between its {j.speed_layer} "
            f"speed limit {limit_q} and its next layer's speed limit {outer} to exceed one without the other"
        )
    distance = (j.therapy_hi - j.rest) if direction == "positive" else (j.therapy_lo - j.rest)
    if abs(distance) < math.radians(5.0):
        raise SimulationError(
            f"incident '{item.recipe.name}': joint '{name}' has less than 5 deg of room from its rest pose "
            f"in the {direction} direction"
        )
    cap = j.acceleration_cap(direction)
    if cap is not None and PEAK_ACCELERATION_FACTOR * peak**2 / (PEAK_SPEED_FACTOR**2 * abs(distance)) > cap:
        raise SimulationError(
            f"incident '{item.recipe.name}': at the speed it needs, joint '{name}' would also come near its "
            "acceleration limit"
        )
    back = float(
        duration_for(distance, j.speed_cap("negative" if direction == "positive" else "positive"), cap)
    )
    return FastMoveBlock(item, name, ctx.joint_names.index(name), distance, peak, max(back, 0.8), direction)


def _contact_reason(c: ContactEnvelope, sustained: bool) -> str | None:
    if c.contact.channels.force is None:
        return "it has no force channel"
    if sustained and c.sustained_level is None:
        return "it declares no sustained-force limit"
    return None


def _sustained_room(c: ContactEnvelope) -> float:
    """Room between the sustained level and the lowest near-miss threshold above it (N); negative if none."""
    assert c.sustained_level is not None
    tops = [c.force_qs.si - c.band_force_qs]
    if c.pressure_qs is not None:
        tops.append((c.pressure_qs.si - c.band_pressure_qs) * c.area)
    return min(tops) - c.sustained_level.si


def _push(item: ScenarioItem, spec: CuffPush, ctx: BuildContext) -> Block:
    env = ctx.envelope
    sustained = spec.level == "sustained"
    reasons = {n: _contact_reason(c, sustained) for n, c in env.contacts.items()}
    if sustained:  # prefer a contact whose sustained level lies clear of its near-miss bands
        roomy: dict[str, str | None] = {
            n: r for n, r in reasons.items() if r is None and _sustained_room(env.contacts[n]) > 0
        }
        reasons = roomy | reasons
    name = _pick(item, "contact", list(env.contacts), reasons)
    c = env.contacts[name]
    if sustained:
        assert c.sustained_level is not None and c.sustained_duration is not None
        level = c.sustained_level.si
        room = _sustained_room(c)
        force = level + 0.5 * room if room > 0.02 * level else 1.08 * level
        hold = spec.hold_factor * c.sustained_duration.si
        return PushBlock(item, name, force, c.tissue.stiffness, spec.rise, hold, spec.rise)
    top = c.force_transient if c.force_transient is not None else c.force_qs
    force = spec.factor * top.si
    # keep the time above the quasi-static limit well inside the transient allowance
    ramps = min(spec.rise, 0.2 * c.transient_max_duration)
    hold = min(spec.hold, 0.2 * c.transient_max_duration)
    return PushBlock(item, name, force, c.tissue.stiffness, ramps, hold, ramps)


def _stop(item: ScenarioItem, spec: StopRequest, ctx: BuildContext) -> Block:
    env = ctx.envelope
    protocol = env.protocol
    if protocol.stop is None:
        raise SimulationError(
            f"incident '{item.recipe.name}' needs the protocol's 'stop' section (reaction time, "
            "latency budget, standstill), and the protocol has none"
        )
    declared = protocol.logging.triggers
    available = [t for t in spec.triggers if t in declared]
    if item.subject is not None:
        if item.subject not in declared:
            close = difflib.get_close_matches(item.subject, list(declared), n=1)
            did = f"; did you mean '{close[0]}'?" if close else ""
            raise SimulationError(
                f"incident '{item.recipe.name}': the protocol logs no trigger '{item.subject}'"
                f"{did} (triggers: {', '.join(declared) or 'none'})"
            )
        available = [item.subject]
    if not available:
        raise SimulationError(
            f"incident '{item.recipe.name}' needs a logged stop trigger ({' or '.join(spec.triggers)} under "
            f"logging.triggers), and the protocol declares {', '.join(declared) or 'none'}"
        )
    trigger = available[0]
    stream = declared[trigger].stream
    if stream not in ctx.clocks:
        raise SimulationError(
            f"trigger '{trigger}' is logged on stream '{stream}', which logging.streams does not "
            f"declare (streams: {', '.join(ctx.clocks)})"
        )
    moving = [
        n
        for n, j in env.joints.items()
        if j.movable and j.stop_deceleration is not None and j.channels.position is not None
    ]
    if not moving:
        raise SimulationError(
            f"incident '{item.recipe.name}' needs at least one joint that moves, logs its "
            "position and declares a stop_deceleration; none does"
        )
    reach = []
    moves = []
    for n in moving:
        j = env.joints[n]
        up = j.therapy_hi - j.rest
        down = j.therapy_lo - j.rest
        dist = spec.amplitude * (up if abs(up) >= abs(down) else down)
        reach.append(dist)
        direction: Direction = "positive" if dist > 0 else "negative"
        moves.append(float(duration_for(dist, j.speed_cap(direction), j.acceleration_cap(direction))))
    move = max(max(moves), 0.8)
    reach_a = np.array(reach)
    decel = np.array([env.joints[n].stop_deceleration for n in moving], dtype=np.float64)
    stop = protocol.stop
    budget = stop.latency_budget.si
    if spec.latency_factor is None:
        reaction, latency = stop.reaction_time.si, None
    else:
        latency = spec.latency_factor * budget
        slowest = float(np.max(np.abs(PEAK_SPEED_FACTOR * reach_a / move) / decel))
        if latency - slowest <= 0:
            raise SimulationError(
                f"incident '{item.recipe.name}': braking alone already takes longer than "
                f"{spec.latency_factor:g} × the latency budget"
            )
        reaction = None
    caps = [min(env.joints[n].speed_cap("positive"), env.joints[n].speed_cap("negative")) for n in moving]
    back = max(float(np.max(duration_for(reach_a, caps))), 0.8)
    return StopBlock(
        item,
        trigger,
        ctx.clocks[stream],
        tuple(ctx.joint_names.index(n) for n in moving),
        tuple(moving),
        reach_a,
        decel,
        move,
        back,
        reaction,
        latency,
        stop.category,
        stop.standstill.speed.si,
        stop.standstill.hold.si,
        ctx.params.torque_ramp,
        ctx.params.trigger_latch,
    )


def _gap(item: ScenarioItem, spec: LoggingGap, ctx: BuildContext) -> Block:
    streams = {n: None for n in ctx.clocks}
    name = _pick(item, "stream", list(ctx.clocks), streams)  # type: ignore[arg-type]
    return GapBlock(item, name, spec.duration)


def incident_block(item: ScenarioItem, ctx: BuildContext) -> Block:
    """The block that plays ``item`` in this protocol; raises :class:`SimulationError` when it cannot."""
    spec = item.recipe.spec
    if isinstance(spec, Excursion):
        return _excursion(item, spec, ctx)
    if isinstance(spec, FastMove):
        return _fast_move(item, spec, ctx)
    if isinstance(spec, CuffPush):
        return _push(item, spec, ctx)
    if isinstance(spec, StopRequest):
        return _stop(item, spec, ctx)
    return _gap(item, spec, ctx)


def supported(item: ScenarioItem, ctx: BuildContext) -> str | None:
    """None when the protocol can carry ``item``, else the reason it cannot."""
    try:
        incident_block(item, ctx)
    except SimulationError as exc:
        return str(exc)
    return None
