"""The IAQ procedure of ANSI/ASHRAE 62.1-2019 (Section 6.3): outdoor air by mass balance.

Expected values come from outside the code under test:

- the standard's mass-balance equations for single-zone systems (its appendix; entered
  `from memory`): with the filter on the mixed air (location B), constant volume, R = 1,
  ``Cbz = (N + Ez·Vo·(1 − Ef)·Co) / (Ez·(Vo + R·Vr·Ef))`` and, solved for the outdoor air,
  ``Vo = (N − Ez·R·Vr·Ef·Cbz) / (Ez·(Cbz − (1 − Ef)·Co))``; without a filter
  ``Vo = N / (Ez·(Cbz − Co))``;
- ``scipy.optimize.brentq`` on the well-mixed balance written out here (Nazaroff &
  Alvarez-Cohen 2001, the CMFR steady state), and for coupled zones on the balance of every zone
  and the mixing box solved as one dense linear system with ``numpy.linalg.solve``;
- the units: 1 µg/h = 1/3600 µg/s; 1 m³ = 1000 L (SI, exact).
"""

from __future__ import annotations

import json
import math
import subprocess
import sys

import numpy as np
import pytest

from airgate.errors import AirgateError
from airgate.procedures import coupled, dilution

from conftest import check_every_format, schedule, subprocess_env

REL = 1e-9


# --- the procedures against the standard's equations and scipy --------------------------------


def test_no_filter_is_the_appendix_equation():
    # Vo = N/(Ez·(Cbz − Co)), 62.1-2019 appendix (from memory): N = 500 C·L/s, Ez = 0.8,
    # Cbz = 30, Co = 5 → 500/(0.8·25) = 25 L/s
    q = dilution.required_outdoor_airflow(30.0, 500.0, 100.0, outdoor_concentration=5.0, ez=0.8)
    assert q == pytest.approx(25.0, rel=REL)


@pytest.mark.parametrize(("n", "ez", "ef", "co", "supply", "limit"), [
    (100.0, 1.0, 0.5, 0.5, 100.0, 1.5),
    (1000.0, 0.8, 0.35, 2.0, 400.0, 6.0),
    (570.0, 1.2, 0.9, 0.0, 250.0, 2.0),
])
def test_mixed_air_filter_is_the_appendix_equation(n, ez, ef, co, supply, limit):
    vo = dilution.required_outdoor_airflow(limit, n, 50.0, co, ef, supply, ef, ez=ez)
    assert 0 < vo < supply
    vr = supply - vo  # the rest of the supply is recirculated through the filter
    # the appendix's Vo with R = 1 at that Vr, and its Cbz at that Vo (from memory)
    assert vo == pytest.approx((n - ez * vr * ef * limit) / (ez * (limit - (1 - ef) * co)),
                               rel=1e-9)
    cbz = (n + ez * vo * (1 - ef) * co) / (ez * (vo + vr * ef))
    assert cbz == pytest.approx(limit, rel=1e-9)


def _balance(q, g, s, eta, co, b):
    """The breathing-zone steady state written out (CMFR, Nazaroff & Alvarez-Cohen 2001)."""
    rec = max(s - q, 0.0)
    removal = q + eta * rec + b
    return (g + q * (1 - eta) * co) / removal if removal > 0 else math.inf


@pytest.mark.parametrize(("g", "s", "eta", "co", "cadr", "kdep", "limit"), [
    (800.0, 0.0, 0.0, 1.0, 0.0, 0.0, 4.0),
    (800.0, 300.0, 0.6, 1.0, 40.0, 0.3, 2.5),
    (800.0, 100.0, 0.3, 2.0, 10.0, 0.0, 4.0),   # more outdoor air than the supply is needed
    (50.0, 300.0, 0.6, 0.5, 40.0, 0.3, 1.0),    # filtration and cleaners alone suffice
])
def test_least_outdoor_air_against_brentq(g, s, eta, co, cadr, kdep, limit):
    from scipy.optimize import brentq

    volume = 120.0
    b = cadr + kdep * volume / 3.6  # deposition as an airflow: k·V [m³/h] in L/s
    q = dilution.required_outdoor_airflow(limit, g, volume, co, eta, s, eta, cadr, kdep)
    if _balance(0.0, g, s, eta, co, b) <= limit:
        assert q == 0.0
        return
    expected = brentq(lambda x: _balance(x, g, s, eta, co, b) - limit, 0.0, 1e6, xtol=1e-12,
                      rtol=1e-14)
    assert q == pytest.approx(expected, rel=1e-9)
    # and the engine's own steady state at that airflow is the limit
    c = dilution.steady_state_concentration(g, volume, q, co, eta, max(s - q, 0.0), eta, cadr,
                                            kdep)
    assert c == pytest.approx(limit, rel=1e-9)


