"""Imported and text files that are hostile or saved wrongly: each said plainly, with a position.

The contract (README "Exit codes"; docs/importing.md; docs/limits.md): an element of another XML
namespace is not gbXML (Namespaces in XML 1.0, §6: an element's name is its namespace and local
name together); a prefixed attribute never stands in for gbXML's own. A UTF-16 or UTF-32 file is
named as such (its byte-order mark, The Unicode Standard §23.8), not called binary. A workbook
part that declares a DTD is refused at the part, line and column, as gbXML is. The expected
values are those documents and the contract.
"""

from __future__ import annotations

import zipfile

import pytest

from airgate.cli import main

from conftest import ROOT
from importing import need

GBXML = (ROOT / "fixtures" / "bad" / "import" / "gbxml-rules-outside.xml").read_text("utf-8")
ZONE = (ROOT / "fixtures" / "bad" / "zero-area.yaml").read_text("utf-8")


def _run(capsys, argv):
    code = main([str(a) for a in argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def _valid_gbxml() -> str:
    return GBXML.replace("../../../../../../root/.aws/credentials.yaml", "ashrae-62.1-2019")


def test_elements_of_another_namespace_are_not_read_as_gbxml(tmp_path, capsys):
    text = _valid_gbxml().replace(
        '<Space id="sp-102"', '<x:Space xmlns:x="urn:example:other" id="sp-102"', 1)
    start = text.index('<x:Space')
    end = text.index("</Space>", start)
    text = text[:end] + "</x:Space>" + text[end + len("</Space>"):]
    path = tmp_path / "b.xml"
    path.write_text(text, encoding="utf-8")
    code, out, err = _run(capsys, ["check", path, "--exit-zero"])
    assert code == 0, err
    assert "1 room read" in out  # the foreign Space is not a room
    assert "1 element in other namespaces not read as gbXML (first <Space> in " \
           "urn:example:other)" in out


def test_a_prefixed_attribute_does_not_stand_in_for_gbxmls_own(tmp_path, capsys):
    # areaUnit="SquareFeet" is gbXML's; o:areaUnit belongs to another vocabulary
    text = _valid_gbxml().replace(
        'areaUnit="SquareFeet"', 'xmlns:o="urn:example:other" o:areaUnit="SquareMeters" '
        'areaUnit="SquareFeet"', 1)
    path = tmp_path / "b.xml"
    path.write_text(text, encoding="utf-8")
    code, out, err = _run(capsys, ["check", path, "--exit-zero"])
    assert code == 0, err
    assert "(IP units)" in out


@pytest.mark.parametrize(("encoding", "named"), [
    ("utf-16", "UTF-16"), ("utf-16-le", "UTF-16"), ("utf-16-be", "UTF-16"),
    ("utf-32", "UTF-32"), ("utf-32-le", "UTF-32"), ("utf-32-be", "UTF-32"),
])
def test_wide_encodings_are_named_not_called_binary(encoding, named, tmp_path, capsys):
    tables = ROOT / "fixtures" / "bad" / "import"
    for table in ("project", "systems"):
        (tmp_path / f"s.{table}.csv").write_bytes(
            (tables / f"csv-negative-area.{table}.csv").read_bytes())
    zones = (tables / "csv-negative-area.zones.csv").read_text("utf-8")
    for name, text in (("s.yaml", ZONE), ("s.zones.csv", zones)):
        path = tmp_path / name
        path.write_bytes(text.encode(encoding))
        code, out, err = _run(capsys, ["check", path])
        assert code == 2 and out == ""
        assert f"{path}:1:1: schedule error: file is {named} text, expected UTF-8" in err, err
        assert "fix: save the file as UTF-8" in err and "binary" not in err


def _styles_with_dtd(data: bytes) -> bytes:
    """The styles part with a DTD after its own XML declaration: it stands on line 2."""
    return (b'<?xml version="1.0"?>\n<!DOCTYPE w [<!ENTITY e "x">]>\n'
            + data.split(b"?>", 1)[-1].lstrip())


def _sheet_with_dtd(data: bytes) -> bytes:
    """The first sheet with a DTD on line 3, before the sheet's own XML declaration."""
    return b'<?xml version="1.0"?>\n\n<!DOCTYPE w [<!ENTITY e "x">]>\n' + data


@pytest.mark.parametrize(("part", "hostile", "said"), [
    # a part that is no sheet is named by its path in the package, line and column 1-based
    ("xl/styles.xml", _styles_with_dtd,
     ("{target}[xl/styles.xml]:2:1: schedule error: ", "declares a DTD or an entity")),
    # a sheet's DTD is named by the sheet's title, with its place in the XML
    ("xl/worksheets/sheet1.xml", _sheet_with_dtd,
     ("the workbook declares a document type (DTD)", "[Project]: schedule error: ",
      "(line 3, column ")),
], ids=["styles-part", "sheet"])
def test_a_workbook_part_with_a_dtd_is_refused_where_it_stands(part, hostile, said, tmp_path,
                                                               capsys):
    need("openpyxl")
    from importing import demo_xlsx

    source = demo_xlsx(tmp_path)
    target = tmp_path / "entities.xlsx"
    with zipfile.ZipFile(source) as z, zipfile.ZipFile(target, "w") as out:
        for name in z.namelist():
            data = z.read(name)
            out.writestr(name, hostile(data) if name == part else data)
    code, out, err = _run(capsys, ["check", target])
    assert code == 2 and out == ""
    for text in said:
        assert text.format(target=target) in err, err
