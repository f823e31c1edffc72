"""CO2 from occupants in each zone: the well-mixed mass balance applied to the evaluated schedule.

For every zone whose height or volume is known: steady-state CO2 at design occupancy, the
outdoor-air change rate, time constant and purge times, the DCV set point matching the required
outdoor airflow, the occupancy the delivered outdoor air supports and — with an occupancy
profile — the design day's peak and time-weighted average.

Units: the engine's internal units (airflow L/s, volume m³, time h), which the mass-balance
procedures take as they are; a CO2 generation G [L/s] enters as ``10⁶·G`` ppm·L/s so that
``C = C_out + 10⁶·G/Q`` in ppm (CO2 as a tracer; the well-mixed balance of Nazaroff &
Alvarez-Cohen 2001, docs/references.md).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

from airgate import units
from airgate.evaluation import zone_air, zone_network
from airgate.evaluation.checks import Emitter
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.system_kinds import kind_of
from airgate.evaluation.trail import Trail, unit_factor
from airgate.evaluation.zones import ZoneContext
from airgate.models.datatables import DataTable, Tables
from airgate.models.schedule import Schedule, System
from airgate.procedures import coupled, dilution, piecewise

PPM = 1e6  #: ppm per unit volume fraction
MB = "well-mixed mass balance (Nazaroff & Alvarez-Cohen 2001, CMFR material balance)"
PURGE = ("t = ln(1/(1 − f))/λ; CDC 2003 Guidelines for Environmental Infection Control in "
         "Health-Care Facilities, Appendix B, Table B.1")
CO2_TABLE = "occupant-co2-generation"
CO2_LIMIT = ("project", "co2_limit")  #: where the schedule declares its CO2 limit
STEP_H = 1.0 / 60.0  #: sampling step of the design-day series [h]
#: the design day's sample times, second day of the two-day run [h]; the series of every zone
#: share one read-only copy of the times after midnight (:data:`DAY_TIMES`)
_RUN_TIMES = 24.0 + np.arange(0, 24 * 60 + 1) * STEP_H
DAY_TIMES = _RUN_TIMES - 24.0
_RUN_TIMES.setflags(write=False)
DAY_TIMES.setflags(write=False)
ZERO_C = 273.15  #: 0 °C [K]
ROOM_C = 20.0  #: indoor temperature at which a tabled CO2 volume rate is used [°C]


@dataclass
class Series:
    """A zone's CO2 over the design day (the second day of a two-day run: periodic start)."""

    times: np.ndarray  #: [h] after midnight
    ppm: np.ndarray  #: [ppm]
    occupancy: np.ndarray  #: fraction of Pz present [–]
    profile: str


def volume_of(ctx: ZoneContext) -> float | None:
    """Zone volume [m³]: stated, or height × area."""
    if ctx.zone.volume is not None:
        return ctx.zone.volume
    if ctx.zone.height is not None:
        return ctx.zone.height * ctx.zone.area
    return None


def _start(ctx: ZoneContext, z: ZoneResult, schedule: Schedule, volume: float,
           table: DataTable) -> Trail:
    """Volume, outdoor level, generation per person and total generation."""
    t = Trail()
    t.add("V", volume, "volume", origin="schedule" if ctx.zone.volume else "computed",
          note="" if ctx.zone.volume else "height × Az")
    project = schedule.project
    t.add("C_out", project.outdoor_co2, "concentration_ppm", origin="schedule",
          note="outdoor CO2 (project.outdoor_co2; 420 ppm when not stated)")
    if ctx.zone.co2_generation is not None:
        t.add("N", ctx.zone.co2_generation, "gas_generation", origin="schedule",
              note="CO2 generation per occupant stated in the schedule")
    else:
        row = ctx.zone.activity or table.default
        value = table.rows[row].value
        if table.reference_temperature is None:
            t.add("N", value, "gas_generation", origin="table", source=table.cite(row),
                  note=f"activity '{row}'")
        else:
            ref = table.reference_temperature
            t.add("N_ref", value, "gas_generation", origin="table", source=table.cite(row),
                  note=f"activity '{row}'; volume at {ref:g} °C")
            t.add("N", value * (ZERO_C + ROOM_C) / (ZERO_C + ref), "gas_generation",
                  formula=f"{{N_ref}}·{ZERO_C + ROOM_C:g} K / {ZERO_C + ref:g} K",
                  origin="assumed",
                  source="Persily & de Jonge 2017: Table 4 at 0 °C; ideal-gas volume at 20 °C",
                  note=f"the same CO2 as a volume at {ROOM_C:g} °C indoors")
    t.copy_from(z.trail, "Pz")
    t.add("G", t.value("N") * t.value("Pz"), "gas_flow", formula="{N}·{Pz}",
          note="CO2 generated at design occupancy")
    return t


