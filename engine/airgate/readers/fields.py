"""The schedule fields an import can fill, and how one cell or property becomes a field value.

Shared by every importer: the CSV/XLSX tables (one column per field), the ``airgate.FIELD:`` lines
of a gbXML ``Description`` and the ``Airgate_*`` property sets of an IFC model. A value becomes
exactly what a YAML schedule would hold, so the schedule model validates it with the same rules
and messages:

- a quantity (area, airflow …) is a number with the column's unit (``Area [ft2]`` and 2400 give
  ``"2400 ft2"``), a text with its own unit (``"2400 ft2"``, which wins over the column's), or a
  bare number in the project's unit system when the column states no unit;
- an id or text field takes a number as written (101 → ``"101"``); a text starting with
  ``=``, ``+``, ``-`` or ``@`` stays text (never a formula);
- ``air_distribution`` is written ``ROW-ID`` or ``supply=ceiling, return=floor, mode=heating``,
  several items (one per mode analysed) separated by ``;``.
"""

from __future__ import annotations

import datetime as _dt
import math
import re
from dataclasses import dataclass
from typing import Any

from pydantic import BaseModel

from airgate import units
from airgate.errors import nearest
from airgate.readers.document import MAX_DIGITS


class CellError(ValueError):
    """A cell or property that cannot be read, with how to fix it."""

    def __init__(self, message: str, hint: str | None = None) -> None:
        super().__init__(message)
        self.message = message
        self.hint = hint


@dataclass(frozen=True)
class Column:
    """One importable field: its schedule name, documented header and kind of value.

    ``kind`` is ``id``, ``ids`` (a list of ids: ``cooling, heating``), ``text``, ``quantity``,
    ``people``, ``number``, ``integer``, ``bool``, ``distribution``, ``items``, ``time`` or
    ``value`` (any other schedule field, by its name: a
    number, a text, or a YAML flow value such as ``{merv: 13}``); ``quantity`` columns name the
    unit kind of :data:`airgate.units.KINDS` in ``unit``. A dotted ``field`` (``filter.merv``)
    fills a field of a nested mapping.
    """

    field: str
    header: str
    kind: str
    unit: str | None = None
    aliases: tuple[str, ...] = ()
    #: a ``value`` column whose field takes text: number-like text stays text
    text: bool = True


PROJECT_COLUMNS = (
    Column("name", "Project", "text", aliases=("project name", "name")),
    Column("units", "Units", "text"),
    Column("rules", "Rules", "text", aliases=("rule pack",)),
    Column("owner", "Owner", "text"),
    Column("location", "Location", "text"),
    Column("outdoor_co2", "Outdoor CO2", "number"),
    Column("co2_limit", "CO2 limit", "number"),
    Column("notes", "Notes", "text"),
)

SYSTEM_COLUMNS = (
    Column("id", "System", "id", aliases=("system id",)),
    Column("name", "Name", "text"),
    Column("kind", "Kind", "text"),
    Column("procedure", "Procedure", "text", aliases=("compliance path",)),
    Column("conditions", "Conditions", "ids", aliases=("design conditions",)),
    Column("outdoor_air", "Outdoor air", "quantity", "airflow", ("outdoor air intake",)),
    Column("supply_airflow", "Supply airflow", "quantity", "airflow"),
    Column("airflow", "Fan airflow", "quantity", "airflow", ("exhaust fan airflow",)),
    Column("population", "Population", "people"),
    Column("ventilation_efficiency", "Ventilation efficiency", "text", aliases=("ev method",)),
    Column("variable_air_volume", "Variable air volume", "bool", aliases=("vav",)),
    Column("recirculates", "Recirculates", "bool"),
    Column("filter.merv", "Filter MERV", "integer"),
    Column("filter.efficiency", "Filter efficiency", "number"),
    Column("extra_rules", "Extra rules", "ids", aliases=("supplement packs",)),
    Column("notes", "Notes", "text"),
)

