"""``airgate explain``: the calculation trail of a zone or system, as a reviewer writes it by hand."""

from __future__ import annotations

from airgate import formatting, units
from airgate.evaluation.report import Report, SystemResult, ZoneResult
from airgate.evaluation.trail import Step, Trail
from airgate.writers import shared
from airgate.writers.text import clean

_ORIGIN = {
    "schedule": "from the schedule",
    "table": "from the rule pack",
    "assumed": "assumed",
    "system": "system value",
    "explicit": "stated in the schedule",
}


def _bare(step: Step, system: str) -> str:
    return formatting.number(units.to_display(step.value, step.kind, system), step.kind)


def _with_unit(step: Step, system: str) -> str:
    shown = _bare(step, system)
    unit = units.label(step.kind, system)
    return f"{shown} {unit}" if unit else shown


def trail_lines(trail: Trail, system: str, indent: str = "  ") -> list[str]:
    width = max((len(s.symbol) for s in trail.steps.values()), default=3)
    out = []
    for step in trail.steps.values():
        name = step.symbol.ljust(width)
        pad = indent + " " * width
        if step.formula:
            out.append(f"{indent}{name} = {step.symbolic()}")
            subst = trail.substituted(step, lambda s: _bare(s, system)).replace("·", " × ")
            if subst != step.symbolic():
                out.append(f"{pad} = {subst}")
            out.append(f"{pad} = {_with_unit(step, system)}")
        else:
            out.append(f"{indent}{name} = {_with_unit(step, system)}")
        why = [step.note or ("" if step.formula else _ORIGIN.get(step.origin, ""))]
        why = [w for w in why if w]
        if step.source:
            why.append(str(step.source))
        for w in why:
            out.append(f"{pad}   {clean(w)}")
    return out


def _findings(report: Report, subject_prefix: str, exact: bool,
              condition: str | None = None) -> list[str]:
    out = []
    for f in report.findings:
        mine = f.subject == subject_prefix or (not exact and f.subject.startswith(subject_prefix + "/"))
        if mine and f.condition in (None, condition):
            label = "MISSED (declared limit)" if f.declared else f.severity.upper()
            rule = clean(shared.rule_label(report, f.pack, f.rule))
            out.append(f"  {label} [{rule}] {clean(f.subject)}: {clean(f.message)}")
            out.append(f"      {f.source} · at {clean(f.location)}")
            if f.waiver is not None:
                out.append(f"      {clean(shared.waived_line(f.waiver))}")
    return out or ["  none"]


def _condition_line(report: Report, s: SystemResult) -> list[str]:
    """Which design condition is shown (nothing for a system without conditions)."""
    if s.condition is None:
        return []
    listed = report.system(s.id)
    governing = listed.condition if listed is not None else s.condition
    others = [c.id for c in (listed.conditions if listed else []) if c.id != s.condition]
    what = "the governing condition" if s.condition == governing else (
        f"not the governing condition ({clean(governing)} governs)")
    return [f"  at design condition {clean(s.condition)}: {what}"
            + (f"; also {', '.join(clean(o) for o in others)} (--condition ID)" if others else "")]


def zone(report: Report, s: SystemResult, z: ZoneResult) -> str:
    system = report.units
    head = f"Zone {clean(s.id)}/{clean(z.id)}" + (f" “{clean(z.name)}”" if z.name else "")
    out = [
        f"{head} — {clean(z.space)} ({z.space_label}) — {z.verdict.upper()}",
        f"  served by {clean(s.id)} ({s.kind}); written at {clean(z.location)}",
        f"  rule pack {report.pack.id} ({report.units} report units)",
        *(f"  also rule pack {s_.pack.id}" for s_ in report.supplements
          if s_.applies(s.id)),
        *_condition_line(report, s),
        "",
    ]
    out += trail_lines(z.trail, system)
    if z.dilution is not None:
        out += ["", "  CO2 from occupants (well-mixed mass balance)"]
        out += trail_lines(z.dilution, system)
    for cid, t in sorted(z.contaminants.items()):
        out += ["", f"  {clean(cid)} (well-mixed mass balance, every removal mechanism)"]
        out += trail_lines(t, system)
    for pid, t in sorted(z.packs.items()):
        out += ["", f"  rule pack {clean(pid)} (supplement pack)"]
        out += trail_lines(t, system)
    out += ["", "Findings"] + _findings(report, f"{s.id}/{z.id}", exact=True,
                                        condition=s.condition)
    out += ["", *[f"Caution: {c}" for c in report.cautions[:1]]]
    return "\n".join(out) + "\n"


def system_(report: Report, s: SystemResult) -> str:
    system = report.units
    head = f"System {clean(s.id)}" + (f" “{clean(s.name)}”" if s.name else "")
    out = [f"{head} — {s.kind}" + (f", {s.method} Ev" if s.method else "") +
           f" — {s.verdict.upper()}", f"  written at {clean(s.location)}",
           f"  rule pack {report.pack.id}", *_condition_line(report, s), ""]
    for z in s.zones:
        out.append(f"  Zone {clean(z.id)}" + (f" “{clean(z.name)}”" if z.name else "") +
                   f" — {clean(z.space)} — {z.verdict.upper()}")
        out += trail_lines(z.trail, system, indent="    ")
        out.append("")
    out.append(f"  System {clean(s.id)}")
    out += trail_lines(s.trail, system, indent="    ")
    out += ["", "Findings"] + _findings(report, s.id, exact=False, condition=s.condition)
    out += ["", *[f"Caution: {c}" for c in report.cautions[:1]]]
    return "\n".join(out) + "\n"
