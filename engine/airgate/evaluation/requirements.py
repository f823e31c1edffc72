"""Evaluate a pack's requirements beyond the sum of rates.

Two hooks of the engine call this module:

- :meth:`Run.adjust`, while zones are bound: the requirements that change the calculation act
  here. ``ez-cap`` lowers the Ez a zone may claim; ``larger-of`` makes the zone's outdoor airflow
  the larger of the procedure's figure and the pack's (a per-person floor, a per-area minimum).
  The governing figure is carried by effective rates, Rp·Pz + Ra·Az = the larger figure, so the
  zone and system calculations that follow (Voz, ΣVoz, Vou, Zpz, Ev, Vot) all use it. The trail
  cites the requirement for each changed value.
- :meth:`Run.evaluate`, after a system is evaluated: every requirement that applies to the
  system or its zones gets an outcome (pass, fail, not evaluated). A modifying requirement fails
  where it governs and the design then falls short (the system intake, or the zone's own check,
  fails). A checking requirement compares a provided value with its required one.

Findings carry the requirement's id as their rule, its severity, message and citation, the
required and provided values and the location in the schedule, like the engine's own checks.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import Any

import pint

from airgate import formatting
from airgate.evaluation.bind import EzChoice
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Amount, Finding, Location
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.zones import ZoneContext
from airgate.models.requirements import SYSTEM_SYMBOLS, ZONE_SYMBOLS, Requirement, Subject
from airgate.models.rules import OccupancyCategory, RulePack
from airgate.procedures import dwelling
from airgate.models import formula as fx

NOT_EVALUATED = "not evaluated: "
#: checks whose failure on a zone (or its system's intake) means a raised figure is not provided
_DEPENDENT = ("zone-outdoor-air", "zone-primary-airflow", "zone-limits-ev")
_TRAIL_NAMES = {"sum_Pz": "ΣPz", "sum_Voz": "ΣVoz"}
TOL = 1e-9


@dataclass(frozen=True)
class Outcome:
    """One requirement on one subject: ``pass``, ``fail`` or ``not-evaluated``."""

    rule: str
    subject: str
    verdict: str
    finding: Finding | None = None


@dataclass(frozen=True)
class _Effect:
    """A modifying requirement that changed a zone's figure."""

    requirement: Requirement
    detail: str  #: what changed, for the finding


def occupants(zone: Any, cat: OccupancyCategory) -> float:
    """The zone population Pz as the zone evaluation will take it [person]."""
    if zone.occupants is not None:
        return zone.occupants
    bedrooms = getattr(zone, "bedrooms", None)
    if cat.default_occupants == "bedrooms-plus-one" and bedrooms is not None:
        return float(dwelling.default_occupants(bedrooms))
    if cat.density is not None:
        return cat.density * zone.area
    return 0.0


def _zone_subject(system: Any, zone: Any, cat: OccupancyCategory, rows: tuple[str, ...]) -> Subject:
    return Subject(system=system.id, system_kind=system.kind, recirculating=system.is_recirculating,
                   zone=zone.id, space=cat.id, group=cat.group,
                   air_class=zone.air_class or cat.air_class, air_distribution=frozenset(rows))


