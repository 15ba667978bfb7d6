"""Effective limits per participant: cautions only tighten, overrides may loosen with a written justification.

Protocols are built from the example's data with the cautions and the participant replaced, so each test
states exactly what it changes.  Expected values are computed here by hand from the example's limits
(e.g. 90 deg/s x 0.5 = 45 deg/s = 0.785398 rad/s), never read back from the code under test.
"""

from __future__ import annotations

import copy
import math
from pathlib import Path
from typing import Any

import pytest
from hypothesis import given
from hypothesis import strategies as st

from bracer.protocol.load import load_protocol
from bracer.protocol.model import Protocol
from bracer.protocol.resolve import Change, participant_range, resolve
from bracer.protocol.yamlsource import load_yaml

DEG = math.pi / 180  # definition of the degree
EXAMPLE = Path(__file__).resolve().parents[2] / "protocols" / "alder4-upper-limb.yaml"

# The limits the synthetic tests start from, pinned here over the example's data (so that an edit of the
# example does not change what these tests mean):
#   elbow_flexion   range planned [10, 120] deg, device [5, 130] deg;
#                   speed planned 90 deg/s, device 120 deg/s;
#                   torque planned 8 N*m, device 12 N*m; no acceleration limits.
#   shoulder_flexion range planned [-10, 120] deg; speed planned 60 deg/s.
#   upper_arm_cuff  force quasi-static 60 N, transient 90 N; pressure 2 / 3 N/cm^2; sustained 35 N for 20 s.
_PINNED: dict[tuple[str, str], Any] = {
    ("joints", "elbow_flexion"): {
        "range": {
            "planned": {"min": "10 deg", "max": "120 deg"},
            "device": {"min": "5 deg", "max": "130 deg"},
            "mechanical": {"min": "0 deg", "max": "140 deg"},
        },
        "speed": {"planned": "90 deg/s", "device": "120 deg/s"},
        "torque": {"planned": "8 N*m", "device": "12 N*m"},
        "acceleration": {},
    },
    ("joints", "shoulder_flexion"): {
        "range": {
            "planned": {"min": "-10 deg", "max": "120 deg"},
            "device": {"min": "-20 deg", "max": "135 deg"},
            "mechanical": {"min": "-30 deg", "max": "150 deg"},
        },
        "speed": {"planned": "60 deg/s", "device": "90 deg/s"},
    },
    ("contacts", "upper_arm_cuff"): {
        "force": {"quasi_static": "60 N", "transient": "90 N", "transient_max_duration": "500 ms"},
        "pressure": {"quasi_static": "2 N/cm^2", "transient": "3 N/cm^2"},
        "sustained": {"level": "35 N", "max_duration": "20 s"},
    },
}


def _pinned_base() -> dict[str, Any]:
    data: dict[str, Any] = load_yaml(EXAMPLE).data
    for (section, name), fields in _PINNED.items():
        data[section][name].update(copy.deepcopy(fields))
    return data


_BASE = _pinned_base()


def build(
    cautions: dict[str, list[dict[str, Any]]] | None = None,
    *,
    overrides: list[dict[str, Any]] | None = None,
    rom: dict[str, Any] | None = None,
) -> Protocol:
    data = copy.deepcopy(_BASE)
    data["cautions"] = {
        cid: {"text": f"caution {cid}", "population": "test", "effects": effects}
        for cid, effects in (cautions or {}).items()
    }
    data["participants"] = {
        "P": {"cautions": list(cautions or {}), "overrides": overrides or [], "rom": rom or {}}
    }
    return Protocol.model_validate(data)


def run(cautions: dict[str, list[dict[str, Any]]] | None = None, **kw: Any):  # type: ignore[no-untyped-def]
    return resolve(build(cautions, **kw), "P")


def elbow(res) -> Any:  # type: ignore[no-untyped-def]
    return res.protocol.joints["elbow_flexion"]


def cuff(res) -> Any:  # type: ignore[no-untyped-def]
    return res.protocol.contacts["upper_arm_cuff"]


def only_change(res) -> Change:  # type: ignore[no-untyped-def]
    (change,) = res.changes
    return change


# ------------------------------------------------------------------------------ speed, torque: cautions


