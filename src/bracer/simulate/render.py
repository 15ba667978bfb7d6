"""Sample a planned session on each stream's clock and turn it into the columns of the protocol's channel map.

Per stream: the time column (in its declared unit), then each joint's position, velocity and torque columns,
each contact's force columns, and the stop-trigger and protection columns logged on that stream.  Physical
values are converted from SI to each column's declared unit, then pass through the channel's sensor model
(offset, noise, quantisation).  Rows inside a logging gap are left out.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from bracer.protocol.model import ChannelRef
from bracer.simulate.guard import Guard
from bracer.simulate.incidents import SimulationError
from bracer.simulate.params import SensorModel
from bracer.simulate.planner import Plan
from bracer.simulate.sensors import channel_rng, measure
from bracer.units import parse_unit

__all__ = ["ChannelInfo", "RenderedStream", "render_stream"]

Array = NDArray[np.float64]


@dataclass(frozen=True, slots=True)
class ChannelInfo:
    """A written column: what it carries and its sensor model, in the column's declared unit."""

    column: str
    stream: str
    unit: str
    kind: str  # time, position, velocity, torque, force, trigger, protection
    subject: str | None
    noise: float
    offset: float
    step: float


@dataclass(frozen=True, eq=False)
class RenderedStream:
    name: str
    columns: dict[str, Any]  # column -> ndarray (float64, int64 or str)
    channels: tuple[ChannelInfo, ...]

    @property
    def rows(self) -> int:
        first = next(iter(self.columns.values()))
        return len(first)


def _on(channel: ChannelRef | None, stream: str) -> bool:
    return channel is not None and channel.stream == stream


def _kept(plan: Plan, name: str, t: Array) -> NDArray[np.bool_]:
    keep = np.ones(t.shape, dtype=bool)
    for gap in plan.physics.overlays.gaps:
        if gap.stream == name:
            keep &= ~((t > gap.after) & (t < gap.before))
    return keep


def _inactive_active(active: list[Any] | None, normal: list[Any] | None) -> tuple[Any, Any]:
    """Values a trigger column holds when idle and when it requests a stop."""
    if active is not None:
        if all(isinstance(v, int | float) and not isinstance(v, bool) for v in active):
            idle: Any = 0 if 0 not in active else int(max(active)) + 1
        else:
            idle = "normal" if "normal" not in active else "idle"
        return idle, active[0]
    assert normal is not None
    if all(isinstance(v, int | float) and not isinstance(v, bool) for v in normal):
        return normal[0], int(max(normal)) + 1
    return normal[0], "stop"


def _status_array(values: Any, n: int) -> Any:
    return np.full(n, values, dtype=np.int64 if isinstance(values, int) else object)


class _Columns:
    def __init__(self, plan: Plan, stream: str) -> None:
        self.plan = plan
        self.stream = stream
        self.data: dict[str, Any] = {}
        self.info: list[ChannelInfo] = []

    def _claim(self, column: str) -> None:
        if column in self.data:
            raise SimulationError(
                f"column '{column}' is mapped twice on stream '{self.stream}' by the protocol's "
                "channel map; each channel needs its own column"
            )

    def measured(
        self, column: str, unit: str, kind: str, subject: str | None, x_si: Array, model: SensorModel
    ) -> None:
        self._claim(column)
        factor, _ = parse_unit(unit)
        declared = SensorModel(model.noise / factor, model.offset / factor, model.step / factor)
        rng = channel_rng(self.plan.seed, f"{self.stream}/{column}")
        reading, offset = measure(x_si / factor, declared, rng)
        self.data[column] = reading
        self.info.append(
            ChannelInfo(column, self.stream, unit, kind, subject, declared.noise, offset, declared.step)
        )

    def status(self, column: str, kind: str, subject: str, values: Any, unit: str = "") -> None:
        """A column written as it is: the time, a trigger or a protection state."""
        self._claim(column)
        self.data[column] = values
        self.info.append(ChannelInfo(column, self.stream, unit, kind, subject, 0.0, 0.0, 0.0))


def render_stream(plan: Plan, name: str, guard: Guard) -> RenderedStream:
    """All columns of stream ``name``; noise-free values are checked by ``guard`` on the way."""
    protocol = plan.envelope.protocol
    spec = protocol.logging.streams[name]
    clock = plan.clocks[name]
    t_all = clock.times()
    t = t_all[_kept(plan, name, t_all)]
    cols = _Columns(plan, name)
    time_factor, _ = parse_unit(spec.time.unit)
    cols.status(spec.time.column, "time", name, t / time_factor, unit=spec.time.unit)
    sensors = plan.params.sensors
    physics = plan.physics

    joints_here = [
        n
        for n in plan.joint_names
        if any(
            _on(ch, name)
            for ch in (
                protocol.joints[n].channels.position,
                protocol.joints[n].channels.velocity,
                protocol.joints[n].channels.torque,
            )
        )
    ]
    state = physics.motion(t) if joints_here else None
    needs_torque = any(_on(protocol.joints[n].channels.torque, name) for n in joints_here)
    tau = physics.torques(t, state) if needs_torque and state is not None else None
    for n in joints_here:
        j = plan.joint_names.index(n)
        je = plan.envelope.joints[n]
        chs = je.channels
        assert state is not None
        x = state[0][:, j] if chs.position is not None and chs.position.stream == name else None
        has_velocity = chs.velocity is not None and chs.velocity.stream == name
        speed_here = has_velocity or (chs.velocity is None and x is not None)
        v = state[1][:, j] if speed_here else None
        tj = tau[:, j] if tau is not None and chs.torque is not None and chs.torque.stream == name else None
        guard.joint(je, t, x, v, tj)
        if x is not None and chs.position is not None:
            cols.measured(chs.position.column, chs.position.unit, "position", n, x, sensors.position)
        if has_velocity and chs.velocity is not None and v is not None:
            cols.measured(chs.velocity.column, chs.velocity.unit, "velocity", n, v, sensors.velocity)
        if tj is not None and chs.torque is not None:
            cols.measured(chs.torque.column, chs.torque.unit, "torque", n, tj, sensors.torque)

    lagged = None
    for cname, c in plan.envelope.contacts.items():
        ch = c.contact.channels.force
        if ch is None or ch.stream != name:
            continue
        if lagged is None:
            lagged = physics.lagged_motion(t)
        per_column = physics.cuff_columns(c, t, lagged)
        guard.contact(c, t, physics.cuff_force(c, t, per_column))
        for column in ch.all_columns:
            cols.measured(column, ch.unit, "force", cname, per_column[column], sensors.force)

    for tname, trig in protocol.logging.triggers.items():
        if trig.stream != name:
            continue
        idle, active = _inactive_active(trig.active, trig.normal)
        values = _status_array(idle, t.shape[0])
        values[physics.overlays.trigger_active(tname, t)] = active
        cols.status(trig.column, "trigger", tname, values)
    for pname, prot in protocol.logging.protections.items():
        if prot.stream == name:
            cols.status(prot.column, "protection", pname, _status_array(prot.allowed[0], t.shape[0]))
    return RenderedStream(name, cols.data, tuple(cols.info))
