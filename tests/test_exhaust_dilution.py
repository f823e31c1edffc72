"""A zone's exhaust in the dilution balance (the well-mixed material balance of Nazaroff &
Alvarez-Cohen 2001, docs/references.md: every inflow a source, every outflow at the zone's
concentration; the assumptions for an unstated makeup are the project's, docs/dilution.md).

Expected values are written out by hand in each test, or come from an independent solution of
the full linear system (numpy.linalg.solve of the N×N balance built here from the equations,
scipy.integrate.solve_ivp for the transient).
"""

from __future__ import annotations

import numpy as np
import pytest

from airgate.procedures import coupled, dilution

from conftest import CFM, schedule

FT = 0.3048
#: default CO2 generation per occupant at 20 °C: Persily & de Jonge (2017) Table 4, mean of
#: male 0.0046 and female 0.0035 L/s at 0 °C (30 to <40 years, 1.2 met), times 293.15/273.15
N_OFFICE = (0.0046 + 0.0035) / 2 * 293.15 / 273.15
REL = 1e-9


# ----------------------------------------------------------------------------- procedures

def test_single_zone_makeup_steady_state_by_hand():
    # 100 C·L/s into 50 L/s of outdoor air at C_out = 2, plus 30 L/s of makeup at 6 leaving with
    # the exhaust: C = (100 + 50·2 + 30·6)/(50 + 30) = 380/80 = 4.75 (CMFR steady state).
    assert dilution.steady_state_concentration(
        100.0, 90.0, 50.0, 2.0, makeup_airflow=30.0, makeup_concentration=6.0) == 4.75
    # the loss rate counts the makeup outflow: 3.6·80/90 = 3.2 per hour
    assert dilution.loss_rate(90.0, 50.0, makeup_airflow=30.0) == pytest.approx(3.2, rel=1e-15)
    # arrays broadcast
    got = dilution.steady_state_concentration(100.0, 90.0, 50.0, 2.0,
                                              makeup_airflow=np.array([0.0, 30.0]),
                                              makeup_concentration=6.0)
    assert got == pytest.approx([4.0, 4.75], rel=1e-15)


def test_single_zone_makeup_transient_against_solve_ivp():
    solve_ivp = pytest.importorskip("scipy.integrate").solve_ivp
    v, q, m, c_out, c_mu = 60.0, 40.0, 25.0, 420.0, 900.0
    breaks = [0.0, 2.0, 5.0]
    gen = [[4000.0], [0.0]]
    times = np.linspace(0.0, 5.0, 41)
    got = dilution.piecewise_transient(breaks, gen, v, q, c_out, times,
                                       outdoor_concentration=c_out, makeup_airflow=m,
                                       makeup_concentration=c_mu)[:, 0]

    def rhs(t, c):  # V·dC/dt = 3.6·[G + Q·C_out + M·C_mu − (Q + M)·C]
        g = 4000.0 if t < 2.0 else 0.0
        return 3.6 * (g + q * c_out + m * c_mu - (q + m) * c) / v

    ref = np.concatenate([
        solve_ivp(rhs, (0.0, 2.0), [c_out], t_eval=times[times <= 2.0], rtol=1e-11,
                  atol=1e-9).y[0]])
    start = ref[-1]
    later = times[times > 2.0]
    ref2 = solve_ivp(rhs, (2.0, 5.0), [start], t_eval=later, rtol=1e-11, atol=1e-9).y[0]
    assert got == pytest.approx(np.concatenate([ref, ref2]), rel=1e-8)


def _full_matrix(gen, vpz, vot, exhaust, makeup, c_mu, c_out, loss=0.0):
    """The coupled balance written as one N×N linear system, independently of the procedure:
    unknowns C_1..C_N; C_s = x·C_out + (1 − x)·Σ(Vpz − E)·C/Σ(Vpz − E) (mixing box);
    0 = G + M·C_mu + Vpz·C_s − (Vpz + M + L)·C (each zone)."""
    n = len(vpz)
    x = vot / vpz.sum()
    rho = (vpz - exhaust) / (vpz - exhaust).sum()
    a = np.diag(-(vpz + makeup + loss)) + np.outer(vpz, (1 - x) * rho)
    b = -(gen + makeup * c_mu + vpz * x * c_out)
    return a, b, n


