"""Simulated sessions shared by the simulator's tests (each takes about a second to make)."""

from __future__ import annotations

import pytest
from sim_protocols import EXAMPLE

from bracer.protocol.load import LoadedProtocol, load_protocol
from bracer.simulate import SimulationOutput, simulate


@pytest.fixture(scope="session")
def example() -> LoadedProtocol:
    return load_protocol(EXAMPLE)


@pytest.fixture(scope="session")
def full_session(example: LoadedProtocol, tmp_path_factory: pytest.TempPathFactory) -> SimulationOutput:
    """The example protocol, nominal limits, every incident, 120 s, Parquet, seed 1."""
    return simulate(example, tmp_path_factory.mktemp("full"), seed=1)
