"""Zone exhaust against the minimum exhaust rates of ANSI/ASHRAE 62.1-2019 Section 6.5.

The rates are those of the standard's Minimum Exhaust Rates table (Table 6-4 in the 2010 edition,
Table 6.5 in 2013 and 2016; the 2019 number is not verified), written out in each test from
memory (`from memory`): public toilets 50/70 cfm (25/35 L/s) per water closet or urinal,
continuous/intermittent; private toilets 25/50 cfm (12.5/25 L/s); janitor closets, trash rooms
and recycling 1.00 cfm/ft² (5.0 L/s·m²); kitchenettes 0.30 cfm/ft² (1.5 L/s·m²); shower rooms
20/50 cfm (10/25 L/s) per showerhead; residential kitchens 50/100 cfm (25/50 L/s) per kitchen.
Expected airflows are these rates times the inputs, computed here by hand; conversions use the
exact factor 1 cfm = 0.3048³ m³/min (common practice).
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest
import yaml

from airgate.readers.rulepack import load_pack

from conftest import CFM, schedule, subprocess_env

REL = 1e-9


def _zone(zid, area, exhaust, **kw):
    return {"id": zid, "space": "office-space", "area": area, "occupants": 0,
            "air_distribution": "ceiling-supply-cool", "exhaust": exhaust, **kw}


def _doas(zones, units="IP", rules="ashrae-62.1-2019"):
    oa = "1000 cfm" if units == "IP" else "500 L/s"
    for z in zones:
        z.setdefault("outdoor_air", "50 cfm" if units == "IP" else "25 L/s")
    return schedule([{"id": "EF-host", "kind": "outdoor-air", "outdoor_air": oa,
                      "zones": zones}], units=units, rules=rules)


def _exhaust_findings(report):
    return {f.zone: f for f in report.findings if f.rule == "zone-exhaust"}


def test_public_toilets_per_fixture_continuous_and_intermittent_ip(evaluate):
    # 6 water closets and urinals: continuous 6 × 50 = 300 cfm; intermittent 6 × 70 = 420 cfm
    # (62.1-2019 Section 6.5, Minimum Exhaust Rates table, toilets — public; from memory).
    r = evaluate(_doas([
        _zone("c", "240 ft2", {"category": "toilets-public", "airflow": "320 cfm", "fixtures": 6}),
        _zone("i", "240 ft2", {"category": "toilets-public", "airflow": "320 cfm", "fixtures": 6,
                               "operation": "intermittent"}),
    ]))
    c, i = r.systems[0].zones
    assert c.trail.value("Ve") / CFM == pytest.approx(300, rel=REL)
    assert c.trail.value("Re") / CFM == pytest.approx(50, rel=REL)
    assert c.trail.value("Ne") == 6
    assert c.trail.value("Ve_design") / CFM == pytest.approx(320, rel=REL)
    assert i.trail.value("Ve") / CFM == pytest.approx(420, rel=REL)
    found = _exhaust_findings(r)
    assert set(found) == {"i"}
    assert found["i"].severity == "fail"
    assert found["i"].required.value / CFM == pytest.approx(420, rel=REL)
    assert found["i"].provided.value / CFM == pytest.approx(320, rel=REL)
    assert (c.verdict, i.verdict) == ("pass", "fail")
    assert c.exhaust == "toilets-public"


def test_per_area_rows_ip(evaluate):
    # janitor closet 80 ft² × 1.00 = 80 cfm; kitchenette 150 ft² × 0.30 = 45 cfm (the single
    # per-area rate applies whatever the operation); from memory.
    r = evaluate(_doas([
        _zone("j", "80 ft2", {"category": "janitor-closets-trash-rooms-recycling",
                              "airflow": "75 cfm"}),
        _zone("k", "150 ft2", {"category": "kitchenettes", "airflow": "45 cfm",
                               "operation": "intermittent"}),
    ]))
    j, k = r.systems[0].zones
    assert j.trail.value("Ve") / CFM == pytest.approx(80, rel=REL)
    assert k.trail.value("Ve") / CFM == pytest.approx(45, rel=REL)
    assert "Ne" not in j.trail and j.trail["Ve"].formula == "{Re}·{Az}"
    found = _exhaust_findings(r)
    assert set(found) == {"j"}
    assert found["j"].required.value / CFM == pytest.approx(80, rel=REL)


def test_si_rows_per_fixture_per_kitchen_and_per_area(evaluate):
    # SI table (from memory): private toilets 2 × 25 L/s intermittent = 50 L/s; shower room
    # 4 showerheads × 10 L/s continuous = 40 L/s; dwelling kitchen 1 × 25 L/s continuous;
    # janitor closet 6 m² × 5.0 L/s·m² = 30 L/s.
    r = evaluate(_doas([
        _zone("t", "6 m2", {"category": "toilets-private", "airflow": "50 L/s", "fixtures": 2,
                            "operation": "intermittent"}),
        _zone("s", "12 m2", {"category": "shower-rooms", "airflow": "35 L/s", "fixtures": 4}),
        _zone("k", "10 m2", {"category": "kitchens-residential", "airflow": "25 L/s",
                             "fixtures": 1}),
        _zone("j", "6 m2", {"category": "janitor-closets-trash-rooms-recycling",
                            "airflow": "30 L/s"}),
    ], units="SI", rules="ashrae-62.1-2019-si"))
    ve = {z.id: z.trail.value("Ve") for z in r.systems[0].zones}
    assert ve == pytest.approx({"t": 50.0, "s": 40.0, "k": 25.0, "j": 30.0}, rel=REL)
    found = _exhaust_findings(r)
    assert set(found) == {"s"}
    assert found["s"].required.value == pytest.approx(40.0, rel=REL)


def test_the_finding_is_located_at_the_scheduled_airflow(tmp_path):
    text = """schedule: 1
