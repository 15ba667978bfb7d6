"""Analysed coverage per channel and for the session, against closed-form answers."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

from bracer.audit.quality.coverage import _intersection


def _cov(outcome) -> dict[str, tuple[bool, float, float]]:
    return {c.column: (c.present, c.analysed_s, c.fraction) for c in outcome.coverage.channels}


def _with(table, name: str, i0: int, i1: int):
    x = table.column(name).to_numpy().astype(float)
    x[i0:i1] = np.nan
    return logmaker.replace_column(table, name, x)


def test_clean_session(tmp_path: Path) -> None:
    q = logmaker.quality_of(tmp_path)
    cov = q.coverage
    # main: samples 0 .. 0.999 s every 1 ms; cuffs: 0 .. 0.998 s every 2 ms
    assert (cov.session_start, cov.session_end) == (0.0, pytest.approx(0.999))
    main = _cov(q)["elb_pos"]
    assert main[0] and main[1] == pytest.approx(0.999) and main[2] == pytest.approx(1.0)
    assert _cov(q)["ua_fx"][1] == pytest.approx(0.998)
    assert _cov(q)["estop"][1] == pytest.approx(0.999)  # status columns count too
    assert cov.analysed_s == pytest.approx(0.998) and cov.fraction == pytest.approx(0.998 / 0.999)
    assert cov.not_analysed == ()


def test_gap_is_not_covered(tmp_path: Path) -> None:
    keep = np.r_[0:400, 500:1000]
    q = logmaker.quality_of(tmp_path, main=logmaker.main_table().take(keep))
    # 0.399 -> 0.500 s holds no sample: 0.101 s of the 0.999 s are not analysed on the main stream
    assert _cov(q)["elb_pos"][1] == pytest.approx(0.999 - 0.101)
    assert q.coverage.analysed_s == pytest.approx(0.998 - 0.101)


def test_missing_values(tmp_path: Path) -> None:
    main = _with(logmaker.main_table(), "elb_pos", 600, 601)  # one sample: 2 ms bridged (gap tolerance 2)
    main = _with(main, "elb_pos", 200, 202)  # two samples: 0.199 -> 0.202 s, 3 ms not covered
    q = logmaker.quality_of(tmp_path, main=main)
    assert _cov(q)["elb_pos"][1] == pytest.approx(0.999 - 0.003)
    assert _cov(q)["elb_vel"][1] == pytest.approx(0.999)


def test_session_coverage_needs_every_analysed_channel(tmp_path: Path) -> None:
    main = _with(logmaker.main_table(), "elb_tau", 100, 150)  # 0.099 -> 0.150 s: 51 ms
    cuffs = _with(logmaker.cuff_table(), "fa_fy", 300, 320)  # 0.598 -> 0.640 s: 42 ms
    q = logmaker.quality_of(tmp_path, main=main, cuffs=cuffs)
    assert _cov(q)["elb_tau"][1] == pytest.approx(0.999 - 0.051)
    assert _cov(q)["fa_fy"][1] == pytest.approx(0.998 - 0.042)
    assert q.coverage.analysed_s == pytest.approx(0.998 - 0.051 - 0.042)


def test_a_dead_channel_is_counted_apart(tmp_path: Path) -> None:
    main = logmaker.replace_column(logmaker.main_table(), "fa_rot_tau", np.full(1000, 0.1))
    q = logmaker.quality_of(tmp_path, main=main)
    assert _cov(q)["fa_rot_tau"] == (True, 0.0, 0.0)
    assert [c.column for c in q.coverage.not_analysed] == ["fa_rot_tau"]
    assert q.coverage.analysed_s == pytest.approx(0.998)  # the other channels still say what they show


def test_missing_stream(tmp_path: Path) -> None:
    from bracer.audit.quality import run_quality
    from bracer.protocol.load import load_protocol
    from bracer.protocol.resolve import resolve
    from bracer.session.read import read_session

    res = resolve(load_protocol(logmaker.PROTOCOL).protocol)
    q = run_quality(
        res, read_session(res.protocol, [logmaker.write(logmaker.main_table(), tmp_path / "m.csv")])
    )
    cov = _cov(q)
    assert cov["ua_fx"] == (False, 0.0, 0.0) and cov["fa_fz"] == (False, 0.0, 0.0)
    assert len(q.coverage.not_analysed) == 6
    assert q.coverage.fraction == pytest.approx(1.0)


@pytest.mark.parametrize(
    "sets, expected",
    [
        ([([0.0], [1.0]), ([0.5], [2.0])], 0.5),
        ([([0.0, 2.0], [1.0, 3.0]), ([0.5], [2.5])], 1.0),  # (0.5..1) + (2..2.5)
        ([([0.0], [1.0]), ([1.0], [2.0])], 0.0),  # touching, not overlapping
        ([([0.0, 1.0], [1.0, 2.0])], 2.0),  # one channel, two touching runs
        ([], 0.0),
    ],
)
def test_interval_intersection(sets: list, expected: float) -> None:
    arrays = [(np.array(a, dtype=float), np.array(b, dtype=float)) for a, b in sets]
    assert _intersection(arrays) == pytest.approx(expected)
