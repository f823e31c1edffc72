"""Quantity fields for the input models: a number with units, or a bare number in the project's
unit system (passed as pydantic validation context), stored in internal units."""

from __future__ import annotations

from typing import Annotated, Any

from pydantic import BeforeValidator, Field, ValidationInfo, WithJsonSchema

from airgate import units

_QUANTITY_SCHEMA = {
    "anyOf": [
        {"type": "number"},
        {"type": "string", "description": "a number followed by a unit, e.g. '850 cfm'"},
    ]
}


#: distinct quantity texts and numbers whose values each field type keeps (a schedule repeats
#: its texts: a handful of units, many equal areas and airflows)
_TEXTS_KEPT = 4096


def _quantity(kind: str, *, positive: bool) -> BeforeValidator:
    # (text or number, unit system) → its value, for those read without error
    kept: dict[tuple[str, str], float] = {}

    def validate(value: Any, info: ValidationInfo) -> float:
        system = (info.context or {}).get("units", units.IP)
        cls = value.__class__
        # text, or a number other than zero (whose sign a kept 0.0 would lose); never a
        # boolean, which equals 1 or 0 as a key but is refused as a quantity
        if cls is str or (cls is float or cls is int) and value != 0:
            x = kept.get((value, system))
            if x is not None:
                return x
            x = _checked(value, system)
            if len(kept) < _TEXTS_KEPT:
                kept[(value, system)] = x
            return x
        return _checked(value, system)

    def _checked(value: Any, system: str) -> float:
        x = units.parse(value, kind, system)  # a QuantityError carries its hint
        example = units.KINDS[kind].example
        if positive and x <= 0:
            raise units.QuantityError(f"must be greater than zero, got {value!r}",
                                      hint=f"give a positive value, such as {example}")
        if x < 0:
            raise units.QuantityError(f"must not be negative, got {value!r}",
                                      hint=f"give zero or a positive value, such as {example}")
        return x

    return BeforeValidator(validate)


def Q(kind: str, description: str, *, positive: bool = False) -> Any:  # noqa: N802
    """A quantity field of ``kind``; ``description`` ends with its units in brackets."""
    return Annotated[
        float,
        _quantity(kind, positive=positive),
        WithJsonSchema({**_QUANTITY_SCHEMA, "description": description}),
        Field(description=description),
    ]


