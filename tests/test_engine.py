"""Hand-computed cases through the whole engine.

Hand computations follow ANSI/ASHRAE 62.1-2019 Sections 6.2.2-6.2.5 and Normative Appendix A
(docs/references.md); rates are the pack's Table 6-1 values (provenance per row in the pack).
Expected values are computed in the tests from the schedule's inputs, never by the procedures
under test. Agreement is required to 0.1 % where a case is a worked example; hand arithmetic
of the same equations agrees to rounding error.
"""

from __future__ import annotations

import copy

import pytest
import yaml

from airgate.readers.rulepack import builtin_rules_dir

from conftest import CFM, schedule

REL = 1e-3


def zone(id, space, area, **kw):
    return {"id": id, "space": space, "area": area, "air_distribution": "ceiling-supply-cool", **kw}


def cfm(step_value):
    return step_value / CFM


def test_single_zone_conference_620_cfm(evaluate):
    # 2000 ft2, 100 people, Ez 1.0: Vbz = 5·100 + 0.06·2000 = 620 cfm (ANSI/ASHRAE 62.1-2019
    # Section 6.2.2.1 with the Table 6-1 conference/meeting rates; derived).
    r = evaluate(schedule([{"id": "S1", "kind": "single-zone", "outdoor_air": "700 cfm",
                            "zones": [zone("1", "conference-meeting", "2000 ft2", occupants=100)]}]))
    s = r.systems[0]
    assert cfm(s.trail.value("Vot")) == pytest.approx(620, rel=REL)
    assert s.verdict == "pass" and r.verdict == "pass" and not r.findings


def test_single_zone_default_density_and_warm_ceiling_supply(evaluate):
    # Office 5000 ft2, occupants not stated: Pz = 5/1000 ft2 × 5000 = 25 (Table 6-1 default
    # density); Vbz = 5·25 + 0.06·5000 = 425 cfm; warm ceiling supply 20 °F above the room with
    # ceiling return: Ez = 0.8 (Table 6-4) -> Voz = 531.25 cfm, short of 500 cfm scheduled.
    z = zone("1", "office-space", "5000 ft2")
    z["air_distribution"] = {"supply": "ceiling", "return": "ceiling", "mode": "heating",
                             "temperature_difference": "20 delta_degF"}
    r = evaluate(schedule([{"id": "S1", "kind": "single-zone", "outdoor_air": 500, "zones": [z]}]))
    zt = r.systems[0].zones[0].trail
    assert zt.value("Pz") == pytest.approx(25, rel=REL)
    assert zt["Pz"].origin == "computed"
    assert cfm(zt.value("Vbz")) == pytest.approx(425, rel=REL)
    assert zt.value("Ez") == 0.8
    assert cfm(zt.value("Voz")) == pytest.approx(531.25, rel=REL)
    assert r.verdict == "fail"
    (f,) = [f for f in r.findings if f.rule == "system-intake"]
    assert cfm(f.required.value) == pytest.approx(531.25, rel=REL)
    assert cfm(f.provided.value) == pytest.approx(500, rel=REL)


def test_outdoor_air_system_sum_and_zone_check(evaluate):
    # Classroom (age 9+) 1000 ft2 at default density 35/1000 ft2: 10·35 + 0.12·1000 = 470 cfm;
    # corridor 500 ft2: 0.06·500 = 30 cfm; Vot = ΣVoz = 500 cfm (Section 6.2.4).
    r = evaluate(schedule([{"id": "D1", "kind": "outdoor-air", "outdoor_air": "520 cfm", "zones": [
        zone("A", "classrooms-age-9-plus", "1000 ft2", outdoor_air="460 cfm"),
        zone("B", "corridors", "500 ft2", outdoor_air="40 cfm")]}]))
    s = r.systems[0]
    assert cfm(s.trail.value("Vot")) == pytest.approx(500, rel=REL)
    rules = {(f.rule, f.subject) for f in r.findings}
    assert rules == {("zone-outdoor-air", "D1/A")}
    assert s.zones[0].verdict == "fail" and s.zones[1].verdict == "pass"


