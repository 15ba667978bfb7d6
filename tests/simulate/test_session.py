"""Whole simulated sessions: files, columns and units against the protocol's channel map, ground truth against
the logs, closed-form stops in the logged signals, determinism, formats, clean sessions, errors."""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import numpy as np
import pyarrow as pa
import pyarrow.csv as pcsv
import pyarrow.ipc as ipc
import pyarrow.parquet as pq
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from sim_protocols import variant

from bracer.protocol.load import LoadedProtocol
from bracer.protocol.model import Protocol
from bracer.protocol.resolve import resolve
from bracer.simulate import RECIPES, SimulationError, SimulationOutput, lookup, simulate
from bracer.simulate.envelope import band
from bracer.units import parse_unit


def _table(out: SimulationOutput, stream: str) -> pa.Table:
    return pq.read_table(out.files[[s.name for s in out.truth.streams].index(stream)])


def _expected_columns(protocol: Protocol, stream: str) -> list[tuple[str, str]]:
    """(column, unit) the protocol's channel map puts on ``stream``, time column first; '' for status
    columns."""
    spec = protocol.logging.streams[stream]
    cols = [(spec.time.column, spec.time.unit)]
    for joint in protocol.joints.values():
        for ch in (joint.channels.position, joint.channels.velocity, joint.channels.torque):
            if ch is not None and ch.stream == stream:
                cols.append((ch.column, ch.unit))
    for contact in protocol.contacts.values():
        force = contact.channels.force
        if force is not None and force.stream == stream:
            cols += [(c, force.unit) for c in force.all_columns]
    cols += [(t.column, "") for t in protocol.logging.triggers.values() if t.stream == stream]
    cols += [(p.column, "") for p in protocol.logging.protections.values() if p.stream == stream]
    return cols


# ------------------------------------------------------------------------------------------ files and columns


def test_one_file_per_stream_named_after_it(full_session: SimulationOutput) -> None:
    folder = full_session.truth_path.parent
    assert sorted(p.name for p in folder.iterdir()) == ["cuffs.parquet", "main.parquet", "truth.json"]
    assert [s.file for s in full_session.truth.streams] == ["main.parquet", "cuffs.parquet"]


def test_columns_and_units_follow_the_channel_map(
    full_session: SimulationOutput, example: LoadedProtocol
) -> None:
    for stream in example.protocol.logging.streams:
        table = _table(full_session, stream)
        expected = _expected_columns(example.protocol, stream)
        assert table.column_names == [c for c, _ in expected]
        for column, unit in expected:
            meta = table.schema.field(column).metadata or {}
            assert meta.get(b"unit", b"").decode() == unit, column
    info = {c.column: c for c in full_session.truth.channels}
    assert info["elb_pos"].unit == "deg" and info["ua_fz"].unit == "N" and info["t_cuff"].unit == "s"


def test_time_columns_tick_at_the_declared_rates(
    full_session: SimulationOutput, example: LoadedProtocol
) -> None:
    for stream, spec in example.protocol.logging.streams.items():
        t = _table(full_session, stream).column(spec.time.column).to_numpy()
        steps = np.diff(t)
        period = 1.0 / spec.sample_rate.si
        regular = np.isclose(steps, period, rtol=0, atol=1e-9)
        gaps = [e for e in full_session.truth.incidents if e.quantity == "gap" and e.stream == stream]
        assert np.count_nonzero(~regular) == len(gaps)
        assert t[0] == 0.0 and t[-1] == pytest.approx(120.0 - period)


def test_status_columns_hold_their_normal_values_outside_the_stops(full_session: SimulationOutput) -> None:
    main = _table(full_session, "main")
    t = main.column("t").to_numpy()
    estop = main.column("estop").to_numpy()
    assert set(np.unique(main.column("soft_limits_on").to_numpy())) == {1}
    assert set(np.unique(main.column("safety_state").to_numpy())) == {0}
    stop = next(e for e in full_session.truth.incidents if e.quantity == "stop_latency").stop
    assert stop is not None
    on = t[estop == 1]
    assert on[0] == stop.t_trigger  # the request lands on a sample
    assert on[-1] == pytest.approx(stop.t_trigger + 2.0 - 0.001)  # latched for trigger_latch = 2 s


