"""Find, validate and load rule packs.

A pack is YAML (or JSON) validated against the published JSON Schema ``rule-pack.schema.json``;
a pack that breaks it, or refers to what does not exist, stops the run (exit 2) with the pack
file, line and field path — never warn-and-skip. Packs are found by id on the search path
(:mod:`airgate.readers.layering`); a layered pack is merged with its base first. Options the
pack declares are resolved with the schedule's choices (:mod:`airgate.readers.options`). Table
values are converted from the pack's declared unit system to internal units here.
"""

from __future__ import annotations

import os
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

from airgate import units
from airgate.errors import RulePackError
from airgate.escaping import excerpt
from airgate.models.rules import (
    AirDistributionRow,
    Bound,
    Check,
    CitedValue,
    DetailedEv,
    Equation,
    ExhaustRow,
    NaturalVentilationRules,
    OccupancyCategory,
    Retired,
    RulePack,
    SimplifiedEv,
    Source,
    TableEv,
)
from airgate import cache
from airgate.readers import layering, packschema
from airgate.readers import options as opts
from airgate.readers.layering import PACK_SUFFIXES, PackDocument, Root
from airgate.readers.packschema import builtin_rules_dir, pack_schema
from airgate.readers.packschema import validate as _validate
from airgate.readers.requirements import build_requirements

__all__ = ["builtin_rules_dir", "pack_schema", "builtin_pack_ids", "resolve", "load_document",
           "load_pack", "build", "validate_document", "is_path"]


def builtin_pack_ids() -> list[str]:
    """Ids of the built-in packs (their file names without suffix), sorted."""
    return sorted(p.stem for p in builtin_rules_dir().glob("*.yaml"))


def is_path(ref: str) -> bool:
    """Whether a pack reference is a file path (a suffix or a folder separator) or an id."""
    return Path(ref).suffix.lower() in PACK_SUFFIXES or "/" in ref or "\\" in ref


def resolve(ref: str, base: Path | None = None,
            search: Sequence[str | Path] | Sequence[Root] = (), *,
            confined: bool = False) -> Path:
    """Turn a pack id (looked up on the search path) or a path (relative to ``base``) into a file.

    ``confined``: ``ref`` was written inside a file (a schedule, an imported gbXML or IFC file)
    rather than given on the command line. Its path must then end in a pack suffix and lead,
    symbolic links followed, inside ``base`` (that file's folder, or below it) or a folder of
    the search path; anything else is refused before the file is opened, so a schedule cannot
    make airgate read (and quote) a file elsewhere on the machine.
    """
    if not is_path(ref):
        return layering.find(ref, _roots(search))
    candidate = Path(ref)
    if not candidate.is_absolute() and base is not None:
        candidate = base / candidate
    if confined:
        _confine(ref, candidate, base, _roots(search))
    return candidate


def _confine(ref: str, candidate: Path, base: Path | None, roots: Sequence[Root]) -> None:
    """Refuse a pack path written in a file unless it is a pack file inside the read scope."""
    if candidate.suffix.lower() not in PACK_SUFFIXES:
        raise RulePackError(f"{excerpt(ref)} is not the name of a rule pack file",
                            hint="name a pack by its id, or give the path of a .yaml, .yml or "
                                 ".json pack file in the schedule's folder")
    try:
        target = candidate.resolve()
        folders = [f.resolve() for f in ([base] if base is not None else [])]
        folders += [r.path.resolve() for r in roots]
    except (OSError, RuntimeError):  # a loop of symbolic links
        raise RulePackError(f"the path {excerpt(ref)} cannot be followed (a loop of symbolic "
                            "links?)", hint="give the path of a pack file") from None
    if not any(target == f or f in target.parents for f in folders):
        raise RulePackError(
            f"the rule pack path {excerpt(ref)} leads outside the schedule's folder and the pack "
            "search path", hint="a path written in a schedule is read only inside the "
            "schedule's folder (and below it) and the folders of the pack search path; put the "
            "pack there, add its folder with --rules-path, or give the pack with --rules")


def _roots(search: Sequence[Any]) -> tuple[Root, ...]:
    if search and all(isinstance(r, Root) for r in search):
        return tuple(search)
    return layering.search_roots(search)


