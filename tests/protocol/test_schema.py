"""``bracer schema`` prints a valid JSON Schema (Draft 2020-12); the example protocol validates against it.

jsonschema (a general-purpose validator) is the outside reference: its Draft 2020-12 meta-schema check, and
its validation of the example's YAML data.
"""

from __future__ import annotations

import copy
import json
from pathlib import Path
from typing import Any

import pytest

from bracer.protocol.yamlsource import load_yaml

jsonschema = pytest.importorskip("jsonschema")

EXAMPLE = Path(__file__).resolve().parents[2] / "protocols" / "alder4-upper-limb.yaml"


@pytest.fixture(scope="module")
def schema() -> dict[str, Any]:
    import subprocess
    import sys

    proc = subprocess.run(
        [sys.executable, "-m", "bracer", "schema"], capture_output=True, text=True, timeout=60
    )
    assert proc.returncode == 0, proc.stderr
    return json.loads(proc.stdout)  # type: ignore[no-any-return]


@pytest.fixture(scope="module")
def validator(schema: dict[str, Any]):  # type: ignore[no-untyped-def]
    return jsonschema.Draft202012Validator(schema, format_checker=jsonschema.FormatChecker())


def test_schema_is_valid_draft_2020_12(schema: dict[str, Any]) -> None:
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    jsonschema.Draft202012Validator.check_schema(schema)
    assert schema["title"] == "bracer protocol"
    assert set(schema["required"]) >= {"bracer_protocol", "protocol", "device", "joints", "logging"}


def test_example_protocol_validates(validator) -> None:  # type: ignore[no-untyped-def]
    data = load_yaml(EXAMPLE).data
    errors = sorted(validator.iter_errors(data), key=lambda e: list(e.absolute_path))
    assert errors == [], [f"{list(e.absolute_path)}: {e.message}" for e in errors]


def _edited(path: list[Any], value: Any) -> dict[str, Any]:
    data = copy.deepcopy(load_yaml(EXAMPLE).data)
    node = data
    for part in path[:-1]:
        node = node[part]
    node[path[-1]] = value
    return data  # type: ignore[no-any-return]


@pytest.mark.parametrize(
    ("path", "value"),
    [
        (["joints", "elbow_flexion", "range", "planned", "min"], 10),  # number without a unit
        (["joints", "elbow_flexion", "range", "planned", "min"], "deg"),  # unit without a number
        (["joints", "elbow_flexion", "stop_decelration"], "600 deg/s^2"),  # unknown field
        (["contacts", "upper_arm_cuff", "body_region"], "upper_arm"),  # unknown body region
        (["stop", "category"], 3),  # no such stop category
        (["bracer_protocol"], 2),  # another format version
        (["protocol", "date"], "15 January 2027"),  # not a date
        (["joints", "elbow_flexion", "speed", "planned"], {"positive": "60 deg/s", "negatve": "40 deg/s"}),
    ],
)
def test_schema_rejects_what_the_loader_rejects(validator, path: list[Any], value: Any) -> None:  # type: ignore[no-untyped-def]
    assert not validator.is_valid(_edited(path, value))


def test_schema_command_refuses_an_unknown_schema(run_bracer) -> None:  # type: ignore[no-untyped-def]
    result = run_bracer("schema", "session")
    assert result.code == 2
    assert "unknown schema 'session'; available: protocol" in result.stderr
