"""Requirements beyond the sum of rates: selectors, each kind, findings, and pack errors.

Hand-computed cases on invented buildings. The rates are those of the built-in 62.1-2019 pack
(ANSI/ASHRAE 62.1-2019 Table 6-1: office 5 cfm/person and 0.06 cfm/ft² — from memory,
classrooms 10 and 0.12 — published, compared with a public reprint of the 2016 table); the requirements' figures are invented.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from airgate.cli import main
from airgate.errors import RulePackError
from airgate.models.requirements import Selector, Subject
from airgate.readers.rulepack import load_pack

from conftest import CFM, FT2, schedule

HEAD = """\
pack: 1
id: city-1
extends: ashrae-62.1-2019
title: "Invented city amendments for the requirement tests"
document: Invented city code (fictional)
edition: "1"
provenance: invented
amend:
  requirements:
    add:
"""


def pack(folder: Path, requirements: str, name: str = "city-1") -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"{name}.yaml"
    path.write_text(HEAD.replace("city-1", name) + requirements, encoding="utf-8")
    return path


def zone(zid, space, area, occupants=None, **kw):
    z = {"id": zid, "space": space, "area": area, "air_distribution": "ceiling-supply-cool", **kw}
    if occupants is not None:
        z["occupants"] = occupants
    return z


def single(sid, intake, z, **kw):
    return {"id": sid, "kind": "single-zone", "outdoor_air": intake, "zones": [z], **kw}


def outcome(report, rule, subject):
    found = [o for o in report.requirements if o.rule == rule and o.subject == subject]
    return found[0].verdict if found else "not-applicable"


# --- selectors -------------------------------------------------------------------------------

Z1 = Subject(system="AHU-1", system_kind="multiple-zone", recirculating=True, zone="101",
             space="office-space", group="office-buildings", air_class=1,
             air_distribution=frozenset({"ceiling-supply-cool"}))
Z2 = Subject(system="AHU-1", system_kind="multiple-zone", recirculating=True, zone="102",
             space="restaurant-dining-rooms", group="food-and-beverage-service", air_class=2)
SYS = Subject(system="AHU-1", system_kind="multiple-zone", recirculating=True, zones=(Z1, Z2))


def test_selector_terms_and_or_not():
    assert Selector().matches(Z1)
    assert Selector(space=frozenset({"office-space"})).matches(Z1)
    assert not Selector(space=frozenset({"office-space"})).matches(Z2)
    both = Selector(group=frozenset({"office-buildings"}), air_class=frozenset({1}))
    assert both.matches(Z1) and not both.matches(Z2)
    either = Selector(any=(Selector(space=frozenset({"x"})), Selector(air_class=frozenset({2}))))
    assert either.matches(Z2) and not either.matches(Z1)
    assert Selector(not_=Selector(air_class=frozenset({1}))).matches(Z2)
    assert Selector(all=(Selector(recirculating=True),
                         Selector(system_kind=frozenset({"multiple-zone"})))).matches(Z1)
    assert Selector(air_distribution=frozenset({"ceiling-supply-cool"})).matches(Z1)
    assert not Selector(air_distribution=frozenset({"ceiling-supply-cool"})).matches(Z2)
    assert Selector(serves=Selector(air_class=frozenset({2}))).matches(SYS)
    assert not Selector(serves=Selector(air_class=frozenset({3}))).matches(SYS)


# --- the kinds, through the engine ------------------------------------------------------------

FLOOR = """\
      - id: floor
        kind: larger-of
        severity: fail
        message: "At least 15 cfm per person in classrooms (invented)"
        per_person: 15
        at: AT
        applies_to: {space: [classrooms-age-9-plus]}
        source: {section: "Section 1"}
        provenance: invented
