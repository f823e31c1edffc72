"""Binding zones to the pack (evaluation/bind.py): zones that state the same space and air
distribution share one binding, which is what binding each zone alone gives.

Table values used below, as the built-in pack ashrae-62.1-2019 writes them (from memory):
Table 6-4, ceiling supply of cool air Ez = 1.0; ceiling supply of warm air 15 °F or more above
space temperature with ceiling return Ez = 0.8; floor supply of warm air and ceiling return
Ez = 0.7; floor supply of cool air, ceiling return, throw 50 fpm or less (displacement)
Ez = 1.2. Table 6-1, office space Rp = 5 cfm/person, Ra = 0.06 cfm/ft². Section 6.2.2.3:
Voz = Vbz / Ez; where several modes are analysed the lowest Ez governs (common practice).
"""

from __future__ import annotations

import pytest
import yaml

import airgate
from airgate.errors import AirgateError, ErrorGroup
from airgate.evaluation import bind, engine
from airgate.evaluation.requirements import Run
from airgate.readers.datatables import BUILTIN

from conftest import schedule

COOL = "ceiling-supply-cool"  # Table 6-4: Ez 1.0
WARM = "ceiling-supply-warm-ceiling-return-stratified"  # Table 6-4: Ez 0.8
FLOOR_WARM = "floor-supply-warm-ceiling-return"  # Table 6-4: Ez 0.7
DISPLACEMENT = {"supply": "floor", "return": "ceiling", "mode": "cooling",
                "throw_velocity": "40 fpm"}  # Table 6-4: Ez 1.2


def _zone(zid: str, space: str, **kw) -> dict:
    return {"id": zid, "space": space, "area": "1000 ft2", "occupants": 5, **kw}


def _mixed() -> dict:
    """Two air handlers: one with two design conditions, zones mixing spaces and every way of
    stating an air distribution, each statement made by more than one zone."""
    by_condition = {"cooling": COOL, "heating": WARM}
    vav = {"id": "AHU-1", "kind": "multiple-zone", "conditions": ["cooling", "heating"],
           "ventilation_efficiency": "detailed", "outdoor_air": "2000 cfm",
           "zones": [_zone(f"1{k:02d}", space, primary_airflow="1000 cfm", air_distribution=ad)
                     for k, (space, ad) in enumerate([
                         ("office-space", COOL), ("classrooms-age-9-plus", COOL),
                         ("office-space", by_condition), ("conference-meeting", by_condition),
                         ("office-space", [COOL, FLOOR_WARM]), ("office-space", [COOL, FLOOR_WARM]),
                         ("office-space", DISPLACEMENT), ("classrooms-age-9-plus", DISPLACEMENT),
                         ("office-space", None), ("conference-meeting", None)])]}
    for z in vav["zones"]:
        if z["air_distribution"] is None:
            del z["air_distribution"]
    vav["zones"].append(_zone("120", "office-space", primary_airflow="1000 cfm", ez=0.9,
                              ez_basis="tested by the commissioning agent (invented)"))
    single = {"id": "RTU-1", "kind": "single-zone", "outdoor_air": "500 cfm",
              "zones": [_zone("201", "office-space", air_distribution=[COOL, FLOOR_WARM])]}
    return schedule([vav, single])


def _bound(tmp_path, data: dict):
    path = tmp_path / "mixed.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    loaded = airgate.load_schedule(path)
    pack = airgate.load_pack(loaded.model.rules)
    return loaded, pack, engine._bind_all(loaded, pack, BUILTIN, Run(pack, loaded))


def test_shared_binding_is_each_zone_bound_alone(tmp_path):
    loaded, pack, bound = _bound(tmp_path, _mixed())
    seen = 0
    for i, by_condition in enumerate(bound):
        stated = loaded.model.systems[i]
        for cond, ctxs in by_condition.items():
            zones = stated.at(cond).zones
            assert len(ctxs) == len(zones)
            for j, (ctx, zone) in enumerate(zip(ctxs, zones)):
                path = ("systems", i, "zones", j)
                key = (cond,) if isinstance(stated.zones[j].air_distribution, dict) else ()
                # the binding of this zone alone, as the engine bound every zone before sharing
                assert ctx.category == bind.category(loaded, pack, zone, path)
                assert ctx.ez == bind.air_distribution(loaded, pack, zone, path, key)
                seen += 1
    assert seen == 11 * 2 + 1  # every zone of AHU-1 at both conditions, RTU-1's zone once


