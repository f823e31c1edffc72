"""Wording shared by the report writers: amounts with margins, waivers, check titles.

Every writer says the same thing the same way; only the markup differs. Strings returned here are
plain text: each writer escapes them for its own format.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from airgate import formatting, units
from airgate import units as units_  # the module; ``units`` is a parameter name below
from airgate.evaluation.checks import DECLARED_CHECKS, what_it_verifies
from airgate.evaluation import findings
from airgate.evaluation.findings import DECLARED, Amount, WaiverMark
from airgate.evaluation.report import Report, SystemResult
from airgate.evaluation.waivers import WaiverStatus
from airgate.models.rules import RulePack

#: how each waiver state is labelled for people
STATE_LABEL = {"applied": "applied", "expired": "EXPIRED", "unmatched": "UNMATCHED"}


def exhaust_rows(s: SystemResult, units: str) -> list[tuple[str, ...]]:
    """The zones of ``s`` with exhaust: zone id, exhaust row id, units counted (``–`` for a
    per-area row), required ``Ve``, scheduled ``Ve_design``, the margin, as evaluated, and
    where the makeup air comes from (``–``: not stated)."""
    out = []
    for z in s.zones:
        if z.exhaust is None:
            continue
        t = z.trail
        req, prov = Amount(t.value("Ve"), "airflow"), Amount(t.value("Ve_design"), "airflow")
        count = formatting.number(t.value("Ne"), "count") if "Ne" in t else "–"
        out.append((z.id, z.exhaust, count, amount(req, units), amount(prov, units),
                    margin(req, prov, units), z.makeup.text() if z.makeup is not None else "–"))
    return out


def _figure(trail, symbol: str, system: str) -> str:
    """A trail value in the display unit of ``system``, ``–`` when the trail has no such step."""
    if symbol not in trail:
        return "–"
    step = trail[symbol]
    return formatting.number(units_.to_display(step.value, step.kind, system), step.kind)


def pack_tables(s: SystemResult, system: str) -> list[tuple[str, list[str], list[list[str]]]]:
    """What each supplement pack computed on the zones of ``s`` (its equivalent clean airflow),
    as evaluated: ``(pack id, header, rows)``, one row per zone the pack reached — zone, ECA,
    Pz, ECA per person (``–`` for a zone without occupants), the pack's target per person, and
    the credited mechanisms (the trail's ``Qc_`` steps)."""
    out = []
    for pid in sorted({p for z in s.zones for p in z.packs}):
        q = units_.label("airflow", system)
        pp = units_.label("airflow_per_person", system)
        head = ["zone", f"ECA {q}", "Pz", f"ECA {pp}", f"target {pp}", "credited"]
        rows = []
        for z in s.zones:
            t = z.packs.get(pid)
            if t is None:
                continue
            credited = ", ".join(step.symbol for step in t.steps.values()
                                 if step.symbol.startswith("Qc_"))
            rows.append([z.id, _figure(t, "ECA", system), _figure(t, "Pz", system),
                         _figure(t, "ECA_pp", system), _figure(t, "ECAi", system), credited])
        out.append((pid, head, rows))
    return out


def fan_line(s: SystemResult, units: str) -> str:
    """An exhaust fan's sums as evaluated: its zones' minimum ΣVe, their scheduled ΣVe_design
    and the fan's scheduled airflow with its margin over ΣVe_design."""
    t = s.trail
    need, sched = Amount(t.value("ΣVe"), "airflow"), Amount(t.value("ΣVe_design"), "airflow")
    text = (f"zones need ΣVe {amount(need, units)} · zones scheduled ΣVe_design "
            f"{amount(sched, units)}")
    if "V_fan" in t:
        fan = Amount(t.value("V_fan"), "airflow")
        text += f" · fan {amount(fan, units)} · margin {margin(sched, fan, units)}"
    else:
        text += " · fan airflow not scheduled"
    return text


def amount(a: Amount | None, units: str) -> str:
    """``1,900 cfm``, or ``–`` when there is no amount."""
    return "–" if a is None else formatting.amount(a.value, a.kind, units)


def margin(required: Amount | None, provided: Amount | None, units: str) -> str:
    """``-344 cfm (-15.3 %)``: provided − required, absolute and relative to required
    (the evaluation's :func:`~airgate.evaluation.findings.margin`, formatted)."""
    m = findings.margin(required, provided)
    if m is None:
        return "–"
    text = formatting.amount(m.difference, required.kind, units)
    if m.difference > 0:
        text = "+" + text
    if m.relative is not None:
        text += f" ({formatting.percent(m.relative)})"
    return text


def relative_margin(required: Amount | None, provided: Amount | None) -> float | None:
    """(provided − required) / required, or None where it is not defined."""
    m = findings.margin(required, provided)
    return None if m is None else m.relative


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


def _rules_of(report: Report, pack: str | None) -> dict[str, PackRule]:
    chosen = next((p for p in report.packs if p.id == pack), report.pack)
    return pack_rules(chosen)


def check_title(report: Report, rule: str, pack: str | None = None) -> str:
    """The pack's title of a check or requirement, or what the engine says it verifies;
    ``pack``: the id of the pack whose rule it is (default the report's first)."""
    found = _rules_of(report, pack).get(rule)
    return found.title if found is not None else what_it_verifies(rule)


def check_source(report: Report, rule: str, pack: str | None = None) -> str:
    """The pack's citation of a check or requirement; for a declared limit, the schedule that
    declares it."""
    found = _rules_of(report, pack).get(rule)
    if found is not None:
        return found.source
    if rule in DECLARED_CHECKS:
        return f"limit declared by the schedule {report.schedule_file}"
    return ""


def rule_label(report: Report, pack: str | None, rule: str) -> str:
    """A rule as a finding line names it: its id, prefixed with its pack's id where the rule is
    a supplement pack's (a report with one pack reads as it always did)."""
    return rule if pack in (None, report.pack.id) else f"{pack}: {rule}"


def supplement_lines(report: Report) -> list[str]:
    """One line per supplement pack checked beside the rates pack: id, title, where it applies."""
    return [f"{s.pack.id} — {s.pack.title}"
            + (" (on every system)" if s.systems is None
               else f" (on {', '.join(sorted(s.systems))})")
            for s in report.supplements]


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


def waiver_subject(w) -> str:
    """A waiver's subject, with the design condition it names: ``AHU-3 [heating]``."""
    return w.subject if w.condition is None else f"{w.subject} [{w.condition}]"


def status_line(s: WaiverStatus) -> str:
    """One line for a waiver's outcome: rule, subject, what became of it, approval, where."""
    w = s.entry.waiver
    return (f"{w.rule} on {waiver_subject(w)}: {s.detail} — {w.reason} "
            f"({approval(s.entry.mark())}; {s.entry.origin} {s.entry.location})")


#: the header of the per-condition summary (units are added by each writer)
CONDITION_HEAD = ("condition", "Vot", "scheduled", "Ev", "critical zone", "margin", "verdict")
#: how the governing condition is marked, and what the mark means
GOVERNS_MARK = "▸"
GOVERNS_NOTE = ("▸ governing condition: the one that needs the most intake relative to the "
                "intake scheduled for it (largest Vot / scheduled)")


def condition_rows(s, units: str) -> list[tuple[bool, list[str]]]:
    """One row per design condition of system ``s`` (none without conditions), as plain text:
    whether it governs, then the cells of :data:`CONDITION_HEAD` (amounts without units)."""
    out = []
    for c in s.conditions:
        t = c.trail
        vot = Amount(t.value("Vot"), "airflow") if "Vot" in t else None
        scheduled = Amount(t.value("Vot_design"), "airflow") if "Vot_design" in t else None
        ev = t.value("Ev") if "Ev" in t else None
        cells = [c.id,
                 "no intake suffices" if vot and math.isinf(vot.value) else _bare(vot, units),
                 _bare(scheduled, units),
                 "–" if ev is None else formatting.number(ev, "fraction"),
                 c.critical_zone or "–", margin(vot, scheduled, units), c.verdict]
        out.append((c.id == s.condition, cells))
    return out


def _bare(a: Amount | None, system: str) -> str:
    return "–" if a is None else formatting.number(units.to_display(a.value, a.kind, system), a.kind)


def gate_line(batch) -> str | None:
    """``Gate (--fail-on fail,warning): FAIL, the exit status of the run`` when ``--fail-on``
    names more than ``fail`` (else the verdict is the gate's outcome), or None."""
    if not batch.gate_beyond_verdict:
        return None
    return (f"Gate (--fail-on {batch.fail_on_label}): {batch.gate.upper()}, the outcome the "
            "exit status gives")


#: the columns of the reviewer's record, in every writer that shows it
REVIEW_HEAD = ("ref", "subject", "rule", "status", "reviewer", "date", "comment", "response",
               "finding now")


def comment_cells(s) -> list[str]:
    """One comment of the reviewer's record (a ``CommentStatus``) as the cells of
    :data:`REVIEW_HEAD`, plain text."""
    c = s.entry.comment
    return [c.id or "–", c.subject, c.rule, c.status, c.reviewer, c.date.isoformat(), c.comment,
            c.response or "–", s.state]


def review_title(statuses) -> str:
    """``Reviewer's record — 3 comments, 1 ready to close``."""
    ready = sum(1 for s in statuses if s.to_close)
    return (f"Reviewer's record — {formatting.count(len(statuses), 'comment')}"
            + (f", {ready} ready to close" if ready else ""))


#: how a report names a system's compliance path (``SystemResult.procedure``); the rate
#: procedure, the usual one, goes unnamed beside the kind
PROCEDURE_LABELS = {"iaqp": "IAQ procedure"}


def kind_label(s) -> str:
    """A system's kind, with its compliance path where the kind does not say it (the rate
    procedure goes unnamed; a natural system's kind names its path)."""
    label = PROCEDURE_LABELS.get(s.procedure or "")
    return s.kind + (f", {label}" if label else "")
