"""``minimum-filter``: the system's filter is rated at least MERV ``merv``."""

from __future__ import annotations

from typing import Any

from airgate.evaluation.findings import Amount, Location
from airgate.evaluation.requirement_kinds.common import Behaviour, Target
from airgate.models.requirements import Requirement


def evaluate(run: Any, req: Requirement, t: Target) -> None:
    system, emitter = t.system, t.emitter
    has_filter = getattr(system, "filter", None) is not None
    merv = system.filter.merv if has_filter else None
    path = ("systems", t.i, "filter") if has_filter else ("systems", t.i)
    where = Location(*run.loaded.locate(path))
    need = int(req.params["merv"])
    if merv is None:
        run.missing(req, system.id, f"the schedule states no filter MERV for system "
                    f"{system.id}; state filter: {{merv: N}}", where, emitter, system=system.id)
        return
    if merv >= need:
        run.record(req, system.id, "pass", emitter)
        return
    message = f"{req.message}: system {system.id} has a MERV {merv} filter, MERV {need} required"
    run.record(req, system.id, "fail", emitter, run.finding(
        req, system.id, message, where, system=system.id,
        required=Amount(need, "count"), provided=Amount(merv, "count")))


BEHAVIOUR = Behaviour(evaluate=evaluate)
