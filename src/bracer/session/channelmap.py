"""The protocol's channel map: which columns a log must hold, on which stream, in which unit.

Built from ``joints[].channels``, ``contacts[].channels.force``, ``logging.triggers``, ``logging.protections``
and ``logging.streams[].time``.  Readers read exactly these columns and nothing else.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Literal

from bracer.errors import InputError
from bracer.units import parse_unit

if TYPE_CHECKING:
    from bracer.protocol.model import Protocol

__all__ = ["ChannelUse", "StreamNeeds", "channel_map"]

Role = Literal["time", "position", "velocity", "torque", "force", "trigger", "protection"]
#: Roles whose columns are status values (kept as recorded), not physical quantities.
STATE_ROLES: frozenset[str] = frozenset({"trigger", "protection"})


@dataclass(frozen=True, slots=True)
class ChannelUse:
    """One use of a logged column by the protocol.

    ``factor`` multiplies a value in the declared ``unit`` to give the internal unit (1.0 for status columns,
    which carry no unit).
    """

    stream: str
    column: str
    role: Role
    owner: str | None  # joint / contact / trigger / protection name; None for a time column
    unit: str
    factor: float

    @property
    def is_state(self) -> bool:
        return self.role in STATE_ROLES

    @property
    def subject(self) -> str | None:
        """The joint or contact the column measures (what findings name), None for streams and status."""
        return self.owner if self.role in ("position", "velocity", "torque", "force") else None

    def describe(self) -> str:
        """What the column feeds, in words: ``joint 'elbow_flexion' torque``."""
        if self.role == "time":
            return f"the time base of stream '{self.stream}'"
        if self.role in ("position", "velocity", "torque"):
            return f"joint '{self.owner}' {self.role}"
        if self.role == "force":
            return f"contact '{self.owner}' force"
        if self.role == "trigger":
            return f"stop trigger '{self.owner}'"
        return f"protection '{self.owner}'"


@dataclass(frozen=True, slots=True)
class StreamNeeds:
    """What one stream must provide: its time column and the channel columns on its clock."""

    name: str
    time: ChannelUse
    rate: float  # declared sample rate, Hz
    uses: tuple[ChannelUse, ...]

    def numeric_columns(self) -> list[str]:
        """Physical-quantity columns, each once, in protocol order."""
        return list(dict.fromkeys(u.column for u in self.uses if not u.is_state))

    def state_columns(self) -> list[str]:
        return list(dict.fromkeys(u.column for u in self.uses if u.is_state))

    def columns(self) -> list[str]:
        """Every column of the stream, time first, each once."""
        return list(dict.fromkeys([self.time.column, *(u.column for u in self.uses)]))

    def uses_of(self, column: str) -> list[ChannelUse]:
        if column == self.time.column:
            return [self.time]
        return [u for u in self.uses if u.column == column]


def channel_map(protocol: Protocol) -> dict[str, StreamNeeds]:
    """Every column the protocol names, grouped by stream (in the protocol's stream order).

    Raises
    ------
    InputError
        One column declared twice on a stream with different units, or as a time column and a channel.
    """
    uses: dict[str, list[ChannelUse]] = {name: [] for name in protocol.logging.streams}

    def add(stream: str, column: str, role: Role, owner: str, unit: str) -> None:
        factor = parse_unit(unit)[0] if unit else 1.0
        uses.setdefault(stream, []).append(ChannelUse(stream, column, role, owner, unit, factor))

    for jname, joint in protocol.joints.items():
        for role in ("position", "velocity", "torque"):
            ref = getattr(joint.channels, role)
            if ref is not None:
                add(ref.stream, ref.column, role, jname, ref.unit)
    for cname, contact in protocol.contacts.items():
        ch = contact.channels.force
        if ch is not None:
            for column in ch.all_columns:
                add(ch.stream, column, "force", cname, ch.unit)
    for kind, trig in protocol.logging.triggers.items():
        add(trig.stream, trig.column, "trigger", kind, "")
    for pname, prot in protocol.logging.protections.items():
        add(prot.stream, prot.column, "protection", pname, "")

    out: dict[str, StreamNeeds] = {}
    for name, stream in protocol.logging.streams.items():
        tc = stream.time
        time_use = ChannelUse(name, tc.column, "time", None, tc.unit, parse_unit(tc.unit)[0])
        needs = StreamNeeds(name, time_use, float(stream.sample_rate.si), tuple(uses.get(name, ())))
        _check_consistent(needs)
        out[name] = needs
    return out


def _check_consistent(needs: StreamNeeds) -> None:
    problems: list[str] = []
    for column in needs.columns():
        found = needs.uses_of(column)
        if column == needs.time.column and any(u.role != "time" for u in needs.uses if u.column == column):
            problems.append(
                f"column '{column}' is the time column of stream '{needs.name}' and also a channel "
                f"({', '.join(u.describe() for u in needs.uses if u.column == column)})"
            )
        numeric = [u for u in found if not u.is_state and u.role != "time"]
        if len({u.factor for u in numeric}) > 1:
            units = ", ".join(f"{u.describe()} in {u.unit}" for u in numeric)
            problems.append(
                f"column '{column}' of stream '{needs.name}' is declared with different units: {units}"
            )
    if problems:
        raise InputError.single("; ".join(problems), field="channels")
