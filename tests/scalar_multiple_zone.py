"""The per-zone path: a zone's Vbz and Voz (``evaluate_zone``) and the multiple-zone system
kind (``multiple_zone``) as they were evaluated before the vectorised core
(:mod:`airgate.procedures.multizone`), zone by zone with scalar procedures, kept as the
reference the engine is held to (``tests/test_multizone.py``). Not a test module.

Each zone's Evz, the system's sums and the delivered outdoor air are computed here one zone at
a time by :mod:`airgate.procedures.efficiency`, as ANSI/ASHRAE 62.1-2019 Section 6.2.5 and
Normative Appendix A state them; the engine's kind computes the same on arrays.
"""

from __future__ import annotations

import math

import numpy as np

from airgate import formatting
from airgate.evaluation.checks import Emitter
from airgate.evaluation.delivered import SYMBOL, _NOTE
from airgate.evaluation.findings import Amount, Location
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.system_kinds.multiple_zone import ev_method
from airgate.evaluation.systems import intake
from airgate.evaluation.trail import Trail
from airgate.evaluation import exhaust
from airgate.evaluation.zones import ZoneContext
from airgate.evaluation.zones import _population as _zone_population
from airgate.models.rules import DetailedEv, RulePack, SimplifiedEv, TableEv
from airgate.models.schedule import System
from airgate.procedures import efficiency as eff
from airgate.procedures import zone_rates


def _population(system: System, zones: list[ZoneResult], trail: Trail, pack: RulePack,
                emitter: Emitter, where: Location) -> float:
    trail.add("ΣPz", float(sum(z.trail.value("Pz") for z in zones)), "people",
              note=f"sum over {len(zones)} zones")
    if system.population is None:
        trail.add("Ps", trail.value("ΣPz"), "people", formula="{ΣPz}", origin="assumed",
                  note="system population not stated: ΣPz (no diversity credit)")
    else:
        trail.add("Ps", system.population, "people", origin="schedule",
                  note="stated in the schedule")
    sum_pz = trail.value("ΣPz")
    d = eff.occupant_diversity(trail.value("Ps"), sum_pz) if sum_pz > 0 else 1.0
    trail.add("D", d, "fraction", formula="{Ps} / {ΣPz}" if sum_pz > 0 else "",
              source=pack.cite("occupant_diversity"),
              note="" if sum_pz > 0 else "no occupants: D = 1")
    if d > 1 + 1e-9:
        emitter.emit("diversity-above-one", system.id,
                     f"system population Ps {formatting.number(trail.value('Ps'), 'people')} "
                     f"exceeds ΣPz {formatting.number(sum_pz, 'people')}; D = {d:.3f} used as given",
                     where, system=system.id)
    return d


def _detailed(system: System, ctxs: list[ZoneContext], zones: list[ZoneResult], trail: Trail,
              method: DetailedEv, pack: RulePack) -> tuple[float, int]:
    xs = trail.value("Xs")
    evz = []
    for ctx, z in zip(ctxs, zones):
        zt = z.trail
        zt.copy_from(trail, "Xs")
        ep, er = ctx.zone.ep, ctx.zone.er
        if ep is None:
            value = eff.zone_ventilation_efficiency_single_path(xs, zt.value("Zpz"))
            zt.add("Evz", value, "fraction", formula="1 + {Xs} − {Zpz}",
                   source=pack.cite("detailed_ev"))
        else:
            er = 0.0 if er is None else er
            zt.add("Ep", ep, "fraction", origin="schedule")
            zt.add("Er", er, "fraction", origin="schedule")
            fa, fb, fc = eff.secondary_recirculation_factors(ep, er, zt.value("Ez"))
            zt.add("Fa", fa, "fraction", formula="{Ep} + (1 − {Ep})·{Er}",
                   source=pack.cite("detailed_ev_secondary"))
            zt.add("Fb", fb, "fraction", formula="{Ep}", source=pack.cite("detailed_ev_secondary"))
            zt.add("Fc", fc, "fraction", formula="1 − (1 − {Ez})·(1 − {Er})·(1 − {Ep})",
                   source=pack.cite("detailed_ev_secondary"))
            value = eff.zone_ventilation_efficiency(xs, zt.value("Zpz"), ep, er, zt.value("Ez"))
            zt.add("Evz", value, "fraction", formula="({Fa} + {Xs}·{Fb} − {Zpz}·{Ep}·{Fc}) / {Fa}",
                   source=pack.cite("detailed_ev_secondary"))
        evz.append(value)
    critical = int(np.argmin(evz))
    return eff.system_ventilation_efficiency_detailed(evz), critical


