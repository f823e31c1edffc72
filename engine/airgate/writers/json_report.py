"""JSON report, contract version 2 (docs/report-format.md).

Values are ``{"value": 425.0, "unit": "ft**3/min"}`` in the schedule's unit system; units are pint
expressions (a stock pint registry parses them once ``person = [people]`` is defined). Output is
deterministic: keys in a fixed order, numbers rounded to 6 significant digits, no timestamps.

Every zone carries its values; its calculation trails (the zone's, its dilution's, its
contaminants') and its line and column only when asked (``trails=True``, ``check --trails``),
so that a portfolio's report stays a small multiple of its input and its zones' positions are
not looked up for it. Systems always carry their trail and location.

A streamed report (:func:`chunks`, :func:`batch_chunks`) writes its zones without trails as
text, a batch at a time (:func:`_zone_texts`, the values objects by ``json_values``); the text
is the one :func:`to_dict`'s dictionaries give.
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from functools import partial
from json.encoder import encode_basestring
from typing import TYPE_CHECKING, Any

from airgate import __version__, units
from airgate.evaluation.findings import Amount, Finding
from airgate.evaluation.report import ConditionResult, Report, SystemResult, ZoneResult
from airgate.evaluation.waivers import WaiverStatus
from airgate.evaluation.trail import Step, Trail
from airgate.writers import json_encode
from airgate.writers.json_values import json_unit as _json_unit
from airgate.writers.json_values import symbol_key as _symbol_key
from airgate.writers.json_values import values_texts
from airgate.writers.output import Lazy, Streamed, json_chunks, joined

if TYPE_CHECKING:
    from airgate.evaluation.review import CommentStatus

REPORT_VERSION = 2


def _round(x: float) -> float | None:
    if math.isnan(x) or math.isinf(x):
        return None  # JSON has no infinity; the trail note says why
    return float(f"{x:.6g}")


def value(x: float, kind: str, system: str) -> dict[str, Any]:
    return {"value": _round(units.to_json_unit(x, kind, system)),
            "unit": units.JSON_UNITS[(kind, system)]}


def _values(trail: Trail, system: str) -> dict[str, Any]:
    """Every step's value: :func:`value` of each, with the key, unit and factors looked up once
    per symbol and kind (the same divisions in the same order, so the same numbers); read from
    the trail's :meth:`~Trail.signature` and :meth:`~Trail.values`, so a trail kept as arrays
    makes no steps for it."""
    out: dict[str, Any] = {}
    entries = _VALUE_ENTRIES
    for (symbol, kind), v in zip(trail.signature(), trail.values()):
        entry = entries.get((symbol, kind, system))
        if entry is None:
            entry = _value_entry(symbol, kind, system)
        key, factor, scale, unit = entry
        x = v / factor / scale
        if x != x or x in _INFINITE:
            out[key] = {"value": None, "unit": unit}
        else:
            out[key] = {"value": float(f"{x:.6g}"), "unit": unit}
    return out


#: (symbol, kind, system) → (JSON key, internal per display unit, display scale, JSON unit)
_VALUE_ENTRIES: dict[tuple[str, str, str], tuple[str, float, float, str]] = {}


def _value_entry(symbol: str, kind: str, system: str) -> tuple[str, float, float, str]:
    entry = _VALUE_ENTRIES[(symbol, kind, system)] = (_symbol_key(symbol),
                                                     *_json_unit(kind, system))
    return entry


_INFINITE = (math.inf, -math.inf)


def _trail(trail: Trail, system: str) -> list[dict[str, Any]]:
    def step(s: Step) -> dict[str, Any]:
        out: dict[str, Any] = {"symbol": _symbol_key(s.symbol), "label": s.symbol, **value(s.value, s.kind, system),
                               "origin": s.origin}
        if s.formula:
            out["formula"] = s.symbolic()
        if s.source:
            out["source"] = str(s.source)  # a schedule value's location is found here
        if s.note:
            out["note"] = s.note
        return out

    return [step(s) for s in trail.steps.values()]


def _series(z: ZoneResult, step_minutes: int) -> dict[str, Any] | None:
    series = z.series
    if series is None or not step_minutes:
        return None
    every = max(1, int(step_minutes))  # the series is sampled each minute
    return {"profile": series.profile, "step": {"value": every, "unit": "minute"},
            "time": {"values": [_round(v * 60) for v in series.times[::every]], "unit": "minute"},
            "CO2": {"values": [_round(v) for v in series.ppm[::every]], "unit": "ppm"},
            "occupancy": {"values": [_round(v) for v in series.occupancy[::every]], "unit": ""}}


def _trailed(trail: Trail, system: str, trails: bool) -> dict[str, Any]:
    """A trail's values, and its steps when ``trails``."""
    out: dict[str, Any] = {"values": _values(trail, system)}
    if trails:
        out["trail"] = _trail(trail, system)
    return out


