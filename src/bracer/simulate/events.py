"""Things that happen besides joint motion: pushes at a cuff, stop requests, actuator torque on/off, log
gaps."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from bracer.simulate.minjerk import shape, shape_speed

__all__ = ["Gap", "Overlays", "Push"]

Array = NDArray[np.float64]


@dataclass(frozen=True, slots=True)
class Push:
    """The interaction displacement at one cuff rises to ``depth`` (m), holds, and falls; each ramp
    minimum-jerk."""

    contact: str
    start: float
    rise: float
    hold: float
    fall: float
    depth: float

    @property
    def end(self) -> float:
        return self.start + self.rise + self.hold + self.fall

    def displacement(self, t: Array) -> tuple[Array, Array]:
        """δ (m) and δ̇ (m/s) at times ``t`` (n,); zero outside the push."""
        t_up = (t - self.start) / self.rise
        fall_start = self.start + self.rise + self.hold
        t_down = (t - fall_start) / self.fall
        rising = (t >= self.start) & (t < self.start + self.rise)
        falling = (t >= fall_start) & (t < self.end)
        delta = np.where(rising, self.depth * shape(t_up), 0.0)
        delta = np.where((t >= self.start + self.rise) & (t < fall_start), self.depth, delta)
        delta = np.where(falling, self.depth * (1.0 - shape(t_down)), delta)
        rate = np.where(rising, self.depth * shape_speed(t_up) / self.rise, 0.0)
        rate = np.where(falling, -self.depth * shape_speed(t_down) / self.fall, rate)
        return delta, rate


@dataclass(frozen=True, slots=True)
class Gap:
    """Rows of ``stream`` whose time lies strictly between ``after`` and ``before`` are not logged."""

    stream: str
    after: float
    before: float


@dataclass(slots=True)
class Overlays:
    """Everything a block adds besides its motion segments."""

    pushes: list[Push] = field(default_factory=list)
    triggers: dict[str, list[tuple[float, float]]] = field(
        default_factory=dict
    )  # name -> [on, off) intervals
    gain: list[tuple[float, float]] = field(
        default_factory=list
    )  # actuator torque gain breakpoints (t, 0..1)
    gaps: list[Gap] = field(default_factory=list)

    def extend(self, other: Overlays) -> None:
        self.pushes.extend(other.pushes)
        for name, spans in other.triggers.items():
            self.triggers.setdefault(name, []).extend(spans)
        self.gain.extend(other.gain)
        self.gaps.extend(other.gaps)

    def torque_gain(self, t: Array) -> Array:
        """Actuator torque gain at times ``t``: 1 except where a stop removed the torque (linear ramps)."""
        if not self.gain:
            return np.ones_like(t)
        pts = sorted(self.gain)
        return np.interp(t, [p[0] for p in pts], [p[1] for p in pts], left=1.0, right=1.0)

    def trigger_active(self, name: str, t: Array) -> NDArray[np.bool_]:
        active = np.zeros(t.shape, dtype=bool)
        for on, off in self.trigger_spans(name):
            active |= (t >= on) & (t < off)
        return active

    def trigger_spans(self, name: str) -> list[tuple[float, float]]:
        return self.triggers.get(name, [])
