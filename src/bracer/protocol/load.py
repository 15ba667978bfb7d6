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
from bracer.protocol.model import FORMAT_VERSION, Protocol
from bracer.protocol.yamlsource import Located, load_yaml
from bracer.units import DIMENSIONS, dimension_name

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
    line, col = located.where(())
    if not isinstance(data, dict):
        raise InputError.single(
            f"expected a mapping of protocol sections at the top level, found {_kind(data)}",
            located.path,
            line,
            col,
        )
    if "bracer_protocol" not in data:
        hint = " (is this a bracer protocol file?)"
        raise InputError.single(
            f"missing 'bracer_protocol: {FORMAT_VERSION}' at the top; it says which format version the file "
            "follows" + hint,
            located.path,
            line,
            col,
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
    """One problem per place in the file: pydantic's errors grouped by their location in the data.

    A union reports one error per member it tried, with the member's name inserted into the location; those
    names are not in the file, so they are dropped and the members' errors merged into one message.
    """
    groups: dict[tuple[tuple[Any, ...], bool], list[Any]] = {}
    for err in exc.errors(include_url=False):
        groups.setdefault(_clean_loc(err, located.data), []).append(err)
    out: list[Problem] = []
    for (loc, at_key), errors in groups.items():
        line, col = located.where(loc, value=not at_key)
        out.append(Problem(_group_message(errors, loc), located.path, line, col, _dotted(loc) or None))
    return out


def _clean_loc(err: Any, data: Any) -> tuple[tuple[Any, ...], bool]:
    """The part of an error's location that addresses the file's data, and whether it is about a key.

    A part is kept when it indexes into the data (or names the missing field); pydantic's own markers --
    union member names, ``[key]`` for a mapping key -- are dropped.
    """
    raw = tuple(err["loc"])
    kind = err["type"]
    at_key = kind in ("extra_forbidden", "missing")
    cur: Any = data
    clean: list[Any] = []
    for i, part in enumerate(raw):
        if part == "[key]":
            at_key = True
        elif _indexes(cur, part):
            clean.append(part)
            cur = cur[part]
        elif i == len(raw) - 1 and kind == "missing":
            clean.append(part)
    return tuple(clean), at_key


def _indexes(value: Any, part: Any) -> bool:
    """Whether ``value[part]`` is an entry of the file's data (a mapping key or a list index)."""
    if isinstance(value, dict):
        return isinstance(part, str) and part in value
    if isinstance(value, list):
        return isinstance(part, int) and 0 <= part < len(value)
    return False


def _group_message(errors: list[Any], loc: tuple[Any, ...]) -> str:
    messages = list(dict.fromkeys(_message(err, loc) for err in errors))
    if len(messages) == 1:
        return messages[0]
    if all(err["type"] in _TYPE_WORDS for err in errors):
        words = list(dict.fromkeys(_TYPE_WORDS[err["type"]] for err in errors))
        expected = ", ".join(words[:-1]) + f" or {words[-1]}"
        return f"expected {expected}, found {_kind(errors[0].get('input'))}"
    return "; or ".join(messages)


#: What each of pydantic's type errors expected, in words.
_TYPE_WORDS = {
    "int_type": "a whole number",
    "int_parsing": "a whole number",
    "int_from_float": "a whole number",
    "float_type": "a number",
    "float_parsing": "a number",
    "string_type": "text",
    "bool_type": "true or false",
    "bool_parsing": "true or false",
    "list_type": "a list",
    "dict_type": "a mapping",
    "model_type": "a mapping",
    "model_attributes_type": "a mapping",
}

_BOUNDS = {
    "greater_than": ("gt", "above"),
    "greater_than_equal": ("ge", "at least"),
    "less_than": ("lt", "below"),
    "less_than_equal": ("le", "at most"),
}


def _message(err: Any, loc: tuple[Any, ...]) -> str:
    kind = err["type"]
    msg: str = err["msg"]
    found = err.get("input")
    ctx = err.get("ctx") or {}
    if kind == "extra_forbidden":
        name = loc[-1] if loc else err["loc"][-1]
        allowed = _fields_at(loc[:-1])
        hint = difflib.get_close_matches(str(name), allowed, n=1, cutoff=0.6)
        did = f"; did you mean '{hint[0]}'?" if hint else ""
        known = f" (known fields here: {', '.join(allowed)})" if allowed and not hint else ""
        return f"unknown field '{name}'{did}{known}"
    if kind == "missing":
        name = loc[-1] if loc else err["loc"][-1]
        about = _description_at(loc)
        return f"missing required field '{name}'" + (f" ({about})" if about else "")
    if kind == "literal_error":
        return _literal_message(ctx.get("expected", ""), found, loc)
    if kind == "string_pattern_mismatch":
        return f"'{found}' is not a valid name: use letters, digits, '_' or '-', starting with a letter"
    if kind.startswith("value_error"):
        return msg.removeprefix("Value error, ")
    if kind == "string_type" and isinstance(found, int | float) and not isinstance(found, bool):
        return (
            f'expected text, found the number {found!r}; put it in quotes ("{found}") if it is meant as text'
        )
    if kind == "string_type" and isinstance(found, bool):
        return f"expected text, found {_kind(found)}; put the word in quotes if it is meant as text"
    if kind in _TYPE_WORDS:
        return f"expected {_TYPE_WORDS[kind]}, found {_kind(found)}"
    if kind in _BOUNDS:
        key, words = _BOUNDS[kind]
        bound = ctx.get(key)
        bound_text = f"{bound:g}" if isinstance(bound, int | float) else str(bound)
        return f"expected a value {words} {bound_text}, found {found!r}"
    if kind in ("too_short", "too_long"):
        limit = ctx.get("min_length") if kind == "too_short" else ctx.get("max_length")
        words = "at least" if kind == "too_short" else "at most"
        n = ctx.get("actual_length")
        item = "item" if limit == 1 else "items"
        return f"expected {words} {limit} {item}, found {n}"
    if kind.startswith(("date_", "datetime_")):
        reason = str(ctx.get("error", "")).replace("_", " ")
        return f"expected a date as YYYY-MM-DD, found {found!r}" + (f" ({reason})" if reason else "")
    return f"{msg[:1].lower()}{msg[1:]}, found {found!r}"


def _literal_message(expected: str, found: object, loc: tuple[Any, ...]) -> str:
    options = [o.strip().strip("'") for o in expected.replace(" or ", ",").split(",") if o.strip()]
    if loc == ("bracer_protocol",):
        return (
            f"this bracer reads protocol format version {FORMAT_VERSION}, the file says {found!r}; "
            f"write 'bracer_protocol: {FORMAT_VERSION}' (a number, no quotes) or use a bracer that reads "
            "this version"
        )
    if isinstance(found, str) and found in options:
        return f"expected one of {expected}, found the text {found!r}; write it without quotes"
    hint = difflib.get_close_matches(found, options, n=1, cutoff=0.5) if isinstance(found, str) else []
    did = f"; did you mean '{hint[0]}'?" if hint else ""
    return f"expected one of {expected}, found {found!r}{did}"


def _kind(value: object) -> str:
    if value is None:
        return "nothing (null)"
    if isinstance(value, dict):
        return "a mapping"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, str):
        return f"the text {value!r}"
    if isinstance(value, bool):
        return f"{str(value).lower()} (YAML reads yes/no/on/off/true/false as true or false)"
    if isinstance(value, int | float):
        return f"the number {value!r}"
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


