"""The document's parts on small hand-built records: the summary's careful wording, what was not analysed, the
stops table and the candidate incidents.  Records are built in code with the fields the audit writes."""

from __future__ import annotations

from typing import Any

import pytest

from bracer.report.build import finding_rows
from bracer.report.classes import Declared, class_of, summarise_classes
from bracer.report.incidents import candidate_incidents
from bracer.report.stops import stop_rows

ALL_CLASSES = frozenset(
    {"range", "speed", "torque", "force", "pressure", "sustained", "stops", "locked", "protections"}
)


def finding(code: str, kind: str, **fields: Any) -> dict[str, Any]:
    base: dict[str, Any] = {
        "code": code,
        "name": "x",
        "severity": "error" if kind == "violation" else "info",
        "kind": kind,
        "message": f"{code} {kind}",
        "extra": {},
    }
    base.update(fields)
    return base


def channel(column: str, role: str, subject: str, fraction: float, present: bool = True) -> dict[str, Any]:
    return {
        "stream": "main",
        "column": column,
        "role": role,
        "subject": subject,
        "present": present,
        "analysed_s": 100.0 * fraction,
        "fraction": fraction,
    }


def audit(
    findings: list[dict[str, Any]], channels: list[dict[str, Any]], limit_checks: bool = True
) -> dict[str, Any]:
    return {
        "findings": findings,
        "coverage": {"channels": channels, "fraction": 0.997, "session_s": 100.0},
        "checks": {"limit_checks_available": limit_checks},
    }


CHANNELS = [
    channel("elb_pos", "position", "elbow", 0.999),
    channel("elb_vel", "velocity", "elbow", 0.997),
    channel("elb_tau", "torque", "elbow", 0.95),
    channel("ua_f", "force", "cuff", 0.9971),
    channel("estop", "trigger", "emergency_stop", 1.0),
    channel("soft", "protection", "soft_limits", 1.0),
]


def summary(
    findings: list[dict[str, Any]],
    channels: list[dict[str, Any]] = CHANNELS,
    declared: frozenset[str] | None = ALL_CLASSES,
    **kw: Any,
) -> dict[str, Any]:
    rows = finding_rows(findings)
    out = summarise_classes(
        rows, audit(findings, channels, **kw), Declared(declared, frozenset({"elbow"}), frozenset())
    )
    return {c.key: c for c in out}


def test_no_exceedance_is_worded_with_the_analysed_share() -> None:
    s = summary([])
    assert (
        s["range"].statement == "no exceedance found in the analysed data (analysed: 99.9 % of session time)"
    )
    # the share is the least-covered channel's, rounded down: 0.9971 reads 99.7 %, never 99.8 %
    assert (
        s["force"].statement == "no exceedance found in the analysed data (analysed: 99.7 % of session time)"
    )
    assert s["torque"].statement.endswith("(analysed: 95.0 % of session time)")
    assert s["stops"].statement == "no stop requested in the analysed data (analysed: 99.7 % of session time)"


def test_exceedances_and_near_misses_are_counted_per_class() -> None:
    s = summary(
        [
            finding("A101", "violation", subject="elbow", quantity="position"),
            finding("A121", "near_miss", subject="elbow", quantity="position"),
            finding("A121", "near_miss", subject="cuff", quantity="force"),
            finding("A111", "violation", subject="cuff", quantity="force"),
            finding("A111", "violation", subject="cuff", quantity="force"),
        ]
    )
    assert (s["range"].violations, s["range"].near_misses) == (1, 1)
    assert s["range"].statement.startswith("1 exceedance found in the analysed data (analysed: 99.9 %")
    assert s["range"].statement.endswith("; 1 near miss")
    assert s["force"].statement.startswith("2 exceedances found")
    assert s["force"].refs == ("F3", "F4", "F5")


def test_a_missing_channel_is_named_with_its_reason() -> None:
    channels = [*CHANNELS[:2], channel("elb_tau", "torque", "elbow", 0.0, present=False), *CHANNELS[3:]]
    s = summary(
        [
            finding(
                "A103",
                "not_assessable",
                subject="elbow",
                quantity="torque",
                message="torque limits of joint 'elbow' not assessable: column 'elb_tau' is not in the log.",
            )
        ],
        channels,
    )
    torque = s["torque"]
    assert (
        torque.statement
        == "not analysed: no channel of this class could be analysed; 1 part(s) not assessable (F1)"
    )
    assert torque.not_analysed[0] == "column 'elb_tau' (joint 'elbow' torque, stream 'main'): not in the log"
    assert "F1: torque limits of joint 'elbow' not assessable" in torque.not_analysed[1]


def test_a_class_the_protocol_does_not_declare_is_not_analysed() -> None:
    s = summary([], declared=ALL_CLASSES - {"pressure"})
    assert s["pressure"].statement == "not analysed: the protocol declares no limit of this class"
    assert s["pressure"].not_analysed == ("the protocol declares no limit of this class",)


def test_without_limit_checks_no_class_claims_anything() -> None:
    s = summary([], limit_checks=False)
    for key in ALL_CLASSES:
        assert s[key].statement.startswith("not analysed: the limit checks did not run"), key


def test_a_failed_check_makes_its_class_not_assessable() -> None:
    rows = finding_rows([finding("Q199", "not_assessable", extra={"check": "A102"})])
    assert class_of(rows[0]) == "speed"
    s = summary([finding("Q199", "not_assessable", extra={"check": "A102"})])
    assert "not assessable (F1)" in s["speed"].statement


