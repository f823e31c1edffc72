"""Text listings of rule packs for ``airgate rules list`` and ``airgate rules show``."""

from __future__ import annotations

from typing import Any

from airgate.escaping import lines
from airgate.models.requirements import Selector
from airgate.models.rules import EXHAUST_PER, RulePack, SimplifiedEv, TableEv
from airgate.readers.options import is_choice


#: closing line of every listing of a pack's content
GOVERN = ("A rule pack is a reading of the code, not the code: the adopted local code and the "
          "licensed professional of record govern.")


def choice_text(value: Any) -> str:
    """A value that depends on options, compactly: ``category: I 10 · II 7 · III 4``."""
    if not is_choice(value):
        return "–" if value is None else format(value, "g") if isinstance(value, (int, float)) else str(value)
    parts = []
    for key, v in value["values"].items():
        parts.append(f"{key} ({choice_text(v)})" if is_choice(v) else f"{key} {choice_text(v)}")
    return f"by {value['choose']}: " + " · ".join(parts)


class _Legend:
    """Option-dependent cells of a table, shown as [a], [b] … with their values listed below."""

    def __init__(self) -> None:
        self.items: list[tuple[str, str]] = []

    def cell(self, value: Any) -> str:
        if not is_choice(value):
            return choice_text(value)
        text = choice_text(value)
        for mark, known in self.items:
            if known == text:
                return mark
        mark = f"[{chr(ord('a') + len(self.items))}]"
        self.items.append((mark, text))
        return mark


def _header(pack: RulePack) -> list[str]:
    u = pack.units
    out = [
        f"{pack.id} — {pack.title}",
        f"  document  {pack.document}, {pack.edition} edition",
        f"  units     {u}" + (f"   jurisdiction {pack.jurisdiction}" if pack.jurisdiction else "")
        + (f"   effective {pack.effective}" if pack.effective else ""),
    ]
    if pack.extends:
        out.append(f"  extends   {' → '.join(pack.lineage[1:])}")
    out += [
        f"  status    {pack.provenance}" + ("; verify against the adopted edition" if pack.verify
                                              else ""),
        f"  file      {pack.file}",
    ]
    return out


def _options(pack: RulePack, chosen: bool) -> list[str]:
    if not pack.options:
        return []
    out = ["", "Options (the schedule chooses them under project.options)"]
    for o in pack.options.values():
        value = pack.chosen.get(o.name) if chosen else None
        state = f"= {value}" if value else (f"default {o.default}" if o.default else "required")
        out.append(f"  {o.name:12} {', '.join(o.values):28} {state:14} {o.label}")
    if not chosen:
        out.append("  values marked [a], [b] … depend on the options (listed under the table); "
                   "give --option NAME=VALUE to show one choice")
    return out


_VALUE_NAMES = {"Rp": "Rp", "Ra": "Ra", "density": "density", "air_class": "class"}


def _categories(pack: RulePack, raw_rows: dict[str, dict], chosen: bool) -> list[str]:
    u = pack.units
    rp, ra, dens = (("cfm/person", "cfm/ft²", "/1000 ft²") if u == "IP"
                    else ("L/s·person", "L/s·m²", "/100 m²"))
    legend = _Legend()
    out = [
        "", f"Occupancy categories ({pack.occupancy_source.table or pack.occupancy_source.section})",
        f"  {'id':44} {'Rp ' + rp:>16} {'Ra ' + ra:>13} {'density ' + dens:>18} class  provenance",
    ]
    for c in pack.categories.values():
        raw = raw_rows.get(c.id, {})
        cells = [legend.cell(raw.get(k)) if not chosen and is_choice(raw.get(k)) else
                 choice_text(c.printed.get(k)) for k in ("Rp", "Ra", "density")]
        if c.default_occupants == "bedrooms-plus-one":
            cells[2] = (f"max(Nbr, {c.minimum_bedrooms}) + 1" if c.minimum_bedrooms
                        else "Nbr + 1")
        amended = " (amended: " + ", ".join(sorted(c.cited)) + ")" if c.cited else ""
        mixed = sorted({k: p for k, p in c.value_provenance.items() if p != c.provenance}.items())
        own = "".join(f"; {_VALUE_NAMES[k]} {p}" for k, p in mixed)
        out.append(f"  {c.id:44} {cells[0]:>16} {cells[1]:>13} {cells[2]:>18} {c.air_class:>5}  "
                   f"{c.provenance}{own}{amended}")
    out += [f"  {mark} {text}" for mark, text in legend.items]
    return out


