"""The HTML review report: one self-contained file a plan reviewer opens, prints or attaches.

Order of a schedule's page: the verdict and what fails (with required, provided and the
shortfall) on the first screen; the outdoor air each zone gets against what it needs; one panel
per system with its check table, zone quantities, CO2 curves and, on expand, every calculation
trail; the provenance of every rule value used; notes, waivers and the cautions. No network, no
web fonts, no images: CSS, inline SVG and a three-line script that opens the trails for printing.
Every input string is escaped. Same input, same bytes.
"""

from __future__ import annotations

import html as _html
import re
from pathlib import PurePath

from airgate import __version__, formatting, units
from airgate.evaluation.batch import Batch
from airgate.evaluation.findings import DECLARED, Amount, Finding
from airgate.evaluation.report import Report, SystemResult, ZoneResult
from airgate.evaluation.trail import Step, Trail
from airgate.writers import html_svg, shared
from airgate.writers.html_style import CSS, SCRIPT

_CONTROL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f\ud800-\udfff]")
_ORIGIN = {"schedule": "schedule", "table": "rule pack", "computed": "computed",
           "explicit": "stated with basis", "assumed": "assumed", "system": "system value"}


def esc(value: object) -> str:
    """Text for HTML content or a quoted attribute: markup escaped, control characters gone."""
    return _html.escape(_CONTROL.sub("\ufffd", str(value)), quote=True)


def _badge(state: str, text: str | None = None) -> str:
    return f'<span class="badge {esc(state)}">{esc(text or state)}</span>'


def _amt(a: Amount | None, u: str) -> str:
    return esc(shared.amount(a, u))


def _subject(report: Report, subject: str) -> str:
    system_id, _, zone_id = subject.partition("/")
    name = None
    if zone_id:
        found = report.zone(zone_id)
        name = found[1].name if found else None
    else:
        s = report.system(system_id)
        name = s.name if s else None
    return f"<b>{esc(subject)}</b>" + (f'<br><span class="small">{esc(name)}</span>' if name
                                      else "")


# --- the first screen ------------------------------------------------------------------------

def _top(report: Report) -> str:
    pack, c = report.pack, report.counts()
    failing = sum(s.verdict == "fail" for s in report.systems)
    verify = (" · <b>values partly from memory: verify against the adopted edition</b>"
              if pack.verify else "")
    tally = [("fail", c["fail"], "failing"), ("warning", c["warning"], "warnings"),
             ("info", c["info"], "notes"), ("waived", report.waived_count(), "waived")]
    items = "".join(f'<li class="{k}"><b>{n}</b> {label}</li>' for k, n, label in tally)
    items += f"<li><b>{failing}</b> of {len(report.systems)} systems fail</li>"
    return (f'<div class="top"><div><h1>{esc(report.project_name)}</h1>'
            f'<p class="meta">schedule <b class="mono">{esc(report.schedule_file)}</b> · '
            f"rule pack <b>{esc(pack.id)}</b> ({esc(pack.title)}){verify} · "
            f"{esc(report.units)} units</p>"
            f'<ul class="tally">{items}</ul></div>'
            f'<div class="stamp {report.verdict}">{report.verdict.upper()}</div></div>'
            f'<p class="caution-line">{esc(report.cautions[0])}</p>')


def _items_rows(report: Report, items: list[Finding]) -> str:
    u = report.units
    rows = []
    for f in items:
        state = "waived" if f.waived else f.severity
        rel = shared.relative_margin(f.required, f.provided)
        cls = ' class="short"' if rel is not None and rel < 0 else ""
        waived = (f'<br><span class="small">{esc(shared.waived_line(f.waiver))}</span>'
                  if f.waiver else "")
        rows.append(
            f'<tr class="{state}"><td>{_subject(report, f.subject)}</td>'
            f"<td>{_badge(state)}<br><code>{esc(f.rule)}</code></td>"
            f'<td class="n">{_amt(f.required, u)}</td><td class="n">{_amt(f.provided, u)}</td>'
            f'<td class="n"><span{cls}>{esc(shared.margin(f.required, f.provided, u))}</span></td>'
            f'<td class="msg">{esc(f.message)}{waived}<br><span class="small">{esc(f.source)}'
            f'</span></td><td class="small mono">{esc(f.location)}</td></tr>')
    return "".join(rows)


