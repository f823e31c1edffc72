"""The vectorised core of multiple-zone systems (airgate.procedures.multizone).

Two kinds of check:

- the core against a direct scalar computation of the ANSI/ASHRAE 62.1-2019 equations for hand
  cases (Section 6.2.2.1 Equation 6-1 Vbz = Rp·Pz + Ra·Az and Section 6.2.2.3 Equation 6-2
  Voz = Vbz/Ez, equation numbers from memory; Section 6.2.5 D = Ps/ΣPz,
  Vou = D·Σ(Rp·Pz) + Σ(Ra·Az), Vot = Vou/Ev and the simplified Ev; Normative Appendix A
  Zpz = Voz/Vpz, Xs = Vou/Vps, Evz = 1 + Xs − Zpz, its secondary-recirculation form and
  Ev = min Evz; the Ev table of ANSI/ASHRAE 62.1-2010 Table 6-3);
- the engine (which uses the core) against the per-zone path it replaced
  (``tests/scalar_multiple_zone.py``, zone by zone with scalar procedures) on every fixture
  schedule and every case of the built-in packs' tests: every trail step, finding and verdict.
"""

from __future__ import annotations

import dataclasses
import math
from pathlib import Path

import numpy as np
import pytest

from airgate.procedures import multizone as mz

import scalar_multiple_zone
from conftest import ROOT

# Table 6-1 (SI) office space: Rp 2.5 L/s·person, Ra 0.3 L/s·m²; conference: Rp 2.5, Ra 0.3;
# classroom (ages 9+): Rp 5, Ra 0.6 (ANSI/ASHRAE 62.1-2019 Table 6-1, SI values from memory).
RP = [2.5, 2.5, 5.0, 2.5, 5.0]
PZ = [10.0, 30.0, 25.0, 4.0, 0.0]
RA = [0.3, 0.3, 0.6, 0.3, 0.6]
AZ = [200.0, 60.0, 80.0, 40.0, 30.0]
EZ = [1.0, 0.8, 1.0, 0.8, 1.2]
VPZ = [500.0, 150.0, 300.0, 100.0, 60.0]
STARTS = [0, 3]


def _scalar(rp, pz, ra, az, ez, vpz, ps=None, vps=None, ep=None, er=None):
    """One system by the equations written out zone by zone (62.1-2019 Section 6.2.2, 6.2.5 and
    Appendix A): zone Vbz, Voz, Zpz, Evz and the system's D, Vou, Xs, detailed Ev, Vot."""
    n = len(rp)
    ep = ep or [None] * n
    er = er or [None] * n
    vbz = [rp[i] * pz[i] + ra[i] * az[i] for i in range(n)]  # Eq. 6-1
    voz = [vbz[i] / ez[i] for i in range(n)]  # Eq. 6-2
    sum_pz = sum(pz)
    ps = sum_pz if ps is None else ps
    d = ps / sum_pz if sum_pz > 0 else 1.0  # Section 6.2.5
    vou = d * sum(rp[i] * pz[i] for i in range(n)) + sum(ra[i] * az[i] for i in range(n))
    vps = sum(vpz) if vps is None else vps
    xs = vou / vps  # Appendix A
    zpz = [voz[i] / vpz[i] for i in range(n)]
    evz = []
    for i in range(n):
        if ep[i] is None:
            evz.append(1 + xs - zpz[i])  # Appendix A, single supply path
        else:
            p, r = ep[i], er[i] or 0.0
            fa, fb, fc = p + (1 - p) * r, p, 1 - (1 - ez[i]) * (1 - r) * (1 - p)
            evz.append((fa + xs * fb - zpz[i] * p * fc) / fa)  # Appendix A, secondary
    ev = min(evz)
    return dict(vbz=vbz, voz=voz, zpz=zpz, evz=evz, d=d, vou=vou, xs=xs, ev=ev,
                vot=vou / ev if ev > 0 else math.inf, critical=evz.index(ev))


