"""Read a ventilation schedule (YAML or JSON) into a validated :class:`~airgate.models.schedule.Schedule`.

Validation problems are reported all at once, each with file, line, column and field path, what is
wrong and what is allowed.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ValidationError

from airgate import units
from airgate.errors import AirgateError, ScheduleError, nearest, raise_all
from airgate.escaping import excerpt
from airgate.models.schedule import (
    SYSTEM_CONDITION_FIELDS,
    ZONE_CONDITION_FIELDS,
    Project,
    Schedule,
    StatedDistribution,
    System,
    Zone,
)
from airgate.models.loaded import LoadedSchedule
from airgate.models.waivers import Waiver
from airgate.readers.document import Document, Path_, load

MAX_ERRORS = 25

#: The model that owns the fields found under a path ending in this name (for "did you mean").
_OWNER: dict[str | None, type[BaseModel]] = {
    None: Schedule, "project": Project, "systems": System, "zones": Zone,
    "air_distribution": StatedDistribution, "waivers": Waiver,
}


def _field_names(model: type[BaseModel]) -> list[str]:
    return sorted((f.alias or name) for name, f in model.model_fields.items())


def _owner(path: Path_) -> type[BaseModel]:
    names = [p for p in path if isinstance(p, str)]
    return _OWNER.get(names[-1] if names else None, Schedule)


def _clean_path(raw: Any, loc: tuple) -> Path_:
    """Keep the parts of a pydantic error location that exist in the document."""
    out: list[str | int] = []
    node = raw
    for part in loc:
        if isinstance(node, dict) and isinstance(part, str) and part in node:
            out.append(part)
            node = node.get(part)
        elif isinstance(node, list) and isinstance(part, int) and 0 <= part < len(node):
            out.append(part)
            node = node[part]
    return tuple(out)


#: What pydantic's type names mean in a schedule.
_TYPE_WORDS = {
    "a valid string": "text", "a valid dictionary": "a mapping", "a valid list": "a list",
    "a valid number": "a number", "a valid integer": "a whole number",
    "a valid boolean": "true or false",
}

#: How to fix a field whose value has the wrong shape.
_FIELD_HINTS = {
    "air_distribution": "give a row id of the pack's Ez table (airgate rules show PACK), stated "
                        "conditions such as {supply: ceiling, mode: cooling}, or a list of "
                        "them; an explicit Ez goes in ez: with ez_basis:",
    "zones": "zones is a list: start each zone with '- id: ...'",
    "systems": "systems is a list: start each system with '- id: ...'",
}

#: Error kinds whose message does not already show the value given.
_SHOW_INPUT = ("_type", "_parsing", "greater_than", "greater_than_equal", "less_than",
               "less_than_equal", "finite_number", "string_too_short", "string_pattern_mismatch")


def _type_words(msg: str) -> str:
    text = msg.removeprefix("Input should be ")
    text = re.sub(r" or instance of \w+$", "", text)
    return _TYPE_WORDS.get(text, text)


def _either(words: list[str]) -> str:
    """``["a list", "text"]`` → ``"a list or text"``."""
    return words[0] if len(words) == 1 else f"{', '.join(words[:-1])} or {words[-1]}"


def _literal_choices(expected: str) -> list[str]:
    """``"'a', 'b' or 'c'"`` → ``["a", "b", "c"]`` (pydantic's wording of a Literal)."""
    parts = re.split(r",\s*|\s+or\s+", expected)
    return [p.strip().strip("'") for p in parts if p.strip()]


def _field_description(path: Path_) -> str | None:
    model = _owner(path[:-1])
    for name, info in model.model_fields.items():
        if (info.alias or name) == path[-1]:
            return info.description
    return None


def _shown(value: Any) -> str:
    """A value as the message shows it: short, and in the document's own words."""
    if isinstance(value, bool):
        return str(value).lower()
    return excerpt(value)


_NUMERAL = re.compile(r"[-+]?[0-9]+(?:\.[0-9]*)?(?:[eE][-+]?[0-9]+)?")


def _all_in_range(data: Any) -> bool:
    """Whether every number in ``data`` is finite and in the range airgate reads (one pass
    without paths: the usual case, which then has nothing to locate)."""
    if type(data) not in (dict, list):
        return False
    low, high = units.MIN_MAGNITUDE, units.MAX_MAGNITUDE
    todo = [data]
    while todo:
        node = todo.pop()
        for value in (node.values() if type(node) is dict else node):
            kind = type(value)
            if kind is dict or kind is list:
                todo.append(value)
            elif (kind is float or kind is int) and value != 0 and \
                    not low <= abs(value) <= high:  # NaN too: no comparison holds
                return False
    return True


def _out_of_range(doc: Document) -> list[AirgateError]:
    """Numbers outside the range airgate reads (docs/limits.md), each at its position; a whole
    number too long to read arrives here as infinity and is described by its digits."""
    if doc.in_range or _all_in_range(doc.data):  # the reader may have seen it as it read
        return []
    errors: list[AirgateError] = []
    todo: list[tuple[Any, Path_]] = [(doc.data, ())]
    while todo and len(errors) < MAX_ERRORS:
        value, path = todo.pop()
        if isinstance(value, dict):
            todo.extend((v, path + (k,)) for k, v in value.items())
        elif isinstance(value, list):
            todo.extend((v, path + (i,)) for i, v in enumerate(value))
        elif isinstance(value, (int, float)) and not isinstance(value, bool):
            if isinstance(value, int) and abs(value) > units.MAX_MAGNITUDE:
                text = doc.texts.get(path, "")  # beyond any float: out of range
            elif math.isfinite(value) and units.in_range(value):
                continue
            else:  # the text as written is looked up only here (docs found lazily)
                text = doc.texts.get(path, "")
                if not math.isfinite(value) and not _NUMERAL.fullmatch(text):
                    continue  # .inf / .nan as written, refused by the model
            digits = sum(c.isdigit() for c in text)
            what = (f"a number of {digits} digits" if digits > 20
                    else text if text else _shown(value))
            errors.append(doc.error(ScheduleError, f"{what} is out of the range airgate reads: "
                                    f"{units.range_text()}", path,
                                    hint="no building has such a value: check the number "
                                         "and its units"))
    return errors


def _describe(err: dict[str, Any], path: Path_) -> tuple[str, list[str], str | None]:
    kind = err["type"]
    ctx = err.get("ctx") or {}
    if kind == "extra_forbidden":
        known = _field_names(_owner(path[:-1]))
        close = nearest(str(path[-1]), known)
        msg = f"unknown field '{path[-1]}'" + (f"; did you mean '{close[0]}'?" if close else "")
        return msg, known, "remove the field or correct its name"
    if kind == "missing":
        description = _field_description(path)
        hint = f"add {path[-1]}: " + (description or "") if description else None
        return f"missing required field '{path[-1]}'", [], hint
    if kind == "literal_error":
        allowed = _literal_choices(str(ctx.get("expected", "")))
        value = err["input"]
        close = nearest(value, allowed) if isinstance(value, str) else []
        msg = f"{_shown(value)} is not allowed" + (
            f"; did you mean '{close[0]}'?" if close else "")
        return msg, allowed, None
    if kind == "too_short" and isinstance(err.get("input"), list):
        need = ctx.get("min_length", 1)
        msg = f"needs at least {need} item{'s' if need != 1 else ''}, got " + (
            "an empty list" if not err["input"] else f"{len(err['input'])}")
        return msg, [], _FIELD_HINTS.get(str(path[-1])) if path else None
    msg = err["msg"]
    for prefix in ("Value error, ", "Assertion failed, "):
        if msg.startswith(prefix):
            msg = msg[len(prefix):]
    if kind.endswith("_type") and msg.startswith("Input should be "):
        msg = f"expected {_type_words(msg)}"
    if "input" in err and kind.endswith(_SHOW_INPUT):
        msg += f", got {_shown(err['input'])}"
    hint = _FIELD_HINTS.get(str(path[-1])) if path and kind.endswith("_type") else None
    return msg, [], getattr(ctx.get("error"), "hint", None) or hint


def _error_path(doc: Document, err: dict[str, Any]) -> Path_:
    loc = tuple(err["loc"])
    if err["type"] == "missing":
        return _clean_path(doc.data, loc[:-1]) + (loc[-1],)
    path = _clean_path(doc.data, loc)
    if err["type"] == "cross_field":
        field = err["ctx"]["field"]
        path += tuple(field) if isinstance(field, (tuple, list)) else (field,)
    return path


def _errors_from_validation(exc: ValidationError, doc: Document) -> list[AirgateError]:
    items = [(_error_path(doc, err), err) for err in exc.errors(include_url=False)]
    # A union field reports a type error per branch; keep the branch that got further.
    deeper = {p for p, e in items if not e["type"].endswith("_type")}
    kept: dict[Path_, list[dict[str, Any]]] = {}
    for path, err in items:
        if err["type"].endswith("_type") and any(d[: len(path)] == path for d in deeper):
            continue
        kept.setdefault(path, []).append(err)
    out: list[AirgateError] = []
    for path, errs in kept.items():
        if len(errs) > 1 and all(e["type"].endswith("_type") for e in errs):
            wanted = sorted({_type_words(e["msg"]) for e in errs})
            out.append(doc.error(
                ScheduleError, f"expected {_either(wanted)}, got {_shown(errs[0]['input'])}",
                path, allowed=wanted,
                hint=_FIELD_HINTS.get(str(path[-1])) if path else None))
            continue
        for err in errs:
            msg, allowed, hint = _describe(err, path)
            out.append(doc.error(ScheduleError, msg, path, allowed=allowed, hint=hint))
    return out[:MAX_ERRORS]


#: Fields that hold text (ids, names, references): a plain scalar YAML read as a number is
#: taken as written (``id: 0101`` is "0101", not 101), keyed by the model owning the field.
_TEXT_FIELDS: dict[type[BaseModel], frozenset[str]] = {
    Schedule: frozenset({"rules"}),
    Project: frozenset({"name", "owner", "location", "notes"}),
    System: frozenset({"id", "name", "notes"}),
    Zone: frozenset({"id", "name", "space", "notes", "ez_basis", "air_distribution"}),
}


_CHILDREN: dict[str, type[BaseModel]] = {"project": Project, "systems": System, "zones": Zone}


def _as_written(doc: Document, node: Any, path: Path_, model: type[BaseModel]) -> None:
    """Replace numbers YAML read in text fields by their source text (in place)."""
    if not isinstance(node, dict):
        return
    for key in _TEXT_FIELDS.get(model, frozenset()) & node.keys():
        value = node[key]
        items = enumerate(value) if isinstance(value, list) else [(None, value)]
        for i, item in items:
            if not isinstance(item, (int, float)) or isinstance(item, bool):
                continue  # text already: the usual case, nothing to look up
            where = path + (key,) if i is None else path + (key, i)
            if where in doc.texts:
                if i is None:
                    node[key] = doc.texts[where]
                else:
                    value[i] = doc.texts[where]
    for key in _CHILDREN.keys() & node.keys():
        value, child = node[key], _CHILDREN[key]
        if child is Project:
            _as_written(doc, value, path + (key,), Project)
        elif child is not None and isinstance(value, list) and model in (Schedule, System):
            for i, item in enumerate(value):
                _as_written(doc, item, path + (key, i), child)


def _items(value: Any) -> list[Any]:
    return value if isinstance(value, list) else []


#: the fields of a system and of a zone that may be given per design condition
_SYSTEM_CONDITIONS = frozenset(SYSTEM_CONDITION_FIELDS)
_ZONE_CONDITIONS = frozenset(ZONE_CONDITION_FIELDS)
#: values :func:`_as_written` leaves as they are in a text field (a list is looked into)
_LEFT = frozenset({str, type(None), bool, dict})
#: values of a condition field that no validation makes a per-condition mapping
_NOT_MAPPINGS = frozenset({str, int, float, bool, type(None), list})


@dataclass
class _Survey:
    """What one pass over a schedule's systems and zones (before validation) tells the checks
    that follow; each flag is True where a check may find something, and that check then runs
    in full, so only the usual case (nothing to find) is decided here."""

    #: a text field holds a number (or the data has an unusual shape): :func:`_as_written`
    written: bool = True
    #: an id is not text, or one is given twice: :func:`_duplicate_ids`
    duplicates: bool = True
    #: a field may be given as a mapping per condition: :func:`_condition_errors`
    by_condition: bool = True


def _numbers_in(value: Any) -> bool:
    """Whether :func:`_as_written` may change this value of a text field."""
    kind = value.__class__
    if kind in _LEFT:
        return False
    return kind is not list or any(item.__class__ not in _LEFT for item in value)


def _survey(data: dict) -> _Survey:
    """One pass over the systems and zones of a schedule document (see :class:`_Survey`)."""
    unusual = _Survey()
    project, systems = data.get("project"), data.get("systems")
    if project.__class__ is not dict or systems.__class__ is not list or "zones" in data \
            or "project" in project:
        return unusual  # a shape :func:`_as_written` walks otherwise
    if any(_numbers_in(data[key]) for key in _TEXT_FIELDS[Schedule] & data.keys()) or \
            any(_numbers_in(project[key]) for key in _TEXT_FIELDS[Project] & project.keys()):
        return unusual
    system_text, zone_text = _TEXT_FIELDS[System], _TEXT_FIELDS[Zone]
    written = by_condition = False
    system_ids: set[str] = set()
    zone_ids: set[str] = set()
    count = 0
    for system in systems:
        if system.__class__ is not dict or "project" in system or "systems" in system:
            return unusual
        for key, value in system.items():
            kind = value.__class__
            if kind is str:
                continue
            if key in system_text:
                written = written or _numbers_in(value)
            elif key in _SYSTEM_CONDITIONS and kind not in _NOT_MAPPINGS:
                by_condition = True
        zones = system.get("zones")
        if system.get("id").__class__ is not str or zones.__class__ is not list:
            return unusual
        system_ids.add(system["id"])
        for zone in zones:
            if zone.__class__ is not dict or "project" in zone:
                return unusual
            for key, value in zone.items():
                kind = value.__class__
                if kind is str:
                    continue
                if key in zone_text:
                    written = written or _numbers_in(value)
                if key in _ZONE_CONDITIONS and kind not in _NOT_MAPPINGS:
                    by_condition = True
            if zone.get("id").__class__ is not str:
                return unusual
            zone_ids.add(zone["id"])
        count += len(zones)
    return _Survey(written=written, by_condition=by_condition,
                   duplicates=len(system_ids) != len(systems) or len(zone_ids) != count)


def _duplicate_ids(doc: Document) -> list[AirgateError]:
    errors: list[AirgateError] = []
    systems: dict[str, Path_] = {}
    zones: dict[str, Path_] = {}
    for i, system in enumerate(_items(doc.data.get("systems"))):
        if not isinstance(system, dict):
            continue
        for seen, key, path, what in [(systems, system.get("id"), ("systems", i, "id"), "system")]:
            if key is not None and str(key) in seen:
                line = doc.locate(seen[str(key)])[0]
                errors.append(doc.error(ScheduleError, f"duplicate {what} id '{key}' "
                                        f"(first on line {line})", path,
                                        hint="give every system its own id"))
            elif key is not None:
                seen[str(key)] = path
        for j, zone in enumerate(_items(system.get("zones"))):
            if isinstance(zone, dict) and zone.get("id") is not None:
                key = str(zone["id"])
                path = ("systems", i, "zones", j, "id")
                if key in zones:
                    line = doc.locate(zones[key])[0]
                    errors.append(doc.error(
                        ScheduleError, f"duplicate zone id '{key}' (first on line {line})", path,
                        hint="zone ids are unique across the schedule; rename one of them"))
                else:
                    zones[key] = path
    return errors


def _units(doc: Document) -> str:
    """The project's unit system, checked first: every quantity depends on it."""
    data = doc.data
    project = data.get("project")
    if project is None:
        raise doc.error(ScheduleError, "missing required field 'project'", ("project",),
                        hint="add project: {name: ..., units: IP} (or units: SI)")
    if not isinstance(project, dict):
        raise doc.error(ScheduleError, f"project must be a mapping with name and units, got "
                        f"{_shown(project)}", ("project",),
                        hint="write project: {name: ..., units: IP} (or units: SI)")
    if "units" not in project:
        raise doc.error(ScheduleError, "missing project.units: IP or SI (the unit of bare "
                        "numbers)", ("project", "units"), allowed=["IP", "SI"],
                        hint="add units: IP or units: SI under project")
    system = project["units"]
    if system not in ("IP", "SI"):
        hint = (f"write {system.upper()} in capitals" if isinstance(system, str)
                and system.strip().upper() in ("IP", "SI") else None)
        raise doc.error(ScheduleError, f"project.units must say IP or SI (the unit of bare "
                        f"numbers), got {_shown(system)}", ("project", "units"),
                        allowed=["IP", "SI"], hint=hint)
    return system


def validate(doc: Document) -> Schedule:
    """Validate a schedule document into the typed model, or raise every problem found."""
    data = doc.data
    if not isinstance(data, dict):
        raise doc.error(ScheduleError, f"a schedule is a mapping with keys schedule, project, "
                        f"systems; this file holds {_kind_of(data)}", (),
                        hint="see docs/schedule-format.md")
    if "schedule" not in data:
        raise doc.error(ScheduleError, "missing 'schedule: 1' (the format version)",
                        ("schedule",), hint="add 'schedule: 1' as the first line")
    system = _units(doc)
    survey = _survey(data)
    if survey.written:
        _as_written(doc, data, (), Schedule)
        survey = _Survey()  # numbers made text: every check looks in full
    raise_all(_out_of_range(doc))
    errors = _duplicate_ids(doc) if survey.duplicates else []
    try:
        model = Schedule.model_validate(data, context={"units": system})
    except ValidationError as exc:
        # pydantic reports duplicate ids too, at 'systems'; keep the located ones only
        found = [e for e in _errors_from_validation(exc, doc)
                 if not (e.field == ("systems",) and "duplicate" in e.message)]
        raise_all(found + errors)
        raise doc.error(ScheduleError, f"the schedule is not valid: {exc}", ()) from None
    raise_all(errors + (_condition_errors(model, doc) if survey.by_condition else []))
    return model


def _condition_errors(model: Schedule, doc: Document) -> list[AirgateError]:
    """Every per-condition mapping names each of its system's conditions, and no other."""
    out: list[AirgateError] = []
    for i, system in enumerate(model.systems):
        named = system.conditions or []
        fields = [(("systems", i, name), getattr(system, name)) for name in SYSTEM_CONDITION_FIELDS]
        fields += [(("systems", i, "zones", j, name), getattr(zone, name))
                   for j, zone in enumerate(system.zones) for name in ZONE_CONDITION_FIELDS]
        for path, value in fields:
            if not isinstance(value, dict):
                continue
            if not named:
                out.append(doc.error(
                    ScheduleError, f"{path[-1]} is given per condition ({', '.join(value)}) but "
                    f"system '{system.id}' lists no conditions", path,
                    hint="add conditions: [" + ", ".join(value) + "] to the system, or give "
                    "one plain value"))
                continue
            for key in value:
                if key not in named:
                    close = nearest(key, named)
                    out.append(doc.error(
                        ScheduleError, f"unknown condition '{key}'" + (
                            f"; did you mean '{close[0]}'?" if close else ""), path + (key,),
                        allowed=list(named), hint=f"the conditions of system '{system.id}' "
                        f"are {', '.join(named)}"))
            missing = [c for c in named if c not in value]
            if missing:
                out.append(doc.error(
                    ScheduleError, f"{path[-1]} has no value for condition "
                    f"{', '.join(repr(c) for c in missing)}", path, allowed=list(named),
                    hint="give a value for every condition the system lists (null where an "
                    "optional field does not apply; in a table, an empty cell in a column of "
                    "that condition), or one plain value for all"))
            if path[-1] == "outdoor_air" and any(value.get(c) is None for c in named):
                out.append(doc.error(
                    ScheduleError, "outdoor_air needs a value at every condition", path,
                    hint="give the scheduled minimum intake of each condition"))
    return out[:MAX_ERRORS]


def _kind_of(value: Any) -> str:
    if isinstance(value, list):
        return "a list"
    if isinstance(value, str):
        return "a single text value"
    return f"a single value ({_shown(value)})"



def read_schedule(path: Path | str) -> LoadedSchedule:
    """Load and validate a schedule file."""
    doc = load(path, ScheduleError)
    return LoadedSchedule(model=validate(doc), doc=doc)
