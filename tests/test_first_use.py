"""What a new user tripped on: folders with reports in them, plots, the gate's outcome in every
report, messages and wording (each behaviour pinned here against the fix)."""

from __future__ import annotations

import json
import re
import shutil

from airgate.cli import main

from conftest import CFM, DEMO


def test_folder_with_its_own_json_reports_still_checks(tmp_path, capsys):
    shutil.copy(DEMO, tmp_path / DEMO.name)
    assert main(["check", str(DEMO), "--format", "json", "-o", str(tmp_path / "report.json")]) == 1
    two = tmp_path / "two.yaml"
    shutil.copy(DEMO, two)
    assert main(["check", str(DEMO), str(two), "--format", "json",
                 "-o", str(tmp_path / "batch.json")]) == 1
    capsys.readouterr()
    assert main(["check", str(tmp_path), "--format", "json"]) == 1
    captured = capsys.readouterr()
    batch = json.loads(captured.out)
    assert [r["schedule"]["file"] for r in batch["reports"]] == [
        str(tmp_path / DEMO.name), str(two)]
    assert f"note: skipped {tmp_path / 'report.json'}: an airgate report" in captured.err
    assert f"note: skipped {tmp_path / 'batch.json'}: an airgate report" in captured.err


def test_a_json_schedule_beside_reports_is_still_read(tmp_path, capsys):
    """Only files that begin like airgate's reports are skipped: a broken JSON file is refused."""
    (tmp_path / "broken.json").write_text('{"report_version": 1}', encoding="utf-8")
    assert main(["check", str(tmp_path)]) == 2
    assert "broken.json" in capsys.readouterr().err


def test_counts_are_pluralised(capsys):
    """English plurals (common practice): one warning, two warnings; one expectation."""
    from airgate.formatting import count

    assert [count(0, "warning"), count(1, "warning"), count(2, "warning"),
            count(1, "expectation"), count(1200, "case")] == [
        "0 warnings", "1 warning", "2 warnings", "1 expectation", "1,200 cases"]
    main(["rules", "test", "ashrae-62.2-2019"])  # two of its cases hold one expectation
    out = capsys.readouterr().out
    shown = re.findall(r"\((\d+) (expectations?)\)", out)
    assert ("1", "expectation") in shown
    assert all((n == "1") == (w == "expectation") for n, w in shown)


def test_markdown_names_info_findings_as_the_other_formats_do(capsys):
    """'info' in every format's counts (text, JSON, JUnit say info), never 'notes'."""
    main(["check", str(DEMO), "--format", "markdown"])
    out = capsys.readouterr().out
    n = re.search(r"0 warnings · (\d+) info · 0 waived", out).group(1)
    assert f"{n} info findings</summary>" in out and "notes" not in out


def test_no_averaging_note_for_a_zone_without_occupants(evaluate):
    """ANSI/ASHRAE Standard 62.1-2019, Section 6.2.6.2 (from memory): the zone population may be
    averaged over T; a zone with Pz = 0 has no population to average, so no note."""
    data = _single({"space": "corridors", "occupants": 0, "profile": "brief", "height": "30 ft"})
    r = evaluate(data)
    assert not [f for f in r.findings if f.rule == "short-term-averaging"]


def test_an_averaged_population_below_one_person_is_not_shown_as_zero(evaluate):
    # Section 6.2.6.2 (from memory): Pz averaged over T. One person for 60 min of a
    # T = 3·v/Vbz minutes window: Pz_avg = 60/T people (arithmetic, common practice).
    data = _single({"occupants": 1, "profile": "brief", "height": "30 ft"})
    r = evaluate(data)
    (f,) = [f for f in r.findings if f.rule == "short-term-averaging"]
    vbz = r.systems[0].zones[0].trail.value("Vbz") / CFM  # cfm
    t_min = 3 * 2000 * 30 / vbz
    assert f"averaged over T to {60 / t_min:.2g} people" in f.message
    assert "0.0 people" not in f.message


