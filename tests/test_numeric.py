"""The input checks shared by the procedures (airgate.procedures.numeric): ``nonneg`` and
``fraction`` on floats and arrays, against the element-wise rule they state (common practice:
one invalid-input policy, DEVELOPERS.md "Rules of the road"; the reference for arrays is the
element-wise test the checks made before they looked at the least and largest value only)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from airgate.procedures.numeric import fraction, nonneg

NAN, INF = math.nan, math.inf
VALUES = [[], [0.0], [1.0, 2.0], [0.0, 3.0], [-1e-300, 1.0], [1.0, NAN], [NAN], [INF], [2.0, -INF],
          [1.0, 0.5, 0.999], [1.0, 1.0 + 1e-15], [0.0, 1.0], [[0.2, 0.4], [0.6, 1.0]],
          [[0.2, NAN], [0.6, 1.0]], [5e-324, 1e308]]


def _nonneg_elementwise(a, strict):
    a = np.asarray(a, dtype=float)
    return bool(np.all(np.isfinite(a))) and not np.any(a <= 0 if strict else a < 0)


def _fraction_elementwise(a, open_top):
    a = np.asarray(a, dtype=float)
    return bool(np.all((a >= 0) & (a < 1 if open_top else a <= 1)))


def _accepts(fn, *args, **kw):
    try:
        fn(*args, **kw)
    except ValueError as exc:
        assert str(exc).startswith("x must ")  # names the parameter
        return False
    return True


@pytest.mark.parametrize("values", VALUES)
@pytest.mark.parametrize("strict", [False, True])
def test_nonneg_arrays_as_checked_element_by_element(values, strict):
    assert _accepts(nonneg, "x", values, strict=strict) == _nonneg_elementwise(values, strict)


@pytest.mark.parametrize("values", VALUES)
@pytest.mark.parametrize("open_top", [False, True])
def test_fraction_arrays_as_checked_element_by_element(values, open_top):
    assert _accepts(fraction, "x", values, open_top=open_top) == \
        _fraction_elementwise(values, open_top)


def test_checked_arrays_come_back_as_floats():
    got = nonneg("x", [1, 2])
    assert got.dtype == float and got.tolist() == [1.0, 2.0]
    assert fraction("x", np.array([0, 1])).tolist() == [0.0, 1.0]
    assert nonneg("x", []).size == 0
