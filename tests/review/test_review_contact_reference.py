"""R104 contact limits against ISO/TS 15066:2016 Annex A Table A.2."""

from __future__ import annotations

import pytest
from review_protocols import DELETE, keyset, resolved

from bracer.review.checks import contact_reference


def run(patch=None):  # type: ignore[no-untyped-def]
    return contact_reference.run(resolved(patch))


def rows(result):  # type: ignore[no-untyped-def]
    return {(r.quantity, r.item, r.basis): r for r in result.references}


def test_lower_arm_cuff_at_the_reference_force_has_ratio_one() -> None:
    # ISO/TS 15066:2016 Annex A Table A.2 (transcribed, [C2]): lower arm & wrist quasi-static force 160 N;
    # transient limit 2x the quasi-static one: 320 N.
    result = run({"contacts": {"cuff": {"force": {"quasi_static": "160 N", "transient": "320 N"}}}})
    assert result.findings == ()
    r = rows(result)
    assert r[("force", "quasi_static", "limit")].reference == pytest.approx(160.0)
    assert r[("force", "quasi_static", "limit")].ratio == pytest.approx(1.0)
    assert r[("force", "transient", "limit")].reference == pytest.approx(320.0)
    assert r[("force", "transient", "limit")].ratio == pytest.approx(1.0)


def test_above_the_reference_is_a_warning_with_the_caveat() -> None:
    result = run({"contacts": {"cuff": {"force": {"quasi_static": "176 N", "transient": "75 N"}}}})
    assert keyset(result.findings) == {("R104", "warning", "cuff", "force", None, None)}
    (f,) = result.findings
    assert dict(f.extra)["ratio"] == pytest.approx(1.1)
    assert "healthy adults" in f.message and "not clinical limits" in f.message


def test_pressure_reference_of_the_specific_area_and_force_over_area() -> None:
    # Table A.2 ([C2]): forearm muscle 180 N/cm^2, radial bone 190 N/cm^2.
    r = rows(run())
    assert r[("pressure", "quasi_static", "limit")].reference == pytest.approx(180.0)
    assert r[("pressure", "quasi_static", "limit")].ratio == pytest.approx(3 / 180)
    implied = r[("pressure", "quasi_static", "force ÷ area")]
    assert implied.unit == "N/cm^2" and implied.value == pytest.approx(50 / 30)
    assert r[("pressure", "transient", "force ÷ area")].reference == pytest.approx(360.0)
    radial = rows(run({"contacts": {"cuff": {"specific_area": "radial bone"}}}))
    assert radial[("pressure", "quasi_static", "limit")].reference == pytest.approx(190.0)


def test_pressure_limit_in_kpa_is_compared_in_its_own_unit() -> None:
    # 190 N/cm^2 = 1900 kPa (1 N/cm^2 = 10 kPa); a 1900 kPa limit on the radial bone has ratio 1.
    result = run(
        {"contacts": {"cuff": {"specific_area": "radial bone", "pressure": {"quasi_static": "1900 kPa"}}}}
    )
    r = rows(result)[("pressure", "quasi_static", "limit")]
    assert r.unit == "kPa" and r.reference == pytest.approx(1900.0) and r.ratio == pytest.approx(1.0)


def test_no_specific_area_uses_the_lowest_of_the_region() -> None:
    # Hand & fingers ([C2]): lowest pressure is the back of the non-dominant hand, 190 N/cm^2; force 140 N.
    result = run({"contacts": {"cuff": {"body_region": "hand_fingers", "specific_area": DELETE}}})
    assert keyset(result.findings) == {("R104", "info", "cuff", "pressure", None, None)}
    assert "conservative" in result.findings[0].message
    r = rows(result)
    assert r[("pressure", "quasi_static", "limit")].reference == pytest.approx(190.0)
    assert r[("force", "quasi_static", "limit")].reference == pytest.approx(140.0)


def test_unknown_specific_area_is_a_warning_with_did_you_mean() -> None:
    result = run({"contacts": {"cuff": {"specific_area": "forarm muscle"}}})
    assert keyset(result.findings) == {("R104", "warning", "cuff", "pressure", None, None)}
    assert "did you mean 'forearm muscle'" in result.findings[0].message


def test_transient_limit_where_transient_contact_is_not_permissible() -> None:
    # Annex A ([C2]): no transient contact for face and skull/forehead (transient factor 0).
    result = run(
        {
            "contacts": {
                "cuff": {
                    "body_region": "face",
                    "specific_area": "masticatory muscle",
                    "force": {"quasi_static": "30 N", "transient": "40 N"},
                    "pressure": {"quasi_static": "3 N/cm^2"},
                }
            }
        }
    )
    assert keyset(result.findings) == {("R104", "error", "cuff", "force", None, None)}
    r = rows(result)
    assert r[("force", "transient", "limit")].ratio is None
    # Table A.2 ([C2]): face, masticatory muscle: 65 N, 110 N/cm^2.
    assert r[("force", "quasi_static", "limit")].reference == pytest.approx(65.0)
    assert r[("pressure", "quasi_static", "limit")].reference == pytest.approx(110.0)


def test_region_without_a_row_is_info_no_reference() -> None:
    result = run({"contacts": {"cuff": {"body_region": "abdomen", "specific_area": DELETE}}})
    assert keyset(result.findings) == {("R104", "info", "cuff", "force", None, None)}
    assert "no reference value" in result.findings[0].message
    assert result.references == ()


def test_upper_arm_deltoid_values() -> None:
    # Table A.2 ([C2]): upper arm & elbow, deltoid muscle: 150 N, 190 N/cm^2.
    r = rows(
        run(
            {
                "contacts": {
                    "cuff": {
                        "body_region": "upper_arm_elbow",
                        "specific_area": "deltoid muscle",
                        "force": {"quasi_static": "150 N", "transient": "75 N"},
                    }
                }
            }
        )
    )
    assert r[("force", "quasi_static", "limit")].ratio == pytest.approx(1.0)
    assert r[("pressure", "quasi_static", "limit")].reference == pytest.approx(190.0)