def test_coupled_steady_state_with_exhaust_against_dense_solve():
    vpz = np.array([400.0, 300.0, 250.0, 500.0])
    gen = np.array([2e4, 5e3, 0.0, 8e3])
    exhaust = np.array([0.0, 120.0, 250.0, 0.0])  # drawn from the supply, not returned
    makeup = np.array([60.0, 0.0, 40.0, 0.0])  # outdoor makeup besides the supply
    c_out = 420.0
    vot = 500.0
    a, b, _ = _full_matrix(gen, vpz, vot, exhaust, makeup, c_out, c_out)
    expected = np.linalg.solve(a, b)
    got = coupled.coupled_steady_state(gen, 50.0, vpz, vot, outdoor_concentration=c_out,
                                       zone_exhaust=exhaust, makeup_airflow=makeup,
                                       makeup_concentration=c_out)
    assert got.zone == pytest.approx(expected, rel=1e-12)


def test_coupled_transient_with_exhaust_against_solve_ivp():
    solve_ivp = pytest.importorskip("scipy.integrate").solve_ivp
    vpz = np.array([400.0, 300.0, 250.0])
    vol = np.array([120.0, 80.0, 60.0])
    exhaust = np.array([0.0, 100.0, 250.0])
    makeup = np.array([50.0, 0.0, 30.0])
    c_out, vot = 420.0, 400.0
    breaks = [0.0, 3.0, 8.0]
    gen = np.array([[2e4, 5e3, 1e3], [0.0, 0.0, 0.0]])
    times = np.linspace(0.0, 8.0, 33)
    got = coupled.coupled_piecewise_transient(
        breaks, gen, vol, vpz, vot, c_out, times, outdoor_concentration=c_out,
        zone_exhaust=exhaust, makeup_airflow=makeup, makeup_concentration=c_out).zone

    def rhs(t, c):
        a, b, _ = _full_matrix(gen[0 if t < 3.0 else 1], vpz, vot, exhaust, makeup, c_out,
                               c_out)
        return 3.6 * (a @ c - b) / vol

    ref = []
    c0 = np.full(3, c_out)
    for lo, hi in ((0.0, 3.0), (3.0, 8.0)):
        sel = times[(times >= lo) & (times <= hi)] if lo == 0.0 else times[times > lo]
        sol = solve_ivp(rhs, (lo, hi), c0, t_eval=sel, rtol=1e-11, atol=1e-9, method="LSODA")
        ref.append(sol.y.T)
        c0 = solve_ivp(rhs, (lo, hi), c0, rtol=1e-11, atol=1e-9, method="LSODA").y[:, -1]
    assert got == pytest.approx(np.vstack(ref), rel=1e-7)


# ----------------------------------------------------------------------------- engine

def _single(exhaust, outdoor_air="200 cfm", units="IP", **zone):
    ip = units == "IP"
    z = {"id": "K", "space": "office-space", "area": "1000 ft2" if ip else "100 m2",
         "occupants": 10, "height": "10 ft" if ip else "3 m",
         "air_distribution": "ceiling-supply-cool", "exhaust": exhaust, **zone}
    return schedule([{"id": "S", "kind": "single-zone", "outdoor_air": outdoor_air,
                      "zones": [z]}], units=units,
                    rules="ashrae-62.1-2019" if ip else "ashrae-62.1-2019-si")


def test_single_zone_outdoor_makeup_adds_clean_air_ip(evaluate):
    # Kitchenette exhaust 300 cfm made up by outdoor air; the unit brings 200 cfm of outdoor
    # air. By hand: G = 10·N, C_ss = 420 + 10⁶·G / ((200 + 300)·0.4719 L/s), and the change rate
    # 3.6·500·0.4719 / (1000·10 ft³ → m³) per hour (CMFR steady state and loss rate).
    r = evaluate(_single({"category": "kitchenettes", "airflow": "300 cfm",
                          "makeup": "outdoor"}))
    t = r.systems[0].zones[0].dilution
    q = 500 * CFM
    assert t.value("Q_oa") == pytest.approx(200 * CFM, rel=REL)
    assert t.value("Q_mu") == pytest.approx(300 * CFM, rel=REL)
    assert t.value("C_ss") == pytest.approx(420 + 1e6 * 10 * N_OFFICE / q, rel=REL)
    assert t.value("ACH") == pytest.approx(3.6 * q / (10000 * FT**3), rel=REL)
    assert "Q_inf" not in t and "Vd" not in t
    assert "Ve_design" in t


