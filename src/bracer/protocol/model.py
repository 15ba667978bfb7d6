"""The protocol file, as typed pydantic models.

A protocol file (YAML) declares, for one study: its identity; the device's joints with their limit layers
(planned < device < mechanical) for range, speed, torque and optionally acceleration; the stop function; the
contact points with their force, pressure and sustained-force limits; the logged channels that measure each
limit; near-miss margins; clinical cautions; and the participants with their measured range of motion and
overrides.  Every number carries its unit.  ``bracer schema`` prints the JSON Schema of :class:`Protocol`.

Conventions
-----------
* Range limits are signed angles in the joint's own sign convention: ``min`` is the end of the negative
  direction, ``max`` the end of the positive direction.  Speed, torque and acceleration limits are magnitudes,
  optionally one per direction.
* Names of joints, contacts, cautions, streams and participants are mapping keys, so a duplicate is a
  duplicate key -- an error the loader reports with both lines.
* Cross-references (a caution naming a joint, a lever arm naming a joint ...) are checked by
  :func:`bracer.protocol.load.load_protocol`, which knows the lines.
"""

from __future__ import annotations

import datetime as dt
from typing import Annotated, Generic, Literal, TypeVar

from pydantic import BaseModel, ConfigDict, Field, StringConstraints, field_validator, model_validator

from bracer.protocol.quantities import (
    Angle,
    AngularAcceleration,
    AngularSpeed,
    AnyQuantity,
    Area,
    DirAcceleration,
    DirSpeed,
    DirTorque,
    Force,
    Frequency,
    Pressure,
    Time,
    Torque,
    quantity_or_word,
    unit_of,
)
from bracer.units import Quantity

__all__ = [
    "BODY_REGIONS",
    "LAYERS",
    "Bounds",
    "Caution",
    "Contact",
    "Effect",
    "Joint",
    "Participant",
    "Protocol",
]

FORMAT_VERSION = 1

LayerName = Literal["planned", "device", "mechanical"]
#: Limit layers from the innermost outward.
LAYERS: tuple[LayerName, ...] = ("planned", "device", "mechanical")

#: Body regions of ISO/TS 15066:2016 Annex A, as keys of limits/iso_ts_15066_*.csv.
BodyRegion = Literal[
    "skull_forehead",
    "face",
    "neck",
    "back_shoulders",
    "chest",
    "abdomen",
    "pelvis",
    "upper_arm_elbow",
    "lower_arm_wrist",
    "hand_fingers",
    "thigh_knee",
    "lower_leg",
]
BODY_REGIONS: tuple[str, ...] = BodyRegion.__args__  # type: ignore[attr-defined]

Name = Annotated[str, StringConstraints(pattern=r"^[A-Za-z][A-Za-z0-9_\-]*$", max_length=64)]
Text = Annotated[str, StringConstraints(min_length=1, strip_whitespace=True)]
Fraction = Annotated[float, Field(gt=0, lt=1)]

T = TypeVar("T")

#: A lever arm: a length, or the words 'not modelled' where the geometry is not known.
LeverArm = quantity_or_word("length", "not modelled")


class Strict(BaseModel):
    """Base of every protocol model: unknown fields are errors, instances are immutable."""

    model_config = ConfigDict(extra="forbid", frozen=True)


# --------------------------------------------------------------------------------------------- identity


class Identity(Strict):
    id: Text = Field(description="Protocol identifier, as the ethics submission names it.")
    version: Text = Field(description="Protocol version; an amendment raises it.")
    date: dt.date = Field(description="Date of this version (YYYY-MM-DD).")
    title: Text
    study: Text | None = None
    site: Text | None = Field(None, description="Clinic or site where sessions take place.")
    population: Text = Field(description="Target population, in the protocol's own words.")
    roles: list[Text] = Field(
        min_length=1,
        description="Responsible roles (role names only, no personal names), e.g. 'responsible clinician'.",
    )


class DeclaredLayers(Strict):
    """Which limit layers the protocol declares for each quantity; completeness is checked against this."""

    range: list[LayerName] = ["planned", "device", "mechanical"]
    speed: list[LayerName] = ["planned", "device"]
    torque: list[LayerName] = ["planned", "device"]
    acceleration: list[LayerName] = []


class Device(Strict):
    name: Text
    kind: Text = Field(description="e.g. 'upper-limb exoskeleton', 'end-effector therapy robot'.")
    manufacturer: Text | None = None
    firmware: Text | None = None
    layers: DeclaredLayers = DeclaredLayers()


# --------------------------------------------------------------------------------------------- joints


