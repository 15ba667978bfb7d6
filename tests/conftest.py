"""Fixtures shared by the whole test-suite."""

from __future__ import annotations

import sys
from dataclasses import dataclass
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE_PROTOCOL = ROOT / "protocols" / "alder4-upper-limb.yaml"


@dataclass(frozen=True)
class CliResult:
    """What a run of the ``bracer`` command printed and the exit code it ended with."""

    code: int
    stdout: str
    stderr: str

    @property
    def output(self) -> str:
        return self.stdout + self.stderr


@pytest.fixture
def example_protocol() -> Path:
    """The example protocol shipped with bracer (invented clinic, device and participants)."""
    return EXAMPLE_PROTOCOL


@pytest.fixture
def example_text() -> str:
    return EXAMPLE_PROTOCOL.read_text(encoding="utf-8")


@pytest.fixture
def run_bracer(monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]):  # type: ignore[no-untyped-def]
    """Run the real console entry point ``bracer.cli.main`` in this process, as ``bracer ARGS...``.

    In-process keeps the many CLI cases fast; tests that need a separate process (start-up time, imports)
    start one themselves.
    """
    from bracer.cli import main

    def run(*args: str | Path) -> CliResult:
        monkeypatch.setattr(sys, "argv", ["bracer", *map(str, args)])
        code = 0
        try:
            main()
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)
        captured = capsys.readouterr()
        return CliResult(code, captured.out, captured.err)

    return run
