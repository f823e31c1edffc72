"""``single-zone``: one air handler serving one zone, ``Vot = Voz``."""

from __future__ import annotations

from airgate.evaluation import delivered
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Location
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.system_kinds.common import SystemKind
from airgate.evaluation.systems import intake
from airgate.evaluation.zones import ZoneContext
from airgate.models.rules import RulePack
from airgate.models.schedule import System


def single_zone(system: System, ctxs: list[ZoneContext], zones: list[ZoneResult],
                result: SystemResult, pack: RulePack, emitter: Emitter, where: Location,
                locate=None) -> None:
    """Single-zone system: ``Vot = Voz`` (ANSI/ASHRAE 62.1-2019 Section 6.2.3)."""
    trail = result.trail
    trail.copy_from(zones[0].trail, "Voz")
    trail.add("Vot", trail.value("Voz"), "airflow", formula="{Voz}",
              source=pack.cite("single_zone_intake"))
    intake(trail, system, result, emitter, where)
    delivered.single_zone(result, pack)




def _zone_outdoor_air(system: System, zone) -> tuple[float, str]:
    return system.outdoor_air, "the system's scheduled outdoor-air intake"


KIND = SystemKind(
    name="single-zone", evaluate=single_zone,
    system_fields=frozenset({"supply_airflow"}), zone_outdoor_air=_zone_outdoor_air,
    summary="one air handler, one zone: Vot = Voz")
