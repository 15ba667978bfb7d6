"""``bracer demo``: what it writes, what it prints, and how it refuses a folder it must not use."""

from __future__ import annotations

import json
import re
import shlex
from pathlib import Path

import pytest
from e2ekit import DemoRun
from typer.testing import CliRunner

from bracer.cli import app
from bracer.demo.run import MANIFEST, prepare_folder
from bracer.demo.study import STUDY
from bracer.errors import InputError
from bracer.simulate import RECIPES

FORMATS = (".md", ".html", ".pdf", ".json")


def test_the_study_plays_every_incident_kind_and_a_clean_session() -> None:
    played = {text.split(":")[0] for s in STUDY for text in s.incidents}
    assert played == set(RECIPES)
    assert any(s.clean for s in STUDY)
    participants = {s.participant for s in STUDY}
    assert len(participants) == 3
    assert all(sum(s.participant == p for s in STUDY) == 2 for p in participants)
    assert len({s.seed for s in STUDY}) == len(STUDY)


def test_the_demo_runs_and_prints_its_summary(demo_run: DemoRun) -> None:
    assert demo_run.exit_code == 0, demo_run.output
    out = demo_run.output
    for word in ("safe", "passed", "pass"):
        assert not re.search(rf"\b{word}\b", out, flags=re.I), word
    assert "audit findings per session" in out
    rows = [line for line in out.splitlines() if re.match(r"\s+AV-P0\d\s+S\d\s", line)]
    assert len(rows) == len(STUDY)
    for row, spec in zip(rows, STUDY, strict=True):
        entry = demo_run.session(spec.participant, spec.session)
        f = entry["findings"]
        assert row.split()[:2] == [spec.participant, spec.session]
        assert f"{f['error']} {f['warning']} {f['info']}" in " ".join(row.split())
        pdf = next(p for p in entry["reports"] if p.endswith(".pdf"))
        assert pdf in row
    assert "not a certification" in out
    assert re.search(r"\[22/22\] report", out)  # progress, one line per step


def test_every_session_has_every_report_format(demo_run: DemoRun) -> None:
    assert demo_run.manifest["complete"] is True
    for entry in [*demo_run.manifest["sessions"], *demo_run.manifest["reviews"]]:
        reports = [demo_run.folder / p for p in entry["reports"]]
        assert sorted(p.suffix for p in reports) == sorted(FORMATS)
        for p in reports:
            assert p.is_file() and p.stat().st_size > 0, p
        pdf = next(p for p in reports if p.suffix == ".pdf")
        assert pdf.read_bytes().startswith(b"%PDF-")
        md = next(p for p in reports if p.suffix == ".md")
        if "session" in entry:
            assert md.with_suffix(".plots").is_dir()  # the Markdown's plots
        record = json.loads(next(p for p in reports if p.suffix == ".json").read_text(encoding="utf-8"))
        assert record["title"]["participant"] == entry["participant"]


def test_the_manifest_agrees_with_the_audit_records(demo_run: DemoRun) -> None:
    for entry in demo_run.manifest["sessions"]:
        audit = json.loads((demo_run.folder / entry["audit"]).read_text(encoding="utf-8"))
        counted = {
            s: sum(f["severity"] == s for f in audit["findings"]) for s in ("error", "warning", "info")
        }
        assert entry["findings"] == counted
        assert entry["analysed_fraction"] == pytest.approx(audit["coverage"]["fraction"])
        assert audit["participant"] == entry["participant"] and audit["session"] == entry["session"]
        for log in entry["logs"]:
            assert (demo_run.folder / log).is_file()


def test_every_report_verifies_against_its_inputs(demo_run: DemoRun) -> None:
    runner = CliRunner()
    for entry in demo_run.manifest["sessions"]:
        report = next(p for p in entry["reports"] if p.endswith(".json"))
        result = runner.invoke(app, ["verify", str(demo_run.folder / report)])
        assert result.exit_code == 0, result.output  # 0: every input the report names is unchanged
        assert re.search(r"\d+ input\(s\) of .*: \d+ match$", result.output.strip()), result.output


def test_the_folder_readme_commands_reproduce_the_demo(demo_run: DemoRun, tmp_path: Path) -> None:
    # The README the demo writes shows the command behind each file; its simulate line, run again into
    # another folder, gives the same log bytes (same protocol, participant, body, seed and incidents).
    text = (demo_run.folder / "README.md").read_text(encoding="utf-8")
    block = text.split("```sh\n", 1)[1].split("```", 1)[0]
    line = next(x for x in block.splitlines() if x.startswith("bracer simulate "))
    args = shlex.split(line)[1:]
    first = demo_run.manifest["sessions"][0]
    args[args.index("--out") + 1] = str(tmp_path)
    result = CliRunner().invoke(app, args)
    assert result.exit_code == 0, result.output
    for log in first["logs"]:
        original = demo_run.folder / log
        assert (tmp_path / original.name).read_bytes() == original.read_bytes(), original.name


# ------------------------------------------------------------------------------------------- bad folders


def test_a_file_as_folder_exits_2(tmp_path: Path) -> None:
    target = tmp_path / "notes.txt"
    target.write_text("mine\n", encoding="utf-8")
    result = CliRunner().invoke(app, ["demo", str(target)])
    assert result.exit_code == 2
    assert "not a folder" in result.output and str(target) in result.output
    assert target.read_text(encoding="utf-8") == "mine\n"


def test_a_folder_with_other_files_exits_2_and_is_left_alone(tmp_path: Path) -> None:
    (tmp_path / "data.csv").write_text("t,x\n", encoding="utf-8")
    result = CliRunner().invoke(app, ["demo", str(tmp_path)])
    assert result.exit_code == 2
    assert "not empty" in result.output and MANIFEST in result.output
    assert sorted(p.name for p in tmp_path.iterdir()) == ["data.csv"]


def test_an_earlier_demo_is_replaced_but_other_files_are_kept(tmp_path: Path) -> None:
    (tmp_path / MANIFEST).write_text("{}", encoding="utf-8")
    (tmp_path / "sessions" / "AV-P01").mkdir(parents=True)
    (tmp_path / "sessions" / "AV-P01" / "old.parquet").write_bytes(b"old")
    (tmp_path / "my-notes.md").write_text("keep me\n", encoding="utf-8")
    prepare_folder(tmp_path)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["my-notes.md"]


def test_an_unwritable_folder_is_an_input_error(tmp_path: Path) -> None:
    blocker = tmp_path / "file"
    blocker.write_text("x", encoding="utf-8")
    with pytest.raises(InputError, match="cannot prepare the demo folder"):
        prepare_folder(blocker / "demo")  # a folder cannot be made inside a file
