"""``airgate.compare``: two revisions of a schedule read, evaluated and compared.

The comparison itself is :func:`airgate.evaluation.compare.compare` (nothing there reads a file);
this reads both schedules (any importable format), loads each one's rule pack (or ``rules`` for
both), applies the waivers and evaluates them, then compares (docs/compare.md). A side may also
be a round kept as its JSON report (``check --format json``), read back as it was evaluated
(:mod:`airgate.api.stored`).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from pathlib import Path

from airgate.api.core import Search, _pack, evaluate, load_schedule
from airgate.api.stored import load_report
from airgate.errors import AirgateError, ErrorGroup, raise_all
from airgate.evaluation.checks import DECLARED_CHECKS, KNOWN_CHECKS
from airgate.evaluation.report import Report
from airgate.evaluation.review import rule_errors, statuses
from airgate.evaluation.compare import DEFAULT_TOLERANCE, Comparison, compare as _compare
from airgate.evaluation.review import CommentEntry
from airgate.evaluation.waivers import WaiverEntry
from airgate.models.loaded import LoadedSchedule
from airgate.readers.importers import is_report


def _evaluated(path: str | Path, rules: str | None, search: Search,
               waivers: Sequence[WaiverEntry], as_of: dt.date | None,
               review: Sequence[CommentEntry] = ()) -> tuple[LoadedSchedule | None, Report]:
    if is_report(path):  # a round kept as its report: as it was evaluated then
        report = load_report(path)
        if review:
            known = [*KNOWN_CHECKS, *DECLARED_CHECKS, *(f.rule for f in report.findings)]
            raise_all(rule_errors(review, known))
            report.review = statuses(report.findings, review)
        return None, report
    loaded: LoadedSchedule = load_schedule(path)
    ref = rules or (loaded.model.rule_refs or (None,))[0]
    if ref is None:
        raise loaded.error("no rule pack: give 'rules:' in the schedule or --rules", ("rules",),
                           hint="e.g. rules: ashrae-62.1-2019")
    pack = _pack(loaded, ref, from_option=bool(rules), search=tuple(search or ()))
    return loaded, evaluate(loaded, pack, waivers=waivers, as_of=as_of, review=review,
                            also=[] if rules else None, search=search)


def compare(old: str | Path, new: str | Path, rules: str | None = None, *,
            search: Search = None, waivers: Sequence[WaiverEntry] = (),
            as_of: dt.date | None = None, tolerance: float = DEFAULT_TOLERANCE,
            review: Sequence[CommentEntry] = ()) -> Comparison:
    """Read and evaluate the schedules ``old`` and ``new`` and compare them; either may be an
    airgate JSON report of one schedule instead, compared as it was evaluated (its inputs then
    from the calculation trails, ``Comparison.inputs_from == "trails"``).

    ``rules``, ``search``, ``waivers`` and ``as_of`` are those of :func:`airgate.check`, for both
    schedules. ``tolerance``: the relative change a value must exceed to be listed (0.01 = 1 %).
    ``review``: a reviewer's comments (:func:`airgate.load_review`), set against NEW (their check
    ids checked against NEW's pack). Bad input in either schedule raises every problem of both
    at once.
    """
    sides, errors = [], []
    for path, comments in ((old, ()), (new, review)):
        try:
            sides.append(_evaluated(path, rules, search, waivers, as_of, comments))
        except ErrorGroup as exc:
            errors += exc.errors
        except AirgateError as exc:
            errors.append(exc)
    raise_all(errors)
    (lo, ro), (ln, rn) = sides
    return _compare(lo, ro, ln, rn, tolerance, review)
