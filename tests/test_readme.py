"""The README stays true: its quick start is two commands, and CI runs the second one verbatim."""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _quick_start_commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    return [block.strip() for block in re.findall(r"```sh\n(.*?)```", section, flags=re.S)]


def test_quick_start_is_two_commands() -> None:
    commands = _quick_start_commands()
    assert len(commands) == 2, commands
    assert all("\n" not in c for c in commands), "each quick-start command is one line"


def test_ci_runs_the_readme_test_command_verbatim() -> None:
    test_command = _quick_start_commands()[1]
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert test_command in ci.splitlines()


def test_first_command_runs_an_example_that_exists() -> None:
    first = _quick_start_commands()[0]
    for token in first.split():
        if token.startswith("protocols/"):
            assert (ROOT / token).is_file(), token


def test_first_paragraph_states_the_job() -> None:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    first = text.split("\n\n", 2)[1]
    for word in ("limits", "review", "audit", "logs"):
        assert word in first
    assert "never declares a device safe" in first
