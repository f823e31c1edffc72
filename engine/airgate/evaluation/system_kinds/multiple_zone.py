"""``multiple-zone``: a recirculating system serving several zones: D, Vou, Ev, Vot
(ANSI/ASHRAE 62.1-2019 Section 6.2.5 and Normative Appendix A)."""

from __future__ import annotations

import math
from collections.abc import Iterator

import numpy as np

from airgate import formatting
from airgate.errors import AirgateError
from airgate.evaluation import conditions, delivered
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Amount, Location
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.system_kinds.common import SystemKind
from airgate.evaluation.systems import intake
from airgate.evaluation.trail import Step, Trail
from airgate.evaluation.zones import ZoneContext
from airgate.models.loaded import LoadedSchedule
from airgate.models.rules import DetailedEv, RulePack, SimplifiedEv, TableEv
from airgate.models.schedule import System, at_condition
from airgate.procedures import efficiency as eff
from airgate.procedures import multizone as mz


#: the Ev methods' names in :func:`airgate.procedures.multizone.multiple_zone_figures`
_METHOD = {SimplifiedEv: "simplified", DetailedEv: "detailed", TableEv: "table"}
#: a :class:`Step` made from its fields in order, without the named tuple's constructor written
#: in Python (half the time; steps are made per zone)
_step = tuple.__new__
_VPZ_NOTE = "zone primary airflow at the condition analysed"


def core_inputs(system: System, fields: list, zones: list[ZoneResult], method) -> dict:
    """The arguments of :func:`airgate.procedures.multizone.multiple_zone_figures` for one
    system: Rp, Pz, Ra, Az, Ez from the zones' trails, Vpz, Ep, Er from their schedule fields
    ``fields`` (a zone without a Vpz as 0), Ps and Vps where stated, the Ev method's
    parameters."""
    rp, pz, ra, az, ez = (list(c) for c in zip(*[
        (s["Rp"].value, s["Pz"].value, s["Ra"].value, s["Az"].value, s["Ez"].value)
        for s in (z.trail.steps for z in zones)])) if zones else ([], [], [], [], [])
    kwargs = {}
    if isinstance(method, SimplifiedEv):
        kwargs = dict(breakpoint=method.breakpoint, slope=method.slope,
                      intercept=method.intercept, above_breakpoint=method.above_breakpoint)
    elif isinstance(method, TableEv):
        kwargs = dict(rows=method.rows, interpolate=method.interpolate,
                      above_table=None if method.above_last == "detailed"
                      else float(method.above_last))
    return dict(
        rp=rp, pz=pz, ra=ra, az=az, ez=ez, vpz=[f.primary_airflow or 0.0 for f in fields],
        starts=[0], ps=system.population or 0.0, ps_stated=system.population is not None,
        vps=system.supply_airflow or 0.0, vps_stated=system.supply_airflow is not None,
        method=_METHOD[type(method)], **kwargs, **_secondary(fields))


def _secondary(fields: list) -> dict:
    """Ep and Er of the zones, where some zone states Ep (else every zone a single path)."""
    if all(f.ep is None for f in fields):
        return {}
    return dict(ep=[1.0 if f.ep is None else f.ep for f in fields],
                er=[f.er or 0.0 for f in fields])


def _population(system: System, f, n: int, trail: Trail, pack: RulePack, emitter: Emitter,
                where: Location) -> float:
    """ΣPz, Ps and D (Section 6.2.5) in the system trail."""
    sum_pz, d = float(f.sum_pz[0]), float(f.d[0])
    trail.add("ΣPz", sum_pz, "people", note=f"sum over {n} zones")
    if system.population is None:
        trail.add("Ps", sum_pz, "people", formula="{ΣPz}", origin="assumed",
                  note="system population not stated: ΣPz (no diversity credit)")
    else:
        trail.add("Ps", system.population, "people", origin="schedule",
                  note="stated in the schedule")
    trail.add("D", d, "fraction", formula="{Ps} / {ΣPz}" if sum_pz > 0 else "",
              source=pack.cite("occupant_diversity"),
              note="" if sum_pz > 0 else "no occupants: D = 1")
    if d > 1 + 1e-9:
        emitter.emit("diversity-above-one", system.id,
                     f"system population Ps {formatting.number(trail.value('Ps'), 'people')} "
                     f"exceeds ΣPz {formatting.number(sum_pz, 'people')}; D = {d:.3f} used as given",
                     where, system=system.id)
    return d


