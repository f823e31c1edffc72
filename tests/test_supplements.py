"""Several rule packs on one schedule: a rates pack and supplement packs beside it.

The figures checked here follow ANSI/ASHRAE Standard 241-2023 (Table 5-1 targets entered from
memory in the pack; the equivalent clean airflow as the sum of outdoor air, filtration as airflow
× efficiency, and air cleaners' CADR, Section 3 definition and Section 7, from memory), computed by
hand in each test; the plumbing (which pack each finding names, combined verdicts, waivers naming
a pack, located errors) is the project's own contract (docs/schedule-format.md).
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET  # parses our own report
import re
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest
import yaml

from airgate import check
from airgate.errors import AirgateError
from conftest import CFM, ROOT, subprocess_env

OFFICE = {"space": "office-space", "area": "1000 ft2", "height": "10 ft", "occupants": 10,
          "air_distribution": "ceiling-supply-cool"}
AEROSOL = {"id": "aerosol", "unit": "quanta", "kind": "particle", "size_range": "E2",
           "per_person": 1.0, "deposition": 0.3, "half_life": 1.1}


def _schedule(rules, systems, contaminants=(AEROSOL,), waivers=()) -> dict:
    out = {"schedule": 1, "project": {"name": "Tern Quay Annex (invented)", "units": "IP"},
           "rules": rules, "contaminants": list(contaminants), "systems": systems}
    if waivers:
        out["waivers"] = list(waivers)
    return out


def _system(sid: str, oa: str, **extra) -> dict:
    zone = {"id": sid.lower(), **OFFICE, **extra.pop("zone", {})}
    return {"id": sid, "kind": "single-zone", "outdoor_air": oa, **extra, "zones": [zone]}


def _write(tmp_path: Path, data: dict, name: str = "s.yaml") -> Path:
    path = tmp_path / name
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    return path


def test_eca_per_person_is_the_hand_sum_of_the_credited_mechanisms(tmp_path):
    # ASHRAE 241-2023 (equivalent clean airflow, from memory): Q_oa + eta*(Vps - Q_oa) + CADR;
    # deposition and decay of the aerosol are not credited by the pack. 120 cfm of outdoor air,
    # 600 cfm supply through a 50 % filter, a 90 cfm air cleaner, 10 people:
    # (120 + 0.5*480 + 90) / 10 = 45 cfm per person against the office target of 30 (Table 5-1).
    data = _schedule(["ashrae-62.1-2019", "ashrae-241-2023"], [
        _system("A", "120 cfm", supply_airflow="600 cfm", filter={"efficiency": 0.5},
                zone={"air_cleaners": [{"cadr": "90 cfm"}]})])
    report = check(_write(tmp_path, data))
    z = report.systems[0].zones[0]
    t = z.packs["ashrae-241-2023"]
    assert t.value("ECA") == pytest.approx(450 * CFM, rel=1e-9)
    assert t.value("ECA_pp") == pytest.approx(45 * CFM, rel=1e-9)
    assert t.value("ECAi") == pytest.approx(30 * CFM, rel=1e-9)
    assert "Qc_dep" not in t and "Qc_inact" not in t
    assert report.verdict == "pass"
    assert [o.pack for o in report.requirements if o.rule == "eca-office"] == ["ashrae-241-2023"]


def test_the_pack_figures_are_shown_in_the_text_html_and_markdown_reports(tmp_path):
    # The same hand sum as above (ASHRAE 241-2023, from memory): 450 cfm of equivalent clean
    # airflow, 45 cfm per person against 30; every human-readable report lists it per zone, the
    # HTML report with the pack's trail among the zone's.
    data = _schedule(["ashrae-62.1-2019", "ashrae-241-2023"], [
        _system("A", "120 cfm", supply_airflow="600 cfm", filter={"efficiency": 0.5},
                zone={"air_cleaners": [{"cadr": "90 cfm"}]})])
    path = _write(tmp_path, data)
    row = ["a", "450", "10", "45", "30", "Qc_oa, Qc_filter, Qc_cleaner"]
    for fmt in ("text", "markdown", "html"):
        out = tmp_path / f"report.{fmt}"
        run = subprocess.run([sys.executable, "-m", "airgate", "check", str(path), "--format",
                              f"{fmt}:{out}"], capture_output=True, text=True,
                             env=subprocess_env(), check=False)
        assert run.returncode == 0, run.stderr
        text = out.read_text(encoding="utf-8")
        assert "ashrae-241-2023" in text and "equivalent clean airflow of the credited" in text
        if fmt == "html":
            cells = "".join(f'<td class="n">{v}</td>' for v in row[1:5])
            assert f"<tr><td><b>a</b></td>{cells}<td>{row[5]}</td></tr>" in text
            assert "rule pack ashrae-241-2023</p>" in text  # the pack's trail, in the zone's
        elif fmt == "markdown":
            assert "| " + " | ".join(row).replace("_", "\\_") + " |" in text
        else:
            assert re.search(r"^\s*a\s+450\s+10\s+45\s+30\s+Qc_oa, Qc_filter, Qc_cleaner$",
                             text, re.M)


def test_a_passing_supplement_requirement_carries_its_amounts_in_junit(tmp_path):
    # The hand sum above (ASHRAE 241-2023, from memory): 45 cfm per person provided against the
    # 30 required; a passing case says both, as a passing check of the rates pack does.
    data = _schedule(["ashrae-62.1-2019", "ashrae-241-2023"], [
        _system("A", "120 cfm", supply_airflow="600 cfm", filter={"efficiency": 0.5},
                zone={"air_cleaners": [{"cadr": "90 cfm"}]})])
    out = tmp_path / "report.xml"
    run = subprocess.run([sys.executable, "-m", "airgate", "check", str(_write(tmp_path, data)),
                          "--format", f"junit:{out}"], capture_output=True, text=True,
                         env=subprocess_env(), check=False)
    assert run.returncode == 0, run.stderr
    case = [c for c in ET.parse(out).iter("testcase") if "ashrae-241-2023: eca-office" in
            c.get("name")]
    assert len(case) == 1 and case[0].find("failure") is None
    text = case[0].find("system-out").text
    assert "required: 30 cfm/person" in text and "provided: 45 cfm/person" in text
    assert "margin: +15 cfm/person (+50.0 %)" in text


def test_a_failing_supplement_requirement_fails_zone_system_and_report(tmp_path):
    # 120 cfm for 10 people = 12 cfm per person < 30 (ASHRAE 241-2023 Table 5-1, office, from
    # memory), while the rate procedure passes: Vbz = 5*10 + 0.06*1000 = 110 cfm <= 120
    # (ANSI/ASHRAE 62.1-2019 Table 6-1, office space; Ez 1.0).
    data = _schedule(["ashrae-62.1-2019", "ashrae-241-2023"], [_system("A", "120 cfm")])
    report = check(_write(tmp_path, data))
    s = report.systems[0]
    assert [f.rule for f in report.findings if f.severity == "fail"] == ["eca-office"]
    f = next(f for f in report.findings if f.rule == "eca-office")
    assert f.pack == "ashrae-241-2023"
    assert f.provided.value == pytest.approx(12 * CFM, rel=1e-9)
    assert (s.verdict, s.zones[0].verdict, report.verdict) == ("fail", "fail", "fail")
    # every finding of a report with several packs names its pack
    assert all(f.pack in ("ashrae-62.1-2019", "ashrae-241-2023") for f in report.findings)


def test_the_same_schedule_under_one_pack_has_no_pack_names(tmp_path):
    data = _schedule("ashrae-62.1-2019", [_system("A", "120 cfm")])
    report = check(_write(tmp_path, data))
    assert report.supplements == [] and all(f.pack is None for f in report.findings)
    out = report.to_dict()
    assert "also" not in out and all("pack" not in f for f in out["findings"])
    assert all("packs" not in z for s in out["systems"] for z in s["zones"])


def test_extra_rules_check_only_the_systems_that_list_the_pack(tmp_path):
    data = _schedule("ashrae-62.1-2019", [
        _system("A", "120 cfm", extra_rules=["ashrae-241-2023"]), _system("B", "120 cfm")])
    report = check(_write(tmp_path, data))
    assert [(s.id, s.verdict) for s in report.systems] == [("A", "fail"), ("B", "pass")]
    assert [s.systems for s in report.supplements] == [frozenset({"A"})]
    assert {o.subject for o in report.requirements if o.pack} == {"A/a"}


def test_json_report_names_packs_and_validates(tmp_path):
    data = _schedule(["ashrae-62.1-2019", "ashrae-241-2023"], [_system("A", "120 cfm")])
    out = check(_write(tmp_path, data)).to_dict()
    schema = json.loads((ROOT / "rules" / "schema" / "report.schema.json").read_text())
    jsonschema.validate(out, schema)
    assert out["rules"]["id"] == "ashrae-62.1-2019"
    assert [(a["id"], a["systems"]) for a in out["also"]] == [("ashrae-241-2023", None)]
    assert {f["rule"]: f["pack"] for f in out["findings"]}["eca-office"] == "ashrae-241-2023"
    packs = out["systems"][0]["zones"][0]["packs"]["ashrae-241-2023"]["values"]
    assert packs["ECA_pp"] == {"value": 12.0, "unit": "ft**3/min/person"}


def test_repeated_rules_option_on_the_command_line(tmp_path):
    path = _write(tmp_path, _schedule("ashrae-62.1-2019", [_system("A", "120 cfm")]))
    run = lambda *args: subprocess.run(  # noqa: E731
        [sys.executable, "-m", "airgate", "check", str(path), *args],
        capture_output=True, text=True, env=subprocess_env(), cwd=tmp_path)
    one = run("--rules", "ashrae-62.1-2019")
    assert one.returncode == 0, one.stderr
    both = run("--rules", "ashrae-62.1-2019", "--rules", "ashrae-241-2023")
    assert both.returncode == 1, both.stderr
    assert "[ashrae-241-2023: eca-office]" in both.stdout
    assert "also     : ashrae-241-2023" in both.stdout
    wrong = run("--rules", "ashrae-241-2023")
    assert wrong.returncode == 2 and "supplement pack" in wrong.stderr
    assert "Traceback" not in wrong.stderr


def test_a_rates_pack_listed_second_is_a_located_error(tmp_path):
    data = _schedule(["ashrae-62.1-2019", "imc-2018"], [_system("A", "120 cfm")])
    with pytest.raises(AirgateError) as info:
        check(_write(tmp_path, data))
    err = info.value
    assert "rates pack" in err.message and err.field == ("rules", 1) and err.line is not None


def test_a_supplement_listed_first_is_a_located_error(tmp_path):
    data = _schedule(["ashrae-241-2023", "ashrae-62.1-2019"], [_system("A", "120 cfm")])
    with pytest.raises(AirgateError) as info:
        check(_write(tmp_path, data))
    assert "supplement pack" in info.value.message and info.value.line is not None


def test_a_rates_pack_under_extra_rules_is_a_located_error(tmp_path):
    data = _schedule("ashrae-62.1-2019", [_system("A", "120 cfm", extra_rules=["imc-2018"])])
    with pytest.raises(AirgateError) as info:
        check(_write(tmp_path, data))
    assert info.value.field == ("systems", 0, "extra_rules", 0) and info.value.line is not None


def test_a_pack_listed_twice_is_refused(tmp_path):
    data = _schedule(["ashrae-62.1-2019", "ashrae-62.1-2019"], [_system("A", "120 cfm")])
    with pytest.raises(AirgateError, match="listed twice"):
        check(_write(tmp_path, data))


SUPPLEMENT = """pack: 1
id: {id}
title: "Invented supplement pack for a test"
role: supplement
document: Invented Test Code
edition: "2026"
units: IP
provenance: invented
cautions: ["invented for a test"]
requirements:
  - id: eca-office
    kind: clean-airflow
    severity: fail
    message: "Invented target"
    per_person: {pp}
    credit: [{credit}]
    applies_to: {{space: [{space}]}}
    source: {{section: "Section 1"}}
    provenance: invented
