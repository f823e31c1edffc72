"""SARIF 2.1.0: the run's findings as code-scanning results on the lines of the schedules.

One log with one run for all schedules of a ``check``. Rules are the checks the rule packs run,
with help text and citation. Each finding is a result located by file, line and column; its
``partialFingerprints`` come from rule and subject only, so a result keeps its identity when the
schedule's lines move. A waived finding carries a suppression (``inSource`` for a schedule's own
waiver, ``external`` for a waivers file) with the reason as justification. Stale waivers are
tool notifications. A reviewer's record (``--review``) is in each schedule's run properties, and
each comment in the properties of the results of its check and subject. A limit the schedule declares for itself is a result with
``properties.basis`` ``declared``, after every code result, at level ``warning`` (``error`` under
``--fail-on declared``). No timestamps or random ids: the log is deterministic.
"""

from __future__ import annotations

import hashlib
import itertools
import re
from collections.abc import Iterator
from pathlib import PurePath
from typing import Any
from urllib.parse import quote

from airgate import __version__
from airgate.evaluation.batch import Batch
from airgate.evaluation.checks import DECLARED_CHECKS
from airgate.evaluation.findings import Finding, Location
from airgate.evaluation.report import SAFETY_CAUTION, Report
from airgate.evaluation.waivers import SCHEDULE, WaiverStatus
from airgate.writers import shared
from airgate.writers.output import Lazy, Streamed, json_chunks, json_text

SCHEMA_URI = "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json"
LEVEL = {"fail": "error", "warning": "warning", "info": "note"}
FINGERPRINT = "airgateRuleSubject/v1"
_LONE_SURROGATE = re.compile("[\ud800-\udfff]")

NOTIFICATIONS = [
    {"id": "waiver-expired", "name": "WaiverExpired",
     "shortDescription": {"text": "A waiver is past its expiry date and no longer applies."},
     "defaultConfiguration": {"level": "warning"}},
    {"id": "waiver-unmatched", "name": "WaiverUnmatched",
     "shortDescription": {"text": "A waiver matches no finding; withdraw or correct it."},
     "defaultConfiguration": {"level": "warning"}},
]


def _s(text: object) -> str:
    return _LONE_SURROGATE.sub("\ufffd", str(text))


def uri(path: str) -> str:
    """A schedule path as a URI reference: relative paths stay relative, with '/' separators."""
    p = PurePath(path)
    if p.is_absolute():
        return "file://" + quote(p.as_posix())
    return quote(p.as_posix())


def fingerprint(rule: str, subject: str, condition: str | None = None) -> str:
    """The result's identity across runs: rule and subject, and the design condition where the
    system lists conditions (the same check may fail at several)."""
    key = f"{rule}\x1f{subject}" + ("" if condition is None else f"\x1f{condition}")
    return hashlib.sha256(key.encode("utf-8", "replace")).hexdigest()[:32]


def _physical(loc: Location, artifacts: dict[str, int]) -> dict[str, Any]:
    out: dict[str, Any] = {"artifactLocation": {"uri": uri(loc.file),
                                                "index": artifacts[loc.file]}}
    if loc.line is not None and loc.line >= 1:
        region: dict[str, Any] = {"startLine": loc.line}
        if loc.column is not None and loc.column >= 1:
            region["startColumn"] = loc.column
        out["region"] = region
    return out


def _rules(batch: Batch) -> list[dict[str, Any]]:
    """Every check and requirement of the packs of the run, in pack order (packs in the order
    of first use), citations of all packs; each pack is read once however many schedules
    use it."""
    seen: dict[str, dict[str, Any]] = {}
    packs = {id(p): p for r in batch.reports for p in r.packs}
    for pack in packs.values():
        for check in shared.pack_rules(pack).values():
            rule = seen.get(check.id)
            cite = f"{pack.id}: {check.source}"
            if rule is None:
                seen[check.id] = rule = {
                    "id": check.id, "title": check.title, "level": LEVEL[check.severity],
                    "citations": [], "verifies": check.verifies}
            if cite not in rule["citations"]:
                rule["citations"].append(cite)
    for check_id, verifies in DECLARED_CHECKS.items():  # limits the schedules declare, after
        if any(c.rule == check_id for r in batch.reports for c in r.cases) or any(
                f.rule == check_id for r in batch.reports for f in r.findings):
            seen[check_id] = {"id": check_id, "title": f"Declared limit: {verifies}",
                              "level": _declared_level(batch), "verifies": verifies,
                              "citations": ["the limit the schedule declares (not a "
                                            "requirement of any rule pack)"],
                              "tags": ["declared"]}
    return [_rule(r) for r in seen.values()]


