"""Benchmark: exact piecewise dilution solutions against scipy.integrate.solve_ivp.

Not a test. Run from the repository root:

    PYTHONPATH=engine python bench/bench_dilution.py

Problems, each solved once by airgate's exact procedures and once by solve_ivp on the same
equations (all zones as one vectorised system, restarted at every hourly break so that no
integrator steps across a jump in its inputs), with one-minute output:

1. 1,000 independent single zones over 24 h (airgate.procedures.dilution.piecewise_transient);
2. one air handler serving 1,000 zones coupled through return air over 24 h
   (airgate.procedures.coupled.coupled_piecewise_transient), once with every zone different
   (K = 1,000 distinct zone rates) and once with the zones drawn from 10 room types (K = 10);
3. the target case: one air handler with 500 zones, every zone different, over two days at
   one-minute output (2,881 outputs); the target is under a second, printed as the ratio of
   the measured time to one second;
4. scaling with every zone different, N = K = 250 / 500 / 1,000: the K×K eigendecomposition
   (O(K³) once per airflow configuration) and the rest (O(N + K²) per output time) timed
   apart, as ratios to the smallest run.

CO2 in ppm from an hourly office occupancy profile; 0.0052 L/s of CO2 per person and 420 ppm
outdoors (invented benchmark inputs of the usual magnitude; docs/references.md). Prints wall
times (best of a few runs for the exact side, one run for solve_ivp), their ratio and the
largest relative difference between the two. BLAS runs on one thread unless the environment
sets OPENBLAS_NUM_THREADS, OMP_NUM_THREADS or MKL_NUM_THREADS: on a shared machine threads
that wait for each other would otherwise dominate the figures.
"""

from __future__ import annotations

import os

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")  # before numpy loads its BLAS

import time  # noqa: E402

import numpy as np  # noqa: E402
import pint  # noqa: E402
from scipy.integrate import solve_ivp  # noqa: E402

from airgate.procedures import coupled  # noqa: E402
from airgate.procedures.coupled import coupled_piecewise_transient, supply_coupling  # noqa: E402
from airgate.procedures.dilution import piecewise_transient  # noqa: E402

N_ZONES = 1000
HOURS = 24
C_OUT = 420.0  # ppm
CO2_PER_PERSON = 1e6 * 0.0052  # ppm·L/s per person (0.0052 L/s of CO2)
#: 1/h per (L/s)/m³, from pint: the reference right-hand sides below are written in hours
PER_HOUR = float(pint.UnitRegistry().Quantity(1.0, "L/s/m**3").to("1/hour").magnitude)
RTOL = 1e-10
METHODS = ("LSODA", "DOP853")

# Fraction of design occupancy in each hour of the day: an office with a lunch dip.
PROFILE = np.array([0, 0, 0, 0, 0, 0, 0.05, 0.3, 0.9, 1.0, 1.0, 0.95,
                    0.5, 0.9, 1.0, 1.0, 0.9, 0.6, 0.2, 0.05, 0, 0, 0, 0.0])


def _timed(fn, repeats):
    best, out = np.inf, None
    for _ in range(repeats):
        start = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - start)
    return best, out


def _piecewise_ivp(rhs_for_piece, y0, breaks, times, method):
    """solve_ivp piece by piece on the same piecewise-constant problem; (n_times, n)."""
    out = np.empty((times.size, y0.size))
    y = y0.copy()
    for j in range(breaks.size - 1):
        last = j == breaks.size - 2
        sel = (times >= breaks[j]) & ((times < breaks[j + 1]) | (last & (times <= breaks[j + 1])))
        t_eval = np.unique(np.concatenate((times[sel], [breaks[j + 1]])))
        sol = solve_ivp(rhs_for_piece(j), (breaks[j], breaks[j + 1]), y, method=method,
                        rtol=RTOL, atol=1e-12 * C_OUT, t_eval=t_eval)
        if not sol.success:
            raise RuntimeError(sol.message)
        out[sel] = sol.y[:, : sel.sum()].T
        y = sol.y[:, -1]
    return out


def _report(title, compared, t_exact, t_ivp, exact, ref, label="exact procedure"):
    print(f"\n{title}")
    print(f"  compared: {compared}")
    print(f"  {label:16s}: {t_exact * 1e3:10.2f} ms (best of runs)")
    for method, (t, r) in t_ivp.items():
        rel = np.max(np.abs(exact - r) / np.abs(r))
        print(f"  solve_ivp {method:6s}: {t * 1e3:10.2f} ms  -> ratio {t / t_exact:8.1f}x, "
              f"largest relative difference {rel:.2e}")


