"""Supplement packs: requirements checked beside the rate pack, on its calculation.

A schedule may list several rule packs (``rules: [RATES, SUPPLEMENT, ...]``, or a system's
``extra_rules``). The first is the rates pack the schedule is evaluated under (its procedure,
tables, checks and requirements); each further pack is a supplement (``role: supplement``): its
requirements are evaluated on the trails the rates pack's evaluation computed, on every system
(listed in ``rules:``) or on the systems that list it. Its findings and outcomes name their pack,
and a failing requirement of any pack fails its zone, its system and the report, as the rates
pack's own do (docs/schedule-format.md, several packs).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Iterator, Sequence
from typing import Any

from airgate.errors import AirgateError, RulePackError, nearest
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Finding
from airgate.evaluation.report import Supplement, SystemResult
from airgate.evaluation.requirements import Run
from airgate.evaluation.zones import ZoneContext
from airgate.models.rules import RulePack


def _selector_terms(raw: Any, path: tuple) -> Iterator[tuple[str, list, tuple]]:
    """Every ``space`` and ``group`` list of a selector as written, with its path."""
    if not isinstance(raw, dict):
        return
    for term in ("space", "group"):
        if isinstance(raw.get(term), list):
            yield term, raw[term], path + (term,)
    for key in ("all", "any"):
        for k, sub in enumerate(raw.get(key) or []):
            yield from _selector_terms(sub, path + (key, k))
    for key in ("not", "serves"):
        if key in raw:
            yield from _selector_terms(raw[key], path + (key,))


#: more unknown names than this, and more unknown than known, and the supplement was written for
#: another rates pack: one error lists them rather than one error each
_FOREIGN = 3


def check_names(base: RulePack, supplement: RulePack) -> list[AirgateError]:
    """The space types and groups a supplement's selectors name must be the rates pack's: a
    pack error at the supplement's line, naming both packs. A supplement whose selectors are
    mostly foreign to the rates pack (checked beside a pack it was not written for, e.g. a
    dwelling-unit pack under a commercial supplement) gets one error listing the names."""
    doc = supplement.document_positions
    if doc is None:
        return []
    known = {"space": set(base.categories),
             "group": {c.group for c in base.categories.values()}}
    unknown: list[tuple[str, str, tuple, list[str]]] = []
    found = 0
    for i, r in enumerate(doc.data.get("requirements", [])):
        for term, ids, path in _selector_terms(r.get("applies_to"), ("requirements", i,
                                                                      "applies_to")):
            for k, value in enumerate(ids):
                if value in known[term]:
                    found += 1
                    continue
                what = "space type" if term == "space" else "group"
                unknown.append((what, value, path + (k,), nearest(value, known[term])))
    if len(unknown) > _FOREIGN and len(unknown) > found:
        return [_foreign(base, supplement, unknown, found)]
    return [doc.error(
        RulePackError, f"supplement pack {supplement.id} names {what} '{value}', "
        f"which rates pack {base.id} does not have"
        + (f"; did you mean '{close[0]}'?" if close else ""), path,
        hint=f"a supplement's selectors name the categories of the rates pack it is "
             f"checked beside; list it beside a pack with {what} '{value}'")
        for what, value, path, close in unknown]


def _foreign(base: RulePack, supplement: RulePack,
             unknown: list[tuple[str, str, tuple, list[str]]], found: int) -> AirgateError:
    """One error for a supplement checked beside a rates pack it was not written for, at its
    first unknown name."""
    names = [f"'{value}'" for _, value, _, _ in unknown]
    shown = ", ".join(names[:4]) + (f" and {len(names) - 4} more" if len(names) > 4 else "")
    kinds = sorted({what for what, _, _, _ in unknown})
    what = " and ".join(f"{k}s" for k in kinds)
    has = f"it has {found} of the names" if found else "it has none of them"
    return supplement.document_positions.error(
        RulePackError, f"supplement pack {supplement.id} names {len(unknown)} {what} that "
        f"rates pack {base.id} does not have ({shown}); {has}: the supplement's selectors "
        f"were written for another rates pack", unknown[0][2],
        hint=f"check {supplement.id} beside a rates pack with these categories (the one its "
             f"selectors were written for; rules: [RATES, {supplement.id}]), or leave it out "
             f"of this run (a schedule's rules: or a system's extra_rules lists it)")


class Runs:
    """The requirements of every supplement pack of one evaluation."""

    def __init__(self, supplements: Sequence[Supplement], loaded: Any) -> None:
        self.supplements = list(supplements)
        self.runs = [Run(s.pack, loaded) for s in self.supplements]

    def evaluate(self, i: int, system: Any, ctxs: list[ZoneContext], result: SystemResult,
                 emitter: Emitter) -> None:
        """Each supplement that applies to ``system``: its requirements' outcomes and findings,
        every one naming its pack."""
        for sup, run in zip(self.supplements, self.runs):
            if not sup.applies(system.id):
                continue
            start, first = len(emitter.findings), len(run.outcomes)
            run.evaluate(i, system, ctxs, result, emitter)
            pid = sup.pack.id
            for k in range(start, len(emitter.findings)):
                emitter.findings[k] = dataclasses.replace(emitter.findings[k], pack=pid)
            run.outcomes[first:] = [dataclasses.replace(
                o, pack=pid, finding=None if o.finding is None else
                dataclasses.replace(o.finding, pack=pid)) for o in run.outcomes[first:]]

    def outcomes(self) -> list:
        return [o for run in self.runs for o in run.outcomes]

    def notes(self, results: list[SystemResult]) -> list[str]:
        """For each supplement, the zones in its scope that none of its requirements applied to
        (not checked by it: said, never silent)."""
        out = []
        for sup, run in zip(self.supplements, self.runs):
            if not any(r.subject == "zone" for r in sup.pack.requirements.values()):
                continue
            reached = {o.subject for o in run.outcomes}
            left = [f"{s.id}/{z.id} ({z.space})" for s in results
                    if s.supplies and sup.applies(s.id) for z in s.zones
                    if f"{s.id}/{z.id}" not in reached]
            if left:
                out.append(f"rule pack {sup.pack.id}: no requirement of the pack applies to "
                           f"{', '.join(left)}; the pack does not check "
                           f"{'it' if len(left) == 1 else 'them'}")
        return out


def tag_base(findings: list[Finding], base: RulePack) -> list[Finding]:
    """Every finding of a report with several packs names its pack (the rates pack's too)."""
    return [f if f.pack is not None else dataclasses.replace(f, pack=base.id) for f in findings]

