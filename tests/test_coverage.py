"""Which checks ran on which subject (evaluation/coverage.py), passes included.

The property checked is the module's own contract: every finding the engine emits belongs to a
check case derived from the pack and the evaluation (not only to the catch-all for findings),
and a case without findings passes. The schedules are invented, built to trigger each check
the built-in pack runs; the expected findings follow from ANSI/ASHRAE Standard 62.1-2019 as the
pack encodes it (from memory).
"""

from __future__ import annotations

import pytest

from airgate.evaluation.coverage import applicable

from conftest import schedule


def zone(zid, space="office-space", area="1000 ft2", **kw):
    return {"id": zid, "space": space, "area": area, "air_distribution": "ceiling-supply-cool",
            **kw}


CASES = {
    "simplified-vav": [{
        "id": "AHU-1", "kind": "multiple-zone", "outdoor_air": "100 cfm",
        "ventilation_efficiency": "simplified", "population": 60,
        "zones": [zone("1", primary_airflow="100 cfm"), zone("2", occupants=20),
                  zone("3", "warehouses", primary_airflow="400 cfm")]}],
    "outdoor-air": [{
        "id": "DOAS-1", "kind": "outdoor-air", "outdoor_air": "100 cfm",
        "zones": [zone("1", outdoor_air="20 cfm"), zone("2", outdoor_air="200 cfm"),
                  zone("3", "telephone-closets")]}],
    "air-classes": [{
        "id": "AHU-2", "kind": "multiple-zone", "outdoor_air": "5000 cfm",
        "zones": [zone("1", primary_airflow="2000 cfm"),
                  zone("2", "daycare-sickroom", primary_airflow="2000 cfm"),
                  zone("3", "art-classroom", primary_airflow="2000 cfm"),
                  zone("4", primary_airflow="2000 cfm", air_class=4)]}],
    "assumed-and-negative-ev": [{
        "id": "AHU-3", "kind": "multiple-zone", "outdoor_air": "1000 cfm",
        "zones": [{"id": "1", "space": "office-space", "area": "1000 ft2",
                   "primary_airflow": "5000 cfm"},
                  zone("2", "conference-meeting", area="2000 ft2", occupants=200,
                       primary_airflow="300 cfm")]}],
    "single-zone": [{
        "id": "RTU-1", "kind": "single-zone", "outdoor_air": "10 cfm",
        "zones": [zone("1", height="9 ft")]}],
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_every_finding_belongs_to_a_derived_check(evaluate, name):
    report = evaluate(schedule(CASES[name]))
    assert report.findings, "each scenario is built to produce findings"
    derived = {(c.rule, c.subject) for c in applicable(_model(report), report.pack,
                                                         report.systems, lambda p: None)}
    for f in report.findings:
        assert (f.rule, f.subject) in derived, f"{f.rule} on {f.subject} is not derived"
    # every case with findings carries them; every case without passes
    for case in report.cases:
        mine = [f for f in report.findings if (f.rule, f.subject) == (case.rule, case.subject)]
        assert list(case.findings) == mine
        assert (case.status == "pass") == (not mine)


def test_checks_expected_per_scenario(evaluate):
    report = evaluate(schedule(CASES["simplified-vav"]))
    rules = {(c.rule, c.subject): c.status for c in report.cases}
    # simplified procedure: VAV minimum 1.5·Voz per zone (Section 6.2.5.1, pack ratio 1.5)
    assert rules[("simplified-vav-minimum", "AHU-1/1")] == "fail"
    assert rules[("simplified-vav-minimum", "AHU-1/2")] == "info"  # not evaluated: no Vpz
    assert rules[("population-without-density", "AHU-1/3")] == "warning"
    assert rules[("diversity-above-one", "AHU-1")] == "warning"  # Ps 60 > ΣPz
    assert ("zone-limits-ev", "AHU-1/1") not in rules  # simplified: no Evz per zone
    report = evaluate(schedule(CASES["outdoor-air"]))
    rules = {(c.rule, c.subject): c.status for c in report.cases}
    assert rules[("zone-outdoor-air", "DOAS-1/1")] == "fail"
    assert rules[("zone-outdoor-air", "DOAS-1/2")] == "pass"
    assert ("zone-outdoor-air", "DOAS-1/3") not in rules  # no outdoor air scheduled
    assert rules[("zone-air-sum", "DOAS-1")] == "warning"
    assert rules[("space-without-rates", "DOAS-1/3")] == "info"
    assert ("air-class-mixing", "DOAS-1") not in rules  # outdoor-air: not recirculating


def test_passing_comparisons_carry_required_and_provided(evaluate):
    report = evaluate(schedule(CASES["outdoor-air"]))
    case = next(c for c in report.cases if (c.rule, c.subject) == ("zone-outdoor-air",
                                                                   "DOAS-1/2"))
    assert case.status == "pass"
    assert case.provided.value > case.required.value > 0
    assert case.location.line is not None  # points at the zone's outdoor_air


def _model(report):
    from airgate.readers.schedule import read_schedule

    return read_schedule(report.schedule_file).model


def test_declared_limit_and_short_term_checks_are_cases(evaluate):
    import yaml

    from conftest import DEMO

    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["project"]["co2_limit"] = 1100  # ppm, declared by the schedule (invented)
    report = evaluate(data)
    limit = {c.subject: c.status for c in report.cases if c.rule == "concentration-limit"}
    assert limit["AHU-3/203"] == "fail" and limit["AHU-3/201"] == "pass"
    derived = {(c.rule, c.subject) for c in applicable(_model(report), report.pack,
                                                         report.systems, lambda p: None)}
    assert {(f.rule, f.subject) for f in report.findings} <= derived


@pytest.mark.parametrize("name", sorted(CASES))
def test_every_format_renders_every_scenario(evaluate, name):
    # Writers on unusual results (no intake, Ev ≤ 0 so Vot is infinite, zones without any
    # scheduled outdoor air): each format is valid for its consumer (JUnit: an XML parser;
    # SARIF: the SARIF 2.1.0 JSON Schema, OASIS).
    import json
    import xml.etree.ElementTree as ET

    from airgate.evaluation.batch import gather
    from airgate.writers import formats

    from test_report_formats import assert_valid_sarif

    batch = gather([evaluate(schedule(CASES[name]))], [])
    for fmt in (name for name, f in formats.FORMATS.items() if not f.binary):  # pdf: test_pdf
        out = formats.render(fmt, batch, 30)
        assert "licensed professional of record govern" in out
        if fmt == "json":
            json.loads(out)
        elif fmt == "junit":
            assert ET.fromstring(out.encode("utf-8")).tag == "testsuites"
        elif fmt == "sarif":
            assert_valid_sarif(out)


def test_cases_in_schedule_order_then_pack_order(evaluate):
    """The order of the cases (every writer lists them so): subject by subject as the schedule
    lists them (a system, then its zones), each subject's rules in the order the pack lists its
    checks (common practice: a report follows its inputs' order)."""
    import yaml

    from conftest import DEMO

    for data in [schedule(CASES[name]) for name in sorted(CASES)] + [
            yaml.safe_load(DEMO.read_text(encoding="utf-8"))]:
        report = evaluate(data)
        subjects = [x for s in report.systems
                    for x in (s.id, *(f"{s.id}/{z.id}" for z in s.zones))]
        rank = list(report.pack.checks) + list(report.pack.requirements)
        base = [c for c in report.cases if c.pack is None]  # a supplement pack's come after
        assert list(report.cases)[:len(base)] == base
        keys = [(subjects.index(c.subject), rank.index(c.rule)) for c in base]
        assert keys == sorted(keys)
        assert len(set(keys)) == len(keys)  # one case per check and subject


def test_cases_are_worked_out_when_first_read():
    """coverage.Cases reads like the list it stands for, and works it out once, when asked."""
    import copy
    import pickle

    from airgate.evaluation.coverage import Cases, CheckCase
    from airgate.evaluation.findings import Location

    at = Location("b.yaml", 3, 5)
    made = [CheckCase("system-intake", "AHU-1", "AHU-1", None, at),
            CheckCase("zone-primary-airflow", "AHU-1/1", "AHU-1", "1", at)]
    more = [CheckCase("extra-rule", "AHU-1", "AHU-1", None, at, pack="supplement-pack")]
    calls = []
    lazy = Cases(lambda: calls.append(1) or list(made))
    lazy += more  # before anything is read: kept after the derived cases
    assert calls == []
    assert len(lazy) == 3 and calls == [1]
    assert list(lazy) == made + more and lazy[1] is made[1] and lazy[-1] is more[0]
    assert lazy == made + more and lazy[:2] == made
    assert any(c.rule == "extra-rule" for c in lazy)
    assert calls == [1]  # worked out once
    lazy += more  # after: appended to the list
    assert len(lazy) == 4
    for copied in (pickle.loads(pickle.dumps(lazy)), copy.deepcopy(lazy)):
        assert type(copied) is list and copied == list(lazy)