"""


def test_larger_of_raises_a_multiple_zone_systems_intake(tmp_path, evaluate):
    # Classroom 900 ft², 30 pupils: table Vbz = 10 × 30 + 0.12 × 900 = 408 cfm; floor 450 cfm.
    # Office 2000 ft², 10 people: 5 × 10 + 0.06 × 2000 = 170 cfm. With D = 1 the uncorrected
    # intake becomes Vou = 450 + 170 = 620 cfm (the floor carried as Rp 15, Ra 0 in the trail).
    pack(tmp_path, FLOOR.replace("AT", "Voz"))
    zones = [zone("101", "classrooms-age-9-plus", "900 ft2", 30, primary_airflow="1200 cfm"),
             zone("102", "office-space", "2000 ft2", 10, primary_airflow="1600 cfm")]
    data = schedule([{"id": "AHU-1", "kind": "multiple-zone", "outdoor_air": "700 cfm",
                      "zones": zones}], rules=str(tmp_path / "city-1.yaml"))
    report = evaluate(data)
    system = report.systems[0]
    assert system.trail.value("Vou") / CFM == pytest.approx(620.0)
    classroom = system.zones[0].trail
    assert classroom.value("Rp") / CFM == pytest.approx(15.0) and classroom.value("Ra") == 0
    assert "requirement floor" in classroom["Rp"].source
    # Ev = 1 + Xs − max Zpz = 1 + 620/2800 − 450/1200 = 0.8464; Vot = 620 / 0.8464 = 732.5 cfm
    assert system.trail.value("Vot") / CFM == pytest.approx(620 / (1 + 620 / 2800 - 450 / 1200))
    assert outcome(report, "floor", "AHU-1/101") == "fail"
    finding = next(f for f in report.findings if f.rule == "floor")
    assert finding.required.value / CFM == pytest.approx(450.0)
    assert finding.provided is None  # a recirculating system: the intake check says it
    assert finding.source.startswith("Invented city code (fictional), 1 edition, Section 1")
    assert outcome(report, "floor", "AHU-1/102") == "not-applicable"


def test_larger_of_at_vbz_and_at_voz(tmp_path, evaluate):
    # Heating with warm air 20 °F above the room over a ceiling return: Ez 0.8 (62.1-2019 Table
    # 6-4, from memory). Table Voz = 408 / 0.8 = 510 cfm. At Voz the floor (450) does not
    # govern; at Vbz it does: Vbz = 450, Voz = 450 / 0.8 = 562.5 cfm.
    warm = [{"supply": "ceiling", "return": "ceiling", "mode": "heating",
             "temperature_difference": "20 delta_degF"}]
    classroom = zone("101", "classrooms-age-9-plus", "900 ft2", 30, air_distribution=warm)
    for at, voz in (("Voz", 510.0), ("Vbz", 562.5)):
        pack(tmp_path, FLOOR.replace("AT", at))
        data = schedule([single("RTU-1", "600 cfm", dict(classroom))],
                        rules=str(tmp_path / "city-1.yaml"))
        report = evaluate(data)
        assert report.systems[0].zones[0].trail.value("Voz") / CFM == pytest.approx(voz)
        assert outcome(report, "floor", "RTU-1/101") == "pass"


def test_larger_of_instead_of_the_sum(tmp_path, evaluate):
    # "the larger of two figures instead of their sum": Vbz = max(15·Pz, 0.2·Az) for an office
    # of 1000 ft² and 10 people: max(150, 200) = 200 cfm, replacing 5 × 10 + 0.06 × 1000 = 110.
    pack(tmp_path, """\
      - id: larger
        kind: larger-of
        severity: fail
        message: "The larger of 15 cfm per person and 0.2 cfm/ft² (invented)"
        per_person: 15
        per_area: 0.2
        instead_of_sum: true
        applies_to: {space: [office-space]}
        source: {section: "Section 2"}
        provenance: invented
""")
    data = schedule([single("RTU-1", "190 cfm", zone("101", "office-space", "1000 ft2", 10))],
                    rules=str(tmp_path / "city-1.yaml"))
    report = evaluate(data)
    trail = report.systems[0].zones[0].trail
    assert trail.value("Vbz") / CFM == pytest.approx(200.0)
    assert trail.value("Rp") == 0 and trail.value("Ra") / (CFM / FT2) == pytest.approx(0.2)
    assert outcome(report, "larger", "RTU-1/101") == "fail"
    finding = next(f for f in report.findings if f.rule == "larger")
    assert finding.provided.value / CFM == pytest.approx(190.0)  # a single-zone system's intake


def test_larger_of_air_changes_per_hour_of_the_zone_volume(tmp_path, evaluate):
    # "n air changes per hour but not less than the table's rate" (invented figure: 2 /h). An
    # office of 1000 ft² × 10 ft = 10,000 ft³ with 10 people: 2 × 10,000 / 60 = 333.3 cfm, larger
    # than 5 × 10 + 0.06 × 1000 = 110 cfm, so Vbz = 333.3 cfm (Ez 1.0). With a volume stated
    # instead: 6,000 ft³ → 200 cfm. Without height or volume the figure cannot be worked out:
    # not evaluated, and the table's 110 cfm stands.
    pack(tmp_path, """\
      - id: ach
        kind: larger-of
        severity: fail
        missing: warning
        message: "At least 2 air changes per hour (invented)"
        air_changes: 2
        at: Vbz
        applies_to: {space: [office-space]}
        source: {section: "Section 3"}
        provenance: invented