def test_no_outdoor_air_meets_a_limit_below_the_outdoor_level():
    # the filtered outdoor air alone, (1 − 0.2)·10 = 8, is above the limit 5
    assert math.isinf(dilution.required_outdoor_airflow(5.0, 100.0, 50.0, 10.0, 0.2))


def _dense_coupled(g, vpz, vot, co, eta, cadr):
    """Every zone balance and the mixing box as one dense linear system (no structure used):
    0 = G_z + Vpz·C_s − (Vpz + CADR_z)·C_z and
    Vps·C_s = Vot·(1 − η)·Co + (Vps − Vot)·(1 − η)·Σ Vpz·C_z / Vps."""
    n = len(g)
    vps = sum(vpz)
    a = np.zeros((n + 1, n + 1))
    rhs = np.zeros(n + 1)
    for z in range(n):
        a[z, z] = vpz[z] + cadr[z]
        a[z, n] = -vpz[z]
        rhs[z] = g[z]
        a[n, z] = -(vps - vot) * (1 - eta) * vpz[z] / vps
    a[n, n] = vps
    rhs[n] = vot * (1 - eta) * co
    return np.linalg.solve(a, rhs)[:n]


def test_coupled_least_intake_against_brentq_on_the_dense_balance():
    from scipy.optimize import brentq

    g = [900.0, 200.0, 50.0]
    vpz = [400.0, 300.0, 500.0]
    cadr = [0.0, 30.0, 0.0]
    ez = np.array([0.8, 1.0, 1.0])
    co, eta, limit = 0.5, 0.4, 4.0
    vot = coupled.coupled_required_intake([limit] * 3, g, 50.0, vpz, co, eta, eta, cadr=cadr,
                                          ez=ez)

    def worst(v):
        return max(_dense_coupled(np.array(g) / ez, vpz, v, co, eta, cadr)) - limit

    assert worst(0.0) > 0 > worst(sum(vpz))
    expected = brentq(worst, 0.0, sum(vpz), xtol=1e-10, rtol=1e-14)
    assert vot == pytest.approx(expected, rel=1e-9)


def test_coupled_least_intake_edges():
    # clean enough with no intake at all: the air cleaners suffice (100/200 = 0.5 <= 1)
    assert coupled.coupled_required_intake([1.0], [100.0], 50.0, [300.0], cadr=200.0) == 0.0
    # the outdoor air itself (Co = 3) is above the limit 2: no intake suffices
    assert math.isinf(coupled.coupled_required_intake([2.0, 2.0], [10.0, 10.0], 50.0,
                                                      [100.0, 100.0], outdoor_concentration=3.0))


# --- the evaluation -------------------------------------------------------------------------

# invented compound: 360 µg/h per m² of floor, outdoor 10 µg/m³, limit 100 µg/m³ (an invented
# limit; only the demo and tests carry invented numbers). 100 m² → E = 36 000 µg/h = 10 µg/s.
# With clean air only (no filter), Ez = 1: Vo = 10 µg/s / (100 − 10) µg/m³ = 0.1111 m³/s
# = 111.1 L/s (the appendix's Vo = N/(Ez·(Cbz − Co))); at 60 L/s,
# C = 10 + 10/0.060 = 176.7 µg/m³.
COMPOUND = {"id": "voc", "label": "invented compound", "kind": "gas", "unit": "ug",
            "per_area": 360, "outdoor": 10, "limit": 100,
            "limit_source": "invented limit for the test"}


def _system(sid, outdoor, procedure=None, **kw):
    out = {"id": sid, "kind": "single-zone", "outdoor_air": outdoor,
           "zones": [{"id": sid.lower(), "space": "office-space", "area": "100 m2",
                      "height": "3 m", "occupants": 5,
                      "air_distribution": "ceiling-supply-cool"}], **kw}
    if procedure:
        out["procedure"] = procedure
    return out


def _iaqp_schedule(systems):
    data = schedule(systems, units="SI", rules="ashrae-62.1-2019-si")
    data["contaminants"] = [dict(COMPOUND)]
    return data