MZ = [
    zone("201", "office-space", "3000 ft2", primary_airflow="1200 cfm"),
    {**zone("202", "conference-meeting", "500 ft2", occupants=25, primary_airflow="400 cfm"),
     "air_distribution": ["ceiling-supply-cool", "ceiling-supply-warm-ceiling-return-stratified"]},
    zone("203", "corridors", "800 ft2", primary_airflow="200 cfm"),
]


def mz(method, population=30, outdoor_air="500 cfm", zones=MZ):
    return schedule([{"id": "M", "kind": "multiple-zone", "outdoor_air": outdoor_air,
                      "population": population, "ventilation_efficiency": method,
                      "zones": copy.deepcopy(zones)}])


def test_multiple_zone_detailed_by_hand(evaluate):
    # By hand: Pz 15 (default), 25, 0; ΣRp·Pz = 75 + 125 = 200 cfm; ΣRa·Az = 180 + 30 + 48 = 258;
    # D = 30/40 = 0.75; Vou = 0.75·200 + 258 = 408 cfm; Vps = 1800; Xs = 0.22667.
    # Zone 202: Ez 0.8 (lowest of its two modes) -> Voz = 155/0.8 = 193.75; Zpz = 0.484375;
    # Evz = 1 + 0.22667 − 0.48438 = 0.74229 = Ev; Vot = 408/0.74229 = 549.65 cfm.
    r = evaluate(mz("detailed"))
    s = r.systems[0]
    t = s.trail
    assert t.value("D") == pytest.approx(0.75)
    assert cfm(t.value("Vou")) == pytest.approx(408, rel=REL)
    assert t.value("Xs") == pytest.approx(408 / 1800, rel=REL)
    assert t.value("Ev") == pytest.approx(1 + 408 / 1800 - 193.75 / 400, rel=REL)
    assert cfm(t.value("Vot")) == pytest.approx(408 / (1 + 408 / 1800 - 193.75 / 400), rel=REL)
    assert s.critical_zone == "202"
    # the scheduled 500 cfm needs Ev = 0.816; zone 202 then needs Vpz ≥ 193.75/(1 + Xs − 0.816)
    (limit,) = [f for f in r.findings if f.rule == "zone-limits-ev"]
    assert limit.subject == "M/202"
    assert cfm(limit.required.value) == pytest.approx(193.75 / (1 + 408 / 1800 - 408 / 500),
                                                      rel=REL)


@pytest.mark.parametrize("population, ev", [(30, 0.75), (20, 0.88 * 0.5 + 0.22)])
def test_multiple_zone_simplified_by_hand(evaluate, population, ev):
    # D = 0.75 -> Ev = 0.75; D = 0.5 -> Ev = 0.88·0.5 + 0.22 = 0.66 (simplified procedure).
    d = population / 40
    vou = d * 200 + 258
    r = evaluate(mz("simplified", population=population, outdoor_air="600 cfm"))
    t = r.systems[0].trail
    assert t.value("Ev") == pytest.approx(ev)
    assert cfm(t.value("Vot")) == pytest.approx(vou / ev, rel=REL)
    assert r.verdict == "pass"


def test_simplified_vav_minimum_condition(evaluate):
    # VAV zone minimum primary airflow ≥ 1.5·Voz under the simplified procedure (from memory):
    # zone 203 corridor Voz = 48 cfm needs Vpz ≥ 72 cfm; 60 cfm scheduled fails.
    zones = copy.deepcopy(MZ)
    zones[2]["primary_airflow"] = "60 cfm"
    r = evaluate(mz("simplified", outdoor_air="600 cfm", zones=zones))
    (f,) = [f for f in r.findings if f.rule == "simplified-vav-minimum"]
    assert f.subject == "M/203" and f.severity == "fail"
    assert cfm(f.required.value) == pytest.approx(72, rel=REL)


def test_si_schedule_with_si_pack(evaluate):
    # SI table: office Rp 2.5 L/s·person, Ra 0.3 L/s·m2 -> 2.5·10 + 0.3·100 = 55 L/s.
    r = evaluate(schedule([{"id": "S", "kind": "single-zone", "outdoor_air": "60 L/s", "zones": [
        zone("1", "office-space", "100 m2", occupants=10)]}], units="SI",
        rules="ashrae-62.1-2019-si"))
    assert r.systems[0].trail.value("Vot") == pytest.approx(55)
    assert not r.notes  # same unit system: nothing converted


