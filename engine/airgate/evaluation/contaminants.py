"""Declared contaminants (respiratory aerosol, user-defined sources) in each zone.

The same well-mixed balance as the CO2 analysis (Nazaroff & Alvarez-Cohen 2001, the CMFR
material balance; docs/references.md) with every removal term:
outdoor air, the system filter on outdoor and recirculated air (MERV → efficiency by particle
size range, ANSI/ASHRAE 52.2-2017 Table 12-1), in-room air cleaners (CADR), deposition and
inactivation. Amounts are in the contaminant's own unit; concentrations per m³; the emission
[unit/h] enters the procedures as a generation in concentration × L/s (units.factor, pint).
"""

from __future__ import annotations

import math

import numpy as np

from airgate.evaluation import dilution_network, zone_air, zone_network
from airgate.evaluation.checks import Emitter
from airgate.evaluation.dilution import (
    MB,
    _profile_pieces,
    _two_days,
    add_day_statistics,
    coupled_design_day,
    volume_of,
)
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.system_kinds import kind_of
from airgate.evaluation.trail import Trail
from airgate.evaluation.zones import ZoneContext
from airgate.models.datatables import DataTable, Tables
from airgate.models.equipment import Contaminant
from airgate.models.schedule import Schedule, System
from airgate import units
from airgate.procedures import coupled, dilution

MERV_TABLE = "merv-efficiency"
MECHANISMS = (("outdoor_air", "Qc_oa", "outdoor air"),
              ("recirculation_filter", "Qc_filter", "filtration of recirculated air"),
              ("air_cleaner", "Qc_cleaner", "in-room air cleaners"),
              ("deposition", "Qc_dep", "deposition"),
              ("inactivation", "Qc_inact", "inactivation"),
              ("makeup_air", "Qc_mu", "makeup air entering with the zone's exhaust"))


def filter_efficiency(system: System, c: Contaminant, table: DataTable) -> tuple[float, str]:
    """Single-pass efficiency of the system filter for ``c`` and where it comes from.

    ``table``: efficiency by MERV and particle size range (``merv-efficiency``).
    """
    if c.kind == "gas" or system.filter is None:
        return 0.0, "no filter" if system.filter is None else "a particle filter removes no gas"
    if system.filter.efficiency is not None:
        return system.filter.efficiency, "stated filter efficiency"
    rated = sorted((int(k) for k in table.rows if int(k) <= system.filter.merv), reverse=True)
    if not rated:
        return 0.0, f"MERV {system.filter.merv}: below the table, no efficiency credited"
    row = table.rows[str(rated[0])]
    note = f"MERV {system.filter.merv}, {c.size_range}"
    if rated[0] != system.filter.merv:
        note += f" (credited as the next lower listed rating, MERV {rated[0]})"
    return float(row.values[c.size_range]), f"{note}; {table.cite(row.id)}"


def _k_inact(c: Contaminant) -> float:
    if c.half_life is not None:
        return float(dilution.inactivation_rate_from_half_life(c.half_life))
    return c.inactivation or 0.0


def _cadr(ctx: ZoneContext, c: Contaminant) -> float:
    return 0.0 if c.kind == "gas" else sum(a.cadr for a in ctx.zone.air_cleaners)


def per_second(emission):
    """An emission [unit/h] as the procedures' generation [unit/m³ × L/s]."""
    return emission * units.factor("1/hour", "L/s/m**3")


def _generation(ctx: ZoneContext, z: ZoneResult, c: Contaminant) -> tuple[float, float]:
    """(people part, constant part) of the emission at design occupancy [unit/h]."""
    return c.per_person * z.trail.value("Pz"), c.per_area * ctx.zone.area + c.per_zone


def _start(ctx, z, c: Contaminant, filt: tuple[float, str]) -> Trail:
    t = Trail()
    t.add("V", volume_of(ctx), "volume")
    people, rest = _generation(ctx, z, c)
    t.add("E", people + rest, "emission", note=f"{c.unit}/h at design occupancy "
          f"(per person {c.per_person:g}, per m² {c.per_area:g}, per zone {c.per_zone:g})")
    eff, why = filt
    t.add("eta", eff, "fraction", note=why)
    t.add("CADR", _cadr(ctx, c), "airflow", note="sum of the zone's air cleaners")
    t.add("k_dep", 0.0 if c.kind == "gas" else c.deposition, "rate", note="deposition")
    t.add("k_inact", _k_inact(c), "rate", note="inactivation" + (
        f" from half-life {c.half_life:g} h" if c.half_life else ""))
    return t