ZONE_COLUMNS = (
    Column("system", "System", "id", aliases=("system id",)),
    Column("id", "Zone", "id", aliases=("zone id", "room")),
    Column("name", "Name", "text"),
    Column("space", "Space type", "text", aliases=("space", "occupancy category")),
    Column("area", "Area", "quantity", "area"),
    Column("occupants", "Occupants", "people"),
    Column("height", "Height", "quantity", "length"),
    Column("volume", "Volume", "quantity", "volume"),
    Column("air_distribution", "Air distribution", "distribution"),
    Column("ez", "Ez", "number"),
    Column("ez_basis", "Ez basis", "text"),
    Column("primary_airflow", "Primary airflow", "quantity", "airflow"),
    Column("ep", "Ep", "number"),
    Column("er", "Er", "number"),
    Column("outdoor_air", "Outdoor air", "quantity", "airflow"),
    Column("air_cleaners", "Air cleaners", "items"),
    Column("profile", "Profile", "text"),
    Column("activity", "Activity", "text"),
    Column("co2_generation", "CO2 generation", "number"),
    Column("air_class", "Air class", "integer"),
    Column("natural_ventilation.openable_area", "Openable area", "quantity", "area"),
    Column("natural_ventilation.arrangement", "Opening arrangement", "text"),
    Column("natural_ventilation.depth", "Depth", "quantity", "length"),
    Column("natural_ventilation.permanently_open", "Permanently open", "bool"),
    Column("natural_ventilation.conditioned", "Conditioned", "bool"),
    Column("exhaust.category", "Exhaust category", "text", aliases=("exhaust row",)),
    Column("exhaust.airflow", "Exhaust airflow", "quantity", "airflow"),
    Column("exhaust.fixtures", "Exhaust fixtures", "integer"),
    Column("exhaust.operation", "Exhaust operation", "text"),
    Column("exhaust.makeup", "Exhaust makeup", "value", aliases=("makeup air",)),
    Column("notes", "Notes", "text"),
)

PROFILE_COLUMNS = (
    Column("profile", "Profile", "id"),
    Column("day", "Day", "text"),
    Column("from", "From", "time"),
    Column("to", "To", "time"),
    Column("fraction", "Fraction", "number"),
)

#: Units a header may state for a column that is not a physical quantity.
_PLAIN_UNITS = {"people": {"people", "person", "persons"}, "number": {"-", "–", "1"},
                "integer": {"-", "–"}}
#: Documented fixed units of plain-number fields (the header may repeat them).
_FIXED_UNITS = {"outdoor_co2": {"ppm"}, "co2_limit": {"ppm"},
                "co2_generation": {"l/s per person", "l/s·person", "l/(s·person)"}}

#: How the writers label each quantity kind's unit in a header, IP and SI.
UNIT_TEXT = {"airflow": ("cfm", "L/s"), "area": ("ft2", "m2"), "volume": ("ft3", "m3"),
             "length": ("ft", "m")}

_HEADER = re.compile(r"^\s*(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?\s*$")


def _norm(text: str) -> str:
    return re.sub(r"[\s_]+", " ", text.strip().lower())


def header_unit_text(column: Column, system: str) -> str | None:
    """The unit a template writes in ``column``'s header for ``system`` (IP or SI)."""
    if column.kind == "quantity":
        ip, si = UNIT_TEXT[column.unit]
        return ip if system == units.IP else si
    if column.kind == "people":
        return "people"
    if column.field in ("outdoor_co2", "co2_limit"):
        return "ppm"
    if column.field == "co2_generation":
        return "L/s per person"
    return None


def _takes_text(model: type[BaseModel], field: str) -> bool:
    """Whether the model's ``field`` accepts text as such (then '12' must stay '12')."""
    import typing

    for name, info in model.model_fields.items():
        if (info.alias or name) != field:
            continue
        todo, seen = [info.annotation], []
        while todo:
            t = todo.pop()
            seen.append(t)
            todo += [a for a in typing.get_args(t) if not isinstance(a, (str, int, float))]
        return str in seen or any(typing.get_origin(t) is typing.Literal for t in seen)
    return True


def _generic(model: type[BaseModel], field: str) -> Column:
    return Column(field, field, "value", text=_takes_text(model, field))


def _model_fields(model: type[BaseModel] | None, skip: tuple[str, ...] = ()) -> list[str]:
    if model is None:
        return []
    return [info.alias or name for name, info in model.model_fields.items()
            if (info.alias or name) not in skip]


def find_column(name: str, columns: tuple[Column, ...], model: type[BaseModel] | None = None,
                skip: tuple[str, ...] = ()) -> Column:
    """The column named ``name`` (a documented header, alias or field name, or any other field
    of ``model`` by its name); CellError with the nearest names when there is none."""
    key = _norm(name)
    for col in columns:
        if key in {_norm(col.header), _norm(col.field), *(_norm(a) for a in col.aliases)}:
            return col
    generic = _model_fields(model, skip)
    for field in generic:
        if key == _norm(field):
            return _generic(model, field)
    known = [c.header for c in columns]
    close = nearest(name, known + [c.field for c in columns] + generic)
    raise CellError(f"unknown column {name!r}" + (f"; did you mean {close[0]!r}?" if close
                                                   else ""),
                    hint="columns: " + ", ".join(dict.fromkeys(
                        known + [f for f in generic if f not in {c.field for c in columns}])))


