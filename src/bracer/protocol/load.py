"""Load and validate a protocol file, with errors that name file, line, field, expected and found."""

from __future__ import annotations

import difflib
import types
import typing
from collections.abc import Iterable
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ValidationError

from bracer.errors import InputError, Problem
from bracer.protocol.model import Protocol
from bracer.protocol.yamlsource import Located, load_yaml

__all__ = ["LoadedProtocol", "load_protocol"]


class LoadedProtocol(typing.NamedTuple):
    """A validated protocol with the source it came from (for positions and provenance)."""

    protocol: Protocol
    source: Located
    path: Path


def load_protocol(path: str | Path) -> LoadedProtocol:
    """Read, validate and cross-check a protocol file.

    Raises
    ------
    InputError
        With one :class:`~bracer.errors.Problem` per thing wrong, each with file, line and field.
    """
    located = load_yaml(path)
    data = located.data
    if not isinstance(data, dict):
        raise InputError.single(
            f"expected a mapping of protocol sections at the top level, found {_kind(data)}",
            located.path, 1, 1,
        )
    if "bracer_protocol" not in data:
        hint = " (is this a bracer protocol file?)"
        raise InputError.single(
            "missing 'bracer_protocol: 1' at the top; it says which format version the file follows" + hint,
            located.path, 1, 1,
        )
    try:
        protocol = Protocol.model_validate(data)
    except ValidationError as exc:
        raise InputError(_problems(exc, located)) from None
    problems = list(_cross_check(protocol, located))
    if problems:
        raise InputError(problems)
    return LoadedProtocol(protocol, located, Path(path))


# ----------------------------------------------------------------------------------- pydantic -> Problem


def _problems(exc: ValidationError, located: Located) -> list[Problem]:
    out: list[Problem] = []
    seen: set[tuple[Any, ...]] = set()
    for err in exc.errors(include_url=False):
        loc = tuple(err["loc"])
        key = (loc, err["type"])
        if key in seen:
            continue
        seen.add(key)
        line, col = located.where(loc)
        out.append(Problem(_message(err, loc), located.path, line, col, _dotted(loc) or None))
    return out


def _message(err: Any, loc: tuple[Any, ...]) -> str:
    kind = err["type"]
    msg: str = err["msg"]
    found = err.get("input")
    if kind == "extra_forbidden":
        name = loc[-1]
        allowed = _fields_at(loc[:-1])
        hint = difflib.get_close_matches(str(name), allowed, n=1, cutoff=0.6)
        did = f"; did you mean '{hint[0]}'?" if hint else ""
        known = f" (known fields here: {', '.join(allowed)})" if allowed and not hint else ""
        return f"unknown field '{name}'{did}{known}"
    if kind == "missing":
        return f"missing required field '{loc[-1]}'"
    if kind == "literal_error":
        expected = err.get("ctx", {}).get("expected", "")
        options = [o.strip().strip("'") for o in expected.replace(" or ", ",").split(",") if o.strip()]
        hint = difflib.get_close_matches(str(found), options, n=1, cutoff=0.5) if isinstance(found, str) else []
        did = f"; did you mean '{hint[0]}'?" if hint else ""
        return f"expected one of {expected}, found {found!r}{did}"
    if kind == "string_pattern_mismatch":
        return (
            f"'{found}' is not a valid name: use letters, digits, '_' or '-', starting with a letter"
        )
    if kind.startswith("value_error"):
        return msg.removeprefix("Value error, ")
    if kind in ("dict_type", "model_type", "model_attributes_type"):
        return f"expected a mapping of fields, found {_kind(found)}"
    if kind == "list_type":
        return f"expected a list, found {_kind(found)}"
    if kind in ("string_type",):
        return f"expected text, found {_kind(found)}"
    if kind.startswith(("date_", "float_", "int_", "bool_", "greater_than", "less_than", "too_short", "too_long")):
        return f"{msg[0].lower()}{msg[1:]}, found {found!r}"
    return f"{msg}, found {found!r}"


def _kind(value: object) -> str:
    if value is None:
        return "nothing (null)"
    if isinstance(value, dict):
        return "a mapping"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, str):
        return f"the text {value!r}"
    return f"{type(value).__name__} {value!r}"


def _dotted(loc: Iterable[Any]) -> str:
    out = ""
    for part in loc:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += f".{part}" if out else str(part)
    return out