class Bounds(Strict):
    """A signed angular range [min, max] in the joint's sign convention."""

    min: Angle
    max: Angle

    @model_validator(mode="after")
    def _ordered(self) -> Bounds:
        if not self.min.si < self.max.si:
            raise ValueError(f"min ({self.min}) must be below max ({self.max})")
        return self

    def get(self, direction: str) -> Quantity:
        return self.max if direction == "positive" else self.min

    def __str__(self) -> str:
        return f"[{self.min}, {self.max}]"


class Layers(Strict, Generic[T]):
    """One limit per layer; a layer that is not declared is left out."""

    planned: T | None = None
    device: T | None = None
    mechanical: T | None = None

    def layer(self, name: str) -> T | None:
        return getattr(self, name)  # type: ignore[no-any-return]


class RomReference(Strict):
    """Rows of the normative range-of-motion table (limits/upper_limb_rom.csv) for each direction."""

    positive: Text | None = Field(None, description="e.g. 'elbow flexion'")
    negative: Text | None = Field(None, description="e.g. 'elbow extension'")


class ChannelRef(Strict):
    """A logged column, its unit and the stream (file / time base) it belongs to.

    The subclasses below fix the unit's dimension, so that a wrong unit is reported at the ``unit`` field.
    """

    column: Text
    unit: str
    stream: Name = "main"


class AngleChannel(ChannelRef):
    unit: unit_of("angle")  # type: ignore[valid-type]


class AngularSpeedChannel(ChannelRef):
    unit: unit_of("angular speed")  # type: ignore[valid-type]


class TorqueChannel(ChannelRef):
    unit: unit_of("torque")  # type: ignore[valid-type]


class JointChannels(Strict):
    position: AngleChannel | None = None
    velocity: AngularSpeedChannel | None = Field(
        None, description="Absent: speed is derived from position (Savitzky–Golay derivative)."
    )
    torque: TorqueChannel | None = None


class Joint(Strict):
    motion: Text = Field(description="Anatomical motion the joint drives, e.g. 'elbow flexion–extension'.")
    positive: Text = Field(description="Anatomical direction of positive angles, e.g. 'flexion'.")
    negative: Text = Field(description="Anatomical direction of negative angles, e.g. 'extension'.")
    reference: RomReference = RomReference()
    range: Layers[Bounds] = Layers[Bounds]()
    speed: Layers[DirSpeed] = Layers[DirSpeed]()
    torque: Layers[DirTorque] = Layers[DirTorque]()
    acceleration: Layers[DirAcceleration] = Layers[DirAcceleration]()
    stop_deceleration: AngularAcceleration | None = Field(
        None, description="Deceleration the device can apply to this joint during a stop (magnitude)."
    )
    channels: JointChannels = JointChannels()

    @field_validator("stop_deceleration")
    @classmethod
    def _positive_decel(cls, v: Quantity | None) -> Quantity | None:
        if v is not None and v.si <= 0:
            raise ValueError(f"a deceleration is a magnitude and must be above zero, found '{v}'")
        return v


# --------------------------------------------------------------------------------------------- contacts


class ForceLimits(Strict):
    quasi_static: Force
    transient: Force | None = None
    transient_max_duration: Time = Field(
        default_factory=lambda: _q(500, "ms"),
        description="Force above the quasi-static limit for at most this long counts as transient contact.",
    )


class PressureLimits(Strict):
    quasi_static: Pressure
    transient: Pressure | None = None


class SustainedForce(Strict):
    level: Force
    max_duration: Time = Field(description="Longest time the force may stay at or above `level`.")


class ForceChannel(Strict):
    """Force sensor columns: one column, or several combined as a vector magnitude or one declared axis."""

    column: Text | None = None
    columns: list[Text] | None = Field(None, min_length=2, max_length=3)
    use: Literal["magnitude", "axis"] = "magnitude"
    axis: Text | None = Field(None, description="With use: axis, the column that carries the normal force.")
    unit: unit_of("force")  # type: ignore[valid-type]
    stream: Name = "main"

    @model_validator(mode="after")
    def _one_source(self) -> ForceChannel:
        if (self.column is None) == (self.columns is None):
            raise ValueError(
                "give either 'column' (one force column) or 'columns' (force axes), not both/neither"
            )
        if self.use == "axis" and (self.columns is None or self.axis not in self.columns):
            raise ValueError("use: axis needs 'columns' and an 'axis' that is one of them")
        return self

    @property
    def all_columns(self) -> list[str]:
        return [self.column] if self.column is not None else list(self.columns or [])


class ContactChannels(Strict):
    force: ForceChannel | None = None