def _dilution(z: ZoneResult, system: str, step_minutes: int,
              trails: bool) -> dict[str, Any] | None:
    if z.dilution is None:
        return None
    out: dict[str, Any] = {"contaminant": "CO2 from occupants",
                           **_trailed(z.dilution, system, trails)}
    series = _series(z, step_minutes)
    if series is not None:
        out["series"] = series
    return out


def _zone(z: ZoneResult, system: str, step_minutes: int = 0,
          trails: bool = False) -> dict[str, Any]:
    out = {
        "id": z.id, "name": z.name, "space": z.space, "space_label": z.space_label,
        "air_class": z.air_class, "verdict": z.verdict, "values": _values(z.trail, system),
        "location": _location(z.location) if trails else _file_of(z.location),
        **({"trail": _trail(z.trail, system)} if trails else {}),
        "dilution": _dilution(z, system, step_minutes, trails),
        "contaminants": {cid: _trailed(t, system, trails)
                         for cid, t in sorted(z.contaminants.items())},
    }
    if z.packs:  # only where a supplement pack computed figures on the zone
        out["packs"] = {pid: _trailed(t, system, trails) for pid, t in sorted(z.packs.items())}
    if z.makeup is not None:  # only an exhausted zone that states its makeup
        m = z.makeup
        out["makeup"] = ({"from": "outdoor"} if m.source == "outdoor" else
                         {"from": m.source, "zone": m.zone, "air_class": m.air_class})
    return out


def _system(s: SystemResult, system: str, step_minutes: int = 0,
            lazy: bool = False, trails: bool = False) -> dict[str, Any]:
    if lazy and not trails:  # each zone's text made from templates, many zones at a time
        zones: object = Lazy(s.zones, partial(_zone_texts, system=system,
                                              step_minutes=step_minutes))
    else:
        made = (_zone(z, system, step_minutes, trails) for z in s.zones)
        zones = Lazy(made) if lazy else list(made)
    out = dict(
        id=s.id, name=s.name, kind=s.kind, procedure=s.procedure, verdict=s.verdict,
        ventilation_efficiency_method=s.method, critical_zone=s.critical_zone,
        values=_values(s.trail, system), location=_location(s.location),
        trail=_trail(s.trail, system), zones=zones,
    )
    if s.condition is not None:  # only a system that lists design conditions
        out["condition"] = s.condition
        out["conditions"] = [_condition(c, system) for c in s.conditions]
    return (Streamed if lazy else dict)(out)


def _scalar(x: object) -> str:
    """A scalar's JSON text."""
    t = type(x)
    if t is str:
        return encode_basestring(x)
    if x is None:
        return "null"
    if t is int:
        return int.__repr__(x)
    return json_encode.dumps(x)  # True, False, a float, anything else as the encoder writes it


#: indentation level → the %-format of a zone's members up to its contaminants
_ZONE_HEADS: dict[int, str] = {}


