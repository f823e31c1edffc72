"""Design conditions: a system evaluated at each condition it lists, and the one that governs.

ANSI/ASHRAE 62.1-2019 Section 6.2.5 asks for the outdoor-air intake at the design conditions the
system operates at: a VAV system's heating condition has lower primary airflows and, with warm
air supplied at the ceiling, a lower Ez (Table 6-4), so it may need more intake than cooling.
Each condition is evaluated with the whole procedure of its system kind; the governing condition
is the one whose required intake is largest relative to the intake scheduled for it (largest
Vot / Vot_design, the least margin).
"""

from __future__ import annotations

import dataclasses
import math

from airgate.evaluation.findings import Finding
from airgate.evaluation.report import ConditionResult, SystemResult
from airgate.models.schedule import SYSTEM_CONDITION_FIELDS, ZONE_CONDITION_FIELDS, System

_FIELDS = frozenset(SYSTEM_CONDITION_FIELDS) | frozenset(ZONE_CONDITION_FIELDS)


def names(system: System) -> list[str | None]:
    """The conditions of ``system``: the ids it lists, or one unnamed condition."""
    return list(system.conditions) if system.conditions else [None]


def keyed(path: tuple, condition: str | None) -> tuple:
    """The document path of a field's value at ``condition``: a per-condition field's path gains
    the condition id (a plain value is located at the field itself, its nearest ancestor)."""
    if condition is not None and path and path[-1] in _FIELDS:
        return path + (condition,)
    return path


def load_ratio(result: SystemResult) -> float:
    """Vot / Vot_design: the share of the scheduled intake the condition needs [–]; infinite
    where no intake is scheduled or none suffices."""
    t = result.trail
    if "Vot" not in t or "Vot_design" not in t:
        return -math.inf
    need, have = t.value("Vot"), t.value("Vot_design")
    if math.isinf(need):
        return math.inf
    if have <= 0:
        return math.inf if need > 0 else 0.0
    return need / have


def governing(results: list[SystemResult]) -> int:
    """Index of the governing condition: the largest Vot / Vot_design; the first listed on a tie."""
    ratios = [load_ratio(r) for r in results]
    return max(range(len(results)), key=lambda k: (ratios[k], -k))


def tag(findings: list[Finding], start: int, condition: str | None) -> None:
    """Name ``condition`` in the findings from ``start`` on (in place)."""
    if condition is None:
        return
    for k in range(start, len(findings)):
        f = findings[k]
        if f.condition is None:
            findings[k] = dataclasses.replace(f, condition=condition,
                                              message=f"[{condition}] {f.message}")


def verdicts(result: SystemResult, findings: list[Finding]) -> None:
    """Verdicts of each condition and of its zones: a live ``fail`` finding of basis ``code`` at
    that condition, or at none in particular, fails it."""
    live = [f for f in findings if f.severity == "fail" and not f.waived and not f.declared
            and f.system == result.id]
    for c in result.conditions:
        mine = [f for f in live if f.condition in (None, c.id)]
        c.verdict = "fail" if mine else "pass"
        subjects = {f.subject for f in mine}
        for z in c.zones:
            z.verdict = "fail" if f"{result.id}/{z.id}" in subjects or (
                len(c.zones) == 1 and result.id in subjects) else "pass"
