"""Bad imported input (CSV tables, XLSX, gbXML, IFC) never gets a traceback.

The same contract as tests/test_bad_input.py (README "Exit codes"): a message naming the file
(for a workbook ``building.xlsx[Zones]``), the row or line and the column, what is wrong and how
to fix it; exit code 2; nothing written. Where the format has comments (gbXML), the expectations
are in the leading ``<!-- expect-…: … -->`` comments; otherwise (CSV, IFC) in a ``.expect``
sidecar with ``# expect-…:`` lines. ``expect-at: -`` means the message has no position (a
missing file). Positions are where the fixture itself writes the offending cell or element
(common practice: 1-based, as spreadsheets and editors number them; a CSV column is the field
number). The cases are under ``fixtures/bad/import/``; XLSX cases are made at test time from the
demo workbook, one broken cell each.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import pytest

from airgate.cli import main
from airgate.errors import EXIT_INPUT

from conftest import ROOT
from importing import need

BAD = ROOT / "fixtures" / "bad"
IMPORT = BAD / "import"


@dataclass
class Case:
    path: Path
    field: str | None
    at: str | None
    texts: list[str] = field(default_factory=list)
    file: Path | None = None


def _expectations(path: Path) -> dict[str, list[str]]:
    sidecar = path.with_name(path.name + ".expect")
    lines = (sidecar if sidecar.exists() else path).read_text(encoding="utf-8").splitlines()
    values: dict[str, list[str]] = {}
    for line in lines:
        m = (re.match(r"#\s*expect-(field|at|text|file):\s?(.*)$", line)
             or re.match(r"<!--\s*expect-(field|at|text|file):\s?(.*?)\s*-->$", line))
        if m:
            values.setdefault(m[1], []).append(m[2].strip())
    return values


def _case(path: Path) -> Case:
    v = _expectations(path)
    assert "field" in v and "at" in v and v.get("text"), f"{path.name}: expectations missing"
    return Case(path, None if v["field"][0] == "-" else v["field"][0],
                None if v["at"][0] == "-" else v["at"][0], v["text"],
                BAD / v["file"][0] if "file" in v else None)


CASES = [_case(p) for p in sorted(IMPORT.iterdir())
         if p.name.endswith(".zones.csv") or p.suffix in (".xml", ".ifc")]


def _run(capsys, argv):
    code = main(argv)
    out = capsys.readouterr()
    return code, out.out, out.err


def test_corpus_covers_every_import_format():
    kinds = {p.path.suffix for p in CASES}
    assert {".csv", ".xml", ".ifc"} <= kinds
    assert len(CASES) >= 20


@pytest.mark.parametrize("case", CASES, ids=[c.path.name for c in CASES])
def test_bad_import_is_refused_with_a_located_message(case: Case, capsys, tmp_path):
    target = tmp_path / "report.txt"
    code, out, err = _run(capsys, ["check", str(case.path), "-o", str(target)])
    assert code == EXIT_INPUT == 2
    assert out == "" and not target.exists() and list(tmp_path.iterdir()) == []
    assert "Traceback" not in err and "internal error" not in err
    named = case.file or case.path
    where = f"{named}:{case.at}:" if case.at else f"{named}: "
    assert where in err, f"expected {where!r} in:\n{err}"
    if case.field is not None:
        assert f": {case.field}: " in err, f"expected field {case.field!r} in:\n{err}"
    for text in case.texts:
        assert text in err, f"expected {text!r} in:\n{err}"


@pytest.mark.parametrize("case", CASES, ids=[c.path.name for c in CASES])
def test_bad_import_writes_no_yaml(case: Case, capsys, tmp_path):
    target = tmp_path / "schedule.yaml"
    code, out, err = _run(capsys, ["import", str(case.path), "-o", str(target)])
    if "unknown space type" in err or code == 0:
        # a category the rule pack lacks is only found by check, which knows the pack
        assert code == 0 and "ofice-space" in target.read_text(encoding="utf-8")
        return
    assert code == 2 and not target.exists() and out == ""
    assert "Traceback" not in err


# --- XLSX: one broken cell of the demo workbook at a time ---------------------------------------

@pytest.fixture(scope="module")
def openpyxl():
    return need("openpyxl")


def _column(sheet, header: str) -> int:
    for cell in sheet[1]:
        if str(cell.value).split(" [")[0] == header:
            return cell.column
    raise AssertionError(f"no column {header}")


XLSX_CASES = [
    # (sheet, row, column header, new value, field shown, texts)
    ("Zones", 9, "Area", -600, "systems[2].zones[2].area",
     ["must be greater than zero", "cell E9, column 'Area [ft2]'", "1 rejected"]),
    ("Zones", 9, "Primary airflow @heating", "=B9*2", None,
     ["the cell holds a formula (=B9*2); airgate never evaluates formulas", "paste values"]),
    ("Systems", 4, "Outdoor air", "1,900", "systems[2].outdoor_air",
     ["thousands separator", "cell E4"]),  # column E: Conditions is column D
    ("Zones", 3, "System", "DOAS-9", None, ["no system 'DOAS-9' in the Systems table",
                                             "did you mean 'DOAS-1'?"]),
    ("Zones", 4, "Zone", "__date__", None, ["the cell holds a date or time (2024-01-02",
                                             "format the column as text"]),
]


@pytest.fixture(scope="module")
def demo_xlsx(tmp_path_factory, openpyxl):
    from importing import demo_xlsx as build

    return build(tmp_path_factory.mktemp("xlsx"))


@pytest.mark.parametrize("sheet, row, header, value, field_path, texts", XLSX_CASES,
                         ids=[f"{c[0]}-{c[2]}-{c[3]}" for c in XLSX_CASES])
def test_broken_cell_names_sheet_row_and_column(demo_xlsx, openpyxl, tmp_path, capsys, sheet,
                                                row, header, value, field_path, texts):
    import datetime

    book = openpyxl.load_workbook(demo_xlsx)
    ws = book[sheet]
    col = _column(ws, header)
    ws.cell(row=row, column=col, value=datetime.datetime(2024, 1, 2)
            if value == "__date__" else value)
    path = tmp_path / "broken.xlsx"
    book.save(path)
    code, out, err = _run(capsys, ["check", str(path)])
    assert code == 2 and out == "" and "Traceback" not in err
    assert f"{path}[{sheet}]:{row}:{col}: " in err, err
    if field_path:
        assert f": {field_path}: " in err, err
    for text in texts:
        assert text in err, err


def test_header_with_a_misspelt_column_is_refused(demo_xlsx, openpyxl, tmp_path, capsys):
    book = openpyxl.load_workbook(demo_xlsx)
    ws = book["Zones"]
    ws.cell(row=1, column=_column(ws, "Occupants"), value="Ocupants [people]")
    path = tmp_path / "header.xlsx"
    book.save(path)
    code, _, err = _run(capsys, ["check", str(path)])
    assert code == 2
    assert "unknown column 'Ocupants'; did you mean 'Occupants'?" in err
    # the column is lost: every room of the demo is rejected (18 on 5 systems, the garden
    # pavilion on NV-1 among them)
    assert "18 rooms read, 0 mapped to 5 systems, 18 rejected" in err


def test_not_a_workbook_is_refused(tmp_path, capsys):
    path = tmp_path / "fake.xlsx"
    path.write_bytes(b"PK\x03\x04 this is no workbook")
    code, _, err = _run(capsys, ["check", str(path)])
    assert code == 2 and "not a readable .xlsx workbook" in err and "Traceback" not in err


def test_workbook_without_the_zones_sheet(demo_xlsx, openpyxl, tmp_path, capsys):
    book = openpyxl.load_workbook(demo_xlsx)
    del book["Zones"]
    path = tmp_path / "nozones.xlsx"
    book.save(path)
    code, _, err = _run(capsys, ["check", str(path)])
    assert code == 2 and f"{path}: schedule error: the workbook has no Zones sheet" in err


@pytest.mark.parametrize("suffix, fix", [(".xls", "save the workbook as .xlsx"),
                                         (".ods", "save the spreadsheet as .xlsx"),
                                         (".ifczip", "unzip it")])
def test_unsupported_formats_say_what_to_do(tmp_path, capsys, suffix, fix):
    path = tmp_path / f"building{suffix}"
    path.write_bytes(b"\x00\x01")
    code, _, err = _run(capsys, ["check", str(path)])
    assert code == 2 and fix in err


def test_csv_file_not_named_as_a_table(tmp_path, capsys):
    path = tmp_path / "building.csv"
    path.write_text("Zone,Area\n101,100\n", encoding="utf-8")
    code, _, err = _run(capsys, ["check", str(path)])
    assert code == 2 and "a CSV schedule is a set of tables named STEM.project.csv" in err


# --- XLSX: workbooks whose size on disk hides the work of reading them --------------------------

def _rewrite_sheet(src: Path, dst: Path, part_of_zones, change) -> Path:
    """The workbook ``src`` with the Zones sheet's XML changed by ``change`` (bytes → bytes)."""
    import zipfile

    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as zout:
        for info in zin.infolist():
            data = zin.read(info.filename)
            zout.writestr(info, change(data) if info.filename == part_of_zones else data)
    return dst