def test_the_mass_balance_path_passes_below_the_rate_procedure_and_fails_above_the_limit(
        evaluate):
    # Office space, 62.1-2019 SI Table 6-1 (from memory): 2.5 L/s per person + 0.3 L/s·m²,
    # 5 people on 100 m²: Vbz = 42.5 L/s. The compound needs 111.1 L/s (see above).
    r = evaluate(_iaqp_schedule([
        _system("MB-PASS", "120 L/s", "iaqp"),   # above 111.1: passes the balance
        _system("MB-FAIL", "60 L/s", "iaqp"),    # 176.7 µg/m³ > 100: fails
        _system("VRP", "60 L/s"),                # the same system on the rate procedure
        _system("MB-LOW", "112 L/s", "iaqp", supply_airflow="600 L/s",
                filter={"efficiency": 0.0}),
    ]))
    by = {s.id: s for s in r.systems}
    assert by["MB-PASS"].verdict == "pass" and by["MB-FAIL"].verdict == "fail"
    assert by["VRP"].verdict == "pass"  # 60 ≥ 42.5 L/s
    for sid in ("MB-PASS", "MB-FAIL"):
        t = by[sid].trail
        assert by[sid].procedure == "iaqp"
        assert t.value("Vot") == pytest.approx(10 / 0.090, rel=REL)  # 111.1 L/s
        assert t.value("Vot_vrp") == pytest.approx(2.5 * 5 + 0.3 * 100, rel=REL)
    assert by["VRP"].procedure == "vrp" and "Vot_vrp" not in by["VRP"].trail
    zone = by["MB-FAIL"].zones[0].contaminants["voc"]
    assert zone.value("C_bz") == pytest.approx(10 + 10 / 0.060, rel=REL)  # 176.7 µg/m³
    assert zone.value("Q_oa_min") == pytest.approx(10 / 0.090, rel=REL)
    assert "invented limit for the test" in zone["C_limit"].note
    rules = {(f.subject, f.rule): f for f in r.findings}
    assert ("MB-FAIL/mb-fail", "iaqp-concentration") in rules
    assert ("MB-FAIL", "iaqp-intake") in rules
    assert rules[("MB-FAIL", "iaqp-intake")].basis == "code"
    assert rules[("MB-FAIL/mb-fail", "iaqp-concentration")].basis == "code"
    assert "invented limit for the test" in rules[("MB-FAIL/mb-fail",
                                                   "iaqp-concentration")].message
    # on the rate procedure the same limit is the schedule's own (basis declared)
    assert rules[("VRP/vrp", "concentration-limit")].basis == "declared"
    assert not any(f.system.startswith("MB") and f.rule == "concentration-limit"
                   for f in r.findings)
    # the rate procedure's minimums do not apply on the path (the MB-PASS intake 120 L/s is
    # above them anyway; the shares below check the filter)
    assert not any(f.rule == "system-intake" and f.system.startswith("MB") for f in r.findings)
    # no filter credit: the recirculated 488 L/s removes nothing, the need is still 111.1 L/s
    assert by["MB-LOW"].trail.value("Vot") == pytest.approx(10 / 0.090, rel=REL)
    assert by["MB-LOW"].verdict == "pass"


def test_filtration_credit_lowers_the_intake_below_the_rate_procedure(evaluate):
    # A particle compound, 60 µg/s emitted (G = 60 000 µg/m³·L/s), limit 120 µg/m³, clean
    # outdoor air; 600 L/s of supply through a 90 % filter. With no outdoor air the appendix's
    # Cbz = N/(Ez·Vr·Ef) = 60 000/(600·0.9) = 111.1 ≤ 120 (from memory; Ez = 1): the balance
    # needs no outdoor air, where the rate procedure asks 42.5 L/s. At the scheduled 10 L/s
    # (590 L/s recirculated): Cbz = 60 000/(10 + 0.9·590) = 110.9.
    data = _iaqp_schedule([
        _system("F", "10 L/s", "iaqp", supply_airflow="600 L/s", filter={"efficiency": 0.9})])
    data["contaminants"] = [{"id": "pm", "unit": "ug", "per_zone": 60 * 3600, "limit": 120}]
    r = evaluate(data)
    s = r.systems[0]
    assert s.trail.value("Vot") == 0.0
    assert s.trail.value("Vot_vrp") == pytest.approx(42.5, rel=REL)
    assert s.verdict == "pass"
    c = s.zones[0].contaminants["pm"].value("C_bz")
    assert c == pytest.approx(60000 / (10 + 0.9 * 590), rel=REL)