def test_single_zone_outdoor_makeup_adds_clean_air_si(evaluate):
    # The same in SI: 100 m² kitchenette exhausting 150 L/s, outdoor makeup; 100 L/s outdoor
    # air from the unit: C_ss = 420 + 10⁶·10·N / 250, ACH = 3.6·250/300 = 3.0 per hour.
    r = evaluate(_single({"category": "kitchenettes", "airflow": "150 L/s",
                          "makeup": "outdoor"}, outdoor_air="100 L/s", units="SI"))
    t = r.systems[0].zones[0].dilution
    assert t.value("C_ss") == pytest.approx(420 + 1e6 * 10 * N_OFFICE / 250, rel=REL)
    assert t.value("ACH") == pytest.approx(3.0, rel=REL)


def test_unstated_makeup_within_the_intake_changes_nothing_ip(evaluate):
    # Exhaust 150 cfm drawn from the supply of a unit taking in 200 cfm of outdoor air: the
    # unit relieves 50 cfm instead of 200, the zone's balance is unchanged (assumed makeup,
    # docs/dilution.md): C_ss = 420 + 10⁶·10·N / (200·0.4719).
    t = evaluate(_single({"category": "kitchenettes", "airflow": "150 cfm"})) \
        .systems[0].zones[0].dilution
    assert t.value("C_ss") == pytest.approx(420 + 1e6 * 10 * N_OFFICE / (200 * CFM), rel=REL)
    assert t.value("Vd") == pytest.approx(150 * CFM, rel=REL)
    assert "Q_mu" not in t
    assert "assumed" in t["Vd"].note


def test_unstated_makeup_beyond_the_intake_infiltrates_si(evaluate):
    # Exhaust 160 L/s drawn from a supply with 100 L/s of outdoor air: 60 L/s infiltrates from
    # outdoors (assumed), so the zone is diluted by 160 L/s in all: C_ss = 420 + 10⁶·10·N/160.
    t = evaluate(_single({"category": "kitchenettes", "airflow": "160 L/s"},
                         outdoor_air="100 L/s", units="SI")).systems[0].zones[0].dilution
    assert t.value("Q_inf") == pytest.approx(60, rel=REL)
    assert t["Q_inf"].origin == "assumed"
    assert t.value("Q_mu") == pytest.approx(60, rel=REL)
    assert t.value("C_ss") == pytest.approx(420 + 1e6 * 10 * N_OFFICE / 160, rel=REL)


def test_outdoor_air_system_zone_with_outdoor_makeup_ip(evaluate):
    # A zone of a 100 % outdoor-air system receiving 100 cfm, exhausting 6 × 50 = 300 cfm of
    # toilets (made up outdoors): C_ss = 420 + 10⁶·4·N / (400·0.4719).
    z = {"id": "T", "space": "office-space", "area": "400 ft2", "occupants": 4,
         "height": "9 ft", "air_distribution": "ceiling-supply-cool", "outdoor_air": "100 cfm",
         "exhaust": {"category": "toilets-public", "airflow": "300 cfm", "fixtures": 6,
                     "makeup": "outdoor"}}
    r = evaluate(schedule([{"id": "D", "kind": "outdoor-air", "outdoor_air": "100 cfm",
                            "zones": [z]}]))
    t = r.systems[0].zones[0].dilution
    assert t.value("C_ss") == pytest.approx(420 + 1e6 * 4 * N_OFFICE / (400 * CFM), rel=REL)


#: the multiple-zone case of :func:`_multi`: primary airflows, CO2 generation and volumes
VPZ = np.array([900, 500, 200]) * CFM
GEN = 1e6 * np.array([12, 20, 3]) * N_OFFICE
VOL = np.array([2000, 1000, 600]) * 9 * FT**3


def _multi(zone_exhaust: dict, extra_zones=(), outdoor_air="600 cfm"):
    zones = [{"id": f"z{i}", "space": "office-space", "area": f"{a} ft2", "occupants": p,
              "height": "9 ft", "air_distribution": "ceiling-supply-cool",
              "primary_airflow": f"{v} cfm"} for i, (a, p, v) in
             enumerate([(2000, 12, 900), (1000, 20, 500), (600, 3, 200)])]
    zones[2]["exhaust"] = zone_exhaust
    return schedule([{"id": "M", "kind": "multiple-zone", "outdoor_air": outdoor_air,
                      "zones": zones}, *extra_zones])


