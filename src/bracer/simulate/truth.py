"""Ground truth of a simulated session: every scripted incident with its times, peak and limit.

Times are seconds on the log's clock; ``i_start``/``i_end``/``i_peak`` are row numbers (0-based, header
excluded) of the stream file the quantity is logged in, after any gap has been cut out.  Peaks and limits are
in the unit the protocol declared for the limit.  Spans are taken from the noise-free signal on the stream's
own samples: ``t_start`` is the first sample past the limit (for a near miss: inside its band), ``t_end`` the
last.  For a stop, each braking joint's latency and distance are the closed form t = t_r + v0/a,
d = v0·t_r + v0²/(2a); the stop_latency entry's peak is the protocol's latency, from the request until every
joint is below the standstill speed, t_r + (v0 − v_s)/a for the slowest joint.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from bracer.simulate.blocks import (
    ExcursionDetail,
    FastMoveDetail,
    GapDetail,
    Incident,
    PushDetail,
    StopDetail,
    StreamClock,
)
from bracer.simulate.envelope import ContactEnvelope, Direction
from bracer.simulate.incidents import SimulationError
from bracer.simulate.planner import Plan
from bracer.simulate.stopping import StopProfile
from bracer.units import Quantity, parse_unit

__all__ = ["JointStop", "StopTruth", "TruthEntry", "incident_entries", "row_index"]

Array = NDArray[np.float64]


@dataclass(frozen=True, slots=True)
class JointStop:
    """One joint's part of a stop, in the protocol's units (speed of its speed limit, distance of its position
    channel, deceleration of its stop_deceleration)."""

    joint: str
    v0: float
    speed_unit: str
    deceleration: float
    deceleration_unit: str
    latency: float  # s, t_r + v0/a
    latency_to_standstill_speed: float  # s, t_r + (v0 − v_s)/a
    distance: float
    distance_unit: str


@dataclass(frozen=True, slots=True)
class StopTruth:
    trigger: str
    column: str
    t_trigger: float
    category: int
    reaction_time: float  # s
    latency: float  # s: slowest joint, closed form
    latency_to_standstill_speed: float  # s: when every joint is below the standstill speed
    standstill_confirmed: float  # s after the trigger: the above plus the standstill hold
    torque_off_latency: (
        float | None
    )  # s after the trigger until every logged torque is below the torque-off level
    latency_budget: float  # s
    joints: tuple[JointStop, ...]


@dataclass(frozen=True, slots=True)
class TruthEntry:
    incident: str
    subject: str
    subject_kind: str
    quantity: str
    kind: str
    stream: str
    columns: tuple[str, ...]
    direction: str | None
    layer: str | None
    t_start: float
    t_end: float
    t_peak: float
    i_start: int
    i_end: int
    i_peak: int
    peak: float
    limit: float | None
    unit: str
    exceeds: bool
    margin: float | None
    window: tuple[float, float]
    level: float | None = None
    level_unit: str | None = None
    stop: StopTruth | None = None


def _in(value_si: float, unit: str) -> float:
    factor, _ = parse_unit(unit)
    return value_si / factor


def row_index(plan: Plan, stream: str, k: int) -> int:
    """Row of grid sample ``k`` of ``stream`` in the written file (samples inside gaps are not written)."""
    clock = plan.clocks[stream]
    removed = 0
    for gap in plan.physics.overlays.gaps:
        if gap.stream != stream:
            continue
        first = math.floor((gap.after - clock.start) * clock.rate + 1e-9) + 1
        last = math.ceil((gap.before - clock.start) * clock.rate - 1e-9) - 1
        if last >= first:
            removed += max(0, min(k, last + 1) - first)
    return k - removed


@dataclass(frozen=True, slots=True)
class _Span:
    k_start: int
    k_end: int
    k_peak: int
    t_start: float
    t_end: float
    t_peak: float


def _span(clock: StreamClock, k0: int, t: Array, mask: NDArray[np.bool_], peak_at: int) -> _Span:
    hits = np.flatnonzero(mask)
    if hits.size == 0:
        raise SimulationError(
            "internal error: a scripted incident left no trace in its own signal; please report"
        )
    a, b = int(hits[0]), int(hits[-1])
    return _Span(k0 + a, k0 + b, k0 + peak_at, float(t[a]), float(t[b]), float(t[peak_at]))


def _entry(
    plan: Plan,
    inc: Incident,
    quantity: str,
    kind: str,
    stream: str,
    columns: tuple[str, ...],
    span: _Span,
    peak_si: float,
    limit: Quantity | None,
    unit: str,
    *,
    direction: str | None = None,
    layer: str | None = None,
    t_peak: float | None = None,
    lower: bool = False,
    level: Quantity | None = None,
    stop: StopTruth | None = None,
    peak_in_unit: float | None = None,
    limit_in_unit: float | None = None,
    subject: tuple[str, str] | None = None,
) -> TruthEntry:
    peak = _in(peak_si, unit) if peak_in_unit is None else peak_in_unit
    if limit_in_unit is not None:
        lim: float | None = limit_in_unit
    elif limit is None:
        lim = None
    else:
        lim = limit.magnitude if limit.unit == unit else _in(limit.si, unit)
    margin = None if lim is None else (peak - lim if lower else lim - peak)
    exceeds = margin is not None and margin < -1e-9 * max(1.0, abs(lim or 0.0))
    return TruthEntry(
        incident=inc.item.recipe.name,
        subject=inc.subject if subject is None else subject[0],
        subject_kind=inc.item.recipe.subject_kind if subject is None else subject[1],
        quantity=quantity,
        kind=kind,
        stream=stream,
        columns=columns,
        direction=direction,
        layer=layer,
        t_start=span.t_start,
        t_end=span.t_end,
        t_peak=span.t_peak if t_peak is None else t_peak,
        i_start=row_index(plan, stream, span.k_start),
        i_end=row_index(plan, stream, span.k_end),
        i_peak=row_index(plan, stream, span.k_peak),
        peak=peak,
        limit=lim,
        unit=unit,
        exceeds=exceeds,
        margin=margin,
        window=inc.window,
        level=None if level is None else level.magnitude,
        level_unit=None if level is None else level.unit,
        stop=stop,
    )


def _excursion(plan: Plan, inc: Incident, d: ExcursionDetail) -> list[TruthEntry]:
    je = plan.envelope.joints[d.joint]
    ch = je.channels.position
    assert ch is not None
    clock = plan.clocks[ch.stream]
    k0, t = clock.window(*inc.window)
    x = plan.physics.motion(t)[0][:, plan.joint_names.index(d.joint)]
    positive = d.direction == "positive"
    limit = je.range_hi if positive else je.range_lo
    assert limit is not None
    sign = 1.0 if positive else -1.0
    if d.kind == "violation":
        mask = sign * (x - limit.si) > 0
    else:
        width = je.band_hi if positive else je.band_lo
        mask = sign * (x - (limit.si - sign * width)) > 0
    k_peak = int(np.argmin(np.abs(t - d.t_peak)))
    span = _span(clock, k0, t, mask, k_peak)
    layer = f"{je.range_layer}.{'max' if positive else 'min'}"
    return [
        _entry(
            plan,
            inc,
            "position",
            d.kind,
            ch.stream,
            (ch.column,),
            span,
            d.target,
            limit,
            limit.unit,
            direction=d.direction,
            layer=layer,
            t_peak=d.t_peak,
            lower=not positive,
        )
    ]


def _fast_move(plan: Plan, inc: Incident, d: FastMoveDetail) -> list[TruthEntry]:
    je = plan.envelope.joints[d.joint]
    ch = je.channels.velocity or je.channels.position
    assert ch is not None
    clock = plan.clocks[ch.stream]
    k0, t = clock.window(*inc.window)
    v = plan.physics.motion(t)[1][:, plan.joint_names.index(d.joint)]
    limit = je.speed_limit(d.direction)
    assert limit is not None
    sign = 1.0 if d.direction == "positive" else -1.0
    span = _span(clock, k0, t, sign * v > limit.si, int(np.argmin(np.abs(t - d.t_peak))))
    return [
        _entry(
            plan,
            inc,
            "speed",
            "violation",
            ch.stream,
            (ch.column,),
            span,
            d.peak_speed,
            limit,
            limit.unit,
            direction=d.direction,
            layer=f"{je.speed_layer}.{d.direction}",
            t_peak=d.t_peak,
        )
    ]


def _runs(mask: NDArray[np.bool_]) -> list[tuple[int, int]]:
    """[first, last] index pairs of each run of True (np.diff of the padded mask)."""
    edges = np.flatnonzero(np.diff(np.concatenate([[False], mask, [False]]).astype(np.int8)))
    return [(int(a), int(b) - 1) for a, b in zip(edges[::2], edges[1::2], strict=True)]


def _contact_rules(
    plan: Plan,
    inc: Incident,
    c: ContactEnvelope,
    stream: str,
    columns: tuple[str, ...],
    clock: StreamClock,
    k0: int,
    t: Array,
    f: Array,
) -> list[TruthEntry]:
    """What a push does against each of the contact's limits, from its noise-free force on the log's
    samples."""
    out: list[TruthEntry] = []
    k_peak = int(np.argmax(f))
    dt_allow = c.transient_max_duration

    def over(value: Array, limit: float) -> NDArray[np.bool_]:
        return value > limit

    def add(
        quantity: str, kind: str, value: Array, mask: NDArray[np.bool_], limit: Quantity, layer: str
    ) -> None:
        span = _span(clock, k0, t, mask, k_peak)
        out.append(
            _entry(plan, inc, quantity, kind, stream, columns, span, float(value[k_peak]), limit, limit.unit,
                   layer=layer)
        )

    def check(
        quantity: str, value: Array, qs: Quantity | None, tr: Quantity | None, band_qs: float, band_tr: float
    ) -> None:
        if qs is None:
            return
        if tr is not None:
            if np.any(over(value, tr.si)):
                add(quantity, "violation", value, over(value, tr.si), tr, "transient")
            elif np.any(over(value, tr.si - band_tr)):
                add(quantity, "near_miss", value, over(value, tr.si - band_tr), tr, "transient")
        above = over(value, qs.si)
        runs = _runs(above)
        too_long = [r for r in runs if t[r[1]] - t[r[0]] > dt_allow] if tr is not None else runs
        if too_long:
            mask = np.zeros_like(above)
            for a, b in too_long:
                mask[a : b + 1] = True
            add(quantity, "violation", value, mask, qs, "quasi_static")
        elif not runs and np.any(over(value, qs.si - band_qs)):
            add(quantity, "near_miss", value, over(value, qs.si - band_qs), qs, "quasi_static")

    check("force", f, c.force_qs, c.force_transient, c.band_force_qs, c.band_force_transient)
    check(
        "pressure",
        f / c.area,
        c.pressure_qs,
        c.pressure_transient,
        c.band_pressure_qs,
        c.band_pressure_transient,
    )
    if c.sustained_level is not None and c.sustained_duration is not None:
        level = c.sustained_level
        runs = [r for r in _runs(f >= level.si) if t[r[1]] - t[r[0]] > c.sustained_duration.si]
        if runs:
            a, b = max(runs, key=lambda r: r[1] - r[0])
            mask = np.zeros(f.shape, dtype=bool)
            mask[a : b + 1] = True
            span = _span(clock, k0, t, mask, k_peak)
            unit = c.sustained_duration.unit
            out.append(
                _entry(
                    plan,
                    inc,
                    "sustained_force",
                    "violation",
                    stream,
                    columns,
                    span,
                    float(t[b] - t[a]),
                    c.sustained_duration,
                    unit,
                    layer="max_duration",
                    level=level,
                )
            )
    return out


def _push(plan: Plan, inc: Incident, d: PushDetail) -> list[TruthEntry]:
    c = plan.envelope.contacts[d.contact]
    ch = c.contact.channels.force
    assert ch is not None
    clock = plan.clocks[ch.stream]
    k0, t = clock.window(*inc.window)
    f = plan.physics.cuff_force(c, t)
    return _contact_rules(plan, inc, c, ch.stream, tuple(ch.all_columns), clock, k0, t, f)


def _torque_off(plan: Plan, d: StopDetail) -> float | None:
    """Seconds from the trigger until every logged torque stays below the torque-off level (noise-free)."""
    stop = plan.envelope.protocol.stop
    if stop is None or stop.torque_off is None or d.t_torque_off_start is None:
        return None
    level = stop.torque_off.level.si
    latest = d.t_trigger
    logged = False
    for j, name in enumerate(plan.joint_names):
        ch = plan.envelope.joints[name].channels.torque
        if ch is None:
            continue
        logged = True
        clock = plan.clocks[ch.stream]
        _, t = clock.window(d.t_trigger, d.t_trigger + plan.params.trigger_latch * 0.9)
        tau = np.abs(plan.physics.torques(t)[:, j])
        above = np.flatnonzero(tau >= level)
        if above.size and above[-1] + 1 < t.size:
            latest = max(latest, float(t[above[-1] + 1]))
    return latest - d.t_trigger if logged else None


def _stop_distances(plan: Plan, inc: Incident, d: StopDetail, truth: StopTruth) -> list[TruthEntry]:
    """Each braking joint's stop distance (closed form) against the distance its protocol reaction time and
    stop_deceleration allow, v0·t_r + v0²/(2a), in the unit of its position channel."""
    stop = plan.envelope.protocol.stop
    assert stop is not None
    out = []
    for name, prof in zip(d.joints, d.profiles, strict=True):
        je = plan.envelope.joints[name]
        ch = je.channels.position
        assert ch is not None
        allowed = StopProfile(prof.v0, prof.deceleration, stop.reaction_time.si).distance
        clock = plan.clocks[ch.stream]
        k0 = clock.index_at_or_after(d.t_trigger - 1e-9)
        k1 = min(clock.n - 1, round((d.t_trigger + prof.latency - clock.start) * clock.rate))
        span = _Span(k0, k1, k1, d.t_trigger, d.t_trigger + prof.latency, d.t_trigger + prof.latency)
        out.append(
            _entry(
                plan,
                inc,
                "stop_distance",
                "stop",
                ch.stream,
                (ch.column,),
                span,
                abs(prof.distance),
                None,
                ch.unit,
                direction="positive" if prof.v0 > 0 else "negative",
                layer="reaction_time and stop_deceleration",
                limit_in_unit=_in(abs(allowed), ch.unit),
                subject=(name, "joint"),
                stop=truth,
            )
        )
    return out


def _stop(plan: Plan, inc: Incident, d: StopDetail) -> list[TruthEntry]:
    protocol = plan.envelope.protocol
    stop = protocol.stop
    assert stop is not None
    trig = next(tc for name, tc in protocol.logging.triggers.items() if name == d.trigger)
    clock = plan.clocks[trig.stream]
    v_ss = stop.standstill.speed.si
    joints = []
    for name, prof in zip(d.joints, d.profiles, strict=True):
        je = plan.envelope.joints[name]
        direction: Direction = "positive" if prof.v0 >= 0 else "negative"
        speed_limit = je.speed_limit(direction)
        speed_unit = speed_limit.unit if speed_limit is not None else "deg/s"
        pos_unit = je.channels.position.unit if je.channels.position is not None else "deg"
        dec = je.joint.stop_deceleration
        assert dec is not None
        joints.append(
            JointStop(
                name,
                _in(prof.v0, speed_unit),
                speed_unit,
                _in(prof.deceleration, dec.unit),
                dec.unit,
                prof.latency,
                prof.time_below(v_ss),
                _in(prof.distance, pos_unit),
                pos_unit,
            )
        )
    latency = max(p.latency for p in d.profiles)
    to_threshold = max(p.time_below(v_ss) for p in d.profiles)
    off = _torque_off(plan, d)
    truth = StopTruth(
        d.trigger,
        trig.column,
        d.t_trigger,
        stop.category,
        d.reaction,
        latency,
        to_threshold,
        to_threshold + stop.standstill.hold.si,
        off,
        stop.latency_budget.si,
        tuple(joints),
    )
    # The entry's latency is the protocol's: from the request until every joint is below the standstill speed
    # (t_r + (v0 − v_s)/a for the slowest joint); the time to zero speed, t_r + v0/a, is in ``stop.latency``.
    k_trig = clock.index_at_or_after(d.t_trigger - 1e-9)
    k_end = min(clock.n - 1, round((d.t_trigger + to_threshold - clock.start) * clock.rate))
    span = _Span(k_trig, k_end, k_end, d.t_trigger, d.t_trigger + to_threshold, d.t_trigger + to_threshold)
    budget = stop.latency_budget
    out = [
        _entry(
            plan,
            inc,
            "stop_latency",
            "stop",
            trig.stream,
            (trig.column,),
            span,
            to_threshold,
            budget,
            budget.unit,
            layer="latency_budget",
            stop=truth,
        )
    ]
    out += _stop_distances(plan, inc, d, truth)
    if off is not None and stop.torque_off is not None:
        within = stop.torque_off.within
        unit = within.unit if within is not None else "ms"
        k_off = min(clock.n - 1, round((d.t_trigger + off - clock.start) * clock.rate))
        span_off = _Span(k_trig, k_off, k_off, d.t_trigger, d.t_trigger + off, d.t_trigger + off)
        out.append(
            _entry(
                plan,
                inc,
                "torque_off",
                "stop",
                trig.stream,
                (trig.column,),
                span_off,
                off,
                within,
                unit,
                layer="torque_off.within",
                stop=truth,
            )
        )
    return out


def _gap(plan: Plan, inc: Incident, d: GapDetail) -> list[TruthEntry]:
    gap = d.gap
    clock = plan.clocks[gap.stream]
    before = math.floor((gap.after - clock.start) * clock.rate + 1e-9)
    after = math.ceil((gap.before - clock.start) * clock.rate - 1e-9)
    t_a, t_b = clock.time_of(before), clock.time_of(after)
    span = _Span(before, after, after, t_a, t_b, t_b)
    stream = plan.envelope.protocol.logging.streams[gap.stream]
    tolerance = plan.envelope.protocol.audit.gap_tolerance / clock.rate
    return [
        _entry(
            plan,
            inc,
            "gap",
            "data_quality",
            gap.stream,
            (stream.time.column,),
            span,
            0.0,
            None,
            "s",
            layer="gap_tolerance",
            peak_in_unit=t_b - t_a,
            limit_in_unit=tolerance,
        )
    ]


def incident_entries(plan: Plan) -> list[TruthEntry]:
    """The ground-truth entries of every planned incident, in time order."""
    out: list[TruthEntry] = []
    for inc in plan.incidents:
        d = inc.detail
        if isinstance(d, ExcursionDetail):
            out += _excursion(plan, inc, d)
        elif isinstance(d, FastMoveDetail):
            out += _fast_move(plan, inc, d)
        elif isinstance(d, PushDetail):
            out += _push(plan, inc, d)
        elif isinstance(d, StopDetail):
            out += _stop(plan, inc, d)
        else:
            out += _gap(plan, inc, d)
    return sorted(out, key=lambda e: (e.t_start, e.quantity))
