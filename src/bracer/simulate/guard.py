"""Keep the ground truth complete: outside its scripted incidents, nothing in a session may come near a limit.

Every run of noise-free samples that lies inside a near-miss band or past a limit must fall inside the window
of an incident scripted for that subject and quantity.  Anything else means the truth would be missing an
event the audit is right to report, so the simulation stops with an error instead of writing a log whose truth
is wrong.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from bracer.simulate.blocks import ExcursionDetail, FastMoveDetail, PushDetail
from bracer.simulate.envelope import ContactEnvelope, JointEnvelope
from bracer.simulate.incidents import SimulationError
from bracer.simulate.planner import Plan
from bracer.units import format_number

__all__ = ["Guard"]

Array = NDArray[np.float64]


def _allowed(plan: Plan) -> dict[tuple[str, str], list[tuple[float, float]]]:
    out: dict[tuple[str, str], list[tuple[float, float]]] = {}
    for inc in plan.incidents:
        d = inc.detail
        if isinstance(d, ExcursionDetail):
            keys = [(d.joint, "position")]
        elif isinstance(d, FastMoveDetail):
            keys = [(d.joint, "speed")]
        elif isinstance(d, PushDetail):
            keys = [(d.contact, "force"), (d.contact, "pressure"), (d.contact, "sustained")]
        else:
            keys = []
        for key in keys:
            out.setdefault(key, []).append(inc.window)
    return out


@dataclass(eq=False)
class Guard:
    plan: Plan
    problems: list[str] = field(default_factory=list)
    _windows: dict[tuple[str, str], list[tuple[float, float]]] = field(init=False)

    def __post_init__(self) -> None:
        self._windows = _allowed(self.plan)

    def _check(self, subject: str, quantity: str, t: Array, mask: NDArray[np.bool_], what: str) -> None:
        if not mask.any():
            return
        edges = np.flatnonzero(np.diff(np.concatenate([[False], mask, [False]]).astype(np.int8)))
        windows = self._windows.get((subject, quantity), [])
        for a, b in zip(edges[::2], edges[1::2] - 1, strict=True):
            t0, t1 = float(t[a]), float(t[b])
            if not any(w0 <= t0 and t1 <= w1 for w0, w1 in windows):
                self.problems.append(
                    f"{subject} {quantity} {what} from t = {format_number(t0, 6)} s to "
                    f"{format_number(t1, 6)} s"
                )
                return

    def joint(self, je: JointEnvelope, t: Array, x: Array | None, v: Array | None, tau: Array | None) -> None:
        """Check one joint's noise-free position (rad), velocity (rad/s) and torque (N·m) on times ``t``."""
        if x is not None:
            if je.locked and je.lock_tolerance is not None:
                self._check(
                    je.name, "lock", t, np.abs(x - je.rest) > 0.5 * je.lock_tolerance, "moves while locked"
                )
            if je.range_lo is not None and je.range_hi is not None:
                near = (x > je.range_hi.si - je.band_hi) | (x < je.range_lo.si + je.band_lo)
                self._check(je.name, "position", t, near, "comes near its range limit")
        if v is not None and je.speed is not None:
            near = (v > je.speed.positive.si - je.speed_band("positive")) | (
                v < -(je.speed.negative.si - je.speed_band("negative"))
            )
            self._check(je.name, "speed", t, near, "comes near its speed limit")
        if tau is not None and je.torque is not None:
            near = (tau > je.torque.positive.si - je.torque_band("positive")) | (
                tau < -(je.torque.negative.si - je.torque_band("negative"))
            )
            self._check(je.name, "torque", t, near, "comes near its torque limit")

    def contact(self, c: ContactEnvelope, t: Array, force: Array) -> None:
        """Check one contact's noise-free force (N) on times ``t``."""
        self._check(c.name, "force", t, force > c.force_qs.si - c.band_force_qs, "comes near its force limit")
        if c.pressure_qs is not None:
            self._check(
                c.name,
                "pressure",
                t,
                force / c.area > c.pressure_qs.si - c.band_pressure_qs,
                "comes near its pressure limit",
            )
        if c.sustained_level is not None:
            self._check(
                c.name,
                "sustained",
                t,
                force >= 0.95 * c.sustained_level.si,
                "comes near its sustained-force level",
            )

    def raise_if_any(self) -> None:
        if self.problems:
            listed = "; ".join(self.problems[:5])
            raise SimulationError(
                "the simulated session would contain events its ground truth does not script "
                f"({listed}); the protocol's limits leave too little room for the body and device "
                "parameters, or this is a bug in bracer (please report it)"
            )
