"""The outdoor air each zone receives at the scheduled intake: the trail step ``Voz_delivered``.

One figure per zone, in the procedure's own measure, so that every report shows the same number
and a zone's figure is below its Voz exactly when the schedule is short for that zone:

* single-zone system (ANSI/ASHRAE 62.1-2019 Section 6.2.3): the zone is the system, so it
  receives the whole scheduled intake, ``Voz_delivered = Vot_design``;
* 100 % outdoor-air system (Section 6.2.4): the outdoor air scheduled to the zone; where the
  schedule gives none, the intake shared in proportion to Voz, ``Vot_design·Voz / ΣVoz``;
* multiple-zone recirculating system with zone ventilation efficiencies (Normative Appendix A):
  the zone is ventilated enough when ``Evz ≥ Vou / Vot_design``. Solving that condition for the
  zone outdoor airflow gives the Voz the scheduled intake satisfies in the zone. For a single
  supply path, ``Evz = 1 + Xs − Zpz`` with ``Zpz = Voz/Vpz``, so
  ``Voz_delivered = Vpz·(1 + Xs − Vou/Vot_design)``: the zone's primary airflow times the outdoor
  air fraction its supply carries once every zone has taken its share (Xs = Vou/Vps). With
  secondary recirculation, ``Evz = (Fa + Xs·Fb − Zpz·Ep·Fc)/Fa`` gives
  ``Voz_delivered = Vpz·(Fa·(1 − Vou/Vot_design) + Xs·Fb) / (Ep·Fc)``. Derived from the
  Appendix A equations; the least primary airflow of ``zone-limits-ev`` is the same condition
  solved for Vpz instead;
* multiple-zone system where Ev is one figure for the system (the simplified procedure, or the
  Ev table): the procedure judges only the intake, so each zone receives its Voz in the ratio of
  the scheduled to the required intake, ``Voz·Vot_design / Vot`` (Section 6.2.5, ``Vot = Vou/Ev``).

Units: L/s (internal).
"""

from __future__ import annotations

import math

import numpy as np

from airgate.evaluation.report import SystemResult
from airgate.evaluation.trail import Step, Trail, shared_text
from airgate.models.rules import RulePack
from airgate.procedures import multizone

SYMBOL = "Voz_delivered"
_NOTE = "outdoor air the zone receives at the scheduled intake"


def single_zone(result: SystemResult, pack: RulePack) -> None:
    """Single-zone system: the zone receives the whole scheduled intake."""
    zt = result.zones[0].trail
    zt.copy_from(result.trail, "Vot_design")
    zt.add(SYMBOL, zt.value("Vot_design"), "airflow", source=pack.cite("single_zone_intake"),
           note=f"{_NOTE}: Vot_design, all of it (the zone is the system)")


def outdoor_air(result: SystemResult, pack: RulePack) -> None:
    """100 % outdoor-air system: the air scheduled to the zone, or its share of the intake."""
    st = result.trail
    total = st.value("ΣVoz")
    for z in result.zones:
        zt = z.trail
        if "Voz_design" in zt:
            zt.add(SYMBOL, zt.value("Voz_design"), "airflow",
                   source=pack.cite("outdoor_air_system_intake"),
                   note=f"{_NOTE}: Voz_design, the outdoor air scheduled to the zone")
            continue
        zt.copy_from(st, "Vot_design")
        zt.copy_from(st, "ΣVoz")
        share = zt.value("Vot_design") * zt.value("Voz") / total if total > 0 else 0.0
        zt.add(SYMBOL, share, "airflow",
               formula="{Vot_design}·{Voz} / {ΣVoz}" if total > 0 else "",
               source=pack.cite("outdoor_air_system_intake"), origin="computed",
               note=f"{_NOTE}: not scheduled per zone, so the intake is shared in proportion "
                    "to Voz (assumed)" if total > 0 else
                    f"{_NOTE}: no zone requires outdoor air, so none is shared out")