def _check_system(f, k, start, hand):
    n = len(hand["vbz"])
    for name in ("vbz", "voz", "zpz", "evz"):
        assert getattr(f, name)[start:start + n] == pytest.approx(hand[name], rel=1e-14), name
    for name in ("d", "vou", "xs", "ev", "vot"):
        assert getattr(f, name)[k] == pytest.approx(hand[name], rel=1e-14), name
    assert f.critical[k] == start + hand["critical"]


def test_detailed_two_systems_in_one_pass_against_the_equations():
    f = mz.multiple_zone_figures(RP, PZ, RA, AZ, EZ, VPZ, STARTS)
    _check_system(f, 0, 0, _scalar(RP[:3], PZ[:3], RA[:3], AZ[:3], EZ[:3], VPZ[:3]))
    _check_system(f, 1, 3, _scalar(RP[3:], PZ[3:], RA[3:], AZ[3:], EZ[3:], VPZ[3:]))
    # by hand, the first system: Vou = (25 + 75 + 125) + (60 + 18 + 48) = 351 L/s,
    # Vps = 950 L/s, Xs = 0.369474; the conference room's Voz = (75 + 18)/0.8 = 116.25 L/s,
    # Zpz = 0.775, so Evz = 1 + 0.369474 − 0.775 = 0.594474 is the least (the office's Zpz is
    # 85/500 = 0.17, the classroom's 173/300 = 0.577): Vot = 351/0.594474 = 590.44 L/s
    assert f.vou[0] == pytest.approx(351.0)
    assert f.voz[1] == pytest.approx(116.25)
    assert f.ev[0] == pytest.approx(1 + 351 / 950 - 0.775)
    assert f.vot[0] == pytest.approx(590.44, abs=0.01)
    assert f.critical.tolist() == [1, 3]
    assert f.system.tolist() == [0, 0, 0, 1, 1]


def test_stated_population_and_primary_airflow():
    # Section 6.2.5: D = Ps/ΣPz with Ps stated; Appendix A: Xs = Vou/Vps with Vps stated.
    f = mz.multiple_zone_figures(RP, PZ, RA, AZ, EZ, VPZ, STARTS, ps=[40.0, 0.0],
                                 ps_stated=np.array([True, False]), vps=[0.0, 400.0],
                                 vps_stated=np.array([False, True]))
    _check_system(f, 0, 0, _scalar(RP[:3], PZ[:3], RA[:3], AZ[:3], EZ[:3], VPZ[:3], ps=40.0))
    _check_system(f, 1, 3, _scalar(RP[3:], PZ[3:], RA[3:], AZ[3:], EZ[3:], VPZ[3:], vps=400.0))
    assert f.d[0] == pytest.approx(40 / 65)


def test_secondary_recirculation_zones():
    # Appendix A, secondary recirculation (Fa = Ep + (1 − Ep)·Er, Fb = Ep,
    # Fc = 1 − (1 − Ez)(1 − Er)(1 − Ep); factor forms from memory): Ep 0.6, Er 0.5 on the
    # conference room; Ep = 1 elsewhere is the single path.
    ep, er = [1.0, 0.6, 1.0, 1.0, 1.0], [0.0, 0.5, 0.0, 0.0, 0.0]
    f = mz.multiple_zone_figures(RP, PZ, RA, AZ, EZ, VPZ, STARTS, ep=ep, er=er)
    hand = _scalar(RP[:3], PZ[:3], RA[:3], AZ[:3], EZ[:3], VPZ[:3], ep=[None, 0.6, None],
                   er=[None, 0.5, None])
    _check_system(f, 0, 0, hand)
    assert f.fa[1] == pytest.approx(0.8) and f.fb[1] == 0.6
    assert f.fc[1] == pytest.approx(1 - 0.2 * 0.5 * 0.4)


def test_simplified_method():
    # Section 6.2.5 simplified procedure: Ev = 0.88·D + 0.22 below D = 0.60, else 0.75 (from
    # memory; the coefficients are the pack's).
    f = mz.multiple_zone_figures(RP, PZ, RA, AZ, EZ, VPZ, STARTS, ps=[30.0, 4.0],
                                 ps_stated=True, method="simplified")
    d0 = 30 / 65
    assert f.ev[0] == pytest.approx(0.88 * d0 + 0.22)
    assert f.ev[1] == 0.75  # D = 4/4 = 1
    assert f.vot[0] == pytest.approx((d0 * 225 + 126) / (0.88 * d0 + 0.22))
    assert f.critical.tolist() == [-1, -1]


