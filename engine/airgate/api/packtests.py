"""Pack tests: schedules shipped with a pack, with the verdict expected per subject and rule.

A pack folder (a root of the search path) holds its test cases in ``tests/<pack-id>/*.yaml``
(format: ``rules/schema/pack-test.schema.json``). Each case runs its schedule against the pack
and compares, for every expectation, the verdict of a rule on a subject:

- a requirement: its outcome (``pass``, ``fail``, ``not-evaluated``), ``not-applicable`` where
  its selector does not take the subject;
- a check: ``fail`` where it has a finding on the subject, ``not-evaluated`` where its only
  findings say so, ``pass`` otherwise;
- no rule: the subject's own verdict (``pass`` or ``fail``).

A case may instead expect the run to stop with an error (``error: {contains: ...}``). Every
requirement a pack defines or changes needs at least one passing and one failing expectation;
a pack without cases fails too.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from airgate.api.core import evaluate
from airgate.errors import AirgateError, ErrorGroup, nearest
from airgate.models.loaded import LoadedSchedule
from airgate.readers import layering, packschema
from airgate.readers.document import Document, load
from airgate.readers.layering import Root
from airgate.readers.options import OptionError, as_schedule_error
from airgate.readers.rulepack import is_path, load_document, load_pack
from airgate.readers.schedule import read_schedule, validate

VERDICTS = ("pass", "fail", "not-evaluated", "not-applicable")


class PackTestError(AirgateError):
    """A pack test case that cannot be read or names what does not exist."""

    kind = "pack test error"


@dataclass
class CaseResult:
    file: str
    title: str
    pack: str
    expectations: int = 0
    failures: list[str] = field(default_factory=list)
    #: (rule, verdict) of every requirement expectation that held
    covered: set[tuple[str, str]] = field(default_factory=set)


@dataclass
class PackResult:
    pack: str
    file: str
    cases: list[CaseResult] = field(default_factory=list)
    problems: list[str] = field(default_factory=list)  #: coverage and missing tests

    @property
    def ok(self) -> bool:
        return not self.problems and all(not c.failures for c in self.cases)


def tests_folder(pack_file: Path, pack_id: str) -> Path:
    return pack_file.parent / "tests" / pack_id


def case_files(folder: Path) -> list[Path]:
    return sorted(p for s in layering.PACK_SUFFIXES for p in folder.glob(f"*{s}") if p.is_file())


def _is_case(path: Path) -> bool:
    """A test case has ``test:`` and ``schedule:`` at its top level."""
    try:
        data = load(path, PackTestError).data
    except AirgateError:
        return False
    return isinstance(data, dict) and "test" in data and "schedule" in data


def plan(target: str | None, search: Sequence[str | Path] = ()) -> tuple[tuple[Root, ...], list]:
    """The roots to search and the (pack ref, pack file, case files) to run for ``target``.

    No target: every built-in pack. A folder: its packs (the folder joins the search path).
    A pack file or id: that pack. A case file: that case alone.
    """
    roots = layering.search_roots(search)
    if target is None:
        builtin = roots[0].path
        packs = sorted(builtin.glob("*.yaml"), key=lambda p: p.stem)
        return roots, [(p.stem, p, case_files(tests_folder(p, p.stem))) for p in packs]
    path = Path(target)
    if path.is_dir():
        roots = (roots[0], Root(path, "--rules-path"), *roots[1:])
        packs = sorted((p for s in layering.PACK_SUFFIXES for p in path.glob(f"*{s}")
                        if p.is_file()), key=lambda p: (p.stem, p.suffix))
        return roots, [(p.stem, p, case_files(tests_folder(p, p.stem))) for p in packs]
    if path.is_file() and _is_case(path):
        return roots, [(None, None, [path])]
    if is_path(target):
        if not path.is_file():
            raise PackTestError(f"{target}: no such file or folder", field=("PATH",))
        doc = load_document(str(path), search=roots)
        return roots, [(str(path), path, case_files(tests_folder(path, doc.pack_id)))]
    pack_file = layering.find(target, roots)
    return roots, [(target, pack_file, case_files(tests_folder(pack_file, target)))]


def _sub_document(doc: Document, key: str) -> Document:
    """The document under ``key``, its positions re-rooted (errors still name the case file)."""
    return Document(file=doc.file, data=doc.data[key],
                    positions={p[1:]: v for p, v in doc.positions.items() if p[:1] == (key,)},
                    texts={p[1:]: v for p, v in doc.texts.items() if p[:1] == (key,)})


def _schedule(doc: Document) -> LoadedSchedule:
    raw = doc.data["schedule"]
    if isinstance(raw, str):
        return read_schedule(Path(doc.file).parent / raw)
    sub = _sub_document(doc, "schedule")
    try:
        return LoadedSchedule(model=validate(sub), doc=sub)
    except AirgateError as exc:
        for e in exc.errors if isinstance(exc, ErrorGroup) else [exc]:
            e.field = ("schedule", *e.field)
        raise


def _run(loaded: LoadedSchedule, pack_ref: str, roots: tuple[Root, ...]):
    """The pack under test and the case's report. A supplement pack is checked beside the rates
    pack the case's schedule names first in ``rules:`` (and beside its other supplements)."""
    options = loaded.model.project.options
    try:
        if load_document(pack_ref, search=roots).data.get("role") == "supplement":
            pack = load_pack(pack_ref, search=roots)
            refs = loaded.model.rule_refs
            if not refs:
                raise loaded.error(f"rule pack {pack.id} is a supplement pack: the case's "
                                   "schedule names the rates pack it is checked beside",
                                   ("rules",), hint="add rules: ashrae-62.1-2019 (or another "
                                   "rates pack) to the case's schedule")
            rates = load_pack(refs[0], options=options, search=roots)
            also = [load_pack(r, search=roots) for r in refs[1:]]
            scoped = any(pack.id in s.extra_rules or pack_ref in s.extra_rules
                         for s in loaded.model.systems)
            if not scoped and all(p.id != pack.id for p in also):
                also.append(pack)  # on every system, unless the schedule says where
            return pack, evaluate(loaded, rates, also=also, search=roots)
        pack = load_pack(pack_ref, options=options, search=roots)
    except OptionError as exc:
        raise as_schedule_error(exc, loaded) from None
    return pack, evaluate(loaded, pack, search=roots)


