"""Dilution of a contaminant in one well-mixed zone: the first-order mass balance.

Pure functions on plain floats and numpy arrays in SI; no unit objects. Every argument
broadcasts with numpy rules, so one call evaluates any number of zones.

Internal units
--------------
- airflow: m3/h; volume: m3; first-order rates: 1/h; time: h;
- concentration: any unit ``C`` (particles/m3, ug/m3, ppm, ...), the same for every
  concentration argument of one call;
- generation: ``C·m3/h``, so that a steady concentration is ``C = G / Q``.

The zone balance (domain.md §4, "The dilution model")::

    V·dC/dt = G + Q_oa·(1 − η_oa)·C_out − Q_oa·C − η_rec·Q_rec·C − CADR·C − (k_dep + k_inact)·V·C

is linear with constant coefficients between changes of its inputs, so every result below is
the exact solution (exponentials and their integrals), never a numerical integration.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from airgate.procedures.numeric import (
    check_breaks as _check_breaks,
    fraction as _fraction,
    nonneg as _nonneg,
    out as _out,
    phi as _phi,
    positive as _positive,
    psi as _psi,
)

__all__ = [
    "PiecewiseSolution", "breathing_zone_concentration", "co2_excess_ppm", "dcv_setpoint_ppm",
    "evaluate_piecewise", "inactivation_rate_from_half_life", "loss_breakdown", "loss_rate",
    "peak_concentration", "piecewise_solution", "piecewise_transient",
    "steady_state_concentration", "time_to_fraction_of_steady_state",
    "time_to_fraction_removed", "time_weighted_average", "transient_concentration",
]


# --------------------------------------------------------------------------- helpers


def _on_piece(c_start, lam, source_rate, tau, out=None):
    """C(τ) = C0·e^(−λτ) + s·τ·φ(λτ) on one piece (domain.md §4), at times τ (n_t values)
    for every zone, into ``out`` (n_t, *zone shape; allocated when None).

    One transcendental per value, in the form free of cancellation for each zone: a zone falling towards its steady state ``C_ss = s/λ`` (C0 > C_ss) as
    ``C_ss + (C0 − C_ss)·e^(−λτ)`` (two terms of one sign), a rising one as
    ``C0 + (C_ss − C0)·(−expm1(−λτ))`` (likewise); either is accurate to a few ulps for every
    λτ. Where λ is so small that s/λ would overflow (λ = 0 included) the zone grows linearly,
    ``C0 + s·τ``, exact to a relative λτ that is then below 1e-300·τ."""
    c0, lam, s = np.broadcast_arrays(c_start, lam, source_rate)
    tau = np.asarray(tau, dtype=float).reshape(-1, 1)
    if out is None:
        out = np.empty((tau.shape[0],) + c0.shape)
    c0, lam, s = c0.ravel(), lam.ravel(), s.ravel()
    flat = out.reshape(out.shape[0], -1)
    linear = ~(np.abs(s) < lam * 1e300)  # λ = 0 or s/λ out of range
    c_ss = np.where(linear, 0.0, s) / np.where(linear, 1.0, lam)
    falling = ~linear & (c0 > c_ss)
    for cols, base, kernel in ((np.flatnonzero(falling), c_ss, np.exp),
                               (np.flatnonzero(~falling), c0, np.expm1)):
        if cols.size == 0:
            continue
        block = np.multiply(tau, -np.where(linear[cols], 0.0, lam[cols]))
        kernel(block, out=block)
        block *= (c0 - c_ss)[cols]
        block += base[cols]
        if np.any(linear[cols]):
            block += np.where(linear[cols], s[cols], 0.0) * tau
        if cols.size == flat.shape[1]:
            flat[...] = block
        else:
            flat[:, cols] = block
    return out


def _clean_airflow(volume, outdoor_airflow, recirc_airflow, recirc_efficiency, cadr,
                   k_deposition, k_inactivation):
    """λ·V, the equivalent clean airflow [m3/h], with its inputs validated."""
    parts = loss_breakdown(volume, outdoor_airflow, recirc_airflow, recirc_efficiency, cadr,
                           k_deposition, k_inactivation)
    return (parts["outdoor_air"] + parts["recirculation_filter"] + parts["air_cleaner"]
            + parts["deposition"] + parts["inactivation"])


# --------------------------------------------------------------------------- loss rates


def loss_breakdown(volume, outdoor_airflow, recirc_airflow=0.0, recirc_efficiency=0.0,
                   cadr=0.0, k_deposition=0.0, k_inactivation=0.0):
    """Equivalent clean airflow of each removal mechanism.

    Each first-order loss term of the mass balance (domain.md §4) written as the airflow of
    clean air that would remove as much; they add (reference-values.md H: equivalent air
    changes add across outdoor air, filtration and air cleaners).

    Parameters
    ----------
    volume : float or array_like
        Zone volume. [m3]
    outdoor_airflow : float or array_like
        Outdoor airflow supplied to the zone, Q_oa. [m3/h]
    recirc_airflow : float or array_like
        Recirculated airflow passing a filter, Q_rec. [m3/h]
    recirc_efficiency : float or array_like
        Single-pass efficiency of that filter, η_rec. [-]
    cadr : float or array_like
        Clean-air delivery rate of in-room air cleaners. [m3/h]
    k_deposition : float or array_like
        Deposition rate on surfaces. [1/h]
    k_inactivation : float or array_like
        Inactivation (decay) rate. [1/h]

    Returns
    -------
    dict of str to float or ndarray
        ``outdoor_air`` = Q_oa, ``recirculation_filter`` = η_rec·Q_rec, ``air_cleaner`` = CADR,
        ``deposition`` = k_dep·V, ``inactivation`` = k_inact·V. [m3/h]
    """
    v = _nonneg("volume", volume)
    parts = {
        "outdoor_air": _nonneg("outdoor_airflow", outdoor_airflow),
        "recirculation_filter": _fraction("recirc_efficiency", recirc_efficiency)
        * _nonneg("recirc_airflow", recirc_airflow),
        "air_cleaner": _nonneg("cadr", cadr),
        "deposition": _nonneg("k_deposition", k_deposition) * v,
        "inactivation": _nonneg("k_inactivation", k_inactivation) * v,
    }
    if all(np.ndim(p) == 0 for p in parts.values()):  # one zone: numpy scalars, no copies
        return {k: np.float64(p) for k, p in parts.items()}
    shape = np.broadcast_shapes(*(np.shape(p) for p in parts.values()))
    return {k: _out(np.broadcast_to(p, shape).copy()) for k, p in parts.items()}


def loss_rate(volume, outdoor_airflow, recirc_airflow=0.0, recirc_efficiency=0.0, cadr=0.0,
              k_deposition=0.0, k_inactivation=0.0):
    """First-order loss rate of the zone, λ.

    ``λ = (Q_oa + η_rec·Q_rec + CADR) / V + k_dep + k_inact`` (domain.md §4). With outdoor air
    alone it is the outdoor-air change rate (ACH).

    Parameters
    ----------
    volume : float or array_like
        Zone volume; must be > 0. [m3]
    outdoor_airflow, recirc_airflow, recirc_efficiency, cadr, k_deposition, k_inactivation
        As in :func:`loss_breakdown`. [m3/h], [m3/h], [-], [m3/h], [1/h], [1/h]

    Returns
    -------
    float or ndarray
        λ. [1/h]
    """
    v = _positive("volume", volume)
    return _out(_clean_airflow(v, outdoor_airflow, recirc_airflow, recirc_efficiency, cadr,
                               k_deposition, k_inactivation) / v)


def inactivation_rate_from_half_life(half_life):
    """First-order inactivation rate from a half-life: ``k_inact = ln 2 / t½`` (domain.md §4).

    Parameters
    ----------
    half_life : float or array_like
        Half-life; must be > 0. [h]

    Returns
    -------
    float or ndarray
        k_inact. [1/h]
    """
    return _out(np.log(2.0) / _positive("half_life", half_life))


# --------------------------------------------------------------------------- steady state


def steady_state_concentration(generation, volume, outdoor_airflow, outdoor_concentration=0.0,
                               outdoor_filter_efficiency=0.0, recirc_airflow=0.0,
                               recirc_efficiency=0.0, cadr=0.0, k_deposition=0.0,
                               k_inactivation=0.0):
    """Steady concentration of a well-mixed zone.

    ``C_ss = (G + Q_oa·(1 − η_oa)·C_out) / (λ·V)`` (domain.md §4); with clean supply and no
    other loss, ``C_ss = G / Q_oa``.

    Parameters
    ----------
    generation : float or array_like
        Generation rate G. [C·m3/h]
    volume : float or array_like
        Zone volume (enters only through deposition and inactivation). [m3]
    outdoor_airflow : float or array_like
        Outdoor airflow, Q_oa. [m3/h]
    outdoor_concentration : float or array_like
        Outdoor concentration, C_out. [C]
    outdoor_filter_efficiency : float or array_like
        Efficiency of the filter on outdoor air, η_oa. [-]
    recirc_airflow, recirc_efficiency, cadr, k_deposition, k_inactivation
        As in :func:`loss_rate`. [m3/h], [-], [m3/h], [1/h], [1/h]

    Returns
    -------
    float or ndarray
        C_ss. [C]

    Raises
    ------
    ValueError
        If the equivalent clean airflow is zero (no steady state exists).
    """
    q_clean = _clean_airflow(volume, outdoor_airflow, recirc_airflow, recirc_efficiency, cadr,
                             k_deposition, k_inactivation)
    if np.any(q_clean <= 0):
        raise ValueError("no removal at all (λ·V = 0): the concentration has no steady state")
    source = (_nonneg("generation", generation)
              + _nonneg("outdoor_airflow", outdoor_airflow)
              * (1 - _fraction("outdoor_filter_efficiency", outdoor_filter_efficiency))
              * _nonneg("outdoor_concentration", outdoor_concentration))
    with np.errstate(over="ignore"):  # a removal too small for the float range gives inf
        return _out(source / q_clean)


def breathing_zone_concentration(c_supply, c_exhaust, ez):
    """Breathing-zone concentration from the zone air distribution effectiveness.

    ``C_bz = C_supply + (C_exhaust − C_supply) / Ez`` (domain.md §4, "Breathing zone").

    Parameters
    ----------
    c_supply : float or array_like
        Concentration of the supply air. [C]
    c_exhaust : float or array_like
        Concentration of the exhaust (return) air. [C]
    ez : float or array_like
        Zone air distribution effectiveness Ez; must be > 0. [-]

    Returns
    -------
    float or ndarray
        C_bz. [C]
    """
    cs = np.asarray(c_supply, dtype=float)
    return _out(cs + (np.asarray(c_exhaust, dtype=float) - cs) / _positive("ez", ez))


def co2_excess_ppm(generation_Ls, airflow_Ls):  # noqa: N803 - trade unit in the name
    """Steady CO2 excess over outdoor air, ``ΔC = 10⁶ · G / Q`` (domain.md §4, CO2 tracer).

    Both flows are in **litres per second** (ppm is a volume fraction × 10⁶, so only their
    ratio matters).

    Parameters
    ----------
    generation_Ls : float or array_like
        CO2 generation. [L/s]
    airflow_Ls : float or array_like
        Outdoor airflow diluting it; must be > 0. [L/s]

    Returns
    -------
    float or ndarray
        Excess CO2 concentration. [ppm]
    """
    return _out(1e6 * _nonneg("generation_Ls", generation_Ls) / _positive("airflow_Ls", airflow_Ls))


def dcv_setpoint_ppm(outdoor_ppm, co2_generation_per_person_Ls,  # noqa: N803
                     outdoor_air_per_person_Ls):
    """CO2 set point that holds a zone at its outdoor air per person at steady state.

    ``C_zone = C_out + 10⁶ · N / Voz_per_person`` (domain.md §2, "Demand-controlled
    ventilation", from the §4 balance). Flows in **litres per second**.

    Parameters
    ----------
    outdoor_ppm : float or array_like
        Outdoor CO2 concentration. [ppm]
    co2_generation_per_person_Ls : float or array_like
        CO2 generation per person, N. [L/s]
    outdoor_air_per_person_Ls : float or array_like
        Outdoor airflow per person to hold; must be > 0. [L/s]

    Returns
    -------
    float or ndarray
        Zone CO2 set point. [ppm]
    """
    return _out(_nonneg("outdoor_ppm", outdoor_ppm)
                + co2_excess_ppm(co2_generation_per_person_Ls, outdoor_air_per_person_Ls))


# --------------------------------------------------------------------------- transients


def transient_concentration(c0, c_ss, lam, t):
    """Concentration after a time t at constant inputs.

    ``C(t) = C_ss + (C0 − C_ss)·e^(−λt)`` (domain.md §4, "Transient").

    Parameters
    ----------
    c0 : float or array_like
        Concentration at t = 0. [C]
    c_ss : float or array_like
        Steady concentration for the constant inputs. [C]
    lam : float or array_like
        Loss rate λ. [1/h]
    t : float or array_like
        Elapsed time, >= 0. [h]

    Returns
    -------
    float or ndarray
        C(t). [C]
    """
    c_ss = np.asarray(c_ss, dtype=float)
    decay = np.exp(-_nonneg("lam", lam) * _nonneg("t", t))
    return _out(c_ss + (np.asarray(c0, dtype=float) - c_ss) * decay)


def time_to_fraction_removed(lam, fraction):
    """Time for the concentration to fall by a fraction f once the source stops.

    ``t = ln(1 / (1 − f)) / λ`` (domain.md §4; CDC, Guidelines for Environmental Infection
    Control in Health-Care Facilities, 2003, Appendix B, Table B.1 footnote formula).

    Parameters
    ----------
    lam : float or array_like
        Loss rate λ; must be > 0. [1/h]
    fraction : float or array_like
        Fraction removed f, 0 <= f < 1 (0.99 for 99 %). [-]

    Returns
    -------
    float or ndarray
        Time. [h]
    """
    f = _fraction("fraction", fraction, open_top=True)
    with np.errstate(over="ignore"):  # a loss rate too small for the float range gives inf
        return _out(-np.log1p(-f) / _positive("lam", lam))


def time_to_fraction_of_steady_state(lam, fraction=0.95):
    """Time for a clean zone to reach a fraction f of its steady concentration [h].

    From ``C/C_ss = 1 − e^(−λt)``: ``t = ln(1 / (1 − f)) / λ``; 95 % takes about 3/λ
    (domain.md §4, and §2: the short-term averaging time T = 3·v/Vbz). ``lam`` is λ > 0
    [1/h]; ``fraction`` is f, 0 <= f < 1 [-]. Same formula as
    :func:`time_to_fraction_removed`.
    """
    return time_to_fraction_removed(lam, fraction)


# --------------------------------------------------------------------------- piecewise


class PiecewiseSolution(NamedTuple):
    """Exact solution for piecewise-constant inputs.

    On piece j, for ``τ = t − breaks[j]``:
    ``C(τ) = c_start[j]·e^(−λ_j τ) + s_j·τ·φ(λ_j τ)``, ``φ(x) = (1 − e^(−x))/x``,
    which is ``C_ss + (C0 − C_ss)e^(−λτ)`` written so that λ = 0 is allowed.

    Attributes
    ----------
    breaks : ndarray, shape (n_pieces + 1,)
        Times that bound the pieces. [h]
    c_start : ndarray, shape (n_pieces, *zone_shape)
        Concentration at the start of each piece. [C]
    loss_rate : ndarray, shape (n_pieces, *zone_shape)
        λ on each piece. [1/h]
    source_rate : ndarray, shape (n_pieces, *zone_shape)
        s = (G + Q_oa·(1 − η_oa)·C_out) / V on each piece. [C/h]
    c_end : ndarray, shape zone_shape
        Concentration at ``breaks[-1]``. [C]
    """

    breaks: np.ndarray
    c_start: np.ndarray
    loss_rate: np.ndarray
    source_rate: np.ndarray
    c_end: np.ndarray


def _per_piece(name, value, n_pieces, zone_nd, *, allow_pieces=True):
    """Give an input the leading piece axis: ndim <= zone_nd is constant in time."""
    a = np.asarray(value, dtype=float)
    if a.ndim <= zone_nd:
        return a.reshape((1,) * (zone_nd + 1 - a.ndim) + a.shape)
    if not allow_pieces or a.ndim != zone_nd + 1 or a.shape[0] not in (1, n_pieces):
        raise ValueError(f"{name} has shape {a.shape}: expected the zone shape, or "
                         f"(n_pieces={n_pieces}, *zone_shape) where it may vary per piece")
    return a


def piecewise_solution(times_breaks, generation_per_piece, volume, outdoor_airflow, c0, *,
                       outdoor_concentration=0.0, outdoor_filter_efficiency=0.0,
                       recirc_airflow=0.0, recirc_efficiency=0.0, cadr=0.0, k_deposition=0.0,
                       k_inactivation=0.0):
    """Exact solution of the zone balance for inputs constant on each piece.

    Piece by piece ``C(t) = C_ss + (C0 − C_ss)·e^(−λt)`` (domain.md §4, "Transient": exact
    for a piecewise-constant schedule); the end of one piece starts the next. Cost O(n_pieces
    × n_zones), vectorised over zones.

    Layout: ``generation_per_piece`` has shape ``(n_pieces, *zone_shape)`` — use
    ``(n_pieces, 1)`` for one profile shared by many zones. Every other input is either
    constant, with at most ``len(zone_shape)`` dimensions (broadcast against the zone shape),
    or varies per piece with shape ``(n_pieces, *zone_shape)``. ``volume`` and ``c0`` are
    constant.

    Parameters
    ----------
    times_breaks : array_like, shape (n_pieces + 1,)
        Strictly increasing times bounding the pieces. [h]
    generation_per_piece : array_like, shape (n_pieces, *zone_shape)
        Generation on each piece. [C·m3/h]
    volume : float or array_like
        Zone volume; > 0. [m3]
    outdoor_airflow : float or array_like
        Outdoor airflow Q_oa. [m3/h]
    c0 : float or array_like
        Concentration at ``times_breaks[0]``. [C]
    outdoor_concentration : float or array_like
        C_out. [C]
    outdoor_filter_efficiency : float or array_like
        η_oa. [-]
    recirc_airflow, recirc_efficiency, cadr, k_deposition, k_inactivation
        As in :func:`loss_rate`. [m3/h], [-], [m3/h], [1/h], [1/h]

    Returns
    -------
    PiecewiseSolution
    """
    b = _check_breaks(times_breaks)
    n = b.size - 1
    g = np.asarray(generation_per_piece, dtype=float)
    if g.ndim < 1 or g.shape[0] not in (1, n):
        raise ValueError(f"generation_per_piece needs a leading axis of n_pieces={n}")
    nd = g.ndim - 1

    def piece(name, value):
        return _per_piece(name, value, n, nd)

    v = _positive("volume", _per_piece("volume", volume, n, nd, allow_pieces=False))
    q_oa = piece("outdoor_airflow", outdoor_airflow)
    q_clean = _clean_airflow(v, q_oa, piece("recirc_airflow", recirc_airflow),
                             piece("recirc_efficiency", recirc_efficiency), piece("cadr", cadr),
                             piece("k_deposition", k_deposition),
                             piece("k_inactivation", k_inactivation))
    source = (_nonneg("generation_per_piece", g) + _nonneg("outdoor_airflow", q_oa)
              * (1 - _fraction("outdoor_filter_efficiency",
                               piece("outdoor_filter_efficiency", outdoor_filter_efficiency)))
              * _nonneg("outdoor_concentration",
                        piece("outdoor_concentration", outdoor_concentration)))
    c_init = np.asarray(c0, dtype=float)
    if c_init.ndim > nd or np.any(c_init < 0):
        raise ValueError("c0 must be >= 0 with at most the zone shape")
    shape = np.broadcast_shapes((n,) + (1,) * nd, q_clean.shape, source.shape,
                                (1,) + c_init.shape)
    lam = np.broadcast_to(q_clean / v, shape)
    s = np.broadcast_to(source / v, shape)
    c_start = np.empty(shape)
    c = np.broadcast_to(c_init, shape[1:]).astype(float)
    for j, dt in enumerate(np.diff(b)):  # sequential in time, vectorised over zones
        c_start[j] = c
        c = _on_piece(c, lam[j], s[j], [dt])[0]
    return PiecewiseSolution(b, c_start, np.array(lam), np.array(s), c)


def evaluate_piecewise(solution, times):
    """Concentration of a piecewise solution at given times (exact).

    Parameters
    ----------
    solution : PiecewiseSolution
        From :func:`piecewise_solution`.
    times : array_like, shape (n_times,)
        Times within ``[breaks[0], breaks[-1]]``, in any order. [h]

    Returns
    -------
    ndarray, shape (n_times, *zone_shape)
        Concentration. [C]
    """
    t, b = np.atleast_1d(np.asarray(times, dtype=float)), solution.breaks
    if t.ndim != 1 or np.any(~np.isfinite(t)) or np.any((t < b[0]) | (t > b[-1])):
        raise ValueError(f"times must be 1-D and lie within [{b[0]}, {b[-1]}] h")
    idx = np.clip(np.searchsorted(b, t, side="right") - 1, 0, b.size - 2)
    extra = (1,) * (solution.c_start.ndim - 1)
    out = np.empty(t.shape + solution.c_start.shape[1:])
    in_order = bool(np.all(np.diff(idx) >= 0))  # sorted times: each piece is one slice
    order = np.arange(t.size) if in_order else np.argsort(idx, kind="stable")
    starts = np.searchsorted(idx[order], np.arange(solution.breaks.size))
    for j in np.flatnonzero(np.diff(starts)):  # loop over pieces; zones stay vectorised
        lo, hi = starts[j], starts[j + 1]
        sel = slice(lo, hi) if in_order else order[lo:hi]
        tau = (t[sel] - solution.breaks[j]).reshape((-1,) + extra)
        block = out[sel] if in_order else np.empty((hi - lo,) + out.shape[1:])
        _on_piece(solution.c_start[j], solution.loss_rate[j], solution.source_rate[j], tau,
                  block)
        if not in_order:
            out[sel] = block
    return out


def piecewise_transient(times_breaks, generation_per_piece, volume, outdoor_airflow, c0,
                        output_times, *, outdoor_concentration=0.0,
                        outdoor_filter_efficiency=0.0, recirc_airflow=0.0,
                        recirc_efficiency=0.0, cadr=0.0, k_deposition=0.0, k_inactivation=0.0):
    """Concentration at output times for piecewise-constant inputs (exact; domain.md §4).

    :func:`piecewise_solution` (same arguments and units) then :func:`evaluate_piecewise` at
    ``output_times`` (shape (n_times,), within the span of ``times_breaks``, any order) [h].
    Returns an ndarray of shape (n_times, *zone_shape). [C]
    """
    sol = piecewise_solution(
        times_breaks, generation_per_piece, volume, outdoor_airflow, c0,
        outdoor_concentration=outdoor_concentration,
        outdoor_filter_efficiency=outdoor_filter_efficiency, recirc_airflow=recirc_airflow,
        recirc_efficiency=recirc_efficiency, cadr=cadr, k_deposition=k_deposition,
        k_inactivation=k_inactivation)
    return evaluate_piecewise(sol, output_times)


def _window(solution, t_start, t_end):
    b = solution.breaks
    a = b[0] if t_start is None else float(t_start)
    e = b[-1] if t_end is None else float(t_end)
    if not (b[0] <= a < e <= b[-1]):
        raise ValueError(f"need {b[0]} <= t_start < t_end <= {b[-1]} h")
    return a, e


def time_weighted_average(solution, t_start=None, t_end=None):
    """Exact time-weighted average concentration over a window.

    Integral of each exponential piece in closed form:
    ``∫₀ᵀ C dτ = c_start·T·φ(λT) + s·T²·ψ(λT)``, ``ψ(x) = (x − 1 + e^(−x))/x²``, summed over
    the pieces the window covers and divided by its length (domain.md §4 transient, integrated).

    Parameters
    ----------
    solution : PiecewiseSolution
        From :func:`piecewise_solution`.
    t_start, t_end : float, optional
        Averaging window; defaults to the whole solution. [h]

    Returns
    -------
    float or ndarray, shape zone_shape
        Time-weighted average. [C]
    """
    a, e = _window(solution, t_start, t_end)
    b = solution.breaks
    extra = (1,) * (solution.c_start.ndim - 1)
    lo = (np.clip(a, b[:-1], b[1:]) - b[:-1]).reshape((-1,) + extra)
    hi = (np.clip(e, b[:-1], b[1:]) - b[:-1]).reshape((-1,) + extra)

    def integral(tau):
        x = solution.loss_rate * tau
        return solution.c_start * tau * _phi(x) + solution.source_rate * tau**2 * _psi(x)

    return _out((integral(hi) - integral(lo)).sum(axis=0) / (e - a))


def peak_concentration(solution, t_start=None, t_end=None):
    """Exact peak concentration over a window, and when it occurs.

    On each piece C(t) moves monotonically towards its steady value, so the maximum over the
    window is attained at a piece boundary or a window end (domain.md §4 transient).

    Parameters
    ----------
    solution : PiecewiseSolution
        From :func:`piecewise_solution`.
    t_start, t_end : float, optional
        Window; defaults to the whole solution. [h]

    Returns
    -------
    peak : float or ndarray, shape zone_shape
        Largest concentration. [C]
    time_of_peak : float or ndarray, shape zone_shape
        First time it is reached. [h]
    """
    a, e = _window(solution, t_start, t_end)
    b = solution.breaks
    candidates = np.concatenate(([a], b[(b > a) & (b < e)], [e]))
    values = evaluate_piecewise(solution, candidates)
    k = np.argmax(values, axis=0)
    return _out(np.max(values, axis=0)), _out(candidates[k])
