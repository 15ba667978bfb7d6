"""The rigid-body model of a right arm in an exoskeleton, and how a protocol's joints map onto it.

Model joints, proximal to distal (world frame: x forward, y left, z up; the arm hangs along −z from the
shoulder at the origin; every angle zero with the arm hanging, elbow straight, forearm neutral):

=====================  ================================  =====================================
model joint            axis (in the parent frame)        positive direction
=====================  ================================  =====================================
shoulder_abduction     −x through the shoulder           abduction (arm out to the side)
shoulder_flexion       −y through the shoulder           flexion (arm forward)
shoulder_rotation      −z, the humerus's long axis       external rotation
elbow_flexion          −y through the elbow              flexion
forearm_rotation       −z, the forearm's long axis       supination
wrist_flexion          +x through the wrist              flexion
=====================  ================================  =====================================

The upper arm (plus the device's upper-arm link) moves with shoulder_rotation, the device's forearm link with
elbow_flexion, the forearm with forearm_rotation and the hand with wrist_flexion; segment masses, lengths,
centres of mass and radii of gyration come from Winter's table (limits/segments_winter.csv).  A protocol joint
maps to a model joint through its anatomical reference ("elbow flexion" ...); model joints the protocol does
not drive are held at zero.  Interaction forces at the cuffs are not fed back into the joint torques (a
simplification: the torque channel carries the rigid-body torque of limb and device).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from bracer.protocol.model import Joint, Protocol
from bracer.simulate.anthropometry import segment_inertia
from bracer.simulate.dynamics import Chain
from bracer.simulate.params import SimulationParameters

__all__ = ["MODEL_JOINTS", "JointMapping", "build_arm", "map_joints"]

#: Model joint -> (positive anatomical motion, negative anatomical motion), as named in
#: limits/upper_limb_rom.csv.
MODEL_JOINTS: dict[str, tuple[str, str]] = {
    "shoulder_abduction": ("shoulder abduction", "shoulder adduction"),
    "shoulder_flexion": ("shoulder flexion", "shoulder extension"),
    "shoulder_rotation": ("shoulder external rotation", "shoulder internal rotation"),
    "elbow_flexion": ("elbow flexion", "elbow extension"),
    "forearm_rotation": ("forearm supination", "forearm pronation"),
    "wrist_flexion": ("wrist flexion", "wrist extension"),
}

_AXES = {
    "shoulder_abduction": (-1.0, 0.0, 0.0),
    "shoulder_flexion": (0.0, -1.0, 0.0),
    "shoulder_rotation": (0.0, 0.0, -1.0),
    "elbow_flexion": (0.0, -1.0, 0.0),
    "forearm_rotation": (0.0, 0.0, -1.0),
    "wrist_flexion": (1.0, 0.0, 0.0),
}
#: Which Winter segment each model joint moves (None: a massless link between co-located joints).
_SEGMENT_AFTER = {
    "shoulder_abduction": None,
    "shoulder_flexion": None,
    "shoulder_rotation": "upper_arm",
    "elbow_flexion": None,
    "forearm_rotation": "forearm",
    "wrist_flexion": "hand",
}


@dataclass(frozen=True, slots=True)
class JointMapping:
    """A protocol joint's counterpart in the model: ``q_model = sign · q_protocol``; ``model`` None if
    none."""

    joint: str
    model: str | None
    sign: float


def _bar(mass: float, length: float, com: float) -> tuple[float, np.ndarray, np.ndarray]:
    """A uniform bar along −z: mass, centre of mass, inertia about it (transverse m·L²/12, none about its
    axis)."""
    i_t = mass * length**2 / 12.0
    return mass, np.array([0.0, 0.0, -com]), np.diag([i_t, i_t, 0.0])


def _combine(parts: list[tuple[float, np.ndarray, np.ndarray]]) -> tuple[float, np.ndarray, np.ndarray]:
    """One rigid body from several (mass, centre of mass, inertia about own centre), by the parallel-axis
    rule."""
    mass = sum(m for m, _, _ in parts)
    if mass == 0:
        return 0.0, np.zeros(3), np.zeros((3, 3))
    com = np.sum([m * c for m, c, _ in parts], axis=0) / mass
    inertia = np.zeros((3, 3))
    for m, c, i in parts:
        d = c - com
        inertia += i + m * (np.dot(d, d) * np.eye(3) - np.outer(d, d))
    return mass, com, inertia


def build_arm(params: SimulationParameters) -> Chain:
    """The six-joint arm-and-device chain of the module docstring, scaled to the parameters' body."""
    seg = {
        name: segment_inertia(name, params.body_mass, params.height)
        for name in ("upper_arm", "forearm", "hand")
    }
    origins = {
        "shoulder_abduction": (0.0, 0.0, 0.0),
        "shoulder_flexion": (0.0, 0.0, 0.0),
        "shoulder_rotation": (0.0, 0.0, 0.0),
        "elbow_flexion": (0.0, 0.0, -seg["upper_arm"].length),
        "forearm_rotation": (0.0, 0.0, 0.0),
        "wrist_flexion": (0.0, 0.0, -seg["forearm"].length),
    }
    names = tuple(MODEL_JOINTS)
    masses, coms, inertias = [], [], []
    for name in names:
        parts: list[tuple[float, np.ndarray, np.ndarray]] = []
        segment = _SEGMENT_AFTER[name]
        if segment is not None:
            s = seg[segment]
            parts.append(
                (
                    s.mass,
                    np.array([0.0, 0.0, -s.com]),
                    np.diag([s.inertia_transverse, s.inertia_transverse, s.inertia_long]),
                )
            )
        for link in params.device_links:
            if link.after == name:
                length = segment_inertia(link.segment, params.body_mass, params.height).length
                parts.append(_bar(link.mass, length, link.com_fraction * length))
        m, c, i = _combine(parts)
        masses.append(m)
        coms.append(c)
        inertias.append(i)
    return Chain(
        names=names,
        origins=np.array([origins[n] for n in names]),
        axes=np.array([_AXES[n] for n in names]),
        masses=np.array(masses),
        coms=np.array(coms),
        inertias=np.array(inertias),
        gravity=np.array([0.0, 0.0, -params.gravity]),
    )


def _match(joint: Joint) -> tuple[str, float] | None:
    """Model joint and sign for a protocol joint, from its reference motions, else from motion + direction
    words."""
    candidates: list[tuple[str, str]] = []
    if joint.reference.positive:
        candidates.append(("positive", joint.reference.positive.lower().strip()))
    if joint.reference.negative:
        candidates.append(("negative", joint.reference.negative.lower().strip()))
    region = joint.motion.lower().split()[0] if joint.motion.split() else ""
    candidates.append(("positive", f"{region} {joint.positive.lower().strip()}"))
    candidates.append(("negative", f"{region} {joint.negative.lower().strip()}"))
    for side, text in candidates:
        for model, (pos, neg) in MODEL_JOINTS.items():
            if text == pos:
                return model, 1.0 if side == "positive" else -1.0
            if text == neg:
                return model, -1.0 if side == "positive" else 1.0
    return None


def map_joints(protocol: Protocol) -> dict[str, JointMapping]:
    """Each protocol joint's model counterpart; a second protocol joint claiming the same model joint gets
    none."""
    taken: set[str] = set()
    out: dict[str, JointMapping] = {}
    for name, joint in protocol.joints.items():
        found = _match(joint)
        if found is None or found[0] in taken:
            out[name] = JointMapping(name, None, 1.0)
            continue
        taken.add(found[0])
        out[name] = JointMapping(name, found[0], found[1])
    return out
