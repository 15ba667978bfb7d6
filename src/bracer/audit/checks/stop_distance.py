"""A203 stop-distance: how far each joint travelled after a stop trigger.

For every stop episode and every joint that moved during it (speed above ``stop.standstill.speed`` at some
valid sample from the trigger to standstill), one finding of kind ``stop``, quantity ``stop_distance``:
``peak`` is the largest excursion of the position from where it was at the trigger, up to standstill (or to
the end of the log when none came), in the unit of the joint's range limits.  Where the joint declares a
``stop_deceleration``, ``limit`` is the distance the declared stop predicts, ``|v0|·t_r + v0²/(2a)`` with the
speed ``v0`` at the trigger and ``stop.reaction_time``; travelling further than that by more than the
tolerance below is reported at warning level, otherwise info.  Not assessable when a joint has no position
channel (reported once per joint by A101).

Tolerance
---------
Both the prediction and the measured distance come from noisy, quantised samples, so the comparison allows
for what the data themselves show, each term in the unit of the position:

* trigger timing: the request may come up to one sample period ``Δt`` before the sample that logs it, so
  ``|v0|·Δt`` of travel;
* the speed at the trigger: the prediction rests on one sample of speed, whose error moves it by
  ``∂d/∂v0 = t_r + |v0|/a`` per unit of speed, so ``(t_r + |v0|/a)·(4·σ_v + q_v)``;
* the distance itself is the difference of two position readings: ``2·4·σ_x + q_x``.

``σ`` is the white-noise standard deviation of the channel over the ``NOISE_WINDOW`` samples up to the
trigger, from the median absolute deviation of their second differences (for a signal smooth on the scale of
a sample, the second difference of white noise has variance ``6·σ²``; the median keeps a corner of the motion
from inflating it); ``q`` is the channel's resolution there, the smallest non-zero difference between two of
those readings.  A speed derived from position (Savitzky–Golay) carries the position's noise times the
filter's noise gain, ``σ_x·‖c‖`` with ``c`` the derivative coefficients at the window's centre.  Four
standard deviations make a spurious warning on an exact stop improbable (about 6e-5 per reading for Gaussian
noise).  With fewer than 8 valid second differences the noise terms are zero (the narrower tolerance).  The
message of a warning states the tolerance.
"""

from __future__ import annotations

import numpy as np

from bracer.audit.checks._common import Unavailable, finding, fmt, fmt_t, in_unit
from bracer.audit.checks._joint import JointSignal, angle_unit, joint_signal, speed_unit
from bracer.audit.checks._stopping import Episode, JointStop, stop_analysis
from bracer.audit.context import AuditContext
from bracer.findings import Check, Finding, Kind, Severity, register

CHECK = register(
    Check(
        "A203",
        "stop-distance",
        "Distance each joint travelled after a stop trigger",
        Severity.WARNING,
        needs=("position", "speed"),
    )
)

#: Samples up to the trigger over which a channel's noise and resolution are estimated.
NOISE_WINDOW = 64
#: Standard deviations of noise allowed per reading.
NOISE_SIGMAS = 4.0


def run(ctx: AuditContext) -> list[Finding]:
    """One finding per stop episode and joint in motion."""
    sa = stop_analysis(ctx)
    if sa.no_standstill is not None:
        return []
    return [
        _joint(ctx, ep, js) for ep in sa.episodes for js in ep.joints if js.moved and js.distance is not None
    ]