def test_caution_scales_speed_down() -> None:
    res = run({"slow": [{"joint": "elbow_flexion", "quantity": "speed", "scale": 0.5}]})
    speed = elbow(res).speed.planned
    # 90 deg/s x 0.5 = 45 deg/s = 45 * pi / 180 rad/s = 0.785398 rad/s
    assert speed.positive.si == pytest.approx(0.785398, abs=1e-6)
    assert speed.negative.si == pytest.approx(0.785398, abs=1e-6)
    assert str(speed.positive) == "45 deg/s"
    assert speed.symmetric
    # the device layer is untouched
    assert elbow(res).speed.device.positive.si == pytest.approx(120 * DEG)
    assert [(c.part, str(c.before), str(c.after), c.applied) for c in res.changes] == [
        ("planned.positive", "90 deg/s", "45 deg/s", True),
        ("planned.negative", "90 deg/s", "45 deg/s", True),
    ]
    assert res.problems == ()


def test_caution_that_would_loosen_is_recorded_as_not_applied() -> None:
    res = run(
        {"fast": [{"joint": "elbow_flexion", "quantity": "speed", "direction": "positive", "scale": 1.5}]}
    )
    assert elbow(res).speed.planned.positive.si == pytest.approx(90 * DEG)
    change = only_change(res)
    assert not change.applied
    assert change.after.si == pytest.approx(135 * DEG)  # 90 x 1.5 = 135 deg/s, refused
    assert "not applied" in change.note and "already tighter" in change.note
    assert res.problems == ()


def test_caution_set_is_taken_only_when_tighter() -> None:
    res = run(
        {
            "a": [{"joint": "elbow_flexion", "quantity": "speed", "set": "1 rad/s"}],
            "b": [{"joint": "elbow_flexion", "quantity": "speed", "set": "100 deg/s"}],
        }
    )
    # 1 rad/s = 57.30 deg/s < 90 deg/s: taken; then 100 deg/s > 57.3 deg/s: refused.
    assert elbow(res).speed.planned.positive.si == pytest.approx(1.0)
    assert [c.applied for c in res.changes] == [True, True, False, False]


def test_cautions_compose_in_order() -> None:
    res = run(
        {
            "a": [{"joint": "elbow_flexion", "quantity": "speed", "scale": 0.5}],
            "b": [{"joint": "elbow_flexion", "quantity": "speed", "scale": 0.75}],
        }
    )
    # 90 x 0.5 x 0.75 = 33.75 deg/s
    assert elbow(res).speed.planned.positive.si == pytest.approx(33.75 * DEG)
    assert str(res.changes[-1].before) == "45 deg/s"


def test_caution_on_one_direction_makes_the_limit_asymmetric() -> None:
    res = run({"a": [{"joint": "elbow_flexion", "quantity": "speed", "direction": "negative", "scale": 0.5}]})
    speed = elbow(res).speed.planned
    assert not speed.symmetric
    assert speed.positive.si == pytest.approx(90 * DEG)
    assert speed.negative.si == pytest.approx(45 * DEG)


def test_caution_scales_torque() -> None:
    res = run({"bone": [{"joint": "elbow_flexion", "quantity": "torque", "layer": "device", "scale": 0.6}]})
    # 12 N*m x 0.6 = 7.2 N*m on the device layer; planned 8 N*m untouched
    assert elbow(res).torque.device.positive.si == pytest.approx(7.2)
    assert elbow(res).torque.planned.positive.si == pytest.approx(8.0)


@given(scale=st.floats(min_value=0.01, max_value=3.0))
def test_property_a_caution_never_loosens_speed(scale: float) -> None:
    res = run({"c": [{"joint": "elbow_flexion", "quantity": "speed", "scale": scale}]})
    assert elbow(res).speed.planned.positive.si == pytest.approx(min(90.0, 90.0 * scale) * DEG)


@given(value=st.floats(min_value=1.0, max_value=400.0))
def test_property_a_caution_set_gives_the_smaller_value(value: float) -> None:
    res = run({"c": [{"joint": "shoulder_flexion", "quantity": "speed", "set": f"{value!r} deg/s"}]})
    got = res.protocol.joints["shoulder_flexion"].speed.planned.positive.si
    assert got == pytest.approx(min(60.0, value) * DEG)


# ------------------------------------------------------------------------------ range


def test_range_set_max_end_down_and_min_end_up() -> None:
    res = run(
        {
            "a": [
                {"joint": "elbow_flexion", "quantity": "range", "direction": "positive", "set": "100 deg"},
                {"joint": "elbow_flexion", "quantity": "range", "direction": "negative", "set": "20 deg"},
            ]
        }
    )
    planned = elbow(res).range.planned
    assert (planned.min.si, planned.max.si) == (pytest.approx(20 * DEG), pytest.approx(100 * DEG))
    assert [(c.part, c.applied) for c in res.changes] == [("planned.max", True), ("planned.min", True)]


