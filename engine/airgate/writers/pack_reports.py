"""Reports about rule packs: ``rules diff`` (text, Markdown and JSON) and ``rules test`` (text)."""

from __future__ import annotations

import json
from typing import Any

from airgate.api.packdiff import Change, PackDiff
from airgate.api.packtests import PackResult
from airgate.escaping import lines
from airgate.formatting import count
from airgate.writers.packs import GOVERN

DIFF_VERSION = 1
_KEY_FIELDS = ("label", "Rp", "Ra", "density", "air_class", "ez", "severity", "kind", "form")


def _value(v: Any, limit: int = 200) -> str:
    text = json.dumps(v, ensure_ascii=False)
    return text if len(text) <= limit else text[: limit - 3] + "..."


def _change(c: Change) -> str:
    if c.field == "cautions":  # a list of texts: each one added or removed
        return f"caution {'removed' if c.new is None else 'added'}: {_value(c.old or c.new)}"
    return f"{c.field}: {_value(c.old)} → {_value(c.new)}"


def _summary(entry: Any) -> str:
    if not isinstance(entry, dict):
        return ""
    parts = [f"{k} {_value(entry[k], 70)}" for k in _KEY_FIELDS if k in entry]
    return ": " + ", ".join(parts) if parts else ""


def _side(doc: Any) -> str:
    d = doc.data
    extra = f"; extends {doc.extends}" if doc.extends else ""
    return f"{doc.file}  ({d.get('document')}, {d.get('edition')} edition, {d.get('units')}{extra})"


def diff_text(d: PackDiff) -> str:
    out = [f"rule pack diff: {d.old.pack_id} → {d.new.pack_id}",
           f"  from  {_side(d.old)}", f"  to    {_side(d.new)}"]
    out += [f"  note: {n}" for n in d.notes]
    if d.pack:
        out += ["", "pack"] + [f"  ~ {_change(c)}" for c in d.pack]
    for s in d.sections:
        if s.empty:
            continue
        out += ["", f"{s.title}: {len(s.added)} added, {len(s.removed)} removed, "
                    f"{len(s.changed)} changed"]
        out += [f"  + {key}{_summary(entry)}" for key, entry in s.added]
        out += [f"  - {key}" + (f" (retired: {why})" if why else "") for key, why in s.removed]
        for key, changes in s.changed:
            out.append(f"  ~ {key}  " + "; ".join(_change(c) for c in changes))
    c = d.counts()
    out += ["", f"{c['added']} added, {c['removed']} removed, {c['changed']} changed"
                if any(c.values()) else "no differences", "", GOVERN]
    return lines(out)


def diff_markdown(d: PackDiff) -> str:
    """The diff as a reviewer's change list in Markdown: one table per section and operation."""
    from airgate.writers.markdown import md

    def cell(v: Any) -> str:
        if v is None:
            return ""
        text = v if isinstance(v, str) else _value(v)
        return md(text if len(text) <= 200 else text[:197] + "...")

    def summary(entry: Any) -> str:
        if not isinstance(entry, dict):
            return ""
        return ", ".join(f"{k} {cell(entry[k])}" for k in _KEY_FIELDS if k in entry)

    c = d.counts()
    out = [f"# Rule pack diff: {md(d.old.pack_id)} → {md(d.new.pack_id)}", "",
           "| | pack | document | edition | units | extends |", "|---|---|---|---|---|---|"]
    for label, doc in (("from", d.old), ("to", d.new)):
        data = doc.data
        out.append(f"| {label} | {md(doc.pack_id)} | {md(data.get('document'))} | "
                   f"{md(data.get('edition'))} | {md(data.get('units'))} | "
                   f"{md(doc.extends or '')} |")
    out += [""] + [f"> {md(n)}" for n in d.notes] + ([""] if d.notes else [])
    out.append(f"**{c['added']} added, {c['removed']} removed, {c['changed']} changed**"
               if any(c.values()) else "**No differences.**")
    if d.pack:
        out += ["", "## Pack", "", "| field | from | to |", "|---|---|---|"]
        out += [f"| {md(ch.field)} | {cell(ch.old)} | {cell(ch.new)} |" for ch in d.pack]
    for s in d.sections:
        if s.empty:
            continue
        out += ["", f"## {md(s.title[:1].upper() + s.title[1:])}", "",
                f"{len(s.added)} added, {len(s.removed)} removed, {len(s.changed)} changed"]
        if s.added:
            out += ["", "### Added", "", "| id | entry |", "|---|---|"]
            out += [f"| {md(k)} | {summary(e)} |" for k, e in s.added]
        if s.removed:
            out += ["", "### Removed", "", "| id | reason given |", "|---|---|"]
            out += [f"| {md(k)} | {md(why or '')} |" for k, why in s.removed]
        if s.changed:
            out += ["", "### Changed", "", "| id | field | from | to |", "|---|---|---|---|"]
            out += [f"| {md(k)} | {md(ch.field)} | {cell(ch.old)} | {cell(ch.new)} |"
                    for k, changes in s.changed for ch in changes]
    out += ["", md(GOVERN)]
    return lines(out)


def diff_json(d: PackDiff) -> dict[str, Any]:
    def side(doc: Any) -> dict[str, Any]:
        return {"id": doc.pack_id, "file": doc.file, "document": doc.data.get("document"),
                "edition": doc.data.get("edition"), "units": doc.data.get("units"),
                "extends": doc.extends}

    def ch(c: Change) -> dict[str, Any]:
        return {"field": c.field, "from": c.old, "to": c.new}

    return {
        "diff_version": DIFF_VERSION, "from": side(d.old), "to": side(d.new), "notes": d.notes,
        "pack": [ch(c) for c in d.pack],
        "sections": [{"name": s.name, "title": s.title,
                      "added": [{"id": k, "entry": e} for k, e in s.added],
                      "removed": [{"id": k, "retired": why} for k, why in s.removed],
                      "changed": [{"id": k, "fields": [ch(c) for c in cs]} for k, cs in s.changed]}
                     for s in d.sections],
        "summary": d.counts(),
        "cautions": [GOVERN],
    }


def tests_text(results: list[PackResult]) -> str:
    out: list[str] = []
    cases = sum(len(r.cases) for r in results)
    expectations = sum(c.expectations for r in results for c in r.cases)
    failed = 0
    for r in results:
        out.append(f"{r.pack}  ({r.file})")
        for c in r.cases:
            mark = "FAIL" if c.failures else "ok  "
            name = c.file.rsplit("/", 1)[-1]
            out.append(f"  {mark}  {name} — {c.title} ({count(c.expectations, 'expectation')})")
            out += [f"        {f}" for f in c.failures]
            failed += bool(c.failures)
        for p in r.problems:
            out.append(f"  FAIL  {p}")
        failed += len(r.problems)
    ok = all(r.ok for r in results)
    out += ["", f"Result: {'PASS' if ok else 'FAIL'} — {count(len(results), 'pack')}, "
                f"{count(cases, 'case')}, {count(expectations, 'expectation')}; {failed} failed"]
    return lines(out)
