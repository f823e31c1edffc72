"""CSV and XLSX tables: columns, units in headers and cells, formulas, nothing lost.

Sources of expected values: the schedule format (docs/schedule-format.md, "Writing quantities":
bare numbers are in the project's units, a unit in the text wins), the table format
(docs/importing.md), and exact unit factors (1 ft = 0.3048 m, NIST SP 811; common practice).
"""

from __future__ import annotations

import pytest

from airgate.cli import main
from airgate import check
from airgate.readers import fields as F
from airgate.readers.sources import read_any
from airgate.writers import schedule_yaml, workbook

from conftest import CFM, FT2
from importing import need

PROJECT = "Project,Units,Rules\nHarrowgate library annex (invented),{units},ashrae-62.1-2019\n"
SYSTEMS = "System,Kind,Outdoor air{oa_unit}\nRTU-7,single-zone,{oa}\n"


def _write(folder, zones: str, units_: str = "IP", oa: str = "300", oa_unit: str = " [cfm]",
           **extra: str):
    (folder / "annex.project.csv").write_text(PROJECT.format(units=units_), encoding="utf-8")
    (folder / "annex.systems.csv").write_text(SYSTEMS.format(oa=oa, oa_unit=oa_unit),
                                              encoding="utf-8")
    (folder / "annex.zones.csv").write_text(zones, encoding="utf-8")
    for table, text in extra.items():
        (folder / f"annex.{table}.csv").write_text(text, encoding="utf-8")
    return folder / "annex.zones.csv"


ZONE_HEAD = "System,Zone,Name,Space type,{area},Occupants,Air distribution\n"


def _zone(loaded):
    return loaded.model.systems[0].zones[0]


def test_header_unit_applies_to_bare_numbers(tmp_path):
    path = _write(tmp_path, ZONE_HEAD.format(area="Area [m2]")
                  + "RTU-7,101,Reading,libraries,100,10,ceiling-supply-cool\n")
    zone = _zone(read_any(path))
    assert zone.area == pytest.approx(100.0)  # internal unit m²
    assert read_any(path).doc.data["systems"][0]["zones"][0]["area"] == "100 m2"


def test_unit_in_a_cell_wins_over_the_header(tmp_path):
    path = _write(tmp_path, ZONE_HEAD.format(area="Area [m2]")
                  + "RTU-7,101,Reading,libraries,1000 ft2,10,ceiling-supply-cool\n")
    assert _zone(read_any(path)).area == pytest.approx(1000 * FT2)


def test_no_header_unit_means_the_projects_units(tmp_path):
    ip = _zone(read_any(_write(tmp_path, ZONE_HEAD.format(area="Area")
                               + "RTU-7,101,Reading,libraries,1000,10,ceiling-supply-cool\n")))
    assert ip.area == pytest.approx(1000 * FT2)
    si = _zone(read_any(_write(tmp_path, ZONE_HEAD.format(area="Area")
                               + "RTU-7,101,Reading,libraries,1000,10,ceiling-supply-cool\n",
                               units_="SI", oa="150", oa_unit="")))
    assert si.area == pytest.approx(1000.0)


def test_headers_match_field_names_and_any_case(tmp_path):
    text = ("system,ZONE,space,AREA [ft2],occupants,air_distribution,primary_airflow [cfm]\n"
            "RTU-7,101,libraries,1000,10,ceiling-supply-cool,400\n")
    zone = _zone(read_any(_write(tmp_path, text)))
    assert zone.primary_airflow == pytest.approx(400 * CFM)  # L/s, 1 cfm = 0.3048³ m³/min


def test_semicolon_separated_csv_is_read(tmp_path):
    text = ("System;Zone;Space type;Area [ft2];Occupants;Air distribution\n"
            "RTU-7;101;libraries;1000;10;ceiling-supply-cool\n")
    assert _zone(read_any(_write(tmp_path, text))).occupants == 10


def test_air_distribution_one_line_form_is_the_yaml_list(tmp_path):
    cell = '"ceiling-supply-cool; supply=ceiling, return=ceiling, mode=heating, ' \
           'temperature_difference=20 delta_degF"'
    path = _write(tmp_path, ZONE_HEAD.format(area="Area [ft2]")
                  + f"RTU-7,101,Chamber,legislative-chambers,2400,120,{cell}\n")
    value = read_any(path).doc.data["systems"][0]["zones"][0]["air_distribution"]
    assert value == ["ceiling-supply-cool", {"supply": "ceiling", "return": "ceiling",
                                             "mode": "heating",
                                             "temperature_difference": "20 delta_degF"}]
    assert F.parse_distribution(F.format_distribution(value)) == value


