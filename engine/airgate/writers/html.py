"""The HTML review report: one self-contained file a plan reviewer opens, prints or attaches.

Order of a schedule's page: the verdict and what fails (with required, provided and the
shortfall) on the first screen; the outdoor air each zone gets against what it needs; one panel
per system with its check table, zone quantities, CO2 curves and, on expand, every calculation
trail; the provenance of every rule value used; notes, waivers and the cautions. No network, no
web fonts, no images: CSS, inline SVG and a three-line script that opens the trails for printing.

The markup is in ``templates/`` (Jinja2, autoescape on: every value a template shows is escaped,
and control characters are replaced, so a new section cannot forget it). This module only picks
and formats what the evaluation computed; it computes nothing. Same input, same bytes.

Size rule (docs/report-format.md): a schedule with more than :data:`DETAIL_LIMIT` zones is
**summarised** — failing and warning zones keep everything (chart bar, trail, CO2 chart; the
first :data:`ZONE_DETAIL_LIMIT` of them), the systems that pass become one row each, and the
other zones of the systems shown one table row without their trail or chart. The page is then written piece by piece in one pass over the report, so
its time and memory grow linearly with the zones, and the parts that list every subject (the
outdoor-air chart, the notes, the subjects a rule value is used for) are capped.
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from functools import lru_cache
from pathlib import PurePath

from jinja2 import Environment, PackageLoader, StrictUndefined
from markupsafe import Markup

from airgate import __version__, formatting, units
from airgate.escaping import invisible
from airgate.evaluation.batch import Batch
from airgate.evaluation.findings import DECLARED, Amount, Finding
from airgate.evaluation.report import Report, SystemResult, ZoneResult
from airgate.evaluation.trail import Step, Trail
from airgate.writers import html_svg, output, shared

#: a schedule with more zones than this is summarised (see the module docstring)
DETAIL_LIMIT = 200
#: at most this many failing or warning zones keep their trails and CO2 charts when summarised
ZONE_DETAIL_LIMIT = 200
#: at most this many bars in a summarised schedule's outdoor-air chart
CHART_LIMIT = 100
#: at most this many information notes listed in a summarised schedule
NOTES_LIMIT = 200
#: at most this many subjects listed against one rule value in the provenance table
USED_FOR_LIMIT = 12

_CONTROL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f\ud800-\udfff]")
_ORIGIN = {"schedule": "schedule", "table": "rule pack", "computed": "computed",
           "explicit": "stated with basis", "assumed": "assumed", "system": "system value"}


def _finalize(value: object) -> object:
    """Every ``{{ value }}`` of a template: control characters become U+FFFD before escaping,
    bidirectional controls are shown as ``\\u202e`` (:func:`airgate.escaping.invisible`)."""
    if isinstance(value, str) and not isinstance(value, Markup):
        return invisible(_CONTROL.sub("\ufffd", value))
    return value


@lru_cache(maxsize=1)
def environment() -> Environment:
    """The templates' environment: autoescape on for every template, undefined names fail."""
    return Environment(loader=PackageLoader("airgate.writers", "templates"), autoescape=True,
                       finalize=_finalize, undefined=StrictUndefined, trim_blocks=True,
                       lstrip_blocks=True, keep_trailing_newline=True, auto_reload=False)


