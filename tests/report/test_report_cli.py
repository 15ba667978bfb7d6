"""``bracer report`` on the command line: what it writes, what it refuses (exit 2), and that a report built
from JSON records is the report built by running the analysis."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest
from reportkit import KitSession, inside

FORMATS = ("md", "html", "json", "pdf")


def test_review_and_audit_write_all_four_formats(kit: KitSession, tmp_path: Path, cli) -> None:  # type: ignore[no-untyped-def]
    with inside(kit.folder):
        code, out = cli(
            "report",
            kit.protocol,
            *kit.logs,
            "-p",
            "AV-P01",
            "--session",
            "S01",
            "--session-date",
            "2027-02-03",
            "--out",
            tmp_path,
        )
    assert code == 0, out
    written = sorted(tmp_path.iterdir())
    stem = "bracer-report_AVRU-EXO-01_v1.2_AV-P01_S01"
    assert {p.name for p in written} == {f"{stem}.{ext}" for ext in FORMATS} | {f"{stem}.plots"}
    assert "1 exceedance(s) found in the analysed data (analysed: 99.9 % of session time)" in out
    assert (tmp_path / f"{stem}.pdf").read_bytes().startswith(b"%PDF-")
    record = json.loads((tmp_path / f"{stem}.json").read_text(encoding="utf-8"))
    assert record["record"] == "bracer-report"
    assert record["title"]["session_date"] == "2027-02-03"
    assert len(list((tmp_path / f"{stem}.plots").glob("*.svg"))) == len(record["figures"])


def test_a_protocol_alone_gives_the_review_report(kit: KitSession, tmp_path: Path, cli) -> None:  # type: ignore[no-untyped-def]
    with inside(kit.folder):
        code, out = cli("report", kit.protocol, "--format", "md,json", "--out", tmp_path)
    assert code == 0, out
    names = sorted(p.name for p in tmp_path.iterdir())
    assert names == [
        "bracer-report_AVRU-EXO-01_v1.2_nominal.json",
        "bracer-report_AVRU-EXO-01_v1.2_nominal.md",
    ]
    text = (tmp_path / names[1]).read_text(encoding="utf-8")
    assert text.startswith("# bracer report: Pre-trial review\n")
    assert "## Pre-trial review" in text and "## Sign-off" in text and "## Findings" not in text


def test_from_json_records_give_the_same_report(kit: KitSession, tmp_path: Path, cli) -> None:  # type: ignore[no-untyped-def]
    with inside(kit.folder):
        code, _ = cli("review", kit.protocol, "-p", "AV-P01", "--json", tmp_path / "review.json")
        assert code in (0, 1)
        code, _ = cli(
            "audit",
            kit.protocol,
            *kit.logs,
            "-p",
            "AV-P01",
            "--session",
            "S01",
            "--json",
            tmp_path / "audit.json",
        )
        assert code in (0, 1)
        code, out = cli(
            "report",
            "--from-json",
            tmp_path / "review.json",
            "--from-json",
            tmp_path / "audit.json",
            "--format",
            "json,md",
            "--out",
            tmp_path / "from-json",
        )
        assert code == 0, out
        code, out = cli(
            "report",
            kit.protocol,
            *kit.logs,
            "-p",
            "AV-P01",
            "--session",
            "S01",
            "--format",
            "json,md",
            "--out",
            tmp_path / "live",
        )
        assert code == 0, out
    stem = "bracer-report_AVRU-EXO-01_v1.2_AV-P01_S01"
    a = json.loads((tmp_path / "from-json" / f"{stem}.json").read_text(encoding="utf-8"))
    b = json.loads((tmp_path / "live" / f"{stem}.json").read_text(encoding="utf-8"))
    # the records were found at their paths, so the plots are drawn from the logs they name
    assert a["figures"] == b["figures"] and a["figure_notes"] == []
    # only the note of where each record came from differs, and the audit record's creation time
    assert [r["path"] for r in a["records"]] == [str(tmp_path / "review.json"), str(tmp_path / "audit.json")]
    assert [r["path"] for r in b["records"]] == [None, None]
    for key in set(a) - {"records", "sources"}:
        assert a[key] == b[key], key
    for kind in ("review", "audit"):
        sa, sb = dict(a["sources"][kind]), dict(b["sources"][kind])
        sa.pop("created", None)
        sb.pop("created", None)
        assert sa == sb, kind


def test_an_audit_record_without_its_logs_reports_without_plots(kit: KitSession, tmp_path: Path, cli) -> None:  # type: ignore[no-untyped-def]
    moved = tmp_path / "elsewhere"
    shutil.copytree(kit.folder, moved)
    with inside(moved):
        code, _ = cli("audit", kit.protocol, *kit.logs, "-p", "AV-P01", "--json", tmp_path / "audit.json")
        assert code in (0, 1)
    shutil.rmtree(moved)
    code, out = cli(
        "report", "--from-json", tmp_path / "audit.json", "--format", "md", "--out", tmp_path / "r"
    )
    assert code == 0, out
    text = next((tmp_path / "r").glob("*.md")).read_text(encoding="utf-8")
    assert "plots not drawn" in text
    assert "Device** | not stated" in text  # the protocol the record names is gone too


def test_a_log_that_is_not_the_audited_one_is_refused(kit: KitSession, tmp_path: Path, cli) -> None:  # type: ignore[no-untyped-def]
    with inside(kit.folder):
        cli("audit", kit.protocol, *kit.logs, "-p", "AV-P01", "--json", tmp_path / "audit.json")
        other = tmp_path / "other.csv"
        other.write_bytes(Path(kit.logs[0]).read_bytes() + b"\n")
        code, out = cli(
            "report",
            kit.protocol,
            other,
            kit.logs[1],
            "--from-json",
            tmp_path / "audit.json",
            "--out",
            tmp_path / "r",
        )
    assert code == 2
    assert "is not one the audit record" in out and "other.csv" in out


def test_records_of_different_participants_are_refused(kit: KitSession, tmp_path: Path, cli) -> None:  # type: ignore[no-untyped-def]
    with inside(kit.folder):
        cli("review", kit.protocol, "-p", "AV-P02", "--json", tmp_path / "review.json")
        cli("audit", kit.protocol, *kit.logs, "-p", "AV-P01", "--json", tmp_path / "audit.json")
        code, out = cli(
            "report",
            "--from-json",
            tmp_path / "review.json",
            "--from-json",
            tmp_path / "audit.json",
            "--out",
            tmp_path / "r",
        )
    assert code == 2
    assert "one report covers one participant" in out


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (("--format", "md,docx"), "unknown report format 'docx'"),
        (("-p", "AV-P9"), "participant 'AV-P9' is not in the protocol"),
        (("--session-date", "3 Feb"), "--session-date must be a date"),
    ],
)
def test_bad_usage_exits_2(kit: KitSession, tmp_path: Path, cli, args: tuple[str, ...], message: str) -> None:  # type: ignore[no-untyped-def]
    with inside(kit.folder):
        code, out = cli("report", kit.protocol, *args, "--out", tmp_path)
    assert code == 2
    assert message in out
    assert "Traceback" not in out


def test_a_broken_record_exits_2_with_its_line(tmp_path: Path, cli) -> None:  # type: ignore[no-untyped-def]
    bad = tmp_path / "audit.json"
    bad.write_text('{"record": "bracer-audit",\n  "format_version": 1,\n  oops\n}', encoding="utf-8")
    code, out = cli("report", "--from-json", bad, "--out", tmp_path)
    assert code == 2
    assert f"{bad}:3:" in out and "not valid JSON" in out


def test_nothing_to_report_exits_2(tmp_path: Path, cli) -> None:  # type: ignore[no-untyped-def]
    code, out = cli("report", "--out", tmp_path)
    assert code == 2 and "give a protocol file" in out
