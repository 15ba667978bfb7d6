"""Contact force as the checks read it, and the transient / quasi-static rule shared by force and pressure.

Force of a contact (``contacts.<name>.channels.force``): the vector magnitude of its 2 or 3 axis columns
(``use: magnitude``), the absolute value of its declared ``axis`` column (``use: axis``), or the absolute
value of its one ``column``.  Pressure is force divided by the contact's declared area; the checks compare
force with ``pressure limit × area`` rather than dividing the whole channel.

The protocol's rule (``force.transient_max_duration``): an event over the quasi-static limit that lasts at
most that long is a transient contact and is judged against the transient limit; a longer one is a
quasi-static violation.  Every event over the transient limit is a transient violation, whatever its length.
Without a transient limit every event over the quasi-static limit is a violation.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from bracer.audit.checks._common import (
    TIME_EPS,
    Unavailable,
    cached,
    extremes,
    finding,
    fmt,
    fmt_t,
    in_unit,
    not_assessable,
    signal,
    span_text,
)
from bracer.audit.context import AuditContext
from bracer.audit.events import Event, find_events, overlapping
from bracer.findings import Check, Finding, Kind, Severity
from bracer.protocol.model import Contact
from bracer.units import Quantity

__all__ = [
    "ContactForce",
    "ContactLimit",
    "contact_force",
    "contact_limit_findings",
    "contact_limits",
    "limit_events",
    "near_events",
]

ContactQuantity = Literal["force", "pressure"]


@dataclass(frozen=True, eq=False)
class ContactForce:
    """Force on one contact, N, on its stream's clock; ``valid`` is False where any axis was not."""

    contact: str
    stream: str
    channel: str  # the column(s), as reports show them: "ua_fx, ua_fy, ua_fz"
    how: str  # "vector magnitude of ua_fx, ua_fy, ua_fz"
    t: np.ndarray
    f: np.ndarray
    valid: np.ndarray


def contact_force(ctx: AuditContext, name: str) -> ContactForce | Unavailable:
    """The contact's force, cached per audit."""
    return cached(ctx, ("force", name), lambda: _build(ctx, name))


def _build(ctx: AuditContext, name: str) -> ContactForce | Unavailable:
    ch = ctx.resolution.protocol.contacts[name].channels.force
    if ch is None:
        return Unavailable(None, f"the protocol maps no force channel for contact '{name}'")
    if ch.column is not None:
        cols, how = [ch.column], f"absolute value of column '{ch.column}'"
    elif ch.use == "axis":
        assert ch.axis is not None  # the model guarantees it
        cols, how = [ch.axis], f"absolute value of the declared normal axis '{ch.axis}'"
    else:
        cols = list(ch.columns or [])
        how = f"vector magnitude of {', '.join(cols)}"
    sigs = []
    for col in cols:
        s = signal(ctx, ch.stream, col)
        if isinstance(s, Unavailable):
            return s
        sigs.append(s)
    if len(sigs) == 1:
        f = np.abs(sigs[0].x)
        valid = sigs[0].valid
    else:
        f = np.square(sigs[0].x)
        square = np.empty_like(f)  # one scratch buffer for the other axes
        valid = sigs[0].valid
        for s in sigs[1:]:
            np.square(s.x, out=square)
            f += square
            if s.valid is not valid:  # axes usually share their stream's mask: no copy then
                valid = valid & s.valid
        del square
        np.sqrt(f, out=f)
    if not valid.any():
        return Unavailable(", ".join(cols), f"no sample where all of {', '.join(cols)} are valid")
    return ContactForce(name, ch.stream, ", ".join(cols), how, sigs[0].t, f, valid)


@dataclass(frozen=True, slots=True)
class ContactLimit:
    """One contact limit, expressed as a force threshold.

    ``declared`` is the limit as declared (force or pressure); ``threshold`` the force it corresponds to, N
    (``pressure × area`` for pressure); ``scale`` turns a force into the declared quantity's internal unit.
    """

    contact: str
    quantity: ContactQuantity
    layer: Literal["quasi_static", "transient"]
    declared: Quantity
    threshold: float
    band: float
    scale: float

    @property
    def key(self) -> tuple[str, ...]:
        return (self.contact, self.quantity, self.layer)

    @property
    def unit(self) -> str:
        return str(self.declared.unit)

    def value(self, force: float) -> float:
        """A force, N, as the declared quantity in its declared unit."""
        return in_unit(force * self.scale, self.unit)


def contact_limits(ctx: AuditContext, name: str, quantity: ContactQuantity) -> tuple[ContactLimit, ...]:
    """Quasi-static and (if declared) transient limits of ``quantity`` for contact ``name``."""
    c: Contact = ctx.resolution.protocol.contacts[name]
    h = ctx.resolution.protocol.audit.hysteresis
    group = c.force if quantity == "force" else c.pressure
    if group is None:
        return ()
    area = c.area.si
    to_force = 1.0 if quantity == "force" else area
    out = []
    for layer in ("quasi_static", "transient"):
        q = getattr(group, layer)
        if q is None:
            continue
        thr = q.si * to_force
        out.append(ContactLimit(name, quantity, layer, q, thr, h * thr, 1.0 / to_force))
    return tuple(out)


def _reaches(ctx: AuditContext, cf: ContactForce, threshold: float) -> bool:
    return extremes(ctx, ("contact", cf.contact), cf.f, cf.valid).max > threshold


def limit_events(ctx: AuditContext, lim: ContactLimit, cf: ContactForce) -> tuple[Event, ...]:
    """Events over ``lim`` (hysteresis and minimum duration from the protocol), cached per audit."""

    def build() -> tuple[Event, ...]:
        if not _reaches(ctx, cf, lim.threshold):
            return ()
        return find_events(
            cf.t,
            cf.f,
            cf.valid,
            lim.threshold,
            band=lim.band,
            min_duration=ctx.resolution.protocol.audit.min_event_duration.si,
        )

    return cached(ctx, ("contact-exceed", *lim.key), build)


