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

from airgate.evaluation.report import SystemResult
from airgate.evaluation.trail import Trail
from airgate.models.rules import RulePack

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


def multiple_zone(result: SystemResult, pack: RulePack) -> None:
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
