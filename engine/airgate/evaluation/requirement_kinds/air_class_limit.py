"""``air-class-limit``: the air class of a zone on a recirculating system at most ``max_class``
(with ``only_when_mixed``: only where the system also serves zones of a lower class)."""

from __future__ import annotations

from typing import Any

from airgate.evaluation.findings import Amount
from airgate.evaluation.requirement_kinds.common import Behaviour, Target
from airgate.models.requirements import Requirement


def evaluate(run: Any, req: Requirement, t: Target) -> None:
    system, ctxs, ctx, emitter = t.system, t.ctxs, t.ctx, t.emitter
    if not system.is_recirculating:
        return  # the limit concerns recirculated air only
    limit = int(req.params["max_class"])
    klass = ctx.air_class
    lower = [c.zone.id for c in ctxs if c.air_class < klass]
    if klass <= limit or (req.only_when_mixed and not lower):
        run.record(req, ctx.subject, "pass", emitter)
        return
    into = f" with class {min(c.air_class for c in ctxs)} zones ({', '.join(lower)})" if lower else ""
    message = (f"{req.message}: zone {ctx.zone.id} ({ctx.category.label}) is air class {klass}"
               f", recirculated by {system.id}{into}; at most class {limit} is allowed")
    run.record(req, ctx.subject, "fail", emitter, run.finding(
        req, ctx.subject, message, ctx.location, system=system.id, zone=ctx.zone.id,
        required=Amount(limit, "count", at_most=True), provided=Amount(klass, "count")))


BEHAVIOUR = Behaviour(evaluate=evaluate)
