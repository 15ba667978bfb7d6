"""Which protocol item a logged column feeds, for the words and units of data-quality findings."""

from __future__ import annotations

import weakref
from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from bracer.audit.context import AuditContext
from bracer.session.channelmap import ChannelUse, StreamNeeds, channel_map
from bracer.session.model import Session, Stream

__all__ = ["Extremes", "LoggedChannel", "extremes", "logged_channels", "needs_of", "valid_of"]

#: Per session object (its masks are fixed), per (stream, column): the valid mask and the extremes, so that
#: the checks of the pass do not recompute them for an hour of samples each.
_CACHE: weakref.WeakKeyDictionary[Session, dict[tuple[str, str, str], object]] = weakref.WeakKeyDictionary()


@dataclass(frozen=True, eq=False)
class LoggedChannel:
    """A column present in the log, with its first use in the protocol and its values (internal units)."""

    stream: Stream
    use: ChannelUse
    x: np.ndarray

    @property
    def column(self) -> str:
        return self.use.column

    def declared(self, value: float) -> float:
        """An internal value in the column's declared unit."""
        return value / self.use.factor if not self.use.is_state else value


def needs_of(ctx: AuditContext) -> dict[str, StreamNeeds]:
    return channel_map(ctx.resolution.protocol)


def logged_channels(ctx: AuditContext, *, states: bool = False) -> Iterator[LoggedChannel]:
    """Every physical channel (and, with ``states``, every status column) present in the session, once."""
    for name, sn in needs_of(ctx).items():
        stream = ctx.session.streams.get(name)
        if stream is None:
            continue
        seen: set[str] = set()
        for use in sn.uses:
            if use.column in seen:
                continue
            if use.is_state:
                if states and use.column in stream.states:
                    seen.add(use.column)
                    yield LoggedChannel(stream, use, stream.states[use.column])
            elif use.column in stream.channels:
                seen.add(use.column)
                yield LoggedChannel(stream, use, stream.channels[use.column])


@dataclass(frozen=True, slots=True)
class Extremes:
    """Smallest and largest valid value (internal unit) and the number of valid samples."""

    lo: float
    hi: float
    count: int


def _cached(ctx: AuditContext, key: tuple[str, str, str], build):  # type: ignore[no-untyped-def]
    store = _CACHE.setdefault(ctx.session, {})
    if key not in store:
        store[key] = build()
    return store[key]


def valid_of(ctx: AuditContext, ch: LoggedChannel) -> np.ndarray:
    """The channel's mask of samples fit to analyse, as the session's masks stand."""

    def build() -> np.ndarray:
        sig = ctx.session.signal(ch.stream.name, ch.column)
        if sig is None:  # pragma: no cover - logged channels are in the session
            return np.zeros(ch.x.shape, dtype=bool)
        return sig.valid

    return _cached(ctx, ("valid", ch.stream.name, ch.column), build)  # type: ignore[no-any-return]


def extremes(ctx: AuditContext, ch: LoggedChannel) -> Extremes:
    """Extremes of the valid samples (no copy of the channel when every sample is valid)."""

    def build() -> Extremes:
        ok = valid_of(ctx, ch)
        count = int(np.count_nonzero(ok))
        if count == 0:
            return Extremes(np.nan, np.nan, 0)
        if count == ok.size:
            return Extremes(float(ch.x.min()), float(ch.x.max()), count)
        return Extremes(
            float(np.min(ch.x, where=ok, initial=np.inf)),
            float(np.max(ch.x, where=ok, initial=-np.inf)),
            count,
        )

    return _cached(ctx, ("extremes", ch.stream.name, ch.column), build)  # type: ignore[no-any-return]