def _per_airflow(flow: str, u: str) -> str:
    """``{Q}`` as L/s in a formula: ``(0.4719·{Q})`` when the report shows cfm."""
    k = unit_factor(("airflow",), (), u)
    return f"({k}·{{{flow}}})" if k else f"{{{flow}}}"


def _airflow_sum(flows: tuple[str, ...], u: str) -> str:
    """``{Q1} + {Q2}`` as L/s in a formula: ``(0.4719·({Q1} + {Q2}))`` when shown in cfm."""
    if len(flows) == 1:
        return _per_airflow(flows[0], u)
    k = unit_factor(("airflow",), (), u)
    inner = " + ".join(f"{{{f}}}" for f in flows)
    return f"({k}·({inner}))" if k else f"({inner})"


def makeup_of(t: Trail) -> dict:
    """The makeup inflow of a single-path zone's trail as procedure arguments."""
    if "Q_mu" not in t:
        return {}
    c = t.value("C_mu") if "C_mu" in t else t.value("C_out")
    return dict(makeup_airflow=t.value("Q_mu"), makeup_concentration=c)


def single_path_formula(t: Trail, u: str) -> str:
    """The steady state of a single-path zone as a formula: outdoor air Q_oa and makeup air
    Q_mu at C_mu (the outdoor level unless transferred) dilute the generation G."""
    if "Q_mu" not in t:
        return "{C_out} + 10⁶·{G} / " + _per_airflow("Q_oa", u)
    if "C_mu" in t:
        return ("{C_out} + (10⁶·{G} + " + _per_airflow("Q_mu", u) + "·({C_mu} − {C_out})) / "
                + _airflow_sum(("Q_oa", "Q_mu"), u))
    return "{C_out} + 10⁶·{G} / " + _airflow_sum(("Q_oa", "Q_mu"), u)


def _steady_single(t: Trail, u: str) -> None:
    """C_ss of a single-path zone (:func:`single_path_formula`)."""
    c = dilution.steady_state_concentration(PPM * t.value("G"), t.value("V"), t.value("Q_oa"),
                                            t.value("C_out"), **makeup_of(t))
    t.add("C_ss", float(c), "concentration_ppm", formula=single_path_formula(t, u), source=MB,
          note="steady state at design occupancy")
    _excess(t)


def _excess(t: Trail) -> None:
    t.add("C_excess", t.value("C_ss") - t.value("C_out"), "concentration_ppm",
          formula="{C_ss} − {C_out}", note="CO2 above outdoor at steady state")


def _rates(t: Trail, u: str, coupled: bool = False) -> None:
    """Change rate, time constant, time to 95 % of steady state, purge times (``coupled``: Q_oa
    is the CO2-equivalent airflow, which already counts the makeup air)."""
    _rate_steps(t, u, *rate_values([t], coupled)[0])


