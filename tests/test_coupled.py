"""Tests of airgate.procedures.coupled (multiple-zone recirculating system).

Each check names its source: the completely mixed flow reactor (CMFR) material balance of
Nazaroff & Alvarez-Cohen, Environmental Engineering Science (Wiley, 2001), applied by hand to
zones mixed through the return air ("hand derivation" below); the multiple-zone equations of
ANSI/ASHRAE Standard 62.1-2019 Section 6.2.5 and Normative Appendix A; or an outside numerical
reference (numpy.linalg.solve, scipy.integrate.solve_ivp, scipy.integrate.quad).
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp

from airgate.procedures import coupled, coupled_modes

from conftest import examples
from in_m3h import in_m3h

cpl = in_m3h(coupled)  # scenarios in m³/h; the procedures take L/s (tests/in_m3h.py)

LS_TO_M3H = 3.6  # 1 L/s = 3.6 m3/h (exact)


def _physics_rhs(vol, vpz, vot, exh, loss, c_out, eta_oa, eta_rec):
    """Right-hand side written from the module's physical description (zone balances, mixed
    return, mixed supply), independently of the engine's coupling weights."""
    vps = vpz.sum()
    ret = vpz - exh
    big_r = ret.sum()

    def supply(c):
        c_r = ret @ c / big_r if big_r > 0 else 0.0
        return (vot * (1 - eta_oa) * c_out + (vps - vot) * (1 - eta_rec) * c_r) / vps

    def rhs(_t, c, gen):
        return (gen + vpz * supply(c) - (vpz + loss) * c) / vol

    return rhs, supply



def _assert_agrees(got, ref):
    """1e-9 relative, with an absolute floor of 1e-12 × the case's largest value for the
    values near zero, where the reference's own error (~its rtol of 1e-12) dominates."""
    np.testing.assert_allclose(got, ref, rtol=1e-9, atol=1e-12 * max(np.abs(ref).max(), 1e-300))

def _reference_transient(breaks, gen, vol, vpz, vot, exh, loss, c0, times, c_out=0.0,
                         eta_oa=0.0, eta_rec=0.0):
    """scipy.integrate.solve_ivp (LSODA, rtol=1e-12), piece by piece: the outside reference.
    Per-piece inputs are 2-D (zone) or 1-D (system) arrays indexed by piece."""
    n_p = breaks.size - 1

    def at(x, j, zone):
        x = np.asarray(x, dtype=float)
        return x[j] if x.ndim == (2 if zone else 1) else x

    out = np.empty((times.size, np.size(vol)))
    sup = np.empty(times.size)
    c = np.broadcast_to(np.asarray(c0, dtype=float), np.shape(vol)).copy()
    for j in range(n_p):
        z = [np.broadcast_to(at(a, j, True), np.shape(vol)) for a in (gen, vpz, exh, loss)]
        rhs, supply = _physics_rhs(vol, z[1], at(vot, j, False), z[2], z[3],
                                   at(c_out, j, False), eta_oa, eta_rec)
        last = j == n_p - 1
        sel = (times >= breaks[j]) & ((times < breaks[j + 1]) | (last & (times <= breaks[j + 1])))
        t_eval = np.unique(np.concatenate((times[sel], [breaks[j + 1]])))
        scale = max(np.abs(c).max(), (z[0] * (breaks[j + 1] - breaks[j]) / vol).max(),
                    np.max(c_out), 1e-9)
        sol = solve_ivp(rhs, (breaks[j], breaks[j + 1]), c, method="LSODA", rtol=1e-12,
                        atol=1e-18 * scale, t_eval=t_eval, args=(z[0],))
        out[sel] = sol.y[:, : sel.sum()].T
        sup[sel] = [supply(col) for col in sol.y[:, : sel.sum()].T]
        c = sol.y[:, -1]
    return out, sup


# --------------------------------------------------------------------------- steady state


def test_steady_state_no_filter_closed_form():
    # Hand derivation from the CMFR balance (Nazaroff & Alvarez-Cohen 2001) of each zone and
    # of the mixed return: with no filter and no losses, C_s = C_out + (1 − x)·ΣGz/Vot and
    # C_z = C_s + Gz/Vpz, x = Vot/Vps.
    rng = np.random.default_rng(62)
    vpz = rng.uniform(200, 3000, 15)
    gen = rng.uniform(0, 1e5, 15)
    vot, c_out = 0.3 * vpz.sum(), 415.0
    res = cpl.coupled_steady_state(gen, 100.0, vpz, vot, c_out)
    x = vot / vpz.sum()
    c_s = c_out + (1 - x) * gen.sum() / vot
    assert res.supply == pytest.approx(c_s, rel=1e-13)
    np.testing.assert_allclose(res.zone, c_s + gen / vpz, rtol=1e-13)
    # the mixed return is the Vpz-weighted zone mean
    assert res.mixed_return == pytest.approx(vpz @ res.zone / vpz.sum(), rel=1e-13)


