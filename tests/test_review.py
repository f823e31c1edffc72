"""The reviewer's record (``--review FILE``, docs/review.md): comments on findings, validated with
located errors like waivers files, shown in the text, Markdown and HTML reports and carried into
``compare``, where a comment whose finding was resolved is flagged for closing.

Which findings exist is the engine's business (tested against ANSI/ASHRAE Standard 62.1-2019
elsewhere); here the expected state of each comment follows from the findings of the demo and of
the small schedules written below (Vot = 5·Pz + 0.06·Az for office space, Table 6-1, from memory).
"""

from __future__ import annotations

import json
import re
from html.parser import HTMLParser

import jsonschema
import pytest
import yaml

import airgate
from airgate.cli import main
from airgate.readers.rulepack import builtin_rules_dir

from conftest import DEMO, schedule

RECORD = DEMO.parent / "review" / "round-1.yaml"


def _single(intake: float) -> dict:
    return schedule([{"id": "S-1", "kind": "single-zone", "outdoor_air": f"{intake:g} cfm",
                      "zones": [{"id": "1", "space": "office-space", "area": "1000 ft2",
                                 "occupants": 10, "air_distribution": "ceiling-supply-cool"}]}])


def _write(path, data) -> str:
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    return str(path)


def _comment(**kw) -> dict:
    return {"subject": "S-1", "rule": "system-intake", "comment": "Intake short of Vot.",
            "reviewer": "Plan review (invented)", "date": "2026-11-20", **kw}


def test_the_demo_record_against_the_demo():
    report = airgate.check(DEMO, review=airgate.load_review(RECORD))
    got = {s.entry.comment.id: (s.finding is not None, s.to_close, s.state) for s in report.review}
    # AHU-3's intake and zone 203's Evz fail in the demo (its deliberate failure)
    assert got["PR-0412"][:2] == (True, False) and got["PR-0412"][2] == "fail finding reported"
    assert got["PR-0413"][:2] == (True, False)
    # the break room's air class raises no finding: closed, so nothing to close
    assert got["PR-0398"] == (False, False, "no finding reported")


@pytest.mark.parametrize("fmt", ["text", "markdown", "html"])
def test_reports_show_the_record(tmp_path, fmt):
    out = tmp_path / f"r.{fmt}"
    assert main(["check", str(DEMO), "--review", str(RECORD), "--format", fmt, "-o", str(out)]) == 1
    body = out.read_text(encoding="utf-8")
    assert "Reviewer's record — 3 comments" in body.replace("&#39;", "'")
    for needed in ("PR-0412", "PR-0398", "Class 1 confirmed by the owner", "2026-11-06",
                   "responded", "no finding reported"):
        assert needed in body.replace("&#39;", "'"), needed
    if fmt == "html":
        HTMLParser().feed(body)
        assert 'id="r1-review"' in body


def test_reports_without_a_record_show_none(tmp_path, capsys):
    for fmt in ("text", "markdown", "html"):
        main(["check", str(DEMO), "--format", fmt])
        assert "Reviewer's record" not in capsys.readouterr().out.replace("&#39;", "'")


def _demo_with_record(tmp_path, fmt: str, record=RECORD) -> str:
    out = tmp_path / f"r.{fmt}"
    assert main(["check", str(DEMO), "--review", str(record), "--format", fmt,
                 "-o", str(out)]) == 1
    return out.read_text(encoding="utf-8")


def test_the_json_report_carries_the_record(tmp_path):
    data = json.loads(_demo_with_record(tmp_path, "json"))
    schema = json.loads((builtin_rules_dir() / "schema" / "report.schema.json")
                        .read_text(encoding="utf-8"))
    jsonschema.validate(data, schema)
    got = [(c["id"], c["status"], c["finding"], c["to_close"]) for c in data["review"]]
    # AHU-3's intake and zone 203's Evz fail in the demo; the break room raises no finding
    assert got == [("PR-0412", "responded", {"severity": "fail", "waived": False}, False),
                   ("PR-0413", "open", {"severity": "fail", "waived": False}, False),
                   ("PR-0398", "closed", None, False)]
    first = data["review"][0]
    assert first["response"].startswith("Terminal 203 minimum to be raised")
    assert first["location"] == {"file": str(RECORD), "line": 7, "column": 5}
    assert list(data).index("review") == list(data).index("waivers_judged_on") + 1
    # the schema holds the contract: a comment's status is one of the three
    first["status"] = "pending"
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(data, schema)


