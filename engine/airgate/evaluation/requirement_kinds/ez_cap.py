"""``ez-cap``: the zone air distribution effectiveness Ez a zone may claim is at most ``max_ez``."""

from __future__ import annotations

import dataclasses
from typing import Any

from airgate.evaluation.requirement_kinds.common import TOL, Behaviour, Effect, modified
from airgate.models.requirements import Requirement
from airgate.models.rules import OccupancyCategory


def adjust(run: Any, req: Requirement, system: Any, zone: Any, cat: OccupancyCategory, ez: Any):
    cap = req.params["max_ez"]
    if ez.ez <= cap + TOL:
        return cat, ez
    note = (f"{ez.note}; capped at {cap:.2f} by requirement {req.id} "
            f"(Ez {ez.ez:.2f} would otherwise apply)")
    run.effects.setdefault((system.id, zone.id), []).append(Effect(
        req, f"Ez {ez.ez:.2f} ({', '.join(ez.rows) or ez.origin}) is capped at {cap:.2f}"))
    return cat, dataclasses.replace(ez, ez=cap, note=note, source=req.cite())


BEHAVIOUR = Behaviour(evaluate=modified, adjust=adjust)
