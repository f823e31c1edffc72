"""Typed model of a rule pack (format version 1), with every value in internal units.

The pack file itself is validated against ``rules/schema/rule-pack.schema.json`` first
(:mod:`airgate.readers.rulepack`); these classes hold the result. Units of every numeric field are
given in brackets; "internal" means the units of :mod:`airgate.units` (L/s, m², person, K, m/s).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

from airgate.errors import Path_

if TYPE_CHECKING:
    from airgate.models.requirements import Requirement


@dataclass(frozen=True)
class CitedValue:
    """One value of a pack with its source and provenance."""

    value: float
    source: Source
    provenance: str
    notes: str = ""

    def cite(self) -> str:
        return f"{self.source.cite()} ({self.provenance})"


@dataclass(frozen=True)
class NaturalVentilationRules:
    """The natural ventilation procedure's limits (ANSI/ASHRAE 62.1-2019 Section 6.4).

    ``openable_fraction``: least openable area per net occupiable floor area [–];
    ``depth_ratio``: by opening arrangement, the greatest depth of the naturally ventilated floor
    as a multiple of the ceiling height H [–].
    """

    openable_fraction: CitedValue
    depth_ratio: dict[str, CitedValue]


@dataclass(frozen=True)
class Source:
    """Where a value comes from: document, edition, table and/or section."""

    document: str
    edition: str
    table: str = ""
    section: str = ""

    def cite(self) -> str:
        cited = self.__dict__.get("_cited")  # worked out once: cited on every zone's trail
        if cited is None:
            where = ", ".join(p for p in (self.table, self.section) if p)
            cited = f"{self.document}, {self.edition} edition" + (f", {where}" if where else "")
            object.__setattr__(self, "_cited", cited)
        return cited

    def as_dict(self) -> dict[str, str]:
        out = {"document": self.document, "edition": self.edition}
        if self.table:
            out["table"] = self.table
        if self.section:
            out["section"] = self.section
        return out


@dataclass(frozen=True)
class Equation:
    """An equation the pack cites for a step of the calculation trail."""

    key: str
    form: str
    source: Source
    provenance: str


@dataclass(frozen=True)
class OccupancyCategory:
    """One row of the breathing-zone rate table."""

    id: str
    label: str
    group: str
    rp: float  #: outdoor airflow per person Rp [L/s per person]
    ra: float  #: outdoor airflow per area Ra [L/s per m²]
    density: float | None  #: default occupant density [person per m²]; None: table gives none
    air_class: int  #: air class 1–4 [–]
    provenance: str
    source: Source
    notes: str = ""
    #: the row as printed in the pack, in the pack's own units (for provenance in reports)
    printed: dict[str, float | None] = field(default_factory=dict)
    #: how the default population is found when the table gives no density: None, or
    #: ``"bedrooms-plus-one"`` (dwelling units: Pz = Nbr + 1)
    default_occupants: str | None = None
    #: with ``bedrooms-plus-one``: Nbr is taken as not less than this [–]
    minimum_bedrooms: int = 0
    #: citations of single fields that differ from the row's source (amended by a layered pack,
    #: or raised by a requirement), by field name (``Rp``, ``Ra``, ``density``)
    cited: dict[str, str] = field(default_factory=dict)
    #: provenance of single values (``Rp``, ``Ra``, ``density``, ``air_class``) where it differs
    #: from the row's
    value_provenance: dict[str, str] = field(default_factory=dict)

    #: the table values of a row, in the order of the table's columns
    VALUES = ("Rp", "Ra", "density", "air_class")

    def provenance_of(self, name: str) -> str:
        """Provenance of one value of the row."""
        return self.value_provenance.get(name, self.provenance)

    def cite(self, name: str) -> str:
        """Citation of one value of the row (``Rp``, ``Ra``, ``density``) with its provenance."""
        if name in self.cited:
            return self.cited[name]
        cache = self.__dict__.get("_cite_cache")
        if cache is None:  # cited on every zone's trail: one text per value, not per zone
            cache = {}
            object.__setattr__(self, "_cite_cache", cache)
        text = cache.get(name)
        if text is None:
            text = cache[name] = (f"{self.source.cite()}, row '{self.label}' "
                                  f"({self.provenance_of(name)})")
        return text


#: what an exhaust row's rate is counted per, and how a report names one such unit
EXHAUST_PER: dict[str, str] = {
    "floor-area": "floor area",
    "water-closet-or-urinal": "water closet or urinal",
    "showerhead": "showerhead",
    "kitchen": "kitchen",
    "room": "room",
    "vehicle": "parked vehicle",
    "bathroom": "bathroom",
    "air-change": "air change of the zone's volume",
}


@dataclass(frozen=True)
class ExhaustRow:
    """One row of the minimum exhaust rates table.

    Per floor area the rates are [L/s per m²]; per counted unit (water closet or urinal,
    showerhead, dwelling kitchen) they are [L/s per unit]. A row gives one ``rate`` or both a
    ``continuous`` and an ``intermittent`` rate.
    """

    id: str
    label: str
    per: str  #: a key of :data:`EXHAUST_PER`
    rates: dict[str, float]  #: ``rate`` or ``continuous`` and ``intermittent`` [internal units]
    air_class: int  #: air class 1–4 [–]
    provenance: str
    source: Source
    notes: str = ""
    #: the row as printed in the pack, in the pack's own units
    printed: dict[str, float] = field(default_factory=dict)
    #: provenance of single values where it differs from the row's
    value_provenance: dict[str, str] = field(default_factory=dict)
    #: a toilet room: class 2 air may be transferred to it (62.1-2019 Section 5.16.3.2)
    toilet_room: bool = False

    @property
    def per_area(self) -> bool:
        return self.per == "floor-area"

    @property
    def per_volume(self) -> bool:
        """Rated in air changes per hour of the zone's volume [1/h] (needs the volume)."""
        return self.per == "air-change"

    def rate_for(self, operation: str) -> tuple[str, float]:
        """The column that applies to ``operation`` (continuous | intermittent) and its rate."""
        if "rate" in self.rates:
            return "rate", self.rates["rate"]
        return operation, self.rates[operation]

    def provenance_of(self, name: str) -> str:
        return self.value_provenance.get(name, self.provenance)

    def cite(self, name: str) -> str:
        """Citation of one value of the row (``rate``, ``continuous``, ``intermittent``)."""
        return f"{self.source.cite()}, row '{self.label}' ({self.provenance_of(name)})"


