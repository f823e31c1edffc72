"""The outdoor air each zone receives (trail step ``Voz_delivered``), the same in every format,
and trail arithmetic that checks by hand in both unit systems.

Hand computations use ANSI/ASHRAE 62.1-2019: Vbz = Rp·Pz + Ra·Az (Section 6.2.2.1), Voz = Vbz/Ez
(Section 6.2.2.3), the single-zone and 100 % outdoor-air intakes (Sections 6.2.3, 6.2.4),
Vou = D·Σ(Rp·Pz) + Σ(Ra·Az) and Vot = Vou/Ev (Section 6.2.5), and the multiple-zone equations of
Normative Appendix A, Xs = Vou/Vps, Zpz = Voz/Vpz, Evz = 1 + Xs − Zpz (from memory). Rates are
Table 6.2.2.1's office and conference rows (5 cfm/person, 0.06 cfm/ft²). The zone outdoor airflow
a multiple-zone intake satisfies is derived here from Appendix A: a zone is ventilated enough when
Evz ≥ Vou/Vot, i.e. Voz ≤ Vpz·(1 + Xs − Vou/Vot).
"""

from __future__ import annotations

import copy
import json
import re

import pytest
import yaml

from airgate.cli import main

from conftest import CFM, DEMO, ROOT, schedule

REL = 1e-3


def zone(id, space, area, **kw):
    return {"id": id, "space": space, "area": area, "air_distribution": "ceiling-supply-cool",
            **kw}


def cfm(x):
    return x / CFM


def delivered(z):
    return cfm(z.trail.value("Voz_delivered"))


def _mz(intake: str, method: str = "detailed"):
    # A: office 1000 ft², 10 people: Vbz = 5·10 + 0.06·1000 = 110 cfm; Vpz 1000 cfm.
    # B: conference 500 ft², 25 people: Vbz = 5·25 + 0.06·500 = 155 cfm; Vpz 300 cfm.
    return schedule([{"id": "M", "kind": "multiple-zone", "outdoor_air": intake,
                      "ventilation_efficiency": method, "zones": [
                          zone("A", "office-space", "1000 ft2", occupants=10,
                               primary_airflow="1000 cfm"),
                          zone("B", "conference-meeting", "500 ft2", occupants=25,
                               primary_airflow="300 cfm")]}])


def test_multiple_zone_detailed_appendix_a(evaluate):
    # D = 1 (Ps = ΣPz), Vou = 110 + 155 = 265 cfm, Vps = 1300 cfm, Xs = 265/1300.
    # At 350 cfm: Vou/Vot = 265/350, each zone gets Vpz·(1 + Xs − 265/350) (derived, App. A).
    r = evaluate(_mz("350 cfm"))
    a, b = r.systems[0].zones
    factor = 1 + 265 / 1300 - 265 / 350
    assert delivered(a) == pytest.approx(1000 * factor, rel=REL)  # 446.7 cfm
    assert delivered(b) == pytest.approx(300 * factor, rel=REL)  # 134.0 cfm < Voz 155
    assert delivered(b) < cfm(b.trail.value("Voz"))
    # the zone that gets less than its Voz is exactly the zone the check fails
    assert {f.subject for f in r.findings if f.rule == "zone-limits-ev"} == {"M/B"}
    assert b.trail["Voz_delivered"].formula == "{Vpz}·(1 + {Xs} − {Vou} / {Vot_design})"


def test_multiple_zone_intake_that_passes_gives_every_zone_its_voz(evaluate):
    # Ev = min(1 + Xs − 110/1000, 1 + Xs − 155/300) = 0.6872; Vot = 265/0.6872 = 385.6 cfm.
    # At exactly that intake the critical zone B gets its Voz and no more.
    vot = 265 / (1 + 265 / 1300 - 155 / 300)
    r = evaluate(_mz(f"{vot + 1e-4:.4f} cfm"))
    a, b = r.systems[0].zones
    assert r.verdict == "pass"
    assert delivered(b) == pytest.approx(155, rel=REL)
    assert delivered(a) > 110


def test_multiple_zone_simplified_scales_voz_by_the_intake(evaluate):
    # Simplified procedure (Section 6.2.5): D = 1 ≥ 0.60 → Ev = 0.75; Vot = 265/0.75 = 353.3 cfm.
    # Ev is one figure for the system: each zone gets Voz·Vot_design/Vot.
    r = evaluate(_mz("300 cfm", method="simplified"))
    a, b = r.systems[0].zones
    assert delivered(a) == pytest.approx(110 * 300 / (265 / 0.75), rel=REL)
    assert delivered(b) == pytest.approx(155 * 300 / (265 / 0.75), rel=REL)


def test_single_zone_and_outdoor_air_systems(evaluate):
    # Single-zone (Section 6.2.3): the zone gets the whole intake. 100 % outdoor air (6.2.4):
    # the air scheduled to the zone, else the intake shared by Voz (110 : 155 of 530 cfm).
    r = evaluate(schedule([
        {"id": "S", "kind": "single-zone", "outdoor_air": "700 cfm",
         "zones": [zone("1", "conference-meeting", "2000 ft2", occupants=100)]},
        {"id": "D", "kind": "outdoor-air", "outdoor_air": "530 cfm", "zones": [
            zone("A", "office-space", "1000 ft2", occupants=10),
            zone("B", "conference-meeting", "500 ft2", occupants=25)]},
        {"id": "E", "kind": "outdoor-air", "outdoor_air": "530 cfm", "zones": [
            zone("A2", "office-space", "1000 ft2", occupants=10, outdoor_air="100 cfm")]}]))
    s, d, e = r.systems
    assert delivered(s.zones[0]) == pytest.approx(700, rel=REL)
    assert delivered(d.zones[0]) == pytest.approx(530 * 110 / 265, rel=REL)
    assert delivered(d.zones[1]) == pytest.approx(530 * 155 / 265, rel=REL)
    assert delivered(e.zones[0]) == pytest.approx(100, rel=REL)


