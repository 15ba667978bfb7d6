"""The true (noise-free) physical signals of a planned session, at any sample times, in SI units."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from bracer.simulate.body import MODEL_JOINTS, build_arm
from bracer.simulate.dynamics import Chain, fix_joints, inverse_dynamics_rows
from bracer.simulate.envelope import ContactEnvelope, Envelope
from bracer.simulate.events import Overlays
from bracer.simulate.params import SimulationParameters
from bracer.simulate.timeline import HOLD, MOVE, STOP, Timeline

__all__ = ["NODE_SPACING", "Physics", "model_chain"]

#: Inside a minimum-jerk move, torque is computed exactly at least this often (s) and interpolated between.
NODE_SPACING = 0.004

Array = NDArray[np.float64]


def model_chain(envelope: Envelope, params: SimulationParameters) -> Chain:
    """The arm chain with the model joints that no protocol joint drives locked at zero (fewer joints to
    compute, the same torques)."""
    driven = {je.mapping.model for je in envelope.joints.values() if je.mapping.model is not None}
    return fix_joints(build_arm(params), set(MODEL_JOINTS) - driven)


@dataclass(frozen=True, eq=False)
class Physics:
    """Joint motion, joint torque and cuff force of a plan.

    ``joint_names`` orders the columns of the timeline (the protocol's joints, in file order).
    """

    envelope: Envelope
    params: SimulationParameters
    chain: Chain
    joint_names: tuple[str, ...]
    timeline: Timeline
    overlays: Overlays

    def motion(self, t: Array) -> tuple[Array, Array, Array]:
        """Position (rad), velocity (rad/s), acceleration (rad/s²) of every protocol joint: each (n, J)."""
        return self.timeline.evaluate(t)

    def _model_rows(self, q: Array, qd: Array, qdd: Array) -> tuple[Array, Array, Array]:
        """Protocol-joint arrays (n, J) -> model-joint arrays (N, n); model joints no protocol joint drives
        stay 0."""
        n = q.shape[0]
        rows = (np.zeros((self.chain.n, n)), np.zeros((self.chain.n, n)), np.zeros((self.chain.n, n)))
        index = {name: i for i, name in enumerate(self.chain.names)}
        for j, name in enumerate(self.joint_names):
            mapping = self.envelope.joints[name].mapping
            if mapping.model is None:
                continue
            k = index[mapping.model]
            for row, src in zip(rows, (q, qd, qdd), strict=True):
                row[k] = mapping.sign * src[:, j]
        return rows

    def torques(
        self, t: Array, state: tuple[Array, Array, Array] | None = None, exact: bool = False
    ) -> Array:
        """Actuator torque of every protocol joint (N·m), shape (n, J), for times ``t`` sorted ascending.

        The rigid-body torque of limb and device (τ = M(q)q̈ + C(q, q̇)q̇ + G(q), recursive Newton–Euler),
        times the actuator gain (0 while a stop has removed the torque).  A hold is one pose, evaluated once.
        Inside a minimum-jerk move the torque is smooth: it is evaluated exactly every ``NODE_SPACING``
        seconds and at the move's last sample, and linearly interpolated in between (error below a fifth of
        the default torque ADC step and a seventieth of its noise; ``exact=True`` evaluates every sample).
        Stops, whose acceleration steps, are evaluated at every sample.
        """
        q, qd, qdd = self.motion(t) if state is None else state
        n = t.shape[0]
        model_tau = np.empty((self.chain.n, n))
        if n:
            lo, hi = self.timeline.spans(t)
            present = np.flatnonzero(hi > lo)
            counts = (hi - lo)[present]
            kind = np.repeat(self.timeline.kind[present], counts)
            first = np.repeat(lo[present], counts)
            last = np.repeat(hi[present], counts) - 1
            index = np.arange(n)
            move = kind == MOVE
            if exact:
                nodes = move
            else:
                offset = t - t[first]
                nodes = move & (
                    (np.diff(np.floor(offset / NODE_SPACING), prepend=-1.0) != 0) | (index == last)
                )
            hold = kind == HOLD
            evaluate = np.flatnonzero(nodes | (kind == STOP) | (hold & (index == first)))
            model_tau[:, evaluate] = inverse_dynamics_rows(
                self.chain, *self._model_rows(q[evaluate], qd[evaluate], qdd[evaluate])
            )
            model_tau[:, hold] = model_tau[:, first[hold]]
            between = np.flatnonzero(move & ~nodes)
            if between.size:
                at = np.flatnonzero(nodes)
                for row in model_tau:
                    row[between] = np.interp(t[between], t[at], row[at])
        names = {name: i for i, name in enumerate(self.chain.names)}
        tau = np.empty_like(q)
        for j, name in enumerate(self.joint_names):
            mapping = self.envelope.joints[name].mapping
            if mapping.model is None:
                tau[:, j] = self.params.unmodelled_inertia * qdd[:, j]
            else:
                tau[:, j] = mapping.sign * model_tau[names[mapping.model]]
        tau *= self.overlays.torque_gain(t)[:, None]
        return tau

    def lagged_motion(self, t: Array) -> tuple[tuple[Array, Array, Array], tuple[Array, Array, Array]]:
        """Motion at ``t`` and ``tracking_lag`` earlier (what the cuff model needs), to share between
        cuffs."""
        return self.motion(t), self.motion(t - self.params.tracking_lag)

    def cuff_components(
        self,
        contact: ContactEnvelope,
        t: Array,
        lagged: tuple[tuple[Array, Array, Array], tuple[Array, Array, Array]] | None = None,
    ) -> dict[str, Array]:
        """Force across the tissue of one cuff (N) per component ("axial", "lateral", "normal"): (n,) each.

        The limb lags the device by ``tracking_lag``; each joint with a lever arm to the cuff displaces the
        tissue by lever·(q(t) − q(t − lag)) along the component its motion loads; pushes add along the normal.
        The force is F = k·δ + c·δ̇ per component (no axial load is modelled).
        """
        lag = self.params.tracking_lag
        delta = {role: np.zeros(t.shape) for role in ("axial", "lateral", "normal")}
        rate = {role: np.zeros(t.shape) for role in ("axial", "lateral", "normal")}
        if contact.levers and lag > 0:
            (q_now, qd_now, _), (q_then, qd_then, _) = self.lagged_motion(t) if lagged is None else lagged
            for joint, (arm, role) in contact.levers.items():
                j = self.joint_names.index(joint)
                delta[role] += arm * (q_now[:, j] - q_then[:, j])
                rate[role] += arm * (qd_now[:, j] - qd_then[:, j])
        for push in self.overlays.pushes:
            if push.contact == contact.name:
                d, r = push.displacement(t)
                delta["normal"] += d
                rate["normal"] += r
        return {role: contact.tissue.force(delta[role], rate[role]) for role in delta}

    def cuff_columns(
        self,
        contact: ContactEnvelope,
        t: Array,
        lagged: tuple[tuple[Array, Array, Array], tuple[Array, Array, Array]] | None = None,
    ) -> dict[str, Array]:
        """The force each of the contact's columns carries (N), by column name."""
        comps = self.cuff_components(contact, t, lagged)
        return {col: comps[role] for col, role in contact.roles.items()}

    def cuff_force(
        self, contact: ContactEnvelope, t: Array, columns: dict[str, Array] | None = None
    ) -> Array:
        """The force the protocol limits (N, (n,)): the magnitude over the contact's columns, or its one
        axis."""
        cols = self.cuff_columns(contact, t) if columns is None else columns
        ch = contact.contact.channels.force
        if ch is not None and ch.use == "axis" and ch.axis is not None:
            return np.abs(cols[ch.axis])
        stacked = np.stack(list(cols.values()), axis=1) if cols else np.zeros((t.shape[0], 1))
        return np.sqrt(np.sum(stacked * stacked, axis=1))