@pytest.mark.parametrize(
    ("direction", "value"),
    [
        ("positive", "125 deg"),  # max end up: looser
        ("negative", "0 deg"),
    ],  # min end down: looser
)
def test_range_set_outward_is_not_applied_by_a_caution(direction: str, value: str) -> None:
    res = run({"a": [{"joint": "elbow_flexion", "quantity": "range", "direction": direction, "set": value}]})
    planned = elbow(res).range.planned
    assert (planned.min.si, planned.max.si) == (pytest.approx(10 * DEG), pytest.approx(120 * DEG))
    assert not only_change(res).applied


def test_range_scale_both_ends_of_a_range_that_spans_zero() -> None:
    res = run({"a": [{"joint": "shoulder_flexion", "quantity": "range", "scale": 0.5}]})
    planned = res.protocol.joints["shoulder_flexion"].range.planned
    # [-10, 120] deg x 0.5 = [-5, 60] deg: both ends move inward
    assert planned.min.si == pytest.approx(-5 * DEG)
    assert planned.max.si == pytest.approx(60 * DEG)
    assert all(c.applied for c in res.changes)


def test_range_scale_of_a_positive_min_end_would_move_it_outward() -> None:
    # elbow [10, 120] deg x 0.5: max 60 deg (inward, applied); min 5 deg is below 10 deg (outward, refused)
    res = run({"a": [{"joint": "elbow_flexion", "quantity": "range", "scale": 0.5}]})
    planned = elbow(res).range.planned
    assert planned.min.si == pytest.approx(10 * DEG)
    assert planned.max.si == pytest.approx(60 * DEG)
    assert {c.part: c.applied for c in res.changes} == {"planned.max": True, "planned.min": False}


def test_range_measured_minus() -> None:
    rom = {"elbow_flexion": {"min": "15 deg", "max": "110 deg", "date": "2027-01-20", "method": "goniometry"}}
    res = run({"a": [{"joint": "elbow_flexion", "quantity": "range", "measured_minus": "5 deg"}]}, rom=rom)
    planned = elbow(res).range.planned
    # min: measured 15 + 5 = 20 deg (above 10: inward); max: measured 110 - 5 = 105 deg (below 120: inward)
    assert planned.min.si == pytest.approx(20 * DEG)
    assert planned.max.si == pytest.approx(105 * DEG)
    assert str(planned.min) == "20 deg"  # kept in the unit the limit was declared in


def test_range_measured_minus_outside_the_planned_range_is_not_applied() -> None:
    rom = {"elbow_flexion": {"min": "0 deg", "max": "140 deg", "date": "2027-01-20", "method": "goniometry"}}
    res = run({"a": [{"joint": "elbow_flexion", "quantity": "range", "measured_minus": "5 deg"}]}, rom=rom)
    # min 0 + 5 = 5 deg < 10 deg and max 140 - 5 = 135 deg > 120 deg: both outward, neither applied
    planned = elbow(res).range.planned
    assert (planned.min.si, planned.max.si) == (pytest.approx(10 * DEG), pytest.approx(120 * DEG))
    assert [c.applied for c in res.changes] == [False, False]


def test_range_measured_minus_without_measured_rom_is_a_problem() -> None:
    res = run(
        {
            "a": [
                {
                    "joint": "elbow_flexion",
                    "quantity": "range",
                    "direction": "negative",
                    "measured_minus": "5 deg",
                }
            ]
        }
    )
    (problem,) = res.problems
    assert problem.source_kind == "caution" and problem.source == "a" and problem.target == "elbow_flexion"
    assert "measured range of motion" in problem.message and "left unchanged" in problem.message
    assert res.changes == ()
    assert elbow(res).range.planned.min.si == pytest.approx(10 * DEG)


def test_range_that_would_become_empty_is_a_problem_and_nothing_changes() -> None:
    res = run(
        {"a": [{"joint": "elbow_flexion", "quantity": "range", "direction": "negative", "set": "125 deg"}]}
    )
    (problem,) = res.problems
    assert "empty planned range" in problem.message
    assert res.changes == ()  # no change recorded as applied for a limit that was kept
    assert elbow(res).range.planned.min.si == pytest.approx(10 * DEG)


