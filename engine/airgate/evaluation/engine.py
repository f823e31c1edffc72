"""Evaluate a loaded schedule against a rule pack: the orchestrating chain.

Nothing here reads a file: the schedule, the pack and the data tables arrive loaded
(:mod:`airgate.api` reads them and calls :func:`evaluate`).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

from airgate.errors import AirgateError, raise_all
from airgate.evaluation import (
    bind,
    conditions,
    contaminants,
    coverage,
    dilution,
    exhaust,
    iaqp,
    makeup,
    supplements as supplement_packs,
    systems,
    waivers,
    zone_air,
)
from airgate.evaluation.checks import DECLARED_CHECKS, KNOWN_CHECKS, Emitter
from airgate.evaluation.system_kinds import kind_of
from airgate.evaluation.findings import Location
from airgate.evaluation.requirements import Run as RequirementRun
from airgate.evaluation.report import (
    SAFETY_CAUTION,
    ConditionResult,
    Report,
    Supplement,
    SystemResult,
)
from airgate.evaluation.trail import Trail
from airgate.evaluation.unused import unused_fields
from airgate.evaluation.zones import ZoneContext, evaluate_zones
from airgate.models.datatables import Tables
from airgate.models.loaded import LoadedSchedule
from airgate.models.rules import RulePack
from airgate.models.schedule import SYSTEM_KINDS


def _location(loaded: LoadedSchedule, path: tuple) -> Location:
    """Where ``path`` is written, looked up only when a finding, an error or a writer reads it
    (:meth:`Location.deferred`): the evaluation makes several locations per zone."""
    return Location.deferred(loaded, path, loaded.file if loaded.one_file else None)


#: a zone's stated fields whose location its trail gives as their source
_FIELDS = ("area", "occupants", "bedrooms")
_EXHAUST_FIELDS = ("airflow", "fixtures")


def _bind_all(loaded: LoadedSchedule, pack: RulePack, tables: Tables,
              run: RequirementRun | None = None) -> list[dict[str | None, list]]:
    """Every zone bound to the pack at every design condition of its system: per system, the
    zone contexts of each condition (one unnamed condition for a system without any); a zone
    of an exhaust fan is bound to its exhaust row only (:class:`exhaust.FanZone`)."""
    errors: list[AirgateError] = []
    binder = bind.Binder(loaded, pack)  # equal statements share their rows and Ez
    adjust = run.adjust if run is not None else None
    make = Location.deferred_in(loaded, loaded.file if loaded.one_file else None)
    categories = pack.categories
    out = []
    for i, stated in enumerate(loaded.model.systems):
        by_condition: dict[str | None, list[ZoneContext]] = {}
        kind = kind_of(stated)
        for cond in conditions.names(stated):
            system = stated.at(cond)
            ctxs = by_condition.setdefault(cond, [])
            if not kind.supplies:  # an exhaust fan's zones: their exhaust rows only
                for j, zone in enumerate(system.zones):
                    path = ("systems", i, "zones", j)
                    row = bind.collect(errors, exhaust.bind_fan_zone, loaded, pack, zone, path)
                    if row is not None:
                        ctxs.append(exhaust.FanZone(zone, path, make(path), row,
                                                    f"{system.id}/{zone.id}", system.id))
                continue
            system_id, mechanical = system.id, kind.intake
            for j, zone in enumerate(system.zones):
                path = ("systems", i, "zones", j)
                # the row of the zone's space, else the error it makes (Binder.category)
                cat = categories.get(zone.space)
                if cat is None:
                    cat = bind.collect(errors, binder.category, zone, path)
                key = (cond,) if isinstance(stated.zones[j].air_distribution, dict) else ()
                ez = bind.collect(errors, binder.air_distribution, zone, path, key)
                if zone.profile is not None or zone.activity is not None:
                    bind.collect(errors, bind.dilution_refs, loaded, zone, path, tables)
                exhaust_row = (None if zone.exhaust is None else
                               bind.collect(errors, exhaust.bind, loaded, pack, zone, path))
                if cat is None or ez is None:
                    continue
                if adjust is not None:  # requirements
                    cat, ez = bind.collect(errors, adjust, i, j, cat, ez, zone) or (None, None)
                    if cat is None or ez is None:
                        continue
                fields = {}
                for name in _FIELDS:
                    if getattr(zone, name) is not None:
                        at = path + (name,)
                        fields[name] = make(at if cond is None else conditions.keyed(at, cond))
                if zone.exhaust is not None:
                    for name in _EXHAUST_FIELDS:
                        if getattr(zone.exhaust, name) is not None:
                            fields[f"exhaust.{name}"] = make(path + ("exhaust", name))
                ctxs.append(ZoneContext(zone, path, make(path), cat, ez,
                                        f"{system_id}/{zone.id}", system_id, fields, mechanical,
                                        exhaust_row))
        out.append(by_condition)
        errors.extend(kind_of(stated).check_inputs(loaded, pack, i))
    errors.extend(makeup.check_inputs(loaded))
    raise_all(errors)
    return out



def _evaluate_system(loaded: LoadedSchedule, pack: RulePack, emitter: Emitter, i: int,
                     by_condition: dict[str | None, list[ZoneContext]]) -> tuple:
    """The system at each of its conditions; the governing one as the system's result, every
    condition's own results on it, findings naming their condition."""
    stated = loaded.model.systems[i]
    where = _location(loaded, ("systems", i))
    make = Location.deferred_in(loaded, loaded.file if loaded.one_file else None)
    runs = []
    for cond, ctxs in by_condition.items():
        system = stated.at(cond)
        locate = ((lambda path, c=cond: make(conditions.keyed(path, c))) if cond is not None
                  else make)
        intake_at = locate(("systems", i, "outdoor_air"))
        start = len(emitter.findings)
        zones = evaluate_zones(ctxs, pack, emitter)
        result = SystemResult(id=system.id, name=system.name, kind=system.kind, location=where,
                              trail=Trail(), zones=zones)
        kind_of(system).evaluate(system, ctxs, zones, result, pack, emitter, intake_at, locate)
        # a zone's exhaust is the same at every condition: reported once, at none in particular
        found = emitter.findings[start:]
        held = [f for f in found if f.rule in exhaust.CONDITION_FREE]
        emitter.findings[start:] = [f for f in found if f.rule not in exhaust.CONDITION_FREE]
        conditions.tag(emitter.findings, start, cond)
        if not runs:
            emitter.findings.extend(held)
        runs.append((cond, system, ctxs, result))
    k = conditions.governing([r[3] for r in runs])
    cond, system, ctxs, result = runs[k]
    if cond is not None:
        result.condition = cond
        result.conditions = [
            ConditionResult(id=c, trail=r.trail, zones=r.zones, method=r.method,
                            critical_zone=r.critical_zone, load=conditions.load_ratio(r))
            for c, _, _, r in runs]
    return system, ctxs, result, where