def _selector_text(sel: Selector) -> str:
    parts = []
    for name in ("space", "group", "zone", "system", "system_kind", "air_class",
                 "air_distribution"):
        values = getattr(sel, name)
        if values is not None:
            parts.append(f"{name} in {', '.join(str(v) for v in sorted(values, key=str))}")
    if sel.recirculating is not None:
        parts.append("recirculating" if sel.recirculating else "not recirculating")
    parts += [f"({_selector_text(s)})" for s in sel.all]
    if sel.any is not None:
        parts.append("any of (" + "; ".join(_selector_text(s) for s in sel.any) + ")")
    if sel.not_ is not None:
        parts.append(f"not ({_selector_text(sel.not_)})")
    if sel.serves is not None:
        parts.append(f"serves ({_selector_text(sel.serves)})")
    return " and ".join(parts) or "every subject"


def _requirements(pack: RulePack, raw: list[dict]) -> list[str]:
    if not pack.requirements:
        return []
    by_id = {r["id"]: r for r in raw}
    out = ["", "Requirements"]
    for r in pack.requirements.values():
        data = by_id.get(r.id, {})
        params = ", ".join(f"{k} {choice_text(data.get(k, v))}" for k, v in r.printed.items())
        if r.formula is not None:
            op = "≥" if r.formula.compare == "at-least" else "≤"
            params = f"{r.formula.provided_text} {op} {r.formula.required_text}"
            for name, p in data.get("params", {}).items():
                params += f"; {name} = {choice_text(p['value'])} ({p['quantity']})"
        if r.kind == "larger-of":
            params += f" at {r.at}" + (", instead of the sum" if r.instead_of_sum else "")
        if r.credit:
            params += "; credited: " + ", ".join(r.credit)
        out.append(f"  {r.id:34} {r.kind:16} {r.severity:8} {r.subject}: {_selector_text(r.selector)}")
        out.append(f"      {params}")
        out.append(f"      {r.message}  [{r.cite()}]")
    return out


def _exhaust(pack: RulePack) -> list[str]:
    if not pack.exhaust:
        return []
    area, unit = ("cfm/ft²", "cfm") if pack.units == "IP" else ("L/s·m²", "L/s")
    first = next(iter(pack.exhaust.values())).source
    out = ["", f"Minimum exhaust rates ({', '.join(p for p in (first.table, first.section) if p)})"]
    for r in pack.exhaust.values():
        per = (area if r.per_area else "1/h (air changes of the zone's volume)"
               if r.per_volume else f"{unit} per {EXHAUST_PER[r.per]}")
        rates = " / ".join(f"{v:g}" for v in r.printed.values())
        cols = "" if "rate" in r.printed else " (continuous / intermittent)"
        mixed = sorted({k: p for k, p in r.value_provenance.items() if p != r.provenance}.items())
        own = "".join(f"; {_VALUE_NAMES.get(k, k)} {p}" for k, p in mixed)
        out.append(f"  {r.id:40} {rates} {per}{cols}  class {r.air_class}  {r.provenance}{own}")
    return out


def _retired(pack: RulePack) -> list[str]:
    if not pack.retired:
        return []
    out = ["", "Retired entries"]
    for collection, entries in pack.retired.items():
        for r in entries.values():
            out.append(f"  {collection}: {r.id} — {r.reason} ({r.pack}, {r.where})")
    return out


