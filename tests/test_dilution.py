"""Tests of airgate.procedures.dilution, .losses and .piecewise (single well-mixed zone).

Each check names its source: a table of a published document (docs/references.md), the
completely mixed flow reactor (CMFR) balance of Nazaroff & Alvarez-Cohen, Environmental
Engineering Science (Wiley, 2001), an outside numerical reference (scipy, decimal), or
"common practice".
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad, solve_ivp

from airgate.procedures import dilution

from conftest import examples
from in_m3h import in_m3h

dil = in_m3h(dilution)  # scenarios in m³/h; the procedures take L/s (tests/in_m3h.py)

# CDC, Guidelines for Environmental Infection Control in Health-Care Facilities (2003),
# Appendix B, Table B.1 (published):
# air changes per hour -> minutes to 99 % and to 99.9 % removal.
CDC_2003_TABLE_B1 = [
    (2, 138, 207),
    (4, 69, 104),
    (6, 46, 69),
    (8, 35, 52),
    (10, 28, 41),
    (12, 23, 35),
    (15, 18, 28),
    (20, 14, 21),
    (50, 6, 8),
]


@pytest.mark.parametrize(("ach", "min_99", "min_999"), CDC_2003_TABLE_B1)
def test_purge_times_cdc_2003_appendix_b_table_b1(ach, min_99, min_999):
    # CDC 2003 Appendix B Table B.1: t = ln(1/(1 − f))/ACH, rounded to the nearest minute.
    volume = 75.0
    lam = dil.loss_rate(volume, outdoor_airflow=ach * volume)
    assert lam == pytest.approx(ach, rel=1e-15)
    assert round(dil.time_to_fraction_removed(lam, 0.99) * 60) == min_99
    assert round(dil.time_to_fraction_removed(lam, 0.999) * 60) == min_999


def test_purge_times_cdc_2003_table_b1_all_rows_as_one_array():
    # CDC 2003 Appendix B Table B.1, every cell at once (vectorised call).
    ach, m99, m999 = (np.array(col, dtype=float) for col in zip(*CDC_2003_TABLE_B1))
    minutes = 60 * dil.time_to_fraction_removed(ach[:, None], np.array([0.99, 0.999]))
    np.testing.assert_array_equal(np.rint(minutes), np.column_stack([m99, m999]))


def test_co2_excess_at_7_5_Ls_per_person_about_700_ppm():
    # ASHRAE technical FAQ on CO2 (published): 7.5 L/s per person ~ 700 ppm above outdoor;
    # 0.0052 L/s / 7.5 L/s -> 693 ppm (derived).
    excess = dil.co2_excess_ppm(0.0052, 7.5)
    assert round(excess) == 693
    assert excess == pytest.approx(700, rel=0.02)


def test_co2_excess_from_steady_state_in_si_units():
    # CMFR steady state C = G/Q (Nazaroff & Alvarez-Cohen 2001) with CO2 in ppm:
    # G = 1e6 · 0.0052 L/s (as m3/h), Q = 7.5 L/s (as m3/h) -> 693 ppm (ASHRAE technical FAQ
    # on CO2, derived).
    gen_ppm_m3h = 1e6 * 0.0052 * 3.6  # 0.0052 L/s of CO2 = 0.01872 m3/h, as ppm·m3/h
    c = dil.steady_state_concentration(gen_ppm_m3h, 60.0, 7.5 * 3.6)
    assert c == pytest.approx(dil.co2_excess_ppm(0.0052, 7.5), rel=1e-12)
    assert round(c) == 693


def test_co2_excess_en_16798_categories_from_20_L_per_h():
    # EN 16798-1:2019 (published): design emission 20 L/h per person; 20 L/h over
    # 10 / 7 / 4 L/s per person -> 556 / 794 / 1389 ppm (derived by hand).
    excess = dil.co2_excess_ppm(20 / 3600, np.array([10.0, 7.0, 4.0]))
    np.testing.assert_array_equal(np.rint(excess), [556, 794, 1389])


def test_dcv_setpoint_adds_outdoor_level():
    # Demand-controlled ventilation set point from the CMFR steady state (Nazaroff &
    # Alvarez-Cohen 2001): C_zone = C_out + N/Voz_per_person; 420 ppm outdoor is common
    # practice.
    assert dil.dcv_setpoint_ppm(420, 0.0052, 7.5) == pytest.approx(420 + 1e6 * 0.0052 / 7.5)
    assert round(dil.dcv_setpoint_ppm(420, 0.0052, 7.5)) == 1113


@pytest.mark.parametrize("airflow", [10.0, 100.0, 1000.0])
def test_tenfold_airflow_tenfold_lower_concentration(airflow):
    # Common practice (and the CMFR steady state): with clean supply and no other losses,
    # C = G/Q, so each tenfold airflow lowers the concentration tenfold.
    c1 = dil.steady_state_concentration(500.0, 200.0, airflow)
    c10 = dil.steady_state_concentration(500.0, 200.0, 10 * airflow)
    assert c1 == pytest.approx(500.0 / airflow, rel=1e-15)
    assert c1 / c10 == pytest.approx(10.0, rel=1e-14)


def test_steady_state_with_filters_and_losses_matches_domain_equation():
    # CMFR steady state with first-order losses (Nazaroff & Alvarez-Cohen 2001), written out by
    # hand: C_ss = (G + Q_oa(1 − η_oa)C_out) / (λ·V).
    v, q_oa, q_rec, cadr = 150.0, 300.0, 900.0, 250.0
    kd, ki, c_out, g = 0.4, 0.7, 12.0, 5000.0
    lam = (q_oa + 0.5 * q_rec + cadr) / v + kd + ki
    expected = (g + q_oa * (1 - 0.3) * c_out) / (lam * v)
    got = dil.steady_state_concentration(g, v, q_oa, c_out, 0.3, q_rec, 0.5, cadr, kd, ki)
    assert got == pytest.approx(expected, rel=1e-14)
    assert dil.loss_rate(v, q_oa, q_rec, 0.5, cadr, kd, ki) == pytest.approx(lam, rel=1e-15)


def test_loss_breakdown_adds_up_to_equivalent_clean_airflow():
    # ASHRAE 241-2023: equivalent clean airflows add across outdoor air, filtration (airflow ×
    # efficiency) and air cleaners; HEPA 99.97 % (DOE-STD-3020).
    v = 120.0
    parts = dil.loss_breakdown(v, 240.0, 600.0, 0.9997, 180.0, 0.2, 0.5)
    assert parts == pytest.approx({"outdoor_air": 240.0, "recirculation_filter": 599.82,
                                   "air_cleaner": 180.0, "deposition": 24.0,
                                   "inactivation": 60.0, "makeup_air": 0.0}, rel=1e-14)
    lam = dil.loss_rate(v, 240.0, 600.0, 0.9997, 180.0, 0.2, 0.5)
    assert sum(parts.values()) == pytest.approx(lam * v, rel=1e-14)


def test_inactivation_half_life_halves_concentration():
    # First-order decay (Nazaroff & Alvarez-Cohen 2001): k_inact = ln 2 / half-life; after one
    # half-life in a sealed zone with no
    # other loss the concentration halves.
    k = dil.inactivation_rate_from_half_life(1.5)
    assert k == pytest.approx(math.log(2) / 1.5, rel=1e-15)
    assert dil.transient_concentration(8.0, 0.0, k, 1.5) == pytest.approx(4.0, rel=1e-14)


def test_95_percent_of_steady_state_is_three_time_constants():
    # CMFR transient (Nazaroff & Alvarez-Cohen 2001): reaching 95 % of steady state takes 3/λ
    # (ln 20 = 2.996).
    assert dil.time_to_fraction_of_steady_state(2.0) == pytest.approx(3.0 / 2.0, rel=2e-3)
    assert dil.time_to_fraction_of_steady_state(2.0, 0.95) == pytest.approx(math.log(20) / 2)


def test_short_term_averaging_time_t_equals_50_v_over_vbz():
    # ANSI/ASHRAE 62.1-2019 Section 6.2.6.2 (short-term conditions): T = 3 time constants =
    # 50·v/Vbz minutes (v in m3, Vbz in L/s). Reaching 1 − e^(−3) of steady state takes exactly 3/λ.
    v, vbz_ls = 240.0, 85.0
    lam = dil.loss_rate(v, vbz_ls * 3.6)
    t_min = 60 * dil.time_to_fraction_of_steady_state(lam, 1 - math.exp(-3))
    assert t_min == pytest.approx(50 * v / vbz_ls, rel=1e-13)


def test_breathing_zone_with_voz_equals_vbz_case():
    # ANSI/ASHRAE 62.1-2019 Section 6.2.2.3 Voz = Vbz/Ez, and C_bz − C_s = (C_exhaust − C_s)/Ez
    # (Ez as the effectiveness of Section 6.2.2.2, derived): supplying Voz of clean
    # air gives the breathing zone G/Vbz, as if Vbz were delivered with Ez = 1.
    g, vbz = 1000.0, 400.0
    for ez in (0.5, 0.7, 0.8, 1.0, 1.2):
        c_exhaust = dil.steady_state_concentration(g, 100.0, vbz / ez)
        c_bz = dil.breathing_zone_concentration(0.0, c_exhaust, ez)
        assert c_bz == pytest.approx(g / vbz, rel=1e-14)
    assert dil.breathing_zone_concentration(3.0, 7.0, 0.8) == pytest.approx(3.0 + 4.0 / 0.8)


# --------------------------------------------------------------------------- vs solve_ivp



def _assert_agrees(got, ref):
    """1e-6 relative, with an absolute floor of 1e-9 × the case's largest value for the
    values near zero, where the reference's own interpolation error (~rtol) dominates."""
    np.testing.assert_allclose(got, ref, rtol=1e-6, atol=1e-9 * max(np.abs(ref).max(), 1e-300))

