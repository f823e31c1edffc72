"""Evaluate a loaded schedule against a rule pack: the orchestrating chain.

Nothing here reads a file: the schedule, the pack and the data tables arrive loaded
(:mod:`airgate.api` reads them and calls :func:`evaluate`).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

from airgate.errors import AirgateError, raise_all
from airgate.evaluation import bind, contaminants, coverage, dilution, systems, waivers
from airgate.evaluation.checks import DECLARED_CHECKS, KNOWN_CHECKS, Emitter
from airgate.evaluation.system_kinds import kind_of
from airgate.evaluation.findings import Location
from airgate.evaluation.requirements import Run as RequirementRun
from airgate.evaluation.report import SAFETY_CAUTION, Report, SystemResult
from airgate.evaluation.trail import Trail
from airgate.evaluation.unused import unused_fields
from airgate.evaluation.zones import ZoneContext, evaluate_zone
from airgate.models.datatables import Tables
from airgate.models.loaded import LoadedSchedule
from airgate.models.rules import RulePack
from airgate.models.schedule import SYSTEM_KINDS


def _location(loaded: LoadedSchedule, path: tuple) -> Location:
    return Location(*loaded.locate(path))


def _bind_all(loaded: LoadedSchedule, pack: RulePack, tables: Tables,
              run: RequirementRun | None = None) -> list[list[ZoneContext]]:
    errors: list[AirgateError] = []
    out = []
    for i, system in enumerate(loaded.model.systems):
        ctxs = []
        for j, zone in enumerate(system.zones):
            path = ("systems", i, "zones", j)
            cat = bind.collect(errors, bind.category, loaded, pack, zone, path)
            ez = bind.collect(errors, bind.air_distribution, loaded, pack, zone, path)
            bind.collect(errors, bind.dilution_refs, loaded, zone, path, tables)
            if cat is not None and ez is not None and run is not None:  # the pack's requirements
                cat, ez = bind.collect(errors, run.adjust, i, j, cat, ez) or (None, None)
            if cat is not None and ez is not None:
                fields = {name: _location(loaded, path + (name,)) for name in
                          ("area", "occupants", "bedrooms") if getattr(zone, name) is not None}
                ctxs.append(ZoneContext(zone=zone, path=path, location=_location(loaded, path),
                                        category=cat, ez=ez, subject=f"{system.id}/{zone.id}",
                                        system_id=system.id, fields=fields))
        out.append(ctxs)
        errors.extend(kind_of(system).check_inputs(loaded, pack, i))
    raise_all(errors)
    return out


def evaluate(loaded: LoadedSchedule, pack: RulePack, tables: Tables,
             extra_waivers: Sequence[waivers.WaiverEntry] = (),
             as_of: dt.date | None = None) -> Report:
    """Evaluate every system and zone of ``loaded`` under ``pack``.

    ``tables``: the physical data tables by id (:data:`airgate.readers.datatables.BUILTIN`).

    The schedule's own waivers, then ``extra_waivers`` (a waivers file), are applied with expiry
    judged on ``as_of`` (default today).
    """
    bind.check_pack_checks(pack, set(KNOWN_CHECKS))
    entries = [*waivers.from_schedule(loaded), *extra_waivers]
    # a waiver may name an engine check, a declared limit's check or a requirement of the pack
    raise_all(waivers.rule_errors(entries, [*KNOWN_CHECKS, *DECLARED_CHECKS, *pack.requirements]))
    units = loaded.model.project.units
    run = RequirementRun(pack, loaded)
    bound = _bind_all(loaded, pack, tables, run)
    emitter = Emitter(pack, units, lambda path: _location(loaded, path))
    results = []
    for i, (system, ctxs) in enumerate(zip(loaded.model.systems, bound)):
        where = _location(loaded, ("systems", i))
        intake_at = _location(loaded, ("systems", i, "outdoor_air"))
        zones = [evaluate_zone(ctx, pack, emitter) for ctx in ctxs]
        result = SystemResult(id=system.id, name=system.name, kind=system.kind, location=where,
                              trail=Trail(), zones=zones)
        locate = lambda path: _location(loaded, path)  # noqa: E731
        kind_of(system).evaluate(system, ctxs, zones, result, pack, emitter, intake_at, locate)
        systems.air_classes(system, ctxs, emitter, where)
        dilution.analyse(system, ctxs, result, loaded.model, emitter, tables)
        contaminants.analyse(system, ctxs, result, loaded.model, emitter, tables)
        run.evaluate(i, system, ctxs, result, emitter)
        results.append(result)
    findings = sorted(emitter.findings, key=lambda f: f.sort_key())
    findings, statuses, waiver_date = waivers.review(findings, entries, pack, results, as_of)
    _verdicts(results, findings)
    notes = unused_fields(loaded.model, lambda path: str(_location(loaded, path)))
    notes += dilution.unchecked_limits(loaded.model, results,
                                       lambda path: str(_location(loaded, path)))
    notes += [f"{s.id}: {note}" for s in results for note in s.notes]
    if pack.units != units:
        notes.append(f"The schedule is in {units} units and rule pack {pack.id} in {pack.units}; "
                     "the pack's table values were converted exactly (1 cfm = 0.471947 L/s, "
                     "1 ft = 0.3048 m). The standard's own table for your unit system is rounded "
                     "separately; use that pack where one exists.")
    cautions = [SAFETY_CAUTION, *pack.cautions]
    cases = coverage.cases(loaded.model, pack, results, findings,
                           lambda path: _location(loaded, path), run.outcomes)
    return Report(schedule_file=loaded.file, project_name=loaded.model.project.name, units=units,
                  pack=pack, systems=results, findings=findings, notes=notes, cautions=cautions,
                  waivers=statuses, waiver_date=waiver_date, cases=cases,
                  requirements=run.outcomes)


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
