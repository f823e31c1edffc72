"""What every requirement kind's evaluation shares: where it is evaluated, its outcome, helpers."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Amount, Finding, Location
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.system_kinds import kind_of
from airgate.evaluation.zones import ZoneContext
from airgate.models.requirements import Requirement, Subject
from airgate.models.rules import OccupancyCategory
from airgate.procedures import dwelling

if TYPE_CHECKING:
    from airgate.evaluation.bind import EzChoice
    from airgate.evaluation.requirements import Run

NOT_EVALUATED = "not evaluated: "
TOL = 1e-9
#: checks whose failure on a zone (or its system's intake) means a raised figure is not provided
DEPENDENT = ("zone-outdoor-air", "zone-primary-airflow", "zone-limits-ev")


@dataclass(frozen=True)
class Outcome:
    """One requirement on one subject: ``pass``, ``fail`` or ``not-evaluated``."""

    rule: str
    subject: str
    verdict: str
    finding: Finding | None = None
    #: the pack of the requirement where the report lists several packs
    pack: str | None = None
    #: what the requirement asked and what the design gives, where it compares two amounts
    #: (a failing outcome's finding carries its own)
    required: Amount | None = None
    provided: Amount | None = None


@dataclass(frozen=True)
class Effect:
    """A modifying requirement that changed a zone's figure."""

    requirement: Requirement
    detail: str  #: what changed, for the finding


@dataclass
class Target:
    """Where a requirement is evaluated: system ``i`` (``ctx`` None) or one of its zones."""

    i: int
    system: Any
    ctxs: list[ZoneContext]
    result: SystemResult
    emitter: Emitter
    ctx: ZoneContext | None = None
    z: ZoneResult | None = None

    @property
    def subject(self) -> str:
        return self.ctx.subject if self.ctx is not None else self.system.id

    @property
    def zone_id(self) -> str | None:
        return self.ctx.zone.id if self.ctx is not None else None

    @property
    def where(self) -> Location:
        return self.ctx.location if self.ctx is not None else self.result.location


#: evaluate(run, requirement, target): record an outcome (and a finding where it is not met)
Evaluate = Callable[["Run", Requirement, Target], None]
#: adjust(run, requirement, system, zone, category, ez) → (category, ez) the calculation uses
Adjust = Callable[["Run", Requirement, Any, Any, OccupancyCategory, "EzChoice"],
                  tuple[OccupancyCategory, "EzChoice"]]


@dataclass(frozen=True)
class Behaviour:
    """How the engine evaluates one requirement kind (registered by the kind's name)."""

    evaluate: Evaluate
    #: modifying kinds: change the zone's figures while zones are bound
    adjust: Adjust | None = None


def occupants(zone: Any, cat: OccupancyCategory) -> float:
    """The zone population Pz as the zone evaluation will take it [person]."""
    if zone.occupants is not None:
        return zone.occupants
    bedrooms = getattr(zone, "bedrooms", None)
    if cat.default_occupants == "bedrooms-plus-one" and bedrooms is not None:
        return float(dwelling.default_occupants(max(bedrooms, cat.minimum_bedrooms)))
    if cat.density is not None:
        return cat.density * zone.area
    return 0.0


def zone_subject(system: Any, zone: Any, cat: OccupancyCategory,
                 rows: tuple[str, ...]) -> Subject:
    return Subject(system=system.id, system_kind=system.kind, recirculating=system.is_recirculating,
                   zone=zone.id, space=cat.id, group=cat.group,
                   air_class=zone.air_class or cat.air_class, air_distribution=frozenset(rows))


def scheduled_zone_outdoor_air(system: Any, zone: Any) -> float | None:
    """The outdoor air the schedule delivers to ``zone`` itself, where it says [L/s]."""
    scheduled = kind_of(system).zone_outdoor_air(system, zone)
    return None if scheduled is None else scheduled[0]


def modified(run: Run, req: Requirement, t: Target) -> None:
    """Outcome of a modifying requirement on a zone: it fails where it changed the zone's figure
    and the design then falls short (the system intake, or the zone's own check, fails)."""
    ctx, system, emitter = t.ctx, t.system, t.emitter
    effect = next((e for e in run.effects.get((system.id, ctx.zone.id), ())
                   if e.requirement.id == req.id), None)
    if effect is None:
        run.record(req, ctx.subject, "pass", emitter)
        return
    short = [f for f in emitter.findings if f.severity == "fail" and (
        (f.rule == "system-intake" and f.subject == system.id)
        or (f.subject == ctx.subject and f.rule in DEPENDENT))]
    if not short:
        run.record(req, ctx.subject, "pass", emitter)
        return
    scheduled = scheduled_zone_outdoor_air(system, ctx.zone)
    provided = None if scheduled is None else Amount(scheduled, "airflow")
    voz = t.z.trail.value("Voz")
    message = (f"{req.message}: {effect.detail}, so Voz = {run.amount(voz, 'airflow')}; the "
               f"design does not provide it ({', '.join(sorted({f.rule for f in short}))} "
               "fails)")
    run.record(req, ctx.subject, "fail", emitter, run.finding(
        req, ctx.subject, message, ctx.location, system=system.id, zone=ctx.zone.id,
        required=Amount(voz, "airflow"), provided=provided))