def test_table_method_with_and_without_its_fallback():
    # ANSI/ASHRAE 62.1-2010 Table 6-3: Ev against the largest Zp, interpolation permitted.
    rows = [(0.15, 1.0), (0.25, 0.9), (0.35, 0.8), (0.45, 0.7), (0.55, 0.6)]
    vpz = [2000.0, 700.0, 1500.0, 40.0, 60.0]  # first system: largest Zpz 116.25/700 = 0.166
    f = mz.multiple_zone_figures(RP, PZ, RA, AZ, EZ, vpz, STARTS, method="table", rows=rows)
    assert f.max_zpz[0] == pytest.approx(116.25 / 700)
    assert f.ev[0] == pytest.approx(1.0 - 0.1 * (116.25 / 700 - 0.15) / 0.1)
    assert f.critical[0] == 1
    # the second system's largest Zpz, (10 + 12)/0.8/40 = 0.6875, is above 0.55: the detailed Ev
    hand = _scalar(RP[3:], PZ[3:], RA[3:], AZ[3:], EZ[3:], vpz[3:])
    assert max(hand["zpz"]) > 0.55
    assert f.ev[1] == pytest.approx(hand["ev"]) and f.from_zones.tolist() == [False, True]
    assert f.critical[1] == 3 + hand["critical"]
    fixed = mz.multiple_zone_figures(RP, PZ, RA, AZ, EZ, vpz, STARTS, method="table", rows=rows,
                                     above_table=0.5)
    assert fixed.ev[1] == 0.5 and not fixed.from_zones.any()


def test_no_intake_suffices_where_ev_is_not_positive():
    # Vot = Vou/Ev needs Ev > 0 (Section 6.2.5); a zone with Zpz > 1 + Xs has Evz < 0: Vbz =
    # 93 L/s, Ez 0.5, Vpz 50 L/s gives Xs = 1.86, Zpz = 3.72, Evz = −0.86 (Appendix A).
    f = mz.multiple_zone_figures([2.5], [30.0], [0.3], [60.0], [0.5], [50.0], [0])
    assert f.ev[0] == pytest.approx(1 + 93 / 50 - 186 / 50)
    assert f.ev[0] < 0 and math.isinf(f.vot[0])


def test_a_zone_without_primary_airflow_has_no_zpz_and_leaves_vps_unknown():
    vpz = [500.0, 0.0, 300.0, 100.0, 60.0]
    f = mz.multiple_zone_figures(RP, PZ, RA, AZ, EZ, vpz, STARTS, method="simplified")
    assert np.isnan(f.zpz[1]) and np.isnan(f.vps[0]) and np.isnan(f.xs[0])
    assert f.vps[1] == 160.0  # ΣVpz of the second system (Appendix A)


def test_no_occupants_gives_diversity_one():
    # Section 6.2.5: D = Ps/ΣPz is undefined without occupants; the evaluation takes D = 1.
    f = mz.multiple_zone_figures([0.0], [0.0], [0.3], [100.0], [1.0], [100.0], [0])
    assert f.d[0] == 1.0 and f.vou[0] == pytest.approx(30.0)


@pytest.mark.parametrize("change, name", [
    (dict(ez=[1.0, 0.0, 1.0, 1.0, 1.0]), "ez"), (dict(pz=[1.0, -1.0, 0, 0, 0]), "pz"),
    (dict(starts=[1, 3]), "starts"), (dict(starts=[0, 3, 3]), "starts"),
    (dict(ps_stated=[1.0, 0.0]), "ps_stated"), (dict(method="fast"), "method"),
    (dict(ep=[0.0, 1, 1, 1, 1]), "ep"), (dict(vpz=[1.0, 2.0]), "vpz"),
])
def test_invalid_input_is_a_value_error_naming_it(change, name):
    # common practice: one invalid-input policy (DEVELOPERS.md, "Rules of the road")
    args = dict(rp=RP, pz=PZ, ra=RA, az=AZ, ez=EZ, vpz=VPZ, starts=STARTS) | change
    with pytest.raises(ValueError, match=name):
        mz.multiple_zone_figures(**args)