def test_steady_state_matches_dense_linear_solve():
    # O(N) closed form against numpy.linalg.solve (outside reference) of the same balances
    # written with explicit unknowns [C_1..C_N, C_r, C_s]: zones, mixed return, mixed supply.
    rng = np.random.default_rng(5)
    for n in (1, 2, 7, 40):
        vol = rng.uniform(30, 600, n)
        vpz = rng.uniform(100, 2500, n)
        exh = np.where(rng.random(n) < 0.4, vpz * rng.uniform(0, 1, n), 0.0)
        vot = max(exh.sum(), rng.uniform(0.05, 1.0) * vpz.sum())
        vot = min(vot, vpz.sum())
        cadr, kd, ki = rng.uniform(0, 400, n), rng.uniform(0, 2, n), 0.3
        gen = rng.uniform(0, 1e4, n)
        c_out, eta_oa, eta_rec = 11.0, 0.35, 0.8
        res = cpl.coupled_steady_state(gen, vol, vpz, vot, c_out, eta_oa, eta_rec, exh, cadr,
                                       kd, ki)
        ret, vps = vpz - exh, vpz.sum()
        a = np.zeros((n + 2, n + 2))
        rhs = np.zeros(n + 2)
        a[:n, :n] = -np.diag(vpz + cadr + (kd + ki) * vol)
        a[:n, n + 1] = vpz
        rhs[:n] = -gen
        a[n, :n], a[n, n] = -ret, ret.sum()
        a[n + 1, n], a[n + 1, n + 1] = -(vps - vot) * (1 - eta_rec), vps
        rhs[n + 1] = vot * (1 - eta_oa) * c_out
        dense = np.linalg.solve(a, rhs)
        np.testing.assert_allclose(res.zone, dense[:n], rtol=1e-11)
        assert res.supply == pytest.approx(dense[n + 1], rel=1e-11)
        assert res.mixed_return == pytest.approx(dense[n], rel=1e-11)


def test_steady_state_is_linear_time_and_memory_for_200k_zones():
    # O(N): 200,000 zones on one air handler (a dense matrix would need 320 GB), checked
    # against the hand-derived closed form of the first test (CMFR balance, Nazaroff &
    # Alvarez-Cohen 2001).
    n = 200_000
    vpz = np.linspace(300.0, 900.0, n)
    gen = np.linspace(0.0, 50.0, n)
    vot = 0.25 * vpz.sum()
    res = cpl.coupled_steady_state(gen, 50.0, vpz, vot)
    c_s = 0.75 * gen.sum() / vot
    assert res.supply == pytest.approx(c_s, rel=1e-11)
    np.testing.assert_allclose(res.zone, c_s + gen / vpz, rtol=1e-11)


def test_supply_coupling_weights():
    # Hand derivation of the mixing box (a CMFR balance without volume, Nazaroff &
    # Alvarez-Cohen 2001): Σw = (1 − η_rec)(1 − x) without exhaust, a = x(1 − η_oa)C_out.
    vpz = np.array([400.0, 600.0, 1000.0])
    a, w = cpl.supply_coupling(vpz, 500.0, 20.0, 0.5, 0.6)
    assert a == pytest.approx(0.25 * 0.5 * 20.0)
    np.testing.assert_allclose(w, 0.4 * 0.75 * vpz / vpz.sum(), rtol=1e-15)
    a, w = cpl.supply_coupling(vpz, 500.0, zone_exhaust=[400.0, 0.0, 0.0])
    np.testing.assert_allclose(w, [0.0, 0.75 * 600 / 1600, 0.75 * 1000 / 1600], rtol=1e-15)


def test_full_outdoor_air_system_uncouples_zones():
    # 100 % outdoor-air system (ANSI/ASHRAE 62.1-2019 Section 6.2.4): Vot = ΣVpz, so each zone
    # is a single zone with Q_oa = Vpz, whose CMFR steady state is C_ss = G/Q_oa + C_out
    # (Nazaroff & Alvarez-Cohen 2001).
    vpz = np.array([300.0, 800.0])
    res = cpl.coupled_steady_state([600.0, 400.0], 100.0, vpz, vpz.sum(), 3.0)
    np.testing.assert_allclose(res.zone, 3.0 + np.array([600.0, 400.0]) / vpz, rtol=1e-14)


