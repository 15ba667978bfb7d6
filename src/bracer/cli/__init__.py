"""The ``bracer`` command line: a thin layer over the library.

Each command lives in its own module and imports what it needs inside the command, so that ``bracer --help``
starts fast (numpy, pandas and scipy are not imported until a command needs them).

Exit codes: 0 nothing at or above ``--fail-on``; 1 findings at or above it; 2 bad usage or unusable input;
3 an internal error (a bug in bracer: please report it).
"""

from __future__ import annotations

import os
import sys

import typer

from bracer import __version__

app = typer.Typer(
    name="bracer",
    help="Safety limits for human-robot interaction trials: review a protocol before a trial, audit session "
    "logs after it. bracer states what the analysed data show; it does not certify a device. Decisions rest "
    "with the responsible clinician, the ethics committee and local regulations.",
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
    # Plain help text: typer's rich help needs rich.markdown, pygments and rich.traceback, about 0.1 s of
    # every `bracer --help` (start-up budget 0.3 s); the content of the help is the same.
    rich_markup_mode=None,
    context_settings={"help_option_names": ["-h", "--help"]},
)


def _version(value: bool) -> None:
    if value:
        typer.echo(f"bracer {__version__}")
        raise typer.Exit()


@app.callback()
def _root(
    version: bool = typer.Option(
        False, "--version", callback=_version, is_eager=True, help="Print the version."
    ),
) -> None:
    """bracer: protocol review and session audit for rehabilitation-robot trials."""


# Commands register themselves on `app` when their module is imported.
from bracer.cli import audit as _audit  # noqa: E402,F401
from bracer.cli import demo as _demo  # noqa: E402,F401
from bracer.cli import report as _report  # noqa: E402,F401
from bracer.cli import review as _review  # noqa: E402,F401
from bracer.cli import schema as _schema  # noqa: E402,F401
from bracer.cli import simulate as _simulate  # noqa: E402,F401
from bracer.cli import verify as _verify  # noqa: E402,F401


def main() -> None:
    """Console entry point: run the app; turn input errors into exit 2 and bugs into a short message."""
    from bracer.errors import InputError

    # bracer uses no pydantic plugins; looking them up reads the metadata of every installed distribution,
    # about 20-30 ms of each command's start-up.  Whoever sets the variable (even to "") keeps their choice.
    os.environ.setdefault("PYDANTIC_DISABLE_PLUGINS", "__all__")
    try:
        app(standalone_mode=True)
    except InputError as exc:
        print(f"error: {exc}", file=sys.stderr)
        sys.exit(2)
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        sys.exit(130)
    except Exception as exc:  # a bug: no traceback for users unless asked for
        if os.environ.get("BRACER_DEBUG"):
            raise
        print(
            f"internal error: {type(exc).__name__}: {exc}\n"
            "This is a bug in bracer. Run again with BRACER_DEBUG=1 for the traceback and report it.",
            file=sys.stderr,
        )
        sys.exit(3)