def _reference_piecewise(breaks, gen, vol, q_oa, c0, times, c_out, eta_oa, q_rec, eta_rec,
                         cadr, kd, ki):
    """Direct integration of the CMFR balance, all zones as one system, piece by
    piece (scipy.integrate.solve_ivp, LSODA, rtol=1e-10: the outside reference)."""
    def at(x, j):
        x = np.asarray(x, dtype=float)
        return x[j] if x.ndim == 2 else x

    out = np.empty((times.size, np.size(c0)))
    c = np.array(c0, dtype=float)
    for j in range(breaks.size - 1):
        src = at(gen, j) + at(q_oa, j) * (1 - eta_oa) * c_out
        rem = at(q_oa, j) + eta_rec * at(q_rec, j) + at(cadr, j) + (kd + ki) * vol

        def rhs(_t, y, src=src, rem=rem):
            return (src - rem * y) / vol

        last = j == breaks.size - 2
        sel = (times >= breaks[j]) & ((times < breaks[j + 1]) | (last & (times <= breaks[j + 1])))
        t_eval = np.unique(np.concatenate((times[sel], [breaks[j + 1]])))
        dt = breaks[j + 1] - breaks[j]
        scale = max(float(np.max(np.abs(c))), float(np.max(src * dt / vol)), 1e-9)
        sol = solve_ivp(rhs, (breaks[j], breaks[j + 1]), c, method="LSODA", rtol=1e-10,
                        atol=1e-18 * scale, t_eval=t_eval)
        out[sel] = sol.y[:, : sel.sum()].T
        c = sol.y[:, -1]
    return out


