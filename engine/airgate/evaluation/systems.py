"""What every system kind shares: the intake comparison and the air-class recirculation limits.

Each kind's own procedure is in :mod:`airgate.evaluation.system_kinds`.
"""

from __future__ import annotations

import math

from airgate import formatting

from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Location
from airgate.evaluation.report import SystemResult
from airgate.evaluation.trail import Trail
from airgate.evaluation.zones import ZoneContext
from airgate.models.schedule import System


def intake(trail: Trail, system: System, result: SystemResult, emitter: Emitter,
            where: Location, advice: str = "") -> None:
    """``Vot_design`` (the scheduled intake) in the trail, compared with the required ``Vot``;
    a short intake says how far to raise it (``advice`` replaces that where a kind says more)."""
    vot = trail.value("Vot")
    if not advice and math.isfinite(vot):
        advice = f"raise the intake to at least {formatting.amount(vot, 'airflow', emitter.units)}"
    trail.add("Vot_design", system.outdoor_air, "airflow", origin="schedule",
              note="scheduled minimum outdoor-air intake", source=where)
    emitter.compare("system-intake", system.id, "outdoor-air intake", trail.value("Vot"),
                    system.outdoor_air, "airflow", where, system=system.id, advice=advice)


def air_classes(system: System, ctxs: list[ZoneContext], emitter: Emitter, where: Location) -> None:
    """Recirculation limits by air class (ANSI/ASHRAE 62.1-2019 Section 5.16.3)."""
    if not system.is_recirculating:
        return
    multi = len(ctxs) > 1
    for ctx in ctxs:
        if ctx.air_class == 4 or (ctx.air_class == 3 and multi):
            limit = ("class 4 air must not be recirculated" if ctx.air_class == 4 else
                     "class 3 air may be recirculated only within its space of origin")
            emitter.emit("air-class-recirculation", ctx.subject,
                         f"zone {ctx.zone.id} ({ctx.category.label}) is air class {ctx.air_class} "
                         f"on recirculating system {system.id}: {limit}", ctx.location,
                         system=system.id, zone=ctx.zone.id)
    class2 = sorted({c.category.id for c in ctxs if c.air_class == 2})
    class1 = [c for c in ctxs if c.air_class == 1 and c.category.id not in class2]
    if class2 and class1:
        emitter.emit("air-class-mixing", system.id,
                     f"class 2 air ({', '.join(class2)}) is recirculated to class 1 zones "
                     f"({', '.join(sorted(c.zone.id for c in class1))}); allowed only where they "
                     "are of the same or similar use — confirm, or serve them separately",
                     where, system=system.id)
