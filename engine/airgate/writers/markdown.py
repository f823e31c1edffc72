"""Markdown for a pull-request comment: a summary table, then the items that fail.

Sized to stay well under the comment limits of common code hosts: at most :data:`MAX_ITEMS`
failing items are listed (the rest are counted) and notes sit in a collapsed ``<details>``.
Every string from the input is escaped, both as Markdown and as HTML, since hosts render the
HTML inside Markdown.
"""

from __future__ import annotations

import re

from airgate import __version__, units
from airgate.escaping import invisible
from airgate.formatting import count
from airgate.evaluation.batch import Batch
from airgate.evaluation.findings import DECLARED, Amount, Finding
from airgate.evaluation.report import Report, SystemResult
from airgate.writers import shared

MAX_ITEMS = 25  #: failing items listed per report
MAX_NOTES = 15  #: info findings listed per report

#: HTML hosts render inside Markdown; '@' as an entity so a name pings no one
_HTML = {"&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "@": "&#64;"}
#: inline Markdown syntax; '#', '-', '+', '>' and '1.' only matter at the start of a line
_SPECIAL = re.compile(r"([\\`*_{}\[\]|~])")
_LINE_START = re.compile(r"^(\s*)(?:([#+\-=])|(\d+)([.)]))")
_CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f\ud800-\udfff]")


def md(text: object, line_start: bool = False) -> str:
    """Text shown literally in Markdown (and in the HTML hosts allow inside it), on one line.

    ``line_start``: the text opens a line, where '#', '-', '+' and '1.' would start a block.
    """
    s = invisible(_CONTROL.sub("\ufffd", str(text))).replace("\r", " ").replace("\n", " ")
    s = _SPECIAL.sub(r"\\\1", "".join(_HTML.get(ch, ch) for ch in s))
    return _LINE_START.sub(_line_start, s, count=1) if line_start else s


def _line_start(m: re.Match) -> str:
    if m.group(2):
        return f"{m.group(1)}\\{m.group(2)}"
    return f"{m.group(1)}{m.group(3)}\\{m.group(4)}"


def _verdict(v: str) -> str:
    return "**FAIL**" if v == "fail" else "pass"


def _intake(s: SystemResult) -> tuple[Amount | None, Amount | None]:
    t = s.trail
    if not s.supplies:  # an exhaust fan takes in no outdoor air (its zones: the exhaust table)
        return None, None
    return Amount(t.value("Vot"), "airflow"), Amount(t.value("Vot_design"), "airflow")


def _systems_table(report: Report) -> list[str]:
    u = report.units
    out = ["| system | kind | required Vot | scheduled | margin | verdict |",
           "|---|---|---:|---:|---:|---|"]
    for s in report.systems:
        name = md(s.id) + (f" {md(s.name)}" if s.name else "")
        if "Vot" not in s.trail:
            why = "exhaust fan" if not s.supplies else "natural ventilation"
            out.append(f"| {name} | {md(s.kind)} | no intake ({why}) | – | – | "
                       f"{_verdict(s.verdict)} |")
            continue
        req, prov = _intake(s)
        out.append(f"| {name} | {md(shared.kind_label(s))} | {md(shared.amount(req, u))} | "
                   f"{md(shared.amount(prov, u))} | {md(shared.margin(req, prov, u))} | "
                   f"{_verdict(s.verdict)} |")
    return out


def _conditions_table(report: Report) -> list[str]:
    """The design conditions of the systems that list them, the governing one marked."""
    u = report.units
    rows = [(s, governs, cells) for s in report.systems
            for governs, cells in shared.condition_rows(s, u)]
    if not rows:
        return []
    q = units.label("airflow", u)
    out = [f"| system | condition | Vot {q} | scheduled {q} | Ev | critical zone | margin | "
           "verdict |", "|---|---|---:|---:|---:|---|---:|---|"]
    for s, governs, cells in rows:
        cid = f"{shared.GOVERNS_MARK} **{md(cells[0])}**" if governs else md(cells[0])
        out.append(f"| {md(s.id)} | {cid} | " + " | ".join(md(c) for c in cells[1:-1])
                   + f" | {_verdict(cells[-1])} |")
    return out + ["", md(shared.GOVERNS_NOTE), ""]


