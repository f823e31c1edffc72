"""Design conditions in imported files: ``Primary airflow @heating [cfm]`` columns, the
``Conditions`` column, ``airgate.FIELD@CONDITION:`` lines in gbXML and ``FIELD@CONDITION``
properties in IFC, and the tables airgate writes (docs/importing.md, "Design conditions").

Expected figures are worked by hand with ANSI/ASHRAE 62.1-2019 Section 6.2.2.1 (Vbz = Rp·Pz +
Ra·Az), Section 6.2.2.3 (Voz = Vbz / Ez), Section 6.2.5 (Vou, Vot = Vou / Ev) and Normative
Appendix A (Xs = Vou / Vps, Zpz = Voz / Vpz, Evz = 1 + Xs − Zpz), with the table values of the
built-in pack, from memory: Table 6-1 office space Rp = 5 cfm/person, Ra = 0.06 cfm/ft²; Table
6-4 ceiling supply of cool air Ez = 1.0, warm air with ceiling return Ez = 0.8.
"""

from __future__ import annotations

import pytest
import yaml

from airgate import check
from airgate.cli import main
from airgate.readers import condition_columns as C
from airgate.readers import fields as F
from airgate.readers.schedule import read_schedule
from airgate.readers.sources import read_any
from airgate.writers import schedule_yaml, workbook

from conftest import CFM, schedule
from importing import need

COOL = "ceiling-supply-cool"
WARM = "ceiling-supply-warm-ceiling-return-stratified"
PROJECT = "Project,Units,Rules\nHarrowgate annex (invented),IP,ashrae-62.1-2019\n"
SYSTEMS = ("System,Kind,Conditions,Outdoor air [cfm],Ventilation efficiency\n"
           "AHU-1,multiple-zone,\"cooling, heating\",185,detailed\n")
ZONES = ("System,Zone,Space type,Area [ft2],Occupants,Air distribution,Air distribution @heating,"
         "Primary airflow @cooling [cfm],Primary airflow @heating [cfm]\n"
         f"AHU-1,201,office-space,1000,5,{COOL},{WARM},1000,400\n"
         f"AHU-1,202,office-space,1000,5,{COOL},{WARM},1000,800\n")


def _write(folder, zones: str = ZONES, systems: str = SYSTEMS):
    (folder / "annex.project.csv").write_text(PROJECT, encoding="utf-8")
    (folder / "annex.systems.csv").write_text(systems, encoding="utf-8")
    (folder / "annex.zones.csv").write_text(zones, encoding="utf-8")
    return folder / "annex.zones.csv"