def _single(zone):
    from conftest import schedule

    z = {"id": "1", "space": "conference-meeting", "area": "2000 ft2", "occupants": 100,
         "height": "10 ft", "air_distribution": "ceiling-supply-cool", **zone}
    data = schedule([{"id": "S", "kind": "single-zone", "outdoor_air": "620 cfm",
                      "zones": [z]}])
    data["profiles"] = {"brief": {"weekday": {"10:00-11:00": 1.0}}}
    return data


def test_html_names_info_findings_as_the_other_formats_do(capsys):
    main(["check", str(DEMO), "--format", "html"])
    out = capsys.readouterr().out
    assert re.search(r'<li class="info"><b>\d+</b> info</li>', out)
    assert "notes from the checks" not in out and re.search(r"\d+ info findings of the checks", out)


def test_the_contaminant_table_names_the_declared_amount(tmp_path, capsys):
    """The steady-state column is headed by the contaminant's declared unit per m³ (the demo
    declares its aerosol in quanta), and an unusual unit is shown as declared."""
    import yaml

    main(["check", str(DEMO)])
    out = capsys.readouterr().out
    assert "C_ss quanta/m³" in out and "C ss /m³" not in out
    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["contaminants"][0]["unit"] = "µg PM2.5"
    path = tmp_path / "pm.yaml"
    path.write_text(yaml.safe_dump(data, allow_unicode=True), encoding="utf-8")
    main(["check", str(path)])
    assert "C_ss µg PM2.5/m³" in capsys.readouterr().out


def test_ez_has_one_precision_in_text_and_explain(capsys):
    """Ez is shown to three decimals everywhere (explain and the JSON trail already do)."""
    main(["check", str(DEMO)])
    row = next(line for line in capsys.readouterr().out.splitlines()
               if line.strip().startswith("203 "))
    main(["explain", str(DEMO), "--zone", "203"])
    # zone 203 at the governing heating condition: warm air at the ceiling, Ez 0.8
    assert "Ez            = 0.800" in capsys.readouterr().out
    assert " 0.800 " in row and " 0.80 " not in row


def test_a_passing_junit_case_says_it_passed_before_what_the_check_looks_for(capsys):
    """A check titled by what it finds reads as found unless the case says it passed first."""
    import xml.etree.ElementTree as ET

    main(["check", str(DEMO), "--format", "junit"])
    root = ET.fromstring(capsys.readouterr().out)
    cases = {c.get("name"): c for c in root.iter("testcase")}
    out = cases["RTU-1/101 space-without-rates"].find("system-out").text.splitlines()
    assert out[:2] == ["RTU-1/101 — space-without-rates: pass, nothing found",
                       "check: The occupancy category requires no outdoor air in the table"]
    failing = cases["AHU-3 system-intake"].find("failure").text.splitlines()
    assert failing[0] == "AHU-3 — system-intake: fail"


def _bad(tmp_path, capsys, old, new):
    text = DEMO.read_text(encoding="utf-8")
    assert old in text
    path = tmp_path / "bad.yaml"
    path.write_text(text.replace(old, new, 1), encoding="utf-8")
    assert main(["check", str(path)]) == 2
    return capsys.readouterr().err


def test_an_upper_case_unit_is_asked_about(tmp_path, capsys):
    err = _bad(tmp_path, capsys, "outdoor_air: 950 cfm", "outdoor_air: 2600 CFM")
    assert "unknown unit 'CFM' in '2600 CFM'; did you mean 'cfm'?" in err
    assert "fix: write the unit in lower case: '2600 cfm'" in err


def test_a_per_area_rate_where_an_airflow_is_expected_is_named_and_fixed(tmp_path, capsys):
    err = _bad(tmp_path, capsys, "outdoor_air: 950 cfm", "outdoor_air: 0.12 cfm/ft2")
    assert "'0.12 cfm/ft2' is an airflow per area (cfm/ft²); expected an airflow" in err
    assert "[length]" not in err and "fix: give an airflow such as '850 cfm'" in err


