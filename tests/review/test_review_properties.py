"""Properties of the review: tightening a planned limit never adds a finding."""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st
from review_protocols import keyset, resolved

from bracer.findings import Severity
from bracer.review import run_checks

SETTINGS = settings(max_examples=40, deadline=None)


def flagged(patch: dict) -> set:  # type: ignore[type-arg]
    return keyset(run_checks(resolved(patch)).findings, Severity.WARNING)


def _speed(v: float) -> dict:  # type: ignore[type-arg]
    return {
        "joints": {
            "elbow": {
                "speed": {"planned": f"{v!r} deg/s", "device": "400 deg/s"},
                "range": {"device": {"max": "122 deg"}},
            }
        }
    }


@SETTINGS
@given(v=st.floats(1.0, 399.0), scale=st.floats(0.05, 1.0))
def test_a_slower_planned_speed_never_adds_a_finding(v: float, scale: float) -> None:
    assert flagged(_speed(v * scale)) <= flagged(_speed(v))


@SETTINGS
@given(inward=st.floats(0.0, 9.0), lo=st.floats(-20.0, 40.0), hi=st.floats(100.0, 160.0))
def test_moving_the_planned_range_inward_never_adds_a_finding(inward: float, lo: float, hi: float) -> None:
    def patch(a: float, b: float) -> dict:  # type: ignore[type-arg]
        return {"joints": {"elbow": {"range": {"planned": {"min": f"{a!r} deg", "max": f"{b!r} deg"}}}}}

    assert flagged(patch(lo + inward, hi - inward)) <= flagged(patch(lo, hi))


@SETTINGS
@given(force=st.floats(1.0, 500.0), scale=st.floats(0.05, 1.0))
def test_a_lower_force_limit_never_adds_a_contact_finding(force: float, scale: float) -> None:
    def patch(f: float) -> dict:  # type: ignore[type-arg]
        return {"contacts": {"cuff": {"force": {"quasi_static": f"{f!r} N", "transient": f"{2 * f!r} N"}}}}

    def contact(f: float) -> set:  # type: ignore[type-arg]
        return {k for k in flagged(patch(f)) if k[0] == "R104"}

    assert contact(force * scale) <= contact(force)