@pytest.mark.parametrize("change, name", [
    (dict(rp=[2.5, math.inf, 5.0, 2.5, 5.0]), "rp"), (dict(pz=[10.0, 30.0, math.inf, 4, 0]), "pz"),
    (dict(ra=[0.3, 0.3, 0.6, math.inf, 0.6]), "ra"), (dict(az=[math.inf, 60, 80, 40, 30]), "az"),
    (dict(vpz=[500.0, 150.0, 300.0, 100.0, math.inf]), "vpz"),
    (dict(rp=[0.0, 2.5, 5.0, 2.5, 5.0], pz=[math.inf, 30, 25, 4, 0]), "pz"),  # 0·inf is NaN
    (dict(az=[200.0, 60, 80, math.inf, 30], ps=[0.0, 0.0], ps_stated=True), "az"),
    (dict(pz=[10.0, 30.0, 25.0, 4.0, math.nan]), "pz"),
    (dict(starts=[0, 5]), "starts"), (dict(starts=[0.0, 3.0]), "starts"),
    (dict(starts=[0, 4, 3]), "starts"), (dict(starts=[]), "starts"),
    (dict(er=[0.0, 1.5, 0.0, 0.0, 0.0]), "er"), (dict(vps=[0.0, 10.0],
                                                     vps_stated=np.array([True, False])), "vps"),
])
def test_an_infinite_or_misplaced_input_is_named(change, name):
    # common practice: one invalid-input policy (DEVELOPERS.md, "Rules of the road"); an
    # infinite zone value is found from the sums it makes infinite or NaN, then named
    args = dict(rp=RP, pz=PZ, ra=RA, az=AZ, ez=EZ, vpz=VPZ, starts=STARTS) | change
    with pytest.raises(ValueError, match=f"^{name} must"):
        mz.multiple_zone_figures(**args)


def test_the_system_of_each_zone_and_the_shared_factors():
    # the reference is the computation as it was before (numpy indexing by each zone's system,
    # np.cumsum of the segment marks; Fa = Fb = Fc = 1 for single paths, Appendix A)
    starts = [0, 1, 4, 5, 9]
    n = 12
    rng = np.random.default_rng(7)
    rp, pz, ra, az = (rng.uniform(0, 10, n) for _ in range(4))
    ez, vpz = rng.uniform(0.5, 1.2, n), rng.uniform(50, 500, n)
    f = mz.multiple_zone_figures(rp, pz, ra, az, ez, vpz, starts)
    marks = np.zeros(n, dtype=np.intp)
    marks[starts[1:]] = 1
    system = np.cumsum(marks)
    assert f.system.tolist() == system.tolist()
    assert f.evz.tolist() == (1.0 + f.xs[system] - f.zpz).tolist()  # the same floats
    least = [min(f.evz[a:b]) for a, b in zip(starts, starts[1:] + [n])]
    assert f.ev.tolist() == least
    assert f.critical.tolist() == [a + int(np.argmin(f.evz[a:b]))
                                   for a, b in zip(starts, starts[1:] + [n])]
    assert (f.ev > 0).any() and (f.ev <= 0).any()  # both branches of Vot = Vou/Ev
    assert f.vot.tolist() == np.where(f.ev > 0, f.vou / f.ev, np.inf).tolist()
    assert f.fa.tolist() == f.fb.tolist() == f.fc.tolist() == [1.0] * n
    assert not f.fa.flags.writeable  # shared by every zone: never written through


