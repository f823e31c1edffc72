"""Which checks ran on which subject: the passes as well as the findings.

Findings only say what went wrong. A test report (JUnit) and a reviewer's table need every check
that applied to a system or zone, passed or not. Which checks apply follows from the pack's
``checks:`` and from what the evaluation computed (a zone with a primary airflow Vpz was checked
against its Voz; a zone with a Evz was checked against the Ev the intake needs; ...). A finding
whose check this module does not derive still gets its own case, so no finding is ever left out.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass

from airgate.evaluation import iaqp
from airgate.evaluation.checks import DECLARED_CHECKS
from airgate.evaluation.findings import CODE, DECLARED, SEVERITY_RANK, Amount, Finding, Location
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.system_kinds import kind_of
from airgate.models.rules import RulePack
from airgate.models.schedule import Schedule, System

#: case status, worst first
STATUS_ORDER = ("fail", "warning", "waived", "info", "pass")


@dataclass(frozen=True)
class CheckCase:
    """One check on one subject, with the findings it produced (none: it passed)."""

    rule: str
    subject: str
    system: str
    zone: str | None
    location: Location
    required: Amount | None = None
    provided: Amount | None = None
    findings: tuple[Finding, ...] = ()
    #: the pack whose rule this is, where the report lists several packs (None: the first)
    pack: str | None = None

    @property
    def basis(self) -> str:
        """``declared`` for a limit the schedule declares itself, else ``code``."""
        return DECLARED if self.rule in DECLARED_CHECKS or any(
            f.declared for f in self.findings) else CODE

    @property
    def status(self) -> str:
        """``fail``, ``warning`` (unwaived findings), ``waived``, ``info`` or ``pass``."""
        live = [f.severity for f in self.findings if not f.waived]
        for severity in ("fail", "warning"):
            if severity in live:
                return severity
        if any(f.waived for f in self.findings):
            return "waived"
        return "info" if live else "pass"


def _amount(value: float | None, kind: str) -> Amount | None:
    return None if value is None else Amount(value, kind)


def _value(trail, symbol: str) -> float | None:
    return trail.value(symbol) if symbol in trail else None


def _system_checks(system: System, result: SystemResult) -> Iterator[tuple]:
    t = result.trail
    if kind_of(system).intake:
        yield ("iaqp-intake" if iaqp.on_path(system) else "system-intake", ("outdoor_air",),
               _amount(_value(t, "Vot"), "airflow"), _amount(_value(t, "Vot_design"), "airflow"))
    yield from _path_checks(system, kind_of(system).system_checks(system, result))
    if system.is_recirculating:
        yield "air-class-mixing", (), None, None


def _exhaust_checks(z: ZoneResult) -> Iterator[tuple]:
    """A zone's exhaust against its row; the class of makeup air transferred to it."""
    zt = z.trail
    yield ("zone-exhaust", ("exhaust", "airflow"), _amount(_value(zt, "Ve"), "airflow"),
           _amount(_value(zt, "Ve_design"), "airflow"))
    if getattr(z.makeup, "source", None) == "transfer":
        for rule in ("makeup-transfer-class", "makeup-transfer-use"):
            yield rule, ("exhaust", "makeup", "transfer_from"), None, None


def _path_checks(system: System, checks: Iterator[tuple]) -> Iterator[tuple]:
    """A kind's checks, less the rate procedure's minimums on the IAQ procedure."""
    return (c for c in checks if not (iaqp.on_path(system) and c[0] in iaqp.RATE_CHECKS))


def _zone_checks(system: System, z: ZoneResult, result: SystemResult,
                 pack: RulePack) -> Iterator[tuple]:
    zt = z.trail
    if not kind_of(system).supplies:  # an exhaust fan's zone: its exhaust only
        yield from _exhaust_checks(z)
        return
    yield "space-without-rates", (), None, None
    if kind_of(system).intake:
        yield "air-distribution-assumed", (), None, None
    yield "population-without-density", (), None, None
    yield from _path_checks(system, kind_of(system).zone_checks(system, z, result, pack))
    if iaqp.on_path(system) and any("C_bz" in t for t in z.contaminants.values()):
        yield "iaqp-concentration", (), None, None
    if system.is_recirculating:
        yield "air-class-recirculation", (), None, None
    if "Ve" in zt:
        yield from _exhaust_checks(z)
    limits = [z.dilution] if z.dilution is not None else []
    if not iaqp.on_path(system):  # on the IAQ procedure they are design limits
        limits += list(z.contaminants.values())
    if any("C_limit" in t for t in limits):
        yield "concentration-limit", (), None, None
    if z.dilution is not None and "T" in z.dilution:
        yield "short-term-averaging", (), None, None