# ------------------------------------------------------------------------------------------ ground truth


def test_every_incident_is_in_the_truth(full_session: SimulationOutput) -> None:
    truth = full_session.truth
    assert {e.incident for e in truth.incidents} == set(RECIPES)
    kinds = {(e.incident, e.quantity, e.kind) for e in truth.incidents}
    assert ("range_exceedance", "position", "violation") in kinds
    assert ("near_miss", "position", "near_miss") in kinds
    assert ("speed_exceedance", "speed", "violation") in kinds
    assert ("force_peak", "force", "violation") in kinds
    assert ("sustained_pressure", "sustained_force", "violation") in kinds
    assert ("emergency_stop", "stop_latency", "stop") in kinds
    assert ("slow_stop", "stop_latency", "stop") in kinds
    assert ("logging_gap", "gap", "data_quality") in kinds
    assert truth.seed == 1 and truth.participant is None and truth.protocol.id == "AVRU-EXO-01"
    assert len(truth.protocol.sha256) == 64


def test_truth_times_fall_inside_the_log_and_on_its_rows(full_session: SimulationOutput) -> None:
    streams = {s.name: s for s in full_session.truth.streams}
    for e in full_session.truth.incidents:
        s = streams[e.stream]
        assert s.t_first <= e.t_start <= e.t_peak <= e.t_end <= s.t_last, e
        assert 0 <= e.i_start <= e.i_peak <= e.i_end < s.rows, e
        t = _table(full_session, e.stream).column(s.time_column).to_numpy()
        assert t[e.i_start] == pytest.approx(e.t_start, abs=1e-9), e
        if e.quantity not in ("stop_latency", "torque_off", "stop_distance"):
            assert t[e.i_end] == pytest.approx(e.t_end, abs=1e-9), e


def test_logged_peaks_agree_with_the_truth(full_session: SimulationOutput, example: LoadedProtocol) -> None:
    # The log is the truth plus each channel's offset, noise (≤ 5 σ) and quantisation.
    info = {c.column: c for c in full_session.truth.channels}
    for e in full_session.truth.incidents:
        if e.quantity not in ("position", "speed", "force"):
            continue
        table = _table(full_session, e.stream)
        cols = [table.column(c).to_numpy()[e.i_start : e.i_end + 1] for c in e.columns]
        tol = sum(abs(info[c].offset) + 5 * info[c].noise + info[c].step for c in e.columns)
        if e.quantity == "force":
            value = np.sqrt(np.sum(np.square(cols), axis=0)).max()
        else:
            value = cols[0].max() if e.direction == "positive" else cols[0].min()
        assert value == pytest.approx(e.peak, abs=tol), e


def test_peaks_and_limits_are_in_the_declared_units(full_session: SimulationOutput) -> None:
    by = {(e.incident, e.quantity): e for e in full_session.truth.incidents}
    # Example protocol: elbow planned max 120 deg, device max 130 deg, position near-miss band 3 deg.
    exceed = by[("range_exceedance", "position")]
    assert (exceed.unit, exceed.limit, exceed.layer) == ("deg", 120.0, "planned.max")
    # halfway to 130, kept 2 bands (6 deg) clear of the device limit
    assert exceed.peak == pytest.approx(124.0)
    near = by[("near_miss", "position")]
    assert near.peak == pytest.approx(118.5) and near.margin == pytest.approx(1.5) and not near.exceeds
    speed = by[("speed_exceedance", "speed")]
    # 1.2 × 90 deg/s = 108, capped two bands (2 × 12 deg/s) below the device's 120 deg/s
    assert (speed.unit, speed.limit, speed.peak) == ("deg/s", 90.0, pytest.approx(96.0))
    force = by[("force_peak", "force")]
    assert (force.unit, force.limit, force.layer) == ("N", 90.0, "transient")
    sustained = by[("sustained_pressure", "sustained_force")]
    assert (sustained.unit, sustained.limit, sustained.level, sustained.level_unit) == ("s", 20.0, 35.0, "N")
    assert sustained.peak > 20.0
    gap = by[("logging_gap", "gap")]
    assert gap.peak == pytest.approx(0.501) and gap.limit == pytest.approx(0.002)  # 2 periods of 1 ms