def single_zones(rng, breaks, times):
    vol = rng.uniform(30.0, 500.0, N_ZONES)  # m3
    q_oa = vol * rng.uniform(0.5, 6.0, N_ZONES) / PER_HOUR  # L/s: 0.5 to 6 air changes per hour
    people = rng.integers(1, 30, N_ZONES)
    gen = CO2_PER_PERSON * PROFILE[:, None] * people[None, :]  # (24, n_zones)

    def exact():
        return piecewise_transient(breaks, gen, vol, q_oa, C_OUT, times,
                                   outdoor_concentration=C_OUT)

    t_exact, c_exact = _timed(exact, 5)

    def rhs_for_piece(j):
        src = gen[j] + q_oa * C_OUT
        return lambda _t, y: PER_HOUR * (src - q_oa * y) / vol

    ivp = {}
    for method in METHODS:
        t0 = time.perf_counter()
        ref = _piecewise_ivp(rhs_for_piece, np.full(N_ZONES, C_OUT), breaks, times, method)
        ivp[method] = (time.perf_counter() - t0, ref)
    _report(f"{N_ZONES} single zones, {HOURS} hourly pieces, {times.size} one-minute outputs",
            f"dilution.piecewise_transient vs solve_ivp(rtol={RTOL:g}) on all {N_ZONES} zones "
            "as one system", t_exact, ivp, c_exact, ref)

    # The same zones integrated one by one, as a per-room calculation would be done.
    per_zone = np.empty_like(c_exact)
    t0 = time.perf_counter()
    for z in range(N_ZONES):
        def rhs_one(j, z=z):
            src = gen[j, z] + q_oa[z] * C_OUT
            return lambda _t, y: PER_HOUR * (src - q_oa[z] * y) / vol[z]
        per_zone[:, z] = _piecewise_ivp(rhs_one, np.array([C_OUT]), breaks, times, "LSODA")[:, 0]
    t_loop = time.perf_counter() - t0
    _report(f"{N_ZONES} single zones, solved zone by zone",
            f"the exact procedure (one vectorised call) vs {N_ZONES} separate solve_ivp(LSODA, "
            f"rtol={RTOL:g}) integrations, one per zone", t_exact,
            {"LSODA": (t_loop, per_zone)}, c_exact, per_zone)
    return ivp


def _air_handler(rng, n_zones, n_types=None):
    """Zones of one air handler; n_types=None: every zone different (K = N)."""
    kinds = rng.integers(0, n_types, n_zones) if n_types else np.arange(n_zones)
    vol = rng.uniform(30.0, 500.0, n_zones)[kinds]
    vpz = vol * rng.uniform(2.0, 8.0, n_zones)[kinds] / PER_HOUR  # L/s: 2 to 8 per hour
    exhaust = np.where(rng.random(n_zones) < 0.05, 0.5 * vpz, 0.0)  # a few exhausted rooms
    cadr = np.where(rng.random(n_zones) < 0.2, rng.uniform(14, 83, n_zones), 0.0)[kinds]  # L/s
    vot = max(exhaust.sum(), 0.3 * vpz.sum())
    people = rng.integers(1, 30, n_zones)
    gen = CO2_PER_PERSON * PROFILE[:, None] * people[None, :]
    return vol, vpz, exhaust, cadr, vot, gen


def coupled_system(rng, breaks, times, n_types=None):
    """n_types=None: every zone different (K = N); else zones repeat n_types room types."""
    vol, vpz, exhaust, cadr, vot, gen = _air_handler(rng, N_ZONES, n_types)
    kw = dict(outdoor_concentration=C_OUT, recirc_filter_efficiency=0.0, zone_exhaust=exhaust,
              cadr=cadr)

    def run():
        return coupled_piecewise_transient(breaks, gen, vol, vpz, vot, C_OUT, times, **kw).zone

    t_exact, c_exact = _timed(run, 3)
    a, w = supply_coupling(vpz, vot, C_OUT, 0.0, 0.0, exhaust)

    def rhs_for_piece(j):
        return lambda _t, y: PER_HOUR * (gen[j] + vpz * (a + w @ y) - (vpz + cadr) * y) / vol

    ivp = {}
    for method in METHODS:
        t0 = time.perf_counter()
        ref = _piecewise_ivp(rhs_for_piece, np.full(N_ZONES, C_OUT), breaks, times, method)
        ivp[method] = (time.perf_counter() - t0, ref)
    k = np.unique((vpz + cadr) / vol).size
    title = (f"one air handler, {N_ZONES} coupled zones (distinct zone rates K = {k}), "
             f"{HOURS} hourly pieces, {times.size} one-minute outputs")
    compared = (f"solve_ivp(rtol={RTOL:g}) on the {N_ZONES}-zone system with the rank-one "
                "coupling in its right-hand side")
    _report(title, "coupled_piecewise_transient vs " + compared, t_exact, ivp, c_exact, ref)
    return ivp