def test_one_zone_system_is_the_single_zone_balance():
    # One zone with Vot of outdoor air and Vpz − Vot recirculated through η_rec is the single
    # well-mixed zone (common practice), written out here: λ·V = Vot + η_rec·(Vpz − Vot) + CADR
    # + k·V, C_ss = (G + Vot·(1 − η_oa)·C_out)/(λ·V), and piece by piece
    # C(t) = C_ss + (C_start − C_ss)·e^(−λ(t − t_start)).
    v, vpz, vot, g = 150.0, 1200.0, 300.0, 2500.0
    kw = dict(outdoor_concentration=9.0, outdoor_filter_efficiency=0.3)
    lam_v = vot + 0.7 * (vpz - vot) + 50.0 + 0.2 * v
    c_ss = (g + vot * 0.7 * 9.0) / lam_v
    res = cpl.coupled_steady_state([g], v, [vpz], vot, 9.0, 0.3, 0.7, 0.0, 50.0, 0.2)
    assert res.zone[0] == pytest.approx(c_ss, rel=1e-13)
    breaks, times = np.array([0.0, 2.0, 5.0]), np.linspace(0, 5, 11)
    gen = np.array([[g], [0.2 * g]])
    lam = lam_v / v
    ss = [(gen_j + vot * 0.7 * 9.0) / lam_v for gen_j in (g, 0.2 * g)]
    at_2 = ss[0] + (4.0 - ss[0]) * np.exp(-lam * 2.0)
    by_hand = np.where(times <= 2.0, ss[0] + (4.0 - ss[0]) * np.exp(-lam * times),
                       ss[1] + (at_2 - ss[1]) * np.exp(-lam * (times - 2.0)))
    many = cpl.coupled_piecewise_transient(breaks, gen, [v], [vpz], vot, 4.0, times,
                                           recirc_filter_efficiency=0.7, cadr=50.0,
                                           k_deposition=0.2, **kw)
    np.testing.assert_allclose(many.zone[:, 0], by_hand, rtol=1e-12)


def test_air_balance_is_enforced():
    # Air balance of the module model: ΣE_z <= Vot <= ΣVpz and E_z <= Vpz (conservation of
    # air mass; common practice).
    with pytest.raises(ValueError, match="air balance"):
        cpl.coupled_steady_state([1.0, 1.0], 10.0, [100.0, 100.0], 250.0)
    with pytest.raises(ValueError, match="air balance"):
        cpl.coupled_steady_state([1.0, 1.0], 10.0, [100.0, 100.0], 50.0, zone_exhaust=[80.0, 0])
    with pytest.raises(ValueError, match="exceed"):
        cpl.coupled_steady_state([1.0, 1.0], 10.0, [100.0, 100.0], 150.0, zone_exhaust=[120.0, 0])
    with pytest.raises(ValueError, match="removes nothing"):
        cpl.coupled_steady_state([1.0, 1.0], 10.0, [100.0, 100.0], 0.0)


# --------------------------------------------------------------------------- detailed Ev


zone_strategy = st.tuples(
    st.sampled_from([0.0, 2.5, 3.8, 5.0, 10.0]),  # Rp, L/s·person (ANSI/ASHRAE 62.1-2019 Table 6-1, SI)
    st.integers(0, 150),  # Pz
    st.sampled_from([0.3, 0.6, 0.9]),  # Ra, L/s·m2 (ANSI/ASHRAE 62.1-2019 Table 6-1, SI)
    st.floats(5.0, 2000.0),  # Az, m2
    st.floats(0.05, 1.0),  # Zpz = Vbz/Vpz (Ez = 1)
)


