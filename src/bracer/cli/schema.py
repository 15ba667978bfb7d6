"""``bracer schema``: print the JSON Schema of the protocol file format."""

from __future__ import annotations

import json

import typer

from bracer.cli import app


@app.command()
def schema(
    what: str = typer.Argument("protocol", help="Which schema: 'protocol'."),
) -> None:
    """Print the JSON Schema of bracer protocol files, for editors that complete and check YAML."""
    from bracer.cli.common import usage_error

    if what != "protocol":
        raise usage_error(f"unknown schema '{what}'; available: protocol")
    from bracer.protocol.model import Protocol

    typer.echo(json.dumps(Protocol.model_json_schema(), indent=2, ensure_ascii=False))