def split_header(text: str) -> tuple[str, str | None]:
    """The name and the bracketed unit of a header (``Area [ft2]`` → ``('Area', 'ft2')``);
    CellError when it is not of that form."""
    m = _HEADER.match(text)
    if not m or not m["name"]:
        raise CellError(f"header {text!r} is not of the form 'Name', 'Name [unit]' or "
                        "'Name @condition [unit]'",
                        hint="write the column name, optionally followed by @ and a design "
                             "condition, then a unit in brackets")
    return m["name"], m["unit"]


def header_name(text: str) -> str:
    """The name part of a header (``Area [ft2]`` → ``Area``)."""
    m = _HEADER.match(text)
    return m["name"] if m and m["name"] else text


def header_unit(col: Column, unit: str | None) -> str | None:
    """The unit a header states in brackets for ``col`` (``None`` when none or when the column
    takes none); CellError when it does not fit the column."""
    if unit is None or not unit.strip():
        return None
    unit = unit.strip()
    if col.kind == "quantity":
        try:
            units.parse(f"1 {unit}", col.unit, units.IP)
        except units.QuantityError as exc:
            raise CellError(f"the unit [{unit}] does not fit column '{col.header}': {exc}",
                            hint=f"e.g. [{UNIT_TEXT[col.unit][0]}] or [{UNIT_TEXT[col.unit][1]}]"
                            ) from None
        return unit
    if col.kind == "value":
        raise CellError(f"column '{col.header}' takes no unit in its header, got [{unit}]",
                        hint="write the unit in each cell, e.g. 250 cfm")
    allowed = _PLAIN_UNITS.get(col.kind, set()) | _FIXED_UNITS.get(col.field, set())
    if _norm(unit) in {_norm(a) for a in allowed}:
        return None
    raise CellError(f"column '{col.header}' takes no unit, got [{unit}]",
                    hint="remove the brackets" + (f" or write [{sorted(allowed)[0]}]"
                                                  if allowed else ""))


def number_text(value: float | int) -> str:
    """A number as a short exact text: 2400.0 → '2400', 0.1 → '0.1'."""
    if isinstance(value, float) and value.is_integer() and abs(value) < 1e15:
        return str(int(value))
    return repr(value) if isinstance(value, float) else str(value)


def _finite(value: Any) -> None:
    if isinstance(value, float) and not math.isfinite(value):
        raise CellError(f"{value!r} is not a finite number", hint="give a finite number")


def _date_error(value: Any) -> CellError:
    return CellError(f"the cell holds a date or time ({value.isoformat()}), not the value "
                     "expected here", hint="the spreadsheet turned the entry into a date: format "
                     "the column as text and type the value again")


def convert(col: Column, value: Any, unit: str | None = None) -> Any:
    """The schedule value of one cell of ``col`` (``None`` for an empty cell).

    ``unit`` is the unit of the column's header. Values the schedule model would refuse are
    passed on as written, so its message (with the allowed values) reaches the user.
    """
    if value is None or (isinstance(value, str) and not value.strip()):
        return None
    if col.kind == "time":
        return time_text(value)
    if isinstance(value, (_dt.date, _dt.time, _dt.datetime)):
        raise _date_error(value)
    _finite(value)
    if isinstance(value, str):
        value = value.strip()
    kind = col.kind
    if kind not in ("id", "text") and isinstance(value, str) and _is_number(value) \
            and sum(c.isdigit() for c in value) > MAX_DIGITS:
        raise CellError(f"a number of {sum(c.isdigit() for c in value)} digits is out of the "
                        f"range airgate reads: {units.range_text()}",
                        hint="no building has such a value: check the number and its units")
    if kind in ("id", "text"):
        if isinstance(value, bool):
            return value if kind == "id" else str(value).lower()
        return number_text(value) if isinstance(value, (int, float)) else value
    if kind == "quantity":
        if isinstance(value, bool):
            return value
        if isinstance(value, (int, float)):
            return f"{number_text(value)} {unit}" if unit else value
        return f"{value} {unit}" if unit and _is_number(value) else value
    if kind == "bool":
        if isinstance(value, str) and value.lower() in ("true", "false"):
            return value.lower() == "true"
        return value
    if kind == "integer":
        if isinstance(value, float) and value.is_integer():
            return int(value)
        if isinstance(value, str) and re.fullmatch(r"[+-]?\d+", value):
            return int(value)
        return value
    if kind == "number":
        if isinstance(value, str) and _is_number(value):
            return float(value)
        return value
    if isinstance(value, str) and value[:1] in "[{" and kind in ("value", "distribution", "items",
                                                                 "ids"):
        return flow_value(value)
    if kind == "ids":
        text = number_text(value) if isinstance(value, (int, float)) else str(value)
        return [part.strip() for part in re.split(r"[,;]", text) if part.strip()]
    if kind in ("people", "value"):
        if isinstance(value, str) and _is_number(value) and not (kind == "value" and col.text):
            number = float(value)
            return int(number) if number.is_integer() and re.fullmatch(r"[+-]?\d+", value) \
                else number
        return value
    if kind == "distribution":
        return parse_distribution(number_text(value) if isinstance(value, (int, float))
                                  and not isinstance(value, bool) else str(value))
    if kind == "items":
        return parse_items(str(value))
    raise AssertionError(f"unknown column kind {kind}")  # pragma: no cover