def test_secondary_recirculation_without_er_draws_none_from_the_return():
    # Appendix A with Er = 0: Fa = Ep, Fb = Ep, Fc = 1 − (1 − Ez)(1 − Ep) (factor forms from
    # memory); er not given is Er = 0 for every zone
    ep = [1.0, 0.6, 1.0, 0.5, 1.0]
    f = mz.multiple_zone_figures(RP, PZ, RA, AZ, EZ, VPZ, STARTS, ep=ep)
    zero = mz.multiple_zone_figures(RP, PZ, RA, AZ, EZ, VPZ, STARTS, ep=ep, er=[0.0] * 5)
    for name in ("fa", "fb", "fc", "evz", "ev", "vot", "critical"):
        assert getattr(f, name).tolist() == getattr(zero, name).tolist(), name
    hand = _scalar(RP[:3], PZ[:3], RA[:3], AZ[:3], EZ[:3], VPZ[:3], ep=[None, 0.6, None])
    _check_system(f, 0, 0, hand)
    assert f.fa[1] == pytest.approx(0.6) and f.fc[1] == pytest.approx(1 - 0.2 * 0.4)


def test_table_method_above_the_table_in_one_system_of_several():
    # ANSI/ASHRAE 62.1-2010 Table 6-3 and its fallback (the detailed Ev, Appendix A) side by
    # side in one call: each system as if alone
    rows = [(0.15, 1.0), (0.25, 0.9), (0.35, 0.8), (0.45, 0.7), (0.55, 0.6)]
    vpz = [2000.0, 700.0, 1500.0, 40.0, 60.0]
    both = mz.multiple_zone_figures(RP + RP, PZ + PZ, RA + RA, AZ + AZ, EZ + EZ, vpz + vpz,
                                    [0, 3, 5, 8], method="table", rows=rows)
    one = mz.multiple_zone_figures(RP, PZ, RA, AZ, EZ, vpz, STARTS, method="table", rows=rows)
    assert both.ev.tolist() == one.ev.tolist() * 2
    assert both.from_zones.tolist() == [False, True] * 2
    assert both.critical.tolist() == one.critical.tolist() + (one.critical + 5).tolist()


def test_delivered_outdoor_air_by_zone_efficiency():
    # Appendix A's Evz ≥ Vou/Vot_design solved for Voz (derived): single path
    # Vpz·(1 + Xs − Vou/Vot_design); secondary Vpz·(Fa·(1 − Vou/Vot_design) + Xs·Fb)/(Ep·Fc).
    got = mz.delivered_by_zone_ev([300.0, 300.0, 300.0], 0.25, 250.0, [312.5, 312.5, 0.0],
                                  ep=[1.0, 0.6, 1.0], fa=[1.0, 0.8, 1.0], fb=[1.0, 0.6, 1.0],
                                  fc=[1.0, 0.96, 1.0], secondary=np.array([False, True, False]))
    assert got[0] == pytest.approx(300 * (1 + 0.25 - 0.8))
    assert got[1] == pytest.approx(300 * (0.8 * 0.2 + 0.25 * 0.6) / (0.6 * 0.96))
    assert got[2] == 0.0  # nothing scheduled
    assert mz.delivered_by_zone_ev(100.0, 0.1, 500.0, 400.0) == 0.0  # none left: shown as 0


def test_delivered_outdoor_air_by_system_efficiency():
    # Section 6.2.5: Vot = Vou/Ev; each zone's Voz in the ratio Vot_design/Vot (derived)
    got = mz.delivered_by_system_ev([100.0, 0.0, 50.0], [900.0, 900.0, 200.0],
                                    [1000.0, 0.0, 0.0])
    assert got.tolist() == [90.0, 0.0, 200.0]


# -- the engine against the per-zone path ----------------------------------------------------


def _schedules() -> list[Path]:
    files = [p for d in (ROOT / "fixtures" / "demo", ROOT / "fixtures" / "edge")
             for p in sorted(d.iterdir()) if p.suffix in (".yaml", ".json", ".csv", ".xlsx",
                                                           ".xml")]
    return [p for p in files if not p.name.endswith((".zones.csv", ".systems.csv",
                                                     ".profiles.csv", ".contaminants.csv"))]


def _pack_cases() -> list[Path]:
    return sorted((ROOT / "rules" / "tests").glob("*/*.yaml"))