def _refused(tmp_path, capsys, zones: str = ZONES, systems: str = SYSTEMS) -> str:
    """Check the tables; they must be refused (exit 2, no traceback): the messages."""
    assert main(["check", str(_write(tmp_path, zones, systems))]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err
    return err


def _hand_heating() -> tuple[float, float]:
    """Ev and Vot of the heating condition of the two zones above, by hand."""
    vbz = 5 * 5 + 0.06 * 1000  # 85 cfm, Section 6.2.2.1
    voz = vbz / 0.8  # 106.25 cfm, Section 6.2.2.3 with Ez 0.8
    vou = 5 * 10 + 0.06 * 2000  # 170 cfm, D = 1
    xs = vou / (400 + 800)  # Appendix A, Vps = ΣVpz
    ev = min(1 + xs - voz / v for v in (400, 800))
    return ev, vou / ev


def test_condition_columns_give_each_condition(tmp_path):
    loaded = read_any(_write(tmp_path))
    ahu = loaded.model.systems[0]
    assert ahu.conditions == ["cooling", "heating"]
    z = ahu.zones[0]
    assert z.primary_airflow == pytest.approx({"cooling": 1000 * CFM, "heating": 400 * CFM})
    # the plain column applies to every condition a column of its own does not give
    assert z.air_distribution == {"cooling": COOL, "heating": WARM}
    # each value is located at its own cell
    assert loaded.locate(("systems", 0, "zones", 0, "primary_airflow", "heating"))[1:] == (2, 9)
    assert loaded.locate(("systems", 0, "zones", 0, "air_distribution", "cooling"))[1:] == (2, 6)
    assert loaded.locate(("systems", 0, "zones", 0, "air_distribution", "heating"))[1:] == (2, 7)


def test_heating_governs_from_a_csv_set(tmp_path):
    report = check(_write(tmp_path))
    s = report.systems[0]
    ev, vot = _hand_heating()
    assert ev == pytest.approx(0.876042, rel=1e-5)  # 1 + 0.141667 − 0.265625
    assert s.condition == "heating" and s.verdict == "fail"  # 194 cfm needed, 185 scheduled
    heat = next(c for c in s.conditions if c.id == "heating")
    assert heat.trail.value("Ev") == pytest.approx(ev, rel=1e-9)
    assert heat.trail.value("Vot") == pytest.approx(vot * CFM, rel=1e-9)
    cool = next(c for c in s.conditions if c.id == "cooling")
    assert cool.trail.value("Vot") == pytest.approx(170 * CFM, rel=1e-9)  # Ev 1.0 in cooling
    # the heating finding of zone 201 points at its heating cell, I2
    limits = next(f for f in report.findings if f.rule == "zone-limits-ev")
    assert limits.condition == "heating" and limits.subject == "AHU-1/201"
    assert (limits.location.line, limits.location.column) == (2, 9)


def test_the_same_schedule_as_yaml_gives_the_same_report(tmp_path):
    from importing import comparable

    table = check(_write(tmp_path))
    data = schedule([{"id": "AHU-1", "kind": "multiple-zone", "conditions": ["cooling", "heating"],
                      "outdoor_air": "185 cfm", "ventilation_efficiency": "detailed",
                      "zones": [{"id": zid, "space": "office-space", "area": "1000 ft2",
                                 "occupants": 5,
                                 "air_distribution": {"cooling": COOL, "heating": WARM},
                                 "primary_airflow": {"cooling": "1000 cfm",
                                                     "heating": f"{vpz} cfm"}}
                                for zid, vpz in (("201", 400), ("202", 800))]}],
                    rules="ashrae-62.1-2019")
    data["project"]["name"] = "Harrowgate annex (invented)"
    path = tmp_path / "annex.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    assert comparable(table) == comparable(check(path))


def test_an_empty_condition_cell_is_no_value_at_that_condition(tmp_path):
    zones = ("System,Zone,Space type,Area [ft2],Occupants,Air distribution @cooling,"
             "Air distribution @heating,Ez @cooling,Ez @heating,Ez basis @cooling,"
             "Ez basis @heating,Primary airflow [cfm]\n"
             f"AHU-1,201,office-space,1000,5,{COOL},,,0.8,,warm air at the ceiling,900\n")
    z = read_any(_write(tmp_path, zones)).model.systems[0].zones[0]
    assert z.ez == {"cooling": None, "heating": 0.8}
    assert z.ez_basis == {"cooling": None, "heating": "warm air at the ceiling"}
    assert z.air_distribution == {"cooling": COOL, "heating": None}
    assert z.primary_airflow == pytest.approx(900 * CFM)  # plain: every condition


def test_condition_columns_left_empty_leave_the_plain_value(tmp_path):
    """A system without conditions beside one with them: its rows leave the condition cells
    empty and keep their plain values."""
    systems = SYSTEMS + "RTU-2,single-zone,,400,\n"
    zones = ZONES + "RTU-2,301,office-space,1000,5,ceiling-supply-cool,,,\n"
    rtu = read_any(_write(tmp_path, zones, systems)).model.systems[1]
    assert rtu.conditions is None and rtu.zones[0].air_distribution == COOL
    assert rtu.zones[0].primary_airflow is None


@pytest.mark.parametrize("header, cell, words", [
    ("Area @heating [ft2]", "D1", "'Area' cannot be given per design condition"),
    ("Primary airflow [heating]", "D1", "a value per design condition is written "
                                        "'Primary airflow @heating'"),
    ("Primary airflow @ [cfm]", "D1", "does not name a field and a design condition"),
    ("Primary airflow @cooling [cfm]", "E1", "column 'Primary airflow @cooling' is given twice"),
])
def test_bad_condition_headers_are_located(tmp_path, capsys, header, cell, words):
    zones = (f"System,Zone,Space type,{header},Primary airflow @cooling [cfm],Area [ft2],"
             "Air distribution,Primary airflow @heating [cfm]\n"
             f"AHU-1,201,office-space,1,1000,1000,{COOL},400\n")
    if header.startswith("Area"):
        zones = zones.replace(",Area [ft2],", ",Occupants,")
    err = _refused(tmp_path, capsys, zones)
    column = ord(cell[0]) - 64
    assert f"annex.zones.csv:1:{column}: schedule error: " in err and f"(cell {cell})" in err
    assert words in err


@pytest.mark.parametrize("head, row, expected", [
    # as in YAML, every condition is named: a column left out is not taken for "none"
    ("Air distribution @cooling,Ez @heating,Ez basis @heating,Primary airflow [cfm]",
     f"{COOL},0.8,warm air at the ceiling,900",
     ["annex.zones.csv:2:6: schedule error: systems[0].zones[0].air_distribution: "
      "air_distribution has no value for condition 'heating'",
      "annex.zones.csv:2:7: schedule error: systems[0].zones[0].ez: ez has no value for "
      "condition 'cooling'", "an empty cell in a column of that condition"]),
    ("Air distribution,Primary airflow @cooling [cfm],Primary airflow @warm [cfm]",
     f"{COOL},1000,400",
     ["annex.zones.csv:2:8: schedule error: systems[0].zones[0].primary_airflow.warm: "
      "unknown condition 'warm' (cell H2",
      "annex.zones.csv:2:7: schedule error: systems[0].zones[0].primary_airflow: "
      "primary_airflow has no value for condition 'heating'"]),
])
def test_missing_and_unknown_conditions_are_located_at_the_cells(tmp_path, capsys, head, row,
                                                                 expected):
    err = _refused(tmp_path, capsys, f"System,Zone,Space type,Area [ft2],Occupants,{head}\n"
                                     f"AHU-1,201,office-space,1000,5,{row}\n")
    for text in expected:
        assert text in err


def test_a_condition_column_on_a_system_without_conditions_is_an_error(tmp_path, capsys):
    err = _refused(tmp_path, capsys, systems="System,Kind,Outdoor air [cfm]\n"
                                             "AHU-1,multiple-zone,185\n")
    # located at the first cell given per condition, not at the plain cell beside it
    assert "annex.zones.csv:2:7: schedule error: systems[0].zones[0].air_distribution: " \
           "air_distribution is given per condition (heating) but system 'AHU-1' lists no " \
           "conditions (cell G2" in err
    assert "annex.zones.csv:2:8: " in err and "primary_airflow is given per condition " \
           "(cooling, heating)" in err


def test_system_fields_per_condition(tmp_path):
    systems = ("System,Kind,Conditions,Outdoor air @cooling [cfm],Outdoor air @heating [cfm],"
               "Population @cooling,Population @heating\n"
               "AHU-1,multiple-zone,cooling; heating,185,200,,8\n")
    ahu = read_any(_write(tmp_path, systems=systems)).model.systems[0]
    assert ahu.outdoor_air == pytest.approx({"cooling": 185 * CFM, "heating": 200 * CFM})
    assert ahu.population == {"cooling": None, "heating": 8}


def _round_trip_data() -> dict:
    return schedule([
        {"id": "AHU-1", "kind": "multiple-zone", "conditions": ["cooling", "heating"],
         "outdoor_air": {"cooling": "185 cfm", "heating": "200 cfm"}, "population": 10,
         "zones": [
             {"id": "201", "space": "office-space", "area": "1000 ft2", "occupants": 5,
              "air_distribution": {"cooling": COOL, "heating": WARM},
              "primary_airflow": {"cooling": "1000 cfm", "heating": "400 cfm"}},
             {"id": "202", "space": "office-space", "area": "1000 ft2", "occupants": 5,
              "air_distribution": {"cooling": COOL,
                                   "heating": {"supply": "ceiling", "return": "ceiling",
                                               "mode": "heating",
                                               "temperature_difference": "20 delta_degF"}},
              "primary_airflow": "800 cfm"},
             {"id": "203", "space": "office-space", "area": "500 ft2", "occupants": 3,
              "air_distribution": {"cooling": COOL, "heating": None},
              "ez": {"cooling": None, "heating": 0.8},
              "ez_basis": {"cooling": None, "heating": "warm air at the ceiling"},
              "primary_airflow": {"cooling": "600 cfm", "heating": "300 cfm"}}]},
        {"id": "RTU-2", "kind": "single-zone", "outdoor_air": "400 cfm",
         "zones": [{"id": "301", "space": "office-space", "area": "1000 ft2", "occupants": 5,
                    "air_distribution": COOL}]}])


@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
def test_tables_written_by_airgate_read_back_the_same(tmp_path, fmt):
    data = _round_trip_data()
    source = tmp_path / "s.yaml"
    source.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    expected = read_schedule(source).model
    tables = workbook.schedule_tables(data)
    heads = tables["zones"][0]
    assert "Primary airflow [cfm]" in heads  # zone 202 and 301 give a plain value
    assert heads.index("Primary airflow @heating [cfm]") == \
        heads.index("Primary airflow @cooling [cfm]") + 1 == heads.index("Primary airflow [cfm]") + 2
    assert "Outdoor air [cfm]" in tables["systems"][0]  # RTU-2's plain value
    assert tables["systems"][1][tables["systems"][0].index("Conditions")] == "cooling, heating"
    if fmt == "csv":
        files = workbook.csv_texts(tables, tmp_path / "s")
        workbook.write_files_atomic(files)
        path = tmp_path / "s.zones.csv"
    else:
        need("openpyxl")
        path = tmp_path / "s.xlsx"
        path.write_bytes(workbook.xlsx_bytes(tables))
    assert read_any(path).model == expected


def test_import_writes_one_line_per_condition_with_its_cell(tmp_path):
    loaded = read_any(_write(tmp_path))
    text = schedule_yaml.render(loaded.doc.data, loaded.doc.origins)
    assert ("        primary_airflow:\n"
            "          cooling: 1000 cfm  # from annex.zones.csv!H2\n"
            "          heating: 400 cfm  # from annex.zones.csv!I2\n") in text
    assert ("          cooling: ceiling-supply-cool  # from annex.zones.csv!F2\n"
            f"          heating: {WARM}  # from annex.zones.csv!G2\n") in text
    again = tmp_path / "again.yaml"
    again.write_text(text, encoding="utf-8")
    assert read_schedule(again).model == loaded.model


def test_template_with_conditions_checks_once_filled(tmp_path, capsys):
    openpyxl = need("openpyxl")
    path = tmp_path / "t.xlsx"
    assert main(["template", "-o", str(path), "--conditions", "cooling,heating"]) == 0
    capsys.readouterr()
    book = openpyxl.load_workbook(path)
    heads = {c.value: c.column for c in book["Zones"][1]}
    assert {"Primary airflow @cooling [cfm]", "Primary airflow @heating [cfm]",
            "Air distribution @heating", "Ez @heating"} <= set(heads)
    assert "Outdoor air @heating [cfm]" in {c.value for c in book["Systems"][1]}

    def fill(sheet, values):
        cols = {c.value: c.column for c in book[sheet][1]}
        for head, value in values.items():
            book[sheet].cell(row=2, column=cols[head], value=value)

    fill("Project", {"Project": "Harrowgate annex (invented)"})
    fill("Systems", {"System": "AHU-1", "Kind": "multiple-zone", "Conditions": "cooling, heating",
                     "Outdoor air [cfm]": 185, "Ventilation efficiency": "detailed"})
    fill("Zones", {"System": "AHU-1", "Zone": "201", "Space type": "office-space",
                   "Area [ft2]": 1000, "Occupants [people]": 5, "Air distribution": COOL,
                   "Air distribution @heating": WARM, "Primary airflow @cooling [cfm]": 1000,
                   "Primary airflow @heating [cfm]": 400})
    book.save(path)
    report = check(path)
    # heating: Voz 106.25, Vps 400, Xs 170/400 = 0.425 … one zone: Evz = 1 + 0.2125 − 0.2656
    heat = next(c for c in report.systems[0].conditions if c.id == "heating")
    vou = 5 * 5 + 0.06 * 1000
    assert heat.trail.value("Ev") == pytest.approx(1 + vou / 400 - vou / 0.8 / 400, rel=1e-9)


def test_template_refuses_a_condition_id_it_cannot_write(tmp_path, capsys):
    assert main(["template", "--format", "csv", "-o", str(tmp_path / "t"),
                 "--conditions", "cool[1]"]) == 2
    assert "cannot be a condition id in a header" in capsys.readouterr().err
    assert list(tmp_path.iterdir()) == []


GBXML_LINES = ("airgate.conditions: cooling, heating",
               "airgate.primary_airflow@cooling: 300 L/s")


def test_gbxml_annotation_per_condition(tmp_path):
    from test_import_gbxml import BUILDING

    text = BUILDING.replace("airgate.ventilation_efficiency: simplified",
                            "airgate.ventilation_efficiency: simplified\n" + GBXML_LINES[0])
    text = text.replace("<Description>Watch office\n", "<Description>Watch office\n"
                        + GBXML_LINES[1] + "\n")
    text = text.replace("<Description>Briefing room\n", "<Description>Briefing room\n"
                        "airgate.air_distribution@heating: "
                        "ceiling-supply-warm-ceiling-return-stratified\n")
    path = tmp_path / "station.xml"
    path.write_text(text, encoding="utf-8")
    loaded = read_any(path)
    ahu = loaded.model.systems[0]
    assert ahu.conditions == ["cooling", "heating"]
    a1, a2 = ahu.zones
    # the terminal's MinFlow (120 L/s) applies at the condition no line gives
    assert a1.primary_airflow == pytest.approx({"cooling": 300.0, "heating": 120.0})
    assert a2.air_distribution == {"cooling": COOL, "heating": WARM}
    file, line, _ = loaded.locate(("systems", 0, "zones", 0, "primary_airflow", "cooling"))
    assert text.splitlines()[line - 1] == GBXML_LINES[1]


def test_gbxml_annotation_of_a_field_without_conditions_is_located(tmp_path, capsys):
    from test_import_gbxml import BUILDING

    text = BUILDING.replace("<Description>Watch office\n",
                            "<Description>Watch office\nairgate.area@heating: 50 m2\n")
    path = tmp_path / "station.xml"
    path.write_text(text, encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    line = text.splitlines().index("airgate.area@heating: 50 m2") + 1
    assert f"station.xml:{line}:1: schedule error: systems[0].zones[0].area@heating: 'Area' " \
           "cannot be given per design condition" in err


def test_annotation_names_field_and_condition():
    free, notes = F.annotations("Office\nairgate.primary_airflow@heating: 950 cfm\n"
                                "airgate.ez @ morning warm-up: 0.8")
    assert free == ["Office"]
    assert notes == [("primary_airflow@heating", "950 cfm", 1),
                     ("ez @ morning warm-up", "0.8", 2)]
    assert C.split_condition("ez @ morning warm-up") == ("ez", "morning warm-up")


def test_ifc_property_per_condition(tmp_path):
    need("ifcopenshell")
    from test_import_ifc import Model

    m = Model()
    hall = m.space("101", "Hall", area=100.0, people=20,
                   zone={"air_distribution": COOL, "air_distribution@heating": WARM})
    m.system("AHU-1", [hall], {"kind": "single-zone", "conditions": "cooling, heating",
                               "outdoor_air@cooling": m.flow(200),
                               "outdoor_air@heating": m.flow(250)})
    loaded = read_any(m.save(tmp_path / "hall.ifc"))
    ahu = loaded.model.systems[0]
    assert ahu.conditions == ["cooling", "heating"]
    assert ahu.outdoor_air == pytest.approx({"cooling": 200.0, "heating": 250.0})  # L/s
    assert ahu.zones[0].air_distribution == {"cooling": COOL, "heating": WARM}


def test_ifc_property_of_a_field_without_conditions_is_located(tmp_path, capsys):
    need("ifcopenshell")
    from test_import_ifc import Model

    m = Model()
    hall = m.space("101", "Hall", area=100.0, people=20,
                   zone={"air_distribution": COOL, "notes@heating": "x"})
    m.system("AHU-1", [hall], {"kind": "single-zone", "outdoor_air": "200 L/s"})
    path = m.save(tmp_path / "hall.ifc")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "hall.ifc:" in err and "'Notes' cannot be given per design condition" in err
    assert "Airgate_Zone.notes@heating" in err
