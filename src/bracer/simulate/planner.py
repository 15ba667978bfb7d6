"""Plan a session: therapy repetitions around the scripted incidents, kept clear of every torque limit.

The session opens with a rest, then plays sets of repetitions (each joint moves between its rest pose and a
target inside its therapy room, minimum-jerk, at 35–60 % of its speed limit, with holds and pauses) with
longer rests between sets.  Incident blocks are spaced evenly over the session.  The joint torques of the
whole plan are then computed on a 100 Hz grid; a repetition whose torque comes within two near-miss bands of a
limit is scaled down towards the rest pose and the plan is computed again.  An incident that cannot be played
without a torque near a limit is an error that says so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from bracer.simulate.blocks import Block, HoldBlock, Incident, RepBlock, StreamClock
from bracer.simulate.envelope import Direction, Envelope
from bracer.simulate.events import Overlays
from bracer.simulate.incidents import BuildContext, SimulationError, incident_block
from bracer.simulate.minjerk import duration_for
from bracer.simulate.params import SimulationParameters
from bracer.simulate.recipes import ScenarioItem
from bracer.simulate.signals import Physics, model_chain
from bracer.simulate.timeline import Segment, Timeline
from bracer.units import format_number

__all__ = ["Plan", "make_plan"]

Array = NDArray[np.float64]

_SETTLE = 3.0  # s of rest at the start (sensors read their offsets with the device still)
_TAIL = 2.0  # s kept free after the last incident
_GUARD_RATE = 100.0  # Hz of the torque check
_MAX_ROUNDS = 20


@dataclass(frozen=True, eq=False)
class Plan:
    """A planned session: its motion and events, the incidents with what the ground truth needs."""

    envelope: Envelope
    params: SimulationParameters
    seed: int
    duration: float
    clocks: dict[str, StreamClock]
    physics: Physics
    blocks: tuple[Block, ...]
    starts: Array
    scales: Array
    incidents: tuple[Incident, ...]

    @property
    def joint_names(self) -> tuple[str, ...]:
        return self.physics.joint_names


def clocks_for(envelope: Envelope, duration: float, start: float) -> dict[str, StreamClock]:
    """One clock per declared stream: ``round(duration·rate)`` samples from ``start``."""
    out = {}
    for name, stream in envelope.protocol.logging.streams.items():
        rate = stream.sample_rate.si
        out[name] = StreamClock(name, rate, start, round(duration * rate))
    return out


def _rep(
    rng: np.random.Generator, env: Envelope, names: tuple[str, ...], rest: Array, params: SimulationParameters
) -> Block:
    movable = [i for i, n in enumerate(names) if env.joints[n].movable]
    if not movable:
        return HoldBlock(2.0)
    moving = [int(rng.choice(movable))] if rng.random() < 0.5 else movable
    target = rest.copy()
    fraction = rng.uniform(*params.speed_fraction)
    outs = []
    for i in moving:
        j = env.joints[names[i]]
        up, down = j.therapy_hi - j.rest, j.therapy_lo - j.rest
        big, small = (up, down) if abs(up) >= abs(down) else (down, up)
        side = small if abs(small) >= math.radians(5.0) and rng.random() < 0.3 else big
        target[i] = j.rest + rng.uniform(0.5, 1.0) * side
        direction: Direction = "positive" if side > 0 else "negative"
        limit = j.speed_limit(direction)
        speed = (
            min(fraction * limit.si, j.speed_cap(direction)) if limit is not None else j.speed_cap(direction)
        )
        outs.append(float(duration_for(target[i] - j.rest, speed, j.acceleration_cap(direction))))
    out = max(max(outs), 0.8)
    return RepBlock(target, out, rng.uniform(0.3, 0.8), out * rng.uniform(1.0, 1.3), rng.uniform(0.4, 1.2))


def _schedule(
    rng: np.random.Generator,
    env: Envelope,
    names: tuple[str, ...],
    rest: Array,
    params: SimulationParameters,
    incident_blocks: list[Block],
    duration: float,
) -> list[Block]:
    needed = _SETTLE + _TAIL + sum(b.duration for b in incident_blocks)
    if needed > duration:
        raise SimulationError(
            f"the scripted incidents need at least {math.ceil(needed)} s of session, and the session is "
            f"{format_number(duration)} s long: make it longer or script fewer incidents"
        )
    spacing = (duration - needed) / (len(incident_blocks) + 1)
    blocks: list[Block] = [HoldBlock(_SETTLE)]
    cursor = _SETTLE
    in_set, set_size = 0, int(rng.integers(6, 11))

    def next_filler() -> Block:
        nonlocal in_set, set_size
        if in_set >= set_size:
            in_set, set_size = 0, int(rng.integers(6, 11))
            return HoldBlock(float(rng.uniform(4.0, 8.0)))
        in_set += 1
        return _rep(rng, env, names, rest, params)

    def fill(until: float) -> None:
        nonlocal cursor
        while True:
            block = next_filler()
            if cursor + block.duration > until:
                if until > cursor:
                    blocks.append(HoldBlock(until - cursor))
                    cursor = until
                return
            blocks.append(block)
            cursor += block.duration

    start = _SETTLE
    for block in incident_blocks:
        start += spacing
        fill(start)
        blocks.append(block)
        cursor += block.duration
        start += block.duration
    fill(duration + 10.0)  # the last repetition may run past the end; the log stops at the duration
    return blocks


def _assemble(
    blocks: list[Block], starts: Array, scales: Array, rest: Array
) -> tuple[list[Segment], Overlays, list[Incident]]:
    segments: list[Segment] = []
    overlays = Overlays()
    incidents: list[Incident] = []
    for i, block in enumerate(blocks):
        segs, over, incident = block.build(float(starts[i]), float(scales[i]), i, rest)
        segments.extend(segs)
        overlays.extend(over)
        if incident is not None:
            incidents.append(incident)
    return segments, overlays, incidents


def _torque_ratio(physics: Physics, env: Envelope, t: Array) -> tuple[Array, NDArray[np.intp]]:
    """Per sample: the largest |τ|/cap over the joints, and which joint it is."""
    tau = physics.torques(t)
    caps = np.empty_like(tau)
    for j, name in enumerate(physics.joint_names):
        je = env.joints[name]
        caps[:, j] = np.where(tau[:, j] >= 0, je.torque_cap("positive"), je.torque_cap("negative"))
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(caps > 0, np.abs(tau) / caps, np.where(np.abs(tau) > 0, np.inf, 0.0))
    worst = np.argmax(ratio, axis=1)
    return ratio[np.arange(t.shape[0]), worst], worst


def _describe(block: Block) -> str:
    item = getattr(block, "item", None)
    if item is not None:
        return f"incident '{item.recipe.name}'"
    return "the rest pose" if isinstance(block, HoldBlock) else "a therapy repetition"


def make_plan(
    envelope: Envelope, params: SimulationParameters, scenario: list[ScenarioItem], duration: float, seed: int
) -> Plan:
    """Plan a session of ``duration`` s playing ``scenario`` (in order), deterministic for ``seed``.

    Raises
    ------
    SimulationError
        An incident the protocol cannot carry, a session too short for its incidents, or a torque that cannot
        be kept clear of its limit.
    """
    names = tuple(envelope.protocol.joints)
    rest = np.array([envelope.joints[n].rest for n in names], dtype=np.float64)
    clocks = clocks_for(envelope, duration, params.start_time)
    ctx = BuildContext(envelope, params, names, clocks)
    incident_blocks = [incident_block(item, ctx) for item in scenario]
    rng = np.random.default_rng([seed, 1])
    blocks = _schedule(rng, envelope, names, rest, params, incident_blocks, duration)
    starts = params.start_time + np.concatenate([[0.0], np.cumsum([b.duration for b in blocks])[:-1]])
    scales = np.ones(len(blocks))
    chain = model_chain(envelope, params)
    grid = params.start_time + np.arange(0.0, duration, 1.0 / _GUARD_RATE)
    ratio = np.zeros(grid.shape)
    worst_joint = np.zeros(grid.shape, dtype=np.intp)
    changed = np.ones(grid.shape, dtype=bool)  # samples whose block changed since the last round
    for _ in range(_MAX_ROUNDS):
        segments, overlays, incidents = _assemble(blocks, starts, scales, rest)
        timeline = Timeline.from_segments(segments, len(names))
        physics = Physics(envelope, params, chain, names, timeline, overlays)
        ratio[changed], worst_joint[changed] = _torque_ratio(physics, envelope, grid[changed])
        owner = timeline.block[timeline.segment_at(grid)]
        per_block = np.zeros(len(blocks))
        np.maximum.at(per_block, owner, ratio)
        over = np.flatnonzero(per_block > 1.0)
        changed = np.isin(owner, over)
        if over.size == 0:
            return Plan(
                envelope,
                params,
                seed,
                duration,
                clocks,
                physics,
                tuple(blocks),
                starts,
                scales,
                tuple(incidents),
            )
        for b in over:
            if not blocks[b].shrinkable or scales[b] < 0.05:
                at = np.flatnonzero(owner == b)
                k = at[np.argmax(ratio[at])]
                joint = names[int(worst_joint[k])]
                je = envelope.joints[joint]
                tau = float(physics.torques(grid[k : k + 1])[0, int(worst_joint[k])])
                sense: Direction = "positive" if tau >= 0 else "negative"
                incident = getattr(blocks[b], "item", None) is not None
                hint = ", or give the incident another subject (--incident NAME:SUBJECT)" if incident else ""
                raise SimulationError(
                    f"{_describe(blocks[b])} would need {format_number(tau)} N*m at joint '{joint}' "
                    f"(t = {format_number(float(grid[k]))} s), within two near-miss bands of its "
                    f"{je.torque_layer} torque limit {je.torque_limit(sense)}; the body and device are "
                    f"too heavy for this limit: lower the body mass, height or device link masses{hint}"
                )
            scales[b] *= max(0.3, min(0.8, 0.9 / per_block[b]))
    raise SimulationError(
        "could not keep the therapy movements clear of the torque limits; lower the body mass, height or "
        "device link masses"
    )