@pytest.fixture
def per_zone(monkeypatch):
    """Evaluate with the per-zone path: the zones' Vbz and Voz and the multiple-zone kind's
    procedure replaced by the scalar reference for the duration of a call."""
    from airgate.evaluation import engine, system_kinds

    kind = system_kinds.SYSTEM_KINDS["multiple-zone"]
    scalar = dataclasses.replace(kind, evaluate=scalar_multiple_zone.multiple_zone)

    def zones(ctxs, pack, emitter):
        return [scalar_multiple_zone.evaluate_zone(c, pack, emitter) for c in ctxs]

    def run(fn, *args):
        with monkeypatch.context() as m:
            m.setitem(system_kinds.SYSTEM_KINDS, "multiple-zone", scalar)
            m.setattr(engine, "evaluate_zones", zones)
            return fn(*args)

    return run


def _same_trail(a, b, where):
    assert [s.symbol for s in a.steps.values()] == [s.symbol for s in b.steps.values()], where
    for x, y in zip(a.steps.values(), b.steps.values()):
        assert x._replace(value=0.0) == y._replace(value=0.0), (where, x.symbol)
        # sums over more than eight zones are summed in pairs by numpy: the last binary digit
        # may differ from a left-to-right sum (procedures/multizone.py)
        assert x.value == pytest.approx(y.value, rel=1e-12, abs=0), (where, x.symbol)


def _same_zones(za, zb, where):
    assert [z.id for z in za] == [z.id for z in zb]
    for x, y in zip(za, zb):
        _same_trail(x.trail, y.trail, f"{where}/{x.id}")
        assert x.verdict == y.verdict
        for name in ("dilution",):
            if getattr(x, name) is not None:
                _same_trail(getattr(x, name), getattr(y, name), f"{where}/{x.id} {name}")
        assert sorted(x.contaminants) == sorted(y.contaminants)
        for c in x.contaminants:
            _same_trail(x.contaminants[c], y.contaminants[c], f"{where}/{x.id} {c}")


def _same_reports(a, b) -> int:
    """Every system, condition, zone trail and finding equal; the multiple-zone systems seen."""
    assert [s.id for s in a.systems] == [s.id for s in b.systems]
    seen = 0
    for x, y in zip(a.systems, b.systems):
        seen += x.kind == "multiple-zone"
        _same_trail(x.trail, y.trail, x.id)
        assert (x.method, x.critical_zone, x.verdict, x.condition) == \
            (y.method, y.critical_zone, y.verdict, y.condition)
        _same_zones(x.zones, y.zones, x.id)
        assert [c.id for c in x.conditions] == [c.id for c in y.conditions]
        for c, d in zip(x.conditions, y.conditions):
            _same_trail(c.trail, d.trail, f"{x.id}@{c.id}")
            _same_zones(c.zones, d.zones, f"{x.id}@{c.id}")
            assert (c.method, c.critical_zone, c.verdict) == (d.method, d.critical_zone,
                                                              d.verdict)
            assert c.load == pytest.approx(d.load, rel=1e-12)
    assert [(f.rule, f.subject, f.severity, f.message, str(f.location), f.condition)
            for f in a.findings] == [(f.rule, f.subject, f.severity, f.message,
                                      str(f.location), f.condition) for f in b.findings]
    assert [(c.rule, c.subject, len(c.findings)) for c in a.cases] == \
        [(c.rule, c.subject, len(c.findings)) for c in b.cases]
    for c, d in zip(a.cases, b.cases):
        for x, y in ((c.required, d.required), (c.provided, d.provided)):
            assert (x is None) == (y is None) and (x is None or (
                x.kind == y.kind and x.value == pytest.approx(y.value, rel=1e-12))), c.rule
    return seen


def test_every_fixture_schedule_evaluates_as_by_the_per_zone_path(per_zone):
    from airgate import check
    from airgate.errors import AirgateError

    seen = 0
    for path in _schedules():
        try:
            a = check(path)
        except AirgateError:
            continue  # a fixture that does not evaluate as it stands (none is skipped silently:
            # the count below holds the multiple-zone systems that were compared)
        seen += _same_reports(a, per_zone(check, path))
    assert seen >= 2  # the demo's AHU-2 and AHU-3 at least, and their imported copies


