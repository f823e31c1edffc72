"""Text listings of rule packs for ``airgate rules list`` and ``airgate rules show``."""

from __future__ import annotations

from airgate.models.rules import RulePack, SimplifiedEv, TableEv


def pack_summary(pack: RulePack) -> str:
    u = pack.units
    rp, ra, dens = (("cfm/person", "cfm/ft²", "/1000 ft²") if u == "IP"
                    else ("L/s·person", "L/s·m²", "/100 m²"))
    out = [
        f"{pack.id} — {pack.title}",
        f"  document  {pack.document}, {pack.edition} edition",
        f"  units     {u}" + (f"   jurisdiction {pack.jurisdiction}" if pack.jurisdiction else ""),
        f"  status    {pack.provenance}" + ("; verify against the adopted edition" if pack.verify
                                              else ""),
        f"  file      {pack.file}",
        "",
        f"Occupancy categories ({pack.occupancy_source.table})",
        f"  {'id':44} {'Rp ' + rp:>16} {'Ra ' + ra:>13} {'density ' + dens:>18} class  provenance",
    ]
    for c in pack.categories.values():
        d = c.printed.get("density")
        out.append(f"  {c.id:44} {c.printed['Rp']:>16g} {c.printed['Ra']:>13g} "
                   f"{'–' if d is None else format(d, 'g'):>18} {c.air_class:>5}  {c.provenance}")
    out += ["", f"Air distribution ({pack.air_distribution_source.table})"]
    for r in pack.configurations.values():
        default = "  (default)" if r.id == pack.default_configuration else ""
        out.append(f"  {r.id:48} Ez {r.ez:.1f}  {r.provenance}{default}")
    out += ["", f"Ventilation efficiency methods (default: {pack.default_method})"]
    for name, m in pack.methods.items():
        extra = ""
        if isinstance(m, SimplifiedEv):
            extra = (f": Ev = {m.slope}·D + {m.intercept} for D < {m.breakpoint}, "
                     f"else {m.above_breakpoint}")
        elif isinstance(m, TableEv):
            extra = ": " + ", ".join(f"≤{z:g} → {e:g}" for z, e in m.rows)
        out.append(f"  {name}{extra}  [{m.source.cite()}; {m.provenance}]")
    out += ["", "Checks"]
    for c in pack.checks.values():
        out.append(f"  {c.id:34} {c.severity:8} {c.title}")
    return "\n".join(out) + "\n"