def test_stop_findings_make_one_row_per_trigger() -> None:
    t = 10.0
    rows = finding_rows(
        [
            finding(
                "A201",
                "violation",
                t_start=t,
                t_end=t + 0.39,
                peak=390.0,
                limit=300.0,
                margin=-90.0,
                unit="ms",
                extra={"trigger": "protective_stop", "trigger_label": "protective stop"},
            ),
            finding(
                "A202",
                "stop",
                t_start=t,
                peak=350.0,
                limit=400.0,
                margin=50.0,
                unit="ms",
                extra={"trigger": "protective_stop"},
            ),
            finding(
                "A203",
                "stop",
                subject="elbow",
                t_start=t,
                peak=9.9,
                limit=1.2,
                unit="deg",
                extra={"trigger": "protective_stop", "speed_at_trigger": 27.0, "speed_unit": "deg/s"},
            ),
            finding("A204", "stop", t_start=t, extra={"trigger": "protective_stop", "category": 1}),
            finding(
                "A201",
                "stop",
                t_start=20.0,
                t_end=20.07,
                peak=70.0,
                limit=300.0,
                margin=230.0,
                unit="ms",
                extra={"trigger": "emergency_stop", "trigger_label": "emergency stop"},
            ),
        ]
    )
    s1, s2 = stop_rows(rows)
    assert (s1.ref, s1.label, s1.t_standstill) == ("S1", "protective stop", pytest.approx(10.39))
    assert s1.latency_status == "over budget by 90 ms"
    assert s1.torque_status == "within budget"
    assert s1.category_status == "consistent with category 1"
    assert [(j.joint, j.distance, j.predicted) for j in s1.joints] == [("elbow", 9.9, 1.2)]
    assert s1.refs == ("F1", "F2", "F3", "F4") and s1.outside
    assert s2.torque_status.startswith("not assessed") and not s2.outside


@pytest.mark.parametrize(
    ("record", "categories"),
    [
        (
            finding("A111", "violation", subject="cuff", peak=104.3, limit=90.0, unit="N"),
            ("adverse event", "device deficiency"),
        ),
        (finding("A113", "violation", subject="cuff"), ("adverse event", "device deficiency")),
        (
            finding("A101", "violation", subject="elbow", layer="participant"),
            ("adverse event", "device deficiency"),
        ),
        (finding("A101", "violation", subject="elbow", layer="planned"), ("device deficiency",)),
        (finding("A102", "violation", subject="elbow"), ("device deficiency",)),
        (finding("A201", "violation", peak=None), ("device deficiency",)),
        (finding("A302", "violation"), ("device deficiency",)),
        (finding("A121", "near_miss"), None),
        (finding("Q104", "data_quality"), None),
        (finding("A201", "stop"), None),
    ],
)
def test_candidate_incidents_use_the_iso_14155_categories(
    record: dict[str, Any], categories: tuple[str, ...] | None
) -> None:
    # ISO 14155:2020 vocabulary ([C2] in REFERENCES.md): adverse event; device deficiency (incl. malfunction
    # and use error).  A load on the participant over its limit may be both; a device not keeping a limit, the
    # latter.
    incidents = candidate_incidents(finding_rows([record]))
    if categories is None:
        assert incidents == ()
    else:
        (inc,) = incidents
        assert inc.categories == categories and inc.finding == "F1"


def test_contact_force_incident_states_peak_and_limit() -> None:
    (inc,) = candidate_incidents(
        finding_rows(
            [
                finding(
                    "A111",
                    "violation",
                    subject="upper_arm_cuff",
                    peak=104.3,
                    limit=90.0,
                    unit="N",
                    t_start=52.9,
                )
            ]
        )
    )
    assert inc.event == "contact force over its limit on upper_arm_cuff (peak 104.3 N, limit 90 N)"
    assert inc.t == 52.9


def test_the_review_section_shows_the_body_region_reference_values(review_doc) -> None:  # type: ignore[no-untyped-def]
    rows = review_doc.review.contact_references
    refs = {(r.contact, r.limit, r.basis): (r.reference, r.unit) for r in rows}
    # ISO/TS 15066:2016 Annex A Table A.2 (transcribed, [C2]): upper arm and elbow quasi-static force 150 N,
    # deltoid muscle 190 N/cm^2; lower arm and wrist 160 N, forearm muscle 180 N/cm^2; transient twice the
    # quasi-static value.
    assert refs[("upper_arm_cuff", "force quasi-static", "limit")] == (150.0, "N")
    assert refs[("upper_arm_cuff", "force transient", "limit")] == (300.0, "N")
    assert refs[("upper_arm_cuff", "pressure quasi-static", "limit")] == (190.0, "N/cm^2")
    assert refs[("forearm_cuff", "force quasi-static", "limit")] == (160.0, "N")
    assert refs[("forearm_cuff", "pressure quasi-static", "limit")] == (180.0, "N/cm^2")


def test_the_review_section_shows_every_range_layer(review_doc) -> None:  # type: ignore[no-untyped-def]
    rows = {(r.joint, r.direction): r for r in review_doc.review.ranges}
    elbow = rows[("elbow_flexion", "positive")]
    # the example protocol's elbow layers (protocols/alder4-upper-limb.yaml) and the AAOS normative elbow
    # flexion of 150 deg (Norkin & White appendix table, [C2]) for the nominal review
    assert (elbow.planned, elbow.device, elbow.mechanical, elbow.participant) == (120.0, 130.0, 140.0, 150.0)
    assert elbow.source == "normative"
