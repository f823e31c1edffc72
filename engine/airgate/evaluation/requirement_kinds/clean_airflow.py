"""``clean-airflow``: a zone's equivalent clean airflow per person at least ``per_person``.

The equivalent clean airflow (ECA) is the airflow of pathogen-free air that would remove an
infectious aerosol as fast as the zone's removal mechanisms together (ASHRAE 241-2023,
Section 3 definitions and Section 5, as a target per occupant by occupancy category). It is
not computed here: the contaminant analysis (:mod:`airgate.evaluation.contaminants`) already
breaks each zone's well-mixed balance into one equivalent clean airflow per mechanism (outdoor
air, the system filter on recirculated air, in-room air cleaners, deposition, inactivation;
:func:`airgate.procedures.losses.loss_breakdown`). The pack says which mechanisms it credits
(``credit``); this kind sums those for the schedule's infectious aerosol — each declared particle
contaminant counted in ``quanta`` — and divides by the zone population Pz. With several such
contaminants the least ECA governs. On a multiple-zone system the supply air's share is one
coupled figure (outdoor air and filtered recirculation together), credited when the pack credits
both. The figures go to the zone's trail for the pack (``ZoneResult.packs``).
"""

from __future__ import annotations

from typing import Any

from airgate.evaluation.findings import Amount
from airgate.evaluation.requirement_kinds.common import TOL, Behaviour, Target
from airgate.evaluation.trail import Trail
from airgate.models.requirements import Requirement

#: the mechanisms a pack may credit → (trail symbol of the contaminant analysis, what it is)
MECHANISMS: dict[str, tuple[str, str]] = {
    "outdoor_air": ("Qc_oa", "outdoor air"),
    "recirculation_filter": ("Qc_filter", "filtration of recirculated air"),
    "air_cleaner": ("Qc_cleaner", "in-room air cleaners"),
    "deposition": ("Qc_dep", "deposition"),
    "inactivation": ("Qc_inact", "inactivation"),
}
#: the coupled balance's supply-air share stands for these two together
SUPPLY = ("outdoor_air", "recirculation_filter")
AEROSOL_UNIT = "quanta"


def _aerosols(run: Any) -> list:
    return [c for c in run.loaded.model.contaminants
            if c.kind == "particle" and c.unit == AEROSOL_UNIT]


def _credited(req: Requirement, t: Trail) -> tuple[list[tuple[str, str, float]], str | None]:
    """The credited mechanisms of one contaminant trail as (symbol, what, L/s); or why not."""
    out = []
    credit = list(req.credit)
    if "Qc_supply" in t:  # a coupled multiple-zone balance
        if any(m in credit for m in SUPPLY):
            if not all(m in credit for m in SUPPLY):
                return [], ("on a multiple-zone system outdoor air and filtration act together "
                            "in the coupled balance; this pack credits only one of them")
            out.append(("Qc_supply", "supply air: outdoor air and filtered recirculation, "
                        "coupled", t.value("Qc_supply")))
        credit = [m for m in credit if m not in SUPPLY]
    for m in credit:
        symbol, what = MECHANISMS[m]
        if symbol not in t:
            return [], f"the contaminant analysis gives no {what} figure for the zone"
        out.append((symbol, what, t.value(symbol)))
    return out, None


def evaluate(run: Any, req: Requirement, t: Target) -> None:
    ctx, z, emitter = t.ctx, t.z, t.emitter
    sys_id, zone_id = t.system.id, ctx.zone.id
    aerosols = _aerosols(run)
    if not aerosols:
        run.missing(req, ctx.subject, "the schedule declares no infectious aerosol: add a "
                    "contaminant with kind: particle and unit: quanta, whose clean-airflow "
                    "breakdown the check reads", ctx.location, emitter, system=sys_id,
                    zone=zone_id)
        return
    pz = z.trail.value("Pz")
    best = None
    for c in aerosols:
        trail = z.contaminants.get(c.id)
        if trail is None:
            run.missing(req, ctx.subject, f"no clean-airflow breakdown of '{c.id}' for the zone "
                        "(it needs the zone's volume: state its height; and a system with a "
                        "mechanical outdoor-air intake)", ctx.location, emitter, system=sys_id,
                        zone=zone_id)
            return
        parts, why = _credited(req, trail)
        if why is not None:
            run.missing(req, ctx.subject, why, ctx.location, emitter, system=sys_id,
                        zone=zone_id)
            return
        total = sum(v for _, _, v in parts)
        if best is None or total < best[0]:
            best = (total, c, parts)
    total, c, parts = best
    need = req.params["per_person"]
    z.packs[run.pack.id] = _trail(run, req, c, parts, total, pz, need)
    if pz <= 0:  # no occupants: no per-person target to compare
        run.record(req, ctx.subject, "pass", emitter)
        return
    if total >= need * pz * (1 - TOL):
        run.record(req, ctx.subject, "pass", emitter, required=Amount(need, "airflow_per_person"),
                   provided=Amount(total / pz, "airflow_per_person"))
        return
    have = total / pz
    message = (f"{req.message}: equivalent clean airflow {run.amount(total, 'airflow')} for "
               f"{pz:g} people is {run.amount(have, 'airflow_per_person')}, below "
               f"{run.amount(need, 'airflow_per_person')} (credited: "
               f"{', '.join(what for _, what, _ in parts)}; aerosol '{c.id}')")
    run.record(req, ctx.subject, "fail", emitter, run.finding(
        req, ctx.subject, message, ctx.location, system=sys_id, zone=zone_id,
        required=Amount(need, "airflow_per_person"),
        provided=Amount(have, "airflow_per_person")))


def _trail(run: Any, req: Requirement, c: Any, parts: list, total: float, pz: float,
           need: float) -> Trail:
    t = Trail()
    for symbol, what, value in parts:
        t.add(symbol, value, "airflow", origin="system",
              note=f"equivalent clean airflow credited: {what} (contaminant '{c.id}')")
    t.add("ECA", total, "airflow", formula=" + ".join(f"{{{s}}}" for s, _, _ in parts),
          note=f"equivalent clean airflow credited by rule pack {run.pack.id}")
    t.add("Pz", pz, "people", origin="system", note="zone population")
    if pz > 0:
        t.add("ECA_pp", total / pz, "airflow_per_person", formula="{ECA}/{Pz}",
              note="equivalent clean airflow per person")
    t.add("ECAi", need, "airflow_per_person", origin="table", source=req.cite(),
          note=f"target of requirement {req.id} (rule pack {run.pack.id})")
    return t


BEHAVIOUR = Behaviour(evaluate=evaluate)
