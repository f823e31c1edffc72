"""The fast indented JSON encoder writes what the standard library writes (Python's json module
is the reference: ``json.dumps(value, indent=2, ensure_ascii=False, allow_nan=False)``)."""

from __future__ import annotations

import enum
import json
import math

import pytest
from hypothesis import given, strategies as st

from airgate.writers import json_encode
from airgate.writers.output import Lazy, Streamed, json_text


def _std(value, level=0):
    return json.dumps(value, indent=2, ensure_ascii=False, allow_nan=False).replace(
        "\n", "\n" + "  " * level)


class Colour(str, enum.Enum):
    RED = "red"


scalars = (st.none() | st.booleans() | st.integers() | st.text()
           | st.floats(allow_nan=False, allow_infinity=False))
values = st.recursive(scalars, lambda inner: st.lists(inner, max_size=4)
                      | st.dictionaries(st.text(max_size=5), inner, max_size=4), max_leaves=20)


@given(values, st.integers(0, 3))
def test_same_text_as_the_standard_library(value, level):
    assert json_encode.dumps(value, level) == _std(value, level)


@pytest.mark.parametrize("value", [
    {"a": 0.1, "b": 425.0, "c": 1e-07, "d": -0.0, "e": 1e22, "f": 10**30},
    {"x": "\u202e quote \" backslash \\ tab \t", "y": "é ✓"},
    {1: "a whole-number key", "s": [1, (2, 3)]},
    {"enum": Colour.RED, "flat": {"bool": True, "none": None}},
    [[], {}, [{}], {"k": []}],
    # where the compiled serializer's text differs from Python's, the text is built again
    {"small": [1e-05, 3.2e-06, 7.775781272096648e-09, 1e-09, 0.0001, 4.95e-05]},
    {None: "a None key", "text": ["NaN", "Infinity", "None", "0.00001", "1e-5", "age-9"]},
    {"surrogate": "\ud800"},
])
def test_edge_values(value):
    assert json_encode.dumps(value) == _std(value)


@pytest.mark.parametrize("bad", [math.nan, math.inf, -math.inf])
def test_no_nan_or_infinity(bad):
    with pytest.raises(ValueError):
        json_encode.dumps({"flat": bad})
    with pytest.raises(ValueError):
        json_encode.dumps([{"nested": [bad]}])


def test_streamed_report_text_equals_json_dumps():
    data = {"a": [{"id": "1", "v": 1.5}, {"id": "2", "v": [1, 2]}], "b": {"c": None}}
    streamed = Streamed(a=Lazy(iter(data["a"])), b=data["b"])
    assert json_text(streamed) == _std(data) + "\n"


def test_every_decimal_exponent():
    """Floats of every decimal exponent a double has, as Python's json writes them."""
    values = [m * 10.0 ** e for e in range(-323, 308) for m in (1.0, 2.5, 7.775781272096648)]
    assert json_encode.dumps(values) == _std(values)
    assert json_encode.dumps(values, 2) == _std(values, 2)
