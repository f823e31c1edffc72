"""The IAQ procedure (ANSI/ASHRAE 62.1-2019 Section 6.3): outdoor air by mass balance.

A system with ``procedure: iaqp`` is held to the design limits of its design compounds — the
schedule's contaminants with a ``limit`` — instead of the rate procedure's minimums: every zone
passes when the breathing-zone steady state of every design compound, at the scheduled outdoor
air and crediting filtration, air cleaners, deposition and inactivation as the contaminant
analysis does, is at or below its limit (check ``iaqp-concentration``); the least outdoor air
that meets every limit is solved from the same balance, per zone for single-path systems and
for the system as a whole, and the scheduled intake is compared with it (``iaqp-intake``).
Both are checks of the pack (basis ``code``): the requirement is the standard's, the limits and
their sources (``limit_source``) the design's, as Section 6.3 asks the designer to name them.

The breathing-zone concentration counts each zone's emission as ``E/Ez``, the form of the
standard's mass-balance equations for single-zone systems (its appendix; the form entered from
memory); on a multiple-zone system the same form is applied to the coupled balance of
:mod:`airgate.procedures.coupled`, which then also counts ``E/Ez`` in the return air (on the
safe side). The rate procedure's own figures stay in the trail for reference (``Vot_vrp``).
"""

from __future__ import annotations

import math

import numpy as np

from airgate import formatting
from airgate.errors import AirgateError
from airgate.evaluation.checks import Emitter
from airgate.evaluation.contaminants import limit_note, per_second
from airgate.evaluation.findings import Location
from airgate.evaluation.report import SystemResult
from airgate.evaluation.system_kinds import kind_of
from airgate.evaluation.trail import Trail
from airgate.evaluation.zones import ZoneContext
from airgate.models.equipment import Contaminant
from airgate.models.loaded import LoadedSchedule
from airgate.models.rules import RulePack
from airgate.models.schedule import Schedule, System
from airgate.procedures import coupled, dilution

IAQP = "iaqp"
#: the checks of this path, which a pack must enable for a schedule to use it
CHECKS = ("iaqp-concentration", "iaqp-intake")
#: the rate procedure's minimums, which do not apply to a system on this path
RATE_CHECKS = frozenset({"system-intake", "zone-outdoor-air", "zone-primary-airflow",
                         "zone-limits-ev", "simplified-vav-minimum",
                         "ventilation-efficiency-positive"})
FORM = ("breathing-zone form of the IAQ procedure's mass-balance equations, "
        "Cbz = (N + Ez·Vo·(1 − Ef)·Co) / (Ez·(Vo + R·Vr·Ef)) with R = 1, extended by the "
        "in-room removals (form from memory)")


def on_path(system: System) -> bool:
    """The system follows the IAQ procedure."""
    return system.procedure == IAQP


def design_compounds(schedule: Schedule) -> list[tuple[int, Contaminant]]:
    """The declared contaminants with a limit, with their index in ``contaminants``."""
    return [(i, c) for i, c in enumerate(schedule.contaminants) if c.limit is not None]


def check_pack(loaded: LoadedSchedule, pack: RulePack) -> list[AirgateError]:
    """A system on this path under a pack without its checks is an input error."""
    missing = [c for c in CHECKS if c not in pack.checks]
    if not missing:
        return []
    return [loaded.error(f"rule pack {pack.id} does not enable the IAQ procedure (its checks "
                         f"{', '.join(missing)} are not in the pack)", ("systems", i, "procedure"),
                         hint="use an ANSI/ASHRAE 62.1 pack, or procedure: vrp")
            for i, s in enumerate(loaded.model.systems) if on_path(s)]


def _inputs(t: Trail) -> dict:
    return dict(cadr=t.value("CADR"), k_deposition=t.value("k_dep"),
                k_inactivation=t.value("k_inact"))


def _breathing_zone(t: Trail, z, c: Contaminant) -> None:
    t.add("C_out", c.outdoor, "concentration", origin="schedule", note="outdoor concentration")
    t.copy_from(z.trail, "Ez")


def _exceeds(t: Trail, ctx: ZoneContext, c: Contaminant, system: System,
             emitter: Emitter) -> None:
    c_bz, lim = t.value("C_bz"), c.limit
    if c_bz <= lim * (1 + 1e-9):
        return
    shown = "no steady state (nothing removes it)" if math.isinf(c_bz) else f"{c_bz:.4g}"
    emitter.emit("iaqp-concentration", ctx.subject,
                 f"{c.label or c.id}: {shown} {c.unit}/m³ in the breathing zone at steady state "
                 f"is above its design limit of {lim:g} {c.unit}/m³ "
                 f"({c.limit_source or 'no limit_source stated'}); raise the outdoor air to "
                 f"the zone, or credit more filtration or air cleaning",
                 ctx.location, system=system.id, zone=ctx.zone.id)


