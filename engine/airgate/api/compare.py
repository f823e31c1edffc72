"""``airgate.compare``: two revisions of a schedule read, evaluated and compared.

The comparison itself is :func:`airgate.evaluation.compare.compare` (nothing there reads a file);
this reads both schedules (any importable format), loads each one's rule pack (or ``rules`` for
both), applies the waivers and evaluates them, then compares (docs/compare.md).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from pathlib import Path

from airgate.api.core import Search, _pack, evaluate, load_schedule
from airgate.errors import AirgateError, ErrorGroup, raise_all
from airgate.evaluation.compare import DEFAULT_TOLERANCE, Comparison, compare as _compare
from airgate.evaluation.review import CommentEntry
from airgate.evaluation.waivers import WaiverEntry
from airgate.models.loaded import LoadedSchedule


def _evaluated(path: str | Path, rules: str | None, search: Search,
               waivers: Sequence[WaiverEntry], as_of: dt.date | None,
               review: Sequence[CommentEntry] = ()):
    loaded: LoadedSchedule = load_schedule(path)
    ref = rules or loaded.model.rules
    if ref is None:
        raise loaded.error("no rule pack: give 'rules:' in the schedule or --rules", ("rules",),
                           hint="e.g. rules: ashrae-62.1-2019")
    pack = _pack(loaded, ref, from_option=bool(rules), search=tuple(search or ()))
    return loaded, evaluate(loaded, pack, waivers=waivers, as_of=as_of, review=review)


def compare(old: str | Path, new: str | Path, rules: str | None = None, *,
            search: Search = None, waivers: Sequence[WaiverEntry] = (),
            as_of: dt.date | None = None, tolerance: float = DEFAULT_TOLERANCE,
            review: Sequence[CommentEntry] = ()) -> Comparison:
    """Read and evaluate the schedules ``old`` and ``new`` and compare them.

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
