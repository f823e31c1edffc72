"""The pack search path and layered packs: ``extends:`` by id, explicit amendments, merged.

A pack is found by id on the search path: the built-in ``rules/`` folder first, then every
``--rules-path`` folder, then those of the ``AIRGATE_RULES_PATH`` environment variable
(``os.pathsep``-separated). An id is never a path, so a pack can only extend another pack that
lies inside one of these roots.

A layered pack (``extends: BASE``) restates none of its base's tables. It amends them under
``amend:`` with explicit operations — ``change`` (set fields of an entry), ``add`` (new entries)
and ``retire`` (remove an entry, with a reason) — on occupancy categories, air-distribution
configurations, ventilation-efficiency methods, checks, requirements and exhaust rows. Adding an id the base
already has, or changing or retiring one it lacks, is an error; so is a cycle of ``extends``.

The merge works on documents: the base's data is copied, the amendments applied, and the result
validated against the full schema and built like any pack. A :class:`PackDocument` keeps, for
every path of the merged data, the file and path where the value was written, so an error names
the right file and line, and ``rules show --resolved`` can say which pack each value came from.
"""

from __future__ import annotations

import copy
import os
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from airgate.errors import AirgateError, RulePackError, UsageError, nearest
from airgate.readers import packschema
from airgate.readers.document import Document, Path_, load

ENV_VAR = "AIRGATE_RULES_PATH"
PACK_SUFFIXES = (".yaml", ".yml", ".json")
MAX_CHAIN = 12

#: amend key → (path of the container in a pack, container shape, what an entry is called)
COLLECTIONS: dict[str, tuple[Path_, str, str]] = {
    "occupancy": (("occupancy", "categories"), "list", "occupancy category"),
    "air_distribution": (("air_distribution", "configurations"), "list",
                         "air distribution configuration"),
    "ventilation_efficiency": (("ventilation_efficiency", "methods"), "map",
                               "ventilation efficiency method"),
    "checks": (("checks",), "list", "check"),
    "requirements": (("requirements",), "list", "requirement"),
    "exhaust": (("exhaust", "rows"), "list", "exhaust row"),
    "equations": (("equations",), "map", "equation"),
}
#: tables whose default entry an amendment may set (amend.TABLE.default)
DEFAULTS = ("air_distribution", "ventilation_efficiency")
#: top-level values a layered pack may give; the others it inherits unchanged
SCALARS = ("pack", "id", "title", "document", "edition", "jurisdiction", "effective",
           "provenance")
#: what a layered pack must not restate at the top level
TABLES = ("occupancy", "air_distribution", "ventilation_efficiency", "checks", "requirements",
          "equations", "options", "exhaust")
#: tables a layered pack inherits unchanged and has no amend operation for
INHERITED = ("natural_ventilation",)


@dataclass(frozen=True)
class Root:
    """A folder of the pack search path."""

    path: Path
    label: str  #: "built-in", "--rules-path" or "AIRGATE_RULES_PATH"


@dataclass(frozen=True)
class Origin:
    """Where a value of a (merged) pack document was written."""

    pack: str
    file: str
    path: Path_
    line: int | None
    column: int | None

    def where(self) -> str:
        return f"{self.file}:{self.line}" if self.line is not None else self.file


def search_roots(extra: Iterable[str | Path] = ()) -> tuple[Root, ...]:
    """The search path: built-in packs, then ``--rules-path`` folders, then the environment's."""
    roots = [Root(packschema.builtin_rules_dir(), "built-in")]
    for folder in extra:
        path = Path(folder)
        if not path.is_dir():
            raise UsageError(f"{folder} is not a folder", field=("--rules-path",),
                             hint="give a folder that holds rule pack files")
        roots.append(Root(path, "--rules-path"))
    for part in os.environ.get(ENV_VAR, "").split(os.pathsep):
        if not part.strip():
            continue
        path = Path(part)
        if not path.is_dir():
            raise AirgateError(f"{part} is not a folder", field=(ENV_VAR,),
                               hint=f"list folders of rule packs, separated by '{os.pathsep}'")
        roots.append(Root(path, ENV_VAR))
    seen: set[Path] = set()
    out = []
    for root in roots:
        key = root.path.resolve()
        if key not in seen:
            seen.add(key)
            out.append(root)
    return tuple(out)


def _inside(path: Path, root: Path) -> bool:
    try:
        path.resolve().relative_to(root.resolve())
    except ValueError:
        return False
    return True


