"""``bracer schema``: print the JSON Schema of the protocol file format."""

from __future__ import annotations

import json

import typer

from bracer.cli import app


@app.command(short_help="Print the JSON Schema of protocol files.")
def schema(
    what: str = typer.Argument("protocol", help="Which schema: 'protocol' or 'audit-record'."),
) -> None:
    """Print the JSON Schema of bracer protocol files, for editors that complete and check YAML."""
    from bracer.cli.common import usage_error

    if what == "audit-record":
        from bracer.audit.record import schema as audit_record_schema

        typer.echo(json.dumps(audit_record_schema(), indent=2, ensure_ascii=False))
        return
    if what != "protocol":
        raise usage_error(f"unknown schema '{what}'; available: protocol, audit-record")
    from bracer.protocol.model import Protocol

    schema = {"$schema": "https://json-schema.org/draft/2020-12/schema", **Protocol.model_json_schema()}
    typer.echo(json.dumps(schema, indent=2, ensure_ascii=False))