def _joint(ctx: AuditContext, ep: Episode, js: JointStop) -> Finding:
    p = ctx.resolution.protocol
    assert p.stop is not None and js.distance is not None
    joint = p.joints[js.joint]
    unit = angle_unit(joint)
    trig = ep.trigger
    value = in_unit(js.distance, unit)
    until = (
        f"standstill at {fmt_t(ep.t_standstill)}"
        if ep.t_standstill is not None
        else f"the end of the log at {fmt_t(js.t_end)} (no standstill came)"
    )
    v_unit = speed_unit(joint)
    speed = (
        f"speed at the trigger {fmt(in_unit(js.v0, v_unit), v_unit)}"
        if js.v0 is not None
        else "speed at the trigger not valid"
    )
    limit = margin = None
    severity = Severity.INFO
    note = ""
    a = joint.stop_deceleration
    if a is not None and js.v0 is not None:
        v0 = abs(js.v0)
        predicted = v0 * p.stop.reaction_time.si + v0 * v0 / (2 * a.si)
        limit = in_unit(predicted, unit)
        margin = limit - value
        t_stop = p.stop.reaction_time.si + v0 / a.si  # ∂d/∂v0, s
        tolerance = v0 * ep.sample_period + _noise_allowance(ctx, js, trig.t, t_stop)
        if js.distance > predicted + tolerance:
            severity = Severity.WARNING
            note = (
                f"; further than the {fmt(limit, unit)} the declared stop predicts (reaction time "
                f"{p.stop.reaction_time}, stop deceleration {a}) by more than the "
                f"{fmt(in_unit(tolerance, unit), unit)} that trigger timing, sensor noise and resolution "
                "allow"
            )
        else:
            note = (
                f"; the declared stop predicts {fmt(limit, unit)} (reaction time "
                f"{p.stop.reaction_time}, stop "
                f"deceleration {a})"
            )
    msg = (
        f"{js.joint} travelled {fmt(value, unit)} after the {trig.label} at {fmt_t(trig.t)}, until {until} "
        f"({speed}){note}."
    )
    return finding(
        CHECK,
        Kind.STOP,
        severity,
        msg,
        subject=js.joint,
        subject_kind="joint",
        quantity="stop_distance",
        channel=js.channel,
        t_start=trig.t,
        t_end=js.t_end,
        i_start=js.i_start,
        i_end=js.i_end,
        peak=value,
        limit=limit,
        margin=margin,
        unit=unit,
        extra=(
            ("trigger", trig.source),
            ("speed_at_trigger", None if js.v0 is None else in_unit(js.v0, v_unit)),
            ("speed_unit", v_unit),
        ),
    )


def _noise_allowance(ctx: AuditContext, js: JointStop, t_trigger: float, t_stop: float) -> float:
    """``t_stop·(4·σ_v + q_v) + 2·4·σ_x + q_x`` at the trigger (rad; see the module docstring)."""
    pos = joint_signal(ctx, js.joint, "position")
    speed = joint_signal(ctx, js.joint, "speed")
    if isinstance(pos, Unavailable) or isinstance(speed, Unavailable):
        return 0.0
    sigma_x, q_x = _noise(pos, js.i_start)
    d = speed.derivation
    if d is None:
        i_v = min(int(np.searchsorted(speed.t, t_trigger, side="left")), speed.t.shape[0] - 1)
        sigma_v, q_v = _noise(speed, i_v)
    else:  # a derived speed carries the position's noise through the filter
        sigma_v, q_v = sigma_x * _savgol_gain(d.window_samples, d.polyorder, d.sample_period), 0.0
    return t_stop * (NOISE_SIGMAS * sigma_v + q_v) + 2.0 * NOISE_SIGMAS * sigma_x + q_x


def _noise(sig: JointSignal, i: int) -> tuple[float, float]:
    """White-noise standard deviation and resolution of ``sig`` over the samples up to ``i``, in its internal
    unit."""
    lo = max(0, i + 1 - NOISE_WINDOW)
    x = sig.x[lo : i + 1]
    ok = sig.valid[lo : i + 1]
    levels = np.diff(np.unique(x[ok]))
    resolution = float(levels.min()) if levels.size else 0.0
    d2 = np.diff(x, n=2)[ok[2:] & ok[1:-1] & ok[:-2]]
    if d2.size < 8:
        return 0.0, resolution
    mad = float(np.median(np.abs(d2 - np.median(d2))))
    return 1.4826 * mad / np.sqrt(6.0), resolution


def _savgol_gain(window: int, polyorder: int, dt: float) -> float:
    """‖c‖ of the Savitzky–Golay first-derivative coefficients at the centre of a ``window``-sample window
    (white noise of σ on the input gives σ·‖c‖ on the derivative), 1/s."""
    k = np.arange(window, dtype=np.float64) - window // 2
    c = np.linalg.pinv(np.vander(k, polyorder + 1, increasing=True))[1] / dt
    return float(np.sqrt(np.sum(c * c)))