def test_range_set_without_a_direction_is_a_problem() -> None:
    res = run({"a": [{"joint": "elbow_flexion", "quantity": "range", "set": "100 deg"}]})
    (problem,) = res.problems
    assert "needs a direction" in problem.message


def test_negative_measured_minus_is_refused_by_the_model() -> None:
    from pydantic import ValidationError

    with pytest.raises(ValidationError, match="cannot be negative"):
        build({"a": [{"joint": "elbow_flexion", "quantity": "range", "measured_minus": "-5 deg"}]})


# ------------------------------------------------------------------------------ contacts


@pytest.mark.parametrize(
    ("effect", "group", "item", "expected_si"),
    [
        ({"quantity": "force", "scale": 0.7}, "force", "quasi_static", 42.0),  # 60 N x 0.7
        ({"quantity": "force", "item": "transient", "scale": 0.5}, "force", "transient", 45.0),  # 90 N x 0.5
        (
            {"quantity": "pressure", "set": "1.5 N/cm^2"},
            "pressure",
            "quasi_static",
            15_000.0,
        ),  # 1 N/cm^2 = 1e4 Pa
        ({"quantity": "pressure", "item": "transient", "set": "25 kPa"}, "pressure", "transient", 25_000.0),
        (
            {"quantity": "sustained", "scale": 0.5},
            "sustained",
            "level",
            17.5,
        ),  # 35 N x 0.5; default item = level
        ({"quantity": "sustained", "item": "max_duration", "set": "10 s"}, "sustained", "max_duration", 10.0),
    ],
)
def test_contact_items_tighten(effect: dict[str, Any], group: str, item: str, expected_si: float) -> None:
    res = run({"c": [{"contact": "upper_arm_cuff", **effect}]})
    assert getattr(getattr(cuff(res), group), item).si == pytest.approx(expected_si)
    assert only_change(res).applied and only_change(res).part == item


def test_contact_caution_that_would_lengthen_sustained_time_is_not_applied() -> None:
    res = run(
        {"c": [{"contact": "upper_arm_cuff", "quantity": "sustained", "item": "max_duration", "set": "30 s"}]}
    )
    assert cuff(res).sustained.max_duration.si == pytest.approx(20.0)
    assert not only_change(res).applied


def test_contact_item_that_does_not_apply_is_a_problem() -> None:
    res = run({"c": [{"contact": "upper_arm_cuff", "quantity": "force", "item": "level", "scale": 0.5}]})
    (problem,) = res.problems
    assert "item 'level' does not apply to force" in problem.message


# ------------------------------------------------------------------------------ overrides


def test_override_that_loosens_without_justification_is_a_problem() -> None:
    res = run(overrides=[{"joint": "elbow_flexion", "quantity": "torque", "set": "10 N*m"}])
    # 8 N*m -> 10 N*m: looser; an override is applied, but without a justification it is an error
    assert elbow(res).torque.planned.positive.si == pytest.approx(10.0)
    # one problem per limit loosened: both directions of the planned torque
    assert [p.message.split(" of ")[0] for p in res.problems] == [
        "loosens torque planned.positive",
        "loosens torque planned.negative",
    ]
    for problem in res.problems:
        assert problem.source_kind == "override" and problem.source == "override 1"
        assert problem.severity == "error"
        assert "without a written justification" in problem.message
        assert "from 8 N*m to 10 N*m" in problem.message
    assert all(c.loosens and c.applied for c in res.changes)


def test_override_that_loosens_with_justification_is_applied_and_flagged() -> None:
    why = "responsible clinician: participant tolerates 10 N*m (assessment 2027-01-20)"
    res = run(
        overrides=[{"joint": "elbow_flexion", "quantity": "torque", "set": "10 N*m", "justification": why}]
    )
    assert res.problems == ()
    assert elbow(res).torque.planned.positive.si == pytest.approx(10.0)
    assert all(c.loosens and c.justification == why for c in res.changes)
    assert all("loosens" in c.note for c in res.changes)


def test_override_that_tightens_needs_no_justification() -> None:
    res = run(overrides=[{"joint": "elbow_flexion", "quantity": "torque", "scale": 0.5}])
    assert res.problems == ()
    assert elbow(res).torque.planned.positive.si == pytest.approx(4.0)  # 8 N*m x 0.5
    assert not any(c.loosens for c in res.changes)


