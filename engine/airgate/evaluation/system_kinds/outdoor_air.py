"""``outdoor-air``: a 100 % outdoor-air system, ``Vot = ΣVoz``, each zone given its own Voz."""

from __future__ import annotations

from collections.abc import Iterator

import numpy as np

from airgate import formatting
from airgate.evaluation import delivered
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Amount, Location
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.system_kinds.common import SystemKind
from airgate.evaluation.systems import intake
from airgate.evaluation.zones import ZoneContext
from airgate.models.rules import RulePack
from airgate.models.schedule import System


def outdoor_air(system: System, ctxs: list[ZoneContext], zones: list[ZoneResult],
                result: SystemResult, pack: RulePack, emitter: Emitter, where: Location,
                locate) -> None:
    """100 % outdoor-air system: ``Vot = ΣVoz``; each zone gets its Voz (Section 6.2.4)."""
    trail = result.trail
    voz = [z.trail.value("Voz") for z in zones]
    trail.add("ΣVoz", float(np.sum(voz)), "airflow", note=f"sum over {len(zones)} zones")
    trail.add("Vot", trail.value("ΣVoz"), "airflow", formula="{ΣVoz}",
              source=pack.cite("outdoor_air_system_intake"))
    scheduled = 0.0
    for ctx, z in zip(ctxs, zones):
        if ctx.zone.outdoor_air is None:
            continue
        scheduled += ctx.zone.outdoor_air
        z.trail.add("Voz_design", ctx.zone.outdoor_air, "airflow", origin="schedule",
                    note="outdoor air scheduled to the zone")
        emitter.compare("zone-outdoor-air", ctx.subject, "zone outdoor air",
                        z.trail.value("Voz"), ctx.zone.outdoor_air, "airflow",
                        locate(ctx.path + ("outdoor_air",)), system=system.id, zone=z.id)
    intake(trail, system, result, emitter, where)
    delivered.outdoor_air(result, pack)
    if scheduled > system.outdoor_air * (1 + 1e-9):
        emitter.emit("zone-air-sum", system.id,
                     f"the zones are scheduled {formatting.amount(scheduled, 'airflow', emitter.units)}"
                     f" of outdoor air, more than the system intake of "
                     f"{formatting.amount(system.outdoor_air, 'airflow', emitter.units)}",
                     where, system=system.id)




def _zone_outdoor_air(system: System, zone) -> tuple[float, str] | None:
    if zone.outdoor_air is None:
        return None
    return zone.outdoor_air, "outdoor air scheduled to the zone"


def _system_checks(system: System, result: SystemResult) -> Iterator[tuple]:
    yield "zone-air-sum", (), None, None


def _zone_checks(system: System, z: ZoneResult, result: SystemResult,
                 pack: RulePack) -> Iterator[tuple]:
    zt = z.trail
    if "Voz_design" in zt:
        yield ("zone-outdoor-air", ("outdoor_air",), Amount(zt.value("Voz"), "airflow"),
               Amount(zt.value("Voz_design"), "airflow"))


KIND = SystemKind(
    name="outdoor-air", evaluate=outdoor_air, zone_fields=frozenset({"outdoor_air"}),
    zone_outdoor_air=_zone_outdoor_air, system_checks=_system_checks, zone_checks=_zone_checks,
    summary="100 % outdoor air: Vot = ΣVoz")
