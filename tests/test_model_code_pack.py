"""The model mechanical code pack (imc-2018): a layer on the 62.1-2019 pack that cites the code.

What is checked against outside sources lives in tests/test_pack_sources.py (the public copies)
and in the pack's own cases, rules/tests/imc-2018/ (hand computations citing Table 403.3.1.1 row
by row). Here: the layering contract it relies on (equations cited by the amending document, an
amended value carrying the amendment's provenance, per-room and per-vehicle exhaust rows), the
change list `rules diff` gives between the standard and the code, and the demo checked under it.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from airgate.cli import main
from airgate.readers.rulepack import load_pack

from conftest import CFM, schedule

DEMO = Path(__file__).resolve().parents[1] / "fixtures" / "demo" / "fernhollow-civic-centre.yaml"

CHILD = """\
pack: 1
id: code-1
extends: ashrae-62.1-2019
title: "A code printing the standard's equations under its own numbers (invented)"
document: Model code (invented)
edition: "1"
provenance: invented
cautions: ["Invented pack for a test."]
amend:
  equations:
    change:
      - {id: EQ_ID, set: SET, source: {section: "Section 9.1"}, provenance: invented}
"""


def _child(tmp_path: Path, eq_id: str = "zone_outdoor_airflow",
           set_: str = "{section: 'Section 9.1'}") -> Path:
    folder = tmp_path / "packs"
    folder.mkdir(exist_ok=True)
    (folder / "code-1.yaml").write_text(CHILD.replace("EQ_ID", eq_id).replace("SET", set_),
                                        encoding="utf-8")
    return folder


def test_an_equation_change_cites_the_amending_document(tmp_path):
    pack = load_pack("code-1", search=[_child(tmp_path)])
    eq = pack.equations["zone_outdoor_airflow"]
    assert (eq.source.document, eq.source.edition, eq.source.section) == (
        "Model code (invented)", "1", "Section 9.1")
    assert eq.provenance == "invented" and eq.form == "Voz = Vbz / Ez"
    other = pack.equations["breathing_zone_outdoor_airflow"]  # not amended: still the standard
    assert other.source.document == "ANSI/ASHRAE Standard 62.1" and other.source.edition == "2019"


@pytest.mark.parametrize(("eq_id", "set_", "message"), [
    ("zone_outdoor_airflw", "{section: 'Section 9.1'}", "did you mean 'zone_outdoor_airflow'"),
    ("zone_outdoor_airflow", "{Rp: 5}", "Rp"),
])
def test_a_bad_equation_change_is_located(tmp_path, capsys, eq_id, set_, message):
    folder = _child(tmp_path, eq_id, set_)
    assert main(["rules", "validate", "code-1", "--rules-path", str(folder)]) == 2
    err = capsys.readouterr().err
    assert "code-1.yaml:" in err and "amend.equations.change[0]" in err and message in err
    assert "Traceback" not in err


def test_the_code_pack_cites_the_code_for_its_rows_equations_and_methods():
    pack = load_pack("imc-2018")
    office = pack.categories["office-space"]
    assert office.cite("Rp").startswith("International Mechanical Code, 2018 edition, Table 403.3.1.1")
    # an amended value carries the amendment's provenance, not the base row's ("published")
    assert office.provenance_of("Rp") == "from memory"
    kept = pack.categories["office-breakrooms"]  # not a row of the code: cites the standard
    assert kept.cite("Rp").startswith("ANSI/ASHRAE Standard 62.1, 2019 edition, Table 6-1")
    assert "Section 403.3.1.1" in kept.notes
    vbz = pack.equations["breathing_zone_outdoor_airflow"]
    assert vbz.source.document == "International Mechanical Code"
    assert vbz.source.section.startswith("Section 403.3.1.1.1.1")
    assert set(pack.methods) == {"table", "detailed"} and pack.default_method == "table"
    assert pack.exhaust["toilets-private"].per == "room"
    assert pack.exhaust["garages-separate-for-each-dwelling"].per == "vehicle"


def test_diff_between_the_standard_and_the_code_reads_as_a_change_list(capsys):
    assert main(["rules", "diff", "ashrae-62.1-2019", "imc-2018", "--format", "json"]) == 0
    d = json.loads(capsys.readouterr().out)
    sections = {s["name"]: s for s in d["sections"]}
    occ = sections["occupancy"]
    added = {a["id"]: a["entry"] for a in occ["added"]}
    # Table 403.3.1.1 rows the standard's table does not have (values as entered in the pack)
    assert added["smoking-lounges"]["Rp"] == 60 and added["meat-processing"]["Rp"] == 15
    changed = {c["id"]: {f["field"]: (f["from"], f["to"]) for f in c["fields"]}
               for c in occ["changed"]}
    assert changed["warehouses"]["Rp"] == (10, 0)  # per area only in the code
    assert changed["beauty-and-nail-salons"]["air_class"] == (2, 4)  # note b
    assert not occ["removed"]  # rows the code does not list are kept, with a note
    ev = sections["ventilation_efficiency"]
    assert [a["id"] for a in ev["added"]] == ["table"]
    assert ev["removed"][0]["id"] == "simplified" and "not in it" in ev["removed"][0]["retired"]
    exhaust = {c["id"]: {f["field"]: (f["from"], f["to"]) for f in c["fields"]}
               for c in sections["exhaust"]["changed"]}
    assert exhaust["kitchens-residential"]["continuous"] == (50, 25)
    checks = sections["checks"]
    assert {r["id"] for r in checks["removed"]} == {"natural-depth", "simplified-vav-minimum",
                                                    "makeup-transfer-use"}
    pack = {c["field"]: c["to"] for c in d["pack"]}
    assert pack["document"] == "International Mechanical Code" and pack["edition"] == "2018"
    assert any(c["field"] == "ventilation_efficiency.default" and c["to"] == "table"
               for c in d["pack"])


def test_the_demo_checks_under_the_code_and_the_report_names_it(capsys):
    code = main(["check", str(DEMO), "--rules", "imc-2018", "--format", "json"])
    assert code in (0, 1)
    report = json.loads(capsys.readouterr().out)
    assert report["rules"]["id"] == "imc-2018"
    assert report["rules"]["document"] == "International Mechanical Code"
    assert report["rules"]["edition"] == "2018"


def test_diff_in_markdown_lists_every_change_of_the_json(capsys):
    # The Markdown change list holds the same entries as the JSON diff: one table row per added
    # entry, per removed entry and per changed field (the count is taken from the JSON).
    assert main(["rules", "diff", "ashrae-62.1-2019", "imc-2018", "--format", "json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert main(["rules", "diff", "ashrae-62.1-2019", "imc-2018", "--format", "markdown"]) == 0
    text = capsys.readouterr().out
    assert text.startswith("# Rule pack diff: ashrae-62.1-2019 → imc-2018\n")
    rows = [line for line in text.splitlines() if line.startswith("| ") and
            not line.startswith(("| id ", "| field ", "| |", "| from ", "| to "))]
    expected = len(d["pack"]) + sum(len(s["added"]) + len(s["removed"]) +
                                    sum(len(c["fields"]) for c in s["changed"])
                                    for s in d["sections"])
    assert len(rows) == expected
    assert "| simplified | The code gives Ev by its Table 403.3.1.1.2.3.2" in text
    assert "| warehouses | Rp | 10 | 0 |" in text
    assert text.rstrip().endswith("licensed professional of record govern.")


def test_the_code_pack_keeps_the_iaq_procedure_under_its_section_403_2_exception(tmp_path):
    # International Mechanical Code 2018 Section 403.2, Exception (from memory; a public forum
    # thread quotes the 2009 edition's wording): the outdoor air may be reduced by an engineered
    # ventilation design that keeps contaminant concentrations from exceeding those of the
    # Section 403.3 rate. The pack keeps the IAQ procedure of ANSI/ASHRAE 62.1-2019 Section 6.3
    # as that design, re-cited to the code, with a caution on the code's criterion.
    from airgate import check

    pack = load_pack("imc-2018")
    for check_id in ("iaqp-concentration", "iaqp-intake"):
        c = pack.checks[check_id]
        assert c.source.document == "International Mechanical Code"
        assert c.source.section.startswith("Section 403.2, Exception")
    assert any("Section 403.2" in c and "design limits" in c for c in pack.cautions)
    # the same hand computation as the standard's pack test: 10 ug/s against 100 ug/m3 needs
    # 100 L/s (211.9 cfm) of outdoor air without a filter; 200 cfm fails the balance although
    # it passes the code's rate, 5 cfm x 5 + 0.06 cfm/ft2 x 1000 ft2 = 85 cfm (Table 403.3.1.1)
    zone = {"id": "1", "space": "office-space", "area": "1000 ft2", "height": "10 ft",
            "occupants": 5, "air_distribution": "ceiling-supply-cool"}
    data = {"schedule": 1, "project": {"name": "Gull Point Hall (invented)", "units": "IP"},
            "rules": "imc-2018",
            "contaminants": [{"id": "pm", "unit": "ug", "per_zone": 36000, "limit": 100}],
            "systems": [{"id": "MB", "kind": "single-zone", "procedure": "iaqp",
                         "outdoor_air": "200 cfm", "zones": [zone]}]}
    path = tmp_path / "s.yaml"
    path.write_text(json.dumps(data), encoding="utf-8")
    report = check(path)
    rules = {(f.rule, f.severity) for f in report.findings}
    assert ("iaqp-intake", "fail") in rules and ("iaqp-concentration", "fail") in rules
    intake = next(f for f in report.findings if f.rule == "iaqp-intake")
    assert intake.required.value == pytest.approx(100.0, rel=1e-6)  # L/s
    assert "International Mechanical Code" in intake.source


# --- the 2021 edition (imc-2021), a layer on imc-2018 -------------------------------------------

#: Washington State Register WSR 23-15-016 (2023): WAC 51-52-0403 Table 403.3.1.1, the state's
#: adoption of the 2021 International Mechanical Code, row 'Gym, stadium, arena (play area)':
#: (occupant density /1000 ft², Rp cfm/person, Ra cfm/ft²)
WSR_23_15_016_PLAY_AREA = (7, 20, 0.18)


def test_the_2021_pack_cites_the_2021_edition_where_it_amends_and_2018_where_it_inherits():
    pack = load_pack("imc-2021")
    assert pack.lineage == ("imc-2021", "imc-2018", "ashrae-62.1-2019")
    gym = pack.categories["gym-sports-arena-play-area"]
    # International Mechanical Code 2021 Table 403.3.1.1, compared with WSR 23-15-016
    assert (gym.printed["density"], gym.printed["Rp"], gym.printed["Ra"]) == WSR_23_15_016_PLAY_AREA
    assert all(gym.provenance_of(k) == "published" for k in ("Rp", "Ra", "density"))
    assert gym.provenance_of("air_class") == "from memory" and gym.air_class == 1
    assert gym.cite("Rp").startswith("International Mechanical Code, 2021 edition, Table 403.3.1.1")
    assert "WSR 23-15-016" in gym.notes
    office = pack.categories["office-space"]  # not amended in 2021: the 2018 edition's row
    assert office.cite("Rp").startswith("International Mechanical Code, 2018 edition, Table 403.3.1.1")
    # the equations the code prints are re-cited by the 2021 edition's section numbers
    code_eqs = {k for k, e in load_pack("imc-2018").equations.items()
                if e.source.document == "International Mechanical Code"}
    assert code_eqs and all(pack.equations[k].source.edition == "2021" for k in code_eqs)
    amended = {c.id for c in pack.checks.values()
               if c.source.document == "International Mechanical Code"}
    assert amended and all(pack.checks[i].source.edition == "2021" for i in amended)
    assert set(pack.methods) == {"table", "detailed"} and pack.default_method == "table"
    # only the play-area row is published for 2021; the rest is the 2018 pack's
    published_2021 = {c.id for c in pack.categories.values()
                      if c.provenance_of("Rp") == "published" and "2021 edition" in c.cite("Rp")}
    assert published_2021 == {"gym-sports-arena-play-area"}


def _diff(capsys, old: str, new: str, fmt: str) -> str:
    assert main(["rules", "diff", old, new, "--format", fmt]) == 0
    return capsys.readouterr().out


def test_diff_between_the_two_editions_lists_only_what_2021_changes(capsys):
    d = json.loads(_diff(capsys, "imc-2018", "imc-2021", "json"))
    assert (d["from"]["edition"], d["to"]["edition"]) == ("2018", "2021")
    assert d["to"]["extends"] == "imc-2018"
    sections = {s["name"]: s for s in d["sections"]}
    assert not any(s["added"] or s["removed"] for s in d["sections"])
    occ = sections["occupancy"]["changed"]
    assert [c["id"] for c in occ] == ["gym-sports-arena-play-area"]
    fields = {f["field"]: (f["from"], f["to"]) for f in occ[0]["fields"]}
    assert fields["label"] == ("Gym, sports arena (play area)", "Gym, stadium, arena (play area)")
    assert fields["air_class"] == (2, 1)
    assert "Rp" not in fields  # the 2018 pack already keeps the standard's 20 cfm/person
    for name in ("checks", "equations"):  # re-cited to 2021, nothing else changed
        for c in sections[name]["changed"]:
            assert {f["field"].rsplit(".", 1)[-1] for f in c["fields"]} == {"edition"}, c
            assert all((f["from"], f["to"]) == ("2018", "2021") for f in c["fields"])
    for name in ("air_distribution", "ventilation_efficiency", "exhaust", "requirements"):
        assert not sections[name]["changed"], name
    pack = {c["field"]: (c["from"], c["to"]) for c in d["pack"]}
    assert pack["edition"] == ("2018", "2021") and pack["extends"] == ("ashrae-62.1-2019", "imc-2018")


@pytest.mark.parametrize(("old", "new"), [("imc-2018", "imc-2021"),
                                          ("ashrae-62.1-2019", "imc-2021")])
def test_diff_of_the_editions_in_text_and_markdown_holds_every_entry_of_the_json(capsys, old, new):
    d = json.loads(_diff(capsys, old, new, "json"))
    markdown = _diff(capsys, old, new, "markdown")
    text = _diff(capsys, old, new, "text")
    assert markdown.startswith(f"# Rule pack diff: {old} → {new}\n")
    rows = [line for line in markdown.splitlines() if line.startswith("| ") and
            not line.startswith(("| id ", "| field ", "| |", "| from ", "| to "))]
    assert len(rows) == len(d["pack"]) + sum(
        len(s["added"]) + len(s["removed"]) + sum(len(c["fields"]) for c in s["changed"])
        for s in d["sections"])
    for s in d["sections"]:
        for c in s["changed"]:
            assert f"  ~ {c['id']}  " in text, c["id"]
        for a in s["added"]:
            assert f"  + {a['id']}" in text, a["id"]
    for out in (markdown, text):
        assert out.rstrip().endswith("licensed professional of record govern.")


@pytest.mark.parametrize(("pack_id", "edition"), [("imc-2018", "2018"), ("imc-2021", "2021")])
def test_the_demo_checks_under_each_edition_and_the_report_names_the_governing_code(
        capsys, pack_id, edition):
    code = main(["check", str(DEMO), "--rules", pack_id, "--format", "json"])
    assert code in (0, 1)
    report = json.loads(capsys.readouterr().out)
    rules = report["rules"]
    assert (rules["id"], rules["document"], rules["edition"]) == (
        pack_id, "International Mechanical Code", edition)
    assert any("the adopted local code and the licensed professional of record govern" in c
               for c in report["cautions"])
    assert main(["check", str(DEMO), "--rules", pack_id]) == code
    text = capsys.readouterr().out
    assert f"rule pack: {pack_id} — International Mechanical Code {edition}" in text
    chain = " → ".join(load_pack(pack_id).lineage)
    assert f"layers: {chain}" in text
    # the findings cite the edition whose sections they apply
    assert f"International Mechanical Code, {edition} edition, Section 403.3.1.1.2" in text
    assert main(["check", str(DEMO), "--rules", pack_id, "--format", "markdown"]) == code
    assert f"rule pack {pack_id} — International Mechanical Code {edition}" in \
        capsys.readouterr().out


#: the published schema of `airgate rules diff --format json` (rules/schema/pack-diff.schema.json)
PACK_DIFF_SCHEMA = json.loads((Path(__file__).resolve().parents[1] / "rules" / "schema"
                               / "pack-diff.schema.json").read_text(encoding="utf-8"))


@pytest.mark.parametrize(("old", "new"), [
    ("ashrae-62.1-2019", "imc-2018"), ("imc-2018", "imc-2021"), ("ashrae-62.1-2019", "imc-2021"),
    ("ashrae-62.1-2019", "ashrae-62.1-2019-quillby-bay"), ("ashrae-62.1-2019", "ashrae-62.1-2019-si"),
    ("ashrae-62.1-2019", "en-16798-1-2019"), ("imc-2021", "imc-2018")])
def test_json_diffs_follow_the_published_schema(capsys, old, new):
    import jsonschema

    jsonschema.Draft202012Validator.check_schema(PACK_DIFF_SCHEMA)
    d = json.loads(_diff(capsys, old, new, "json"))
    jsonschema.Draft202012Validator(PACK_DIFF_SCHEMA).validate(d)
    assert [s["name"] for s in d["sections"]] == PACK_DIFF_SCHEMA["$defs"]["section"][
        "properties"]["name"]["enum"]
    assert any("licensed professional of record govern" in c for c in d["cautions"])
    assert main(["schema", "pack-diff"]) == 0
    assert json.loads(capsys.readouterr().out) == PACK_DIFF_SCHEMA


def test_the_code_pack_toilet_rows_are_toilet_rooms_for_transfer_air(evaluate):
    # The code's toilet rows amend the standard's with `change`, which keeps the base row's
    # toilet_room mark, and add the dwelling toilet and bathroom row with its own: class 2 air
    # may then be transferred to them (ANSI/ASHRAE 62.1-2019 Section 5.16.3.2, from memory; the
    # code's Section 403.2.2 lets transfer air make up toilet room exhaust, from memory).
    pack = load_pack("imc-2018")
    marked = {r.id for r in pack.exhaust.values() if r.toilet_room}
    assert {"toilets-public", "toilets-private", "toilets-bathrooms-dwelling"} <= marked
    # By hand, Table 403.3.1.1 note f (from memory): private toilets 25 cfm per room
    # continuous, 50 intermittent; 3 rooms intermittent = 150 cfm. Class 2 air from a
    # corridor zone into them: allowed, no makeup finding.
    data = schedule([
        {"id": "D", "kind": "outdoor-air", "outdoor_air": "400 cfm", "zones": [
            {"id": "corr", "space": "office-space", "area": "1000 ft2", "occupants": 5,
             "air_class": 2, "outdoor_air": "400 cfm",
             "air_distribution": "ceiling-supply-cool"}]},
        {"id": "EF", "kind": "exhaust", "zones": [
            {"id": "wc", "area": "150 ft2", "exhaust": {
                "category": "toilets-private", "airflow": "150 cfm", "fixtures": 3,
                "operation": "intermittent", "makeup": {"transfer_from": "corr"}}}]},
    ], rules="imc-2018")
    r = evaluate(data)
    wc = r.systems[1].zones[0]
    assert wc.trail.value("Ve") / CFM == pytest.approx(150, rel=1e-9)
    assert not [f for f in r.findings if f.rule.startswith("makeup-transfer")]
    assert wc.makeup.source == "transfer" and wc.makeup.air_class == 2