def _exhaust_fan(loaded: LoadedSchedule, pack: RulePack, emitter: Emitter, i: int,
                 ctxs: list) -> SystemResult:
    """An exhaust fan: each zone's exhaust against its row, the fan against its zones (no
    intake, air classes, dilution or requirements: it supplies nothing)."""
    system = loaded.model.systems[i]
    kind = kind_of(system)
    locate = lambda path: _location(loaded, path)  # noqa: E731
    zones = [exhaust.fan_zone(ctx, emitter, locate) for ctx in ctxs]
    result = SystemResult(id=system.id, name=system.name, kind=system.kind,
                          location=_location(loaded, ("systems", i)), trail=Trail(), zones=zones,
                          supplies=False, procedure=None)
    kind.evaluate(system, ctxs, zones, result, pack, emitter,
                  locate(("systems", i, kind.located_field)), locate)
    return result


def evaluate(loaded: LoadedSchedule, pack: RulePack, tables: Tables,
             extra_waivers: Sequence[waivers.WaiverEntry] = (),
             as_of: dt.date | None = None, supplements: Sequence[Supplement] = (),
             series: bool = True) -> Report:
    """Evaluate every system and zone of ``loaded`` under ``pack``.

    ``tables``: the physical data tables by id (:data:`airgate.readers.datatables.BUILTIN`).
    ``supplements``: supplement packs whose requirements are checked beside ``pack``, each on
    the systems it applies to (:mod:`airgate.evaluation.supplements`).

    The schedule's own waivers, then ``extra_waivers`` (a waivers file), are applied with expiry
    judged on ``as_of`` (default today). ``series=False`` lets each system's design-day series
    (and the rise series of zones without a profile) go once its analysis has read them
    (minute-sampled: about 11.5 kB a zone), for reports that draw none.
    """
    bind.check_pack_checks(pack, set(KNOWN_CHECKS))
    raise_all([e for s in supplements for e in supplement_packs.check_names(pack, s.pack)])
    entries = [*waivers.from_schedule(loaded), *extra_waivers]
    packs = [pack, *(s.pack for s in supplements)]
    # a waiver may name an engine check, a declared limit's check or a requirement of a pack
    raise_all(waivers.rule_errors(entries, [*KNOWN_CHECKS, *DECLARED_CHECKS,
                                            *(r for p in packs for r in p.requirements)])
              + waivers.condition_errors(entries, loaded.model.systems))
    raise_all(waivers.pack_errors(entries, packs))
    raise_all(iaqp.check_pack(loaded, pack))
    units = loaded.model.project.units
    run = RequirementRun(pack, loaded)
    extra = supplement_packs.Runs(supplements, loaded)
    bound = _bind_all(loaded, pack, tables, run)
    emitter = Emitter(pack, units, lambda path: _location(loaded, path))
    results = []
    governed = []  # each system at its governing condition
    for i, by_condition in enumerate(bound):
        stated = loaded.model.systems[i]
        if not kind_of(stated).supplies:  # an exhaust fan: its zones' exhaust and its airflow
            results.append(_exhaust_fan(loaded, pack, emitter, i, by_condition[None]))
            governed.append(stated)
            continue
        first = len(emitter.findings)
        system, ctxs, result, where = _evaluate_system(loaded, pack, emitter, i, by_condition)
        result.procedure = system.procedure if kind_of(system).intake else "nvp"
        governed.append(system)
        systems.air_classes(system, ctxs, emitter, where)
        start = len(emitter.findings)
        # the CO2 and contaminant analyses and the pack's requirements: at the governing condition
        dilution.analyse(system, ctxs, result, loaded.model, emitter, tables)
        contaminants.analyse(system, ctxs, result, loaded.model, emitter, tables)
        if not series:
            for z in result.zones:
                z.series = z.rise = None
        iaqp.apply(system, ctxs, result, loaded.model, emitter, pack,
                   _location(loaded, conditions.keyed(("systems", i, "outdoor_air"),
                                                      result.condition)), first)
        run.evaluate(i, system, ctxs, result, emitter)
        extra.evaluate(i, system, ctxs, result, emitter)
        conditions.tag(emitter.findings, start, result.condition)
        results.append(result)
    model = loaded.model.model_copy(update={"systems": governed})
    makeup_notes = makeup.check(loaded, pack, results, emitter,
                                lambda path: _location(loaded, path))
    findings = sorted(emitter.findings, key=lambda f: f.sort_key())
    if supplements:  # every finding names its pack
        findings = supplement_packs.tag_base(findings, pack)
    findings, statuses, waiver_date = waivers.review(findings, entries, packs, results, as_of)
    _verdicts(results, findings)
    by_system: dict[str, list] = {}  # each system's findings, so the verdicts take linear time
    for f in findings:
        by_system.setdefault(f.system, []).append(f)
    for result in results:
        conditions.verdicts(result, by_system.get(result.id, []))
    notes = unused_fields(loaded.model, lambda path: str(_location(loaded, path)))
    notes += dilution.unchecked_limits(model, results,
                                       lambda path: str(_location(loaded, path)))
    notes += [f"{s.id}: {note}" for s in results for note in s.notes]
    notes += makeup_notes
    notes += extra.notes(results)
    for p in packs:
        if p.units != units:
            notes.append(f"The schedule is in {units} units and rule pack {p.id} in {p.units}; "
                         "the pack's table values were converted exactly (1 cfm = 0.471947 L/s, "
                         "1 ft = 0.3048 m). The standard's own table for your unit system is "
                         "rounded separately; use that pack where one exists.")
    cautions = [SAFETY_CAUTION, *pack.cautions]
    cautions += [c for s in supplements for c in s.pack.cautions if c not in cautions]
    base_findings = [f for f in findings if f.pack in (None, pack.id)]
    cases = coverage.cases(model, pack, results, base_findings,
                           lambda path: _location(loaded, path), run.outcomes)
    for s, srun in zip(supplements, extra.runs):
        cases += coverage.pack_cases(s.pack, results,
                                     [f for f in findings if f.pack == s.pack.id], srun.outcomes)
    return Report(schedule_file=loaded.file, project_name=loaded.model.project.name, units=units,
                  pack=pack, systems=results, findings=findings, notes=notes, cautions=cautions,
                  waivers=statuses, waiver_date=waiver_date, cases=cases,
                  requirements=[*run.outcomes, *extra.outcomes()],
                  contaminant_units={c.id: c.unit for c in loaded.model.contaminants},
                  supplements=list(supplements), series=series)


def _verdicts(results: list[SystemResult], findings) -> None:
    """Zone and system verdicts: a live ``fail`` finding of basis ``code`` fails its subject;
    a declared limit missed changes no verdict."""
    live = [f for f in findings if f.severity == "fail" and not f.waived and not f.declared]
    failing = {f.subject for f in live}
    failing_systems = {f.system for f in live}
    for s in results:
        s.verdict = "fail" if s.id in failing_systems else "pass"
        for z in s.zones:
            own = f"{s.id}/{z.id}" in failing
            shared = SYSTEM_KINDS[s.kind].one_zone and s.id in failing  # its one zone
            z.verdict = "fail" if own or shared else "pass"