def _primary_airflows(system: System, ctxs, zones, f, trail: Trail, pack: RulePack,
                      emitter: Emitter, locate) -> None:
    """Vpz, Zpz per zone (with the zone-primary-airflow check) and Vps, Xs for the system."""
    src = pack.cite("detailed_ev")
    vpz, zpz = f.vpz_list, f.zpz.tolist()
    for z, v, zp in zip(zones, vpz, zpz):
        if v > 0:
            steps = z.trail.steps
            steps["Vpz"] = _step(Step, ("Vpz", v, "airflow", "", "", _VPZ_NOTE, "schedule"))
            steps["Zpz"] = _step(Step, ("Zpz", zp, "fraction", "{Voz} / {Vpz}", src, "",
                                        "computed"))
    vpz_a = np.asarray(vpz)
    known = vpz_a > 0
    voz = f.voz
    for i in np.flatnonzero(known & ~(vpz_a >= voz * (1 - 1e-9))).tolist():
        ctx, z = ctxs[i], zones[i]
        emitter.compare("zone-primary-airflow", ctx.subject, "zone primary airflow",
                        float(voz[i]), vpz[i], "airflow",
                        locate(ctx.path + ("primary_airflow",)), system=system.id, zone=z.id,
                        advice="no outdoor-air intake can make up for it; raise the zone's "
                               "minimum primary airflow")
    if system.supply_airflow is not None:
        trail.add("Vps", system.supply_airflow, "airflow", origin="schedule",
                  note="system primary airflow stated in the schedule")
    elif known.all():
        trail.add("Vps", float(f.vps[0]), "airflow", note="ΣVpz (not stated)")
    if "Vps" in trail:
        trail.add("Xs", float(f.xs[0]), "fraction", formula="{Vou} / {Vps}", source=src)


def _vav_minimum(system, ctxs, zones, f, method: SimplifiedEv, emitter: Emitter,
                 locate) -> None:
    ratio = method.vav_minimum_primary_ratio
    if not system.variable_air_volume or ratio is None:
        return
    required = ratio * f.voz
    vpz = np.asarray(f.vpz_list)
    # only the zones short of it (by the tolerance of Emitter.compare) are located and reported
    for i in np.flatnonzero((vpz == 0) | ~(vpz >= required * (1 - 1e-9))).tolist():
        ctx, z = ctxs[i], zones[i]
        if ctx.zone.primary_airflow is None:
            emitter.emit("simplified-vav-minimum", ctx.subject,
                         f"not evaluated: no primary_airflow scheduled for a VAV zone; the "
                         f"simplified procedure needs Vpz ≥ {ratio}·Voz = "
                         f"{formatting.amount(float(required[i]), 'airflow', emitter.units)}",
                         ctx.location, system=system.id, zone=z.id, severity="info")
            continue
        emitter.compare("simplified-vav-minimum", ctx.subject,
                        f"VAV minimum primary airflow (simplified procedure needs {ratio}·Voz)",
                        float(required[i]), ctx.zone.primary_airflow, "airflow",
                        locate(ctx.path + ("primary_airflow",)), system=system.id, zone=z.id,
                        advice="raise the minimum or use the detailed procedure")


