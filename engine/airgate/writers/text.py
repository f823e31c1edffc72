"""The terminal report: a reviewer's summary per system, then the findings, then the cautions."""

from __future__ import annotations

import math
import re

from airgate import __version__, formatting, units
from airgate.formatting import count
from airgate.evaluation.findings import DECLARED, Amount
from airgate.escaping import terminal
from airgate.evaluation.report import Report, SystemResult
from airgate.writers import shared

WIDTH = 100


def clean(text: object) -> str:
    """Input text made safe for a terminal: control, bidirectional and separator characters
    shown as escapes (``\\x1b``, ``\\u202e``; :func:`airgate.escaping.terminal`)."""
    return terminal(text)


def review_lines(statuses) -> list[str]:
    """The reviewer's record: each comment, its response and what its finding is now."""
    if not statuses:
        return []
    out = [shared.review_title(statuses)]
    for s in statuses:
        ref, subject, rule, status, reviewer, day, comment, response, now = map(
            clean, shared.comment_cells(s))
        out += [f"    {ref}  {subject}  {rule}  [{status}]  {reviewer}, {day}",
                f"        comment : {comment}", f"        response: {response}",
                f"        now     : {now}"]
    return out + [""]


def _num(trail, symbol: str, system: str) -> str:
    if symbol not in trail:
        return "–"
    s = trail[symbol]
    return formatting.number(units.to_display(s.value, s.kind, system), s.kind)


def _table(rows: list[list[str]], right: set[int]) -> list[str]:
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    out = []
    for r in rows:
        cells = [c.rjust(w) if i in right else c.ljust(w)
                 for i, (c, w) in enumerate(zip(r, widths))]
        out.append("    " + "  ".join(cells).rstrip())
    return out


def _zone_rows(s: SystemResult, system: str) -> list[str]:
    a, q = units.label("area", system), units.label("airflow", system)
    head = ["zone", "space", f"Az {a}", "Pz", f"Vbz {q}", "Ez", f"Voz {q}"]
    multi = s.kind == "multiple-zone" and any("Vpz" in z.trail for z in s.zones)
    if multi:
        head += [f"Vpz {q}", "Zpz", "Evz"]
    natural = s.kind == "natural"
    if natural:
        ln = units.label("length", system)
        head += [f"open min {a}", f"open {a}", f"depth max {ln}", f"depth {ln}", "verdict"]
    else:
        head += [f"gets {q}", "verdict"]
    rows = [head]
    for z in s.zones:
        t = z.trail
        pz = _num(t, "Pz", system) + ("*" if t["Pz"].origin != "schedule" else "")
        row = [clean(z.id), clean(z.space), _num(t, "Az", system), pz, _num(t, "Vbz", system),
               formatting.number(t.value('Ez'), "fraction"), _num(t, "Voz", system)]
        if multi:
            crit = "◂" if s.critical_zone == z.id else ""
            row += [_num(t, "Vpz", system), _num(t, "Zpz", system), _num(t, "Evz", system) + crit]
        if natural:
            row += [_num(t, sym, system) for sym in ("A_open_min", "A_open", "depth_max", "depth")]
        else:
            row.append(_num(t, "Voz_delivered", system))
        row.append(z.verdict.upper() if z.verdict == "fail" else z.verdict)
        rows.append(row)
    return _table(rows, right=set(range(2, len(head) - 1)))


def _system(s: SystemResult, system: str, amounts: dict[str, str]) -> list[str]:
    t = s.trail
    title = f"{clean(s.id)}" + (f" “{clean(s.name)}”" if s.name else "")
    kind = shared.kind_label(s) + (f", {s.method} Ev" if s.method else "")
    lines = [f"■ {title} — {kind} — {s.verdict.upper()}"]
    if s.kind == "multiple-zone":
        q = units.label("airflow", system)
        parts = [f"Ps {_num(t, 'Ps', system)}", f"ΣPz {_num(t, 'ΣPz', system)}",
                 f"D {_num(t, 'D', system)}",
                 f"Vou {_num(t, 'Vou', system)} {q}"]
        if "Vps" in t:
            parts += [f"Vps {_num(t, 'Vps', system)} {q}", f"Xs {_num(t, 'Xs', system)}"]
        parts.append(f"Ev {_num(t, 'Ev', system)}" + (f" (critical zone {clean(s.critical_zone)})"
                                               if s.critical_zone else ""))
        lines.append("    " + " · ".join(parts))
    if not s.supplies:  # an exhaust fan: its zones' exhaust only
        lines.append(f"    exhaust: {shared.fan_line(s, system)}")
        return lines + _exhaust_rows(s, system)
    if "Vot" not in t:
        lines.append("    no outdoor-air intake: natural ventilation through openings; openable area "
                     "and depth checked per zone (Voz for reference)")
        lines.append("")
        lines += _zone_rows(s, system)
        return lines
    required, provided = t.value("Vot"), t.value("Vot_design")
    iaqp = s.procedure == "iaqp"
    what = "outdoor-air intake" + (" (IAQ procedure: least intake meeting every design limit)"
                                   if iaqp else "")
    if math.isinf(required):
        lines.append(f"    {what}: no intake suffices "
                     f"({'no intake meets every design limit' if iaqp else 'Ev ≤ 0'}) · scheduled "
                     f"{formatting.amount(provided, 'airflow', system)}")
    else:
        lines.append(
            f"    {what}: required Vot {formatting.amount(required, 'airflow', system)}"
            f" · scheduled {formatting.amount(provided, 'airflow', system)}"
            f" · margin {shared.margin(Amount(required, 'airflow'), Amount(provided, 'airflow'), system)}")
    if iaqp:
        lines.append("    the rate procedure's Vot_vrp "
                     f"{formatting.amount(t.value('Vot_vrp'), 'airflow', system)} and the zones' "
                     "Voz below are for reference only: they do not apply on this path")
    lines += _condition_rows(s, system)
    lines.append("")
    lines += _zone_rows(s, system)
    lines += _exhaust_rows(s, system)
    lines += _dilution_rows(s, system)
    lines += _contaminant_rows(s, system, amounts)
    lines += _pack_rows(s, system)
    return lines


