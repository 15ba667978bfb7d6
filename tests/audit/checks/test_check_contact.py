"""A111 contact-force, A112 contact-pressure, A113 sustained-force on tiny logs."""

from __future__ import annotations

import numpy as np
import pytest
from checkkit import DELETE, clock, context, keys, only, plateau, protocol, still_joint, stream

from bracer.audit.checks import force, pressure, sustained
from bracer.findings import Kind, Severity

DT = 1e-3


def cuff_stream(t: np.ndarray, fx: np.ndarray, fy: np.ndarray | None = None, fz: np.ndarray | None = None):  # type: ignore[no-untyped-def]
    zeros = np.zeros(t.size)
    return stream(
        t, still_joint(t) | {"fx": fx, "fy": zeros if fy is None else fy, "fz": zeros if fz is None else fz}
    )


def run_force(t: np.ndarray, fx: np.ndarray, proto=None, **axes: np.ndarray):  # type: ignore[no-untyped-def]
    return force.run(context(proto or protocol(), cuff_stream(t, fx, **axes)))


def test_vector_magnitude_of_three_axes() -> None:
    # a 3-4-5 right triangle: |(48, 64, 0)| = 80 N, |(36, 48, 0)| = 60 N exactly
    t = clock(2.0)
    fx = plateau(t, 3.0, 48.0, 0.5, 1.5)
    fy = plateau(t, 4.0, 64.0, 0.5, 1.5)
    f = only(run_force(t, fx, fy=fy))
    assert (f.layer, f.peak, f.limit, f.unit) == ("quasi_static", pytest.approx(80.0), 60.0, "N")
    assert f.channel == "fx, fy, fz" and "vector magnitude" in f.message


@pytest.mark.parametrize(
    ("level", "seconds", "expected"),
    [
        (
            70.0,
            0.2,
            set(),
        ),  # above quasi-static for <= 500 ms, within transient: an allowed transient contact
        (70.0, 0.5, set()),  # exactly the allowed 500 ms
        (70.0, 0.8, {"quasi_static"}),  # too long for a transient contact
        (100.0, 0.1, {"transient"}),  # short but above the transient limit
        (100.0, 0.8, {"quasi_static", "transient"}),  # long and above both
        (55.0, 30.0, set()),  # below quasi-static
    ],
)
def test_transient_rule(level: float, seconds: float, expected: set[str]) -> None:
    t = clock(max(2.0, seconds + 1.0))
    fx = plateau(t, 5.0, level, 0.5, 0.5 + seconds)
    found = run_force(t, fx)
    assert {f.layer for f in found} == expected
    assert all(f.kind is Kind.VIOLATION and f.severity is Severity.ERROR for f in found)
    for f in found:
        assert f.t_start == pytest.approx(0.5, abs=DT) and f.t_end == pytest.approx(0.5 + seconds, abs=DT)


def test_without_a_transient_limit_every_exceedance_counts() -> None:
    proto = protocol({"contacts": {"cuff": {"force": {"transient": DELETE}}}})
    t = clock(2.0)
    f = only(run_force(t, plateau(t, 5.0, 70.0, 0.5, 0.6), proto))
    assert f.layer == "quasi_static" and "no transient limit declared" in f.message


def test_declared_axis_uses_that_axis_only() -> None:
    proto = protocol({"contacts": {"cuff": {"channels": {"force": {"use": "axis", "axis": "fz"}}}}})
    t = clock(2.0)
    big_shear = plateau(t, 0.0, 200.0, 0.2, 1.5)  # shear on fx is not the declared normal force
    fz = -plateau(t, 0.0, 65.0, 0.5, 1.5)  # compression logged negative: absolute value
    f = only(run_force(t, big_shear, proto, fz=fz))
    assert f.peak == pytest.approx(65.0) and f.channel == "fz"


def test_missing_force_column_is_not_assessable() -> None:
    t = clock(1.0)
    ch = still_joint(t) | {"fx": np.zeros(t.size), "fy": np.zeros(t.size)}
    f = only(force.run(context(protocol(), stream(t, ch))))
    assert (f.kind, f.severity, f.subject, f.channel) == (Kind.NOT_ASSESSABLE, Severity.ERROR, "cuff", "fz")


