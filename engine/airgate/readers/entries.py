"""Files that hold one list of entries under one key: a waivers file (``waivers:``), a reviewer's
record (``comments:``). YAML or JSON; every problem located (file, line, column, field path) and
worded for the person who writes the file, all of them in one round.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ValidationError

from airgate.errors import AirgateError, ErrorGroup, nearest, raise_all
from airgate.readers.document import Document, Path_, load

MAX_ERRORS = 25


@dataclass(frozen=True)
class EntryFile:
    """What kind of file: its key, its models, and how to tell a writer what an entry holds."""

    key: str  #: the one top-level key, e.g. ``waivers``
    model: type[BaseModel]  #: the whole file
    entry: type[BaseModel]  #: one entry of the list
    what: str  #: ``a waivers file``
    plural: str  #: ``waivers``
    entry_hint: str  #: the fields of an entry, for a missing one
    first: str  #: the field an entry's example begins with, e.g. ``rule``

    @property
    def top_hint(self) -> str:
        return f"write {self.key}: followed by '- {self.first}: ...' entries"


@dataclass(frozen=True)
class LoadedEntries:
    """The validated entries of a file, with the document they came from (for locations)."""

    entries: list[Any]
    doc: Document


def _path(doc: Document, loc: tuple) -> Path_:
    out: list[str | int] = []
    node: Any = doc.data
    for part in loc:
        if isinstance(node, dict) and isinstance(part, str) and part in node:
            out.append(part)
            node = node[part]
        elif isinstance(node, list) and isinstance(part, int) and 0 <= part < len(node):
            out.append(part)
            node = node[part]
        else:
            break
    return tuple(out)


def _error(kind: EntryFile, doc: Document, err: dict[str, Any]) -> AirgateError:
    loc = tuple(err["loc"])
    code = err["type"]
    path = _path(doc, loc)
    top, fields = sorted(kind.model.model_fields), sorted(kind.entry.model_fields)
    if code == "missing":
        name = loc[-1]
        entry = bool(path)
        return doc.error(AirgateError, f"missing required field '{name}'", path + (name,),
                         allowed=fields if entry else top,
                         hint=kind.entry_hint if entry else kind.top_hint)
    if code == "extra_forbidden":
        known = fields if len(path) > 1 else top
        close = nearest(str(path[-1]), known)
        return doc.error(AirgateError, f"unknown field '{path[-1]}'"
                         + (f"; did you mean '{close[0]}'?" if close else ""), path,
                         allowed=known, hint="remove the field or correct its name")
    message = err["msg"].removeprefix("Value error, ")
    if code.endswith(("_type", "_pattern_mismatch", "too_short")) and "input" in err:
        message += f", got {err['input']!r}"[:80]
    if code == "literal_error" and "input" in err:
        message += f", got {err['input']!r}"[:80]
    return doc.error(AirgateError, message, path)


def read_entries(kind: EntryFile, path: str | Path) -> LoadedEntries:
    """Load and validate a file of ``kind``; raise every problem found at once."""
    doc = load(path, AirgateError)
    if not isinstance(doc.data, dict):
        raise doc.error(AirgateError, f"{kind.what} is a mapping with one key, '{kind.key}', "
                        f"holding a list of {kind.plural}", (), hint=kind.top_hint)
    try:
        model = kind.model.model_validate(doc.data)
    except ValidationError as exc:
        raise_all([_error(kind, doc, e) for e in exc.errors(include_url=False)][:MAX_ERRORS])
        raise  # pragma: no cover - raise_all raised
    return LoadedEntries(entries=list(getattr(model, kind.key)), doc=doc)


def read_entries_partly(kind: EntryFile, path: str | Path) -> tuple[LoadedEntries | None,
                                                                    list[int],
                                                                    list[AirgateError]]:
    """A file's well-formed entries, their positions in its list, and every structural problem,
    so that a caller can report the problems together with those the well-formed entries have
    (an unknown check id is known only with the rule pack). ``(None, [], errors)`` when the file
    is not a list of entries at all."""
    try:
        loaded = read_entries(kind, path)
        return loaded, list(range(len(loaded.entries))), []
    except ErrorGroup as exc:
        errors = list(exc.errors)
    except AirgateError as exc:
        errors = [exc]
    doc = load(path, AirgateError)
    items = doc.data.get(kind.key) if isinstance(doc.data, dict) else None
    if not isinstance(items, list):
        return None, [], errors
    kept, where = [], []
    for i, raw in enumerate(items):
        try:
            kept.append(kind.entry.model_validate(raw))
            where.append(i)
        except ValidationError:
            continue
    return LoadedEntries(entries=kept, doc=doc), where, errors
