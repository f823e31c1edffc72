"""The calculation trail: every computed quantity with its equation, inputs and source."""

from __future__ import annotations

import re
from functools import lru_cache
from typing import TYPE_CHECKING, NamedTuple

import numpy as np

from airgate import units

if TYPE_CHECKING:
    from airgate.evaluation.findings import Location

_PLACEHOLDER = re.compile(r"\{([^{}]+)\}")


@lru_cache(maxsize=4096)
def _symbolic(formula: str) -> str:
    """A formula with its placeholders as bare symbols (the same few formulas on every zone)."""
    return _PLACEHOLDER.sub(lambda m: m.group(1), formula)


#: texts that many steps repeat (notes, citations), one copy each; bounded, so texts that name a
#: zone or a value cannot make it grow with a portfolio
_TEXTS: dict[str, str] = {}
_TEXTS_KEPT = 20_000


def shared_text(text: str) -> str:
    """The one copy kept of ``text`` (the same characters as ``text``): the notes and citations
    of a portfolio's steps are a few hundred distinct texts, each made again for every zone
    (an f-string gives a new string each time), which held apart would cost some 30 MiB per
    100,000 zones each."""
    kept = _TEXTS.get(text)
    if kept is not None:
        return kept
    if len(_TEXTS) < _TEXTS_KEPT:
        _TEXTS[text] = text
    return text


class Step(NamedTuple):
    """One quantity of a trail.

    ``formula`` uses ``{Symbol}`` placeholders naming earlier steps of the same trail, e.g.
    ``"{Rp}·{Pz} + {Ra}·{Az}"``; writers show it symbolically and with the values substituted.
    A named tuple, not a dataclass: a portfolio makes some twenty per zone, and a tuple is made
    four times faster than a frozen dataclass.
    """

    symbol: str
    value: float  #: in internal units of ``kind`` (see airgate.units)
    kind: str
    formula: str = ""
    #: a citation, or where the schedule states the value (a :class:`~airgate.evaluation.findings.
    #: Location`, found when first shown: writers write ``str(source)``)
    source: str | Location = ""
    note: str = ""
    origin: str = "computed"  #: computed | schedule | table | explicit | assumed | system

    def symbolic(self) -> str:
        return _symbolic(self.formula)

    def inputs(self) -> list[str]:
        return _PLACEHOLDER.findall(self.formula)


class Trail:
    """Ordered steps keyed by symbol."""

    def __init__(self) -> None:
        self.steps: dict[str, Step] = {}

    def add(self, symbol: str, value: float, kind: str, formula: str = "",
            source: str | Location = "",
            note: str = "", origin: str = "computed") -> float:
        value = float(value)
        if type(source) is str:
            source = shared_text(source)
        self.steps[symbol] = Step(symbol, value, kind, formula, source, shared_text(note), origin)
        return value

    def copy_from(self, other: Trail, symbol: str) -> None:
        step = other.steps[symbol]
        self.steps[symbol] = Step(step.symbol, step.value, step.kind, source=step.source,
                                  note=shared_text(step.note or "system value"), origin="system")

    def __contains__(self, symbol: str) -> bool:
        return symbol in self.steps

    def __getitem__(self, symbol: str) -> Step:
        return self.steps[symbol]

    def value(self, symbol: str) -> float:
        return self.steps[symbol].value

    def signature(self) -> tuple[tuple[str, str], ...]:
        """Each step's ``(symbol, kind)`` in order: the shape of the trail, the same for every
        zone computed alike. Writers key what they look up once per shape on it (JSON keys,
        units, unit factors), and read the numbers from :meth:`values`. A trail kept as a row of
        per-system arrays may answer both without making its steps."""
        return tuple((s.symbol, s.kind) for s in self.steps.values())

    def values(self) -> list[float]:
        """Each step's value [internal units of its kind], in the order of :meth:`signature`."""
        return [s.value for s in self.steps.values()]

    def substituted(self, step: Step, render) -> str:
        """The formula with each placeholder replaced by ``render(step_of_placeholder)``."""
        return _PLACEHOLDER.sub(lambda m: render(self.steps[m.group(1)]), step.formula)


class ValuesTrail(Trail):
    """A trail known by its values alone (a JSON report written without zone trails, read back):
    each value under its symbol, origin, formula and source unknown."""


class Template(NamedTuple):
    """What a step of a :class:`StepTable` column is besides its symbol, kind and value: the
    fields of :class:`Step` after them, the texts kept once (:func:`shared_text`) as
    :meth:`Trail.add` keeps them."""

    formula: str = ""
    source: str | Location = ""
    note: str = ""
    origin: str = "computed"


