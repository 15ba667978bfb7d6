"""A101 range-of-motion on tiny logs: exact findings, times within one sample, units as declared."""

from __future__ import annotations

import numpy as np
import pytest
from checkkit import (
    DELETE,
    clock,
    context,
    deg,
    keys,
    only,
    plateau,
    protocol,
    quiet_cuff,
    still_joint,
    stream,
)

from bracer.audit.checks import range as range_check
from bracer.findings import Kind, Severity

DT = 1e-3


def run(pos_deg: np.ndarray, t: np.ndarray, proto=None, participant=None, time_valid=None):  # type: ignore[no-untyped-def]
    ch = still_joint(t) | quiet_cuff(t)
    ch["elb_pos"] = deg(pos_deg)
    ctx = context(proto or protocol(), stream(t, ch), participant=participant, time_valid=time_valid)
    return range_check.run(ctx)


def test_planned_exceedance_is_one_warning_with_exact_times_and_declared_unit() -> None:
    t = clock(2.0)
    pos = plateau(t, 50.0, 105.0, 0.5, 0.7)
    f = only(run(pos, t))
    assert (f.code, f.kind, f.layer, f.direction, f.quantity) == (
        "A101",
        Kind.VIOLATION,
        "planned",
        "positive",
        "position",
    )
    assert f.severity is Severity.WARNING
    assert f.t_start == pytest.approx(0.5, abs=DT) and f.t_end == pytest.approx(0.7, abs=DT)
    assert (f.i_start, f.i_end) == (500, 700)
    assert f.unit == "deg" and f.peak == pytest.approx(105.0) and f.limit == 100.0
    assert f.margin == pytest.approx(-5.0)
    assert "105 deg" in f.message and "100 deg" in f.message and "flexion" in f.message


def test_each_layer_crossed_is_its_own_finding_in_the_negative_direction() -> None:
    t = clock(2.0)
    pos = plateau(t, 50.0, -5.0, 1.0, 1.2)  # below planned (10) and device (0), inside mechanical (-10)
    found = run(pos, t)
    assert keys(found) == {
        ("A101", "violation", "elbow", "position", "planned", "negative"),
        ("A101", "violation", "elbow", "position", "device", "negative"),
    }
    device = next(f for f in found if f.layer == "device")
    assert device.severity is Severity.ERROR
    assert device.peak == pytest.approx(-5.0) and device.limit == 0.0
    assert device.margin == pytest.approx(-5.0)  # negative: beyond the limit


def test_inside_every_limit_gives_no_finding() -> None:
    t = clock(1.0)
    assert run(np.linspace(20.0, 90.0, t.size), t) == []


def test_participant_measured_range_is_a_layer_of_its_own() -> None:
    proto = protocol(
        {
            "participants": {
                "AV-T1": {
                    "rom": {
                        "elbow": {
                            "min": "15 deg",
                            "max": "95 deg",
                            "date": "2027-01-02",
                            "method": "goniometry",
                        }
                    }
                }
            }
        }
    )
    t = clock(2.0)
    pos = plateau(t, 50.0, 97.0, 0.5, 0.6)  # inside planned (100), beyond the measured 95
    f = only(run(pos, t, proto, participant="AV-T1"))
    assert (f.layer, f.direction, f.severity) == ("participant", "positive", Severity.ERROR)
    assert f.limit == 95.0 and "measured" in f.message


def test_normative_participant_range_is_a_warning() -> None:
    # AAOS elbow flexion 150 deg (Norkin & White appendix, [C2] in REFERENCES.md) when nothing is measured
    proto = protocol(
        {
            "joints": {
                "elbow": {
                    "reference": {"positive": "elbow flexion"},
                    "range": {
                        "mechanical": {"min": "-10 deg", "max": "160 deg"},
                        "device": {"min": "0 deg", "max": "155 deg"},
                        "planned": {"min": "10 deg", "max": "152 deg"},
                    },
                }
            }
        },
        {"participants": {"AV-T2": {}}},
    )
    t = clock(1.0)
    pos = plateau(t, 50.0, 151.0, 0.2, 0.3)
    f = only(run(pos, t, proto, participant="AV-T2"))
    assert (f.layer, f.severity, f.limit) == ("participant", Severity.WARNING, 150.0)
    assert "normative" in f.message