def _declared_level(batch: Batch) -> str:
    """A declared limit missed is an error only under ``--fail-on declared``."""
    return "error" if batch.fails_on("declared") else "warning"


def _rule(r: dict[str, Any]) -> dict[str, Any]:
    cites = "; ".join(r["citations"])
    text = (f"{r['title']}. Verifies: {r['verifies']}. Source: {cites}. {SAFETY_CAUTION}")
    md = (f"**{r['title']}**\n\nVerifies: {r['verifies']}.\n\nSource: {cites}.\n\n"
          f"_{SAFETY_CAUTION}_")
    return {
        "id": r["id"],
        "name": "".join(part.capitalize() for part in r["id"].split("-")),
        "shortDescription": {"text": _s(r["title"])},
        "fullDescription": {"text": _s(f"{r['verifies']} ({cites})")},
        "help": {"text": _s(text), "markdown": _s(md)},
        "defaultConfiguration": {"level": r["level"]},
        "properties": {"citation": [_s(c) for c in r["citations"]],
                       "tags": ["ventilation", "airgate", *r.get("tags", [])]},
    }


def _suppression(f: Finding, artifacts: dict[str, int]) -> dict[str, Any]:
    w = f.waiver
    return {"kind": "inSource" if w.origin == SCHEDULE else "external", "status": "accepted",
            "justification": _s(f"{w.reason} ({shared.approval(w)})"),
            "location": {"physicalLocation": _physical(w.location, artifacts)}}


def _result(report: Report, f: Finding, rule_index: dict[str, int],
            artifacts: dict[str, int], declared_level: str) -> dict[str, Any]:
    u = report.units
    text = f.message
    if f.required is not None or f.provided is not None:
        text += (f". Required {shared.amount(f.required, u)}, provided "
                 f"{shared.amount(f.provided, u)}, margin "
                 f"{shared.margin(f.required, f.provided, u)}")
    text += f". Source: {f.source}."
    logical = {"name": _s(f.zone or f.system or f.subject), "fullyQualifiedName": _s(f.subject),
               "kind": "object"}
    out: dict[str, Any] = {
        "ruleId": f.rule, "ruleIndex": rule_index[f.rule],
        "level": declared_level if f.declared else LEVEL[f.severity],
        "message": {"text": _s(text)},
        "locations": [{"physicalLocation": _physical(f.location, artifacts),
                       "logicalLocations": [logical]}],
        "partialFingerprints": {FINGERPRINT: fingerprint(f.rule, f.subject, f.condition)},
        "suppressions": [_suppression(f, artifacts)] if f.waiver is not None else [],
        "properties": {"subject": _s(f.subject), "severity": f.severity, "basis": f.basis,
                       "required": shared.amount(f.required, u),
                       "provided": shared.amount(f.provided, u), "source": _s(f.source),
                       "rulePack": report.pack_of(f),
                       **({} if f.condition is None else {"condition": _s(f.condition)}),
                       **_result_review(report, f)},
    }
    return out


def _comment(s) -> dict[str, Any]:
    """One comment of the reviewer's record, as written."""
    c = s.entry.comment
    return {"id": c.id, "subject": _s(c.subject), "rule": _s(c.rule), "status": c.status,
            "reviewer": _s(c.reviewer), "date": c.date.isoformat(), "comment": _s(c.comment),
            "response": None if c.response is None else _s(c.response)}