def packs_on_path(roots: Sequence[Root]) -> list[tuple[str, Path, Root, bool]]:
    """Every pack file of the search path: (id, file, root, shadowed by an earlier root)."""
    out = []
    seen: set[str] = set()
    for root in roots:
        suffixes = (".yaml",) if root.label == "built-in" else PACK_SUFFIXES
        files = sorted((p for s in suffixes for p in root.path.glob(f"*{s}") if p.is_file()),
                       key=lambda p: (p.stem, p.suffix))
        for path in files:
            if not _inside(path, root.path):
                continue
            out.append((path.stem, path, root, path.stem in seen))
            seen.add(path.stem)
    return out


def find(pack_id: str, roots: Sequence[Root]) -> Path:
    """The file of pack ``pack_id``: the first root that holds ``<id>.yaml`` (or .yml, .json)."""
    if "/" in pack_id or "\\" in pack_id or pack_id.startswith("."):
        raise RulePackError(f"'{pack_id}' is not a pack id", hint="give an id, not a path")
    for root in roots:
        suffixes = (".yaml",) if root.label == "built-in" else PACK_SUFFIXES
        for suffix in suffixes:
            path = root.path / f"{pack_id}{suffix}"
            if path.is_file():
                if not _inside(path, root.path):
                    raise RulePackError(f"{path} leads outside its folder {root.path}",
                                        hint="packs are read only from inside the search path")
                return path
    ids = sorted({p[0] for p in packs_on_path(roots)})
    close = nearest(pack_id, ids)
    folders = ", ".join(f"{r.path} ({r.label})" for r in roots)
    raise RulePackError(
        f"unknown rule pack '{pack_id}'" + (f"; did you mean {', '.join(close)}?" if close else ""),
        allowed=ids, hint=f"give a pack id on the search path ({folders}), add a folder with "
                          f"--rules-path or {ENV_VAR}, or give the path of a pack file")


class PackDocument:
    """A pack's data and, for every path in it, where it was written.

    For a single file this is the file's own positions. For a layered pack ``links`` map paths
    of the merged data (by longest prefix) to the document and path they were taken from;
    paths not linked come from the base unchanged.
    """

    def __init__(self, *, pack_id: str, file: str, data: Any, doc: Document | None = None,
                 base: PackDocument | None = None,
                 links: dict[Path_, tuple[PackDocument, Path_]] | None = None,
                 retired: dict[str, dict[str, dict[str, str]]] | None = None,
                 amended: dict[tuple[str, str], dict[str, dict[str, Any]]] | None = None,
                 lineage: tuple[str, ...] = (), files: tuple[str, ...] = ()) -> None:
        self.pack_id = pack_id
        self.file = file
        self.data = data
        self.doc = doc
        self.base = base
        self.links = links or {}
        self.retired = retired or {}
        self.amended = amended or {}
        self.lineage = lineage or (pack_id,)
        self.files = files or (file,)

    @classmethod
    def from_file(cls, doc: Document) -> PackDocument:
        pack_id = doc.data.get("id") if isinstance(doc.data, dict) else None
        return cls(pack_id=str(pack_id or Path(doc.file).stem), file=doc.file, data=doc.data,
                   doc=doc)

    @property
    def extends(self) -> str | None:
        return self.lineage[1] if len(self.lineage) > 1 else None

    def origin(self, path: Path_) -> Origin:
        path = tuple(path)
        if self.doc is not None:
            line, column = self.doc.locate(path)
            return Origin(self.pack_id, self.file, path, line, column)
        for k in range(len(path), -1, -1):
            hit = self.links.get(path[:k])
            if hit is not None:
                source, prefix = hit
                return source.origin(prefix + path[k:])
        assert self.base is not None
        return self.base.origin(path)

    def locate(self, path: Path_) -> tuple[int | None, int | None]:
        o = self.origin(path)
        return (o.line, o.column)

    def error(self, cls: type[AirgateError], message: str, path: Path_, **kw: Any) -> AirgateError:
        o = self.origin(path)
        return cls(message, file=o.file, line=o.line, column=o.column, field=o.path, **kw)

    def with_data(self, data: Any) -> PackDocument:
        """The same document with other data at the same paths (options resolved)."""
        other = copy.copy(self)
        other.data = data
        return other


# --- reading ---------------------------------------------------------------------------------

