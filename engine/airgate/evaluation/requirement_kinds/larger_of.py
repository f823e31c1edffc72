"""``larger-of``: the zone's outdoor airflow is the larger of the procedure's figure and the pack's
(a per-person floor, a per-area minimum), compared at Voz (default) or Vbz.

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
    modified,
    occupants,
)
from airgate.models.requirements import Requirement
from airgate.models.rules import OccupancyCategory


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


BEHAVIOUR = Behaviour(evaluate=modified, adjust=adjust)