def test_transient_matches_solve_ivp_random_zones():
    # CMFR transient C(t) = C_ss + (C0 − C_ss)e^(−λt), against scipy.integrate.solve_ivp
    # (LSODA, rtol=1e-10) as outside reference, 1e-6 relative.
    rng = np.random.default_rng(20031)
    n = 20
    v = rng.uniform(20, 800, n)
    q = rng.uniform(10, 3000, n)
    g = rng.uniform(0, 5e4, n)
    c0 = rng.uniform(0, 200, n)
    c_ss = dil.steady_state_concentration(g, v, q)
    lam = dil.loss_rate(v, q)
    times = np.linspace(0, 6, 25)
    got = dil.transient_concentration(c0, c_ss, lam, times[:, None])
    ref = _reference_piecewise(np.array([0, 6.0]), g, v, q, c0, times, 0, 0, 0, 0, 0, 0, 0)
    _assert_agrees(got, ref)


def _flow(top):
    """Zero or a physical magnitude (no subnormal inputs that only stress the reference)."""
    return st.one_of(st.just(0.0), st.floats(1e-3, top))


@settings(max_examples=examples(0.4))
@given(volume=st.floats(1.0, 5000.0), q_oa=_flow(1e4), q_rec=_flow(1e4),
       eta_rec=st.floats(0.0, 1.0), gen=st.lists(_flow(1e5), min_size=1, max_size=5),
       c0=_flow(1e3), c_out=_flow(500.0))