def _run(capsys, monkeypatch, *args):
    monkeypatch.chdir(ROOT)
    main(list(args))
    return capsys.readouterr().out


def test_demo_zone_figure_is_the_same_in_every_format(capsys, monkeypatch):
    # Consistency, not a published value: text, JSON, explain and HTML show one figure.
    demo = str(DEMO.relative_to(ROOT))
    data = json.loads(_run(capsys, monkeypatch, "check", demo, "--format", "json"))
    system = next(s for s in data["systems"] if s["id"] == "AHU-3")
    z201 = next(z for z in system["zones"] if z["id"] == "201")
    value = z201["values"]["Voz_delivered"]["value"]
    assert z201["values"]["Voz_delivered"]["unit"] == "ft**3/min"
    shown = f"{value:,.0f} cfm"
    text = _run(capsys, monkeypatch, "check", demo)
    row = next(line for line in text.splitlines() if line.strip().startswith("201 "))
    assert f" {value:,.0f} " in row
    html = _run(capsys, monkeypatch, "check", demo, "--format", "html")
    needed = f'{z201["values"]["Voz"]["value"]:,.0f} cfm'  # 446 cfm: 357 / Ez 0.8 in heating
    assert needed == "446 cfm"
    assert f"Open office north: {shown} of {needed}" in html
    explain = _run(capsys, monkeypatch, "explain", demo, "--zone", "201")
    assert f"= {shown}" in explain


def test_p_max_is_not_shown_as_zero_for_a_short_system(capsys, monkeypatch):
    demo = str(DEMO.relative_to(ROOT))
    data = json.loads(_run(capsys, monkeypatch, "check", demo, "--format", "json"))
    ahu = next(s for s in data["systems"] if s["id"] == "AHU-3")
    with_p_max = {z["id"] for z in ahu["zones"] if "P_max" in (z.get("dilution") or {})
                  .get("values", {})}
    assert with_p_max == {"203"}  # the critical zone: emptying it would restore the intake
    assert any("P_max" in n and "201" in n for n in data["notes"])


# --- trail arithmetic: the substituted line reproduces the result --------------------------

_NUMBER = re.compile(r"^-?[0-9][0-9,]*(?:\.[0-9]+)?")


def _value(text: str) -> float:
    return float(_NUMBER.match(text.strip()).group(0).replace(",", ""))


def _check_arithmetic(explain: str) -> int:
    """Every ``= substituted`` line evaluates to the ``= result`` below it (display rounding).

    Common practice: a hand calculation's substituted arithmetic must reproduce its result.
    """
    lines = explain.splitlines()
    checked = 0
    for i in range(len(lines) - 1):
        a, b = lines[i].strip(), lines[i + 1].strip()
        if not (a.startswith("= ") and b.startswith("= ")) or " × " not in a + " " and \
                "/" not in a and "+" not in a and "−" not in a:
            continue
        expr = (a[2:].replace("×", "*").replace("−", "-").replace("10⁶", "1e6")
                .replace(",", ""))
        if not re.fullmatch(r"[0-9.e+\-*/() ]+", expr):
            continue
        got = eval(expr, {"__builtins__": {}})  # noqa: S307 - digits and operators only
        want = _value(b[2:])
        assert got == pytest.approx(want, rel=0.03, abs=0.006), (a, b)
        checked += 1
    return checked


@pytest.mark.parametrize("units, pack", [("IP", "ashrae-62.1-2019"),
                                         ("SI", "ashrae-62.1-2019-si")])
def test_trail_arithmetic_checks_in_both_unit_systems(capsys, monkeypatch, tmp_path, units,
                                                      pack):
    data = yaml.safe_load(DEMO.read_text("utf-8"))
    data = copy.deepcopy(data)
    data["project"]["units"], data["rules"] = units, pack
    path = tmp_path / "demo.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), "utf-8")
    checked = 0
    for system in ("RTU-1", "DOAS-1", "AHU-3"):
        out = _run(capsys, monkeypatch, "explain", str(path), "--system", system)
        checked += _check_arithmetic(out)
    for z in ("101", "110", "113", "201", "203", "207"):  # with their CO2 trails
        out = _run(capsys, monkeypatch, "explain", str(path), "--zone", z)
        checked += _check_arithmetic(out)
    assert checked > 100
    # the default population shows its per-1000 ft² (per-100 m²) factor
    out = _run(capsys, monkeypatch, "explain", str(path), "--zone", "201")
    assert ("density·Az / 1000" if units == "IP" else "density·Az / 100") in out


def test_margin_is_worked_out_in_the_evaluation():
    # Common practice: margin = provided − required, and that over the requirement.
    from airgate.evaluation.findings import Amount, margin

    m = margin(Amount(2244.0, "airflow"), Amount(1900.0, "airflow"))
    assert m.difference == pytest.approx(-344.0) and m.relative == pytest.approx(-344 / 2244)
    assert margin(Amount(0.0, "airflow"), Amount(5.0, "airflow")).relative is None
    assert margin(Amount(float("inf"), "airflow"), Amount(5.0, "airflow")) is None
    assert margin(None, Amount(5.0, "airflow")) is None