def validate_document(doc: Any) -> None:
    """Check a pack document against the JSON Schema; raise on the most relevant error."""
    _validate(doc)


def _stamps(files: Sequence[str]) -> tuple | None:
    out = []
    for f in files:
        try:
            st = os.stat(f)
        except OSError:
            return None
        out.append((f, st.st_mtime_ns, st.st_size))
    return tuple(out)


#: merged, validated pack documents by (file, search path); kept while no file of the chain changes
_DOCS: dict[tuple, tuple[tuple | None, PackDocument]] = {}
#: built packs by (document, chosen options); packs are read-only once built
_PACKS: dict[tuple, tuple[PackDocument, RulePack]] = {}


def load_document(ref: str, base: Path | None = None, *,
                  search: Sequence[str | Path] | Sequence[Root] = ()) -> PackDocument:
    """The pack's document, merged with its bases and validated (schema, choices, units)."""
    roots = _roots(search)
    path = resolve(ref, base, roots)
    try:
        key: tuple | None = (str(path.resolve()), tuple(str(r.path.resolve()) for r in roots))
    except OSError:
        key = None
    if key is not None and key in _DOCS:
        stamps, doc = _DOCS[key]
        if stamps is not None and stamps == _stamps(doc.files):
            return doc
    expected = None if is_path(ref) else ref
    if key is None:
        doc = _read_document(path, roots, expected)[0]
    else:
        doc = cache.cached("pack", (key[0], *key[1], str(expected)),
                           lambda: _read_document(path, roots, expected),
                           still=lambda d: _same_bases(d, roots))
    if key is not None:
        _DOCS[key] = (_stamps(doc.files), doc)
    return doc


def _read_document(path: Path, roots: Sequence[Root],
                   expected: str | None) -> tuple[PackDocument, list[Path]]:
    """Read, merge and check a pack document: (the document, the files it depends on)."""
    doc = layering.read(path, roots, expected_id=expected)
    opts.check_choices(doc)
    _check_declared_units(doc, doc.data)
    return doc, [*map(Path, doc.files), packschema.schema_path("rule-pack")]


def _same_bases(doc: PackDocument, roots: Sequence[Root]) -> bool:
    """Whether each base of a kept document is still the file its id is found in (a pack
    added to an earlier folder of the search path takes its place)."""
    base = doc.base
    while base is not None:
        if str(layering.find(base.pack_id, roots)) != base.file:
            return False
        base = base.base
    return True


def load_pack(ref: str, base: Path | None = None, *, options: Mapping[str, str] | None = None,
              search: Sequence[str | Path] | Sequence[Root] = ()) -> RulePack:
    """Load, validate and build the pack named by id or path, with its options chosen.

    Raises :class:`~airgate.readers.options.OptionError` when the options do not fit the pack.
    """
    doc = load_document(ref, base, search=search)
    declared = opts.declared(doc.data)
    chosen = opts.choose(declared, options, doc.data["id"])
    key = (id(doc), tuple(sorted(chosen.items())))
    hit = _PACKS.get(key)
    if hit is not None and hit[0] is doc:
        return hit[1]
    pack = build(doc.with_data(opts.resolve(doc.data, chosen)) if declared else doc)
    pack.options, pack.chosen = declared, chosen
    _PACKS[key] = (doc, pack)
    return pack


def _source(raw: dict[str, Any] | None, pack: dict[str, Any], fallback: Source | None = None) -> Source:
    if raw is None:
        if fallback is None:
            return Source(pack["document"], pack["edition"])
        return fallback
    return Source(
        document=raw.get("document", pack["document"]),
        edition=raw.get("edition", pack["edition"]),
        table=raw.get("table", ""),
        section=raw.get("section", ""),
    )


def _unique(doc: Any, items: list[dict[str, Any]], path: tuple) -> None:
    seen: dict[str, int] = {}
    for i, item in enumerate(items):
        if item["id"] in seen:
            raise doc.error(
                RulePackError, f"duplicate id '{item['id']}' (first at index {seen[item['id']]})",
                path + (i, "id"), hint="give every entry its own id",
            )
        seen[item["id"]] = i


def _rate(value: float, kind: str, declared: str, system: str) -> float:
    """A table rate in internal units; SI tables may be written in m³/h instead of L/s."""
    if declared.startswith("m3/h"):
        value = value / 3.6  # 1 L/s = 3.6 m³/h exactly
    return units.to_internal(value, kind, system)