_ITEMS_HEAD = ('<tr><th>subject</th><th>check</th><th class="n">required</th>'
               '<th class="n">provided</th><th class="n">margin</th><th>what it says · source'
               "</th><th>where</th></tr>")


def _failing(report: Report, pid: str) -> str:
    live = [f for f in report.code_findings
            if not f.waived and f.severity in ("fail", "warning")]
    body = (f"<table>{_ITEMS_HEAD}{_items_rows(report, live)}</table>" if live else
            '<p class="none">Nothing fails: every check passes.</p>')
    return (f'<section id="{pid}-failing"><h2>What fails ({len(live)})</h2>{body}</section>'
            + _declared(report, pid))


def _declared(report: Report, pid: str) -> str:
    """Limits the schedule declares for itself, after the code findings (no verdict)."""
    if not any(c.basis == DECLARED for c in report.cases) and not report.declared_findings:
        return ""
    live = [f for f in report.declared_findings if not f.waived]
    table = f"<table>{_ITEMS_HEAD}{_items_rows(report, live)}</table>" if live else ""
    return (f'<section id="{pid}-declared"><h2>{esc(shared.DECLARED_HEADING)}: '
            f"{esc(shared.declared_summary(report))}</h2><p class=\"small\">"
            f"{esc(shared.DECLARED_NOTE)}</p>{table}</section>")


# --- outdoor air per zone --------------------------------------------------------------------

def _chart(report: Report, pid: str) -> str:
    u = report.units
    show = lambda v: units.to_display(v, "airflow", u)  # noqa: E731
    bars = []
    for s in report.systems:
        for z in s.zones:
            req = z.trail.value("Voz")
            got = z.trail.value("Voz_delivered") if "Voz_delivered" in z.trail else None
            text = formatting.amount(req, "airflow", u) + " needed"
            if got is not None:
                rel = shared.relative_margin(Amount(req, "airflow"), Amount(got, "airflow"))
                text = (f"{formatting.amount(got, 'airflow', u)} of "
                        f"{formatting.amount(req, 'airflow', u)}"
                        + (f" ({formatting.percent(rel)})" if rel is not None else ""))
            bars.append(html_svg.Bar(
                label=f"{s.id}/{z.id} {z.name or ''}".strip(), required=show(req),
                provided=None if got is None else show(got), text=text,
                short=got is not None and got < req * (1 - 1e-9)))
    if not bars:
        return ""
    title = f"Outdoor air per zone: required Voz (tick) and what the zone gets (bar), {u} units"
    svg = html_svg.airflow_chart(bars, units.label("airflow", u), esc, title)
    return (f'<section id="{pid}-air"><h2>Outdoor air per zone</h2>{svg}'
            '<p class="legend"><i class="k-got"></i>gets<i class="k-short"></i>gets less than '
            'it needs<i class="k-need"></i>needs (Voz)</p><p class="small">What the zone gets is '
            "its trail's Voz_delivered: on a single-zone system the scheduled intake; on a "
            "100 % outdoor-air system the air scheduled to the zone (or its share of the intake "
            "by Voz); on a multiple-zone system Vpz·(1 + Xs − Vou/Vot_design), the zone "
            "outdoor airflow the scheduled intake satisfies by Appendix A (Voz·Vot_design/Vot "
            "where Ev is one figure for the system). It is below Voz exactly when the scheduled "
            "intake is short for that zone.</p></section>")


# --- per system ------------------------------------------------------------------------------

