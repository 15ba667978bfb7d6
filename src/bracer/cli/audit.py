"""``bracer audit``: the post-session audit of one session's logs against a protocol.

Exit codes: 0 no finding at or above ``--fail-on``; 1 findings at or above it (default: warning, so that
data-quality warnings and near misses are not passed over in a script); 2 unusable input (unreadable or
mistaken file, non-numeric cell, unknown participant).
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import typer

from bracer.cli import app


@app.command()
def audit(
    # typer declares arguments and options as default values; B008 does not apply to them.
    protocol: Path = typer.Argument(..., help="Protocol file (YAML)."),  # noqa: B008
    logs: list[Path] = typer.Argument(  # noqa: B008
        ..., help="Session log file(s): CSV, Parquet or Arrow IPC/Feather; one file per stream, or one table."
    ),
    participant: str | None = typer.Option(
        None, "--participant", "-p", help="Participant code; default: the nominal protocol."
    ),
    session: str | None = typer.Option(
        None, "--session", help="Session identifier, carried into the record."
    ),
    json_path: Path | None = typer.Option(  # noqa: B008
        None, "--json", help="Also write the audit record as JSON to this path ('-': standard output)."
    ),
    fail_on: str = typer.Option(
        "warning", "--fail-on", help="Exit 1 when a finding is at or above: info, warning (default), error."
    ),
) -> None:
    """Audit session logs after a trial: data quality, limits, near misses, stops, protections."""
    from bracer.cli.common import EXIT_OK, fail_input, parse_severity, pick_participant, usage_error
    from bracer.errors import InputError
    from bracer.protocol.load import load_protocol

    threshold = parse_severity(fail_on)
    try:
        loaded = load_protocol(protocol)
    except InputError as exc:
        raise fail_input(exc) from None
    code = pick_participant(list(loaded.protocol.participants), participant, protocol)

    from rich.console import Console

    from bracer.audit.record import dumps
    from bracer.audit.run import audit as run_audit
    from bracer.report.audit_terminal import render_audit

    try:
        result = run_audit(loaded, logs, participant=code, session_id=session)
    except InputError as exc:
        raise fail_input(exc) from None
    to_stdout = json_path is not None and str(json_path) == "-"
    stream = sys.stderr if to_stdout else sys.stdout
    # Outside a terminal rich would wrap at 80 columns; the findings table reads better wider.
    width = None if stream.isatty() or os.environ.get("COLUMNS") else 160
    render_audit(result, Console(file=stream, highlight=False, width=width), threshold)
    if json_path is not None:
        text = dumps(result.to_record())
        if to_stdout:
            sys.stdout.write(text)
        else:
            try:
                json_path.write_text(text, encoding="utf-8")
            except OSError as exc:
                reason = exc.strerror or exc
                raise usage_error(f"cannot write the JSON record to {json_path}: {reason}") from None
            print(f"JSON record written to {json_path}")
    raise typer.Exit(result.exit_code(threshold) or EXIT_OK)
