"""``density-limit``: design occupants per floor area at most ``max_density``."""

from __future__ import annotations

from typing import Any

from airgate import formatting
from airgate.evaluation.findings import Amount
from airgate.evaluation.requirement_kinds.common import TOL, Behaviour, Target
from airgate.models.requirements import Requirement


def evaluate(run: Any, req: Requirement, t: Target) -> None:
    ctx, emitter = t.ctx, t.emitter
    pz, az = t.z.trail.value("Pz"), t.z.trail.value("Az")
    limit = req.params["max_density"]
    density = pz / az
    if density <= limit * (1 + TOL):
        run.record(req, ctx.subject, "pass", emitter,
                   required=Amount(limit, "density", at_most=True),
                   provided=Amount(density, "density"))
        return
    message = (f"{req.message}: {formatting.number(pz, 'people')} people on "
               f"{run.amount(az, 'area')} is {run.amount(density, 'density')}, above "
               f"{run.amount(limit, 'density')}")
    where = ctx.fields.get("occupants", ctx.location)
    run.record(req, ctx.subject, "fail", emitter, run.finding(
        req, ctx.subject, message, where, system=t.system.id, zone=ctx.zone.id,
        required=Amount(limit, "density", at_most=True), provided=Amount(density, "density")))


BEHAVIOUR = Behaviour(evaluate=evaluate)