def _description_at(loc: tuple[Any, ...]) -> str | None:
    """The description of the field at ``loc`` (for a 'missing field' message), if it has one."""
    if not loc:
        return None
    tp: Any = Protocol
    for part in loc[:-1]:
        tp = _step(tp, part)
        if tp is None:
            return None
    tp = _unwrap(tp)
    if isinstance(tp, type) and issubclass(tp, BaseModel):
        info = tp.model_fields.get(str(loc[-1]))
        if info is not None and info.description:
            return info.description.rstrip(".")
    return None


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

    def problem(message: str, loc: tuple[Any, ...], *, key: bool = False) -> Problem:
        line, col = src.where(loc, value=not key)
        return Problem(message, src.path, line, col, _dotted(loc))

    def unknown(
        kind: str, name: str, known: list[str], loc: tuple[Any, ...], *, key: bool = False
    ) -> Problem:
        hint = difflib.get_close_matches(name, known, n=1, cutoff=0.5)
        did = f"; did you mean '{hint[0]}'?" if hint else f" (known: {', '.join(known) or 'none'})"
        return problem(f"unknown {kind} '{name}'{did}", loc, key=key)

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
                yield unknown("joint", jname, joints, ("contacts", cname, "lever_arms", jname), key=True)
    for kind, trig in p.logging.triggers.items():
        if trig.stream not in streams:
            yield unknown("stream", trig.stream, streams, ("logging", "triggers", kind, "stream"))
    for name, prot in p.logging.protections.items():
        if prot.stream not in streams:
            yield unknown("stream", prot.stream, streams, ("logging", "protections", name, "stream"))
    for jname in p.locked_joints:
        if jname not in joints:
            yield unknown("joint", jname, joints, ("locked_joints", jname), key=True)

    # Cautions and overrides name known joints and contacts, and 'set' a value of the right dimension.
    def effect_targets(effects: Iterable[Any], base: tuple[Any, ...]) -> Iterable[Problem]:
        for i, eff in enumerate(effects):
            if eff.joint is not None and eff.joint not in joints:
                yield unknown("joint", eff.joint, joints, (*base, i, "joint"))
            if eff.contact is not None and eff.contact not in contacts:
                yield unknown("contact", eff.contact, contacts, (*base, i, "contact"))
            if eff.set is not None:
                want = effect_dimension(eff.quantity, eff.item)
                if want is not None and eff.set.dimension != DIMENSIONS[want][0]:
                    what = eff.quantity if eff.joint else f"{eff.item.replace('_', '-')} {eff.quantity}"
                    yield problem(
                        f"wrong dimension: the {what} limit needs {_article(want)} {want} "
                        f"({DIMENSIONS[want][1]}), found '{eff.set}' ({dimension_name(eff.set.dimension)})",
                        (*base, i, "set"),
                    )

    for cid, caution in p.cautions.items():
        yield from effect_targets(caution.effects, ("cautions", cid, "effects"))
    cautions = list(p.cautions)
    for code, part in p.participants.items():
        for i, cid in enumerate(part.cautions):
            if cid not in cautions:
                yield unknown("caution", cid, cautions, ("participants", code, "cautions", i))
        for jname in part.rom:
            if jname not in joints:
                yield unknown("joint", jname, joints, ("participants", code, "rom", jname), key=True)
        for i, jname in enumerate(part.locked_joints or []):
            if jname not in joints:
                yield unknown("joint", jname, joints, ("participants", code, "locked_joints", i))
        yield from effect_targets(part.overrides, ("participants", code, "overrides"))


def effect_dimension(quantity: str, item: str) -> str | None:
    """The dimension (a key of :data:`bracer.units.DIMENSIONS`) of the limit an effect changes.

    None for an item that does not apply to the quantity (resolution reports that one).
    """
    if quantity in _JOINT_DIMENSIONS:
        return _JOINT_DIMENSIONS[quantity]
    if quantity in ("force", "pressure"):
        return quantity if item in ("quasi_static", "transient") else None
    if quantity == "sustained":
        return {"quasi_static": "force", "level": "force", "max_duration": "time"}.get(item)
    return None


_JOINT_DIMENSIONS = {
    "range": "angle",
    "speed": "angular speed",
    "torque": "torque",
    "acceleration": "angular acceleration",
}


def _article(word: str) -> str:
    return "an" if word[:1] in "aeiou" else "a"
