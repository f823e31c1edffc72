"""Build a pack's ``requirements:`` into typed :class:`~airgate.models.requirements.Requirement`.

Everything a requirement refers to must exist: the space types, groups and air-distribution rows
of its selector, the names of its formulas; a parameter of another kind, or a selector term that
does not fit its subject, is refused. Each problem is a pack error at the file, line and field.
"""

from __future__ import annotations

from typing import Any

from airgate import units
from airgate.errors import Path_, RulePackError, nearest
from airgate.models import formula as fx
from airgate.models.requirements import (
    KINDS, SYSTEM_SYMBOLS, ZONE_SYMBOLS, Formula, Requirement, Selector,
)
from airgate.models.rules import AirDistributionRow, OccupancyCategory, Source

_COMMON = frozenset({"id", "kind", "severity", "message", "source", "provenance", "applies_to",
                     "missing"})
_ZONE_TERMS = ("space", "group", "zone", "air_class", "air_distribution")


class _Refs:
    """What a selector may name, for the cross-reference checks."""

    def __init__(self, categories: dict[str, OccupancyCategory] | None,
                 configurations: dict[str, AirDistributionRow] | None, retired: dict) -> None:
        #: None (a supplement pack, which has no tables): checked against the rates pack beside
        #: it when a schedule is evaluated (airgate.evaluation.supplements)
        self.spaces = categories
        self.groups = None if categories is None else sorted({c.group for c in categories.values()})
        self.rows = configurations
        self.retired = retired

    def check(self, doc: Any, what: str, ids: list, known, collection: str, path: Path_) -> None:
        if known is None:
            return
        for k, value in enumerate(ids):
            if value in known:
                continue
            gone = self.retired.get(collection, {}).get(value)
            close = nearest(value, known)
            message = f"unknown {what} '{value}'"
            if gone is not None:
                message += f"; it was {gone.text()}"
            elif close:
                message += f"; did you mean {', '.join(repr(c) for c in close)}?"
            raise doc.error(RulePackError, message, path + (k,),
                            allowed=sorted(known) if len(known) <= 20 else None)


def _selector(doc: Any, raw: dict[str, Any], path: Path_, subject: str, refs: _Refs) -> Selector:
    for term in _ZONE_TERMS:
        if subject == "system" and term in raw:
            raise doc.error(RulePackError, f"'{term}' selects zones, but this requirement applies "
                            "to systems", path + (term,),
                            hint=f"write serves: {{{term}: [...]}} for systems that serve such "
                                 "zones")
    if subject == "zone" and "serves" in raw:
        raise doc.error(RulePackError, "'serves' selects systems, but this requirement applies to "
                        "zones", path + ("serves",), hint="select the zones directly")
    if "space" in raw:
        refs.check(doc, "space type", raw["space"], refs.spaces, "occupancy", path + ("space",))
    if "group" in raw:
        refs.check(doc, "group", raw["group"], refs.groups, "", path + ("group",))
    if "air_distribution" in raw:
        refs.check(doc, "air distribution row", raw["air_distribution"], refs.rows,
                   "air_distribution", path + ("air_distribution",))
    sets = {name: frozenset(raw[name]) for name in
            ("space", "group", "zone", "system", "system_kind", "air_class", "air_distribution")
            if name in raw}
    return Selector(
        **sets, recirculating=raw.get("recirculating"),
        all=tuple(_selector(doc, s, path + ("all", k), subject, refs)
                  for k, s in enumerate(raw.get("all", []))),
        any=None if "any" not in raw else tuple(
            _selector(doc, s, path + ("any", k), subject, refs) for k, s in enumerate(raw["any"])),
        not_=None if "not" not in raw else _selector(doc, raw["not"], path + ("not",), subject,
                                                     refs),
        serves=None if "serves" not in raw else _selector(doc, raw["serves"], path + ("serves",),
                                                          "zone", refs),
    )


def _formula(doc: Any, r: dict[str, Any], path: Path_, system: str, subject: str) -> Formula:
    symbols = ZONE_SYMBOLS if subject == "zone" else SYSTEM_SYMBOLS
    params: dict[str, tuple[float, str]] = {}
    for name, p in r.get("params", {}).items():
        if name in symbols:
            raise doc.error(RulePackError, f"parameter '{name}' has the name of a trail symbol",
                            path + ("params", name), hint="give the parameter another name")
        params[name] = (units.to_internal(float(p["value"]), p["quantity"], system), p["quantity"])
    kinds = {**symbols, **{n: k for n, (_, k) in params.items()}}
    trees = {}
    for side in ("required", "provided"):
        try:
            trees[side] = fx.parse(r[side])
            fx.check_dimensions(trees[side], kinds, r["quantity"])
        except fx.FormulaError as exc:
            where = f" (at column {exc.column})" if exc.column else ""
            raise doc.error(RulePackError, f"{side} formula {r[side]!r}: {exc.message}{where}",
                            path + (side,), allowed=sorted(kinds)) from None
    return Formula(required=trees["required"], provided=trees["provided"],
                   required_text=r["required"], provided_text=r["provided"], compare=r["compare"],
                   quantity=r["quantity"], params=params)


def build_requirements(doc: Any, data: dict[str, Any], system: str,
                       categories: dict[str, OccupancyCategory] | None,
                       configurations: dict[str, AirDistributionRow] | None, checks: dict,
                       retired: dict) -> dict[str, Requirement]:
    """The pack's requirements, checked against the tables they refer to (a supplement pack's
    tables, ``None``, are the rates pack's: checked when a schedule is evaluated)."""
    refs = _Refs(categories, configurations, retired)
    out: dict[str, Requirement] = {}
    for i, r in enumerate(data.get("requirements", [])):
        path = ("requirements", i)
        rid, kind = r["id"], r["kind"]
        if rid in out or rid in checks:
            what = "another requirement" if rid in out else "a check of the pack"
            raise doc.error(RulePackError, f"requirement id '{rid}' is already used by {what}",
                            path + ("id",), hint="findings are named by rule id: give it its own")
        spec = KINDS.get(kind)
        if spec is None:  # the schema refuses it too; never fall through to another kind
            raise doc.error(RulePackError, f"unknown requirement kind '{kind}'", path + ("kind",),
                            allowed=sorted(KINDS))
        for key in r:
            if key not in _COMMON and key not in spec.params:
                raise doc.error(RulePackError, f"'{key}' does not apply to a requirement of kind "
                                f"'{kind}'", path + (key,), allowed=sorted(spec.params))
        subject = spec.subject or r["subject"]
        selector = _selector(doc, r.get("applies_to", {}), path + ("applies_to",), subject, refs)
        params: dict[str, float] = {}
        printed: dict[str, Any] = {}
        for key, quantity in spec.numbers.items():
            if key in r:
                printed[key] = r[key]
                params[key] = (units.to_internal(float(r[key]), quantity, system)
                               if quantity else float(r[key]))
        src = r["source"]
        out[rid] = Requirement(
            id=rid, kind=kind, subject=subject, severity=r["severity"],
            missing=r.get("missing", "warning"), message=r["message"],
            source=Source(src.get("document", data["document"]), src.get("edition", data["edition"]),
                          src.get("table", ""), src.get("section", "")),
            provenance=r["provenance"], selector=selector, params=params, printed=printed,
            at=r.get("at", "Voz"), instead_of_sum=bool(r.get("instead_of_sum", False)),
            only_when_mixed=bool(r.get("only_when_mixed", False)),
            credit=tuple(r.get("credit", ())),
            formula=_formula(doc, r, path, system, subject) if spec.formulas else None,
        )
    return out