def _amended(doc: Any, row: dict[str, Any]) -> dict[str, dict[str, Any]]:
    """The fields of a category that a layered pack amended: name → the amendment's record."""
    return getattr(doc, "amended", {}).get(("occupancy", row["id"]), {})


def _value_provenance(doc: Any, row: dict[str, Any]) -> dict[str, str]:
    """Provenance of single values: the row's own, then that of each amendment of a value (or,
    where the amendment sets ``value_provenance`` too, the one it gives that value)."""
    out = dict(row.get("value_provenance", {}))
    amended = _amended(doc, row)
    own = row.get("value_provenance", {}) if "value_provenance" in amended else {}
    for name, rec in amended.items():
        if name in OccupancyCategory.VALUES:
            out[name] = own.get(name, rec["provenance"])
    return out


def _cited(doc: Any, row: dict[str, Any], source: Source) -> dict[str, str]:
    """Citations of the fields of a category that a layered pack amended."""
    fields = _amended(doc, row)
    out = {}
    for name, rec in fields.items():
        s = rec["source"]
        amend = Source(s["document"], s["edition"], s.get("table", ""), s.get("section", ""))
        out[name] = (f"{amend.cite()} ({rec['provenance']}), amending {source.cite()}, "
                     f"row '{row['label']}'")
    return out


def _categories(doc: Any, data: dict[str, Any], system: str) -> dict[str, OccupancyCategory]:
    occ = data["occupancy"]
    table_source = _source(occ["source"], data)
    declared = occ["units"]
    _unique(doc, occ["categories"], ("occupancy", "categories"))
    out = {}
    for row in occ["categories"]:
        density = row["density"]
        source = _source(row.get("source"), data, table_source)
        out[row["id"]] = OccupancyCategory(
            id=row["id"], label=row["label"], group=row["group"],
            rp=_rate(row["Rp"], "airflow_per_person", declared["Rp"], system),
            ra=_rate(row["Ra"], "airflow_per_area", declared["Ra"], system),
            density=None if density is None else units.to_internal(density, "density", system),
            air_class=row["air_class"],
            provenance=row.get("provenance", occ["provenance"]),
            source=source,
            notes=row.get("notes", ""),
            printed={"Rp": row["Rp"], "Ra": row["Ra"], "density": density},
            default_occupants=row.get("default_occupants"),
            minimum_bedrooms=row.get("minimum_bedrooms", 0),
            value_provenance=_value_provenance(doc, row),
            cited=_cited(doc, row, source),
        )
    return out


_EXHAUST_UNITS = {"IP": {"per_area": "cfm/ft2", "per_unit": "cfm"},
                  "SI": {"per_area": "L/s/m2", "per_unit": "L/s"}}


def _exhaust(doc: Any, data: dict[str, Any], system: str) -> dict[str, ExhaustRow]:
    """The minimum exhaust rates table in internal units: per area [L/s per m²], per counted
    unit [L/s]."""
    ex = data.get("exhaust")
    if ex is None:
        return {}
    for key, unit in ex["units"].items():
        if unit != _EXHAUST_UNITS[system][key]:
            raise doc.error(RulePackError, f"'{unit}' does not belong to a pack in {system} units",
                            ("exhaust", "units", key), allowed=[_EXHAUST_UNITS[system][key]])
    table_source = _source(ex["source"], data)
    _unique(doc, ex["rows"], ("exhaust", "rows"))
    out = {}
    for row in ex["rows"]:
        kind = {"floor-area": "airflow_per_area", "air-change": "rate"}.get(row["per"],
                                                                           "airflow")
        printed = {k: row[k] for k in ("rate", "continuous", "intermittent") if k in row}
        out[row["id"]] = ExhaustRow(
            id=row["id"], label=row["label"], per=row["per"],
            rates={k: units.to_internal(v, kind, system) for k, v in printed.items()},
            air_class=row["air_class"], provenance=row.get("provenance", ex["provenance"]),
            source=_source(row.get("source"), data, table_source), notes=row.get("notes", ""),
            printed=printed, value_provenance=dict(row.get("value_provenance", {})),
            toilet_room=row.get("toilet_room", False))
    return out


