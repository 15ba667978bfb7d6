"""``bracer report``: the sign-off report of a pre-trial review and/or a post-session audit.

Exit codes: 0 the report was written; 2 unusable input (unreadable protocol, log or record, files that do not
match the records, an unknown participant or format) or a report that cannot be written.
"""

from __future__ import annotations

from pathlib import Path

import typer

from bracer.cli import app


@app.command(short_help="Write the sign-off report (Markdown, HTML, PDF, JSON).")
def report(
    # typer declares arguments and options as default values; B008 does not apply to them.
    protocol: Path | None = typer.Argument(  # noqa: B008
        None, help="Protocol file (YAML); optional with --from-json when the record names it."
    ),
    logs: list[Path] | None = typer.Argument(  # noqa: B008
        None, help="Session log file(s) to audit (or, with an audit record, to draw its plots from)."
    ),
    participant: str | None = typer.Option(
        None, "--participant", "-p", help="Participant code; default: the nominal protocol or the records'."
    ),
    session: str | None = typer.Option(
        None, "--session", help="Session identifier, carried into the report."
    ),
    session_date: str | None = typer.Option(
        None, "--session-date", help="Date of the session (YYYY-MM-DD) for the title block."
    ),
    from_json: list[Path] | None = typer.Option(  # noqa: B008
        None,
        "--from-json",
        help="A review or audit record (bracer review/audit --json) to report instead of "
        "running that analysis; may be given twice (one review, one audit).",
    ),
    formats: str = typer.Option(
        "md,html,pdf,json", "--format", "-f", help="Comma-separated: md, html, pdf, json (or all)."
    ),
    out: Path = typer.Option(Path("."), "--out", "-o", help="Folder to write the report into."),  # noqa: B008
) -> None:
    """Write the report of a review and/or an audit: title block, provenance with SHA-256 of every input,
    summary per limit class, findings, plots, stops, candidate incidents and a blank sign-off block.

    SOURCE_DATE_EPOCH fixes the analysis time, so the same inputs give byte-identical Markdown, HTML and JSON.
    The report is verification evidence, not a certification.
    """
    import datetime as dt

    from bracer.cli.common import EXIT_OK, fail_input, usage_error
    from bracer.errors import InputError
    from bracer.report.write import parse_formats

    try:
        chosen = parse_formats(formats)
    except ValueError as exc:
        raise usage_error(str(exc)) from None
    if session_date is not None:
        try:
            dt.date.fromisoformat(session_date)
        except ValueError:
            raise usage_error(f"--session-date must be a date YYYY-MM-DD, found '{session_date}'") from None

    from bracer.report.run import ReportRequest, make_report
    from bracer.report.write import write_report

    request = ReportRequest(
        protocol=protocol,
        logs=tuple(logs or ()),
        participant=participant,
        session=session,
        from_json=tuple(from_json or ()),
        session_date=session_date,
    )
    try:
        doc = make_report(request)
        written = write_report(doc, out, chosen)
    except InputError as exc:
        raise fail_input(exc) from None
    print(f"{doc.title.kind} report: {doc.statement}." if doc.statement else f"{doc.title.kind} report.")
    for path in written:
        print(f"written: {path}")
    raise typer.Exit(EXIT_OK)
