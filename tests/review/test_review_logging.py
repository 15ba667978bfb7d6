"""R107 logging adequacy: at least 10 samples inside the stop-latency budget (common practice, no source)."""

from __future__ import annotations

import pytest
from review_protocols import DELETE, keyset, resolved

from bracer.review.checks import logging_rate


def run(patch=None):  # type: ignore[no-untyped-def]
    return logging_rate.run(resolved(patch))


def test_fast_stream_is_adequate() -> None:
    result = run()
    assert result.findings == ()
    (row,) = result.streams
    # 1000 Hz × 300 ms = 300 samples; 10 samples in 300 ms need 33.3 Hz.
    assert row.samples_in_budget == pytest.approx(300.0)
    assert row.required_rate == pytest.approx(10 / 0.3)
    assert row.channels == 5  # elbow position, velocity, torque; cuff force; emergency-stop trigger


@pytest.mark.parametrize(
    ("rate", "budget", "flagged"),
    [
        ("30 Hz", "300 ms", True),  # 9 samples
        ("34 Hz", "300 ms", False),  # 10.2 samples
        ("50 Hz", "200 ms", False),  # exactly 10 samples: enough
        ("45 Hz", "200 ms", True),  # 9 samples
        ("0.04 kHz", "0.25 s", False),  # 10 samples, other units
    ],
)
def test_ten_samples_rule(rate: str, budget: str, flagged: bool) -> None:
    result = run(
        {"logging": {"streams": {"main": {"sample_rate": rate}}}, "stop": {"latency_budget": budget}}
    )
    expected = {("R107", "warning", "main", "sample_rate", None, None)} if flagged else set()
    assert keyset(result.findings) == expected


def test_stream_without_channels_is_info() -> None:
    result = run({"logging": {"streams": {"spare": {"time": {"column": "t2"}, "sample_rate": "100 Hz"}}}})
    assert keyset(result.findings) == {("R107", "info", "spare", "sample_rate", None, None)}


def test_no_stop_function_is_not_assessable() -> None:
    result = run({"stop": DELETE})
    assert keyset(result.findings) == {("R107", "warning", None, "sample_rate", None, None)}
    assert result.streams[0].samples_in_budget is None
