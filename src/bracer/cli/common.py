"""Pieces every command shares: loading a protocol for the CLI, choosing a participant, exit codes."""

from __future__ import annotations

import difflib
import sys
from pathlib import Path

import typer

from bracer.errors import InputError

EXIT_OK = 0
EXIT_FINDINGS = 1
EXIT_INPUT = 2


def fail_input(exc: InputError) -> typer.Exit:
    """Print an input error (file:line:column: message) to stderr and return the exit to raise."""
    print("error: " + str(exc).replace("\n", "\n       "), file=sys.stderr)
    return typer.Exit(EXIT_INPUT)


def usage_error(message: str) -> typer.Exit:
    print(f"error: {message}", file=sys.stderr)
    return typer.Exit(EXIT_INPUT)


def pick_participant(known: list[str], code: str | None, protocol_path: Path) -> str | None:
    """Validate ``--participant`` against the protocol's participant codes."""
    if code is None or code in known:
        return code
    hint = difflib.get_close_matches(code, known, n=1)
    did = f"; did you mean '{hint[0]}'?" if hint else ""
    raise usage_error(
        f"participant '{code}' is not in {protocol_path} (participants: {', '.join(known) or 'none'}){did}"
    )


def parse_severity(text: str):  # type: ignore[no-untyped-def]
    from bracer.findings import Severity

    try:
        return Severity.parse(text)
    except ValueError as exc:
        raise usage_error(str(exc)) from None
