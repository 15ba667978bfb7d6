"""Units: a small, strict table of the units a protocol or a log may use.

Every number in a protocol file carries its unit (``120 deg``, ``2.5 rad/s``, ``35 N*m``).  Values are
converted once, at load time, to one internal system -- SI with the radian for angles:

==================  ==========
quantity            internal
==================  ==========
angle               rad
angular speed       rad/s
angular accel.      rad/s^2
torque              N*m
force               N
length              m
area                m^2
pressure            Pa (N/m^2)
time                s
frequency           Hz (1/s)
==================  ==========

Why not pint at run time: building a pint registry costs about half a second, which a command-line tool used
many times a day cannot afford.  pint stays the oracle the test-suite checks this table against
(``tests/test_units.py``).  Unlike pint, the angle is a dimension of its own here, so that a torque given
where an angle is expected is an error and not a silent conversion.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Final

__all__ = [
    "DIMENSIONS",
    "Dimension",
    "Quantity",
    "UnitError",
    "dimension_name",
    "format_number",
    "known_units",
    "parse_quantity",
    "parse_unit",
]


class UnitError(ValueError):
    """A unit or a quantity could not be read, or has the wrong dimension."""


@dataclass(frozen=True, slots=True)
class Dimension:
    """Exponents of the base dimensions: angle, length, mass, time."""

    angle: int = 0
    length: int = 0
    mass: int = 0
    time: int = 0

    def __mul__(self, other: Dimension) -> Dimension:
        return Dimension(
            self.angle + other.angle,
            self.length + other.length,
            self.mass + other.mass,
            self.time + other.time,
        )

    def __pow__(self, power: int) -> Dimension:
        return Dimension(self.angle * power, self.length * power, self.mass * power, self.time * power)


_NONE = Dimension()
_ANGLE = Dimension(angle=1)
_LENGTH = Dimension(length=1)
_MASS = Dimension(mass=1)
_TIME = Dimension(time=1)
_FORCE = Dimension(length=1, mass=1, time=-2)

#: Named dimensions, in the words error messages use, with example units.
DIMENSIONS: Final[dict[str, tuple[Dimension, str]]] = {
    "dimensionless": (_NONE, "1"),
    "angle": (_ANGLE, "deg, rad"),
    "angular speed": (_ANGLE * _TIME**-1, "deg/s, rad/s"),
    "angular acceleration": (_ANGLE * _TIME**-2, "deg/s^2, rad/s^2"),
    "torque": (_FORCE * _LENGTH, "N*m"),
    "force": (_FORCE, "N, kN"),
    "length": (_LENGTH, "m, cm, mm"),
    "area": (_LENGTH**2, "cm^2, mm^2, m^2"),
    "pressure": (_FORCE * _LENGTH**-2, "N/cm^2, kPa"),
    "time": (_TIME, "s, ms"),
    "frequency": (_TIME**-1, "Hz, kHz"),
    "speed": (_LENGTH * _TIME**-1, "m/s, mm/s"),
    "acceleration": (_LENGTH * _TIME**-2, "m/s^2"),
    "mass": (_MASS, "kg, g"),
    "stiffness": (_FORCE * _LENGTH**-1, "N/mm, N/m"),
}
_NAME_OF: Final[dict[Dimension, str]] = {dim: name for name, (dim, _) in DIMENSIONS.items()}
# energy shares the dimension of torque; torque is the name this trade needs.

#: Unit symbols: factor to the internal unit, and dimension.
_SYMBOLS: Final[dict[str, tuple[float, Dimension]]] = {
    "rad": (1.0, _ANGLE),
    "deg": (math.pi / 180.0, _ANGLE),
    "°": (math.pi / 180.0, _ANGLE),
    "m": (1.0, _LENGTH),
    "cm": (1e-2, _LENGTH),
    "mm": (1e-3, _LENGTH),
    "kg": (1.0, _MASS),
    "g": (1e-3, _MASS),
    "s": (1.0, _TIME),
    "ms": (1e-3, _TIME),
    "us": (1e-6, _TIME),
    "min": (60.0, _TIME),
    "h": (3600.0, _TIME),
    "Hz": (1.0, _TIME**-1),
    "kHz": (1e3, _TIME**-1),
    "N": (1.0, _FORCE),
    "kN": (1e3, _FORCE),
    "mN": (1e-3, _FORCE),
    "Pa": (1.0, _FORCE * _LENGTH**-2),
    "kPa": (1e3, _FORCE * _LENGTH**-2),
    "MPa": (1e6, _FORCE * _LENGTH**-2),
    "J": (1.0, _FORCE * _LENGTH),
}
#: Spellings people type that are not symbols here, with the symbol they probably meant.
_SUGGEST: Final[dict[str, str]] = {
    "Nm": "N*m",
    "degree": "deg",
    "degrees": "deg",
    "deg.": "deg",
    "radian": "rad",
    "radians": "rad",
    "sec": "s",
    "second": "s",
    "seconds": "s",
    "msec": "ms",
    "newton": "N",
    "newtons": "N",
    "n": "N",
    "hz": "Hz",
    "khz": "kHz",
    "kpa": "kPa",
    "pa": "Pa",
    "cm2": "cm^2",
    "mm2": "mm^2",
    "m2": "m^2",
    "µs": "us",
}

_SUPERSCRIPTS: Final[dict[str, str]] = {"⁻¹": "^-1", "⁻²": "^-2", "⁻³": "^-3", "²": "^2", "³": "^3"}
#: Symbols for multiplication people type: the middle dot, the dot operator and the multiplication sign.
_TIMES: Final[tuple[str, ...]] = ("·", "⋅", "×")
# A term: a symbol, or the number 1 (as in '1/s'), with an optional integer exponent.
_TERM = re.compile(r"^([A-Za-z°µ]+|1)(?:(?:\^|\*\*)([+-]?\d+))?$")
#: Largest exponent magnitude a term may carry (m^4 is the highest power a limit here needs).
_MAX_EXPONENT = 4
_NUMBER = re.compile(r"^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*?)\s*$")


def dimension_name(dim: Dimension) -> str:
    """The word for a dimension (``"torque"``), or its exponents when it has no name."""
    name = _NAME_OF.get(dim)
    if name is not None:
        return name
    return f"angle^{dim.angle}·length^{dim.length}·mass^{dim.mass}·time^{dim.time}"


def known_units() -> tuple[str, ...]:
    """Every unit symbol the table knows, sorted (compound units combine them with ``*``, ``/``, ``^``)."""
    return tuple(sorted(_SYMBOLS))


def _normalise(text: str) -> str:
    for sup, plain in _SUPERSCRIPTS.items():
        text = text.replace(sup, plain)
    for times in _TIMES:
        text = text.replace(times, "*")
    text = re.sub(r"\s*(\*\*|\*|/|\^)\s*", r"\1", text.strip())
    return re.sub(r"\s+", "*", text)


def parse_unit(text: str) -> tuple[float, Dimension]:
    """Read a unit expression such as ``N*m``, ``deg/s^2`` or ``N/cm^2``.

    Returns
    -------
    factor : float
        Multiply a value in this unit by ``factor`` to get the internal unit.
    dimension : Dimension

    Raises
    ------
    UnitError
        Unknown symbol (with a suggestion where one is close) or malformed expression.
    """
    raw = text.strip()
    if not raw:
        raise UnitError("no unit given")
    if raw in _SUGGEST:
        raise UnitError(f"unknown unit '{raw}'; did you mean '{_SUGGEST[raw]}'?")
    expr = _normalise(raw)
    factor = 1.0
    dim = _NONE
    # Split into terms keeping the operator before each; a/b/c means a/(b*c), as in pint.
    parts = re.split(r"(\*\*|\*|/)", expr)
    # Re-join '**' exponent markers that the split separated from their term.
    tokens: list[str] = []
    i = 0
    while i < len(parts):
        if parts[i] == "**" and tokens:
            tokens[-1] = tokens[-1] + "**" + parts[i + 1]
            i += 2
            continue
        tokens.append(parts[i])
        i += 1
    op = "*"
    expect_term = True
    for tok in tokens:
        if tok in ("*", "/"):
            if expect_term:
                raise UnitError(f"malformed unit '{raw}'")
            op = tok
            expect_term = True
            continue
        if not tok:
            if expect_term:
                raise UnitError(f"malformed unit '{raw}'")
            continue
        m = _TERM.match(tok)
        if m is None:
            raise UnitError(f"malformed unit '{raw}' (could not read '{tok}')")
        symbol, exp_text = m.group(1), m.group(2)
        if symbol == "1":
            f, d = 1.0, _NONE
        elif symbol in _SYMBOLS:
            f, d = _SYMBOLS[symbol]
        else:
            where = "" if symbol == raw else f" in '{raw}'"
            hint = _suggest(symbol)
            suffix = f"; did you mean '{hint}'?" if hint else f"; known units: {', '.join(known_units())}"
            raise UnitError(f"unknown unit '{symbol}'{where}{suffix}")
        exponent = int(exp_text) if exp_text else 1
        if abs(exponent) > _MAX_EXPONENT:
            raise UnitError(
                f"malformed unit '{raw}': exponent {exponent} of '{symbol}' is out of range "
                f"(at most {_MAX_EXPONENT} either way)"
            )
        if op == "/":
            exponent = -exponent
        factor *= f**exponent
        dim = dim * d**exponent
        expect_term = False
    if expect_term:
        raise UnitError(f"malformed unit '{raw}'")
    return factor, dim


def _suggest(symbol: str) -> str | None:
    """The unit someone typing ``symbol`` probably meant: a known misspelling, the same letters in another
    case (``KPa`` -> ``kPa``), or the closest symbol."""
    hint = _SUGGEST.get(symbol)
    if hint is not None:
        return hint
    same_letters = [known for known in _SYMBOLS if known.lower() == symbol.lower()]
    if len(same_letters) == 1:
        return same_letters[0]
    import difflib

    close = difflib.get_close_matches(symbol, list(_SYMBOLS), n=1)
    return close[0] if close else None


@dataclass(frozen=True, slots=True)
class Quantity:
    """A number with its unit, as declared, and its value in the internal unit.

    ``magnitude`` and ``unit`` are what the file said (kept for messages and reports);
    ``si`` is the value in the internal unit system (see the module docstring).
    """

    magnitude: float
    unit: str
    si: float
    dimension: Dimension

    def to(self, unit: str) -> float:
        """This quantity's value in ``unit`` (same dimension required)."""
        factor, dim = parse_unit(unit)
        if dim != self.dimension:
            raise UnitError(
                f"cannot express {self} ({dimension_name(self.dimension)}) in '{unit}' "
                f"({dimension_name(dim)})"
            )
        return self.si / factor

    def with_si(self, si: float) -> Quantity:
        """A quantity of the same unit holding the internal value ``si``."""
        factor, _ = parse_unit(self.unit)
        return Quantity(si / factor, self.unit, si, self.dimension)

    def scaled(self, factor: float) -> Quantity:
        return Quantity(self.magnitude * factor, self.unit, self.si * factor, self.dimension)

    def __str__(self) -> str:
        return f"{format_number(self.magnitude)} {self.unit}"


