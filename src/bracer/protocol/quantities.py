"""pydantic field types for quantities with units.

``Angle``, ``Torque`` ... validate a string such as ``"120 deg"`` into a :class:`bracer.units.Quantity` of the
right dimension, serialise back to the same string, and publish a JSON Schema (a string with a pattern) that
editors can check.  ``directional(...)`` builds a field that takes one value for both directions of a joint
(``"60 deg/s"``) or one per direction (``{positive: 60 deg/s, negative: 40 deg/s}``).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Annotated, Any

from pydantic import PlainSerializer, PlainValidator, WithJsonSchema

from bracer.units import DIMENSIONS, Quantity, UnitError, parse_quantity, parse_unit

__all__ = [
    "Angle",
    "AngularAcceleration",
    "AngularSpeed",
    "AnyQuantity",
    "Area",
    "DirAcceleration",
    "DirSpeed",
    "DirTorque",
    "Directional",
    "Force",
    "Frequency",
    "Length",
    "Pressure",
    "Time",
    "Torque",
    "exact_text",
    "quantity_or_word",
    "unit_of",
]

_PATTERN = r"^\s*[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?\s*\S.*$"


def exact_text(q: Quantity) -> str:
    """``"45 deg/s"``: the quantity as a protocol file would write it, with every digit needed to read back
    the same number (``str(q)`` rounds to four significant digits for messages)."""
    text = repr(float(q.magnitude))
    if text.endswith(".0"):
        text = text[:-2]
    return f"{text} {q.unit}"


def _quantity_type(dimension: str | None) -> Any:
    def validate(value: object) -> Quantity:
        if isinstance(value, Quantity):
            if dimension is not None and value.dimension != DIMENSIONS[dimension][0]:
                raise ValueError(f"expected {dimension}, found {value}")
            return value
        try:
            return parse_quantity(value, dimension)
        except UnitError as exc:
            raise ValueError(str(exc)) from None

    units = DIMENSIONS[dimension][1] if dimension else "any unit"
    description = f"{dimension or 'quantity'} with its unit ({units})"
    return Annotated[
        Quantity,
        PlainValidator(validate),
        PlainSerializer(exact_text, return_type=str),
        WithJsonSchema({"type": "string", "pattern": _PATTERN, "description": description}),
    ]


Angle = _quantity_type("angle")
AngularSpeed = _quantity_type("angular speed")
AngularAcceleration = _quantity_type("angular acceleration")
Torque = _quantity_type("torque")
Force = _quantity_type("force")
Length = _quantity_type("length")
Area = _quantity_type("area")
Pressure = _quantity_type("pressure")
Time = _quantity_type("time")
Frequency = _quantity_type("frequency")
AnyQuantity = _quantity_type(None)


@dataclass(frozen=True, slots=True)
class Directional:
    """A limit that may differ between a joint's positive and negative direction (magnitudes, both > 0)."""

    positive: Quantity
    negative: Quantity
    symmetric: bool

    def get(self, direction: str) -> Quantity:
        if direction == "positive":
            return self.positive
        if direction == "negative":
            return self.negative
        raise KeyError(direction)

    def replace(self, direction: str, value: Quantity) -> Directional:
        if direction == "positive":
            return Directional(value, self.negative, False)
        return Directional(self.positive, value, False)

    def __str__(self) -> str:
        if self.symmetric:
            return str(self.positive)
        return f"+{self.positive} / −{self.negative}"


