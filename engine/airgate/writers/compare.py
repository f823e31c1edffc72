"""``airgate compare``: a comparison of two revisions as text, Markdown and JSON (the HTML page is
:mod:`airgate.writers.compare_html`). The comparison is worked out by
:mod:`airgate.evaluation.compare`; these only format it. Values are shown in NEW's unit system.

JSON, compare version 1 (docs/compare.md)::

    {"compare_version": 1, "generator": …, "old": {…}, "new": {…}, "tolerance": 0.01,
     "gate": {…}, "verdicts": […], "inputs": […], "values": […],
     "findings": {"resolved": […], "new": […]}, "review": […], "cautions": […]}
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from airgate import __version__, formatting
from airgate.evaluation.compare import Comparison, InputChange, ValueChange
from airgate.evaluation.findings import Finding, Location
from airgate.evaluation.report import SAFETY_CAUTION, Report
from airgate.writers import shared

COMPARE_VERSION = 1
#: the longest value an input row shows in text and Markdown (JSON carries it whole)
MAX_VALUE = 100


def cut(text: str | None) -> str:
    if text is None:
        return "–"
    return text if len(text) <= MAX_VALUE else text[:MAX_VALUE - 1] + "…"


def verdict_word(v: str | None) -> str:
    """``FAIL``, ``pass`` or ``absent`` (a subject the side does not have)."""
    return "absent" if v is None else ("FAIL" if v == "fail" else v)


def field_name(c: InputChange) -> str:
    """The field, or what a whole system or zone only one side has means."""
    if c.field:
        return c.field
    return "added" if c.old is None else "removed"


def value_cells(c: ValueChange, units: str) -> tuple[str, str, str]:
    """(old, new, change) as shown, in ``units``."""
    amount = (lambda x: formatting.amount(x, c.kind, units))
    change = formatting.amount(c.change, c.kind, units)
    return amount(c.old), amount(c.new), ("+" + change if c.change > 0 else change)


def tolerance_text(cmp: Comparison) -> str:
    """``1 %`` (the tolerance as a percentage, as few digits as it needs)."""
    return f"{cmp.tolerance * 100:g} %"


def cautions(cmp: Comparison) -> list[str]:
    """The safety caution, then each pack caution of either side once."""
    out = [SAFETY_CAUTION]
    for r in (cmp.old, cmp.new):
        out += [c for c in r.cautions if c not in out]
    return out


def result_line(cmp: Comparison, batch) -> str:
    """What the exit status says: NEW's verdict (and the gate's outcome when --fail-on names
    more than fail)."""
    line = f"Result: NEW {cmp.new.verdict.upper()}"
    gate = shared.gate_line(batch)
    return line + (f"; {gate}" if gate else "")


@dataclass(frozen=True)
class Section:
    """One table of the comparison, as plain text cells (each writer escapes and lays it out)."""

    id: str
    title: str
    head: tuple[str, ...]
    rows: list[list[str]]
    #: each row's mark: the verdict or severity it reads as (``fail``, ``pass``) or ``""``
    marks: list[str]


def _finding_rows(found: list[Finding]) -> list[list[str]]:
    return [[f.severity.upper() if f.severity == "fail" else f.severity, f.rule, f.subject,
             f.message] for f in found]


def sections(cmp: Comparison) -> list[Section]:
    """The tables every format shows, in order."""
    u = cmp.new.units
    finding_head = ("severity", "rule", "subject", "message")
    return [
        Section("verdicts", "Verdicts that changed", ("subject", "old", "new"),
                [[c.subject, verdict_word(c.old), verdict_word(c.new)] for c in cmp.verdicts],
                [c.new or "" for c in cmp.verdicts]),
        Section("inputs", "Inputs that changed" + (
                    " (as the calculation trails took them from the schedules: a side is a "
                    "stored report)" if cmp.inputs_from == "trails" else ""),
                ("subject", "field", "old", "new", "where (old → new)"),
                [[c.subject, field_name(c), cut(c.old), cut(c.new),
                  f"{at(c.old_at)} → {at(c.new_at)}"] for c in cmp.inputs],
                [""] * len(cmp.inputs)),
        Section("values", f"Values that moved by more than {tolerance_text(cmp)}",
                ("subject", "value", "old", "new", "change"),
                [[c.subject, c.symbol, *value_cells(c, u)] for c in cmp.values],
                [""] * len(cmp.values)),
        Section("resolved", "Findings resolved", finding_head, _finding_rows(cmp.resolved),
                ["pass"] * len(cmp.resolved)),
        Section("new", "New findings", finding_head, _finding_rows(cmp.added),
                ["fail" if f.severity == "fail" else "" for f in cmp.added]),
    ]


def at(loc: Location | None) -> str:
    return "–" if loc is None else str(loc)


# ----------------------------------------------------------------------------- text
def text(cmp: Comparison, batch) -> str:
    from airgate.writers.text import clean, review_lines

    out = [f"airgate {__version__} — comparison of two schedule revisions",
           f"old : {clean(cmp.old.schedule_file)} — {verdict_word(cmp.old.verdict)} "
           f"({clean(cmp.old.pack.id)})",
           f"new : {clean(cmp.new.schedule_file)} — {verdict_word(cmp.new.verdict)} "
           f"({clean(cmp.new.pack.id)})", ""]
    for t in sections(cmp):
        out.append(f"{t.title} ({len(t.rows)})")
        if not t.rows:
            out.extend(["  none", ""])
            continue
        rows = [list(t.head)] + [[clean(c) for c in r] for r in t.rows]
        widths = [max(len(r[i]) for r in rows) for i in range(len(t.head) - 1)]
        out += ["  " + "  ".join(c.ljust(w) for c, w in zip(r, widths)) + "  " + r[-1]
                for r in rows]
        out.append("")
    out += review_lines(cmp.review)
    out += [result_line(cmp, batch), "", "Cautions"]
    out += [f"  - {clean(c)}" for c in cautions(cmp)[:1]]
    return "\n".join(out) + "\n"


# ----------------------------------------------------------------------------- Markdown
def markdown(cmp: Comparison, batch) -> str:
    from airgate.writers.markdown import md, review_table

    out = [f"### airgate compare: {md(cmp.new.project_name)} — "
           f"{verdict_word(cmp.old.verdict)} → **{verdict_word(cmp.new.verdict)}**", "",
           f"Old: {md(cmp.old.schedule_file)} · new: {md(cmp.new.schedule_file)}", ""]
    for t in sections(cmp):
        out += [f"#### {t.title} ({len(t.rows)})", ""]
        if not t.rows:
            out += ["None.", ""]
            continue
        out += ["| " + " | ".join(t.head) + " |", "|" + "---|" * len(t.head)]
        out += ["| " + " | ".join(md(c) for c in r) + " |" for r in t.rows]
        out.append("")
    out += review_table(cmp.review)[1:] + ([""] if cmp.review else [])
    out += [f"**{md(result_line(cmp, batch))}**", "", f"> {md(cautions(cmp)[0])}", ""]
    return "\n".join(out)


# ----------------------------------------------------------------------------- JSON
def _location(loc: Location | None) -> dict[str, Any] | None:
    if loc is None:
        return None
    return {"file": loc.file, "line": loc.line, "column": loc.column}


def _side(r: Report) -> dict[str, Any]:
    return {"file": r.schedule_file, "project": r.project_name, "units": r.units,
            "rules": r.pack.id, "verdict": r.verdict}


def _finding(f: Finding, units: str) -> dict[str, Any]:
    from airgate.writers.json_report import value

    return {"rule": f.rule, "severity": f.severity, "basis": f.basis, "subject": f.subject,
            "condition": f.condition, "message": f.message,
            "required": None if f.required is None else value(f.required.value, f.required.kind,
                                                              units),
            "provided": None if f.provided is None else value(f.provided.value, f.provided.kind,
                                                              units),
            "location": _location(f.location), "waived": f.waived}


def to_dict(cmp: Comparison, batch) -> dict[str, Any]:
    """The comparison as JSON data (compare version 1, docs/compare.md)."""
    from airgate.writers.json_report import review_comment, value

    u = cmp.new.units
    return {
        "compare_version": COMPARE_VERSION,
        "generator": f"airgate {__version__}",
        "old": _side(cmp.old),
        "new": _side(cmp.new),
        "tolerance": cmp.tolerance,
        "inputs_from": cmp.inputs_from,
        "gate": {"fail_on": list(batch.fail_on), "outcome": batch.gate},
        "verdicts": [{"subject": c.subject, "level": c.level, "old": c.old, "new": c.new}
                     for c in cmp.verdicts],
        "inputs": [{"subject": c.subject, "field": c.field, "old": c.old, "new": c.new,
                    "old_location": _location(c.old_at), "new_location": _location(c.new_at)}
                   for c in cmp.inputs],
        "values": [{"subject": c.subject, "symbol": c.symbol,
                    "old": value(c.old, c.kind, u), "new": value(c.new, c.kind, u),
                    "change": value(c.change, c.kind, u)} for c in cmp.values],
        "findings": {"resolved": [_finding(f, u) for f in cmp.resolved],
                     "new": [_finding(f, u) for f in cmp.added]},
        "review": [review_comment(s, compared=True) for s in cmp.review],
        "cautions": cautions(cmp),
    }


def json_text(cmp: Comparison, batch) -> str:
    from airgate.writers.output import json_text as dump

    return dump(to_dict(cmp, batch))
