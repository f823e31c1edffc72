"""CO2 from occupants in the zones of a multiple-zone system: the analysis of
:mod:`airgate.evaluation.dilution` over the system's arrays, every zone's trail a row of one
table (:class:`airgate.evaluation.trail.StepTable`), its steps made only when read.

The coupled balance of the system's zones (:mod:`airgate.procedures.coupled`): the steady state
at design occupancy, the change rates and purge times, the DCV set points, the occupancy the
delivered outdoor air supports, and with occupancy profiles the design day (the well-mixed
balance of Nazaroff & Alvarez-Cohen 2001, docs/references.md). Units as in
:mod:`airgate.evaluation.dilution`.
"""

from __future__ import annotations

import numpy as np

from airgate import units
from airgate.evaluation import capacity, zone_air
from airgate.evaluation import dilution as co2
from airgate.evaluation.checks import Emitter
from airgate.evaluation.dilution import (
    CO2_LIMIT,
    MB,
    PPM,
    PURGE,
    ROOM_C,
    STEP_H,
    ZERO_C,
    Series,
    coupled_design_day,
    volume_of,
)
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.trail import Step, StepTable, Trail, template, unit_factor
from airgate.evaluation.zones import ZoneContext
from airgate.models.datatables import DataTable
from airgate.models.schedule import Schedule, System
from airgate.procedures import coupled, dilution, piecewise


def _start_rows(rows: StepTable, ctxs, zones: list[ZoneResult], schedule: Schedule,
                volume: np.ndarray, table: DataTable) -> dict[str, np.ndarray]:
    """:func:`co2._start` for every zone of a system at once, as columns of ``rows``; returns the
    columns the later steps read (``V``, ``C_out``, ``N``, ``Pz``, ``G``)."""
    n = len(zones)
    rows.add("V", volume, "volume", (template(origin="schedule"),
                                     template(note="height × Az")),
             variant=[0 if c.zone.volume else 1 for c in ctxs])
    c_out = np.full(n, float(schedule.project.outdoor_co2))
    rows.add("C_out", c_out, "concentration_ppm", template(
        origin="schedule", note="outdoor CO2 (project.outdoor_co2; 420 ppm when not stated)"))
    ref = table.reference_temperature
    # N of each zone: stated (variant 0) or tabled by activity (one variant per activity)
    found: dict = {}
    variants = []
    generation = np.empty(n)
    for i, c in enumerate(ctxs):
        stated = c.zone.co2_generation
        if stated is not None:
            generation[i] = stated
            key = None
        else:
            key = c.zone.activity or table.default
            generation[i] = table.rows[key].value
        variants.append(found.setdefault(key, len(found)))
    keys = list(found)
    stated = [k is None for k in keys]
    tabled = np.array([stated[v] is False for v in variants], dtype=bool)
    if ref is None:
        rows.add("N", generation, "gas_generation", tuple(
            template(origin="schedule",
                     note="CO2 generation per occupant stated in the schedule") if k is None
            else template(origin="table", source=table.cite(k), note=f"activity '{k}'")
            for k in keys), variant=variants)
    else:
        rows.add("N_ref", generation, "gas_generation", tuple(
            template() if k is None else
            template(origin="table", source=table.cite(k),
                     note=f"activity '{k}'; volume at {ref:g} °C") for k in keys),
                 where=tabled, variant=variants)
        generation = np.where(tabled, generation * (ZERO_C + ROOM_C) / (ZERO_C + ref),
                              generation)
        rows.add("N", generation, "gas_generation", (
            template(origin="schedule",
                     note="CO2 generation per occupant stated in the schedule"),
            template(formula=f"{{N_ref}}·{ZERO_C + ROOM_C:g} K / {ZERO_C + ref:g} K",
                     origin="assumed",
                     source="Persily & de Jonge 2017: Table 4 at 0 °C; ideal-gas volume at "
                            "20 °C", note=f"the same CO2 as a volume at {ROOM_C:g} °C indoors")),
                 variant=tabled.astype(np.intp))
    pz = np.array([z.trail.value("Pz") for z in zones])
    rows.copy("Pz", pz, "people")
    g = generation * pz
    rows.add("G", g, "gas_flow", template(formula="{N}·{Pz}",
                                          note="CO2 generated at design occupancy"))
    return {"V": volume, "C_out": c_out, "N": generation, "Pz": pz, "G": g}