def _ev(system: System, ctxs, zones, trail: Trail, method_name: str, pack: RulePack,
        d: float) -> tuple[float, int | None]:
    method = pack.methods[method_name]
    src = f"{method.source.cite()} ({method.provenance})"
    if isinstance(method, SimplifiedEv):
        ev = eff.system_ventilation_efficiency_simplified(
            d, method.breakpoint, method.slope, method.intercept, method.above_breakpoint)
        formula = ("{slope}·{D} + {intercept}" if d < method.breakpoint else "")
        trail.add("slope", method.slope, "fraction", origin="table", source=src)
        trail.add("intercept", method.intercept, "fraction", origin="table", source=src)
        note = (f"simplified procedure, D < {method.breakpoint}" if d < method.breakpoint else
                f"simplified procedure, D ≥ {method.breakpoint}: Ev = {method.above_breakpoint}")
        trail.add("Ev", ev, "fraction", formula=formula, source=src, note=note)
        return ev, None
    if isinstance(method, DetailedEv):
        ev, critical = _detailed(system, ctxs, zones, trail, method, pack)
        trail.add("Ev", ev, "fraction", source=src,
                  note=f"lowest Evz: zone {zones[critical].id} (critical zone)")
        return ev, critical
    assert isinstance(method, TableEv)
    zp = [z.trail.value("Zpz") for z in zones]
    critical = int(np.argmax(zp))
    trail.add("max Zpz", zp[critical], "fraction", note=f"zone {zones[critical].id}")
    ev = eff.system_ventilation_efficiency_table(zp[critical], method.rows, method.interpolate)
    if math.isnan(ev):
        if method.above_last == "detailed":
            detailed = pack.methods.get("detailed") or DetailedEv(method.source, method.provenance)
            ev, critical = _detailed(system, ctxs, zones, trail, detailed, pack)
            trail.add("Ev", ev, "fraction",
                      source=f"{detailed.source.cite()} ({detailed.provenance})",
                      note="largest Zpz above the table: detailed calculation, lowest Evz")
            return ev, critical
        ev = float(method.above_last)
    trail.add("Ev", ev, "fraction", source=src,
              note=f"table against the largest Zpz ({'interpolated' if method.interpolate else 'step'})")
    return ev, critical


def _primary_airflows(system: System, ctxs, zones, trail: Trail, pack: RulePack,
                      emitter: Emitter, locate) -> bool:
    """Vpz, Zpz per zone and Vps; False when some zone has no primary airflow scheduled."""
    known = all(c.zone.primary_airflow is not None for c in ctxs)
    for ctx, z in zip(ctxs, zones):
        if ctx.zone.primary_airflow is None:
            continue
        zt = z.trail
        zt.add("Vpz", ctx.zone.primary_airflow, "airflow", origin="schedule",
               note="zone primary airflow at the condition analysed")
        zt.add("Zpz", eff.primary_outdoor_air_fraction(zt.value("Voz"), zt.value("Vpz")),
               "fraction", formula="{Voz} / {Vpz}", source=pack.cite("detailed_ev"))
        emitter.compare("zone-primary-airflow", ctx.subject, "zone primary airflow",
                        zt.value("Voz"), zt.value("Vpz"), "airflow",
                        locate(ctx.path + ("primary_airflow",)), system=system.id, zone=z.id,
                        advice="no outdoor-air intake can make up for it; raise the zone's "
                               "minimum primary airflow")
    if system.supply_airflow is not None:
        trail.add("Vps", system.supply_airflow, "airflow", origin="schedule",
                  note="system primary airflow stated in the schedule")
    elif known:
        trail.add("Vps", float(sum(c.zone.primary_airflow for c in ctxs)), "airflow",
                  note="ΣVpz (not stated)")
    if "Vps" in trail:
        trail.add("Xs", eff.average_outdoor_air_fraction(trail.value("Vou"), trail.value("Vps")),
                  "fraction", formula="{Vou} / {Vps}", source=pack.cite("detailed_ev"))
    return known


def _vav_minimum(system, ctxs, zones, method: SimplifiedEv, emitter: Emitter, locate) -> None:
    ratio = method.vav_minimum_primary_ratio
    if not system.variable_air_volume or ratio is None:
        return
    for ctx, z in zip(ctxs, zones):
        required = ratio * z.trail.value("Voz")
        if ctx.zone.primary_airflow is None:
            emitter.emit("simplified-vav-minimum", ctx.subject,
                         f"not evaluated: no primary_airflow scheduled for a VAV zone; the "
                         f"simplified procedure needs Vpz ≥ {ratio}·Voz = "
                         f"{formatting.amount(required, 'airflow', emitter.units)}",
                         ctx.location, system=system.id, zone=z.id, severity="info")
            continue
        emitter.compare("simplified-vav-minimum", ctx.subject,
                        f"VAV minimum primary airflow (simplified procedure needs {ratio}·Voz)",
                        required, ctx.zone.primary_airflow, "airflow",
                        locate(ctx.path + ("primary_airflow",)), system=system.id, zone=z.id,
                        advice="raise the minimum or use the detailed procedure")


