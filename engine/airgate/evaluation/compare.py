"""Two evaluations of one building compared: a resubmittal against the round before.

``airgate compare OLD NEW`` (docs/compare.md) lists what a reviewer reads first in a new round:

- the verdicts that changed (the schedule, each system, each zone; a subject only one side has is
  ``None`` on the other);
- the inputs that changed, field by field as written in each schedule, with where each side
  wrote it (lists of entries with an ``id`` are matched by id, so reordering is no change);
- the values that moved beyond a stated relative tolerance (:data:`VALUES`: the required and
  scheduled intake, Ev, each zone's required and delivered outdoor air, exhaust) and the margins
  (:data:`MARGINS`);
- the findings resolved (in OLD, not in NEW) and new (in NEW, not in OLD), matched on basis,
  rule, subject and design condition;
- with a reviewer's record, each comment against NEW, those whose finding was resolved flagged
  for closing.

Everything here is worked out from the two loaded schedules and their reports; nothing reads a
file, and the writers (``airgate.writers.compare``) only format it.
"""

from __future__ import annotations

import json
import math
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from typing import Any

from airgate import formatting
from airgate.evaluation.findings import Finding, Location
from airgate.evaluation.report import Report
from airgate.evaluation.review import CommentEntry, CommentStatus, statuses
from airgate.evaluation.trail import ValuesTrail
from airgate.models.loaded import LoadedSchedule

#: the relative tolerance a value must move by to be listed, when none is given (1 %)
DEFAULT_TOLERANCE = 0.01

#: trail values compared per subject level (those a subject's trail holds on both sides)
VALUES: dict[str, tuple[str, ...]] = {
    "system": ("Vot", "Vot_design", "Ev", "V_fan"),
    "zone": ("Voz", "Ve"),
}
#: margins compared per subject level: (required, provided) symbols; the margin is
#: provided − required, and it moves when it changes by more than the tolerance times the
#: larger of the two requirements
MARGINS: dict[str, tuple[tuple[str, str], ...]] = {
    "system": (("Vot", "Vot_design"),),
    "zone": (("Voz", "Voz_delivered"), ("Ve", "Ve_design")),
}
MARGIN = "margin"  #: the symbol a margin is listed under: ``margin Vot_design − Vot``


@dataclass(frozen=True)
class VerdictChange:
    """A subject whose verdict differs; ``None`` where one side does not have the subject."""

    subject: str
    level: str  #: ``schedule``, ``system`` or ``zone``
    old: str | None
    new: str | None


@dataclass(frozen=True)
class InputChange:
    """One field of the schedule written differently (or only on one side).

    ``old``/``new`` are the values as written (text; a mapping or list without ids as compact
    JSON), ``None`` on the side that does not write the field.
    """

    subject: str  #: ``schedule``, a system id, or ``system/zone``
    field: str  #: the field's path inside the subject, e.g. ``primary_airflow``, ``filter.merv``
    old: str | None
    new: str | None
    old_at: Location | None
    new_at: Location | None


@dataclass(frozen=True)
class ValueChange:
    """A value of the evaluation (internal units of ``kind``) that moved beyond the tolerance."""

    subject: str
    symbol: str  #: a trail symbol, or ``margin Vot_design − Vot``
    kind: str
    old: float
    new: float

    @property
    def change(self) -> float:
        return self.new - self.old


@dataclass
class Comparison:
    """What changed from ``old`` to ``new``: the reports, and the lists above."""

    old: Report
    new: Report
    tolerance: float
    verdicts: list[VerdictChange] = field(default_factory=list)
    inputs: list[InputChange] = field(default_factory=list)
    values: list[ValueChange] = field(default_factory=list)
    resolved: list[Finding] = field(default_factory=list)
    added: list[Finding] = field(default_factory=list)
    #: the reviewer's record against NEW, with the comments whose finding was resolved marked
    review: list[CommentStatus] = field(default_factory=list)
    #: where the inputs were compared: ``schedules`` (the two documents, field by field) or
    #: ``trails`` (a side is a stored report: the values its calculation trails took from the
    #: schedule, symbol by symbol, and each zone's space type)
    inputs_from: str = "schedules"