def test_gap_in_the_log_is_the_truths_gap(full_session: SimulationOutput) -> None:
    gap = next(e for e in full_session.truth.incidents if e.quantity == "gap")
    t = _table(full_session, gap.stream).column("t").to_numpy()
    assert gap.i_end == gap.i_start + 1
    assert t[gap.i_end] - t[gap.i_start] == pytest.approx(gap.peak, abs=1e-9)


# ------------------------------------------------------------------------------------------ stops


def test_stop_latency_and_distance_are_the_closed_form(
    full_session: SimulationOutput, example: LoadedProtocol
) -> None:
    # t = t_r + v0/a and d = v0·t_r + v0²/(2a) per joint (REFERENCES.md, stopping performance [V]); below the
    # standstill speed v_s from t_r + (v0 − v_s)/a (same kinematics), the latency the protocol budgets.
    protocol = example.protocol
    assert protocol.stop is not None
    for e in full_session.truth.incidents:
        if e.quantity != "stop_latency":
            continue
        stop = e.stop
        assert stop is not None
        for j in stop.joints:
            v0 = j.v0 * math.pi / 180
            a = j.deceleration * math.pi / 180
            assert j.latency == pytest.approx(stop.reaction_time + abs(v0) / a, rel=1e-12)
            assert j.distance == pytest.approx(
                math.degrees(abs(v0) * stop.reaction_time + v0**2 / (2 * a)), rel=1e-12
            )
            v_s = protocol.stop.standstill.speed.si
            assert j.latency_to_standstill_speed == pytest.approx(
                stop.reaction_time + (abs(v0) - v_s) / a, rel=1e-12
            )
        assert stop.latency == pytest.approx(max(j.latency for j in stop.joints))
        assert stop.latency_to_standstill_speed == pytest.approx(
            max(j.latency_to_standstill_speed for j in stop.joints)
        )
        assert e.peak == pytest.approx(stop.latency_to_standstill_speed * 1000) and e.unit == "ms"
        assert e.t_end == pytest.approx(stop.t_trigger + stop.latency_to_standstill_speed)
    estop = next(
        e
        for e in full_session.truth.incidents
        if e.quantity == "stop_latency" and e.incident == "emergency_stop"
    )
    slow = next(
        e for e in full_session.truth.incidents if e.quantity == "stop_latency" and e.incident == "slow_stop"
    )
    assert estop.stop is not None and slow.stop is not None
    assert estop.stop.reaction_time == protocol.stop.reaction_time.si and not estop.exceeds
    assert slow.stop.latency == pytest.approx(1.3 * 0.300) and slow.exceeds  # to zero speed: 1.3 × budget
    assert slow.stop.trigger == "protective_stop"


def test_logged_velocities_stop_when_the_closed_form_says(
    full_session: SimulationOutput, example: LoadedProtocol
) -> None:
    # From the log alone: the first sample after the request where every braking joint is below the standstill
    # speed, against t_r + (v0 − v_s)/a; within one sample period (1 ms) plus the noise's share (σ/a ≈ 0.2
    # ms).
    protocol = example.protocol
    assert protocol.stop is not None
    v_s = protocol.stop.standstill.speed.to("deg/s")
    main = _table(full_session, "main")
    t = main.column("t").to_numpy()
    for e in full_session.truth.incidents:
        if e.quantity != "stop_latency":
            continue
        stop = e.stop
        assert stop is not None
        after = t >= stop.t_trigger
        still = np.ones(t.shape, dtype=bool)
        for j in stop.joints:
            channel = protocol.joints[j.joint].channels.velocity
            assert channel is not None
            still &= np.abs(main.column(channel.column).to_numpy()) < v_s
        first = t[np.flatnonzero(after & still)[0]]
        assert first - stop.t_trigger == pytest.approx(stop.latency_to_standstill_speed, abs=0.0013)