def read(path: Path, roots: Sequence[Root], *, expected_id: str | None = None,
         chain: tuple[str, ...] = ()) -> PackDocument:
    """Read the pack at ``path``; a layered pack is merged with its base (recursively).

    The single file is validated against the schema first, then the merged document.
    """
    single = PackDocument.from_file(load(path, RulePackError))
    data = single.data
    if not (isinstance(data, dict) and "pack" in data):
        # nothing of a file that is not a pack is quoted: it may be any file a path led to
        raise single.error(RulePackError, "this file is not a rule pack: a pack is a mapping "
                           "with the format version 'pack: 1' at its top", (),
                           hint="give the path of a rule pack file, or a pack id")
    if isinstance(data, dict):
        _no_restated_tables(single)
    packschema.validate(single)
    if expected_id is not None and data["id"] != expected_id:
        raise single.error(RulePackError, f"the pack in {Path(single.file).name} has id "
                           f"'{data['id']}', but it was found as '{expected_id}'", ("id",),
                           hint=f"name the file {data['id']}.yaml, or set id: {expected_id}")
    base_id = data.get("extends")
    if base_id is None:
        return single
    if base_id == data["id"] or base_id in chain:
        loop = " → ".join((*chain, data["id"], base_id))
        raise single.error(RulePackError, f"extends makes a cycle: {loop}", ("extends",),
                           hint="a pack cannot extend itself or a pack that extends it")
    if len(chain) >= MAX_CHAIN:
        raise single.error(RulePackError, f"more than {MAX_CHAIN} packs extend one another",
                           ("extends",))
    try:
        base_path = find(base_id, roots)
    except RulePackError as exc:
        raise single.error(RulePackError, f"base pack: {exc.message}", ("extends",),
                           allowed=exc.allowed, hint=exc.hint) from None
    base = read(base_path, roots, expected_id=base_id, chain=(*chain, data["id"]))
    merged = merge(single, base)
    packschema.validate(merged)
    return merged


def _no_restated_tables(single: PackDocument) -> None:
    data = single.data
    if "extends" in data:
        for key in (*TABLES, *INHERITED):
            if key in data:
                how = ("cite its own sections under 'amend: {equations: {change: ...}}'"
                       if key == "equations" else
                       f"amend it under 'amend: {{{key}: {{change: ..., add: ..., retire: ...}}}}'"
                       if key in COLLECTIONS else "it is inherited from the base unchanged")
                raise single.error(
                    RulePackError, f"a pack that extends another does not restate '{key}'; "
                    f"giving it here would redefine the base's without saying so", (key,),
                    hint=how)
    elif "amend" in data:
        raise single.error(RulePackError, "'amend' needs 'extends: BASE-ID' (the pack it amends)",
                           ("amend",), hint="add extends: with the base pack's id, or remove amend")


# --- merging ---------------------------------------------------------------------------------

def _fill(source: dict[str, Any] | None, document: str, edition: str) -> None:
    if isinstance(source, dict):
        source.setdefault("document", document)
        source.setdefault("edition", edition)


def materialize(data: dict[str, Any]) -> None:
    """Write the pack-wide defaults into every source (in place).

    An extending pack may change ``document``, ``edition`` and ``provenance``; the base's entries
    must keep citing the base's document, so its defaults are made explicit before the merge.
    """
    document, edition = data["document"], data["edition"]
    for table, rows in (("occupancy", "categories"), ("air_distribution", "configurations"),
                        ("exhaust", "rows")):
        if table in data:
            _fill(data[table].get("source"), document, edition)
            for row in data[table].get(rows, []):
                _fill(row.get("source"), document, edition)
    for method in data.get("ventilation_efficiency", {}).get("methods", {}).values():
        _fill(method.get("source"), document, edition)
    for key in ("checks", "requirements"):
        for entry in data.get(key, []):
            _fill(entry.get("source"), document, edition)
    for option in data.get("options", {}).values():
        _fill(option.get("source"), document, edition)
    natural = data.get("natural_ventilation", {})
    for entry in [natural.get("openable_area", {}), *natural.get("depth", [])]:
        _fill(entry.get("source"), document, edition)
    for eq in data.get("equations", {}).values():
        _fill(eq, document, edition)
        eq.setdefault("provenance", data["provenance"])


@dataclass
class _Entry:
    """An entry of a collection while merging: its data and where each part came from."""

    data: dict[str, Any]
    doc: PackDocument
    path: Path_
    overrides: dict[str, Path_] = field(default_factory=dict)


