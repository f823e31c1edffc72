"""The JSON report's values objects made many trails at a time are the ones made trail by trail.

References: the standard library — ``float(f"{x:.6g}")`` (Python's correctly rounded float
formatting, then its correctly rounded reading) for the rounding, and ``json.dumps(indent=2,
ensure_ascii=False)`` of ``json_report._values`` (the code as it was before, one dictionary
per trail) for the text.
"""

from __future__ import annotations

import json
import math
import struct
from decimal import Decimal

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from airgate import units
from airgate.evaluation.trail import Trail
from airgate.writers import json_report
from airgate.writers.json_values import round6, values_texts


def _reference(x: float) -> float:
    """The standard library's rounding to 6 significant digits (NaN and infinities kept)."""
    return x if not math.isfinite(x) else float(f"{x:.6g}")


def _bits(x: float) -> bytes:
    return struct.pack("<d", x)  # tells -0.0 from 0.0 and compares NaN to NaN


def _same_as_reference(xs: list[float]) -> None:
    got = round6(np.array(xs, dtype=np.float64)).tolist()
    for x, g in zip(xs, got):
        assert _bits(g) == _bits(_reference(x)), (x, g, _reference(x))


@settings(max_examples=300)
@given(st.lists(st.floats(allow_nan=True, allow_infinity=True), min_size=1, max_size=50))
def test_any_float_rounds_as_the_f_string(xs):
    _same_as_reference(xs)


@settings(max_examples=300)
@given(st.integers(1, 10**7 - 1), st.integers(-330, 310), st.booleans())
def test_every_decimal_exponent_rounds_as_the_f_string(digits, exponent, negative):
    """Seven-digit decimals at every exponent a float reaches (and past it: 0 and inf), with
    the floats on either side of each."""
    x = float(Decimal(digits).scaleb(exponent))
    x = -x if negative else x
    _same_as_reference([x, math.nextafter(x, math.inf), math.nextafter(x, -math.inf)])


@settings(max_examples=300)
@given(st.integers(10**5, 10**6 - 1), st.integers(-25, 25))
def test_ties_and_near_ties_round_as_the_f_string(six, exponent):
    """Halfway between two six-digit decimals (…5 in the seventh digit), and a few floats on
    either side of it: the cases where half-even on the exact binary value decides."""
    x = float(Decimal(six * 10 + 5).scaleb(exponent))
    near = [x]
    up = down = x
    for _ in range(3):
        up, down = math.nextafter(up, math.inf), math.nextafter(down, -math.inf)
        near += [up, down]
    _same_as_reference(near + [-v for v in near])


def test_edges_round_as_the_f_string():
    """Powers of ten and their neighbours, exact halves, the ends of the float range."""
    xs = [0.0, -0.0, math.inf, -math.inf, math.nan, 5e-324, -5e-324, 2.2250738585072014e-308,
          1.7976931348623157e308, 0.5, 1.5, 2.5, 100000.5, 999999.5, 1234565.0, 0.1, 0.3,
          1e-7, 3.2e-6, 4.95e-05, 425.0, 0.06, 123456789.0]
    for e in range(-30, 31):
        p = 10.0 ** e
        xs += [p, math.nextafter(p, 0.0), math.nextafter(p, math.inf), 9.999995 * p,
               9.999994999999 * p, 0.99999949 * p]
    _same_as_reference(xs + [-x for x in xs])
    grid = np.array(xs).reshape(-1, 1) * np.ones((1, 3))  # a 2-D array keeps its shape
    assert round6(grid).shape == grid.shape


def _std_values(trail: Trail, system: str, level: int) -> str:
    """What the report wrote before: the trail's values dictionary, indented at ``level``."""
    return json.dumps(json_report._values(trail, system), indent=2, ensure_ascii=False,
                      allow_nan=False).replace("\n", "\n" + "  " * level)


numbers = st.floats(allow_nan=True, allow_infinity=True) | st.floats(-1e7, 1e7)


def _kinds_known() -> list[str]:
    """Every quantity kind with a JSON unit in both systems."""
    return [k for k in sorted(units.KINDS)
            if (k, "IP") in units.JSON_UNITS and (k, "SI") in units.JSON_UNITS]


@settings(max_examples=150)
@given(st.lists(st.lists(st.tuples(st.sampled_from(["Az", "Vbz", "Σ(Rp·Pz)", "sum_Rp_Pz",
                                                      "max Zpz", "max_Zpz", "Ez", "C∞"]),
                                   st.integers(0, 100), numbers), max_size=8), max_size=6),
       st.sampled_from(["IP", "SI"]), st.integers(0, 6))
def test_values_texts_are_the_dictionaries_dumped(trails_steps, system, level):
    kinds = _kinds_known()
    trails = []
    for steps in trails_steps:
        t = Trail()
        for symbol, kind, value in steps:
            t.add(symbol, value, kinds[kind % len(kinds)])  # a later step replaces its symbol
        trails.append(t)
    got = values_texts([(t, level + i % 2) for i, t in enumerate(trails)], system)
    assert got == [_std_values(t, system, level + i % 2) for i, t in enumerate(trails)]


class _ArrayTrail(Trail):
    """A trail that answers signature() and values() without steps (as a trail kept as a row
    of arrays may): reading its steps fails, so the writer must not."""

    def __init__(self, signature, values):
        super().__init__()
        self._sig, self._values = signature, values

    @property
    def steps(self):
        raise AssertionError("steps read")

    @steps.setter
    def steps(self, _value):
        pass

    def signature(self):
        return self._sig

    def values(self):
        return list(self._values)


def test_values_texts_read_signature_and_values_only():
    plain = Trail()
    plain.add("Vbz", 276.8123456, "airflow")
    plain.add("Ez", 1.0, "fraction")
    plain.add("Zpz", math.inf, "fraction")
    lazy = _ArrayTrail(plain.signature(), plain.values())
    assert values_texts([(lazy, 3), (plain, 3)], "IP") == [_std_values(plain, "IP", 3)] * 2
    assert values_texts([(_ArrayTrail((), []), 2)], "SI") == ["{}"]


@pytest.mark.parametrize("system", ["IP", "SI"])
def test_units_and_keys_with_percent_signs_are_literal(system):
    t = Trail()
    t.add("100%·Voz", 12.5, "airflow")  # a key with a % is not a format directive
    assert values_texts([(t, 1)], system) == [_std_values(t, system, 1)]


def test_rows_sharing_one_signature_object_and_equal_ones_apart():
    """Rows of one table share their signature object; another object equal to it, and plain
    trails of the same shape, are grouped with them; each text is its own trail's."""
    shared = (("Vbz", "airflow"), ("Az", "area"))
    equal = tuple(list(shared))
    rows = [_ArrayTrail(shared, [100.0 + i, 9.5 * i]) for i in range(5)]
    others = [_ArrayTrail(equal, [7.25, 1e-7])]
    plain = Trail()
    plain.add("Vbz", 3.0, "airflow")
    plain.add("Az", 12.0, "area")
    trails = rows + others + [plain] + rows[:2]
    for system in ("IP", "SI"):
        got = values_texts([(t, 2) for t in trails], system)
        expected = []
        for t in trails:
            reference = Trail()
            for (symbol, kind), value in zip(t.signature(), t.values()):
                reference.add(symbol, value, kind)
            expected.append(_std_values(reference, system, 2))
        assert got == expected
