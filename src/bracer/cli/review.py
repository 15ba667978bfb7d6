"""``bracer review``: the pre-trial review of a protocol file."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import typer

from bracer.cli import app


@app.command(short_help="Review a protocol before a trial (checks R101-R107).")
def review(
    # typer declares arguments and options as default values; B008 does not apply to them.
    protocol: Path = typer.Argument(..., help="Protocol file (YAML)."),  # noqa: B008
    participant: str | None = typer.Option(
        None, "--participant", "-p", help="Participant code; default: the nominal protocol."
    ),
    json_path: Path | None = typer.Option(None, "--json", help="Also write the review as JSON to this path."),  # noqa: B008
    fail_on: str = typer.Option(
        "error", "--fail-on", help="Exit 1 when a finding is at or above: info, warning, error."
    ),
) -> None:
    """Review a protocol before a trial: completeness, layer order, room to stop, contact loads, cautions."""
    from bracer.cli.common import (
        EXIT_FINDINGS,
        EXIT_OK,
        fail_input,
        parse_severity,
        pick_participant,
        usage_error,
    )
    from bracer.errors import InputError
    from bracer.protocol.load import load_protocol

    threshold = parse_severity(fail_on)
    try:
        loaded = load_protocol(protocol)
    except InputError as exc:
        raise fail_input(exc) from None
    code = pick_participant(list(loaded.protocol.participants), participant, protocol)

    from rich.console import Console

    from bracer.report.review_json import write_review_json
    from bracer.report.review_terminal import render_review
    from bracer.review import review as run_review

    try:
        result = run_review(loaded, code)
    except InputError as exc:  # an unreadable reference table
        raise fail_input(exc) from None
    # Outside a terminal rich would wrap at 80 columns; the tables read better a little wider.
    width = None if sys.stdout.isatty() or os.environ.get("COLUMNS") else 120
    render_review(result, Console(highlight=False, width=width), threshold)
    if json_path is not None:
        try:
            write_review_json(result, json_path)
        except OSError as exc:
            raise usage_error(f"cannot write the JSON record to {json_path}: {exc.strerror or exc}") from None
        print(f"JSON record written to {json_path}")
    raise typer.Exit(EXIT_FINDINGS if result.at_or_above(threshold) else EXIT_OK)