def test_a_negative_area_has_a_fix_line(tmp_path, capsys):
    err = _bad(tmp_path, capsys, "area: 1500 ft2", "area: -1500 ft2")
    assert "must be greater than zero, got '-1500 ft2'" in err
    assert "fix: give a positive value, such as '5000 ft2'" in err


def test_rules_validate_names_a_wrong_kind_of_value_in_a_packs_words(tmp_path, capsys):
    """A list where a mapping belongs: the pack writer's words and a fix, not the schema's."""
    import yaml

    from airgate.readers.packschema import builtin_rules_dir

    data = yaml.safe_load((builtin_rules_dir() / "ashrae-62.2-2019.yaml").read_text("utf-8"))
    data["equations"] = ["Qtot = 0.03·Afloor + 7.5·(Nbr + 1)"]
    path = tmp_path / "ashrae-62.2-2019.yaml"
    path.write_text(yaml.safe_dump(data, allow_unicode=True), encoding="utf-8")
    assert main(["rules", "validate", str(path)]) == 2
    err = capsys.readouterr().err
    assert "equations: expected a mapping, got a list" in err
    assert "fix: write it as 'key: value' lines" in err and "of type" not in err


def test_explain_says_a_system_id_given_as_a_zone_is_a_system(capsys):
    assert main(["explain", str(DEMO), "--zone", "AHU-3"]) == 2
    err = capsys.readouterr().err
    assert "'AHU-3' is a system, not a zone" in err and "fix: use --system AHU-3" in err
    assert main(["explain", str(DEMO), "--system", "203"]) == 2
    assert "fix: use --zone 203" in capsys.readouterr().err


def test_a_short_single_zone_intake_says_how_far_to_raise_it(tmp_path, capsys):
    """ANSI/ASHRAE Standard 62.1-2019, Section 6.2.3 (from memory): a single-zone system's
    Vot = Voz. RTU-1 of the demo: Voz = (Rp·Pz + Ra·Az)/Ez = (5·120 + 0.06·2400)/0.8 = 930 cfm
    (Table 6-1 legislative chambers Rp 5 cfm/person, Ra 0.06 cfm/ft², Table 6-4 Ez 0.8)."""
    text = DEMO.read_text(encoding="utf-8").replace("outdoor_air: 950 cfm", "outdoor_air: 900 cfm", 1)
    path = tmp_path / "short.yaml"
    path.write_text(text, encoding="utf-8")
    main(["check", str(path)])
    out = capsys.readouterr().out
    assert ("outdoor-air intake: 900 cfm provided, 930 cfm required (short by 30.0 cfm); "
            "raise the intake to at least 930 cfm") in out


def test_reports_state_the_gate_when_it_fails_a_passing_verdict(tmp_path, capsys):
    """--fail-on warning with a stale waiver: the verdict passes, the exit status is 1, and
    every report says the gate failed (text, Markdown, JSON; JUnit fails the waiver's case)."""
    import jsonschema
    import yaml

    from airgate.readers.packschema import schema

    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["systems"] = data["systems"][:2]  # the two passing systems
    path = tmp_path / "pass.yaml"
    path.write_text(yaml.safe_dump(data), encoding="utf-8")
    waivers = tmp_path / "waivers.yaml"
    waivers.write_text(yaml.safe_dump({"waivers": [{
        "rule": "system-intake", "subject": "RTU-1", "reason": "invented for the test",
        "approved_by": "demo reviewer (fictional)", "expires": "2030-01-01"}]}), encoding="utf-8")
    args = ["check", str(path), "--waivers", str(waivers), "--fail-on", "warning"]
    outs = {f: tmp_path / f"r.{f}" for f in ("text", "markdown", "json", "junit")}
    assert main(args + [x for f, o in outs.items() for x in ("--format", f"{f}:{o}")]) == 1
    gate = "Gate (--fail-on fail,warning): FAIL, the outcome the exit status gives"
    text = outs["text"].read_text(encoding="utf-8")
    assert "Result: PASS" in text and gate in text
    assert f"**{gate}**" in outs["markdown"].read_text(encoding="utf-8")
    doc = json.loads(outs["json"].read_text(encoding="utf-8"))
    assert doc["verdict"] == "pass" and doc["gate"] == {"fail_on": ["fail", "warning"],
                                                        "outcome": "fail"}
    jsonschema.validate(doc, schema("report"))
    assert 'failures="1"' in outs["junit"].read_text(encoding="utf-8")
    # without --fail-on beyond fail, the verdict is the gate's outcome: no gate line
    assert main(["check", str(path), "--format", "json"]) == 0
    assert "gate" not in json.loads(capsys.readouterr().out)
    # a run of several: the run's summary says it too
    assert main(["check", str(path), str(DEMO), "--waivers", str(waivers), "--fail-on",
                 "warning", "--format", "json"]) == 1
    assert json.loads(capsys.readouterr().out)["gate"]["outcome"] == "fail"
    assert main(["check", str(path), str(path.with_name("pass.yaml")), str(DEMO),
                 "--fail-on", "warning"]) == 1
    summary = capsys.readouterr().out.split("Run summary")[1]
    assert "Gate (--fail-on fail,warning): FAIL" in summary
    assert "0 warnings ·" in summary and "0 warning ·" not in summary
    assert main(["check", str(path), "--waivers", str(waivers), "--fail-on", "warning",
                 "--format", "sarif"]) == 1
    run = json.loads(capsys.readouterr().out)["runs"][0]
    assert run["properties"]["gate"] == {"failOn": ["fail", "warning"], "outcome": "fail"}


