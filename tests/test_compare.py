"""``airgate compare OLD NEW``: a resubmittal against the round before (docs/compare.md).

The expected figures are worked by hand from ANSI/ASHRAE Standard 62.1-2019, Equation 6-1
(Vbz = Rp·Pz + Ra·Az), Equation 6-2 (Voz = Vbz/Ez) and Section 6.2.3 (single-zone systems: Vot =
Voz), with Table 6-1's office-space rates Rp = 5 cfm/person and Ra = 0.06 cfm/ft² and Table 6-4's
Ez = 1.0 for ceiling supply of cool air (the pack's values, entered from memory). The changed
inputs are the ones each test writes; which findings are resolved follows from those figures.
"""

from __future__ import annotations

import copy
import json
import re
import shutil

import jsonschema
import pytest
import yaml

from airgate.api.compare import compare
from airgate.cli import main
from airgate.evaluation.compare import input_changes
from airgate.readers.rulepack import builtin_rules_dir

from conftest import CFM, DEMO, schedule

COMPARE_SCHEMA = json.loads((builtin_rules_dir() / "schema" / "compare.schema.json")
                            .read_text(encoding="utf-8"))


def _office(zone_id: str, area: float, people: int) -> dict:
    return {"id": zone_id, "space": "office-space", "area": f"{area:g} ft2",
            "occupants": people, "air_distribution": "ceiling-supply-cool"}


def _single(intake: float, area: float = 1000, people: int = 10) -> dict:
    """One single-zone system: Vot = 5·Pz + 0.06·Az (Ez 1.0)."""
    return schedule([{"id": "S-1", "kind": "single-zone", "outdoor_air": f"{intake:g} cfm",
                      "zones": [_office("1", area, people)]}])


def _write(tmp_path, name: str, data: dict):
    path = tmp_path / name
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    return path


def _pair(tmp_path, old: dict, new: dict):
    return _write(tmp_path, "old.yaml", old), _write(tmp_path, "new.yaml", new)


def test_a_raised_intake_turns_the_system_from_fail_to_pass(tmp_path):
    # Vot = 5·10 + 0.06·1000 = 110 cfm: 100 cfm is short, 120 cfm is enough
    old, new = _pair(tmp_path, _single(100), _single(120))
    cmp = compare(old, new)
    verdicts = {(c.subject, c.old, c.new) for c in cmp.verdicts}
    assert ("schedule", "fail", "pass") in verdicts and ("S-1", "fail", "pass") in verdicts
    [changed] = cmp.inputs
    assert (changed.subject, changed.field, changed.old, changed.new) == (
        "S-1", "outdoor_air", "100 cfm", "120 cfm")
    text = new.read_text(encoding="utf-8").splitlines()
    line = next(i for i, t in enumerate(text, 1) if "outdoor_air" in t)
    assert (changed.old_at.file, changed.old_at.line) == (str(old), line)
    assert (changed.new_at.file, changed.new_at.line) == (str(new), line)
    values = {c.symbol: (c.old / CFM, c.new / CFM) for c in cmp.values if c.subject == "S-1"}
    assert "Vot" not in values  # the requirement did not move
    assert values["Vot_design"] == pytest.approx((100, 120))
    assert values["margin Vot_design − Vot"] == pytest.approx((-10, 10))
    assert [(f.rule, f.subject) for f in cmp.resolved] == [("system-intake", "S-1")]
    assert cmp.added == []


def test_more_occupants_move_the_requirement_and_add_a_finding(tmp_path):
    # Vot 110 cfm → 5·14 + 60 = 130 cfm against an unchanged 120 cfm intake
    old, new = _pair(tmp_path, _single(120), _single(120, people=14))
    cmp = compare(old, new)
    assert [(c.subject, c.old, c.new) for c in cmp.verdicts][:2] == [
        ("schedule", "pass", "fail"), ("S-1", "pass", "fail")]
    assert [(c.subject, c.field, c.old, c.new) for c in cmp.inputs] == [
        ("S-1/1", "occupants", "10", "14")]
    vot = next(c for c in cmp.values if (c.subject, c.symbol) == ("S-1", "Vot"))
    assert (vot.old / CFM, vot.new / CFM, vot.change / CFM) == pytest.approx((110, 130, 20))
    voz = next(c for c in cmp.values if (c.subject, c.symbol) == ("S-1/1", "Voz"))
    assert (voz.old / CFM, voz.new / CFM) == pytest.approx((110, 130))
    assert ("system-intake", "S-1") in {(f.rule, f.subject) for f in cmp.added}
    assert cmp.resolved == []