def _fields_at(loc: tuple[Any, ...]) -> list[str]:
    """Field names of the model that sits at ``loc`` inside a Protocol (for 'did you mean')."""
    tp: Any = Protocol
    for part in loc:
        tp = _step(tp, part)
        if tp is None:
            return []
    tp = _unwrap(tp)
    if isinstance(tp, type) and issubclass(tp, BaseModel):
        return list(tp.model_fields)
    return []


def _unwrap(tp: Any) -> Any:
    while True:
        origin = typing.get_origin(tp)
        if origin is typing.Annotated:
            tp = typing.get_args(tp)[0]
        elif origin in (typing.Union, types.UnionType):
            models = [a for a in typing.get_args(tp) if a is not type(None)]
            tp = models[0] if models else tp
            if len(models) != 1:
                return tp
        else:
            return tp


def _step(tp: Any, part: Any) -> Any:
    tp = _unwrap(tp)
    origin = typing.get_origin(tp)
    if isinstance(tp, type) and issubclass(tp, BaseModel) and isinstance(part, str):
        field = tp.model_fields.get(part)
        return field.annotation if field is not None else None
    if origin is dict:
        return typing.get_args(tp)[1]
    if origin is list and isinstance(part, int):
        return typing.get_args(tp)[0]
    return None


# ----------------------------------------------------------------------------------- cross references


def _cross_check(p: Protocol, src: Located) -> Iterable[Problem]:
    joints = list(p.joints)
    contacts = list(p.contacts)
    streams = list(p.logging.streams)

    def problem(message: str, loc: tuple[Any, ...]) -> Problem:
        line, col = src.where(loc)
        return Problem(message, src.path, line, col, _dotted(loc))

    def unknown(kind: str, name: str, known: list[str], loc: tuple[Any, ...]) -> Problem:
        hint = difflib.get_close_matches(name, known, n=1, cutoff=0.5)
        did = f"; did you mean '{hint[0]}'?" if hint else f" (known: {', '.join(known) or 'none'})"
        return problem(f"unknown {kind} '{name}'{did}", loc)

    # Channels name declared streams.
    for jname, joint in p.joints.items():
        for qty in ("position", "velocity", "torque"):
            ref = getattr(joint.channels, qty)
            if ref is not None and ref.stream not in streams:
                yield unknown("stream", ref.stream, streams, ("joints", jname, "channels", qty, "stream"))
    for cname, contact in p.contacts.items():
        ch = contact.channels.force
        if ch is not None and ch.stream not in streams:
            yield unknown("stream", ch.stream, streams, ("contacts", cname, "channels", "force", "stream"))
        for jname in contact.lever_arms:
            if jname not in joints:
                yield unknown("joint", jname, joints, ("contacts", cname, "lever_arms", jname))
    for kind, trig in p.logging.triggers.items():
        if trig.stream not in streams:
            yield unknown("stream", trig.stream, streams, ("logging", "triggers", kind, "stream"))
    for name, prot in p.logging.protections.items():
        if prot.stream not in streams:
            yield unknown("stream", prot.stream, streams, ("logging", "protections", name, "stream"))
    for jname in p.locked_joints:
        if jname not in joints:
            yield unknown("joint", jname, joints, ("locked_joints", jname))

    # Cautions and overrides name known joints and contacts.
    def effect_targets(effects: Iterable[Any], base: tuple[Any, ...]) -> Iterable[Problem]:
        for i, eff in enumerate(effects):
            if eff.joint is not None and eff.joint not in joints:
                yield unknown("joint", eff.joint, joints, (*base, i, "joint"))
            if eff.contact is not None and eff.contact not in contacts:
                yield unknown("contact", eff.contact, contacts, (*base, i, "contact"))

    for cid, caution in p.cautions.items():
        yield from effect_targets(caution.effects, ("cautions", cid, "effects"))
    cautions = list(p.cautions)
    for code, part in p.participants.items():
        for i, cid in enumerate(part.cautions):
            if cid not in cautions:
                yield unknown("caution", cid, cautions, ("participants", code, "cautions", i))
        for jname in part.rom:
            if jname not in joints:
                yield unknown("joint", jname, joints, ("participants", code, "rom", jname))
        for i, jname in enumerate(part.locked_joints or []):
            if jname not in joints:
                yield unknown("joint", jname, joints, ("participants", code, "locked_joints", i))
        yield from effect_targets(part.overrides, ("participants", code, "overrides"))
