"""bracer's unit table (src/bracer/units.py) checked against pint, an independent general-purpose unit
library.

pint is the oracle for every conversion factor and dimension here.  One deliberate difference: pint treats the
radian as dimensionless (so it would convert ``deg`` into a plain number, or ``N*m/rad`` into ``N*m``), while
bracer keeps the angle a dimension of its own so that a torque written where an angle is expected is an error.
The dimension checks below therefore compare length, mass and time with pint, and read the angle exponent from
the radians left in pint's base-unit expression.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from bracer.units import (
    DIMENSIONS,
    Dimension,
    Quantity,
    UnitError,
    format_number,
    known_units,
    parse_quantity,
    parse_unit,
    quantity,
)

pint = pytest.importorskip("pint")


@pytest.fixture(scope="module")
def ureg():  # type: ignore[no-untyped-def]
    return pint.UnitRegistry()


def _pint_factor_and_dimension(ureg, expr: str) -> tuple[float, Dimension]:  # type: ignore[no-untyped-def]
    """pint's factor to SI base units (radian kept as a unit) and the dimension in bracer's terms."""
    base = ureg.Quantity(1.0, expr).to_base_units()
    dims = base.dimensionality
    units = dict(base.unit_items())
    return float(base.magnitude), Dimension(
        angle=int(units.get("radian", 0)),
        length=int(dims.get("[length]", 0)),
        mass=int(dims.get("[mass]", 0)),
        time=int(dims.get("[time]", 0)),
    )


# Unit expressions a protocol or a log uses, grouped as in the brief; each is checked against pint.
PINT_CASES = [
    # angle, angular speed, angular acceleration
    "deg",
    "rad",
    "°",
    "deg/s",
    "rad/s",
    "°/s",
    "deg/s^2",
    "rad/s^2",
    "deg/s**2",
    # torque and energy
    "N*m",
    "N m",
    "kN*m",
    "J",
    # force
    "N",
    "kN",
    "mN",
    # pressure: N/cm^2 vs kPa vs Pa
    "N/cm^2",
    "N/mm^2",
    "kPa",
    "Pa",
    "MPa",
    # area
    "cm^2",
    "mm^2",
    "m^2",
    # time
    "ms",
    "s",
    "min",
    "h",
    "us",
    # frequency
    "Hz",
    "kHz",
    "1/s",
    # stiffness, speed, acceleration, mass, length
    "N/mm",
    "N/m",
    "mm/s",
    "m/s",
    "m/s^2",
    "kg",
    "g",
    "m",
    "cm",
    "mm",
]


@pytest.mark.parametrize("expr", PINT_CASES)
def test_factor_and_dimension_match_pint(ureg, expr: str) -> None:  # type: ignore[no-untyped-def]
    # Oracle: pint's own definitions (pint default registry, to_base_units).
    factor, dim = parse_unit(expr)
    want_factor, want_dim = _pint_factor_and_dimension(ureg, expr.replace("°", "deg"))
    assert factor == pytest.approx(want_factor, rel=1e-12)
    assert dim == want_dim


@pytest.mark.parametrize("symbol", known_units())
def test_every_symbol_in_the_table_matches_pint(ureg, symbol: str) -> None:  # type: ignore[no-untyped-def]
    # Completeness: a symbol added to the table without a matching pint definition fails here.
    factor, dim = parse_unit(symbol)
    want_factor, want_dim = _pint_factor_and_dimension(ureg, symbol)
    assert factor == pytest.approx(want_factor, rel=1e-12)
    assert dim == want_dim


@pytest.mark.parametrize(
    ("text", "unit", "expected"),
    [
        # Closed-form checks, each also confirmed with pint in the test body.
        ("90 deg/s", "rad/s", math.pi / 2),
        ("180 deg", "rad", math.pi),
        ("1 N/cm^2", "kPa", 10.0),
        ("1 N/cm^2", "Pa", 1e4),
        ("20 N/cm^2", "kPa", 200.0),
        ("12 cm^2", "mm^2", 1200.0),
        ("12 cm^2", "m^2", 12e-4),
        ("300 ms", "s", 0.3),
        ("1.5 min", "s", 90.0),
        ("2 kHz", "Hz", 2000.0),
        ("40 N/mm", "N/m", 40e3),
        ("400 deg/s^2", "rad/s^2", 400 * math.pi / 180),
        ("35 N*m", "kN*m", 0.035),
    ],
)
def test_conversions_agree_with_pint(ureg, text: str, unit: str, expected: float) -> None:  # type: ignore[no-untyped-def]
    q = parse_quantity(text)
    assert q.to(unit) == pytest.approx(expected, rel=1e-12)
    assert q.to(unit) == pytest.approx(ureg.Quantity(text.replace("°", "deg")).to(unit).magnitude, rel=1e-12)


_SAME_DIMENSION_GROUPS = [
    ["deg", "rad"],
    ["deg/s", "rad/s"],
    ["deg/s^2", "rad/s^2"],
    ["N*m", "J", "kN*m"],
    ["N/cm^2", "kPa", "Pa", "MPa", "N/mm^2"],
    ["cm^2", "mm^2", "m^2"],
    ["ms", "s", "min", "us"],
    ["Hz", "kHz"],
    ["N/mm", "N/m"],
    ["N", "kN", "mN"],
]


@given(
    value=st.floats(min_value=-1e6, max_value=1e6, allow_nan=False, allow_infinity=False),
    group=st.sampled_from(_SAME_DIMENSION_GROUPS),
    data=st.data(),
)
def test_any_value_converts_like_pint(ureg, value: float, group: list[str], data) -> None:  # type: ignore[no-untyped-def]
    src = data.draw(st.sampled_from(group))
    dst = data.draw(st.sampled_from(group))
    ours = parse_quantity(f"{value!r} {src}").to(dst)
    theirs = ureg.Quantity(value, src).to(dst).magnitude
    assert ours == pytest.approx(theirs, rel=1e-12, abs=1e-300)


# ------------------------------------------------------------------------------ angle is a dimension here


def test_pint_treats_the_radian_as_dimensionless_and_bracer_does_not(ureg) -> None:  # type: ignore[no-untyped-def]
    # pint: an angle converts to a plain number, and N*m/rad to N*m (radian dimensionless in pint).
    assert ureg.Quantity(180, "deg").to("dimensionless").magnitude == pytest.approx(math.pi)
    assert ureg.Quantity(2, "N*m/rad").to("N*m").magnitude == pytest.approx(2.0)
    # bracer: the angle is its own dimension, so neither is silently accepted.
    assert parse_unit("N*m/rad")[1] != parse_unit("N*m")[1]
    with pytest.raises(UnitError, match="wrong dimension"):
        parse_quantity("180 deg", "dimensionless")


@pytest.mark.parametrize(
    ("text", "expected", "found"),
    [
        ("12 deg", "torque", "angle"),
        ("12 N*m", "angle", "torque"),
        ("90 deg/s", "angle", "angular speed"),
        ("12 N*m/rad", "torque", None),
        ("150 N", "pressure", "force"),
        ("20 kPa", "force", "pressure"),
        ("12 m^2", "area", None),  # m^2 IS an area: control case, must pass
    ],
)
def test_wrong_dimension_is_refused(text: str, expected: str, found: str | None) -> None:
    if text == "12 m^2":
        assert parse_quantity(text, expected).si == 12.0
        return
    with pytest.raises(UnitError) as info:
        parse_quantity(text, expected)
    message = str(info.value)
    assert message.startswith("wrong dimension")
    assert f"expected {expected}" in message
    assert f"'{text}'" in message
    if found is not None:
        assert f"({found})" in message


# ------------------------------------------------------------------------------ spellings


@pytest.mark.parametrize(
    ("spelling", "canonical"),
    [
        ("N·m", "N*m"),
        ("N⋅m", "N*m"),
        ("N m", "N*m"),
        ("N  *  m", "N*m"),
        ("cm²", "cm^2"),
        ("cm**2", "cm^2"),
        ("cm ^ 2", "cm^2"),
        ("mm²", "mm^2"),
        ("deg / s", "deg/s"),
        ("deg/s²", "deg/s^2"),
        ("deg/s/s", "deg/s^2"),
        ("deg s^-1", "deg/s"),
        ("s⁻¹", "Hz"),
        ("1/s", "Hz"),
        ("°", "deg"),
        ("N/cm²", "N/cm^2"),
    ],
)
def test_spellings_mean_the_same_unit(spelling: str, canonical: str) -> None:
    factor, dim = parse_unit(spelling)
    want_factor, want_dim = parse_unit(canonical)
    assert dim == want_dim
    assert factor == pytest.approx(want_factor, rel=1e-15)


@pytest.mark.parametrize(
    ("text", "si", "unit"),
    [
        ("1e3 Hz", 1000.0, "Hz"),
        ("1E3Hz", 1000.0, "Hz"),
        ("2.5e-1 kHz", 250.0, "kHz"),
        ("-10 deg", -10 * math.pi / 180, "deg"),
        ("+10 deg", 10 * math.pi / 180, "deg"),
        (".5 s", 0.5, "s"),
        ("120deg", 120 * math.pi / 180, "deg"),
        ("  35   N*m ", 35.0, "N*m"),
    ],
)
def test_numbers_in_all_usual_forms(text: str, si: float, unit: str) -> None:
    q = parse_quantity(text)
    assert q.si == pytest.approx(si, rel=1e-15)
    assert q.unit == unit


@pytest.mark.parametrize(
    ("unit", "hint"),
    [
        ("Nm", "N*m"),
        ("degs", "deg"),
        ("degrees", "deg"),
        ("KPa", "kPa"),
        ("kpa", "kPa"),
        ("HZ", "Hz"),
        ("hz", "Hz"),
        ("sec", "s"),
        ("newton", "N"),
        ("mm2", "mm^2"),
        ("cm2", "cm^2"),
        ("MS", "ms"),
        ("µs", "us"),
    ],
)
def test_unknown_units_suggest_the_likely_one(unit: str, hint: str) -> None:
    with pytest.raises(UnitError, match=f"unknown unit '{_re(unit)}'.*did you mean '{_re(hint)}'"):
        parse_unit(unit)


def test_unknown_unit_inside_an_expression_names_the_symbol_and_the_expression() -> None:
    with pytest.raises(UnitError, match=r"unknown unit 'Nm' in 'Nm/rad'; did you mean 'N\*m'\?"):
        parse_unit("Nm/rad")


def test_unknown_unit_with_nothing_close_lists_the_known_units() -> None:
    with pytest.raises(UnitError) as info:
        parse_unit("furlong")
    message = str(info.value)
    assert "did you mean" not in message
    assert "known units:" in message
    assert all(symbol in message for symbol in ("deg", "N", "kPa", "Hz"))


@pytest.mark.parametrize("value", [120, 1.5, -3, 0, "120", "  3.0  ", "1e3"])
def test_bare_numbers_are_refused(value: object) -> None:
    with pytest.raises(UnitError, match="number without a unit"):
        parse_quantity(value, "angle")


def test_bare_number_message_says_what_unit_would_do() -> None:
    with pytest.raises(UnitError) as info:
        parse_quantity(120, "angle")
    assert "such as '120 deg'" in str(info.value)
    assert "deg, rad" in str(info.value)


@pytest.mark.parametrize("value", [True, False, None, [1, "deg"], {"value": 1}])
def test_non_text_values_are_refused(value: object) -> None:
    with pytest.raises(UnitError, match="expected a quantity with a unit"):
        parse_quantity(value, "angle")


@pytest.mark.parametrize(
    "unit",
    [
        "N**",
        "/s",
        "deg//s",
        "N*",
        "*N",
        "N/",
        "N^",
        "N^^2",
        "N^2^3",
        "**2",
        "deg**/s",
        "deg^1.5",
        "N.m",
        "N-m",
        "N/(cm^2)",
        "m^5",
        "s^-9",
    ],
)
def test_malformed_expressions_are_refused(unit: str) -> None:
    with pytest.raises(UnitError, match="malformed unit"):
        parse_unit(unit)
    with pytest.raises(UnitError, match="malformed unit"):
        parse_quantity(f"1 {unit}")


@pytest.mark.parametrize("unit", ["", "   "])
def test_empty_unit_is_refused(unit: str) -> None:
    with pytest.raises(UnitError, match="no unit given"):
        parse_unit(unit)


@pytest.mark.parametrize("text", ["nan deg", "inf deg", "deg", "1e400 deg", "1e308 kN"])
def test_not_a_finite_number_is_refused(text: str) -> None:
    with pytest.raises(UnitError, match=r"not a finite number|expected a number followed by a unit"):
        parse_quantity(text)


# ------------------------------------------------------------------------------ Quantity


def test_quantity_keeps_what_the_file_said_and_the_internal_value() -> None:
    q = parse_quantity("90 deg/s", "angular speed")
    assert (q.magnitude, q.unit) == (90.0, "deg/s")
    assert q.si == pytest.approx(math.pi / 2)  # 90 deg/s = pi/2 rad/s (closed form)
    assert str(q) == "90 deg/s"
    assert q.to("rad/s") == pytest.approx(math.pi / 2)


def test_quantity_scaled_and_with_si_stay_in_the_declared_unit() -> None:
    q = parse_quantity("90 deg/s")
    half = q.scaled(0.5)
    assert (half.magnitude, half.unit) == (45.0, "deg/s")
    assert half.si == pytest.approx(math.pi / 4)
    back = q.with_si(math.pi / 4)
    assert back.magnitude == pytest.approx(45.0)
    assert back.unit == "deg/s"


def test_quantity_to_another_dimension_is_refused() -> None:
    with pytest.raises(UnitError, match=r"cannot express 12 N\*m \(torque\) in 'deg' \(angle\)"):
        quantity(12, "N*m").to("deg")


def test_quantity_is_frozen() -> None:
    q = quantity(1, "N")
    with pytest.raises(AttributeError):
        q.si = 2.0  # type: ignore[misc]
    assert isinstance(q, Quantity)


@pytest.mark.parametrize(
    ("value", "text"),
    [
        (0.0, "0"),
        (120.0, "120"),
        (0.785398163, "0.7854"),
        (1e-5, "1e-5"),
        (123456.0, "1.235e5"),
        (-2.5, "-2.5"),
    ],
)
def test_format_number(value: float, text: str) -> None:
    assert format_number(value) == text


def test_every_named_dimension_has_an_example_that_parses_to_it() -> None:
    # The examples shown in error messages must themselves be valid units of that dimension.
    for name, (dim, examples) in DIMENSIONS.items():
        for example in examples.split(","):
            assert parse_unit(example.strip())[1] == dim, (name, example)


def _re(text: str) -> str:
    import re

    return re.escape(text)
