"""``bracer review`` on the command line: exit codes, key output, the JSON record, start-up imports."""

from __future__ import annotations

import hashlib
import json
import subprocess
import sys
from pathlib import Path

import pytest
from review_protocols import EXAMPLE, FLAWED

from bracer.reference import table_paths


def test_example_exits_0_and_shows_every_section(cli) -> None:  # type: ignore[no-untyped-def]
    ran = cli("review", EXAMPLE)
    assert ran.code == 0, ran.stderr
    out = ran.stdout
    for line in (
        "bracer · pre-trial review",
        "AVRU-EXO-01",
        "nominal protocol",
        "JOINT shoulder_flexion",
        "JOINT forearm_rotation",
        "CONTACT upper_arm_cuff",
        "CONTACT forearm_cuff",
        "STOP FUNCTION AND LOGGING",
        "CAUTIONS AND OVERRIDES",
        "Room to stop",
        "R107 logging-rate",
    ):
        assert line in out, line
    # The statement, unwrapped: verification evidence, not a certification; who decides.
    flat = " ".join(out.split())
    assert "verification evidence" in flat and "not a certification" in flat
    assert "the responsible clinician, the ethics committee and local regulations" in flat
    # Severity marks read without colour (the output here is not a terminal, so it has no colour codes).
    assert "\x1b[" not in out and "▲ WARN" in out


def test_participant_review_shows_changes_before_after(cli) -> None:  # type: ignore[no-untyped-def]
    ran = cli("review", EXAMPLE, "--participant", "AV-P01")
    assert ran.code == 0
    assert "90 deg/s → 45 deg/s" in ran.stdout  # spasticity halves the planned elbow speed
    assert "one layer of protection only" in " ".join(ran.stdout.split())


def test_fail_on_warning_exits_1(cli) -> None:  # type: ignore[no-untyped-def]
    assert cli("review", EXAMPLE, "--fail-on", "warning").code == 1


def test_flawed_exits_1_and_info_threshold(cli) -> None:  # type: ignore[no-untyped-def]
    ran = cli("review", FLAWED, "-p", "FX-P01")
    assert ran.code == 1
    assert "✖ ERROR" in ran.stdout
    assert "at or above 'error'" in ran.stdout


@pytest.mark.parametrize(
    "args",
    [
        ("review", "no-such-file.yaml"),
        ("review", EXAMPLE, "--participant", "AV-P1"),
        ("review", EXAMPLE, "--fail-on", "severe"),
    ],
)
def test_unusable_input_exits_2_without_traceback(cli, args) -> None:  # type: ignore[no-untyped-def]
    ran = cli(*args)
    assert ran.code == 2
    assert "Traceback" not in ran.stderr + ran.stdout
    assert ran.stderr.startswith("error:")


def test_unknown_participant_suggests_a_close_code(cli) -> None:  # type: ignore[no-untyped-def]
    ran = cli("review", EXAMPLE, "--participant", "AV-P1")
    assert "did you mean" in ran.stderr


def test_malformed_protocol_exits_2_with_file_and_line(cli, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    bad = tmp_path / "bad.yaml"
    bad.write_text(
        EXAMPLE.read_text(encoding="utf-8").replace(
            "stop_deceleration: 600 deg/s^2", "stop_deceleration: 600", 1
        ),
        encoding="utf-8",
    )
    ran = cli("review", bad)
    assert ran.code == 2
    assert f"{bad}:" in ran.stderr and "unit" in ran.stderr


def test_json_record(cli, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    out = tmp_path / "review.json"
    ran = cli("review", FLAWED, "-p", "FX-P01", "--json", out)
    assert ran.code == 1
    record = json.loads(out.read_text(encoding="utf-8"))
    assert record["tool"]["name"] == "bracer"
    assert record["protocol"] == {
        "id": "AVRU-FLAW-00",
        "version": "0.1",
        "date": "2027-02-01",
        "title": "Deliberately flawed protocol for the pre-trial review demonstration",
    }
    assert record["participant"] == "FX-P01"
    inputs = {Path(i["path"]).name: i["sha256"] for i in record["inputs"]}
    assert inputs[FLAWED.name] == hashlib.sha256(FLAWED.read_bytes()).hexdigest()
    for name, path in table_paths().items():
        assert inputs[name] == hashlib.sha256(path.read_bytes()).hexdigest()
    assert [c["code"] for c in record["checks"]] == [f"R10{i}" for i in range(1, 8)]
    assert sum(record["summary"].values()) == len(record["findings"])
    assert record["summary"]["error"] == sum(f["severity"] == "error" for f in record["findings"])
    stops = next(c for c in record["checks"] if c["code"] == "R103")["tables"]["stops"]
    assert {"distance", "distance_unit", "largest_speed_outer", "stop_time", "time_unit"} <= set(stops[0])
    first = record["findings"][0]
    assert {"code", "name", "severity", "kind", "subject", "message", "unit", "extra"} <= set(first)
    assert first["kind"] == "review"
    assert "not a certification" in record["statement"]


def test_json_to_an_unwritable_path_exits_2(cli, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    ran = cli("review", EXAMPLE, "--json", tmp_path / "missing-dir" / "r.json")
    assert ran.code == 2 and "cannot write" in ran.stderr


def _in_subprocess(code: str) -> str:
    done = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=120, check=False
    )
    assert done.returncode == 0, done.stderr
    return done.stdout


def test_review_of_the_example_imports_no_heavy_module() -> None:
    # Start-up budget: `bracer review` under 1 s, so the review path must not import pandas or scipy
    # (nor numpy or pyarrow: plain math is enough for a few dozen numbers).
    code = (
        "import sys\n"
        f"sys.argv = ['bracer', 'review', {str(EXAMPLE)!r}, '--participant', 'AV-P01']\n"
        "from bracer.cli import main\n"
        "import io, contextlib\n"
        "buf = io.StringIO()\n"
        "with contextlib.redirect_stdout(buf):\n"
        "    try:\n        main()\n    except SystemExit as exc:\n        code = exc.code\n"
        "assert code == 0, code\n"
        "print(sorted(m for m in ('pandas', 'scipy', 'numpy', 'pyarrow') if m in sys.modules))\n"
    )
    assert _in_subprocess(code).strip() == "[]"


def test_checks_import_neither_cli_nor_report_writers() -> None:
    code = (
        "import sys\n"
        "import bracer.review, bracer.review.checks\n"
        "print(sorted(m for m in sys.modules if m.startswith(('bracer.cli', 'bracer.report', 'rich', "
        "'typer'))))\n"
    )
    assert _in_subprocess(code).strip() == "[]"


def test_protocol_text_is_never_read_as_markup(cli, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    # A caution text with square brackets must print as written (rich would read "[/red]" as a closing tag).
    text = EXAMPLE.read_text(encoding="utf-8").replace(
        "Spasticity: resistance", "Spasticity [/red] [bold]MAS[/bold]: resistance", 1
    )
    path = tmp_path / "brackets.yaml"
    path.write_text(text, encoding="utf-8")
    ran = cli("review", path, "-p", "AV-P01")
    assert ran.code == 0, ran.stderr
    assert "Spasticity [/red] [bold]MAS[/bold]: resistance" in ran.stdout
