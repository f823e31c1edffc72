"""Zone-level steps: Az, Rp, Ra, Pz, Vbz, Ez, Voz, with their trail and zone findings."""

from __future__ import annotations

from dataclasses import dataclass, field

from airgate.evaluation import exhaust
from airgate.evaluation.bind import EzChoice
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Location
from airgate.evaluation.report import ZoneResult
from airgate.evaluation.trail import Trail, unit_factor
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


def evaluate_zone(ctx: ZoneContext, pack: RulePack, emitter: Emitter) -> ZoneResult:
    """Compute Vbz and Voz for one zone, keeping every step of the trail."""
    zone, cat = ctx.zone, ctx.category
    trail = Trail()
    trail.add("Az", zone.area, "area", origin="schedule", source=ctx.where("area"))
    trail.add("Rp", cat.rp, "airflow_per_person", origin="table", source=cat.cite("Rp"))
    trail.add("Ra", cat.ra, "airflow_per_area", origin="table", source=cat.cite("Ra"))
    _population(trail, ctx, pack, emitter)
    vbz = zone_rates.breathing_zone_outdoor_airflow(
        cat.rp, trail.value("Pz"), cat.ra, trail.value("Az"))
    trail.add("Vbz", vbz, "airflow", formula="{Rp}·{Pz} + {Ra}·{Az}",
              source=pack.cite("breathing_zone_outdoor_airflow"))
    trail.add("Ez", ctx.ez.ez, "fraction", origin=ctx.ez.origin, note=ctx.ez.note,
              source=ctx.ez.source)
    trail.add("Voz", zone_rates.zone_outdoor_airflow(vbz, ctx.ez.ez), "airflow",
              formula="{Vbz} / {Ez}", source=pack.cite("zone_outdoor_airflow"))
    if ctx.ez.origin == "assumed" and ctx.mechanical:
        emitter.emit("air-distribution-assumed", ctx.subject,
                     f"air distribution not stated; Ez {ctx.ez.ez:.1f} assumed ({ctx.ez.note}) — "
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
                      location=ctx.location, trail=trail, air_class=ctx.air_class,
                      exhaust=ctx.exhaust.id if ctx.exhaust is not None else None)