def _exhaust_table(report: Report) -> list[str]:
    rows = [(s, r) for s in report.systems for r in shared.exhaust_rows(s, report.units)]
    if not rows:
        return []
    fans = [f"- {md(s.id)}: {md(shared.fan_line(s, report.units))}" for s in report.systems
            if not s.supplies]
    out = ["Exhaust (minimum exhaust rates):", "", *fans, *([""] if fans else []),
           "| zone | exhaust category | fixtures | required Ve | scheduled | margin | makeup |",
           "|---|---|---:|---:|---:|---:|---|"]
    for s, (zone, category, count, req, prov, mar, made) in rows:
        out.append(f"| {md(s.id)}/{md(zone)} | {md(category)} | {count} | {md(req)} | "
                   f"{md(prov)} | {md(mar)} | {md(made)} |")
    return out + [""]


def _pack_tables(report: Report) -> list[str]:
    """What each supplement pack computed on the zones (their equivalent clean airflow)."""
    out: list[str] = []
    for s in report.systems:
        for pid, head, rows in shared.pack_tables(s, report.units):
            out += [f"{md(pid)} on {md(s.id)}: equivalent clean airflow of the credited "
                    "mechanisms:", "", "| " + " | ".join(md(h) for h in head) + " |",
                    "|---|---:|---:|---:|---:|---|"]
            out += ["| " + " | ".join(md(c) for c in row) + " |" for row in rows]
            out.append("")
    return out


def _items_table(report: Report, items: list[Finding]) -> list[str]:
    u = report.units
    out = ["| subject | check | required | provided | margin | where |",
           "|---|---|---:|---:|---:|---|"]
    for f in items:
        out.append(f"| {md(f.subject)} | {md(shared.rule_label(report, f.pack, f.rule))} | {md(shared.amount(f.required, u))} | "
                   f"{md(shared.amount(f.provided, u))} | "
                   f"{md(shared.margin(f.required, f.provided, u))} | {md(f.location)} |")
    return out


def _failing(report: Report) -> list[str]:
    live = [f for f in report.code_findings
            if not f.waived and f.severity in ("fail", "warning")]
    if not live:
        return ["No failing items."]
    shown = live[:MAX_ITEMS]
    out = [f"#### Failing items ({len(live)})", ""] + _items_table(report, shown) + [""]
    for f in shown:
        out.append(f"- **{md(f.severity.upper())} {md(f.subject)}** `{shared.rule_label(report, f.pack, f.rule)}` — {md(f.message)}"
                   f" _({md(f.source)})_")
    if len(live) > len(shown):
        out.append(f"- … and {len(live) - len(shown)} more: see the full report")
    return out


def _declared(report: Report) -> list[str]:
    """Limits the schedule declares for itself, after the code findings (no verdict)."""
    if not any(c.basis == DECLARED for c in report.cases) and not report.declared_findings:
        return []
    live = [f for f in report.declared_findings if not f.waived]
    out = ["", f"#### {shared.DECLARED_HEADING}: {md(shared.declared_summary(report))}", "",
           f"_{md(shared.DECLARED_NOTE)}_"]
    if live:
        out += [""] + [f"- **MISSED {md(f.subject)}** `{shared.rule_label(report, f.pack, f.rule)}` — {md(f.message)} "
                       f"_({md(f.source)})_" for f in live[:MAX_ITEMS]]
        if len(live) > MAX_ITEMS:
            out.append(f"- … and {len(live) - MAX_ITEMS} more: see the full report")
    return out


def _waived(report: Report) -> list[str]:
    items = [f for f in report.findings if f.waived]
    stale = [s for s in report.waivers if s.stale]
    out: list[str] = []
    if report.waiver_date and (items or stale):
        out += ["", f"Waiver expiry judged on {report.waiver_date}."]
    if items:
        out += ["", f"#### Waived ({len(items)})", ""]
        out += [f"- {md(f.severity.upper())} {md(f.subject)} `{shared.rule_label(report, f.pack, f.rule)}` — "
                f"{md(shared.waived_line(f.waiver))}" for f in items[:MAX_ITEMS]]
    if stale:
        out += ["", f"#### Waivers to renew or withdraw ({len(stale)})", ""]
        out += [f"- **{md(shared.STATE_LABEL[s.state])}** {md(shared.status_line(s))}"
                for s in stale[:MAX_ITEMS]]
    return out


