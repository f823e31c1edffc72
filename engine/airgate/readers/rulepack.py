"""Find, validate and load rule packs.

A pack is YAML validated against the published JSON Schema ``rule-pack.schema.json``; a pack that
breaks it stops the run (exit 2) with the pack file, line and field path — never warn-and-skip.
Table values are converted from the pack's declared unit system to internal units here.
"""

from __future__ import annotations

import json
import math
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import Any

import jsonschema

from airgate import units
from airgate.errors import RulePackError, nearest
from airgate.models.rules import (
    AirDistributionRow,
    Bound,
    Check,
    DetailedEv,
    Equation,
    OccupancyCategory,
    RulePack,
    SimplifiedEv,
    Source,
    TableEv,
)
from airgate.readers.document import Document, load

PACK_SUFFIXES = (".yaml", ".yml", ".json")


def builtin_rules_dir() -> Path:
    """The built-in ``rules/`` folder: inside an installed wheel, else the source checkout's."""
    packaged = resources.files("airgate").joinpath("_rules")
    if packaged.is_dir():
        return Path(str(packaged))
    return Path(__file__).resolve().parents[3] / "rules"


@lru_cache(maxsize=1)
def pack_schema() -> dict[str, Any]:
    """The published rule-pack JSON Schema (draft 2020-12)."""
    path = builtin_rules_dir() / "schema" / "rule-pack.schema.json"
    return json.loads(path.read_text(encoding="utf-8"))


def builtin_pack_ids() -> list[str]:
    """Ids of the built-in packs (their file names without suffix), sorted."""
    return sorted(p.stem for p in builtin_rules_dir().glob("*.yaml"))


def resolve(ref: str, base: Path | None = None) -> Path:
    """Turn a pack id or a path (relative to ``base``) into a pack file path."""
    candidate = Path(ref)
    if candidate.suffix.lower() in PACK_SUFFIXES or "/" in ref or "\\" in ref:
        if not candidate.is_absolute() and base is not None:
            candidate = base / candidate
        return candidate
    path = builtin_rules_dir() / f"{ref}.yaml"
    if not path.is_file():
        ids = builtin_pack_ids()
        close = nearest(ref, ids)
        raise RulePackError(
            f"unknown rule pack '{ref}'" + (f"; did you mean {', '.join(close)}?" if close else ""),
            allowed=ids, hint="give a built-in pack id (airgate rules list) or a path to a pack file",
        )
    return path


def load_pack(ref: str, base: Path | None = None) -> RulePack:
    """Load and validate the pack named by id or path (cached while the file is unchanged)."""
    path = resolve(ref, base)
    try:
        stat = path.stat()
        key = (str(path.resolve()), stat.st_mtime_ns, stat.st_size)
    except OSError:
        key = None  # let the loader report the problem with its usual message
    if key is not None and key in _CACHE:
        return _CACHE[key]
    doc = load(path, RulePackError)
    validate_document(doc)
    pack = build(doc)
    if key is not None:
        _CACHE[key] = pack
    return pack


#: loaded packs by (file, mtime, size); packs are read-only once built
_CACHE: dict[tuple[str, int, int], RulePack] = {}


def _non_finite(data: Any, path: tuple = ()) -> tuple | None:
    """The path of the first NaN or infinite number (JSON Schema lets them pass), or None."""
    if isinstance(data, float) and not math.isfinite(data):
        return path
    items = data.items() if isinstance(data, dict) else (
        enumerate(data) if isinstance(data, list) else ())
    for key, value in items:
        found = _non_finite(value, path + (key,))
        if found is not None:
            return found
    return None


def validate_document(doc: Document) -> None:
    """Check a pack document against the JSON Schema; raise on the most relevant error."""
    bad = _non_finite(doc.data)
    if bad is not None:
        raise doc.error(RulePackError, "must be a finite number, got "
                        f"{_get(doc.data, bad)!r}", bad, hint="give the table value as a number")
    validator = jsonschema.Draft202012Validator(pack_schema())
    error = jsonschema.exceptions.best_match(validator.iter_errors(doc.data))
    if error is None:
        return
    path = tuple(error.absolute_path)
    message = error.message
    allowed: list[str] = []
    if error.validator == "additionalProperties":
        known = sorted(error.schema.get("properties", {}))
        extra = [k for k in error.instance if k not in known] if isinstance(error.instance, dict) else []
        if extra:
            path = path + (extra[0],)
            close = nearest(extra[0], known)
            message = f"unknown field '{extra[0]}'" + (f"; did you mean '{close[0]}'?" if close else "")
            allowed = known
    elif error.validator == "enum":
        allowed = [json.dumps(v) for v in error.validator_value]
    raise doc.error(RulePackError, message, path, allowed=allowed)