def test_shared_binding_ez_from_table_6_4(tmp_path):
    """Each statement's Ez, whoever states it (ANSI/ASHRAE 62.1-2019 Table 6-4, from memory)."""
    _, _, bound = _bound(tmp_path, _mixed())
    ez = {cond: {c.zone.id: c.ez.ez for c in ctxs} for cond, ctxs in bound[0].items()}
    expected_cooling = {"100": 1.0, "101": 1.0, "102": 1.0, "103": 1.0,
                        "104": 0.7, "105": 0.7,  # the lower of the two modes governs
                        "106": 1.2, "107": 1.2,  # stated configuration: displacement
                        "108": 1.0, "109": 1.0,  # not stated: the pack's default row, cool supply
                        "120": 0.9}  # explicit, with its basis
    assert ez["cooling"] == pytest.approx(expected_cooling)
    expected_heating = dict(expected_cooling, **{"102": 0.8, "103": 0.8})  # per condition
    assert ez["heating"] == pytest.approx(expected_heating)
    assert [c.ez.ez for c in bound[1][None]] == pytest.approx([0.7])


def test_equal_statements_share_one_binding(tmp_path):
    """What is shared is frozen: one EzChoice per distinct statement, the pack's own rows."""
    _, pack, bound = _bound(tmp_path, _mixed())
    ctxs = {c.zone.id: c for c in bound[0]["cooling"]}
    assert ctxs["104"].ez is ctxs["105"].ez
    assert ctxs["106"].ez is ctxs["107"].ez
    assert ctxs["100"].ez is ctxs["101"].ez is ctxs["102"].ez  # COOL, also at a condition
    assert ctxs["104"].ez is bound[1][None][0].ez  # across systems
    assert ctxs["100"].category is pack.categories["office-space"]
    assert ctxs["104"].ez.rows == (COOL, FLOOR_WARM)
    # Section 6.2.2.3, Voz = (Rp·Pz + Ra·Az) / Ez for the office zones of the two modes,
    # 5 × 5 + 0.06 × 1000 = 85 cfm, / 0.7 (Table 6-1, Table 6-4, from memory)
    report = airgate.check(tmp_path / "mixed.yaml")
    voz = {z.id: z.trail.value("Voz") for s in report.systems for z in s.zones}
    cfm = 0.471947443  # L/s per cfm (common practice: 1 cfm = 0.3048³ m³/min)
    assert voz["104"] == pytest.approx(85 / 0.7 * cfm, rel=1e-6)
    assert voz["105"] == pytest.approx(voz["104"], rel=1e-12)


def test_refused_statement_is_located_at_every_zone(tmp_path):
    """An unknown row stated by two zones (and one unknown space) is three located errors, all
    reported in one round, each at its own zone's field (common practice)."""
    data = _mixed()
    zones = data["systems"][0]["zones"]
    zones[0]["air_distribution"] = "ceiling-supply-cold"
    zones[1]["air_distribution"] = "ceiling-supply-cold"
    zones[6]["space"] = "office-spaces"
    with pytest.raises(ErrorGroup) as caught:
        _bound(tmp_path, data)
    errors = caught.value.errors
    assert len(errors) == 3
    unknown_row = [e for e in errors if "air distribution row" in e.message]
    assert [e.field for e in unknown_row] == [("systems", 0, "zones", 0, "air_distribution"),
                                              ("systems", 0, "zones", 1, "air_distribution")]
    assert unknown_row[0].message == unknown_row[1].message
    assert "did you mean 'ceiling-supply-cool'" in unknown_row[0].message
    assert unknown_row[0].line < unknown_row[1].line
    space = next(e for e in errors if "space type" in e.message)
    assert space.field == ("systems", 0, "zones", 6, "space")
    for e in errors:
        assert isinstance(e, AirgateError) and e.line is not None and e.column is not None

