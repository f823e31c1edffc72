"""JUnit XML: one document for the run, one test suite per schedule, one test case per check.

Every check that applied to a subject is a test case, passes included (evaluation/coverage.py).
A case fails when it has a finding at or above the run's ``--fail-on`` severity that is not
waived (a limit the schedule declares for itself, classname ``STEM.declared``, only under
``--fail-on declared``); its ``<failure>`` says required vs provided, the margin, the source and
where in the schedule. A waived finding is a ``<skipped>`` case with the waiver's reason.
Waivers themselves are cases too (a stale waiver fails under ``--fail-on warning``). A reviewer's
record (``--review``) is in the suite's properties and ``<system-out>``, and each comment in the
text of the case of its check and subject. The document
uses only the elements and attributes common to JUnit consumers (testsuites, testsuite,
properties, testcase, failure, skipped, system-out); it has no timestamps or durations, so it is
deterministic.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from pathlib import PurePath

from airgate import __version__
from airgate.escaping import invisible
from airgate.evaluation.batch import Batch
from airgate.evaluation.coverage import CheckCase
from airgate.evaluation.findings import DECLARED
from airgate.evaluation.report import Report
from airgate.evaluation.waivers import WaiverStatus
from airgate.writers import shared

#: characters XML 1.0 cannot hold even escaped (and lone surrogates, which UTF-8 cannot encode)
_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")


def xml_text(value: object) -> str:
    """Text safe to put in an XML document (ElementTree escapes the markup characters);
    bidirectional controls shown as ``\\u202e`` (:func:`airgate.escaping.invisible`)."""
    return invisible(_NOT_XML.sub("\ufffd", str(value)))


def _el(parent: ET.Element, tag: str, text: str | None = None, **attrs: object) -> ET.Element:
    e = ET.SubElement(parent, tag, {k: xml_text(v) for k, v in attrs.items()})
    if text is not None:
        e.text = xml_text(text)
    return e


def _failing(case: CheckCase, fail_on: tuple[str, ...]) -> bool:
    """A live ``fail`` (of a declared limit only under ``--fail-on declared``), or a live
    warning under ``--fail-on warning``."""
    if case.basis == DECLARED:
        return case.status == "fail" and "declared" in fail_on
    return case.status == "fail" or (case.status == "warning" and "warning" in fail_on)


def _comment_line(s) -> str:
    """A comment of the reviewer's record on one line: reference, subject, check, status,
    reviewer and date, and what its finding is now."""
    ref, subject, rule, status, reviewer, day, _, _, now = shared.comment_cells(s)
    return f"{ref} {subject} {rule} [{status}] {reviewer}, {day}: {now}"


def _review_lines(statuses) -> list[str]:
    """The reviewer's record in full: each comment, its response and its finding now."""
    out = [shared.review_title(statuses)]
    for s in statuses:
        *_, comment, response, _ = shared.comment_cells(s)
        out += [_comment_line(s), f"  comment: {comment}", f"  response: {response}"]
    return out


def _finding_lines(report: Report, case: CheckCase) -> list[str]:
    u = report.units
    # the outcome first, then what the check looks for: a check titled by what it finds
    # ("The occupancy category requires no outdoor air") must not read as found when it passed
    outcome = "pass, nothing found" if case.status == "pass" else case.status
    rule = shared.rule_label(report, case.pack, case.rule)
    out = [f"{case.subject} — {rule}: {outcome}",
           f"check: {shared.check_title(report, case.rule, case.pack)}"]
    for f in case.findings:
        out.append(f"{f.severity}{' (waived)' if f.waived else ''}: {f.message}")
        if f.waiver is not None:
            out.append(shared.waived_line(f.waiver))
    if case.required is not None or case.provided is not None:
        out.append(f"required: {shared.amount(case.required, u)}")
        out.append(f"provided: {shared.amount(case.provided, u)}")
        out.append(f"margin: {shared.margin(case.required, case.provided, u)}")
    own = next((f.source for f in case.findings if f.declared), None)
    out.append(f"source: {own or shared.check_source(report, case.rule, case.pack)}")
    out.append(f"at: {case.location}")
    for s in report.review:  # the reviewer's comments on this check and subject
        c = s.entry.comment
        if (c.rule, c.subject) == (case.rule, case.subject):
            out.append(f"review {c.id or '–'} [{c.status}] {c.reviewer}, {c.date.isoformat()}: "
                       f"{c.comment}" + (f" Response: {c.response}" if c.response else ""))
    return out