def _actual(report: Any, pack: Any, subject: str, rule: str | None) -> tuple[str, str | None]:
    if rule is None:
        for s in report.systems:
            if s.id == subject:
                return s.verdict, None
            for z in s.zones:
                if f"{s.id}/{z.id}" == subject:
                    return z.verdict, None
    if rule in pack.requirements:
        for o in report.requirements:
            if o.rule == rule and o.subject == subject and (o.pack or report.pack.id) == pack.id:
                return o.verdict, (o.finding.severity if o.finding else None)
        return "not-applicable", None
    found = [f for f in report.findings if f.rule == rule and f.subject == subject
             and report.pack_of(f) == pack.id]
    if not found:
        return "pass", None
    real = [f for f in found if not f.message.startswith("not evaluated")]
    if not real:
        return "not-evaluated", found[0].severity
    return "fail", real[0].severity


def _subjects(report: Any) -> list[str]:
    return [x for s in report.systems for x in (s.id, *(f"{s.id}/{z.id}" for z in s.zones))]


def run_case(path: Path, pack_ref: str | None, roots: tuple[Root, ...],
             schedule: LoadedSchedule | None = None) -> CaseResult:
    """Run one case file; raise :class:`PackTestError` (or the pack's error) when it is broken.

    ``schedule`` replaces the case's own schedule (to hold another file to its expectations).
    """
    doc = load(path, PackTestError)
    packschema.validate(doc, "pack-test", PackTestError)
    data = doc.data
    if ("expect" in data) == ("error" in data):
        raise doc.error(PackTestError, "a case gives either expect (verdicts) or error (the run "
                        "must stop with that text)", (), hint="add expect: [...] or error: {...}")
    pack_ref = data.get("pack") or pack_ref or path.parent.name
    result = CaseResult(file=str(path), title=data["title"], pack=pack_ref)
    try:
        loaded = schedule or _schedule(doc)
        pack, report = _run(loaded, pack_ref, roots)
    except AirgateError as exc:
        if "error" not in data:
            raise
        result.expectations = 1
        wanted = data["error"]["contains"]
        if wanted not in exc.render():
            line = doc.locate(("error", "contains"))[0]
            result.failures.append(f"{path}:{line}: expected an error containing {wanted!r}, got: "
                                   f"{exc.render().splitlines()[0]}")
        return result
    if "error" in data:
        line = doc.locate(("error",))[0]
        result.expectations = 1
        result.failures.append(f"{path}:{line}: expected the run to stop with an error "
                               f"containing {data['error']['contains']!r}; it ran ({report.verdict})")
        return result
    subjects = _subjects(report)
    rules = sorted({*pack.checks, *pack.requirements})
    for k, exp in enumerate(data["expect"]):
        at = ("expect", k)
        subject, rule = exp["subject"], exp.get("rule")
        if subject not in subjects:
            close = nearest(subject, subjects)
            raise doc.error(PackTestError, f"no system or zone '{subject}' in the case's schedule"
                            + (f"; did you mean '{close[0]}'?" if close else ""),
                            at + ("subject",), allowed=subjects)
        if rule is not None and rule not in rules:
            gone = next((pack.retirement(c, rule) for c in ("checks", "requirements")
                         if pack.retirement(c, rule)), None)
            close = nearest(rule, rules)
            raise doc.error(PackTestError, f"rule pack {pack.id} has no check or requirement "
                            f"'{rule}'" + (f"; it was {gone.text()}" if gone else "")
                            + (f"; did you mean '{close[0]}'?" if close else ""),
                            at + ("rule",), allowed=rules)
        verdict, severity = _actual(report, pack, subject, rule)
        result.expectations += 1
        want_sev = exp.get("severity")
        if verdict == exp["verdict"] and (want_sev is None or want_sev == severity):
            if rule in pack.requirements:
                result.covered.add((rule, verdict))
            continue
        line, column = doc.locate(at)
        got = verdict + (f" ({severity})" if severity and want_sev else "")
        want = exp["verdict"] + (f" ({want_sev})" if want_sev else "")
        result.failures.append(f"{path}:{line}:{column}: {subject} [{rule or 'verdict'}]: "
                               f"expected {want}, got {got}")
    return result