def pack_summary(pack: RulePack, doc: Any = None) -> str:
    """``rules show``: header, options, tables, methods, checks, requirements, retirements.

    ``doc`` (the unresolved pack document) is given when the options were not chosen: cells that
    depend on them are then shown by option.
    """
    chosen = doc is None
    data = doc.data if doc is not None else pack.document_positions.data \
        if pack.document_positions is not None else {}
    raw_rows = {r["id"]: r for r in data.get("occupancy", {}).get("categories", [])}
    if pack.role == "supplement":  # requirements only, checked beside a rates pack
        out = _header(pack) + ["", "Supplement pack: no rate procedure of its own; checked beside "
                               "the rates pack a schedule lists first (its selectors name that "
                               "pack's space types)"]
        out += _requirements(pack, data.get("requirements", []))
        out += ["", GOVERN, "", provenance_line(pack.value_provenance_counts())]
        return lines(out)
    out = _header(pack) + _options(pack, chosen) + _categories(pack, raw_rows, chosen)
    out += ["", f"Air distribution ({pack.air_distribution_source.table or pack.air_distribution_source.section})"]
    for r in pack.configurations.values():
        default = "  (default)" if r.id == pack.default_configuration else ""
        out.append(f"  {r.id:48} Ez {r.ez:.1f}  {r.provenance}{default}")
    if pack.methods:
        out += ["", f"Ventilation efficiency methods (default: {pack.default_method})"]
    else:
        out += ["", "Ventilation efficiency methods: none (no procedure for multiple-zone systems)"]
    for name, m in pack.methods.items():
        extra = ""
        if isinstance(m, SimplifiedEv):
            extra = (f": Ev = {m.slope}·D + {m.intercept} for D < {m.breakpoint}, "
                     f"else {m.above_breakpoint}")
        elif isinstance(m, TableEv):
            extra = ": " + ", ".join(f"≤{z:g} → {e:g}" for z, e in m.rows) + (
                f", above: {m.above_last}")
        out.append(f"  {name}{extra}  [{m.source.cite()}; {m.provenance}]")
    out += _natural(pack)
    out += ["", "Checks"]
    for c in pack.checks.values():
        out.append(f"  {c.id:34} {c.severity:8} {c.title}")
    out += _exhaust(pack)
    out += _requirements(pack, data.get("requirements", [])) + _retired(pack)
    out += ["", GOVERN, "", provenance_line(pack.value_provenance_counts())]
    return lines(out)


def _natural(pack) -> list[str]:
    """The natural ventilation procedure's limits, where the pack has them."""
    nv = pack.natural_ventilation
    if nv is None:
        return []
    area = nv.openable_fraction
    out = ["", "Natural ventilation",
           f"  openable area ≥ {area.value:g} × net occupiable floor area  "
           f"[{area.source.cite()}; {area.provenance}]"]
    for arrangement, v in nv.depth_ratio.items():
        out.append(f"  {arrangement} openings: depth ≤ {v.value:g} × ceiling height  "
                   f"[{v.source.cite()}; {v.provenance}]")
    return out


def provenance_line(counts: dict[str, int]) -> str:
    """The closing count of a pack's table values by provenance."""
    total = sum(counts.values())
    parts = ", ".join(f"{n} {p}" for p, n in counts.items())
    return f"Values by provenance: {parts} (of {total})" if total else "Values by provenance: none"


def pack_list(rows: list[tuple[str, str, str, str, str]]) -> str:
    """``rules list``: id, units, what it extends, title, where it was found."""
    out = []
    for pack_id, units, extends, title, where in rows:
        ext = f" (extends {extends})" if extends else ""
        out.append(f"{pack_id:36} {units}  {title}{ext}{where}")
    return lines(out)