_BOUND_KINDS = {
    "temperature_difference": "temperature_difference",
    "jet_velocity": "velocity",
    "throw_velocity": "velocity",
}


def _configurations(doc: Any, data: dict[str, Any], system: str) -> dict[str, AirDistributionRow]:
    ad = data["air_distribution"]
    table_source = _source(ad["source"], data)
    _unique(doc, ad["configurations"], ("air_distribution", "configurations"))
    out = {}
    for row in ad["configurations"]:
        when = row["when"]
        bounds = {
            name: Bound(**{op: units.to_internal(v, kind, system) for op, v in when[name].items()})
            for name, kind in _BOUND_KINDS.items()
            if name in when
        }
        out[row["id"]] = AirDistributionRow(
            id=row["id"], label=row["label"], ez=float(row["ez"]), supply=when["supply"],
            return_=when.get("return"), mode=when.get("mode"), bounds=bounds,
            provenance=row.get("provenance", ad["provenance"]),
            source=_source(row.get("source"), data, table_source),
        )
    default = ad.get("default")
    if default is not None and default not in out:
        raise doc.error(RulePackError, f"default configuration '{default}' is not in the table",
                        ("air_distribution", "default"), allowed=sorted(out))
    return out


def _methods(doc: Any, data: dict[str, Any]) -> dict[str, Any]:
    ve = data["ventilation_efficiency"]
    out: dict[str, Any] = {}
    for name, m in ve["methods"].items():
        src = _source(m["source"], data)
        if name == "simplified":
            out[name] = SimplifiedEv(
                breakpoint=m["breakpoint"], slope=m["slope"], intercept=m["intercept"],
                above_breakpoint=m["above_breakpoint"],
                vav_minimum_primary_ratio=m.get("vav_minimum_primary_ratio"),
                source=src, provenance=m["provenance"],
            )
        elif name == "detailed":
            out[name] = DetailedEv(source=src, provenance=m["provenance"])
        else:
            rows = tuple((float(r["max_zp"]), float(r["ev"])) for r in m["rows"])
            if any(b[0] <= a[0] for a, b in zip(rows, rows[1:])):
                raise doc.error(RulePackError, "rows must be in ascending order of max_zp",
                                ("ventilation_efficiency", "methods", name, "rows"))
            out[name] = TableEv(rows=rows, interpolate=m["interpolate"],
                                above_last=m["above_last"], source=src, provenance=m["provenance"])
    if ve["default"] not in out:
        raise doc.error(RulePackError, f"default method '{ve['default']}' is not among the methods",
                        ("ventilation_efficiency", "default"), allowed=sorted(out))
    return out


_DECLARED_UNITS = {
    "IP": {"Rp": ("cfm/person",), "Ra": ("cfm/ft2",), "density": ("people/1000 ft2",),
           "temperature_difference": ("delta_degF",), "jet_velocity": ("fpm",),
           "throw_velocity": ("fpm",)},
    "SI": {"Rp": ("L/s/person", "m3/h/person"), "Ra": ("L/s/m2", "m3/h/m2"),
           "density": ("people/100 m2",), "temperature_difference": ("K",),
           "jet_velocity": ("m/s",), "throw_velocity": ("m/s",)},
}


def _check_declared_units(doc: Any, data: dict[str, Any]) -> None:
    """Table unit declarations must agree with the pack's unit system (no silent mixing)."""
    expected = _DECLARED_UNITS[data["units"]]
    for table in ("occupancy", "air_distribution"):
        if table not in data:  # a supplement pack has neither table
            continue
        for key, unit in data[table]["units"].items():
            if unit not in expected[key]:
                raise doc.error(
                    RulePackError,
                    f"'{unit}' does not belong to a pack in {data['units']} units",
                    (table, "units", key), allowed=list(expected[key]),
                )


def _retired(doc: Any) -> dict[str, dict[str, Retired]]:
    return {coll: {eid: Retired(coll, eid, r["reason"], r["pack"], r["where"])
                   for eid, r in entries.items()}
            for coll, entries in getattr(doc, "retired", {}).items()}