""")
    zones = [zone("101", "office-space", "1000 ft2", 10, height="10 ft"),
             zone("102", "office-space", "1000 ft2", 10, volume="6000 ft3"),
             zone("103", "office-space", "1000 ft2", 10)]
    data = schedule([{"id": "DOAS-1", "kind": "outdoor-air", "outdoor_air": "700 cfm",
                      "zones": zones}], rules=str(tmp_path / "city-1.yaml"))
    report = evaluate(data)
    vbz = [z.trail.value("Vbz") / CFM for z in report.systems[0].zones]
    assert vbz == pytest.approx([2 * 10_000 / 60, 2 * 6_000 / 60, 110.0])
    assert outcome(report, "ach", "DOAS-1/101") == "pass"
    assert outcome(report, "ach", "DOAS-1/103") == "not-evaluated"
    finding = next(f for f in report.findings if f.rule == "ach")
    assert finding.severity == "warning" and "states no height or volume" in finding.message


def test_formula_requirement_on_systems_and_missing_inputs(tmp_path, evaluate):
    # An invented over-supply limit: a system's intake at most 1.5 × Vot.
    pack(tmp_path, """\
      - id: oversupply
        kind: formula
        subject: system
        severity: warning
        message: "Intake at most 1.5 × Vot (invented)"
        provided: "Vot_design"
        required: "factor * Vot"
        compare: at-most
        quantity: airflow
        params: {factor: {quantity: fraction, value: 1.5}}
        source: {section: "Section 3"}
        provenance: invented
      - id: per-volume
        kind: formula
        subject: zone
        severity: info
        missing: info
        message: "Zone volume known (invented)"
        provided: "V"
        required: "Az * h"
        compare: at-least
        quantity: volume
        params: {h: {quantity: length, value: 8}}
        source: {section: "Section 4"}
        provenance: invented
""")
    office = zone("101", "office-space", "2000 ft2", 10)  # Vot = 170 cfm
    data = schedule([single("RTU-1", "300 cfm", office), single("RTU-2", "250 cfm",
                     zone("102", "office-space", "2000 ft2", 10, height="9 ft"))],
                    rules=str(tmp_path / "city-1.yaml"))
    report = evaluate(data)
    assert outcome(report, "oversupply", "RTU-1") == "fail"
    assert outcome(report, "oversupply", "RTU-2") == "pass"
    f = next(f for f in report.findings if f.rule == "oversupply")
    assert f.severity == "warning"
    assert f.required.value / CFM == pytest.approx(255.0)
    assert f.provided.value / CFM == pytest.approx(300.0)
    # an at-most requirement exceeded by 45 cfm has a margin of -45 cfm (-45/255), a shortfall
    from airgate.evaluation.findings import margin

    m = margin(f.required, f.provided)
    assert m.difference / CFM == pytest.approx(-45.0) and m.relative == pytest.approx(-45 / 255)
    assert outcome(report, "per-volume", "RTU-1/101") == "not-evaluated"
    missing = next(f for f in report.findings if f.rule == "per-volume")
    assert missing.message.startswith("not evaluated:") and "V is not known" in missing.message
    assert outcome(report, "per-volume", "RTU-2/102") == "pass"


def test_density_limit_uses_the_default_density_too(tmp_path, evaluate):
    # Table density of conference/meeting: 50 per 1000 ft² (62.1-2019, published row).
    pack(tmp_path, """\
      - id: density
        kind: density-limit
        severity: fail
        message: "At most 40 people per 1000 ft² (invented)"
        max_density: 40
        source: {section: "Section 5"}
        provenance: invented
""")
    data = schedule([single("RTU-1", "300 cfm", zone("101", "conference-meeting", "1000 ft2"))],
                    rules=str(tmp_path / "city-1.yaml"))
    report = evaluate(data)
    assert outcome(report, "density", "RTU-1/101") == "fail"
    f = next(f for f in report.findings if f.rule == "density")
    assert f.provided.value * 1000 * FT2 == pytest.approx(50.0)
    assert f.required.value * 1000 * FT2 == pytest.approx(40.0)


def test_findings_fail_the_subject_and_sort_with_the_others(tmp_path, evaluate):
    pack(tmp_path, """\
      - id: filter
        kind: minimum-filter
        severity: fail
        message: "MERV 11 at least (invented)"
        merv: 11
        source: {section: "Section 6"}
        provenance: invented
