"""Typed model of a pack's requirements beyond the sum of rates (``requirements:``).

A requirement is data: an id, a kind from a small fixed vocabulary, a severity, a message, a
citation and a selector of the subjects it applies to. No code travels in a pack; where a kind
needs arithmetic, it is the tiny grammar of :mod:`airgate.models.formula`. Numbers are held in
internal units (:mod:`airgate.units`); ``printed`` keeps them as the pack wrote them.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from airgate.models.rules import Source

#: names a formula may use, with their kind, for each subject (trail symbols, ASCII)
SYSTEM_SYMBOLS: dict[str, str] = {
    "Vot": "airflow", "Vot_design": "airflow", "Vou": "airflow", "Ev": "fraction",
    "Xs": "fraction", "D": "fraction", "Ps": "people", "Vps": "airflow", "sum_Pz": "people",
    "sum_Voz": "airflow",
}
ZONE_SYMBOLS: dict[str, str] = {
    "Az": "area", "Pz": "people", "Rp": "airflow_per_person", "Ra": "airflow_per_area",
    "density": "density", "Vbz": "airflow", "Ez": "fraction", "Voz": "airflow", "Vpz": "airflow",
    "Zpz": "fraction", "Evz": "fraction", "Voz_design": "airflow", "Ep": "fraction",
    "Er": "fraction", "Nbr": "count", "V": "volume", "Q_oa": "airflow",
    "C_ss": "concentration_ppm", "C_out": "concentration_ppm", **SYSTEM_SYMBOLS,
}

@dataclass(frozen=True)
class RequirementKind:
    """What a pack may write for one requirement kind; its evaluation is registered apart
    (:data:`airgate.evaluation.requirement_kinds.EVALUATORS`, the same names)."""

    name: str
    #: the subject it is evaluated on: "zone", "system", or "" (the requirement states it)
    subject: str
    #: numeric parameters → the quantity kind of the value (converted from the pack's units to
    #: internal units), or None for a plain number
    numbers: dict[str, str | None] = field(default_factory=dict)
    #: other keys the kind takes (flags, the formula's sides)
    options: frozenset[str] = frozenset()
    #: True: it changes the figures the calculation uses (while zones are bound)
    modifies: bool = False
    #: True: its ``required`` and ``provided`` are formulas (:mod:`airgate.models.formula`)
    formulas: bool = False
    summary: str = ""

    @property
    def params(self) -> frozenset[str]:
        """Every key the kind takes besides the keys all requirements have."""
        return frozenset(self.numbers) | self.options


#: the requirement kinds by name: the one registry (a new kind is one entry here, its
#: evaluation in ``evaluation/requirement_kinds/``, and its keys in the pack schema)
KINDS: dict[str, RequirementKind] = {k.name: k for k in (
    RequirementKind("larger-of", "zone",
                    {"per_person": "airflow_per_person", "per_area": "airflow_per_area",
                     "air_changes": "rate"},
                    frozenset({"at", "instead_of_sum"}), modifies=True,
                    summary="Vbz (or Voz) is the larger of the procedure's and the pack's figures"),
    RequirementKind("ez-cap", "zone", {"max_ez": None}, modifies=True,
                    summary="the Ez credit a zone may claim is at most max_ez"),
    RequirementKind("density-limit", "zone", {"max_density": "density"},
                    summary="design occupants per floor area at most max_density"),
    RequirementKind("air-class-limit", "zone", {"max_class": None},
                    frozenset({"only_when_mixed"}),
                    summary="air class on a recirculating system at most max_class"),
    RequirementKind("minimum-filter", "system", {"merv": None},
                    summary="filter MERV at least merv"),
    RequirementKind("clean-airflow", "zone", {"per_person": "airflow_per_person"},
                    frozenset({"credit"}),
                    summary="equivalent clean airflow per person, summed over the credited "
                            "mechanisms, at least per_person"),
    RequirementKind("formula", "", {},
                    frozenset({"subject", "required", "provided", "compare", "quantity", "params"}),
                    formulas=True, summary="provided compared with required, both formulas"),
)}


@dataclass(frozen=True)
class Subject:
    """What a selector looks at: a zone (with its system) or a system (with its zones)."""

    system: str
    system_kind: str
    recirculating: bool
    zone: str | None = None
    space: str | None = None
    group: str | None = None
    air_class: int | None = None
    air_distribution: frozenset[str] = frozenset()
    #: for a system subject: its zones, for ``serves``
    zones: tuple[Subject, ...] = ()


@dataclass(frozen=True)
class Selector:
    """Which subjects a requirement applies to. Every term given must hold; none: everything.

    ``any``: at least one of the selectors; ``all``: every one; ``not_``: not this one;
    ``serves`` (system subjects): the system serves at least one zone the selector matches.
    """

    space: frozenset[str] | None = None
    group: frozenset[str] | None = None
    zone: frozenset[str] | None = None
    system: frozenset[str] | None = None
    system_kind: frozenset[str] | None = None
    air_class: frozenset[int] | None = None
    air_distribution: frozenset[str] | None = None
    recirculating: bool | None = None
    all: tuple[Selector, ...] = ()
    any: tuple[Selector, ...] | None = None
    not_: Selector | None = None
    serves: Selector | None = None

    def matches(self, s: Subject) -> bool:
        sets = (("space", s.space), ("group", s.group), ("zone", s.zone), ("system", s.system),
                ("system_kind", s.system_kind), ("air_class", s.air_class))
        for name, value in sets:
            wanted = getattr(self, name)
            if wanted is not None and value not in wanted:
                return False
        if self.air_distribution is not None and not (self.air_distribution & s.air_distribution):
            return False
        if self.recirculating is not None and s.recirculating != self.recirculating:
            return False
        if any(not sel.matches(s) for sel in self.all):
            return False
        if self.any is not None and not any(sel.matches(s) for sel in self.any):
            return False
        if self.not_ is not None and self.not_.matches(s):
            return False
        if self.serves is not None and not any(self.serves.matches(z) for z in s.zones):
            return False
        return True


@dataclass(frozen=True)
class Formula:
    """A ``formula`` requirement: ``provided`` compared with ``required``."""

    required: Any  #: parsed tree (airgate.models.formula)
    provided: Any
    required_text: str
    provided_text: str
    compare: str  #: "at-least" | "at-most"
    quantity: str  #: the kind both sides are expressed in (airgate.units.KINDS)
    #: named parameters: name → (value in internal units, kind)
    params: dict[str, tuple[float, str]] = field(default_factory=dict)


@dataclass(frozen=True)
class Requirement:
    """One requirement of a pack, ready to evaluate."""

    id: str
    kind: str
    subject: str  #: "zone" | "system"
    severity: str  #: fail | warning | info: severity of a finding when it is not met
    missing: str  #: severity of the "not evaluated" finding when an input is missing
    message: str
    source: Source
    provenance: str
    selector: Selector
    #: kind parameters in internal units: per_person [L/s per person], per_area [L/s per m²],
    #: air_changes [1/h], max_ez [–], max_density [person/m²], merv [–], max_class [–]
    params: dict[str, float] = field(default_factory=dict)
    #: the same parameters as written in the pack, in the pack's units
    printed: dict[str, Any] = field(default_factory=dict)
    at: str = "Voz"  #: larger-of: figures are compared at Voz (default) or Vbz
    instead_of_sum: bool = False  #: larger-of: the procedure's sum is not one of the figures
    only_when_mixed: bool = False  #: air-class-limit: only where the system serves lower classes
    #: clean-airflow: the removal mechanisms whose equivalent clean airflow is credited
    credit: tuple[str, ...] = ()
    formula: Formula | None = None

    def cite(self) -> str:
        return f"{self.source.cite()} ({self.provenance})"