def _limiting_zones(system, ctxs, zones, trail: Trail, emitter: Emitter, locate) -> list[str]:
    """Zones whose Evz is below the Ev the scheduled intake needs, with the Vpz that would do."""
    needed = trail.value("Vou") / system.outdoor_air if system.outdoor_air > 0 else math.inf
    trail.add("Ev_needed", needed, "fraction", formula="{Vou} / {Vot_design}",
              note="Ev at which the scheduled intake would be enough")
    fixes: list[str] = []
    if needed > 1.0:
        return fixes  # intake below Vou: no primary airflow can help, only more intake
    for ctx, z in zip(ctxs, zones):
        zt = z.trail
        if "Evz" not in zt or zt.value("Evz") >= needed * (1 - 1e-9):
            continue
        zt.copy_from(trail, "Ev_needed")
        vpz_min = eff.minimum_primary_airflow(
            zt.value("Voz"), trail.value("Xs"), needed, ctx.zone.ep or 1.0, ctx.zone.er or 0.0,
            zt.value("Ez"))
        formula = ("{Voz} / (1 + {Xs} − {Ev_needed})" if ctx.zone.ep is None else
                   "{Voz}·{Ep}·{Fc} / ({Fa}·(1 − {Ev_needed}) + {Xs}·{Fb})")
        zt.add("Vpz_min", vpz_min, "airflow", note="least Vpz for Evz ≥ Ev_needed, Xs held",
               formula=formula)
        if math.isinf(vpz_min):
            text = "no primary airflow reaches it at this intake; raise the system intake"
            fixes.append(f"{z.id} (no Vpz suffices)")
        else:
            text = (f"raise its primary airflow to at least "
                    f"{formatting.amount(vpz_min, 'airflow', emitter.units)}")
            fixes.append(f"{z.id} ≥ {formatting.amount(vpz_min, 'airflow', emitter.units)}")
        emitter.emit(
            "zone-limits-ev", ctx.subject,
            f"Evz {zt.value('Evz'):.3f} is below the {needed:.3f} the scheduled intake needs; "
            + text, locate(ctx.path + ("primary_airflow",)),
            required=Amount(vpz_min, "airflow") if not math.isinf(vpz_min) else None,
            provided=Amount(zt.value("Vpz"), "airflow"), system=system.id, zone=z.id)
    return fixes


def multiple_zone(system: System, ctxs: list[ZoneContext], zones: list[ZoneResult],
                  result: SystemResult, pack: RulePack, emitter: Emitter, where: Location,
                  locate) -> None:
    """Multiple-zone recirculating system: D, Vou, Ev, Vot (Section 6.2.5, Appendix A)."""
    method_name = ev_method(pack, system)
    trail = result.trail
    d = _population(system, zones, trail, pack, emitter, result.location)
    trail.add("Σ(Rp·Pz)", float(sum(z.trail.value("Rp") * z.trail.value("Pz") for z in zones)),
              "airflow", note="people component summed over the zones")
    trail.add("Σ(Ra·Az)", float(sum(z.trail.value("Ra") * z.trail.value("Az") for z in zones)),
              "airflow", note="area component summed over the zones")
    trail.add("Vou", eff.uncorrected_outdoor_air_intake(d, trail.value("Σ(Rp·Pz)"),
                                                        trail.value("Σ(Ra·Az)")),
              "airflow", formula="{D}·{Σ(Rp·Pz)} + {Σ(Ra·Az)}", source=pack.cite("uncorrected_intake"))
    _primary_airflows(system, ctxs, zones, trail, pack, emitter, locate)
    method = pack.methods[method_name]
    if isinstance(method, SimplifiedEv):
        _vav_minimum(system, ctxs, zones, method, emitter, locate)
    ev, critical = _ev(system, ctxs, zones, trail, method_name, pack, d)
    result.method = method_name
    result.critical_zone = zones[critical].id if critical is not None else None
    if ev <= 0:
        emitter.emit("ventilation-efficiency-positive", system.id,
                     f"Ev = {ev:.3f}: no outdoor-air intake can ventilate the critical zone "
                     f"{result.critical_zone}; raise its primary airflow", result.location,
                     system=system.id)
        trail.add("Vot", math.inf, "airflow", note="Ev ≤ 0: no intake suffices")
        trail.add("Vot_design", system.outdoor_air, "airflow", origin="schedule",
                  note="scheduled minimum outdoor-air intake", source=where)
        _delivered(result, pack)
        return
    trail.add("Vot", eff.outdoor_air_intake(trail.value("Vou"), ev), "airflow",
              formula="{Vou} / {Ev}", source=pack.cite("multiple_zone_intake"))
    advice = ""
    if system.outdoor_air < trail.value("Vot") * (1 - 1e-9) and "Xs" in trail and any(
            "Evz" in z.trail for z in zones):
        trail.add("Vot_design", system.outdoor_air, "airflow", origin="schedule")
        fixes = _limiting_zones(system, ctxs, zones, trail, emitter, locate)
        if fixes:
            advice = "or raise the primary airflow of zone " + "; ".join(fixes)
    need = formatting.amount(trail.value("Vot"), "airflow", emitter.units)
    intake(trail, system, result, emitter, where,
            advice=f"raise the intake to at least {need}" + (f", {advice}" if advice else ""))
    _delivered(result, pack)