def _zone_head(level: int) -> str:
    got = _ZONE_HEADS.get(level)
    if got is None:
        n1 = "\n" + "  " * (level + 1)
        n2 = n1 + "  "
        got = _ZONE_HEADS[level] = (
            "{" + n1 + '"id": %s,' + n1 + '"name": %s,' + n1 + '"space": %s,' + n1
            + '"space_label": %s,' + n1 + '"air_class": %s,' + n1 + '"verdict": %s,' + n1
            + '"values": %s,' + n1 + '"location": {' + n2 + '"file": %s,' + n2 + '"line": null,'
            + n2 + '"column": null' + n1 + "}," + n1 + '"dilution": %s,' + n1
            + '"contaminants": %s')
    return got


def _named_trails(trails: dict) -> list | None:
    """``trails`` sorted by name, or None when a name is not a plain string."""
    for name in trails:
        if type(name) is not str:
            return None
    return sorted(trails.items())


def _zone_texts(zones: list[ZoneResult], level: int, system: str,
                step_minutes: int = 0) -> list[str]:
    """The text of each zone (without its trails) at indentation ``level``: what
    ``json.dumps(_zone(z, system, step_minutes), indent=2, ensure_ascii=False)`` writes there,
    with the values objects of all the zones made together (:func:`json_values.values_texts`).
    A zone whose contaminants or packs are named other than by plain strings is written from
    :func:`_zone`."""
    wanted: list[tuple[Trail, int]] = []
    plans: list[tuple | None] = []
    for z in zones:
        contaminants = _named_trails(z.contaminants) if z.contaminants else ()
        packs = _named_trails(z.packs) if z.packs else ()
        if contaminants is None or packs is None:
            plans.append(None)
            continue
        wanted.append((z.trail, level + 1))
        if z.dilution is not None:
            wanted.append((z.dilution, level + 2))
        for _name, t in contaminants:
            wanted.append((t, level + 3))
        for _name, t in packs:
            wanted.append((t, level + 3))
        plans.append((contaminants, packs))
    texts = iter(values_texts(wanted, system))
    head = _zone_head(level)
    n0 = "\n" + "  " * level
    n1 = n0 + "  "
    n2 = n1 + "  "
    n3 = n2 + "  "
    opened = "{" + n2 + '"contaminant": "CO2 from occupants",' + n2 + '"values": '
    escaped = encode_basestring
    out = []
    for z, plan in zip(zones, plans):
        if plan is None:
            out.append(json_encode.dumps(_zone(z, system, step_minutes), level))
            continue
        contaminants, packs = plan
        values = next(texts)
        if z.dilution is None:
            dilution = "null"
        else:
            dilution = opened + next(texts)
            series = _series(z, step_minutes) if step_minutes else None
            if series is not None:
                dilution += "," + n2 + '"series": ' + json_encode.dumps(series, level + 2)
            dilution += n1 + "}"
        zid, name, space, label, verdict, file = (z.id, z.name, z.space, z.space_label,
                                                  z.verdict, z.location.file)
        text = head % (escaped(zid) if type(zid) is str else _scalar(zid),
                       escaped(name) if type(name) is str else _scalar(name),
                       escaped(space) if type(space) is str else _scalar(space),
                       escaped(label) if type(label) is str else _scalar(label),
                       _scalar(z.air_class),
                       escaped(verdict) if type(verdict) is str else _scalar(verdict),
                       values,
                       escaped(file) if type(file) is str else _scalar(file),
                       dilution,
                       _named_texts(contaminants, texts, n2, n3) if contaminants else "{}")
        if packs:
            text += "," + n1 + '"packs": ' + _named_texts(packs, texts, n2, n3)
        if z.makeup is not None:
            m = z.makeup
            makeup = ({"from": "outdoor"} if m.source == "outdoor" else
                      {"from": m.source, "zone": m.zone, "air_class": m.air_class})
            text += "," + n1 + '"makeup": ' + json_encode.dumps(makeup, level + 1)
        out.append(text + n0 + "}")
    return out