class _View:
    """What one schedule's page shows, formatted for display (units of the report)."""

    def __init__(self, report: Report, pid: str) -> None:
        self.r, self.pid, self.u = report, pid, report.units
        self.names: dict[str, str] = {}
        for s in report.systems:
            self.names[s.id] = s.name or ""
            for z in s.zones:
                self.names[f"{s.id}/{z.id}"] = z.name or ""
        self.zone_count = sum(len(s.zones) for s in report.systems)
        self.summarised = self.zone_count > DETAIL_LIMIT
        #: subjects with a live fail or warning finding: always shown in full
        self.attention = {f.subject for f in report.findings if not f.waived
                          and f.severity in ("fail", "warning")}
        self.detailed_zones = 0  # zones given trails and charts so far (summarised pages)
        self.cases: dict[str, list] = {}
        for c in report.cases:
            if c.basis != DECLARED:
                self.cases.setdefault(c.system, []).append(c)

    # --- formatting helpers ---------------------------------------------------------------

    def amount(self, a: Amount | None) -> str:
        return shared.amount(a, self.u)

    def margin(self, required: Amount | None, provided: Amount | None) -> dict:
        rel = shared.relative_margin(required, provided)
        return {"text": shared.margin(required, provided, self.u),
                "short": rel is not None and rel < 0}

    def number(self, trail: Trail, symbol: str) -> str:
        if symbol not in trail:
            return "–"
        step = trail[symbol]
        return formatting.number(units.to_display(step.value, step.kind, self.u), step.kind)

    def detailed(self, s: SystemResult, z: ZoneResult | None = None) -> bool:
        """Whether a system (or one of its zones) is shown in full."""
        if not self.summarised:
            return True
        if z is None:
            return s.verdict == "fail" or s.id in self.attention or any(
                f"{s.id}/{x.id}" in self.attention or x.verdict == "fail" for x in s.zones)
        return z.verdict == "fail" or f"{s.id}/{z.id}" in self.attention

    # --- findings ---------------------------------------------------------------------------

    def item(self, f: Finding) -> dict:
        # a declared limit missed is shown in amber as "missed": it is not a code failure
        state = "waived" if f.waived else "warning" if f.declared else f.severity
        return {"state": state, "label": "missed" if f.declared and not f.waived else None,
                "subject": f.subject, "name": self.names.get(f.subject, ""),
                "rule": shared.rule_label(self.r, f.pack, f.rule),
                "required": self.amount(f.required),
                "provided": self.amount(f.provided), "margin": self.margin(f.required, f.provided),
                "message": f.message, "waived": shared.waived_line(f.waiver) if f.waiver else "",
                "source": f.source, "location": str(f.location)}

    def declared(self) -> dict | None:
        r = self.r
        if not any(c.basis == DECLARED for c in r.cases) and not r.declared_findings:
            return None
        return {"heading": shared.DECLARED_HEADING, "summary": shared.declared_summary(r),
                "note": shared.DECLARED_NOTE,
                "rows": [self.item(f) for f in r.declared_findings if not f.waived]}

    # --- outdoor air per zone ---------------------------------------------------------------

    def chart(self) -> tuple[dict | None, str]:
        u, bars, left_out = self.u, [], 0
        for s in self.r.systems:
            if "Vot" not in s.trail:
                continue  # natural ventilation: no airflow is computed for its zones
            for z in s.zones:
                if self.summarised and f"{s.id}/{z.id}" not in self.attention \
                        and z.verdict != "fail":
                    continue
                if self.summarised and len(bars) >= CHART_LIMIT:
                    left_out += 1
                    continue
                bars.append(self.bar(s, z))
        if not bars:
            return None, ""
        title = (f"Outdoor air per zone: required Voz (tick) and what the zone gets (bar), "
                 f"{u} units")
        note = ""
        if self.summarised:
            note = (f"{self.zone_count:,} zones: only the zones with a failing or warning "
                    "finding are charted" + (f" (the first {CHART_LIMIT}; {left_out:,} more are "
                                             "in the system panels)" if left_out else "") + ".")
        return html_svg.airflow_chart(bars, units.label("airflow", u), title), note

    def bar(self, s: SystemResult, z: ZoneResult) -> html_svg.Bar:
        u = self.u
        req = z.trail.value("Voz")
        got = z.trail.value("Voz_delivered") if "Voz_delivered" in z.trail else None
        text = formatting.amount(req, "airflow", u) + " needed"
        if got is not None:
            rel = shared.relative_margin(Amount(req, "airflow"), Amount(got, "airflow"))
            text = (f"{formatting.amount(got, 'airflow', u)} of "
                    f"{formatting.amount(req, 'airflow', u)}"
                    + (f" ({formatting.percent(rel)})" if rel is not None else ""))
        return html_svg.Bar(
            label=f"{s.id}/{z.id} {z.name or ''}".strip(),
            required=units.to_display(req, "airflow", u),
            provided=None if got is None else units.to_display(got, "airflow", u), text=text,
            short=got is not None and got < req * (1 - 1e-9))

    # --- systems ----------------------------------------------------------------------------

    def intake(self, s: SystemResult) -> tuple[Amount | None, Amount | None]:
        if "Vot" not in s.trail:
            return None, None  # natural ventilation: no intake
        return Amount(s.trail.value("Vot"), "airflow"), Amount(s.trail.value("Vot_design"),
                                                               "airflow")

    def passing_row(self, s: SystemResult) -> dict:
        req, prov = self.intake(s)
        return {"id": s.id, "name": s.name or "", "kind": shared.kind_label(s), "zones": len(s.zones),
                "required": self.amount(req), "scheduled": self.amount(prov),
                "margin": self.margin(req, prov), "verdict": s.verdict}

    def passing_zone(self, s: SystemResult, z: ZoneResult) -> dict:
        return {"system": s.id, "id": z.id, "name": z.name or "", "space": z.space_label,
                "voz": self.number(z.trail, "Voz"), "got": self.number(z.trail, "Voz_delivered"),
                "verdict": z.verdict}

    def system(self, s: SystemResult) -> dict:
        t = s.trail
        req, prov = self.intake(s)
        params = []
        if s.kind == "multiple-zone":
            params = [f"{sym} {self.number(t, sym)}" for sym in ("Ps", "D", "Vou", "Xs", "Ev")
                      if sym in t]
        cases = self.cases.get(s.id, [])
        quiet = sum(1 for c in cases if c.status == "pass" and c.required is None
                    and c.provided is None)
        shown_zones = [z for z in s.zones if self.detailed(s, z)]
        if self.summarised:
            room = max(0, ZONE_DETAIL_LIMIT - self.detailed_zones)
            shown_zones = shown_zones[:room]
            self.detailed_zones += len(shown_zones)
        left_out = len(s.zones) - len(shown_zones)
        return {
            "id": s.id, "name": s.name or "", "kind": shared.kind_label(s), "method": s.method or "",
            "verdict": s.verdict, "required": self.amount(req), "scheduled": self.amount(prov),
            "intake": req is not None,
            "margin": self.margin(req, prov), "params": params, "critical": s.critical_zone or "",
            "conditions": self.conditions(s), "condition": getattr(s, "condition", None) or "",
            "airflow_unit": units.label("airflow", self.u),
            "checks": (self.check_row(c) for c in cases
                       if not (c.required is None and c.provided is None and c.status == "pass")
                       and (not self.summarised or c.status != "pass")),
            "quiet": self.quiet_note(cases, quiet),
            "zone_head": [f"{sym} {units.label(k, self.u)}".strip() for sym, k in self.columns(s)]
            if s.supplies else [],
            "zone_rows": (self.zone_row(s, z) for z in s.zones) if s.supplies else (),
            "fan": "" if s.supplies else shared.fan_line(s, self.u),
            "exhaust": shared.exhaust_rows(s, self.u),
            "packs": [{"id": pid, "head": head, "rows": rows}
                      for pid, head, rows in shared.pack_tables(s, self.u)],
            "co2": [f for f in (self.co2(s, z) for z in shown_zones) if f is not None],
            "trails": self.trails(s, shown_zones),
            "trails_left_out": (f"{left_out:,} of the zones above are listed without their "
                                "calculation trails and CO2 charts (the schedule has more than "
                                f"{DETAIL_LIMIT} zones; trails are kept for the first "
                                f"{ZONE_DETAIL_LIMIT} failing or warning zones); airgate explain "
                                "--zone or the JSON report gives any of them." if left_out
                                else ""),
        }

    def conditions(self, s: SystemResult) -> list[dict]:
        """The design conditions of the system, the governing one marked (none without)."""
        return [{"governs": governs, "id": cells[0], "cells": cells[1:-1], "verdict": cells[-1]}
                for governs, cells in shared.condition_rows(s, self.u)]

    def quiet_note(self, cases: list, quiet: int) -> str:
        passing = sum(1 for c in cases if c.status == "pass") - quiet
        parts = []
        if quiet:
            parts.append(f"{quiet} further checks without quantities pass (air classes, rates, "
                         "stated distribution, populations).")
        if self.summarised and passing:
            parts.append(f"{passing:,} checks with quantities pass and are not listed.")
        return " ".join(parts)

    def check_row(self, c) -> dict:
        return {"status": c.status, "subject": c.subject,
                "rule": shared.rule_label(self.r, c.pack, c.rule),
                "title": shared.check_title(self.r, c.rule, c.pack),
                "required": self.amount(c.required),
                "provided": self.amount(c.provided), "margin": self.margin(c.required, c.provided)}

    _COLUMNS = [("Az", "area"), ("Pz", "people"), ("Vbz", "airflow"), ("Ez", "fraction"),
                ("Voz", "airflow")]
    _EXTRA = {"multiple-zone": [("Vpz", "airflow"), ("Zpz", "fraction"), ("Evz", "fraction")],
              "outdoor-air": [("Voz_design", "airflow")],
              "natural": [("A_open_min", "area"), ("A_open", "area"), ("depth_max", "length"),
                          ("depth", "length")]}

    def columns(self, s: SystemResult) -> list[tuple[str, str]]:
        delivered = [] if s.kind == "natural" else [("Voz_delivered", "airflow")]
        return self._COLUMNS + self._EXTRA.get(s.kind, []) + delivered

    def zone_row(self, s: SystemResult, z: ZoneResult) -> dict:
        return {"id": z.id, "name": z.name or "", "space": z.space_label,
                "critical": s.critical_zone == z.id, "verdict": z.verdict,
                "cells": [self.number(z.trail, sym) for sym, _ in self.columns(s)]}

    def co2(self, s: SystemResult, z: ZoneResult) -> dict | None:
        if z.series is None or z.dilution is None:
            return None
        d = z.dilution
        curve = html_svg.Curve(
            label=f"{s.id}/{z.id} {z.name or ''}".strip(),
            hours=[float(v) for v in z.series.times], ppm=[float(v) for v in z.series.ppm],
            occupancy=[float(v) for v in z.series.occupancy], outdoor=d.value("C_out"),
            limit=d.value("C_limit") if "C_limit" in d else None, peak=d.value("C_peak"))
        return {"chart": html_svg.co2_chart(curve), "id": z.id, "name": z.name or "",
                "peak": formatting.amount(d.value("C_peak"), "concentration_ppm", self.u),
                "profile": z.series.profile}

    def trails(self, s: SystemResult, zones: list[ZoneResult]) -> Iterator[dict]:
        for z in zones:
            parts = [{"label": "", "rows": self.trail_rows(z.trail)}]
            if z.dilution is not None:
                parts.append({"label": "CO2 from occupants",
                              "rows": self.trail_rows(z.dilution)})
            for cid, t in z.contaminants.items():
                parts.append({"label": cid, "rows": self.trail_rows(t)})
            for pid, t in sorted(z.packs.items()):
                parts.append({"label": f"rule pack {pid}", "rows": self.trail_rows(t)})
            yield {"what": "zone", "id": z.id, "name": z.name or "", "parts": parts}
        yield {"what": "system", "id": s.id, "name": "",
               "parts": [{"label": "", "rows": self.trail_rows(s.trail)}]}

    def trail_rows(self, trail: Trail) -> list[dict]:
        rows = []
        for step in trail.steps.values():
            subst = ""
            if step.formula:
                subst = trail.substituted(step, self.bare).replace("·", " × ")
            rows.append({"symbol": step.symbol, "symbolic": step.symbolic(),
                         "substituted": subst,
                         "value": formatting.amount(step.value, step.kind, self.u),
                         "origin": _ORIGIN.get(step.origin, step.origin),
                         "why": " · ".join(str(x) for x in (step.note, step.source) if x)})
        return rows

    def bare(self, step: Step) -> str:
        return formatting.number(units.to_display(step.value, step.kind, self.u), step.kind)

    # --- provenance, waivers, notes ---------------------------------------------------------

    def provenance(self) -> dict:
        r, u = self.r, self.u
        raw: dict[tuple[str, float, str, str], dict[str, None]] = {}
        cited: dict[str, dict[str, None]] = {}
        for subject, trail in _all_trails(r):
            for step in trail.steps.values():
                if step.origin in ("table", "explicit", "assumed"):
                    key = (step.symbol, step.value, step.kind,
                           str(step.source or step.note or _ORIGIN[step.origin]))
                    raw.setdefault(key, {})[subject] = None  # ordered set
                elif step.formula and step.source and step.origin == "computed":
                    cited.setdefault(str(step.source), {})[step.symbol] = None
        # one row per value as shown (each distinct value formatted once)
        values: dict[tuple[str, str, str], dict[str, None]] = {}
        for (sym, value, kind, src), subjects in raw.items():
            values.setdefault((sym, formatting.amount(value, kind, u), src), {}).update(subjects)
        cap = USED_FOR_LIMIT if self.summarised else None
        rows = [{"symbol": sym, "value": val, "source": src, "used_for": _listed(subs, cap)}
                for (sym, val, src), subs in values.items()]
        ran = {c.rule for c in r.cases if c.pack in (None, r.pack.id)}
        pack = r.pack
        also = [{"id": f"{s.pack.id}: {x.id}", "severity": x.severity, "source": x.source}
                for s in r.supplements for x in shared.pack_rules(s.pack).values()
                if any(c.pack == s.pack.id and c.rule == x.id for c in r.cases)]
        return {"id": pack.id, "document": pack.document, "edition": pack.edition,
                "units": pack.units, "provenance": pack.provenance,
                "file": PurePath(pack.file).name, "table_values": rows,
                "equations": [{"gives": ", ".join(syms), "source": src}
                              for src, syms in cited.items()],
                "checks": [{"id": x.id, "severity": x.severity, "source": x.source}
                           for x in shared.pack_rules(pack).values() if x.id in ran] + also}

    def waivers(self) -> dict | None:
        waived = [f for f in self.r.findings if f.waived]
        if not waived and not self.r.waivers:
            return None
        return {"date": self.r.waiver_date or "", "waived": [self.item(f) for f in waived],
                "statuses": [_status(s) for s in self.r.waivers]}

    def notes(self) -> dict | None:
        info = [f for f in self.r.code_findings if f.severity == "info" and not f.waived]
        if not info and not self.r.notes:
            return None
        shown = info[:NOTES_LIMIT] if self.summarised else info
        more = len(info) - len(shown)
        return {"info": [self.item(f) for f in shown], "info_count": len(info),
                "info_left_out": (f"{more:,} more info findings are in the text and JSON reports."
                                  if more else ""),
                "report": list(self.r.notes)}

    # --- the article ------------------------------------------------------------------------

    def article(self) -> dict:
        r, pack, c = self.r, self.r.pack, self.r.counts()
        chart, chart_note = self.chart()
        full = [s for s in r.systems if self.detailed(s)]
        passing = [s for s in r.systems if not self.detailed(s)]
        return {
            "pid": self.pid, "project": r.project_name, "schedule_file": r.schedule_file,
            "pack_id": pack.id, "verify": bool(pack.verify),
            "pack_title": "; also ".join([pack.title, *shared.supplement_lines(r)]),
            "units": r.units, "verdict": r.verdict, "caution": r.cautions[0],
            "airflow_unit": units.label("airflow", self.u),
            "tally": [{"cls": "fail", "n": c["fail"], "label": "failing"},
                      {"cls": "warning", "n": c["warning"],
                       "label": "warning" if c["warning"] == 1 else "warnings"},
                      {"cls": "info", "n": c["info"], "label": "info"},
                      {"cls": "waived", "n": r.waived_count(), "label": "waived"}],
            "failing_systems": sum(s.verdict == "fail" for s in r.systems),
            "n_systems": len(r.systems),
            "failing": [self.item(f) for f in r.code_findings
                        if not f.waived and f.severity in ("fail", "warning")],
            "declared": self.declared(), "chart": chart, "chart_left_out": chart_note,
            "summary_rule": (f"The schedule has {self.zone_count:,} zones, more than "
                             f"{DETAIL_LIMIT}: systems that pass are listed one row each, and "
                             f"only zones with a failing or warning finding (the first "
                             f"{ZONE_DETAIL_LIMIT}) keep their calculation trails and CO2 "
                             "charts." if self.summarised else ""),
            "passing_systems": [self.passing_row(s) for s in passing],
            "passing_zone_count": sum(len(s.zones) for s in passing),
            "passing_zones": (self.passing_zone(s, z) for s in passing for z in s.zones),
            "systems": (self.system(s) for s in full),
            "waivers": self.waivers(), "provenance": self.provenance(), "notes": self.notes(),
            "review": review_view(r.review),
        }


