"""Data-quality checks of the time base: order, gaps, sample rate and jitter, time unit, empty streams,
truncated rows, missing columns.  Each case asserts the exact set of findings and the samples masked."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

from bracer.errors import InputError
from bracer.findings import Kind, Severity

N = 1000  # main stream: 1 s at 1 kHz


def _main_with_time(t: np.ndarray):  # -> pa.Table
    main = logmaker.main_table()
    return logmaker.replace_column(main, "t", t)


def _ours(outcome, code: str) -> list:  # findings of one check
    return [f for f in outcome.findings if f.code == code]


def _clean_codes(outcome) -> set[str]:
    return {f.code for f in outcome.findings}


def test_clean_session_has_no_time_findings(tmp_path: Path) -> None:
    q = logmaker.quality_of(tmp_path)
    assert q.findings == ()
    assert q.session.time_valid["main"].all() and q.session.time_valid["cuffs"].all()
    (main, cuffs) = q.timings
    # closed form: samples every 1 ms and 2 ms exactly
    assert main.rate == pytest.approx(1000.0, rel=1e-9) and cuffs.rate == pytest.approx(500.0, rel=1e-9)
    assert main.jitter == pytest.approx(0.0, abs=1e-12)


def test_time_stepping_back(tmp_path: Path) -> None:
    t = np.arange(N) / 1000.0
    t[300:] -= 0.0505  # the clock jumps back 50.5 ms at sample 300
    q = logmaker.quality_of(tmp_path, main=_main_with_time(t))
    (f,) = _ours(q, "Q103")
    assert (f.severity, f.kind, f.quantity, f.channel) == (
        Severity.ERROR,
        Kind.DATA_QUALITY,
        "time_order",
        "t",
    )
    # samples 300..349 lie before 0.299 s, the time already reached; sample 350 (0.2995 s) is past it
    assert (f.i_start, f.i_end) == (300, 349)
    assert f.t_start == pytest.approx(0.299) and f.t_end == pytest.approx(0.2995)
    assert f.peak == pytest.approx(0.0495) and f.unit == "s"  # from 0.299 s back to 0.2495 s
    tv = q.session.time_valid["main"]
    assert not tv[300:350].any() and tv[:300].all() and tv[350:].all()
    sig = q.session.signal("main", "elb_pos")
    assert sig is not None and not sig.valid[300:350].any()
    assert _clean_codes(q) == {"Q103"}


def test_duplicate_timestamps(tmp_path: Path) -> None:
    t = np.arange(N) / 1000.0
    t[500] = t[499]
    t[700:703] = t[699]
    q = logmaker.quality_of(tmp_path, main=_main_with_time(t))
    found = [(f.severity, f.i_start, f.i_end, f.quantity) for f in _ours(q, "Q103")]
    assert found == [
        (Severity.WARNING, 500, 500, "time_order"),
        (Severity.WARNING, 700, 702, "time_order"),
    ]
    # the step 0.499 -> 0.501 s is 2 ms: at the gap tolerance (2 × 1 ms), not beyond it;
    # 0.699 -> 0.703 s is a gap
    (gap,) = _ours(q, "Q104")
    assert (gap.i_start, gap.i_end) == (699, 703) and gap.peak == pytest.approx(0.004)
    assert not q.session.time_valid["main"][[500, 700, 701, 702]].any()


def test_missing_time_cells(tmp_path: Path) -> None:
    t = np.arange(N) / 1000.0
    t[100:103] = np.nan
    q = logmaker.quality_of(tmp_path, main=_main_with_time(t))
    (f,) = _ours(q, "Q103")
    assert (f.severity, f.quantity, f.i_start, f.i_end) == (Severity.WARNING, "missing", 100, 102)
    assert f.t_start == pytest.approx(0.099) and f.t_end == pytest.approx(0.103)
    (gap,) = _ours(q, "Q104")  # 0.099 -> 0.103 s with no time in between: 4 ms > 2 ms
    assert gap.peak == pytest.approx(0.004)


def test_gap(tmp_path: Path) -> None:
    main = logmaker.main_table()
    keep = np.r_[0:400, 500:N]
    q = logmaker.quality_of(tmp_path, main=main.take(keep))
    (f,) = _ours(q, "Q104")
    assert (f.severity, f.kind, f.quantity) == (Severity.WARNING, Kind.DATA_QUALITY, "gap")
    assert f.t_start == pytest.approx(0.399) and f.t_end == pytest.approx(0.5)
    assert (f.i_start, f.i_end) == (399, 400)  # sample indices in the stream as read
    assert f.peak == pytest.approx(0.101) and f.limit == pytest.approx(0.002) and f.unit == "s"
    assert f.margin == pytest.approx(0.002 - 0.101)
    assert q.session.time_valid["main"].all()  # the samples either side are sound
    assert _clean_codes(q) == {"Q104"}


def test_many_gaps_are_capped_and_summarised(tmp_path: Path) -> None:
    main = logmaker.main_table()
    drop = np.arange(10, 990, 30)  # 33 single missing rows, each a 2 ms step -- at the tolerance
    drop2 = np.concatenate([drop, drop + 1])  # two missing rows: 3 ms steps, gaps
    q = logmaker.quality_of(tmp_path, main=main.take(np.setdiff1d(np.arange(N), drop2)))
    gaps = _ours(q, "Q104")
    assert len(gaps) == 21  # 20 one by one, then one for the other 13
    assert dict(gaps[-1].extra)["gaps"] == 13
    assert dict(gaps[-1].extra)["lost_s"] == pytest.approx(13 * 0.003)


def test_sample_rate_off_the_declared_one(tmp_path: Path) -> None:
    t = np.arange(N) / 950.0
    q = logmaker.quality_of(tmp_path, main=_main_with_time(t))
    (f,) = _ours(q, "Q105")
    assert f.quantity == "sample_rate" and f.unit == "Hz"
    assert f.peak == pytest.approx(950.0, rel=1e-9) and f.limit == 1000.0
    assert q.timings[0].rate == pytest.approx(950.0, rel=1e-9)


def test_jitter_measured_in_closed_form(tmp_path: Path) -> None:
    steps = np.tile([0.0009, 0.0011], N // 2)[: N - 1]  # alternating steps: mean 1 ms, SD 0.1 ms
    t = np.concatenate([[0.0], np.cumsum(steps)])
    q = logmaker.quality_of(tmp_path, main=_main_with_time(t))
    main = q.timings[0]
    assert main.jitter == pytest.approx(np.std(steps), rel=1e-9)
    assert main.jitter == pytest.approx(1e-4, rel=2e-3)
    assert _ours(q, "Q105") == []  # 10 % of the period: within 25 %


def test_irregular_sampling(tmp_path: Path) -> None:
    steps = np.tile([0.0006, 0.0014], N // 2)[: N - 1]  # SD 0.4 ms: 40 % of the declared period
    t = np.concatenate([[0.0], np.cumsum(steps)])
    q = logmaker.quality_of(tmp_path, main=_main_with_time(t))
    (f,) = _ours(q, "Q105")
    assert "irregular sampling" in f.message and f.peak == pytest.approx(4e-4, rel=3e-3)
    assert f.limit == pytest.approx(2.5e-4)


def test_time_logged_in_ms_but_declared_s(tmp_path: Path) -> None:
    t = np.arange(N, dtype=float)  # 0, 1, 2 ... "s": the logger wrote milliseconds
    q = logmaker.quality_of(tmp_path, main=_main_with_time(t))
    (f,) = _ours(q, "Q110")
    assert (f.severity, f.quantity, f.channel) == (Severity.ERROR, "unit", "t")
    assert f.peak == pytest.approx(1000.0) and "1000" in f.message
    assert not q.session.time_valid["main"].any()
    assert _ours(q, "Q104") == []  # not also a thousand gaps
    main_cov = [c for c in q.coverage.channels if c.stream == "main"]
    assert all(c.analysed_s == 0 for c in main_cov)


def test_header_only_stream_is_not_assessable(tmp_path: Path) -> None:
    main = logmaker.main_table().slice(0, 0)
    q = logmaker.quality_of(tmp_path, main=main, suffix=".csv")
    (f,) = _ours(q, "Q111")
    assert (f.severity, f.kind, f.quantity) == (Severity.ERROR, Kind.NOT_ASSESSABLE, "time")
    assert "no rows after the header" in f.message and "joint 'elbow_flexion' position" in f.message
    assert all(c.analysed_s == 0 for c in q.coverage.channels if c.stream == "main")


def test_truncated_last_line_is_a_finding(tmp_path: Path) -> None:
    paths = logmaker.write_logs(tmp_path, ".csv")
    text = paths[0].read_text()
    paths[0].write_text(text[: text.rstrip("\n").rfind("\n") + 25])
    from bracer.audit.quality import run_quality
    from bracer.protocol.load import load_protocol
    from bracer.protocol.resolve import resolve
    from bracer.session.read import read_session

    res = resolve(load_protocol(logmaker.PROTOCOL).protocol)
    q = run_quality(res, read_session(res.protocol, paths))
    (f,) = _ours(q, "Q102")
    assert f.severity == Severity.WARNING and f.message.startswith(f"{paths[0]}:1001: truncated last line")
    assert f.t_start == pytest.approx(0.998) and f.i_start == 998


def test_missing_column_and_stream(tmp_path: Path) -> None:
    main = logmaker.main_table()
    main = main.rename_columns([{"elb_tau": "elbow_tau"}.get(c, c) for c in main.column_names])
    cuffs = logmaker.cuff_table()
    cuffs = cuffs.rename_columns([{"t_cuff": "t_cuffs"}.get(c, c) for c in cuffs.column_names])
    with pytest.raises(InputError) as info:  # a file that feeds no stream is an input error
        logmaker.quality_of(tmp_path, main=main, cuffs=cuffs)
    assert "did you mean 't_cuffs'" in str(info.value)
    q = logmaker.quality_of(tmp_path, main=main)
    (f,) = _ours(q, "Q101")
    assert (f.kind, f.severity, f.subject, f.quantity, f.channel) == (
        Kind.NOT_ASSESSABLE,
        Severity.ERROR,
        "elbow_flexion",
        "torque",
        "elb_tau",
    )
    assert "did you mean 'elbow_tau'" in f.message
    # what it makes unassessable: the whole main stream
    assert (f.t_start, f.i_start, f.i_end) == (0.0, 0, 999) and f.t_end == pytest.approx(0.999)


def test_whole_stream_missing_is_one_finding(tmp_path: Path) -> None:
    from bracer.audit.quality import run_quality
    from bracer.protocol.load import load_protocol
    from bracer.protocol.resolve import resolve
    from bracer.session.read import read_session

    res = resolve(load_protocol(logmaker.PROTOCOL).protocol)
    path = logmaker.write(logmaker.main_table(), tmp_path / "main.csv")
    q = run_quality(res, read_session(res.protocol, [path]))
    (f,) = _ours(q, "Q101")
    assert (f.kind, f.quantity, f.channel) == (Kind.NOT_ASSESSABLE, "time", "t_cuff")
    assert "stream 'cuffs' is not in the log" in f.message
    assert "contact 'upper_arm_cuff' force" in f.message and "contact 'forearm_cuff' force" in f.message
    assert f.t_start == 0.0 and f.t_end == pytest.approx(0.999)  # the whole session