def _appendix_a(zones, st: Trail, pack: RulePack, f) -> None:
    """Voz the scheduled intake satisfies in each zone with its own Evz (Appendix A, derived):
    :func:`airgate.procedures.multizone.delivered_by_zone_ev` over the zones ``zones`` (indices
    into the system's zones, each with Evz and Vpz in its trail)."""
    design = st.value("Vot_design")
    trails = [f.zones[i].trail.steps for i in zones]
    secondary = ["Fa" in steps for steps in trails]
    index = np.asarray(zones, dtype=int)
    values = np.atleast_1d(multizone.delivered_by_zone_ev(
        np.asarray(f.vpz_list)[index], st.value("Xs"), st.value("Vou"), design,
        np.array([steps["Ep"].value if s else 1.0 for steps, s in zip(trails, secondary)])
        if any(secondary) else 1.0,
        f.fa[index], f.fb[index], f.fc[index], np.array(secondary, dtype=bool))).tolist()
    shared = [_copy(st, s) for s in ("Vou", "Vot_design", "Xs")]
    why = ("derived from Appendix A: Evz ≥ Vou/Vot_design solved for the zone outdoor airflow")
    cite = {False: pack.cite("detailed_ev"), True: pack.cite("detailed_ev_secondary")}
    note = shared_text(f"{_NOTE}; {why}")
    none_left = shared_text(note + "; the intake is below what the other zones take, so none "
                            "is left for this zone (shown as 0)")
    for steps, sec, value in zip(trails, secondary, values):
        steps["Vou"], steps["Vot_design"] = shared[0], shared[1]
        if "Xs" not in steps:
            steps["Xs"] = shared[2]
        if design <= 0:
            steps[SYMBOL] = Step(SYMBOL, 0.0, "airflow", "", cite[sec],
                                 f"{_NOTE}: no intake is scheduled, so the zone receives none",
                                 "computed")
            continue
        steps[SYMBOL] = _step(Step, (SYMBOL, value, "airflow", _SECONDARY if sec else _SINGLE,
                                     cite[sec], note if value > 0 else none_left, "computed"))


#: a :class:`Step` made from its fields in order, without the named tuple's constructor written
#: in Python (half the time; one per zone)
_step = tuple.__new__
_SINGLE = "{Vpz}·(1 + {Xs} − {Vou} / {Vot_design})"
_SECONDARY = "{Vpz}·({Fa}·(1 − {Vou} / {Vot_design}) + {Xs}·{Fb}) / ({Ep}·{Fc})"


def _copy(trail: Trail, symbol: str) -> Step | None:
    """A system step as a zone's trail shows it (:meth:`Trail.copy_from`), made once."""
    step = trail.steps.get(symbol)
    if step is None:
        return None
    return Step(step.symbol, step.value, step.kind, "", step.source,
                step.note or "system value", "system")


def multiple_zone(result: SystemResult, pack: RulePack, f) -> None:
    """Multiple-zone recirculating system: by Evz where the zone has one, else by Vot;
    ``f``: the system's figures (:func:`airgate.evaluation.system_kinds.multiple_zone.figures`,
    with its zones)."""
    st = result.trail
    vot = st.value("Vot")
    by_zone, by_system = [], []
    has_xs = "Xs" in st
    for i, z in enumerate(result.zones):
        steps = z.trail.steps
        (by_zone if "Evz" in steps and "Vpz" in steps and has_xs else by_system).append(i)
    if by_zone:
        _appendix_a(by_zone, st, pack, f)
    if math.isinf(vot) or not by_system:
        return  # Ev ≤ 0 without zone efficiencies: no figure (the system trail says why)
    design = _copy(st, "Vot_design")
    required = _copy(st, "Vot")
    voz = [f.zones[i].trail.steps["Voz"].value for i in by_system]
    values = np.atleast_1d(multizone.delivered_by_system_ev(voz, design.value, vot)).tolist()
    if vot <= 0:
        note, formula, source = f"{_NOTE}: the system requires no outdoor air", "", ""
    else:
        note = (f"{_NOTE}: Ev is one figure for the system, so each zone receives its Voz "
                "in the ratio of the scheduled to the required intake")
        formula, source = "{Voz}·{Vot_design} / {Vot}", pack.cite("multiple_zone_intake")
    for k, i in enumerate(by_system):
        steps = f.zones[i].trail.steps
        steps["Vot_design"], steps["Vot"] = design, required
        steps[SYMBOL] = Step(SYMBOL, values[k], "airflow", formula, source, note, "computed")
