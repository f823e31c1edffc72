"""The YAML writer: what it writes reads back as the same schedule, with provenance comments.

Expected values: the YAML 1.2 core schema as the schedule reader applies it (yaml.org/spec/1.2.2
§10.3; docs/schedule-format.md "Files"), and the schedule format's field order.
"""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from airgate.errors import ScheduleError
from airgate.readers.document import parse_yaml
from airgate.readers.sources import Origin
from airgate.writers.schedule_yaml import flow, render, scalar

from conftest import examples


def _back(text: str):
    return parse_yaml(f"k: {text}\n", "t.yaml", ScheduleError).data["k"]


@settings(max_examples=examples(3))
@given(st.text(alphabet=st.characters(blacklist_categories=("Cs", "Cc")), max_size=40))
def test_any_text_reads_back_as_written(text):
    assert _back(scalar(text)) == text


@settings(max_examples=examples())
@given(st.lists(st.text(max_size=12) | st.integers() | st.booleans(), max_size=4),
       st.dictionaries(st.from_regex(r"[a-z_]{1,8}", fullmatch=True),
                       st.text(max_size=12) | st.floats(allow_nan=False, allow_infinity=False),
                       max_size=3))
def test_flow_collections_read_back(items, mapping):
    assert _back(flow(items)) == items
    assert _back(flow(mapping)) == mapping


def test_number_like_ids_and_formula_text_are_quoted():
    assert scalar("101") == '"101"'
    assert scalar("0203") == '"0203"'
    assert scalar("=SUM(A1)") == '"=SUM(A1)"' and scalar("@x") == '"@x"'
    assert scalar("-ish") == '"-ish"' and scalar("+1") == '"+1"'
    assert scalar("office-space") == "office-space"
    assert scalar(2400.0) == "2400" and scalar(0.1) == "0.1" and scalar(True) == "true"


def test_render_orders_fields_and_comments_each_value():
    data = {"schedule": 1,
            "systems": [{"zones": [{"area": "600 ft2", "space": "conference-meeting",
                                    "id": "203"}],
                         "outdoor_air": "1900 cfm", "kind": "multiple-zone", "id": "AHU-3"}],
            "rules": "ashrae-62.1-2019", "project": {"units": "IP", "name": "Demo (invented)"}}
    origins = {("systems", 0, "zones", 0, "area"):
               Origin("b.xlsx[Zones]", 9, 5, "cell E9", "b.xlsx[Zones]!E9")}
    text = render(data, origins, ["Imported for a test."])
    lines = text.splitlines()
    assert lines[0] == "# Imported for a test."
    assert lines[1:4] == ["schedule: 1", "project:", "  name: Demo (invented)"]
    assert "        area: 600 ft2  # from b.xlsx[Zones]!E9" in lines
    zone = lines.index('      - id: "203"')
    assert lines[zone + 1].strip().startswith("space:")  # id, name, space, area … as documented
    assert parse_yaml(text, "t.yaml", ScheduleError).data == data