def test_every_pack_case_evaluates_as_by_the_per_zone_path(per_zone):
    from airgate.api import packtests
    from airgate.errors import AirgateError
    from airgate.readers import layering
    from airgate.readers.document import load

    roots = layering.search_roots(())
    seen = cases = 0
    for path in _pack_cases():
        doc = load(path, packtests.PackTestError)
        if "error" in doc.data:
            continue  # a case whose run must stop with an error has no report
        pack_ref = doc.data.get("pack") or path.parent.name
        try:
            loaded = packtests._schedule(doc)
            _, a = packtests._run(loaded, pack_ref, roots)
        except AirgateError:
            continue
        _, b = per_zone(packtests._run, loaded, pack_ref, roots)
        seen += _same_reports(a, b)
        cases += 1
    assert cases >= 40 and seen >= 10


SPACES = ["office-space", "conference-meeting", "corridors", "libraries", "classrooms-age-9-plus",
          "occupiable-storage-rooms-for-dry-materials", "main-entry-lobbies"]
DISTRIBUTIONS = [None, "ceiling-supply-cool", "ceiling-supply-warm-ceiling-return-stratified",
                 "floor-supply-cool-ceiling-return-displacement"]


def _invented_schedule(seed: int) -> tuple[dict, str]:
    """An invented schedule of multiple-zone systems drawn at random (a fictional building),
    reaching each branch of the kind: stated or default occupants, stated Ps and Vps, Ep and Er,
    zones without Vpz, VAV, a short intake, each Ev method (the table with its fallback)."""
    rng = np.random.default_rng(seed)
    pack = "ashrae-62.1-2019-ev-table" if seed % 3 == 2 else "ashrae-62.1-2019"
    systems = []
    for k in range(int(rng.integers(1, 4))):
        method = "table" if pack.endswith("table") else str(rng.choice(["simplified", "detailed"]))
        zones = []
        for j in range(int(rng.integers(1, 13))):
            zone = {"id": f"{k}{j:02d}", "space": str(rng.choice(SPACES)),
                    "area": f"{rng.uniform(80, 3000):.0f} ft2"}
            if rng.random() < 0.6:
                zone["occupants"] = int(rng.integers(0, 60))
            dist = DISTRIBUTIONS[int(rng.integers(len(DISTRIBUTIONS)))]
            if dist:
                zone["air_distribution"] = dist
            if method != "simplified" or rng.random() < 0.7:
                zone["primary_airflow"] = f"{rng.uniform(60, 2500):.0f} cfm"
            if method != "simplified" and rng.random() < 0.25:
                zone["ep"] = round(float(rng.uniform(0.3, 1.0)), 2)
                if rng.random() < 0.7:
                    zone["er"] = round(float(rng.uniform(0.0, 1.0)), 2)
            zones.append(zone)
        system = {"id": f"AHU-{k}", "kind": "multiple-zone", "ventilation_efficiency": method,
                  "outdoor_air": f"{rng.uniform(50, 6000):.0f} cfm", "zones": zones}
        if rng.random() < 0.4:
            system["population"] = int(rng.integers(0, 300))
        if rng.random() < 0.3:
            system["supply_airflow"] = f"{rng.uniform(500, 20000):.0f} cfm"
        if method == "simplified" and rng.random() < 0.6:
            system["variable_air_volume"] = True
        systems.append(system)
    return {"schedule": 1, "rules": pack, "systems": systems,
            "project": {"name": f"Invented test building {seed}", "units": "IP"}}, pack


@pytest.mark.parametrize("seed", range(30))
def test_invented_schedules_evaluate_as_by_the_per_zone_path(seed, per_zone, tmp_path):
    # common practice: the same schedule through both paths; the expected values are the
    # per-zone code's (tests/scalar_multiple_zone.py), the equations of Section 6.2.5 and
    # Appendix A one zone at a time
    import yaml

    from airgate import check

    data, _ = _invented_schedule(seed)
    path = tmp_path / "invented.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    assert _same_reports(check(path), per_zone(check, path)) == len(data["systems"])