def compare(old_loaded: LoadedSchedule | None, old: Report, new_loaded: LoadedSchedule | None,
            new: Report,
            tolerance: float = DEFAULT_TOLERANCE,
            review: Sequence[CommentEntry] = ()) -> Comparison:
    """Compare two evaluated schedules (each with the loaded schedule it came from).

    ``tolerance``: the relative change [–] a value must exceed to be listed
    (``|new − old| > tolerance · max(|old|, |new|)``). ``review``: a reviewer's comments, set
    against NEW's findings; a comment whose finding was resolved is flagged for closing.
    A side without its loaded schedule (a stored report) has its inputs compared from the
    trails (:func:`trail_inputs`).
    """
    if not (tolerance >= 0 and math.isfinite(tolerance)):
        raise ValueError(f"tolerance must be a finite number ≥ 0, got {tolerance!r}")
    out = Comparison(old=old, new=new, tolerance=tolerance)
    out.verdicts = verdict_changes(old, new)
    if old_loaded is None or new_loaded is None:
        out.inputs, out.inputs_from = list(trail_inputs(old, new)), "trails"
    else:
        out.inputs = list(input_changes(old_loaded, new_loaded))
    out.values = value_changes(old, new, tolerance)
    out.resolved, out.added = finding_changes(old, new)
    out.review = statuses(new.findings, review, out.resolved)
    return out


# ----------------------------------------------------------------------------- verdicts
def _subjects(report: Report) -> dict[str, tuple[str, str, Any]]:
    """subject → (level, verdict, trail) for the systems and zones of a report, in order."""
    out: dict[str, tuple[str, str, Any]] = {}
    for s in report.systems:
        out[s.id] = ("system", s.verdict, s.trail)
        for z in s.zones:
            out[f"{s.id}/{z.id}"] = ("zone", z.verdict, z.trail)
    return out


def _union(old: dict, new: dict) -> list[str]:
    """The keys of ``new`` in its order, then those only ``old`` has, in its order."""
    return list(new) + [k for k in old if k not in new]


def verdict_changes(old: Report, new: Report) -> list[VerdictChange]:
    """The schedule's verdict when it changed, then each system and zone whose verdict did."""
    out = []
    if old.verdict != new.verdict:
        out.append(VerdictChange("schedule", "schedule", old.verdict, new.verdict))
    a, b = _subjects(old), _subjects(new)
    for subject in _union(a, b):
        level = (b.get(subject) or a[subject])[0]
        va = a[subject][1] if subject in a else None
        vb = b[subject][1] if subject in b else None
        if va != vb:
            out.append(VerdictChange(subject, level, va, vb))
    return out


# ----------------------------------------------------------------------------- values
def _moved(a: float, b: float, tolerance: float, scale: float | None = None) -> bool:
    if not (math.isfinite(a) and math.isfinite(b)):
        return a != b
    ref = max(abs(a), abs(b)) if scale is None else scale
    return abs(b - a) > tolerance * ref


def value_changes(old: Report, new: Report, tolerance: float) -> list[ValueChange]:
    """The values of :data:`VALUES` and the margins of :data:`MARGINS` that moved, per subject
    both reports have, in NEW's order."""
    a, b = _subjects(old), _subjects(new)
    out = []
    for subject in b:
        if subject not in a:
            continue
        level, _, ta = a[subject]
        tb = b[subject][2]
        for symbol in VALUES[level]:
            if symbol in ta and symbol in tb and ta[symbol].kind == tb[symbol].kind:
                x, y = ta.value(symbol), tb.value(symbol)
                if _moved(x, y, tolerance):
                    out.append(ValueChange(subject, symbol, tb[symbol].kind, x, y))
        for req, prov in MARGINS[level]:
            if not all(s in t for s in (req, prov) for t in (ta, tb)):
                continue
            ma = ta.value(prov) - ta.value(req)
            mb = tb.value(prov) - tb.value(req)
            scale = max(abs(ta.value(req)), abs(tb.value(req)))
            if math.isfinite(scale) and _moved(ma, mb, tolerance, scale):
                out.append(ValueChange(subject, f"{MARGIN} {prov} − {req}", tb[prov].kind,
                                       ma, mb))
    return out