def _named_texts(named: list, texts: Iterator[str], n2: str, n3: str) -> str:
    """``{name: {"values": …}}`` of trails whose values texts come next in ``texts``."""
    if not named:
        return "{}"
    n1 = n2[:-2]
    return "{" + n2 + ("," + n2).join(
        encode_basestring(name) + ": {" + n3 + '"values": ' + next(texts) + n2 + "}"
        for name, _t in named) + n1 + "}"


def _condition(c: ConditionResult, system: str) -> dict[str, Any]:
    return {"id": c.id, "verdict": c.verdict, "ventilation_efficiency_method": c.method,
            "critical_zone": c.critical_zone, "values": _values(c.trail, system),
            "zones": [{"id": z.id, "verdict": z.verdict, "values": _values(z.trail, system)}
                      for z in c.zones]}


def _location(loc) -> dict[str, Any]:
    return {"file": loc.file, "line": loc.line, "column": loc.column}


def _file_of(loc) -> dict[str, Any]:
    """A zone's location in a report without zone trails: its file, line and column null. A
    zone's line and column come with its trails (``trails=True``), so a report that shows no
    zone's working finds no zone's position (the findings and systems keep theirs)."""
    return {"file": loc.file, "line": None, "column": None}


def _amount(a: Amount | None, system: str) -> dict[str, Any] | None:
    return None if a is None else value(a.value, a.kind, system)


def _finding(f: Finding, system: str) -> dict[str, Any]:
    return {
        "rule": f.rule, "severity": f.severity, "basis": f.basis, "subject": f.subject,
        "system": f.system,
        "zone": f.zone, **({} if f.condition is None else {"condition": f.condition}),
        "message": f.message,
        "required": _amount(f.required, system), "provided": _amount(f.provided, system),
        "source": f.source, "location": _location(f.location),
        "waiver": None if f.waiver is None else {
            "reason": f.waiver.reason, "approved_by": f.waiver.approved_by,
            "expires": f.waiver.expires, "origin": f.waiver.origin,
            "location": _location(f.waiver.location)},
        **({} if f.pack is None else {"pack": f.pack}),
    }


def waiver_status(s: WaiverStatus) -> dict[str, Any]:
    """One waiver and what became of it (applied, expired, unmatched)."""
    w, e = s.entry.waiver, s.entry
    return {"rule": w.rule, "subject": w.subject,
            **({} if w.condition is None else {"condition": w.condition}),
            "state": s.state, "detail": s.detail,
            "findings": s.count, "reason": w.reason, "approved_by": w.approved_by,
            "expires": e.expires, "origin": e.origin, "location": _location(e.location)}


def review_comment(s: CommentStatus, compared: bool = False) -> dict[str, Any]:
    """One comment of the reviewer's record and its finding now; ``compared``: with whether the
    comparison resolved it (``airgate compare``)."""
    c = s.entry.comment
    return {"id": c.id, "subject": c.subject, "rule": c.rule, "comment": c.comment,
            "response": c.response, "status": c.status, "reviewer": c.reviewer,
            "date": c.date.isoformat(), "location": _location(s.entry.location),
            "finding": None if s.finding is None else {"severity": s.finding.severity,
                                                       "waived": s.finding.waived},
            **({"resolved": s.resolved} if compared else {}), "to_close": s.to_close}


def _also(s) -> dict[str, Any]:
    p = s.pack
    return {"id": p.id, "title": p.title, "document": p.document, "edition": p.edition,
            "units": p.units, "provenance": p.provenance, "verify": p.verify,
            "systems": None if s.systems is None else sorted(s.systems)}


def to_dict(report: Report, series_step: int = 0, trails: bool = False) -> dict[str, Any]:
    """The JSON report as plain data; ``trails``: every zone's calculation trails too."""
    return _report(report, series_step, lazy=False, trails=trails)