def test_text_that_looks_like_a_formula_stays_text(tmp_path):
    path = _write(tmp_path, ZONE_HEAD.format(area="Area [ft2]")
                  + 'RTU-7,101,"=HYPERLINK(""http://x"")",libraries,1000,10,ceiling-supply-cool\n')
    assert _zone(read_any(path)).name == '=HYPERLINK("http://x")'


def test_empty_rows_are_not_rooms_and_every_room_is_counted(tmp_path):
    path = _write(tmp_path, "System,Zone,Space type,Area [ft2],Occupants,Air distribution\n"
                  ",,,,,\nRTU-7,101,libraries,1000,10,ceiling-supply-cool\n\n")
    loaded = read_any(path)
    assert loaded.summary.text() == "annex.zones.csv: 1 room read, 1 mapped to 1 system, 0 rejected"


def test_profiles_table_with_an_unoccupied_day(tmp_path):
    profiles = ("Profile,Day,From,To,Fraction\nopen,weekday,09:00,17:00,0.8\nopen,weekend,,,\n")
    path = _write(tmp_path, "System,Zone,Space type,Area [ft2],Occupants,Air distribution,Profile\n"
                  "RTU-7,101,libraries,1000,10,ceiling-supply-cool,open\n", profiles=profiles)
    profile = read_any(path).model.profiles["open"]
    assert profile.weekday == {"09:00-17:00": 0.8} and profile.weekend == {}


def test_overlapping_profile_ranges_are_located(tmp_path, capsys):
    profiles = ("Profile,Day,From,To,Fraction\nopen,weekday,09:00,17:00,0.8\n"
                "open,weekday,12:00,13:00,0.5\n")
    path = _write(tmp_path, "System,Zone,Space type,Area [ft2],Occupants,Air distribution,Profile\n"
                  "RTU-7,101,libraries,1000,10,ceiling-supply-cool,open\n", profiles=profiles)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert f"{tmp_path / 'annex.profiles.csv'}:2:2: " in err and "overlap" in err


def test_other_schedule_fields_by_name_and_nested_values(tmp_path):
    text = ("System,Zone,Space type,Area [ft2],Occupants,Air distribution,Air cleaners,"
            "co2_generation\nRTU-7,101,libraries,1000,10,ceiling-supply-cool,"
            '"cadr=200 cfm, name=Desk unit; cadr=100 cfm",0.0052\n')
    zone = _zone(read_any(_write(tmp_path, text)))
    assert [c.name for c in zone.air_cleaners] == ["Desk unit", None]
    assert zone.co2_generation == pytest.approx(0.0052)
    systems = "System,Kind,Outdoor air [cfm],Filter MERV\nRTU-7,single-zone,300,13\n"
    (tmp_path / "annex.systems.csv").write_text(systems, encoding="utf-8")
    assert read_any(tmp_path / "annex.zones.csv").model.systems[0].filter.merv == 13


def test_contaminants_table(tmp_path):
    table = "id,label,kind,per_person,deposition\naerosol,Illustrative,particle,2,0.3\n"
    path = _write(tmp_path, ZONE_HEAD.format(area="Area [ft2]")
                  + "RTU-7,101,Reading,libraries,1000,10,ceiling-supply-cool\n",
                  contaminants=table)
    [c] = read_any(path).model.contaminants
    assert (c.id, c.per_person, c.deposition) == ("aerosol", 2.0, 0.3)


def test_writers_neutralise_formula_text_and_the_reader_undoes_it(tmp_path):
    data = {"schedule": 1, "project": {"name": "=cmd|' /C calc'!A0", "units": "IP"},
            "rules": "ashrae-62.1-2019",
            "systems": [{"id": "RTU-7", "kind": "single-zone", "outdoor_air": "300 cfm",
                         "zones": [{"id": "101", "name": "@SUM(1)", "space": "libraries",
                                    "area": "1000 ft2", "occupants": 10,
                                    "air_distribution": "ceiling-supply-cool"}]}]}
    files = workbook.csv_texts(workbook.schedule_tables(data), tmp_path / "n")
    assert "'=cmd" in files[tmp_path / "n.project.csv"]
    assert "'@SUM(1)" in files[tmp_path / "n.zones.csv"]
    workbook.write_files_atomic(files)
    loaded = read_any(tmp_path / "n.zones.csv")
    assert loaded.model.project.name == "=cmd|' /C calc'!A0"
    assert _zone(loaded).name == "@SUM(1)"
    text = schedule_yaml.render(loaded.doc.data, loaded.doc.origins)
    assert "name: \"=cmd|' /C calc'!A0\"" in text and 'name: "@SUM(1)"' in text


