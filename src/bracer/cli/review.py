"""``bracer review``: the pre-trial review of a protocol file."""

from __future__ import annotations

from pathlib import Path

import typer

from bracer.cli import app


@app.command()
def review(
    protocol: Path = typer.Argument(..., help="Protocol file (YAML)."),
    participant: str | None = typer.Option(None, "--participant", "-p", help="Participant code; default: nominal."),
    json_path: Path | None = typer.Option(None, "--json", help="Also write the review as JSON to this path."),
    fail_on: str = typer.Option("error", "--fail-on", help="Exit 1 when a finding is at or above: info, warning, error."),
) -> None:
    """Review a protocol before a trial: completeness, layer order, room to stop, contact loads, cautions."""
    from bracer.cli.common import fail_input, parse_severity, pick_participant
    from bracer.errors import InputError
    from bracer.protocol.load import load_protocol

    threshold = parse_severity(fail_on)
    try:
        loaded = load_protocol(protocol)
    except InputError as exc:
        raise fail_input(exc) from None
    code = pick_participant(list(loaded.protocol.participants), participant, protocol)
    raise NotImplementedError(f"review of {code} at {threshold}: being written")
