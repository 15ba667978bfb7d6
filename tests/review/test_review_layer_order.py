"""R102 layer order and protection layers: exact findings and margins in the limit's unit."""

from __future__ import annotations

import math

import pytest
from review_protocols import DELETE, keyset, resolved

from bracer.findings import Severity
from bracer.review.checks import layer_order


def run(patch=None, participant="P1"):  # type: ignore[no-untyped-def]
    return layer_order.run(resolved(patch, participant))


def test_consistent_layers_no_finding_and_margins() -> None:
    result = run()
    assert result.findings == ()
    m = {(r.quantity, r.direction, r.inner, r.outer): r for r in result.margins}
    assert m[("range", "positive", "planned", "device")].margin == pytest.approx(10.0)
    assert m[("range", "negative", "planned", "device")].margin == pytest.approx(10.0)  # 20 deg inside 10 deg
    assert m[("range", "negative", "device", "mechanical")].margin == pytest.approx(5.0)
    assert m[("range", "positive", "planned", "participant")].margin == pytest.approx(25.0)
    assert m[("speed", "positive", "planned", "device")].unit == "deg/s"
    assert {p.layers for p in result.protection} == {"controller and mechanical stop"}


def test_planned_beyond_device_is_an_error_with_negative_margin() -> None:
    result = run({"joints": {"elbow": {"range": {"planned": {"max": "135 deg"}}}}})
    assert keyset(result.findings) == {("R102", "error", "elbow", "range", "positive", "planned")}
    (f,) = result.findings
    assert (f.peak, f.limit, f.margin, f.unit) == (135.0, 130.0, -5.0, "deg")


def test_speed_and_torque_layers() -> None:
    result = run(
        {
            "joints": {
                "elbow": {
                    "speed": {"planned": "70 deg/s"},
                    "torque": {"planned": {"positive": "9 N*m", "negative": "4 N*m"}},
                }
            }
        }
    )
    assert keyset(result.findings) == {
        ("R102", "error", "elbow", "speed", "positive", "planned"),
        ("R102", "error", "elbow", "speed", "negative", "planned"),
        ("R102", "error", "elbow", "torque", "positive", "planned"),
    }


def test_margin_in_the_unit_of_the_inner_limit() -> None:
    # planned max 2 rad against device max 130 deg: margin 130·π/180 − 2 = 0.26893 rad, reported in rad.
    result = run({"joints": {"elbow": {"range": {"planned": {"min": "0.4 rad", "max": "2 rad"}}}}})
    row = next(
        r
        for r in result.margins
        if (r.quantity, r.direction, r.inner, r.outer) == ("range", "positive", "planned", "device")
    )
    assert row.unit == "rad"
    assert row.margin == pytest.approx(math.radians(130) - 2.0)


def test_mechanical_beyond_measured_range_is_one_layer_only() -> None:
    result = run({"participants": {"P1": {"rom": {"elbow": {"min": "8 deg", "max": "135 deg"}}}}})
    assert keyset(result.findings) == {
        ("R102", "warning", "elbow", "range", "positive", "mechanical"),
        ("R102", "warning", "elbow", "range", "negative", "mechanical"),
    }
    assert all("one layer of protection only" in f.message for f in result.findings)
    prot = {p.direction: p for p in result.protection}
    assert prot["positive"].layers == "controller only"
    assert prot["positive"].mechanical_beyond == pytest.approx(5.0)
    assert prot["negative"].mechanical_beyond == pytest.approx(3.0)


def test_no_mechanical_stop_is_one_layer_only() -> None:
    result = run(
        {
            "device": {"layers": {"range": ["planned", "device"]}},
            "joints": {"elbow": {"range": {"mechanical": DELETE}}},
        }
    )
    assert keyset(result.findings) == {
        ("R102", "warning", "elbow", "range", "positive", "mechanical"),
        ("R102", "warning", "elbow", "range", "negative", "mechanical"),
    }
    assert all("no mechanical end stop" in f.message for f in result.findings)


def test_planned_beyond_measured_range_is_an_error() -> None:
    result = run({"participants": {"P1": {"rom": {"elbow": {"min": "0 deg", "max": "110 deg"}}}}})
    codes = keyset(result.findings)
    assert ("R102", "error", "elbow", "range", "positive", "planned") in codes
    assert ("R102", "warning", "elbow", "range", "positive", "mechanical") in codes
    assert len(codes) == 2


def test_nominal_review_uses_the_normative_reference_with_a_warning() -> None:
    result = run(participant=None)
    assert keyset(result.findings) == {("R102", "warning", "elbow", "range", None, "participant")}
    assert "normative" in result.findings[0].message
    # AAOS (Norkin & White appendix, [C2]): elbow flexion 150 deg, extension 0 deg.
    prot = {p.direction: p for p in result.protection}
    assert prot["positive"].participant == pytest.approx(150.0) and prot["positive"].source == "normative"
    assert prot["negative"].participant == pytest.approx(0.0)


def test_planned_beyond_normative_range_is_a_warning() -> None:
    patch = {
        "joints": {
            "elbow": {
                "range": {
                    "planned": {"max": "155 deg"},
                    "device": {"max": "156 deg"},
                    "mechanical": {"max": "160 deg"},
                }
            }
        }
    }
    result = run(patch, participant=None)
    beyond = [f for f in result.findings if f.layer == "planned"]
    assert [(f.severity, f.direction) for f in beyond] == [(Severity.WARNING, "positive")]


def test_direction_without_any_participant_range() -> None:
    result = run({"joints": {"elbow": {"reference": {"negative": DELETE}}}}, participant=None)
    assert keyset(result.findings) == {
        ("R102", "warning", "elbow", "range", "negative", "participant"),
        ("R102", "warning", "elbow", "range", None, "participant"),
    }
    prot = {p.direction: p for p in result.protection}
    assert prot["negative"].layers == "not assessable"