def format_number(value: float, digits: int = 4) -> str:
    """A compact human form: up to ``digits`` significant digits, no trailing zeros."""
    if value == 0:
        return "0"
    if not math.isfinite(value):
        return str(value)
    text = f"{value:.{digits}g}"
    if "e" in text:
        mantissa, exp = text.split("e")
        return f"{mantissa}e{int(exp)}"
    return text


def quantity(magnitude: float, unit: str) -> Quantity:
    """Build a quantity from a number and a unit expression."""
    factor, dim = parse_unit(unit)
    return Quantity(float(magnitude), unit, float(magnitude) * factor, dim)


def parse_quantity(value: object, expected: str | None = None) -> Quantity:
    """Read ``"120 deg"`` into a :class:`Quantity`, checking its dimension.

    Parameters
    ----------
    value
        The scalar as it came from the file.  A bare number is refused: every number carries its unit.
    expected
        A key of :data:`DIMENSIONS` (``"angle"``, ``"torque"`` ...), or None to accept any dimension.
    """
    want = DIMENSIONS[expected] if expected is not None else None
    example = f" such as '{_example(expected)}'" if expected else ""
    if isinstance(value, bool) or value is None:
        raise UnitError(f"expected a quantity with a unit{example}, found {value!r}")
    if isinstance(value, int | float):
        raise UnitError(
            f"number without a unit: found {value!r}, expected a quantity with its unit{example}"
            + (f" ({expected}: {want[1]})" if want else "")
        )
    if not isinstance(value, str):
        kind = type(value).__name__
        if isinstance(value, dict | list):
            kind = "a mapping" if isinstance(value, dict) else "a list"
        raise UnitError(f"expected a quantity with a unit{example}, found {kind}")
    m = _NUMBER.match(value)
    if m is None:
        raise UnitError(f"expected a number followed by a unit{example}, found '{value}'")
    number, unit_text = m.group(1), m.group(2)
    if not unit_text:
        raise UnitError(
            f"number without a unit: found '{value}', expected a unit{example}"
            + (f" ({expected}: {want[1]})" if want else "")
        )
    factor, dim = parse_unit(unit_text)
    mag = float(number)
    if want is not None and dim != want[0]:
        raise UnitError(
            f"wrong dimension: expected {expected} ({want[1]}), found '{value}' ({dimension_name(dim)})"
        )
    si = mag * factor
    if not (math.isfinite(mag) and math.isfinite(si)):
        raise UnitError(f"not a finite number: '{value}'")
    return Quantity(mag, unit_text, si, dim)


def _example(expected: str | None) -> str:
    examples = {
        "angle": "120 deg",
        "angular speed": "90 deg/s",
        "angular acceleration": "400 deg/s^2",
        "torque": "12 N*m",
        "force": "150 N",
        "length": "0.15 m",
        "area": "12 cm^2",
        "pressure": "20 N/cm^2",
        "time": "300 ms",
        "frequency": "1000 Hz",
        "speed": "0.5 m/s",
        "acceleration": "2 m/s^2",
        "mass": "2 kg",
        "stiffness": "40 N/mm",
        "dimensionless": "1",
    }
    return examples.get(expected or "", "1")