def test_a_change_within_the_tolerance_is_not_listed(tmp_path):
    # Vot 110 → 5·10 + 0.06·1005 = 110.3 cfm: +0.27 %, under 1 %, over 0.1 %
    old, new = _pair(tmp_path, _single(120), _single(120, area=1005))
    loose, tight = compare(old, new), compare(old, new, tolerance=0.001)
    assert not [c for c in loose.values if c.symbol == "Vot"]
    vot = next(c for c in tight.values if (c.subject, c.symbol) == ("S-1", "Vot"))
    assert vot.new / CFM == pytest.approx(110.3)
    assert [(c.field, c.old, c.new) for c in loose.inputs] == [("area", "1000 ft2", "1005 ft2")]


def test_reordered_zones_are_no_change_and_an_added_zone_is_one(tmp_path):
    zones = [_office("1", 1000, 10), _office("2", 500, 5)]
    old = schedule([{"id": "D-1", "kind": "outdoor-air", "outdoor_air": "400 cfm",
                     "zones": [dict(z, outdoor_air="150 cfm") for z in zones]}])
    reordered = copy.deepcopy(old)
    reordered["systems"][0]["zones"].reverse()
    a, b = _pair(tmp_path, old, reordered)
    cmp = compare(a, b)
    assert (cmp.verdicts, cmp.inputs, cmp.values, cmp.resolved, cmp.added) == ([], [], [], [], [])

    grown = copy.deepcopy(old)
    grown["systems"][0]["zones"].append(dict(_office("3", 200, 2), outdoor_air="40 cfm"))
    a, b = _pair(tmp_path, old, grown)
    cmp = compare(a, b)
    [added] = cmp.inputs
    assert (added.subject, added.field, added.old, added.old_at) == ("D-1/3", "", None, None)
    assert added.new_at.line is not None
    assert ("D-1/3", "zone", None, "pass") in {(c.subject, c.level, c.old, c.new)
                                               for c in cmp.verdicts}


def test_inputs_name_nested_fields_and_fields_on_one_side_only(tmp_path):
    old = _single(120)
    new = copy.deepcopy(old)
    new["systems"][0]["filter"] = {"merv": 13}
    new["project"]["name"] = "Test building, revision B (invented)"
    a, b = _pair(tmp_path, old, new)
    got = {(c.subject, c.field, c.old, c.new) for c in compare(a, b).inputs}
    assert got == {("schedule", "project.name", "Test building (invented)",
                    "Test building, revision B (invented)"),
                   ("S-1", "filter", None, '{"merv": 13}')}


def test_input_changes_of_an_import_point_at_its_cells(tmp_path):
    """A CSV table's cell is located by its row and column (docs/importing.md)."""
    pytest.importorskip("openpyxl")
    from airgate.readers.sources import read_any

    src = DEMO.with_suffix(".zones.csv")
    stem = DEMO.name.removesuffix(".yaml")
    for f in DEMO.parent.glob(f"{stem}.*.csv"):
        shutil.copy(f, tmp_path / f.name)
    zones = tmp_path / src.name
    rows = zones.read_text(encoding="utf-8").splitlines()
    row = next(i for i, r in enumerate(rows) if r.split(",")[1:2] == ["203"] or
               r.startswith("203,") or ",203," in r)
    changed = rows[row].replace("600", "650", 1)
    assert changed != rows[row]
    rows[row] = changed
    revised = tmp_path / "revised"
    revised.mkdir()
    for f in tmp_path.glob("*.csv"):
        shutil.copy(f, revised / f.name)
    (revised / src.name).write_text("\n".join(rows) + "\n", encoding="utf-8")
    got = list(input_changes(read_any(tmp_path / src.name), read_any(revised / src.name)))
    area = [c for c in got if c.subject.endswith("/203") and c.field == "area"]
    assert area and area[0].new_at.line == row + 1


