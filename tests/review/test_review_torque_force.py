"""R105 torque against contact force: F = τ / r against the contact's quasi-static force limit."""

from __future__ import annotations

import pytest
from review_protocols import DELETE, keyset, resolved

from bracer.review.checks import torque_force


def run(patch=None):  # type: ignore[no-untyped-def]
    return torque_force.run(resolved(patch))


def test_torques_within_the_force_limit() -> None:
    result = run()
    assert result.findings == ()
    by_layer = {r.layer: r for r in result.pressing}
    # 5 N*m / 0.2 m = 25 N and 8 N*m / 0.2 m = 40 N against 50 N (torque ÷ lever arm, statics).
    assert by_layer["planned"].force == pytest.approx(25.0) and by_layer["planned"].ratio == pytest.approx(
        0.5
    )
    assert by_layer["device"].force == pytest.approx(40.0)
    assert {r.status for r in result.pressing} == {"within the force limit"}


def test_actuator_that_can_exceed_the_force_limit() -> None:
    result = run({"joints": {"elbow": {"torque": {"planned": "12 N*m", "device": "15 N*m"}}}})
    assert keyset(result.findings) == {
        ("R105", "warning", "cuff", "force", None, "planned"),
        ("R105", "warning", "cuff", "force", None, "device"),
    }
    assert all("depends on force sensing alone" in f.message for f in result.findings)
    planned = next(f for f in result.findings if f.layer == "planned")
    assert planned.peak == pytest.approx(60.0) and planned.limit == 50.0 and planned.unit == "N"


def test_lever_arm_in_cm_and_the_larger_direction() -> None:
    # 11 N*m / 20 cm = 55 N in the positive direction (the larger one) > 50 N.
    result = run(
        {
            "contacts": {"cuff": {"lever_arms": {"elbow": "20 cm"}}},
            "joints": {
                "elbow": {
                    "torque": {"planned": {"positive": "11 N*m", "negative": "4 N*m"}, "device": "12 N*m"}
                }
            },
        }
    )
    planned = next(r for r in result.pressing if r.layer == "planned")
    assert (planned.direction, planned.length_unit) == ("positive", "cm")
    assert planned.force == pytest.approx(55.0)
    assert keyset(result.findings) == {
        ("R105", "warning", "cuff", "force", "positive", "planned"),
        ("R105", "warning", "cuff", "force", None, "device"),
    }


def test_not_modelled_lever_arm_is_listed() -> None:
    result = run({"contacts": {"cuff": {"lever_arms": {"elbow": "not modelled"}}}})
    assert keyset(result.findings) == {("R105", "info", "cuff", "force", None, None)}
    (row,) = result.pressing
    assert row.status == "not modelled" and row.force is None


def test_contact_without_lever_arms_is_a_warning() -> None:
    result = run({"contacts": {"cuff": {"lever_arms": {"elbow": DELETE}}}})
    assert keyset(result.findings) == {("R105", "warning", "cuff", "force", None, None)}
    assert result.pressing == ()


def test_joint_without_torque_limits_is_a_warning() -> None:
    result = run(
        {
            "device": {"layers": {"torque": []}},
            "joints": {
                "elbow": {"torque": {"planned": DELETE, "device": DELETE}, "channels": {"torque": DELETE}}
            },
        }
    )
    assert keyset(result.findings) == {("R105", "warning", "cuff", "force", None, None)}
    assert result.pressing[0].status == "no torque limit"
