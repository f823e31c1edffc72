"""``airgate rules show ID --resolved``: the merged pack, and for every value the pack it came from.

The text form is YAML (it reads back as the merged pack) with a comment after every value naming
the pack and line that wrote it; the JSON form gives the data and a list of origins by field path.
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from typing import Any

from airgate.errors import format_path
from airgate.escaping import lines
from airgate.readers.layering import PackDocument

Path_ = tuple[str | int, ...]


def _scalar(value: Any) -> str:
    return json.dumps(value, ensure_ascii=False)


def leaves(data: Any, path: Path_ = ()) -> Iterator[tuple[Path_, Any]]:
    """Every scalar (and empty container) of ``data`` with its path."""
    if isinstance(data, dict) and data:
        for k, v in data.items():
            yield from leaves(v, path + (k,))
    elif isinstance(data, list) and data:
        for i, v in enumerate(data):
            yield from leaves(v, path + (i,))
    else:
        yield path, data


class _Yaml:
    def __init__(self, doc: PackDocument, data: Any) -> None:
        self.doc = doc
        self.data = data
        self.lines: list[str] = []
        #: amended fields of categories → the amendment's citation
        self.notes: dict[Path_, str] = {}
        rows = data.get("occupancy", {}).get("categories", []) if isinstance(data, dict) else []
        for i, row in enumerate(rows):
            for name, rec in doc.amended.get(("occupancy", row.get("id")), {}).items():
                where = rec["source"].get("section") or rec["source"].get("table", "")
                self.notes[("occupancy", "categories", i, name)] = (
                    f" amends the base's value: {where} ({rec['provenance']})")

    def origin(self, path: Path_) -> str:
        o = self.doc.origin(path)
        return (f"  # {o.pack}" + (f":{o.line}" if o.line is not None else "")
                + self.notes.get(path, ""))

    def value(self, value: Any, path: Path_) -> str | None:
        """The inline text of a scalar or empty container, or None for a nested block."""
        if isinstance(value, dict):
            return "{}" if not value else None
        if isinstance(value, list):
            return "[]" if not value else None
        return _scalar(value)

    def mapping(self, data: dict, path: Path_, indent: int) -> None:
        pad = " " * indent
        for key, value in data.items():
            at = path + (key,)
            inline = self.value(value, at)
            name = key if _plain_key(key) else _scalar(key)
            if inline is not None:
                self.lines.append(f"{pad}{name}: {inline}{self.origin(at)}")
            else:
                self.lines.append(f"{pad}{name}:")
                self.block(value, at, indent + 2)

    def sequence(self, data: list, path: Path_, indent: int) -> None:
        pad = " " * indent
        for i, value in enumerate(data):
            at = path + (i,)
            inline = self.value(value, at)
            if inline is not None:
                self.lines.append(f"{pad}- {inline}{self.origin(at)}")
                continue
            start = len(self.lines)
            self.block(value, at, indent + 2)
            first = self.lines[start]
            self.lines[start] = pad + "- " + first[indent + 2:]

    def block(self, value: Any, path: Path_, indent: int) -> None:
        if isinstance(value, dict):
            self.mapping(value, path, indent)
        else:
            self.sequence(value, path, indent)


def _plain_key(key: Any) -> bool:
    text = str(key)
    return isinstance(key, str) and text.replace("_", "").replace("-", "").isalnum() and \
        not text[0].isdigit() and text not in ("true", "false", "null")


def resolved_yaml(doc: PackDocument, data: Any = None) -> str:
    """The merged pack as YAML with the origin of every value in a comment."""
    data = doc.data if data is None else data
    head = [f"# rule pack {doc.pack_id}, resolved"
            + (f": {' → '.join(doc.lineage)}" if len(doc.lineage) > 1 else "")]
    files = {}
    for path, _ in leaves(data):
        o = doc.origin(path)
        files.setdefault(o.pack, o.file)
    head += [f"#   {pack}: {file}" for pack, file in files.items()]
    head.append("# each value is followed by the pack (and line) it comes from")
    writer = _Yaml(doc, data)
    writer.mapping(data, (), 0)
    return lines(head + writer.lines)


def resolved_json(doc: PackDocument, data: Any = None) -> dict[str, Any]:
    """The merged pack and the origin of every value, for machines."""
    data = doc.data if data is None else data
    origins = []
    for path, _ in leaves(data):
        o = doc.origin(path)
        origins.append({"path": format_path(path), "pack": o.pack, "file": o.file,
                        "line": o.line, "column": o.column})
    retired = {coll: [{"id": k, **v} for k, v in entries.items()]
               for coll, entries in doc.retired.items()}
    return {"pack": doc.pack_id, "lineage": list(doc.lineage), "data": data,
            "origins": origins, "retired": retired}