def test_hysteresis_keeps_a_noisy_excursion_one_event() -> None:
    t = clock(2.0)
    rng = np.random.default_rng(1)
    pos = np.full(t.size, 50.0)
    seg = (t >= 0.5) & (t <= 1.0)
    # hovering at the planned limit +-0.8 deg: dips below 100 but never 1.8 deg (2 % of the 90 deg span)
    pos[seg] = 100.2 + rng.uniform(-0.8, 0.8, seg.sum())
    found = run(pos, t)
    assert len(found) == 1
    assert found[0].t_start == pytest.approx(t[seg][np.argmax(pos[seg] > 100)], abs=DT)


def test_without_hysteresis_the_same_noise_is_many_events() -> None:
    t = clock(2.0)
    rng = np.random.default_rng(1)
    pos = np.full(t.size, 50.0)
    seg = (t >= 0.5) & (t <= 1.0)
    pos[seg] = 100.2 + rng.uniform(-0.8, 0.8, seg.sum())
    proto = protocol({"audit": {"hysteresis": 0.0, "min_event_duration": "0 ms"}})
    assert len(run(pos, t, proto)) > 10


@pytest.mark.parametrize(("width_ms", "expected"), [(3, 0), (4, 0), (5, 1), (8, 1)])
def test_minimum_event_duration(width_ms: int, expected: int) -> None:
    t = clock(1.0)
    pos = plateau(t, 50.0, 104.0, 0.5, 0.5 + width_ms / 1000)
    assert len(run(pos, t)) == expected


def test_invalid_samples_split_an_event_and_are_never_part_of_one() -> None:
    t = clock(2.0)
    pos = plateau(t, 50.0, 105.0, 0.5, 0.9)
    pos[600:650] = np.nan
    found = sorted(run(pos, t), key=lambda f: f.t_start)
    assert [(f.i_start, f.i_end) for f in found] == [(500, 599), (650, 900)]


def test_time_invalid_samples_from_the_quality_pass_are_not_analysed() -> None:
    t = clock(2.0)
    pos = plateau(t, 50.0, 105.0, 0.5, 0.9)
    tv = np.ones(t.size, dtype=bool)
    tv[400:1000] = False  # the quality pass took this part out (e.g. a gap)
    assert run(pos, t, time_valid={"main": tv}) == []


def test_missing_position_column_is_not_assessable_error() -> None:
    t = clock(1.0)
    ch = still_joint(t) | quiet_cuff(t)
    del ch["elb_pos"]
    f = only(range_check.run(context(protocol(), stream(t, ch))))
    assert (f.kind, f.severity, f.subject, f.channel) == (
        Kind.NOT_ASSESSABLE,
        Severity.ERROR,
        "elbow",
        "elb_pos",
    )
    assert "elb_pos" in f.message and "not in the log" in f.message


def test_all_nan_position_is_not_assessable_not_a_pass() -> None:
    t = clock(1.0)
    f = only(run(np.full(t.size, np.nan), t))
    assert f.kind is Kind.NOT_ASSESSABLE and "no valid sample" in f.message


def test_no_position_channel_mapped_is_not_assessable() -> None:
    proto = protocol({"joints": {"elbow": {"channels": {"position": DELETE}}}})
    t = clock(1.0)
    f = only(range_check.run(context(proto, stream(t, still_joint(t)))))
    assert f.kind is Kind.NOT_ASSESSABLE and f.channel is None


def test_values_are_reported_in_the_declared_unit_rad() -> None:
    proto = protocol({"joints": {"elbow": {"range": {"planned": {"min": "0.2 rad", "max": "1.5 rad"}}}}})
    t = clock(1.0)
    pos = plateau(t, 50.0, np.rad2deg(1.6), 0.2, 0.4)
    f = only([f for f in run(pos, t, proto) if f.layer == "planned"])
    assert f.unit == "rad" and f.peak == pytest.approx(1.6) and f.limit == 1.5