def test_piecewise_transient_random_single_zone_matches_solve_ivp(volume, q_oa, q_rec, eta_rec,
                                                                  gen, c0, c_out):
    # Random single zones, exact piecewise solution against scipy.integrate.solve_ivp (LSODA,
    # rtol=1e-10) as outside reference, 1e-6 relative (the CMFR balance).
    breaks = np.linspace(0.0, 4.0, len(gen) + 1)
    times = np.linspace(0.0, 4.0, 17)
    g = np.array(gen)
    got = dil.piecewise_transient(breaks, g, volume, q_oa, c0, times, outdoor_concentration=c_out,
                                  recirc_airflow=q_rec, recirc_efficiency=eta_rec)
    ref = _reference_piecewise(breaks, g[:, None], np.array([volume]), q_oa, np.array([c0]),
                               times, c_out, 0.0, q_rec, eta_rec, 0.0, 0.0, 0.0)[:, 0]
    _assert_agrees(got, ref)


def test_piecewise_transient_matches_solve_ivp_with_changing_airflow():
    # Exact piecewise-exponential solution (the CMFR transient, piece by piece) against
    # scipy.integrate.solve_ivp (LSODA, rtol=1e-10) as outside reference, 1e-6 relative;
    # generation and outdoor airflow change per piece, with outdoor air, filters and losses.
    rng = np.random.default_rng(7)
    n, n_p = 12, 9
    breaks = np.concatenate(([0.0], np.cumsum(rng.uniform(0.2, 3.0, n_p))))
    v = rng.uniform(30, 500, n)
    gen = rng.uniform(0, 2e4, (n_p, n)) * (rng.random((n_p, n)) < 0.7)
    q_oa = rng.uniform(20, 1500, (n_p, n))
    q_rec = rng.uniform(0, 2000, n)
    cadr = rng.uniform(0, 300, n)
    c0 = rng.uniform(0, 50, n)
    kw = dict(outdoor_concentration=8.0, outdoor_filter_efficiency=0.4, recirc_airflow=q_rec,
              recirc_efficiency=0.65, cadr=cadr, k_deposition=0.3, k_inactivation=0.25)
    times = np.sort(np.concatenate((rng.uniform(0, breaks[-1], 60), breaks)))
    got = dil.piecewise_transient(breaks, gen, v, q_oa, c0, times, **kw)
    ref = _reference_piecewise(breaks, gen, v, q_oa, c0, times, 8.0, 0.4, q_rec, 0.65, cadr,
                               0.3, 0.25)
    _assert_agrees(got, ref)


