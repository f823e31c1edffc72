"""Read a separate waivers file (``check --waivers FILE``): YAML or JSON with a ``waivers:`` list.

The entries are those a schedule's own ``waivers:`` holds (:class:`~airgate.models.waivers.Waiver`).
Every problem is located (file, line, column, field path), as for schedules.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from pydantic import ValidationError

from airgate.errors import AirgateError, ErrorGroup, nearest, raise_all
from airgate.models.waivers import Waiver, WaiversFile
from airgate.readers.document import Document, Path_, load

_FIELDS = {(): sorted(WaiversFile.model_fields), "entry": sorted(Waiver.model_fields)}


@dataclass(frozen=True)
class LoadedWaivers:
    """Waivers read from a file, with the document they came from (for locations)."""

    waivers: list[Waiver]
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


def _error(doc: Document, err: dict[str, Any]) -> AirgateError:
    loc = tuple(err["loc"])
    kind = err["type"]
    path = _path(doc, loc)
    if kind == "missing":
        name = loc[-1]
        entry = bool(path)
        return doc.error(AirgateError, f"missing required field '{name}'", path + (name,),
                         allowed=_FIELDS["entry" if entry else ()],
                         hint=("a waiver gives rule, subject, reason, approved_by and, "
                               "optionally, expires (YYYY-MM-DD)") if entry else
                         "write waivers: followed by '- rule: ...' entries")
    if kind == "extra_forbidden":
        known = _FIELDS["entry" if len(path) > 1 else ()]
        close = nearest(str(path[-1]), known)
        return doc.error(AirgateError, f"unknown field '{path[-1]}'"
                         + (f"; did you mean '{close[0]}'?" if close else ""), path,
                         allowed=known, hint="remove the field or correct its name")
    message = err["msg"].removeprefix("Value error, ")
    if kind.endswith(("_type", "_pattern_mismatch", "too_short")) and "input" in err:
        message += f", got {err['input']!r}"[:80]
    return doc.error(AirgateError, message, path)


def read_waivers(path: str | Path) -> LoadedWaivers:
    """Load and validate a waivers file; raise every problem found at once."""
    doc = load(path, AirgateError)
    if not isinstance(doc.data, dict):
        raise doc.error(AirgateError, "a waivers file is a mapping with one key, 'waivers', "
                        "holding a list of waivers", (),
                        hint="write waivers: followed by '- rule: ...' entries")
    try:
        model = WaiversFile.model_validate(doc.data)
    except ValidationError as exc:
        raise_all([_error(doc, e) for e in exc.errors(include_url=False)][:25])
        raise  # pragma: no cover - raise_all raised
    return LoadedWaivers(waivers=list(model.waivers), doc=doc)


def read_waivers_partly(path: str | Path) -> tuple[LoadedWaivers | None, list[int],
                                                     list[AirgateError]]:
    """A waivers file's well-formed entries, their positions in its list, and every
    structural problem, so that a caller can report the problems together with those the
    well-formed entries have (an unknown check id is known only with the rule pack).
    ``(None, [], errors)`` when the file is not a list of waivers at all."""
    try:
        loaded = read_waivers(path)
        return loaded, list(range(len(loaded.waivers))), []
    except ErrorGroup as exc:
        errors = list(exc.errors)
    except AirgateError as exc:
        errors = [exc]
    doc = load(path, AirgateError)
    items = doc.data.get("waivers") if isinstance(doc.data, dict) else None
    if not isinstance(items, list):
        return None, [], errors
    kept, where = [], []
    for i, raw in enumerate(items):
        try:
            kept.append(Waiver.model_validate(raw))
            where.append(i)
        except ValidationError:
            continue
    return LoadedWaivers(waivers=kept, doc=doc), where, errors
