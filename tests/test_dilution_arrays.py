"""The dilution analysis works out a system's zones together, over arrays: the change rates and
purge times, the DCV set points and the occupancy each zone can hold (P_max). Each is held here
to the one-zone-at-a-time computation it replaces, to the float: the same operations on each
element. Schedules are small invented portfolios from bench/synthetic.py."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pytest

from conftest import ROOT

sys.path.insert(0, str(ROOT / "bench"))

import synthetic  # noqa: E402

from airgate.api.core import evaluate, load_pack, load_schedule  # noqa: E402
from airgate.evaluation import capacity, dilution as co2  # noqa: E402
from airgate.evaluation.trail import Trail  # noqa: E402
from airgate.procedures import dilution  # noqa: E402


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    """Eight invented 12-zone VAV systems, every zone with a height (the dilution analysis on)."""
    path = synthetic.write(synthetic.vav_portfolio(96, per_system=12, heights=True),
                           Path(tmp_path_factory.mktemp("arrays")) / "district.json")
    return evaluate(load_schedule(path), load_pack("ashrae-62.1-2019"))


def _zones(report):
    return [(s, z) for s in report.systems for z in s.zones if z.dilution is not None]


def test_rates_of_a_list_are_those_of_each_zone_alone(report):
    # common practice: an elementwise array computation equals the scalar one per element
    trails = [z.dilution for _, z in _zones(report)]
    assert len(trails) > 50
    together = co2.rate_values(trails, coupled=True)
    for t, values in zip(trails, together):
        assert co2.rate_values([t], coupled=True)[0] == values
        lam = float(dilution.loss_rate(t.value("V"), t.value("Q_oa")))
        assert values[0] == lam == t.value("ACH")
        assert values[3] == float(dilution.time_to_fraction_removed(lam, 0.99)) == t.value("t99")


def test_purge_time_of_a_list_cdc_table_b1():
    # CDC 2003, Guidelines for Environmental Infection Control in Health-Care Facilities,
    # Appendix B, Table B.1: 6 ACH removes 99 % in 46 min and 99.9 % in 69 min; 12 ACH in 23
    # and 35 min
    trails = []
    for ach in (6.0, 12.0):
        t = Trail()
        t.add("V", 100.0, "volume")
        t.add("Q_oa", ach * 100.0 / 3.6, "airflow")  # λ = 3.6·Q/V [1/h], Q in L/s, V in m³
        trails.append(t)
    (_, _, _, t99_6, t999_6), (_, _, _, t99_12, t999_12) = co2.rate_values(trails)
    assert [round(60 * x) for x in (t99_6, t999_6, t99_12, t999_12)] == [46, 69, 23, 35]


def test_no_outdoor_air_gives_no_times():
    # a zone without outdoor air has no decay (λ = 0): no time constant or purge time
    t = Trail()
    t.add("V", 50.0, "volume")
    t.add("Q_oa", 0.0, "airflow")
    lam, mu, *times = co2.rate_values([t])[0]
    assert lam == 0.0 and mu == 0.0 and all(math.isnan(x) for x in times)


def test_dcv_set_points_of_a_list_are_those_of_each_zone_alone(report):
    # Nazaroff & Alvarez-Cohen (2001), CMFR steady state: C = C_out + 10⁶·N/(Voz/Pz)
    pairs = _zones(report)
    trails, zones = [z.dilution for _, z in pairs], [z for _, z in pairs]
    for t, z, setpoint in zip(trails, zones, co2.dcv_values(trails, zones)):
        if setpoint is None:
            assert "C_dcv" not in t and (t.value("Pz") <= 0 or z.trail.value("Voz") <= 0)
            continue
        per_person = z.trail.value("Voz") / t.value("Pz")
        assert setpoint == float(dilution.dcv_setpoint_ppm(t.value("C_out"), t.value("N"),
                                                           per_person)) == t.value("C_dcv")


def test_dcv_set_point_worked_example():
    # 420 ppm outdoors, 0.0048 L/s of CO2 per person (an office occupant, Persily & de Jonge
    # 2017 Table 4, rounded), 7.5 L/s per person: 420 + 10⁶·0.0048/7.5 = 1060 ppm
    t = Trail()
    for symbol, value, kind in (("C_out", 420.0, "concentration_ppm"),
                                ("N", 0.0048, "gas_generation"), ("Pz", 2.0, "people")):
        t.add(symbol, value, kind)

    class Zone:
        trail = Trail()

    Zone.trail.add("Voz", 15.0, "airflow")
    assert co2.dcv_values([t], [Zone])[0] == pytest.approx(1060.0, rel=1e-12)


def _vot_with(system_trail, zones, j: int, people: float) -> float:
    """Required Vot of a detailed-Ev system if zone j held ``people`` (D held) [L/s], one zone at a
    time: ANSI/ASHRAE 62.1-2019 Section 6.2.5 and Appendix A (Vou = D·ΣRp·Pz + ΣRa·Az,
    Xs = Vou/Vps, Ev = min(1 + Xs − Zpz), Vot = Vou/Ev)."""
    zt = zones[j].trail
    rp, ra, az, ez = (zt.value(s) for s in ("Rp", "Ra", "Az", "Ez"))
    d = system_trail.value("D")
    vou = d * (system_trail.value("Σ(Rp·Pz)") + rp * (people - zt.value("Pz"))) + \
        system_trail.value("Σ(Ra·Az)")
    xs = vou / system_trail.value("Vps")
    zpz = np.array([z.trail.value("Zpz") for z in zones])
    zpz[j] = (rp * people + ra * az) / ez / zt.value("Vpz")
    ev = float(np.min(1 + xs - zpz))
    return vou / ev if ev > 0 else math.inf



def _reference_p_max(system_trail, zones, j, target):
    """P_max of zone j as it was computed one zone at a time: the bound doubled from
    max(1, Pz), then 80 bisections on Vot(P) (62.1-2019 Appendix A, detailed Ev, derived)."""
    if _vot_with(system_trail, zones, j, 0.0) > target:
        return None
    lo, hi = 0.0, max(1.0, zones[j].trail.value("Pz"))
    while _vot_with(system_trail, zones, j, hi) <= target and hi < 1e7:
        hi *= 2
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if _vot_with(system_trail, zones, j, mid) <= target else (lo, mid)
    return lo


def test_p_max_of_every_zone_at_once_equals_one_at_a_time(report):
    checked = 0
    for s in report.systems:
        if s.method != "detailed":
            continue
        intake = s.trail.value("Vot_design")  # the scheduled intake
        for j, z in enumerate(s.zones):
            if z.dilution is None or z.trail.value("Rp") <= 0:
                continue
            expected = _reference_p_max(s.trail, s.zones, j, intake)
            if expected is None:
                assert "P_max" not in z.dilution
                assert any(z.id in note for note in s.notes)
            else:
                assert z.dilution.value("P_max") == expected
                checked += 1
    assert checked > 20


def test_p_max_holds_the_intake(report):
    # 62.1-2019 Appendix A (derived): at P_max the required Vot is within the scheduled
    # intake, and one more person would exceed it
    for s in report.systems:
        for j, z in enumerate(s.zones):
            if z.dilution is None or "P_max" not in z.dilution:
                continue
            p = z.dilution.value("P_max")
            intake = s.trail.value("Vot_design")
            assert _vot_with(s.trail, s.zones, j, p) <= intake
            if p < 1e7:
                assert _vot_with(s.trail, s.zones, j, p + 1.0) > intake


def test_the_largest_zpz_of_the_others(report):
    # the least Ev with zone j changed uses the largest Zpz of the other zones
    for s in report.systems[:3]:
        zpz = [z.trail.value("Zpz") for z in s.zones]
        occupied = capacity._Occupied(s.trail, s.zones, np.arange(len(s.zones)))
        assert occupied.others_max.tolist() == [max(zpz[:j] + zpz[j + 1:])
                                                for j in range(len(zpz))]


def test_steps_share_their_repeated_texts(report):
    # the notes and citations many zones repeat are one string each (memory, common practice)
    notes = {}
    for _, z in _zones(report):
        for step in z.dilution.steps.values():
            if step.note:
                assert notes.setdefault(step.note, step.note) is step.note
    assert len(notes) < 60