def _mornings(data: dict) -> dict:
    """Every zone of the first system occupied 08:00-12:00 on weekdays (a design day)."""
    data["profiles"] = {"am": {"weekday": {"08:00-12:00": 1.0}}}
    for z in data["systems"][0]["zones"]:
        z["profile"] = "am"
    return data


def _dense(vpz, gen, vot, exhaust, makeup, c_out=420.0):
    a, b, _ = _full_matrix(gen, vpz, vot, exhaust, makeup, c_out, c_out)
    return np.linalg.solve(a, b)


@pytest.mark.parametrize("airflow, makeup, exhaust, inflow", [
    # unstated makeup, 150 cfm drawn from z2's 200 cfm primary air: its return falls to 50 cfm
    (150, None, 150, 0),
    # unstated, 260 cfm: all 200 cfm of primary air leaves unreturned and 60 cfm infiltrates
    (260, None, 200, 60),
    # outdoor makeup: the return stays 200 cfm, 150 cfm of outdoor air enters besides the supply
    (150, "outdoor", 0, 150),
])
def test_multiple_zone_exhaust_against_dense_solve(evaluate, airflow, makeup, exhaust, inflow):
    ex = {"category": "kitchenettes", "airflow": f"{airflow} cfm"}
    if makeup:
        ex["makeup"] = makeup
    r = evaluate(_multi(ex))
    vpz = VPZ
    gen = GEN
    expected = _dense(vpz, gen, 600 * CFM, np.array([0, 0, exhaust]) * CFM,
                      np.array([0, 0, inflow]) * CFM)
    got = [z.dilution.value("C_ss") for z in r.systems[0].zones]
    assert got == pytest.approx(expected, rel=1e-9)
    t = r.systems[0].zones[2].dilution
    assert ("Q_mu" in t) == (inflow > 0)
    assert ("Q_inf" in t) == (makeup is None and inflow > 0)


def test_transfer_out_to_an_exhaust_fan_zone_reduces_the_return(evaluate):
    # Zone z2 gives 120 cfm to an exhausted toilet on a fan as its makeup: z2 returns only
    # 80 of its 200 cfm (the transferred air leaves at z2's concentration).
    fan = {"id": "EF", "kind": "exhaust", "zones": [
        {"id": "wc", "area": "200 ft2", "exhaust": {
            "category": "toilets-public", "airflow": "120 cfm", "fixtures": 2,
            "makeup": {"transfer_from": "z2"}}}]}
    r = evaluate(_multi({"category": "kitchenettes", "airflow": "0 cfm", "makeup": "outdoor"},
                        [fan]))
    vpz = VPZ
    gen = GEN
    expected = _dense(vpz, gen, 600 * CFM, np.array([0, 0, 120]) * CFM, np.zeros(3))
    got = [z.dilution.value("C_ss") for z in r.systems[0].zones]
    assert got == pytest.approx(expected, rel=1e-9)
    t = r.systems[0].zones[2].dilution
    assert t.value("Vtr_out") == pytest.approx(120 * CFM, rel=REL)
    assert "wc" in t["Vtr_out"].note


def test_multiple_zone_design_day_with_exhaust_against_solve_ivp(evaluate):
    solve_ivp = pytest.importorskip("scipy.integrate").solve_ivp
    data = _multi({"category": "kitchenettes", "airflow": "150 cfm"})
    r = evaluate(_mornings(data))
    vpz = VPZ
    gen = GEN
    vol = VOL
    exhaust = np.array([0, 0, 150]) * CFM

    def rhs(t, c):
        on = 8.0 <= t % 24.0 < 12.0
        a, b, _ = _full_matrix(gen * on, vpz, 600 * CFM, exhaust, np.zeros(3), 420.0, 420.0)
        return 3.6 * (a @ c - b) / vol

    c = np.full(3, 420.0)
    for lo, hi in ((0, 8), (8, 12), (12, 32), (32, 36)):  # to noon of the second day
        c = solve_ivp(rhs, (lo, hi), c, rtol=1e-11, atol=1e-9, method="LSODA").y[:, -1]
    got = [z.series.ppm[12 * 60] for z in r.systems[0].zones]
    assert got == pytest.approx(c, rel=1e-7)


