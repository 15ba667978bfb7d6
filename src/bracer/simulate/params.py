"""Simulation parameters: the body, the device's links, the soft tissue under the cuffs, the sensors.

Every parameter has a default that gives plausible sessions for an adult upper-limb exoskeleton; each is
written into the ground truth so that a log can be reproduced.  Values without a published source are stated
as choices of this simulator.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

__all__ = ["DeviceLink", "SensorModel", "SensorSet", "SimulationParameters"]


@dataclass(frozen=True, slots=True)
class DeviceLink:
    """A rigid link of the device that moves with one model joint (a uniform bar along a limb segment).

    Attributes
    ----------
    name : str
    after : str
        Model joint that carries the link (e.g. "shoulder_rotation" carries the upper-arm link).
    segment : str
        Winter segment the bar runs along; its length sets the bar's length.
    mass : float
        kg.
    com_fraction : float
        Centre of mass along the segment from the proximal joint, fraction of the segment's length.
    """

    name: str
    after: str
    segment: str
    mass: float
    com_fraction: float = 0.5


@dataclass(frozen=True, slots=True)
class SensorModel:
    """Error model of one kind of channel, in SI units (rad, rad/s, N·m, N).

    The reading is ``quantise(x + offset + noise)``: a constant offset drawn once per channel, uniform in
    ±``offset``; Gaussian noise of standard deviation ``noise``; rounding to multiples of ``step`` (encoder
    resolution or ADC step; 0 for none).
    """

    noise: float
    offset: float
    step: float


def _deg(x: float) -> float:
    return x * math.pi / 180.0


@dataclass(frozen=True, slots=True)
class SensorSet:
    """Sensor models per channel kind.  Defaults are choices of this simulator (no source), picked to resemble
    a 17-bit joint encoder, a velocity estimate logged at 0.01 deg/s, and 16-bit ADCs over ±50 N·m and ±500
    N."""

    position: SensorModel = SensorModel(noise=_deg(0.005), offset=_deg(0.02), step=2.0 * math.pi / 2**17)
    velocity: SensorModel = SensorModel(noise=_deg(0.1), offset=0.0, step=_deg(0.01))
    torque: SensorModel = SensorModel(noise=0.02, offset=0.02, step=100.0 / 2**16)
    force: SensorModel = SensorModel(noise=0.1, offset=0.2, step=1000.0 / 2**16)


def _default_links() -> tuple[DeviceLink, ...]:
    return (
        DeviceLink("upper_arm_link", after="shoulder_rotation", segment="upper_arm", mass=0.8),
        DeviceLink("forearm_link", after="elbow_flexion", segment="forearm", mass=0.5),
    )


@dataclass(frozen=True, slots=True)
class SimulationParameters:
    """Everything that shapes a synthetic session besides the protocol, the participant and the seed.

    Attributes
    ----------
    body_mass, height : float
        kg and m; segment masses and lengths scale with them (Winter's table).
    device_links : tuple of DeviceLink
    unmodelled_inertia : float
        kg·m²: the only load of a protocol joint that has no counterpart in the limb model.
    gravity : float
        m/s².
    tracking_lag : float
        s: the limb follows the device this much later, which compresses the tissue under each cuff in
        proportion to joint speed (a velocity-dependent resistance, as of a passively moved limb).
    tissue_damping_ratio : float
        ζ of the cuff's spring–damper: c = 2ζ√(k·m_H), with k and m_H of the body region (ISO/TS 15066 Table
        A.3).
    speed_fraction : tuple of float
        Range of a therapy movement's peak speed, as a fraction of the joint's planned speed limit.
    torque_ramp : float
        s: how long the actuator takes to remove (or restore) its torque.
    trigger_latch : float
        s: how long a stop request stays active before it is reset.
    start_time : float
        s: the log clock's value at the first sample.
    sensors : SensorSet
    """

    body_mass: float = 70.0
    height: float = 1.70
    device_links: tuple[DeviceLink, ...] = field(default_factory=_default_links)
    unmodelled_inertia: float = 0.02
    gravity: float = 9.81
    tracking_lag: float = 0.001
    tissue_damping_ratio: float = 0.2
    speed_fraction: tuple[float, float] = (0.35, 0.6)
    torque_ramp: float = 0.01
    trigger_latch: float = 2.0
    start_time: float = 0.0
    sensors: SensorSet = field(default_factory=SensorSet)

    def __post_init__(self) -> None:
        if not 20.0 <= self.body_mass <= 250.0:
            raise ValueError(f"body mass must lie between 20 and 250 kg, found {self.body_mass:g} kg")
        if not 1.0 <= self.height <= 2.4:
            raise ValueError(f"height must lie between 1.0 and 2.4 m, found {self.height:g} m")
        lo, hi = self.speed_fraction
        if not 0.0 < lo <= hi <= 0.8:
            raise ValueError(
                f"speed_fraction must satisfy 0 < low <= high <= 0.8, found {self.speed_fraction}"
            )
        if self.tracking_lag < 0 or self.torque_ramp <= 0 or self.trigger_latch <= 0:
            raise ValueError("tracking_lag must be >= 0; torque_ramp and trigger_latch above zero")