def two_day_target(rng, n_zones=500, repeats=3):
    """The target case: n_zones zones, every zone different, 48 hourly pieces, one-minute
    output over two days; prints the time and its ratio to the one-second target."""
    breaks = np.arange(49.0)
    times = np.linspace(0.0, 48.0, 48 * 60 + 1)
    vol, vpz, exhaust, cadr, vot, gen = _air_handler(rng, n_zones)
    gen = np.concatenate([gen, gen])
    t, out = _timed(lambda: coupled_piecewise_transient(
        breaks, gen, vol, vpz, vot, C_OUT, times, outdoor_concentration=C_OUT,
        zone_exhaust=exhaust, cadr=cadr).zone, repeats)
    k = np.unique((vpz + cadr) / vol).size
    print(f"\ntarget: one air handler, {n_zones} coupled zones (K = {k}), two days, "
          f"{times.size} one-minute outputs")
    print(f"  coupled_piecewise_transient: {t * 1e3:10.2f} ms (best of {repeats}) -> "
          f"{t:.3f} of the one-second target ({'met' if t < 1.0 else 'NOT met'})")
    return t, out


def scaling(rng, breaks, times, sizes=(250, 500, 1000)):
    """Every zone different (K = N): the K×K eigendecomposition (coupled._modes, O(K³) once
    per configuration) timed apart from the rest (O(N + K²) per output time)."""
    print(f"\nscaling, every zone different (K = N), {breaks.size - 1} hourly pieces, "
          f"{times.size} one-minute outputs (one run each)")
    print(f"  {'N':>7s} {'total s':>9s} {'modes s':>9s} {'other s':>9s} "
          f"{'modes / N^3 ratio':>18s} {'other / N^2 ratio':>18s}")
    spent = [0.0]
    inner = coupled._modes

    def timed_modes(*args):
        t0 = time.perf_counter()
        try:
            return inner(*args)
        finally:
            spent[0] += time.perf_counter() - t0

    coupled._modes = timed_modes
    try:
        base = None
        for n in sizes:
            vol, vpz, exhaust, cadr, vot, gen = _air_handler(rng, n)
            gen = gen[np.arange(breaks.size - 1) % gen.shape[0]]
            spent[0] = 0.0
            t0 = time.perf_counter()
            coupled_piecewise_transient(breaks, gen, vol, vpz, vot, C_OUT, times,
                                        outdoor_concentration=C_OUT, zone_exhaust=exhaust,
                                        cadr=cadr)
            total = time.perf_counter() - t0
            modes, other = spent[0], total - spent[0]
            per = (modes / n**3, other / n**2)
            base = base or per
            print(f"  {n:7d} {total:9.3f} {modes:9.3f} {other:9.3f} "
                  f"{per[0] / base[0]:18.2f} {per[1] / base[1]:18.2f}")
    finally:
        coupled._modes = inner


def main():
    rng = np.random.default_rng(2024)
    breaks = np.arange(HOURS + 1, dtype=float)
    times = np.linspace(0.0, HOURS, HOURS * 60 + 1)
    print("airgate dilution benchmark: exact piecewise solutions vs scipy.integrate.solve_ivp")
    print("CO2 [ppm], hourly occupancy profile, 24 h, one-minute output; every number below "
          "is from this one run")
    print(f"BLAS threads: OPENBLAS_NUM_THREADS={os.environ['OPENBLAS_NUM_THREADS']}")
    single_zones(rng, breaks, times)
    coupled_system(rng, breaks, times)
    coupled_system(rng, breaks, times, n_types=10)
    two_day_target(rng)
    scaling(rng, breaks, times)


if __name__ == "__main__":
    main()
