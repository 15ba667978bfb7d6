"""R106 cautions and overrides: each change before → after, problems as errors, loosening flagged."""

from __future__ import annotations

import pytest
from review_protocols import keyset, resolved

from bracer.review.checks import cautions

SLOW = {
    "cautions": {
        "slow": {
            "text": "Move slowly.",
            "population": "test population",
            "effects": [{"joint": "elbow", "quantity": "speed", "scale": 0.5}],
        }
    },
    "participants": {"P1": {"cautions": ["slow"]}},
}


def run(patch=None, participant="P1"):  # type: ignore[no-untyped-def]
    return cautions.run(resolved(patch, participant))


def test_applied_caution_lists_every_change() -> None:
    result = run(SLOW)
    assert result.findings == ()
    (row,) = result.sources
    assert (row.source_kind, row.source, row.text, row.applied) == ("caution", "slow", "Move slowly.", True)
    assert [(c.part, c.before, c.after, c.unit, c.applied) for c in row.changes] == [
        ("planned.positive", 30.0, 15.0, "deg/s", True),
        ("planned.negative", 30.0, 15.0, "deg/s", True),
    ]


def test_change_not_applied_because_already_tighter() -> None:
    patch = {
        "cautions": {
            "loose": {
                "text": "x",
                "population": "y",
                "effects": [{"contact": "cuff", "quantity": "force", "set": "80 N"}],
            }
        },
        "participants": {"P1": {"cautions": ["loose"]}},
    }
    result = run(patch)
    assert result.findings == ()
    (change,) = result.sources[0].changes
    assert (change.before, change.after, change.applied) == (50.0, 80.0, False)
    assert "already tighter" in change.note


def test_after_is_given_in_the_unit_of_the_limit_before() -> None:
    patch = {
        "cautions": {
            "c": {
                "text": "x",
                "population": "y",
                "effects": [{"joint": "elbow", "quantity": "range", "direction": "positive", "set": "2 rad"}],
            }
        },
        "participants": {"P1": {"cautions": ["c"]}},
    }
    (change,) = run(patch).sources[0].changes
    assert change.unit == "deg" and change.after == pytest.approx(2 * 180 / 3.141592653589793)


def test_caution_on_an_undeclared_layer_is_an_error() -> None:
    patch = {
        "cautions": {
            "tremor": {
                "text": "x",
                "population": "y",
                "effects": [{"joint": "elbow", "quantity": "acceleration", "scale": 0.5}],
            }
        },
        "participants": {"P1": {"cautions": ["tremor"]}},
    }
    assert keyset(run(patch).findings) == {("R106", "error", "elbow", None, None, None)}


def test_loosening_override_without_justification_is_an_error() -> None:
    patch = {
        "participants": {
            "P1": {
                "overrides": [
                    {"joint": "elbow", "quantity": "speed", "direction": "positive", "set": "40 deg/s"}
                ]
            }
        }
    }
    result = run(patch)
    assert keyset(result.findings) == {("R106", "error", "elbow", None, None, None)}
    (row,) = result.sources
    assert row.source == "override 1" and row.changes[0].loosens


def test_loosening_override_with_justification_is_still_a_warning() -> None:
    patch = {
        "participants": {
            "P1": {
                "overrides": [
                    {
                        "joint": "elbow",
                        "quantity": "speed",
                        "direction": "positive",
                        "set": "40 deg/s",
                        "justification": "approved by the clinician",
                    }
                ]
            }
        }
    }
    result = run(patch)
    assert keyset(result.findings) == {("R106", "warning", "elbow", "speed", None, "planned")}
    (f,) = result.findings
    assert (f.peak, f.limit, f.unit) == (40.0, 30.0, "deg/s")
    assert result.sources[0].text == "approved by the clinician"


def test_tightening_override_is_listed_without_finding() -> None:
    patch = {
        "participants": {"P1": {"overrides": [{"joint": "elbow", "quantity": "torque", "set": "4 N*m"}]}}
    }
    result = run(patch)
    assert result.findings == ()
    assert [c.after for c in result.sources[0].changes] == [4.0, 4.0]


def test_caution_without_effects_is_info() -> None:
    patch = {
        "cautions": {"talk": {"text": "Explain each movement first.", "population": "all"}},
        "participants": {"P1": {"cautions": ["talk"]}},
    }
    assert keyset(run(patch).findings) == {("R106", "info", None, "caution", None, None)}


def test_nominal_review_lists_cautions_without_applying_them() -> None:
    result = run(SLOW, participant=None)
    assert keyset(result.findings) == {("R106", "info", None, "caution", None, None)}
    (row,) = result.sources
    assert row.applied is False and row.changes == ()
