"""Read a YAML file into plain data, remembering where every node stood.

PyYAML's *compose* step yields a node tree with start marks; we build plain Python values from it ourselves so
that (a) every mapping key, list item and scalar has a known line and column, (b) duplicate keys are an error
(PyYAML silently keeps the last one), and (c) scalars keep YAML's core types (str, int, float, bool, null,
dates as strings).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import yaml

from bracer.errors import InputError

try:  # libyaml is ~10x faster; fall back to the pure-Python loader where it is absent.
    from yaml import CSafeLoader as _Loader
except ImportError:  # pragma: no cover - depends on how PyYAML was built
    from yaml import SafeLoader as _Loader  # type: ignore[assignment]

__all__ = ["Located", "load_yaml"]

Loc = tuple[str | int, ...]


@dataclass(frozen=True, slots=True)
class Located:
    """Plain data from a YAML file, with the (line, column) of every location in it (both 1-based).

    ``positions`` maps a location (a tuple of mapping keys and list indices) to where it is named: the key of
    a mapping entry, or the start of a list item (the document itself is at ``()``).  ``values`` maps it to
    where its value starts, which for ``min: 130 deg`` is the ``130`` rather than the ``min``.
    """

    data: Any
    positions: dict[Loc, tuple[int, int]]
    path: str
    values: dict[Loc, tuple[int, int]] = field(default_factory=dict)

    def where(self, loc: Loc, *, value: bool = False) -> tuple[int | None, int | None]:
        """Line and column of ``loc`` or, failing that, of its nearest enclosing location.

        With ``value=True`` the position of the value at ``loc`` (where a message about a wrong value should
        point); otherwise that of its key.
        """
        if value:
            pos = self.values.get(tuple(loc))
            if pos is not None:
                return pos
        for n in range(len(loc), -1, -1):
            pos = self.positions.get(tuple(loc[:n]))
            if pos is not None:
                return pos
        return None, None


_MAX_BYTES = 5_000_000
#: Deepest nesting a protocol file may have (the format itself needs fewer than ten levels).
MAX_DEPTH = 64
#: Most values a file may expand to; YAML aliases can make a small file expand exponentially.
MAX_VALUES = 50_000


def load_yaml(path: str | Path) -> Located:
    """Load one YAML document with positions.

    Raises
    ------
    InputError
        The file is missing, unreadable, not UTF-8 text, empty, not valid YAML, holds several documents,
        has a duplicate or merge key, an alias loop, or nests or expands beyond :data:`MAX_DEPTH` /
        :data:`MAX_VALUES`.
    """
    p = Path(path)
    name = str(path)
    try:
        raw = p.read_bytes()
    except FileNotFoundError:
        raise InputError.single("file not found", name) from None
    except IsADirectoryError:
        raise InputError.single("is a directory, expected a protocol file (.yaml)", name) from None
    except OSError as exc:
        raise InputError.single(f"cannot read file: {exc.strerror}", name) from None
    if len(raw) > _MAX_BYTES:
        raise InputError.single(
            f"file is {len(raw)} bytes; a protocol file is expected to be text under 5 MB", name
        )
    if b"\x00" in raw:
        raise InputError.single("binary file (contains NUL bytes); expected a YAML text file", name)
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise InputError.single(
            f"not UTF-8 text (byte 0x{raw[exc.start]:02x} at offset {exc.start}); save the file as UTF-8",
            name,
            line,
        ) from None
    if not text.strip() or all(not ln.strip() or ln.lstrip().startswith("#") for ln in text.splitlines()):
        raise InputError.single("empty file; expected a YAML protocol document", name, 1)
    try:
        nodes = list(yaml.compose_all(text, Loader=_Loader))
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        problem = exc.problem or "invalid YAML"
        context = ""
        if exc.context:
            started = exc.context_mark
            if started is not None and mark is not None and started.line != mark.line:
                context = f" ({exc.context} started on line {started.line + 1}, column {started.column + 1})"
            else:
                context = f" ({exc.context})"
        if _tab_at(text, mark):
            context += "; YAML indentation must use spaces, and this file has a tab character here"
        raise InputError.single(
            f"YAML syntax error: {problem}{context}",
            name,
            mark.line + 1 if mark else None,
            mark.column + 1 if mark else None,
        ) from None
    except yaml.YAMLError as exc:
        raise InputError.single(f"YAML error: {exc}", name) from None
    nodes = [n for n in nodes if n is not None]
    if not nodes:
        raise InputError.single("empty file; expected a YAML protocol document", name, 1)
    if len(nodes) > 1:
        second = nodes[1].start_mark
        raise InputError.single(
            "a second YAML document starts here (after a '---' line); a protocol file holds exactly one",
            name,
            second.line + 1,
            second.column + 1,
        )
    builder = _Builder(name)
    data = builder.build(nodes[0], ())
    return Located(data, builder.positions, name, builder.values)


def _tab_at(text: str, mark: Any) -> bool:
    """Whether the character at a YAML error mark (or the indentation of its line) is a tab."""
    if mark is None:
        return False
    lines = text.splitlines()
    if not 0 <= mark.line < len(lines):
        return False
    line = lines[mark.line]
    indent = line[: len(line) - len(line.lstrip())]
    return "\t" in indent or line[mark.column : mark.column + 1] == "\t"


def _mark(node: yaml.Node) -> tuple[int, int]:
    return node.start_mark.line + 1, node.start_mark.column + 1


class _Builder:
    """Builds plain values from a composed node tree, recording positions, refusing what a protocol must not
    hold: duplicate keys, merge keys, non-scalar keys, aliases that contain themselves, nesting deeper than
    :data:`MAX_DEPTH` and expansion beyond :data:`MAX_VALUES` values."""

    def __init__(self, name: str) -> None:
        self.name = name
        self.positions: dict[Loc, tuple[int, int]] = {}
        self.values: dict[Loc, tuple[int, int]] = {}
        self.count = 0
        self.open: set[int] = set()  # ids of the collection nodes being built (to catch recursive aliases)

    def fail(self, message: str, node: yaml.Node, loc: Loc) -> InputError:
        line, col = _mark(node)
        field = _dotted(loc[:6]) if len(loc) <= 6 else f"{_dotted(loc[:6])}..."
        return InputError.single(message, self.name, line, col, field)

    def build(self, node: yaml.Node, loc: Loc) -> Any:
        self.positions.setdefault(loc, _mark(node))
        self.values.setdefault(loc, _mark(node))
        self.count += 1
        if self.count > MAX_VALUES:
            raise self.fail(
                f"the file expands to more than {MAX_VALUES:,} values (YAML aliases repeating large parts?); "
                "a protocol file is far smaller",
                node,
                loc,
            )
        if isinstance(node, yaml.ScalarNode):
            return _scalar(node)
        if len(loc) >= MAX_DEPTH:
            raise self.fail(
                f"nested more than {MAX_DEPTH} levels deep; a protocol file needs far fewer", node, loc
            )
        if id(node) in self.open:
            raise self.fail("a YAML alias here refers to a collection that contains it (a loop)", node, loc)
        self.open.add(id(node))
        try:
            if isinstance(node, yaml.MappingNode):
                return self._mapping(node, loc)
            return [self.build(item, (*loc, i)) for i, item in enumerate(node.value)]
        finally:
            self.open.discard(id(node))

    def _mapping(self, node: yaml.MappingNode, loc: Loc) -> dict[str, Any]:
        out: dict[str, Any] = {}
        for key_node, value_node in node.value:
            if not isinstance(key_node, yaml.ScalarNode):
                raise self.fail("mapping keys must be plain names", key_node, loc)
            if key_node.tag == "tag:yaml.org,2002:merge":
                raise self.fail(
                    "YAML merge keys ('<<') are not supported in protocol files; write the fields out",
                    key_node,
                    loc,
                )
            key = str(key_node.value)
            if key in out:
                first = self.positions.get((*loc, key), (None, None))[0]
                raise self.fail(f"duplicate key '{key}' (first defined on line {first})", key_node, loc)
            self.positions[(*loc, key)] = _mark(key_node)
            self.values[(*loc, key)] = _mark(value_node)
            out[key] = self.build(value_node, (*loc, key))
        return out


def _scalar(node: yaml.ScalarNode) -> Any:
    tag = node.tag
    value = node.value
    if tag == "tag:yaml.org,2002:int":
        digits = value.replace("_", "")
        for base in (0, 10):
            try:
                return int(digits, base)
            except ValueError:
                continue
        return str(value)  # e.g. YAML 1.1 sexagesimal '1:20'; the field's own validation will say more
    if tag == "tag:yaml.org,2002:float":
        low = value.lower()
        if low in (".nan",):
            return float("nan")
        if low in (".inf", "+.inf"):
            return float("inf")
        if low == "-.inf":
            return float("-inf")
        try:
            return float(value.replace("_", ""))
        except ValueError:
            return str(value)
    if tag == "tag:yaml.org,2002:bool":
        return value.lower() in ("true", "yes", "on", "y")
    if tag == "tag:yaml.org,2002:null":
        return None
    return str(value)  # strings, and timestamps kept as their text


def _dotted(loc: Loc) -> str | None:
    if not loc:
        return None
    out = ""
    for part in loc:
        out += f"[{part}]" if isinstance(part, int) else (f".{part}" if out else str(part))
    return out