def _single(system: System, ctxs, result: SystemResult, schedule: Schedule,
            emitter: Emitter, src: str) -> None:
    """Single-path systems: each zone's breathing-zone concentration and least outdoor air."""
    supply = 0.0
    if "supply_airflow" in kind_of(system).system_fields and system.supply_airflow is not None:
        supply = system.supply_airflow
    for ctx, z in zip(ctxs, result.zones):
        need, governs = 0.0, ""
        for _, c in design_compounds(schedule):
            t = z.contaminants.get(c.id)
            if t is None:  # nothing removes it at the scheduled air: no steady state
                t = z.contaminants[c.id] = Trail()
                t.add("C_limit", c.limit, "concentration", origin="schedule",
                      note=limit_note(c, True))
                t.add("C_bz", math.inf, "concentration", note="no removal: no steady state")
                _exceeds(t, ctx, c, system, emitter)
                need, governs = math.inf, c.id
                continue
            _breathing_zone(t, z, c)
            gen = per_second(t.value("E"))
            c_bz = dilution.steady_state_concentration(
                gen / t.value("Ez"), t.value("V"), t.value("Q_oa"), c.outdoor,
                outdoor_filter_efficiency=t.value("eta"), recirc_airflow=t.value("Q_rec"),
                recirc_efficiency=t.value("eta"), **_inputs(t))
            t.add("C_bz", float(c_bz), "concentration", source=f"{src}; {FORM}",
                  note=f"{c.unit}/m³ in the breathing zone at steady state (emission / Ez)")
            q = dilution.required_outdoor_airflow(
                c.limit, gen, t.value("V"), c.outdoor, t.value("eta"), supply, t.value("eta"),
                ez=t.value("Ez"), **_inputs(t))
            t.add("Q_oa_min", float(q), "airflow", source=f"{src}; {FORM}, solved for Vo",
                  note="least outdoor air to the zone that holds C_bz at C_limit"
                  + (f" (supply {formatting.amount(supply, 'airflow', emitter.units)}, the rest "
                     "recirculated through the filter)" if supply else ""))
            _exceeds(t, ctx, c, system, emitter)
            if float(q) > need or not governs:
                need, governs = float(q), c.id
        z.trail.add("Voz_iaqp", need, "airflow", source=src,
                    note=f"least zone outdoor air meeting every design limit (governed by "
                         f"{governs})")
    total = sum(z.trail.value("Voz_iaqp") for z in result.zones)
    many = len(result.zones) > 1
    if many:
        result.trail.add("ΣVoz_iaqp", total, "airflow", note="sum over the zones")
    result.trail.add("Vot", total, "airflow", formula="{ΣVoz_iaqp}" if many else "",
                     source=src, note="least intake meeting every design limit (IAQ procedure)")


def _coupled(system: System, ctxs, result: SystemResult, schedule: Schedule,
             emitter: Emitter, src: str) -> None:
    """A multiple-zone system: the coupled balance, and the least intake for all zones."""
    zones = result.zones
    vpz = np.array([z.trail.value("Vpz") for z in zones])
    ez = np.array([z.trail.value("Ez") for z in zones])
    need, governs = 0.0, ""
    for _, c in design_compounds(schedule):
        trails = [z.contaminants.get(c.id) for z in zones]
        if any(t is None for t in trails):  # the coupled analysis did not run
            result.notes.append(f"the IAQ procedure's balance of {c.id} could not be solved: "
                                "a zone lacks its volume or primary airflow")
            need, governs = math.inf, c.id
            continue
        for t, z in zip(trails, zones):
            _breathing_zone(t, z, c)
        gen = per_second(np.array([t.value("E") for t in trails]))
        vol = np.array([t.value("V") for t in trails])
        kw = dict(outdoor_concentration=c.outdoor, outdoor_filter_efficiency=trails[0].value("eta"),
                  recirc_filter_efficiency=trails[0].value("eta"),
                  cadr=np.array([t.value("CADR") for t in trails]),
                  k_deposition=np.array([t.value("k_dep") for t in trails]),
                  k_inactivation=np.array([t.value("k_inact") for t in trails]))
        steady = coupled.coupled_steady_state(gen / ez, vol, vpz, system.outdoor_air, **kw)
        for t, ctx, cz in zip(trails, ctxs, steady.zone):
            t.add("C_bz", float(cz), "concentration", source=f"{src}; {FORM}",
                  note=f"{c.unit}/m³ in the breathing zone at steady state (emission / Ez; "
                       "zones coupled through the return air)")
            _exceeds(t, ctx, c, system, emitter)
        vot = coupled.coupled_required_intake(np.full(len(zones), c.limit), gen, vol, vpz,
                                              ez=ez, **kw)
        result.trail.add(f"Vot_{c.id}", vot, "airflow", source=f"{src}; {FORM}",
                         note=f"least intake holding every zone's {c.id} at its limit "
                              "(coupled balance, solved by bisection)")
        if vot > need or not governs:
            need, governs = vot, c.id
    result.trail.add("Vot", need, "airflow", source=src,
                     note=f"least intake meeting every design limit (IAQ procedure; governed "
                          f"by {governs})")


def apply(system: System, ctxs: list[ZoneContext], result: SystemResult, schedule: Schedule,
          emitter: Emitter, pack: RulePack, where: Location, first: int) -> None:
    """Put ``system`` on the IAQ procedure: drop the rate procedure's minimums among the
    findings emitted since index ``first``, keep its ``Vot`` as ``Vot_vrp``, and evaluate the
    mass balance's concentrations, least outdoor air and intake check."""
    if not on_path(system):
        return
    result.procedure = IAQP
    emitter.findings[first:] = [f for f in emitter.findings[first:]
                                if not (f.rule in RATE_CHECKS and f.system == system.id)]
    t = result.trail
    vrp = t.steps.pop("Vot")
    t.add("Vot_vrp", vrp.value, "airflow", source=vrp.source,
          note="the rate procedure's intake (Section 6.2), for reference only: it does not "
               "apply on the IAQ procedure path")
    src = pack.checks["iaqp-intake"].source.cite()
    (_coupled if kind_of(system).coupled else _single)(system, ctxs, result, schedule,
                                                       emitter, src)
    vot = t.value("Vot")
    advice = ("no intake meets every design limit: credit filtration or air cleaning, or "
              "lower the emissions" if math.isinf(vot) else
              f"raise the intake to at least {formatting.amount(vot, 'airflow', emitter.units)}")
    emitter.compare("iaqp-intake", system.id, "outdoor-air intake (IAQ procedure)", vot,
                    system.outdoor_air, "airflow", where, system=system.id, advice=advice)