def rate_values(trails: list[Trail], coupled: bool = False) -> list[tuple[float, ...]]:
    """``(λ, Q_mu, t95, t99, t99.9)`` of each trail's zone [1/h, L/s, h, h, h], the procedures
    called once over arrays for the whole list (the same operations on each element as on one
    zone); the times are NaN where λ ≤ 0 (no decay: :func:`_rate_steps` records none)."""
    n = len(trails)
    volume = np.array([t.value("V") for t in trails])
    q = np.array([t.value("Q_oa") for t in trails])
    mu = np.zeros(n) if coupled else np.array([makeup_of(t).get("makeup_airflow", 0.0)
                                               for t in trails])
    return list(zip(*(a.tolist() for a in _rate_arrays(volume, q, mu))))


def _rate_arrays(volume: np.ndarray, q: np.ndarray, mu: np.ndarray) -> tuple[np.ndarray, ...]:
    """``(λ, Q_mu, t95, t99, t99.9)`` as arrays over the zones (:func:`rate_values`)."""
    n = len(volume)
    lam = np.asarray(dilution.loss_rate(volume, q, makeup_airflow=mu), dtype=float).reshape(n)
    times = np.full((3, n), math.nan)
    decays = lam > 0
    if decays.any():
        k = lam[decays]
        times[0, decays] = dilution.time_to_fraction_of_steady_state(k, 0.95)
        times[1, decays] = dilution.time_to_fraction_removed(k, 0.99)
        times[2, decays] = dilution.time_to_fraction_removed(k, 0.999)
    return lam, mu, times[0], times[1], times[2]


def _rate_steps(t: Trail, u: str, lam: float, mu: float, t95: float, t99: float,
                t999: float) -> None:
    """The steps of :func:`_rates` from its values (:func:`rate_values`)."""
    ach = unit_factor(("airflow",), ("volume", "rate"), u,
                      times=units.factor("L/s/m**3", "1/hour"))
    if mu > 0:
        t.add("ACH", lam, "rate", formula=f"{ach}·({{Q_oa}} + {{Q_mu}}) / {{V}}", source=MB,
              note="air changes per hour of the outdoor and makeup air that dilute the zone "
                   "(CO2 has no other removal)")
    else:
        t.add("ACH", lam, "rate", formula=f"{ach}·{{Q_oa}} / {{V}}", source=MB,
              note="outdoor-air changes per hour (CO2 has no other removal)")
    if lam <= 0:
        return
    per_hour = unit_factor((), ("rate", "time"), u) or "1"
    t.add("tau", 1 / lam, "time", formula=f"{per_hour} / {{ACH}}", note="time constant")
    t.add("t95", t95, "time", formula="3·{tau}", note="time to 95 % of steady state", source=MB)
    t.add("t99", t99, "time", formula="4.61·{tau}", note="purge time to 99 % removal",
          source=PURGE)
    t.add("t99.9", t999, "time", formula="6.91·{tau}", note="purge time to 99.9 % removal",
          source=PURGE)


def _dcv(t: Trail, z: ZoneResult, u: str) -> None:
    """CO2 set point that keeps the zone at its required Voz at design occupancy."""
    _dcv_steps(t, z, u, dcv_values([t], [z])[0])


def dcv_values(trails: list[Trail], zones: list[ZoneResult]) -> list[float | None]:
    """The DCV set point of each zone [ppm], None where it has none (no occupants, no required
    outdoor air, or no CO2 generated): the procedure called once over arrays for the list."""
    value = lambda symbol: np.array([t.value(symbol) for t in trails])  # noqa: E731
    voz = np.array([z.trail.value("Voz") for z in zones])
    setpoints = _dcv_arrays(value("Pz"), value("N"), value("C_out"), voz)
    return [None if math.isnan(s) else s for s in setpoints.tolist()]