def test_time_weighted_average_matches_quadrature_and_augmented_ode():
    # Exact integral of the exponential pieces against scipy.integrate.quad of the solution
    # (outside reference), and against solve_ivp integrating ∫C dt as an extra state.
    breaks = np.array([0.0, 1.0, 2.5, 4.0, 8.0, 9.0])
    gen = np.array([0.0, 3000.0, 500.0, 4000.0, 0.0])
    v, q = 90.0, 180.0
    sol = dil.piecewise_solution(breaks, gen, v, q, 5.0)
    for a, e in [(None, None), (0.5, 3.0), (2.5, 4.0), (3.3, 8.7)]:
        lo, hi = (breaks[0] if a is None else a), (breaks[-1] if e is None else e)
        pts = breaks[(breaks > lo) & (breaks < hi)]
        integ, _ = quad(lambda t: float(dil.evaluate_piecewise(sol, [t])[0]), lo, hi,
                        points=pts, epsabs=0, epsrel=1e-12, limit=200)
        assert dil.time_weighted_average(sol, a, e) == pytest.approx(integ / (hi - lo), rel=1e-9)

    def rhs(t, y):
        j = min(np.searchsorted(breaks, t, side="right") - 1, gen.size - 1)
        return [(gen[j] - q * y[0]) / v, y[0]]

    y = [5.0, 0.0]
    for j in range(gen.size):
        y = solve_ivp(rhs, breaks[j:j + 2], y, method="LSODA", rtol=1e-10, atol=1e-12).y[:, -1]
    assert dil.time_weighted_average(sol) == pytest.approx(y[1] / breaks[-1], rel=1e-6)


def test_time_weighted_average_of_steady_zone_is_its_steady_value():
    # CMFR balance (Nazaroff & Alvarez-Cohen 2001): a zone started at C_ss stays there, so its
    # average is C_ss.
    c_ss = dil.steady_state_concentration(700.0, 60.0, 350.0)
    sol = dil.piecewise_solution([0, 3, 8], [[700.0], [700.0]], 60.0, 350.0, c_ss)
    assert dil.time_weighted_average(sol)[0] == pytest.approx(c_ss, rel=1e-14)
    assert dil.time_weighted_average(sol, 1.0, 2.0)[0] == pytest.approx(c_ss, rel=1e-14)


def test_peak_is_at_a_break_and_not_below_any_sample():
    # CMFR transient: C(t) is monotone on each piece (exponential approach to C_ss), so the
    # exact peak is attained at a piece boundary; a fine sampling never exceeds it.
    rng = np.random.default_rng(3)
    breaks = np.arange(0.0, 25.0)
    gen = rng.uniform(0, 1e4, (24, 6))
    sol = dil.piecewise_solution(breaks, gen, rng.uniform(50, 400, 6), rng.uniform(50, 900, 6), 0.0)
    peak, t_peak = dil.peak_concentration(sol)
    samples = dil.evaluate_piecewise(sol, np.linspace(0, 24, 24 * 600 + 1))
    assert np.all(samples <= peak * (1 + 1e-14))
    np.testing.assert_allclose(samples.max(axis=0), peak, rtol=1e-12)
    assert np.all(np.isin(t_peak, breaks))
    np.testing.assert_array_equal(dil.evaluate_piecewise(sol, t_peak).diagonal(), peak)


def test_sealed_zone_without_losses_grows_linearly():
    # CMFR balance with λ = 0: V·dC/dt = G, so C = C0 + G·t/V exactly.
    sol = dil.piecewise_solution([0.0, 2.0, 5.0], [300.0, 0.0], 50.0, 0.0, 1.0)
    np.testing.assert_allclose(dil.evaluate_piecewise(sol, [0.0, 1.0, 2.0, 4.0]),
                               [1.0, 7.0, 13.0, 13.0], rtol=1e-15)
    assert dil.time_weighted_average(sol, 0.0, 2.0) == pytest.approx(7.0, rel=1e-14)
    # the λ → 0 limit is continuous: a subnormal loss rate behaves as none (regression pin)
    tiny = dil.piecewise_transient([0.0, 2.0], [300.0], 50.0, 0.0, 1.0, [1.0, 2.0],
                                   recirc_airflow=1.0, recirc_efficiency=5e-324)
    np.testing.assert_allclose(tiny, [7.0, 13.0], rtol=1e-15)