def _zones_part(openpyxl, path: Path) -> str:
    book = openpyxl.load_workbook(path, read_only=True)
    try:
        return book["Zones"]._worksheet_path  # the sheet's part in the archive
    finally:
        book.close()


def _cell(ref: str, text: str) -> bytes:
    row = "".join(ch for ch in ref if ch.isdigit())
    return (f'<row r="{row}"><c r="{ref}" t="inlineStr"><is><t>{text}</t></is></c></row>'
            "</sheetData>").encode()


HOSTILE_XLSX = [
    # (what, change of the Zones sheet XML, exit code, texts of the message)
    ("a declared size of A1:XFD99999 and an empty styled cell there is read as its content",
     lambda d: re.sub(rb'<dimension ref="[^"]*"\s*/>', b'<dimension ref="A1:XFD99999"/>', d)
     .replace(b"</sheetData>", b'<row r="99999"><c r="XFD99999" s="0"/></row></sheetData>'),
     1, []),
    ("a cell of 40,000 characters (inline string)",
     lambda d: d.replace(b"</sheetData>", _cell("B40", "A" * 40_000)),
     2, ["[Zones]:40:2: schedule error: cell B40 holds more than 32,767 characters"]),
    ("a value beyond column 200",
     lambda d: d.replace(b"</sheetData>", _cell("KZ40", "x")),
     2, ["[Zones]:40:312: schedule error: more than 200 columns: cell KZ40 holds a value"]),
    ("a value beyond row 100,000",
     lambda d: d.replace(b"</sheetData>", _cell("A100001", "x")),
     2, ["[Zones]:100001:1: schedule error: more than 100000 rows: cell A100001"]),
    ("a document type declaration (entities)",
     lambda d: b'<!DOCTYPE worksheet [<!ENTITY a "aaaa">]>' + d,
     2, ["[Zones]: schedule error: the workbook declares a document type (DTD)"]),
]


