"""The matching rule itself can fail: the demo's own audit records, altered in one place each, no longer match
their ground truth (a test of the end-to-end test)."""

from __future__ import annotations

import copy
from collections.abc import Callable
from typing import Any

import pytest
from e2ekit import DemoRun, Session, match

Findings = list[dict[str, Any]]


def _first(findings: Findings, code: str) -> dict[str, Any]:
    return next(f for f in findings if f["code"] == code)


def _shift_start(findings: Findings) -> None:
    # 20 ms later than the logged crossing: beyond one sample plus the sensor's crossing spread
    _first(findings, "A101")["t_start"] += 0.020


def _loosen_limit(findings: Findings) -> None:
    # the nominal 90 deg/s instead of the 45 deg/s the spasticity caution sets
    _first(findings, "A102")["limit"] = 90.0


def _raise_force_peak(findings: Findings) -> None:
    _first(findings, "A111")["peak"] += 2.0  # N, beyond the force sensor's error


def _slow_latency(findings: Findings) -> None:
    _first(findings, "A201")["peak"] += 2.0  # ms: two samples at 1 kHz


def _spurious_distance_warning(findings: Findings) -> None:
    _first(findings, "A203")["severity"] = "warning"  # an exact stop flagged as too long


def _drop_gap(findings: Findings) -> None:
    findings.remove(_first(findings, "Q104"))


def _extra_near_miss(findings: Findings) -> None:
    extra = copy.deepcopy(_first(findings, "A121"))
    extra["t_start"] += 30.0
    extra["t_end"] += 30.0
    findings.append(extra)


CASES: list[tuple[str, str, Callable[[Findings], None]]] = [
    ("AV-P01", "S1", _shift_start),
    ("AV-P01", "S1", _loosen_limit),
    ("AV-P02", "S1", _raise_force_peak),
    ("AV-P02", "S2", _slow_latency),
    ("AV-P02", "S2", _spurious_distance_warning),
    ("AV-P02", "S2", _drop_gap),
    ("AV-P02", "S1", _extra_near_miss),
]


@pytest.mark.parametrize(("participant", "session", "change"), CASES, ids=[c[2].__name__[1:] for c in CASES])
def test_an_altered_record_does_not_match(
    demo_run: DemoRun, participant: str, session: str, change: Callable[[Findings], None]
) -> None:
    assert demo_run.exit_code == 0, demo_run.output
    folder = (demo_run.folder / demo_run.session(participant, session)["truth"]).parent
    s = Session.load(folder)
    assert match(s) == ([], [])  # unaltered: it matches
    change(s.audit["findings"])
    problems, left_over = match(s)
    assert problems or left_over
