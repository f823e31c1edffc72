"""Makeup air of exhausted zones against the air-class transfer rules.

Source: ANSI/ASHRAE 62.1-2019 Section 5.16.3 (recirculation limitations), as recalled
(`from memory`): class 1 air may be transferred to any space; class 2 air may be transferred to
toilet rooms and class 4 spaces, to class 2 or 3 spaces only of the same or similar use, never
to class 1 spaces; class 3 air shall not be transferred to any other space; class 4 air to no
space. Air classes of the zones are those of the pack's rows (Table 6-1 and the Minimum Exhaust
Rates table): corridors and office space class 1, art classrooms class 2, janitor closets
class 3, public toilets class 2 and a toilet room.
"""

from __future__ import annotations

import json

import pytest

from airgate.cli import main
from airgate.evaluation.makeup import ALLOWED, CONFIRM, REFUSED, transfer

from conftest import schedule


@pytest.mark.parametrize("from_class, to_class, toilet, same, expected", [
    (1, 1, False, False, ALLOWED),  # 5.16.3.1: class 1 anywhere
    (1, 3, False, False, ALLOWED),
    (2, 2, True, False, ALLOWED),  # 5.16.3.2: to toilet rooms
    (2, 1, True, False, ALLOWED),  # a toilet room under a class 1 category is still a toilet
    (2, 4, False, False, ALLOWED),  # to class 4 spaces
    (2, 1, False, False, REFUSED),  # never to class 1 spaces
    (2, 2, False, True, ALLOWED),  # same use
    (2, 3, False, False, CONFIRM),  # another use: to be confirmed similar
    (3, 3, False, True, REFUSED),  # 5.16.3.3: to no other space
    (3, 2, True, False, REFUSED),
    (4, 4, False, True, REFUSED),  # 5.16.3.4
])
def test_transfer_rules_of_section_5_16_3(from_class, to_class, toilet, same, expected):
    assert transfer(from_class, to_class, toilet_room=toilet, same_use=same)[0] == expected


def _supplied(zid, space, **kw):
    return {"id": zid, "space": space, "area": "400 ft2", "occupants": 0,
            "air_distribution": "ceiling-supply-cool", "outdoor_air": "100 cfm", **kw}


def _building(makeup_of: dict, source_space: str = "corridors", **extra_zone) -> dict:
    """A corridor-like source zone on an outdoor-air unit, and an exhaust fan with public
    toilets and a janitor closet whose makeup is ``makeup_of[zone id]``."""
    fan_zones = [
        {"id": "T1", "area": "200 ft2",
         "exhaust": {"category": "toilets-public", "airflow": "150 cfm", "fixtures": 3}},
        {"id": "J1", "area": "50 ft2",
         "exhaust": {"category": "janitor-closets-trash-rooms-recycling", "airflow": "60 cfm"}},
    ]
    for z in fan_zones:
        if z["id"] in makeup_of:
            z["exhaust"]["makeup"] = makeup_of[z["id"]]
    return schedule([
        {"id": "DOAS", "kind": "outdoor-air", "outdoor_air": "800 cfm",
         "zones": [_supplied("S1", source_space), _supplied("A1", "art-classroom", **extra_zone)]},
        {"id": "EF", "kind": "exhaust", "airflow": "300 cfm", "zones": fan_zones},
    ])


def _found(report, rule):
    return {f.subject: f for f in report.findings if f.rule == rule}


def test_class_1_corridor_air_may_make_up_toilets_and_closets(evaluate):
    r = evaluate(_building({"T1": {"transfer_from": "S1"}, "J1": {"transfer_from": "S1"}}))
    assert not _found(r, "makeup-transfer-class") and not _found(r, "makeup-transfer-use")
    toilet = r.zone("T1")[1]
    assert (toilet.makeup.source, toilet.makeup.zone, toilet.makeup.air_class) == (
        "transfer", "S1", 1)
    cases = {(c.rule, c.subject): c.status for c in r.cases}
    assert cases[("makeup-transfer-class", "EF/T1")] == "pass"
    assert not any("makeup air not stated" in n for n in r.notes)


def test_class_3_closet_air_may_not_make_up_the_toilets(evaluate, tmp_path, capsys):
    data = _building({"T1": {"transfer_from": "J1"}, "J1": "outdoor"})
    r = evaluate(data)
    (f,) = _found(r, "makeup-transfer-class").values()
    assert f.subject == "EF/T1" and f.severity == "fail"
    assert "class 3 air shall not be transferred to any other space" in f.message
    assert r.system("EF").verdict == "fail"
    # located at the transfer_from the schedule writes
    import yaml
    path = tmp_path / "b.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    line = next(n for n, text in enumerate(path.read_text().splitlines(), 1)
                if "transfer_from: J1" in text)
    assert main(["check", str(path)]) == 1
    assert f"b.yaml:{line}:" in capsys.readouterr().out


def test_class_2_air_goes_to_toilets_but_not_to_class_1_zones(evaluate):
    # the art classroom (class 2) makes up the toilets (a toilet room: allowed) and the
    # class 1 office (refused); a class 2 source for a class 3 closet: to be confirmed
    data = _building({"T1": {"transfer_from": "A1"}, "J1": {"transfer_from": "A1"}})
    data["systems"][0]["zones"].append(_supplied(
        "O1", "office-space", exhaust={"category": "copy-printing-rooms", "airflow": "200 cfm",
                                       "makeup": {"transfer_from": "A1"}}))
    r = evaluate(data)
    refused = _found(r, "makeup-transfer-class")
    assert set(refused) == {"DOAS/O1"}
    assert "class 2 air shall not be transferred to class 1 spaces" in refused["DOAS/O1"].message
    confirm = _found(r, "makeup-transfer-use")
    assert set(confirm) == {"EF/J1"} and confirm["EF/J1"].severity == "warning"


def test_silent_makeup_is_a_note(evaluate):
    r = evaluate(_building({"T1": "outdoor"}))
    (note,) = [n for n in r.notes if "makeup air not stated" in n]
    assert "EF/J1" in note and "EF/T1" not in note and "Section 5.16.3" in note
    assert r.zone("T1")[1].makeup.source == "outdoor" and r.zone("J1")[1].makeup is None


@pytest.mark.parametrize("source, message", [
    ("S9", "which the schedule does not have; did you mean 'S1'?"),
    ("T1", "cannot transfer makeup air from itself"),
])
def test_makeup_from_a_zone_the_schedule_lacks_is_an_input_error(tmp_path, capsys, source,
                                                                  message):
    import yaml
    path = tmp_path / "bad.yaml"
    path.write_text(yaml.safe_dump(_building({"T1": {"transfer_from": source}}),
                                   sort_keys=False), encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert message in err and "transfer_from" in err and f"{path}:" in err
    assert "Traceback" not in err


def test_json_states_the_makeup_of_each_exhausted_zone(tmp_path, capsys):
    import yaml
    path = tmp_path / "b.yaml"
    path.write_text(yaml.safe_dump(_building({"T1": {"transfer_from": "S1"}, "J1": "outdoor"}),
                                   sort_keys=False), encoding="utf-8")
    main(["check", str(path), "--format", "json"])
    doc = json.loads(capsys.readouterr().out)
    zones = {z["id"]: z for s in doc["systems"] for z in s["zones"]}
    assert zones["T1"]["makeup"] == {"from": "transfer", "zone": "S1", "air_class": 1}
    assert zones["J1"]["makeup"] == {"from": "outdoor"}
    assert "makeup" not in zones["S1"]  # no exhaust: no makeup key
