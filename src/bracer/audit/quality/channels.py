"""Which protocol item a logged column feeds, for the words and units of data-quality findings."""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from bracer.audit.context import AuditContext
from bracer.session.channelmap import ChannelUse, StreamNeeds, channel_map
from bracer.session.model import Stream

__all__ = ["LoggedChannel", "logged_channels", "needs_of"]


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
