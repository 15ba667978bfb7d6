"""Joint channels as the checks read them: position, speed, torque and acceleration, logged or derived, and
the "device moving" mask built from every joint's speed.

Speed comes from the joint's velocity channel when the log has it, otherwise it is derived from position
(:func:`bracer.audit.derive.savgol_derivative`, window ``audit.derivative_window``).  Acceleration is the
derivative of the velocity channel, or the second derivative of position.  A derived channel carries its
:class:`~bracer.audit.derive.Derivative` so every finding can state the window and its delay.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from bracer.audit.checks._common import Unavailable, cached, signal
from bracer.audit.context import AuditContext
from bracer.audit.derive import Derivative, savgol_derivative
from bracer.protocol.model import ChannelRef, Joint
from bracer.session.model import Signal

__all__ = ["JointQuantity", "JointSignal", "Motion", "angle_unit", "joint_signal", "motion"]

JointQuantity = Literal["position", "speed", "torque", "acceleration"]


@dataclass(frozen=True, eq=False)
class JointSignal:
    """One joint quantity on its stream's clock, in the internal unit (rad, rad/s, N*m, rad/s^2).

    ``channel`` is the logged column it comes from (the source column for a derived quantity).
    """

    joint: str
    quantity: JointQuantity
    stream: str
    channel: str
    t: np.ndarray
    x: np.ndarray
    valid: np.ndarray
    derivation: Derivative | None = None
    note: str = ""  # why it was derived, when a declared channel was missing

    @property
    def derived(self) -> bool:
        return self.derivation is not None

    def describe(self) -> str:
        """Empty for a logged channel; otherwise how it was derived, for messages."""
        if self.derivation is None:
            return ""
        text = f"{self.derivation.describe()}, from column '{self.channel}'"
        return f"{text} ({self.note})" if self.note else text


def _logged(
    ctx: AuditContext, joint: str, quantity: JointQuantity, ref: ChannelRef
) -> JointSignal | Unavailable:
    sig = signal(ctx, ref.stream, ref.column)
    if isinstance(sig, Unavailable):
        return sig
    return JointSignal(joint, quantity, ref.stream, ref.column, sig.t, sig.x, sig.valid)


def _derived(
    ctx: AuditContext, joint: str, quantity: JointQuantity, src: Signal, deriv: int, note: str
) -> JointSignal | Unavailable:
    window = ctx.resolution.protocol.audit.derivative_window.si
    d = savgol_derivative(src.t, src.x, src.valid, window, deriv=deriv)
    if not d.valid.any():
        return Unavailable(
            src.column,
            f"{quantity} of joint '{joint}' is derived from column '{src.column}', and no sample has a "
            "full valid "
            f"{d.window_samples}-sample window",
        )
    return JointSignal(joint, quantity, src.stream, src.column, d.t, d.x, d.valid, d, note)


def joint_signal(ctx: AuditContext, joint: str, quantity: JointQuantity) -> JointSignal | Unavailable:
    """The joint's ``quantity``, logged or derived, cached per audit."""
    return cached(ctx, ("joint", joint, quantity), lambda: _build(ctx, joint, quantity))


def _build(ctx: AuditContext, name: str, quantity: JointQuantity) -> JointSignal | Unavailable:
    ch = ctx.resolution.protocol.joints[name].channels
    if quantity in ("position", "torque"):
        ref = ch.position if quantity == "position" else ch.torque
        if ref is None:
            return Unavailable(None, f"the protocol maps no {quantity} channel for joint '{name}'")
        return _logged(ctx, name, quantity, ref)

    # speed or acceleration: from the velocity channel when logged, else from position
    note = ""
    if ch.velocity is not None:
        vel = signal(ctx, ch.velocity.stream, ch.velocity.column)
        if not isinstance(vel, Unavailable):
            if quantity == "speed":
                return JointSignal(
                    name, quantity, ch.velocity.stream, ch.velocity.column, vel.t, vel.x, vel.valid
                )
            return _derived(ctx, name, quantity, vel, 1, "")
        note = f"velocity channel unusable: {vel.reason}"
    if ch.position is None:
        why = f"; {note}" if note else ""
        return Unavailable(
            None,
            f"the protocol maps neither a velocity nor a position channel for joint "
            f"'{name}' usable for its {quantity}{why}",
        )
    pos = signal(ctx, ch.position.stream, ch.position.column)
    if isinstance(pos, Unavailable):
        why = f" ({note})" if note else " (no velocity channel declared)"
        return Unavailable(pos.channel, f"{quantity} is derived from position{why}, and {pos.reason}")
    return _derived(ctx, name, quantity, pos, 1 if quantity == "speed" else 2, note)


def angle_unit(joint: Joint) -> str:
    """The unit the protocol uses for the joint's angles: its first range layer's, else the channel's."""
    for layer in ("planned", "device", "mechanical"):
        b = joint.range.layer(layer)
        if b is not None:
            return str(b.max.unit)
    if joint.channels.position is not None:
        return joint.channels.position.unit
    return "rad"