@settings(max_examples=examples(1.5))
@given(zones=st.lists(zone_strategy, min_size=1, max_size=25), k=st.floats(1e-3, 1e4))
def test_detailed_ev_intake_gives_critical_zone_its_single_zone_concentration(zones, k):
    # ANSI/ASHRAE 62.1-2019 Section 6.2.2 and 6.2.5 and Normative Appendix A: Vbz = Rp·Pz +
    # Ra·Az, D = 1, Ez = 1 (Voz = Vbz), Vou = ΣVbz, Xs = Vou/Vps, Zpz = Voz/Vpz, Ev = 1 + Xs −
    # max Zpz, Vot = Vou/Ev. With Gz = k·Vbz the critical zone reaches exactly k (= G/Vbz with
    # clean air, the CMFR steady state) and no zone exceeds it.
    rp, pz, ra, az, zpz = (np.array(col, dtype=float) for col in zip(*zones))
    vbz = rp * pz + ra * az
    vpz = vbz / zpz
    vou, vps = vbz.sum(), vpz.sum()
    ev = 1 + vou / vps - zpz.max()
    vot = vou / ev
    res = cpl.coupled_steady_state(k * vbz * LS_TO_M3H, 100.0, vpz * LS_TO_M3H, vot * LS_TO_M3H)
    assert res.zone[np.argmax(zpz)] == pytest.approx(k, rel=1e-12)
    assert res.zone.max() <= k * (1 + 1e-12)
    # each zone: C_z = k·(1 − max Zpz + Zpz)  (hand derivation from the same closed form)
    np.testing.assert_allclose(res.zone, k * (1 - zpz.max() + zpz), rtol=1e-11)


# --------------------------------------------------------------------------- transients


def _case(name, rng):
    n = {"random": 6, "vav": 5, "exhausted-and-identical": 6, "outdoor-air-only": 4,
         "forty-zones": 40}[name]
    vol = rng.uniform(30, 400, n)
    vpz = rng.uniform(150, 2500, n)
    exh = np.where(rng.random(n) < 0.3, vpz * rng.uniform(0, 0.9, n), 0.0)
    if name == "exhausted-and-identical":
        vol[1:4], vpz[1:4], exh[:] = 120.0, 700.0, 0.0
        exh[0] = vpz[0]  # a room whose air all leaves by exhaust
    vot = max(exh.sum(), 0.25 * vpz.sum())
    if name == "outdoor-air-only":
        exh[:], vot = 0.0, vpz.sum()
    if name == "vav":
        vpz = vpz * rng.uniform(0.3, 1.0, (4, n))  # zone primary airflow reset per piece
        vot, exh = 0.3 * vpz.sum(axis=1), 0.0
    loss = rng.uniform(0, 300, n)
    return vol, vpz, vot, exh, loss


@pytest.mark.parametrize(("name", "seed"), [("random", 1), ("vav", 2),
                                            ("exhausted-and-identical", 3),
                                            ("outdoor-air-only", 4), ("forty-zones", 5)])
def test_coupled_transient_matches_solve_ivp(name, seed):
    # scipy.integrate.solve_ivp (LSODA, rtol=1e-12) as outside reference, 1e-9 relative;
    # generation per piece, filters, losses, exhaust, VAV airflows reset per piece.
    rng = np.random.default_rng(seed)
    vol, vpz, vot, exh, loss = _case(name, rng)
    n = vol.size
    breaks = np.array([0.0, 0.75, 2.0, 4.5, 8.0])
    gen = rng.uniform(0, 2e4, (4, n)) * (rng.random((4, n)) < 0.8)
    c0 = rng.uniform(0, 40, n)
    times = np.sort(np.concatenate((rng.uniform(0, 8, 40), breaks)))
    got = cpl.coupled_piecewise_transient(breaks, gen, vol, vpz, vot, c0, times,
                                          outdoor_concentration=6.0,
                                          outdoor_filter_efficiency=0.4,
                                          recirc_filter_efficiency=0.55, zone_exhaust=exh,
                                          cadr=loss)
    ref, ref_supply = _reference_transient(breaks, gen, vol, vpz, vot, exh, loss, c0, times,
                                           6.0, 0.4, 0.55)
    _assert_agrees(got.zone, ref)
    np.testing.assert_allclose(got.supply, ref_supply, rtol=1e-9)


def _zero_or(low, top):
    """Zero or a physical magnitude (no subnormal inputs that only stress the reference)."""
    return st.one_of(st.just(0.0), st.floats(low, top))


coupled_zone = st.tuples(
    st.floats(10.0, 2000.0),  # volume, m3
    st.floats(50.0, 5000.0),  # Vpz, m3/h
    st.sampled_from([0.0, 0.0, 0.5, 1.0]),  # exhaust as a fraction of Vpz
    _zero_or(1e-3, 500.0),  # CADR, m3/h
    _zero_or(1e-3, 1e4),  # generation, C·m3/h
)


@settings(max_examples=examples(0.3))
@given(zones=st.lists(coupled_zone, min_size=1, max_size=6),
       copies=st.integers(1, 3),
       oa_share=_zero_or(1e-3, 1.0),
       eta_rec=st.sampled_from([0.0, 0.3, 0.9]),
       c0=_zero_or(1e-3, 100.0))