def review_view(statuses) -> dict | None:
    """The reviewer's record for a template (``macros.review_table``), or None without one."""
    if not statuses:
        return None
    return {"title": shared.review_title(statuses), "head": shared.REVIEW_HEAD,
            "rows": [{"cells": shared.comment_cells(s), "close": s.to_close} for s in statuses]}


def _listed(subjects: dict[str, None], cap: int | None) -> str:
    names = list(subjects)
    if cap is None or len(names) <= cap:
        return ", ".join(names)
    return ", ".join(names[:cap]) + f" and {len(names) - cap:,} more"


def _all_trails(report: Report):
    for s in report.systems:
        yield s.id, s.trail
        for z in s.zones:
            yield f"{s.id}/{z.id}", z.trail
            if z.dilution is not None:
                yield f"{s.id}/{z.id}", z.dilution
            for t in z.contaminants.values():
                yield f"{s.id}/{z.id}", t


def _status(s) -> dict:
    w = s.entry.waiver
    return {"state": s.state, "rule": w.rule, "subject": shared.waiver_subject(w),
            "detail": s.detail, "reason": w.reason, "approval": shared.approval(s.entry.mark()),
            "where": f"{s.entry.origin} {s.entry.location}"}


def _overview(batch: Batch) -> dict:
    c = batch.counts()
    return {"count": len(batch.reports), "failing": sum(r.verdict == "fail"
                                                        for r in batch.reports),
            "fail": c["fail"], "warning": c["warning"], "waived": c["waived"],
            "verdict": batch.verdict, "caution": batch.cautions()[0],
            "rows": [{"pid": f"r{i}", "file": r.schedule_file, "project": r.project_name,
                      "verdict": r.verdict, "fail": r.counts()["fail"],
                      "warning": r.counts()["warning"], "waived": r.waived_count()}
                     for i, r in enumerate(batch.reports, 1)],
            "waivers": [_status(s) for s in batch.waivers]}