def _single(ctx, z, c, system: System, schedule: Schedule, emitter: Emitter,
            filt: tuple[float, str]) -> Trail | None:
    co2 = z.dilution
    if co2 is None or "C_ss" not in co2:
        return None
    t = _start(ctx, z, c, filt)
    q_oa = co2.value("Q_oa")
    q_rec = 0.0
    if "supply_airflow" in kind_of(system).system_fields and system.supply_airflow is not None:
        q_rec = max(0.0, system.supply_airflow - q_oa)
    t.add("Q_oa", q_oa, "airflow", note=co2["Q_oa"].note)
    t.add("Q_rec", q_rec, "airflow", note="recirculated airflow through the filter (supply − "
          "outdoor air)" if q_rec else "no recirculation analysed")
    kw = dict(recirc_airflow=q_rec, recirc_efficiency=t.value("eta"),
              cadr=t.value("CADR"), k_deposition=t.value("k_dep"),
              k_inactivation=t.value("k_inact"))
    if "Q_mu" in co2:
        t.add("Q_mu", co2.value("Q_mu"), "airflow", note=co2["Q_mu"].note)
        t.add("C_mu", c.outdoor, "concentration", note=f"{c.unit}/m³: outdoor air, through no "
              "system filter")
        kw["makeup_airflow"] = t.value("Q_mu")
    if dilution.loss_rate(t.value("V"), q_oa, **kw) <= 0:
        return None  # nothing removes it: no steady state
    mu = dict(makeup_concentration=c.outdoor) if "Q_mu" in co2 else {}
    c_ss = dilution.steady_state_concentration(
        per_second(t.value("E")), t.value("V"), q_oa, c.outdoor,
        outdoor_filter_efficiency=t.value("eta"), **kw, **mu)
    t.add("C_ss", float(c_ss), "concentration", note=f"{c.unit}/m³ at steady state", source=MB)
    parts = dilution.loss_breakdown(t.value("V"), q_oa, **kw)
    for key, symbol, what in MECHANISMS:
        if key == "makeup_air" and "Q_mu" not in t:
            continue  # no exhaust made up besides the supply
        t.add(symbol, float(parts[key]), "airflow", note=f"equivalent clean airflow: {what}")
    _totals(t, z)
    pieces = _profile_pieces(schedule, ctx)
    if pieces is not None:
        people, rest = _generation(ctx, z, c)
        b2, f2 = _two_days(*pieces)
        sol = dilution.piecewise_solution(
            b2, per_second(people * f2 + rest), t.value("V"), q_oa, c.outdoor,
            outdoor_concentration=c.outdoor, outdoor_filter_efficiency=t.value("eta"), **kw, **mu)
        t.add("C_peak", float(dilution.peak_concentration(sol, 24.0, 48.0)[0]), "concentration",
              note=f"peak over the design day, profile '{ctx.zone.profile}'", source=MB)
        t.add("C_twa", float(dilution.time_weighted_average(sol, 24.0, 48.0)), "concentration",
              note="24-hour time-weighted average", source=MB)
    return t


def _totals(t: Trail, z: ZoneResult) -> None:
    total = sum(t.value(s) for _, s, _ in MECHANISMS if s in t)
    t.add("Qc", total, "airflow", note="equivalent clean airflow, all mechanisms")
    pz = z.trail.value("Pz")
    if pz > 0:
        t.add("Qc_pp", total / pz, "airflow_per_person", note="equivalent clean airflow per person")
    t.add("ACHe", dilution.air_change_rate(total, t.value("V")), "rate",
          note="equivalent air changes per hour")


def _coupled(system: System, ctxs, result: SystemResult, c: Contaminant, schedule: Schedule,
             filt: tuple[float, str]):
    """Steady state (and design day) of one contaminant over a multiple-zone system."""
    if any(z.dilution is None for z in result.zones):
        return None
    air = zone_air.system_air(system, result, schedule)
    trails = [_start(ctx, z, c, filt) for ctx, z in zip(ctxs, result.zones)]
    eta = trails[0].value("eta")
    vpz = np.array([z.trail.value("Vpz") for z in result.zones])
    vol = np.array([t.value("V") for t in trails])
    kw = dict(outdoor_concentration=c.outdoor, outdoor_filter_efficiency=eta,
              recirc_filter_efficiency=eta,
              cadr=np.array([t.value("CADR") for t in trails]),
              k_deposition=np.array([t.value("k_dep") for t in trails]),
              k_inactivation=np.array([t.value("k_inact") for t in trails]),
              makeup_concentration=c.outdoor, **air.kwargs())
    gen = per_second(np.array([t.value("E") for t in trails]))
    steady = coupled.coupled_steady_state(gen, vol, vpz, air.intake, **kw)
    for t, z, cz, v, mu in zip(trails, result.zones, steady.zone, vpz, air.makeup):
        t.add("C_ss", float(cz), "concentration", note=f"{c.unit}/m³ at steady state; zones "
              "coupled through the return air", source=MB)
        t.add("C_s", float(steady.supply), "concentration", note="mixed supply air")
        if t.value("E") <= 0:
            continue  # no emission here: an equivalent clean airflow is not defined
        supply = v * (1 - steady.supply / cz) if cz > 0 else 0.0
        t.add("Qc_supply", supply, "airflow", note="equivalent clean airflow delivered by the "
              "supply air (outdoor air and filtered recirculation, coupled)")
        parts = dilution.loss_breakdown(t.value("V"), 0.0, cadr=t.value("CADR"),
                                        k_deposition=t.value("k_dep"),
                                        k_inactivation=t.value("k_inact"))
        for symbol, value, what in (("Qc_cleaner", parts["air_cleaner"], "in-room air cleaners"),
                                    ("Qc_dep", parts["deposition"], "deposition"),
                                    ("Qc_inact", parts["inactivation"], "inactivation")):
            t.add(symbol, value, "airflow", note=f"equivalent clean airflow: {what}")
        total = supply + t.value("Qc_cleaner") + t.value("Qc_dep") + t.value("Qc_inact")
        if mu > 0:
            t.add("Qc_mu", mu * (1 - c.outdoor / cz) if cz > 0 else 0.0, "airflow",
                  note="equivalent clean airflow delivered by the outdoor makeup air entering "
                       "with the zone's exhaust (coupled)")
            total += t.value("Qc_mu")
        t.add("Qc", total, "airflow", note="equivalent clean airflow, all mechanisms")
        if z.trail.value("Pz") > 0:
            t.add("Qc_pp", total / z.trail.value("Pz"), "airflow_per_person",
                  note="equivalent clean airflow per person")
        t.add("ACHe", dilution.air_change_rate(total, t.value("V")), "rate",
              note="equivalent air changes per hour")
    _coupled_day(system, ctxs, result, c, schedule, trails, vol, vpz, air.intake, kw)
    return trails


