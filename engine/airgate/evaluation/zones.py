"""Zone-level steps: Az, Rp, Ra, Pz, Vbz, Ez, Voz, with their trail and zone findings."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from airgate.evaluation import exhaust
from airgate.evaluation.bind import EzChoice
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Location
from airgate.evaluation.report import ZoneResult
from airgate.evaluation.trail import Step, Trail, unit_factor
from airgate.models.rules import ExhaustRow, OccupancyCategory, RulePack
from airgate.models.schedule import Zone
from airgate.procedures import dwelling, zone_rates


@dataclass
class ZoneContext:
    """A zone bound to the pack, ready to compute."""

    zone: Zone
    path: tuple
    location: Location
    category: OccupancyCategory
    ez: EzChoice
    subject: str
    system_id: str
    #: where each stated field was written (area, occupants, ...) for the trail's sources
    fields: dict[str, Location] = field(default_factory=dict)
    #: the zone's system has a mechanical intake (its air distribution matters)
    mechanical: bool = True
    #: the row of the pack's exhaust table the zone's exhaust names (None: no exhaust stated)
    exhaust: ExhaustRow | None = None

    def where(self, name: str) -> Location:
        """Where the stated field ``name`` is written: a trail step's source, found only when
        a writer shows it (:meth:`Location.deferred`)."""
        return self.fields.get(name, self.location)

    @property
    def air_class(self) -> int:
        return self.zone.air_class or self.category.air_class


def _population(trail: Trail, ctx: ZoneContext, pack: RulePack, emitter: Emitter) -> float:
    cat = ctx.category
    if ctx.zone.occupants is not None:
        return trail.add("Pz", ctx.zone.occupants, "people", origin="schedule",
                         note="stated in the schedule", source=ctx.where("occupants"))
    if cat.default_occupants == "bedrooms-plus-one" and ctx.zone.bedrooms is not None:
        trail.add("Nbr", ctx.zone.bedrooms, "count", origin="schedule",
                  source=ctx.where("bedrooms"), note="number of bedrooms")
        least = cat.minimum_bedrooms
        if ctx.zone.bedrooms < least:
            return trail.add("Pz", dwelling.default_occupants(float(least)), "people",
                             formula=f"max({{Nbr}}, {least}) + 1", origin="computed",
                             source=pack.cite("default_population"),
                             note=f"occupants not stated: bedrooms (taken as not less than "
                                  f"{least}) + 1")
        return trail.add("Pz", dwelling.default_occupants(ctx.zone.bedrooms), "people",
                         formula="{Nbr} + 1", origin="computed",
                         source=pack.cite("default_population"),
                         note="occupants not stated: bedrooms + 1")
    if cat.density is None:
        if cat.rp > 0:
            emitter.emit(
                "population-without-density", ctx.subject,
                f"occupants are not stated and '{cat.id}' has no default density; Pz = 0 was "
                "used, so the per-person part of the requirement is missing — state occupants",
                ctx.location, system=ctx.system_id, zone=ctx.zone.id)
        return trail.add("Pz", 0.0, "people", origin="assumed",
                         note="no occupants stated and no default density in the table")
    trail.add("density", cat.density, "density", origin="table", source=cat.cite("density"),
              note="default occupant density")
    # the density is shown per 1000 ft² (per 100 m²): the formula says so
    per = unit_factor(("people",), ("density", "area"), emitter.units)
    return trail.add("Pz", zone_rates.default_population(cat.density, trail.value("Az")),
                     "people", formula="{density}·{Az}" + (f" / {per}" if per else ""),
                     origin="computed",
                     source=pack.cite("default_population"),
                     note="occupants not stated: default density × Az")


def evaluate_zones(ctxs: list[ZoneContext], pack: RulePack, emitter: Emitter) -> list[ZoneResult]:
    """Vbz and Voz of a system's zones, every step in each zone's trail: the population of each
    zone first (its own steps and findings; a default density's Pz = density × Az over
    arrays), then Vbz and Voz of all of them at once over arrays
    (:mod:`airgate.procedures.zone_rates`), recorded zone by zone. A step that is the same on
    many zones (a category's Rp, Ra and density, an Ez) is made once and shared."""
    if not ctxs:
        return []
    shared: dict = {}
    trails, area, pz, by_density = [], [], [], []
    for ctx in ctxs:
        trail = Trail()
        zone, cat = ctx.zone, ctx.category
        steps = trail.steps
        az = float(zone.area)
        area.append(az)
        steps["Az"] = _step(Step, ("Az", az, "area", "", ctx.where("area"), "", "schedule"))
        rates = shared.get(id(cat))
        if rates is None:
            rates = shared[id(cat)] = _category_steps(cat)
        steps["Rp"], steps["Ra"] = rates[0], rates[1]
        if zone.occupants is not None:  # stated (as _population would record it)
            value = float(zone.occupants)
            steps["Pz"] = _step(Step, ("Pz", value, "people", "", ctx.where("occupants"),
                                       _STATED, "schedule"))
            pz.append(value)
        elif cat.density is not None and not (cat.default_occupants == "bedrooms-plus-one"
                                              and zone.bedrooms is not None):
            steps["density"] = rates[2]
            by_density.append(len(trails))
            pz.append(0.0)  # density × Az, below
        else:
            pz.append(_population(trail, ctx, pack, emitter))
        trails.append(trail)
    area = np.array(area)
    pz = np.array(pz)
    if by_density:
        pz[by_density] = zone_rates.default_population(
            np.array([trails[i].steps["density"].value for i in by_density]), area[by_density])
        _density_steps(trails, by_density, pz, pack, emitter)
    vbz = zone_rates.breathing_zone_outdoor_airflow(
        np.array([c.category.rp for c in ctxs], dtype=float), pz,
        np.array([c.category.ra for c in ctxs], dtype=float), area)
    voz = zone_rates.zone_outdoor_airflow(vbz, np.array([c.ez.ez for c in ctxs], dtype=float))
    cites = pack.cite("breathing_zone_outdoor_airflow"), pack.cite("zone_outdoor_airflow")
    return [_record(ctx, trail, b, o, cites, shared, emitter)
            for ctx, trail, b, o in zip(ctxs, trails, vbz.tolist(), voz.tolist())]


def _record(ctx: ZoneContext, trail: Trail, vbz: float, voz: float, cites: tuple[str, str],
            shared: dict, emitter: Emitter) -> ZoneResult:
    """One zone's Vbz, Ez, Voz steps, its findings, its exhaust; its result."""
    zone, cat, ez = ctx.zone, ctx.category, ctx.ez
    steps = trail.steps
    steps["Vbz"] = _step(Step, ("Vbz", vbz, "airflow", _VBZ, cites[0], "", "computed"))
    ez_step = shared.get(id(ez))  # the Binder shares one EzChoice among equal statements
    if ez_step is None:
        ez_step = _ez_step(ez, shared)
    steps["Ez"] = ez_step
    steps["Voz"] = _step(Step, ("Voz", voz, "airflow", _VOZ, cites[1], "", "computed"))
    if ez.origin == "assumed" and ctx.mechanical:
        emitter.emit("air-distribution-assumed", ctx.subject,
                     f"air distribution not stated; Ez {ez.ez:.1f} assumed ({ez.note}) — "
                     "state air_distribution or an explicit ez with its basis",
                     ctx.location, system=ctx.system_id, zone=zone.id)
    if cat.rp == 0 and cat.ra == 0:
        emitter.emit("space-without-rates", ctx.subject,
                     f"'{cat.id}' ({cat.label}) has no outdoor air rates in the table; "
                     "no outdoor air is required by this procedure",
                     ctx.location, system=ctx.system_id, zone=zone.id)
    if ctx.exhaust is not None:
        exhaust.evaluate(trail, zone, ctx.exhaust, emitter, subject=ctx.subject,
                         system_id=ctx.system_id, airflow_at=ctx.fields["exhaust.airflow"],
                         fixtures_at=ctx.fields.get("exhaust.fixtures", ctx.location))
    return ZoneResult(id=zone.id, name=zone.name, space=cat.id, space_label=cat.label,
                      location=ctx.location, trail=trail,
                      air_class=zone.air_class or cat.air_class,
                      exhaust=ctx.exhaust.id if ctx.exhaust is not None else None)


def _ez_step(ez: EzChoice, shared: dict) -> Step:
    """The Ez step of ``ez``: one for every EzChoice of the same value, basis and origin."""
    key = (float(ez.ez), ez.source, ez.note, ez.origin)
    step = shared.get(key)
    if step is None:
        step = shared[key] = Step("Ez", key[0], "fraction", "", key[1], key[2], key[3])
    shared[id(ez)] = step
    return step


#: a :class:`Step` made from its fields in order, without the named tuple's constructor written
#: in Python (half the time; a portfolio makes some twenty per zone)
_step = tuple.__new__
_STATED = "stated in the schedule"
_VBZ, _VOZ = "{Rp}·{Pz} + {Ra}·{Az}", "{Vbz} / {Ez}"


def _category_steps(cat: OccupancyCategory) -> tuple[Step, Step, Step | None]:
    """A category's Rp, Ra and default density steps (the same on every zone of it)."""
    density = None if cat.density is None else Step(
        "density", float(cat.density), "density", "", cat.cite("density"),
        "default occupant density", "table")
    return (Step("Rp", float(cat.rp), "airflow_per_person", "", cat.cite("Rp"), "", "table"),
            Step("Ra", float(cat.ra), "airflow_per_area", "", cat.cite("Ra"), "", "table"),
            density)


def _density_steps(trails: list[Trail], which: list[int], pz: np.ndarray, pack: RulePack,
                   emitter: Emitter) -> None:
    """Pz = default density × Az (Table 6-1) in the trails ``which``."""
    # the density is shown per 1000 ft² (per 100 m²): the formula says so
    per = unit_factor(("people",), ("density", "area"), emitter.units)
    formula = "{density}·{Az}" + (f" / {per}" if per else "")
    source = pack.cite("default_population")
    values = pz.tolist()
    for i in which:
        trails[i].steps["Pz"] = Step("Pz", values[i], "people", formula, source,
                                     "occupants not stated: default density × Az", "computed")


def evaluate_zone(ctx: ZoneContext, pack: RulePack, emitter: Emitter) -> ZoneResult:
    """Compute Vbz and Voz for one zone, keeping every step of the trail."""
    return evaluate_zones([ctx], pack, emitter)[0]
