"""The audit orchestrator: audit() end to end, the AuditResult and its DataFrame, fail-closed integration of
the limit checks, the notebook API ``bracer.audit(...)``, and properties over corrupted logs."""

from __future__ import annotations

import json
import re
import subprocess
import sys
import types
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

import bracer
from bracer.audit.run import AuditResult, audit
from bracer.errors import InputError
from bracer.findings import Finding, Kind, Severity
from bracer.protocol.load import load_protocol

SAMPLES = [logmaker.HERE / name for name in logmaker.SAMPLES]
FORBIDDEN = re.compile(r"\b(safe|safety verified|passed|pass)\b", re.IGNORECASE)


def test_clean_sample_session() -> None:
    r = audit(logmaker.PROTOCOL, SAMPLES, participant="AV-P01", session_id="S01")
    assert isinstance(r, AuditResult)
    assert [f for f in r.findings if f.severity >= Severity.WARNING] == []
    assert r.limit_checks and any(c.startswith("A") for c in r.checks) and "Q103" in r.checks
    assert r.statement == "no exceedance found in the analysed data (analysed: 99.8 % of session time)"
    assert not FORBIDDEN.search(r.statement) and not FORBIDDEN.search(r.caution)
    assert "not a certification" in r.caution and "responsible clinician" in r.caution
    assert (r.protocol_id, r.protocol_version, r.participant, r.session) == (
        "AVRU-EXO-01",
        "1.2",
        "AV-P01",
        "S01",
    )
    assert [i.format for i in r.inputs] == ["yaml", "csv", "csv"] and all(
        len(i.sha256) == 64 for i in r.inputs
    )
    assert [s.stream for s in r.streams] == ["main", "cuffs"]
    assert r.summary is not None
    assert r.exit_code(Severity.WARNING) == 0 and r.exit_code(Severity.INFO) == 0


def test_exceedance_statement_and_exit_codes(tmp_path: Path) -> None:
    main = logmaker.main_table()
    elb = main.column("elb_pos").to_numpy().copy()
    elb[400:600] = 128.0  # beyond the planned limit (120 deg), inside the device limit (130 deg)
    main = logmaker.replace_column(main, "elb_pos", elb)
    r = audit(logmaker.PROTOCOL, logmaker.write_logs(tmp_path, ".parquet", main))
    violations = [f for f in r.findings if f.kind == Kind.VIOLATION]
    assert violations, "the limit checks report the exceedance"
    assert r.statement.startswith(f"{len(violations)} exceedance(s) found in the analysed data (analysed: ")
    assert r.exit_code(Severity.WARNING) == 1


def test_protocol_objects_are_accepted() -> None:
    loaded = load_protocol(logmaker.PROTOCOL)
    by_path = audit(logmaker.PROTOCOL, SAMPLES)
    by_loaded = audit(loaded, SAMPLES)
    by_model = audit(loaded.protocol, SAMPLES)
    assert [f.to_dict() for f in by_path.findings] == [f.to_dict() for f in by_loaded.findings]
    assert [f.to_dict() for f in by_model.findings] == [f.to_dict() for f in by_path.findings]
    assert by_model.inputs[0].format == "csv"  # no protocol file to hash


def test_unknown_participant_suggests_the_close_code() -> None:
    with pytest.raises(InputError) as info:
        audit(logmaker.PROTOCOL, SAMPLES, participant="AV-P1")
    assert "did you mean 'AV-P01'" in str(info.value)


def test_to_dataframe(tmp_path: Path) -> None:
    main = logmaker.main_table().take(np.r_[0:400, 500:1000])
    r = audit(logmaker.PROTOCOL, logmaker.write_logs(tmp_path, ".parquet", main))
    df = r.to_dataframe()
    assert len(df) == len(r.findings)
    gap = df[df.code == "Q104"].iloc[0]
    assert gap.severity == "warning" and gap.kind == "data_quality" and gap.t_start == pytest.approx(0.399)
    assert gap.extra == {"stream": "main"}
    assert list(df.columns)[:4] == ["code", "name", "severity", "kind"]
    assert audit(logmaker.PROTOCOL, SAMPLES).to_dataframe().empty


def test_limit_checks_not_available_is_an_error_not_a_pass(monkeypatch: pytest.MonkeyPatch) -> None:
    import bracer.audit as package

    monkeypatch.setattr(package, "checks", types.ModuleType("bracer.audit.checks"), raising=False)
    r = audit(logmaker.PROTOCOL, SAMPLES)
    (f,) = [f for f in r.findings if f.code == "Q198"]
    assert (f.kind, f.severity) == (Kind.NOT_ASSESSABLE, Severity.ERROR)
    assert "limit checks not available" in f.message
    assert not r.limit_checks and r.summary is None
    assert r.statement.startswith("the limit checks did not run: this audit makes no statement about limits")
    assert r.exit_code(Severity.ERROR) == 1


