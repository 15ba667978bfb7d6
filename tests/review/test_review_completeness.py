"""R101 completeness: exact findings for one missing element at a time."""

from __future__ import annotations

from review_protocols import DELETE, keyset, resolved

from bracer.review.checks import completeness


def run(patch=None, participant="P1"):  # type: ignore[no-untyped-def]
    return completeness.run(resolved(patch, participant))


def test_complete_protocol_has_no_finding_and_lists_what_it_has() -> None:
    result = run()
    assert result.findings == ()
    status = {(r.subject, r.item): r.status for r in result.requirements}
    assert status[("elbow", "range.mechanical")] == "present"
    assert status[("elbow", "channel.torque")] == "present"
    assert status[("cuff", "channel.pressure")] == "derived"
    assert status[(None, "stop function")] == "present"
    assert status[(None, "trigger.protective_stop")] == "not declared"


def test_missing_declared_layer_is_an_error() -> None:
    result = run({"joints": {"elbow": {"torque": {"device": DELETE}}}})
    assert keyset(result.findings) == {("R101", "error", "elbow", "torque", None, "device")}


def test_limit_in_an_undeclared_layer_is_info() -> None:
    result = run({"joints": {"elbow": {"speed": {"mechanical": "90 deg/s"}}}})
    assert keyset(result.findings) == {("R101", "info", "elbow", "speed", None, "mechanical")}


def test_layers_follow_device_layers_declaration() -> None:
    # With only planned and device declared for range, a missing mechanical stop is complete.
    result = run(
        {
            "device": {"layers": {"range": ["planned", "device"]}},
            "joints": {"elbow": {"range": {"mechanical": DELETE}}},
        }
    )
    assert result.findings == ()


def test_missing_torque_channel() -> None:
    result = run({"joints": {"elbow": {"channels": {"torque": DELETE}}}})
    assert keyset(result.findings) == {("R101", "error", "elbow", "torque", None, None)}


def test_speed_derived_from_position_is_not_a_finding() -> None:
    result = run({"joints": {"elbow": {"channels": {"velocity": DELETE}}}})
    assert result.findings == ()
    row = next(r for r in result.requirements if r.item == "channel.velocity")
    assert row.status == "derived" and "elb_pos" in row.detail


def test_no_position_and_no_velocity() -> None:
    result = run({"joints": {"elbow": {"channels": {"velocity": DELETE, "position": DELETE}}}})
    assert keyset(result.findings) == {
        ("R101", "error", "elbow", "position", None, None),
        ("R101", "error", "elbow", "speed", None, None),
    }


def test_acceleration_limit_needs_something_to_derive_from() -> None:
    patch = {
        "device": {"layers": {"acceleration": ["planned"]}},
        "joints": {"elbow": {"acceleration": {"planned": "500 deg/s^2"}}},
    }
    assert run(patch).findings == ()
    patch["joints"]["elbow"]["channels"] = {"velocity": DELETE, "position": DELETE}  # type: ignore[index]
    assert ("R101", "error", "elbow", "acceleration", None, None) in keyset(run(patch).findings)


def test_contact_without_force_channel() -> None:
    result = run({"contacts": {"cuff": {"channels": {"force": DELETE}}}})
    assert keyset(result.findings) == {("R101", "error", "cuff", "force", None, None)}
    status = {r.item: r.status for r in result.requirements if r.subject == "cuff"}
    assert status["channel.pressure"] == "missing"


def test_contact_without_pressure_and_sustained_limits_is_info() -> None:
    result = run({"contacts": {"cuff": {"pressure": DELETE, "sustained": DELETE}}})
    assert keyset(result.findings) == {
        ("R101", "info", "cuff", "pressure", None, None),
        ("R101", "info", "cuff", "sustained", None, None),
    }


def test_no_stop_function() -> None:
    result = run({"stop": DELETE})
    assert keyset(result.findings) == {("R101", "error", None, "stop", None, None)}


def test_triggers() -> None:
    none = run({"logging": {"triggers": DELETE}})
    assert keyset(none.findings) == {("R101", "error", None, "trigger", None, None)}
    protective_only = run(
        {
            "logging": {
                "triggers": {"emergency_stop": DELETE, "protective_stop": {"column": "p", "active": [1]}}
            }
        }
    )
    assert keyset(protective_only.findings) == {("R101", "warning", None, "trigger", None, None)}
