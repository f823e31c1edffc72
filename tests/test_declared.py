"""Limits the schedule declares for itself (basis ``declared``) never change a code verdict.

The design below passes its code check: an office of 1,000 ft² with 5 people needs
Vbz = 5 cfm/person × 5 + 0.06 cfm/ft² × 1,000 ft² = 85 cfm (ANSI/ASHRAE Standard 62.1-2019,
Table 6-1, office space; Ez = 1.0 for ceiling supply of cool air, Table 6-2) and gets 100 cfm.
Its steady CO2 is C_out + 10⁶·G/Q (the steady state of the completely mixed balance, Nazaroff &
Alvarez-Cohen 2001, docs/references.md): G = 5 × 0.0052 L/s = 0.026 L/s (the generation the
schedule states), Q = 100 cfm = 47.1947 L/s (1 ft = 0.3048 m exactly; common practice), so
C = 420 + 550.9 = 970.9 ppm — above a declared limit of 900 ppm, below one of 1,000 ppm.
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET

import pytest
import yaml

from airgate.cli import main

from conftest import schedule


def design(co2_limit: float | None = 900, outdoor_air: str = "100 cfm", contaminant=None) -> dict:
    zone = {"id": "101", "space": "office-space", "area": "1000 ft2", "occupants": 5,
            "height": "9 ft", "co2_generation": 0.0052,
            "air_distribution": "ceiling-supply-cool"}
    data = schedule([{"id": "RTU-1", "kind": "single-zone", "outdoor_air": outdoor_air,
                      "zones": [zone]}])
    if co2_limit is not None:
        data["project"]["co2_limit"] = co2_limit
    if contaminant is not None:
        data["contaminants"] = [contaminant]
    return data


def write(tmp_path, data, name="declared.yaml"):
    path = tmp_path / name
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    return str(path)


def check(path, *args):
    import contextlib
    import io

    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        code = main(["check", path, *args])
    return code, out.getvalue()


def test_missed_co2_limit_leaves_a_passing_design_passing(tmp_path):
    code, out = check(write(tmp_path, design(900)), "--format", "json")
    assert code == 0
    doc = json.loads(out)
    assert doc["verdict"] == "pass"
    assert doc["systems"][0]["verdict"] == "pass"
    assert doc["systems"][0]["zones"][0]["verdict"] == "pass"
    assert doc["summary"] == {"fail": 0, "warning": 0, "info": 0, "declared": 1, "waived": 0}
    (f,) = doc["findings"]
    assert f["basis"] == "declared" and f["rule"] == "concentration-limit"
    assert f["subject"] == "RTU-1/101"
    assert "971 ppm" in f["message"] and "900 ppm" in f["message"]
    # credited to the schedule, where the limit is written, not to the standard
    assert "project.co2_limit" in f["source"] and "declared.yaml:" in f["source"]
    assert "ANSI/ASHRAE" not in f["source"]


def test_met_co2_limit_gives_no_finding(tmp_path):
    code, out = check(write(tmp_path, design(1000)), "--format", "json")
    assert code == 0 and json.loads(out)["findings"] == []


def test_fail_on_declared_fails_the_run(tmp_path):
    path = write(tmp_path, design(900))
    assert check(path, "--fail-on", "declared")[0] == 1
    assert check(path, "--fail-on", "warning")[0] == 0
    assert check(path, "--fail-on", "warning", "--fail-on", "declared")[0] == 1
    assert check(path, "--fail-on", "declared", "--exit-zero")[0] == 0
    # nothing declared is missed: --fail-on declared passes
    assert check(write(tmp_path, design(1000), "met.yaml"), "--fail-on", "declared")[0] == 0


def test_code_findings_come_first_and_still_decide(tmp_path):
    # 50 cfm is below the 85 cfm required (the code fails) and CO2 is above the limit too.
    code, out = check(write(tmp_path, design(900, outdoor_air="50 cfm")), "--format", "json")
    assert code == 1
    doc = json.loads(out)
    assert doc["verdict"] == "fail" and doc["summary"]["fail"] == 1
    assert [f["basis"] for f in doc["findings"]] == ["code", "declared"]
    assert doc["findings"][0]["rule"] == "system-intake"


def test_contaminant_limit_is_declared(tmp_path):
    aerosol = {"id": "aerosol", "unit": "quanta", "per_person": 10.0, "limit": 0.001}
    code, out = check(write(tmp_path, design(None, contaminant=aerosol)), "--format", "json")
    assert code == 0
    (f,) = json.loads(out)["findings"]
    assert f["basis"] == "declared" and "contaminants[0].limit" in f["source"]


def test_every_format_shows_declared_findings_after_the_code_findings(tmp_path):
    path = write(tmp_path, design(900, outdoor_air="50 cfm"))
    text = check(path)[1]
    assert text.index("Findings —") < text.index("Limits the schedule declares — 1 missed")
    assert text.index("[system-intake]") < text.index("[concentration-limit]")
    md = check(path, "--format", "markdown")[1]
    assert md.index("Failing items") < md.index("Limits the schedule declares: 1 missed")
    assert "concentration-limit" not in md[:md.index("Limits the schedule declares")]
    html = check(path, "--format", "html")[1]
    assert html.index('id="r1-failing"') < html.index('id="r1-declared"')
    failing = html[html.index('id="r1-failing"'):html.index('id="r1-declared"')]
    assert "concentration-limit" not in failing
    declared = html[html.index('id="r1-declared"'):]
    declared = declared[:declared.index("</section>")]
    assert '<span class="badge warning">missed</span>' in declared
    assert 'class="badge fail"' not in declared
    sarif = json.loads(check(path, "--format", "sarif")[1])
    results = sarif["runs"][0]["results"]
    assert [r["properties"]["basis"] for r in results] == ["code", "declared"]
    assert [r["level"] for r in results] == ["error", "warning"]


def test_junit_declared_case_fails_only_when_asked(tmp_path):
    path = write(tmp_path, design(900))

    def declared_case(*args):
        root = ET.fromstring(check(path, "--format", "junit", *args)[1])
        (case,) = [c for c in root.iter("testcase") if c.get("classname") == "declared.declared"]
        return root, case

    root, case = declared_case()
    assert case.find("failure") is None and root.get("failures") == "0"
    assert "project.co2_limit" in case.find("system-out").text
    root, case = declared_case("--fail-on", "declared")
    assert case.find("failure") is not None and root.get("failures") == "1"


def test_sarif_declared_result_is_an_error_under_fail_on_declared(tmp_path):
    sarif = json.loads(check(write(tmp_path, design(900)), "--format", "sarif",
                             "--fail-on", "declared")[1])
    (result,) = sarif["runs"][0]["results"]
    assert result["level"] == "error" and result["properties"]["basis"] == "declared"


def test_a_waiver_may_name_the_declared_check(tmp_path):
    data = design(900)
    data["waivers"] = [{"rule": "concentration-limit", "subject": "RTU-1/101",
                        "reason": "Owner accepts the higher level (invented).",
                        "approved_by": "Test owner (invented)"}]
    code, out = check(write(tmp_path, data), "--format", "json", "--fail-on", "declared")
    assert code == 0
    doc = json.loads(out)
    assert doc["summary"]["declared"] == 0 and doc["summary"]["waived"] == 1


@pytest.mark.parametrize("fmt", ["text", "markdown", "html"])
def test_no_section_without_a_declared_limit(tmp_path, fmt):
    out = check(write(tmp_path, design(None)), "--format", fmt)[1]
    assert "Limits the schedule declares" not in out


def test_explain_marks_the_declared_limit(tmp_path):
    import contextlib
    import io

    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        assert main(["explain", write(tmp_path, design(900)), "--zone", "101"]) == 0
    text = out.getvalue()
    assert "MISSED (declared limit) [concentration-limit] RTU-1/101" in text
    assert "FAIL [" not in text


def test_a_run_of_several_counts_declared_limits_apart(tmp_path):
    missed = write(tmp_path, design(900), "missed.yaml")
    met = write(tmp_path, design(1000), "met.yaml")
    code, out = check(missed, met, "--format", "json")
    assert code == 0
    doc = json.loads(out)
    assert doc["verdict"] == "pass" and doc["summary"]["failing_schedules"] == 0
    assert doc["summary"]["fail"] == 0 and doc["summary"]["declared"] == 1
    assert check(missed, met, "--fail-on", "declared")[0] == 1
    text = check(missed, met)[1]
    assert "1 declared limit missed" in text.split("Run summary")[1]


def test_a_declared_limit_that_cannot_be_checked_is_noted(tmp_path):
    # Without a height or volume there is no dilution analysis: the limit is not silently lost.
    data = design(900)
    del data["systems"][0]["zones"][0]["height"]
    code, out = check(write(tmp_path, data), "--format", "json")
    doc = json.loads(out)
    assert code == 0 and doc["findings"] == []
    (note,) = [n for n in doc["notes"] if "project.co2_limit" in n]
    assert "was not checked for RTU-1/101" in note and "height or volume" in note
