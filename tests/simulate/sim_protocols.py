"""Protocols for the simulator's tests: the shipped example, and variants of it generated in code."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import yaml

from bracer.protocol.load import LoadedProtocol, load_protocol

ROOT = Path(__file__).resolve().parents[2]
EXAMPLE = ROOT / "protocols" / "alder4-upper-limb.yaml"


def variant(tmp_path: Path, change: Any, name: str = "variant.yaml") -> LoadedProtocol:
    """The example protocol changed by ``change(data)`` (a function editing the parsed YAML), written and
    loaded again: generated in code, never a hand-typed copy."""
    data = yaml.safe_load(EXAMPLE.read_text(encoding="utf-8"))
    change(data)
    path = tmp_path / name
    path.write_text(yaml.safe_dump(data, sort_keys=False, allow_unicode=True), encoding="utf-8")
    return load_protocol(path)