def test_a_record_without_comments_leaves_the_json_report_as_it_was(tmp_path, capsys):
    empty = _write(tmp_path / "empty.yaml", {"comments": []})
    assert main(["check", str(DEMO), "--format", "json"]) == 1
    plain = capsys.readouterr().out
    assert main(["check", str(DEMO), "--format", "json", "--review", empty]) == 1
    assert capsys.readouterr().out == plain and '"review"' not in plain


def test_junit_carries_the_record_in_properties_and_system_out(tmp_path):
    import xml.etree.ElementTree as ET

    [suite] = ET.fromstring(_demo_with_record(tmp_path, "junit")).findall("testsuite")
    props = [(p.get("name"), p.get("value")) for p in suite.find("properties")]
    assert ("review", "Reviewer's record — 3 comments") in props
    comments = [v for name, v in props if name == "review_comment"]
    assert comments[0] == ("PR-0412 AHU-3 system-intake [responded] Quillby Bay plan review "
                           "(fictional), 2026-11-20: fail finding reported")
    assert comments[2].startswith("PR-0398 AHU-3 air-class-mixing [closed]")
    assert comments[2].endswith(": no finding reported")
    record = suite.find("system-out").text  # the suite's own, after its cases
    assert "Class 1 confirmed by the owner's programme." in record
    assert "State the design occupancy of the Tidewater meeting room" in record
    cases = {c.get("name"): c for c in suite.findall("testcase")}
    failing = cases["AHU-3/203 zone-limits-ev"].find("failure").text
    assert ("review PR-0413 [open] Quillby Bay plan review (fictional), 2026-11-20: State the "
            "design occupancy") in failing
    assert "review PR-0412" not in failing


def test_sarif_carries_the_record_in_run_and_result_properties(tmp_path):
    from test_report_formats import assert_valid_sarif

    [run] = assert_valid_sarif(_demo_with_record(tmp_path, "sarif"))["runs"]
    uris = [a["location"]["uri"] for a in run["artifacts"]]
    assert uris[-1].endswith("review/round-1.yaml")
    [sched] = run["properties"]["schedules"]
    got = [(c["id"], c["state"], c["toClose"]) for c in sched["review"]]
    assert got == [("PR-0412", "fail finding reported", False),
                   ("PR-0413", "fail finding reported", False),
                   ("PR-0398", "no finding reported", False)]
    where = sched["review"][0]["location"]["physicalLocation"]
    assert where["artifactLocation"]["index"] == len(uris) - 1
    assert where["region"] == {"startLine": 7, "startColumn": 5}
    on = {(r["ruleId"], r["properties"]["subject"]): [c["id"] for c in r["properties"]["review"]]
          for r in run["results"] if "review" in r["properties"]}
    assert on == {("system-intake", "AHU-3"): ["PR-0412"],
                  ("zone-limits-ev", "AHU-3/203"): ["PR-0413"]}


def test_a_resolved_finding_flags_its_comment_for_closing(tmp_path, capsys):
    # Vot = 5·10 + 0.06·1000 = 110 cfm: 100 cfm fails, 120 cfm passes
    old, new = _write(tmp_path / "a.yaml", _single(100)), _write(tmp_path / "b.yaml", _single(120))
    record = _write(tmp_path / "record.yaml", {"comments": [
        _comment(id="C-1"),
        _comment(id="C-2", status="closed", response="Intake raised."),
        _comment(id="C-3", rule="zone-limits-ev", comment="Check Evz.")]})
    cmp = airgate.compare(old, new, review=airgate.load_review(record))
    got = {s.entry.comment.id: (s.resolved, s.to_close, s.state) for s in cmp.review}
    assert got["C-1"] == (True, True, "resolved in this round: ready to close")
    assert got["C-2"] == (True, False, "resolved in this round")
    assert got["C-3"] == (False, True, "no finding reported: ready to close")

    assert main(["compare", old, new, "--review", record, "--format", "json"]) == 0
    data = json.loads(capsys.readouterr().out)
    schema = json.loads((builtin_rules_dir() / "schema" / "compare.schema.json")
                        .read_text(encoding="utf-8"))
    jsonschema.validate(data, schema)
    assert [(c["id"], c["resolved"], c["to_close"]) for c in data["review"]] == [
        ("C-1", True, True), ("C-2", True, False), ("C-3", False, True)]
    assert data["review"][0]["location"]["line"] == 2
    assert main(["compare", old, new, "--review", record]) == 0
    assert "Reviewer's record — 3 comments, 2 ready to close" in capsys.readouterr().out


