"""``bracer verify``: recompute the SHA-256 of every input a report names (tamper evidence).

Exit codes: 0 every input matches; 1 an input differs, is missing or cannot be read; 2 the report file itself
cannot be used (unreadable, not JSON, not a bracer record, no inputs).
"""

from __future__ import annotations

from pathlib import Path

import typer

from bracer.cli import app


@app.command(short_help="Check that a report's inputs are unchanged (SHA-256).")
def verify(
    # typer declares arguments and options as default values; B008 does not apply to them.
    report: Path = typer.Argument(..., help="A report's JSON record (or a review or audit record)."),  # noqa: B008
    root: Path | None = typer.Option(  # noqa: B008
        None,
        "--root",
        help="Folder that relative input paths are resolved against; default: the current one.",
    ),
) -> None:
    """Recompute the SHA-256 of each input the report names; say which match, which differ and which are
    missing."""
    from bracer.cli.common import EXIT_FINDINGS, EXIT_OK, fail_input
    from bracer.errors import InputError
    from bracer.report.verify import verify_record

    try:
        result = verify_record(report, root)
    except InputError as exc:
        raise fail_input(exc) from None
    width = max(len(c.status) for c in result.checks)
    for c in result.checks:
        line = f"{c.status.upper():<{width}}  {c.role}: {c.path}"
        if c.status == "differs":
            line += (
                f"\n{'':<{width}}  recorded sha256 {c.expected}\n{'':<{width}}  found    sha256 {c.actual}"
            )
        elif c.status == "missing":
            line += f" (looked for {c.resolved})"
        elif c.status == "unreadable":
            line += f" ({c.detail})"
        print(line)
    counts = ", ".join(
        f"{result.count(s)} {s}"
        for s in ("match", "differs", "missing", "unreadable")
        if result.count(s) or s == "match"
    )
    print(f"{len(result.checks)} input(s) of {result.report}: {counts}")
    if not result.all_match:
        print("The inputs are not all the ones this record was made from.")
    raise typer.Exit(EXIT_OK if result.all_match else EXIT_FINDINGS)
