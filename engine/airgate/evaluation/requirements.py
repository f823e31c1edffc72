"""Evaluate a pack's requirements beyond the sum of rates.

Two hooks of the engine call this module:

- :meth:`Run.adjust`, while zones are bound: the kinds that change the calculation act here
  (``ez-cap`` lowers the Ez a zone may claim; ``larger-of`` makes the zone's outdoor airflow the
  larger of the procedure's figure and the pack's), so the zone and system calculations that
  follow use the changed figures.
- :meth:`Run.evaluate`, after a system is evaluated: every requirement that applies to the
  system or its zones gets an outcome (pass, fail, not evaluated). A modifying requirement fails
  where it governs and the design then falls short (the system intake, or the zone's own check,
  fails). A checking requirement compares a provided value with its required one.

What each kind does is in its module under :mod:`airgate.evaluation.requirement_kinds`, found by
the kind's name in ``EVALUATORS``; this module only selects subjects and records outcomes.
Findings carry the requirement's id as their rule, its severity, message and citation, the
required and provided values and the location in the schedule, like the engine's own checks.
"""

from __future__ import annotations

import dataclasses
from typing import Any

from airgate import formatting
from airgate.evaluation.bind import EzChoice
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Amount, Finding, Location
from airgate.evaluation.report import SystemResult
from airgate.evaluation.requirement_kinds import EVALUATORS
from airgate.evaluation.requirement_kinds.common import (
    NOT_EVALUATED,
    Behaviour,
    Effect,
    Outcome,
    Target,
    occupants,
    zone_subject,
)
from airgate.evaluation.zones import ZoneContext
from airgate.models.requirements import Requirement
from airgate.models.rules import OccupancyCategory, RulePack

__all__ = ["Run", "Outcome", "NOT_EVALUATED", "occupants"]


def behaviour(req: Requirement) -> Behaviour:
    """The registered evaluation of ``req``'s kind; a kind without one is a bug, not a pass."""
    found = EVALUATORS.get(req.kind)
    if found is None:
        raise LookupError(f"requirement kind '{req.kind}' of requirement {req.id} has no "
                          "evaluation registered in airgate.evaluation.requirement_kinds")
    return found


class Run:
    """The requirements of one evaluation: effects while binding, outcomes afterwards."""

    def __init__(self, pack: RulePack, loaded: Any) -> None:
        self.pack = pack
        self.loaded = loaded
        self.units = loaded.model.project.units
        self.outcomes: list[Outcome] = []
        self.effects: dict[tuple[str, str], list[Effect]] = {}
        self.zone_reqs = [r for r in pack.requirements.values() if r.subject == "zone"]
        for req in pack.requirements.values():
            behaviour(req)  # every kind has its evaluation before anything runs
        #: the modifying requirements on zones, in the order they act: kind by kind in the
        #: order the kinds are registered, then in the pack's order
        self.adjusting = [(found.adjust, req) for kind, found in EVALUATORS.items()
                          if found.adjust is not None
                          for req in self.zone_reqs if req.kind == kind]

    def amount(self, value: float, kind: str) -> str:
        return formatting.amount(value, kind, self.units)

    # --- binding ------------------------------------------------------------------------------

    def adjust(self, i: int, j: int, cat: OccupancyCategory, ez: EzChoice,
               zone: Any = None) -> tuple[OccupancyCategory, EzChoice]:
        """The zone's category (effective rates) and Ez after the modifying requirements, kind
        by kind in the order the kinds are registered. ``zone``: the zone at the design
        condition bound (default: as the schedule states it)."""
        system = self.loaded.model.systems[i]
        zone = system.zones[j] if zone is None else zone
        if cat.default_occupants == "bedrooms-plus-one":
            self._dwelling_inputs(zone, cat, ("systems", i, "zones", j))
        if not self.adjusting:  # nothing modifies a zone: no subject to select
            return cat, ez
        subject = zone_subject(system, zone, cat, ez.rows)
        for adjust, req in self.adjusting:
            if req.selector.matches(subject):
                cat, ez = adjust(self, req, system, zone, cat, ez)
        return cat, ez

    def _dwelling_inputs(self, zone: Any, cat: OccupancyCategory, path: tuple) -> None:
        if (cat.default_occupants == "bedrooms-plus-one" and zone.occupants is None
                and getattr(zone, "bedrooms", None) is None):
            raise self.loaded.error(
                f"space '{cat.id}' of rule pack {self.pack.id} takes its default occupancy from "
                "the number of bedrooms (Nbr + 1), and the zone states neither bedrooms nor "
                "occupants", path + ("bedrooms",),
                hint="add bedrooms: N (or occupants: N) to the zone")

    # --- after the system is evaluated --------------------------------------------------------

    def evaluate(self, i: int, system: Any, ctxs: list[ZoneContext], result: SystemResult,
                 emitter: Emitter) -> None:
        """Outcomes (and findings) of every requirement on ``system`` and its zones."""
        if not self.pack.requirements:
            return
        zone_subjects = [zone_subject(system, c.zone, c.category, c.ez.rows) for c in ctxs]
        for req in self.pack.requirements.values():
            run = behaviour(req).evaluate
            if req.subject == "system":
                subject = dataclasses.replace(zone_subjects[0], zone=None, space=None, group=None,
                                              air_class=None, air_distribution=frozenset(),
                                              zones=tuple(zone_subjects))
                if req.selector.matches(subject):
                    run(self, req, Target(i, system, ctxs, result, emitter))
                continue
            for ctx, z, subject in zip(ctxs, result.zones, zone_subjects):
                if req.selector.matches(subject):
                    run(self, req, Target(i, system, ctxs, result, emitter, ctx, z))

    # --- for the kinds ------------------------------------------------------------------------

    def record(self, req: Requirement, subject: str, verdict: str, emitter: Emitter,
               finding: Finding | None = None, required: Amount | None = None,
               provided: Amount | None = None) -> None:
        """An outcome; ``required`` and ``provided``: the amounts a passing requirement
        compared (a failing one's finding has its own)."""
        if finding is not None:
            emitter.findings.append(finding)
        self.outcomes.append(Outcome(req.id, subject, verdict, finding, required=required,
                                     provided=provided))

    def finding(self, req: Requirement, subject: str, message: str, location: Location, *,
                system: str, zone: str | None = None, severity: str | None = None,
                required: Amount | None = None, provided: Amount | None = None) -> Finding:
        return Finding(rule=req.id, severity=severity or req.severity, subject=subject,
                       message=message, source=req.cite(), location=location, required=required,
                       provided=provided, system=system, zone=zone)

    def missing(self, req: Requirement, subject: str, why: str, location: Location,
                emitter: Emitter, *, system: str, zone: str | None = None) -> None:
        """A "not evaluated" outcome: an input the requirement needs is missing."""
        finding = self.finding(req, subject, f"{NOT_EVALUATED}{req.message} — {why}", location,
                               system=system, zone=zone, severity=req.missing)
        self.record(req, subject, "not-evaluated", emitter, finding)