def test_override_can_loosen_a_range_end() -> None:
    res = run(
        overrides=[
            {
                "joint": "elbow_flexion",
                "quantity": "range",
                "direction": "positive",
                "set": "125 deg",
                "justification": "measured passive range 140 deg",
            }
        ]
    )
    assert elbow(res).range.planned.max.si == pytest.approx(125 * DEG)
    assert only_change(res).loosens


def test_overrides_come_after_cautions() -> None:
    res = run(
        {"slow": [{"joint": "elbow_flexion", "quantity": "speed", "scale": 0.5}]},
        overrides=[{"joint": "elbow_flexion", "quantity": "speed", "scale": 1.5, "justification": "ok"}],
    )
    # 90 x 0.5 = 45 deg/s, then the override x 1.5 = 67.5 deg/s (loosens the caution's result, justified)
    assert elbow(res).speed.planned.positive.si == pytest.approx(67.5 * DEG)


# ------------------------------------------------------------------------------ problems


@pytest.mark.parametrize(
    "effect",
    [
        {"joint": "elbow_flexion", "quantity": "acceleration", "scale": 0.5},  # no acceleration limits at all
        {
            "joint": "elbow_flexion",
            "quantity": "torque",
            "layer": "mechanical",
            "scale": 0.5,
        },  # layer not declared
    ],
)
def test_effect_on_an_undeclared_layer_is_a_problem(effect: dict[str, Any]) -> None:
    res = run({"c": [effect]})
    (problem,) = res.problems
    assert "which the protocol does not declare" in problem.message
    assert res.changes == ()


def test_effect_on_an_undeclared_contact_item_is_a_problem() -> None:
    data = copy.deepcopy(_BASE)
    del data["contacts"]["upper_arm_cuff"]["pressure"]
    data["cautions"] = {
        "c": {
            "text": "t",
            "population": "p",
            "effects": [{"contact": "upper_arm_cuff", "quantity": "pressure", "scale": 0.5}],
        }
    }
    data["participants"] = {"P": {"cautions": ["c"]}}
    res = resolve(Protocol.model_validate(data), "P")
    (problem,) = res.problems
    assert (
        "pressure limit of contact 'upper_arm_cuff', which the protocol does not declare" in problem.message
    )


@pytest.mark.parametrize(
    ("effect", "words"),
    [
        ({"joint": "elbow_flexion", "quantity": "speed", "set": "5 N*m"}, "where angular speed"),
        (
            {"joint": "elbow_flexion", "quantity": "range", "direction": "positive", "set": "5 deg/s"},
            "where angle",
        ),
        ({"contact": "upper_arm_cuff", "quantity": "pressure", "set": "40 N"}, "where pressure"),
        (
            {"contact": "upper_arm_cuff", "quantity": "sustained", "item": "max_duration", "set": "5 N"},
            "where time",
        ),
    ],
)
def test_set_with_the_wrong_dimension_is_a_problem(effect: dict[str, Any], words: str) -> None:
    res = run(overrides=[effect])
    (problem,) = res.problems
    assert words in problem.message
    assert res.changes == ()


def test_set_to_zero_is_a_problem() -> None:
    res = run({"c": [{"joint": "elbow_flexion", "quantity": "speed", "set": "0 deg/s"}]})
    (problem,) = res.problems
    assert "must stay above zero" in problem.message


def test_wrong_dimension_set_is_also_caught_when_loading(tmp_path: Path) -> None:
    # The loader names the file and line; resolve() would otherwise report it per participant.
    from bracer.errors import InputError

    text = EXAMPLE.read_text(encoding="utf-8").replace(
        "quantity: force, item: quasi_static, set: 40 N", "quantity: force, item: quasi_static, set: 40 deg"
    )
    path = tmp_path / "p.yaml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match="the quasi-static force limit needs a force"):
        load_protocol(path)


# ------------------------------------------------------------------------------ the example's participants


