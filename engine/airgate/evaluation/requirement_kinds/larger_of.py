"""``larger-of``: the zone's outdoor airflow is the larger of the procedure's figure and the pack's
(a per-person floor, a per-area minimum, a number of air changes per hour of the zone's volume),
compared at Voz (default) or Vbz.

The governing figure is carried by effective rates, Rp·Pz + Ra·Az = the larger figure, so the
zone and system calculations that follow (Voz, ΣVoz, Vou, Zpz, Ev, Vot) all use it. The trail
cites the requirement for each changed value.
"""

from __future__ import annotations

import dataclasses
from typing import Any

from airgate.evaluation.requirement_kinds.common import (
    TOL,
    Behaviour,
    Effect,
    Target,
    modified,
    occupants,
)
from airgate.models.requirements import Requirement
from airgate.models.rules import OccupancyCategory
from airgate.procedures.numeric import PER_HOUR


def zone_volume(zone: Any) -> float | None:
    """The zone's volume as stated, else height × floor area, else None [m³]."""
    if zone.volume is not None:
        return zone.volume
    return None if zone.height is None else zone.height * zone.area


def adjust(run: Any, req: Requirement, system: Any, zone: Any, cat: OccupancyCategory, ez: Any):
    pz, az = occupants(zone, cat), zone.area
    k = ez.ez if req.at == "Voz" else 1.0  # a figure for Voz is one for Vbz times Ez
    shown = req.at
    figures: list[tuple[str, float, tuple[float, float]]] = []
    if not req.instead_of_sum:
        figures.append(("Vbz / Ez" if req.at == "Voz" else "Rp·Pz + Ra·Az",
                        cat.rp * pz + cat.ra * az, (cat.rp, cat.ra)))
    rp_unit = "cfm/person" if run.pack.units == "IP" else "L/s·person"
    ra_unit = "cfm/ft²" if run.pack.units == "IP" else "L/s·m²"
    if "per_person" in req.params:
        figures.append((f"{req.printed['per_person']:g} {rp_unit} × Pz",
                        req.params["per_person"] * k * pz, (req.params["per_person"] * k, 0.0)))
    if "per_area" in req.params:
        figures.append((f"{req.printed['per_area']:g} {ra_unit} × Az",
                        req.params["per_area"] * k * az, (0.0, req.params["per_area"] * k)))
    volume = zone_volume(zone)
    if "air_changes" in req.params and volume is not None and az > 0:
        # n air changes per hour of V [m³] are n·V/3.6 L/s, carried as an area rate over Az
        flow = req.params["air_changes"] * volume / PER_HOUR
        figures.append((f"{req.printed['air_changes']:g} /h × V", flow * k, (0.0, flow * k / az)))
    if len(figures) == 0:
        return cat, ez
    best = figures[0]
    for f in figures[1:]:
        if f[1] > best[1] * (1 + TOL) + TOL:
            best = f
    if not req.instead_of_sum and best is figures[0]:
        return cat, ez
    listing = ", ".join(f"{label} = {run.amount(value / k, 'airflow')}"
                        for label, value, _ in figures)
    text = (f"{req.cite()}: requirement {req.id}, {shown} is the larger of {listing}; "
            f"{best[0]} governs (table Rp {run.amount(cat.rp, 'airflow_per_person')}, "
            f"Ra {run.amount(cat.ra, 'airflow_per_area')})")
    run.effects.setdefault((system.id, zone.id), []).append(Effect(
        req, f"{shown} is the larger of {listing}: {best[0]} governs"))
    rp, ra = best[2]
    return dataclasses.replace(cat, rp=rp, ra=ra, cited={**cat.cited, "Rp": text, "Ra": text}), ez


def evaluate(run: Any, req: Requirement, t: Target) -> None:
    """As every modifying kind (:func:`modified`); not evaluated where a figure of air changes
    needs a volume the zone does not state."""
    if "air_changes" in req.params and zone_volume(t.ctx.zone) is None:
        run.missing(req, t.subject, f"{t.subject} states no height or volume, so "
                    f"{req.printed['air_changes']:g} air changes per hour cannot be worked out",
                    t.where, t.emitter, system=t.system.id, zone=t.zone_id)
        return
    modified(run, req, t)


BEHAVIOUR = Behaviour(evaluate=evaluate, adjust=adjust)
