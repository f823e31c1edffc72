"""Read a ventilation schedule (YAML or JSON) into a validated :class:`~airgate.models.schedule.Schedule`.

Validation problems are reported all at once, each with file, line, column and field path, what is
wrong and what is allowed.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ValidationError

from airgate.errors import AirgateError, ScheduleError, nearest, raise_all
from airgate.models.schedule import Project, Schedule, StatedDistribution, System, Zone
from airgate.readers.document import Document, Path_, load

MAX_ERRORS = 25

#: The model that owns the fields found under a path ending in this name (for "did you mean").
_OWNER: dict[str | None, type[BaseModel]] = {
    None: Schedule, "project": Project, "systems": System, "zones": Zone,
    "air_distribution": StatedDistribution,
}


@dataclass
class LoadedSchedule:
    """A validated schedule together with the document it came from (for locations)."""

    model: Schedule
    doc: Document

    @property
    def file(self) -> str:
        return self.doc.file

    def locate(self, path: Path_) -> tuple[str, int | None, int | None]:
        line, column = self.doc.locate(path)
        return (self.doc.file, line, column)

    def error(self, message: str, path: Path_, **kw: Any) -> AirgateError:
        return self.doc.error(ScheduleError, message, path, **kw)


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


def _describe(err: dict[str, Any], path: Path_) -> tuple[str, list[str], str | None]:
    kind = err["type"]
    ctx = err.get("ctx") or {}
    if kind == "extra_forbidden":
        known = _field_names(_owner(path[:-1]))
        close = nearest(str(path[-1]), known)
        msg = f"unknown field '{path[-1]}'" + (f"; did you mean '{close[0]}'?" if close else "")
        return msg, known, "remove the field or correct its name"
    if kind == "missing":
        return f"missing required field '{path[-1]}'", [], None
    if kind == "literal_error":
        expected = str(ctx.get("expected", ""))
        return f"{err['input']!r} is not allowed", [e.strip() for e in expected.split(" or ")], None
    msg = err["msg"]
    for prefix in ("Value error, ", "Assertion failed, "):
        if msg.startswith(prefix):
            msg = msg[len(prefix):]
    if "input" in err and kind.endswith("_type"):
        msg += f", got {err['input']!r}"
    return msg, [], None


def _errors_from_validation(exc: ValidationError, doc: Document) -> list[AirgateError]:
    items = []
    for err in exc.errors(include_url=False):
        loc = tuple(err["loc"])
        if err["type"] == "missing":
            path = _clean_path(doc.data, loc[:-1]) + (loc[-1],)
        else:
            path = _clean_path(doc.data, loc)
        items.append((path, err))
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
            wanted = sorted({e["msg"].removeprefix("Input should be ") for e in errs})
            out.append(doc.error(ScheduleError, f"has the wrong type, got {errs[0]['input']!r}",
                                 path, allowed=wanted))
            continue
        for err in errs:
            msg, allowed, hint = _describe(err, path)
            out.append(doc.error(ScheduleError, msg, path, allowed=allowed, hint=hint))
    return out[:MAX_ERRORS]


def _duplicate_ids(doc: Document) -> list[AirgateError]:
    errors: list[AirgateError] = []
    systems: dict[str, Path_] = {}
    zones: dict[str, Path_] = {}
    for i, system in enumerate(doc.data.get("systems") or []):
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
        for j, zone in enumerate(system.get("zones") or []):
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


def validate(doc: Document) -> Schedule:
    """Validate a schedule document into the typed model, or raise every problem found."""
    data = doc.data
    if not isinstance(data, dict):
        raise doc.error(ScheduleError, "a schedule is a mapping with keys schedule, project, "
                        "systems", (), hint="see docs/schedule-format.md")
    if "schedule" not in data:
        raise doc.error(ScheduleError, "missing 'schedule: 1' (the format version)", (),
                        hint="add 'schedule: 1' as the first line")
    project = data.get("project")
    system = project.get("units") if isinstance(project, dict) else None
    if system not in ("IP", "SI"):
        where = ("project", "units") if isinstance(project, dict) and "units" in project else (
            ("project",) if isinstance(project, dict) else ())
        raise doc.error(ScheduleError, "project.units must say IP or SI (the unit of bare numbers)",
                        where, allowed=["IP", "SI"])
    errors = _duplicate_ids(doc)
    try:
        model = Schedule.model_validate(data, context={"units": system})
    except ValidationError as exc:
        errors = _errors_from_validation(exc, doc) + [
            e for e in errors if "duplicate" in e.message]
        # pydantic reports duplicate ids itself too; keep the located ones only
        errors = [e for e in errors if not (e.field == ("systems",) and "duplicate" in e.message)]
        raise_all(_dedupe(errors))
        raise
    raise_all(errors)
    return model


def _dedupe(errors: list[AirgateError]) -> list[AirgateError]:
    seen = set()
    out = []
    for e in errors:
        key = (e.field, e.message)
        if key not in seen:
            seen.add(key)
            out.append(e)
    return out


def read_schedule(path: Path | str) -> LoadedSchedule:
    """Load and validate a schedule file."""
    doc = load(path, ScheduleError)
    return LoadedSchedule(model=validate(doc), doc=doc)