def near_events(ctx: AuditContext, lim: ContactLimit, cf: ContactForce, width: float) -> tuple[Event, ...]:
    """Events within ``width`` (N) below ``lim`` that overlap no event over it."""
    near = lim.threshold - width
    if not _reaches(ctx, cf, near):
        return ()
    events = find_events(
        cf.t,
        cf.f,
        cf.valid,
        near,
        band=lim.band,
        min_duration=ctx.resolution.protocol.audit.min_event_duration.si,
    )
    over = limit_events(ctx, lim, cf)
    return tuple(e for e, hit in zip(events, overlapping(events, over), strict=True) if not hit)


def contact_violations(
    check: Check, ctx: AuditContext, name: str, quantity: ContactQuantity, cf: ContactForce
) -> list[Finding]:
    """Violations of the quasi-static / transient rule for one contact and quantity."""
    limits = {lim.layer: lim for lim in contact_limits(ctx, name, quantity)}
    c = ctx.resolution.protocol.contacts[name]
    max_transient = c.force.transient_max_duration
    out: list[Finding] = []
    qs = limits.get("quasi_static")
    tr = limits.get("transient")
    if qs is not None:
        for ev in limit_events(ctx, qs, cf):
            if tr is not None and ev.duration <= max_transient.si + TIME_EPS:
                continue  # a transient contact: judged against the transient limit below
            if tr is not None:
                why = (
                    f"for {fmt(ev.duration, 's')}, longer than the {max_transient} allowed for transient "
                    "contact"
                )
            else:
                why = "(no transient limit declared, so any exceedance counts)"
            out.append(_violation(check, qs, cf, ev, why))
    if tr is not None:
        for ev in limit_events(ctx, tr, cf):
            out.append(_violation(check, tr, cf, ev, ""))
    return out


def contact_limit_findings(check: Check, ctx: AuditContext, quantity: ContactQuantity) -> list[Finding]:
    """Violations of the ``quantity`` limits of every contact; not assessable without a usable force channel.

    Every contact declares force limits; pressure limits are optional, and a contact without them is skipped.
    """
    out: list[Finding] = []
    for name, contact in ctx.resolution.protocol.contacts.items():
        if quantity == "pressure" and contact.pressure is None:
            continue
        cf = contact_force(ctx, name)
        if isinstance(cf, Unavailable):
            out.append(
                not_assessable(
                    check,
                    cf,
                    subject=name,
                    subject_kind="contact",
                    quantity=quantity,
                    what=f"{quantity} limits of contact '{name}'",
                )
            )
            continue
        out.extend(contact_violations(check, ctx, name, quantity, cf))
    return out


_WORDS = {"quasi_static": "quasi-static", "transient": "transient"}


def _violation(check: Check, lim: ContactLimit, cf: ContactForce, ev: Event, why: str) -> Finding:
    peak = lim.value(ev.peak)
    limit = float(lim.declared.magnitude)
    margin = limit - peak
    unit = lim.unit
    what = "force" if lim.quantity == "force" else "pressure (force ÷ contact area)"
    msg = (
        f"{lim.contact} contact {what} above the {_WORDS[lim.layer]} limit"
        f"{' ' + why if why else ''}: peak {fmt(peak, unit)} at {fmt_t(ev.t_peak)}, limit {fmt(limit, unit)} "
        f"({fmt(-margin, unit)} above), {span_text(ev.t_start, ev.t_end)}; force is the {cf.how}."
    )
    return finding(
        check,
        Kind.VIOLATION,
        Severity.ERROR,
        msg,
        subject=lim.contact,
        subject_kind="contact",
        quantity=lim.quantity,
        layer=lim.layer,
        channel=cf.channel,
        event=ev,
        peak=peak,
        limit=limit,
        margin=margin,
        unit=unit,
        extra=(("duration_s", ev.duration), ("peak_force_n", ev.peak)),
    )


def contact_near_miss(
    check: Check, lim: ContactLimit, cf: ContactForce, ev: Event, width: float, min_duration: float
) -> Finding:
    """A finding for one event inside the near-miss band below a contact limit."""
    peak = lim.value(ev.peak)
    limit = float(lim.declared.magnitude)
    margin = limit - peak
    unit = lim.unit
    band = lim.value(width)
    what = "force" if lim.quantity == "force" else "pressure"
    if margin >= 0:
        how = f"came within {fmt(margin, unit)} of"
    else:
        how = (
            f"passed by {fmt(-margin, unit)}, for less than the minimum event duration "
            f"({fmt(min_duration * 1e3)} ms), and otherwise stayed near"
        )
    msg = (
        f"near miss: {lim.contact} contact {what} {how} the {_WORDS[lim.layer]} limit: peak "
        f"{fmt(peak, unit)} at {fmt_t(ev.t_peak)}, limit {fmt(limit, unit)}, "
        f"near-miss band {fmt(band, unit)}, "
        f"{span_text(ev.t_start, ev.t_end)}; force is the {cf.how}."
    )
    return finding(
        check,
        Kind.NEAR_MISS,
        Severity.WARNING,
        msg,
        subject=lim.contact,
        subject_kind="contact",
        quantity=lim.quantity,
        layer=lim.layer,
        channel=cf.channel,
        event=ev,
        peak=peak,
        limit=limit,
        margin=margin,
        unit=unit,
        extra=(("duration_s", ev.duration), ("near_miss_band", band), ("peak_force_n", ev.peak)),
    )
