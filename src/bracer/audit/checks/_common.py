"""What every audit check shares: a per-audit cache, unit conversion back to declared units, number
formatting, and the builders for findings and "not assessable" findings.

The cache lives beside the :class:`~bracer.audit.context.AuditContext` (a weak mapping keyed by the context
object), so that a speed derived from position, a force magnitude or the extremes of a channel are computed
once per audit however many checks use them, and are freed with the context.
"""

from __future__ import annotations

import weakref
from collections.abc import Callable
from dataclasses import dataclass
from functools import lru_cache
from typing import Any, Literal, TypedDict, TypeVar

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.events import Event
from bracer.findings import Check, Finding, Kind, Severity
from bracer.session.model import Signal
from bracer.units import format_number, parse_unit

__all__ = [
    "LAYER_SEVERITY",
    "TIME_EPS",
    "Extremes",
    "Unavailable",
    "cached",
    "extremes",
    "finding",
    "fmt",
    "fmt_t",
    "in_unit",
    "not_assessable",
    "shown_values",
    "signal",
    "span_text",
    "text_variants",
]

T = TypeVar("T")
SubjectKind = Literal["joint", "contact", "protection", "session"]

_CACHE: weakref.WeakKeyDictionary[AuditContext, dict[tuple[Any, ...], Any]] = weakref.WeakKeyDictionary()

#: Slack when comparing a duration built from float timestamps with a declared one, s (far below any sample
#: period: a latency of exactly the budget is within it).
TIME_EPS = 1e-9

#: Severity of exceeding each limit layer: the planned limit is the therapy plan (a deviation to review);
#: device and mechanical limits and the participant's measured range are safety limits.
LAYER_SEVERITY: dict[str, Severity] = {
    "planned": Severity.WARNING,
    "device": Severity.ERROR,
    "mechanical": Severity.ERROR,
    "participant": Severity.ERROR,
}


def cached(ctx: AuditContext, key: tuple[Any, ...], build: Callable[[], T]) -> T:
    """``build()`` once per audit context and key."""
    store = _CACHE.get(ctx)
    if store is None:
        store = {}
        _CACHE[ctx] = store
    if key not in store:
        store[key] = build()
    return store[key]  # type: ignore[no-any-return]


@dataclass(frozen=True, slots=True)
class Unavailable:
    """Why a channel a check needs cannot be analysed (missing column, no valid sample ...)."""

    channel: str | None
    reason: str


def signal(ctx: AuditContext, stream: str, column: str) -> Signal | Unavailable:
    """The channel, cached per audit; :class:`Unavailable` when the log lacks it or it has no valid sample."""

    def build() -> Signal | Unavailable:
        sig = ctx.session.signal(stream, column)
        if sig is None:
            if stream not in ctx.session.streams:
                return Unavailable(column, f"stream '{stream}' (holding column '{column}') is not in the log")
            return Unavailable(column, f"column '{column}' is not in the log (stream '{stream}')")
        if not sig.valid.any():
            return Unavailable(column, f"column '{column}' has no valid sample (stream '{stream}')")
        return sig

    return cached(ctx, ("signal", stream, column), build)


@dataclass(frozen=True, slots=True)
class Extremes:
    """Largest and smallest valid value of a channel (internal unit)."""

    max: float
    min: float


def extremes(ctx: AuditContext, key: tuple[Any, ...], x: np.ndarray, valid: np.ndarray) -> Extremes:
    """Extremes of ``x`` over valid samples, cached under ``key``: a check skips a limit no sample reaches."""

    def build() -> Extremes:
        if x.shape[0] and valid.all():  # the common case: a plain reduction is about 3x faster than `where=`
            return Extremes(float(x.max()), float(x.min()))
        hi = float(np.max(x, where=valid, initial=-np.inf))
        lo = float(np.min(x, where=valid, initial=np.inf))
        return Extremes(hi, lo)

    return cached(ctx, ("extremes", *key), build)


@lru_cache(maxsize=256)
def _factor(unit: str) -> float:
    return parse_unit(unit)[0]


def in_unit(si: float, unit: str) -> float:
    """Express an internal (SI, rad) value in ``unit`` (a unit the protocol declared)."""
    return si / _factor(unit)


def fmt(value: float | None, unit: str | None = None) -> str:
    """``12.5 deg`` (4 significant digits); a dash for a missing value."""
    if value is None:
        return "–"
    text = format_number(float(value))
    return f"{text} {unit}" if unit else text


def text_variants(value: object) -> list[str]:
    """How a protocol value may be written in a text column: ``1`` matches "1" and "1.0"."""
    out = [str(value)]
    try:
        f = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        return out
    out.append(repr(f))
    if f.is_integer():
        out.append(str(int(f)))
    return out


def shown_values(values: np.ndarray, limit: int = 5) -> tuple[str, ...]:
    """Distinct recorded values of a status column, for messages: numbers as ``%g``, missing as ``empty``."""
    out: list[str] = []
    for v in np.unique(values)[:limit].tolist():
        if isinstance(v, float):
            out.append("empty" if v != v else f"{v:g}")
        else:
            out.append("empty" if v == "" else str(v))
    return tuple(out)


def fmt_t(t: float) -> str:
    """A time on the log's clock: ``12.345 s``."""
    return f"{t:.3f} s"


def span_text(t_start: float, t_end: float) -> str:
    """``12.300–12.550 s (0.25 s)``."""
    return f"{t_start:.3f}–{t_end:.3f} s ({format_number(t_end - t_start, 3)} s)"


def finding(
    check: Check,
    kind: Kind,
    severity: Severity,
    message: str,
    *,
    subject: str | None,
    subject_kind: SubjectKind,
    quantity: str,
    event: Event | None = None,
    **fields: Any,
) -> Finding:
    """An audit finding; ``subject_kind`` travels in ``extra`` (reports group by it without guessing).

    ``event``, when given, fills the span of the finding from it: ``t_start``, ``t_end``, ``t_peak`` (s) and
    ``i_start``, ``i_end`` (sample rows).  Passing one of those fields as well is a ``TypeError``.
    """
    extra = (("subject_kind", subject_kind), *fields.pop("extra", ()))
    span: _Span | dict[str, Any] = {} if event is None else _event_span(event)
    return Finding(
        code=check.code,
        name=check.name,
        severity=severity,
        kind=kind,
        message=message,
        subject=subject,
        quantity=quantity,
        extra=extra,
        **span,
        **fields,
    )


class _Span(TypedDict):
    """The :class:`~bracer.findings.Finding` fields an event fills: times in s, sample rows."""

    t_start: float
    t_end: float
    t_peak: float
    i_start: int
    i_end: int


def _event_span(ev: Event) -> _Span:
    return _Span(t_start=ev.t_start, t_end=ev.t_end, t_peak=ev.t_peak, i_start=ev.i_start, i_end=ev.i_end)


def not_assessable(
    check: Check,
    missing: Unavailable,
    *,
    subject: str | None,
    subject_kind: SubjectKind,
    quantity: str,
    what: str,
    severity: Severity = Severity.ERROR,
) -> Finding:
    """A check that could not run: an error-level finding by default, never a pass.

    ``what`` says what was not assessed, e.g. ``"speed limits of joint 'elbow_flexion'"``.
    """
    return finding(
        check,
        Kind.NOT_ASSESSABLE,
        severity,
        f"{what} not assessable: {missing.reason}.",
        subject=subject,
        subject_kind=subject_kind,
        quantity=quantity,
        channel=missing.channel,
    )
