"""Any supported input file → a validated schedule, through the importer its suffix names.

The importers are registered in :mod:`airgate.readers.importers` (one entry per format).

An importer builds the plain data a YAML schedule would hold, plus an :class:`Origin` for each
field path: the file (for a workbook ``building.xlsx[Zones]``), the line (the row of a table, the
line of an XML element or of an IFC entity), the column (the column number of a table, the column
of an XML element) and a reference for messages and comments (``cell E4``, ``<Area>``, ``IfcSpace
#45``). The schedule reader then validates that data with the same rules as a YAML file, and
every message and finding points back at the cell, element or entity.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from airgate.errors import AirgateError, ErrorGroup, ScheduleError
from airgate.escaping import lines
from airgate.readers.document import Document, Path_
from airgate.readers.importers import REFUSED, importer_for
from airgate.readers.schedule import LoadedSchedule, validate

MAX_ERRORS = 25


@dataclass(frozen=True)
class Origin:
    """Where one value of an imported schedule came from.

    ``file``, ``line`` and ``column`` become the finding's location (``line`` is the row of a
    table; ``column`` is the column number of a table, ``None`` for an IFC entity). ``ref`` is
    added to messages (``cell E4 (Area [ft2])``); ``source`` is the provenance written beside the
    value in an imported YAML schedule (``building.xlsx[Zones]!E4``).
    """

    file: str
    line: int | None
    column: int | None
    ref: str
    source: str
    note: str = ""

    def with_note(self, note: str) -> Origin:
        return Origin(self.file, self.line, self.column, self.ref, self.source, note)


@dataclass
class ImportedDocument(Document):
    """A schedule document built by an importer: data plus an :class:`Origin` per field path."""

    origins: dict[Path_, Origin] = field(default_factory=dict)

    def origin(self, path: Path_) -> Origin | None:
        """The origin of ``path`` or of its nearest ancestor."""
        path = tuple(path)
        while True:
            if path in self.origins:
                return self.origins[path]
            if not path:
                return None
            path = path[:-1]

    def locate(self, path: Path_) -> tuple[int | None, int | None]:
        o = self.origin(path)
        return (o.line, o.column) if o else (None, None)

    def error(self, cls: type[AirgateError], message: str, path: Path_, **kw: Any) -> AirgateError:
        o = self.origin(path)
        if o is None:
            return cls(message, file=self.file, field=path, **kw)
        return cls(f"{message} ({o.ref})", file=o.file, line=o.line, column=o.column, field=path,
                   **kw)


@dataclass
class Summary:
    """Rooms read from the source, mapped into the schedule, and rejected (with an error)."""

    source: str
    read: int = 0
    rejected: int = 0
    systems: int = 0

    @property
    def mapped(self) -> int:
        return self.read - self.rejected

    def text(self) -> str:
        return (f"{self.source}: {self.read} room{'s' if self.read != 1 else ''} read, "
                f"{self.mapped} mapped to {self.systems} system{'s' if self.systems != 1 else ''}"
                f", {self.rejected} rejected")


@dataclass
class ImportedSchedule(LoadedSchedule):
    """A schedule read from a table, gbXML or IFC file; locations point into that source."""

    one_file = False  # each field's origin names its own file
    summary: Summary = field(default_factory=lambda: Summary(""))
    #: elements or values of the source that were not mapped, and why
    notes: list[str] = field(default_factory=list)

    def locate(self, path: Path_) -> tuple[str, int | None, int | None]:
        o = self.doc.origin(path)
        return (o.file, o.line, o.column) if o else (self.doc.file, None, None)


class SummarisedError(AirgateError):
    """The last error of a failed import, followed by the count of rooms read, mapped and
    rejected (so the count stays with the errors however a command regroups them)."""

    def __init__(self, inner: AirgateError, summary: str) -> None:
        super().__init__(inner.message, file=inner.file, line=inner.line, column=inner.column,
                         field=inner.field, allowed=inner.allowed, hint=inner.hint)
        self.kind = inner.kind
        self.exit_code = inner.exit_code
        self.summary = summary

    def render(self) -> str:
        return super().render() + "\n" + lines(self.summary.split("\n")).rstrip("\n")


class ImportFailed(ErrorGroup):
    """The problems found while importing; the last one carries the room counts."""

    def __init__(self, errors: list[AirgateError], summary: Summary) -> None:
        ordered = sorted(errors, key=lambda e: (e.file or "", e.line or 0, e.column or 0))
        shown = ordered[:MAX_ERRORS]
        more = len(ordered) - len(shown)
        text = summary.text() + "; nothing was checked or written"
        if more:
            text = f"… and {more} more errors\n" + text
        shown[-1] = SummarisedError(shown[-1], text)
        super().__init__(shown)
        self.summary = summary


@dataclass
class Builder:
    """Collects what an importer read: schedule data, origins, errors, notes and rooms."""

    file: str
    source: str
    data: dict[str, Any] = field(default_factory=lambda: {"schedule": 1})
    origins: dict[Path_, Origin] = field(default_factory=dict)
    errors: list[AirgateError] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    #: room key → field path of its zone once placed (None while not placed)
    rooms: dict[Any, Path_ | None] = field(default_factory=dict)
    rejected: set[Any] = field(default_factory=set)
    #: fields whose whole column could not be read (already reported): no "missing" message
    quiet: set[str] = field(default_factory=set)
    #: field path → design condition → (value, origin); ``None``: given empty at that condition
    by_condition: dict[Path_, dict[str, tuple[Any, Origin]]] = field(default_factory=dict)

    def put(self, path: Path_, value: Any, origin: Origin | None) -> None:
        """Set ``value`` at ``path`` (creating mappings and lists on the way), keep its origin."""
        node = self._node(path[:-1], path[-1])
        if isinstance(node, list):
            while len(node) <= path[-1]:
                node.append(None)
            node[path[-1]] = value
        else:
            node[path[-1]] = value
        if origin is not None:
            self.origins[tuple(path)] = origin

    def put_condition(self, path: Path_, condition: str, value: Any, origin: Origin) -> None:
        """The value of the field at ``path`` at one design condition (a ``Primary airflow
        @heating`` cell, an ``airgate.primary_airflow@heating:`` line); ``None`` when it was
        left empty. :meth:`finish` gathers them into the field's per-condition mapping."""
        self.by_condition.setdefault(tuple(path), {})[condition] = (value, origin)

    def _gather_conditions(self) -> None:
        """Each field given per condition becomes a mapping over its system's conditions. A
        plain value of the same field applies to every condition not given; a condition given
        empty (and not by the plain value) is ``null``; a condition named nowhere is left out,
        so the schedule reader reports it missing, and one the system does not list is kept
        when it has a value, so it is reported unknown."""
        for path, given in self.by_condition.items():
            if all(value is None for value, _ in given.values()):
                continue  # nothing stated per condition: the plain value (if any) stands
            listed = self._node(path[:2]).get("conditions")
            listed = [c for c in listed if isinstance(c, str)] if isinstance(listed, list) else []
            parent = self._node(path[:-1])
            plain = parent.get(path[-1])
            has_plain = plain is not None and not isinstance(plain, dict)
            mapping: dict[str, Any] = {}
            for condition in listed + [c for c in given if c not in listed]:
                value, where = given.get(condition, (None, None))
                if value is None and condition not in listed:
                    continue
                if value is None and has_plain:
                    value, where = plain, self.origins.get(tuple(path))
                elif value is None and where is None:
                    continue  # named nowhere: reported missing
                mapping[condition] = value
                if where is not None:
                    self.origins[tuple(path) + (condition,)] = where
            # the mapping is located at its first value given per condition
            self.origins[tuple(path)] = next(w for v, w in given.values() if v is not None)
            parent[path[-1]] = mapping

    def _node(self, path: Path_, last: Any = "") -> Any:
        """The mapping or list at ``path`` (a list where the next part, ``last`` after the
        path, is an index), made on the way when missing."""
        node: Any = self.data
        for part, nxt in zip(path, (*path[1:], last)):
            if isinstance(node, list):
                while len(node) <= part:
                    node.append({} if not isinstance(nxt, int) else [])
                node = node[part]
            else:
                node = node.setdefault(part, [] if isinstance(nxt, int) else {})
        return node

    def at(self, path: Path_, origin: Origin) -> None:
        """Record where ``path`` would be written, without a value (for 'missing' messages)."""
        self.origins.setdefault(tuple(path), origin)

    def error(self, origin: Origin | None, message: str, *, field: Path_ = (),
              hint: str | None = None, allowed: list[str] | None = None,
              room: Any = None) -> None:
        if origin is None:
            err = ScheduleError(message, file=self.file, field=field, hint=hint, allowed=allowed)
        else:
            err = ScheduleError(f"{message} ({origin.ref})", file=origin.file, line=origin.line,
                                column=origin.column, field=field, hint=hint, allowed=allowed)
        self.errors.append(err)
        if room is not None:
            self.rejected.add(room)

    def note(self, origin: Origin | None, message: str) -> None:
        where = "" if origin is None else (
            f"{origin.file}:{origin.line}: " if origin.line is not None else f"{origin.file}: ")
        self.notes.append(f"{where}{message}")

    def room(self, key: Any) -> None:
        """Count a room read from the source (every room read is mapped or rejected)."""
        self.rooms.setdefault(key, None)

    def place(self, key: Any, path: Path_) -> None:
        self.rooms[key] = tuple(path)

    def finish(self) -> ImportedSchedule:
        """Validate the collected data; raise every problem together, with the room counts."""
        self._gather_conditions()
        doc = ImportedDocument(file=self.file, data=self.data, origins=self.origins,
                               positions={p: (o.line, o.column) for p, o in self.origins.items()
                                          if o.line is not None})
        summary = Summary(self.source, read=len(self.rooms),
                          systems=len(self.data.get("systems") or []))
        errors = list(self.errors)
        model = None
        try:
            model = validate(doc)
        except AirgateError as exc:
            # one message per place: a cell already reported is not reported again as missing
            taken = {(e.file, e.line, e.column) for e in self.errors}
            errors.extend(e for e in (exc.errors if isinstance(exc, ErrorGroup) else [exc])
                          if (e.file, e.line, e.column) not in taken and not (
                              e.field and e.field[-1] in self.quiet
                              and e.message.startswith("missing required field")))
        unplaced = {k for k, p in self.rooms.items() if p is None}
        rejected = set(self.rejected) | unplaced
        for err in errors:
            rejected |= {k for k, p in self.rooms.items()
                         if p is not None and _under(err.field, p)}
        summary.rejected = len(rejected & set(self.rooms))
        if errors or model is None:
            raise ImportFailed(errors, summary)
        return ImportedSchedule(model=model, doc=doc, summary=summary, notes=list(self.notes))