# ----------------------------------------------------------------------------- findings
def finding_key(f: Finding) -> tuple:
    """What makes two findings of two rounds the same finding."""
    return (f.basis, f.rule, f.subject, f.condition)


def finding_changes(old: Report, new: Report) -> tuple[list[Finding], list[Finding]]:
    """(resolved: OLD's findings NEW does not have, new: NEW's findings OLD does not have),
    each in its report's order."""
    ka = {finding_key(f) for f in old.findings}
    kb = {finding_key(f) for f in new.findings}
    return ([f for f in old.findings if finding_key(f) not in kb],
            [f for f in new.findings if finding_key(f) not in ka])


# ----------------------------------------------------------------------------- inputs
def _where(loaded: LoadedSchedule, path: tuple) -> Location:
    origin = getattr(loaded.doc, "origin", None)  # an imported document: the cell's file
    o = origin(path) if origin is not None else None
    if o is not None:
        return Location(o.file, o.line, o.column)
    line, column = loaded.doc.locate(path)
    return Location(loaded.file, line, column)


def _text(value: Any) -> str:
    """A value as written: text as is, numbers and booleans as YAML writes them, a mapping or
    list as compact JSON with its keys sorted."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if value is None:
        return "null"
    if isinstance(value, (dict, list)):
        return json.dumps(value, ensure_ascii=False, sort_keys=True, separators=(", ", ": "),
                          default=str)
    return str(value)


def _by_id(items: Any) -> dict[str, int] | None:
    """id → index when ``items`` is a list of mappings each with a distinct ``id``, else None."""
    if not isinstance(items, list) or not items:
        return None
    ids = [str(x.get("id")) if isinstance(x, dict) and "id" in x else None for x in items]
    if None in ids or len(set(ids)) != len(ids):
        return None
    return {i: n for n, i in enumerate(ids)}


def _subject(parts: tuple) -> tuple[str, tuple]:
    """(subject, field path inside it) of a named path: ``systems/AHU-3/zones/203/area`` →
    (``AHU-3/203``, ``area``)."""
    if len(parts) >= 2 and parts[0] == "systems":
        rest = parts[2:]
        if len(rest) >= 2 and rest[0] == "zones":
            return f"{parts[1]}/{rest[1]}", rest[2:]
        return str(parts[1]), rest
    return "schedule", parts


def _keys(a: Any, b: Any) -> tuple[dict, dict] | None:
    """How the entries of two containers pair up: key → index (or key) in each, for two mappings,
    or two lists of entries with ids; None for anything else (compared whole)."""
    if isinstance(a, dict) and isinstance(b, dict):
        return {k: k for k in a}, {k: k for k in b}
    ia, ib = _by_id(a), _by_id(b)
    return (ia, ib) if ia is not None and ib is not None else None


def _walk(a: Any, b: Any, pa: tuple, pb: tuple, named: tuple) -> Iterator[tuple]:
    """(named path, old path, new path, old value, new value) of every difference; a side that
    does not have the field has ``None`` for its path."""
    paired = _keys(a, b)
    if paired is None:
        if a != b or type(a) is not type(b):
            yield named, pa, pb, a, b
        return
    ka, kb = paired
    for key in _union(ka, kb):
        here = named + (key,)
        if key in ka and key in kb:
            yield from _walk(a[ka[key]], b[kb[key]], pa + (ka[key],), pb + (kb[key],), here)
        elif key in ka:
            yield here, pa + (ka[key],), None, a[ka[key]], None
        else:
            yield here, None, pb + (kb[key],), None, b[kb[key]]


def input_changes(old: LoadedSchedule, new: LoadedSchedule) -> Iterator[InputChange]:
    """Every field written differently in the two schedules, in NEW's order (fields only OLD
    writes after those of the same mapping). A system or zone only one side has is one change
    with an empty field name."""
    for named, pa, pb, a, b in _walk(old.doc.data, new.doc.data, (), (), ()):
        subject, inner = _subject(named)
        yield InputChange(subject, ".".join(str(p) for p in inner),
                          None if pa is None else _text(a), None if pb is None else _text(b),
                          None if pa is None else _where(old, pa),
                          None if pb is None else _where(new, pb))


def _location_of(source: str | Location) -> Location | None:
    """The ``file:line:column`` a schedule value's trail source names, or None."""
    if isinstance(source, Location):  # an evaluated report's: found when shown
        return source
    parts = source.rsplit(":", 2)
    if len(parts) == 3 and parts[1].isdigit() and parts[2].isdigit():
        return Location(parts[0], int(parts[1]), int(parts[2]))
    return None