def _checks_table(report: Report, s: SystemResult) -> str:
    u = report.units
    rows = []
    for c in [c for c in report.cases if c.system == s.id and c.basis != DECLARED]:
        if c.required is None and c.provided is None and c.status == "pass":
            continue  # passing checks without quantities are counted below, not listed
        rel = shared.relative_margin(c.required, c.provided)
        cls = ' class="short"' if rel is not None and rel < 0 else ""
        rows.append(f'<tr class="{c.status}"><td>{esc(c.subject)}</td>'
                    f"<td><code>{esc(c.rule)}</code><br><span class=\"small\">"
                    f"{esc(shared.check_title(report, c.rule))}</span></td>"
                    f'<td class="n">{_amt(c.required, u)}</td>'
                    f'<td class="n">{_amt(c.provided, u)}</td>'
                    f'<td class="n"><span{cls}>{esc(shared.margin(c.required, c.provided, u))}'
                    f"</span></td><td>{_badge(c.status)}</td></tr>")
    quiet = sum(1 for c in report.cases if c.system == s.id and c.status == "pass"
                and c.basis != DECLARED and c.required is None and c.provided is None)
    note = (f'<p class="small">{quiet} further checks without quantities pass (air classes, '
            "rates, stated distribution, populations).</p>" if quiet else "")
    return ('<table><tr><th>subject</th><th>check</th><th class="n">required</th>'
            '<th class="n">provided</th><th class="n">margin</th><th>result</th></tr>'
            + "".join(rows) + "</table>" + note)


_ZONE_COLS = [("Az", "area"), ("Pz", "people"), ("Vbz", "airflow"), ("Ez", "fraction"),
              ("Voz", "airflow")]


def _zone_table(report: Report, s: SystemResult) -> str:
    u = report.units
    extra = {"multiple-zone": [("Vpz", "airflow"), ("Zpz", "fraction"), ("Evz", "fraction")],
             "outdoor-air": [("Voz_design", "airflow")]}.get(s.kind, [])
    cols = _ZONE_COLS + extra + [("Voz_delivered", "airflow")]
    head = "".join(f'<th class="n">{esc(sym)}'
                   f"{(' ' + esc(units.label(k, u))) if units.label(k, u) else ''}</th>"
                   for sym, k in cols)
    rows = []
    for z in s.zones:
        cells = "".join(f'<td class="n">{_step(z.trail, sym, u)}</td>' for sym, _ in cols)
        crit = " ◂ critical" if s.critical_zone == z.id else ""
        rows.append(f'<tr class="{z.verdict}"><td><b>{esc(z.id)}</b> {esc(z.name or "")}'
                    f'<br><span class="small">{esc(z.space_label)}{crit}</span></td>{cells}'
                    f"<td>{_badge(z.verdict)}</td></tr>")
    return (f"<table><tr><th>zone</th>{head}<th>verdict</th></tr>{''.join(rows)}</table>")


def _step(trail: Trail, symbol: str, u: str) -> str:
    if symbol not in trail:
        return "–"
    step = trail[symbol]
    return esc(formatting.number(units.to_display(step.value, step.kind, u), step.kind))


def _intake_line(report: Report, s: SystemResult) -> str:
    u, t = report.units, s.trail
    req, prov = Amount(t.value("Vot"), "airflow"), Amount(t.value("Vot_design"), "airflow")
    rel = shared.relative_margin(req, prov)
    cls = "short" if rel is not None and rel < 0 else ""
    parts = [f"required Vot <b>{_amt(req, u)}</b>", f"scheduled <b>{_amt(prov, u)}</b>",
             f'margin <span class="{cls}">{esc(shared.margin(req, prov, u))}</span>']
    if s.kind == "multiple-zone":
        parts += [f"{sym} {_step(t, sym, u)}" for sym in ("Ps", "D", "Vou", "Xs", "Ev")
                  if sym in t]
        if s.critical_zone:
            parts.append(f"critical zone <b>{esc(s.critical_zone)}</b>")
    return f'<p class="meta">{" · ".join(parts)}</p>'


