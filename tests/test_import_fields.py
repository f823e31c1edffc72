"""Cells and properties → schedule values; safe XML reading.

Expected values: the schedule format (docs/schedule-format.md: quantities, ids as written,
air distribution) and the table format (docs/importing.md). XML safety: a document type
declaration is refused outright (OWASP XML External Entity Prevention Cheat Sheet: disable DTDs
completely; common practice).
"""

from __future__ import annotations

import datetime as dt

import pytest

from airgate.errors import ScheduleError
from airgate.readers import condition_columns as C
from airgate.readers import fields as F
from airgate.readers import xmltree

AREA = F.find_column("Area", F.ZONE_COLUMNS)
ZONE_ID = F.find_column("Zone", F.ZONE_COLUMNS)


@pytest.mark.parametrize("value, unit, expected", [
    (2400, "ft2", "2400 ft2"), (2400.0, "ft2", "2400 ft2"), (222.5, "m2", "222.5 m2"),
    ("2400", "ft2", "2400 ft2"), ("2400 m2", "ft2", "2400 m2"), (2400, None, 2400),
    ("1,900", "ft2", "1,900"),  # passed on: the schedule reader explains the separator
])
def test_quantity_cells(value, unit, expected):
    assert F.convert(AREA, value, unit) == expected


def test_ids_are_text_as_written():
    assert F.convert(ZONE_ID, 101) == "101"
    assert F.convert(ZONE_ID, 101.0) == "101"
    assert F.convert(ZONE_ID, "0203") == "0203"


def test_a_date_where_a_value_belongs_is_an_error():
    with pytest.raises(F.CellError, match="date or time"):
        F.convert(ZONE_ID, dt.datetime(2024, 1, 2))


@pytest.mark.parametrize("text", ["Area [ft2]", "area [ft²]", "AREA[m2]", "area"])
def test_header_forms(text):
    col, _, _ = C.match_header(text, F.ZONE_COLUMNS)
    assert col.field == "area"


def test_header_suggests_the_nearest_column():
    with pytest.raises(F.CellError, match="did you mean 'Occupants'"):
        C.match_header("Ocupants", F.ZONE_COLUMNS)


def test_distribution_forms_round_trip():
    for value in ["ceiling-supply-cool", {"supply": "floor", "return": "ceiling"},
                  ["ceiling-supply-cool", {"supply": "ceiling", "mode": "heating",
                                           "temperature_difference": "20 delta_degF"}]]:
        assert F.parse_distribution(F.format_distribution(value)) == value


def test_day_text_round_trip():
    day = {"07:30-08:30": 0.3, "08:30-12:00": 0.9}
    assert F.parse_day(F.format_day(day)) == day and F.parse_day("") == {}


def test_annotations_split_free_lines_and_fields():
    free, notes = F.annotations("Reading room\nairgate.space: libraries\nairgate.filter.merv: 13"
                                "\nairgate.oops")
    assert free == ["Reading room"]
    assert notes == [("space", "libraries", 1), ("filter.merv", "13", 2), ("", "airgate.oops", 3)]


@pytest.mark.parametrize("doc, text", [
    (b'<?xml version="1.0"?>\n<!DOCTYPE a [<!ENTITY e "x">]>\n<a>&e;</a>', "declares a DTD"),
    (b'<?xml version="1.0"?>\n<!DOCTYPE a SYSTEM "http://example.invalid/a.dtd">\n<a/>',
     "declares a DTD"),
    (b'<a>&e;</a>', "undefined entity"),
    (b'<a><b></a>', "not well-formed"),
])
def test_xml_reader_refuses_dtds_and_entities(doc, text):
    with pytest.raises(ScheduleError, match=text):
        xmltree.parse(doc, "t.xml")


def test_xml_element_and_depth_limits(monkeypatch):
    monkeypatch.setattr(xmltree, "MAX_ELEMENTS", 10)
    with pytest.raises(ScheduleError, match="element limit"):
        xmltree.parse(b"<a>" + b"<b/>" * 20 + b"</a>", "t.xml")
    monkeypatch.setattr(xmltree, "MAX_DEPTH", 5)
    with pytest.raises(ScheduleError, match="depth limit"):
        xmltree.parse(b"<a>" * 8 + b"</a>" * 8, "t.xml")


def test_xml_positions_are_kept():
    root = xmltree.parse(b'<a>\n  <b id="x">t</b>\n</a>', "t.xml")
    b = root.find("b")
    assert (b.line, b.column, b.attrib, b.text) == (2, 3, {"id": "x"}, "t")
