"""Every numeric field of the schedule model states its unit in brackets (style.md habit).

Dimensionless fields say ``[–]``."""

from __future__ import annotations

import re
import typing

from pydantic import BaseModel

from airgate.models import schedule as sm

UNIT = re.compile(r"\[[^\]]+\]\s*$")


def _models():
    return [m for m in vars(sm).values()
            if isinstance(m, type) and issubclass(m, BaseModel) and m.__module__ == sm.__name__
            and not m.__name__.startswith("_")]


def _numeric(annotation) -> bool:
    args = typing.get_args(annotation)
    if annotation in (int, float):
        return True
    return any(_numeric(a) for a in args if a is not type(None))


def test_every_field_has_a_unit_in_brackets():
    checked = 0
    for model in _models():
        for name, field in model.model_fields.items():
            if not _numeric(field.annotation):
                continue
            text = field.description or ""
            if not text:
                schema = model.model_json_schema()["properties"][field.alias or name]
                text = schema.get("description", "")
                for alt in schema.get("anyOf", []):
                    text = text or alt.get("description", "")
            assert UNIT.search(text), f"{model.__name__}.{name} has no [unit]: {text!r}"
            checked += 1
    assert checked >= 12


def test_numeric_fields_exist_and_are_described():
    numeric = [(m.__name__, n) for m in _models() for n, f in m.model_fields.items()
               if _numeric(f.annotation)]
    assert ("Zone", "area") in numeric and ("System", "outdoor_air") in numeric