def _values_only(report: Report) -> set[str]:
    """The subjects whose trail is known by its values alone (a stored report written without
    zone trails): what their schedule gave cannot be told from what was computed."""
    return {f"{s.id}/{z.id}" for s in report.systems for z in s.zones
            if isinstance(z.trail, ValuesTrail)}


def _schedule_values(report: Report) -> dict[tuple[str, str], tuple[Any, str, Any]]:
    """(subject, field) → (value, kind, where) for what the trails took from the schedule (values
    in internal units), and each zone's space type (kind ``""``)."""
    out: dict[tuple[str, str], tuple[Any, str, Any]] = {}
    for s in report.systems:
        for subject, trail, space in [(s.id, s.trail, None)] + [
                (f"{s.id}/{z.id}", z.trail, z.space) for z in s.zones]:
            if space is not None:
                out[(subject, "space")] = (space, "", None)
            for step in trail.steps.values():
                if step.origin == "schedule":
                    out[(subject, step.symbol)] = (step.value, step.kind,
                                                   _location_of(step.source))
    return out


#: two trail values read back from reports are the same to the 6 significant digits the JSON
#: report keeps (half a unit in the 6th digit, relative)
SAME = 5e-6


def _same(a: Any, b: Any) -> bool:
    if isinstance(a, float) and isinstance(b, float):
        return not _moved(a, b, SAME)
    return a == b


def trail_inputs(old: Report, new: Report) -> Iterator[InputChange]:
    """The inputs that changed as the calculation trails show them, in NEW's order: every value a
    trail took from the schedule (Az, Pz, the scheduled intake …; compared as numbers and shown
    in NEW's units, so a value rewritten in other units is no change) and each zone's space type;
    a system or zone only one side has is one change with an empty field name. A zone whose
    trail one side knows by its values alone (a report kept without ``--trails``) shows its
    space type only."""
    a, b = _subjects(old), _subjects(new)
    for subject in _union(a, b):
        if subject not in a or subject not in b:
            yield InputChange(subject, "", None if subject not in a else "present",
                              None if subject not in b else "present", None, None)
    va, vb = _schedule_values(old), _schedule_values(new)
    unknown = _values_only(old) | _values_only(new)
    for key in _union(va, vb):
        if key[0] not in a or key[0] not in b:
            continue
        if key[0] in unknown and key[1] != "space":  # a side without the zone's trail
            continue
        (xa, ka, la), (xb, kb, lb) = va.get(key, (None, "", None)), vb.get(key, (None, "", None))
        if _same(xa, xb):
            continue
        kind = kb or ka

        def shown(x: Any) -> str | None:
            if x is None or not kind:
                return None if x is None else str(x)
            return formatting.amount(x, kind, new.units)
        yield InputChange(key[0], key[1], shown(xa), shown(xb), la, lb)
