"""The JSON record of an audit validates against its published JSON Schema (jsonschema as the external
validator), whatever the log: clean, damaged, or with the limit checks unavailable."""

from __future__ import annotations

import importlib.resources
import json
import math
import sys
import types
from pathlib import Path

import jsonschema
import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

from bracer.audit.record import SCHEMA_PATH, _plain, build_record, dumps, schema
from bracer.audit.run import audit

SAMPLES = [logmaker.HERE / name for name in logmaker.SAMPLES]
VALIDATOR = jsonschema.Draft202012Validator


def _validate(record: dict) -> None:
    VALIDATOR(schema(), format_checker=VALIDATOR.FORMAT_CHECKER).validate(record)


def test_the_schema_is_a_valid_draft_2020_12_schema() -> None:
    VALIDATOR.check_schema(schema())
    assert schema()["$schema"] == "https://json-schema.org/draft/2020-12/schema"


def test_the_schema_ships_inside_the_package() -> None:
    packaged = importlib.resources.files("bracer.audit") / "audit-record.schema.json"
    assert packaged.is_file() and json.loads(packaged.read_text(encoding="utf-8")) == schema()
    assert SCHEMA_PATH.name == "audit-record.schema.json"


def test_clean_record_validates_and_carries_the_required_fields() -> None:
    r = audit(logmaker.PROTOCOL, SAMPLES, participant="AV-P01", session_id="S01")
    record = r.to_record()
    _validate(record)
    assert record["tool"] == {"name": "bracer", "version": r.tool_version}
    assert record["protocol"]["id"] == "AVRU-EXO-01" and record["protocol"]["version"] == "1.2"
    assert (record["participant"], record["session"]) == ("AV-P01", "S01")
    assert [i["role"] for i in record["inputs"]] == ["protocol", "log", "log"]
    assert record["coverage"]["fraction"] == pytest.approx(r.coverage.fraction)
    assert len(record["coverage"]["channels"]) == 24
    assert record["statement"] == r.statement and record["caution"] == r.caution
    assert record["summary"] is not None and record["findings"] == []


def test_record_with_findings(tmp_path: Path) -> None:
    main = logmaker.main_table()
    t = main.column("t").to_numpy().copy()
    t[500:] += 0.05  # a 51 ms gap
    elb = main.column("elb_tau").to_numpy().copy()
    elb[100:140] = np.nan
    main = logmaker.replace_column(logmaker.replace_column(main, "t", t), "elb_tau", elb)
    r = audit(logmaker.PROTOCOL, logmaker.write_logs(tmp_path, ".parquet", main))
    record = json.loads(dumps(r.to_record()))
    _validate(record)
    gap = next(f for f in record["findings"] if f["code"] == "Q104")
    assert gap["kind"] == "data_quality" and gap["quantity"] == "gap" and gap["unit"] == "s"
    assert gap["t_start"] == pytest.approx(0.499) and gap["t_end"] == pytest.approx(0.550)
    assert gap["peak"] == pytest.approx(0.051) and gap["limit"] == pytest.approx(0.002)
    assert record["counts"]["by_kind"]["data_quality"] == sum(
        f["kind"] == "data_quality" for f in record["findings"]
    )
    assert record["worst_severity"] == "warning"


def test_record_when_a_stream_is_missing_and_checks_are_unavailable(monkeypatch: pytest.MonkeyPatch) -> None:
    import bracer.audit as package

    monkeypatch.setattr(package, "checks", types.ModuleType("bracer.audit.checks"), raising=False)
    record = audit(logmaker.PROTOCOL, SAMPLES[:1]).to_record()
    _validate(record)
    assert record["checks"]["limit_checks_available"] is False and record["summary"] is None
    assert {f["code"] for f in record["findings"]} == {"Q101", "Q198"}
    assert [c["present"] for c in record["coverage"]["channels"]].count(False) == 6


def test_record_of_a_header_only_log(tmp_path: Path) -> None:
    paths = logmaker.write_logs(tmp_path, ".csv", logmaker.main_table().slice(0, 0))
    record = audit(logmaker.PROTOCOL, paths).to_record()
    _validate(record)
    assert any(f["code"] == "Q111" and f["kind"] == "not_assessable" for f in record["findings"])
    main = next(s for s in record["streams"] if s["name"] == "main")
    assert main["samples"] == 0 and main["measured_rate_hz"] is None


def test_a_record_that_breaks_the_schema_is_refused() -> None:
    record = audit(logmaker.PROTOCOL, SAMPLES).to_record()
    broken = dict(record, findings=[{"code": "Q104", "kind": "gap"}])
    with pytest.raises(jsonschema.ValidationError):
        _validate(broken)
    with pytest.raises(jsonschema.ValidationError):
        _validate({k: v for k, v in record.items() if k != "coverage"})


def test_numbers_are_strict_json() -> None:
    assert _plain({"a": (np.float64(1.5), float("nan"), math.inf), "b": np.int64(3)}) == {
        "a": [1.5, None, None],
        "b": 3,
    }
    r = audit(logmaker.PROTOCOL, SAMPLES)
    text = dumps(build_record(r))
    assert "NaN" not in text and "Infinity" not in text
    json.loads(text)


def test_schema_command_prints_the_published_schema(run_bracer) -> None:  # type: ignore[no-untyped-def]
    result = run_bracer("schema", "audit-record")
    assert result.code == 0 and json.loads(result.stdout) == schema()
    unknown = run_bracer("schema", "audit-recrod")
    assert unknown.code == 2 and "audit-record" in unknown.stderr
