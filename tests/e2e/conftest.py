"""The demo study, run once for the whole end-to-end suite (about 10 s): ``bracer demo`` into a temporary
folder, through the command line."""

from __future__ import annotations

import json

import pytest
from e2ekit import DemoRun
from typer.testing import CliRunner

from bracer.cli import app


@pytest.fixture(scope="session")
def demo_run(tmp_path_factory: pytest.TempPathFactory) -> DemoRun:
    folder = tmp_path_factory.mktemp("e2e") / "bracer-demo"
    result = CliRunner().invoke(app, ["demo", str(folder)])
    manifest_path = folder / "bracer-demo.json"
    manifest = json.loads(manifest_path.read_text(encoding="utf-8")) if manifest_path.is_file() else {}
    return DemoRun(folder, result.exit_code, result.output, manifest)