def _pack_rows(s: SystemResult, system: str) -> list[str]:
    """What supplement packs computed on the zones (their equivalent clean airflow)."""
    out: list[str] = []
    for pid, head, rows in shared.pack_tables(s, system):
        out += ["", f"    {clean(pid)}: equivalent clean airflow of the credited mechanisms"]
        out += _table([head, *([clean(r[0]), *r[1:]] for r in rows)], right={1, 2, 3, 4})
    return out


def _condition_rows(s: SystemResult, system: str) -> list[str]:
    """The design conditions, the governing one marked (nothing for a system without any)."""
    rows = shared.condition_rows(s, system)
    if not rows:
        return []
    q = units.label("airflow", system)
    head = ["", "condition", f"Vot {q}", f"scheduled {q}", "Ev", "critical zone", "margin",
            "verdict"]
    body = [[shared.GOVERNS_MARK if governs else "", *(clean(c) for c in cells[:-1]),
             cells[-1].upper() if cells[-1] == "fail" else cells[-1]] for governs, cells in rows]
    return ["", f"    design conditions ({len(rows)}): {clean(s.condition)} governs"] + [
        "  " + line for line in _table([head, *body], right={2, 3, 4})]


def _exhaust_rows(s: SystemResult, system: str) -> list[str]:
    rows = shared.exhaust_rows(s, system)
    if not rows:
        return []
    head = ["zone", "exhaust category", "Ne", "required Ve", "scheduled", "margin", "makeup"]
    return (["", "    exhaust (minimum exhaust rates; Ne: fixtures counted)"]
            + _table([head] + [[clean(c) for c in r] for r in rows], right={2, 3, 4, 5}))


def _contaminant_rows(s: SystemResult, system: str, amounts: dict[str, str]) -> list[str]:
    ids = sorted({cid for z in s.zones for cid in z.contaminants})
    out: list[str] = []
    q = units.label("airflow", system)
    for cid in ids:
        per_m3 = f"{clean(amounts.get(cid, 'amount'))}/m³"
        head = ["zone", f"C_ss {per_m3}", f"clean air {q}", "per person", "eq. ACH", "peak", "24h avg"]
        symbols = ["C_ss", "Qc", "Qc_pp", "ACHe", "C_peak", "C_twa"]
        design = any("C_bz" in z.contaminants[cid] for z in s.zones if cid in z.contaminants)
        if design:  # a design compound of the IAQ procedure
            head += [f"C_bz {per_m3}", f"limit {per_m3}"]
            symbols += ["C_bz", "C_limit"]
            if s.kind != "multiple-zone":
                head.append(f"least Q_oa {q}")
                symbols.append("Q_oa_min")
        rows = [head]
        for z in s.zones:
            t = z.contaminants.get(cid)
            if t is None:
                continue
            rows.append([clean(z.id)] + [_num(t, x, system) for x in symbols])
        out += ["", f"    {clean(cid)} (well-mixed steady state; clean air = outdoor air + "
                    "filtration + air cleaners + deposition + inactivation"
                    + ("; design compound: C_bz in the breathing zone against its design limit"
                       if design else "") + ")"]
        out += _table(rows, right=set(range(1, len(head))))
    return out


