"""Which checks ran on which subject: the passes as well as the findings.

Findings only say what went wrong. A test report (JUnit) and a reviewer's table need every check
that applied to a system or zone, passed or not. Which checks apply follows from the pack's
``checks:`` and from what the evaluation computed (a zone with a primary airflow Vpz was checked
against its Voz; a zone with a Evz was checked against the Ev the intake needs; ...). A finding
whose check this module does not derive still gets its own case, so no finding is ever left out.

The cases of a report are worked out the first time a writer reads them (:class:`Cases`): the
text, Markdown, HTML, JUnit and SARIF reports do; the JSON report does not.
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


class _ZoneChecks:
    """The checks that apply to each zone of one system, each (rule, field, required,
    provided): what the system decides (its kind, its procedure, whether it recirculates) is
    looked at once, not once per zone."""

    def __init__(self, system: System, result: SystemResult, pack: RulePack) -> None:
        kind = kind_of(system)
        self.system, self.result, self.pack = system, result, pack
        self.kind = kind
        self.supplies = kind.supplies
        self.on_path = iaqp.on_path(system)
        self.recirculating = system.is_recirculating
        self.first = (("space-without-rates", (), None, None),
                      *((("air-distribution-assumed", (), None, None),) if kind.intake else ()),
                      ("population-without-density", (), None, None))

    def __call__(self, z: ZoneResult) -> Iterator[tuple]:
        zt = z.trail
        if not self.supplies:  # an exhaust fan's zone: its exhaust only
            yield from _exhaust_checks(z)
            return
        yield from self.first
        checks = self.kind.zone_checks(self.system, z, self.result, self.pack)
        yield from (_path_checks(self.system, checks) if self.on_path else checks)
        if self.on_path and any("C_bz" in t for t in z.contaminants.values()):
            yield "iaqp-concentration", (), None, None
        if self.recirculating:
            yield "air-class-recirculation", (), None, None
        if "Ve" in zt:
            yield from _exhaust_checks(z)
        limits = [z.dilution] if z.dilution is not None else []
        if not self.on_path:  # on the IAQ procedure they are design limits
            limits += z.contaminants.values()
        if any("C_limit" in t for t in limits):
            yield "concentration-limit", (), None, None
        if z.dilution is not None and "T" in z.dilution:
            yield "short-term-averaging", (), None, None


def _groups(model: Schedule, pack: RulePack, results: list[SystemResult],
            locate: Callable[[tuple], Location]) -> Iterator[tuple[str, list[CheckCase]]]:
    """Each subject's applicable checks, subject by subject in schedule order (a system, then
    each of its zones)."""
    wanted = set(pack.checks) | set(DECLARED_CHECKS)
    for i, (system, result) in enumerate(zip(model.systems, results)):
        base = ("systems", i)
        yield system.id, [CheckCase(rule, system.id, system.id, None, locate(base + field),
                                    required, provided)
                          for rule, field, required, provided in _system_checks(system, result)
                          if rule in pack.checks]
        checks = _ZoneChecks(system, result, pack)
        for j, z in enumerate(result.zones):
            subject, zbase = f"{system.id}/{z.id}", base + ("zones", j)
            # a zone's checks are mostly located at the zone itself
            yield subject, [CheckCase(rule, subject, system.id, z.id,
                                      locate(zbase + field) if field else z.location,
                                      required, provided)
                            for rule, field, required, provided in checks(z) if rule in wanted]


def applicable(model: Schedule, pack: RulePack, results: list[SystemResult],
               locate: Callable[[tuple], Location]) -> list[CheckCase]:
    """Every check the pack runs, and every limit the schedule declares, that applies to each
    system and zone, in schedule order."""
    return [case for _, group in _groups(model, pack, results, locate) for case in group]


def _requirement_cases(outcomes, results: list[SystemResult], seen) -> list[CheckCase]:
    """A case for each requirement of the pack that passed on a subject (failures come as
    findings)."""
    if not outcomes:
        return []
    where = {s.id: (s.id, None, s.location) for s in results}
    where.update({f"{s.id}/{z.id}": (s.id, z.id, z.location) for s in results for z in s.zones})
    out = []
    for o in outcomes:
        if o.verdict != "pass" or (o.rule, o.subject) in seen or o.subject not in where:
            continue
        system, zone, location = where[o.subject]
        out.append(CheckCase(o.rule, o.subject, system, zone, location,
                             o.required, o.provided))
        seen.add((o.rule, o.subject))
    return out


class Cases(Sequence):
    """A report's check cases, worked out the first time they are read (a report written only
    as JSON never reads them), then kept. It reads like a list: iterating, indexing, ``len``,
    ``==`` with a list; ``+=`` a list of cases adds them after the derived ones; a copy or a
    pickle of it is the list itself.

    What it is worked out from (the evaluated systems and zones, the findings) is what the
    evaluation left; nothing changes them afterwards.
    """

    __hash__ = None  # type: ignore[assignment] - compared like a list

    def __init__(self, make: Callable[[], list[CheckCase]]) -> None:
        self._make: Callable[[], list[CheckCase]] | None = make
        self._more: list[CheckCase] = []
        self._cases: list[CheckCase] | None = None

    def _list(self) -> list[CheckCase]:
        if self._cases is None:
            make, self._make = self._make, None
            self._cases = make() + self._more
            self._more = []
        return self._cases

    def __getitem__(self, index):
        return self._list()[index]

    def __len__(self) -> int:
        return len(self._list())

    def __iter__(self) -> Iterator[CheckCase]:
        return iter(self._list())

    def __iadd__(self, more: Sequence[CheckCase]) -> Cases:
        if self._cases is None:
            self._more += more
        else:
            self._cases += more
        return self

    def __eq__(self, other: object) -> bool:
        if isinstance(other, (Cases, list)):
            return self._list() == list(other)
        return NotImplemented

    def __repr__(self) -> str:
        return repr(self._list())

    def __reduce__(self):
        return list, (self._list(),)


def cases(model: Schedule, pack: RulePack, results: list[SystemResult],
          findings: list[Finding], locate: Callable[[tuple], Location],
          outcomes: Sequence = ()) -> Cases:
    """:func:`derive`, worked out when first read (:class:`Cases`)."""
    return Cases(lambda: derive(model, pack, results, findings, locate, outcomes))


def derive(model: Schedule, pack: RulePack, results: list[SystemResult],
           findings: list[Finding], locate: Callable[[tuple], Location],
           outcomes: Sequence = ()) -> list[CheckCase]:
    """The applicable checks with their findings attached, plus a case for any other finding
    and for every pack requirement that passed (``outcomes``, airgate.evaluation.requirements).

    A finding's own required and provided amounts (and location) take precedence over the
    case's, so a failing case shows exactly what its finding says.

    Order: subject by subject as the evaluation met them (a subject met only in a finding or an
    outcome after those, by name), then each subject's rules in the pack's order (its checks,
    then its requirements; a rule it does not list after them, by id).
    """
    found: dict[str, dict[str, list[Finding]]] = {}  # subject → rule → its findings
    for f in findings:
        found.setdefault(f.subject, {}).setdefault(f.rule, []).append(f)
    groups: dict[str, list[CheckCase]] = {}
    last: dict[str, int] = {}  # where a subject was last met (a subject met twice sorts there)
    seen: set[tuple[str, str]] = set()
    for n, (subject, group) in enumerate(_groups(model, pack, results, locate)):
        own = found.get(subject)
        if own:
            group = [_attach(case, own.get(case.rule, [])) for case in group]
            seen.update((case.rule, subject) for case in group)
        if group:
            groups.setdefault(subject, []).extend(group)
            last[subject] = n
    for subject, rules in found.items():  # findings of a check no case was derived for
        for rule, fs in rules.items():
            if (rule, subject) not in seen:
                groups.setdefault(subject, []).append(_from_findings(fs))
        seen.update((rule, subject) for rule in rules)
    if outcomes:  # a requirement that passed where a case already is gets no other
        seen.update((case.rule, subject) for subject, group in groups.items() for case in group)
        for case in _requirement_cases(outcomes, results, seen):
            groups.setdefault(case.subject, []).append(case)
    rank = {rule: n for n, rule in enumerate([*pack.checks, *pack.requirements])}
    orders: dict[tuple[str, ...], tuple[int, ...]] = {}
    ordered = sorted(groups, key=lambda s: (last.get(s, len(last)), s))
    return [case for subject in ordered for case in _by_rule(groups[subject], rank, orders)]


def _by_rule(group: list[CheckCase], rank: dict[str, int],
             orders: dict[tuple[str, ...], tuple[int, ...]]) -> list[CheckCase]:
    """One subject's cases in the order of their rules in ``rank`` (a rule it lacks after those,
    by id; stable: cases of one rule keep their order). ``orders`` keeps the order of each
    sequence of rules met, worked out once: most zones have the same checks in the same order."""
    rules = tuple(case.rule for case in group)
    order = orders.get(rules)
    if order is None:
        order = orders[rules] = tuple(sorted(
            range(len(rules)), key=lambda k: (rank.get(rules[k], len(rank)), rules[k])))
    return [group[k] for k in order]


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
