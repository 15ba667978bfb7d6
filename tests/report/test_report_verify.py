"""``bracer verify``: every input a report names is checked by its SHA-256; one changed byte or a missing file
is caught, and the exit code tells a script which case it is (0 all match, 1 a mismatch or missing file, 2 an
unusable report file)."""

from __future__ import annotations

import hashlib
import json
import shutil
from pathlib import Path

import pytest
from reportkit import KitSession, inside

from bracer.report.verify import verify_record


@pytest.fixture
def packet(kit: KitSession, kit_outputs: dict[str, Path], tmp_path: Path) -> tuple[Path, Path]:
    """A copy of the kit folder (the inputs) and of the report's JSON record, to tamper with."""
    folder = tmp_path / "packet"
    shutil.copytree(kit.folder, folder)
    report = tmp_path / "report.json"
    shutil.copy(kit_outputs["json"], report)
    return folder, report


def _inputs(report: Path) -> list[dict[str, object]]:
    return json.loads(report.read_text(encoding="utf-8"))["inputs"]  # type: ignore[no-any-return]


def test_the_report_names_every_input(packet: tuple[Path, Path]) -> None:
    _, report = packet
    roles = [i["role"] for i in _inputs(report)]
    assert roles.count("protocol") == 1
    assert roles.count("log") == 2
    assert roles.count("reference table") == 3


def test_all_inputs_match_and_the_hashes_are_sha256(packet: tuple[Path, Path], cli) -> None:  # type: ignore[no-untyped-def]
    folder, report = packet
    # hashlib is the reference implementation of SHA-256 (FIPS 180-4) here
    for item in _inputs(report):
        p = Path(str(item["path"]))
        p = p if p.is_absolute() else folder / p
        assert hashlib.sha256(p.read_bytes()).hexdigest() == item["sha256"]
    code, out = cli("verify", report, "--root", folder)
    assert code == 0, out
    assert "6 input(s)" in out and "6 match" in out


def _flip_one_byte(path: Path, offset: int) -> None:
    data = bytearray(path.read_bytes())
    data[offset] = data[offset] ^ 0x01
    path.write_bytes(bytes(data))


@pytest.mark.parametrize("which", ["protocol.yaml", "main.csv", "cuffs.csv"])
@pytest.mark.parametrize("where", ["first", "middle", "last"])
def test_one_changed_byte_in_any_input_is_caught(
    packet: tuple[Path, Path], cli, which: str, where: str
) -> None:  # type: ignore[no-untyped-def]
    folder, report = packet
    target = folder / which
    size = target.stat().st_size
    _flip_one_byte(target, {"first": 0, "middle": size // 2, "last": size - 1}[where])
    code, out = cli("verify", report, "--root", folder)
    assert code == 1
    assert f"DIFFERS  {'protocol' if which.endswith('yaml') else 'log'}: {which}" in out
    assert "5 match, 1 differs" in out


def test_a_changed_reference_table_is_caught(packet: tuple[Path, Path], tmp_path: Path) -> None:
    # Reference tables are recorded by their absolute path; point the record at a copy and change the copy.
    folder, report = packet
    data = json.loads(report.read_text(encoding="utf-8"))
    table = next(i for i in data["inputs"] if i["role"] == "reference table")
    copy = tmp_path / Path(table["path"]).name
    shutil.copy(table["path"], copy)
    table["path"] = str(copy)
    report.write_text(json.dumps(data), encoding="utf-8")
    assert verify_record(report, folder).all_match
    _flip_one_byte(copy, copy.stat().st_size // 3)
    result = verify_record(report, folder)
    assert [c.status for c in result.checks if c.path == str(copy)] == ["differs"]


def test_a_missing_input_is_caught(packet: tuple[Path, Path], cli) -> None:  # type: ignore[no-untyped-def]
    folder, report = packet
    (folder / "cuffs.csv").unlink()
    code, out = cli("verify", report, "--root", folder)
    assert code == 1
    assert "MISSING" in out and "cuffs.csv" in out and "1 missing" in out


def test_relative_paths_resolve_against_the_current_folder_by_default(packet: tuple[Path, Path], cli) -> None:  # type: ignore[no-untyped-def]
    folder, report = packet
    with inside(folder):
        code, out = cli("verify", report)
    assert code == 0, out


def test_the_wrong_root_makes_the_relative_inputs_missing(packet: tuple[Path, Path], tmp_path: Path) -> None:
    _, report = packet
    empty = tmp_path / "empty"
    empty.mkdir()
    result = verify_record(report, empty)
    assert result.count("missing") == 3  # protocol and two logs; the reference tables are absolute
    assert not result.all_match


@pytest.mark.parametrize(
    ("content", "message"),
    [
        ("{not json", "not valid JSON"),
        ("[1, 2]", "expected a JSON object"),
        ('{"record": "something-else"}', "not a bracer record"),
        ('{"record": "bracer-report", "format_version": 99, "inputs": []}', "unsupported format_version"),
        ('{"record": "bracer-report", "format_version": 1, "inputs": []}', "names no input"),
        ('{"record": "bracer-report", "format_version": 1, "inputs": [{"path": 3}]}', "inputs[0]"),
    ],
)
def test_an_unusable_report_file_exits_2(tmp_path: Path, cli, content: str, message: str) -> None:  # type: ignore[no-untyped-def]
    bad = tmp_path / "bad.json"
    bad.write_text(content, encoding="utf-8")
    code, out = cli("verify", bad)
    assert code == 2
    assert message in out and "bad.json" in out


def test_a_report_file_that_does_not_exist_exits_2(tmp_path: Path, cli) -> None:  # type: ignore[no-untyped-def]
    code, out = cli("verify", tmp_path / "nope.json")
    assert code == 2 and "file not found" in out


def test_an_audit_record_can_be_verified_too(kit: KitSession, tmp_path: Path, cli) -> None:  # type: ignore[no-untyped-def]
    record = tmp_path / "audit.json"
    with inside(kit.folder):
        code, out = cli("audit", kit.protocol, *kit.logs, "-p", "AV-P01", "--json", record)
        assert code in (0, 1), out
        code, out = cli("verify", record)
    assert code == 0, out
    assert "3 input(s)" in out