def _demo_revision(tmp_path):
    """The demo with zone 203's heating minimum primary airflow and AHU-3's intake raised (the
    fix the demo's failing findings ask for): returns the copy and the lines changed."""
    text = DEMO.read_text(encoding="utf-8")
    lines = text.splitlines(keepends=True)
    at_203 = next(i for i, t in enumerate(lines) if re.match(r'\s*- id: "203"', t))
    primary = next(i for i in range(at_203, len(lines)) if "primary_airflow:" in lines[i])
    lines[primary] = re.sub(r"heating: \d+ cfm", "heating: 400 cfm", lines[primary])
    at_ahu = next(i for i, t in enumerate(lines) if re.match(r"\s*- id: AHU-3\b", t))
    intake = next(i for i in range(at_ahu, len(lines)) if "outdoor_air:" in lines[i])
    lines[intake] = re.sub(r"outdoor_air: \d+ cfm", "outdoor_air: 2300 cfm", lines[intake])
    path = tmp_path / "fernhollow-civic-centre-rev-b.yaml"
    path.write_text("".join(lines), encoding="utf-8")
    return path, primary + 1, intake + 1


def test_the_demo_and_its_fixed_revision(tmp_path):
    revised, primary_line, intake_line = _demo_revision(tmp_path)
    cmp = compare(DEMO, revised)
    verdicts = {(c.subject, c.old, c.new) for c in cmp.verdicts}
    assert {("AHU-3", "fail", "pass"), ("AHU-3/203", "fail", "pass")} <= verdicts
    inputs = {(c.subject, c.field): c for c in cmp.inputs}
    # the demo gives 203's primary airflow per design condition: the heating value changed
    assert set(inputs) == {("AHU-3/203", "primary_airflow.heating"), ("AHU-3", "outdoor_air")}
    assert inputs["AHU-3/203", "primary_airflow.heating"].new == "400 cfm"
    assert inputs["AHU-3/203", "primary_airflow.heating"].old_at.line == primary_line
    assert inputs["AHU-3", "outdoor_air"].new_at.line == intake_line
    resolved = {(f.rule, f.subject) for f in cmp.resolved}
    assert {("system-intake", "AHU-3"), ("zone-limits-ev", "AHU-3/203")} <= resolved
    assert not [f for f in cmp.added if f.severity == "fail"]


def test_command_exit_status_follows_new_as_check_does(tmp_path, capsys):
    fails, passes = _write(tmp_path, "a.yaml", _single(100)), _write(tmp_path, "b.yaml",
                                                                     _single(120))
    assert main(["compare", str(fails), str(passes)]) == 0
    assert main(["compare", str(passes), str(fails)]) == 1
    assert main(["compare", str(passes), str(fails), "--exit-zero"]) == 0
    assert main(["check", str(fails)]) == 1 and main(["check", str(passes)]) == 0
    out = capsys.readouterr().out
    assert "  S-1       FAIL  pass\n" in out and "  S-1       pass  FAIL\n" in out
    assert "Result: NEW FAIL" in out and "Result: NEW PASS" in out


def test_json_follows_the_published_schema(tmp_path, capsys):
    old, new = _pair(tmp_path, _single(100), _single(120, people=11))
    assert main(["compare", str(old), str(new), "--format", "json", "--fail-on", "warning"]) == 0
    data = json.loads(capsys.readouterr().out)
    jsonschema.validate(data, COMPARE_SCHEMA)
    assert data["compare_version"] == 1 and data["gate"] == {"fail_on": ["fail", "warning"],
                                                             "outcome": "pass"}
    assert (data["old"]["verdict"], data["new"]["verdict"]) == ("fail", "pass")
    vot = next(v for v in data["values"] if (v["subject"], v["symbol"]) == ("S-1", "Vot"))
    # Vot 110 → 5·11 + 60 = 115 cfm
    assert (vot["old"]["value"], vot["new"]["value"], vot["change"]["value"]) == (110, 115, 5)
    assert vot["old"]["unit"] == "ft**3/min"
    assert [f["rule"] for f in data["findings"]["resolved"]] == ["system-intake"]
    assert main(["schema", "compare"]) == 0
    assert json.loads(capsys.readouterr().out) == COMPARE_SCHEMA


