"""``airgate template``: an empty workbook (or CSV tables) with headers, units and drop-downs.

Expected values: the table format (docs/importing.md) and the built-in pack's own category ids
(``airgate rules show ashrae-62.1-2019``); data validation as the Office Open XML list type
(ECMA-376, ``dataValidation type="list"``).
"""

from __future__ import annotations

import pytest

from airgate.cli import main
from airgate.readers.rulepack import load_pack

from importing import need


@pytest.fixture
def openpyxl():
    return need("openpyxl")


def _template(tmp_path, capsys, *extra) -> object:
    path = tmp_path / "schedule.xlsx"
    assert main(["template", "--format", "xlsx", "-o", str(path), *extra]) == 0
    assert f"wrote {path}" in capsys.readouterr().err
    return path


def test_template_has_the_tables_headers_and_units(openpyxl, tmp_path, capsys):
    book = openpyxl.load_workbook(_template(tmp_path, capsys))
    assert book.sheetnames[:4] == ["Project", "Systems", "Zones", "Profiles"]
    zones = [c.value for c in book["Zones"][1]]
    assert zones[:5] == ["System", "Zone", "Name", "Space type", "Area [ft2]"]
    assert "Primary airflow [cfm]" in zones and "Height [ft]" in zones
    assert [c.value for c in book["Project"][2]][1:3] == ["IP", "ashrae-62.1-2019"]


def test_si_headers(openpyxl, tmp_path, capsys):
    book = openpyxl.load_workbook(_template(tmp_path, capsys, "--units", "SI"))
    zones = [c.value for c in book["Zones"][1]]
    assert "Area [m2]" in zones and "Primary airflow [L/s]" in zones


def test_space_type_drop_down_lists_the_packs_categories(openpyxl, tmp_path, capsys):
    book = openpyxl.load_workbook(_template(tmp_path, capsys))
    pack = load_pack("ashrae-62.1-2019")
    listed = [r[0].value for r in book["Lists"].iter_rows(min_row=2) if r[0].value]
    assert listed == sorted(pack.categories)
    zones = book["Zones"]
    column = next(c.column_letter for c in zones[1] if c.value == "Space type")
    rules = {str(dv.sqref): dv for dv in zones.data_validations.dataValidation}
    dv = rules[f"{column}2:{column}5000"]
    assert dv.type == "list" and dv.formula1 == f"=Lists!$A$2:$A${len(listed) + 1}"
    kinds = {dv.formula1 for dv in book["Systems"].data_validations.dataValidation}
    assert '"single-zone,outdoor-air,multiple-zone"' in kinds


def test_filled_template_checks(openpyxl, tmp_path, capsys):
    path = _template(tmp_path, capsys)
    book = openpyxl.load_workbook(path)

    def fill(sheet, row, values):
        heads = {c.value: c.column for c in book[sheet][1]}
        for head, value in values.items():
            book[sheet].cell(row=row, column=heads[head], value=value)

    fill("Project", 2, {"Project": "Harrowgate library annex (invented)"})
    fill("Systems", 2, {"System": "RTU-7", "Kind": "single-zone", "Outdoor air [cfm]": 400})
    fill("Zones", 2, {"System": "RTU-7", "Zone": "101", "Space type": "libraries",
                      "Area [ft2]": 1000, "Occupants [people]": 10,
                      "Air distribution": "ceiling-supply-cool"})
    book.save(path)
    # libraries (62.1-2019 Table 6-1; Rp, Ra published): 5 cfm/person × 10 + 0.12 cfm/ft² × 1000 = 170 cfm
    assert main(["check", str(path)]) == 0
    assert "RTU-7" in capsys.readouterr().out


def test_unfilled_template_is_refused_with_located_messages(openpyxl, tmp_path, capsys):
    path = _template(tmp_path, capsys)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert f"{path}[Project]:2:1: " in err and "missing required field 'name'" in err
    assert "Traceback" not in err


def test_csv_template(tmp_path, capsys):
    stem = tmp_path / "annex"
    assert main(["template", "--format", "csv", "-o", str(stem)]) == 0
    capsys.readouterr()
    for table in ("project", "systems", "zones", "profiles"):
        assert (tmp_path / f"annex.{table}.csv").is_file()
    head = (tmp_path / "annex.zones.csv").read_text(encoding="utf-8").splitlines()[0]
    assert head.startswith("System,Zone,Name,Space type,Area [ft2],Occupants [people]")


def test_workbook_name_must_end_in_xlsx(tmp_path, capsys):
    assert main(["template", "-o", str(tmp_path / "t.csv")]) == 2
    assert "a workbook file name ends in .xlsx" in capsys.readouterr().err
    assert list(tmp_path.iterdir()) == []