def _case(suite: ET.Element, report: Report, case: CheckCase, classname: str,
          fail_on: tuple[str, ...]) -> str:
    tc = _el(suite, "testcase", name=f"{case.subject} {shared.rule_label(report, case.pack, case.rule)}",
             classname=classname)
    lines = _finding_lines(report, case)
    if _failing(case, fail_on):
        first = next(f for f in case.findings if not f.waived and f.severity in ("fail", "warning"))
        _el(tc, "failure", "\n".join(lines), message=first.message, type=case.rule)
        return "failure"
    if case.status == "waived":
        mark = next(f.waiver for f in case.findings if f.waiver is not None)
        _el(tc, "skipped", message=shared.waived_line(mark))
        _el(tc, "system-out", "\n".join(lines))
        return "skipped"
    _el(tc, "system-out", "\n".join(lines))
    return "pass"


def _waiver_case(suite: ET.Element, s: WaiverStatus, classname: str,
                 fail_on: tuple[str, ...]) -> str:
    w = s.entry.waiver
    tc = _el(suite, "testcase", name=f"waiver {shared.waiver_subject(w)} {w.rule}", classname=classname)
    line = shared.status_line(s)
    if s.stale and "warning" in fail_on:
        _el(tc, "failure", line, message=f"waiver {s.state}: {s.detail}",
            type=f"waiver-{s.state}")
        return "failure"
    _el(tc, "system-out", f"{shared.STATE_LABEL[s.state]}: {line}")
    return "pass"


def _properties(suite: ET.Element, items: list[tuple[str, str]]) -> None:
    props = _el(suite, "properties")
    for name, value in items:
        _el(props, "property", name=name, value=value)


def _finish(suite: ET.Element, outcomes: list[str]) -> tuple[int, int, int]:
    tests, failures, skipped = len(outcomes), outcomes.count("failure"), outcomes.count("skipped")
    suite.set("tests", str(tests))
    suite.set("failures", str(failures))
    suite.set("errors", "0")
    suite.set("skipped", str(skipped))
    return tests, failures, skipped


def _suite(root: ET.Element, report: Report, fail_on: tuple[str, ...]) -> tuple[int, int, int]:
    suite = _el(root, "testsuite", name=f"{report.schedule_file} — {report.project_name}")
    _properties(suite, [("schedule", report.schedule_file), ("project", report.project_name),
                        ("rule_pack", report.pack.id), ("units", report.units),
                        ("verdict", report.verdict), ("fail_on", ",".join(fail_on))]
                + ([("waivers_judged_on", report.waiver_date)] if report.waiver_date else [])
                + [("caution", c) for c in report.cautions]
                + ([("review", shared.review_title(report.review))] if report.review else [])
                + [("review_comment", _comment_line(s)) for s in report.review])
    stem = PurePath(report.schedule_file).stem
    code = [c for c in report.cases if c.basis != DECLARED]
    declared = [c for c in report.cases if c.basis == DECLARED]  # own class, after the code
    outcomes = [_case(suite, report, c, f"{stem}.{c.system}", fail_on) for c in code]
    outcomes += [_case(suite, report, c, f"{stem}.declared", fail_on) for c in declared]
    outcomes += [_waiver_case(suite, s, f"{stem}.waivers", fail_on) for s in report.waivers]
    if report.review:
        _el(suite, "system-out", "\n".join(_review_lines(report.review)))
    return _finish(suite, outcomes)


def render(batch: Batch) -> str:
    """The JUnit XML document of the run (UTF-8, indented, final newline)."""
    root = ET.Element("testsuites", {"name": f"airgate {__version__} ventilation checks"})
    totals = [_suite(root, r, batch.fail_on) for r in batch.reports]
    if batch.waivers:
        suite = _el(root, "testsuite", name="waivers file")
        _properties(suite, [("caution", c) for c in batch.cautions()[:1]])
        outcomes = [_waiver_case(suite, s, "waivers", batch.fail_on) for s in batch.waivers]
        totals.append(_finish(suite, outcomes))
    for i, key in enumerate(("tests", "failures", "skipped")):
        root.set(key, str(sum(t[i] for t in totals)))
    root.set("errors", "0")
    ET.indent(root, space="  ")
    return ('<?xml version="1.0" encoding="UTF-8"?>\n'
            + ET.tostring(root, encoding="unicode") + "\n")