def gate(batch) -> dict[str, Any] | None:
    """The gate of the run when ``--fail-on`` names more than ``fail`` (else the verdict is the
    gate's outcome): the levels and the outcome the exit status gives."""
    if not batch.gate_beyond_verdict:
        return None
    return {"fail_on": list(batch.fail_on), "outcome": batch.gate}


def _report(report: Report, series_step: int, lazy: bool,
            gated: dict[str, Any] | None = None, trails: bool = False) -> dict[str, Any]:
    """The report; ``lazy``: systems, zones and findings are made while they are written
    (output.Lazy), so memory holds a few dozen zones at a time, not the whole portfolio."""
    system = report.units
    pack = report.pack
    listed = Lazy if lazy else list
    return (Streamed if lazy else dict)({
        "report_version": REPORT_VERSION,
        "generator": f"airgate {__version__}",
        "verdict": report.verdict,
        **({"gate": gated} if gated else {}),
        "trails": trails,
        "schedule": {"file": report.schedule_file, "project": report.project_name,
                     "units": system},
        "rules": {"id": pack.id, "title": pack.title, "document": pack.document,
                  "edition": pack.edition, "units": pack.units, "provenance": pack.provenance,
                  "verify": pack.verify},
        **({"also": [_also(s) for s in report.supplements]} if report.supplements else {}),
        "summary": {**report.counts(), "declared": report.declared_count(),
                    "waived": report.waived_count()},
        "systems": listed(_system(s, system, series_step, lazy, trails)
                          for s in report.systems),
        "findings": listed(_finding(f, system) for f in report.findings),
        "waivers": [waiver_status(s) for s in report.waivers],
        "waivers_judged_on": report.waiver_date,
        **({"review": [review_comment(s) for s in report.review]} if report.review else {}),
        "notes": list(report.notes),
        "cautions": list(report.cautions),
    })


def chunks(report: Report, series_step: int = 0, gated: dict[str, Any] | None = None,
           trails: bool = False) -> Iterator[str]:
    """:func:`render` piece by piece, each zone's data made as it is written; ``gated``: the
    run's :func:`gate`, where there is one."""
    return json_chunks(_report(report, series_step, lazy=True, gated=gated, trails=trails))


def render(report: Report, series_step: int = 0, trails: bool = False) -> str:
    """The JSON report; ``series_step`` > 0 adds each zone's design-day CO2 series [minutes];
    ``trails``: every zone's calculation trails too. The text of :func:`chunks` (the same as
    :func:`to_dict`'s data dumped, made faster)."""
    return joined(chunks(report, series_step, trails=trails))


BATCH_VERSION = 1


def render_batch(batch, series_step: int = 0, trails: bool = False) -> str:
    """Several schedules: a wrapper with the run's summary around one report object each (the
    text of :func:`batch_chunks`)."""
    return joined(batch_chunks(batch, series_step, trails=trails))


def batch_chunks(batch, series_step: int = 0, trails: bool = False) -> Iterator[str]:
    """:func:`render_batch` piece by piece, each zone's data made as it is written."""
    return json_chunks(_batch_dict(batch, series_step, lazy=True, trails=trails))


def _batch_dict(batch, series_step: int, lazy: bool = False,
                trails: bool = False) -> dict[str, Any]:
    reports = (_report(r, series_step, lazy, trails=trails) for r in batch.reports)
    out = (Streamed if lazy else dict)({
        "batch_version": BATCH_VERSION,
        "generator": f"airgate {__version__}",
        "verdict": batch.verdict,
        **({"gate": gate(batch)} if gate(batch) else {}),
        "summary": {"schedules": len(batch.reports),
                    "failing_schedules": sum(r.verdict == "fail" for r in batch.reports),
                    **batch.counts()},
        "reports": Lazy(reports) if lazy else list(reports),
        "waivers": [waiver_status(s) for s in batch.waivers],
        "cautions": batch.cautions(),
    })
    return out