def test_unit_systems_differ_is_said(evaluate):
    # Common practice: never silently mix an IP table with an SI schedule.
    r = evaluate(schedule([{"id": "S", "kind": "single-zone", "outdoor_air": "300 L/s", "zones": [
        zone("1", "conference-meeting", "185.8 m2", occupants=100)]}], units="SI"))
    assert r.notes and "converted exactly" in r.notes[0]
    assert r.systems[0].trail.value("Vot") == pytest.approx(620 * CFM, rel=REL)


# --- engine equals direct calls of the procedures, per method (style.md: dispatcher tests) ---

# The MZ zones by hand (ANSI/ASHRAE 62.1-2019 Section 6.2.2.1 Vbz = Rp·Pz + Ra·Az and Section
# 6.2.2.3 Voz = Vbz/Ez; Rp, Ra and default density from the pack's Table 6-1 rows, as asserted
# in the test above; Ez from Table 6-2): id → (Vbz, Ez, Voz, Vpz) [cfm].
MZ_BY_HAND = {"201": (5 * 15 + 0.06 * 3000, 1.0, 255.0, 1200.0),
              "202": (5 * 25 + 0.06 * 500, 0.8, 155 / 0.8, 400.0),
              "203": (0.06 * 800, 1.0, 48.0, 200.0)}
XS_BY_HAND = (0.75 * 200 + 258) / 1800  # Xs = Vou/Vps (Appendix A), Vou = D·ΣRp·Pz + ΣRa·Az


def test_multiple_zone_detailed_zone_by_zone(evaluate):
    # Each zone's Zpz = Voz/Vpz and Evz = 1 + Xs − Zpz (62.1-2019 Appendix A, single supply path);
    # Ev = the lowest Evz; Vot = Vou/Ev.
    r = evaluate(mz("detailed"))
    s = r.systems[0]
    evz = {}
    for z in s.zones:
        vbz, ez, voz, vpz = MZ_BY_HAND[z.id]
        t = z.trail
        assert cfm(t.value("Vbz")) == pytest.approx(vbz, rel=1e-9)
        assert t.value("Ez") == ez
        assert cfm(t.value("Voz")) == pytest.approx(voz, rel=1e-9)
        assert t.value("Zpz") == pytest.approx(voz / vpz, rel=1e-9)
        evz[z.id] = 1 + XS_BY_HAND - voz / vpz
        assert t.value("Evz") == pytest.approx(evz[z.id], rel=1e-9)
    assert s.trail.value("Ev") == pytest.approx(min(evz.values()), rel=1e-9)
    assert cfm(s.trail.value("Vot")) == pytest.approx(408 / min(evz.values()), rel=1e-9)


def test_engine_secondary_recirculation_by_hand(evaluate):
    # Zone 202 with Ep = 0.6 and Er = 0.5 (62.1-2019 Appendix A, secondary recirculation):
    # Fa = Ep + (1 − Ep)·Er = 0.8, Fb = Ep = 0.6, Fc = 1 − (1 − Ez)(1 − Er)(1 − Ep) = 0.96 with
    # Ez 0.8; Evz = (Fa + Xs·Fb − Zpz·Ep·Fc)/Fa with Zpz = 193.75/400.
    zones = copy.deepcopy(MZ)
    zones[1].update({"ep": 0.6, "er": 0.5})
    r = evaluate(mz("detailed", zones=zones))
    z = r.systems[0].zones[1].trail
    fa, fb, fc, zpz = 0.8, 0.6, 1 - 0.2 * 0.5 * 0.4, 193.75 / 400
    assert z.value("Fa") == pytest.approx(fa, rel=1e-12)
    assert z.value("Evz") == pytest.approx((fa + XS_BY_HAND * fb - zpz * 0.6 * fc) / fa, rel=1e-9)


