"""Joint limits as the checks apply them: one :class:`LimitSpec` per joint, quantity, layer and direction, the
events over each (cached: the range, speed, torque and acceleration checks, the near-miss check and the stop
check all use them), and the findings built from those events.

Conventions
-----------
* Range: the positive direction's limit is the layer's ``max`` (a sample is over when ``x > max``), the
  negative direction's is ``min`` (over when ``x < min``).  Values are signed angles.  The hysteresis band and
  a near-miss ``fraction`` are fractions of the layer's span ``max - min`` (a range end can be 0 deg, so a
  fraction of the end itself would mean nothing); the participant's range uses its own span when both ends are
  known, else the widest protocol layer's.
* Speed, torque, acceleration: limits are magnitudes per direction; positive direction over when
  ``x > +limit``, negative when ``x < -limit``.  Peaks are reported as magnitudes.  Hysteresis and a near-miss
  ``fraction`` are fractions of the limit.
* The near-miss band is the wider of ``fraction`` and ``absolute`` (``protocol.near_miss.<quantity>``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from bracer.audit.checks._common import (
    LAYER_SEVERITY,
    Unavailable,
    cached,
    extremes,
    finding,
    fmt,
    fmt_t,
    in_unit,
    not_assessable,
    span_text,
)
from bracer.audit.checks._joint import JointQuantity, JointSignal, joint_signal
from bracer.audit.context import AuditContext
from bracer.audit.events import Event, find_events, overlapping
from bracer.findings import Check, Finding, Kind, Severity
from bracer.protocol.model import Joint, Margin
from bracer.protocol.resolve import participant_range
from bracer.units import Quantity

__all__ = [
    "LimitSpec",
    "exceedances",
    "joint_limit_findings",
    "limit_specs",
    "margin_band",
    "near_events",
]

Side = Literal["above", "below"]
DIRS: tuple[Literal["positive", "negative"], ...] = ("positive", "negative")
_LAYERS = ("planned", "device", "mechanical")


@dataclass(frozen=True, slots=True)
class LimitSpec:
    """One limit of one joint, ready to compare with a channel.

    Attributes
    ----------
    declared : Quantity
        The limit as the protocol declared it (its unit is the unit findings report in); for range a signed
        bound, otherwise a magnitude.
    threshold : float
        Signed internal value a sample is compared with on ``side``.
    band : float
        Hysteresis, internal unit.
    base : float
        What a near-miss ``fraction`` multiplies (the layer's span for range, the limit otherwise), internal.
    """

    joint: str
    quantity: JointQuantity
    layer: str
    direction: Literal["positive", "negative"]
    declared: Quantity
    side: Side
    threshold: float
    band: float
    base: float
    severity: Severity
    source_note: str = ""  # e.g. "the participant's normative reference range (AAOS ...)"

    @property
    def key(self) -> tuple[str, ...]:
        return (self.joint, self.quantity, self.layer, self.direction)

    @property
    def unit(self) -> str:
        return str(self.declared.unit)

    def magnitude(self, value: float) -> float:
        """A value as reported: signed for range, a magnitude otherwise (internal unit)."""
        return value if self.quantity == "position" else abs(value)

    def margin_to(self, value: float) -> float:
        """``limit - value`` in the declared unit, negative beyond the limit."""
        sign = 1.0 if self.side == "above" else -1.0
        return in_unit(sign * (self.threshold - value), self.unit)


def _range_specs(ctx: AuditContext, name: str, joint: Joint, h: float) -> list[LimitSpec]:
    specs: list[LimitSpec] = []
    spans = [b.max.si - b.min.si for b in (joint.range.layer(x) for x in _LAYERS) if b is not None]
    widest = max(spans, default=0.0)
    for layer in _LAYERS:
        b = joint.range.layer(layer)
        if b is None:
            continue
        span = b.max.si - b.min.si
        specs.append(
            LimitSpec(
                name,
                "position",
                layer,
                "positive",
                b.max,
                "above",
                b.max.si,
                h * span,
                span,
                LAYER_SEVERITY[layer],
            )
        )
        specs.append(
            LimitSpec(
                name,
                "position",
                layer,
                "negative",
                b.min,
                "below",
                b.min.si,
                h * span,
                span,
                LAYER_SEVERITY[layer],
            )
        )
    res = ctx.resolution
    if res.participant is None:
        return specs
    pr = participant_range(res.protocol, name, res.participant)
    span = pr.max.si - pr.min.si if pr.max is not None and pr.min is not None else widest
    for direction in DIRS:
        q, source = pr.get(direction)
        if q is None:
            continue
        measured = source == "measured"
        note = (
            f"the participant's measured range ({pr.note})"
            if measured
            else f"the participant's range, from a {pr.note} (no measured value recorded)"
        )
        specs.append(
            LimitSpec(
                name,
                "position",
                "participant",
                direction,
                q,
                "above" if direction == "positive" else "below",
                q.si,
                h * span,
                span,
                Severity.ERROR if measured else Severity.WARNING,
                note,
            )
        )
    return specs


def limit_specs(ctx: AuditContext, name: str, quantity: JointQuantity) -> tuple[LimitSpec, ...]:
    """Every declared limit of ``quantity`` for joint ``name`` (effective protocol, participant's range)."""

    def build() -> tuple[LimitSpec, ...]:
        p = ctx.resolution.protocol
        joint = p.joints[name]
        h = p.audit.hysteresis
        if quantity == "position":
            return tuple(_range_specs(ctx, name, joint, h))
        layers = {"speed": joint.speed, "torque": joint.torque, "acceleration": joint.acceleration}[quantity]
        specs = []
        for layer in _LAYERS:
            d = layers.layer(layer)
            if d is None:
                continue
            for direction in DIRS:
                q = d.get(direction)
                sign = 1.0 if direction == "positive" else -1.0
                specs.append(
                    LimitSpec(
                        name,
                        quantity,
                        layer,
                        direction,
                        q,
                        "above" if direction == "positive" else "below",
                        sign * q.si,
                        h * q.si,
                        q.si,
                        LAYER_SEVERITY[layer],
                    )
                )
        return tuple(specs)

    return cached(ctx, ("specs", name, quantity), build)


def _reaches(ctx: AuditContext, sig: JointSignal, side: Side, threshold: float) -> bool:
    ex = extremes(ctx, (sig.joint, sig.quantity), sig.x, sig.valid)
    return ex.max > threshold if side == "above" else ex.min < threshold


def exceedances(ctx: AuditContext, spec: LimitSpec, sig: JointSignal) -> tuple[Event, ...]:
    """Events over ``spec``'s limit (hysteresis and minimum duration from the protocol), cached per audit."""

    def build() -> tuple[Event, ...]:
        if not _reaches(ctx, sig, spec.side, spec.threshold):
            return ()
        audit = ctx.resolution.protocol.audit
        return find_events(
            sig.t,
            sig.x,
            sig.valid,
            spec.threshold,
            side=spec.side,
            band=spec.band,
            min_duration=audit.min_event_duration.si,
        )

    return cached(ctx, ("exceed", *spec.key), build)


def margin_band(margin: Margin | None, base: float, declared: Quantity) -> float | None:
    """Width of the near-miss band, internal unit: the wider of ``fraction * base`` and ``absolute``.

    None when no margin is declared, or when its only part has a dimension other than the limit's.
    """
    if margin is None:
        return None
    widths = []
    if margin.fraction is not None:
        widths.append(margin.fraction * base)
    if margin.absolute is not None and margin.absolute.dimension == declared.dimension:
        widths.append(margin.absolute.si)
    return max(widths) if widths else None


def near_events(ctx: AuditContext, spec: LimitSpec, sig: JointSignal, width: float) -> tuple[Event, ...]:
    """Events within ``width`` of ``spec``'s limit that overlap no reported exceedance of it."""
    near = spec.threshold - width if spec.side == "above" else spec.threshold + width
    if not _reaches(ctx, sig, spec.side, near):
        return ()
    audit = ctx.resolution.protocol.audit
    events = find_events(
        sig.t,
        sig.x,
        sig.valid,
        near,
        side=spec.side,
        band=spec.band,
        min_duration=audit.min_event_duration.si,
    )
    over = exceedances(ctx, spec, sig)
    return tuple(e for e, hit in zip(events, overlapping(events, over), strict=True) if not hit)


# ----------------------------------------------------------------------------------------- findings

_WORD = {"position": "position", "speed": "speed", "torque": "torque", "acceleration": "acceleration"}
_LAYER_WORD = {
    "planned": "planned",
    "device": "device",
    "mechanical": "mechanical end-stop",
    "participant": "participant's range",
}


def direction_words(joint: Joint, spec: LimitSpec) -> str:
    """``the positive direction (flexion)``."""
    anatomical = joint.positive if spec.direction == "positive" else joint.negative
    return f"the {spec.direction} direction ({anatomical})"


def _figures(spec: LimitSpec, ev: Event) -> tuple[float, float, float]:
    unit = spec.unit
    peak = in_unit(spec.magnitude(ev.peak), unit)
    return peak, float(spec.declared.magnitude), spec.margin_to(ev.peak)


def _derivation_extra(sig: JointSignal) -> tuple[tuple[str, object], ...]:
    if sig.derivation is None:
        return (("source", "logged"),)
    d = sig.derivation
    return (
        ("source", "derived"),
        ("derivative_window_samples", d.window_samples),
        ("derivative_window_s", d.window_s),
        ("derivative_delay_s", d.delay_s),
    )


def violation(check: Check, ctx: AuditContext, spec: LimitSpec, sig: JointSignal, ev: Event) -> Finding:
    """A finding for one event over a joint limit."""
    joint = ctx.resolution.protocol.joints[spec.joint]
    peak, limit, margin = _figures(spec, ev)
    unit = spec.unit
    beyond = "beyond" if spec.quantity == "position" else "above"
    layer = _LAYER_WORD[spec.layer]
    msg = (
        f"{spec.joint} {_WORD[spec.quantity]} {beyond} the {layer} limit in {direction_words(joint, spec)}: "
        f"peak {fmt(peak, unit)} at {fmt_t(ev.t_peak)}, limit {fmt(limit, unit)} "
        f"({fmt(abs(margin), unit)} {beyond}), {span_text(ev.t_start, ev.t_end)}"
    )
    if spec.source_note:
        msg += f"; limit from {spec.source_note}"
    if sig.derived:
        msg += f"; {sig.describe()}"
    return finding(
        check,
        Kind.VIOLATION,
        spec.severity,
        msg + ".",
        subject=spec.joint,
        subject_kind="joint",
        quantity=spec.quantity,
        direction=spec.direction,
        layer=spec.layer,
        channel=sig.channel,
        event=ev,
        peak=peak,
        limit=limit,
        margin=margin,
        unit=unit,
        extra=(("duration_s", ev.duration), *_derivation_extra(sig)),
    )


def near_miss(
    check: Check, ctx: AuditContext, spec: LimitSpec, sig: JointSignal, ev: Event, width: float
) -> Finding:
    """A finding for one event inside the near-miss band of a joint limit."""
    joint = ctx.resolution.protocol.joints[spec.joint]
    peak, limit, margin = _figures(spec, ev)
    unit = spec.unit
    layer = _LAYER_WORD[spec.layer]
    band = in_unit(width, unit)
    if margin >= 0:
        how = f"came within {fmt(margin, unit)} of"
    else:
        how = (
            f"passed by {fmt(-margin, unit)}, for less than the minimum event duration "
            f"({fmt(ctx.resolution.protocol.audit.min_event_duration.si * 1e3)} ms), "
            "and otherwise stayed near"
        )
    msg = (
        f"near miss: {spec.joint} {_WORD[spec.quantity]} {how} the {layer} limit in "
        f"{direction_words(joint, spec)}: peak {fmt(peak, unit)} at {fmt_t(ev.t_peak)}, limit "
        f"{fmt(limit, unit)}, near-miss band {fmt(band, unit)}, {span_text(ev.t_start, ev.t_end)}"
    )
    if spec.source_note:
        msg += f"; limit from {spec.source_note}"
    if sig.derived:
        msg += f"; {sig.describe()}"
    severity = Severity.INFO if spec.layer == "planned" else Severity.WARNING
    return finding(
        check,
        Kind.NEAR_MISS,
        severity,
        msg + ".",
        subject=spec.joint,
        subject_kind="joint",
        quantity=spec.quantity,
        direction=spec.direction,
        layer=spec.layer,
        channel=sig.channel,
        event=ev,
        peak=peak,
        limit=limit,
        margin=margin,
        unit=unit,
        extra=(("duration_s", ev.duration), ("near_miss_band", band), *_derivation_extra(sig)),
    )


def joint_limit_findings(check: Check, ctx: AuditContext, quantity: JointQuantity) -> list[Finding]:
    """Violations of every declared ``quantity`` limit of every joint; not assessable without a channel."""
    out: list[Finding] = []
    for name in ctx.resolution.protocol.joints:
        specs = limit_specs(ctx, name, quantity)
        if not specs:
            continue
        sig = joint_signal(ctx, name, quantity)
        if isinstance(sig, Unavailable):
            out.append(
                not_assessable(
                    check,
                    sig,
                    subject=name,
                    subject_kind="joint",
                    quantity=quantity,
                    what=f"{quantity} limits of joint '{name}'",
                )
            )
            continue
        for spec in specs:
            out.extend(violation(check, ctx, spec, sig, ev) for ev in exceedances(ctx, spec, sig))
    return out