def test_stop_distances_are_truth_entries(full_session: SimulationOutput) -> None:
    distances = [e for e in full_session.truth.incidents if e.quantity == "stop_distance"]
    estop = [e for e in distances if e.incident == "emergency_stop"]
    slow = [e for e in distances if e.incident == "slow_stop"]
    assert {e.subject for e in estop} == {
        "shoulder_flexion",
        "shoulder_abduction",
        "shoulder_rotation",
        "elbow_flexion",
    }
    assert all(e.peak == pytest.approx(e.limit) and not e.exceeds for e in estop)  # protocol reaction time
    assert all(e.exceeds for e in slow)  # the slow reaction travels further


# ------------------------------------------------------------------------------------------ determinism,
# formats


def test_same_seed_same_files(example: LoadedProtocol, tmp_path: Path) -> None:
    a = simulate(example, tmp_path / "a", seed=11, duration=100.0)
    b = simulate(example, tmp_path / "b", seed=11, duration=100.0)
    c = simulate(example, tmp_path / "c", seed=12, duration=100.0)
    for fa, fb, fc in zip(a.files, b.files, c.files, strict=True):
        assert pq.read_table(fa).equals(pq.read_table(fb))
        assert not pq.read_table(fa).equals(pq.read_table(fc))
    assert a.truth_path.read_text() == b.truth_path.read_text()


def test_csv_and_arrow_carry_the_same_values(example: LoadedProtocol, tmp_path: Path) -> None:
    runs = {
        fmt: simulate(example, tmp_path / fmt, seed=4, duration=100.0, fmt=fmt)  # type: ignore[arg-type]
        for fmt in ("parquet", "csv", "arrow")
    }
    assert [p.name for p in runs["csv"].files] == ["main.csv", "cuffs.csv"]
    assert [p.name for p in runs["arrow"].files] == ["main.arrow", "cuffs.arrow"]
    for i in range(2):
        ref = pq.read_table(runs["parquet"].files[i])
        csv = pcsv.read_csv(runs["csv"].files[i])
        with pa.memory_map(str(runs["arrow"].files[i])) as source:
            arrow = ipc.open_file(source).read_all()
        assert csv.column_names == ref.column_names == arrow.column_names
        for name in ref.column_names:
            np.testing.assert_array_equal(csv.column(name).to_numpy(), ref.column(name).to_numpy())
            np.testing.assert_array_equal(arrow.column(name).to_numpy(), ref.column(name).to_numpy())


# ------------------------------------------------------------------------------------------ clean sessions


