"""Joint motion as a sequence of analytic segments: holds, minimum-jerk moves and stops.

A segment lasts from its start until the next segment starts; a move cut short by the next segment (a stop) is
simply truncated.  Position, velocity and acceleration are evaluated in closed form at any sample times, so
every stream samples the same motion on its own clock and nothing is differentiated numerically.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from bracer.simulate.minjerk import shape, shape_acceleration, shape_speed
from bracer.simulate.stopping import stop_kinematics

__all__ = ["HOLD", "MOVE", "STOP", "Segment", "Timeline"]

Array = NDArray[np.float64]

HOLD, MOVE, STOP = 0, 1, 2


@dataclass(frozen=True, eq=False)
class Segment:
    """One piece of motion of all planned joints (angles in rad, per joint: shape (J,)).

    ``MOVE``: minimum-jerk from ``x0`` to ``x1`` in ``duration`` s.  ``HOLD``: stay at ``x0``.  ``STOP``: from
    ``x0`` at velocity ``v0``, keep ``v0`` for ``reaction`` s, then brake at ``deceleration`` to standstill.
    ``block`` numbers the block (therapy repetition or incident) that made the segment.
    """

    start: float
    kind: int
    x0: Array
    x1: Array
    duration: float = 0.0
    v0: Array | None = None
    deceleration: Array | None = None
    reaction: float = 0.0
    block: int = -1

    def end_position(self) -> Array:
        if self.kind == MOVE:
            return self.x1
        if self.kind == STOP:
            assert self.v0 is not None and self.deceleration is not None
            x, _, _ = stop_kinematics(
                np.full(self.x0.shape, 1e9), self.v0, self.deceleration, np.full(self.x0.shape, self.reaction)
            )
            return self.x0 + x
        return self.x0


@dataclass(frozen=True, eq=False)
class Timeline:
    """Segments as arrays (m segments, J joints), sorted by start time."""

    start: Array
    kind: NDArray[np.int8]
    duration: Array
    x0: Array
    x1: Array
    v0: Array
    deceleration: Array
    reaction: Array
    block: NDArray[np.int64]

    @classmethod
    def from_segments(cls, segments: list[Segment], joints: int) -> Timeline:
        if not segments:
            raise ValueError("a timeline needs at least one segment")
        starts = np.array([s.start for s in segments])
        if np.any(np.diff(starts) < 0):
            raise ValueError("segments must be in time order")
        zeros = np.zeros(joints)
        return cls(
            start=starts,
            kind=np.array([s.kind for s in segments], dtype=np.int8),
            duration=np.array([s.duration for s in segments]),
            x0=np.array([s.x0 for s in segments]).reshape(len(segments), joints),
            x1=np.array([s.x1 for s in segments]).reshape(len(segments), joints),
            v0=np.array([zeros if s.v0 is None else s.v0 for s in segments]).reshape(len(segments), joints),
            deceleration=np.array(
                [zeros if s.deceleration is None else s.deceleration for s in segments]
            ).reshape(len(segments), joints),
            reaction=np.array([s.reaction for s in segments]),
            block=np.array([s.block for s in segments], dtype=np.int64),
        )

    @property
    def joints(self) -> int:
        return int(self.x0.shape[1])

    def segment_at(self, t: Array) -> NDArray[np.intp]:
        """Index of the segment in force at each time (the first segment before it starts)."""
        return np.clip(np.searchsorted(self.start, t, side="right") - 1, 0, len(self.start) - 1)

    def spans(self, t: Array) -> tuple[NDArray[np.intp], NDArray[np.intp]]:
        """For times ``t`` sorted ascending: the first and one-past-last sample of each segment, (m,) each."""
        bounds = np.searchsorted(t, self.start, side="left")
        lo = bounds.copy()
        lo[0] = 0
        hi = np.append(bounds[1:], t.shape[0])
        return lo, np.maximum(hi, lo)

    def evaluate(self, t: Array) -> tuple[Array, Array, Array]:
        """Position (rad), velocity (rad/s) and acceleration (rad/s²) of every joint at times ``t`` (n,).

        Works segment by segment on contiguous runs of samples (a loop over segments, not samples); unsorted
        times are sorted first and the result put back in their order.

        Returns
        -------
        q, qd, qdd : ndarray, shape (n, J)
        """
        t = np.asarray(t, dtype=np.float64)
        if t.size > 1 and np.any(np.diff(t) < 0):
            order = np.argsort(t, kind="stable")
            back = np.empty_like(order)
            back[order] = np.arange(order.size)
            q, qd, qdd = self.evaluate(t[order])
            return q[back], qd[back], qdd[back]
        n, joints = t.shape[0], self.joints
        q = np.empty((n, joints))
        qd = np.zeros((n, joints))
        qdd = np.zeros((n, joints))
        lo, hi = self.spans(t)
        for i in np.flatnonzero(hi > lo):
            sl = slice(int(lo[i]), int(hi[i]))
            kind = self.kind[i]
            if kind == HOLD:
                q[sl] = self.x0[i]
            elif kind == MOVE:
                dur = self.duration[i]
                tau = (t[sl] - self.start[i]) / dur
                dist = self.x1[i] - self.x0[i]
                q[sl] = self.x0[i] + np.outer(shape(tau), dist)
                qd[sl] = np.outer(shape_speed(tau) / dur, dist)
                qdd[sl] = np.outer(shape_acceleration(tau) / dur**2, dist)
            else:
                local = (t[sl] - self.start[i])[:, None]
                x, v, a = stop_kinematics(local, self.v0[i], self.deceleration[i], np.array(self.reaction[i]))
                q[sl] = self.x0[i] + x
                qd[sl] = v
                qdd[sl] = a
        return q, qd, qdd