def template(formula: str = "", source: str | Location = "", note: str = "",
             origin: str = "computed") -> Template:
    """A :class:`Template` with its texts shared as :meth:`Trail.add` shares them."""
    if type(source) is str:
        return _template(formula, source, note, origin)
    return Template(formula, source, shared_text(note), origin)


@lru_cache(maxsize=4096)
def _template(formula: str, source: str, note: str, origin: str) -> Template:
    """:func:`template` of a citation (the same few on every system: kept, bounded)."""
    return Template(formula, shared_text(source), shared_text(note), origin)


#: a column copied from each row's own source trail (:meth:`StepTable.copy`)
_COPY = "copy"
#: a column whose rows hold steps of their own (:meth:`StepTable.explicit`)
_EXPLICIT = "explicit"


class _Shape:
    """The rows of a table that hold the same columns: their signature, where each symbol is
    in it, and their values (rows × the shape's columns)."""

    __slots__ = ("table", "cols", "signature", "where", "matrix", "_plan")

    def __init__(self, table: StepTable, cols: list[int], matrix: np.ndarray) -> None:
        self.table = table
        self.cols = cols
        self.signature = tuple((table.symbols[c], table.kinds[c]) for c in cols)
        self.where = {table.symbols[c]: i for i, c in enumerate(cols)}
        self.matrix = matrix
        self._plan: list[tuple] | None = None

    def steps(self, row: int, pos: int) -> dict[str, Step]:
        """The steps of ``row``, the ``pos``-th row of this shape."""
        if self._plan is None:
            self._plan = self.table._plan(self.cols)
        return self.table._steps(row, self._plan, self.matrix[pos].tolist())


class StepTable:
    """The steps of many trails computed alike, kept as per-system arrays: one row per trail,
    one column per step the rows may hold, in the order the steps are recorded.

    A column is a symbol, a kind, a value per row and which rows hold it; what the step is
    besides (formula, source, note, origin) is one :class:`Template` for the column, or one of a
    few for its rows (``variant``: each row's index into ``templates``), or the step the row's
    own source trail holds (:meth:`copy`, as :meth:`Trail.copy_from`). :meth:`trails` gives
    one :class:`RowTrail` per row, which makes its steps only when they are read: rows holding
    the same columns share one signature, and their values are one array.

    A column's symbol is recorded once per row (no row holds a symbol twice).
    """

    def __init__(self, sources: list[Trail]) -> None:
        self.n = len(sources)
        self.sources = sources  #: per row, the trail :meth:`copy` columns copy from
        self.symbols: list[str] = []
        self.kinds: list[str] = []
        self.templates: list = []  #: per column: a Template, a tuple of them, or a marker
        self.variants: list = []  #: per column: None, or each row's index into its templates
        self._values: list = []  #: per column: an array over the rows, or one value
        self._present: list = []  #: per column: a mask over the rows, or None (every row)
        self._explicit: dict[int, dict[int, list[Step]]] = {}

    def add(self, symbol: str, values, kind: str, templates: Template | tuple[Template, ...],
            where=None, variant=None) -> None:
        """A step ``symbol`` of ``kind`` with ``values`` (one per row, or one for all rows;
        internal units) on the rows ``where`` holds true (all when None); ``templates``: the
        step's other fields, one for all rows, or a tuple indexed by ``variant`` (one index per
        row)."""
        self.symbols.append(symbol)
        self.kinds.append(kind)
        self.templates.append(templates)
        self.variants.append(None if variant is None else np.asarray(variant, dtype=np.intp))
        self._values.append(values)
        self._present.append(where)

    def copy(self, symbol: str, values, kind: str, where=None) -> None:
        """The step ``symbol`` of each row's source trail, as :meth:`Trail.copy_from` records
        it; ``values``: its value on each row (made only when the row's steps are read)."""
        self.add(symbol, values, kind, _COPY, where)

    def explicit(self, steps: dict[int, list[Step]]) -> None:
        """Steps a few rows hold of their own at this place (by row); those rows' trails are
        made at once (plain :class:`Trail`)."""
        self.add("", 0.0, "", _EXPLICIT, [bool(steps.get(i)) for i in range(self.n)])
        self._explicit[len(self.symbols) - 1] = steps

    def _plan(self, cols) -> list[tuple]:
        """What making the steps of columns ``cols`` needs, column by column."""
        return [(self.templates[c] if type(self.templates[c]) is str else None,
                 self.symbols[c], self.kinds[c], self.templates[c], self.variants[c],
                 self._explicit.get(c)) for c in cols]

    def _steps(self, row: int, plan: list[tuple], values: list[float]) -> dict[str, Step]:
        """The steps of ``row`` (columns as ``plan``) with ``values``, as recorded one by one
        with :meth:`Trail.add` and :meth:`Trail.copy_from`."""
        steps: dict[str, Step] = {}
        new = tuple.__new__
        for (marker, symbol, kind, tpl, variant, explicit), value in zip(plan, values):
            if marker is None:
                if variant is not None:
                    tpl = tpl[variant[row]]
                steps[symbol] = new(Step, (symbol, value, kind, *tpl))
            elif marker == _COPY:  # (== : a report may come back pickled)
                step = self.sources[row][symbol]
                steps[symbol] = Step(step.symbol, step.value, step.kind, source=step.source,
                                     note=shared_text(step.note or "system value"),
                                     origin="system")
            else:
                for step in explicit[row]:
                    steps[step.symbol] = step
        return steps

    def trails(self) -> list[Trail]:
        """One trail per row: a :class:`RowTrail`, or a plain :class:`Trail` where the row
        holds steps of its own (:meth:`explicit`)."""
        out: list[Trail | None] = [None] * self.n
        if not self.symbols:
            return [Trail() for _ in range(self.n)]
        m = len(self.symbols)
        values = np.empty((self.n, m))
        present = np.ones((self.n, m), dtype=bool)
        for c, (column, where) in enumerate(zip(self._values, self._present)):
            values[:, c] = column
            if where is not None:
                present[:, c] = where
        eager = np.zeros(self.n, dtype=bool)
        for c in self._explicit:
            eager |= present[:, c]
        for row in np.flatnonzero(eager).tolist():
            cols = np.flatnonzero(present[row]).tolist()
            t = Trail()
            t.steps = self._steps(row, self._plan(cols), values[row, cols].tolist())
            out[row] = t
        lazy = np.flatnonzero(~eager)
        if len(lazy):
            if m <= 64:  # each row's columns as the bits of one number
                codes = present[lazy].astype(np.uint64) @ (
                    np.uint64(1) << np.arange(m, dtype=np.uint64))
                first, shape_of = np.unique(codes, return_index=True, return_inverse=True)[1:]
                patterns = present[lazy[first]]
            else:
                patterns, shape_of = np.unique(present[lazy], axis=0, return_inverse=True)
            shape_of = np.asarray(shape_of).reshape(-1)
            for s, pattern in enumerate(patterns):
                rows = lazy[shape_of == s] if len(patterns) > 1 else lazy
                cols = np.flatnonzero(pattern).tolist()
                shape = _Shape(self, cols, values[np.ix_(rows, cols)])
                for pos, row in enumerate(rows.tolist()):
                    out[row] = RowTrail(shape, row, pos)
        self._values = self._present = None  # the shapes hold what the rows need
        return out