def test_coupled_transient_random_systems_match_solve_ivp(zones, copies, oa_share, eta_rec, c0):
    # Random systems (some zones repeated, some fully exhausted) against
    # scipy.integrate.solve_ivp (LSODA, rtol=1e-12) as outside reference, 1e-9 relative.
    vol, vpz, exh_frac, cadr, gen = (np.tile(np.array(c, dtype=float), copies)
                                     for c in zip(*zones))
    exh = exh_frac * vpz
    vot = exh.sum() + oa_share * (vpz.sum() - exh.sum())
    if vot <= 0 and eta_rec == 0 and cadr.sum() == 0:
        cadr = cadr + 10.0  # a system that removes nothing has no steady state
    breaks = np.array([0.0, 0.5, 2.0, 3.0])
    gens = np.stack([gen, 0.1 * gen, gen[::-1]])
    times = np.linspace(0.0, 3.0, 13)
    got = cpl.coupled_piecewise_transient(breaks, gens, vol, vpz, vot, c0, times,
                                          outdoor_concentration=2.0,
                                          recirc_filter_efficiency=eta_rec, zone_exhaust=exh,
                                          cadr=cadr)
    ref, _ = _reference_transient(breaks, gens, vol, vpz, vot, exh, cadr, c0, times, 2.0,
                                  0.0, eta_rec)
    _assert_agrees(got.zone, ref)


def test_coupled_transient_near_resonance_matches_solve_ivp():
    # A fully exhausted room identical to a room that returns a millionth of its air: the rate
    # of a zone that returns no air almost equal to a mode rate, where any formula in
    # 1/(d_z − ν_i) loses its digits. scipy.integrate.solve_ivp (LSODA, rtol=1e-12) as
    # outside reference, 1e-9 relative.
    vol, vpz = np.array([100.0, 100.0, 60.0, 200.0]), np.array([500.0, 500.0, 800.0, 300.0])
    exh = np.array([500.0, 500.0 * (1 - 1e-6), 0.0, 0.0])
    vot = exh.sum() + 100.0
    breaks, times = np.array([0.0, 1.0, 5.0]), np.linspace(0.0, 5.0, 21)
    gen = np.array([[100.0, 50.0, 300.0, 10.0], [0.0, 80.0, 30.0, 0.0]])
    c0 = np.array([5.0, 1.0, 0.0, 2.0])
    got = cpl.coupled_piecewise_transient(breaks, gen, vol, vpz, vot, c0, times,
                                          outdoor_concentration=3.0,
                                          recirc_filter_efficiency=0.2, zone_exhaust=exh)
    ref, _ = _reference_transient(breaks, gen, vol, vpz, vot, exh, 0.0, c0, times, 3.0, 0.0,
                                  0.2)
    _assert_agrees(got.zone, ref)


def test_unsorted_uneven_output_times_and_a_very_fast_zone_match_solve_ivp():
    # Output times in any order and of uneven spacing, and one zone thousands of times faster
    # than the rest (a tiny plenum-like volume), against scipy.integrate.solve_ivp (LSODA,
    # rtol=1e-12, given the times sorted) as outside reference, 1e-9 relative.
    rng = np.random.default_rng(5)
    vol, vpz, exh, cadr, vot = _distinct_system(rng, 12)
    vol[3] = 0.05  # Vpz/V of order 10^4 per hour
    breaks = np.array([0.0, 0.3, 2.0, 5.0])
    gen = rng.uniform(0, 2e3, (3, 12))
    times = rng.permutation(np.concatenate((rng.uniform(0, 5, 25), [0.0, 0.3, 5.0])))
    got = cpl.coupled_piecewise_transient(breaks, gen, vol, vpz, vot, 1.0, times,
                                          outdoor_concentration=2.0, zone_exhaust=exh,
                                          cadr=cadr)
    order = np.argsort(times)
    ref, _ = _reference_transient(breaks, gen, vol, vpz, vot, exh, cadr, 1.0, times[order],
                                  2.0)
    _assert_agrees(got.zone[order], ref)


