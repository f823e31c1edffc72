"""The ventilation schedule, format version 1: the public input contract.

Quantities are strings with units (``"5000 ft2"``, ``"850 L/s"``) or bare numbers in the project's
unit system; they are parsed with pint while the model is validated (the project's unit system is
passed as validation context) and stored as floats in internal units (:mod:`airgate.units`).
The JSON Schema published by ``airgate schema schedule`` is generated from these classes.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Annotated, Any, Literal

from pydantic import (
    BaseModel,
    BeforeValidator,
    ConfigDict,
    Discriminator,
    Field,
    Tag,
    ValidatorFunctionWrapHandler,
    WithJsonSchema,
    WrapValidator,
    field_validator,
    model_validator,
)

from pydantic_core import PydanticCustomError

from airgate import units
from airgate.models.equipment import AirCleaner, Contaminant, Filter
from airgate.models.profiles import Profile
from airgate.models.quantities import Q
from airgate.models.waivers import Waiver


def _finite_count(value: Any) -> Any:
    if isinstance(value, bool):
        raise ValueError("expected a number of people, got a true/false value")
    if isinstance(value, str):
        try:
            return units.parse(value, "people", units.IP)
        except units.QuantityError as exc:
            raise ValueError(str(exc)) from None
    if isinstance(value, (int, float)) and value != value:  # NaN
        raise ValueError(f"is not a finite number, got {value!r}")
    return value


def _per_person_generation(value: Any) -> Any:
    """Text with units (``'0.0052 L/s/person'``) → L/s per person; a unit that is not per
    person (``'0.0052 L/s'``) is refused. Numbers pass on in L/s per person."""
    if isinstance(value, str):
        try:
            return units.parse(value, "gas_generation", units.SI)
        except units.QuantityError as exc:
            raise ValueError(str(exc)) from None
    return value


PerPersonGeneration = Annotated[
    float,
    BeforeValidator(_per_person_generation),
    WithJsonSchema({"anyOf": [{"type": "number", "exclusiveMinimum": 0, "maximum": 0.1},
                              {"type": "string"}],
                    "description": "Generation per person. [L/s per person]"}),
]


def _plain_count(value: Any, handler: ValidatorFunctionWrapHandler) -> Any:
    """A count that is a plain number of people, taken as the full validation would take it
    (a whole number exactly as a float); any other value goes through that validation."""
    kind = value.__class__
    if kind is int and 0 <= value <= 2**53 or kind is float and 0 <= value < math.inf:
        return float(value)
    return handler(value)


People = Annotated[
    float,
    BeforeValidator(_finite_count),
    Field(ge=0, allow_inf_nan=False, description="Number of people. [people]"),
    WithJsonSchema({"anyOf": [{"type": "number", "minimum": 0}, {"type": "string"}],
                    "description": "Number of people. [people]"}),
    WrapValidator(_plain_count),
]


def cross_field(field: str | tuple, message: str) -> PydanticCustomError:
    """A rule between fields, reported at ``field`` (the reader appends it to the location; a
    tuple is a path below the model, such as ``("zones", 0, "area")``)."""
    return PydanticCustomError("cross_field", message, {"field": field})


def _id(value: Any) -> Any:
    if value.__class__ is str:  # the usual case
        return value
    if isinstance(value, bool):
        raise ValueError(f"an id must be text such as \"204\" or \"AHU-1\", got "
                         f"{str(value).lower()}; put it in quotes if that is the id")
    if isinstance(value, (int, float)):
        return str(value)
    return value


_ID_PATTERN = r"^[^\s/][^/]*$"
_ID_TEXT = "Identifier: text without '/' and not starting with a space. [–]"



def _plain_id(value: Any, handler: ValidatorFunctionWrapHandler) -> Any:
    """An id that is plain text (no space around it, no '/', 1 to 200 characters), taken as
    the full validation would take it; any other value goes through that validation."""
    if value.__class__ is str and 0 < len(value) <= 200 and "/" not in value \
            and not value[0].isspace() and not value[-1].isspace():
        return value
    return handler(value)


Id = Annotated[
    str,
    BeforeValidator(_id),
    Field(min_length=1, max_length=200, pattern=_ID_PATTERN, description=_ID_TEXT),
    WithJsonSchema({"anyOf": [
        {"type": "string", "minLength": 1, "maxLength": 200, "pattern": _ID_PATTERN},
        {"type": "number", "description": "a bare number is read as text (quote ids to keep "
                                          "leading zeros in JSON)"}],
        "description": _ID_TEXT}),
    WrapValidator(_plain_id),
]


#: most design conditions a system may list
MAX_CONDITIONS = 8


def _condition_tag(value: Any) -> str:
    """A mapping is a per-condition value, except a stated air distribution (it has ``supply``)."""
    if isinstance(value, dict) and "supply" not in value:
        return "by_condition"
    return "value"


def by_condition(kind: Any) -> Any:
    """``kind``, or a mapping from condition id (the system's ``conditions``) to ``kind``: the
    value at each design condition. A plain value applies to every condition."""
    return Annotated[
        Annotated[kind, Tag("value")] | Annotated[dict[Id, kind | None], Tag("by_condition")],
        Discriminator(_condition_tag),
    ]


def at_condition(value: Any, condition: str | None) -> Any:
    """The value of a field at ``condition`` (a plain value applies to every condition)."""
    if isinstance(value, dict) and condition is not None:
        return value.get(condition)
    return value


#: the fields that may differ by design condition
ZONE_CONDITION_FIELDS = ("occupants", "air_distribution", "ez", "ez_basis", "primary_airflow")
SYSTEM_CONDITION_FIELDS = ("outdoor_air", "population", "supply_airflow")


class _Model(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, str_strip_whitespace=True,
                              populate_by_name=True)


def _option_value(value: Any) -> Any:
    if isinstance(value, bool):
        raise ValueError("an option value is text such as II or low, got a true/false value")
    if isinstance(value, (int, float)):
        return str(value)
    return value


#: A value chosen for one of the rule pack's options (e.g. category II).
OptionValue = Annotated[str, BeforeValidator(_option_value), Field(min_length=1, max_length=60)]


def _whole_number(value: Any) -> Any:
    if isinstance(value, bool):
        raise ValueError("expected a whole number, got a true/false value")
    return value


class Project(_Model):
    """What the schedule is about and which unit system its bare numbers use."""

    name: str = Field(min_length=1, description="Project name. [–]")
    units: Literal["IP", "SI"] = Field(description="Unit system of bare numbers. [–]")
    owner: str | None = Field(None, description="Building owner. [–]")
    location: str | None = Field(None, description="Site or jurisdiction. [–]")
    outdoor_co2: float = Field(420.0, gt=0, le=5000, allow_inf_nan=False,
                               description="Outdoor CO2 concentration. [ppm]")
    co2_limit: float | None = Field(None, gt=0, le=50000, allow_inf_nan=False,
                                    description="Indoor CO2 limit to report against. [ppm]")
    options: dict[str, OptionValue] = Field(
        default_factory=dict, description="Choices the rule pack leaves to the schedule, e.g. "
                                          "{category: II, pollution: low}. [–]")
    notes: str | None = Field(None, description="Free text. [–]")


class StatedDistribution(_Model):
    """The zone's air distribution as the designer states it; the pack's table row is matched."""

    supply: Literal["ceiling", "floor", "makeup"] = Field(description="Where air is supplied. [–]")
    return_: Literal["ceiling", "floor", "near", "far"] | None = Field(
        None, alias="return", description="Where air is returned (makeup: near or far). [–]")
    mode: Literal["cooling", "heating"] | None = Field(None, description="Supply air mode. [–]")
    temperature_difference: Q(
        "temperature_difference",
        "Supply air temperature minus space temperature (warm supply). [°F in IP, K in SI]",
    ) | None = None
    jet_velocity: Q(
        "velocity",
        "Supply jet velocity reaching down toward the floor (150 fpm / 0.8 m/s test). [fpm or m/s]",
    ) | None = None
    throw_velocity: Q(
        "velocity",
        "Vertical throw velocity at 4.5 ft (1.4 m) above the floor. [fpm or m/s]",
    ) | None = None


ExplicitEz = Annotated[float, Field(gt=0, le=2, allow_inf_nan=False,
                                    description="Explicit Ez. [–]")]
EzBasis = Annotated[str, Field(min_length=1, description="Why the explicit Ez applies. [–]")]
DistributionRef = Annotated[str, Field(min_length=1, description="A row id of the pack's Ez table. [–]")]
#: Several modes analysed (cooling and heating, say); at least one.
DistributionModes = Annotated[list[DistributionRef | StatedDistribution], Field(min_length=1)]


_VPZ = ("Zone primary airflow Vpz at the design condition analysed (a mapping: per design "
        "condition). [cfm or L/s]")
_VOT = ("Scheduled minimum outdoor-air intake Vot (a mapping: per design condition); required, "
        "except on a natural system or an exhaust fan, which have none. [cfm or L/s]")
_VPS = ("System primary airflow Vps at the condition analysed; default ΣVpz (a mapping: per "
        "design condition). [cfm or L/s]")


class NaturalVentilation(_Model):
    """The openings of a naturally ventilated zone (ANSI/ASHRAE 62.1-2019 Section 6.4)."""

    openable_area: Q("area", "Openable area of the openings to the outdoors. [ft² or m²]")
    arrangement: Literal["single-sided", "double-sided", "corner"] = Field(
        description="Where the openings are: on one wall only, on opposite walls, or on two "
                    "walls meeting at a corner. [–]")
    depth: Q("length", "Distance from the openings to the farthest point of the naturally "
                       "ventilated floor (for opposite openings, between them). [ft or m]",
             positive=True)
    permanently_open: bool = Field(
        False, description="The openings are permanently open (an exception to the mechanical "
                           "system Section 6.4 otherwise also asks for). [–]")
    conditioned: bool = Field(
        True, description="The zone has heating or cooling equipment; false is an exception to "
                          "the mechanical system Section 6.4 otherwise also asks for. [–]")


def _fixture_count(value: Any) -> Any:
    if isinstance(value, bool):
        raise ValueError("expected a number of fixtures, got a true/false value")
    if isinstance(value, float) and value.is_integer():
        return int(value)
    return value


class MakeupTransfer(_Model):
    """Makeup air transferred from another zone of the schedule."""

    transfer_from: Id = Field(description="Id of the zone the makeup air is transferred from "
                                          "(its air class decides whether it may be). [–]")


class ZoneExhaust(_Model):
    """Air exhausted from a zone, checked against a row of the pack's minimum exhaust rates."""

    category: str = Field(min_length=1, description="A row id of the pack's exhaust table. [–]")
    airflow: Q("airflow", "Scheduled exhaust airflow from the zone. [cfm or L/s]")
    fixtures: Annotated[int, BeforeValidator(_fixture_count)] | None = Field(
        None, ge=0, le=100000, description="What a per-unit row counts: water closets and "
                                           "urinals, showerheads, or kitchens. [–]")
    operation: Literal["continuous", "intermittent"] = Field(
        "continuous", description="The exhaust runs continuously, or only while the space is "
                                  "in use (the row's intermittent rate). [–]")
    makeup: Literal["outdoor"] | MakeupTransfer | None = Field(
        None, description="Where the exhausted air's makeup comes from: 'outdoor' (outdoor "
                          "air) or {transfer_from: ZONE} (air transferred from another zone, "
                          "checked against the air-class rules). [–]")


class Zone(_Model):
    """One ventilation zone (a space or group of spaces with one set of requirements)."""

    id: Id
    name: str | None = Field(None, description="Room or zone name. [–]")
    space: str | None = Field(
        None, min_length=1, description="Occupancy category id of the rule pack; required in "
                                        "a supply system, absent under an exhaust fan. [–]")
    area: Q("area", "Zone floor area Az (net occupiable). [ft² or m²]", positive=True)
    occupants: by_condition(People) | None = Field(
        None, description="Zone population Pz; default: table density × Az; a mapping "
                          "gives it per design condition. [people]")
    bedrooms: Annotated[int, BeforeValidator(_whole_number)] | None = Field(
        None, ge=0, le=100, description="Number of bedrooms Nbr of a dwelling unit (its default "
                                        "occupancy is Nbr + 1 where the pack says so). [–]")
    height: Q("length", "Ceiling height. [ft or m]", positive=True) | None = None
    volume: Q("volume", "Zone volume. [ft³ or m³]", positive=True) | None = None
    air_distribution: by_condition(
        DistributionRef | StatedDistribution | DistributionModes
    ) | None = Field(None, description="Ez table row id or stated configuration; a list of "
                                       "modes: the lowest Ez governs; a mapping from condition "
                                       "id: one per design condition. [–]")
    ez: by_condition(ExplicitEz) | None = Field(
        None, description="Explicit zone air distribution effectiveness Ez (a mapping: per "
                          "design condition). [–]")
    ez_basis: by_condition(EzBasis) | None = Field(
        None, description="Why the explicit Ez applies (a mapping: per design condition). [–]")
    primary_airflow: by_condition(Q(
        "airflow", _VPZ, positive=True)) | None = Field(None, description=_VPZ)
    ep: float | None = Field(None, gt=0, le=1, allow_inf_nan=False,
                             description="Primary air fraction of zone supply Ep (secondary "
                                         "recirculation); default 1. [–]")
    er: float | None = Field(None, ge=0, le=1, allow_inf_nan=False,
                             description="Fraction of secondary recirculated air drawn from the "
                                         "system return Er. [–]")
    outdoor_air: Q(
        "airflow", "Outdoor air delivered to the zone (outdoor-air systems). [cfm or L/s]"
    ) | None = None
    air_cleaners: list[AirCleaner] = Field(default_factory=list,
                                           description="In-room air cleaners. [–]")
    profile: str | None = Field(None, min_length=1,
                                description="Name of an occupancy profile under 'profiles'. [–]")
    activity: str | None = Field(None, min_length=1,
                                 description="Occupant activity id of the CO2 generation table. [–]")
    co2_generation: PerPersonGeneration | None = Field(
        None, gt=0, le=0.1, allow_inf_nan=False,
        description="CO2 generation per occupant, overriding the activity's: a number in L/s "
                    "per person, or text with units per person such as '18.7 L/h/person'. "
                    "[L/s per person]")
    air_class: Literal[1, 2, 3, 4] | None = Field(
        None, description="Air class, where it differs from the category's. [–]")
    natural_ventilation: NaturalVentilation | None = Field(
        None, description="Openings to the outdoors (zones of a natural system). [–]")
    exhaust: ZoneExhaust | None = Field(
        None, description="Exhaust from the zone, checked against the pack's minimum exhaust "
                          "rates. [–]")
    notes: str | None = Field(None, description="Free text. [–]")

    @model_validator(mode="after")
    def _ez_has_basis(self) -> Zone:
        if self.ez is not None:  # without an explicit ez (most zones) neither rule can fail
            self._ez_rules()
        if self.er is not None and self.ep is None:
            raise cross_field("er", "er (secondary recirculation) needs ep, the primary air "
                                    "fraction")
        return self

    def _ez_rules(self) -> None:
        """An explicit ez has its basis, and no air_distribution beside it, at each condition."""
        # once validated, a per-condition value is a dict (a stated distribution is a model)
        keys = sorted({k for name in ZONE_CONDITION_FIELDS
                       if isinstance(v := getattr(self, name), dict) for k in v}) or [None]
        for key in keys:
            ez, basis = at_condition(self.ez, key), at_condition(self.ez_basis, key)
            where = "" if key is None else f" (condition {key})"
            if ez is not None and basis is None:
                raise cross_field("ez", f"an explicit ez needs ez_basis{where}: say why it "
                                        "applies")
            if ez is not None and at_condition(self.air_distribution, key) is not None:
                raise cross_field("ez", f"give either air_distribution or an explicit "
                                        f"ez{where}, not both")


def _pack_list(items: list[str]) -> list[str]:
    """A list of rule pack ids or paths: none empty, none twice."""
    if not items:
        raise ValueError("list at least one rule pack")
    for item in items:
        if not item.strip():
            raise ValueError("a rule pack id or path cannot be empty")
    twice = sorted({p for p in items if items.count(p) > 1})
    if twice:
        raise ValueError(f"rule pack '{twice[0]}' is listed twice")
    return items


@dataclass(frozen=True)
class SystemKindRules:
    """What the schedule contract says of a system kind."""

    one_zone: bool  #: serves exactly one zone
    recirculates: bool  #: recirculates return air unless the schedule says otherwise
    intake: bool = True  #: has a scheduled mechanical outdoor-air intake (``outdoor_air``)
    #: supplies air to its zones (needs outdoor_air, and space on every zone); False:
    #: an exhaust fan, whose zones state only what is exhausted from them
    supplies: bool = True


#: the system kinds a schedule may name; each has its evaluation registered under the same name
#: in :data:`airgate.evaluation.system_kinds.SYSTEM_KINDS`
SYSTEM_KINDS: dict[str, SystemKindRules] = {
    "single-zone": SystemKindRules(one_zone=True, recirculates=True),
    "outdoor-air": SystemKindRules(one_zone=False, recirculates=False),
    "multiple-zone": SystemKindRules(one_zone=False, recirculates=True),
    "natural": SystemKindRules(one_zone=False, recirculates=False, intake=False),
    "exhaust": SystemKindRules(one_zone=False, recirculates=False, intake=False, supplies=False),
}


class System(_Model):
    """An air system and the zones it serves."""

    id: Id
    name: str | None = Field(None, description="Air system name. [–]")
    kind: Literal[tuple(SYSTEM_KINDS)] = Field(
        description="single-zone, 100 % outdoor-air, multiple-zone recirculating, natural "
                    "(openings to the outdoors, no intake), or an exhaust fan. [–]")
    procedure: Literal["vrp", "iaqp"] = Field(
        "vrp", description="Compliance path: vrp, the ventilation rate procedure (ANSI/ASHRAE "
                           "62.1 Section 6.2); iaqp, the IAQ procedure (Section 6.3: the "
                           "schedule's contaminants with a limit are the design compounds and "
                           "the least outdoor air meeting every limit is solved from the mass "
                           "balance). [–]")
    conditions: list[Id] | None = Field(
        None, min_length=1, max_length=MAX_CONDITIONS,
        description="Design conditions the system operates at (ids of your choosing, e.g. "
                    "[cooling, heating]); fields given as a mapping from these ids take one "
                    "value per condition, and each condition is evaluated. [–]")
    outdoor_air: by_condition(Q("airflow", _VOT)) | None = Field(None, description=_VOT)
    airflow: Q("airflow", "Scheduled airflow of an exhaust fan, checked against the exhaust "
                          "its zones schedule. [cfm or L/s]") | None = None
    supply_airflow: by_condition(Q("airflow", _VPS, positive=True)) | None = Field(
        None, description=_VPS)
    population: by_condition(People) | None = Field(
        None, description="System population Ps; default ΣPz (a mapping: per design "
                          "condition). [people]")
    ventilation_efficiency: Literal["simplified", "detailed", "table"] | None = Field(
        None, description="Ev method (multiple-zone); default: the pack's. [–]")
    variable_air_volume: bool = Field(
        True, description="Zones have variable primary airflow (VAV terminals). [–]")
    filter: Filter | None = Field(None, description="Particle filter on the supply air. [–]")
    recirculates: bool | None = Field(
        None, description="Return air is recirculated; default: not for outdoor-air systems. [–]")
    zones: list[Zone] = Field(min_length=1, description="Zones served. [–]")
    extra_rules: list[str] = Field(
        default_factory=list,
        description="Supplement packs checked on this system only, beside the schedule's rule "
                    "packs (e.g. an infection-risk target for one room). [–]")
    notes: str | None = Field(None, description="Free text. [–]")

    @model_validator(mode="after")
    def _kind_fits(self) -> System:
        rules = SYSTEM_KINDS[self.kind]
        if rules.one_zone and len(self.zones) != 1:
            raise cross_field("kind", f"a single-zone system serves exactly one zone, this one "
                                      f"lists {len(self.zones)}; use kind: multiple-zone")
        if SYSTEM_KINDS[self.kind].intake and self.outdoor_air is None:
            raise cross_field("outdoor_air", f"a {self.kind} system needs outdoor_air, its "
                                             "scheduled minimum outdoor-air intake, such as "
                                             "'850 cfm' or '400 L/s'")
        if not SYSTEM_KINDS[self.kind].intake and self.outdoor_air is not None:
            raise cross_field("outdoor_air", f"a {self.kind} system has no mechanical intake: "
                                             "remove outdoor_air, or describe the mechanical "
                                             "system as a system of its own")
        if self.procedure == "iaqp" and not rules.intake:
            raise cross_field("procedure", f"a {self.kind} system has no mechanical intake, so "
                                           "the IAQ procedure's mass balance has no outdoor air "
                                           "to solve for; remove procedure: iaqp")
        if self.procedure == "iaqp":
            for j, zone in enumerate(self.zones):
                if zone.height is None and zone.volume is None:
                    raise cross_field(("zones", j, "height"), "a zone on the IAQ procedure "
                                      "(procedure: iaqp) needs height or volume for its mass "
                                      "balance, such as 'height: 10 ft' or 'volume: 90 m3'")
        if not rules.supplies:
            return self
        # a supplied zone's occupancy category (an exhaust fan's zones have none)
        for j, zone in enumerate(self.zones):
            if zone.space is None:
                raise cross_field(("zones", j, "space"), "missing required field 'space' "
                                  "(occupancy category id of the rule pack)")
        return self

    @field_validator("extra_rules")
    @classmethod
    def _extra_rules(cls, items: list[str]) -> list[str]:
        return _pack_list(items) if items else items

    @field_validator("conditions")
    @classmethod
    def _unique_conditions(cls, items: list[str] | None) -> list[str] | None:
        if items is not None and "supply" in items:
            raise ValueError("'supply' cannot name a condition: it is the key of a stated air "
                             "distribution; choose another id")
        if items is not None and len(set(items)) != len(items):
            twice = sorted({c for c in items if items.count(c) > 1})
            raise ValueError(f"condition '{twice[0]}' is listed twice")
        return items

    def at(self, condition: str | None) -> System:
        """This system at one design condition: every per-condition field resolved to its plain
        value (no validation is repeated; the values are already in internal units)."""
        if condition is None:
            return self
        zones = [z.model_copy(update={name: at_condition(getattr(z, name), condition)
                                      for name in ZONE_CONDITION_FIELDS})
                 for z in self.zones]
        update = {name: at_condition(getattr(self, name), condition)
                  for name in SYSTEM_CONDITION_FIELDS}
        return self.model_copy(update={**update, "zones": zones})

    @property
    def is_recirculating(self) -> bool:
        if self.recirculates is not None:
            return self.recirculates
        return SYSTEM_KINDS[self.kind].recirculates


class Schedule(_Model):
    """A building's ventilation schedule, format version 1."""

    schedule: Literal[1] = Field(description="Schedule format version. [–]")
    project: Project
    rules: str | list[str] | None = Field(
        None, description="Rule pack id or path; or a list of them: the first is the rate pack "
                          "the schedule is evaluated under, each further one a supplement pack "
                          "whose requirements are checked beside it (docs/schedule-format.md); "
                          "--rules overrides. [–]")
    profiles: dict[str, Profile] = Field(default_factory=dict,
                                         description="Named occupancy profiles. [–]")
    contaminants: list[Contaminant] = Field(
        default_factory=list, description="Contaminants to analyse besides occupant CO2. [–]")
    systems: list[System] = Field(min_length=1, description="Air systems. [–]")
    waivers: list[Waiver] = Field(
        default_factory=list, description="Approved alternatives: findings the reviewer "
                                          "accepted, by rule and subject. [–]")

    @field_validator("rules")
    @classmethod
    def _rule_list(cls, value: str | list[str] | None) -> str | list[str] | None:
        return value if value is None or isinstance(value, str) else _pack_list(value)

    @property
    def rule_refs(self) -> tuple[str, ...]:
        """The packs ``rules:`` names, in order (one for a single pack; none when absent)."""
        if self.rules is None:
            return ()
        return (self.rules,) if isinstance(self.rules, str) else tuple(self.rules)

    @field_validator("contaminants")
    @classmethod
    def _unique_contaminants(cls, items: list[Contaminant]) -> list[Contaminant]:
        seen: set[str] = set()
        for c in items:
            if c.id.lower() in seen or c.id.lower() == "co2":
                raise ValueError(f"contaminant id '{c.id}' is used twice (CO2 from occupants is "
                                 "always analysed and needs no entry)")
            seen.add(c.id.lower())
        return items

    @model_validator(mode="after")
    def _design_compounds(self) -> Schedule:
        if any(c.limit is not None for c in self.contaminants):
            return self
        for i, s in enumerate(self.systems):
            if s.procedure == "iaqp":
                raise cross_field(("systems", i, "procedure"), "the IAQ procedure needs design "
                                  "compounds: declare contaminants with a limit (and its "
                                  "limit_source), or use procedure: vrp")
        return self

    @field_validator("systems")
    @classmethod
    def _unique_ids(cls, systems: list[System]) -> list[System]:
        seen: set[str] = set()
        for s in systems:
            if s.id in seen:
                raise ValueError(f"duplicate system id '{s.id}'")
            seen.add(s.id)
        zones: set[str] = set()
        for s in systems:
            for z in s.zones:
                if z.id in zones:
                    raise ValueError(f"duplicate zone id '{z.id}' (zone ids are unique in a schedule)")
                zones.add(z.id)
        return systems
