"""Zone exhaust: the minimum exhaust airflow of the zone's row and the scheduled exhaust.

ANSI/ASHRAE 62.1-2019 Section 6.5 (exhaust ventilation) and its Minimum Exhaust Rates table:
a row gives a rate per floor area, or per counted unit (water closet or urinal, showerhead,
dwelling kitchen); some rows give a continuous and a higher intermittent rate.

``Ve = Re·Az`` [L/s] for a per-area row (Re [L/s per m²], Az [m²]);
``Ve = Re·Ne`` [L/s] for a per-unit row (Re [L/s per unit], Ne [–] units counted);
``Ve = Re·V/3.6`` [L/s] for a row rated in air changes (Re [1/h], V [m³] the zone's volume;
3.6 = 3600 s/h ÷ 1000 L/m³), as ANSI/ASHRAE 62.2-2019 rates continuous kitchen exhaust.
"""

from __future__ import annotations

from dataclasses import dataclass

from airgate import units
from airgate.errors import Path_
from airgate.evaluation.bind import table_row
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Location
from airgate.evaluation.report import ZoneResult
from airgate.evaluation.trail import Trail, unit_factor
from airgate.models.loaded import LoadedSchedule
from airgate.models.rules import EXHAUST_PER, ExhaustRow, RulePack
from airgate.models.schedule import Zone


#: checks of a zone's exhaust, which no design condition changes (reported once per zone)
CONDITION_FREE = frozenset({"zone-exhaust"})


def bind(loaded: LoadedSchedule, pack: RulePack, zone: Zone, path: Path_) -> ExhaustRow | None:
    """The exhaust row a zone names (None: the zone states no exhaust).

    An unknown row id, a pack without an exhaust table, and a per-unit row without ``fixtures``
    are input errors located at the zone's ``exhaust`` field.
    """
    ex = zone.exhaust
    if ex is None:
        return None
    at = path + ("exhaust",)
    if not pack.exhaust:
        raise loaded.error(f"rule pack {pack.id} has no minimum exhaust rates table, so the "
                           "zone's exhaust cannot be checked", at + ("category",),
                           hint="use a pack with an exhaust table (airgate rules list), or "
                                "remove exhaust")
    row = table_row(loaded, pack, pack.exhaust, "exhaust", "exhaust category", ex.category,
                    at + ("category",),
                    hint="use a row id of the exhaust table: airgate rules show " + pack.id)
    if row.per_volume and zone.volume is None and zone.height is None:
        raise loaded.error(
            f"exhaust category '{row.id}' is rated in air changes of the zone's volume: state "
            "the zone's height or volume", at, hint="add height: or volume: to the zone")
    if not row.per_area and not row.per_volume and ex.fixtures is None:
        raise loaded.error(
            f"exhaust category '{row.id}' is rated per {EXHAUST_PER[row.per]}: state how many "
            "the zone has", at, hint=f"add fixtures: N (the number of each "
                                     f"{EXHAUST_PER[row.per]} the zone has)")
    return row


def evaluate(trail: Trail, zone: Zone, row: ExhaustRow, emitter: Emitter, *, subject: str,
             system_id: str, airflow_at: Location, fixtures_at: Location) -> None:
    """Add ``Re``, ``Ne`` (per-unit rows), ``Ve`` and ``Ve_design`` to the zone's trail and
    check ``Ve_design ≥ Ve`` (check ``zone-exhaust``, located at the scheduled airflow).

    ``trail`` already holds ``Az`` [m²]; values are in internal units (L/s, m²).
    """
    ex = zone.exhaust
    column, rate = row.rate_for(ex.operation)
    how = "" if column == "rate" else f", {column} operation"
    if row.per_area:
        trail.add("Re", rate, "airflow_per_area", origin="table", source=row.cite(column),
                  note=f"minimum exhaust rate per floor area{how}")
        required = trail.add("Ve", rate * trail.value("Az"), "airflow", formula="{Re}·{Az}",
                             source=row.cite(column), note="minimum exhaust airflow")
    elif row.per_volume:
        trail.add("Re", rate, "rate", origin="table", source=row.cite(column),
                  note=f"minimum exhaust in air changes per hour of the zone's volume{how}")
        stated = zone.volume is not None
        volume = trail.add("V", zone.volume if stated else zone.height * zone.area, "volume",
                           origin="schedule" if stated else "computed",
                           note="zone volume" + ("" if stated else ", height × Az"))
        factor = unit_factor(("rate", "volume"), ("airflow",), emitter.units,
                             times=units.factor("m**3/hour", "L/s"))
        required = trail.add("Ve", rate * volume * units.factor("m**3/hour", "L/s"),
                             "airflow", formula=f"{factor}·{{Re}}·{{V}}",
                             source=row.cite(column), note="minimum exhaust airflow")
    else:
        per = EXHAUST_PER[row.per]
        trail.add("Re", rate, "airflow", origin="table", source=row.cite(column),
                  note=f"minimum exhaust rate per {per}{how}")
        trail.add("Ne", float(ex.fixtures), "count", origin="schedule", source=fixtures_at,
                  note=f"number of each {per} exhausted")
        required = trail.add("Ve", rate * ex.fixtures, "airflow", formula="{Re}·{Ne}",
                             source=row.cite(column), note="minimum exhaust airflow")
    provided = trail.add("Ve_design", ex.airflow, "airflow", origin="schedule",
                         source=airflow_at, note=f"scheduled exhaust ({row.id})")
    emitter.compare("zone-exhaust", subject, f"exhaust airflow ({row.label})", required,
                    provided, "airflow", airflow_at, system=system_id, zone=zone.id,
                    advice="raise the zone's exhaust airflow")


@dataclass(frozen=True)
class FanZone:
    """A zone of an exhaust fan, bound to its exhaust row."""

    zone: Zone
    path: Path_
    location: Location
    row: ExhaustRow
    subject: str
    system_id: str


def bind_fan_zone(loaded: LoadedSchedule, pack: RulePack, zone: Zone,
                  path: Path_) -> ExhaustRow:
    """The exhaust row of a zone of an exhaust fan: the zone must state its exhaust."""
    if zone.exhaust is None:
        raise loaded.error("a zone of an exhaust fan needs exhaust: the row of the pack's "
                           "exhaust table and the airflow scheduled from it", path + ("exhaust",),
                           hint="add exhaust: {category: ROW-ID, airflow: ...}")
    return bind(loaded, pack, zone, path)


def fan_zone(ctx: FanZone, emitter: Emitter, locate) -> ZoneResult:
    """The trail of a zone of an exhaust fan: ``Az``, then as :func:`evaluate`."""
    zone = ctx.zone
    trail = Trail()
    trail.add("Az", zone.area, "area", origin="schedule", source=locate(ctx.path + ("area",)))
    at = locate(ctx.path + ("exhaust", "airflow"))
    evaluate(trail, zone, ctx.row, emitter, subject=ctx.subject, system_id=ctx.system_id,
             airflow_at=at, fixtures_at=locate(ctx.path + ("exhaust", "fixtures")))
    return ZoneResult(id=zone.id, name=zone.name, space=ctx.row.id, space_label=ctx.row.label,
                      location=ctx.location, trail=trail,
                      air_class=zone.air_class or ctx.row.air_class, exhaust=ctx.row.id)
