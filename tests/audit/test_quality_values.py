"""Data-quality checks of the values: missing values, constant channels, saturation, force offset at rest
and suspected unit errors.  Each case asserts the exact findings and that the affected samples are not
analysed."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "data" / "logs"))
import logmaker

from bracer.findings import Kind, Severity


def _ours(outcome, code: str) -> list:
    return [f for f in outcome.findings if f.code == code]


def _with(table, name: str, change):  # -> pa.Table
    x = table.column(name).to_numpy().astype(float)
    return logmaker.replace_column(table, name, change(x.copy()))


def _nan(i0: int, i1: int):
    def change(x: np.ndarray) -> np.ndarray:
        x[i0:i1] = np.nan
        return x

    return change


def test_clean_session_has_no_value_findings(tmp_path: Path) -> None:
    assert logmaker.quality_of(tmp_path).findings == ()


def test_missing_value_runs_by_length(tmp_path: Path) -> None:
    main = _with(logmaker.main_table(), "elb_pos", _nan(200, 202))  # 2 samples: a hole of 3 periods
    main = _with(main, "elb_pos", _nan(600, 601))  # 1 sample: a hole of 2 periods, as the gap rule allows
    q = logmaker.quality_of(tmp_path, main=main)
    found = [(f.severity, f.i_start, f.i_end, f.subject, f.channel) for f in _ours(q, "Q106")]
    assert found == [
        (Severity.WARNING, 200, 201, "elbow_flexion", "elb_pos"),
        (Severity.INFO, 600, 600, "elbow_flexion", "elb_pos"),
    ]
    first = _ours(q, "Q106")[0]
    assert first.t_start == pytest.approx(0.199) and first.t_end == pytest.approx(0.202)
    sig = q.session.signal("main", "elb_pos")
    assert sig is not None and not sig.valid[[200, 201, 600]].any() and sig.valid[202:600].all()


def test_channel_without_any_value_is_not_assessable(tmp_path: Path) -> None:
    cuffs = _with(logmaker.cuff_table(), "fa_fz", _nan(0, 500))
    q = logmaker.quality_of(tmp_path, cuffs=cuffs)
    (f,) = _ours(q, "Q106")
    assert (f.kind, f.severity, f.subject, f.channel) == (
        Kind.NOT_ASSESSABLE,
        Severity.ERROR,
        "forearm_cuff",
        "fa_fz",
    )
    cov = {c.column: c for c in q.coverage.channels}
    assert cov["fa_fz"].present and cov["fa_fz"].analysed_s == 0


def test_missing_status_values(tmp_path: Path) -> None:
    import pyarrow as pa

    main = logmaker.main_table()
    estop = main.column("estop").to_numpy().astype(float)
    estop[50:60] = np.nan
    main = logmaker.replace_column(main, "estop", pa.array(estop, mask=np.isnan(estop)))
    (f,) = _ours(logmaker.quality_of(tmp_path, main=main), "Q106")
    assert (f.channel, f.i_start, f.i_end, f.subject) == ("estop", 50, 59, None)


def test_constant_channel_is_not_analysed(tmp_path: Path) -> None:
    main = logmaker.replace_column(logmaker.main_table(), "elb_tau", np.full(1000, 0.0))
    q = logmaker.quality_of(tmp_path, main=main)
    (f,) = _ours(q, "Q107")
    assert (f.severity, f.quantity, f.subject, f.channel, f.peak, f.unit) == (
        Severity.WARNING,
        "constant",
        "elbow_flexion",
        "elb_tau",
        0.0,
        "N*m",
    )
    assert (f.i_start, f.i_end) == (0, 999)
    sig = q.session.signal("main", "elb_tau")
    assert sig is not None and not sig.valid.any()
    assert {c.column: c.analysed_s for c in q.coverage.channels}["elb_tau"] == 0
    assert {f.code for f in q.findings} == {"Q107"}


def _plateau(i0: int, i1: int, value: float):
    def change(x: np.ndarray) -> np.ndarray:
        x[i0:i1] = value
        return x

    return change


def test_saturation_at_the_top_of_the_range(tmp_path: Path) -> None:
    cuffs = _with(logmaker.cuff_table(), "ua_fx", _plateau(200, 240, 9.5))  # above every other value
    q = logmaker.quality_of(tmp_path, cuffs=cuffs)
    (f,) = _ours(q, "Q108")
    assert (f.severity, f.quantity, f.subject, f.channel, f.i_start, f.i_end) == (
        Severity.WARNING,
        "saturation",
        "upper_arm_cuff",
        "ua_fx",
        200,
        239,
    )
    assert f.peak == 9.5 and f.unit == "N" and "largest value 9.5 N" in f.message
    assert f.t_start == pytest.approx(0.4) and f.t_end == pytest.approx(0.478)
    sig = q.session.signal("cuffs", "ua_fx")
    assert (
        sig is not None and not sig.valid[200:240].any() and sig.valid[:200].all() and sig.valid[240:].all()
    )


def test_saturation_at_the_bottom_of_the_range(tmp_path: Path) -> None:
    main = _with(logmaker.main_table(), "sh_flex_tau", _plateau(500, 530, -7.25))
    (f,) = _ours(logmaker.quality_of(tmp_path, main=main), "Q108")
    assert (f.channel, f.i_start, f.i_end, f.peak) == ("sh_flex_tau", 500, 529, -7.25)
    assert "smallest value" in f.message


@pytest.mark.parametrize(
    "column, i0, i1, value",
    [
        ("ua_fx", 200, 209, 9.5),  # 9 samples (18 ms at 500 Hz): shorter than 10 samples and 20 ms
        ("ua_fx", 200, 260, 0.0),  # flat at zero: a sensor at rest, not clipped
    ],
)
def test_not_saturation(tmp_path: Path, column: str, i0: int, i1: int, value: float) -> None:
    cuffs = _with(logmaker.cuff_table(), column, _plateau(i0, i1, value))
    assert _ours(logmaker.quality_of(tmp_path, cuffs=cuffs), "Q108") == []


def test_position_flat_at_its_extreme_is_not_saturation(tmp_path: Path) -> None:
    main = _with(logmaker.main_table(), "elb_pos", _plateau(400, 600, 80.0))
    main = _with(main, "elb_vel", _plateau(400, 600, 0.0))
    assert _ours(logmaker.quality_of(tmp_path, main=main), "Q108") == []


def _offset(dx: float, dy: float, dz: float):  # -> pa.Table of the cuffs with a constant offset on ua_*
    cuffs = logmaker.cuff_table()
    for axis, d in zip("xyz", (dx, dy, dz), strict=True):
        cuffs = _with(cuffs, f"ua_f{axis}", lambda x, d=d: x + d)
    return cuffs


def test_force_offset_at_rest(tmp_path: Path) -> None:
    q = logmaker.quality_of(tmp_path, cuffs=_offset(3.0, 4.0, 0.0))
    (f,) = _ours(q, "Q109")
    # closed form: an offset vector (3, 4, 0) N has the magnitude 5 N (3-4-5 triangle); sensor noise at rest
    # (SD 0.2 N per axis) moves the median by a few hundredths
    assert f.peak == pytest.approx(5.0, abs=0.1) and f.limit == 3.0 and f.unit == "N"
    assert f.margin == pytest.approx(3.0 - f.peak)
    assert (f.severity, f.quantity, f.subject) == (Severity.WARNING, "offset", "upper_arm_cuff")
    assert f.t_start == 0.0 and f.t_end == pytest.approx(0.998)  # an offset biases the whole stream
    rest = dict(f.extra)["rest_s"]
    assert 0.2 < rest < 0.32  # the two 150 ms rests, less the start-up of the windows
    assert q.session.signal("cuffs", "ua_fx").valid.all()  # readings stay in the analysis


def test_force_offset_within_tolerance(tmp_path: Path) -> None:
    q = logmaker.quality_of(tmp_path, cuffs=_offset(1.2, 1.6, 0.0))  # 2 N < 3 N
    assert _ours(q, "Q109") == []


def test_force_offset_on_the_declared_axis_only(tmp_path: Path) -> None:
    proto = logmaker.protocol_variant(
        tmp_path,
        (
            "force: {columns: [ua_fx, ua_fy, ua_fz], unit: N, stream: cuffs}",
            "force: {columns: [ua_fx, ua_fy, ua_fz], use: axis, axis: ua_fz, unit: N, stream: cuffs}",
        ),
    )
    assert _ours(logmaker.quality_of(tmp_path, cuffs=_offset(3.0, 4.0, 0.0), protocol=proto), "Q109") == []
    (f,) = _ours(logmaker.quality_of(tmp_path, cuffs=_offset(0.0, 0.0, -4.0), protocol=proto), "Q109")
    assert f.peak == pytest.approx(4.0, abs=0.1)


def _q110(outcome) -> set[tuple[str | None, str, Severity]]:
    return {(f.channel, f.quantity, f.severity) for f in _ours(outcome, "Q110")}


def test_velocity_logged_in_rad_per_s_but_declared_deg_per_s(tmp_path: Path) -> None:
    main = _with(logmaker.main_table(), "elb_vel", lambda x: x * math.pi / 180)
    q = logmaker.quality_of(tmp_path, main=main)
    assert _q110(q) == {("elb_vel", "unit", Severity.ERROR), ("elb_pos", "unit", Severity.ERROR)}
    f = _ours(q, "Q110")[0]
    assert f.peak == pytest.approx(math.pi / 180, rel=0.02) and "π/180" in f.message
    for column in ("elb_vel", "elb_pos"):
        sig = q.session.signal("main", column)
        assert sig is not None and not sig.valid.any()


def test_velocity_of_opposite_sign(tmp_path: Path) -> None:
    main = _with(logmaker.main_table(), "sh_abd_vel", lambda x: -x)
    (f, _) = _ours(logmaker.quality_of(tmp_path, main=main), "Q110")
    assert f.severity == Severity.WARNING and "sign" in f.message and f.peak == pytest.approx(-1, rel=0.02)


def test_position_declared_rad_but_logged_in_degrees(tmp_path: Path) -> None:
    proto = logmaker.protocol_variant(
        tmp_path,
        ("position: {column: fa_rot_pos, unit: deg}", "position: {column: fa_rot_pos, unit: rad}"),
    )
    main = _with(logmaker.main_table(), "fa_rot_pos", lambda x: x + 20.0)  # about 20.5 "rad"
    q = logmaker.quality_of(tmp_path, main=main, protocol=proto)
    (f,) = _ours(q, "Q110")
    assert (f.channel, f.severity, f.unit) == (
        "fa_rot_pos",
        Severity.ERROR,
        "rad",
    ) and "full turn" in f.message
    assert not q.session.signal("main", "fa_rot_pos").valid.any()


def test_position_declared_deg_but_logged_in_radians(tmp_path: Path) -> None:
    proto = logmaker.protocol_variant(tmp_path, ("      velocity: {column: elb_vel, unit: deg/s}\n", ""))
    p, _ = logmaker._shape(np.arange(1000) / 1000.0, 1.0)
    main = logmaker.replace_column(logmaker.main_table(), "elb_pos", np.radians(30.0 + 80.0 * p))
    q = logmaker.quality_of(tmp_path, main=main, protocol=proto)
    (f,) = _ours(q, "Q110")
    assert (f.channel, f.severity, f.unit) == (
        "elb_pos",
        Severity.WARNING,
        "deg",
    ) and "probably radians" in f.message
    assert f.peak == pytest.approx(math.radians(80.0), rel=1e-3)


def test_small_movement_in_degrees_is_not_suspected(tmp_path: Path) -> None:
    proto = logmaker.protocol_variant(tmp_path, ("      velocity: {column: elb_vel, unit: deg/s}\n", ""))
    assert _ours(logmaker.quality_of(tmp_path, protocol=proto), "Q110") == []


def test_torque_a_thousand_times_too_large(tmp_path: Path) -> None:
    main = _with(logmaker.main_table(), "elb_tau", lambda x: x * 1000)  # N*mm logged as N*m
    q = logmaker.quality_of(tmp_path, main=main)
    (f,) = _ours(q, "Q110")
    assert (f.channel, f.severity, f.unit) == ("elb_tau", Severity.ERROR, "N*m")
    # the largest declared elbow torque limit is 12 N*m (device layer): the plausible ceiling is 50 × 12
    assert f.limit == pytest.approx(600.0) and f.peak > 2000
    assert not q.session.signal("main", "elb_tau").valid.any()


def test_force_in_millinewton(tmp_path: Path) -> None:
    cuffs = _with(logmaker.cuff_table(), "ua_fx", lambda x: x * 1000)
    (f,) = _ours(logmaker.quality_of(tmp_path, cuffs=cuffs), "Q110")
    assert (f.channel, f.subject) == ("ua_fx", "upper_arm_cuff")
    assert f.limit == pytest.approx(50 * 90.0)  # 50 × the transient limit 90 N