project: {name: "Test building (invented)", units: IP}
rules: ashrae-62.1-2019
systems:
  - id: AHU-1
    kind: single-zone
    outdoor_air: 200 cfm
    zones:
      - id: "101"
        space: office-space
        area: 100 ft2
        air_distribution: ceiling-supply-cool
        exhaust:
          category: toilets-private
          airflow: 20 cfm
          fixtures: 1
"""
    path = tmp_path / "s.yaml"
    path.write_text(text, encoding="utf-8")
    out = subprocess.run([sys.executable, "-m", "airgate", "check", str(path), "--format",
                          "json"], capture_output=True, text=True, env=subprocess_env())
    assert out.returncode == 1, out.stderr  # a failing check: exit 1, as for any check
    report = json.loads(out.stdout)
    (f,) = [f for f in report["findings"] if f["rule"] == "zone-exhaust"]
    assert (f["location"]["line"], f["location"]["column"]) == (15, 20)
    # 1 × 25 cfm (toilets — private, continuous; from memory)
    assert f["required"] == {"value": 25.0, "unit": "ft**3/min"}
    assert f["provided"] == {"value": 20.0, "unit": "ft**3/min"}
    zone = report["systems"][0]["zones"][0]
    assert zone["values"]["Ve"] == {"value": 25.0, "unit": "ft**3/min"}
    assert zone["values"]["Ve_design"] == {"value": 20.0, "unit": "ft**3/min"}
    assert "Section 6.5" in f["source"]


def test_explain_and_text_show_the_exhaust(tmp_path):
    data = _doas([_zone("101", "100 ft2", {"category": "kitchenettes", "airflow": "40 cfm"})])
    path = tmp_path / "s.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    run = lambda *a: subprocess.run([sys.executable, "-m", "airgate", *a],  # noqa: E731
                                    capture_output=True, text=True, env=subprocess_env())
    explain = run("explain", str(path), "--zone", "101")
    assert explain.returncode == 0, explain.stderr
    # 100 ft² × 0.30 cfm/ft² = 30 cfm (kitchenettes; from memory)
    lines = [line.split() for line in explain.stdout.splitlines()]
    at = lines.index(["Ve", "=", "Re·Az"])
    assert lines[at + 1] == ["=", "0.3", "×", "100"] and lines[at + 2] == ["=", "30.0", "cfm"]
    assert "Minimum Exhaust Rates" in explain.stdout
    text = run("check", str(path))
    assert "kitchenettes" in text.stdout and "30.0 cfm" in text.stdout


def test_pack_without_an_exhaust_table_is_a_located_input_error(evaluate):
    from airgate.errors import AirgateError

    data = schedule([{"id": "AHU-1", "kind": "single-zone", "outdoor_air": "200 cfm",
                      "zones": [_zone("1", "100 ft2", {"category": "kitchenettes",
                                                       "airflow": "40 cfm"})]}],
                    rules="en-16798-1-2019")  # EN 16798-1: no extract rates in the pack
    data["project"]["options"] = {"category": "II", "pollution": "low"}
    data["systems"][0]["zones"][0]["space"] = "single-office"
    with pytest.raises(AirgateError, match="has no minimum exhaust rates table") as exc:
        evaluate(data)
    assert "systems[0].zones[0].exhaust.category" in exc.value.render()


def test_packs_carry_the_rows_and_provenance():
    # the I-P and SI rows side by side (from memory, as the module docstring says)
    ip, si = load_pack("ashrae-62.1-2019"), load_pack("ashrae-62.1-2019-si")
    expected = {
        "toilets-public": ({"continuous": 50, "intermittent": 70}, {"continuous": 25, "intermittent": 35}),
        "toilets-private": ({"continuous": 25, "intermittent": 50}, {"continuous": 12.5, "intermittent": 25}),
        "janitor-closets-trash-rooms-recycling": ({"rate": 1.0}, {"rate": 5.0}),
        "educational-science-laboratories": ({"rate": 1.0}, {"rate": 5.0}),
        "kitchens-commercial": ({"rate": 0.7}, {"rate": 3.5}),
        "kitchenettes": ({"rate": 0.3}, {"rate": 1.5}),
        "locker-rooms": ({"rate": 0.5}, {"rate": 2.5}),
        "locker-dressing-rooms": ({"rate": 0.25}, {"rate": 1.25}),
        "shower-rooms": ({"continuous": 20, "intermittent": 50}, {"continuous": 10, "intermittent": 25}),
        "copy-printing-rooms": ({"rate": 0.5}, {"rate": 2.5}),
        "parking-garages": ({"rate": 0.75}, {"rate": 3.7}),
        "kitchens-residential": ({"continuous": 50, "intermittent": 100}, {"continuous": 25, "intermittent": 50}),
    }
    assert set(ip.exhaust) == set(si.exhaust) == set(expected)
    for rid, (p_ip, p_si) in expected.items():
        assert ip.exhaust[rid].printed == p_ip and si.exhaust[rid].printed == p_si
        for pack in (ip, si):
            row = pack.exhaust[rid]
            assert row.provenance == "from memory"
            assert "Section 6.5" in row.cite(next(iter(row.rates)))
    # internal units: 0.30 cfm/ft² = 0.30 × 0.3048³/60·1000 / 0.3048² L/s·m²
    assert ip.exhaust["kitchenettes"].rates["rate"] == pytest.approx(0.30 * CFM / 0.3048**2)
    assert ip.exhaust["toilets-public"].rates["intermittent"] == pytest.approx(70 * CFM)


LAYERED = """pack: 1
id: exhaust-town-2030
extends: ashrae-62.1-2019
title: "Fictional town's exhaust amendments (invented)"
document: "Fictional town mechanical code (invented)"
edition: "2030"
provenance: invented
amend:
  exhaust:
    change:
      - id: toilets-public
        set: {continuous: 60}
        source: {section: "Section 1 (invented)"}
        provenance: invented
    add:
      - id: bike-stores
        label: "Bicycle stores (invented)"
        per: floor-area
        rate: 0.2
        air_class: 2
        source: {section: "Section 2 (invented)"}
        provenance: invented
    retire:
      - id: parking-garages
        reason: "the fictional town has no garages"