class Contact(Strict):
    kind: Literal["cuff", "strap", "handle", "pad", "other"]
    body_region: BodyRegion = Field(description="Body region loaded, as in ISO/TS 15066:2016 Annex A.")
    specific_area: Text | None = Field(None, description="Specific area of Table A.2, e.g. 'forearm muscle'.")
    area: Area = Field(description="Contact area of the cuff, strap or handle on the skin.")
    lever_arms: dict[str, LeverArm] = Field(  # type: ignore[valid-type]
        default_factory=dict,
        description="Distance from each joint axis that can load this contact to the contact's centre, "
        "or 'not modelled'.",
    )
    force: ForceLimits
    pressure: PressureLimits | None = None
    sustained: SustainedForce | None = None
    channels: ContactChannels = ContactChannels()

    @field_validator("area")
    @classmethod
    def _positive_area(cls, v: Quantity) -> Quantity:
        if v.si <= 0:
            raise ValueError(f"contact area must be above zero, found '{v}'")
        return v

    @field_validator("lever_arms")
    @classmethod
    def _positive_lever(cls, v: dict[str, Quantity | str]) -> dict[str, Quantity | str]:
        for joint, arm in v.items():
            if isinstance(arm, Quantity) and arm.si <= 0:
                raise ValueError(f"lever arm for '{joint}' must be above zero, found '{arm}'")
        return v


# --------------------------------------------------------------------------------------------- stop


class Standstill(Strict):
    speed: AngularSpeed = Field(description="Every joint below this speed ...")
    hold: Time = Field(description="... for at least this long counts as standstill.")


class TorqueOff(Strict):
    level: Torque = Field(description="Torque below which a joint's actuator counts as off.")
    within: Time | None = Field(None, description="Budget from trigger to torque off (category 0 and 1).")


class StopFunction(Strict):
    category: Literal[0, 1, 2] = Field(description="Stop category, IEC 60204-1:2016 clause 9.2.2.")
    latency_budget: Time = Field(description="Longest allowed time from trigger to standstill.")
    reaction_time: Time = Field(description="Time from trigger until braking starts (the stop latency).")
    standstill: Standstill
    torque_off: TorqueOff | None = None
    stop_on_exceedance: list[LayerName] = Field(
        default_factory=lambda: list[LayerName](["device"]),
        description="Exceeding a limit of these layers must be followed by a stop.",
    )


# --------------------------------------------------------------------------------------------- logging


class TimeChannel(Strict):
    column: Text
    unit: unit_of("time") = "s"  # type: ignore[valid-type]


class Stream(Strict):
    time: TimeChannel
    sample_rate: Frequency

    @field_validator("sample_rate")
    @classmethod
    def _positive_rate(cls, v: Quantity) -> Quantity:
        if v.si <= 0:
            raise ValueError(f"sample rate must be above zero, found '{v}'")
        return v


Scalar = int | float | str


class TriggerChannel(Strict):
    """A column that signals a stop request: values that mean 'active', or values that mean 'normal'."""

    column: Text
    stream: Name = "main"
    active: list[Scalar] | None = None
    normal: list[Scalar] | None = None

    @model_validator(mode="after")
    def _one_rule(self) -> TriggerChannel:
        if (self.active is None) == (self.normal is None):
            raise ValueError("give either 'active' (values that request a stop) or 'normal' (all others do)")
        return self


class Protection(Strict):
    """A mode or safety-state column that must hold an allowed value whenever the device moves."""

    column: Text
    stream: Name = "main"
    allowed: list[Scalar] = Field(min_length=1)
    description: Text


class Logging(Strict):
    streams: dict[Name, Stream] = Field(min_length=1)
    triggers: dict[Literal["emergency_stop", "protective_stop", "safety_state"], TriggerChannel] = Field(
        default_factory=dict
    )
    protections: dict[Name, Protection] = Field(default_factory=dict)


# --------------------------------------------------------------------------------------------- margins


class Margin(Strict):
    """Near-miss band below a limit: a fraction of the limit and/or an absolute value (the wider wins)."""

    fraction: Fraction | None = None
    absolute: AnyQuantity | None = None

    @model_validator(mode="after")
    def _some(self) -> Margin:
        if self.fraction is None and self.absolute is None:
            raise ValueError("give 'fraction' and/or 'absolute'")
        if self.absolute is not None and self.absolute.si <= 0:
            raise ValueError(f"absolute margin must be above zero, found '{self.absolute}'")
        return self


class NearMiss(Strict):
    position: Margin | None = None
    speed: Margin | None = None
    torque: Margin | None = None
    acceleration: Margin | None = None
    force: Margin | None = None
    pressure: Margin | None = None


class LockedJoint(Strict):
    tolerance: Angle = Field(description="Largest motion allowed for a joint that is locked.")