def test_engine_simplified_by_hand(evaluate):
    # Ps = 20 of ΣPz = 40: D = 0.5; Vou = D·ΣRp·Pz + ΣRa·Az = 0.5·200 + 258 = 358 cfm;
    # Ev = 0.88·D + 0.22 = 0.66 for D < 0.60 (62.1-2019 Section 6.2.5, simplified procedure).
    r = evaluate(mz("simplified", population=20))
    t = r.systems[0].trail
    assert t.value("D") == pytest.approx(0.5, rel=1e-12)
    assert cfm(t.value("Vou")) == pytest.approx(358, rel=1e-9)
    assert t.value("Ev") == pytest.approx(0.66, rel=1e-12)
    assert cfm(t.value("Σ(Rp·Pz)")) == pytest.approx(200, rel=1e-9)
    assert cfm(t.value("Σ(Ra·Az)")) == pytest.approx(258, rel=1e-9)


@pytest.fixture
def table_pack(tmp_path):
    """The IP pack with the older editions' Ev table added (rows: ANSI/ASHRAE 62.1-2010 Table 6-3)."""
    data = yaml.safe_load((builtin_rules_dir() / "ashrae-62.1-2019.yaml").read_text("utf-8"))
    data["id"] = "test-ev-table"
    data["ventilation_efficiency"]["methods"]["table"] = {
        "source": {"table": "Ev against largest Zp (older editions), as quoted"},
        "provenance": "published", "interpolate": True, "above_last": "detailed",
        "rows": [{"max_zp": z, "ev": e} for z, e in
                 [(0.15, 1.0), (0.25, 0.9), (0.35, 0.8), (0.45, 0.7), (0.55, 0.6)]],
    }
    path = tmp_path / "test-ev-table.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False, allow_unicode=True), encoding="utf-8")
    return str(path)


def test_engine_table_by_hand(evaluate, table_pack):
    # Largest Zpz = 193.75/400 = 0.484375 (zone 202) -> linear interpolation between the rows
    # (0.45, 0.7) and (0.55, 0.6): Ev = 0.7 − (0.484375 − 0.45) = 0.665625.
    r = evaluate(mz("table"), rules=table_pack)
    assert r.systems[0].trail.value("Ev") == pytest.approx(0.665625, rel=1e-9)


def test_engine_table_above_last_row_uses_detailed(evaluate, table_pack):
    zones = copy.deepcopy(MZ)
    zones[1]["primary_airflow"] = "300 cfm"  # Zpz = 193.75/300 = 0.646 > 0.55
    r = evaluate(mz("table", zones=zones), rules=table_pack)
    t = r.systems[0].trail
    assert t.value("Ev") == pytest.approx(1 + t.value("Xs") - 193.75 / 300, rel=1e-9)


def test_zone_primary_airflow_below_voz_is_a_finding(evaluate):
    zones = copy.deepcopy(MZ)
    zones[1]["primary_airflow"] = "150 cfm"  # Voz 193.75 cfm > Vpz
    r = evaluate(mz("detailed", outdoor_air="2000 cfm", zones=zones))
    assert ("zone-primary-airflow", "M/202") in {(f.rule, f.subject) for f in r.findings}


def test_air_class_limits(evaluate):
    # Section 5.16.3 (from memory): class 3 air only back to its own space; class 2 to class 1
    # spaces of other uses needs a similar use — a warning to confirm.
    zones = [zone("1", "office-space", "1000 ft2", primary_airflow="800 cfm"),
             zone("2", "daycare-sickroom", "300 ft2", primary_airflow="400 cfm"),
             zone("3", "restaurant-dining-rooms", "500 ft2", primary_airflow="600 cfm")]
    r = evaluate(mz("detailed", outdoor_air="5000 cfm", population=None, zones=zones))
    got = {(f.rule, f.subject, f.severity) for f in r.findings}
    assert ("air-class-recirculation", "M/2", "fail") in got
    assert ("air-class-mixing", "M", "warning") in got


def test_no_rates_space_is_info(evaluate):
    r = evaluate(schedule([{"id": "S", "kind": "single-zone", "outdoor_air": 0, "zones": [
        zone("1", "telephone-closets", "50 ft2")]}]))
    assert [(f.rule, f.severity) for f in r.findings] == [("space-without-rates", "info")]
    assert r.verdict == "pass"