def _zone_efficiencies(ctxs, zones, f, trail: Trail, pack: RulePack) -> None:
    """Each zone's Evz (Appendix A) in its trail, with Ep, Er, Fa, Fb, Fc where Ep is stated."""
    xs = _shared(trail, "Xs")
    src, sec = pack.cite("detailed_ev"), pack.cite("detailed_ev_secondary")
    evz = f.evz.tolist()
    if all(ctx.zone.ep is None for ctx in ctxs):  # single supply paths only
        for z, v in zip(zones, evz):
            steps = z.trail.steps
            steps["Xs"] = xs
            steps["Evz"] = _step(Step, ("Evz", v, "fraction", "1 + {Xs} − {Zpz}", src, "",
                                        "computed"))
        return
    fa, fb, fc = f.fa.tolist(), f.fb.tolist(), f.fc.tolist()
    for i, (ctx, z) in enumerate(zip(ctxs, zones)):
        steps = z.trail.steps
        steps["Xs"] = xs
        ep = ctx.zone.ep
        if ep is None:
            steps["Evz"] = Step("Evz", evz[i], "fraction", "1 + {Xs} − {Zpz}", src, "",
                                "computed")
            continue
        er = ctx.zone.er
        steps["Ep"] = Step("Ep", float(ep), "fraction", "", "", "", "schedule")
        steps["Er"] = Step("Er", 0.0 if er is None else float(er), "fraction", "", "", "",
                           "schedule")
        steps["Fa"] = Step("Fa", fa[i], "fraction", "{Ep} + (1 − {Ep})·{Er}", sec, "",
                           "computed")
        steps["Fb"] = Step("Fb", fb[i], "fraction", "{Ep}", sec, "", "computed")
        steps["Fc"] = Step("Fc", fc[i], "fraction", "1 − (1 − {Ez})·(1 − {Er})·(1 − {Ep})",
                           sec, "", "computed")
        steps["Evz"] = Step("Evz", evz[i], "fraction",
                            "({Fa} + {Xs}·{Fb} − {Zpz}·{Ep}·{Fc}) / {Fa}", sec, "", "computed")


def _shared(trail: Trail, symbol: str) -> Step:
    """A system step as every zone's trail shows it (:meth:`Trail.copy_from`), made once."""
    step = trail.steps[symbol]
    return Step(step.symbol, step.value, step.kind, "", step.source,
                step.note or "system value", "system")


def _ev(system: System, ctxs, zones, f, trail: Trail, method_name: str,
        pack: RulePack) -> tuple[float, int | None]:
    method = pack.methods[method_name]
    src = f"{method.source.cite()} ({method.provenance})"
    ev = float(f.ev[0])
    critical = int(f.critical[0]) if f.critical[0] >= 0 else None
    if isinstance(method, SimplifiedEv):
        d = float(f.d[0])
        formula = ("{slope}·{D} + {intercept}" if d < method.breakpoint else "")
        trail.add("slope", method.slope, "fraction", origin="table", source=src)
        trail.add("intercept", method.intercept, "fraction", origin="table", source=src)
        note = (f"simplified procedure, D < {method.breakpoint}" if d < method.breakpoint else
                f"simplified procedure, D ≥ {method.breakpoint}: Ev = {method.above_breakpoint}")
        trail.add("Ev", ev, "fraction", formula=formula, source=src, note=note)
        return ev, None
    if isinstance(method, DetailedEv):
        _zone_efficiencies(ctxs, zones, f, trail, pack)
        trail.add("Ev", ev, "fraction", source=src,
                  note=f"lowest Evz: zone {zones[critical].id} (critical zone)")
        return ev, critical
    assert isinstance(method, TableEv)
    top = int(np.argmax(f.zpz))
    trail.add("max Zpz", float(f.max_zpz[0]), "fraction", note=f"zone {zones[top].id}")
    if f.from_zones[0]:
        detailed = pack.methods.get("detailed") or DetailedEv(method.source, method.provenance)
        _zone_efficiencies(ctxs, zones, f, trail, pack)
        trail.add("Ev", ev, "fraction",
                  source=f"{detailed.source.cite()} ({detailed.provenance})",
                  note="largest Zpz above the table: detailed calculation, lowest Evz")
        return ev, critical
    trail.add("Ev", ev, "fraction", source=src,
              note=f"table against the largest Zpz ({'interpolated' if method.interpolate else 'step'})")
    return ev, critical