@pytest.mark.parametrize("chunk", [1 << 21, 21, 14])
def test_runs_of_shared_modes_and_pieces_without_outputs_match_solve_ivp(monkeypatch, chunk):
    # The pieces that share one set of modes (airflows and losses unchanged) are evaluated
    # together: airflows A, A, A, B, B, C over six pieces, losses changed at piece 4 (four
    # runs), output times in some pieces only (pieces 1 and 3 have none, so their end
    # states carry the trajectory), and, with blocks of 21 values (three rows of seven zones), output blocks that straddle
    # pieces; with blocks of 14, a run of three pieces has its end states made one piece at a
    # time. Checked against scipy.integrate.solve_ivp (LSODA, rtol=1e-12) as outside
    # reference, 1e-9 relative, and against restarting the solution at every break from the
    # state it reached there (an exact solution of a piecewise-constant linear system
    # composes piece by piece: common practice), 1e-12 relative.
    monkeypatch.setattr(coupled_modes, "_CHUNK", chunk)
    rng = np.random.default_rng(23)
    vol, vpz_a, exh, cadr, _ = _distinct_system(rng, 7, n_types=4)
    vpz = np.stack([vpz_a, vpz_a, vpz_a, 0.6 * vpz_a, 0.6 * vpz_a, 1.3 * vpz_a])
    exh = np.tile(exh, (6, 1))
    exh[:, 0] = vpz[:, 0]  # one room whose air all leaves by exhaust (a zone that returns none)
    vot = 0.35 * vpz.sum(axis=1) + exh.sum(axis=1)
    cadr = np.tile(cadr, (6, 1))
    cadr[4:] += 40.0  # piece 4: the airflows of piece 3, other losses (new modes all the same)
    breaks = np.array([0.0, 0.5, 1.25, 2.0, 3.5, 4.0, 6.0])
    gen = rng.uniform(0, 3e3, (6, 7))
    times = rng.permutation(np.concatenate((rng.uniform(0.0, 0.5, 8), rng.uniform(1.25, 2.0, 5),
                                            rng.uniform(3.5, 4.0, 4), rng.uniform(4.0, 6.0, 8),
                                            [6.0])))
    c_out = np.array([3.0, 5.0, 1.0, 4.0, 2.0, 3.5])  # the supply's outdoor part per piece
    kw = dict(recirc_filter_efficiency=0.4)
    got = cpl.coupled_piecewise_transient(breaks, gen, vol, vpz, vot, 2.0, times,
                                          outdoor_concentration=c_out, zone_exhaust=exh,
                                          cadr=cadr, **kw)
    order = np.argsort(times)
    ref, ref_supply = _reference_transient(breaks, gen, vol, vpz, vot, exh, cadr, 2.0,
                                           times[order], c_out, 0.0, 0.4)
    _assert_agrees(got.zone[order], ref)
    np.testing.assert_allclose(got.supply[order], ref_supply, rtol=1e-9)
    c = np.full(7, 2.0)
    for j in range(6):  # one call per piece, each started from where the one before ended
        span = breaks[j:j + 2]
        sel = (times >= span[0]) & ((times < span[1]) | (j == 5))
        one = cpl.coupled_piecewise_transient(span, gen[j], vol, vpz[j], vot[j], c,
                                              np.append(times[sel], span[1]),
                                              outdoor_concentration=c_out[j],
                                              zone_exhaust=exh[j], cadr=cadr[j], **kw)
        np.testing.assert_allclose(got.zone[sel], one.zone[:-1], rtol=1e-12, atol=1e-12)
        np.testing.assert_allclose(got.supply[sel], one.supply[:-1], rtol=1e-12)
        c = one.zone[-1]


def test_closed_system_conserves_mass():
    # Conservation of mass (the CMFR balance of Nazaroff & Alvarez-Cohen 2001 summed over the
    # zones): with no outdoor air, filter, exhaust or loss, d/dt Σ V_z·C_z = Σ G_z, so
    # Σ V_z·C_z(t) = Σ V_z·C_z(0) + Σ G_z·t exactly (no steady state exists).
    rng = np.random.default_rng(17)
    vol, vpz, gen = rng.uniform(20, 300, 8), rng.uniform(100, 900, 8), rng.uniform(0, 500, 8)
    c0 = rng.uniform(0, 10, 8)
    times = np.array([0.0, 0.1, 1.0, 6.0])
    res = cpl.coupled_piecewise_transient([0.0, 6.0], gen, vol, vpz, 0.0, c0, times)
    np.testing.assert_allclose(res.zone @ vol, vol @ c0 + gen.sum() * times, rtol=1e-12)