def test_assumed_air_distribution_is_a_warning(evaluate):
    z = zone("1", "office-space", "1000 ft2")
    del z["air_distribution"]
    r = evaluate(schedule([{"id": "S", "kind": "single-zone", "outdoor_air": 500, "zones": [z]}]))
    assert [(f.rule, f.severity) for f in r.findings] == [("air-distribution-assumed", "warning")]
    assert r.systems[0].zones[0].trail.value("Ez") == 1.0


def test_fields_a_system_kind_ignores_are_noted(evaluate):
    # Nothing the user wrote is dropped silently (common practice for review tools).
    z = zone("1", "office-space", "1000 ft2", primary_airflow="400 cfm")
    r = evaluate(schedule([{"id": "S", "kind": "single-zone", "outdoor_air": 500,
                            "population": 3, "zones": [z]}]))
    assert any("systems[0].population" in n and "ignored" in n for n in r.notes)
    assert any("systems[0].zones[0].primary_airflow" in n for n in r.notes)


def _bound(tmp_path, data):
    import airgate
    from airgate.evaluation import engine
    from airgate.evaluation.requirements import Run
    from airgate.readers import datatables

    path = tmp_path / "bound.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    loaded = airgate.load_schedule(path)
    pack = airgate.load_pack(loaded.model.rules)
    return loaded, pack, engine._bind_all(loaded, pack, datatables.BUILTIN, Run(pack, loaded))


def test_bound_zones_name_where_each_stated_field_is_written(tmp_path):
    # common practice (a finding names the line of the value it is about); the reference is
    # the rule as the binding wrote it before: a field stated per condition is located at that
    # condition's value, any other at the field, an exhaust's airflow and fixtures at theirs
    from airgate.evaluation import conditions
    from airgate.evaluation.findings import Location

    zones = [zone("1", "office-space", "1000 ft2", occupants={"cooling": 5, "heating": 9},
                  primary_airflow="500 cfm"),
             zone("2", "conference-meeting", "400 ft2", occupants=20, primary_airflow="600 cfm",
                  exhaust={"category": "toilets-public", "airflow": "200 cfm", "fixtures": 4}),
             zone("3", "office-space", "800 ft2", primary_airflow="300 cfm",
                  exhaust={"category": "kitchenettes", "airflow": "40 cfm"})]
    data = schedule([{"id": "AHU", "kind": "multiple-zone", "conditions": ["cooling", "heating"],
                      "outdoor_air": "400 cfm", "zones": zones}])
    loaded, pack, bound = _bound(tmp_path, data)
    at = lambda path: Location.deferred(loaded, path, loaded.file)  # noqa: E731
    assert list(bound[0]) == ["cooling", "heating"]
    seen = 0
    for cond, ctxs in bound[0].items():
        assert [c.path for c in ctxs] == [("systems", 0, "zones", j) for j in range(3)]
        for c, stated in zip(ctxs, zones):
            want = {name: at(conditions.keyed(c.path + (name,), cond))
                    for name in ("area", "occupants") if name in stated}
            want.update({f"exhaust.{name}": at(c.path + ("exhaust", name))
                         for name in ("airflow", "fixtures") if name in stated.get("exhaust", {})})
            assert c.fields == want
            assert c.location == at(c.path) and c.subject == f"AHU/{stated['id']}"
            assert (c.system_id, c.mechanical) == ("AHU", True)
            seen += len(want)
    assert seen == 2 * 8  # area 3, occupants 2, exhaust airflow 2 and fixtures 1, twice
    # the per-condition occupants are located at their own lines
    first = bound[0]
    assert first["cooling"][0].fields["occupants"] != first["heating"][0].fields["occupants"]


def test_an_unknown_space_is_an_error_at_its_zone_among_others(tmp_path):
    # common practice: every input error of a run reported at once, each located
    import airgate
    from airgate.errors import AirgateError

    zones = [zone("1", "office-space", "1000 ft2"), zone("2", "ofice-space", "100 ft2"),
             zone("3", "office-space", "500 ft2", air_distribution="no-such-row")]
    data = schedule([{"id": "S", "kind": "multiple-zone", "outdoor_air": "400 cfm",
                      "ventilation_efficiency": "simplified", "zones": zones}])
    with pytest.raises(AirgateError) as err:
        _bound(tmp_path, data)
    text = str(err.value)
    assert "ofice-space" in text and "no-such-row" in text


