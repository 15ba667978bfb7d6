"""read_session() tells a log's format from its bytes and names a mistaken file for what it is."""

from __future__ import annotations

import gzip
import json
import shutil
import sys
import zipfile
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

from bracer.errors import InputError
from bracer.protocol.load import load_protocol
from bracer.session.read import read_session
from bracer.session.sniff import identify

PROTOCOL = load_protocol(logmaker.PROTOCOL).protocol


def _error(path: Path) -> str:
    with pytest.raises(InputError) as info:
        read_session(PROTOCOL, [path])
    text = str(info.value)
    assert str(path) in text  # every error names the file
    return text


@pytest.mark.parametrize(
    "suffix, expected", [(".csv", "csv"), (".parquet", "parquet"), (".feather", "arrow")]
)
def test_format_is_told_by_magic_bytes_whatever_the_name(tmp_path: Path, suffix: str, expected: str) -> None:
    written = logmaker.write(logmaker.main_table(0.05), tmp_path / f"log{suffix}")
    renamed = written.rename(tmp_path / "log.dat")
    assert identify(renamed)[0] == expected


def test_arrow_stream_format(tmp_path: Path) -> None:
    import pyarrow as pa

    table = logmaker.main_table(0.05)
    path = tmp_path / "log.arrows"
    with pa.OSFile(str(path), "wb") as sink, pa.ipc.new_stream(sink, table.schema) as writer:
        writer.write_table(table)
    assert identify(path)[0] == "arrow-stream"


def test_protocol_given_as_log(tmp_path: Path) -> None:
    path = tmp_path / "protocol.yaml"
    shutil.copy(logmaker.PROTOCOL, path)
    text = _error(path)
    assert "bracer protocol file" in text and "bracer audit PROTOCOL LOG" in text


def test_json_record_given_as_log(tmp_path: Path) -> None:
    path = tmp_path / "audit.json"
    path.write_text(json.dumps({"tool": {"name": "bracer", "version": "0.1.0"}, "findings": []}))
    assert "bracer JSON record" in _error(path)


def test_other_json_given_as_log(tmp_path: Path) -> None:
    path = tmp_path / "data.json"
    path.write_text(json.dumps([1, 2, 3]))
    assert "JSON document" in _error(path)


def test_spreadsheet_given_as_log(tmp_path: Path) -> None:
    path = tmp_path / "session.xlsx"
    with zipfile.ZipFile(path, "w") as z:
        z.writestr("[Content_Types].xml", "<Types/>")
        z.writestr("xl/workbook.xml", "<workbook/>")
    text = _error(path)
    assert "Excel workbook" in text and "CSV" in text


def test_gzip_given_as_log(tmp_path: Path) -> None:
    csv = logmaker.write(logmaker.main_table(0.05), tmp_path / "main.csv")
    path = tmp_path / "main.csv.gz"
    path.write_bytes(gzip.compress(csv.read_bytes()))
    text = _error(path)
    assert "gzip" in text and "gunzip" in text


def test_empty_file(tmp_path: Path) -> None:
    path = tmp_path / "main.csv"
    path.write_bytes(b"")
    text = _error(path)
    assert "empty file" in text and "CSV" in text and "Parquet" in text


def test_missing_file_suggests_a_close_name(tmp_path: Path) -> None:
    logmaker.write(logmaker.main_table(0.05), tmp_path / "session_main.csv")
    text = _error(tmp_path / "session_mian.csv")
    assert "no such file" in text and "session_main.csv" in text


def test_folder_given_as_log(tmp_path: Path) -> None:
    logmaker.write(logmaker.main_table(0.05), tmp_path / "main.csv")
    text = _error(tmp_path)
    assert "folder" in text and "main.csv" in text


def test_truncated_parquet(tmp_path: Path) -> None:
    path = logmaker.write(logmaker.main_table(0.05), tmp_path / "main.parquet")
    data = path.read_bytes()
    path.write_bytes(data[: len(data) // 2])
    assert "truncated" in _error(path)


def test_text_named_parquet(tmp_path: Path) -> None:
    csv = logmaker.write(logmaker.main_table(0.05), tmp_path / "main.csv")
    path = tmp_path / "main.parquet"
    path.write_bytes(csv.read_bytes())
    text = _error(path)
    assert "named '.parquet' but holds text" in text


def test_other_yaml_given_as_log(tmp_path: Path) -> None:
    path = tmp_path / "settings.yaml"
    path.write_text("device: alder-4\nrate: 1000\n")
    assert "YAML" in _error(path)


def test_binary_of_unknown_kind(tmp_path: Path) -> None:
    path = tmp_path / "blob.bin"
    path.write_bytes(bytes(range(256)) * 4)
    assert "binary file" in _error(path)


def test_legacy_feather(tmp_path: Path) -> None:
    path = tmp_path / "old.feather"
    path.write_bytes(b"FEA1" + b"\x00" * 64)
    assert "Feather v1" in _error(path)