class RowTrail(Trail):
    """One row of a :class:`StepTable`: a trail whose :meth:`signature`, :meth:`values`,
    :meth:`value` and ``in`` answer from the table, and whose steps are made on first use
    (reading ``steps``, a step, or adding one), the same steps as recorded one by one."""

    def __init__(self, shape: _Shape, row: int, pos: int) -> None:  # noqa: super not called
        self._shape = shape
        self._row = row
        self._pos = pos
        self._made: dict[str, Step] | None = None

    @property
    def steps(self) -> dict[str, Step]:
        if self._made is None:
            self._made = self._shape.steps(self._row, self._pos)
        return self._made

    @steps.setter
    def steps(self, steps: dict[str, Step]) -> None:
        self._made = steps

    def __contains__(self, symbol: str) -> bool:
        if self._made is not None:
            return symbol in self._made
        return symbol in self._shape.where

    def value(self, symbol: str) -> float:
        if self._made is not None:
            return self._made[symbol].value
        return float(self._shape.matrix[self._pos, self._shape.where[symbol]])

    def signature(self) -> tuple[tuple[str, str], ...]:
        if self._made is not None:
            return super().signature()
        return self._shape.signature

    def values(self) -> list[float]:
        if self._made is not None:
            return super().values()
        return self._shape.matrix[self._pos].tolist()


def unit_factor(numerator: tuple[str, ...], denominator: tuple[str, ...], system: str,
                times: float = 1.0) -> str:
    """The number a formula needs when its inputs are shown in ``system``'s display units.

    A trail's formula is read with each value in the report's display unit (cfm, ft³, people
    per 1000 ft²), so a constant of the internal-unit equation changes with the unit system.
    ``times·Π(internal per display of numerator kinds) / Π(… of denominator kinds)``, written
    with four significant digits; ``""`` when it is 1 (nothing to show). E.g. the change rate
    ``3.6·Q/V`` [1/h, Q in L/s, V in m³] is ``60·Q/V`` with Q in cfm and V in ft³.
    """
    value = times
    for kind in numerator:
        value *= units.to_internal(1.0, kind, system)
    for kind in denominator:
        value /= units.to_internal(1.0, kind, system)
    text = f"{value:.4g}"
    return "" if text == "1" else text