@pytest.mark.parametrize("fmt", ["text", "markdown", "html"])
def test_every_format_lists_the_changes(tmp_path, fmt, capsys):
    from html.parser import HTMLParser

    old, new = _pair(tmp_path, _single(100), _single(120))
    out_file = tmp_path / f"cmp.{fmt}"
    assert main(["compare", str(old), str(new), "--format", fmt, "-o", str(out_file)]) == 0
    out = out_file.read_text(encoding="utf-8")
    for needed in ("outdoor_air", "100 cfm", "120 cfm", "system-intake", "licensed professional"):
        assert (needed.replace("_", "\\_") if fmt == "markdown" else needed) in out, needed
    if fmt == "html":
        HTMLParser().feed(out)
        assert out.startswith("<!DOCTYPE html>") and "<script" not in out


def test_bad_input_in_either_revision_is_located_and_nothing_is_written(tmp_path, capsys):
    old = _write(tmp_path, "old.yaml", _single(120))
    bad = _single(120)
    bad["systems"][0]["zones"][0]["space"] = "ofice-space"
    new = _write(tmp_path, "new.yaml", bad)
    out_file = tmp_path / "cmp.txt"
    assert main(["compare", str(old), str(new), "-o", str(out_file)]) == 2
    err = capsys.readouterr().err
    assert f"{new}:" in err and "ofice-space" in err and "Traceback" not in err
    assert not out_file.exists()
    assert main(["compare", str(old), str(new), "--tolerance", "-1"]) == 2
    assert "--tolerance" in capsys.readouterr().err
    assert main(["compare", str(old), str(new), "-o", str(old)]) == 2
    assert "overwrite" in capsys.readouterr().err


# --- a round kept as its JSON report --------------------------------------------------------

def test_a_stored_report_compares_as_its_schedule_did(tmp_path, capsys):
    """The report of the old round read back gives the comparison the old schedule gives:
    the same verdicts, values and findings; its inputs come from the trails."""
    old, new = _pair(tmp_path, _single(100, people=10), _single(120, people=12))
    stored = tmp_path / "round-1.json"
    assert main(["check", str(old), "--format", f"json:{stored}", "--trails"]) == 1
    direct, kept = compare(old, new), compare(stored, new)
    assert kept.inputs_from == "trails" and direct.inputs_from == "schedules"
    assert [(c.subject, c.old, c.new) for c in kept.verdicts] == [
        (c.subject, c.old, c.new) for c in direct.verdicts]
    assert [(c.subject, c.symbol) for c in kept.values] == [
        (c.subject, c.symbol) for c in direct.values]
    for a, b in zip(kept.values, direct.values):
        assert (a.old, a.new) == pytest.approx((b.old, b.new), rel=1e-5)  # 6 digits kept
    assert [(f.rule, f.subject) for f in kept.resolved] == [("system-intake", "S-1")]
    # Vot_design 100 → 120 cfm and Pz 10 → 12, as the trails took them from the schedules
    got = {(c.subject, c.field): (c.old, c.new) for c in kept.inputs}
    assert got == {("S-1", "Vot_design"): ("100 cfm", "120 cfm"),
                   ("S-1/1", "Pz"): ("10 people", "12 people")}
    line = next(i for i, t in enumerate(old.read_text().splitlines(), 1) if "outdoor_air" in t)
    vot = next(c for c in kept.inputs if c.field == "Vot_design")
    assert (vot.old_at.file, vot.old_at.line) == (str(old), line)


def test_a_stored_report_without_zone_trails_compares_its_values(tmp_path):
    """Kept without --trails, a report's zones carry their values only: verdicts, values and
    findings compare as before; the inputs are the systems' (whose trails every report
    carries), the zones' being unknown rather than reported as added."""
    old, new = _pair(tmp_path, _single(100, people=10), _single(120, people=12))
    stored = tmp_path / "round-1.json"
    assert main(["check", str(old), "--format", f"json:{stored}"]) == 1
    direct, kept = compare(old, new), compare(stored, new)
    assert [(c.subject, c.old, c.new) for c in kept.verdicts] == [
        (c.subject, c.old, c.new) for c in direct.verdicts]
    assert [(c.subject, c.symbol) for c in kept.values] == [
        (c.subject, c.symbol) for c in direct.values]
    assert [(f.rule, f.subject) for f in kept.resolved] == [("system-intake", "S-1")]
    got = {(c.subject, c.field): (c.old, c.new) for c in kept.inputs}
    assert got == {("S-1", "Vot_design"): ("100 cfm", "120 cfm")}


