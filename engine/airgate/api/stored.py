"""A round kept as its JSON report: an airgate report read back for ``airgate compare``.

A reviewer often keeps the report of the last round (``check --format json``), not the schedule
it came from. :func:`load_report` reads such a file (report version 2 or 1, docs/report-format.md)
back into a :class:`~airgate.evaluation.report.Report` holding what the comparison needs: the
verdicts, the trails of the systems and zones (values in internal units again), the findings and
what became of each waiver (applied, expired, unmatched, as judged then).
The rule pack is not loaded; the report names it (:class:`StoredPack`).

Version 2 writes a zone's trail only on request (``check --trails``); a zone without one is read
from its values (origin ``computed``), so its values, margins and verdicts still compare, but the
inputs its trail would have shown do not (docs/compare.md).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from airgate import units
from airgate.errors import ScheduleError
from airgate.evaluation.findings import Amount, Finding, Location, WaiverMark
from airgate.evaluation.report import Report, SystemResult, ZoneResult
from airgate.evaluation.trail import Trail, ValuesTrail
from airgate.evaluation.waivers import APPLIED, EXPIRED, FILE, UNMATCHED, WaiverEntry, WaiverStatus
from airgate.models.waivers import Waiver
from airgate.readers import document

#: a JSON unit → the quantity kind it is written for (the first kind of a shared unit: a
#: unitless value reads as a fraction)
_KINDS: dict[tuple[str, str], str] = {}
for (_kind, _system), _unit in units.JSON_UNITS.items():
    _KINDS.setdefault((_unit, _system), _kind)


#: the report versions read back (2 differs from 1 only in writing zone trails on request)
READABLE = (1, 2)


@dataclass(frozen=True)
class StoredPack:
    """The rule pack a stored report names (not loaded)."""

    id: str
    title: str = ""


def _location(data: dict | None, fallback: str) -> Location:
    data = data or {}
    return Location(data.get("file") or fallback, data.get("line"), data.get("column"))


def _internal(entry: dict, system: str) -> tuple[float, str]:
    """(internal value, kind) of a ``{"value", "unit"}`` entry."""
    kind = _KINDS.get((entry.get("unit", ""), system), "fraction")
    value = entry.get("value")
    value = float("nan") if value is None else float(value)
    return units.to_internal(value * units.KINDS[kind].scale(system), kind, system), kind


def _trail(steps: list[dict], system: str) -> Trail:
    trail = Trail()
    for s in steps:
        value, kind = _internal(s, system)
        trail.add(s.get("label") or s["symbol"], value, kind, source=s.get("source", ""),
                  note=s.get("note", ""), origin=s.get("origin", "computed"))
    return trail


def _from_values(values: dict[str, dict], system: str) -> ValuesTrail:
    """A zone's trail rebuilt from its ``values`` (a report written without ``--trails``): each
    value under its key (the label of every zone symbol a comparison reads), origin unknown."""
    trail = ValuesTrail()
    for key, entry in values.items():
        value, kind = _internal(entry, system)
        trail.add(key, value, kind)
    return trail


def _amount(entry: dict | None, system: str) -> Amount | None:
    if entry is None:
        return None
    value, kind = _internal(entry, system)
    return Amount(value, kind)


def _finding(f: dict, system: str, file: str) -> Finding:
    w = f.get("waiver")
    mark = None if w is None else WaiverMark(
        reason=w["reason"], approved_by=w["approved_by"], expires=w.get("expires"),
        location=_location(w.get("location"), file), origin=w.get("origin", ""))
    return Finding(rule=f["rule"], severity=f["severity"], subject=f["subject"],
                   message=f["message"], source=f.get("source", ""),
                   location=_location(f.get("location"), file),
                   required=_amount(f.get("required"), system),
                   provided=_amount(f.get("provided"), system), system=f.get("system", ""),
                   zone=f.get("zone"), waiver=mark, basis=f.get("basis", "code"),
                   condition=f.get("condition"))


def _waiver(w: dict, i: int, file: str) -> WaiverStatus:
    """A waiver and what became of it, as the report says (applied, expired or unmatched)."""
    state = w["state"]
    if state not in (APPLIED, EXPIRED, UNMATCHED):
        raise ValueError(f"waivers[{i}].state {state!r}")
    where = _location(w.get("location"), file)
    waiver = Waiver(rule=w["rule"], subject=w["subject"], reason=w["reason"],
                    approved_by=w["approved_by"], expires=w.get("expires"),
                    condition=w.get("condition"))
    entry = WaiverEntry(waiver=waiver, location=where, rule_location=where, field=("waivers", i),
                        origin=w.get("origin", FILE))
    return WaiverStatus(entry, state, w.get("detail", ""), int(w.get("findings", 0)))


def _zone(z: dict, system: str, file: str) -> ZoneResult:
    return ZoneResult(id=str(z["id"]), name=z.get("name"), space=z.get("space", ""),
                      space_label=z.get("space_label", ""),
                      location=_location(z.get("location"), file),
                      trail=(_trail(z["trail"], system) if "trail" in z
                             else _from_values(z.get("values", {}), system)),
                      air_class=z.get("air_class", 1), verdict=z.get("verdict", "pass"))


def _system(s: dict, system: str, file: str) -> SystemResult:
    return SystemResult(id=str(s["id"]), name=s.get("name"), kind=s.get("kind", ""),
                        location=_location(s.get("location"), file),
                        trail=_trail(s.get("trail", []), system),
                        zones=[_zone(z, system, file) for z in s.get("zones", [])],
                        method=s.get("ventilation_efficiency_method"),
                        critical_zone=s.get("critical_zone"), verdict=s.get("verdict", "pass"))


def load_report(path: str | Path) -> Report:
    """Read an airgate JSON report of one schedule back as a report (for a comparison).

    A batch report (several schedules), or a file that is not an airgate report of version 1 or
    2, is an input error naming the file and what to give instead.
    """
    data: Any = document.load(path, ScheduleError).data  # limits, encoding, syntax: located
    if not isinstance(data, dict) or data.get("report_version") not in READABLE:
        kind = "a report of several schedules" if isinstance(data, dict) and \
            "batch_version" in data else "not an airgate JSON report of version 1 or 2"
        raise ScheduleError(f"{kind}", file=str(path),
                            hint="give the report of one schedule (check SCHEDULE --format "
                                 "json), or the schedule itself")
    try:
        system = data["schedule"]["units"]
        file = data["schedule"]["file"]
        report = Report(schedule_file=str(file), project_name=data["schedule"]["project"],
                        units=system,
                        pack=StoredPack(data["rules"]["id"], data["rules"].get("title", "")),
                        systems=[_system(s, system, file) for s in data["systems"]],
                        findings=[_finding(f, system, file) for f in data["findings"]],
                        notes=list(data.get("notes", [])),
                        cautions=list(data.get("cautions", [])),
                        waivers=[_waiver(w, i, file)
                                 for i, w in enumerate(data.get("waivers", []))],
                        waiver_date=data.get("waivers_judged_on"))
    except (KeyError, TypeError, ValueError) as exc:
        raise ScheduleError(f"not a JSON report airgate can read back ({type(exc).__name__}: "
                            f"{exc})", file=str(path),
                            hint="give a report written by airgate check --format json") \
            from None
    return report
