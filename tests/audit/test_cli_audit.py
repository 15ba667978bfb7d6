"""``bracer audit``: exit codes (0 / 1 at or above --fail-on / 2 unusable input), the terminal summary and
the JSON record; never a traceback."""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import jsonschema
import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

from bracer.audit.record import schema

SAMPLES = [logmaker.HERE / name for name in logmaker.SAMPLES]
PROTOCOL = logmaker.PROTOCOL
FORBIDDEN = re.compile(r"\b(safe|passed)\b", re.IGNORECASE)


def _gap_logs(folder: Path) -> list[Path]:
    main = logmaker.main_table()
    t = main.column("t").to_numpy().copy()
    t[500:] += 0.05
    return logmaker.write_logs(folder, ".csv", logmaker.replace_column(main, "t", t))


def test_clean_session_exit_0(run_bracer) -> None:  # type: ignore[no-untyped-def]
    r = run_bracer("audit", PROTOCOL, *SAMPLES, "--participant", "AV-P01", "--session", "S01")
    assert r.code == 0, r.output
    out = " ".join(r.stdout.split())  # rich wraps long lines
    assert "no exceedance found in the analysed data (analysed: 99.8 % of session time)" in out
    assert (
        "not a certification" in out
        and "responsible clinician, the ethics committee and local regulations" in out
    )
    assert "Coverage" in out and "Findings: 0" in out and "AV-P01" in out and "S01" in out
    assert "exit 0: no finding at or above warning" in out
    assert not FORBIDDEN.search(r.output)


def test_findings_at_the_default_threshold_exit_1(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    r = run_bracer("audit", PROTOCOL, *_gap_logs(tmp_path))
    assert r.code == 1, r.output
    assert "Q104" in r.stdout and "WARN" in r.stdout
    assert "0.499" in r.stdout and "0.550" in r.stdout  # exact times of the gap, to the millisecond
    assert "exit 1: findings at or above warning" in " ".join(r.stdout.split())


def test_fail_on_chooses_the_threshold(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    assert run_bracer("audit", PROTOCOL, *_gap_logs(tmp_path), "--fail-on", "error").code == 0
    main = logmaker.main_table()
    x = main.column("elb_tau").to_numpy().copy()
    x[300] = np.nan  # one missing sample: an info finding
    folder = tmp_path / "one"
    folder.mkdir()
    paths = logmaker.write_logs(folder, ".csv", logmaker.replace_column(main, "elb_tau", x))
    assert run_bracer("audit", PROTOCOL, *paths).code == 0
    info = run_bracer("audit", PROTOCOL, *paths, "--fail-on", "info")
    assert info.code == 1 and "info" in info.stdout


def test_json_record_written_and_valid(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    out = tmp_path / "audit.json"
    r = run_bracer("audit", PROTOCOL, *_gap_logs(tmp_path), "--json", out, "--session", "S02")
    assert r.code == 1 and f"JSON record written to {out}" in r.stdout
    record = json.loads(out.read_text())
    jsonschema.Draft202012Validator(schema()).validate(record)
    assert record["session"] == "S02" and any(f["code"] == "Q104" for f in record["findings"])


def test_json_to_standard_output(run_bracer) -> None:  # type: ignore[no-untyped-def]
    r = run_bracer("audit", PROTOCOL, *SAMPLES, "--json", "-")
    assert r.code == 0
    record = json.loads(r.stdout)  # nothing but the record on standard output
    jsonschema.Draft202012Validator(schema()).validate(record)
    assert "post-session audit" in r.stderr


def test_non_numeric_cell_exit_2_with_file_and_line(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    paths = logmaker.write_logs(tmp_path, ".csv")
    lines = paths[0].read_text().splitlines()
    cells = lines[99].split(",")
    cells[10] = "sixty"
    lines[99] = ",".join(cells)
    paths[0].write_text("\n".join(lines) + "\n")
    r = run_bracer("audit", PROTOCOL, *paths)
    assert r.code == 2
    assert f"{paths[0]}:100:" in r.stderr and "column 'elb_pos'" in r.stderr and "'sixty'" in r.stderr
    assert "Traceback" not in r.output


def test_mistaken_files_exit_2(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    copy = tmp_path / "copy.yaml"
    shutil.copy(PROTOCOL, copy)
    r = run_bracer("audit", PROTOCOL, copy)
    assert r.code == 2 and "bracer protocol file" in r.stderr
    swapped = run_bracer("audit", SAMPLES[0], *SAMPLES)  # a log given as the protocol
    assert swapped.code == 2 and "Traceback" not in swapped.output
    missing = run_bracer("audit", PROTOCOL, tmp_path / "nope.csv")
    assert missing.code == 2 and "no such file" in missing.stderr


def test_usage_errors_exit_2(run_bracer) -> None:  # type: ignore[no-untyped-def]
    unknown = run_bracer("audit", PROTOCOL, *SAMPLES, "--participant", "AV-P1")
    assert unknown.code == 2 and "did you mean 'AV-P01'" in unknown.stderr
    severity = run_bracer("audit", PROTOCOL, *SAMPLES, "--fail-on", "severe")
    assert severity.code == 2 and "info, warning, error" in severity.stderr
    no_logs = run_bracer("audit", PROTOCOL)
    assert no_logs.code == 2


def test_missing_stream_is_not_assessable_exit_1(run_bracer) -> None:  # type: ignore[no-untyped-def]
    r = run_bracer("audit", PROTOCOL, SAMPLES[0])
    assert r.code == 1
    out = " ".join(r.stdout.split())
    assert "not assessable" in out and "stream 'cuffs' is not in the log" in out and "missing" in out


def test_bad_log_in_a_separate_process_prints_no_traceback(tmp_path: Path) -> None:
    paths = logmaker.write_logs(tmp_path, ".csv")
    text = paths[0].read_text().splitlines()
    paths[0].write_text("\n".join([text[0], *text[1:50], text[50][:7], *text[51:]]) + "\n")  # a short row
    env = dict(os.environ, COLUMNS="120")
    env.pop("BRACER_DEBUG", None)
    proc = subprocess.run(
        [sys.executable, "-m", "bracer", "audit", str(PROTOCOL), *map(str, paths)],
        capture_output=True,
        text=True,
        timeout=120,
        env=env,
    )
    assert proc.returncode == 2, proc.stderr
    assert f"{paths[0]}:51:" in proc.stderr and "Traceback" not in proc.stderr + proc.stdout


def test_narrow_terminal_gets_every_figure(run_bracer, tmp_path: Path, monkeypatch) -> None:  # type: ignore[no-untyped-def]
    monkeypatch.setenv("COLUMNS", "80")
    r = run_bracer("audit", PROTOCOL, *_gap_logs(tmp_path))
    assert r.code == 1
    assert "0.499 – 0.550 s · peak 0.051 s · limit 0.002 s · margin -0.049 s" in r.stdout
    assert r.stdout.count("…") == 3  # nothing cut to an ellipsis but the three shortened SHA-256 sums