def test_zone_steps_as_the_population_and_ez_rules_record_them(tmp_path):
    # the reference is the code as it was before: a stated Pz is the step _population records
    # (Trail.add); zones stating the same explicit Ez share one step with its value and basis
    from airgate.evaluation import zones as zones_mod
    from airgate.evaluation.checks import Emitter
    from airgate.evaluation.trail import Trail

    z = [{"id": str(k), "space": "office-space", "area": "500 ft2", "occupants": k,
          "ez": 0.9, "ez_basis": "invented test basis"} for k in (3, 4)]
    data = schedule([{"id": "S", "kind": "multiple-zone", "outdoor_air": "400 cfm",
                      "ventilation_efficiency": "simplified", "zones": z}])
    loaded, pack, bound = _bound(tmp_path, data)
    ctxs = bound[0][None]
    emitter = Emitter(pack, "IP", None)
    got = zones_mod.evaluate_zones(ctxs, pack, emitter)
    for ctx, result in zip(ctxs, got):
        ref = Trail()
        ref.add("Az", float(ctx.zone.area), "area", source=ctx.where("area"), origin="schedule")
        zones_mod._population(ref, ctx, pack, emitter)
        assert result.trail.steps["Pz"] == ref.steps["Pz"]
        assert type(result.trail.steps["Pz"]) is type(ref.steps["Pz"])
        assert result.trail.steps["Az"] == ref.steps["Az"]
    ez = [r.trail.steps["Ez"] for r in got]
    assert ez[0] is ez[1] and ez[0].value == 0.9 and "invented test basis" in ez[0].note
    assert ctxs[0].ez is not ctxs[1].ez  # two explicit statements, one step


def test_steps_made_from_their_fields_follow_the_named_tuple():
    # the zone, multiple-zone and delivered steps are made with tuple.__new__ from their fields
    # in order (evaluation/zones.py): they must be the named tuple's fields, in its order, and
    # equal to the step its constructor makes (the reference: Step itself)
    from airgate.evaluation import delivered, zones as zones_mod
    from airgate.evaluation.system_kinds import multiple_zone
    from airgate.evaluation.trail import Step

    assert Step._fields == ("symbol", "value", "kind", "formula", "source", "note", "origin")
    for make in (zones_mod._step, multiple_zone._step, delivered._step):
        made = make(Step, ("Vbz", 1.5, "airflow", "{Rp}·{Pz}", "cite", "", "computed"))
        assert type(made) is Step
        assert made == Step("Vbz", 1.5, "airflow", "{Rp}·{Pz}", "cite", "", "computed")
        assert made.origin == "computed" and made.symbolic() == "Rp·Pz"


def test_detailed_ev_names_each_zone_and_condition_without_primary_airflow(tmp_path):
    # ANSI/ASHRAE 62.1-2019 Normative Appendix A: the detailed method needs every zone's Vpz;
    # the reference is the rule as the check wrote it before: one located error per zone and
    # condition where none is given, in zone order, none for a plain or per-condition value
    import airgate
    from airgate.errors import AirgateError

    zones = [zone("1", "office-space", "1000 ft2"),  # none at all: both conditions
             zone("2", "office-space", "1000 ft2", primary_airflow="600 cfm"),
             zone("3", "office-space", "1000 ft2",
                  primary_airflow={"cooling": "700 cfm", "heating": "500 cfm"}),
             zone("4", "office-space", "1000 ft2",
                  primary_airflow={"cooling": "700 cfm", "heating": None})]
    data = schedule([{"id": "AHU", "kind": "multiple-zone", "conditions": ["cooling", "heating"],
                      "ventilation_efficiency": "detailed", "outdoor_air": "900 cfm",
                      "zones": zones}])
    path = tmp_path / "vpz.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    with pytest.raises(AirgateError) as err:
        airgate.check(path)
    found = err.value.errors if hasattr(err.value, "errors") else [err.value]
    assert [e.field for e in found] == [
        ("systems", 0, "zones", 0, "primary_airflow", "cooling"),
        ("systems", 0, "zones", 0, "primary_airflow", "heating"),
        ("systems", 0, "zones", 3, "primary_airflow", "heating")]
    assert all("needs primary_airflow (Vpz) for every zone" in e.message for e in found)
