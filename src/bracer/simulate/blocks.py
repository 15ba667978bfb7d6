"""Blocks of a session: therapy repetitions, rests, and one block per scripted incident.

A block has a fixed duration and builds its motion segments and overlays for a start time and a *scale* in
(0, 1]: the planner shrinks a shrinkable block's excursion from the rest pose when its torque would come near
a limit.  An incident block also returns what the ground truth needs to know about it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

import numpy as np
from numpy.typing import NDArray

from bracer.simulate.events import Gap, Overlays, Push
from bracer.simulate.minjerk import PEAK_SPEED_FACTOR
from bracer.simulate.recipes import ScenarioItem
from bracer.simulate.stopping import StopProfile
from bracer.simulate.timeline import HOLD, MOVE, STOP, Segment

__all__ = [
    "Block",
    "ExcursionBlock",
    "FastMoveBlock",
    "GapBlock",
    "HoldBlock",
    "Incident",
    "PushBlock",
    "RepBlock",
    "StopBlock",
    "StreamClock",
]

Array = NDArray[np.float64]


@dataclass(frozen=True, slots=True)
class StreamClock:
    """Sample times of one stream: ``start + k/rate`` for k = 0 … n−1 (before gaps are cut out)."""

    name: str
    rate: float
    start: float
    n: int

    def times(self) -> Array:
        return self.start + np.arange(self.n, dtype=np.float64) / self.rate

    def index_at_or_after(self, t: float) -> int:
        return max(0, math.ceil((t - self.start) * self.rate - 1e-9))

    def time_of(self, k: int) -> float:
        return self.start + k / self.rate

    def window(self, t0: float, t1: float) -> tuple[int, Array]:
        """First sample index and sample times inside [t0, t1]."""
        k0 = self.index_at_or_after(t0)
        k1 = min(self.n - 1, math.floor((t1 - self.start) * self.rate + 1e-9))
        ks = np.arange(k0, max(k0, k1 + 1), dtype=np.float64)
        return k0, self.start + ks / self.rate


@dataclass(frozen=True, slots=True)
class Incident:
    """A planned incident, as the ground truth sees it.  Angles rad, speeds rad/s, forces N, times s."""

    item: ScenarioItem
    subject: str
    window: tuple[float, float]
    detail: ExcursionDetail | FastMoveDetail | PushDetail | StopDetail | GapDetail


@dataclass(frozen=True, slots=True)
class ExcursionDetail:
    joint: str
    direction: Literal["positive", "negative"]
    target: float
    t_peak: float
    kind: Literal["violation", "near_miss"]


@dataclass(frozen=True, slots=True)
class FastMoveDetail:
    joint: str
    direction: Literal["positive", "negative"]
    peak_speed: float
    t_peak: float


@dataclass(frozen=True, slots=True)
class PushDetail:
    contact: str
    push: Push
    force: float


@dataclass(frozen=True, slots=True)
class StopDetail:
    trigger: str
    t_trigger: float
    reaction: float
    joints: tuple[str, ...]
    profiles: tuple[StopProfile, ...]
    t_torque_off_start: float | None  # when the actuators start removing torque (None: category 2)


@dataclass(frozen=True, slots=True)
class GapDetail:
    gap: Gap


class Block:
    """Base: fixed ``duration`` (s); ``shrinkable`` when the planner may scale its excursion down."""

    duration: float
    shrinkable: bool = False

    def build(
        self, start: float, scale: float, index: int, rest: Array
    ) -> tuple[list[Segment], Overlays, Incident | None]:
        raise NotImplementedError


def _hold(start: float, x: Array, index: int) -> Segment:
    return Segment(start, HOLD, x, x, block=index)


def _move(start: float, x0: Array, x1: Array, duration: float, index: int) -> Segment:
    return Segment(start, MOVE, x0, x1, duration, block=index)


@dataclass(eq=False)
class HoldBlock(Block):
    """The device holds the rest pose."""

    duration: float

    def build(
        self, start: float, scale: float, index: int, rest: Array
    ) -> tuple[list[Segment], Overlays, Incident | None]:
        return [_hold(start, rest, index)], Overlays(), None


@dataclass(eq=False)
class RepBlock(Block):
    """One therapy repetition: out to ``target``, hold, back to rest, pause."""

    target: Array
    out: float
    hold: float
    back: float
    pause: float
    shrinkable: bool = True
    duration: float = field(init=False)

    def __post_init__(self) -> None:
        self.duration = self.out + self.hold + self.back + self.pause

    def build(
        self, start: float, scale: float, index: int, rest: Array
    ) -> tuple[list[Segment], Overlays, Incident | None]:
        target = rest + scale * (self.target - rest)
        t1 = start + self.out
        t2 = t1 + self.hold
        segments = [
            _move(start, rest, target, self.out, index),
            _hold(t1, target, index),
            _move(t2, target, rest, self.back, index),
            _hold(t2 + self.back, rest, index),
        ]
        return segments, Overlays(), None


_PRE, _POST = 0.5, 1.0


@dataclass(eq=False)
class ExcursionBlock(Block):
    """One joint out to ``target`` and straight back (no hold), the others at rest: range exceedance or near
    miss."""

    item: ScenarioItem
    joint: str
    column: int
    target: float
    move: float
    direction: Literal["positive", "negative"]
    kind: Literal["violation", "near_miss"]
    duration: float = field(init=False)

    def __post_init__(self) -> None:
        self.duration = _PRE + 2 * self.move + _POST

    def build(
        self, start: float, scale: float, index: int, rest: Array
    ) -> tuple[list[Segment], Overlays, Incident | None]:
        out = rest.copy()
        out[self.column] = self.target
        t_peak = start + _PRE + self.move
        segments = [
            _hold(start, rest, index),
            _move(start + _PRE, rest, out, self.move, index),
            _move(t_peak, out, rest, self.move, index),
            _hold(t_peak + self.move, rest, index),
        ]
        detail = ExcursionDetail(self.joint, self.direction, self.target, t_peak, self.kind)
        return segments, Overlays(), Incident(self.item, self.joint, (start, start + self.duration), detail)


@dataclass(eq=False)
class FastMoveBlock(Block):
    """One joint moves ``distance`` (signed, rad) with peak speed ``peak_speed``, then back at a therapy
    speed."""

    item: ScenarioItem
    joint: str
    column: int
    distance: float
    peak_speed: float
    back: float
    direction: Literal["positive", "negative"]
    duration: float = field(init=False)

    @property
    def move(self) -> float:
        return PEAK_SPEED_FACTOR * abs(self.distance) / self.peak_speed

    def __post_init__(self) -> None:
        self.duration = _PRE + self.move + 0.5 + self.back + _POST

    def build(
        self, start: float, scale: float, index: int, rest: Array
    ) -> tuple[list[Segment], Overlays, Incident | None]:
        out = rest.copy()
        out[self.column] += self.distance
        t0 = start + _PRE
        t1 = t0 + self.move
        segments = [
            _hold(start, rest, index),
            _move(t0, rest, out, self.move, index),
            _hold(t1, out, index),
            _move(t1 + 0.5, out, rest, self.back, index),
            _hold(t1 + 0.5 + self.back, rest, index),
        ]
        detail = FastMoveDetail(self.joint, self.direction, self.peak_speed, t0 + self.move / 2)
        return segments, Overlays(), Incident(self.item, self.joint, (start, start + self.duration), detail)


@dataclass(eq=False)
class PushBlock(Block):
    """The device holds the rest pose while the limb presses into a cuff to ``force`` (N)."""

    item: ScenarioItem
    contact: str
    force: float
    stiffness: float
    rise: float
    hold: float
    fall: float
    duration: float = field(init=False)

    def __post_init__(self) -> None:
        self.duration = 1.0 + self.rise + self.hold + self.fall + 1.0

    def build(
        self, start: float, scale: float, index: int, rest: Array
    ) -> tuple[list[Segment], Overlays, Incident | None]:
        push = Push(self.contact, start + 1.0, self.rise, self.hold, self.fall, self.force / self.stiffness)
        detail = PushDetail(self.contact, push, self.force)
        incident = Incident(self.item, self.contact, (start, start + self.duration), detail)
        return [_hold(start, rest, index)], Overlays(pushes=[push]), incident


@dataclass(eq=False)
class StopBlock(Block):
    """A multi-joint movement stopped at its mid-time (peak speed) by a stop request on ``trigger``.

    The request falls on a sample of ``clock`` (the trigger column's stream).  ``reaction`` None means "set by
    ``latency``": the reaction delay is chosen so that the slowest joint stands still ``latency`` s after the
    request.
    """

    item: ScenarioItem
    trigger: str
    clock: StreamClock
    columns: tuple[int, ...]
    joints: tuple[str, ...]
    reach: Array  # signed distance of each moving joint at scale 1 (rad), shape (len(columns),)
    decelerations: Array  # rad/s², shape (len(columns),)
    move: float
    back: float
    reaction: float | None
    latency: float | None
    category: int
    standstill_speed: float
    standstill_hold: float
    torque_ramp: float
    latch: float
    shrinkable: bool = True
    duration: float = field(init=False)

    def __post_init__(self) -> None:
        self.duration = (
            _PRE + self.move / 2 + 2.0 / self.clock.rate + self.latch + 1.0 + 0.2 + self.back + _POST
        )

    def profiles(self, scale: float) -> tuple[StopProfile, ...]:
        v0 = scale * PEAK_SPEED_FACTOR * self.reach / self.move
        if self.reaction is not None:
            reaction = self.reaction
        else:
            assert self.latency is not None
            reaction = self.latency - float(np.max(np.abs(v0) / self.decelerations))
        return tuple(
            StopProfile(float(v), float(a), reaction) for v, a in zip(v0, self.decelerations, strict=True)
        )

    def build(
        self, start: float, scale: float, index: int, rest: Array
    ) -> tuple[list[Segment], Overlays, Incident | None]:
        k = self.clock.index_at_or_after(start + _PRE + self.move / 2)
        t_trig = self.clock.time_of(k)
        t_move = t_trig - self.move / 2
        cols = list(self.columns)
        target = rest.copy()
        target[cols] += scale * self.reach
        profiles = self.profiles(scale)
        reaction = profiles[0].reaction
        mid = rest.copy()
        mid[cols] += 0.5 * scale * self.reach  # min-jerk position at mid-time: half the distance
        v0 = np.zeros_like(rest)
        v0[cols] = [p.v0 for p in profiles]
        decel = np.zeros_like(rest)
        decel[cols] = self.decelerations
        stop = Segment(t_trig, STOP, mid, mid, 0.0, v0, decel, reaction, block=index)
        stopped = stop.end_position()
        t_resume = t_trig + self.latch + 1.0
        segments = [
            _hold(start, rest, index),
            _move(t_move, rest, target, self.move, index),
            stop,
            _move(t_resume + 0.2, stopped, rest, self.back, index),
            _hold(t_resume + 0.2 + self.back, rest, index),
        ]
        overlays = Overlays(triggers={self.trigger: [(t_trig, t_trig + self.latch)]})
        if self.category == 2:
            off_start = None
        elif self.category == 1:  # controlled stop: torque removed once every joint is at standstill
            off_start = (
                t_trig + max(p.time_below(self.standstill_speed) for p in profiles) + self.standstill_hold
            )
        else:  # category 0: power removed when braking starts
            off_start = t_trig + reaction
        if off_start is not None:
            overlays.gain = [
                (off_start, 1.0),
                (off_start + self.torque_ramp, 0.0),
                (t_resume, 0.0),
                (t_resume + self.torque_ramp, 1.0),
            ]
        detail = StopDetail(self.trigger, t_trig, reaction, self.joints, profiles, off_start)
        return segments, overlays, Incident(self.item, self.trigger, (start, start + self.duration), detail)


@dataclass(eq=False)
class GapBlock(Block):
    """The device holds the rest pose while ``stream`` logs nothing for ``gap`` s."""

    item: ScenarioItem
    stream: str
    gap: float
    duration: float = field(init=False)

    def __post_init__(self) -> None:
        self.duration = 1.0 + self.gap + 1.0

    def build(
        self, start: float, scale: float, index: int, rest: Array
    ) -> tuple[list[Segment], Overlays, Incident | None]:
        gap = Gap(self.stream, start + 1.0, start + 1.0 + self.gap)
        incident = Incident(self.item, self.stream, (start, start + self.duration), GapDetail(gap))
        return [_hold(start, rest, index)], Overlays(gaps=[gap]), incident