def applicable(model: Schedule, pack: RulePack, results: list[SystemResult],
               locate: Callable[[tuple], Location]) -> list[CheckCase]:
    """Every check the pack runs, and every limit the schedule declares, that applies to each
    system and zone, in schedule order."""
    out: list[CheckCase] = []
    located: dict[tuple, Location] = {}  # a zone's checks mostly share its own location

    def locate_once(path: tuple) -> Location:
        at = located.get(path)
        if at is None:
            at = located[path] = locate(path)
        return at

    for i, (system, result) in enumerate(zip(model.systems, results)):
        base = ("systems", i)
        for rule, field, required, provided in _system_checks(system, result):
            if rule in pack.checks:
                out.append(CheckCase(rule, system.id, system.id, None, locate(base + field),
                                     required, provided))
        for j, z in enumerate(result.zones):
            zbase = base + ("zones", j)
            for rule, field, required, provided in _zone_checks(system, z, result, pack):
                if rule in pack.checks or rule in DECLARED_CHECKS:
                    out.append(CheckCase(rule, f"{system.id}/{z.id}", system.id, z.id,
                                         locate_once(zbase + field), required, provided))
    return out


def _requirement_cases(outcomes, results: list[SystemResult], seen) -> list[CheckCase]:
    """A case for each requirement of the pack that passed on a subject (failures come as
    findings)."""
    where = {s.id: (s.id, None, s.location) for s in results}
    where.update({f"{s.id}/{z.id}": (s.id, z.id, z.location) for s in results for z in s.zones})
    out = []
    for o in outcomes:
        if o.verdict != "pass" or (o.rule, o.subject) in seen or o.subject not in where:
            continue
        system, zone, location = where[o.subject]
        out.append(CheckCase(o.rule, o.subject, system, zone, location))
        seen.add((o.rule, o.subject))
    return out


def cases(model: Schedule, pack: RulePack, results: list[SystemResult],
          findings: list[Finding], locate: Callable[[tuple], Location],
          outcomes: Sequence = ()) -> list[CheckCase]:
    """The applicable checks with their findings attached, plus a case for any other finding
    and for every pack requirement that passed (``outcomes``, airgate.evaluation.requirements).

    A finding's own required and provided amounts (and location) take precedence over the
    case's, so a failing case shows exactly what its finding says.
    """
    derived = applicable(model, pack, results, locate)
    by_key: dict[tuple[str, str], list[Finding]] = {}
    for f in findings:
        by_key.setdefault((f.rule, f.subject), []).append(f)
    out: list[CheckCase] = []
    seen: set[tuple[str, str]] = set()
    for case in derived:
        key = (case.rule, case.subject)
        seen.add(key)
        out.append(_attach(case, by_key.get(key, [])))
    order = {s: n for n, s in enumerate(c.subject for c in derived)}
    extra = [_from_findings(fs) for key, fs in by_key.items() if key not in seen]
    seen.update(by_key)
    out += extra + _requirement_cases(outcomes, results, seen)
    rank = {rule: n for n, rule in enumerate([*pack.checks, *pack.requirements])}
    return sorted(out, key=lambda c: (order.get(c.subject, len(order)), c.subject,
                                      rank.get(c.rule, len(rank)), c.rule))


def pack_cases(pack: RulePack, results: list[SystemResult], findings: list[Finding],
               outcomes: Sequence = ()) -> list[CheckCase]:
    """The cases of a supplement pack (:mod:`airgate.evaluation.supplements`): one per finding
    of its rules and one per requirement that passed, each naming the pack; kept apart from the
    rates pack's cases, so a rule id both packs use is two cases."""
    by_key: dict[tuple[str, str], list[Finding]] = {}
    for f in findings:
        by_key.setdefault((f.rule, f.subject), []).append(f)
    out = [_from_findings(fs) for fs in by_key.values()]
    out += _requirement_cases(outcomes, results, set(by_key))
    order = {s: n for n, s in enumerate(
        [r.id for r in results] + [f"{r.id}/{z.id}" for r in results for z in r.zones])}
    rank = {rule: n for n, rule in enumerate(pack.requirements)}
    out = [dataclasses.replace(c, pack=pack.id) for c in out]
    return sorted(out, key=lambda c: (order.get(c.subject, len(order)), c.subject,
                                      rank.get(c.rule, len(rank)), c.rule))


def _attach(case: CheckCase, found: list[Finding]) -> CheckCase:
    if not found:
        return case
    first = min(found, key=lambda f: SEVERITY_RANK[f.severity])
    own = first.required is not None or first.provided is not None
    required, provided = ((first.required, first.provided) if own
                          else (case.required, case.provided))
    return CheckCase(case.rule, case.subject, case.system, case.zone, first.location,
                     required, provided, tuple(found))


def _from_findings(found: list[Finding]) -> CheckCase:
    f = min(found, key=lambda f: SEVERITY_RANK[f.severity])
    return CheckCase(f.rule, f.subject, f.system, f.zone, f.location, f.required, f.provided,
                     tuple(found))
