"""The limits a simulated session must respect, per joint and per contact, for one participant.

Read from the effective protocol (:func:`bracer.protocol.resolve.resolve`): for each quantity the governing
limit is its innermost declared layer (planned, else device, else mechanical).  Each limit comes with its
near-miss band (``near_miss`` in the protocol: a fraction of the limit and/or an absolute value, the wider
band wins).  Therapy movements keep two bands plus 2 deg clear of every range end, peak at most 60 % of the
speed limit and one and a half bands below it, so that a clean session has nothing near a limit.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal, cast

from bracer.protocol.model import LAYERS, Contact, Joint, JointChannels, Margin, NearMiss, Protocol
from bracer.protocol.quantities import Directional
from bracer.protocol.resolve import Resolution
from bracer.simulate.body import JointMapping, map_joints
from bracer.simulate.tissue import Tissue, tissue_for_region
from bracer.units import Quantity

__all__ = ["ContactEnvelope", "Envelope", "JointEnvelope", "band", "build_envelope"]

Direction = Literal["positive", "negative"]
AxisRole = Literal["axial", "lateral", "normal"]

_CLEARANCE = math.radians(2.0)


def band(limit: Quantity | None, margin: Margin | None) -> float:
    """Width of the near-miss band below ``limit`` (SI): max(fraction·|limit|, absolute); 0 without a
    margin."""
    if limit is None or margin is None:
        return 0.0
    width = 0.0
    if margin.fraction is not None:
        width = margin.fraction * abs(limit.si)
    if margin.absolute is not None and margin.absolute.dimension == limit.dimension:
        width = max(width, margin.absolute.si)
    return width


def _governing(layers: object) -> tuple[str, object] | tuple[None, None]:
    for name in LAYERS:
        value = getattr(layers, name)
        if value is not None:
            return name, value
    return None, None


def _next_layer(layers: object, after: str | None) -> object | None:
    if after is None:
        return None
    names: list[str] = list(LAYERS)
    for name in names[names.index(after) + 1 :]:
        value = getattr(layers, name)
        if value is not None:
            return value
    return None


@dataclass(frozen=True, eq=False)
class JointEnvelope:
    """One joint's governing limits (SI) and the room left for therapy movements.

    Angles in rad, speeds rad/s, accelerations rad/s², torques N·m.  ``range_lo``/``range_hi`` are the
    governing range ends as declared (for units); ``therapy_lo``/``therapy_hi``/``rest`` are where clean
    movements stay.
    """

    name: str
    joint: Joint
    mapping: JointMapping
    locked: bool
    lock_tolerance: float | None
    range_layer: str | None
    range_lo: Quantity | None
    range_hi: Quantity | None
    outer_lo: Quantity | None
    outer_hi: Quantity | None
    band_lo: float
    band_hi: float
    speed_layer: str | None
    speed: Directional | None
    outer_speed: Directional | None
    torque_layer: str | None
    torque: Directional | None
    acceleration: Directional | None
    therapy_lo: float
    therapy_hi: float
    rest: float
    margins: NearMiss  # the protocol's near-miss margins, for the bands of speed, torque and acceleration

    @property
    def channels(self) -> JointChannels:
        return self.joint.channels

    @property
    def stop_deceleration(self) -> float | None:
        d = self.joint.stop_deceleration
        return None if d is None else d.si

    @property
    def movable(self) -> bool:
        return not self.locked and self.range_lo is not None

    def speed_limit(self, direction: Direction) -> Quantity | None:
        return None if self.speed is None else self.speed.get(direction)

    def speed_band(self, direction: Direction) -> float:
        return band(self.speed_limit(direction), self.margins.speed)

    def speed_cap(self, direction: Direction) -> float:
        """Largest peak speed of a clean movement in ``direction``: min(0.6·limit, limit − 1.5 bands);
        rad/s."""
        limit = self.speed_limit(direction)
        if limit is None:
            return math.radians(30.0)  # no speed limit declared: a moderate therapy speed
        return max(0.0, min(0.6 * limit.si, limit.si - 1.5 * self.speed_band(direction)))

    def acceleration_cap(self, direction: Direction) -> float | None:
        if self.acceleration is None:
            return None
        limit = self.acceleration.get(direction)
        width = band(limit, self.margins.acceleration)
        return max(0.0, min(0.6 * limit.si, limit.si - 1.5 * width))

    def torque_limit(self, direction: Direction) -> Quantity | None:
        return None if self.torque is None else self.torque.get(direction)

    def torque_band(self, direction: Direction) -> float:
        return band(self.torque_limit(direction), self.margins.torque)

    def torque_cap(self, direction: Direction) -> float:
        """Largest |torque| of a clean session in ``direction``: limit − 2 bands (N·m; inf without a
        limit)."""
        limit = self.torque_limit(direction)
        if limit is None:
            return math.inf
        return limit.si - 2.0 * self.torque_band(direction)


@dataclass(frozen=True, eq=False)
class ContactEnvelope:
    """One contact's governing limits (SI: N, Pa, s), its tissue model and its force columns' roles."""

    name: str
    contact: Contact
    tissue: Tissue
    area: float
    force_qs: Quantity
    force_transient: Quantity | None
    transient_max_duration: float
    pressure_qs: Quantity | None
    pressure_transient: Quantity | None
    sustained_level: Quantity | None
    sustained_duration: Quantity | None
    band_force_qs: float
    band_force_transient: float
    band_pressure_qs: float
    band_pressure_transient: float
    roles: dict[str, AxisRole]  # force column -> which component it carries
    levers: dict[str, tuple[float, AxisRole]]  # protocol joint -> (lever arm m, component its motion loads)

    @property
    def measure(self) -> str:
        ch = self.contact.channels.force
        return "magnitude" if ch is None else ch.use

    @property
    def normal_column(self) -> str | None:
        for col, role in self.roles.items():
            if role == "normal":
                return col
        return None

    def force_cap(self) -> float:
        """Largest force of a clean session: below every band, and below the sustained level (N)."""
        caps = [self.force_qs.si - 2.0 * self.band_force_qs]
        if self.pressure_qs is not None:
            caps.append((self.pressure_qs.si - 2.0 * self.band_pressure_qs) * self.area)
        if self.sustained_level is not None:
            caps.append(0.9 * self.sustained_level.si)
        return min(caps)


@dataclass(frozen=True, eq=False)
class Envelope:
    resolution: Resolution
    joints: dict[str, JointEnvelope]
    contacts: dict[str, ContactEnvelope]

    @property
    def protocol(self) -> Protocol:
        return self.resolution.protocol


def _roles(contact: Contact) -> dict[str, AxisRole]:
    ch = contact.channels.force
    if ch is None:
        return {}
    cols = ch.all_columns
    if ch.use == "axis" and ch.axis is not None:
        others: list[AxisRole] = ["lateral", "axial"]
        out: dict[str, AxisRole] = {}
        for col in cols:
            out[col] = "normal" if col == ch.axis else others.pop(0)
        return out
    order: dict[int, list[AxisRole]] = {
        1: ["normal"],
        2: ["lateral", "normal"],
        3: ["axial", "lateral", "normal"],
    }
    return dict(zip(cols, order[len(cols)], strict=True))


def _lever_role(mapping: JointMapping) -> AxisRole | None:
    if mapping.model is None:
        return "normal"
    if mapping.model.endswith("rotation"):
        return None
    if mapping.model == "shoulder_abduction":
        return "lateral"
    return "normal"


def _joint(
    name: str, joint: Joint, mapping: JointMapping, protocol: Protocol, locked: dict[str, float]
) -> JointEnvelope:
    nm = protocol.near_miss
    range_layer, bounds = _governing(joint.range)
    outer = _next_layer(joint.range, range_layer)
    lo_q = getattr(bounds, "min", None)
    hi_q = getattr(bounds, "max", None)
    band_lo = band(lo_q, nm.position)
    band_hi = band(hi_q, nm.position)
    speed_layer, speed = _governing(joint.speed)
    torque_layer, torque = _governing(joint.torque)
    _, accel = _governing(joint.acceleration)
    if lo_q is not None and hi_q is not None:
        lo, hi = lo_q.si + 2 * band_lo + _CLEARANCE, hi_q.si - 2 * band_hi - _CLEARANCE
        if hi - lo < math.radians(5.0):  # a narrow range: use its middle half
            span = hi_q.si - lo_q.si
            lo, hi = lo_q.si + span / 4, hi_q.si - span / 4
        rest = min(max(0.0, lo), hi)  # the anatomical neutral, or the therapy end nearest to it
    else:
        lo = hi = rest = 0.0
    is_locked = name in locked
    if is_locked:  # held at zero when zero is inside the range, else at the range's middle
        inside = lo_q is not None and hi_q is not None and lo_q.si < 0.0 < hi_q.si
        mid = 0.0 if lo_q is None or hi_q is None else 0.5 * (lo_q.si + hi_q.si)
        rest = lo = hi = 0.0 if inside or lo_q is None else mid
    return JointEnvelope(
        name=name,
        joint=joint,
        mapping=mapping,
        locked=is_locked,
        lock_tolerance=locked.get(name),
        range_layer=range_layer,
        range_lo=lo_q,
        range_hi=hi_q,
        outer_lo=getattr(outer, "min", None),
        outer_hi=getattr(outer, "max", None),
        band_lo=band_lo,
        band_hi=band_hi,
        speed_layer=speed_layer,
        speed=speed,  # type: ignore[arg-type]
        outer_speed=_next_layer(joint.speed, speed_layer),  # type: ignore[arg-type]
        torque_layer=torque_layer,
        torque=torque,  # type: ignore[arg-type]
        acceleration=accel,  # type: ignore[arg-type]
        therapy_lo=lo,
        therapy_hi=hi,
        rest=rest,
        margins=nm,
    )


def _contact(
    name: str, contact: Contact, protocol: Protocol, mappings: dict[str, JointMapping], damping_ratio: float
) -> ContactEnvelope:
    nm = protocol.near_miss
    levers: dict[str, tuple[float, AxisRole]] = {}
    for joint, arm in contact.lever_arms.items():
        if isinstance(arm, Quantity) and joint in mappings:
            role = _lever_role(mappings[joint])
            if role is not None:
                levers[joint] = (cast(Quantity, arm).si, role)
    pressure = contact.pressure
    sustained = contact.sustained
    return ContactEnvelope(
        name=name,
        contact=contact,
        tissue=tissue_for_region(contact.body_region, damping_ratio),
        area=contact.area.si,
        force_qs=contact.force.quasi_static,
        force_transient=contact.force.transient,
        transient_max_duration=contact.force.transient_max_duration.si,
        pressure_qs=pressure.quasi_static if pressure else None,
        pressure_transient=pressure.transient if pressure else None,
        sustained_level=sustained.level if sustained else None,
        sustained_duration=sustained.max_duration if sustained else None,
        band_force_qs=band(contact.force.quasi_static, nm.force),
        band_force_transient=band(contact.force.transient, nm.force),
        band_pressure_qs=band(pressure.quasi_static if pressure else None, nm.pressure),
        band_pressure_transient=band(pressure.transient if pressure else None, nm.pressure),
        roles=_roles(contact),
        levers=levers,
    )


def build_envelope(resolution: Resolution, damping_ratio: float) -> Envelope:
    """Limits and therapy room of every joint and contact of the resolved protocol."""
    protocol = resolution.protocol
    mappings = map_joints(protocol)
    participant = resolution.participant
    if participant is not None and participant.locked_joints is not None:
        locked_names = participant.locked_joints
        tolerances = {
            n: protocol.locked_joints[n].tolerance.si if n in protocol.locked_joints else math.radians(2)
            for n in locked_names
        }
    else:
        tolerances = {n: lj.tolerance.si for n, lj in protocol.locked_joints.items()}
    joints = {n: _joint(n, j, mappings[n], protocol, tolerances) for n, j in protocol.joints.items()}
    contacts = {n: _contact(n, c, protocol, mappings, damping_ratio) for n, c in protocol.contacts.items()}
    return Envelope(resolution, joints, contacts)
