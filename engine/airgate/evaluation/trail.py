"""The calculation trail: every computed quantity with its equation, inputs and source."""

from __future__ import annotations

import re
from functools import lru_cache
from typing import TYPE_CHECKING, NamedTuple

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
