"""Fixtures for the report tests: the kit session and its reports, built once per test session."""

from __future__ import annotations

import sys
from collections.abc import Callable
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from reportkit import KitSession, build, inside, make_kit  # noqa: E402


@pytest.fixture(scope="session")
def kit(tmp_path_factory: pytest.TempPathFactory) -> KitSession:
    """The fixed session (a cuff push over its limit, an emergency stop) with a copy of the example
    protocol."""
    return make_kit(tmp_path_factory.mktemp("kit"))


@pytest.fixture(scope="session")
def kit_doc(kit: KitSession):  # type: ignore[no-untyped-def]
    """Review and audit of the kit session for participant AV-P01."""
    return build(kit)


@pytest.fixture(scope="session")
def review_doc(kit: KitSession):  # type: ignore[no-untyped-def]
    """The pre-trial review of the nominal protocol only."""
    return build(kit, participant=None, audit=False)


@pytest.fixture(scope="session")
def kit_outputs(kit: KitSession, kit_doc, tmp_path_factory: pytest.TempPathFactory) -> dict[str, Path]:  # type: ignore[no-untyped-def]
    """All four formats of the kit report, written once per test session (the PDF compile takes ~1 s)."""
    from bracer.report.write import write_report

    out = tmp_path_factory.mktemp("kit-out")
    with inside(kit.folder):
        written = write_report(kit_doc, out, ("md", "html", "json", "pdf"))
    return {p.suffix.lstrip("."): p for p in written}


@pytest.fixture
def cli(
    monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> Callable[..., tuple[int, str]]:
    """Run ``bracer ARGS...`` in this process; returns (exit code, stdout + stderr)."""
    from bracer.cli import main

    def run(*args: str | Path) -> tuple[int, str]:
        monkeypatch.setattr(sys, "argv", ["bracer", *map(str, args)])
        code = 0
        try:
            main()
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)
        captured = capsys.readouterr()
        return code, captured.out + captured.err

    return run