def _dcv_arrays(pz: np.ndarray, generation: np.ndarray, c_out: np.ndarray,
                voz: np.ndarray) -> np.ndarray:
    """The DCV set point of each zone [ppm], NaN where it has none (:func:`dcv_values`)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        per_person = voz / pz
    has = (pz > 0) & (voz > 0) & np.isfinite(per_person) & (generation > 0)
    out = np.full(len(pz), math.nan)
    if has.any():
        out[has] = np.asarray(dilution.dcv_setpoint_ppm(c_out[has], generation[has],
                                                        per_person[has]), dtype=float).reshape(-1)
    return out


def _dcv_steps(t: Trail, z: ZoneResult, u: str, setpoint: float | None) -> None:
    """The steps of :func:`_dcv` from its set point (:func:`dcv_values`)."""
    t.copy_from(z.trail, "Voz")
    if setpoint is None:
        return
    t.add("C_dcv", setpoint, "concentration_ppm", formula="{C_out} + 10⁶·{N}·{Pz} / " + _per_airflow("Voz", u),
          source=MB, note="DCV set point: steady CO2 when the zone gets exactly its Voz")
    t.copy_from(z.trail, "Rp")
    t.copy_from(z.trail, "Ra")
    t.copy_from(z.trail, "Az")
    t.copy_from(z.trail, "Ez")
    t.add("Voz_min", t.value("Ra") * t.value("Az") / t.value("Ez"), "airflow",
          formula="{Ra}·{Az} / {Ez}", note="DCV reset: Voz at zero occupancy; Voz rises by "
                                           "Rp/Ez per person present")


def _capacity(t: Trail, z: ZoneResult, q_oa: float, notes: list[str]) -> None:
    """Occupants the delivered outdoor air supports under the pack's rates."""
    for symbol in ("Rp", "Ra", "Az", "Ez"):
        if symbol not in t:
            t.copy_from(z.trail, symbol)
    rp, ra, az, ez = (t.value(s) for s in ("Rp", "Ra", "Az", "Ez"))
    if rp <= 0:
        return
    if q_oa * ez < ra * az:
        notes.append(f"P_max (the occupants a zone can hold at the outdoor air it receives) is "
                     f"not given for zone {z.id}: that air is below the area component Ra·Az/Ez "
                     "even with the zone empty")
        return
    t.add("P_max", (q_oa * ez - ra * az) / rp, "people",
          formula="({Q_oa}·{Ez} − {Ra}·{Az}) / {Rp}",
          note="occupants the delivered outdoor air supports (Rp·P + Ra·Az ≤ Q_oa·Ez)")


def _short_term(t: Trail, ctx: ZoneContext, z: ZoneResult, fractions: np.ndarray,
                emitter: Emitter) -> None:
    """T = 3v/Vbz: whether the profile's peak may be averaged over it (Section 6.2.6.2)."""
    k = unit_factor(("volume",), ("airflow", "time"), emitter.units,
                    times=3 / units.factor("L/s/m**3", "1/hour"))
    vbz = z.trail.value("Vbz")
    if vbz <= 0:
        return
    t.copy_from(z.trail, "Vbz")
    t.add("T", 3 / dilution.air_change_rate(vbz, t.value("V")), "time",
          formula=f"{k}·{{V}} / {{Vbz}}",
          note="averaging time for short-term conditions (50·v/Vbz in SI, minutes)")
    best = piecewise.largest_window_mean(fractions, t.value("T") / STEP_H)
    peak = float(np.max(fractions))
    # a zone without occupants (Pz = 0, e.g. a corridor) has no population to average
    if peak > 0 and z.trail.value("Pz") > 0 and best < peak * (1 - 1e-9):
        t.add("Pz_avg", best * z.trail.value("Pz"), "people", note="largest population averaged "
              "over any window of length T in the profile")
        emit_short_term(emitter, ctx, z, peak, t.value("T") * 60, t.value("Pz_avg"))


def emit_short_term(emitter: Emitter, ctx: ZoneContext, z: ZoneResult, peak: float,
                    minutes: float, avg: float) -> None:
    """The ``short-term-averaging`` finding: the profile's peak (``peak`` × Pz) lasts less than
    the averaging time T (``minutes``), over which the population may be averaged to ``avg``."""
    shown = f"{avg:.1f}" if avg >= 1 else f"{avg:.2g}"  # below one person: not "0.0"
    emitter.emit("short-term-averaging", ctx.subject,
                 f"the profile's peak ({peak:.2f} × Pz) lasts less than T = {minutes:.0f} min; "
                 f"the population may be averaged over T to {shown} people (the design uses Pz)",
                 ctx.location, system=ctx.system_id, zone=z.id)


