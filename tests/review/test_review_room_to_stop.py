"""R103 room to stop: stopping distance/time against rooms and budget, on closed-form numbers."""

from __future__ import annotations

import pytest
from review_protocols import DELETE, keyset, resolved

from bracer.review.checks import room_to_stop

# The kinematics example of REFERENCES.md ([V]: d = v·t_r + v²/(2a), t = t_r + v/a), as a joint's angular
# analogue:
# v = 0.5 rad/s, a = 2 rad/s^2, t_r = 50 ms -> d = 0.0875 rad, t = 300 ms.
KINEMATICS = {
    "joints": {
        "elbow": {
            "range": {
                "planned": {"min": "0.5 rad", "max": "2.0 rad"},
                "device": {"min": "0.4 rad", "max": "2.1 rad"},
                "mechanical": {"min": "0.3 rad", "max": "2.2 rad"},
            },
            "speed": {"planned": "0.5 rad/s", "device": "1 rad/s"},
            "stop_deceleration": "2 rad/s^2",
        }
    },
    "stop": {"reaction_time": "50 ms", "latency_budget": "350 ms"},
}


def run(patch=None, participant="P1"):  # type: ignore[no-untyped-def]
    return room_to_stop.run(resolved(patch, participant))


def test_kinematics_example_in_rad() -> None:
    result = run(KINEMATICS)
    assert result.findings == ()
    row = next(r for r in result.stops if r.direction == "positive")
    assert row.distance_unit == "rad" and row.distance == pytest.approx(0.0875)
    assert row.time_unit == "ms" and row.stop_time == pytest.approx(300.0)
    assert row.reaction_time == pytest.approx(50.0)
    assert row.room_outer == pytest.approx(0.1) and row.fits_outer is True
    # Largest speed within the room: a(−t + √(t² + 2·room/a)) = 2(−0.05 + √(0.0025 + 0.1)) = 0.540312 rad/s.
    assert row.largest_speed_outer == pytest.approx(2 * (-0.05 + (0.0025 + 0.1) ** 0.5))
    # Largest speed within the 350 ms budget: a(budget − t_r) = 2 · 0.3 = 0.6 rad/s.
    assert row.largest_speed_budget == pytest.approx(0.6)


def test_inverse_on_the_kinematics_example() -> None:
    # Room exactly 87.5 mrad -> the largest speed is the example's 0.5 rad/s (REFERENCES.md inverse, [V]).
    patch = {
        "joints": {
            "elbow": {
                **KINEMATICS["joints"]["elbow"],
                "range": {
                    "planned": {"min": "0.5 rad", "max": "2.0 rad"},
                    "device": {"min": "0.4 rad", "max": "2.0875 rad"},
                    "mechanical": {"min": "0.3 rad", "max": "2.2 rad"},
                },
            }
        },
        "stop": KINEMATICS["stop"],
    }
    row = next(r for r in run(patch).stops if r.direction == "positive")
    assert row.largest_speed_outer == pytest.approx(0.5, rel=1e-9)


def test_budget_shorter_than_stopping_time_is_an_error() -> None:
    # Same example, 250 ms budget: 300 ms > 250 ms; largest speed within it 2·(0.25 − 0.05) = 0.4 rad/s.
    patch = {**KINEMATICS, "stop": {"reaction_time": "50 ms", "latency_budget": "250 ms"}}
    result = run(patch)
    assert keyset(result.findings) == {("R103", "error", "elbow", "stop_time", None, "planned")}
    (f,) = result.findings
    assert f.peak == pytest.approx(300.0) and f.limit == pytest.approx(250.0) and f.unit == "ms"
    assert "0.4 rad/s" in f.message


def test_asymmetric_speeds_give_one_time_finding_per_direction() -> None:
    patch = {
        **KINEMATICS,
        "stop": {"reaction_time": "50 ms", "latency_budget": "250 ms"},
        "joints": {
            "elbow": {
                **KINEMATICS["joints"]["elbow"],
                "speed": {
                    "planned": {"positive": "0.5 rad/s", "negative": "0.45 rad/s"},
                    "device": "1 rad/s",
                },
            }
        },
    }
    assert keyset(run(patch).findings) == {
        ("R103", "error", "elbow", "stop_time", "positive", "planned"),
        ("R103", "error", "elbow", "stop_time", "negative", "planned"),
    }


def test_not_enough_room_to_the_device_limit_is_a_warning() -> None:
    # 30 deg/s, 30 ms, 1000 deg/s^2 -> d = 0.9 + 0.45 = 1.35 deg; room 1 deg to the device limit.
    patch = {"joints": {"elbow": {"range": {"device": {"max": "121 deg"}}}}}
    result = run(patch)
    assert keyset(result.findings) == {
        ("R103", "warning", "elbow", "stopping_distance", "positive", "device")
    }
    (f,) = result.findings
    assert f.peak == pytest.approx(1.35) and f.limit == pytest.approx(1.0) and f.unit == "deg"


def test_not_enough_room_to_measured_range_is_an_error_normative_a_warning() -> None:
    measured = run({"participants": {"P1": {"rom": {"elbow": {"max": "121 deg"}}}}})
    assert ("R103", "error", "elbow", "stopping_distance", "positive", "participant") in keyset(
        measured.findings
    )
    # Nominal: elbow flexion 150 deg (AAOS, [C2]); planned max 149 deg leaves 1 deg.
    nominal = run(
        {
            "joints": {
                "elbow": {
                    "range": {
                        "planned": {"max": "149 deg"},
                        "device": {"max": "151 deg"},
                        "mechanical": {"max": "155 deg"},
                    }
                }
            }
        },
        participant=None,
    )
    assert keyset(nominal.findings) == {
        ("R103", "warning", "elbow", "stopping_distance", "positive", "participant")
    }


def test_missing_deceleration_is_a_finding_not_a_crash() -> None:
    result = run({"joints": {"elbow": {"stop_deceleration": DELETE}}})
    assert keyset(result.findings) == {("R103", "error", "elbow", "stop_deceleration", None, None)}
    assert result.stops == ()


def test_no_stop_function() -> None:
    result = run({"stop": DELETE})
    assert keyset(result.findings) == {("R103", "error", None, "stop", None, None)}


def test_device_speed_stands_in_for_a_missing_planned_speed() -> None:
    result = run(
        {"device": {"layers": {"speed": ["device"]}}, "joints": {"elbow": {"speed": {"planned": DELETE}}}}
    )
    assert result.findings == ()
    assert {r.speed_layer for r in result.stops} == {"device"}
    assert result.stops[0].speed == 60.0


def test_planned_beyond_the_device_limit_has_no_room_at_all() -> None:
    result = run({"joints": {"elbow": {"range": {"planned": {"max": "132 deg"}}}}})
    row = next(r for r in result.stops if r.direction == "positive")
    assert (
        row.room_outer == pytest.approx(-2.0) and row.fits_outer is False and row.largest_speed_outer is None
    )
    assert ("R103", "warning", "elbow", "stopping_distance", "positive", "device") in keyset(result.findings)