def _result_review(report: Report, f: Finding) -> dict[str, Any]:
    """``review``: the reviewer's comments on the result's check and subject, where any."""
    on = [_comment(s) for s in report.review
          if (s.entry.comment.rule, s.entry.comment.subject) == (f.rule, f.subject)]
    return {"review": on} if on else {}


def _review(report: Report, artifacts: dict[str, int]) -> dict[str, Any]:
    """``review``: every comment of the schedule's reviewer's record, where it is written and
    what its finding is now (nothing without a record)."""
    if not report.review:
        return {}
    return {"review": [
        {**_comment(s),
         "location": {"physicalLocation": _physical(s.entry.location, artifacts)},
         "finding": None if s.finding is None else {"severity": s.finding.severity,
                                                    "waived": s.finding.waived},
         "state": _s(s.state), "toClose": s.to_close} for s in report.review]}


def _notification(s: WaiverStatus, artifacts: dict[str, int]) -> dict[str, Any]:
    w = s.entry.waiver
    return {"descriptor": {"id": f"waiver-{s.state}"}, "level": "warning",
            "message": {"text": _s(f"waiver for {w.rule} on {shared.waiver_subject(w)}: {s.detail}")},
            "locations": [{"physicalLocation": _physical(s.entry.location, artifacts)}]}


def _artifacts(batch: Batch) -> list[str]:
    """Every file a location points at: the schedules, then waivers files, then reviewer's
    records, each once."""
    files = [r.schedule_file for r in batch.reports]
    for status in [s for r in batch.reports for s in r.waivers] + batch.waivers:
        files.append(status.entry.location.file)
    files += [s.entry.location.file for r in batch.reports for s in r.review]
    return list(dict.fromkeys(files))


def to_dict(batch: Batch) -> dict[str, Any]:
    """The SARIF log as plain data."""
    return _log(batch, lazy=False)


def _log(batch: Batch, lazy: bool) -> dict[str, Any]:
    """The log; ``lazy``: each result is made while it is written (output.Lazy), so memory
    holds a few dozen results at a time however many findings the run has."""
    rules = _rules(batch)
    rule_index = {r["id"]: i for i, r in enumerate(rules)}
    files = _artifacts(batch)
    artifacts = {f: i for i, f in enumerate(files)}
    level = _declared_level(batch)
    results = itertools.chain(
        (_result(r, f, rule_index, artifacts, level) for r in batch.reports
         for f in r.code_findings),
        (_result(r, f, rule_index, artifacts, level) for r in batch.reports
         for f in r.declared_findings))  # the declared limits after every code finding
    stale = batch.stale_waivers()
    obj = Streamed if lazy else dict
    run = obj({
        "tool": {"driver": {
            "name": "airgate", "version": __version__, "semanticVersion": __version__,
            "fullName": f"airgate {__version__} ventilation schedule checker",
            "rules": rules, "notifications": NOTIFICATIONS}},
        "invocations": [{
            "executionSuccessful": True,
            "toolExecutionNotifications": [_notification(s, artifacts) for s in stale]}],
        "artifacts": [{"location": {"uri": uri(f)}} for f in files],
        "columnKind": "unicodeCodePoints",
        "results": Lazy(results) if lazy else list(results),
        "properties": {
            "schedules": [{"file": _s(r.schedule_file), "project": _s(r.project_name),
                           "rulePack": r.pack.id, "units": r.units, "verdict": r.verdict,
                           "waiversJudgedOn": r.waiver_date, **_review(r, artifacts)}
                          for r in batch.reports],
            "verdict": batch.verdict,
            **({"gate": {"failOn": list(batch.fail_on), "outcome": batch.gate}}
               if batch.gate_beyond_verdict else {}),
            "cautions": [_s(c) for c in batch.cautions()]},
    })
    return obj({"$schema": SCHEMA_URI, "version": "2.1.0",
                "runs": Lazy([run]) if lazy else [run]})


def render(batch: Batch) -> str:
    """The SARIF log (UTF-8 JSON, 2-space indent, final newline)."""
    return json_text(to_dict(batch))


def chunks(batch: Batch) -> Iterator[str]:
    """:func:`render` piece by piece, each result made as it is written."""
    return json_chunks(_log(batch, lazy=True))