def test_coupled_transient_settles_to_coupled_steady_state():
    # CMFR transient (Nazaroff & Alvarez-Cohen 2001): at constant inputs the transient tends to
    # the steady state (after 60 time constants of the slowest mode the deviation is below
    # e^-60); the steady state is checked against numpy.linalg.solve above.
    rng = np.random.default_rng(9)
    n = 30
    vol, vpz, gen = rng.uniform(50, 300, n), rng.uniform(200, 1500, n), rng.uniform(0, 9e3, n)
    vot = 0.15 * vpz.sum()
    ss = cpl.coupled_steady_state(gen, vol, vpz, vot, 4.0, 0.2, 0.3, 0.0, 20.0)
    end = cpl.coupled_piecewise_transient([0.0, 200.0], gen, vol, vpz, vot, 0.0, [200.0],
                                          outdoor_concentration=4.0,
                                          outdoor_filter_efficiency=0.2,
                                          recirc_filter_efficiency=0.3, cadr=20.0)
    np.testing.assert_allclose(end.zone[0], ss.zone, rtol=1e-12)
    assert end.supply[0] == pytest.approx(ss.supply, rel=1e-12)


def test_identical_zones_large_system_is_cheap_and_exact():
    # With one zone type (K = 1) a 100,000-zone system costs O(N) per output; by symmetry
    # every zone equals the one-zone case with the same outdoor fraction (hand derivation:
    # equal zones have equal CMFR balances, Nazaroff & Alvarez-Cohen 2001).
    n = 100_000
    breaks, times = [0.0, 1.0, 3.0], np.linspace(0.0, 3.0, 7)
    gen = np.array([[900.0], [100.0]])
    big = cpl.coupled_piecewise_transient(breaks, gen, 80.0, np.full(n, 500.0), 0.2 * 500 * n,
                                          0.0, times)
    one = cpl.coupled_piecewise_transient(breaks, gen, [80.0], [500.0], 100.0, 0.0, times)
    np.testing.assert_allclose(big.zone, np.broadcast_to(one.zone, big.zone.shape), rtol=1e-10)


def test_shared_and_explicit_zone_inputs_agree():
    # Layout rule of coupled_piecewise_transient's docstring: scalars and (n_pieces, 1)
    # broadcast over zones; arrays give the same.
    breaks, times = [0.0, 1.0, 2.0], [0.5, 1.5, 2.0]
    shared = cpl.coupled_piecewise_transient(breaks, [[50.0], [10.0]], 40.0, [300.0, 500.0],
                                             200.0, 1.0, times, cadr=30.0)
    explicit = cpl.coupled_piecewise_transient(breaks, [[50.0, 50.0], [10.0, 10.0]],
                                               [40.0, 40.0], [300.0, 500.0],
                                               np.array([200.0, 200.0]), [1.0, 1.0], times,
                                               cadr=[30.0, 30.0])
    np.testing.assert_array_equal(shared.zone, explicit.zone)
    np.testing.assert_array_equal(shared.supply, explicit.supply)


def _distinct_system(rng, n, n_types=None):
    """One air handler, zones of n_types kinds (every zone its own kind by default)."""
    kinds = rng.integers(0, n_types, n) if n_types else np.arange(n)
    m = int(kinds.max()) + 1
    vol = rng.uniform(30.0, 500.0, m)[kinds]
    vpz = vol * rng.uniform(2.0, 8.0, m)[kinds]
    exh = np.where(rng.random(n) < 0.05, 0.5 * vpz, 0.0)
    cadr = np.where(rng.random(m) < 0.2, rng.uniform(50, 300, m), 0.0)[kinds]
    vot = max(exh.sum(), 0.3 * vpz.sum())
    return vol, vpz, exh, cadr, vot


def test_large_system_with_many_distinct_rates_equals_its_aggregate():
    # 30,000 zones of 300 kinds (K = 300 distinct rates). Hand derivation from the zone
    # and mixing balances (CMFR, Nazaroff & Alvarez-Cohen 2001): the n zones of one kind share
    # one concentration, so each kind is one zone of n times the volume, airflow and
    # generation; the 300-zone aggregate must give the same values.
    rng = np.random.default_rng(8)
    n, m = 30_000, 300
    kinds = rng.integers(0, m, n)
    count = np.bincount(kinds, minlength=m).astype(float)
    vol_k = rng.uniform(30.0, 500.0, m)
    vpz_k = vol_k * rng.uniform(2.0, 8.0, m)
    gen_k = rng.uniform(0, 2e3, (2, m))
    breaks, times = [0.0, 1.0, 3.0], np.linspace(0.0, 3.0, 13)
    big = cpl.coupled_piecewise_transient(breaks, gen_k[:, kinds], vol_k[kinds], vpz_k[kinds],
                                          0.25 * vpz_k[kinds].sum(), 420.0, times,
                                          outdoor_concentration=420.0)
    keep = count > 0
    agg = cpl.coupled_piecewise_transient(breaks, (gen_k * count)[:, keep],
                                          (vol_k * count)[keep], (vpz_k * count)[keep],
                                          0.25 * vpz_k[kinds].sum(), 420.0, times,
                                          outdoor_concentration=420.0)
    full = np.zeros((times.size, m))
    full[:, keep] = agg.zone
    np.testing.assert_allclose(big.zone, full[:, kinds], rtol=1e-11)
    np.testing.assert_allclose(big.supply, agg.supply, rtol=1e-11)