# --------------------------------------------------------------------------- floats and arrays


def test_arrays_and_floats_give_the_same_results():
    # Vectorisation check (common practice): one array call equals one float call per zone.
    rng = np.random.default_rng(11)
    n = 7
    v, q, qr = rng.uniform(20, 300, n), rng.uniform(10, 900, n), rng.uniform(0, 500, n)
    er, cadr, kd = rng.uniform(0, 1, n), rng.uniform(0, 200, n), rng.uniform(0, 2, n)
    g, c_out, c0 = rng.uniform(0, 1e3, n), rng.uniform(0, 10, n), rng.uniform(0, 30, n)
    lam = dil.loss_rate(v, q, qr, er, cadr, kd, 0.1)
    css = dil.steady_state_concentration(g, v, q, c_out, 0.2, qr, er, cadr, kd, 0.1)
    breaks = np.array([0.0, 1.0, 3.0, 4.5])
    gen = rng.uniform(0, 1e3, (3, n))
    times = np.linspace(0, 4.5, 10)
    pw = dil.piecewise_transient(breaks, gen, v, q, c0, times, recirc_airflow=qr,
                                 recirc_efficiency=er, cadr=cadr, k_deposition=kd)
    sol = dil.piecewise_solution(breaks, gen, v, q, c0, cadr=cadr)
    twa, (peak, _) = dil.time_weighted_average(sol), dil.peak_concentration(sol)
    for z in range(n):
        lz = dil.loss_rate(float(v[z]), float(q[z]), float(qr[z]), float(er[z]),
                           float(cadr[z]), float(kd[z]), 0.1)
        assert isinstance(lz, float) and lz == lam[z]
        assert dil.steady_state_concentration(float(g[z]), float(v[z]), float(q[z]),
                                              float(c_out[z]), 0.2, float(qr[z]),
                                              float(er[z]), float(cadr[z]), float(kd[z]),
                                              0.1) == css[z]
        assert float(dil.transient_concentration(float(c0[z]), float(css[z]), float(lam[z]),
                                                 0.7)) == float(
            dil.transient_concentration(c0, css, lam, 0.7)[z])
        one = dil.piecewise_transient(breaks, gen[:, z], float(v[z]), float(q[z]),
                                      float(c0[z]), times, recirc_airflow=float(qr[z]),
                                      recirc_efficiency=float(er[z]), cadr=float(cadr[z]),
                                      k_deposition=float(kd[z]))
        np.testing.assert_allclose(one, pw[:, z], rtol=1e-15)
        sol_z = dil.piecewise_solution(breaks, gen[:, z], float(v[z]), float(q[z]),
                                       float(c0[z]), cadr=float(cadr[z]))
        assert dil.time_weighted_average(sol_z) == pytest.approx(twa[z], rel=1e-15)
        assert dil.peak_concentration(sol_z)[0] == pytest.approx(peak[z], rel=1e-15)


def test_shared_profile_broadcasts_over_zones():
    # Layout rule of piecewise_solution: (n_pieces, 1) is one profile for all zones.
    breaks = [0.0, 1.0, 2.0]
    shared = dil.piecewise_transient(breaks, [[100.0], [0.0]], [10.0, 20.0], 30.0, 0.0, [2.0])
    each = dil.piecewise_transient(breaks, [[100.0, 100.0], [0.0, 0.0]], [10.0, 20.0], 30.0,
                                   0.0, [2.0])
    np.testing.assert_array_equal(shared, each)