def test_a_failing_check_is_reported_not_hidden(monkeypatch: pytest.MonkeyPatch) -> None:
    import bracer.audit as package

    broken = types.ModuleType("bracer.audit.checks.broken")

    def run(ctx: object) -> list[Finding]:
        raise ZeroDivisionError("division by zero")

    broken.run = run  # type: ignore[attr-defined]
    fake = types.ModuleType("bracer.audit.checks")
    fake.ALL = (broken,)  # type: ignore[attr-defined]
    monkeypatch.setattr(package, "checks", fake, raising=False)
    monkeypatch.delenv("BRACER_DEBUG", raising=False)
    r = audit(logmaker.PROTOCOL, SAMPLES)
    (f,) = [f for f in r.findings if f.code == "Q199"]
    assert f.kind == Kind.NOT_ASSESSABLE and "ZeroDivisionError" in f.message and "bug in bracer" in f.message
    assert r.exit_code(Severity.ERROR) == 1


def test_import_bracer_stays_light_and_audit_is_callable() -> None:
    code = (
        "import sys, json, bracer\n"
        "light = not ({'numpy', 'pandas', 'pyarrow'} & set(sys.modules))\n"
        f"logs = {json.dumps([str(p) for p in SAMPLES])}\n"
        f"r1 = bracer.audit({str(logmaker.PROTOCOL)!r}, logs)\n"
        "import bracer.audit.run\n"
        f"r2 = bracer.audit({str(logmaker.PROTOCOL)!r}, logs, participant='AV-P01')\n"
        "print(json.dumps([light, r1.statement, r2.participant, callable(bracer.audit)]))\n"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=120, check=True
    )
    light, statement, participant, is_callable = json.loads(out.stdout.splitlines()[-1])
    assert light and is_callable and participant == "AV-P01"
    assert statement.startswith("no exceedance found in the analysed data")


def test_bracer_audit_in_process() -> None:
    assert bracer.audit(logmaker.PROTOCOL, SAMPLES[0]).participant is None


# -------------------------------------------------------------------------------- bad logs: never clean


def _bad_logs(tmp_path: Path) -> dict[str, list[Path]]:
    """One broken log per kind of damage; each must give an input error or a finding at warning or above."""
    out: dict[str, list[Path]] = {}

    def csv(name: str, edit) -> list[Path]:  # main.csv edited as text, cuffs.csv sound
        folder = tmp_path / name
        folder.mkdir()
        paths = logmaker.write_logs(folder, ".csv")
        lines = paths[0].read_text().splitlines()
        paths[0].write_text(edit(lines))
        return paths

    def table(name: str, column: str, change, stream: str = "main") -> list[Path]:
        folder = tmp_path / name
        folder.mkdir()
        t = logmaker.main_table() if stream == "main" else logmaker.cuff_table()
        x = change(t.column(column).to_numpy().astype(float).copy())
        t = logmaker.replace_column(t, column, x)
        return logmaker.write_logs(folder, ".parquet", **{stream: t})

    def at(i0: int, i1: int, value: float):
        def change(x: np.ndarray) -> np.ndarray:
            x[i0:i1] = value
            return x

        return change

    out["truncated last line"] = csv("trunc", lambda ls: "\n".join(ls)[:-40])
    out["empty file"] = csv("empty", lambda ls: "")
    out["header only"] = csv("header", lambda ls: ls[0] + "\n")
    out["non-numeric cell"] = csv(
        "text", lambda ls: "\n".join([*ls[:50], ls[50].replace(",", ",oops", 1), *ls[51:]])
    )
    out["missing column"] = csv(
        "missing", lambda ls: "\n".join([ls[0].replace('"elb_tau"', '"elbow_tau"'), *ls[1:]])
    )
    out["time backwards"] = table("back", "t", lambda t: np.where(np.arange(t.size) >= 500, t - 0.2, t))
    out["duplicate times"] = table("dup", "t", lambda t: np.where(np.arange(t.size) == 500, t[499], t))
    out["gap"] = table("gap", "t", lambda t: np.where(np.arange(t.size) >= 500, t + 0.05, t))
    out["NaN run"] = table("nan", "sh_rot_tau", at(100, 160, np.nan))
    out["constant channel"] = table("const", "ua_fy", at(0, 500, 0.25), stream="cuffs")
    out["saturation"] = table("sat", "fa_fz", at(300, 340, 40.0), stream="cuffs")
    out["force offset"] = table("offset", "fa_fx", lambda x: x + 6.0, stream="cuffs")
    out["unit error"] = table("unit", "elb_vel", lambda x: x * np.pi / 180)
    return out