@dataclass(frozen=True)
class Bound:
    """A condition range on a stated quantity, in internal units."""

    lt: float | None = None
    le: float | None = None
    gt: float | None = None
    ge: float | None = None

    def contains(self, x: float, tol: float = 1e-9) -> bool:
        if self.lt is not None and not x < self.lt - tol:
            return False
        if self.le is not None and not x <= self.le + tol:
            return False
        if self.gt is not None and not x > self.gt + tol:
            return False
        if self.ge is not None and not x >= self.ge - tol:
            return False
        return True


@dataclass(frozen=True)
class AirDistributionRow:
    """One configuration of the zone air distribution effectiveness table."""

    id: str
    label: str
    ez: float  #: zone air distribution effectiveness Ez [–]
    supply: str
    return_: str | None
    mode: str | None
    bounds: dict[str, Bound]  #: temperature_difference [K], jet_velocity / throw_velocity [m/s]
    provenance: str
    source: Source


@dataclass(frozen=True)
class SimplifiedEv:
    """Simplified system ventilation efficiency: Ev = slope·D + intercept below the breakpoint."""

    breakpoint: float  #: diversity D at which Ev becomes constant [–]
    slope: float  #: [–]
    intercept: float  #: [–]
    above_breakpoint: float  #: Ev for D at or above the breakpoint [–]
    vav_minimum_primary_ratio: float | None  #: VAV zone minimum Vpz / Voz [–]
    source: Source
    provenance: str


@dataclass(frozen=True)
class DetailedEv:
    """Detailed (zone-by-zone) system ventilation efficiency calculation."""

    source: Source
    provenance: str


@dataclass(frozen=True)
class TableEv:
    """System ventilation efficiency looked up against the largest primary outdoor-air fraction."""

    rows: tuple[tuple[float, float], ...]  #: (largest Zp up to [–], Ev [–]), ascending
    interpolate: bool
    above_last: float | str  #: Ev above the last row [–], or "detailed"
    source: Source
    provenance: str


@dataclass(frozen=True)
class Check:
    """A requirement the engine evaluates, with the severity and citation the pack gives it."""

    id: str
    severity: str
    title: str
    source: Source


@dataclass(frozen=True)
class PackOption:
    """A choice the pack leaves to the schedule (``project.options``), e.g. a category."""

    name: str
    label: str
    values: tuple[str, ...]
    default: str | None
    source: Source | None = None


@dataclass(frozen=True)
class Retired:
    """An entry a layered pack removed from its base, and why."""

    collection: str  #: occupancy | air_distribution | ventilation_efficiency | checks | requirements
    id: str
    reason: str
    pack: str  #: id of the pack that retired it
    where: str  #: file:line of the retirement

    def text(self) -> str:
        return f"retired by rule pack {self.pack} ({self.where}): {self.reason}"