def _appendix_a(zt: Trail, st: Trail, pack: RulePack) -> None:
    """Voz the scheduled intake satisfies in a zone with its own Evz (Appendix A, derived)."""
    for symbol in ("Vou", "Vot_design"):
        zt.copy_from(st, symbol)
    if "Xs" not in zt:
        zt.copy_from(st, "Xs")
    vou, design, xs, vpz = (zt.value(s) for s in ("Vou", "Vot_design", "Xs", "Vpz"))
    secondary = "Fa" in zt
    key = "detailed_ev_secondary" if secondary else "detailed_ev"
    why = ("derived from Appendix A: Evz ≥ Vou/Vot_design solved for the zone outdoor airflow")
    if design <= 0:
        zt.add(SYMBOL, 0.0, "airflow", source=pack.cite(key),
               note=f"{_NOTE}: no intake is scheduled, so the zone receives none")
        return
    if secondary:
        fa, fb, fc, ep = (zt.value(s) for s in ("Fa", "Fb", "Fc", "Ep"))
        value = vpz * (fa * (1 - vou / design) + xs * fb) / (ep * fc) if ep * fc > 0 else 0.0
        formula = "{Vpz}·({Fa}·(1 − {Vou} / {Vot_design}) + {Xs}·{Fb}) / ({Ep}·{Fc})"
    else:
        value = vpz * (1 + xs - vou / design)
        formula = "{Vpz}·(1 + {Xs} − {Vou} / {Vot_design})"
    note = f"{_NOTE}; {why}"
    if not value > 0:
        note += ("; the intake is below what the other zones take, so none is left for this "
                 "zone (shown as 0)")
        value = 0.0
    zt.add(SYMBOL, value, "airflow", formula=formula, source=pack.cite(key), note=note)


def _delivered(result: SystemResult, pack: RulePack) -> None:
    """Multiple-zone recirculating system: by Evz where the zone has one, else by Vot."""
    st = result.trail
    vot = st.value("Vot")
    for z in result.zones:
        zt = z.trail
        if "Evz" in zt and "Vpz" in zt and "Xs" in st:
            _appendix_a(zt, st, pack)
            continue
        if math.isinf(vot):
            continue  # Ev ≤ 0 without zone efficiencies: no figure (the system trail says why)
        zt.copy_from(st, "Vot_design")
        zt.copy_from(st, "Vot")
        if vot <= 0:
            zt.add(SYMBOL, zt.value("Vot_design") if zt.value("Voz") > 0 else 0.0, "airflow",
                   note=f"{_NOTE}: the system requires no outdoor air")
            continue
        zt.add(SYMBOL, zt.value("Voz") * zt.value("Vot_design") / vot, "airflow",
               formula="{Voz}·{Vot_design} / {Vot}", source=pack.cite("multiple_zone_intake"),
               note=f"{_NOTE}: Ev is one figure for the system, so each zone receives its Voz "
                    "in the ratio of the scheduled to the required intake")


def evaluate_zone(ctx: ZoneContext, pack: RulePack, emitter: Emitter) -> ZoneResult:
    """Compute Vbz and Voz for one zone, keeping every step of the trail."""
    zone, cat = ctx.zone, ctx.category
    trail = Trail()
    trail.add("Az", zone.area, "area", origin="schedule", source=ctx.where("area"))
    trail.add("Rp", cat.rp, "airflow_per_person", origin="table", source=cat.cite("Rp"))
    trail.add("Ra", cat.ra, "airflow_per_area", origin="table", source=cat.cite("Ra"))
    _zone_population(trail, ctx, pack, emitter)
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
