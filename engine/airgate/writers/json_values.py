"""The ``values`` objects of the JSON report, many trails at once.

Every number of the report is rounded to 6 significant digits as ``float(f"{x:.6g}")`` does
(the exact binary value rounded half-even to six digits, then read back as the nearest float)
and written as its ``repr``. :func:`round6` does that over a whole array; :func:`values_texts`
writes the ``values`` objects of many trails, with the keys, units and unit divisors looked up
once per shape (:meth:`Trail.signature` and the unit system) and the text made from one
``%``-format per shape and indentation, byte for byte what ``json.dumps(indent=2,
ensure_ascii=False)`` writes for ``json_report._values`` of each trail.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from functools import lru_cache
from operator import itemgetter
from json.encoder import encode_basestring

import numpy as np

from airgate import units
from airgate.evaluation.trail import Step, Trail

#: 10**0 … 10**22: every power of ten that a float holds exactly
_POWERS = np.array([10.0 ** i for i in range(23)])
#: how far from a half the scaled value must be to be rounded here: the scaled value is
#: within 1.2e-10 of its exact value (one rounding, relative 2**-53, below 10**6 + 1)
_MARGIN = 1e-9


def round6(values: np.ndarray) -> np.ndarray:
    """``float(f"{x:.6g}")`` of every element of a float array (a new array of the same shape);
    NaN and ±inf are kept as they are.

    For x ≠ 0 with decimal exponent e (10**e ≤ |x| < 10**(e+1)) the six digits are
    m = round(x·10**k), k = 5 − e, and the result is the float nearest m·10**−k. With
    |k| ≤ 22 both 10**k and m are exact floats, so one multiplication or division gives x·10**k
    within one rounding and ``m / 10**k`` (``m·10**−k``) is the correctly rounded float of the
    decimal. An element is left to the f-string when that cannot be sure: a scaled value
    within :data:`_MARGIN` of a half (a tie or nearly one), an exponent that the logarithm put
    on the wrong side of a power of ten (the scaled value outside [10**5, 10**6]), |k| > 22
    (beyond about 1e27 or below 1e-17, subnormals), and 0 (kept, with its sign)."""
    x = np.asarray(values, dtype=np.float64)
    out = x.copy()
    if not x.size:
        return out
    a = np.abs(x)
    with np.errstate(all="ignore"):
        finite = np.isfinite(x) & (a != 0.0)
        k = 5.0 - np.floor(np.log10(a))
        ok = finite & (np.abs(k) <= 22.0)
        kk = np.where(ok, k, 0.0).astype(np.intp)
        power = _POWERS[np.abs(kk)]
        up = kk >= 0
        y = np.where(up, x * power, x / power)
        m = np.rint(y)
        ok &= (np.abs(y) >= 1e5) & (np.abs(m) <= 1e6) & (np.abs(np.abs(y - m) - 0.5) > _MARGIN)
        rounded = np.where(up, m / power, m * power)
    np.copyto(out, rounded, where=ok)
    doubtful = np.flatnonzero(finite & ~ok)
    if doubtful.size:
        flat = out.reshape(-1)  # out is a fresh contiguous array: a view
        for i in doubtful.tolist():
            flat[i] = float(f"{float(flat[i]):.6g}")
    return out


@lru_cache(maxsize=4096)
def symbol_key(symbol: str) -> str:
    """ASCII keys for machine use: ``ΣRp·Pz`` → ``sum_Rp_Pz``, ``max Zpz`` → ``max_Zpz``."""
    out = symbol.replace("Σ", "sum_").replace("·", "_").replace(" ", "_")
    return out.replace("(", "").replace(")", "")


#: (kind, system) → (internal per display unit, display scale, JSON unit): what
#: :func:`units.to_json_unit` divides by, looked up once per kind rather than once per value
_JSON_UNIT: dict[tuple[str, str], tuple[float, float, str]] = {}


def json_unit(kind: str, system: str) -> tuple[float, float, str]:
    got = _JSON_UNIT.get((kind, system))
    if got is None:
        got = _JSON_UNIT[(kind, system)] = (units.to_internal(1.0, kind, system),
                                            units.KINDS[kind].scale(system),
                                            units.JSON_UNITS[(kind, system)])
    return got


class Shape:
    """What the ``values`` object of every trail of one signature in one unit system shares:
    its keys in order (a key that two steps map to keeps its first place and the last step's
    value, as a dict does), the columns they take their values from, each column's two
    divisors (internal per display unit, display scale) and each key's unit, and the
    ``%``-format of the object at each indentation."""

    __slots__ = ("columns", "factors", "scales", "keys", "units", "_formats", "_nulls", "empty",
                 "picked")

    def __init__(self, signature: Sequence[tuple[str, str]], system: str) -> None:
        factors, scales, units_of = [], [], []
        for _symbol, kind in signature:
            factor, scale, unit = json_unit(kind, system)
            factors.append(factor)
            scales.append(scale)
            units_of.append(unit)
        last: dict[str, int] = {}
        for i, (symbol, _kind) in enumerate(signature):
            last[symbol_key(symbol)] = i  # a dict keeps the first place, takes the last value
        self.keys = list(last)
        self.columns = list(last.values())
        self.picked = self.columns != list(range(len(signature)))
        self.units = [units_of[i] for i in self.columns]
        self.factors = np.array([factors[i] for i in self.columns], dtype=np.float64)
        self.scales = np.array([scales[i] for i in self.columns], dtype=np.float64)
        self.empty = not signature
        self._formats: dict[int, str] = {}
        self._nulls: dict[int, str] = {}

    def format(self, level: int) -> str:
        """The object at indentation ``level`` with a ``%r`` for each value (finite floats)."""
        got = self._formats.get(level)
        if got is None:
            got = self._formats[level] = self._make(level, "%r")
        return got

    def format_text(self, level: int) -> str:
        """As :meth:`format`, with ``%s`` for value texts made by the caller (``null``)."""
        got = self._nulls.get(level)
        if got is None:
            got = self._nulls[level] = self._make(level, "%s")
        return got

    def _make(self, level: int, slot: str) -> str:
        if self.empty:
            return "{}"
        n0 = "\n" + "  " * level
        n1 = n0 + "  "
        n2 = n1 + "  "
        items = [_literal(encode_basestring(key)) + ": {" + n2 + '"value": ' + slot + ","
                 + n2 + '"unit": ' + _literal(encode_basestring(unit)) + n1 + "}"
                 for key, unit in zip(self.keys, self.units)]
        return "{" + n1 + ("," + n1).join(items) + n0 + "}"


def _literal(text: str) -> str:
    """``text`` as the literal part of a ``%``-format."""
    return text.replace("%", "%%")


_SHAPES: dict[tuple[tuple[tuple[str, str], ...], str], Shape] = {}
_SHAPES_KEPT = 4096


def shape(signature: tuple[tuple[str, str], ...], system: str) -> Shape:
    """The :class:`Shape` of ``signature`` in ``system`` (made once, kept for the next
    report; a bounded table, so odd signatures cannot make it grow without end)."""
    key = (signature, system)
    got = _SHAPES.get(key)
    if got is None:
        got = Shape(signature, system)
        if len(_SHAPES) < _SHAPES_KEPT:
            _SHAPES[key] = got
    return got


#: a plain :class:`Trail`'s step → its symbol, kind, value: what its :meth:`~Trail.signature`
#: and :meth:`~Trail.values` give, read by C-level getters
_SYMBOL = itemgetter(Step._fields.index("symbol"))
#: marks a plain trail's grouping key (no signature holds it)
_PLAIN = object()
_KIND = itemgetter(Step._fields.index("kind"))
_VALUE = itemgetter(Step._fields.index("value"))


def values_texts(trails: Sequence[tuple[Trail, int]], system: str) -> list[str]:
    """The ``values`` object of each ``(trail, level)`` as ``json.dumps(indent=2,
    ensure_ascii=False)`` writes it at that indentation: every step's value divided by its
    unit's factor and scale (in that order, as ``json_report._values`` does), rounded by
    :func:`round6`, ``null`` where not finite. The trails are grouped by signature; all their
    numbers are rounded in one array."""
    #: signature, or for a plain Trail (_PLAIN, its symbols, its kinds) → (positions, numbers)
    groups: dict[tuple, tuple[list[int], list[list[float]]]] = {}
    #: id of a signature object met → (it, its group): the rows of one table share theirs, and
    #: an id is not looked up by hashing the tuple (kept alive here, so no id is reused)
    met: dict[int, tuple] = {}
    for i, (trail, _level) in enumerate(trails):
        if type(trail) is Trail:  # what its methods give, read faster
            steps = trail.steps.values()
            key: tuple = (_PLAIN, tuple(map(_SYMBOL, steps)), tuple(map(_KIND, steps)))
            numbers = list(map(_VALUE, steps))
        else:
            key = trail.signature()
            numbers = trail.values()
            seen = met.get(id(key))
            if seen is not None and seen[0] is key:
                seen[1][0].append(i)
                seen[1][1].append(numbers)
                continue
        group = groups.get(key)
        if group is None:
            group = groups[key] = ([i], [numbers])
        else:
            group[0].append(i)
            group[1].append(numbers)
        if type(trail) is not Trail:
            met[id(key)] = (key, group)
    out: list[str] = [""] * len(trails)
    work = []
    for key, (members, rows) in groups.items():
        sh = shape(tuple(zip(key[1], key[2])) if key and key[0] is _PLAIN else key, system)
        if sh.empty:
            for i in members:
                out[i] = "{}"
            continue
        raw = np.array(rows, dtype=np.float64)
        if sh.picked:
            raw = raw[:, sh.columns]
        with np.errstate(all="ignore"):
            scaled = raw / sh.factors / sh.scales
        work.append((sh, members, scaled))
    if not work:
        return out
    flat = round6(np.concatenate([scaled.reshape(-1) for _sh, _m, scaled in work]))
    finite = np.isfinite(flat)
    start = 0
    for sh, members, scaled in work:
        n, width = scaled.shape
        rounded = flat[start:start + n * width].reshape(n, width)
        whole = finite[start:start + n * width].reshape(n, width).all(axis=1).tolist()
        start += n * width
        formats = sh._formats
        for i, row, ok in zip(members, rounded.tolist(), whole):
            level = trails[i][1]
            if ok:
                fmt = formats.get(level) or sh.format(level)
                out[i] = fmt % tuple(row)
            else:
                out[i] = sh.format_text(level) % tuple(
                    "null" if v != v or v in _INFINITE else float.__repr__(v) for v in row)
    return out


_INFINITE = (math.inf, -math.inf)