def _coupled_day(system, ctxs, result, c, schedule, trails, vol, vpz, intake, kw) -> None:
    parts = [_generation(ctx, z, c) for ctx, z in zip(ctxs, result.zones)]
    day = coupled_design_day(schedule, system, ctxs, per_second(np.array([p for p, _ in parts])),
                             per_second(np.array([r for _, r in parts])), vol, vpz, c.outdoor,
                             intake, **kw)
    if day is None:
        return
    times, conc, _, _ = day
    for j, t in enumerate(trails):
        add_day_statistics(t, conc[:, j], times, "concentration", "")


def limit_note(c: Contaminant, design: bool) -> str:
    """What a trail says of a contaminant's limit: a design limit of the IAQ procedure, or a
    limit the schedule declares for itself; with its ``limit_source``."""
    what = "design limit" if design else "declared limit"
    if c.limit_source:
        return f"{what} ({c.limit_source})"
    return what + (" (no limit_source stated)" if design else "")


def _limit(t: Trail, ctx: ZoneContext, c: Contaminant, index: int, emitter: Emitter,
           system: System) -> None:
    """The schedule's own limit for contaminant ``index`` (basis ``declared``); on the IAQ
    procedure a design limit, which that path's check of the pack holds the zone to
    (evaluation.iaqp, basis ``code``)."""
    if c.limit is None:
        return
    design = system.procedure == "iaqp"
    t.add("C_limit", c.limit, "concentration", origin="schedule", note=limit_note(c, design))
    if design:
        return
    worst = t.value("C_peak") if "C_peak" in t else t.value("C_ss")
    if worst > c.limit * (1 + 1e-9):
        emitter.declare("concentration-limit", ctx.subject,
                        f"{c.label or c.id} {worst:.4g} {c.unit}/m³ is above the schedule's own "
                        f"limit of {c.limit:g} {c.unit}/m³", ctx.location,
                        declared_at=("contaminants", index, "limit"), system=ctx.system_id,
                        zone=ctx.zone.id)


def analyse(system: System, ctxs: list[ZoneContext], result: SystemResult, schedule: Schedule,
            emitter: Emitter, tables: Tables) -> None:
    """Attach one trail per declared contaminant to every zone the CO2 analysis covered.

    ``tables``: the data tables (filter efficiency by MERV from ``merv-efficiency``).
    """
    if not kind_of(system).intake or math.isinf(result.trail.value("Vot")):
        return
    for index, c in enumerate(schedule.contaminants):
        filt = filter_efficiency(system, c, tables[MERV_TABLE])
        if zone_network.transfers_within(system, result, schedule):
            trails = dilution_network.contaminant(system, ctxs, result, c, schedule, filt,
                                                  _start, _generation, per_second)
            pairs = zip(ctxs, result.zones, trails or [])
        elif kind_of(system).coupled:
            trails = _coupled(system, ctxs, result, c, schedule, filt)
            pairs = zip(ctxs, result.zones, trails or [])
        else:
            pairs = ((ctx, z, _single(ctx, z, c, system, schedule, emitter, filt))
                     for ctx, z in zip(ctxs, result.zones))
        for ctx, z, t in pairs:
            if t is None:
                continue
            _limit(t, ctx, c, index, emitter, system)
            z.contaminants[c.id] = t