def _coupled_steady(system: System, result: SystemResult, rows: StepTable,
                    col: dict[str, np.ndarray], vpz: np.ndarray, units_: str, air) -> None:
    """Steady CO2 of every zone of a multiple-zone system through the coupled balance, as
    columns of ``rows`` (``Vpz``, ``x``, the exhaust steps, ``C_ss``, ``C_excess``,
    ``Q_oa``)."""
    n = len(result.zones)
    vot = system.outdoor_air
    if air.intake > vot:
        result.notes.append(zone_air.intake_note(system.id, vot, air.intake, units_))
    c_out = float(col["C_out"][0])
    gen = PPM * col["G"]
    steady = coupled.coupled_steady_state(gen, col["V"], vpz, air.intake,
                                          outdoor_concentration=c_out,
                                          makeup_concentration=c_out, **air.kwargs())
    x = air.intake / vpz.sum()
    rows.copy("Vpz", vpz, "airflow")
    rows.add("x", x, "fraction", template(
        note="outdoor fraction of the supply at the scheduled intake" if air.intake == vot
        else "outdoor fraction of the supply at the intake the balance uses, ΣE_z (above the "
             "scheduled intake; assumed)"))
    # the exhaust steps of the few zones with exhaust or air given away, one by one
    own: dict[int, list[Step]] = {}
    makeup = np.zeros(n)
    has_mu = np.zeros(n, dtype=bool)
    for j, za in enumerate(air.airs):
        if za is None or not za.any:
            continue
        t = Trail()
        t.copy_from(result.zones[j].trail, "Vpz")
        zone_air.coupled_steps(t, za, result.zones[j].trail)
        own[j] = list(t.steps.values())[1:]
        if "Q_mu" in t:
            has_mu[j] = True
            makeup[j] = t.value("Q_mu")
    if own:
        rows.explicit(own)
    c_ss = np.asarray(steady.zone, dtype=float).reshape(n)
    rows.add("C_ss", c_ss, "concentration_ppm", (
        template(source=MB, note="steady state at design occupancy; zones coupled through the "
                                 "return air"),
        template(source=MB, note="steady state at design occupancy; zones coupled through the "
                                 "return air; the air it exhausts or gives away leaves "
                                 "unreturned")),
             variant=[1 if za and za.any else 0 for za in air.airs])
    excess = c_ss - col["C_out"]
    _excess_rows(rows, excess)
    g = col["G"]
    equivalent = (excess > 0) & (g > 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        q = np.where(equivalent, PPM * g / excess,
                     np.where(has_mu, vpz * x + makeup, vpz * x))
    rows.add("Q_oa", q, "airflow", (
        template(formula="10⁶·{G} / " + co2._per_airflow("C_excess", units_), source=MB,
                 note="CO2-equivalent outdoor airflow: the clean air that alone would hold the "
                      "zone at C_ss (coupled balance; the procedure's measure is Voz_delivered)"),
        template(formula="{Vpz}·{x} + {Q_mu}", note="outdoor air in the zone's primary air and "
                 "its outdoor makeup (no CO2 is generated in the zone)"),
        template(formula="{Vpz}·{x}",
                 note="outdoor air in the zone's primary air (no CO2 is generated in the zone)")),
             variant=np.where(equivalent, 0, np.where(has_mu, 1, 2)))
    col.update(C_ss=c_ss, Q_oa=q)


def _excess_rows(rows: StepTable, excess: np.ndarray) -> None:
    """:func:`co2._excess` as a column."""
    rows.add("C_excess", excess, "concentration_ppm", template(
        formula="{C_ss} − {C_out}", note="CO2 above outdoor at steady state"))


def _coupled_series(schedule: Schedule, system: System, ctxs, result, rows: StepTable,
                    col: dict[str, np.ndarray], vpz: np.ndarray, air) -> None:
    """The design day of a multiple-zone system (:func:`coupled_design_day`): each zone's
    series, and its peak and 24-hour average as columns (:func:`add_day_statistics`)."""
    c_out = float(col["C_out"][0])
    day = coupled_design_day(
        schedule, system, ctxs, PPM * col["G"], np.zeros(len(ctxs)), col["V"], vpz, c_out,
        air.intake, outdoor_concentration=c_out, makeup_concentration=c_out, **air.kwargs())
    if day is None:
        return
    times, conc, breaks, frac = day
    n = len(ctxs)
    peak, average = np.empty(n), np.empty(n)
    names: dict[str, int] = {}
    variants = []
    for j, (z, ctx) in enumerate(zip(result.zones, ctxs)):
        name = ctx.zone.profile or "constant at design occupancy"
        occ = co2._sample_fractions(breaks, frac[:, j], times)
        z.series = Series(times, conc[:, j], occ, name)
        peak[j] = float(conc[:, j].max())
        average[j] = float(np.trapezoid(conc[:, j], times) / 24.0)
        variants.append(names.setdefault(name, len(names)))
    rows.add("C_peak", peak, "concentration_ppm", tuple(
        template(source=MB, note=f"peak over the design day, profile '{name}' (exact coupled "
                                 "solution, sampled each minute)") for name in names),
             variant=variants)
    rows.add("C_twa", average, "concentration_ppm",
             template(source=MB, note="24-hour time-weighted average"))
    col["C_peak"] = peak


def _rate_rows(rows: StepTable, col: dict[str, np.ndarray], u: str) -> None:
    """:func:`co2._rate_steps` of the zones of a multiple-zone system (Q_oa the CO2-equivalent
    airflow, which already counts the makeup air) as columns."""
    lam, _, t95, t99, t999 = co2._rate_arrays(col["V"], col["Q_oa"], np.zeros(len(col["V"])))
    ach = unit_factor(("airflow",), ("volume", "rate"), u,
                      times=units.factor("L/s/m**3", "1/hour"))
    rows.add("ACH", lam, "rate", template(
        formula=f"{ach}·{{Q_oa}} / {{V}}", source=MB,
        note="outdoor-air changes per hour (CO2 has no other removal)"))
    decays = lam > 0
    per_hour = unit_factor((), ("rate", "time"), u) or "1"
    with np.errstate(divide="ignore"):
        tau = 1 / lam
    rows.add("tau", tau, "time", template(formula=f"{per_hour} / {{ACH}}", note="time constant"),
             where=decays)
    rows.add("t95", t95, "time", template(formula="3·{tau}", note="time to 95 % of steady state",
                                          source=MB), where=decays)
    rows.add("t99", t99, "time", template(formula="4.61·{tau}", note="purge time to 99 % removal",
                                          source=PURGE), where=decays)
    rows.add("t99.9", t999, "time", template(formula="6.91·{tau}",
                                             note="purge time to 99.9 % removal", source=PURGE),
             where=decays)


def _dcv_rows(rows: StepTable, zones: list[ZoneResult], col: dict[str, np.ndarray],
              u: str) -> None:
    """:func:`co2._dcv_steps` of every zone of a system as columns."""
    voz = np.array([z.trail.value("Voz") for z in zones])
    rows.copy("Voz", voz, "airflow")
    setpoint = co2._dcv_arrays(col["Pz"], col["N"], col["C_out"], voz)
    has = ~np.isnan(setpoint)
    rows.add("C_dcv", setpoint, "concentration_ppm", template(
        formula="{C_out} + 10⁶·{N}·{Pz} / " + co2._per_airflow("Voz", u), source=MB,
        note="DCV set point: steady CO2 when the zone gets exactly its Voz"), where=has)
    which = np.flatnonzero(has).tolist()
    got = {}
    for symbol, kind in (("Rp", "airflow_per_person"), ("Ra", "airflow_per_area"),
                         ("Az", "area"), ("Ez", "fraction")):
        got[symbol] = np.zeros(len(zones))
        got[symbol][has] = [zones[j].trail.value(symbol) for j in which]
        rows.copy(symbol, got[symbol], _kind_of(zones, which, symbol, kind), where=has)
    with np.errstate(divide="ignore", invalid="ignore"):
        reset = got["Ra"] * got["Az"] / got["Ez"]
    rows.add("Voz_min", reset, "airflow", template(
        formula="{Ra}·{Az} / {Ez}", note="DCV reset: Voz at zero occupancy; Voz rises by "
                                         "Rp/Ez per person present"), where=has)


def _kind_of(zones: list[ZoneResult], which: list[int], symbol: str, kind: str) -> str:
    """The kind of a zone-trail step copied into the table (its first zone's; ``kind`` when
    no zone copies it)."""
    return zones[which[0]].trail[symbol].kind if which else kind


def _short_term_and_limit(rows: StepTable, ctxs, zones: list[ZoneResult], schedule: Schedule,
                          col: dict[str, np.ndarray], emitter: Emitter) -> None:
    """:func:`co2._short_term` (zones with a design-day series and a profile) and :func:`co2._limit`
    of every zone of a system, as columns; the findings zone by zone as before."""
    n = len(zones)
    k = unit_factor(("volume",), ("airflow", "time"), emitter.units,
                    times=3 / units.factor("L/s/m**3", "1/hour"))
    vbz, averaging, averaged = np.zeros(n), np.zeros(n), np.zeros(n)
    has_t, has_avg = np.zeros(n, dtype=bool), np.zeros(n, dtype=bool)
    limit = schedule.project.co2_limit
    if limit is not None:
        worst, what = ((col["C_peak"], "peak over the design day") if "C_peak" in col else
                       (col["C_ss"], "steady state at design occupancy"))
        over = worst > limit * (1 + 1e-9)
    else:
        over = np.zeros(n, dtype=bool)
    profiled = [j for j, (ctx, z) in enumerate(zip(ctxs, zones))
                if z.series is not None and ctx.zone.profile is not None]
    for j in sorted(set(profiled) | set(np.flatnonzero(over).tolist())):
        ctx, z = ctxs[j], zones[j]
        if z.series is not None and ctx.zone.profile is not None:
            vbz[j] = z.trail.value("Vbz")
            if vbz[j] > 0:
                has_t[j] = True
                averaging[j] = 3 / dilution.air_change_rate(vbz[j], float(col["V"][j]))
                averaged[j], has_avg[j] = _short_term_average(
                    ctx, z, z.series.occupancy[:-1], float(averaging[j]), emitter)
        if over[j]:
            emitter.declare("concentration-limit", ctx.subject,
                            f"CO2 {float(worst[j]):,.0f} ppm ({what}) is above the schedule's "
                            f"own limit of {limit:,.0f} ppm", ctx.location,
                            declared_at=CO2_LIMIT, system=ctx.system_id, zone=ctx.zone.id)
    if has_t.any():
        rows.copy("Vbz", vbz, _kind_of(zones, np.flatnonzero(has_t).tolist(), "Vbz", "airflow"),
                  where=has_t)
        rows.add("T", averaging, "time", template(
            formula=f"{k}·{{V}} / {{Vbz}}",
            note="averaging time for short-term conditions (50·v/Vbz in SI, minutes)"),
                 where=has_t)
        rows.add("Pz_avg", averaged, "people", template(
            note="largest population averaged over any window of length T in the profile"),
                 where=has_avg)
    if limit is not None:
        rows.add("C_limit", float(limit), "concentration_ppm",
                 template(origin="schedule", note="declared CO2 limit"))


def _short_term_average(ctx: ZoneContext, z: ZoneResult, fractions: np.ndarray, averaging: float,
                        emitter: Emitter) -> tuple[float, bool]:
    """The largest population averaged over ``averaging`` [h] where the profile's peak may be
    averaged (with its finding, as :func:`airgate.evaluation.dilution._short_term`):
    ``(Pz_avg, True)``, else ``(0, False)``."""
    best = piecewise.largest_window_mean(fractions, averaging / STEP_H)
    peak = float(np.max(fractions))
    if not (peak > 0 and z.trail.value("Pz") > 0 and best < peak * (1 - 1e-9)):
        return 0.0, False
    avg = float(best * z.trail.value("Pz"))
    co2.emit_short_term(emitter, ctx, z, peak, averaging * 60, avg)
    return avg, True


def multiple_zone(system, ctxs, result, schedule, emitter, out, table) -> None:
    """The CO2 analysis of a multiple-zone system, its zones together: each zone's trail a row
    of a :class:`~airgate.evaluation.trail.StepTable` (the same steps as :func:`co2._start`,
    the coupled balance, :func:`co2._rate_steps`, :func:`co2._dcv_steps`, :func:`co2._short_term`,
    :func:`co2._limit` and P_max record one by one, made when first read)."""
    volumes = [volume_of(c) for c in ctxs]
    if any(v is None for v in volumes) or any("Vpz" not in z.trail for z in result.zones):
        return  # the coupled balance needs every zone's volume and primary airflow
    air = zone_air.system_air(system, result, schedule)
    if air is None:
        return
    zones = result.zones
    vpz = np.array([z.trail.value("Vpz") for z in zones])
    vot = system.outdoor_air
    if vot > vpz.sum() * (1 + 1e-12) or vot <= 0 or air.intake > vpz.sum() * (1 + 1e-12):
        return  # no steady state through the coupled balance
    rows = StepTable([z.trail for z in zones])
    col = _start_rows(rows, ctxs, zones, schedule, np.array(volumes, dtype=float), table)
    _coupled_steady(system, result, rows, col, vpz, emitter.units, air)
    _coupled_series(schedule, system, ctxs, result, rows, col, vpz, air)
    _rate_rows(rows, col, emitter.units)
    _dcv_rows(rows, zones, col, emitter.units)
    _short_term_and_limit(rows, ctxs, zones, schedule, col, emitter)
    most = capacity.most_people(system, result, [True] * len(zones),
                                dict(Pz=col["Pz"], Vpz=vpz))
    if most is not None:
        which, people = most
        column = np.zeros(len(zones))
        column[which] = people
        rows.add("P_max", column, "people", template(note=capacity.P_MAX_NOTE),
                 where=np.isin(np.arange(len(zones)), which))
    for z, t in zip(zones, rows.trails()):
        z.dilution = t
        out.append(z)