class Run:
    """The requirements of one evaluation: effects while binding, outcomes afterwards."""

    def __init__(self, pack: RulePack, loaded: Any) -> None:
        self.pack = pack
        self.loaded = loaded
        self.units = loaded.model.project.units
        self.outcomes: list[Outcome] = []
        self.effects: dict[tuple[str, str], list[_Effect]] = {}
        self.zone_reqs = [r for r in pack.requirements.values() if r.subject == "zone"]

    def amount(self, value: float, kind: str) -> str:
        return formatting.amount(value, kind, self.units)

    # --- binding ------------------------------------------------------------------------------

    def adjust(self, i: int, j: int, cat: OccupancyCategory,
               ez: EzChoice) -> tuple[OccupancyCategory, EzChoice]:
        """The zone's category (effective rates) and Ez after the modifying requirements."""
        system = self.loaded.model.systems[i]
        zone = system.zones[j]
        self._dwelling_inputs(zone, cat, ("systems", i, "zones", j))
        subject = _zone_subject(system, zone, cat, ez.rows)
        for req in self.zone_reqs:
            if req.kind == "ez-cap" and req.selector.matches(subject):
                ez = self._cap(req, system, zone, ez)
        for req in self.zone_reqs:
            if req.kind == "larger-of" and req.selector.matches(subject):
                cat = self._larger(req, system, zone, cat, ez.ez)
        return cat, ez

    def _dwelling_inputs(self, zone: Any, cat: OccupancyCategory, path: tuple) -> None:
        if (cat.default_occupants == "bedrooms-plus-one" and zone.occupants is None
                and getattr(zone, "bedrooms", None) is None):
            raise self.loaded.error(
                f"space '{cat.id}' of rule pack {self.pack.id} takes its default occupancy from "
                "the number of bedrooms (Nbr + 1), and the zone states neither bedrooms nor "
                "occupants", path + ("bedrooms",),
                hint="add bedrooms: N (or occupants: N) to the zone")

    def _cap(self, req: Requirement, system: Any, zone: Any, ez: EzChoice) -> EzChoice:
        cap = req.params["max_ez"]
        if ez.ez <= cap + TOL:
            return ez
        note = (f"{ez.note}; capped at {cap:.2f} by requirement {req.id} "
                f"(Ez {ez.ez:.2f} would otherwise apply)")
        self.effects.setdefault((system.id, zone.id), []).append(_Effect(
            req, f"Ez {ez.ez:.2f} ({', '.join(ez.rows) or ez.origin}) is capped at {cap:.2f}"))
        return dataclasses.replace(ez, ez=cap, note=note, source=req.cite())

    def _larger(self, req: Requirement, system: Any, zone: Any, cat: OccupancyCategory,
                ez: float) -> OccupancyCategory:
        pz, az = occupants(zone, cat), zone.area
        k = ez if req.at == "Voz" else 1.0  # a figure for Voz is one for Vbz times Ez
        shown = req.at
        figures: list[tuple[str, float, tuple[float, float]]] = []
        if not req.instead_of_sum:
            figures.append(("Vbz / Ez" if req.at == "Voz" else "Rp·Pz + Ra·Az",
                            cat.rp * pz + cat.ra * az, (cat.rp, cat.ra)))
        rp_unit = "cfm/person" if self.pack.units == "IP" else "L/s·person"
        ra_unit = "cfm/ft²" if self.pack.units == "IP" else "L/s·m²"
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
            return cat
        listing = ", ".join(f"{label} = {self.amount(value / k, 'airflow')}"
                            for label, value, _ in figures)
        text = (f"{req.cite()}: requirement {req.id}, {shown} is the larger of {listing}; "
                f"{best[0]} governs (table Rp {self.amount(cat.rp, 'airflow_per_person')}, "
                f"Ra {self.amount(cat.ra, 'airflow_per_area')})")
        self.effects.setdefault((system.id, zone.id), []).append(_Effect(
            req, f"{shown} is the larger of {listing}: {best[0]} governs"))
        rp, ra = best[2]
        return dataclasses.replace(cat, rp=rp, ra=ra, cited={**cat.cited, "Rp": text, "Ra": text})

    # --- after the system is evaluated --------------------------------------------------------

    def evaluate(self, i: int, system: Any, ctxs: list[ZoneContext], result: SystemResult,
                 emitter: Emitter) -> None:
        """Outcomes (and findings) of every requirement on ``system`` and its zones."""
        zone_subjects = [_zone_subject(system, c.zone, c.category, c.ez.rows) for c in ctxs]
        for req in self.pack.requirements.values():
            if req.subject == "system":
                subject = dataclasses.replace(zone_subjects[0], zone=None, space=None, group=None,
                                              air_class=None, air_distribution=frozenset(),
                                              zones=tuple(zone_subjects))
                if req.selector.matches(subject):
                    self._system(req, i, system, ctxs, result, emitter)
                continue
            for ctx, z, subject in zip(ctxs, result.zones, zone_subjects):
                if req.selector.matches(subject):
                    self._zone(req, system, ctxs, ctx, z, result, emitter)

    def _record(self, req: Requirement, subject: str, verdict: str, emitter: Emitter,
                finding: Finding | None = None) -> None:
        if finding is not None:
            emitter.findings.append(finding)
        self.outcomes.append(Outcome(req.id, subject, verdict, finding))

    def _finding(self, req: Requirement, subject: str, message: str, location: Location, *,
                 system: str, zone: str | None = None, severity: str | None = None,
                 required: Amount | None = None, provided: Amount | None = None) -> Finding:
        return Finding(rule=req.id, severity=severity or req.severity, subject=subject,
                       message=message, source=req.cite(), location=location, required=required,
                       provided=provided, system=system, zone=zone)

    def _missing(self, req: Requirement, subject: str, why: str, location: Location,
                 emitter: Emitter, *, system: str, zone: str | None = None) -> None:
        finding = self._finding(req, subject, f"{NOT_EVALUATED}{req.message} — {why}", location,
                                system=system, zone=zone, severity=req.missing)
        self._record(req, subject, "not-evaluated", emitter, finding)

    def _zone(self, req: Requirement, system: Any, ctxs: list[ZoneContext], ctx: ZoneContext,
              z: ZoneResult, result: SystemResult, emitter: Emitter) -> None:
        if req.kind in ("larger-of", "ez-cap"):
            self._modifier(req, system, ctx, z, emitter)
        elif req.kind == "density-limit":
            self._density(req, system, ctx, z, emitter)
        elif req.kind == "air-class-limit":
            self._air_class(req, system, ctxs, ctx, emitter)
        else:
            self._formula(req, system, ctx, z, result, emitter)

    def _modifier(self, req: Requirement, system: Any, ctx: ZoneContext, z: ZoneResult,
                  emitter: Emitter) -> None:
        effect = next((e for e in self.effects.get((system.id, ctx.zone.id), ())
                       if e.requirement.id == req.id), None)
        if effect is None:
            self._record(req, ctx.subject, "pass", emitter)
            return
        short = [f for f in emitter.findings if f.severity == "fail" and (
            (f.rule == "system-intake" and f.subject == system.id)
            or (f.subject == ctx.subject and f.rule in _DEPENDENT))]
        if not short:
            self._record(req, ctx.subject, "pass", emitter)
            return
        provided = None
        if system.kind == "single-zone":
            provided = Amount(system.outdoor_air, "airflow")
        elif system.kind == "outdoor-air" and ctx.zone.outdoor_air is not None:
            provided = Amount(ctx.zone.outdoor_air, "airflow")
        voz = z.trail.value("Voz")
        message = (f"{req.message}: {effect.detail}, so Voz = {self.amount(voz, 'airflow')}; the "
                   f"design does not provide it ({', '.join(sorted({f.rule for f in short}))} "
                   "fails)")
        self._record(req, ctx.subject, "fail", emitter, self._finding(
            req, ctx.subject, message, ctx.location, system=system.id, zone=ctx.zone.id,
            required=Amount(voz, "airflow"), provided=provided))

    def _density(self, req: Requirement, system: Any, ctx: ZoneContext, z: ZoneResult,
                 emitter: Emitter) -> None:
        pz, az = z.trail.value("Pz"), z.trail.value("Az")
        limit = req.params["max_density"]
        density = pz / az
        if density <= limit * (1 + TOL):
            self._record(req, ctx.subject, "pass", emitter)
            return
        message = (f"{req.message}: {formatting.number(pz, 'people')} people on "
                   f"{self.amount(az, 'area')} is {self.amount(density, 'density')}, above "
                   f"{self.amount(limit, 'density')}")
        where = ctx.fields.get("occupants", ctx.location)
        self._record(req, ctx.subject, "fail", emitter, self._finding(
            req, ctx.subject, message, where, system=system.id, zone=ctx.zone.id,
            required=Amount(limit, "density"), provided=Amount(density, "density")))

    def _air_class(self, req: Requirement, system: Any, ctxs: list[ZoneContext], ctx: ZoneContext,
                   emitter: Emitter) -> None:
        if not system.is_recirculating:
            return  # the limit concerns recirculated air only
        limit = int(req.params["max_class"])
        klass = ctx.air_class
        lower = [c.zone.id for c in ctxs if c.air_class < klass]
        if klass <= limit or (req.only_when_mixed and not lower):
            self._record(req, ctx.subject, "pass", emitter)
            return
        into = f" with class {min(c.air_class for c in ctxs)} zones ({', '.join(lower)})" if lower else ""
        message = (f"{req.message}: zone {ctx.zone.id} ({ctx.category.label}) is air class {klass}"
                   f", recirculated by {system.id}{into}; at most class {limit} is allowed")
        self._record(req, ctx.subject, "fail", emitter, self._finding(
            req, ctx.subject, message, ctx.location, system=system.id, zone=ctx.zone.id,
            required=Amount(limit, "count"), provided=Amount(klass, "count")))

    def _system(self, req: Requirement, i: int, system: Any, ctxs: list[ZoneContext],
                result: SystemResult, emitter: Emitter) -> None:
        if req.kind == "formula":
            self._formula(req, system, None, None, result, emitter, i)
            return
        merv = system.filter.merv if getattr(system, "filter", None) is not None else None
        path = ("systems", i, "filter") if getattr(system, "filter", None) is not None else (
            "systems", i)
        where = Location(*self.loaded.locate(path))
        need = int(req.params["merv"])
        if merv is None:
            self._missing(req, system.id, f"the schedule states no filter MERV for system "
                          f"{system.id}; state filter: {{merv: N}}", where, emitter,
                          system=system.id)
            return
        if merv >= need:
            self._record(req, system.id, "pass", emitter)
            return
        message = f"{req.message}: system {system.id} has a MERV {merv} filter, MERV {need} required"
        self._record(req, system.id, "fail", emitter, self._finding(
            req, system.id, message, where, system=system.id,
            required=Amount(need, "count"), provided=Amount(merv, "count")))

    def _env(self, req: Requirement, system: Any, ctx: ZoneContext | None, z: ZoneResult | None,
             result: SystemResult) -> dict[str, Any]:
        env: dict[str, Any] = {n: fx.quantity(v, k) for n, (v, k) in req.formula.params.items()}
        for name, kind in SYSTEM_SYMBOLS.items():
            symbol = _TRAIL_NAMES.get(name, name)
            if symbol in result.trail and math.isfinite(result.trail.value(symbol)):
                env[name] = fx.quantity(result.trail.value(symbol), kind)
        if ctx is None or z is None:
            return env
        for name, kind in ZONE_SYMBOLS.items():
            if name in SYSTEM_SYMBOLS:
                continue
            value = _zone_value(name, system, ctx, z)
            if value is not None and math.isfinite(value):
                env[name] = fx.quantity(value, kind)
        return env

    def _formula(self, req: Requirement, system: Any, ctx: ZoneContext | None,
                 z: ZoneResult | None, result: SystemResult, emitter: Emitter,
                 i: int | None = None) -> None:
        f = req.formula
        subject = ctx.subject if ctx is not None else system.id
        zone_id = ctx.zone.id if ctx is not None else None
        where = ctx.location if ctx is not None else result.location
        env = self._env(req, system, ctx, z, result)
        try:
            required = fx.value_in(fx.evaluate(f.required, env), f.quantity)
            provided = fx.value_in(fx.evaluate(f.provided, env), f.quantity)
        except KeyError as exc:
            self._missing(req, subject, f"{exc.args[0]} is not known for {subject}", where,
                          emitter, system=system.id, zone=zone_id)
            return
        except (ZeroDivisionError, pint.DimensionalityError) as exc:
            self._missing(req, subject, f"the formula cannot be evaluated ({exc})", where, emitter,
                          system=system.id, zone=zone_id)
            return
        ok = (provided >= required * (1 - TOL) if f.compare == "at-least"
              else provided <= required * (1 + TOL))
        if ok:
            self._record(req, subject, "pass", emitter)
            return
        relation = "at least" if f.compare == "at-least" else "at most"
        message = (f"{req.message}: {f.provided_text} = {self.amount(provided, f.quantity)}, "
                   f"{relation} {f.required_text} = {self.amount(required, f.quantity)} required")
        self._record(req, subject, "fail", emitter, self._finding(
            req, subject, message, where, system=system.id, zone=zone_id,
            required=Amount(required, f.quantity), provided=Amount(provided, f.quantity)))


def _zone_value(name: str, system: Any, ctx: ZoneContext, z: ZoneResult) -> float | None:
    """A zone symbol for a formula: the zone trail, the zone's own fields, or the dilution trail."""
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
        if system.kind == "single-zone":
            return system.outdoor_air
        if system.kind == "outdoor-air" and ctx.zone.outdoor_air is not None:
            return ctx.zone.outdoor_air
    return None