""")
    data = schedule([single("RTU-1", "300 cfm", zone("101", "office-space", "1000 ft2", 5),
                            filter={"merv": 8})], rules=str(tmp_path / "city-1.yaml"))
    report = evaluate(data)
    assert report.verdict == "fail" and report.systems[0].verdict == "fail"
    f = report.findings[0]
    assert (f.rule, f.subject, f.required.value, f.provided.value) == ("filter", "RTU-1", 11, 8)
    assert f.location.line is not None


@pytest.mark.parametrize(("body", "text"), [
    ("""\
      - {id: f, kind: minimum-filter, severity: fail, message: m, merv: 13,
         applies_to: {space: [office-space]}, source: {section: S}, provenance: invented}
""", "'space' selects zones, but this requirement applies to systems"),
    ("""\
      - {id: f, kind: ez-cap, severity: fail, message: m, max_ez: 1.0,
         applies_to: {serves: {space: [office-space]}}, source: {section: S}, provenance: invented}
""", "'serves' selects systems"),
    ("""\
      - {id: system-intake, kind: ez-cap, severity: fail, message: m, max_ez: 1.0,
         source: {section: S}, provenance: invented}
""", "requirement id 'system-intake' is already used by a check of the pack"),
    ("""\
      - {id: f, kind: ez-cap, severity: fail, message: m, max_ez: 1.0,
         applies_to: {air_distribution: [ceiling-suply-cool]}, source: {section: S}, provenance: invented}
""", "unknown air distribution row 'ceiling-suply-cool'; did you mean 'ceiling-supply-cool'"),
    ("""\
      - {id: f, kind: formula, subject: zone, severity: fail, message: m, provided: "Voz",
         required: "Voz * 1", compare: at-least, quantity: airflow,
         params: {Pz: {quantity: people, value: 1}}, source: {section: S}, provenance: invented}
""", "parameter 'Pz' has the name of a trail symbol"),
    ("""\
      - {id: f, kind: larger-of, severity: fail, message: m, source: {section: S}, provenance: invented}
""", "missing required field 'per_person'"),
])
def test_requirement_pack_errors(tmp_path, capsys, body, text):
    path = pack(tmp_path, body)
    assert main(["rules", "show", str(path)]) == 2
    err = capsys.readouterr().err
    assert f"{path}:" in err and "rule pack error: amend.requirements.add[0]" in err
    assert text in err


def test_a_selector_naming_a_retired_space_type_says_so(tmp_path):
    (tmp_path / "city-2.yaml").write_text(HEAD.replace("city-1", "city-2").replace(
        "amend:\n", "amend:\n  occupancy:\n    retire:\n      - {id: cell, reason: \"no jail\"}\n")
        + """\
      - {id: f, kind: ez-cap, severity: fail, message: m, max_ez: 1.0,
         applies_to: {space: [cell]}, source: {section: S}, provenance: invented}
""", encoding="utf-8")
    with pytest.raises(RulePackError, match="unknown space type 'cell'; it was retired by rule "
                                            "pack city-2 .*: no jail"):
        load_pack(str(tmp_path / "city-2.yaml"))


def test_requirements_are_listed_by_rules_show(capsys):
    assert main(["rules", "show", "ashrae-62.1-2019-quillby-bay"]) == 0
    out = capsys.readouterr().out
    assert "Requirements" in out and "classroom-outdoor-air-floor" in out
    assert "zone: space in classrooms-age-9-plus, classrooms-ages-5-8, lecture-classroom" in out
    assert "Retired entries" in out and "gambling-casinos" in out
    assert "extends   ashrae-62.1-2019" in out and "(amended: Ra)" in out


def test_passing_requirements_are_junit_cases(tmp_path, capsys):
    # Every check that applied is a JUnit test case, passes included (JUnit XML, common
    # practice): a pack requirement that passed appears as a case without a failure.
    import xml.etree.ElementTree as ET

    from airgate.cli import main
    from conftest import DEMO

    out = tmp_path / "r.xml"
    main(["check", str(DEMO), "--rules", "ashrae-62.1-2019-quillby-bay",
          "--format", f"junit:{out}"])
    cases = ET.parse(out).getroot().iter("testcase")
    names = [(c.get("name") or "") + " " + (c.get("classname") or "") for c in cases
             if c.find("failure") is None and c.find("skipped") is None]
    assert any("classroom-outdoor-air-floor" in n or "recirculating-filter-merv-13" in n
               for n in names)
