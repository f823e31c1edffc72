"""Invariants over generated schedules (hypothesis); common practice for a compliance engine.

- Voz ≥ Vbz whenever Ez ≤ 1 (Voz = Vbz/Ez, ANSI/ASHRAE 62.1-2019 Section 6.2.2.3);
- Vot ≥ Vou for multiple-zone systems whose zones claim no Ez above 1 (Appendix A, derived);
- more outdoor air never turns a pass into a fail;
- the same building written in IP and in SI gets the same verdicts and values;
- reordering zones or systems changes no result;
- no generated schedule crashes the engine or a writer.
"""

from __future__ import annotations

import copy
import random

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from airgate import evaluate
from airgate.readers.rulepack import load_pack
from airgate.readers.schedule import read_schedule
from airgate.writers import explain, json_report, text

from conftest import examples, schedule

PACK = load_pack("ashrae-62.1-2019")
SPACES = sorted(PACK.categories)
ROWS = sorted(PACK.configurations)
FT = 0.3048
CFM = 0.3048**3 * 1000 / 60



def from_zero(top: float) -> st.SearchStrategy[float]:
    """0, or a value from 1e-9 to ``top``: a schedule's own numbers lie in the range airgate
    reads (docs/limits.md: magnitudes from 1e-15 to 1e15, or 0)."""
    return st.one_of(st.just(0.0), st.floats(1e-9, top))


zone_st = st.fixed_dictionaries({
    "space": st.sampled_from(SPACES),
    "area": st.floats(50, 20000),
    "occupants": st.one_of(st.none(), from_zero(400)),
    "row": st.sampled_from(ROWS),
    "vpz": st.floats(50, 20000),
    "oa": from_zero(5000),
    "height": st.one_of(st.none(), st.floats(7, 30)),
})
system_st = st.fixed_dictionaries({
    "kind": st.sampled_from(["single-zone", "outdoor-air", "multiple-zone"]),
    "intake": from_zero(30000),
    "method": st.sampled_from(["simplified", "detailed"]),
    "zones": st.lists(zone_st, min_size=1, max_size=6),
})
#: CI generates thousands of schedules over the four invariant tests; locally a quicker sample.
SETTINGS = settings(max_examples=examples(3),
                    suppress_health_check=[HealthCheck.function_scoped_fixture,
                                           HealthCheck.too_slow])


def build(systems, units="IP"):
    out, n = [], 0
    for i, s in enumerate(systems):
        zones = s["zones"][:1] if s["kind"] == "single-zone" else s["zones"]
        spec = {"id": f"S{i}", "kind": s["kind"], "outdoor_air": f"{s['intake']!r} cfm",
                "zones": []}
        if s["kind"] == "multiple-zone":
            spec["ventilation_efficiency"] = s["method"]
        for z in zones:
            n += 1
            zs = {"id": f"Z{n}", "space": z["space"], "area": f"{z['area']!r} ft2",
                  "air_distribution": z["row"]}
            if z["occupants"] is not None:
                zs["occupants"] = z["occupants"]
            if z["height"] is not None:
                zs["height"] = f"{z['height']!r} ft"
            if s["kind"] == "multiple-zone":
                zs["primary_airflow"] = f"{z['vpz']!r} cfm"
            if s["kind"] == "outdoor-air":
                zs["outdoor_air"] = f"{z['oa']!r} cfm"
            spec["zones"].append(zs)
        out.append(spec)
    return schedule(out, units=units)


def to_si(data):
    """The same building in SI units (exact conversions of every quantity)."""
    data = copy.deepcopy(data)
    data["project"]["units"] = "SI"
    factors = {"cfm": ("L/s", CFM), "ft2": ("m2", FT**2), "ft": ("m", FT)}
    for s in data["systems"]:
        for obj in [s, *s["zones"]]:
            for key, value in list(obj.items()):
                if isinstance(value, str) and " " in value and key not in ("id", "space",
                                                                           "air_distribution"):
                    number, unit = value.split()
                    new_unit, f = factors[unit]
                    obj[key] = f"{float(number) * f!r} {new_unit}"
    return data