class _Merge:
    def __init__(self, child: PackDocument, base: PackDocument) -> None:
        self.child = child
        self.base = base
        self.data = copy.deepcopy(base.data)
        materialize(self.data)
        self.links: dict[Path_, tuple[PackDocument, Path_]] = {}
        self.retired = copy.deepcopy(base.retired)
        self.amended = copy.deepcopy(base.amended)

    def link(self, path: Path_, source_path: Path_) -> None:
        self.links[path] = (self.child, source_path)

    def top_level(self) -> None:
        child, data, cdata = self.child, self.data, self.child.data
        for key in SCALARS:
            if key in cdata:
                data[key] = cdata[key]
                self.link((key,), (key,))
        if "units" in cdata and cdata["units"] != self.base.data["units"]:
            raise child.error(
                RulePackError, f"units {cdata['units']} differ from those of the base pack "
                f"{self.base.pack_id} ({self.base.data['units']}); an extending pack writes its "
                "values in its base's units", ("units",), allowed=[self.base.data["units"]])
        if "verify" in cdata:
            if not cdata["verify"] and self.base.data.get("verify", True):
                raise child.error(
                    RulePackError, f"verify: false, but the base pack {self.base.pack_id} "
                    "holds values that must be verified", ("verify",),
                    hint="leave verify out (it is inherited) or set it true")
            data["verify"] = cdata["verify"]
            self.link(("verify",), ("verify",))
        for key in ("cautions", "notes"):
            own = cdata.get(key, [])
            mine = list(data.get(key, []))
            for k, text in enumerate(own):
                if text not in mine:
                    self.link((key, len(mine)), (key, k))
                    mine.append(text)
            if own:
                data[key] = mine

    def collection(self, name: str, ops: dict[str, Any]) -> None:
        cpath, shape, what = COLLECTIONS[name]
        at = ("amend", name)
        entries = self._entries(cpath, shape, at)
        index = {e.data["id"] if shape == "list" else e.path[-1]: e for e in entries}
        done: dict[str, Path_] = {}
        retired: set[str] = set()
        for k, op in enumerate(ops.get("retire", [])):
            here = at + ("retire", k)
            eid = self._known(op["id"], index, done, here, what, "retire")
            retired.add(eid)
            self.retired.setdefault(name, {})[eid] = {
                "reason": op["reason"], "pack": self.child.pack_id,
                "where": self.child.origin(here).where()}
        for k, op in enumerate(ops.get("change", [])):
            here = at + ("change", k)
            eid = self._known(op["id"], index, done, here, what, "change")
            self._change(name, index[eid], op, here)
        kept = [e for e in entries if (e.data["id"] if shape == "list" else e.path[-1]) not in retired]
        added = self._added(name, ops.get("add", [] if shape == "list" else {}), index, retired,
                            shape, at, what)
        self._write(cpath, shape, kept + added)
        if name in DEFAULTS:
            self._default(name, ops, retired, at)

    def _entries(self, cpath: Path_, shape: str, at: Path_) -> list[_Entry]:
        container: Any = self.data
        for depth, key in enumerate(cpath):
            if key not in container:
                container[key] = ([] if shape == "list" else {}) if depth == len(cpath) - 1 else {}
                self.link(cpath[: depth + 1], at)
            container = container[key]
        if shape == "list":
            return [_Entry(e, self.base, cpath + (i,)) for i, e in enumerate(container)]
        return [_Entry(e, self.base, cpath + (key,)) for key, e in container.items()]

    def _known(self, eid: str, index: dict[str, _Entry], done: dict[str, Path_], here: Path_,
               what: str, verb: str) -> str:
        if eid not in index:
            close = nearest(eid, index)
            gone = self.retired.get(here[1], {}).get(eid)
            why = f"; it was {_retired_text(gone)}" if gone else ""
            raise self.child.error(
                RulePackError, f"no {what} '{eid}' in rule pack {self.base.pack_id} to {verb}"
                + why + (f"; did you mean {', '.join(repr(c) for c in close)}?" if close else ""),
                here + ("id",), allowed=sorted(index) if len(index) <= 20 else None)
        if eid in done:
            first = self.child.origin(done[eid]).line
            raise self.child.error(
                RulePackError, f"'{eid}' is amended twice in this pack (first on line {first})",
                here + ("id",), hint="give each entry one change or one retirement")
        done[eid] = here
        return eid

    def _change(self, name: str, entry: _Entry, op: dict[str, Any], here: Path_) -> None:
        if "id" in op["set"]:
            raise self.child.error(RulePackError, "an entry keeps its id; to rename it, retire it "
                                   "and add the new entry", here + ("set", "id"))
        for key, value in op["set"].items():
            entry.data[key] = copy.deepcopy(value)
            entry.overrides[key] = here + ("set", key)
        source = dict(op["source"])
        _fill(source, self.data["document"], self.data["edition"])
        record = {"source": source, "provenance": op["provenance"],
                  "reason": op.get("reason", ""), "pack": self.child.pack_id}
        if name == "occupancy":
            fields = self.amended.setdefault((name, entry.data["id"]), {})
            for key in op["set"]:
                fields[key] = record
            return
        if name == "equations":  # an equation cites by its own document, edition and section
            for key in ("document", "edition"):
                entry.data[key] = source[key]
                entry.overrides[key] = here + ("source",)
            entry.data["provenance"] = op["provenance"]
            entry.overrides["provenance"] = here + ("provenance",)
            return
        entry.data["source"] = source
        entry.overrides["source"] = here + ("source",)
        if name != "checks":
            entry.data["provenance"] = op["provenance"]
            entry.overrides["provenance"] = here + ("provenance",)

    def _added(self, name: str, items: Any, index: dict[str, _Entry], retired: set[str],
               shape: str, at: Path_, what: str) -> list[_Entry]:
        pairs = (list(enumerate(items)) if shape == "list" else list(items.items()))
        out: list[_Entry] = []
        seen: set[str] = set()
        for key, item in pairs:
            here = at + ("add", key)
            eid = item["id"] if shape == "list" else key
            where = here + ("id",) if shape == "list" else here
            if eid in retired:
                raise self.child.error(RulePackError, f"'{eid}' is retired and added again in the "
                                       "same pack", where, hint=f"use amend.{name}.change")
            if eid in index:
                o = index[eid].doc.origin(index[eid].path)
                raise self.child.error(
                    RulePackError, f"{what} '{eid}' is already defined by rule pack {o.pack} "
                    f"({o.where()}); adding it again would redefine it without saying so", where,
                    hint=f"to amend it use amend.{name}.change; to drop it use "
                         f"amend.{name}.retire")
            if eid in seen:
                raise self.child.error(RulePackError, f"'{eid}' is added twice", where)
            seen.add(eid)
            self.retired.get(name, {}).pop(eid, None)  # a base's retirement is undone by re-adding
            out.append(_Entry(copy.deepcopy(item), self.child, here))
        return out

    def _write(self, cpath: Path_, shape: str, entries: list[_Entry]) -> None:
        parent: Any = self.data
        for key in cpath[:-1]:
            parent = parent[key]
        if shape == "list":
            parent[cpath[-1]] = [e.data for e in entries]
            keys: list[str | int] = list(range(len(entries)))
        else:
            parent[cpath[-1]] = {e.path[-1]: e.data for e in entries}
            keys = [e.path[-1] for e in entries]
        for key, entry in zip(keys, entries):
            self.links[cpath + (key,)] = (entry.doc, entry.path)
            for name, source_path in entry.overrides.items():
                self.links[cpath + (key, name)] = (self.child, source_path)

    def _default(self, name: str, ops: dict[str, Any], retired: set[str], at: Path_) -> None:
        table = self.data[name]
        if "default" in ops:
            table["default"] = ops["default"]
            self.link((name, "default"), at + ("default",))
        elif table.get("default") in retired:
            k = [op["id"] for op in ops.get("retire", [])].index(table["default"])
            raise self.child.error(
                RulePackError, f"'{table['default']}' is the default of the {name} table; "
                "retiring it leaves the table without one", at + ("retire", k, "id"),
                hint=f"also set amend.{name}.default")

    def result(self) -> PackDocument:
        files = tuple(dict.fromkeys(self.child.files + self.base.files))
        return PackDocument(pack_id=self.child.pack_id, file=self.child.file, data=self.data,
                            base=self.base, links=self.links, retired=self.retired,
                            amended=self.amended, lineage=(self.child.pack_id, *self.base.lineage),
                            files=files)


def _retired_text(record: dict[str, str]) -> str:
    return f"retired by rule pack {record['pack']} ({record['where']}): {record['reason']}"


def merge(child: PackDocument, base: PackDocument) -> PackDocument:
    """Apply the amendments of ``child`` (a single layered file) to ``base`` (resolved)."""
    m = _Merge(child, base)
    m.top_level()
    for name, ops in child.data.get("amend", {}).items():
        m.collection(name, ops)
    return m.result()