@pytest.mark.parametrize("trails", [[], ["--trails"]])
def test_a_stored_report_of_the_same_schedule_changes_nothing(tmp_path, capsys, trails):
    stored = tmp_path / "demo.json"
    assert main(["check", str(DEMO), "--format", f"json:{stored}", *trails]) == 1
    capsys.readouterr()
    cmp = compare(stored, DEMO)
    assert (cmp.verdicts, cmp.inputs, cmp.values, cmp.resolved, cmp.added) == ([], [], [], [], [])
    assert main(["compare", str(stored), str(DEMO), "--format", "json", "--exit-zero"]) == 0
    data = json.loads(capsys.readouterr().out)
    jsonschema.validate(data, COMPARE_SCHEMA)
    assert data["inputs_from"] == "trails"


def test_a_stored_report_keeps_its_stale_waivers(tmp_path, capsys):
    """A stored NEW is gated on its waivers as check judged them: an expired waiver and one that
    matches nothing fail --fail-on warning (docs/report-format.md, "Waivers"; docs/compare.md)."""
    # Vot = 5·10 + 0.06·1000 = 110 cfm: 100 cfm fails, so the expired waiver's finding counts
    new = _single(100)
    new["waivers"] = [
        {"rule": "system-intake", "subject": "S-1", "reason": "Interim (invented).",
         "approved_by": "Plan review (invented)", "expires": "2026-06-30"},
        {"rule": "zone-limits-ev", "subject": "S-1/1", "reason": "Not needed (invented).",
         "approved_by": "Plan review (invented)"}]
    old, new = _pair(tmp_path, _single(90), new)
    stored = tmp_path / "round-2.json"
    assert main(["check", str(new), "--as-of", "2026-12-01", "--format",
                 f"json:{stored}"]) == 1
    report = compare(old, stored).new
    got = [(s.entry.waiver.rule, s.state, s.count, s.entry.location.line) for s in report.waivers]
    lines = new.read_text(encoding="utf-8").splitlines()
    at = [i for i, t in enumerate(lines, 1) if t.lstrip().startswith("- rule:")]
    assert got == [("system-intake", "expired", 1, at[0]), ("zone-limits-ev", "unmatched", 0,
                                                            at[1])]
    assert report.waiver_date == "2026-12-01"
    assert report.waivers[0].entry.waiver.expires.isoformat() == "2026-06-30"
    capsys.readouterr()
    for side in (new, stored):  # the stored round gates as its schedule does
        assert main(["compare", str(old), str(side), "--as-of", "2026-12-01", "--fail-on",
                     "warning", "--format", "json"]) == 1
        assert json.loads(capsys.readouterr().out)["gate"]["outcome"] == "fail"


def test_a_stored_report_with_a_bad_waiver_state_is_refused(tmp_path, capsys):
    stored = tmp_path / "demo.json"
    assert main(["check", str(DEMO), "--format", f"json:{stored}", "--waivers",
                 str(DEMO.parent / "approvals" / "fernhollow-approvals.yaml")]) == 1
    data = json.loads(stored.read_text(encoding="utf-8"))
    assert data["waivers"]
    data["waivers"][0]["state"] = "forgotten"
    stored.write_text(json.dumps(data), encoding="utf-8")
    capsys.readouterr()
    assert main(["compare", str(stored), str(DEMO)]) == 2
    err = capsys.readouterr().err
    assert "not a JSON report airgate can read back" in err and "Traceback" not in err


def test_a_space_type_change_shows_in_the_trail_inputs(tmp_path, capsys):
    old = _single(120)
    new = copy.deepcopy(old)
    new["systems"][0]["zones"][0]["space"] = "conference-meeting"
    a, b = _pair(tmp_path, old, new)
    stored = tmp_path / "a.json"
    main(["check", str(a), "--format", f"json:{stored}"])
    got = {(c.subject, c.field, c.old, c.new) for c in compare(stored, b).inputs}
    assert ("S-1/1", "space", "office-space", "conference-meeting") in got


def test_a_report_of_several_schedules_is_refused(tmp_path, capsys):
    one, two = _write(tmp_path, "a.yaml", _single(120)), _write(tmp_path, "b.yaml", _single(100))
    batch = tmp_path / "batch.json"
    main(["check", str(one), str(two), "--format", f"json:{batch}"])
    capsys.readouterr()
    assert main(["compare", str(batch), str(one)]) == 2
    err = capsys.readouterr().err
    assert str(batch) in err and "a report of several schedules" in err and "Traceback" not in err
