"""The stop analysis shared by the stop checks (A201–A204): triggers, stop episodes, standstill, torque off
and the distance each joint travelled.

Triggers
--------
* ``logging.triggers`` (emergency stop, protective stop, safety state): a column whose value is in ``active``
  (or not in ``normal``) requests a stop; each change from inactive to active is one trigger.  An empty or
  unreadable cell (or a sample whose time is not valid) keeps the last known state.  A trigger already active
  at the first sample cannot be timed and is reported as not assessable.
* An exceedance of a limit of a layer listed in ``stop.stop_on_exceedance`` (range, speed, torque,
  acceleration; the events of A101–A104): the protocol says a stop must follow, timed from the first sample
  over the limit.

Triggers are taken in time order; one that comes while an earlier stop is still in progress (at or before its
standstill, or at any time after a stop that never reached standstill) is folded into that stop episode.

Per episode
-----------
* standstill: the first time at or after the trigger from which every joint's speed is valid and below
  ``stop.standstill.speed`` for ``stop.standstill.hold`` (on the clock most joints are logged on; other
  streams are sampled and held onto it).  An invalid speed sample is never taken as still.
* torque off: per joint with a torque channel, the first time at or after the trigger from which ``|torque| <=
  stop.torque_off.level`` for ``stop.standstill.hold``; the episode's torque-off time is the latest of them.
* distance: per joint, the largest excursion of its position from where it was at the trigger, up to
  standstill (or to the end of the log when none came); with the speed at the trigger.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from bracer.audit.checks._common import Unavailable, cached, finding, shown_values, text_variants
from bracer.audit.checks._joint import Motion, joint_signal, joint_stream, motion
from bracer.audit.checks._limits import exceedances, limit_specs
from bracer.audit.context import AuditContext
from bracer.audit.derive import sample_period
from bracer.audit.events import first_sustained_where, hold_last, runs
from bracer.findings import Check, Finding, Kind, Severity
from bracer.protocol.model import TriggerChannel

__all__ = [
    "Episode",
    "JointStop",
    "StopAnalysis",
    "Trigger",
    "stop_analysis",
    "stop_finding",
    "trigger_active",
]

#: Whether a condition holds at samples ``lo .. hi - 1`` (see :func:`first_sustained_where`).
Condition = Callable[[int, int], np.ndarray]


_TRIGGER_WORDS = {
    "emergency_stop": "emergency stop",
    "protective_stop": "protective stop",
    "safety_state": "safety-state change",
}


@dataclass(frozen=True, slots=True)
class Trigger:
    """A stop request: a trigger column turning active, or an exceedance after which a stop must follow."""

    source: str  # emergency_stop, protective_stop, safety_state, exceedance
    t: float
    stream: str
    i: int  # sample index on ``stream``
    channel: str | None
    label: str  # "emergency stop (estop = 1)"
    subject: str | None = None  # the joint, for an exceedance

    @property
    def required(self) -> bool:
        """An exceedance after which the protocol requires a stop."""
        return self.source == "exceedance"


@dataclass(frozen=True, slots=True)
class JointStop:
    """One joint during one stop episode (internal units: rad, rad/s, s)."""

    joint: str
    stream: str
    channel: str
    v0: float | None  # speed at the trigger, signed; None when not valid there
    moved: bool  # above the standstill speed at some valid sample from the trigger to the standstill
    distance: float | None  # largest excursion from the position at the trigger
    i_start: int
    i_end: int
    t_end: float


@dataclass(frozen=True, slots=True)
class Episode:
    trigger: Trigger
    folded: tuple[Trigger, ...]
    t_standstill: float | None
    i_standstill: int | None  # on the motion stream
    motion_stream: str | None
    t_log_end: float
    joints: tuple[JointStop, ...]
    torque_off: tuple[tuple[str, float | None], ...]  # per joint with a torque channel: time torque went off
    sample_period: float  # of the motion stream, s

    @property
    def latency(self) -> float | None:
        return None if self.t_standstill is None else self.t_standstill - self.trigger.t

    @property
    def t_torque_off(self) -> float | None:
        """When every joint with a torque channel was off; None when one never was, or none is assessed."""
        if not self.torque_off or any(t is None for _, t in self.torque_off):
            return None
        return max(t for _, t in self.torque_off if t is not None)


@dataclass(frozen=True, eq=False)
class StopAnalysis:
    episodes: tuple[Episode, ...]
    #: triggers already active at the log's first sample (not timed)
    at_start: tuple[Trigger, ...]
    #: trigger channels that could not be read: (trigger kind, why)
    missing_triggers: tuple[tuple[str, Unavailable], ...]
    #: why standstill cannot be judged at all (no stop function, no joint speed), or None
    no_standstill: Unavailable | None
    #: joints left out of the standstill test
    standstill_missing: tuple[tuple[str, Unavailable], ...]
    #: joints without a usable torque channel
    torque_missing: tuple[tuple[str, Unavailable], ...]
    #: how speeds derived from position entered the standstill test ("" when all were logged)
    derived_note: str = ""


def trigger_active(states: np.ndarray, rule: TriggerChannel, time_valid: np.ndarray | None) -> np.ndarray:
    """Whether a stop is requested at each sample (unknown samples keep the last known state).

    Parameters
    ----------
    states : ndarray, shape (n,)
        The column as recorded: float64 (NaN = missing) or str ("" = missing).
    rule : TriggerChannel
        ``active`` values (request a stop) or ``normal`` values (all others do).
    time_valid : ndarray of bool, shape (n,), or None
    """
    values = rule.active if rule.active is not None else (rule.normal or [])
    if states.dtype.kind in "fiub":
        nums = []
        for v in values:
            try:
                nums.append(float(v))
            except ValueError:
                continue
        x = states.astype(np.float64, copy=False)
        known = np.isfinite(x)
        hit = np.isin(x, np.asarray(nums, dtype=np.float64))
    else:
        text = states.astype(str, copy=False)
        known = text != ""
        hit = np.isin(text, [s for v in values for s in text_variants(v)])
    active = hit if rule.active is not None else ~hit
    if time_valid is not None:
        known &= time_valid
    return hold_last(active, known)


def _explicit_triggers(
    ctx: AuditContext,
) -> tuple[list[Trigger], list[Trigger], list[tuple[str, Unavailable]]]:
    triggers: list[Trigger] = []
    at_start: list[Trigger] = []
    missing: list[tuple[str, Unavailable]] = []
    for kind, rule in ctx.resolution.protocol.logging.triggers.items():
        stream = ctx.session.streams.get(rule.stream)
        states = None
        if stream is not None:
            states = stream.states.get(rule.column)
            if states is None:
                states = stream.channels.get(rule.column)
        if stream is None or states is None:
            where = (
                f"stream '{rule.stream}' is not in the log"
                if stream is None
                else f"column '{rule.column}' is not in the log (stream '{rule.stream}')"
            )
            missing.append((kind, Unavailable(rule.column, where)))
            continue
        active = trigger_active(states, rule, ctx.session.time_valid.get(rule.stream))
        starts, _ = runs(active)
        rule_text = (
            f"{rule.column} in {rule.active}"
            if rule.active is not None
            else f"{rule.column} not in {rule.normal}"
        )
        for i in starts.tolist():
            shown = shown_values(states[i : i + 1])[0]
            label = f"{_TRIGGER_WORDS[kind]} ({rule.column} = {shown}; rule: {rule_text})"
            trig = Trigger(kind, float(stream.time[i]), rule.stream, i, rule.column, label)
            (at_start if i == 0 else triggers).append(trig)
    return triggers, at_start, missing


def _exceedance_triggers(ctx: AuditContext) -> list[Trigger]:
    p = ctx.resolution.protocol
    assert p.stop is not None
    layers = set(p.stop.stop_on_exceedance)
    out: list[Trigger] = []
    for name in p.joints:
        for quantity in ("position", "speed", "torque", "acceleration"):
            specs = [s for s in limit_specs(ctx, name, quantity) if s.layer in layers]  # type: ignore[arg-type]
            if not specs:
                continue
            sig = joint_signal(ctx, name, quantity)  # type: ignore[arg-type]
            if isinstance(sig, Unavailable):
                continue  # reported by the limit check
            for spec in specs:
                for ev in exceedances(ctx, spec, sig):
                    label = (
                        f"{spec.layer} {quantity} limit of {name} exceeded in the {spec.direction} direction "
                        f"(limit {spec.declared})"
                    )
                    out.append(
                        Trigger("exceedance", ev.t_start, sig.stream, ev.i_start, sig.channel, label, name)
                    )
    return out


def stop_analysis(ctx: AuditContext) -> StopAnalysis:
    """The stop episodes of the session, cached per audit."""
    return cached(ctx, ("stops",), lambda: _analyse(ctx))


def stop_finding(
    check: Check, kind: Kind, severity: Severity, message: str, trig: Trigger, *, quantity: str, **fields: Any
) -> Finding:
    """A finding about the stop after one trigger.

    Its subject is the trigger's joint (an exceedance) or the session, its channel the trigger column, and it
    starts at the trigger (``t_start`` s, ``i_start`` row on the trigger's stream); ``fields`` give the rest.
    """
    return finding(
        check,
        kind,
        severity,
        message,
        subject=trig.subject,
        subject_kind="joint" if trig.subject else "session",
        quantity=quantity,
        channel=trig.channel,
        t_start=trig.t,
        i_start=trig.i,
        **fields,
    )


def _analyse(ctx: AuditContext) -> StopAnalysis:
    p = ctx.resolution.protocol
    triggers, at_start, missing = _explicit_triggers(ctx)
    if p.stop is None:
        why = Unavailable(
            None,
            "the protocol declares no stop function (stop:), so standstill and stop budgets are not defined",
        )
        return StopAnalysis((), tuple(at_start), tuple(missing), why, (), ())
    stop = p.stop
    triggers += _exceedance_triggers(ctx)
    order = {"emergency_stop": 0, "protective_stop": 1, "safety_state": 2, "exceedance": 3}
    triggers.sort(key=lambda tr: (tr.t, order[tr.source]))

    main = joint_stream(ctx)
    mot: Motion | Unavailable
    mot = (
        Unavailable(None, "no joint's speed is available")
        if main is None
        else motion(ctx, main, stop.standstill.speed.si)
    )
    no_standstill = mot if isinstance(mot, Unavailable) else None
    standstill_missing = () if isinstance(mot, Unavailable) else mot.missing
    dt = sample_period(mot.t) if not isinstance(mot, Unavailable) else float("nan")

    # Standstill and torque off are searched from each trigger on (first_sustained_where), not over the log.
    torque_missing: list[tuple[str, Unavailable]] = []
    torque_of: dict[str, tuple[str, np.ndarray, Condition]] = {}
    level = stop.torque_off.level.si if stop.torque_off is not None else None
    if level is not None:
        for name in p.joints:
            tq = joint_signal(ctx, name, "torque")
            if isinstance(tq, Unavailable):
                torque_missing.append((name, tq))
                continue
            torque_of[name] = (tq.stream, tq.t, _torque_off(tq.x, tq.valid, level))

    hold = stop.standstill.hold.si
    episodes: list[Episode] = []
    folded: list[Trigger] = []
    busy_until = -np.inf
    t_log_end = max((float(s.time[-1]) for s in ctx.session.streams.values() if s.n), default=0.0)
    for trig in triggers:
        if episodes and trig.t <= busy_until:
            folded.append(trig)
            continue
        if episodes:
            episodes[-1] = _with_folded(episodes[-1], folded)
            folded = []
        t_still: float | None = None
        i_still: int | None = None
        if not isinstance(mot, Unavailable):
            i0 = _start_on(mot.stream, mot.t, trig)
            if i0 < mot.t.shape[0]:
                i_still = first_sustained_where(mot.t, _still(mot), i0, hold)
                t_still = float(mot.t[i_still]) if i_still is not None else None
        still = (
            None
            if (i_still is None or t_still is None or isinstance(mot, Unavailable))
            else (mot.stream, i_still, t_still)
        )
        joints = tuple(_joint_stop(ctx, name, trig, still, stop.standstill.speed.si) for name in p.joints)
        torque_off: list[tuple[str, float | None]] = []
        for name, (tq_stream, tt, is_off) in torque_of.items():
            k0 = _start_on(tq_stream, tt, trig)
            k = first_sustained_where(tt, is_off, k0, hold) if k0 < tt.shape[0] else None
            torque_off.append((name, float(tt[k]) if k is not None else None))
        episodes.append(
            Episode(
                trig,
                (),
                t_still,
                i_still,
                None if isinstance(mot, Unavailable) else mot.stream,
                t_log_end,
                tuple(j for j in joints if j is not None),
                tuple(torque_off),
                dt,
            )
        )
        busy_until = t_still if t_still is not None else np.inf
    if episodes and folded:
        episodes[-1] = _with_folded(episodes[-1], folded)
    return StopAnalysis(
        tuple(episodes),
        tuple(at_start),
        tuple(missing),
        no_standstill,
        tuple(standstill_missing),
        tuple(torque_missing),
    )


def _still(mot: Motion) -> Condition:
    """Every assessed joint known to be below the standstill speed (``Motion.still``, on a slice)."""

    def at(lo: int, hi: int) -> np.ndarray:
        still = ~mot.moving[lo:hi]
        still &= mot.known[lo:hi]
        return still

    return at


def _torque_off(x: np.ndarray, valid: np.ndarray, level: float) -> Condition:
    """``|torque| <= level`` at valid samples, on a slice."""

    def at(lo: int, hi: int) -> np.ndarray:
        off = np.abs(x[lo:hi]) <= level
        off &= valid[lo:hi]
        return off

    return at


def _with_folded(ep: Episode, folded: list[Trigger]) -> Episode:
    if not folded:
        return ep
    return Episode(
        ep.trigger,
        tuple(folded),
        ep.t_standstill,
        ep.i_standstill,
        ep.motion_stream,
        ep.t_log_end,
        ep.joints,
        ep.torque_off,
        ep.sample_period,
    )


def _start_on(stream: str, t: np.ndarray, trig: Trigger) -> int:
    """The trigger's sample on a clock: its own index on its stream, else the first sample at or after it.

    Using the recorded index where the streams agree keeps the mapping exact even where the clock has a glitch
    (time out of order), which a binary search on time would not survive.
    """
    if stream == trig.stream:
        return trig.i
    return int(np.searchsorted(t, trig.t, side="left"))


def _end_on(stream: str, t: np.ndarray, still: tuple[str, int, float] | None) -> int:
    """The last sample at or before standstill on a clock (the end of the log when no standstill came)."""
    if still is None:
        return t.shape[0] - 1
    s, i, when = still
    if stream == s:
        return i
    return int(np.searchsorted(t, when, side="right")) - 1


def _joint_stop(
    ctx: AuditContext, name: str, trig: Trigger, still: tuple[str, int, float] | None, threshold: float
) -> JointStop | None:
    pos = joint_signal(ctx, name, "position")
    sp = joint_signal(ctx, name, "speed")
    if isinstance(pos, Unavailable) or isinstance(sp, Unavailable):
        return None
    # speed at the trigger and motion during the stop, on the speed's clock
    a = _start_on(sp.stream, sp.t, trig)
    if a >= sp.t.shape[0]:
        return None
    b = max(_end_on(sp.stream, sp.t, still), a)
    v0 = float(sp.x[a]) if sp.valid[a] else None
    seg = slice(a, b + 1)
    moved = bool(np.any((np.abs(sp.x[seg]) > threshold) & sp.valid[seg]))
    # excursion of the position from where it was at the trigger
    i = _start_on(pos.stream, pos.t, trig)
    if i >= pos.t.shape[0]:
        return None
    j = max(_end_on(pos.stream, pos.t, still), i)
    x = pos.x[i : j + 1]
    ok = pos.valid[i : j + 1]
    distance: float | None = None
    if ok.any():
        x0 = x[int(np.argmax(ok))]
        distance = float(np.max(np.abs(x - x0), where=ok, initial=0.0))
    return JointStop(name, pos.stream, pos.channel, v0, moved, distance, i, j, float(pos.t[j]))