def _dilution_rows(s: SystemResult, system: str) -> list[str]:
    zones = [z for z in s.zones if z.dilution is not None]
    if not zones:
        return []
    q = units.label("airflow", system)
    head = ["zone", f"Q_oa {q}", "ACH", "CO2 ppm", "Δ ppm", "τ min", "99 % min", "DCV ppm",
            "P_max", "peak ppm", "24h avg"]
    rows = [head]
    for z in zones:
        t = z.dilution
        excess = _num(t, "C_excess", system) if "C_excess" in t else "unbounded"
        rows.append([clean(z.id), _num(t, "Q_oa", system), _num(t, "ACH", system),
                     _num(t, "C_ss", system), excess]
                    + [_num(t, x, system) for x in
                       ("tau", "t99", "C_dcv", "P_max", "C_peak", "C_twa")])
    c_out = formatting.number(zones[0].dilution.value("C_out"), "concentration_ppm")
    coupled = ("; zones coupled through the return air, so Q_oa is the CO2-equivalent "
               "outdoor airflow" if s.kind == "multiple-zone" else "")
    out = ["", f"    CO2 from occupants (outdoor {c_out} ppm; well-mixed steady state at design "
               f"occupancy{coupled})"]
    return out + _table(rows, right=set(range(1, len(head))))


def _findings(report: Report, findings: list, label: str | None = None) -> list[str]:
    """Each finding: severity (or ``label``), subject, rule; message; where and source."""
    out = []
    for f in findings:
        out.append(f"  {label or f.severity.upper():<8}{clean(f.subject)}  "
                   f"[{clean(shared.rule_label(report, f.pack, f.rule))}]"
                   + ("  WAIVED" if f.waived else ""))
        out.append(f"      {clean(f.message)}")
        out.append(f"      at {clean(f.location)} · {clean(f.source)}")
        if f.waiver is not None:
            out.append(f"      {clean(shared.waived_line(f.waiver))}")
    return out


def _declared(report: Report) -> list[str]:
    """The limits the schedule declares for itself: after the code findings, never a verdict."""
    if not any(c.basis == DECLARED for c in report.cases) and not report.declared_findings:
        return []
    out = [f"{shared.DECLARED_HEADING} — {shared.declared_summary(report)}",
           f"    ({shared.DECLARED_NOTE})"]
    out += _findings(report, report.declared_findings, "MISSED")
    return out + [""]


def _waivers(report: Report) -> list[str]:
    if not report.waivers:
        return []
    day = f" (expiry judged on {report.waiver_date})" if report.waiver_date else ""
    out = [f"Waivers{day}"]
    for s in report.waivers:
        out.append(f"  {shared.STATE_LABEL[s.state]:<10}{clean(shared.status_line(s))}")
    return out + [""]


def render(report: Report, gate: str | None = None) -> str:
    system = report.units
    pack = report.pack
    out = [
        f"airgate {__version__} — ventilation review",
        f"schedule : {clean(report.schedule_file)} — {clean(report.project_name)} ({system} units)",
        f"rule pack: {pack.id} — {pack.title}",
    ]
    if pack.lineage and len(pack.lineage) > 1:
        out.append("           layers: " + " → ".join(pack.lineage))
    if pack.jurisdiction or pack.effective:
        out.append("           " + " · ".join(x for x in (
            f"jurisdiction {clean(pack.jurisdiction)}" if pack.jurisdiction else "",
            f"effective {clean(pack.effective)}" if pack.effective else "") if x))
    if pack.chosen:
        out.append("           options: " + ", ".join(f"{k} = {v}" for k, v in
                                                      sorted(pack.chosen.items())))
    if pack.verify:
        out.append("           table values partly entered from memory: verify against the "
                   "adopted edition")
    out += [f"also     : {clean(line)}" for line in shared.supplement_lines(report)]
    out += [f"note     : {n}" for n in report.notes]
    out.append("")
    for s in report.systems:
        out += _system(s, system, report.contaminant_units)
        out.append("")
    zones = [z for s in report.systems if s.supplies for z in s.zones]
    if any(z.trail["Pz"].origin != "schedule" for z in zones):
        out.append("    * Pz not stated in the schedule: default density × Az (or 0 where the "
                   "table gives no density)")
    out.append(f"    gets: outdoor air the zone receives at the scheduled intake (Voz_delivered; "
               "see the zone's trail for how)")
    if any(s.conditions for s in report.systems):
        out.append("    " + shared.GOVERNS_NOTE)
    if any(s.critical_zone for s in report.systems):
        out.append("    ◂ critical zone (lowest Evz; for the table method, largest Zpz)")
    out.append("")
    c = report.counts()
    waived = report.waived_count()
    out.append(f"Findings — {c['fail']} fail, {count(c['warning'], 'warning')}, {c['info']} info"
               + (f", {waived} waived" if waived else ""))
    if not report.code_findings:
        out.append("    none")
    out += _findings(report, report.code_findings)
    out.append("")
    out += _declared(report)
    out += _waivers(report)
    out += review_lines(report.review)
    failing = sum(1 for s in report.systems if s.verdict == "fail")
    out.append(f"Result: {report.verdict.upper()} — {failing} of "
               f"{count(len(report.systems), 'system')} fail; {c['fail']} failing, {c['warning']} warning, {c['info']} info findings.")
    if gate:
        out.append(gate)
    out.append("")
    out.append("Cautions")
    out += [f"  - {x}" for x in report.cautions]
    return "\n".join(out) + "\n"