@pytest.mark.parametrize("participant", [None, "AV-P01", "AV-P02"])
def test_clean_session_stays_clear_of_every_limit(
    example: LoadedProtocol, tmp_path: Path, participant: str | None
) -> None:
    # The logged values themselves (noise included) stay outside every near-miss band of the effective limits.
    out = simulate(example, tmp_path, participant=participant, scenario=[], seed=2, duration=180.0)
    assert out.truth.incidents == ()
    effective = resolve(example.protocol, participant).protocol
    nm = effective.near_miss
    main = _table(out, "main")
    cuffs = _table(out, "cuffs")
    for name, joint in effective.joints.items():
        ch = joint.channels
        assert joint.range.planned is not None and ch.position is not None
        x = main.column(ch.position.column).to_numpy()
        lo, hi = joint.range.planned.min, joint.range.planned.max
        assert x.max() < hi.magnitude - band(hi, nm.position) / math.radians(1), name
        assert x.min() > lo.magnitude + band(lo, nm.position) / math.radians(1), name
        if ch.velocity is not None and joint.speed.planned is not None:
            v = main.column(ch.velocity.column).to_numpy()
            limit = joint.speed.planned.positive
            assert np.abs(v).max() < limit.magnitude - band(limit, nm.speed) * 180 / math.pi, name
        if ch.torque is not None and joint.torque.planned is not None:
            tau = main.column(ch.torque.column).to_numpy()
            limit = joint.torque.planned.positive
            assert np.abs(tau).max() < limit.magnitude - band(limit, nm.torque), name
    for name, contact in effective.contacts.items():
        force = contact.channels.force
        assert force is not None
        f = np.sqrt(sum(np.square(cuffs.column(c).to_numpy()) for c in force.all_columns))
        assert f.max() < contact.force.quasi_static.si - band(contact.force.quasi_static, nm.force), name
        assert contact.sustained is not None and f.max() < contact.sustained.level.si, name


def test_participant_cautions_shape_the_movements(example: LoadedProtocol, tmp_path: Path) -> None:
    # AV-P01's shoulder subluxation caution sets shoulder flexion's planned max to 80 deg; nominal is 120.
    out = simulate(example, tmp_path, participant="AV-P01", scenario=[], seed=5, duration=300.0)
    x = _table(out, "main").column("sh_flex_pos").to_numpy()
    assert 40.0 < x.max() < 80.0 - 3.0
    assert out.truth.cautions == ("spasticity", "shoulder_subluxation")


def test_locked_joint_holds_still(full_session: SimulationOutput) -> None:
    # forearm_rotation is locked (tolerance 2 deg): only sensor noise and offset move it.
    x = _table(full_session, "main").column("fa_rot_pos").to_numpy()
    info = {c.column: c for c in full_session.truth.channels}["fa_rot_pos"]
    assert np.abs(x - info.offset).max() < 6 * info.noise + info.step


