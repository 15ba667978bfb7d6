"""``bracer simulate`` on the command line: what it writes and prints, exit codes, errors without
tracebacks."""

from __future__ import annotations

import ast
import json
import subprocess
import sys
from pathlib import Path

import pytest
from sim_protocols import EXAMPLE, variant

SRC = Path(__file__).resolve().parents[2] / "src"


def test_writes_the_streams_and_the_truth(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    ran = run_bracer("simulate", EXAMPLE, "--participant", "AV-P01", "--out", tmp_path, "--seed", "3")
    assert ran.code == 0, ran.stderr
    for name in ("main.parquet", "cuffs.parquet", "truth.json"):
        assert (tmp_path / name).is_file()
        assert f"wrote {tmp_path / name}" in ran.stdout
    assert "participant AV-P01, seed 3" in ran.stdout
    assert "119500 rows, 1000 Hz" in ran.stdout  # 120 s at 1 kHz less the 0.5 s logging gap
    truth = json.loads((tmp_path / "truth.json").read_text())
    assert truth["participant"] == "AV-P01" and truth["seed"] == 3
    assert "range_exceedance" in ran.stdout and "elbow_flexion position" in ran.stdout


def test_clean_csv_session(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    ran = run_bracer(
        "simulate", EXAMPLE, "--clean", "--format", "csv", "--duration", "20s", "--out", tmp_path
    )
    assert ran.code == 0, ran.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cuffs.csv", "main.csv", "truth.json"]
    assert json.loads((tmp_path / "truth.json").read_text())["incidents"] == []
    assert (tmp_path / "main.csv").read_text().splitlines()[0].startswith('"t","sh_flex_pos"')


def test_chosen_incidents_with_subjects(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    ran = run_bracer(
        "simulate",
        EXAMPLE,
        "--incident",
        "near_miss:shoulder_rotation,logging_gap",
        "--incident",
        "emergency_stop",
        "--duration",
        "1min",
        "--out",
        tmp_path,
    )
    assert ran.code == 0, ran.stderr
    truth = json.loads((tmp_path / "truth.json").read_text())
    assert truth["scenario"] == ["near_miss:shoulder_rotation", "logging_gap", "emergency_stop"]


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["--incident", "rang_exceedance"], "did you mean 'range_exceedance'?"),
        (["--incident", "near_miss:elbow"], "did you mean 'elbow_flexion'?"),
        (["--clean", "--incident", "near_miss"], "--clean and --incident exclude each other"),
        (["--duration", "30"], "--duration: number without a unit"),
        (["--duration", "30s"], "need at least"),
        (["--format", "parket"], "did you mean 'parquet'?"),
        (["--participant", "AV-P9"], "participant 'AV-P9' is not in"),
        (["--body-mass", "7kg"], "body mass must lie between 20 and 250 kg"),
        (["--height", "170cm", "--body-mass", "70 N"], "--body-mass: wrong dimension"),
    ],
)
def test_usage_errors_exit_2_without_a_traceback(  # type: ignore[no-untyped-def]
    run_bracer, tmp_path: Path, args: list[str], message: str
) -> None:
    ran = run_bracer("simulate", EXAMPLE, "--out", tmp_path, *args)
    assert ran.code == 2, ran.output
    assert message in ran.stderr
    assert "Traceback" not in ran.output
    assert not (tmp_path / "truth.json").exists()


def test_protocol_without_the_channels_for_an_incident(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    loaded = variant(tmp_path, lambda d: d["logging"].pop("triggers"))
    ran = run_bracer("simulate", loaded.path, "--incident", "slow_stop", "--out", tmp_path / "out")
    assert ran.code == 2
    assert "incident 'slow_stop' needs a logged stop trigger" in ran.stderr and "Traceback" not in ran.output
    # default: every incident the protocol can carry
    ran = run_bracer("simulate", loaded.path, "--out", tmp_path / "out")
    assert ran.code == 0, ran.stderr
    assert "skipped emergency_stop:" in ran.stdout and "skipped slow_stop:" in ran.stdout


def test_unreadable_protocol_names_file_and_line(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    bad = tmp_path / "bad.yaml"
    bad.write_text("bracer_protocol: 1\nprotocol: [\n", encoding="utf-8")
    ran = run_bracer("simulate", bad, "--out", tmp_path / "out")
    assert ran.code == 2 and str(bad) in ran.stderr and "Traceback" not in ran.output


def test_list_incidents(run_bracer) -> None:  # type: ignore[no-untyped-def]
    ran = run_bracer("simulate", EXAMPLE, "--list-incidents")
    assert ran.code == 0
    names = [line.split()[0] for line in ran.stdout.splitlines()]
    assert names == [
        "range_exceedance",
        "near_miss",
        "speed_exceedance",
        "force_peak",
        "sustained_pressure",
        "emergency_stop",
        "slow_stop",
        "logging_gap",
    ]


def test_the_command_module_imports_no_numpy() -> None:
    # Start-up budget: the command registers without numpy or pyarrow; they load when it runs.
    code = "import sys, bracer.cli.simulate; print(sorted({'numpy', 'pyarrow'} & set(sys.modules)))"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60, check=True)
    assert out.stdout.strip() == "[]"


def test_simulator_never_imports_the_cli_reports_review_or_audit() -> None:
    # Dependencies point one way (STYLE.md): the simulator is a library the CLI calls.
    forbidden = ("bracer.cli", "bracer.report", "bracer.review", "bracer.audit")
    bad = []
    for path in sorted((SRC / "bracer" / "simulate").rglob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = (
                [a.name for a in node.names]
                if isinstance(node, ast.Import)
                else ([node.module or ""] if isinstance(node, ast.ImportFrom) else [])
            )
            bad += [f"{path.name}: {n}" for n in names if n.startswith(forbidden)]
    assert bad == []