def _notes(report: Report) -> list[str]:
    info = [f for f in report.code_findings if not f.waived and f.severity == "info"]
    if not info:
        return []
    out = ["", f"<details><summary>{count(len(info), 'info finding')}</summary>", ""]
    out += [f"- {md(f.subject)} `{shared.rule_label(report, f.pack, f.rule)}` — {md(f.message)}" for f in info[:MAX_NOTES]]
    if len(info) > MAX_NOTES:
        out.append(f"- … and {len(info) - MAX_NOTES} more")
    return out + ["", "</details>"]


def _report(report: Report, level: str = "###", gate: str | None = None) -> list[str]:
    c = report.counts()
    head = (f"{level} airgate: {md(report.project_name)} — {_verdict(report.verdict)}")
    out = [head, "",
           f"{md(report.schedule_file, line_start=True)} · rule pack {md(report.pack.id)} — {md(report.pack.title)} · {report.units} units",
           *(f"also: {md(line)}" for line in shared.supplement_lines(report)),
           "",
           f"{c['fail']} failing · {count(c['warning'], 'warning')} · {c['info']} info · "
           f"{report.waived_count()} waived"
           + (f" · {count(report.declared_count(), 'declared limit')} missed"
              if report.declared_count() else ""), ""]
    if gate:
        out += [f"**{md(gate)}**", ""]
    out += (_systems_table(report) + [""] + _conditions_table(report) + _exhaust_table(report) + _pack_tables(report)
            + _failing(report) + _declared(report)
            + _waived(report) + review_table(report.review) + _notes(report))
    return out


def review_table(statuses) -> list[str]:
    """The reviewer's record as a table (nothing without one)."""
    if not statuses:
        return []
    out = ["", f"#### {md(shared.review_title(statuses))}", "",
           "| " + " | ".join(shared.REVIEW_HEAD) + " |", "|" + "---|" * len(shared.REVIEW_HEAD)]
    for s in statuses:
        cells = [md(c) for c in shared.comment_cells(s)]
        cells[-1] = f"**{cells[-1]}**" if s.to_close else cells[-1]
        out.append("| " + " | ".join(cells) + " |")
    return out


def _cautions(cautions: list[str]) -> list[str]:
    return ["", *[f"> {md(c)}  " for c in cautions], "",
            f"<sub>airgate {__version__}</sub>"]


def render(batch: Batch) -> str:
    """The Markdown comment for the run."""
    if batch.single:
        r = batch.reports[0]
        return "\n".join(_report(r, gate=shared.gate_line(batch)) + _cautions(r.cautions)) + "\n"
    c = batch.counts()
    failing = sum(r.verdict == "fail" for r in batch.reports)
    out = [f"### airgate: {len(batch.reports)} schedules — {_verdict(batch.verdict)}", "",
           f"{failing} of {len(batch.reports)} schedules fail · {c['fail']} failing · "
           f"{count(c['warning'], 'warning')} · {c['info']} info · {c['waived']} waived"
           + (f" · {count(c['declared'], 'declared limit')} missed" if c["declared"] else ""), "",
           *([f"**{md(shared.gate_line(batch))}**", ""] if shared.gate_line(batch) else []),
           "| schedule | project | verdict | failing | warnings | waived |",
           "|---|---|---|---:|---:|---:|"]
    for r in batch.reports:
        rc = r.counts()
        out.append(f"| {md(r.schedule_file)} | {md(r.project_name)} | {_verdict(r.verdict)} | "
                   f"{rc['fail']} | {rc['warning']} | {r.waived_count()} |")
    if batch.waivers:
        out += ["", "#### Waivers of the waivers file", ""]
        out += [f"- **{md(shared.STATE_LABEL[s.state])}** {md(shared.status_line(s))}"
                for s in batch.waivers]
    for r in batch.reports:
        out += [""] + _report(r, "####")
    return "\n".join(out + _cautions(batch.cautions())) + "\n"