def _directional_type(dimension: str) -> Any:
    def one(value: object, part: str | None) -> Quantity:
        try:
            q = parse_quantity(value, dimension)
        except UnitError as exc:
            raise ValueError(f"{part}: {exc}" if part else str(exc)) from None
        if q.si <= 0:
            where = f"{part}: " if part else ""
            article = "an" if dimension[0] in "aeiou" else "a"
            raise ValueError(
                f"{where}{article} {dimension} limit is a magnitude and must be above zero, found '{value}'"
            )
        return q

    def validate(value: object) -> Directional:
        if isinstance(value, Directional):
            return value
        if isinstance(value, Mapping):
            extra = sorted(map(str, set(value) - {"positive", "negative"}))
            if extra:
                import difflib

                hint = difflib.get_close_matches(extra[0], ["positive", "negative"], n=1, cutoff=0.6)
                did = f"; did you mean '{hint[0]}'?" if hint else ""
                raise ValueError(
                    f"unknown key(s) {', '.join(map(repr, extra))}: a per-direction limit takes 'positive' "
                    f"and 'negative'{did}"
                )
            missing = [k for k in ("positive", "negative") if k not in value]
            if missing:
                raise ValueError(f"per-direction limit is missing '{missing[0]}' (give both, or one value)")
            return Directional(one(value["positive"], "positive"), one(value["negative"], "negative"), False)
        q = one(value, None)
        return Directional(q, q, True)

    def serialise(d: Directional) -> Any:
        if d.symmetric:
            return exact_text(d.positive)
        return {"positive": exact_text(d.positive), "negative": exact_text(d.negative)}

    quantity_schema = {"type": "string", "pattern": _PATTERN}
    return Annotated[
        Directional,
        PlainValidator(validate),
        PlainSerializer(serialise),
        WithJsonSchema(
            {
                "description": f"{dimension} limit ({DIMENSIONS[dimension][1]}): one value for both "
                "directions, or {positive: ..., negative: ...}",
                "anyOf": [
                    quantity_schema,
                    {
                        "type": "object",
                        "properties": {"positive": quantity_schema, "negative": quantity_schema},
                        "required": ["positive", "negative"],
                        "additionalProperties": False,
                    },
                ],
            }
        ),
    ]


DirSpeed = _directional_type("angular speed")
DirTorque = _directional_type("torque")
DirAcceleration = _directional_type("angular acceleration")


def quantity_or_word(dimension: str, word: str) -> Any:
    """A field holding a quantity of ``dimension`` or the fixed text ``word`` (a length or 'not modelled').

    One validator with one message, rather than a union whose branches would each report their own error.
    """

    def validate(value: object) -> Quantity | str:
        if value == word:
            return word
        if isinstance(value, Quantity) and value.dimension == DIMENSIONS[dimension][0]:
            return value
        try:
            return parse_quantity(value, dimension)
        except UnitError as exc:
            raise ValueError(f"{exc}; or write '{word}'") from None

    def serialise(value: Quantity | str) -> str:
        return exact_text(value) if isinstance(value, Quantity) else value

    return Annotated[
        Quantity | str,
        PlainValidator(validate),
        PlainSerializer(serialise, return_type=str),
        WithJsonSchema(
            {
                "description": f"{dimension} with its unit ({DIMENSIONS[dimension][1]}), or '{word}'",
                "anyOf": [{"type": "string", "pattern": _PATTERN}, {"const": word}],
            }
        ),
    ]


def unit_of(dimension: str) -> Any:
    """A field holding a unit expression (``"deg"``) that must measure ``dimension``."""

    def validate(value: object) -> str:
        if not isinstance(value, str):
            raise ValueError(
                f"expected a unit such as '{DIMENSIONS[dimension][1].split(',')[0]}', found {value!r}"
            )
        try:
            _, dim = parse_unit(value)
        except UnitError as exc:
            raise ValueError(str(exc)) from None
        if dim != DIMENSIONS[dimension][0]:
            from bracer.units import dimension_name

            raise ValueError(
                f"wrong dimension: expected a unit of {dimension} ({DIMENSIONS[dimension][1]}), "
                f"found '{value}' ({dimension_name(dim)})"
            )
        return value

    return Annotated[
        str,
        PlainValidator(validate),
        WithJsonSchema(
            {"type": "string", "description": f"unit of {dimension} ({DIMENSIONS[dimension][1]})"}
        ),
    ]