def _co2(report: Report, s: SystemResult) -> str:
    figs = []
    for z in s.zones:
        if z.series is None or z.dilution is None:
            continue
        d = z.dilution
        curve = html_svg.Curve(
            label=f"{s.id}/{z.id} {z.name or ''}".strip(),
            hours=[float(v) for v in z.series.times], ppm=[float(v) for v in z.series.ppm],
            occupancy=[float(v) for v in z.series.occupancy], outdoor=d.value("C_out"),
            limit=d.value("C_limit") if "C_limit" in d else None, peak=d.value("C_peak"))
        peak = formatting.amount(d.value("C_peak"), "concentration_ppm", report.units)
        figs.append(f"<figure>{html_svg.co2_chart(curve, esc)}<figcaption><b>{esc(z.id)}</b> "
                    f"{esc(z.name or '')} · peak {esc(peak)} · profile "
                    f"{esc(z.series.profile)}</figcaption></figure>")
    if not figs:
        return ""
    return ("<h3>CO2 over the design day</h3><p class=\"small\">Well-mixed mass balance at the "
            "scheduled airflows; shaded: occupancy; dotted: outdoor level; dashed: declared "
            f"limit.</p><div class=\"grid-co2\">{''.join(figs)}</div>")


def _trail_table(trail: Trail, u: str) -> str:
    rows = []
    for step in trail.steps.values():
        value = formatting.amount(step.value, step.kind, u)
        subst = ""
        if step.formula:
            subst = trail.substituted(step, lambda st: _bare(st, u)).replace("·", " × ")
        why = " · ".join(x for x in (step.note, step.source) if x)
        rows.append(f"<tr><td><b>{esc(step.symbol)}</b></td><td>{esc(step.symbolic())}</td>"
                    f"<td>{esc(subst)}</td><td class=\"n\">{esc(value)}</td>"
                    f"<td>{esc(_ORIGIN.get(step.origin, step.origin))}</td>"
                    f'<td class="small">{esc(why)}</td></tr>')
    return ("<table><tr><th>symbol</th><th>equation</th><th>with values</th>"
            '<th class="n">result</th><th>from</th><th>note · source</th></tr>'
            + "".join(rows) + "</table>")


def _bare(step: Step, u: str) -> str:
    return formatting.number(units.to_display(step.value, step.kind, u), step.kind)


def _trails(report: Report, s: SystemResult) -> str:
    u = report.units
    out = []
    for z in s.zones:
        body = _trail_table(z.trail, u)
        if z.dilution is not None:
            body += "<p class=\"small\">CO2 from occupants</p>" + _trail_table(z.dilution, u)
        for cid, t in z.contaminants.items():
            body += f'<p class="small">{esc(cid)}</p>' + _trail_table(t, u)
        out.append(f"<details><summary>Calculation trail — zone <b>{esc(z.id)}</b> "
                   f"{esc(z.name or '')}</summary>{body}</details>")
    out.append(f"<details><summary>Calculation trail — system <b>{esc(s.id)}</b></summary>"
               f"{_trail_table(s.trail, u)}</details>")
    return "".join(out)


def _system(report: Report, s: SystemResult) -> str:
    method = f", {esc(s.method)} Ev" if s.method else ""
    return (f'<section class="system"><h3>{esc(s.id)} {esc(s.name or "")} '
            f'<span class="small">— {esc(s.kind)}{method}</span>{_badge(s.verdict)}</h3>'
            f"{_intake_line(report, s)}{_checks_table(report, s)}{_zone_table(report, s)}"
            f"{_co2(report, s)}{_trails(report, s)}</section>")


# --- provenance, waivers, notes, cautions ----------------------------------------------------

def _all_trails(report: Report):
    for s in report.systems:
        yield s.id, s.trail
        for z in s.zones:
            yield f"{s.id}/{z.id}", z.trail
            if z.dilution is not None:
                yield f"{s.id}/{z.id}", z.dilution
            for t in z.contaminants.values():
                yield f"{s.id}/{z.id}", t


