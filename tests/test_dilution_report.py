"""The CO2 dilution analysis through the engine (well-mixed balance, Nazaroff & Alvarez-Cohen 2001;
purge times, CDC 2003 Table B.1; CO2 generation, Persily & de Jonge 2017; docs/references.md)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from conftest import CFM, schedule

FT = 0.3048


#: default CO2 generation per occupant as a volume at 20 °C: Persily & de Jonge (2017) Table 4,
#: mean of male 0.0046 and female 0.0035 L/s (30 to <40 years, 1.2 met) at 0 °C, times the ratio
#: of absolute temperatures (ideal gas, common practice)
N_OFFICE = (0.0046 + 0.0035) / 2 * 293.15 / 273.15


def single(zone_extra=None, outdoor_air="620 cfm", project_extra=None, **kw):
    z = {"id": "1", "space": "conference-meeting", "area": "2000 ft2", "occupants": 100,
         "height": "10 ft", "air_distribution": "ceiling-supply-cool", **(zone_extra or {})}
    data = schedule([{"id": "S", "kind": "single-zone", "outdoor_air": outdoor_air,
                      "zones": [z]}], **kw)
    data["project"].update(project_extra or {})
    return data


def test_steady_co2_at_7_5_L_s_per_person_is_about_700_ppm(evaluate):
    # ASHRAE CO2 FAQ (docs/references.md): 7.5 L/s (15 cfm) per person ↔ about 700 ppm above
    # outdoor (published); 0.0052 L/s / 7.5 L/s → 693 ppm (derived).
    r = evaluate(single({"co2_generation": 0.0052}, outdoor_air="750 L/s"))
    t = r.systems[0].zones[0].dilution
    assert t.value("C_ss") - t.value("C_out") == pytest.approx(693.3, abs=0.1)
    assert t.value("C_out") == 420  # common practice default outdoor level


@pytest.mark.parametrize("ach, t99, t999", [(2, 138, 207), (6, 46, 69), (12, 23, 35)])
def test_purge_times_cdc_2003_table_b1(evaluate, ach, t99, t999):
    # CDC, Guidelines for Environmental Infection Control in Health-Care Facilities (2003),
    # Appendix B, Table B.1: minutes to 99 % and 99.9 % removal at a given air change rate.
    volume = 2000 * 10 * FT**3  # m3
    q = ach * volume / 3.6  # L/s
    r = evaluate(single(outdoor_air=f"{q!r} L/s"))
    t = r.systems[0].zones[0].dilution
    assert t.value("ACH") == pytest.approx(ach)
    assert round(t.value("t99") * 60) == t99
    assert round(t.value("t99.9") * 60) == t999


def test_dcv_setpoint_matches_required_airflow(evaluate):
    # Derived from the steady balance (Nazaroff & Alvarez-Cohen 2001 CMFR steady state, CO2 as a
    # tracer): C = C_out + 10⁶·N·Pz/Voz with Voz = 620 cfm (Vbz = 5·100 + 0.06·2000: ANSI/ASHRAE
    # 62.1-2019 Section 6.2.2.1 with the Table 6-1 conference/meeting rates, derived) and the
    # default N: 0.00405 L/s at 0 °C (Persily & de Jonge 2017 Table 4, 30 to <40 years, 1.2 met,
    # mean of male 0.0046 and female 0.0035; published cells) as a volume at 20 °C (ideal gas).
    r = evaluate(single())
    t = r.systems[0].zones[0].dilution
    expected = 420 + 1e6 * N_OFFICE * 100 / (620 * CFM)
    assert t.value("C_dcv") == pytest.approx(expected, rel=1e-9)
    # at exactly the required intake the steady state equals the set point
    assert t.value("C_ss") == pytest.approx(t.value("C_dcv"), rel=1e-6)
    # DCV reset: Voz at zero occupancy is the area part, Ra·Az/Ez = 0.06·2000 = 120 cfm
    assert t.value("Voz_min") / CFM == pytest.approx(120, rel=1e-9)


def test_capacity_at_delivered_air(evaluate):
    # Derived: the occupancy P with Rp·P + Ra·Az = Q·Ez; at Q = Voz it is the design Pz,
    # and 100 cfm more supports 100/5 = 20 more people (Rp = 5 cfm/person).
    assert evaluate(single()).systems[0].zones[0].dilution.value("P_max") == pytest.approx(100)
    r = evaluate(single(outdoor_air="720 cfm"))
    assert r.systems[0].zones[0].dilution.value("P_max") == pytest.approx(120)


def test_tenfold_airflow_tenfold_lower_excess(evaluate):
    # Common practice: steady excess = generation / airflow.
    a = evaluate(single(outdoor_air="100 L/s")).systems[0].zones[0].dilution
    b = evaluate(single(outdoor_air="1000 L/s")).systems[0].zones[0].dilution
    ratio = (a.value("C_ss") - 420) / (b.value("C_ss") - 420)
    assert ratio == pytest.approx(10)


def test_declared_limit_is_a_finding(evaluate):
    r = evaluate(single(project_extra={"co2_limit": 1500}))
    (f,) = [f for f in r.findings if f.rule == "concentration-limit"]
    assert f.severity == "fail" and f.subject == "S/1" and f.basis == "declared"
    assert r.verdict == "pass"  # the schedule's own limit changes no code verdict
    assert evaluate(single(project_extra={"co2_limit": 2500})).findings == []


def test_multiple_zone_steady_state_matches_closed_form(evaluate):
    # Coupled well-mixed balance (Nazaroff & Alvarez-Cohen 2001, per zone): without filters or
    # losses C_s = C_out + (1 − x)·ΣGz/Vot and C_z = C_s + Gz/Vpz (x = Vot/Vps).
    zones = [{"id": str(i), "space": "office-space", "area": f"{a} ft2", "occupants": p,
              "height": "9 ft", "air_distribution": "ceiling-supply-cool",
              "primary_airflow": f"{v} cfm"} for i, (a, p, v) in
             enumerate([(2000, 12, 900), (1000, 20, 500), (600, 3, 200)])]
    r = evaluate(schedule([{"id": "M", "kind": "multiple-zone", "outdoor_air": "600 cfm",
                            "zones": zones}]))
    vpz = np.array([900, 500, 200]) * CFM
    g = np.array([12, 20, 3]) * N_OFFICE  # L/s of CO2
    vot = 600 * CFM
    cs = 420 + (1 - vot / vpz.sum()) * 1e6 * g.sum() / vot
    for z, gz, v in zip(r.systems[0].zones, g, vpz):
        assert z.dilution.value("C_ss") == pytest.approx(cs + 1e6 * gz / v, rel=1e-9)


def test_profile_gives_peak_and_average(evaluate):
    data = single({"profile": "am"})
    data["profiles"] = {"am": {"weekday": {"08:00-12:00": 1.0}}}
    r = evaluate(data)
    z = r.systems[0].zones[0]
    t = z.dilution
    # By hand from the well-mixed balance (C(t) = C_ss + (C0 − C_ss)·e^(−λt), common practice):
    # 100 people × N (N_OFFICE: Persily & de Jonge 2017 Table 4 at 20 °C) into Q = 620 cfm gives the
    # steady excess ΔC = 10⁶·G/Q; λ = Q/V. Occupied 08:00-12:00 from the outdoor level (the
    # 20 h decay before leaves e^(−20λ) ≈ 1e-16), the peak at 12:00 is ΔC·(1 − e^(−4λ)), and the
    # day's integral of the excess is ΔC·(4 − a/λ) + ΔC·a·(1 − e^(−20λ))/λ, a = 1 − e^(−4λ).
    q = 620 * CFM  # L/s
    d_c = 1e6 * N_OFFICE * 100 / q
    lam = q * 3.6 / (2000 * 10 * FT**3)  # 1/h
    a = 1 - math.exp(-4 * lam)
    assert t.value("ACH") == pytest.approx(lam, rel=1e-9)
    assert t.value("C_peak") == pytest.approx(420 + d_c * a, rel=1e-6)
    excess = d_c * (4 - a / lam) + d_c * a * (1 - math.exp(-20 * lam)) / lam
    assert t.value("C_twa") == pytest.approx(420 + excess / 24, rel=1e-6)
    # the exact peak bounds the minute-sampled series (sampling can only miss the top)
    assert t.value("C_peak") >= z.series.ppm.max() - 1e-9


def test_short_term_averaging_is_reported(evaluate):
    # Section 6.2.6.2 (from memory): with T = 3v/Vbz longer than the peak, the population may
    # be averaged over T; here v = 2000·30 ft3, Vbz = 620 cfm → T = 290 min against a 60 min peak.
    data = single({"profile": "brief", "height": "30 ft"})
    data["profiles"] = {"brief": {"weekday": {"10:00-11:00": 1.0}}}
    r = evaluate(data)
    t = r.systems[0].zones[0].dilution
    assert t.value("T") * 60 == pytest.approx(3 * 60000 / 620, rel=1e-9)
    (f,) = [f for f in r.findings if f.rule == "short-term-averaging"]
    assert f.severity == "info"
    assert t.value("Pz_avg") == pytest.approx(100 * 60 / (3 * 60000 / 620), rel=1e-2)


@pytest.mark.parametrize("height", ["3000 ft", "5e6 ft", "1e12 ft"])
def test_an_averaging_time_longer_than_the_day_is_the_mean_over_whole_days(evaluate, height):
    # Section 6.2.6.2 (from memory): the population averaged over T. The profile repeats each
    # day, so over T of k days and r minutes the largest average is (k·one day's sum + the
    # largest sum of r consecutive minutes) / T (arithmetic, common practice). Here one hour
    # at 1.0 in 24: a T of days gives about 1/24 of Pz; T = 3·v/Vbz with v = 2000 ft2 · height.
    data = single({"profile": "brief", "height": height})
    data["profiles"] = {"brief": {"weekday": {"10:00-11:00": 1.0}}}
    t = evaluate(data).systems[0].zones[0].dilution
    minutes = 3 * 2000 * float(height.split()[0]) / 620
    days, rest = divmod(round(minutes), 1440)
    expected = 100 * (days * 60 + min(rest, 60)) / round(minutes)
    assert t.value("T") * 60 == pytest.approx(minutes, rel=1e-9)
    assert t.value("Pz_avg") == pytest.approx(expected, rel=1e-9)


def test_largest_window_mean_against_a_brute_force_sum():
    # the sliding mean over a repeating day, summed term by term over the tiled profile
    # (plain Python arithmetic as the independent computation)
    from airgate.procedures.piecewise import largest_window_mean

    rng = np.random.default_rng(7)
    day = rng.random(50)
    for window in (1, 7, 49, 50, 51, 99, 100, 101, 377):
        tiled = list(day) * (window // 50 + 2)
        best = max(sum(tiled[i:i + window]) / window for i in range(50))
        assert largest_window_mean(day, float(window)) == pytest.approx(best, rel=1e-12)
    assert largest_window_mean(day, float("inf")) == pytest.approx(float(np.mean(day)))


def test_zone_without_height_has_no_dilution(evaluate):
    data = single()
    del data["systems"][0]["zones"][0]["height"]
    assert evaluate(data).systems[0].zones[0].dilution is None


def test_multiple_zone_capacity_reaches_the_intake_exactly(evaluate):
    # Derived (62.1-2019 Appendix A, detailed Ev): with zone j at P_max the required Vot equals
    # the scheduled intake; the check recomputes Vot through the engine with that population.
    zones = [{"id": str(i), "space": "office-space", "area": f"{a} ft2", "occupants": p,
              "height": "9 ft", "air_distribution": "ceiling-supply-cool",
              "primary_airflow": f"{v} cfm"} for i, (a, p, v) in
             enumerate([(2000, 12, 900), (1000, 20, 500), (600, 3, 200)])]
    data = schedule([{"id": "M", "kind": "multiple-zone", "outdoor_air": "600 cfm",
                      "ventilation_efficiency": "detailed", "zones": zones}])
    r = evaluate(data)
    p_max = r.systems[0].zones[1].dilution.value("P_max")
    assert p_max > 20
    data["systems"][0]["zones"][1]["occupants"] = p_max
    r2 = evaluate(data)
    assert r2.systems[0].trail.value("Vot") == pytest.approx(600 * CFM, rel=1e-6)


def test_weekend_variant_has_its_own_peak(evaluate):
    # A profile's weekend variant (issue contract): an empty weekend leaves the outdoor level;
    # a half-occupied weekend morning gives about half the weekday excess (linear balance,
    # Nazaroff & Alvarez-Cohen 2001 CMFR transient; four hours ≫ the time constant here).
    data = single({"profile": "p"}, outdoor_air="620 cfm")
    data["profiles"] = {"p": {"weekday": {"08:00-12:00": 1.0}, "weekend": {"08:00-12:00": 0.5}}}
    t = evaluate(data).systems[0].zones[0].dilution
    assert t.value("C_peak_weekend") - 420 == pytest.approx((t.value("C_peak") - 420) / 2,
                                                             rel=1e-9)
    data["profiles"]["p"]["weekend"] = {}
    t = evaluate(data).systems[0].zones[0].dilution
    assert t.value("C_peak_weekend") == pytest.approx(420)


def test_design_day_series_share_their_times_and_profile_samples(evaluate):
    # memory per zone: only the CO2 samples are the zone's own; the sample times and the
    # profile sampled at them are shared, read-only (docs/limits.md). The profile's value at
    # each minute is read off the profile itself (step function, common practice).
    data = single({"profile": "am"})
    zone2 = dict(data["systems"][0]["zones"][0], id="2")
    data["systems"].append({"id": "S2", "kind": "single-zone", "outdoor_air": "620 cfm",
                            "zones": [zone2]})
    data["profiles"] = {"am": {"weekday": {"08:00-12:00": 1.0}}}
    r = evaluate(data)
    a, b = (s.zones[0].series for s in r.systems)
    assert a.times is b.times and a.occupancy is b.occupancy
    assert not a.times.flags.writeable and not a.occupancy.flags.writeable
    minutes = np.arange(0, 24 * 60 + 1)
    expected = np.where((minutes >= 8 * 60) & (minutes < 12 * 60), 1.0, 0.0)
    assert np.array_equal(a.occupancy, expected)
    assert np.allclose(a.times * 60, minutes)
