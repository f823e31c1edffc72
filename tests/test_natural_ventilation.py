"""The Natural Ventilation Procedure of ANSI/ASHRAE 62.1-2019 (Section 6.4).

Limits written out in each test from memory (`from memory`): the openable area at least 4 % of
the net occupiable floor area (Section 6.4.2; the International Mechanical Code's Section 402.2
also asks for 4 % of the floor area being ventilated); the naturally ventilated floor within 2H of
single-sided openings and within 5H of double-sided or corner openings, H the ceiling height
(Section 6.4.1); a mechanical system also unless the openings are permanently open or the zone has
no heating or cooling (Section 6.4, exceptions). Expected values are these limits times the inputs,
computed here by hand; 1 ft = 0.3048 m exactly (NIST SP 811, Appendix B).
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from airgate.errors import AirgateError

from conftest import FT2, check_every_format, schedule, subprocess_env

REL = 1e-9
FT = 0.3048


def _zone(zid, area, height, nv, **kw):
    return {"id": zid, "space": "office-space", "area": area, "height": height,
            "natural_ventilation": nv, **kw}


def _natural(zones, units="IP"):
    rules = "ashrae-62.1-2019" if units == "IP" else "ashrae-62.1-2019-si"
    return schedule([{"id": "NV-1", "kind": "natural", "zones": zones}], units=units,
                    rules=rules)


def _findings(report, rule):
    return {f.zone: f for f in report.findings if f.rule == rule}


def test_opening_area_ip_hand_computed(evaluate):
    # 4 % × 1250 ft² = 50 ft² (62.1-2019 Section 6.4.2, from memory)
    r = evaluate(_natural([
        _zone("ok", "1250 ft2", "9 ft", {"openable_area": "50 ft2", "arrangement": "single-sided",
                                        "depth": "18 ft", "permanently_open": True}),
        _zone("short", "1250 ft2", "9 ft", {"openable_area": "49 ft2",
                                           "arrangement": "single-sided", "depth": "18 ft",
                                           "permanently_open": True}),
    ]))
    ok, short = r.systems[0].zones
    assert ok.trail.value("A_open_min") / FT2 == pytest.approx(50, rel=REL)
    assert ok.trail.value("f_open") == pytest.approx(0.04, rel=REL)
    assert ok.verdict == "pass" and short.verdict == "fail"
    f = _findings(r, "natural-opening-area")
    assert set(f) == {"short"}
    assert f["short"].severity == "fail"
    assert f["short"].required.value / FT2 == pytest.approx(50, rel=REL)
    assert f["short"].provided.value / FT2 == pytest.approx(49, rel=REL)
    assert "Section 6.4.2" in f["short"].source


def test_depth_ip_by_arrangement(evaluate):
    # H = 9 ft: single-sided 2H = 18 ft; double-sided and corner 5H = 45 ft (Section 6.4.1)
    big = "100 ft2"
    r = evaluate(_natural([
        _zone("s-ok", "900 ft2", "9 ft", {"openable_area": big, "arrangement": "single-sided",
                                         "depth": "18 ft", "conditioned": False}),
        _zone("s-deep", "900 ft2", "9 ft", {"openable_area": big, "arrangement": "single-sided",
                                           "depth": "18.5 ft", "conditioned": False}),
        _zone("d-ok", "900 ft2", "9 ft", {"openable_area": big, "arrangement": "double-sided",
                                         "depth": "45 ft", "conditioned": False}),
        _zone("c-deep", "900 ft2", "9 ft", {"openable_area": big, "arrangement": "corner",
                                           "depth": "46 ft", "conditioned": False}),
    ]))
    zones = {z.id: z for z in r.systems[0].zones}
    assert zones["s-ok"].trail.value("depth_max") / FT == pytest.approx(18, rel=REL)
    assert zones["d-ok"].trail.value("depth_max") / FT == pytest.approx(45, rel=REL)
    assert zones["c-deep"].trail.value("depth_max") / FT == pytest.approx(45, rel=REL)
    f = _findings(r, "natural-depth")
    assert set(f) == {"s-deep", "c-deep"}
    assert f["c-deep"].required.value / FT == pytest.approx(45, rel=REL)
    assert f["c-deep"].provided.value / FT == pytest.approx(46, rel=REL)
    # the depth is an upper limit: 1 ft too deep is a margin of -1 ft (-1/45), a shortfall
    from airgate.evaluation.findings import margin

    m = margin(f["c-deep"].required, f["c-deep"].provided)
    assert m.difference / FT == pytest.approx(-1, rel=1e-9)
    assert m.relative == pytest.approx(-1 / 45, rel=1e-9)
    assert {z.id: z.verdict for z in zones.values()} == {
        "s-ok": "pass", "s-deep": "fail", "d-ok": "pass", "c-deep": "fail"}


def test_opening_area_and_depth_si(evaluate):
    # 4 % × 60 m² = 2.4 m²; H = 2.7 m: 2H = 5.4 m, 5H = 13.5 m (Section 6.4, from memory)
    r = evaluate(_natural([
        _zone("a", "60 m2", "2.7 m", {"openable_area": "2.4 m2", "arrangement": "single-sided",
                                      "depth": "5.4 m", "permanently_open": True}),
        _zone("b", "60 m2", "2.7 m", {"openable_area": "2.3 m2", "arrangement": "double-sided",
                                      "depth": "13.6 m", "permanently_open": True}),
    ], units="SI"))
    a, b = r.systems[0].zones
    assert a.trail.value("A_open_min") == pytest.approx(2.4, rel=REL)
    assert a.trail.value("depth_max") == pytest.approx(5.4, rel=REL)
    assert b.trail.value("depth_max") == pytest.approx(13.5, rel=REL)
    assert a.verdict == "pass" and b.verdict == "fail"
    assert set(_findings(r, "natural-opening-area")) == {"b"}
    assert set(_findings(r, "natural-depth")) == {"b"}


def test_mechanical_system_warning_unless_an_exception_is_declared(evaluate):
    # Section 6.4 exceptions: permanently open openings, or no heating or cooling (from memory)
    nv = {"openable_area": "60 ft2", "arrangement": "single-sided", "depth": "10 ft"}
    r = evaluate(_natural([
        _zone("open", "900 ft2", "10 ft", {**nv, "permanently_open": True}),
        _zone("unconditioned", "900 ft2", "10 ft", {**nv, "conditioned": False}),
        _zone("neither", "900 ft2", "10 ft", nv),
    ]))
    f = _findings(r, "natural-mechanical-system")
    assert set(f) == {"neither"}
    assert f["neither"].severity == "warning"
    assert r.systems[0].verdict == "pass"  # a warning changes no verdict


def test_no_intake_no_balance_no_assumed_distribution(evaluate):
    r = evaluate(_natural([_zone("z", "900 ft2", "10 ft", {
        "openable_area": "60 ft2", "arrangement": "single-sided", "depth": "10 ft",
        "permanently_open": True})]))
    s = r.systems[0]
    assert "Vot" not in s.trail
    assert s.zones[0].dilution is None
    assert not [f for f in r.findings if f.rule == "air-distribution-assumed"]
    assert any("depends on weather" in n for n in r.notes)


@pytest.mark.parametrize("zone, system, text", [
    (_zone("z", "900 ft2", None, {"openable_area": "60 ft2", "arrangement": "corner",
                                   "depth": "10 ft"}), {}, "states no height"),
    ({"id": "z", "space": "office-space", "area": "900 ft2", "height": "10 ft"}, {},
     "states no natural_ventilation"),
    (_zone("z", "900 ft2", "10 ft", {"openable_area": "60 ft2", "arrangement": "corner",
                                      "depth": "10 ft"}), {"outdoor_air": "100 cfm"},
     "no mechanical intake"),
])
def test_bad_natural_inputs_are_located_errors(evaluate, zone, system, text):
    if zone.get("height") is None:
        zone.pop("height", None)
    data = schedule([{"id": "NV-1", "kind": "natural", "zones": [zone], **system}])
    with pytest.raises(AirgateError) as err:
        evaluate(data)
    assert text in str(err.value)


def test_a_mechanical_system_still_needs_its_intake(evaluate):
    data = schedule([{"id": "RTU-1", "kind": "single-zone", "zones": [
        {"id": "z", "space": "office-space", "area": "900 ft2"}]}])
    with pytest.raises(AirgateError) as err:
        evaluate(data)
    assert "needs outdoor_air" in str(err.value)


def test_every_format_and_explain_show_the_natural_figures(tmp_path):
    import yaml
    path = tmp_path / "nv.yaml"
    path.write_text(yaml.safe_dump(_natural([_zone("z", "900 ft2", "10 ft", {
        "openable_area": "30 ft2", "arrangement": "single-sided", "depth": "25 ft"})])))
    env = subprocess_env()
    for fmt, stdout in check_every_format(path, tmp_path):
        assert "natural-opening-area" in stdout and "natural-depth" in stdout, fmt
        if fmt == "json":
            zone = json.loads(stdout)["systems"][0]["zones"][0]
            # 4 % × 900 ft² = 36 ft²; 2 × 10 ft = 20 ft (Section 6.4, from memory)
            assert zone["values"]["A_open_min"]["value"] == pytest.approx(36, rel=1e-6)
            assert zone["values"]["depth_max"]["value"] == pytest.approx(20, rel=1e-6)
            assert zone["verdict"] == "fail"
    out = subprocess.run([sys.executable, "-m", "airgate", "explain", str(path), "--zone", "z"],
                         capture_output=True, text=True, env=env, cwd=tmp_path)
    assert out.returncode in (0, 1), out.stderr
    for symbol in ("A_open_min", "depth_max", "natural-opening-area"):
        assert symbol in out.stdout


def test_a_pack_giving_an_arrangement_two_depth_limits_is_refused(tmp_path):
    import yaml

    from airgate.readers.rulepack import builtin_rules_dir, load_pack

    data = yaml.safe_load((builtin_rules_dir() / "ashrae-62.1-2019.yaml").read_text("utf-8"))
    data["id"] = "twice"
    data["natural_ventilation"]["depth"].append(dict(data["natural_ventilation"]["depth"][0]))
    path = tmp_path / "twice.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    with pytest.raises(AirgateError) as err:
        load_pack(str(path))
    assert "single-sided openings are given a depth limit twice" in str(err.value)
    assert err.value.field == ("natural_ventilation", "depth", 3, "arrangement")


def test_a_depth_within_its_limit_has_a_positive_margin(evaluate):
    # 2H = 18 ft of single-sided reach (Section 6.4.1, from memory); 12 ft deep leaves 6 ft, a
    # third of the limit: a passing upper limit reads as headroom, never as "short"
    from airgate.evaluation.findings import margin

    r = evaluate(_natural([
        _zone("ok", "900 ft2", "9 ft", {"openable_area": "60 ft2", "arrangement": "single-sided",
                                        "depth": "12 ft", "permanently_open": True}),
    ]))
    case = next(c for c in r.cases if c.rule == "natural-depth")
    assert case.status == "pass"
    m = margin(case.required, case.provided)
    assert m.difference / FT == pytest.approx(6, rel=1e-9)
    assert m.relative == pytest.approx(1 / 3, rel=1e-9)