def _under(error_path: Path_, zone_path: Path_) -> bool:
    """Whether an error at ``error_path`` concerns the zone at ``zone_path`` (or its system)."""
    if len(error_path) >= len(zone_path):
        return tuple(error_path[: len(zone_path)]) == tuple(zone_path)
    # an error on the system itself (not its zones list) rejects its rooms too
    return len(error_path) >= 2 and tuple(error_path[:2]) == tuple(zone_path[:2]) and (
        len(error_path) == 2 or error_path[2] != "zones")


def read_any(path: str | Path) -> LoadedSchedule:
    """Read a schedule from any supported file: YAML/JSON, CSV tables, XLSX, gbXML or IFC,
    by the importer its suffix names (:data:`airgate.readers.importers.IMPORTERS`). The YAML
    texts inside one file (flow values in cells, description lines) share one alias budget
    (airgate.readers.limits)."""
    from airgate.readers.limits import shared_alias_budget

    with shared_alias_budget():
        return _read_any(Path(path))


def _read_any(path: Path) -> LoadedSchedule:
    suffix = path.suffix.lower()
    if suffix in REFUSED:
        raise ScheduleError(f"{suffix} files cannot be read", file=str(path),
                            hint=REFUSED[suffix])
    return importer_for(path).read(path)


def import_notes(loaded: LoadedSchedule) -> list[str]:
    """The summary and the not-mapped notes of an imported schedule ([] for YAML/JSON)."""
    if not isinstance(loaded, ImportedSchedule):
        return []
    return [f"imported from {loaded.summary.text()}", *loaded.notes]