def chunks(batch: Batch) -> Iterator[str]:
    """The HTML document of the run, piece by piece (each schedule's page is built as it is
    written, so a large schedule is never held as one string)."""
    if batch.single:
        r = batch.reports[0]
        title = f"Ventilation review — {r.project_name}"
        links = [("r1-failing", "what fails"), ("r1-air", "outdoor air"),
                 ("r1-systems", "systems"), ("r1-provenance", "provenance"),
                 ("cautions", "cautions")]
        overview = None
    else:
        title = f"Ventilation review — {len(batch.reports)} schedules"
        links = [("overview", "overview")] + [(f"r{i}", r.schedule_file)
                                              for i, r in enumerate(batch.reports, 1)]
        overview = _overview(batch)
    articles = (_View(r, f"r{i}").article() for i, r in enumerate(batch.reports, 1))
    template = environment().get_template("page.html.j2")
    return template.generate(
        version=__version__, title=title, overview=overview, articles=articles,
        links=[{"href": href, "text": text} for href, text in links],
        cautions=batch.cautions(), paper=paper(batch))


def paper(batch: Batch) -> str:
    """The printed page: US letter for a run in I-P units, A4 otherwise (set in the page's print
    stylesheet, so that printing does not depend on the printer's or the locale's default)."""
    return "letter" if all(r.units == units.IP for r in batch.reports) else "A4"


def render(batch: Batch) -> str:
    """The HTML document of the run as one string."""
    return output.joined(chunks(batch))