def test_transfer_into_an_analysed_zone_is_said(evaluate):
    # Transferred makeup couples a zone to its source's concentration; until that is solved
    # for this system kind the zone's figures are not given, and a note says why.
    fan = {"id": "EF", "kind": "exhaust", "zones": [
        {"id": "wc", "area": "200 ft2", "exhaust": {
            "category": "toilets-public", "airflow": "100 cfm", "fixtures": 2,
            "makeup": "outdoor"}}]}
    data = _single({"category": "kitchenettes", "airflow": "100 cfm",
                    "makeup": {"transfer_from": "wc"}})
    data["systems"].append(fan)
    r = evaluate(data)
    assert r.systems[0].zones[0].dilution is None
    assert any("transferred from zone wc" in n for n in r.systems[0].notes)


def test_exhaust_beyond_the_intake_raises_the_balance_intake_ip(evaluate):
    # z2 draws 150 cfm from its supply unreturned while the air handler takes in only 100 cfm:
    # it cannot relieve less than nothing, so the balance uses an intake of ΣE_z = 150 cfm
    # (assumed, docs/dilution.md) and the dense N×N system at Vot = 150 cfm gives the figures.
    r = evaluate(_multi({"category": "kitchenettes", "airflow": "150 cfm"},
                        outdoor_air="100 cfm"))
    vpz = VPZ
    gen = GEN
    expected = _dense(vpz, gen, 150 * CFM, np.array([0, 0, 150]) * CFM, np.zeros(3))
    got = [z.dilution.value("C_ss") for z in r.systems[0].zones]
    assert got == pytest.approx(expected, rel=1e-9)
    assert r.systems[0].zones[0].dilution.value("x") == pytest.approx(150 / 1600, rel=REL)
    assert any("exceeds the scheduled intake" in n for n in r.systems[0].notes)


# ----------------------------------------------------------------------- transfers in a system

def _doas_pair(units="IP", profile=False):
    ip = units == "IP"
    q = (lambda cfm, ls: f"{cfm} cfm" if ip else f"{ls} L/s")
    zones = [
        {"id": "A", "space": "office-space", "area": "1000 ft2" if ip else "100 m2",
         "occupants": 10, "height": "10 ft" if ip else "3 m", "outdoor_air": q(100, 50),
         "air_distribution": "ceiling-supply-cool"},
        {"id": "B", "space": "office-space", "area": "200 ft2" if ip else "20 m2",
         "occupants": 2, "height": "10 ft" if ip else "3 m", "outdoor_air": q(20, 10),
         "air_distribution": "ceiling-supply-cool",
         "exhaust": {"category": "kitchenettes", "airflow": q(80, 40),
                     "makeup": {"transfer_from": "A"}}},
    ]
    if profile:
        for z in zones:
            z["profile"] = "am"
    data = schedule([{"id": "D", "kind": "outdoor-air", "outdoor_air": q(120, 60),
                      "zones": zones}], units=units,
                    rules="ashrae-62.1-2019" if ip else "ashrae-62.1-2019-si")
    if profile:
        data["profiles"] = {"am": {"weekday": {"08:00-12:00": 1.0}}}
    return data


@pytest.mark.parametrize("units, qa, qb, tr", [("IP", 100 * CFM, 20 * CFM, 80 * CFM),
                                                ("SI", 50.0, 10.0, 40.0)])
def test_transfer_between_zones_of_an_outdoor_air_system_by_hand(evaluate, units, qa, qb, tr):
    # Zone A gives its air to B as B's makeup (A's supply replaces it: A still gets only its
    # outdoor air). By hand (CMFR steady state of each zone in turn):
    #   C_A = 420 + 10⁶·10·N / Q_A
    #   C_B = (10⁶·2·N + Q_B·420 + T·C_A) / (Q_B + T)
    r = evaluate(_doas_pair(units))
    a, b = (z.dilution for z in r.systems[0].zones)
    c_a = 420 + 1e6 * 10 * N_OFFICE / qa
    c_b = (1e6 * 2 * N_OFFICE + qb * 420 + tr * c_a) / (qb + tr)
    assert a.value("C_ss") == pytest.approx(c_a, rel=REL)
    assert b.value("C_ss") == pytest.approx(c_b, rel=REL)
    assert b.value("C_mu") == pytest.approx(c_a, rel=REL)
    assert b.value("Q_mu") == pytest.approx(tr, rel=REL)
    assert a.value("Vtr_out") == pytest.approx(tr, rel=REL)
    assert "network" in b["C_ss"].note
    # the aerosol balance of the same network: no emission in B, so B holds A's level
    # diluted by its own outdoor air (a hand check of the contaminant path)