def test_force_on_its_own_stream_and_clock() -> None:
    proto = protocol(
        {
            "logging": {"streams": {"cuffs": {"time": {"column": "tc"}, "sample_rate": "500 Hz"}}},
            "contacts": {"cuff": {"channels": {"force": {"stream": "cuffs"}}}},
        }
    )
    t = clock(1.0)
    tc = clock(2.0, 500.0)
    cuffs = stream(
        tc,
        {"fx": plateau(tc, 5.0, 95.0, 1.0, 1.1), "fy": np.zeros(tc.size), "fz": np.zeros(tc.size)},
        name="cuffs",
        rate=500.0,
    )
    f = only(force.run(context(proto, stream(t, still_joint(t)), cuffs)))
    assert f.layer == "transient" and (f.i_start, f.i_end) == (500, 550)
    assert f.t_start == pytest.approx(1.0, abs=2e-3)


def test_pressure_is_force_over_area_in_the_declared_unit() -> None:
    # 100 N on 40 cm² = 2.5 N/cm² (quasi-static 2 N/cm² for 1 s: a quasi-static violation)
    t = clock(2.0)
    found = pressure.run(context(protocol(), cuff_stream(t, plateau(t, 5.0, 100.0, 0.5, 1.5))))
    f = only(found)
    assert (f.code, f.quantity, f.layer, f.unit) == ("A112", "pressure", "quasi_static", "N/cm^2")
    assert f.peak == pytest.approx(2.5) and f.limit == 2.0 and f.margin == pytest.approx(-0.5)


def test_pressure_transient() -> None:
    # 130 N / 40 cm² = 3.25 N/cm² for 0.1 s: transient contact above the 3 N/cm² transient limit
    t = clock(2.0)
    f = only(pressure.run(context(protocol(), cuff_stream(t, plateau(t, 5.0, 130.0, 0.5, 0.6)))))
    assert f.layer == "transient" and f.peak == pytest.approx(3.25)


def test_pressure_only_where_declared() -> None:
    proto = protocol({"contacts": {"cuff": {"pressure": DELETE}}})
    t = clock(2.0)
    assert pressure.run(context(proto, cuff_stream(t, plateau(t, 5.0, 130.0, 0.5, 0.6)))) == []


@pytest.mark.parametrize(("seconds", "n"), [(15.0, 0), (20.0, 0), (25.0, 1)])
def test_sustained_force(seconds: float, n: int) -> None:
    t = clock(seconds + 5.0, 100.0)
    fx = plateau(t, 5.0, 40.0, 2.0, 2.0 + seconds)
    found = sustained.run(context(protocol(), cuff_stream(t, fx)))
    assert len(found) == n
    if n:
        f = found[0]
        assert (f.quantity, f.unit, f.limit, f.kind) == ("sustained_force", "s", 20.0, Kind.VIOLATION)
        assert f.peak == pytest.approx(seconds, abs=0.01)
        assert dict(f.extra)["peak_force"] == pytest.approx(40.0)


def test_sustained_counts_force_exactly_at_the_level() -> None:
    t = clock(30.0, 100.0)
    f = only(sustained.run(context(protocol(), cuff_stream(t, plateau(t, 5.0, 35.0, 2.0, 25.0)))))
    assert f.peak == pytest.approx(23.0, abs=0.01)


def test_sustained_hysteresis_bridges_small_dips() -> None:
    t = clock(40.0, 100.0)
    fx = plateau(t, 5.0, 36.0, 2.0, 30.0)
    fx[(t > 12) & (t < 12.5)] = 34.8  # 0.2 N under the level, within 2 % (0.7 N)
    f = only(sustained.run(context(protocol(), cuff_stream(t, fx))))
    assert f.peak == pytest.approx(28.0, abs=0.01)


def test_sustained_without_force_channel_is_not_assessable() -> None:
    t = clock(1.0)
    f = only(sustained.run(context(protocol(), stream(t, still_joint(t)))))
    assert f.kind is Kind.NOT_ASSESSABLE and f.quantity == "sustained_force"


def test_keys_of_a_mixed_session() -> None:
    t = clock(4.0)
    fx = plateau(t, 5.0, 100.0, 0.5, 0.6) + plateau(t, 0.0, 65.0, 2.0, 3.0)
    ctx = context(protocol(), cuff_stream(t, fx))
    assert keys(force.run(ctx) + pressure.run(ctx)) == {
        ("A111", "violation", "cuff", "force", "transient", None),
        ("A111", "violation", "cuff", "force", "quasi_static", None),
    }  # 100 N / 40 cm² = 2.5 N/cm² for 0.1 s is a transient contact within the 3 N/cm² transient pressure


def test_pressure_without_force_channel_is_not_assessable() -> None:
    t = clock(1.0)
    f = only(pressure.run(context(protocol(), stream(t, still_joint(t)))))
    assert (f.code, f.kind, f.severity, f.quantity) == (
        "A112",
        Kind.NOT_ASSESSABLE,
        Severity.ERROR,
        "pressure",
    )
