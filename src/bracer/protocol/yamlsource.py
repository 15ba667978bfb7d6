"""Read a YAML file into plain data, remembering where every node stood.

PyYAML's *compose* step yields a node tree with start marks; we build plain Python values from it ourselves so
that (a) every mapping key, list item and scalar has a known line and column, (b) duplicate keys are an error
(PyYAML silently keeps the last one), and (c) scalars keep YAML's core types (str, int, float, bool, null,
dates as strings).
"""

from __future__ import annotations

from dataclasses import dataclass
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
    """Plain data from a YAML file, with the (line, column) of every location in it (both 1-based)."""

    data: Any
    positions: dict[Loc, tuple[int, int]]
    path: str

    def where(self, loc: Loc) -> tuple[int | None, int | None]:
        """Line and column of ``loc`` or, failing that, of its nearest enclosing location."""
        for n in range(len(loc), -1, -1):
            pos = self.positions.get(tuple(loc[:n]))
            if pos is not None:
                return pos
        return None, None


_MAX_BYTES = 5_000_000


def load_yaml(path: str | Path) -> Located:
    """Load one YAML document with positions.

    Raises
    ------
    InputError
        The file is missing, unreadable, not UTF-8 text, empty, not valid YAML, holds several documents,
        or has a duplicate mapping key.
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
        raise InputError.single(f"file is {len(raw)} bytes; a protocol file is expected to be text under 5 MB", name)
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
        context = f" ({exc.context})" if exc.context else ""
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
            "several YAML documents in one file; a protocol file holds exactly one",
            name,
            second.line + 1,
            second.column + 1,
        )
    positions: dict[Loc, tuple[int, int]] = {}
    data = _build(nodes[0], (), positions, name)
    return Located(data, positions, name)


def _build(node: yaml.Node, loc: Loc, positions: dict[Loc, tuple[int, int]], name: str) -> Any:
    positions.setdefault(loc, (node.start_mark.line + 1, node.start_mark.column + 1))
    if isinstance(node, yaml.MappingNode):
        out: dict[str, Any] = {}
        for key_node, value_node in node.value:
            if not isinstance(key_node, yaml.ScalarNode):
                raise InputError.single(
                    "mapping keys must be plain names", name, key_node.start_mark.line + 1,
                    key_node.start_mark.column + 1, _dotted(loc),
                )
            if key_node.tag == "tag:yaml.org,2002:merge":
                raise InputError.single(
                    "YAML merge keys ('<<') are not supported in protocol files; write the fields out",
                    name, key_node.start_mark.line + 1, key_node.start_mark.column + 1, _dotted(loc),
                )
            key = str(key_node.value)
            if key in out:
                first = positions.get((*loc, key), (None, None))[0]
                raise InputError.single(
                    f"duplicate key '{key}' (first defined on line {first})",
                    name, key_node.start_mark.line + 1, key_node.start_mark.column + 1, _dotted(loc),
                )
            positions[(*loc, key)] = (key_node.start_mark.line + 1, key_node.start_mark.column + 1)
            out[key] = _build(value_node, (*loc, key), positions, name)
        return out
    if isinstance(node, yaml.SequenceNode):
        return [_build(item, (*loc, i), positions, name) for i, item in enumerate(node.value)]
    return _scalar(node)


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