@pytest.mark.parametrize("what, change, code, texts", HOSTILE_XLSX,
                         ids=[c[0] for c in HOSTILE_XLSX])
def test_hostile_workbook_is_read_within_its_limits(demo_xlsx, openpyxl, tmp_path, capsys, what,
                                                    change, code, texts):
    # docs/limits.md, workbooks: the parts are checked by a streaming scan before openpyxl
    # reads them; the declared dimension is not trusted
    path = _rewrite_sheet(demo_xlsx, tmp_path / "hostile.xlsx", _zones_part(openpyxl, demo_xlsx),
                          change)
    got, out, err = _run(capsys, ["check", str(path)])
    assert got == code, err
    assert "Traceback" not in err
    for text in texts:
        assert f"{path}{text}" in err, err
    if code == 1:
        assert "14 rooms read" not in err and "Fernhollow" in out  # read as the demo


def test_workbook_unpacking_past_the_limit_is_refused(demo_xlsx, openpyxl, tmp_path, capsys,
                                                      monkeypatch):
    from airgate.readers import limits

    monkeypatch.setattr(limits, "MAX_UNPACKED_BYTES", 20_000)  # the demo unpacks to more
    code, _, err = _run(capsys, ["check", str(demo_xlsx)])
    assert code == 2 and "Traceback" not in err
    assert f"{demo_xlsx}: schedule error: the workbook's parts unpack to " in err
    assert "more than the 20000 bytes limit" in err


def test_a_workbook_that_is_not_a_file_on_disk_is_refused(tmp_path, capsys):
    # a workbook is an archive read by position: a pipe named .xlsx is refused before reading
    import os

    fifo = tmp_path / "book.xlsx"
    os.mkfifo(fifo)
    code, _, err = _run(capsys, ["check", str(fifo)])
    assert code == 2 and "Traceback" not in err
    assert f"{fifo}: schedule error: is not a regular file" in err