def _natural(doc: Any, data: dict[str, Any]) -> NaturalVentilationRules | None:
    """The ``natural_ventilation`` table: fractions and ratios, the same in I-P and SI; an
    opening arrangement listed twice is a pack error."""
    nv = data.get("natural_ventilation")
    if nv is None:
        return None
    seen: dict[str, int] = {}
    for i, row in enumerate(nv["depth"]):
        if row["arrangement"] in seen:
            raise doc.error(
                RulePackError, f"{row['arrangement']} openings are given a depth limit twice "
                f"(first at index {seen[row['arrangement']]})",
                ("natural_ventilation", "depth", i, "arrangement"),
                hint="give each opening arrangement one row")
        seen[row["arrangement"]] = i

    def cited(raw: dict[str, Any], value: float) -> CitedValue:
        return CitedValue(value=float(value), source=_source(raw["source"], data),
                          provenance=raw["provenance"], notes=raw.get("notes", ""))

    area = nv["openable_area"]
    return NaturalVentilationRules(
        openable_fraction=cited(area, area["fraction"]),
        depth_ratio={row["arrangement"]: cited(row, row["ratio"]) for row in nv["depth"]})


def _supplement(doc: Any) -> RulePack:
    """A supplement pack: requirements only (its selectors' space types are the rates pack's)."""
    data = doc.data
    whole = Source(data["document"], data["edition"])
    lineage = getattr(doc, "lineage", (data["id"],))
    return RulePack(
        id=data["id"], title=data["title"], document=data["document"], edition=data["edition"],
        units=data["units"], jurisdiction=data.get("jurisdiction"),
        effective=data.get("effective"), provenance=data["provenance"],
        verify=bool(data.get("verify", True)), cautions=tuple(data.get("cautions", [])),
        equations={}, occupancy_source=whole, occupancy_provenance=data["provenance"],
        categories={}, air_distribution_source=whole,
        air_distribution_provenance=data["provenance"], configurations={},
        default_configuration=None, default_method=None, methods={}, checks={}, file=doc.file,
        document_positions=doc, lineage=tuple(lineage),
        requirements=build_requirements(doc, data, data["units"], None, None, {}, {}),
        role="supplement")


def build(doc: Any) -> RulePack:
    """Build the typed pack from a schema-valid document (options resolved), checking references."""
    data = doc.data
    if data.get("role") == "supplement":
        return _supplement(doc)
    system = data["units"]
    _check_declared_units(doc, data)
    _unique(doc, data["checks"], ("checks",))
    equations = {
        key: Equation(key=key, form=e["form"],
                      source=Source(e.get("document", data["document"]),
                                    e.get("edition", data["edition"]), section=e["section"]),
                      provenance=e.get("provenance", data["provenance"]))
        for key, e in data.get("equations", {}).items()
    }
    checks = {
        c["id"]: Check(id=c["id"], severity=c["severity"], title=c["title"],
                       source=_source(c["source"], data))
        for c in data["checks"]
    }
    categories = _categories(doc, data, system)
    configurations = _configurations(doc, data, system)
    retired = _retired(doc)
    has_ev = "ventilation_efficiency" in data
    lineage = getattr(doc, "lineage", (data["id"],))
    return RulePack(
        id=data["id"], title=data["title"], document=data["document"], edition=data["edition"],
        units=system, jurisdiction=data.get("jurisdiction"), effective=data.get("effective"),
        provenance=data["provenance"], verify=bool(data.get("verify", True)),
        cautions=tuple(data.get("cautions", [])), equations=equations,
        occupancy_source=_source(data["occupancy"]["source"], data),
        occupancy_provenance=data["occupancy"]["provenance"],
        categories=categories,
        air_distribution_source=_source(data["air_distribution"]["source"], data),
        air_distribution_provenance=data["air_distribution"]["provenance"],
        configurations=configurations,
        default_configuration=data["air_distribution"].get("default"),
        default_method=data["ventilation_efficiency"]["default"] if has_ev else None,
        methods=_methods(doc, data) if has_ev else {}, checks=checks, file=doc.file,
        document_positions=doc, extends=lineage[1] if len(lineage) > 1 else None,
        lineage=tuple(lineage), retired=retired,
        requirements=build_requirements(doc, data, system, categories, configurations, checks,
                                        retired),
        natural_ventilation=_natural(doc, data),
        exhaust=_exhaust(doc, data, system),
    )