def test_plot_draws_the_rise_to_steady_state_where_a_zone_has_no_profile(tmp_path, capsys):
    """Well-mixed zone from the outdoor level at design occupancy (common practice, the CMFR
    transient): C(t) = C_ss + (C_out − C_ss)·exp(−Q·t/V), Q in m³/h, V in m³."""
    import math

    import pytest
    import yaml

    pytest.importorskip("matplotlib")
    from airgate.api.core import check

    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    for z in data["systems"][1]["zones"]:
        z.pop("profile", None)
    path = tmp_path / "noprofile.yaml"
    path.write_text(yaml.safe_dump(data), encoding="utf-8")
    out = tmp_path / "rise.svg"
    assert main(["plot", str(path), "--system", "DOAS-1", "-o", str(out)]) == 0
    assert "rise to steady state at design occupancy" in out.read_text(encoding="utf-8")
    z = check(str(path)).systems[1].zones[0]
    assert z.series is None and z.rise is not None
    d = z.dilution
    c_out, c_ss = d.value("C_out"), d.value("C_ss")
    q_m3h = d.value("Q_oa") * 3.6  # L/s → m³/h (3600 s/h ÷ 1000 L/m³)
    i = 60  # one hour, minute samples
    expected = c_ss + (c_out - c_ss) * math.exp(-q_m3h * 1.0 / d.value("V"))
    assert z.rise.times[i] == pytest.approx(1.0)
    assert z.rise.ppm[i] == pytest.approx(expected, rel=1e-9)
    assert z.rise.ppm[0] == pytest.approx(c_out) and z.rise.occupancy.min() == 1.0


def test_a_waivers_file_reports_structure_and_unknown_checks_in_one_round(tmp_path, capsys):
    import yaml

    waivers = tmp_path / "waivers.yaml"
    waivers.write_text(yaml.safe_dump({"waivers": [
        {"rule": "sytem-intake", "subject": "AHU-3", "reason": "r", "approved_by": "a"},
        {"rule": "system-intake", "subject": "AHU-3", "reason": "r", "approvedby": "a"}]},
        sort_keys=False), encoding="utf-8")
    two = tmp_path / "two.yaml"
    shutil.copy(DEMO, two)
    assert main(["check", str(DEMO), str(two), "--waivers", str(waivers)]) == 2
    err = capsys.readouterr().err
    assert "waivers[0].rule: unknown check id 'sytem-intake'; did you mean 'system-intake'?" in err
    assert "waivers[1].approvedby: unknown field 'approvedby'" in err
    assert err.count("unknown check id") == 1  # once, though two schedules were evaluated