BAD = [
    "truncated last line",
    "empty file",
    "header only",
    "non-numeric cell",
    "missing column",
    "time backwards",
    "duplicate times",
    "gap",
    "NaN run",
    "constant channel",
    "saturation",
    "force offset",
    "unit error",
]


@pytest.mark.parametrize("case", BAD)
def test_bad_log_is_never_a_clean_verdict(tmp_path: Path, case: str) -> None:
    paths = _bad_logs(tmp_path)[case]
    try:
        r = audit(logmaker.PROTOCOL, paths)
    except InputError as exc:
        assert str(paths[0]) in str(exc)  # a clear error naming the file
        return
    flagged = [f for f in r.findings if f.severity >= Severity.WARNING and f.code.startswith("Q")]
    assert flagged, [f.message for f in r.findings]
    assert r.exit_code(Severity.WARNING) == 1


# ---------------------------------------------------------------------------------- property: spans in log


_OPS = st.one_of(
    st.tuples(
        st.just("nan"),
        st.sampled_from(["elb_pos", "sh_flex_tau", "estop"]),
        st.integers(0, 990),
        st.integers(1, 40),
    ),
    st.tuples(st.just("back"), st.just("t"), st.integers(1, 990), st.integers(1, 80)),
    st.tuples(st.just("dup"), st.just("t"), st.integers(1, 990), st.integers(1, 5)),
    st.tuples(st.just("drop"), st.just("t"), st.integers(0, 990), st.integers(1, 60)),
    st.tuples(
        st.just("flat"), st.sampled_from(["elb_tau", "sh_abd_vel"]), st.integers(0, 900), st.integers(5, 90)
    ),
)


def _corrupt(ops: list[tuple[str, str, int, int]]):  # -> pa.Table
    main = logmaker.main_table()
    keep = np.ones(main.num_rows, dtype=bool)
    for op, column, i, k in ops:
        x = main.column(column).to_numpy().astype(float).copy()
        if op == "nan":
            x[i : i + k] = np.nan
        elif op == "back":
            x[i:] -= k * 1e-3
        elif op == "dup":
            x[i : i + k] = x[i - 1]
        elif op == "flat":
            x[i : i + k] = np.nanmax(x) + 1.0
        elif op == "drop":
            keep[i : i + k] = False
            continue
        main = logmaker.replace_column(main, column, x)
    return main.filter(keep)


@settings(max_examples=20, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(ops=st.lists(_OPS, min_size=1, max_size=3))
def test_every_finding_span_lies_inside_the_log(tmp_path_factory: pytest.TempPathFactory, ops: list) -> None:
    folder = tmp_path_factory.mktemp("corrupt")
    r = audit(logmaker.PROTOCOL, logmaker.write_logs(folder, ".parquet", _corrupt(ops)))
    main_t = _corrupt(ops).column("t").to_numpy().astype(float)
    t_lo = min(np.nanmin(main_t), 0.0)
    t_hi = max(np.nanmax(main_t), 0.998)
    n_max = max(s.samples for s in r.streams)
    for f in r.findings:
        for t in (f.t_start, f.t_end, f.t_peak):
            assert t is None or t_lo - 1e-9 <= t <= t_hi + 1e-9, (f.code, f.message)
        if f.t_start is not None and f.t_end is not None:
            assert f.t_start <= f.t_end + 1e-12, (f.code, f.message)
        for i in (f.i_start, f.i_end):
            assert i is None or 0 <= i < n_max, (f.code, f.message)


def test_a_caution_that_could_not_be_applied_is_reported(tmp_path: Path) -> None:
    protocol = logmaker.protocol_variant(
        tmp_path,
        ("      elbow_flexion: {min: 15 deg, max: 135 deg, date: 2027-01-20, method: goniometry}\n", ""),
    )
    r = audit(protocol, SAMPLES, participant="AV-P01")
    (f,) = [f for f in r.findings if f.code == "Q197"]
    assert (f.kind, f.severity, f.subject) == (Kind.NOT_ASSESSABLE, Severity.ERROR, "elbow_flexion")
    assert "caution 'spasticity'" in f.message and "measured range of motion" in f.message
    assert r.exit_code(Severity.ERROR) == 1