def test_transfer_network_design_day_against_solve_ivp(evaluate):
    solve_ivp = pytest.importorskip("scipy.integrate").solve_ivp
    r = evaluate(_doas_pair(profile=True))
    qa, qb, tr = 100 * CFM, 20 * CFM, 80 * CFM
    va, vb = 1000 * 10 * FT**3, 200 * 10 * FT**3
    g = 1e6 * np.array([10, 2]) * N_OFFICE

    def rhs(t, c):
        on = 8.0 <= t % 24.0 < 12.0
        return 3.6 * np.array([
            (g[0] * on + qa * 420 - qa * c[0]) / va,
            (g[1] * on + qb * 420 + tr * c[0] - (qb + tr) * c[1]) / vb])

    c = np.full(2, 420.0)
    for lo, hi in ((0, 8), (8, 12), (12, 32), (32, 34.5)):
        c = solve_ivp(rhs, (lo, hi), c, rtol=1e-11, atol=1e-9, method="LSODA").y[:, -1]
    got = [z.series.ppm[int(10.5 * 60)] for z in r.systems[0].zones]
    assert got == pytest.approx(c, rel=1e-8)


def test_transfer_within_a_multiple_zone_system_against_dense_solve(evaluate):
    # z2 (200 cfm primary air) takes 150 cfm of makeup from z0 (900 cfm): z0 returns 750 cfm,
    # z2 returns all 200 cfm and receives z0's air besides its supply. The full N×N balance,
    # written here from the equations: the rank-one return coupling plus the transfer entry.
    r = evaluate(_multi({"category": "kitchenettes", "airflow": "150 cfm",
                         "makeup": {"transfer_from": "z0"}}))
    vpz = VPZ
    gen = GEN
    exhaust = np.array([150, 0, 0]) * CFM  # z0's air leaving unreturned
    makeup = np.array([0, 0, 150]) * CFM
    a, b, _ = _full_matrix(gen, vpz, 600 * CFM, exhaust, makeup, 0.0, 420.0)
    a[2, 0] += 150 * CFM  # z2 receives z0's air (removed again at z2: in `makeup`)
    expected = np.linalg.solve(a, b)
    got = [z.dilution.value("C_ss") for z in r.systems[0].zones]
    assert got == pytest.approx(expected, rel=1e-9)
    assert r.systems[0].zones[2].dilution.value("C_mu") == pytest.approx(expected[0], rel=1e-9)


def test_transfer_within_a_multiple_zone_system_design_day_against_solve_ivp(evaluate):
    solve_ivp = pytest.importorskip("scipy.integrate").solve_ivp
    data = _multi({"category": "kitchenettes", "airflow": "150 cfm",
                   "makeup": {"transfer_from": "z0"}})
    r = evaluate(_mornings(data))
    vpz = VPZ
    gen = GEN
    vol = VOL
    exhaust = np.array([150, 0, 0]) * CFM
    makeup = np.array([0, 0, 150]) * CFM

    def rhs(t, c):
        on = 8.0 <= t % 24.0 < 12.0
        a, b, _ = _full_matrix(gen * on, vpz, 600 * CFM, exhaust, makeup, 0.0, 420.0)
        a[2, 0] += 150 * CFM
        return 3.6 * (a @ c - b) / vol

    c = np.full(3, 420.0)
    for lo, hi in ((0, 8), (8, 12), (12, 32), (32, 35)):
        c = solve_ivp(rhs, (lo, hi), c, rtol=1e-11, atol=1e-9, method="LSODA").y[:, -1]
    got = [z.series.ppm[11 * 60] for z in r.systems[0].zones]
    assert got == pytest.approx(c, rel=1e-7)


def test_contaminant_over_a_transfer_network_by_hand(evaluate):
    # A gas emitted 3 units/h per person, none outdoors, no other loss: each zone's steady
    # state in turn (CMFR), Q in L/s and 3.6 m³/h per L/s:
    #   C_A = 30 / (3.6·Q_A),  C_B = (6/3.6 + T·C_A) / (Q_B + T)
    data = _doas_pair("SI")
    data["contaminants"] = [{"id": "gas", "unit": "mg", "kind": "gas", "per_person": 3.0}]
    r = evaluate(data)
    a, b = (z.contaminants["gas"] for z in r.systems[0].zones)
    c_a = 30 / (3.6 * 50)
    assert a.value("C_ss") == pytest.approx(c_a, rel=REL)
    assert b.value("C_ss") == pytest.approx((6 / 3.6 + 40 * c_a) / (10 + 40), rel=REL)
