"""The public entry points: read a schedule, load a rule pack, evaluate, check in one call.

This layer sits above the evaluation: it reads files (:mod:`airgate.readers`) and hands the
loaded schedule, pack and data tables to :func:`airgate.evaluation.engine.evaluate`, which reads
nothing itself. The command line calls these functions; so can any Python program
(``docs/api.md``). Bad input raises :class:`~airgate.errors.AirgateError` (located: file, line,
column, field) exactly as the command line reports it.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

from airgate.errors import RulePackError, raise_all
from airgate.evaluation import engine
from airgate.evaluation import report as results
from airgate.evaluation.checks import DECLARED_CHECKS, KNOWN_CHECKS
from airgate.evaluation.report import Supplement
from airgate.evaluation.review import CommentEntry, rule_errors, statuses
from airgate.evaluation.waivers import WaiverEntry
from airgate.gcpause import pausing
from airgate.models.loaded import LoadedSchedule
from airgate.models.rules import RulePack
from airgate.readers import datatables, rulepack
from airgate.readers.options import OptionError, as_schedule_error, choose
from airgate.readers.sources import import_notes, read_any

Search = Sequence[str | Path] | None


class Report(results.Report):
    """The result of one evaluation: systems and zones with their trails, findings, verdicts.

    ``verdict`` is ``"fail"`` when a finding of severity fail is not waived, else ``"pass"``;
    :meth:`to_dict` is the JSON report (contract version 2, ``docs/report-format.md``).
    """

    def to_dict(self, series_step: int = 0, trails: bool = False) -> dict[str, Any]:
        """The JSON report as Python data, exactly what ``airgate check --format json`` writes.

        ``series_step`` > 0 adds each zone's design-day CO2 series at that step [minutes]
        (ValueError if the report was evaluated with ``series=False``); ``trails`` adds every
        zone's calculation trails (``check --trails``).
        """
        from airgate.writers import json_report

        if series_step and not self.series:
            raise ValueError("series_step: this report was evaluated with series=False and "
                             "holds no design-day series; evaluate it with series=True")

        return json_report.to_dict(self, series_step, trails)

    @classmethod
    def of(cls, report: results.Report) -> Report:
        return cls(**{f.name: getattr(report, f.name) for f in dataclasses.fields(report)})


@pausing
def load_schedule(path: str | Path) -> LoadedSchedule:
    """Read and validate a schedule: YAML/JSON, or imported from CSV tables, XLSX, gbXML or IFC
    (chosen by the file's suffix, ``docs/importing.md``)."""
    return read_any(path)


def load_waivers(path: str | Path) -> list[WaiverEntry]:
    """Read a waivers file (``--waivers``, docs/report-format.md): its entries, for the
    ``waivers`` argument of :func:`check` and :func:`evaluate`."""
    from airgate.evaluation.waivers import from_file
    from airgate.readers.waivers import read_waivers

    return from_file(read_waivers(path))


def load_review(path: str | Path) -> list[CommentEntry]:
    """Read a reviewer's record (``--review``, docs/review.md): its comments, for the ``review``
    argument of :func:`check` and :func:`evaluate`. Every problem is raised at once, located."""
    from airgate.evaluation.review import from_file
    from airgate.readers.review import read_review

    loaded, where, errors = read_review(path)
    raise_all(errors)
    return from_file(loaded, where)


def load_pack(id_or_path: str | Path, search: Search = None, *,
              options: Mapping[str, str] | None = None) -> RulePack:
    """Load a rule pack by built-in id (``ashrae-62.1-2019``) or file path, validated and built.

    ``search``: folders of rule packs looked in after the built-in ones (``--rules-path``).
    ``options``: the pack's options (``project.options`` of a schedule); options left out take
    their defaults. A relative path is taken from the working directory.
    """
    return rulepack.load_pack(str(id_or_path), options=options, search=tuple(search or ()))


@pausing
def evaluate(schedule: LoadedSchedule, pack: RulePack, *, waivers: Sequence[WaiverEntry] = (),
             as_of: dt.date | None = None, review: Sequence[CommentEntry] = (),
             also: Sequence[RulePack] | None = None, search: Search = None,
             series: bool = True) -> Report:
    """Evaluate ``schedule`` under ``pack``: findings, trails and verdicts.

    ``also``: supplement packs (``role: supplement``) checked beside ``pack`` on every system;
    None: those the schedule lists after its first pack in ``rules:``. The supplement packs a
    system lists under ``extra_rules`` are loaded (relative to the schedule's folder, on the
    search path ``search``) and checked on that system.

    A pack with options must have been loaded with the schedule's choices
    (``load_pack(..., options=schedule.model.project.options)``); otherwise the difference is
    reported at the schedule's ``project.options``. ``waivers``: entries of a waivers file applied
    after the schedule's own; expiry is judged on ``as_of`` (default today). ``review``: the
    comments of a reviewer's record (:func:`load_review`), each set against the findings in
    ``Report.review``; a comment naming a check id the engine does not know is an input error.
    ``series=False``: the zones' design-day CO2 series are not kept (their peaks and averages
    are, in the trails); for reports that draw no charts, a portfolio's evaluation then holds
    about 11.5 kB less per zone with a design day. ``airgate check`` keeps them only for the
    html and pdf formats and ``--series-step``.
    """
    _same_options(schedule, pack)
    _rates(pack, None)
    search = tuple(search or ())
    if also is None:
        also = [_pack(schedule, ref, False, search, ("rules", k + 1))
                for k, ref in enumerate(schedule.model.rule_refs[1:])]
        for k, p in enumerate(also):
            _supplement(p, schedule, ("rules", k + 1))
    supplements = _supplements(schedule, list(also), search)
    if review:
        raise_all(rule_errors(review, [*KNOWN_CHECKS, *DECLARED_CHECKS, *pack.requirements,
                                       *(r for s in supplements for r in s.pack.requirements)]))
    report = Report.of(engine.evaluate(schedule, pack, datatables.BUILTIN, waivers, as_of,
                                       supplements, series))
    report.review = statuses(report.findings, review)
    report.notes.extend(import_notes(schedule))  # rooms read/mapped/rejected; what was not mapped
    return report


def check(path: str | Path, rules: str | Sequence[str] | None = None, *, search: Search = None,
          waivers: Sequence[WaiverEntry] = (), as_of: dt.date | None = None,
          review: Sequence[CommentEntry] = (), series: bool = True) -> Report:
    """Read the schedule at ``path``, load its rule packs (or ``rules``) and evaluate it.

    The packs named in the schedule (``rules:``, one or a list) are looked up relative to the
    schedule's folder; ``rules`` (as ``--rules`` on the command line: one pack, or a list whose
    first is the rates pack and the rest supplements) relative to the working directory.
    ``review``, ``series``: as for :func:`evaluate`.
    """
    loaded = load_schedule(path)
    given = (rules,) if isinstance(rules, (str, Path)) else tuple(rules or ())
    refs = given or loaded.model.rule_refs
    if not refs:
        raise loaded.error("no rule pack: give 'rules:' in the schedule or --rules", ("rules",),
                           hint="e.g. rules: ashrae-62.1-2019")
    search = tuple(search or ())
    where = (lambda k: ("--rules",)) if given else (
        (lambda k: ("rules", k)) if isinstance(loaded.model.rules, list) else (lambda k: ("rules",)))
    packs = [_pack(loaded, str(ref), bool(given), search, where(k)) for k, ref in enumerate(refs)]
    _rates(packs[0], loaded if not given else None, where(0))
    for k, p in enumerate(packs[1:], 1):
        _supplement(p, loaded if not given else None, where(k))
    return evaluate(loaded, packs[0], waivers=waivers, as_of=as_of, review=review,
                    also=packs[1:], search=search, series=series)


def _rates(pack: RulePack, loaded: LoadedSchedule | None, field: tuple = ("rules",)) -> None:
    """The first pack is the one a schedule is evaluated under: a rates pack."""
    if pack.role == "rates":
        return
    message = (f"rule pack {pack.id} is a supplement pack (requirements only): list a rates "
               "pack first, and it after")
    hint = f"e.g. rules: [ashrae-62.1-2019, {pack.id}]"
    if loaded is not None:
        raise loaded.error(message, field, hint=hint)
    raise RulePackError(message, field=field, hint=hint)


def _supplement(pack: RulePack, loaded: LoadedSchedule | None, field: tuple) -> None:
    """A pack after the first is a supplement pack: a rates pack there is an input error,
    located in the schedule where ``loaded`` is given."""
    if pack.role == "supplement":
        return
    message = (f"rule pack {pack.id} is a rates pack: a schedule is evaluated under one rates "
               "pack, listed first; the packs after it must be supplement packs")
    hint = "check the schedule under each rates pack in its own run (airgate compare shows " \
           "the difference)"
    if loaded is not None:
        raise loaded.error(message, field, hint=hint)
    raise RulePackError(message, field=field, hint=hint)


def _supplements(loaded: LoadedSchedule, also: list[RulePack], search: tuple) -> list:
    """The supplement packs of an evaluation: ``also`` on every system, then each pack a system
    lists under ``extra_rules`` on the systems that list it (a pack already on every system is
    not repeated). A rates pack here is an input error where it is named."""
    for k, p in enumerate(also):
        _supplement(p, None, ("also", k))
    out = [Supplement(p) for p in also]
    wide = {p.id for p in also}
    scoped: dict[str, tuple[RulePack, set[str]]] = {}
    for i, system in enumerate(loaded.model.systems):
        for k, ref in enumerate(system.extra_rules):
            at = ("systems", i, "extra_rules", k)
            p = _pack(loaded, ref, False, search, at)
            if p.role != "supplement":
                raise loaded.error(f"rule pack {p.id} is a rates pack; extra_rules lists "
                                   "supplement packs only", at,
                                   hint="give the schedule's rates pack under rules:")
            if p.id not in wide:
                scoped.setdefault(p.id, (p, set()))[1].add(system.id)
    out += [Supplement(p, frozenset(ids)) for p, ids in scoped.values()]
    return out


def _same_options(loaded: LoadedSchedule, pack: RulePack) -> None:
    try:
        chosen = choose(pack.options, loaded.model.project.options, pack.id)
    except OptionError as exc:
        raise as_schedule_error(exc, loaded) from None
    if chosen != pack.chosen:
        raise loaded.error(
            f"rule pack {pack.id} was loaded with options {pack.chosen}; the schedule chooses "
            f"{chosen}", ("project", "options"),
            hint="load the pack with the schedule's options: "
                 "load_pack(..., options=schedule.model.project.options)")


def _pack(loaded: LoadedSchedule, ref: str, from_option: bool,
          search: Sequence[str | Path] = (), field: tuple = ("rules",)) -> RulePack:
    """Load the rule pack ``ref``; a pack that cannot be found is reported where it was named.

    A path in the schedule is relative to the schedule's folder and confined to it and the pack
    search path (:func:`~airgate.readers.rulepack.resolve`); one given with ``--rules`` is
    relative to the working directory.
    """
    base = Path.cwd() if from_option else Path(loaded.file).parent
    try:
        path = rulepack.resolve(ref, base, search, confined=not from_option)
        if not path.is_file():
            what = "is a folder, not a rule pack file" if path.is_dir() else "not found"
            raise RulePackError(f"rule pack file {path} {what}",
                                hint="give a built-in pack id (airgate rules list) or the path "
                                "of a pack file")
    except RulePackError as exc:
        if from_option:
            exc.field = ("--rules",)
            raise
        raise loaded.error(exc.message, field, allowed=exc.allowed, hint=exc.hint) from None
    try:
        doc = rulepack.load_document(str(path), search=search)
        options = None if doc.data.get("role") == "supplement" else loaded.model.project.options
        return rulepack.load_pack(str(path), options=options, search=search)
    except OptionError as exc:
        raise as_schedule_error(exc, loaded) from None


def sweep(schedule: LoadedSchedule | str | Path, *, system: str, outdoor_air,
          primary_airflow: Mapping[str, Any] | None = None, condition: str | None = None,
          pack: RulePack | None = None):
    """Evaluate a grid of variants of one system: every intake of ``outdoor_air`` against every
    variant of the zone primary airflows (``primary_airflow``: zone id → array, all of one
    length; the variant ``j`` gives each zone named its ``j``-th value, the others keep their
    scheduled one). Airflows are numbers in the schedule's unit system (cfm for IP, L/s for SI).

    The schedule is read (if a path is given) and evaluated once, under ``pack`` or the pack it
    names; the variants are then computed together over numpy arrays. The result
    (:class:`airgate.evaluation.sweep.Sweep`) has arrays ``vot`` (the required intake), ``ev``
    and ``passes`` shaped ``(len(outdoor_air), len(ARRAY))``, and ``report``, the evaluation of
    the schedule as given. A system that lists design conditions is swept at ``condition``
    (default: the governing one). Which checks ``passes`` covers: docs/api.md.
    """
    from airgate.evaluation.sweep import sweep_system

    loaded = schedule if isinstance(schedule, LoadedSchedule) else load_schedule(schedule)
    if pack is None:
        ref = (loaded.model.rule_refs or (None,))[0]
        if ref is None:
            raise loaded.error("no rule pack: give 'rules:' in the schedule or pack=",
                               ("rules",), hint="e.g. rules: ashrae-62.1-2019")
        pack = _pack(loaded, ref, from_option=False)
    chosen = next((s for s in loaded.model.systems if s.id == system), None)
    if chosen is None:
        raise ValueError(f"no system '{system}' in {loaded.file}; the systems are "
                         + ", ".join(s.id for s in loaded.model.systems))
    return sweep_system(evaluate(loaded, pack), chosen, outdoor_air, primary_airflow or {},
                        condition)