def test_a_comment_still_open_keeps_its_finding(tmp_path):
    old, new = _write(tmp_path / "a.yaml", _single(100)), _write(tmp_path / "b.yaml", _single(105))
    record = _write(tmp_path / "record.yaml", {"comments": [_comment()]})
    [status] = airgate.compare(old, new, review=airgate.load_review(record)).review
    assert (status.finding.rule, status.resolved, status.to_close) == ("system-intake", False,
                                                                       False)


def _errors(capsys, *argv) -> str:
    assert main(list(argv)) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err
    return err


def test_structural_problems_and_unknown_check_ids_in_one_round(tmp_path, capsys):
    path = tmp_path / "record.yaml"
    path.write_text(
        "comments:\n"
        "  - subject: S-1\n"
        "    rule: system-intak\n"
        "    comment: Intake short.\n"
        "    reviewer: Plan review (invented)\n"
        "    date: 2026-11-20\n"
        "  - subject: S-1\n"
        "    rule: system-intake\n"
        "    comment: Intake short.\n"
        "    reviewer: Plan review (invented)\n"
        "    date: 2026-11-31\n"
        "    status: pending\n"
        "    respnse: later\n", encoding="utf-8")
    schedule_file = _write(tmp_path / "s.yaml", _single(100))
    out = tmp_path / "r.md"
    err = _errors(capsys, "check", schedule_file, "--review", str(path), "--format",
                  f"markdown:{out}")
    assert re.search(rf"{re.escape(str(path))}:3:11: .*unknown check id 'system-intak'; "
                     r"did you mean 'system-intake'", err)
    assert f"{path}:11:" in err and "not a calendar date" in err
    assert f"{path}:12:" in err and "pending" in err
    assert f"{path}:13:" in err and "did you mean 'response'" in err
    assert not out.exists()


def test_missing_fields_and_a_file_that_is_not_a_record(tmp_path, capsys):
    path = tmp_path / "record.yaml"
    path.write_text("comments:\n  - subject: S-1\n    rule: system-intake\n", encoding="utf-8")
    err = _errors(capsys, "check", _write(tmp_path / "s.yaml", _single(100)), "--review", str(path))
    for name in ("comment", "reviewer", "date"):
        assert f"missing required field '{name}'" in err
    assert "a comment gives subject, rule, comment, reviewer and date" in err
    path.write_text("- subject: S-1\n", encoding="utf-8")
    err = _errors(capsys, "check", str(tmp_path / "s.yaml"), "--review", str(path))
    assert "a reviewer's record is a mapping with one key, 'comments'" in err
    assert "write comments: followed by '- subject: ...' entries" in err


def test_one_schedule_per_record(tmp_path, capsys):
    a = _write(tmp_path / "a.yaml", _single(100))
    b = _write(tmp_path / "b.yaml", _single(120))
    err = _errors(capsys, "check", a, b, "--review", str(RECORD))
    assert "--review takes the record of one schedule; 2 are checked" in err


def test_the_record_states_no_clock_time(tmp_path):
    """The report holds the dates the record gives and nothing from the clock."""
    out = tmp_path / "r.md"
    main(["check", str(DEMO), "--review", str(RECORD), "--format", f"markdown:{out}"])
    body = out.read_text(encoding="utf-8")
    dates = set(re.findall(r"\b\d{4}-\d{2}-\d{2}\b", body))
    written = set(re.findall(r"\b\d{4}-\d{2}-\d{2}\b", RECORD.read_text(encoding="utf-8")))
    assert dates <= written