def _is_number(text: str) -> bool:
    return re.fullmatch(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?", text) is not None


def time_text(value: Any) -> str:
    """A time of day as ``HH:MM`` (a spreadsheet time or a text such as ``7:30`` or ``24:00``)."""
    if isinstance(value, _dt.datetime):
        raise CellError(f"expected a time of day such as 07:30, got the date {value.isoformat()}",
                        hint="type the time as HH:MM")
    if isinstance(value, _dt.time):
        if value.second or value.microsecond:
            raise CellError(f"{value.isoformat()} has seconds; profiles use whole minutes",
                            hint="type the time as HH:MM")
        return f"{value.hour:02d}:{value.minute:02d}"
    text = str(value).strip()
    m = re.fullmatch(r"(\d{1,2}):(\d{2})", text)
    if not m:
        raise CellError(f"expected a time of day such as 07:30, got {text!r}",
                        hint="type the time as HH:MM (00:00 to 24:00)")
    return f"{int(m[1]):02d}:{m[2]}"


def parse_distribution(text: str) -> Any:
    """``air_distribution`` from its one-line form: a row id, stated conditions, or a list.

    ``"ceiling-supply-cool; supply=ceiling, return=ceiling, mode=heating"`` gives the row id and
    one stated configuration, as the list a YAML schedule would hold.
    """
    items: list[Any] = []
    for part in text.split(";"):
        part = part.strip()
        if not part:
            continue
        if "=" not in part:
            items.append(part)
            continue
        stated: dict[str, str] = {}
        for pair in part.split(","):
            key, sep, val = pair.partition("=")
            key, val = key.strip(), val.strip()
            if not sep or not key or not val:
                raise CellError(f"cannot read {pair.strip()!r} in the air distribution {text!r}",
                                hint="write stated conditions as supply=ceiling, return=floor, "
                                     "mode=heating; separate modes with ';'")
            if key in stated:
                raise CellError(f"'{key}' is given twice in {part!r}", hint="give it once")
            stated[key] = val
        items.append(stated)
    if not items:
        return None
    return items[0] if len(items) == 1 else items


def parse_items(text: str) -> list[dict[str, str]]:
    """A list of small mappings: ``"cadr=250 cfm, name=Lobby cleaner; cadr=100 cfm"``."""
    items = parse_distribution(text)
    items = items if isinstance(items, list) else [items]
    for item in items:
        if not isinstance(item, dict):
            raise CellError(f"cannot read {item!r} as key=value pairs",
                            hint="write e.g. cadr=250 cfm, name=Lobby cleaner; separate items "
                                 "with ';'")
    return items


def flow_value(text: str) -> Any:
    """A YAML flow value (``{merv: 13}``, ``[a, {b: 1}]``) read with the schedule's YAML rules."""
    from airgate.errors import ScheduleError
    from airgate.readers.document import parse_yaml

    try:
        return parse_yaml(text, "<cell>", ScheduleError).data
    except ScheduleError as exc:
        shown = text if len(text) <= 60 else text[:57] + "..."
        raise CellError(f"cannot read {shown!r} as a YAML flow value: {exc.message}",
                        hint="write a mapping as {key: value, key: value} or a list as "
                             "[item, item]") from None


def format_items(value: Any) -> str:
    """The one-line form of a list of mappings or values (as :func:`parse_items` reads it)."""
    return format_distribution(value)


def format_distribution(value: Any) -> str:
    """The one-line form of an ``air_distribution`` value (read by :func:`parse_distribution`)."""
    items = value if isinstance(value, list) else [value]
    out = []
    for item in items:
        if isinstance(item, dict):
            out.append(", ".join(f"{k}={v}" for k, v in item.items()))
        else:
            out.append(str(item))
    return "; ".join(out)


def parse_day(text: str) -> dict[str, float]:
    """A day of an occupancy profile from ``"07:30-08:30=0.3; 08:30-12:00=0.9"`` ('' = empty)."""
    day: dict[str, float] = {}
    for part in text.split(";"):
        part = part.strip()
        if not part:
            continue
        span, sep, frac = part.partition("=")
        if not sep or not _is_number(frac.strip()):
            raise CellError(f"cannot read {part!r} as a time range and fraction",
                            hint="write 07:30-08:30=0.3; 08:30-12:00=0.9")
        day[re.sub(r"\s+", "", span)] = float(frac)
    return day


def format_day(day: dict[str, float] | list[float]) -> str:
    if isinstance(day, list):
        return "; ".join(f"{h:02d}:00-{h + 1:02d}:00={number_text(v)}"
                         for h, v in enumerate(day) if v)
    return "; ".join(f"{k}={number_text(v)}" for k, v in day.items())


#: The prefixes a spreadsheet reads as the start of a formula.
FORMULA_START = ("=", "+", "-", "@")


def neutralise(text: str) -> str:
    """Text safe to put in a CSV cell: a leading formula character is escaped with ``'``."""
    return "'" + text if text.startswith(FORMULA_START) else text


_ANNOTATION = re.compile(r"^\s*airgate\.([A-Za-z_][A-Za-z0-9_.]*(?:\s*@[^:]*)?)\s*:\s?(.*?)\s*$")


def annotations(text: str | None) -> tuple[list[str], list[tuple[str, str, int]]]:
    """Split a description into its free lines and its ``airgate.FIELD: value`` lines.

    Returns the free lines and ``(field, value, line offset)`` for each annotation (``field``
    may name a design condition: ``primary_airflow@heating``); a line that starts with
    ``airgate.`` but is not ``airgate.FIELD: value`` is returned with field ``""``.
    """
    free: list[str] = []
    notes: list[tuple[str, str, int]] = []
    for offset, line in enumerate((text or "").splitlines()):
        m = _ANNOTATION.match(line)
        if m:
            notes.append((m[1], m[2], offset))
        elif line.strip().startswith("airgate."):
            notes.append(("", line.strip(), offset))
        elif line.strip():
            free.append(line.strip())
    return free, notes


def column_for(field: str, level: str) -> Column:
    """The column of schedule field ``field`` at ``level`` (``project``, ``system``, ``zone``)
    for an annotation or property named by its schedule field name; CellError when unknown."""
    if not field:
        raise CellError("cannot read this airgate line", hint="write airgate.FIELD: value, "
                        "one field per line, e.g. airgate.kind: outdoor-air")
    columns, model, skip = LEVELS[level]
    for col in columns:
        if col.field == field and col.field not in skip:
            return col
    names = [f for f in _model_fields(model, skip)]
    if field in names:
        return _generic(model, field)
    close = nearest(field, names)
    raise CellError(f"unknown {level} field '{field}'"
                    + (f"; did you mean '{close[0]}'?" if close else ""),
                    hint="fields: " + ", ".join(names))


def _levels() -> dict[str, tuple[tuple[Column, ...], type[BaseModel], tuple[str, ...]]]:
    from airgate.models.schedule import Project, Schedule, System, Zone

    return {"project": (PROJECT_COLUMNS, Project, ()),
            "schedule": ((), Schedule, ("schedule", "project", "systems", "profiles")),
            "system": (SYSTEM_COLUMNS, System, ("zones",)),
            "zone": (ZONE_COLUMNS, Zone, ("system",))}


LEVELS = _levels()


def list_tables() -> dict[str, type[BaseModel]]:
    """Top-level lists of the schedule besides systems (contaminants, waivers …): a table each."""
    import typing

    from airgate.models.schedule import Schedule

    out = {}
    for name, info in Schedule.model_fields.items():
        args = typing.get_args(info.annotation)
        if (typing.get_origin(info.annotation) is list and name != "systems" and args
                and isinstance(args[0], type) and issubclass(args[0], BaseModel)):
            out[name] = args[0]
    return out
