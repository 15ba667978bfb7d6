"""``bracer demo``: write an invented demo study into a folder and run review, audit and report on it.

Exit codes: 0 the demo ran (its findings are expected: the sessions carry scripted incidents); 2 the folder
cannot be used (a file, a folder that is not empty and holds no earlier demo, or not writable).
"""

from __future__ import annotations

import math
import os
import sys
from pathlib import Path
from typing import TYPE_CHECKING

import typer

from bracer.cli import app

if TYPE_CHECKING:
    from rich.console import Console

    from bracer.demo import DemoResult, Step


@app.command(short_help="Run an invented demo study: review, audit, reports.")
def demo(
    # typer declares arguments and options as default values; B008 does not apply to them.
    folder: Path = typer.Argument(  # noqa: B008
        Path("bracer-demo"),
        metavar="DIR",
        help="Folder to write the demo study into (created; an earlier demo there is replaced).",
    ),
) -> None:
    """Write an invented study (protocol, three participants, two simulated sessions each, with scripted
    incidents and one clean session) into DIR, then review, audit and report all of it and print a
    summary.  The findings are expected: each session's truth.json lists what was scripted."""
    from rich.console import Console

    from bracer.cli.common import EXIT_OK, fail_input
    from bracer.errors import InputError

    # Outside a terminal rich would wrap at 80 columns; the summary table reads better wider.
    width = None if sys.stdout.isatty() or os.environ.get("COLUMNS") else 140
    console = Console(highlight=False, width=width)
    try:
        result = _run(folder, console)
    except InputError as exc:
        raise fail_input(exc) from None
    _summary(result, console)
    raise typer.Exit(EXIT_OK)


def _line(step: Step) -> str:
    who = " ".join(x for x in (step.participant, step.session) if x)
    return f"[{step.number:>2}/{step.total}] {step.action:<8} {who:<10} {step.detail}  ({step.seconds:.1f} s)"


def _run(folder: Path, console: Console) -> DemoResult:
    """Run the demo with a progress bar on a terminal, one plain line per step everywhere."""
    from bracer.demo import run_demo

    if not console.is_terminal:
        return run_demo(folder, lambda step: console.print(_line(step), markup=False))
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    with Progress(
        TextColumn("{task.description}"),
        BarColumn(),
        TextColumn("{task.completed}/{task.total}"),
        TimeElapsedColumn(),
        console=console,
        transient=True,
    ) as bar:
        task = bar.add_task("demo study", total=None)

        def show(step: Step) -> None:
            bar.console.print(_line(step), markup=False)
            bar.update(task, completed=step.number, total=step.total)

        return run_demo(folder, show)


def _percent(fraction: float) -> str:
    """Rounded down, as the audit's statement does: 99.96 % never reads as 100 %."""
    return f"{math.floor(fraction * 1000 + 1e-9) / 10:.1f} %"


def _summary(result: DemoResult, console: Console) -> None:
    from rich import box
    from rich.table import Table

    from bracer.audit.run import CAUTION

    table = Table(
        title=f"Demo study in {result.folder}: audit findings per session",
        title_justify="left",
        box=box.SIMPLE_HEAD,
    )
    for name, justify in (
        ("participant", "left"),
        ("session", "left"),
        ("scripted", "left"),
        ("error", "right"),
        ("warning", "right"),
        ("info", "right"),
        ("analysed", "right"),
        (f"report in {result.folder} (PDF; .md, .html, .json beside it)", "left"),
    ):
        table.add_column(name, justify=justify, overflow="fold")  # type: ignore[arg-type]
    for s in result.sessions:
        n = len(s.spec.incidents)
        table.add_row(
            s.spec.participant,
            s.spec.session,
            f"{n} incident(s)" if n else "clean",
            str(s.counts.error),
            str(s.counts.warning),
            str(s.counts.info),
            _percent(s.coverage),
            s.report("pdf").relative_to(result.folder).as_posix(),
        )
    console.print()
    console.print(table)
    for r in result.reviews:
        pdf = next(p for p in r.reports if p.suffix == ".pdf")
        console.print(f"Pre-trial review report of {r.participant}: {pdf}", markup=False)
    console.print(
        "These findings are expected: the sessions were simulated with scripted incidents, listed with their "
        f"exact times in each session's truth.json. What the folder holds: {result.folder / 'README.md'}.",
        markup=False,
    )
    console.print(f"Start with {result.sessions[0].report('html')}", markup=False)
    console.print(CAUTION, markup=False)
