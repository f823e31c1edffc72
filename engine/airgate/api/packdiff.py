"""What changed between two rule packs (two editions, or a base and its amendment).

Both packs are compared as resolved documents (a layered pack merged with its base), entry by
entry: occupancy categories, air-distribution configurations, ventilation-efficiency methods,
checks, requirements, equations, options and exhaust rows, plus the pack's own fields. An entry is added,
removed (with the reason where the newer pack retired it) or changed, field by field (nested
fields as dotted paths, e.g. ``when.throw_velocity.le``). Values are compared as written in each
pack; when the packs' unit systems differ the result says so.
"""

from __future__ import annotations

import copy
from dataclasses import dataclass, field
from typing import Any

from airgate.readers.layering import PackDocument, materialize

#: section name → (title, path of the collection in a pack, keyed by "id" in a list or by key)
SECTIONS: tuple[tuple[str, str, tuple[str, ...], str], ...] = (
    ("occupancy", "occupancy categories", ("occupancy", "categories"), "list"),
    ("air_distribution", "air distribution configurations", ("air_distribution", "configurations"),
     "list"),
    ("ventilation_efficiency", "ventilation efficiency methods",
     ("ventilation_efficiency", "methods"), "map"),
    ("checks", "checks", ("checks",), "list"),
    ("requirements", "requirements", ("requirements",), "list"),
    ("equations", "equations", ("equations",), "map"),
    ("options", "options", ("options",), "map"),
    ("exhaust", "exhaust rows", ("exhaust", "rows"), "list"),
)
#: the pack's own fields compared (and the table settings)
PACK_FIELDS = ("title", "document", "edition", "units", "jurisdiction", "effective", "provenance",
               "verify", "cautions")
TABLE_FIELDS = (("air_distribution", "default"), ("ventilation_efficiency", "default"),
                ("occupancy", "source"), ("air_distribution", "source"))
_MISSING = object()


@dataclass
class Change:
    field: str
    old: Any
    new: Any


@dataclass
class Section:
    name: str
    title: str
    added: list[tuple[str, Any]] = field(default_factory=list)
    removed: list[tuple[str, str | None]] = field(default_factory=list)  #: (id, retired reason)
    changed: list[tuple[str, list[Change]]] = field(default_factory=list)

    @property
    def empty(self) -> bool:
        return not (self.added or self.removed or self.changed)


@dataclass
class PackDiff:
    old: PackDocument
    new: PackDocument
    pack: list[Change]
    sections: list[Section]
    notes: list[str]

    def counts(self) -> dict[str, int]:
        return {"added": sum(len(s.added) for s in self.sections),
                "removed": sum(len(s.removed) for s in self.sections),
                "changed": sum(len(s.changed) for s in self.sections) + (1 if self.pack else 0)}


def _get(data: Any, path: tuple) -> Any:
    for key in path:
        if not isinstance(data, dict) or key not in data:
            return _MISSING
        data = data[key]
    return data


def _entries(data: dict[str, Any], path: tuple, shape: str) -> dict[str, Any]:
    container = _get(data, path)
    if container is _MISSING:
        return {}
    if shape == "list":
        return {e["id"]: e for e in container}
    return dict(container)


def _flat(value: Any, prefix: str = "") -> dict[str, Any]:
    if isinstance(value, dict) and not ("choose" in value and "values" in value):
        out: dict[str, Any] = {}
        for k, v in value.items():
            out.update(_flat(v, f"{prefix}.{k}" if prefix else str(k)))
        return out
    return {prefix: value}


def field_changes(old: Any, new: Any) -> list[Change]:
    """Field-by-field differences of two entries (nested mappings as dotted paths)."""
    a, b = _flat(old), _flat(new)
    out = []
    for key in list(a) + [k for k in b if k not in a]:
        va, vb = a.get(key, _MISSING), b.get(key, _MISSING)
        if va != vb:
            out.append(Change(key, None if va is _MISSING else va, None if vb is _MISSING else vb))
    return out


def diff(old: PackDocument, new: PackDocument) -> PackDiff:
    """Differences from ``old`` to ``new``."""
    a, b = copy.deepcopy(old.data), copy.deepcopy(new.data)
    materialize(a)
    materialize(b)
    pack = [c for key in PACK_FIELDS if key != "cautions"
            for c in field_changes({key: a.get(key)}, {key: b.get(key)})]
    old_cautions, new_cautions = a.get("cautions", []), b.get("cautions", [])
    pack += [Change("cautions", text, None) for text in old_cautions if text not in new_cautions]
    pack += [Change("cautions", None, text) for text in new_cautions if text not in old_cautions]
    if old.extends != new.extends:
        pack.append(Change("extends", old.extends, new.extends))
    for path in TABLE_FIELDS:
        va, vb = _get(a, path), _get(b, path)
        pack += field_changes({".".join(path): None if va is _MISSING else va},
                              {".".join(path): None if vb is _MISSING else vb})
    sections = []
    for name, title, path, shape in SECTIONS:
        ea, eb = _entries(a, path, shape), _entries(b, path, shape)
        section = Section(name, title)
        retired = new.retired.get(name, {})
        for key, entry in eb.items():
            if key not in ea:
                section.added.append((key, entry))
        for key in ea:
            if key not in eb:
                why = retired.get(key)
                section.removed.append((key, why["reason"] if why else None))
        for key, entry in ea.items():
            if key in eb:
                changes = field_changes(entry, eb[key])
                if changes:
                    section.changed.append((key, changes))
        sections.append(section)
    notes = []
    if a.get("units") != b.get("units"):
        notes.append(f"{old.pack_id} is in {a.get('units')} units and {new.pack_id} in "
                     f"{b.get('units')}: table values are compared as each pack writes them, "
                     "not converted")
    return PackDiff(old, new, pack, sections, notes)
