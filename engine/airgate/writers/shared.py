"""Wording shared by the report writers: amounts with margins, waivers, check titles.

Every writer says the same thing the same way; only the markup differs. Strings returned here are
plain text: each writer escapes them for its own format.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from airgate import formatting
from airgate.evaluation.checks import DECLARED_CHECKS, what_it_verifies
from airgate.evaluation.findings import DECLARED, Amount, WaiverMark
from airgate.evaluation.report import Report
from airgate.evaluation.waivers import WaiverStatus
from airgate.models.rules import RulePack

#: how each waiver state is labelled for people
STATE_LABEL = {"applied": "applied", "expired": "EXPIRED", "unmatched": "UNMATCHED"}


def amount(a: Amount | None, units: str) -> str:
    """``1,900 cfm``, or ``–`` when there is no amount."""
    return "–" if a is None else formatting.amount(a.value, a.kind, units)


def margin(required: Amount | None, provided: Amount | None, units: str) -> str:
    """``-344 cfm (-15.3 %)``: provided − required, absolute and relative to required."""
    if required is None or provided is None or math.isinf(required.value):
        return "–"
    diff = provided.value - required.value
    text = formatting.amount(diff, required.kind, units)
    if diff > 0:
        text = "+" + text
    if required.value > 0:
        text += f" ({formatting.percent(diff / required.value)})"
    return text


def relative_margin(required: Amount | None, provided: Amount | None) -> float | None:
    """(provided − required) / required, or None where it is not defined."""
    if required is None or provided is None or not required.value > 0 \
            or math.isinf(required.value):
        return None
    return (provided.value - required.value) / required.value


#: heading of the section of declared findings, in every format
DECLARED_HEADING = "Limits the schedule declares"
#: what that section is, in every format
DECLARED_NOTE = ("the schedule's own limits, not requirements of the rule pack: they change "
                 "no verdict, and fail the run only with --fail-on declared")


@dataclass(frozen=True)
class PackRule:
    """A rule of a pack as the writers list it: one of its checks or one of its requirements
    (both give findings, under their id)."""

    id: str
    severity: str
    title: str
    verifies: str
    source: str


def pack_rules(pack: RulePack) -> dict[str, PackRule]:
    """Every rule a pack's findings can name, in pack order: its checks, then its
    requirements."""
    out = {c.id: PackRule(c.id, c.severity, c.title, what_it_verifies(c.id),
                          c.source.cite()) for c in pack.checks.values()}
    for r in pack.requirements.values():
        out.setdefault(r.id, PackRule(r.id, r.severity, r.message,
                                      f"{r.message} (a {r.kind} requirement of the pack)",
                                      r.source.cite()))
    return out


def check_title(report: Report, rule: str) -> str:
    """The pack's title of a check or requirement, or what the engine says it verifies."""
    found = pack_rules(report.pack).get(rule)
    return found.title if found is not None else what_it_verifies(rule)


def check_source(report: Report, rule: str) -> str:
    """The pack's citation of a check or requirement; for a declared limit, the schedule that
    declares it."""
    found = pack_rules(report.pack).get(rule)
    if found is not None:
        return found.source
    if rule in DECLARED_CHECKS:
        return f"limit declared by the schedule {report.schedule_file}"
    return ""


def declared_summary(report: Report) -> str:
    """``1 missed`` (or ``none missed``) of the declared limits checked, with what they are."""
    checked = sum(1 for c in report.cases if c.basis == DECLARED)
    missed = report.declared_count()
    waived = sum(1 for f in report.declared_findings if f.waived)
    return (f"{missed or 'none'} missed of {checked} checked"
            + (f", {waived} waived" if waived else ""))


def approval(mark: WaiverMark) -> str:
    """``approved by X; expires 2027-03-31`` (or ``no expiry``)."""
    until = f"expires {mark.expires}" if mark.expires else "no expiry"
    return f"approved by {mark.approved_by}; {until}"


def waived_line(mark: WaiverMark) -> str:
    """One line for a waived finding: reason, approval, where the waiver is written."""
    return f"waived: {mark.reason} ({approval(mark)}; {mark.origin} {mark.location})"


def status_line(s: WaiverStatus) -> str:
    """One line for a waiver's outcome: rule, subject, what became of it, approval, where."""
    w = s.entry.waiver
    return (f"{w.rule} on {w.subject}: {s.detail} — {w.reason} "
            f"({approval(s.entry.mark())}; {s.entry.origin} {s.entry.location})")