"""


def test_a_jurisdiction_layer_changes_adds_and_retires_exhaust_rows(tmp_path, evaluate):
    (tmp_path / "exhaust-town-2030.yaml").write_text(LAYERED, encoding="utf-8")
    pack = load_pack("exhaust-town-2030", search=[tmp_path])
    assert pack.exhaust["toilets-public"].printed == {"continuous": 60, "intermittent": 70}
    assert pack.exhaust["toilets-public"].provenance == "invented"
    assert "Section 1 (invented)" in pack.exhaust["toilets-public"].cite("continuous")
    assert pack.exhaust["bike-stores"].printed == {"rate": 0.2}
    assert "parking-garages" not in pack.exhaust
    assert pack.retired["exhaust"]["parking-garages"].reason == "the fictional town has no garages"
    # the changed rate is used: 3 fixtures × 60 cfm = 180 cfm (the invented amendment)
    data = _doas([_zone("1", "100 ft2", {"category": "toilets-public", "airflow": "200 cfm",
                                         "fixtures": 3})], rules=str(tmp_path / "exhaust-town-2030.yaml"))
    r = evaluate(data)
    assert r.systems[0].zones[0].trail.value("Ve") / CFM == pytest.approx(180, rel=REL)
    from airgate.errors import AirgateError
    data = _doas([_zone("1", "100 ft2", {"category": "parking-garages", "airflow": "200 cfm"})],
                 rules=str(tmp_path / "exhaust-town-2030.yaml"))
    with pytest.raises(AirgateError, match="retired by rule pack exhaust-town-2030"):
        evaluate(data)


def _fan(zones, airflow=None, units="IP", rules="ashrae-62.1-2019"):
    fan = {"id": "EF-2", "kind": "exhaust", "zones": zones}
    if airflow is not None:
        fan["airflow"] = airflow
    supply = {"id": "AHU-1", "kind": "single-zone",
              "outdoor_air": "100 cfm" if units == "IP" else "50 L/s",
              "zones": [{"id": "101", "space": "office-space",
                         "area": "500 ft2" if units == "IP" else "50 m2", "occupants": 2,
                         "air_distribution": "ceiling-supply-cool"}]}
    return schedule([supply, fan], units=units, rules=rules)


def test_exhaust_fan_zones_and_the_fan_airflow_ip(evaluate):
    # toilets 6 × 50 = 300 cfm; janitor closet 60 ft² × 1.00 = 60 cfm; kitchenette
    # 150 ft² × 0.30 = 45 cfm (from memory). Scheduled 320 + 50 + 50 = 420 cfm against a
    # 400 cfm fan: the fan is 20 cfm short of its zones (common practice: a fan carries the
    # sum of the exhaust scheduled from its zones).
    r = evaluate(_fan([
        {"id": "118", "name": "Public toilets", "area": "240 ft2",
         "exhaust": {"category": "toilets-public", "airflow": "320 cfm", "fixtures": 6}},
        {"id": "119", "area": "60 ft2",
         "exhaust": {"category": "janitor-closets-trash-rooms-recycling", "airflow": "50 cfm"}},
        {"id": "120", "area": "150 ft2", "exhaust": {"category": "kitchenettes",
                                                     "airflow": "50 cfm"}},
    ], airflow="400 cfm"))
    fan = r.system("EF-2")
    assert fan.supplies is False and fan.kind == "exhaust"
    assert fan.trail.value("ΣVe") / CFM == pytest.approx(300 + 60 + 45, rel=REL)
    assert fan.trail.value("ΣVe_design") / CFM == pytest.approx(420, rel=REL)
    assert fan.trail.value("V_fan") / CFM == pytest.approx(400, rel=REL)
    assert "Vot" not in fan.trail
    found = {(f.rule, f.subject): f for f in r.findings}
    assert set(found) == {("zone-exhaust", "EF-2/119"), ("exhaust-fan-airflow", "EF-2")}
    f = found[("exhaust-fan-airflow", "EF-2")]
    assert f.required.value / CFM == pytest.approx(420, rel=REL)
    assert f.provided.value / CFM == pytest.approx(400, rel=REL)
    assert [z.verdict for z in fan.zones] == ["pass", "fail", "pass"]
    assert fan.verdict == "fail" and r.system("AHU-1").verdict == "pass"
    assert fan.zones[0].space == "toilets-public" and fan.zones[0].air_class == 2
    cases = {(c.rule, c.subject): c.status for c in r.cases if c.system == "EF-2"}
    assert cases == {("exhaust-fan-airflow", "EF-2"): "fail", ("zone-exhaust", "EF-2/118"): "pass",
                     ("zone-exhaust", "EF-2/119"): "fail", ("zone-exhaust", "EF-2/120"): "pass"}


def test_exhaust_fan_si_without_a_fan_airflow(evaluate):
    # shower room 4 showerheads × 25 L/s intermittent = 100 L/s; locker room 20 m² × 2.5 L/s·m²
    # = 50 L/s (SI rates from memory); no fan airflow scheduled: no fan check.
    r = evaluate(_fan([
        {"id": "s", "area": "12 m2", "exhaust": {"category": "shower-rooms", "airflow": "100 L/s",
                                                 "fixtures": 4, "operation": "intermittent"}},
        {"id": "l", "area": "20 m2", "exhaust": {"category": "locker-rooms",
                                                 "airflow": "50 L/s"}},
    ], units="SI", rules="ashrae-62.1-2019-si"))
    fan = r.system("EF-2")
    assert fan.trail.value("ΣVe") == pytest.approx(150.0, rel=REL)
    assert "V_fan" not in fan.trail and r.verdict == "pass" and not r.findings


def test_exhaust_fan_in_every_report_format(tmp_path):
    data = _fan([{"id": "119", "area": "60 ft2", "exhaust": {
        "category": "janitor-closets-trash-rooms-recycling", "airflow": "50 cfm"}}],
        airflow="40 cfm")
    path = tmp_path / "s.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    run = lambda *a: subprocess.run([sys.executable, "-m", "airgate", *a],  # noqa: E731
                                    capture_output=True, text=True, env=subprocess_env())
    from airgate.writers.formats import FORMATS

    for name in (n for n, f in FORMATS.items() if not f.binary):  # to standard output
        out = run("check", str(path), "--format", name)
        assert out.returncode == 1, (name, out.stderr)  # failing findings: exit 1
        assert "Traceback" not in out.stderr
        # 60 ft² × 1.00 cfm/ft² = 60 cfm needed, 50 scheduled, fan 40 (from memory)
        assert "EF-2" in out.stdout and "60" in out.stdout, name
    report = json.loads(run("check", str(path), "--format", "json").stdout)
    fan = report["systems"][1]
    assert fan["kind"] == "exhaust"
    assert fan["values"]["V_fan"] == {"value": 40.0, "unit": "ft**3/min"}
    assert fan["values"]["sum_Ve_design"] == {"value": 50.0, "unit": "ft**3/min"}
    assert fan["zones"][0]["values"]["Ve"] == {"value": 60.0, "unit": "ft**3/min"}
    explain = run("explain", str(path), "--system", "EF-2")
    assert explain.returncode == 0 and "ΣVe_design" in explain.stdout


@pytest.mark.parametrize("edit, field, text", [
    (lambda d: d["systems"][1]["zones"][0].update(space="office-space"),
     "systems[1].zones[0].space", "'space' describes supply air"),
    (lambda d: d["systems"][1].update(outdoor_air="100 cfm"),
     "systems[1].outdoor_air", "a exhaust system has no mechanical intake"),
    (lambda d: d["systems"][1]["zones"][0].pop("exhaust"),
     "systems[1].zones[0].exhaust", "a zone of an exhaust fan needs exhaust"),
    (lambda d: d["systems"][0].pop("outdoor_air"),
     "systems[0].outdoor_air", "a single-zone system needs outdoor_air"),
    (lambda d: d["systems"][0]["zones"][0].pop("space"),
     "systems[0].zones[0].space", "missing required field 'space'"),
])
def test_what_each_kind_needs_is_a_located_input_error(tmp_path, edit, field, text):
    data = _fan([{"id": "119", "area": "60 ft2", "exhaust": {
        "category": "janitor-closets-trash-rooms-recycling", "airflow": "60 cfm"}}])
    edit(data)
    path = tmp_path / "s.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    out = subprocess.run([sys.executable, "-m", "airgate", "check", str(path)],
                         capture_output=True, text=True, env=subprocess_env())
    assert out.returncode == 2 and not out.stdout  # the bad-input contract: exit 2
    assert f"{path}:" in out.stderr and f": {field}: " in out.stderr and text in out.stderr
    assert "Traceback" not in out.stderr


def test_a_zone_exhaust_is_reported_once_whatever_the_design_conditions(evaluate):
    # 240 ft² × 0.30 cfm/ft² = 72 cfm (kitchenettes; from memory); the exhaust does not change
    # between the system's cooling and heating conditions, so one finding, at no condition.
    data = schedule([{
        "id": "AHU-1", "kind": "multiple-zone", "conditions": ["cooling", "heating"],
        "outdoor_air": "900 cfm",
        "zones": [{"id": "201", "space": "office-space", "area": "4000 ft2", "occupants": 20,
                   "air_distribution": "ceiling-supply-cool",
                   "primary_airflow": {"cooling": "2000 cfm", "heating": "1000 cfm"}},
                  _zone("202", "240 ft2", {"category": "kitchenettes", "airflow": "50 cfm"},
                        primary_airflow="250 cfm")]}])
    r = evaluate(data)
    (f,) = [f for f in r.findings if f.rule == "zone-exhaust"]
    assert f.condition is None and f.required.value / CFM == pytest.approx(72, rel=REL)
    assert r.zone("202")[1].verdict == "fail"
