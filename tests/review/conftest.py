"""Fixtures for the review tests: the command line, run in-process."""

from __future__ import annotations

import sys
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import pytest


@dataclass(frozen=True)
class Ran:
    code: int
    stdout: str
    stderr: str


@pytest.fixture
def cli(monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]) -> Callable[..., Ran]:
    """Run ``bracer ARGS...`` through the real console entry point, in this process."""
    from bracer.cli import main

    def run(*args: str | Path) -> Ran:
        monkeypatch.setattr(sys, "argv", ["bracer", *map(str, args)])
        monkeypatch.setenv("COLUMNS", "160")
        code = 0
        try:
            main()
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)
        out = capsys.readouterr()
        return Ran(code, out.out, out.err)

    return run