def test_invalid_inputs_are_refused():
    # Validity ranges are said, never clamped (airgate style; common practice).
    with pytest.raises(ValueError, match="outdoor_airflow"):
        dil.loss_rate(100.0, -1.0)
    with pytest.raises(ValueError, match="recirc_efficiency"):
        dil.loss_rate(100.0, 10.0, 10.0, 1.5)
    with pytest.raises(ValueError, match="steady state"):
        dil.steady_state_concentration(1.0, 100.0, 0.0)
    with pytest.raises(ValueError, match="fraction"):
        dil.time_to_fraction_removed(2.0, 1.0)
    sol = dil.piecewise_solution([0.0, 1.0], [1.0], 10.0, 5.0, 0.0)
    with pytest.raises(ValueError, match="within"):
        dil.evaluate_piecewise(sol, [1.5])
    with pytest.raises(ValueError, match="increasing"):
        dil.piecewise_solution([0.0, 0.0], [1.0], 10.0, 5.0, 0.0)
    with pytest.raises(ValueError, match="n_pieces"):
        dil.piecewise_solution([0.0, 1.0, 2.0], [1.0, 2.0], 10.0, [[5.0]] * 3, 0.0)


def _decimal_piece(c0, lam, s, t):
    """C(t) = C0·e^(−λt) + s·t·(1 − e^(−λt))/(λt) (→ C0 + s·t at λ = 0) in 50-digit decimals."""
    from decimal import Decimal, localcontext

    with localcontext() as ctx:
        ctx.prec = 50
        c0, lam, s, t = (Decimal(float(x)) for x in (c0, lam, s, t))  # exact binary values
        x = lam * t
        decay = (-x).exp()
        if x < Decimal("1e-20"):  # (1 − e^(−x))/x by its series, beyond 50 digits' reach
            tphi = t * (1 - x / 2 + x * x / 6)
        else:
            tphi = (1 - decay) / lam
        return float(c0 * decay + s * tphi)


@pytest.mark.parametrize("lam", [0.0, 1e-200, 1e-9, 1e-3, 1.0, 50.0, 1e4])
@pytest.mark.parametrize(("c0", "s"), [(420.0, 5.0), (0.0, 5.0), (420.0, 0.0), (1e-6, 1e3)])
def test_exact_piece_keeps_full_precision_rising_and_falling(lam, c0, s):
    # The exact piece solution (CMFR transient) evaluated in 50-digit decimal arithmetic (Python's
    # decimal module) as outside reference: rising and falling zones, no removal at all, and
    # decay far past the initial value (where a single formula would cancel), 1e-13 relative.
    times = np.array([0.0, 1e-9, 1e-3, 0.5, 1.0, 24.0])
    got = dil.piecewise_transient([0.0, 24.0], [s], 1.0, lam, c0, times)  # V = 1: λ = Q
    ref = np.array([_decimal_piece(c0, lam, s, t) for t in times])
    np.testing.assert_allclose(got, ref, rtol=1e-13, atol=1e-300)


@pytest.mark.parametrize("bad", [0.0, np.array([50.0, 0.0])])
def test_invalid_input_is_a_value_error_naming_the_parameter_for_floats_and_arrays(bad):
    # One policy for the procedures (module docstrings; common practice for an API): a float
    # and an array with the same bad value both raise ValueError naming the parameter, never
    # ZeroDivisionError or inf with a warning.
    with pytest.raises(ValueError, match="volume"):
        dil.loss_rate(bad, 100.0)
    with pytest.raises(ValueError, match="lam"):
        dil.time_to_fraction_removed(bad, 0.99)
    with pytest.raises(ValueError, match="airflow_Ls"):
        dil.co2_excess_ppm(0.005, bad)
    with pytest.raises(ValueError, match="outdoor_airflow"):
        dil.steady_state_concentration(10.0, 50.0, bad)
    with pytest.raises(ValueError, match="ez"):
        dil.breathing_zone_concentration(400.0, 900.0, bad)


def test_float_in_float_out():
    # API contract (module docstrings): a float in gives a Python float out.
    assert type(dil.loss_rate(100.0, 600.0)) is float
    assert type(dil.steady_state_concentration(500.0, 50.0, 250.0)) is float
    assert all(type(v) is float for v in dil.loss_breakdown(100.0, 600.0).values())