@settings(max_examples=4, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(seed=st.integers(0, 10_000), participant=st.sampled_from([None, "AV-P01", "AV-P02"]))
def test_any_seed_gives_truth_inside_the_log(
    example: LoadedProtocol, tmp_path: Path, seed: int, participant: str | None
) -> None:
    out = simulate(
        example, tmp_path / f"{seed}-{participant}", participant=participant, seed=seed, duration=110.0
    )
    streams = {s.name: s for s in out.truth.streams}
    assert out.truth.incidents
    for e in out.truth.incidents:
        s = streams[e.stream]
        assert s.t_first <= e.t_start <= e.t_end <= s.t_last and 0 <= e.i_start <= e.i_end < s.rows


# ------------------------------------------------------------------------------------------ protocols and
# errors


def _drop_contacts(data: dict[str, Any]) -> None:
    data.pop("contacts")
    for caution in data["cautions"].values():
        caution["effects"] = [e for e in caution["effects"] if "contact" not in e]


def test_incident_needing_a_missing_channel_is_an_error(example: LoadedProtocol, tmp_path: Path) -> None:
    loaded = variant(tmp_path, _drop_contacts)
    with pytest.raises(SimulationError, match="incident 'force_peak' needs a contact"):
        simulate(loaded, tmp_path / "out", scenario=[lookup("force_peak")])
    out = simulate(loaded, tmp_path / "out")  # the default scenario leaves it out and says why
    skipped = {s.incident: s.reason for s in out.truth.skipped}
    assert set(skipped) == {"force_peak", "sustained_pressure"}
    assert "needs a contact" in skipped["force_peak"]


def test_stop_needs_a_logged_trigger(tmp_path: Path) -> None:
    loaded = variant(tmp_path, lambda d: d["logging"].pop("triggers"))
    with pytest.raises(SimulationError, match=r"logging\.triggers"):
        simulate(loaded, tmp_path / "out", scenario=[lookup("emergency_stop")])


def test_unknown_or_ineligible_subjects_are_named(example: LoadedProtocol, tmp_path: Path) -> None:
    with pytest.raises(SimulationError, match="did you mean 'elbow_flexion'"):
        simulate(example, tmp_path, scenario=[lookup("near_miss:elbow")])
    with pytest.raises(SimulationError, match="'forearm_rotation': it is locked"):
        simulate(example, tmp_path, scenario=[lookup("range_exceedance:forearm_rotation")])
    with pytest.raises(KeyError, match="did you mean 'near_miss'"):
        lookup("near-mis")


def test_a_named_subject_is_used(example: LoadedProtocol, tmp_path: Path) -> None:
    out = simulate(
        example,
        tmp_path,
        scenario=[lookup("near_miss:shoulder_rotation"), lookup("force_peak:forearm_cuff")],
        duration=60.0,
    )
    # A push to 1.15 × 75 N = 86.25 N on the 30 cm² forearm cuff is also 2.875 N/cm²: inside the near-miss
    # band (10 %, 0.3 N/cm²) of its 3 N/cm² transient pressure limit, so the truth lists that too.
    assert [(e.incident, e.subject, e.quantity, e.kind) for e in out.truth.incidents] == [
        ("near_miss", "shoulder_rotation", "position", "near_miss"),
        ("force_peak", "forearm_cuff", "force", "violation"),
        ("force_peak", "forearm_cuff", "pressure", "near_miss"),
    ]
    pressure = out.truth.incidents[2]
    assert (
        pressure.unit == "N/cm^2"
        and pressure.limit == 3.0
        and pressure.peak == pytest.approx(2.875, abs=0.01)
    )


def test_too_short_a_session_says_how_long_it_must_be(example: LoadedProtocol, tmp_path: Path) -> None:
    with pytest.raises(SimulationError, match=r"need at least \d+ s of session"):
        simulate(example, tmp_path, duration=30.0)


def test_time_column_in_milliseconds(tmp_path: Path) -> None:
    def to_ms(d: dict[str, Any]) -> None:
        d["logging"]["streams"]["cuffs"]["time"]["unit"] = "ms"

    out = simulate(variant(tmp_path, to_ms), tmp_path / "out", scenario=[], duration=10.0)
    t = pq.read_table(out.files[1]).column("t_cuff").to_numpy()
    factor, _ = parse_unit("ms")
    assert factor == 1e-3 and t[1] == pytest.approx(2.0) and t[-1] == pytest.approx(9998.0)


def test_truth_json_reads_back(full_session: SimulationOutput) -> None:
    data = json.loads(full_session.truth_path.read_text())
    assert data["bracer_simulation"] == 1 and data["seed"] == 1
    assert len(data["incidents"]) == len(full_session.truth.incidents)
    first = data["incidents"][0]
    for key in ("subject", "quantity", "kind", "t_start", "t_end", "t_peak", "peak", "limit", "unit"):
        assert key in first
    assert data["parameters"]["body_mass"] == 70.0 and data["parameters"]["height"] == 1.70


def test_logged_values_sit_on_their_channels_steps(full_session: SimulationOutput) -> None:
    # Quantisation survives the conversion to the declared unit: every logged reading is a whole number of
    # steps (a 17-bit encoder's 360/2¹⁷ deg, 0.01 deg/s, 100 N·m/2¹⁶, 1000 N/2¹⁶).
    for info in full_session.truth.channels:
        if info.step == 0:
            continue
        values = _table(full_session, info.stream).column(info.column).to_numpy()
        steps = values / info.step
        np.testing.assert_allclose(steps, np.round(steps), atol=1e-6, err_msg=info.column)
    steps = {c.column: c.step for c in full_session.truth.channels}
    assert steps["elb_pos"] == pytest.approx(360 / 2**17) and steps["elb_vel"] == pytest.approx(0.01)
    assert steps["elb_tau"] == pytest.approx(100 / 2**16) and steps["ua_fz"] == pytest.approx(1000 / 2**16)