class AuditSettings(Strict):
    """How the audit groups samples into events and judges data quality."""

    gap_tolerance: Annotated[float, Field(gt=1)] = Field(
        2.0, description="A step in time longer than this many expected sample periods is a gap."
    )
    min_event_duration: Time = Field(
        default_factory=lambda: _q(5, "ms"), description="Shorter exceedances are not reported as events."
    )
    hysteresis: Annotated[float, Field(ge=0, lt=0.5)] = Field(
        0.02, description="An event ends when the value falls this fraction of the limit below it."
    )
    force_offset_tolerance: Force = Field(
        default_factory=lambda: _q(3, "N"),
        description="Largest force reading allowed while the device is at rest.",
    )
    derivative_window: Time = Field(
        default_factory=lambda: _q(21, "ms"),
        description="Savitzky–Golay window when speed is derived from position.",
    )


def _q(value: float, unit: str) -> Quantity:
    from bracer.units import quantity

    return quantity(value, unit)


# --------------------------------------------------------------------------------------------- cautions


class Effect(Strict):
    """A structured change to one limit: set it, scale it, or put it at the participant's measured value minus
    a margin.  A caution only ever tightens; an override that loosens needs a justification."""

    joint: Name | None = None
    contact: Name | None = None
    quantity: Literal["range", "speed", "torque", "acceleration", "force", "pressure", "sustained"]
    layer: LayerName = "planned"
    direction: Literal["positive", "negative", "both"] = "both"
    item: Literal["quasi_static", "transient", "level", "max_duration"] = "quasi_static"
    set: AnyQuantity | None = None
    scale: Annotated[float, Field(gt=0)] | None = None
    measured_minus: Angle | None = None

    @model_validator(mode="after")
    def _shape(self) -> Effect:
        if (self.joint is None) == (self.contact is None):
            raise ValueError("name exactly one target: 'joint' or 'contact'")
        if sum(x is not None for x in (self.set, self.scale, self.measured_minus)) != 1:
            raise ValueError("give exactly one of 'set', 'scale' or 'measured_minus'")
        joint_q = {"range", "speed", "torque", "acceleration"}
        if self.joint is not None and self.quantity not in joint_q:
            raise ValueError(
                f"a joint's quantity is one of {', '.join(sorted(joint_q))}, found '{self.quantity}'"
            )
        if self.contact is not None and self.quantity in joint_q:
            raise ValueError(f"a contact's quantity is force, pressure or sustained, found '{self.quantity}'")
        if self.measured_minus is not None and self.quantity != "range":
            raise ValueError("'measured_minus' applies to range limits only")
        if self.measured_minus is not None and self.measured_minus.si < 0:
            raise ValueError(
                f"'measured_minus' is a margin inside the measured range and cannot be negative, "
                f"found '{self.measured_minus}'"
            )
        return self

    @property
    def target(self) -> str:
        return f"joint '{self.joint}'" if self.joint else f"contact '{self.contact}'"


class Caution(Strict):
    text: Text = Field(description="The caution as shown to the clinician.")
    population: Text = Field(description="Who it applies to, e.g. 'post-stroke with spasticity'.")
    effects: list[Effect] = Field(default_factory=list)


class Override(Effect):
    justification: Text | None = Field(None, description="Required when the override loosens a limit.")


class MeasuredRom(Strict):
    min: Angle
    max: Angle
    date: dt.date
    method: Text = Field(description="e.g. 'goniometry'")
    passive: bool = True

    @model_validator(mode="after")
    def _ordered(self) -> MeasuredRom:
        if not self.min.si < self.max.si:
            raise ValueError(f"min ({self.min}) must be below max ({self.max})")
        return self


class Participant(Strict):
    cautions: list[Name] = Field(default_factory=list)
    rom: dict[Name, MeasuredRom] = Field(
        default_factory=dict, description="Measured passive range per joint."
    )
    overrides: list[Override] = Field(default_factory=list)
    locked_joints: list[Name] | None = Field(None, description="Replaces the protocol's locked joints.")


# --------------------------------------------------------------------------------------------- protocol


class Protocol(Strict):
    """A bracer protocol file."""

    model_config = ConfigDict(extra="forbid", frozen=True, title="bracer protocol")

    bracer_protocol: Literal[1] = Field(description="Format version of this file.")
    protocol: Identity
    device: Device
    joints: dict[Name, Joint] = Field(min_length=1)
    contacts: dict[Name, Contact] = Field(default_factory=dict)
    stop: StopFunction | None = None
    logging: Logging
    near_miss: NearMiss = NearMiss()
    locked_joints: dict[Name, LockedJoint] = Field(default_factory=dict)
    cautions: dict[Name, Caution] = Field(default_factory=dict)
    participants: dict[Name, Participant] = Field(default_factory=dict)
    audit: AuditSettings = AuditSettings()