def _provenance(report: Report, pid: str) -> str:
    u = report.units
    values: dict[tuple[str, str, str], list[str]] = {}
    cited: dict[str, list[str]] = {}
    for subject, trail in _all_trails(report):
        for step in trail.steps.values():
            if step.origin in ("table", "explicit", "assumed"):
                key = (step.symbol, formatting.amount(step.value, step.kind, u),
                       step.source or step.note or _ORIGIN[step.origin])
                values.setdefault(key, [])
                if subject not in values[key]:
                    values[key].append(subject)
            elif step.formula and step.source and step.origin == "computed":
                cited.setdefault(step.source, [])
                if step.symbol not in cited[step.source]:
                    cited[step.source].append(step.symbol)
    rows = "".join(f"<tr><td><b>{esc(sym)}</b></td><td class=\"n\">{esc(val)}</td>"
                   f"<td>{esc(src)}</td><td class=\"small\">{esc(', '.join(subs))}</td></tr>"
                   for (sym, val, src), subs in values.items())
    eqs = "".join(f"<tr><td>{esc(', '.join(syms))}</td><td>{esc(src)}</td></tr>"
                  for src, syms in cited.items())
    rules = shared.pack_rules(report.pack)
    ran = {c.rule for c in report.cases}
    checks = "".join(f"<tr><td><code>{esc(r.id)}</code></td><td>{esc(r.severity)}"
                     f"</td><td>{esc(r.source)}</td></tr>"
                     for r in rules.values() if r.id in ran)
    pack = report.pack
    return (f'<section id="{pid}-provenance"><h2>Where every rule value comes from</h2>'
            f'<p class="meta">rule pack <b>{esc(pack.id)}</b>: {esc(pack.document)}, '
            f"{esc(pack.edition)} edition · {esc(pack.units)} tables · provenance "
            f"<b>{esc(pack.provenance)}</b> · file <span class=\"mono\">{esc(PurePath(pack.file).name)}"
            "</span>"
            "</p><h3>Table values and assumptions used</h3><table><tr><th>symbol</th>"
            '<th class="n">value</th><th>source (provenance)</th><th>used for</th></tr>'
            f"{rows}</table><h3>Equations cited</h3><table><tr><th>gives</th><th>source</th>"
            f"</tr>{eqs}</table><h3>Checks run</h3><table><tr><th>check</th><th>severity</th>"
            f"<th>source</th></tr>{checks}</table></section>")


def _waivers(report: Report, pid: str) -> str:
    waived = [f for f in report.findings if f.waived]
    if not waived and not report.waivers:
        return ""
    day = (f' <span class="small">(expiry judged on {esc(report.waiver_date)})</span>'
           if report.waiver_date else "")
    out = [f'<section id="{pid}-waivers"><h2>Waivers{day}</h2>']
    if waived:
        out.append(f"<h3>Waived findings ({len(waived)})</h3><table>{_ITEMS_HEAD}"
                   f"{_items_rows(report, waived)}</table>")
    out.append(_status_table(report.waivers))
    out.append("</section>")
    return "".join(out)


def _status_table(statuses) -> str:
    if not statuses:
        return ""
    rows = "".join(
        f"<tr><td>{_badge(s.state)}</td><td><code>{esc(s.entry.waiver.rule)}</code></td>"
        f"<td>{esc(s.entry.waiver.subject)}</td><td>{esc(s.detail)}</td>"
        f"<td>{esc(s.entry.waiver.reason)}<br><span class=\"small\">"
        f"{esc(shared.approval(s.entry.mark()))}</span></td>"
        f'<td class="small mono">{esc(s.entry.origin)} {esc(s.entry.location)}</td></tr>'
        for s in statuses)
    return ("<table><tr><th>state</th><th>check</th><th>subject</th><th>outcome</th>"
            f"<th>reason · approval</th><th>written at</th></tr>{rows}</table>")


