"""Simulated sessions shared by the simulator's tests (each takes about a second to make)."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest
import yaml

from bracer.protocol.load import LoadedProtocol, load_protocol
from bracer.simulate import SimulationOutput, simulate

ROOT = Path(__file__).resolve().parents[2]
EXAMPLE = ROOT / "protocols" / "alder4-upper-limb.yaml"


@pytest.fixture(scope="session")
def example() -> LoadedProtocol:
    return load_protocol(EXAMPLE)


@pytest.fixture(scope="session")
def full_session(example: LoadedProtocol, tmp_path_factory: pytest.TempPathFactory) -> SimulationOutput:
    """The example protocol, nominal limits, every incident, 120 s, Parquet, seed 1."""
    return simulate(example, tmp_path_factory.mktemp("full"), seed=1)


def variant(tmp_path: Path, change: Any, name: str = "variant.yaml") -> LoadedProtocol:
    """The example protocol changed by ``change(data)`` (a function editing the parsed YAML), written and
    loaded again: generated in code, never a hand-typed copy."""
    data = yaml.safe_load(EXAMPLE.read_text(encoding="utf-8"))
    change(data)
    path = tmp_path / name
    path.write_text(yaml.safe_dump(data, sort_keys=False, allow_unicode=True), encoding="utf-8")
    return load_protocol(path)