def _limiting_zones(system, ctxs, zones, f, trail: Trail, emitter: Emitter, locate) -> list[str]:
    """Zones whose Evz is below the Ev the scheduled intake needs, with the Vpz that would do."""
    needed = trail.value("Vou") / system.outdoor_air if system.outdoor_air > 0 else math.inf
    trail.add("Ev_needed", needed, "fraction", formula="{Vou} / {Vot_design}",
              note="Ev at which the scheduled intake would be enough")
    fixes: list[str] = []
    if needed > 1.0:
        return fixes  # intake below Vou: no primary airflow can help, only more intake
    below = np.flatnonzero(~(f.evz >= needed * (1 - 1e-9)))
    if below.size == 0:
        return fixes
    shared = _shared(trail, "Ev_needed")
    ep = np.array([ctxs[i].zone.ep or 1.0 for i in below])
    er = np.array([ctxs[i].zone.er or 0.0 for i in below])
    vpz_min = np.atleast_1d(eff.minimum_primary_airflow(
        f.voz[below], trail.value("Xs"), needed, ep, er, np.array(
            [zones[i].trail.steps["Ez"].value for i in below]))).tolist()
    for k, i in enumerate(below.tolist()):
        ctx, z = ctxs[i], zones[i]
        zt = z.trail
        zt.steps["Ev_needed"] = shared
        formula = ("{Voz} / (1 + {Xs} − {Ev_needed})" if ctx.zone.ep is None else
                   "{Voz}·{Ep}·{Fc} / ({Fa}·(1 − {Ev_needed}) + {Xs}·{Fb})")
        zt.add("Vpz_min", vpz_min[k], "airflow", note="least Vpz for Evz ≥ Ev_needed, Xs held",
               formula=formula)
        if math.isinf(vpz_min[k]):
            text = "no primary airflow reaches it at this intake; raise the system intake"
            fixes.append(f"{z.id} (no Vpz suffices)")
        else:
            amount = formatting.amount(vpz_min[k], 'airflow', emitter.units)
            text = f"raise its primary airflow to at least {amount}"
            fixes.append(f"{z.id} ≥ {amount}")
        emitter.emit(
            "zone-limits-ev", ctx.subject,
            f"Evz {zt.value('Evz'):.3f} is below the {needed:.3f} the scheduled intake needs; "
            + text, locate(ctx.path + ("primary_airflow",)),
            required=Amount(vpz_min[k], "airflow") if not math.isinf(vpz_min[k]) else None,
            provided=Amount(zt.value("Vpz"), "airflow"), system=system.id, zone=z.id)
    return fixes


def multiple_zone(system: System, ctxs: list[ZoneContext], zones: list[ZoneResult],
                  result: SystemResult, pack: RulePack, emitter: Emitter, where: Location,
                  locate) -> None:
    """Multiple-zone recirculating system: D, Vou, Ev, Vot (Section 6.2.5, Appendix A), every
    figure from :func:`airgate.procedures.multizone.multiple_zone_figures` in one pass over the
    system's zones, recorded in the system's and the zones' trails."""
    method_name = ev_method(pack, system)
    method = pack.methods[method_name]
    f = mz.multiple_zone_figures(**core_inputs(system, [c.zone for c in ctxs], zones, method))
    f = _Figures(f, [c.zone.primary_airflow or 0.0 for c in ctxs], zones)
    trail = result.trail
    _population(system, f, len(zones), trail, pack, emitter, result.location)
    trail.add("Σ(Rp·Pz)", float(f.sum_rp_pz[0]), "airflow",
              note="people component summed over the zones")
    trail.add("Σ(Ra·Az)", float(f.sum_ra_az[0]), "airflow",
              note="area component summed over the zones")
    trail.add("Vou", float(f.vou[0]), "airflow", formula="{D}·{Σ(Rp·Pz)} + {Σ(Ra·Az)}",
              source=pack.cite("uncorrected_intake"))
    _primary_airflows(system, ctxs, zones, f, trail, pack, emitter, locate)
    if isinstance(method, SimplifiedEv):
        _vav_minimum(system, ctxs, zones, f, method, emitter, locate)
    ev, critical = _ev(system, ctxs, zones, f, trail, method_name, pack)
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
        delivered.multiple_zone(result, pack, f)
        return
    trail.add("Vot", float(f.vot[0]), "airflow", formula="{Vou} / {Ev}",
              source=pack.cite("multiple_zone_intake"))
    advice = ""
    if (system.outdoor_air < trail.value("Vot") * (1 - 1e-9) and "Xs" in trail
            and f.from_zones[0]):
        trail.add("Vot_design", system.outdoor_air, "airflow", origin="schedule")
        fixes = _limiting_zones(system, ctxs, zones, f, trail, emitter, locate)
        if fixes:
            advice = "or raise the primary airflow of zone " + "; ".join(fixes)
    need = formatting.amount(trail.value("Vot"), "airflow", emitter.units)
    intake(trail, system, result, emitter, where,
           advice=f"raise the intake to at least {need}" + (f", {advice}" if advice else ""))
    delivered.multiple_zone(result, pack, f)