def test_multiple_zone_system_on_the_path(evaluate):
    # Two zones of 1000 L/s primary air each, no filter, clean outdoor air, Ez = 1; each emits
    # 720 µg/h = 0.2 µg/s (G = 200 µg/m³·L/s). C_z = C_s + G/Vpz = C_s + 0.2 and, by hand,
    # C_s = (1 − Vot/2000)·ΣG/Vot = (1 − Vot/2000)·400/Vot; the limit 1.8 needs C_s = 1.6:
    # 400/Vot − 0.2 = 1.6 → Vot = 400/1.8 = 222.2 L/s. The second compound (limit 100) needs
    # no more than the bound of the intake, so the first governs.
    zones = [{"id": zid, "space": "office-space", "area": "50 m2", "height": "3 m",
              "occupants": 2, "air_distribution": "ceiling-supply-cool",
              "primary_airflow": "1000 L/s"} for zid in ("a", "b")]
    data = _iaqp_schedule([{"id": "M", "kind": "multiple-zone", "procedure": "iaqp",
                            "outdoor_air": "450 L/s", "zones": zones}])
    data["contaminants"] = [
        {"id": "x", "unit": "ug", "kind": "gas", "per_zone": 720.0, "limit": 1.8},
        {"id": "y", "unit": "ug", "kind": "gas", "per_zone": 720.0, "limit": 100.0}]
    r = evaluate(data)
    s = r.systems[0]
    assert s.trail.value("Vot_x") == pytest.approx(400 / 1.8, rel=1e-9)
    assert s.trail.value("Vot") == pytest.approx(400 / 1.8, rel=1e-9)
    assert s.trail.value("Vot_y") < s.trail.value("Vot_x")
    assert s.verdict == "pass"  # 450 L/s scheduled
    assert not any(f.rule in ("system-intake", "zone-primary-airflow") for f in r.findings)
    # at the scheduled 450 L/s: C_s = (1 − 450/2000)·400/450 = 0.6889, C_z = 0.8889
    cz = s.zones[0].contaminants["x"].value("C_bz")
    assert cz == pytest.approx((1 - 450 / 2000) * 400 / 450 + 0.2, rel=1e-9)


def test_bad_inputs_are_located_errors(evaluate):
    no_limit = _iaqp_schedule([_system("A", "60 L/s", "iaqp")])
    no_limit["contaminants"][0].pop("limit")
    no_limit["contaminants"][0].pop("limit_source")
    with pytest.raises(AirgateError, match="design compounds"):
        evaluate(no_limit)
    source_only = _iaqp_schedule([_system("A", "60 L/s", "iaqp")])
    source_only["contaminants"][0].pop("limit")
    with pytest.raises(AirgateError, match="give the limit too"):
        evaluate(source_only)
    no_height = _iaqp_schedule([_system("A", "60 L/s", "iaqp")])
    no_height["systems"][0]["zones"][0].pop("height")
    with pytest.raises(AirgateError, match="needs height or volume"):
        evaluate(no_height)
    natural = _iaqp_schedule([{"id": "N", "kind": "natural", "procedure": "iaqp", "zones": [
        {"id": "n", "space": "office-space", "area": "100 m2", "height": "3 m",
         "natural_ventilation": {"openable_area": "5 m2", "arrangement": "single-sided",
                                 "depth": "5 m", "permanently_open": True}}]}])
    with pytest.raises(AirgateError, match="no mechanical intake"):
        evaluate(natural)
    other_pack = _iaqp_schedule([_system("A", "60 L/s", "iaqp")])
    with pytest.raises(AirgateError, match="does not enable the IAQ procedure"):
        evaluate(other_pack, rules="ashrae-62.2-2019")


def test_every_format_names_the_procedure(tmp_path):
    import yaml

    path = tmp_path / "mb.yaml"
    path.write_text(yaml.safe_dump(_iaqp_schedule([_system("MB", "60 L/s", "iaqp")])))
    for fmt, stdout in check_every_format(path, tmp_path):
        assert "iaqp-concentration" in stdout and "iaqp-intake" in stdout, fmt
        if fmt == "json":
            system = json.loads(stdout)["systems"][0]
            assert system["procedure"] == "iaqp"
            assert system["values"]["Vot"]["value"] == pytest.approx(111.111, rel=1e-5)
            assert system["values"]["Vot_vrp"]["value"] == pytest.approx(42.5, rel=1e-6)
        if fmt in ("text", "markdown", "html"):
            assert "IAQ procedure" in stdout, fmt
    out = subprocess.run([sys.executable, "-m", "airgate", "explain", str(path), "--zone", "mb"],
                         capture_output=True, text=True, env=subprocess_env(), cwd=tmp_path)
    assert out.returncode in (0, 1), out.stderr
    for symbol in ("C_bz", "Q_oa_min", "iaqp-concentration"):
        assert symbol in out.stdout, symbol


def test_the_report_names_every_system_s_path(evaluate):
    # rate procedure by default; natural ventilation (Section 6.4) for a natural system
    data = _iaqp_schedule([_system("R", "60 L/s"), _system("I", "120 L/s", "iaqp"),
                           {"id": "N", "kind": "natural", "zones": [
                               {"id": "n", "space": "office-space", "area": "100 m2",
                                "height": "3 m", "natural_ventilation": {
                                    "openable_area": "5 m2", "arrangement": "single-sided",
                                    "depth": "5 m", "permanently_open": True}}]}])
    r = evaluate(data)
    assert [s.procedure for s in r.systems] == ["vrp", "iaqp", "nvp"]