def run(tmp_path, data, name="s.yaml"):
    path = tmp_path / name
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    return evaluate(read_schedule(path), PACK)


def signature(report):
    return [(s.id, s.verdict, round(s.trail.value("Vot"), 6) if s.trail.value("Vot") < 1e300
             else "inf", [(z.id, z.verdict, round(z.trail.value("Voz"), 6)) for z in s.zones])
            for s in report.systems]


@SETTINGS
@given(systems=st.lists(system_st, min_size=1, max_size=3))
def test_invariants_hold_and_writers_never_crash(tmp_path_factory, systems):
    tmp = tmp_path_factory.mktemp("inv")
    report = run(tmp, build(systems))
    for s in report.systems:
        for z in s.zones:
            t = z.trail
            if t.value("Ez") <= 1:
                assert t.value("Voz") >= t.value("Vbz") * (1 - 1e-12)
        # Vot ≥ Vou when no zone claims Ez > 1: then ΣVoz ≥ Vou, so the largest Zpz ≥ Xs and
        # Ev = min(1 + Xs − Zpz) ≤ 1 (derived from Appendix A). An Ez > 1 credit (displacement)
        # legitimately lowers Vot below Vou.
        if s.kind == "multiple-zone" and "Vou" in s.trail and s.method == "detailed" and all(
                z.trail.value("Ez") <= 1 for z in s.zones):
            assert s.trail.value("Vot") >= s.trail.value("Vou") * (1 - 1e-12)
    assert text.render(report) and json_report.render(report, 60)
    for s in report.systems:
        assert explain.system_(report, s)


@SETTINGS
@given(systems=st.lists(system_st, min_size=1, max_size=3), extra=st.floats(1, 5000))
def test_more_outdoor_air_never_turns_pass_into_fail(tmp_path_factory, systems, extra):
    tmp = tmp_path_factory.mktemp("more")
    before = run(tmp, build(systems))
    more = copy.deepcopy(systems)
    for s in more:
        s["intake"] += extra
        for z in s["zones"]:
            z["oa"] += extra
    after = run(tmp, build(more), "more.yaml")
    for a, b in zip(before.systems, after.systems):
        if a.verdict == "pass":
            assert b.verdict == "pass"


@SETTINGS
@given(systems=st.lists(system_st, min_size=1, max_size=3))
def test_ip_and_si_give_the_same_results(tmp_path_factory, systems):
    tmp = tmp_path_factory.mktemp("units")
    data = build(systems)
    ip = run(tmp, data)
    si = run(tmp, to_si(data), "si.yaml")
    assert [s.verdict for s in ip.systems] == [s.verdict for s in si.systems]
    assert [f.rule for f in ip.findings] == [f.rule for f in si.findings]
    for a, b in zip(ip.systems, si.systems):
        if a.trail.value("Vot") < 1e300:
            assert b.trail.value("Vot") == pytest.approx(a.trail.value("Vot"), rel=1e-9)


@SETTINGS
@given(systems=st.lists(system_st, min_size=1, max_size=3), seed=st.integers(0, 2**32 - 1))
def test_reordering_changes_no_result(tmp_path_factory, systems, seed):
    tmp = tmp_path_factory.mktemp("order")
    data = build(systems)
    shuffled = copy.deepcopy(data)
    rng = random.Random(seed)
    rng.shuffle(shuffled["systems"])
    for s in shuffled["systems"]:
        if s["kind"] != "single-zone":
            rng.shuffle(s["zones"])
    a = {x[0]: (x[1], x[2], sorted(x[3])) for x in signature(run(tmp, data))}
    b = {x[0]: (x[1], x[2], sorted(x[3])) for x in signature(run(tmp, shuffled, "b.yaml"))}
    for key in a:
        assert a[key][0] == b[key][0] and a[key][2] == b[key][2]
        if a[key][1] != "inf":
            assert b[key][1] == pytest.approx(a[key][1], rel=1e-9)
