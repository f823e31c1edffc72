"""JSON report, contract version 2 (docs/report-format.md).

Values are ``{"value": 425.0, "unit": "ft**3/min"}`` in the schedule's unit system; units are pint
expressions (a stock pint registry parses them once ``person = [people]`` is defined). Output is
deterministic: keys in a fixed order, numbers rounded to 6 significant digits, no timestamps.

Every zone carries its values; its calculation trails (the zone's, its dilution's, its
contaminants') and its line and column only when asked (``trails=True``, ``check --trails``),
so that a portfolio's report stays a small multiple of its input and its zones' positions are
not looked up for it. Systems always carry their trail and location.
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from functools import lru_cache
from typing import TYPE_CHECKING, Any

from airgate import __version__, units
from airgate.evaluation.findings import Amount, Finding
from airgate.evaluation.report import ConditionResult, Report, SystemResult, ZoneResult
from airgate.evaluation.waivers import WaiverStatus
from airgate.evaluation.trail import Step, Trail
from airgate.writers.output import Lazy, Streamed, json_chunks, json_text

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


#: (kind, system) → (internal per display unit, display scale, JSON unit): what
#: :func:`units.to_json_unit` divides by, looked up once per kind rather than once per value
_JSON_UNIT: dict[tuple[str, str], tuple[float, float, str]] = {}


def _json_unit(kind: str, system: str) -> tuple[float, float, str]:
    got = _JSON_UNIT.get((kind, system))
    if got is None:
        got = _JSON_UNIT[(kind, system)] = (units.to_internal(1.0, kind, system),
                                            units.KINDS[kind].scale(system),
                                            units.JSON_UNITS[(kind, system)])
    return got


@lru_cache(maxsize=4096)
def _symbol_key(symbol: str) -> str:
    """ASCII keys for machine use: ``ΣRp·Pz`` → ``sum_Rp_Pz``, ``max Zpz`` → ``max_Zpz``."""
    out = symbol.replace("Σ", "sum_").replace("·", "_").replace(" ", "_")
    return out.replace("(", "").replace(")", "")


def _values(trail: Trail, system: str) -> dict[str, Any]:
    """Every step's value: :func:`value` of each, with the key, unit and factors looked up once
    per symbol and kind (the same divisions in the same order, so the same numbers)."""
    out: dict[str, Any] = {}
    entries = _VALUE_ENTRIES
    for s in trail.steps.values():
        entry = entries.get((s.symbol, s.kind, system))
        if entry is None:
            entry = _value_entry(s.symbol, s.kind, system)
        key, factor, scale, unit = entry
        x = s.value / factor / scale
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
    zones = (_zone(z, system, step_minutes, trails) for z in s.zones)
    out = dict(
        id=s.id, name=s.name, kind=s.kind, procedure=s.procedure, verdict=s.verdict,
        ventilation_efficiency_method=s.method, critical_zone=s.critical_zone,
        values=_values(s.trail, system), location=_location(s.location),
        trail=_trail(s.trail, system), zones=Lazy(zones) if lazy else list(zones),
    )
    if s.condition is not None:  # only a system that lists design conditions
        out["condition"] = s.condition
        out["conditions"] = [_condition(c, system) for c in s.conditions]
    return (Streamed if lazy else dict)(out)


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
    ``trails``: every zone's calculation trails too."""
    return json_text(to_dict(report, series_step, trails))


BATCH_VERSION = 1


def render_batch(batch, series_step: int = 0, trails: bool = False) -> str:
    """Several schedules: a wrapper with the run's summary around one report object each."""
    return json_text(_batch_dict(batch, series_step, trails=trails))


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
