"""``bracer simulate``: a synthetic session of a protocol, with its ground truth."""

from __future__ import annotations

import difflib
from pathlib import Path
from typing import TYPE_CHECKING, cast

import typer

from bracer.cli import app

if TYPE_CHECKING:
    from bracer.simulate.write import Format

_FORMATS = ("csv", "parquet", "arrow")


@app.command()
def simulate(
    # typer declares arguments and options as default values; B008 does not apply to them.
    protocol: Path = typer.Argument(..., help="Protocol file (YAML)."),  # noqa: B008
    participant: str | None = typer.Option(
        None, "--participant", "-p", help="Participant code (their cautions apply); default: nominal limits."
    ),
    duration: str = typer.Option(
        "120s", "--duration", help="Session length with its unit, e.g. 120s, 10min, 1h."
    ),
    incident: list[str] | None = typer.Option(  # noqa: B008
        None,
        "--incident",
        "-i",
        help="Incident to script, NAME or NAME:SUBJECT; repeat or separate with commas. Default: every "
        "incident the protocol can carry.",
    ),
    clean: bool = typer.Option(False, "--clean", help="A clean session: no incidents."),
    fmt: str = typer.Option("parquet", "--format", "-f", help="Log file format: csv, parquet or arrow."),
    seed: int = typer.Option(1, "--seed", help="Random seed; the same seed gives the same files."),
    out: Path = typer.Option(Path("bracer-simulation"), "--out", "-o", help="Folder to write into."),  # noqa: B008
    body_mass: str = typer.Option("70kg", "--body-mass", help="Participant's body mass, e.g. 70kg."),
    height: str = typer.Option("1.70m", "--height", help="Participant's height, e.g. 1.70m."),
    list_incidents: bool = typer.Option(False, "--list-incidents", help="List the incident names and exit."),
) -> None:
    """Simulate a therapy session of a protocol: one log file per stream and truth.json with every scripted
    incident (times, peaks, limits, stop latencies). Use it to dry-run a protocol's channel map and the
    audit."""
    from bracer.cli.common import fail_input, pick_participant, usage_error
    from bracer.errors import InputError
    from bracer.protocol.load import load_protocol
    from bracer.units import UnitError, parse_quantity

    if list_incidents:
        from bracer.simulate.recipes import RECIPES

        for recipe in RECIPES.values():
            typer.echo(f"{recipe.name:<20} {recipe.summary} (subject: {recipe.subject_kind})")
        raise typer.Exit(0)
    if fmt not in _FORMATS:
        close = difflib.get_close_matches(fmt, _FORMATS, n=1)
        did = f"; did you mean '{close[0]}'?" if close else ""
        raise usage_error(f"--format: unknown format '{fmt}'{did} (formats: {', '.join(_FORMATS)})")
    values = {}
    for option, text, dimension in (
        ("--duration", duration, "time"),
        ("--body-mass", body_mass, "mass"),
        ("--height", height, "length"),
    ):
        try:
            values[option] = parse_quantity(text, dimension).si
        except UnitError as exc:
            raise usage_error(f"{option}: {exc}") from None
    seconds, mass, metres = values["--duration"], values["--body-mass"], values["--height"]
    if clean and incident:
        raise usage_error("--clean and --incident exclude each other: a clean session has no incidents")
    try:
        loaded = load_protocol(protocol)
    except InputError as exc:
        raise fail_input(exc) from None
    code = pick_participant(list(loaded.protocol.participants), participant, protocol)

    from bracer.simulate import SimulationError, SimulationParameters, lookup
    from bracer.simulate import simulate as run

    try:
        params = SimulationParameters(body_mass=mass, height=metres)
    except ValueError as exc:
        raise usage_error(str(exc)) from None
    scenario = None
    if clean:
        scenario = []
    elif incident:
        try:
            scenario = [lookup(part) for text in incident for part in text.split(",") if part.strip()]
        except KeyError as exc:
            raise usage_error(f"--incident: {exc.args[0]}") from None
    try:
        result = run(
            loaded,
            out,
            participant=code,
            duration=seconds,
            scenario=scenario,
            seed=seed,
            params=params,
            fmt=cast("Format", fmt),
        )  # type: ignore[arg-type]
    except SimulationError as exc:
        raise usage_error(f"{protocol}: {exc}") from None
    except OSError as exc:
        raise usage_error(f"cannot write into {out}: {exc.strerror}") from None
    truth = result.truth
    who = f"participant {code}" if code else "nominal limits (no participant)"
    typer.echo(
        f"simulated {truth.duration:g} s of {truth.protocol.id} v{truth.protocol.version}, {who}, "
        f"seed {truth.seed}"
    )
    for stream, path in zip(truth.streams, result.files, strict=True):
        typer.echo(f"  wrote {path}  ({stream.rows} rows, {stream.sample_rate:g} Hz)")
    typer.echo(f"  wrote {result.truth_path}  ({len(truth.incidents)} ground-truth entries)")
    from bracer.units import format_number

    for entry in truth.incidents:
        limit = "" if entry.limit is None else f" (limit {format_number(entry.limit)} {entry.unit})"
        typer.echo(
            f"    {entry.t_start:9.3f} s  {entry.incident:<18} {entry.subject} {entry.quantity}: "
            f"{format_number(entry.peak)} {entry.unit}{limit}"
        )
    for skipped in truth.skipped:
        typer.echo(f"  skipped {skipped.incident}: {skipped.reason}")