def _get(data: Any, path: tuple) -> Any:
    for part in path:
        data = data[part]
    return data


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


def _unique(doc: Document, items: list[dict[str, Any]], path: tuple) -> None:
    seen: dict[str, int] = {}
    for i, item in enumerate(items):
        if item["id"] in seen:
            raise doc.error(
                RulePackError, f"duplicate id '{item['id']}' (first at index {seen[item['id']]})",
                path + (i, "id"), hint="give every entry its own id",
            )
        seen[item["id"]] = i


def _categories(doc: Document, data: dict[str, Any], system: str) -> dict[str, OccupancyCategory]:
    occ = data["occupancy"]
    table_source = _source(occ["source"], data)
    _unique(doc, occ["categories"], ("occupancy", "categories"))
    out = {}
    for row in occ["categories"]:
        density = row["density"]
        out[row["id"]] = OccupancyCategory(
            id=row["id"], label=row["label"], group=row["group"],
            rp=units.to_internal(row["Rp"], "airflow_per_person", system),
            ra=units.to_internal(row["Ra"], "airflow_per_area", system),
            density=None if density is None else units.to_internal(density, "density", system),
            air_class=row["air_class"],
            provenance=row.get("provenance", occ["provenance"]),
            source=_source(row.get("source"), data, table_source),
            notes=row.get("notes", ""),
            printed={"Rp": row["Rp"], "Ra": row["Ra"], "density": density},
        )
    return out


_BOUND_KINDS = {
    "temperature_difference": "temperature_difference",
    "jet_velocity": "velocity",
    "throw_velocity": "velocity",
}


def _configurations(doc: Document, data: dict[str, Any], system: str) -> dict[str, AirDistributionRow]:
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


def _methods(doc: Document, data: dict[str, Any]) -> dict[str, Any]:
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
    "IP": {"Rp": "cfm/person", "Ra": "cfm/ft2", "density": "people/1000 ft2",
           "temperature_difference": "delta_degF", "jet_velocity": "fpm", "throw_velocity": "fpm"},
    "SI": {"Rp": "L/s/person", "Ra": "L/s/m2", "density": "people/100 m2",
           "temperature_difference": "K", "jet_velocity": "m/s", "throw_velocity": "m/s"},
}


def _check_declared_units(doc: Document, data: dict[str, Any]) -> None:
    """Table unit declarations must agree with the pack's unit system (no silent mixing)."""
    expected = _DECLARED_UNITS[data["units"]]
    for table in ("occupancy", "air_distribution"):
        for key, unit in data[table]["units"].items():
            if unit != expected[key]:
                raise doc.error(
                    RulePackError,
                    f"'{unit}' does not belong to a pack in {data['units']} units",
                    (table, "units", key), allowed=[expected[key]],
                )


def build(doc: Document) -> RulePack:
    """Build the typed pack from a schema-valid document, checking cross-references."""
    data = doc.data
    system = data["units"]
    _check_declared_units(doc, data)
    _unique(doc, data["checks"], ("checks",))
    equations = {
        key: Equation(key=key, form=e["form"],
                      source=Source(data["document"], data["edition"], section=e["section"]),
                      provenance=e.get("provenance", data["provenance"]))
        for key, e in data.get("equations", {}).items()
    }
    checks = {
        c["id"]: Check(id=c["id"], severity=c["severity"], title=c["title"],
                       source=_source(c["source"], data))
        for c in data["checks"]
    }
    return RulePack(
        id=data["id"], title=data["title"], document=data["document"], edition=data["edition"],
        units=system, jurisdiction=data.get("jurisdiction"), effective=data.get("effective"),
        provenance=data["provenance"], verify=bool(data.get("verify", True)),
        cautions=tuple(data.get("cautions", [])), equations=equations,
        occupancy_source=_source(data["occupancy"]["source"], data),
        occupancy_provenance=data["occupancy"]["provenance"],
        categories=_categories(doc, data, system),
        air_distribution_source=_source(data["air_distribution"]["source"], data),
        air_distribution_provenance=data["air_distribution"]["provenance"],
        configurations=_configurations(doc, data, system),
        default_configuration=data["air_distribution"].get("default"),
        default_method=data["ventilation_efficiency"]["default"],
        methods=_methods(doc, data), checks=checks, file=doc.file, document_positions=doc,
    )