def test_xlsx_text_cells_are_never_formulas(tmp_path):
    openpyxl = need("openpyxl")
    tables = {"project": [["Project", "Units", "Rules"], ["=1+1", "IP", "ashrae-62.1-2019"]],
              "systems": [["System", "Kind", "Outdoor air [cfm]"], ["RTU-7", "single-zone", 300]],
              "zones": [["System", "Zone", "Space type", "Area [ft2]", "Occupants",
                         "Air distribution"],
                        ["RTU-7", "101", "libraries", 1000, 10, "ceiling-supply-cool"]]}
    path = tmp_path / "t.xlsx"
    path.write_bytes(workbook.xlsx_bytes(tables))
    cell = openpyxl.load_workbook(path)["Project"]["A2"]
    assert cell.data_type == "s" and cell.value == "=1+1"
    assert read_any(path).model.project.name == "=1+1"


def test_xlsx_formula_in_a_text_field_is_its_text(tmp_path):
    openpyxl = need("openpyxl")
    book = openpyxl.Workbook()
    book.active.title = "Project"
    book["Project"].append(["Project", "Units", "Rules"])
    book["Project"].append(['=CONCAT("Harrow","gate")', "IP", "ashrae-62.1-2019"])
    book.create_sheet("Systems").append(["System", "Kind", "Outdoor air [cfm]"])
    book["Systems"].append(["RTU-7", "single-zone", 300])
    book.create_sheet("Zones").append(["System", "Zone", "Space type", "Area [ft2]",
                                        "Occupants", "Air distribution"])
    book["Zones"].append(["RTU-7", 101, "libraries", 1000, 10, "ceiling-supply-cool"])
    book.create_sheet("Notes").append(["not read"])
    path = tmp_path / "f.xlsx"
    book.save(path)
    loaded = read_any(path)
    assert loaded.model.project.name == '=CONCAT("Harrow","gate")'  # never evaluated
    assert _zone(loaded).id == "101"  # a number typed as an id is the id as written
    assert any("[Notes]: sheet not read" in n for n in loaded.notes)


def test_check_on_a_csv_set_reports_the_import(tmp_path, capsys):
    path = _write(tmp_path, ZONE_HEAD.format(area="Area [ft2]")
                  + "RTU-7,101,Reading,libraries,1000,10,ceiling-supply-cool\n")
    report = check(path)
    assert report.schedule_file == str(path)
    assert "imported from annex.zones.csv: 1 room read, 1 mapped to 1 system, 0 rejected" \
        in report.notes
    # any table of the set may be named
    assert check(tmp_path / "annex.systems.csv").verdict == report.verdict


def test_docs_csv_example_checks(tmp_path, capsys):
    # docs/importing.md "Example: a CSV set", executed as written
    import re

    from conftest import ROOT

    text = (ROOT / "docs" / "importing.md").read_text(encoding="utf-8")
    for name, body in re.findall(r"<!-- file: (\S+) -->\n```csv\n(.*?)```", text, re.S):
        (tmp_path / name).write_text(body, encoding="utf-8")
    assert main(["check", str(tmp_path / "annex.zones.csv")]) == 0
    out = capsys.readouterr().out
    assert "RTU-7" in out and "170" in out  # Vbz = 5 × 10 + 0.12 × 1000 cfm


def test_natural_ventilation_columns(tmp_path):
    # a natural system: no intake; the openings per zone (ANSI/ASHRAE 62.1-2019 Section 6.4)
    zones = ("System,Zone,Space type,Area [ft2],Height [ft],Openable area [ft2],"
             "Opening arrangement,Depth [ft],Permanently open,Conditioned\n"
             "NV-1,118,office-space,900,10,36,corner,40,false,false\n")
    path = _write(tmp_path, zones)
    (tmp_path / "annex.systems.csv").write_text("System,Kind\nNV-1,natural\n", encoding="utf-8")
    system = read_any(path).model.systems[0]
    nv = system.zones[0].natural_ventilation
    assert system.kind == "natural" and system.outdoor_air is None
    assert nv.openable_area == pytest.approx(36 * 0.3048**2)  # 1 ft = 0.3048 m (NIST SP 811)
    assert nv.depth == pytest.approx(40 * 0.3048)
    assert nv.arrangement == "corner"
    assert nv.permanently_open is False and nv.conditioned is False