def test_example_participant_av_p01() -> None:
    # Expected values: the nominal example limits times the factors its cautions state (read here from the
    # nominal protocol, so the arithmetic, not the numbers, is what is tested).
    p = load_protocol(EXAMPLE).protocol
    nominal = p.joints
    res = resolve(p, "AV-P01")
    j = res.protocol.joints
    assert res.cautions == ("spasticity", "shoulder_subluxation")
    # spasticity: elbow speed x 0.5; shoulder flexion speed x 0.75
    assert j["elbow_flexion"].speed.planned.positive.si == pytest.approx(
        nominal["elbow_flexion"].speed.planned.positive.si * 0.5
    )
    assert j["shoulder_flexion"].speed.planned.negative.si == pytest.approx(
        nominal["shoulder_flexion"].speed.planned.negative.si * 0.75
    )
    # spasticity: elbow min = measured min + 5 deg, where that is inside the planned range
    measured_min = p.participants["AV-P01"].rom["elbow_flexion"].min.si
    assert j["elbow_flexion"].range.planned.min.si == pytest.approx(
        max(nominal["elbow_flexion"].range.planned.min.si, measured_min + 5 * DEG)
    )
    # subluxation: abduction and flexion max set to 80 deg where the planned max is higher
    assert j["shoulder_abduction"].range.planned.max.si == pytest.approx(80 * DEG)
    assert j["shoulder_flexion"].range.planned.max.si == pytest.approx(80 * DEG)
    # subluxation: upper-arm cuff quasi-static force set to 40 N
    assert res.protocol.contacts["upper_arm_cuff"].force.quasi_static.si == pytest.approx(40.0)
    # override: elbow torque 6 N*m (tighter than the nominal planned torque, so no justification needed)
    assert nominal["elbow_flexion"].torque.planned.positive.si > 6.0
    assert j["elbow_flexion"].torque.planned.positive.si == pytest.approx(6.0)
    assert res.problems == ()
    # the nominal protocol itself is unchanged
    assert p.joints["elbow_flexion"].speed.planned.positive.si == pytest.approx(
        load_protocol(EXAMPLE).protocol.joints["elbow_flexion"].speed.planned.positive.si
    )


def test_example_participant_av_p02() -> None:
    p = load_protocol(EXAMPLE).protocol
    res = resolve(p, "AV-P02")
    j, c = res.protocol.joints, res.protocol.contacts

    def nominal_torque(joint: str) -> float:
        return p.joints[joint].torque.planned.positive.si  # type: ignore[no-any-return]

    # low bone density: torques x 0.6 (shoulder rotation x 0.5), cuff forces x 0.7
    for joint, factor in [
        ("shoulder_flexion", 0.6),
        ("shoulder_abduction", 0.6),
        ("shoulder_rotation", 0.5),
        ("elbow_flexion", 0.6),
        ("forearm_rotation", 1.0),
    ]:
        assert j[joint].torque.planned.positive.si == pytest.approx(nominal_torque(joint) * factor), joint
        assert j[joint].torque.planned.negative.si == pytest.approx(nominal_torque(joint) * factor), joint
    for contact in ("upper_arm_cuff", "forearm_cuff"):
        assert c[contact].force.quasi_static.si == pytest.approx(
            p.contacts[contact].force.quasi_static.si * 0.7
        )
    assert res.problems == ()


def test_nominal_resolution_changes_nothing() -> None:
    p = load_protocol(EXAMPLE).protocol
    res = resolve(p)
    assert res.protocol is p and res.changes == () and res.problems == () and res.participant is None


def test_unknown_participant_raises_key_error() -> None:
    with pytest.raises(KeyError):
        resolve(load_protocol(EXAMPLE).protocol, "AV-P99")


# ------------------------------------------------------------------------------ participant range


def test_participant_range_measured_and_normative() -> None:
    p = load_protocol(EXAMPLE).protocol
    measured = participant_range(p, "elbow_flexion", p.participants["AV-P01"])
    assert (measured.min_source, measured.max_source) == ("measured", "measured")
    assert measured.min.si == pytest.approx(15 * DEG) and measured.max.si == pytest.approx(135 * DEG)
    assert "goniometry" in measured.note and "passive" in measured.note
    normative = participant_range(p, "shoulder_rotation", p.participants["AV-P01"])
    # Norkin & White appendix, AAOS column (transcribed, [C2]):
    # external rotation 90 deg, internal rotation 70 deg
    assert normative.max.si == pytest.approx(90 * DEG)
    assert normative.min.si == pytest.approx(-70 * DEG)
    assert (normative.min_source, normative.max_source) == ("normative", "normative")
    assert "AAOS" in normative.note


def test_participant_range_with_only_one_reference_direction() -> None:
    p = load_protocol(EXAMPLE).protocol
    r = participant_range(p, "shoulder_abduction", None)
    # Norkin & White appendix, AAOS (transcribed, [C2]): shoulder abduction 180 deg; no adduction row given
    assert r.max.si == pytest.approx(180 * DEG)
    assert r.min is None and r.min_source is None