def own_requirements(doc: Any) -> list[str]:
    """Requirement ids the pack itself defines or changes (inherited ones are its base's)."""
    out = []
    for i, r in enumerate(doc.data.get("requirements", [])):
        if (doc.origin(("requirements", i)).pack == doc.pack_id
                or doc.origin(("requirements", i, "source")).pack == doc.pack_id):
            out.append(r["id"])
    return out


def run(target: str | None, search: Sequence[str | Path] = ()) -> list[PackResult]:
    """Run the pack tests of ``target`` (see :func:`plan`)."""
    roots, items = plan(target, search)
    results = []
    for pack_ref, pack_file, cases in items:
        if pack_ref is None:  # a single case file
            case = run_case(cases[0], None, roots)
            pr = PackResult(pack=case.pack, file=str(cases[0]), cases=[case])
            results.append(pr)
            continue
        doc = load_document(pack_ref if is_path(pack_ref) else pack_ref, search=roots)
        pr = PackResult(pack=doc.pack_id, file=str(pack_file))
        if not cases:
            pr.problems.append(f"no test cases in {tests_folder(pack_file, doc.pack_id)}")
        for case in cases:
            pr.cases.append(run_case(case, pack_ref, roots))
        covered = set().union(*(c.covered for c in pr.cases)) if pr.cases else set()
        for rid in own_requirements(doc):
            for verdict in ("pass", "fail"):
                if (rid, verdict) not in covered:
                    pr.problems.append(f"requirement {rid} has no {'passing' if verdict == 'pass' else 'failing'} case")
        results.append(pr)
    return results
