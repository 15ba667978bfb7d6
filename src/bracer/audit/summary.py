"""Summary figures of one session: active time, contact force per cuff, range used per joint, stops.

Figures cover valid samples only and say how much of each channel that was (``coverage``: fraction of
samples).  Values are in the units the protocol declared (the contact's quasi-static force limit, the joint's
range limits).  Where a joint's speed is derived from position the derivation (window, delay) is stated.

* active time: time during which some joint moved faster than ``stop.standstill.speed``, on the clock most
  joints are logged on; each sample counts for the step to the next sample.  Time whose motion is unknown (a
  joint's speed not valid) is reported separately, never counted as at rest.
* contact force: peak (with its time) and RMS of the force magnitude over valid samples.
* range used: smallest and largest valid position, and their difference.
* stops: stop episodes (triggers folded into a stop already in progress are not counted again), by source.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass
from typing import Any

import numpy as np

from bracer.audit.checks._common import Unavailable, extremes, in_unit
from bracer.audit.checks._contact import contact_force
from bracer.audit.checks._joint import angle_unit, joint_signal, joint_stream, motion
from bracer.audit.checks._stopping import stop_analysis
from bracer.audit.context import AuditContext
from bracer.audit.derive import sample_period

__all__ = ["ContactFigures", "JointFigures", "SessionSummary", "summarise"]


@dataclass(frozen=True, slots=True)
class ContactFigures:
    """Force on one contact; ``peak``/``rms`` None without a usable force channel (``note`` says why)."""

    contact: str
    unit: str
    peak: float | None
    t_peak: float | None
    rms: float | None
    coverage: float
    note: str = ""


@dataclass(frozen=True, slots=True)
class JointFigures:
    """Range used by one joint, in ``unit``; ``speed_source`` is ``logged``, ``derived`` or None."""

    joint: str
    unit: str
    min: float | None
    max: float | None
    range_used: float | None
    coverage: float
    speed_source: str | None
    speed_note: str = ""


@dataclass(frozen=True, slots=True)
class SessionSummary:
    """Session figures (times in s on the log's clock)."""

    duration: float
    active_time: float | None
    motion_unknown_time: float | None
    activity_note: str
    contacts: tuple[ContactFigures, ...]
    joints: tuple[JointFigures, ...]
    stops: int
    stops_by_source: tuple[tuple[str, int], ...]

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        d["stops_by_source"] = dict(self.stops_by_source)
        return d


def _steps(t: np.ndarray) -> np.ndarray:
    """Each sample's step to the next one, s, shape (n - 1,); steps back in time count 0."""
    steps = np.diff(t)
    np.maximum(steps, 0.0, out=steps)
    return steps


def _time_where(t: np.ndarray, mask: np.ndarray, steps: np.ndarray | None = None) -> float:
    """Time covered by the samples in ``mask``: each counts the step to the next sample (the last sample the
    median step), s; steps that go back in time count nothing.  ``steps``: :func:`_steps` of ``t``, when the
    caller has it already."""
    if t.shape[0] < 2:
        return 0.0
    if steps is None:
        steps = _steps(t)
    total = float(np.sum(steps, where=mask[:-1]))
    if mask[-1]:
        dt = sample_period(t)
        total += dt if np.isfinite(dt) else 0.0
    return total


def _activity(ctx: AuditContext) -> tuple[float | None, float | None, str]:
    p = ctx.resolution.protocol
    if p.stop is None:
        return None, None, "no stop.standstill.speed declared: active time not defined"
    stream = joint_stream(ctx)
    if stream is None:
        return None, None, "no joint's speed is available: active time not assessable"
    mot = motion(ctx, stream, p.stop.standstill.speed.si)
    if isinstance(mot, Unavailable):
        return None, None, mot.reason
    tv = ctx.session.time_valid.get(stream)
    known = mot.known if tv is None else (mot.known & tv)
    steps = _steps(mot.t) if mot.t.shape[0] >= 2 else None
    active = _time_where(mot.t, mot.moving & known, steps)
    unknown = _time_where(mot.t, ~known, steps)
    note = f"any joint faster than {p.stop.standstill.speed} on stream '{stream}'"
    if mot.missing:
        note += "; without " + ", ".join(j for j, _ in mot.missing) + " (speed not available)"
    return active, unknown, note


def _contact(ctx: AuditContext, name: str) -> ContactFigures:
    unit = str(ctx.resolution.protocol.contacts[name].force.quasi_static.unit)
    cf = contact_force(ctx, name)
    if isinstance(cf, Unavailable):
        return ContactFigures(name, unit, None, None, None, 0.0, cf.reason)
    # all valid (the common case): the plain argmax, no masked copy of the channel
    k = int(np.argmax(cf.f)) if cf.valid.all() else int(np.argmax(np.where(cf.valid, cf.f, -np.inf)))
    n_valid = int(np.count_nonzero(cf.valid))
    rms = float(np.sqrt(np.sum(np.square(cf.f), where=cf.valid) / n_valid))
    return ContactFigures(
        name,
        unit,
        in_unit(float(cf.f[k]), unit),
        float(cf.t[k]),
        in_unit(rms, unit),
        n_valid / cf.f.shape[0],
        cf.how,
    )


def _joint(ctx: AuditContext, name: str) -> JointFigures:
    joint = ctx.resolution.protocol.joints[name]
    unit = angle_unit(joint)
    sp = joint_signal(ctx, name, "speed")
    source = None if isinstance(sp, Unavailable) else ("derived" if sp.derived else "logged")
    note = sp.reason if isinstance(sp, Unavailable) else sp.describe()
    pos = joint_signal(ctx, name, "position")
    if isinstance(pos, Unavailable):
        return JointFigures(name, unit, None, None, None, 0.0, source, note)
    ex = extremes(ctx, (name, "position"), pos.x, pos.valid)  # shared with the range checks
    hi = in_unit(ex.max, unit)
    lo = in_unit(ex.min, unit)
    coverage = int(np.count_nonzero(pos.valid)) / pos.x.shape[0]
    return JointFigures(name, unit, lo, hi, hi - lo, coverage, source, note)


def summarise(ctx: AuditContext) -> SessionSummary:
    """The session's summary figures (uses the same cached channels as the checks)."""
    p = ctx.resolution.protocol
    spans = [float(s.time[-1] - s.time[0]) for s in ctx.session.streams.values() if s.n >= 2]
    active, unknown, note = _activity(ctx)
    sa = stop_analysis(ctx)
    by_source: dict[str, int] = {}
    for ep in sa.episodes:
        by_source[ep.trigger.source] = by_source.get(ep.trigger.source, 0) + 1
    return SessionSummary(
        duration=max(spans, default=0.0),
        active_time=active,
        motion_unknown_time=unknown,
        activity_note=note,
        contacts=tuple(_contact(ctx, name) for name in p.contacts),
        joints=tuple(_joint(ctx, name) for name in p.joints),
        stops=len(sa.episodes),
        stops_by_source=tuple(sorted(by_source.items())),
    )