def speed_unit(joint: Joint) -> str:
    """The unit the protocol uses for the joint's speeds (first declared speed layer), else ``deg/s``."""
    for layer in ("planned", "device", "mechanical"):
        d = joint.speed.layer(layer)
        if d is not None:
            return str(d.positive.unit)
    if joint.channels.velocity is not None:
        return joint.channels.velocity.unit
    return "deg/s" if angle_unit(joint) == "deg" else "rad/s"


# ------------------------------------------------------------------------------------------- motion


@dataclass(frozen=True, eq=False)
class Motion:
    """Whether the device moves, on one stream's clock.

    Attributes
    ----------
    moving : ndarray of bool, shape (n,)
        Some assessed joint's speed is valid and above ``threshold``.
    known : ndarray of bool, shape (n,)
        Every assessed joint's speed is valid (mapped from its own stream where it differs).
    joints : tuple of str
        Joints whose speed was available.
    missing : tuple of (joint, Unavailable)
        Joints whose speed was not.
    threshold : float
        Standstill speed, rad/s.
    """

    stream: str
    t: np.ndarray
    moving: np.ndarray
    known: np.ndarray
    joints: tuple[str, ...]
    missing: tuple[tuple[str, Unavailable], ...]
    threshold: float
    derived: tuple[tuple[str, Derivative], ...] = ()  # joints whose speed is derived from position

    def derived_note(self) -> str:
        """Empty when every speed was logged; otherwise which were derived and how (for messages)."""
        if not self.derived:
            return ""
        d = self.derived[0][1]
        names = ", ".join(j for j, _ in self.derived)
        return (
            f"speed of {names} derived from position (Savitzky–Golay, centred {d.window_samples}-sample "
            f"window, no phase delay; corners are smoothed over up to {d.edge_samples} samples)"
        )

    @property
    def still(self) -> np.ndarray:
        """Every assessed joint known to be below the standstill speed."""
        return self.known & ~self.moving


def _on_clock(src_t: np.ndarray, values: np.ndarray, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Sample-and-hold of boolean ``values`` (on ``src_t``) at times ``t``: (values, inside src's span)."""
    idx = np.searchsorted(src_t, t, side="right") - 1
    inside = (idx >= 0) & (t <= src_t[-1])
    np.clip(idx, 0, src_t.shape[0] - 1, out=idx)
    return values[idx] & inside, inside


def motion(ctx: AuditContext, stream: str, threshold: float) -> Motion | Unavailable:
    """Every joint's speed against ``threshold`` (rad/s) on the clock of ``stream``, cached per audit.

    A joint whose speed sample is invalid makes the motion there unknown: ``known`` is False, and checks treat
    an unknown sample as neither still nor within a protection's rule.
    """

    def build() -> Motion | Unavailable:
        if stream not in ctx.session.streams:
            return Unavailable(None, f"stream '{stream}' is not in the log")
        t = ctx.session.streams[stream].time
        n = t.shape[0]
        moving = np.zeros(n, dtype=bool)
        known = np.ones(n, dtype=bool)
        joints: list[str] = []
        missing: list[tuple[str, Unavailable]] = []
        derived: list[tuple[str, Derivative]] = []
        speed: np.ndarray | None = None  # scratch for |v|, shared by the joints on this clock
        for name in ctx.resolution.protocol.joints:
            sp = joint_signal(ctx, name, "speed")
            if isinstance(sp, Unavailable):
                missing.append((name, sp))
                continue
            joints.append(name)
            if sp.derivation is not None:
                derived.append((name, sp.derivation))
            if speed is None or speed.shape != sp.x.shape:
                speed = np.empty(sp.x.shape, dtype=np.float64)
            np.abs(sp.x, out=speed)
            fast = np.greater(speed, threshold)  # NaN compares False: an invalid sample is never "fast"
            all_valid = bool(sp.valid.all())
            if not all_valid:
                fast &= sp.valid
            if sp.t is t or (sp.t.shape == t.shape and np.array_equal(sp.t, t)):
                moving |= fast
                if not all_valid:
                    known &= sp.valid
            else:
                m, _ = _on_clock(sp.t, fast, t)
                v, _ = _on_clock(sp.t, sp.valid, t)
                moving |= m
                known &= v
        if not joints:
            reasons = "; ".join(f"{j}: {u.reason}" for j, u in missing)
            return Unavailable(None, f"no joint's speed is available ({reasons})")
        return Motion(stream, t, moving, known, tuple(joints), tuple(missing), threshold, tuple(derived))

    return cached(ctx, ("motion", stream, threshold), build)


def joint_stream(ctx: AuditContext) -> str | None:
    """The stream most joints' speeds are on (the clock stop and activity timing use), or None."""
    counts: dict[str, int] = {}
    for name in ctx.resolution.protocol.joints:
        sp = joint_signal(ctx, name, "speed")
        if not isinstance(sp, Unavailable):
            counts[sp.stream] = counts.get(sp.stream, 0) + 1
    if not counts:
        return None
    return max(counts, key=lambda s: counts[s])
