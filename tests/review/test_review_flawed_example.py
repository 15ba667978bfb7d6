"""protocols/flawed-example.yaml: loadable, and flagged by every check R101–R107 (a–g)."""

from __future__ import annotations

import pytest
from review_protocols import EXAMPLE, FLAWED, keyset

from bracer.findings import CHECKS, Severity
from bracer.protocol.load import load_protocol
from bracer.review import review

REVIEW_CODES = [f"R10{i}" for i in range(1, 8)]


@pytest.fixture(scope="module")
def flawed():  # type: ignore[no-untyped-def]
    return review(load_protocol(FLAWED), "FX-P01")


def test_every_review_check_is_registered() -> None:
    from bracer.review.checks import MODULES

    assert [m.CHECK.code for m in MODULES] == REVIEW_CODES
    assert all(CHECKS[m.CHECK.code] is m.CHECK for m in MODULES)
    assert len({m.CHECK.name for m in MODULES}) == len(MODULES)


@pytest.mark.parametrize("code", REVIEW_CODES)
def test_flawed_protocol_is_flagged_by_every_check(flawed, code: str) -> None:  # type: ignore[no-untyped-def]
    assert any(f.code == code and f.severity >= Severity.WARNING for f in flawed.findings), code


def test_each_commented_flaw_is_found(flawed) -> None:  # type: ignore[no-untyped-def]
    found = keyset(flawed.findings, Severity.WARNING)
    expected = {
        ("R101", "error", "shoulder_flexion", "torque", None, None),  # no torque channel
        ("R101", "error", "elbow_flexion", "torque", None, "device"),  # declared device torque layer missing
        ("R101", "error", "forearm_strap", "force", None, None),  # no force channel
        ("R101", "warning", None, "trigger", None, None),  # no emergency-stop trigger
        ("R102", "error", "shoulder_flexion", "range", "positive", "planned"),
        ("R102", "error", "shoulder_flexion", "speed", "positive", "planned"),
        ("R102", "warning", "shoulder_flexion", "range", "positive", "mechanical"),  # one layer only
        ("R103", "error", "shoulder_flexion", "stop_time", None, "planned"),
        ("R103", "error", "elbow_flexion", "stop_deceleration", None, None),
        ("R103", "warning", "wrist_flexion", "stopping_distance", "positive", "device"),
        ("R104", "warning", "forearm_strap", "force", None, None),
        ("R104", "warning", "forearm_strap", "pressure", None, None),  # misspelt specific area
        ("R104", "error", "head_rest", "force", None, None),  # transient on skull/forehead
        ("R105", "warning", "hand_grip", "force", None, "planned"),
        ("R105", "warning", "head_rest", "force", None, None),  # no lever arm
        ("R106", "error", "wrist_flexion", None, None, None),  # caution on undeclared layer
        ("R106", "error", "elbow_flexion", None, None, None),  # unjustified loosening
        ("R106", "warning", "shoulder_flexion", "torque", None, "planned"),  # justified loosening
        ("R107", "warning", "grip", "sample_rate", None, None),
    }
    assert expected <= found, sorted(expected - found)


def test_flawed_protocol_lists_the_caution_not_applied(flawed) -> None:  # type: ignore[no-untyped-def]
    fragile = next(r for r in flawed.cautions.sources if r.source == "fragile_skin")
    (change,) = fragile.changes
    assert (change.before, change.after, change.applied) == (200.0, 250.0, False)


def test_flawed_nominal_review_is_flagged_on_every_check_but_cautions() -> None:
    result = review(load_protocol(FLAWED), None)
    flagged = {f.code for f in result.findings if f.severity >= Severity.WARNING}
    assert flagged == set(REVIEW_CODES) - {"R106"}


@pytest.mark.parametrize("participant", [None, "AV-P01", "AV-P02"])
def test_example_protocol_has_no_error(participant: str | None) -> None:
    result = review(load_protocol(EXAMPLE), participant)
    assert [f.message for f in result.findings if f.severity == Severity.ERROR] == []