def _notes(report: Report, pid: str) -> str:
    info = [f for f in report.code_findings if f.severity == "info" and not f.waived]
    parts = []
    if info:
        parts.append(f"<details><summary>{len(info)} notes from the checks</summary><table>"
                     f"{_ITEMS_HEAD}{_items_rows(report, info)}</table></details>")
    if report.notes:
        parts.append("<ul>" + "".join(f"<li>{esc(n)}</li>" for n in report.notes) + "</ul>")
    if not parts:
        return ""
    return f'<section id="{pid}-notes"><h2>Notes</h2>{"".join(parts)}</section>'


def _cautions(cautions: list[str]) -> str:
    items = "".join(f"<li>{esc(c)}</li>" for c in cautions)
    return f'<footer class="cautions" id="cautions"><h2>Cautions</h2><ul>{items}</ul></footer>'


def _article(report: Report, pid: str) -> str:
    return (f'<article class="schedule" id="{pid}">{_top(report)}{_failing(report, pid)}'
            f"{_chart(report, pid)}<section id=\"{pid}-systems\"><h2>Systems</h2>"
            + "".join(_system(report, s) for s in report.systems) + "</section>"
            f"{_waivers(report, pid)}{_provenance(report, pid)}{_notes(report, pid)}</article>")


def _overview(batch: Batch) -> str:
    rows = "".join(
        f'<tr class="{r.verdict}"><td><a href="#r{i}">{esc(r.schedule_file)}</a></td>'
        f"<td>{esc(r.project_name)}</td><td>{_badge(r.verdict)}</td>"
        f'<td class="n">{r.counts()["fail"]}</td><td class="n">{r.counts()["warning"]}</td>'
        f'<td class="n">{r.waived_count()}</td></tr>' for i, r in enumerate(batch.reports, 1))
    c = batch.counts()
    failing = sum(r.verdict == "fail" for r in batch.reports)
    stale = _status_table(batch.waivers)
    return (f'<section id="overview"><div class="top"><div><h1>{len(batch.reports)} schedules'
            f'</h1><p class="meta">{failing} fail · {c["fail"]} failing · {c["warning"]} '
            f'warnings · {c["waived"]} waived</p></div><div class="stamp {batch.verdict}">'
            f"{batch.verdict.upper()}</div></div><p class=\"caution-line\">"
            f"{esc(batch.cautions()[0])}</p><table><tr><th>schedule</th><th>project</th>"
            '<th>verdict</th><th class="n">failing</th><th class="n">warnings</th>'
            f'<th class="n">waived</th></tr>{rows}</table>'
            + (f"<h2>Waivers of the waivers file</h2>{stale}" if stale else "") + "</section>")


def render(batch: Batch) -> str:
    """The HTML document of the run."""
    if batch.single:
        r = batch.reports[0]
        title = f"Ventilation review — {r.project_name}"
        links = [("r1-failing", "what fails"), ("r1-air", "outdoor air"),
                 ("r1-systems", "systems"), ("r1-provenance", "provenance"),
                 ("cautions", "cautions")]
        body = _article(r, "r1")
    else:
        title = f"Ventilation review — {len(batch.reports)} schedules"
        links = [("overview", "overview")] + [(f"r{i}", r.schedule_file)
                                              for i, r in enumerate(batch.reports, 1)]
        body = _overview(batch) + "".join(_article(r, f"r{i}")
                                          for i, r in enumerate(batch.reports, 1))
    nav = "".join(f'<a href="#{esc(href)}">{esc(text)}</a>' for href, text in links)
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            '<meta name="viewport" content="width=device-width, initial-scale=1">'
            f'<meta name="generator" content="airgate {__version__}">'
            f"<title>{esc(title)}</title><style>{CSS}</style></head><body>"
            f'<header class="bar"><span class="brand">airgate · ventilation review</span>'
            f"<nav>{nav}</nav></header><main>{body}{_cautions(batch.cautions())}</main>"
            f"<script>{SCRIPT}</script></body></html>\n")
