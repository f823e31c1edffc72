"""``formula``: a provided figure compared with a required one, both written as formulas on the
trail symbols of the subject (:data:`airgate.models.requirements.ZONE_SYMBOLS`,
``SYSTEM_SYMBOLS``) and the requirement's own parameters."""

from __future__ import annotations

import math
from typing import Any

import pint

from airgate.evaluation.findings import Amount
from airgate.evaluation.requirement_kinds.common import (
    TOL,
    Behaviour,
    Target,
    scheduled_zone_outdoor_air,
)
from airgate.models import formula as fx
from airgate.models.requirements import SYSTEM_SYMBOLS, ZONE_SYMBOLS, Requirement

_TRAIL_NAMES = {"sum_Pz": "ΣPz", "sum_Voz": "ΣVoz"}


def _zone_value(name: str, t: Target) -> float | None:
    """A zone symbol: the zone trail, the zone's own fields, or the dilution trail."""
    ctx, z = t.ctx, t.z
    if name in z.trail:
        return z.trail.value(name)
    if name == "V":
        if ctx.zone.volume is not None:
            return ctx.zone.volume
        return None if ctx.zone.height is None else ctx.zone.height * ctx.zone.area
    dil = z.dilution
    if dil is not None and name in dil:
        return dil.value(name)
    if name == "Q_oa":
        return scheduled_zone_outdoor_air(t.system, ctx.zone)
    return None


def _env(req: Requirement, t: Target) -> dict[str, Any]:
    env: dict[str, Any] = {n: fx.quantity(v, k) for n, (v, k) in req.formula.params.items()}
    trail = t.result.trail
    for name, kind in SYSTEM_SYMBOLS.items():
        symbol = _TRAIL_NAMES.get(name, name)
        if symbol in trail and math.isfinite(trail.value(symbol)):
            env[name] = fx.quantity(trail.value(symbol), kind)
    if t.ctx is None or t.z is None:
        return env
    for name, kind in ZONE_SYMBOLS.items():
        if name in SYSTEM_SYMBOLS:
            continue
        value = _zone_value(name, t)
        if value is not None and math.isfinite(value):
            env[name] = fx.quantity(value, kind)
    return env


def evaluate(run: Any, req: Requirement, t: Target) -> None:
    f = req.formula
    subject, zone_id, where, emitter = t.subject, t.zone_id, t.where, t.emitter
    env = _env(req, t)
    try:
        required = fx.value_in(fx.evaluate(f.required, env), f.quantity)
        provided = fx.value_in(fx.evaluate(f.provided, env), f.quantity)
    except KeyError as exc:
        run.missing(req, subject, f"{exc.args[0]} is not known for {subject}", where, emitter,
                    system=t.system.id, zone=zone_id)
        return
    except (ZeroDivisionError, pint.DimensionalityError) as exc:
        run.missing(req, subject, f"the formula cannot be evaluated ({exc})", where, emitter,
                    system=t.system.id, zone=zone_id)
        return
    ok = (provided >= required * (1 - TOL) if f.compare == "at-least"
          else provided <= required * (1 + TOL))
    if ok:
        run.record(req, subject, "pass", emitter,
                   required=Amount(required, f.quantity, at_most=f.compare != "at-least"),
                   provided=Amount(provided, f.quantity))
        return
    relation = "at least" if f.compare == "at-least" else "at most"
    message = (f"{req.message}: {f.provided_text} = {run.amount(provided, f.quantity)}, "
               f"{relation} {f.required_text} = {run.amount(required, f.quantity)} required")
    run.record(req, subject, "fail", emitter, run.finding(
        req, subject, message, where, system=t.system.id, zone=zone_id,
        required=Amount(required, f.quantity, at_most=f.compare != "at-least"),
        provided=Amount(provided, f.quantity)))


BEHAVIOUR = Behaviour(evaluate=evaluate)