def _profile_pieces(schedule: Schedule, ctx: ZoneContext) -> tuple[np.ndarray, np.ndarray] | None:
    if ctx.zone.profile is None:
        return None
    return schedule.profiles[ctx.zone.profile].pieces("weekday")


def _two_days(breaks: np.ndarray, fractions: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    return np.concatenate([breaks[:-1], breaks + 24.0]), np.concatenate([fractions, fractions])


def _sample_fractions(breaks: np.ndarray, fractions: np.ndarray, times: np.ndarray) -> np.ndarray:
    """The profile at each design-day sample time [–]; zones with the same profile share one
    read-only array (a portfolio's series hold one occupancy array per profile, not per zone)."""
    if times is _RUN_TIMES or times is DAY_TIMES:
        return _day_fractions(np.asarray(breaks, dtype=float).tobytes(),
                              np.asarray(fractions, dtype=float).tobytes())
    idx = np.clip(np.searchsorted(breaks, times % 24.0, side="right") - 1, 0, len(fractions) - 1)
    return fractions[idx]


@functools.lru_cache(maxsize=256)
def _day_fractions(breaks: bytes, fractions: bytes) -> np.ndarray:
    b, f = np.frombuffer(breaks), np.frombuffer(fractions)
    idx = np.clip(np.searchsorted(b, DAY_TIMES % 24.0, side="right") - 1, 0, len(f) - 1)
    out = f[idx]
    out.setflags(write=False)
    return out


def _weekend_peak(t: Trail, profile) -> None:
    """Peak CO2 on a weekend day, where the profile has its own weekend variant (exact)."""
    if profile.weekend is None:
        return
    breaks, fractions = profile.pieces("weekend")
    b2, f2 = _two_days(breaks, fractions)
    sol = dilution.piecewise_solution(b2, PPM * t.value("G") * f2, t.value("V"),
                                      t.value("Q_oa"), t.value("C_out"),
                                      outdoor_concentration=t.value("C_out"), **makeup_of(t))
    t.add("C_peak_weekend", float(dilution.peak_concentration(sol, 24.0, 48.0)[0]),
          "concentration_ppm", source=MB, note="peak over a weekend day (the profile's weekend "
          "variant, exact piecewise solution)")


def _day_series_single(t: Trail, breaks, fractions, name: str) -> Series:
    b2, f2 = _two_days(breaks, fractions)
    gen = PPM * t.value("G") * f2
    sol = dilution.piecewise_solution(b2, gen, t.value("V"), t.value("Q_oa"),
                                      t.value("C_out"), outdoor_concentration=t.value("C_out"),
                                      **makeup_of(t))
    t.add("C_peak", float(dilution.peak_concentration(sol, 24.0, 48.0)[0]), "concentration_ppm",
          note=f"peak over the design day, profile '{name}' (exact piecewise solution)",
          source=MB)
    t.add("C_twa", float(dilution.time_weighted_average(sol, 24.0, 48.0)), "concentration_ppm",
          note="24-hour time-weighted average (exact integral)", source=MB)
    ppm = np.asarray(dilution.evaluate_piecewise(sol, _RUN_TIMES), dtype=float)
    return Series(DAY_TIMES, ppm, _sample_fractions(breaks, fractions, _RUN_TIMES), name)


#: what a rise series is, in place of a profile's name
RISE = "rise to steady state at design occupancy from the outdoor level (no occupancy profile)"


def _rise_single(t: Trail) -> Series:
    """CO2 from the outdoor level at midnight, design occupancy all day: the rise towards the
    steady state C_ss, exact (one piece of the piecewise solution)."""
    sol = dilution.piecewise_solution(np.array([0.0, 24.0]), np.array([PPM * t.value("G")]),
                                      t.value("V"), t.value("Q_oa"), t.value("C_out"),
                                      outdoor_concentration=t.value("C_out"), **makeup_of(t))
    ppm = np.asarray(dilution.evaluate_piecewise(sol, DAY_TIMES), dtype=float)
    return Series(DAY_TIMES, ppm, np.ones_like(DAY_TIMES), RISE)


def _limit(t: Trail, ctx: ZoneContext, schedule: Schedule, emitter: Emitter) -> None:
    """The schedule's own CO2 limit (basis ``declared``: it changes no code verdict)."""
    limit = schedule.project.co2_limit
    if limit is None:
        return
    worst, what = (t.value("C_peak"), "peak over the design day") if "C_peak" in t else (
        t.value("C_ss"), "steady state at design occupancy")
    t.add("C_limit", limit, "concentration_ppm", origin="schedule", note="declared CO2 limit")
    if worst > limit * (1 + 1e-9):
        emitter.declare("concentration-limit", ctx.subject,
                        f"CO2 {worst:,.0f} ppm ({what}) is above the schedule's own limit of "
                        f"{limit:,.0f} ppm", ctx.location, declared_at=CO2_LIMIT,
                        system=ctx.system_id, zone=ctx.zone.id)


def _single_path(system, ctxs, result, schedule, emitter, out, table) -> None:
    airs = zone_air.zone_air(schedule)
    for ctx, z in zip(ctxs, result.zones):
        volume = volume_of(ctx)
        air = airs.get(z.id)
        if volume is None:
            continue
        if air is not None and air.makeup == "transfer":
            result.notes.append(zone_air.transfer_note(z.id, air))
            continue
        t = _start(ctx, z, schedule, volume, table)
        t.copy_from(z.trail, "Voz_delivered")
        q = t.value("Voz_delivered")
        t.add("Q_oa", q, "airflow", note="= Voz_delivered, the outdoor air the zone receives")
        zone_air.single_path(t, air, z.trail)
        if q + makeup_of(t).get("makeup_airflow", 0.0) <= 0:
            t.steps["Q_oa"] = t["Q_oa"]._replace(
                note="no outdoor air reaches the zone: CO2 rises without bound while it is "
                     "occupied (no steady state)")
            if schedule.project.co2_limit is not None and t.value("G") > 0:
                emitter.declare("concentration-limit", ctx.subject, "no outdoor air reaches "
                                "the occupied zone: CO2 rises without bound, above the "
                                "schedule's own limit", ctx.location, declared_at=CO2_LIMIT,
                                system=ctx.system_id, zone=z.id)
            z.dilution = t
            out.append(z)
            continue
        _steady_single(t, emitter.units)
        _rates(t, emitter.units)
        _dcv(t, z, emitter.units)
        _capacity(t, z, q, result.notes)
        pieces = _profile_pieces(schedule, ctx)
        if pieces is None:
            z.rise = _rise_single(t)
        else:
            z.series = _day_series_single(t, *pieces, ctx.zone.profile)
            _short_term(t, ctx, z, z.series.occupancy[:-1], emitter)
            _weekend_peak(t, schedule.profiles[ctx.zone.profile])
        _limit(t, ctx, schedule, emitter)
        z.dilution = t
        out.append(z)


def coupled_design_day(schedule: Schedule, system: System, ctxs, people: np.ndarray,
                       constant: np.ndarray, volume: np.ndarray, primary_airflow: np.ndarray,
                       c0: float, intake: float, **losses):
    """Exact coupled run over two design days (the second is reported, so it starts periodic).

    Zone generation on each piece is ``people·fraction + constant`` [C·L/s]; zones without a
    profile stay at design occupancy; ``intake`` [L/s] is the intake the balance uses. Returns ``(times, zone_concentrations, breaks,
    fractions)`` for the second day (times in h after midnight, concentrations (n_t, n_zones),
    the day's breaks and per-zone fractions), or None when no zone has a profile.
    """
    profiles = [_profile_pieces(schedule, c) for c in ctxs]
    if all(p is None for p in profiles):
        return None
    edges = sorted({float(b) for p in profiles if p is not None for b in p[0]} | {0.0, 24.0})
    breaks = np.asarray(edges)
    mids = (breaks[:-1] + breaks[1:]) / 2
    frac = np.ones((len(mids), len(ctxs)))
    for j, p in enumerate(profiles):
        if p is not None:
            frac[:, j] = _sample_fractions(p[0], p[1], mids)
    b2, f2 = _two_days(breaks, frac)
    times = _RUN_TIMES
    try:
        run = coupled.coupled_piecewise_transient(
            b2, f2 * people[None, :] + constant[None, :], volume, primary_airflow,
            intake, np.full(len(ctxs), c0), times, **losses)
    except coupled.TooManyRates:
        return None  # above the size limit no design day is computed (docs/dilution.md)
    return DAY_TIMES, run.zone, breaks, frac


def add_day_statistics(t: Trail, series: np.ndarray, times: np.ndarray, kind: str,
                       what: str) -> None:
    """Peak and 24-hour average of a minute-sampled design-day series (trapezoid rule)."""
    t.add("C_peak", float(series.max()), kind, source=MB,
          note=f"peak over the design day{what} (exact coupled solution, sampled each minute)")
    t.add("C_twa", float(np.trapezoid(series, times) / 24.0), kind, source=MB,
          note="24-hour time-weighted average")


def analyse(system: System, ctxs: list[ZoneContext], result: SystemResult, schedule: Schedule,
            emitter: Emitter, tables: Tables) -> list[ZoneResult]:
    """Attach a CO2 dilution trail (and design-day series) to every zone that can have one.

    ``tables``: the data tables; the CO2 generation per occupant comes from
    ``occupant-co2-generation`` where the zone states none.
    """
    out: list[ZoneResult] = []
    if not kind_of(system).intake or math.isinf(result.trail.value("Vot")):
        return out
    if zone_network.transfers_within(system, result, schedule):
        from airgate.evaluation import dilution_network  # the network path uses these steps
        dilution_network.analyse(system, ctxs, result, schedule, emitter, out, tables[CO2_TABLE])
    elif kind_of(system).coupled:
        from airgate.evaluation import dilution_rows  # the rows path uses these steps
        dilution_rows.multiple_zone(system, ctxs, result, schedule, emitter, out,
                                    tables[CO2_TABLE])
    else:
        _single_path(system, ctxs, result, schedule, emitter, out, tables[CO2_TABLE])
    return out


def unchecked_limits(schedule: Schedule, results: list[SystemResult], where) -> list[str]:
    """A note for each declared limit that some zones could not be checked against (no volume,
    or no steady state), naming the zones, so that no declared limit is dropped silently.
    ``where(path)`` gives the location text of a schedule field."""
    out = []
    limits = [(("project", "co2_limit"), "project.co2_limit", "CO2", None)] \
        if schedule.project.co2_limit is not None else []
    limits += [(("contaminants", i, "limit"), f"contaminants[{i}].limit", c.label or c.id, c.id)
               for i, c in enumerate(schedule.contaminants) if c.limit is not None]
    for path, field, what, cid in limits:
        missing = [f"{s.id}/{z.id}" for s in results for z in s.zones
                   if (z.dilution is None if cid is None else cid not in z.contaminants)]
        if missing:
            shown = ", ".join(missing[:10]) + (f" and {len(missing) - 10} more"
                                              if len(missing) > 10 else "")
            out.append(f"The {what} limit the schedule declares ({field} at {where(path)}) "
                       f"was not checked for {shown}: a zone needs a height or "
                       "volume (and, in a multiple-zone system, every zone a primary airflow) "
                       "for the dilution analysis.")
    return out
