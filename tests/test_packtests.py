"""Pack tests (``airgate rules test``): built-in packs pass their own, and the runner's contract.

The contract is the project's (docs/rule-packs.md, "Test the pack"): every requirement a pack
defines has at least one passing and one failing case; a wrong expectation fails with the case
file and line (exit 1); a broken case is an input error (exit 2).
"""

from __future__ import annotations

from pathlib import Path

import pytest

from airgate.cli import main
from airgate.api import packtests
from airgate.readers.rulepack import builtin_pack_ids, builtin_rules_dir, load_document

from conftest import ROOT

QUILLBY = "ashrae-62.1-2019-quillby-bay"


def test_every_built_in_pack_passes_its_own_tests(capsys):
    assert main(["rules", "test"]) == 0
    out = capsys.readouterr().out
    assert "Result: PASS" in out
    for pack_id in builtin_pack_ids():
        assert f"{pack_id}  (" in out


@pytest.mark.parametrize("pack_id", builtin_pack_ids())
def test_every_built_in_pack_ships_cases(pack_id):
    folder = builtin_rules_dir() / "tests" / pack_id
    assert packtests.case_files(folder), f"no pack tests in {folder}"


def test_every_requirement_of_a_built_in_pack_has_a_passing_and_a_failing_case():
    results = {r.pack: r for r in packtests.run(None)}
    checked = 0
    for pack_id in builtin_pack_ids():
        doc = load_document(pack_id)
        covered = set().union(*(c.covered for c in results[pack_id].cases))
        for rid in packtests.own_requirements(doc):
            assert (rid, "pass") in covered and (rid, "fail") in covered, rid
            checked += 1
    assert checked >= 6  # the Quillby Bay pack's five and the European pack's one


def _copy_case(tmp_path: Path, name: str, old: str, new: str) -> Path:
    text = (builtin_rules_dir() / "tests" / QUILLBY / name).read_text(encoding="utf-8")
    assert old in text
    path = tmp_path / QUILLBY / name
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text.replace(old, new), encoding="utf-8")
    return path


def test_a_wrong_expectation_fails_with_its_location(tmp_path, capsys):
    case = _copy_case(tmp_path, "filters.yaml",
                      "{subject: RTU-1, rule: recirculating-filter-merv-13, verdict: pass}",
                      "{subject: RTU-1, rule: recirculating-filter-merv-13, verdict: fail}")
    assert main(["rules", "test", str(case)]) == 1
    out = capsys.readouterr().out
    assert f"{case}:38:5: RTU-1 [recirculating-filter-merv-13]: expected fail, got pass" in out
    assert "Result: FAIL" in out


def test_a_wrong_severity_fails(tmp_path, capsys):
    case = _copy_case(tmp_path, "filters.yaml", "verdict: not-evaluated, severity: warning",
                      "verdict: not-evaluated, severity: info")
    assert main(["rules", "test", str(case)]) == 1
    assert "expected not-evaluated (info), got not-evaluated (warning)" in capsys.readouterr().out


@pytest.mark.parametrize(("old", "new", "message"), [
    ("{subject: RTU-1, rule:", "{subject: RTU-9, rule:", "no system or zone 'RTU-9' in the case's "
                                                         "schedule; did you mean"),
    ("rule: recirculating-filter-merv-13, verdict: pass}", "rule: recirculating-filter, verdict: pass}",
     "has no check or requirement 'recirculating-filter'; did you mean "
     "'recirculating-filter-merv-13'?"),
    ("verdict: pass}", "verdict: passes}", "'passes' is not one of"),
    ("      outdoor_air: 200 cfm\n      filter: {merv: 13}",
     "      outdoor_air: -200 cfm\n      filter: {merv: 13}",
     "schedule.systems[0].outdoor_air: must not be negative"),
])
def test_a_broken_case_is_an_input_error(tmp_path, capsys, old, new, message):
    case = _copy_case(tmp_path, "filters.yaml", old, new)
    assert main(["rules", "test", str(case)]) == 2
    err = capsys.readouterr().err
    assert f"{case}:" in err and message in err and "Traceback" not in err


def test_an_error_case_that_runs_fails(tmp_path, capsys):
    case = _copy_case(tmp_path, "retired-space-type.yaml", "space: gambling-casinos",
                      "space: game-arcades")
    assert main(["rules", "test", str(case)]) == 1
    assert "expected the run to stop with an error" in capsys.readouterr().out


def test_a_consultants_folder(tmp_path, capsys):
    # A folder of packs joins the search path; a pack without cases, or a requirement without a
    # failing case, fails the run.
    folder = tmp_path / "city"
    (folder / "tests" / "city-2030").mkdir(parents=True)
    (folder / "city-2030.yaml").write_text("""\
pack: 1
id: city-2030
extends: ashrae-62.1-2019
title: "Invented city (fictional)"
document: Invented city code (fictional)
edition: "2030"
provenance: invented
amend:
  requirements:
    add:
      - {id: merv-11, kind: minimum-filter, severity: fail, message: "MERV 11 (invented)", merv: 11,
         source: {section: "1"}, provenance: invented}
""", encoding="utf-8")
    case = folder / "tests" / "city-2030" / "filters.yaml"
    case.write_text("""\
test: 1
title: "MERV 11 passes"
schedule:
  schedule: 1
  project: {name: "Invented", units: IP}
  systems:
    - {id: RTU-1, kind: single-zone, outdoor_air: 200 cfm, filter: {merv: 11},
       zones: [{id: "1", space: office-space, area: 1000 ft2, air_distribution: ceiling-supply-cool}]}
expect:
  - {subject: RTU-1, rule: merv-11, verdict: pass}
""", encoding="utf-8")
    assert main(["rules", "test", str(folder)]) == 1
    out = capsys.readouterr().out
    assert "requirement merv-11 has no failing case" in out
    case.write_text(case.read_text(encoding="utf-8").replace(
        "filter: {merv: 11},", "filter: {merv: 11},\n      ").replace(
        "expect:", """\
    - {id: RTU-2, kind: single-zone, outdoor_air: 200 cfm, filter: {merv: 8},
       zones: [{id: "2", space: office-space, area: 1000 ft2, air_distribution: ceiling-supply-cool}]}
expect:
  - {subject: RTU-2, rule: merv-11, verdict: fail}"""), encoding="utf-8")
    assert main(["rules", "test", str(folder)]) == 0, capsys.readouterr().out
    (folder / "city-2031.yaml").write_text((folder / "city-2030.yaml").read_text("utf-8")
                                           .replace("id: city-2030", "id: city-2031")
                                           .replace("id: merv-11,", "id: merv-12,"), "utf-8")
    assert main(["rules", "test", str(folder)]) == 1
    assert "no test cases in" in capsys.readouterr().out


def test_the_case_schema_is_published():
    import jsonschema

    from airgate.readers.packschema import schema

    jsonschema.Draft202012Validator.check_schema(schema("pack-test"))
    assert (ROOT / "rules" / "schema" / "pack-test.schema.json").is_file()