def test_more_distinct_rates_than_the_limit_is_a_clear_error(monkeypatch):
    # Size limit documented on coupled_piecewise_transient (its docstring): above
    # MAX_DISTINCT_RATES distinct rates among the returning zones the call is refused, as a
    # ValueError that names the limit and the count, before any work; equal zones count once.
    monkeypatch.setattr(coupled, "MAX_DISTINCT_RATES", 3)
    vol = np.array([50.0, 60.0, 70.0, 80.0])
    with pytest.raises(cpl.TooManyRates, match=r"limited to 3 distinct .* has 4"):
        cpl.coupled_piecewise_transient([0.0, 1.0], 10.0, vol, np.full(4, 300.0), 400.0, 0.0,
                                        [1.0])
    same = cpl.coupled_piecewise_transient([0.0, 1.0], 10.0, np.full(40, 50.0),
                                           np.full(40, 300.0), 4000.0, 0.0, [1.0])
    assert same.zone.shape == (1, 40)
    assert issubclass(cpl.TooManyRates, ValueError)


@pytest.mark.parametrize("a", [0.0, 1e-9, 0.3, 1.0, 7.5, 600.0])
@pytest.mark.parametrize("b", [0.0, 1e-9, 0.3, 0.3 + 1e-12, 1.0, 7.5, 600.0])
def test_convolution_kernels_match_quadrature(a, b):
    # The two kernels a zone that returns no air is driven by, against scipy.integrate.quad
    # (an independent computation of the defining integrals) at 1e-12 relative, including
    # equal and nearly equal rates (resonance) and a rate of zero.
    from scipy.integrate import quad

    from airgate.procedures.numeric import exp_convolution, exp_convolution_ramp

    tau = 0.8

    def ramp(s):
        return s if b == 0 else -np.expm1(-b * s) / b

    conv = quad(lambda s: np.exp(-a * (tau - s) - b * s), 0.0, tau, epsabs=0, epsrel=1e-13)[0]
    conv2 = quad(lambda s: np.exp(-a * (tau - s)) * ramp(s), 0.0, tau, epsabs=0,
                 epsrel=1e-13, limit=200)[0]
    assert float(exp_convolution(a, b, tau)) == pytest.approx(conv, rel=1e-12)
    assert float(exp_convolution_ramp(a, b, tau)) == pytest.approx(conv2, rel=1e-12)


def test_system_above_the_size_limit_keeps_its_steady_state_without_a_design_day(evaluate,
                                                                                   monkeypatch):
    # The fallback docs/dilution.md documents: above MAX_DISTINCT_RATES a multiple-zone system
    # is reported without its design-day series (no error, nothing else lost); its steady state
    # (O(N), no limit) stays. Below the limit the same schedule has the design day.
    from conftest import schedule

    zones = [{"id": str(i), "space": "office-space", "area": f"{a} ft2", "occupants": p,
              "height": "9 ft", "air_distribution": "ceiling-supply-cool",
              "primary_airflow": f"{v} cfm", "profile": "office"}
             for i, (a, p, v) in enumerate([(2000, 12, 900), (1000, 20, 500), (600, 3, 200)])]
    data = schedule([{"id": "M", "kind": "multiple-zone", "outdoor_air": "600 cfm",
                      "ventilation_efficiency": "detailed", "zones": zones}])
    data["profiles"] = {"office": {"weekday": {"08:00-17:00": 1.0}}}
    below = evaluate(data).systems[0].zones
    assert all("C_peak" in z.dilution and z.series is not None for z in below)
    monkeypatch.setattr(coupled, "MAX_DISTINCT_RATES", 2)
    above = evaluate(data).systems[0].zones
    assert all("C_peak" not in z.dilution and z.series is None for z in above)
    assert [z.dilution.value("C_ss") for z in above] == [z.dilution.value("C_ss") for z in below]