"""


def _pack(tmp_path: Path, pid: str = "test-supplement", pp: float = 10,
          credit: str = "outdoor_air", space: str = "office-space") -> Path:
    folder = tmp_path / "packs"
    folder.mkdir(exist_ok=True)
    (folder / f"{pid}.yaml").write_text(
        SUPPLEMENT.format(id=pid, pp=pp, credit=credit, space=space), encoding="utf-8")
    return folder


def test_a_supplement_naming_a_space_the_rates_pack_lacks_is_a_pack_error(tmp_path):
    folder = _pack(tmp_path, space="office-spaces")
    data = _schedule(["ashrae-62.1-2019", "test-supplement"], [_system("A", "120 cfm")])
    with pytest.raises(AirgateError) as info:
        check(_write(tmp_path, data), search=[folder])
    err = info.value
    assert "office-spaces" in err.message and "did you mean 'office-space'" in err.message
    assert err.file.endswith("test-supplement.yaml") and err.line is not None


def test_a_supplement_beside_a_pack_it_was_not_written_for_is_one_error(tmp_path):
    # The project's own contract (docs/schedule-format.md, several packs): the ASHRAE 241 pack's
    # selectors name 62.1 space types; beside the dwelling-unit pack (62.2, which has none of
    # them) the run says so once, listing the names, rather than once per name.
    data = _schedule(["ashrae-62.2-2019", "ashrae-241-2023"], [_system("A", "120 cfm")])
    with pytest.raises(AirgateError) as info:
        check(_write(tmp_path, data))
    err = info.value
    assert not getattr(err, "errors", None) or len(err.errors) == 1
    assert "names 24 space types that rates pack ashrae-62.2-2019 does not have" in err.message
    assert "'office-space'" in err.message and "and 20 more" in err.message
    assert "it has none of them" in err.message and "another rates pack" in err.message
    assert err.file.endswith("ashrae-241-2023.yaml") and (err.line, err.column) == (51, 26)


def test_waivers_name_the_pack_when_rule_ids_collide(tmp_path):
    # Both supplements have requirement eca-office: 12 cfm per person fails the invented 20 and
    # the 30 of ASHRAE 241-2023 (Table 5-1, office, from memory).
    folder = _pack(tmp_path, pp=20)
    base = {"rule": "eca-office", "subject": "A/a", "reason": "accepted for the test",
            "approved_by": "test reviewer"}
    rules = ["ashrae-62.1-2019", "ashrae-241-2023", "test-supplement"]
    ambiguous = _schedule(rules, [_system("A", "120 cfm")], waivers=[base])
    with pytest.raises(AirgateError) as info:
        check(_write(tmp_path, ambiguous, "a.yaml"), search=[folder])
    assert "say which pack" in info.value.message
    named = _schedule(rules, [_system("A", "120 cfm")],
                      waivers=[{**base, "pack": "test-supplement"}])
    report = check(_write(tmp_path, named, "b.yaml"), search=[folder])
    waived = {(f.pack, f.waived) for f in report.findings if f.rule == "eca-office"}
    assert waived == {("ashrae-241-2023", False), ("test-supplement", True)}
    assert report.verdict == "fail"  # the other pack's finding still fails
    unknown = _schedule(rules, [_system("A", "120 cfm")], waivers=[{**base, "pack": "nope"}])
    with pytest.raises(AirgateError, match="not checked under"):
        check(_write(tmp_path, unknown, "c.yaml"), search=[folder])


def test_a_waiver_without_pack_still_covers_a_unique_rule(tmp_path):
    base = {"rule": "eca-office", "subject": "A/a", "reason": "accepted for the test",
            "approved_by": "test reviewer"}
    data = _schedule(["ashrae-62.1-2019", "ashrae-241-2023"], [_system("A", "120 cfm")],
                     waivers=[base])
    report = check(_write(tmp_path, data))
    assert report.verdict == "pass" and report.waivers[0].state == "applied"


def test_coupled_supply_share_needs_both_outdoor_air_and_filtration_credited(tmp_path):
    # On a multiple-zone system the supply air's equivalent clean airflow is one coupled figure;
    # a pack crediting outdoor air alone cannot split it: not evaluated, said.
    folder = _pack(tmp_path, credit="outdoor_air")
    zones = [{"id": z, **OFFICE, "primary_airflow": "400 cfm"} for z in ("1", "2")]
    system = {"id": "VAV-1", "kind": "multiple-zone", "outdoor_air": "300 cfm",
              "supply_airflow": "800 cfm", "filter": {"merv": 13}, "zones": zones}
    data = _schedule(["ashrae-62.1-2019", "test-supplement"], [system])
    report = check(_write(tmp_path, data), search=[folder])
    outs = [o for o in report.requirements if o.pack == "test-supplement"]
    assert [o.verdict for o in outs] == ["not-evaluated", "not-evaluated"]
    assert "coupled" in outs[0].finding.message
    both = _schedule(["ashrae-62.1-2019", "ashrae-241-2023"], [system])
    report = check(_write(tmp_path, both, "b.yaml"))
    for z in report.systems[0].zones:
        t, c = z.packs["ashrae-241-2023"], z.contaminants["aerosol"]
        assert t.value("ECA") == pytest.approx(c.value("Qc_supply") + c.value("Qc_cleaner"))


def test_unlisted_categories_are_said_to_be_unchecked(tmp_path):
    corridor = _system("C", "100 cfm", zone={"space": "corridors", "occupants": 0})
    data = _schedule(["ashrae-62.1-2019", "ashrae-241-2023"], [corridor])
    report = check(_write(tmp_path, data))
    assert any("ashrae-241-2023: no requirement of the pack applies to C/c (corridors)" in n
               for n in report.notes)


def test_explain_writes_the_supplement_trail(tmp_path, capsys):
    # the hand sum of the first test: (120 + 0.5*480 + 90) cfm = 450 cfm for 10 people
    from airgate.cli import main

    data = _schedule(["ashrae-62.1-2019", "ashrae-241-2023"], [
        _system("A", "120 cfm", supply_airflow="600 cfm", filter={"efficiency": 0.5},
                zone={"air_cleaners": [{"cadr": "90 cfm"}]})])
    assert main(["explain", str(_write(tmp_path, data)), "--zone", "a"]) == 0
    out = capsys.readouterr().out
    assert "also rule pack ashrae-241-2023" in out
    assert "rule pack ashrae-241-2023 (supplement pack)" in out
    assert "= 120 + 240 + 90" in out and "= 45 cfm/person" in out