@dataclass
class RulePack:
    """A loaded, validated rule pack (a layered pack: the merged result)."""

    id: str
    title: str
    document: str
    edition: str
    units: str
    jurisdiction: str | None
    effective: str | None
    provenance: str
    verify: bool
    cautions: tuple[str, ...]
    equations: dict[str, Equation]
    occupancy_source: Source
    occupancy_provenance: str
    categories: dict[str, OccupancyCategory]
    air_distribution_source: Source
    air_distribution_provenance: str
    configurations: dict[str, AirDistributionRow]
    default_configuration: str | None
    #: None: the pack has no procedure for multiple-zone systems
    default_method: str | None
    methods: dict[str, SimplifiedEv | DetailedEv | TableEv]
    checks: dict[str, Check]
    file: str
    #: the pack document (a :class:`airgate.readers.layering.PackDocument`): positions of values
    document_positions: Any = None
    #: the pack this one extends, and the whole chain from this pack to the root
    extends: str | None = None
    lineage: tuple[str, ...] = ()
    #: entries removed by a layered pack, by collection then id
    retired: dict[str, dict[str, Retired]] = field(default_factory=dict)
    #: requirements beyond the sum of rates, by id
    requirements: dict[str, Requirement] = field(default_factory=dict)
    #: the options the pack declares, and those chosen when it was loaded
    options: dict[str, PackOption] = field(default_factory=dict)
    chosen: dict[str, str] = field(default_factory=dict)
    #: the natural ventilation procedure's limits; None: the pack has none
    natural_ventilation: NaturalVentilationRules | None = None
    #: minimum exhaust rates by row id (empty: the pack has no exhaust table)
    exhaust: dict[str, ExhaustRow] = field(default_factory=dict)
    #: ``rates``: a pack with a rate procedure, which a schedule is evaluated under;
    #: ``supplement``: requirements only, checked beside a rates pack on its calculation
    role: str = "rates"

    def cite(self, key: str) -> str:
        """Citation of an equation key, with its provenance (e.g. for a trail step)."""
        cites = self.__dict__.get("_cites")
        if cites is None:  # worked out once per key: cited on every zone's trail
            cites = {}
            object.__setattr__(self, "_cites", cites)
        cited = cites.get(key)
        if cited is None:
            eq = self.equations.get(key)
            cited = cites[key] = (f"{self.document}, {self.edition} edition" if eq is None
                                  else f"{eq.source.cite()} ({eq.provenance})")
        return cited

    def locate(self, path: Path_) -> tuple[int | None, int | None]:
        if self.document_positions is None:
            return (None, None)
        return self.document_positions.locate(path)

    def where(self, path: Path_) -> tuple[str, int | None, int | None, Path_]:
        """File, line, column and field path (in that file) where a value of the pack is written.

        For a layered pack this is the file of the pack that wrote the value: the base for an
        inherited entry, the amending pack for an amendment.
        """
        if self.document_positions is None or not hasattr(self.document_positions, "origin"):
            line, column = self.locate(path)
            return (self.file, line, column, tuple(path))
        o = self.document_positions.origin(tuple(path))
        return (o.file, o.line, o.column, o.path)

    def value_provenance_counts(self) -> dict[str, int]:
        """How many of the pack's table values are ``published``, ``derived``, ``from memory`` …

        Counted: each occupancy row's Rp, Ra, default density (where the table gives one) and
        air class; each Ez; the natural ventilation fraction and depth ratios; each exhaust row's rates and air class; each number of an Ev method (slope, intercept, breakpoint, the value
        above it, the VAV ratio; each table row's Ev and the value above the last row); each
        numeric parameter of a requirement. Equations are forms, not values, and not counted.
        """
        counts: dict[str, int] = {}

        def add(provenance: str, n: int = 1) -> None:
            counts[provenance] = counts.get(provenance, 0) + n

        for c in self.categories.values():
            for name in OccupancyCategory.VALUES:
                if name == "density" and c.density is None:
                    continue
                add(c.provenance_of(name))
        for r in self.configurations.values():
            add(r.provenance)
        if self.natural_ventilation is not None:
            nv = self.natural_ventilation
            for v in (nv.openable_fraction, *nv.depth_ratio.values()):
                add(v.provenance)
        for e in self.exhaust.values():
            for name in (*e.rates, "air_class"):
                add(e.provenance_of(name))
        for m in self.methods.values():
            if isinstance(m, SimplifiedEv):
                add(m.provenance, 4 + (m.vav_minimum_primary_ratio is not None))
            elif isinstance(m, TableEv):
                add(m.provenance, len(m.rows) + (not isinstance(m.above_last, str)))
        for req in self.requirements.values():
            n = sum(isinstance(v, (int, float)) and not isinstance(v, bool)
                    for v in req.printed.values())
            if req.formula is not None:
                n += len(req.formula.params)
            if n:
                add(req.provenance, n)
        return dict(sorted(counts.items(), key=lambda kv: (-kv[1], kv[0])))

    def retirement(self, collection: str, entry: str) -> Retired | None:
        """Why ``entry`` is missing from ``collection``, when a layered pack retired it."""
        return self.retired.get(collection, {}).get(entry)