class _Figures:
    """The core's figures of one system, with its zones' Vpz as floats (0: none scheduled)."""

    def __init__(self, figures: mz.MultipleZoneFigures, vpz: list[float],
                 zones: list[ZoneResult]) -> None:
        self.__dict__.update(figures._asdict())
        self.vpz_list = [float(v) for v in vpz]
        self.zones = zones


def ev_method(pack: RulePack, system: System) -> str:
    """The ventilation efficiency method: the schedule's, or the pack's default."""
    return system.ventilation_efficiency or pack.default_method


def _inputs(loaded: LoadedSchedule, pack: RulePack, i: int) -> list[AirgateError]:
    """The pack must allow the system's Ev method, and the detailed and table methods need
    every zone's primary airflow."""
    system = loaded.model.systems[i]
    name = ev_method(pack, system)
    if name not in pack.methods:
        gone = pack.retirement("ventilation_efficiency", name) if name else None
        what = (f"rule pack {pack.id} has no procedure for multiple-zone systems" if not pack.methods
                else f"rule pack {pack.id} does not allow the '{name}' ventilation efficiency "
                "method" + (f"; it was {gone.text()}" if gone else ""))
        at = "ventilation_efficiency" if system.ventilation_efficiency else "kind"
        return [loaded.error(what, ("systems", i, at), allowed=sorted(pack.methods))]
    if name == "simplified":
        return []
    names = conditions.names(system)
    return [
        loaded.error(f"the {name} Ev method needs primary_airflow (Vpz) for every zone; "
                     f"zone '{zone.id}' gives none" + (f" at condition '{c}'" if c else ""),
                     conditions.keyed(("systems", i, "zones", j, "primary_airflow"), c),
                     hint="add primary_airflow, or use ventilation_efficiency: simplified if "
                     "the pack allows it")
        for j, zone in enumerate(system.zones)
        if zone.primary_airflow is None or isinstance(zone.primary_airflow, dict)  # else stated
        for c in names if at_condition(zone.primary_airflow, c) is None
    ]


def _ev_needed(result: SystemResult) -> float | None:
    """The Ev the scheduled intake needs, Vou / Vot_design; None where zones cannot help."""
    t = result.trail
    if "Vou" not in t or not t.value("Vot_design") > 0:
        return None
    needed = t.value("Vou") / t.value("Vot_design")
    return needed if needed <= 1.0 else None  # above 1 only more intake helps


def _system_checks(system: System, result: SystemResult) -> Iterator[tuple]:
    yield "ventilation-efficiency-positive", (), None, None
    yield "diversity-above-one", (), None, None


def _zone_checks(system: System, z: ZoneResult, result: SystemResult,
                 pack: RulePack) -> Iterator[tuple]:
    zt = z.trail
    if "Vpz" in zt:
        yield ("zone-primary-airflow", ("primary_airflow",), Amount(zt.value("Voz"), "airflow"),
               Amount(zt.value("Vpz"), "airflow"))
    needed = _ev_needed(result)
    if "Evz" in zt and needed is not None and not math.isinf(result.trail.value("Vot")):
        yield ("zone-limits-ev", ("primary_airflow",), Amount(needed, "fraction"),
               Amount(zt.value("Evz"), "fraction"))
    ev_method = pack.methods.get(result.method or "")
    if (isinstance(ev_method, SimplifiedEv) and ev_method.vav_minimum_primary_ratio is not None
            and system.variable_air_volume):
        required = Amount(ev_method.vav_minimum_primary_ratio * zt.value("Voz"), "airflow")
        if "Vpz" in zt:
            yield ("simplified-vav-minimum", ("primary_airflow",), required,
                   Amount(zt.value("Vpz"), "airflow"))
        else:
            yield "simplified-vav-minimum", (), required, None


KIND = SystemKind(
    name="multiple-zone", evaluate=multiple_zone, check_inputs=_inputs, coupled=True,
    system_fields=frozenset({"population", "ventilation_efficiency", "supply_airflow"}),
    zone_fields=frozenset({"primary_airflow", "ep", "er"}),
    system_checks=_system_checks, zone_checks=_zone_checks,
    summary="recirculating, several zones: Vot = Vou / Ev")
