"""Declared contaminants through the engine: every removal mechanism (well-mixed balance,
Nazaroff & Alvarez-Cohen 2001; equivalent clean airflow, ASHRAE 241-2023; docs/references.md)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from conftest import CFM, schedule

FT = 0.3048


def room(**extra):
    return {"id": "1", "space": "classrooms-age-9-plus", "area": "900 ft2", "occupants": 30,
            "height": "9 ft", "air_distribution": "ceiling-supply-cool", **extra}


def aerosol(**kw):
    base = {"id": "aerosol", "unit": "quanta", "per_person": 10.0, "deposition": 0.3,
            "half_life": 1.1}
    return {**base, **kw}


def run(evaluate, system_extra=None, zone_extra=None, contaminant=None):
    data = schedule([{"id": "S", "kind": "single-zone", "outdoor_air": "450 cfm",
                      "supply_airflow": "1800 cfm", **(system_extra or {}),
                      "zones": [room(**(zone_extra or {}))]}])
    data["contaminants"] = [contaminant or aerosol()]
    return evaluate(data)


def test_equivalent_clean_airflows_add(evaluate):
    # ASHRAE 241-2023 (equivalent clean airflow, from memory): equivalent air
    # changes add across outdoor air, filtration (airflow × efficiency) and air cleaners; with
    # clean outdoor air C_ss = E / (sum of the equivalent clean airflows) (Nazaroff & Alvarez-Cohen 2001, CMFR steady state).
    r = run(evaluate, {"filter": {"merv": 13}}, {"air_cleaners": [{"cadr": "300 cfm"}]})
    t = r.systems[0].zones[0].contaminants["aerosol"]
    volume = 900 * 9 * FT**3
    k = 0.3 + math.log(2) / 1.1
    q_oa, q_rec, cadr = 450 * CFM, (1800 - 450) * CFM, 300 * CFM
    eta = 0.85  # MERV 13, E2 (1-3 µm): ANSI/ASHRAE 52.2-2017 Table 12-1 (as quoted on secondary pages)
    expected = {"Qc_oa": q_oa, "Qc_filter": eta * q_rec, "Qc_cleaner": cadr,
                "Qc_dep": 0.3 * volume / 3.6, "Qc_inact": math.log(2) / 1.1 * volume / 3.6}
    for symbol, value in expected.items():
        assert t.value(symbol) == pytest.approx(value, rel=1e-9), symbol
    total = q_oa + eta * q_rec + cadr + k * volume / 3.6
    assert t.value("Qc") == pytest.approx(total, rel=1e-9)
    assert t.value("C_ss") == pytest.approx(300 / (3.6 * total), rel=1e-9)  # 30 people × 10 q/h


def test_hepa_efficiency_removes_99_97_percent(evaluate):
    # HEPA: at least 99.97 % at 0.3 µm (DOE-STD-3020 HEPA definition; edition from memory).
    r = run(evaluate, {"filter": {"efficiency": 0.9997}},
            contaminant=aerosol(deposition=0.0, half_life=None))
    t = r.systems[0].zones[0].contaminants["aerosol"]
    assert t.value("Qc_filter") == pytest.approx(0.9997 * 1350 * CFM)


def test_gas_is_not_filtered(evaluate):
    r = run(evaluate, {"filter": {"merv": 16}}, {"air_cleaners": [{"cadr": "300 cfm"}]},
            contaminant={"id": "voc", "unit": "µg", "kind": "gas", "per_area": 500.0})
    t = r.systems[0].zones[0].contaminants["voc"]
    assert t.value("Qc_filter") == 0 and t.value("Qc_cleaner") == 0
    area = 900 * FT**2
    assert t.value("C_ss") == pytest.approx(500 * area / (3.6 * 450 * CFM), rel=1e-9)


def test_limit_finding(evaluate):
    r = run(evaluate, contaminant=aerosol(limit=0.01))
    assert [(f.rule, f.severity, f.basis) for f in r.findings] == [
        ("concentration-limit", "fail", "declared")]
    assert r.verdict == "pass"


def test_multiple_zone_coupled_closed_form(evaluate):
    # Closed form of the coupled well-mixed balance (Nazaroff & Alvarez-Cohen 2001 CMFR balance per
    # zone, mixed through the return; no filter, no losses): C_s = (1 − x)·ΣG/Vot, C_z = C_s + G/Vpz.
    zones = [{"id": str(i), "space": "office-space", "area": f"{a} ft2", "occupants": p,
              "height": "9 ft", "air_distribution": "ceiling-supply-cool",
              "primary_airflow": f"{v} cfm"} for i, (a, p, v) in
             enumerate([(2000, 12, 900), (1000, 20, 500)])]
    data = schedule([{"id": "M", "kind": "multiple-zone", "outdoor_air": "500 cfm",
                      "zones": zones}])
    data["contaminants"] = [aerosol(deposition=0.0, half_life=None)]
    r = evaluate(data)
    vpz = np.array([900, 500]) * CFM * 3.6
    g = np.array([120.0, 200.0])
    vot = 500 * CFM * 3.6
    cs = (1 - vot / vpz.sum()) * g.sum() / vot
    for z, gz, v in zip(r.systems[0].zones, g, vpz):
        assert z.contaminants["aerosol"].value("C_ss") == pytest.approx(cs + gz / v, rel=1e-9)
