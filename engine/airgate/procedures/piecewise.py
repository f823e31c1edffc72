"""Exact solution of the well-mixed zone balance for inputs constant on each piece of time.

An occupancy profile makes the generation (and possibly airflows and losses) piecewise
constant; on each piece the balance ``dC/dt = s − λ·C`` of
:mod:`airgate.procedures.dilution` has constant coefficients, so its solution is exact piece by
piece, ``C(τ) = C_ss + (C0 − C_ss)·e^(−λτ)``, the end of one piece starting the next; averages
and peaks over a window follow in closed form. Units as in :mod:`airgate.procedures.dilution`:
airflow [L/s], volume [m3], time [h], rates [1/h] (``PER_HOUR·Q/V``), concentration [C],
generation [C·L/s].
Invalid input raises ValueError naming the parameter.

References
----------
.. [1] Nazaroff, W.W. and Alvarez-Cohen, L. (2001). *Environmental Engineering Science*. Wiley,
   New York: CMFR transient with first-order losses, exact for constant inputs.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from airgate.procedures.losses import equivalent_clean_airflow
from airgate.procedures.numeric import (
    PER_HOUR,
    check_breaks as _check_breaks,
    fraction as _fraction,
    nonneg as _nonneg,
    out as _out,
    phi as _phi,
    positive as _positive,
    psi as _psi,
)

__all__ = ["PiecewiseSolution", "evaluate_piecewise", "peak_concentration",
           "piecewise_solution", "piecewise_transient", "time_weighted_average"]


def _on_piece(c_start, lam, source_rate, tau, out=None):
    """C(τ) = C0·e^(−λτ) + s·τ·φ(λτ) on one piece (the CMFR transient), at times τ (n_t values)
    for every zone, into ``out`` (n_t, *zone shape; allocated when None).

    One transcendental per value, in the form free of cancellation for each zone: a zone
    falling towards its steady state ``C_ss = s/λ`` (C0 > C_ss) as
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
    linear = ~(np.abs(s) * 1e-300 < lam)  # λ = 0 or s/λ out of range (no overflow at any λ)
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
        s = 3.6·(G + Q_oa·(1 − η_oa)·C_out + Q_mu·C_mu) / V on each piece. [C/h]
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
                       k_inactivation=0.0, makeup_airflow=0.0, makeup_concentration=0.0):
    """Exact solution of the zone balance for inputs constant on each piece.

    Piece by piece ``C(t) = C_ss + (C0 − C_ss)·e^(−λt)`` (the CMFR transient, exact for a
    piecewise-constant schedule); the end of one piece starts the next. Cost O(n_pieces
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
        Generation on each piece. [C·L/s]
    volume : float or array_like
        Zone volume; > 0. [m3]
    outdoor_airflow : float or array_like
        Outdoor airflow Q_oa. [L/s]
    c0 : float or array_like
        Concentration at ``times_breaks[0]``. [C]
    outdoor_concentration : float or array_like
        C_out. [C]
    outdoor_filter_efficiency : float or array_like
        η_oa. [-]
    recirc_airflow, recirc_efficiency, cadr, k_deposition, k_inactivation
        As in :func:`~airgate.procedures.losses.loss_rate`. [L/s], [-], [L/s], [1/h], [1/h]
    makeup_airflow, makeup_concentration
        Makeup air besides the supply and its concentration (constant on each piece), as in
        :func:`~airgate.procedures.dilution.steady_state_concentration`. [L/s], [C]

    Returns
    -------
    PiecewiseSolution

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR transient.

    Examples
    --------
    A 90 m³ room at 6 air changes per hour (150 L/s), occupied for an hour then empty, with a
    generation that holds 1 at steady state:

    >>> sol = piecewise_solution([0.0, 1.0, 2.0], [[150.0], [0.0]], 90.0, 150.0, 0.0)
    >>> [round(float(c), 6) for c in sol.c_end]  # (1 − e^-6)·e^-6
    [0.002473]
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
    q_clean = np.asarray(equivalent_clean_airflow(v, q_oa, piece("recirc_airflow", recirc_airflow),
                             piece("recirc_efficiency", recirc_efficiency), piece("cadr", cadr),
                             piece("k_deposition", k_deposition),
                             piece("k_inactivation", k_inactivation),
                             piece("makeup_airflow", makeup_airflow)))
    source = (_nonneg("generation_per_piece", g) + _nonneg("outdoor_airflow", q_oa)
              * (1 - _fraction("outdoor_filter_efficiency",
                               piece("outdoor_filter_efficiency", outdoor_filter_efficiency)))
              * _nonneg("outdoor_concentration",
                        piece("outdoor_concentration", outdoor_concentration))
              + _nonneg("makeup_airflow", piece("makeup_airflow", makeup_airflow))
              * _nonneg("makeup_concentration",
                        piece("makeup_concentration", makeup_concentration)))
    c_init = _nonneg("c0", c0)
    if c_init.ndim > nd:
        raise ValueError("c0 must have at most the zone shape")
    shape = np.broadcast_shapes((n,) + (1,) * nd, q_clean.shape, source.shape,
                                (1,) + c_init.shape)
    lam = np.broadcast_to(PER_HOUR * q_clean / v, shape)
    s = np.broadcast_to(PER_HOUR * source / v, shape)
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

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR transient.

    Examples
    --------
    After one time constant (1/6 h) a clean room holds 1 − 1/e of its steady value G/Q = 1:

    >>> sol = piecewise_solution([0.0, 1.0], [150.0], 90.0, 150.0, 0.0)
    >>> round(float(evaluate_piecewise(sol, [1 / 6])[0]), 9)
    0.632120559
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
                        recirc_efficiency=0.0, cadr=0.0, k_deposition=0.0, k_inactivation=0.0,
                        makeup_airflow=0.0, makeup_concentration=0.0):
    """Concentration at output times for piecewise-constant inputs (exact).

    :func:`piecewise_solution` then :func:`evaluate_piecewise`.

    Parameters
    ----------
    times_breaks, generation_per_piece, volume, outdoor_airflow, c0
        As in :func:`piecewise_solution`. [h], [C·L/s], [m3], [L/s], [C]
    output_times : array_like, shape (n_times,)
        Times within the span of ``times_breaks``, any order. [h]
    outdoor_concentration, outdoor_filter_efficiency, recirc_airflow, recirc_efficiency
        As in :func:`piecewise_solution`. [C], [-], [L/s], [-]
    cadr, k_deposition, k_inactivation, makeup_airflow, makeup_concentration
        As in :func:`piecewise_solution`. [L/s], [1/h], [1/h], [L/s], [C]

    Returns
    -------
    ndarray, shape (n_times, *zone_shape)
        Concentration. [C]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR transient.

    Examples
    --------
    Two zones sharing one profile, at the end of the occupied hour:

    >>> c = piecewise_transient([0.0, 1.0, 2.0], [[150.0], [0.0]], 90.0, [150.0, 75.0], 0.0,
    ...                         [1.0])
    >>> [round(float(x), 6) for x in c[0]]
    [0.997521, 1.900426]
    """
    sol = piecewise_solution(
        times_breaks, generation_per_piece, volume, outdoor_airflow, c0,
        outdoor_concentration=outdoor_concentration,
        outdoor_filter_efficiency=outdoor_filter_efficiency, recirc_airflow=recirc_airflow,
        recirc_efficiency=recirc_efficiency, cadr=cadr, k_deposition=k_deposition,
        k_inactivation=k_inactivation, makeup_airflow=makeup_airflow,
        makeup_concentration=makeup_concentration)
    t, b = np.atleast_1d(np.asarray(output_times, dtype=float)), sol.breaks
    if t.ndim != 1 or np.any(~np.isfinite(t)) or np.any((t < b[0]) | (t > b[-1])):
        raise ValueError(f"output_times must be 1-D and lie within [{b[0]}, {b[-1]}] h")
    return evaluate_piecewise(sol, t)


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
    the pieces the window covers and divided by its length (the CMFR transient, integrated).

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

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR transient; integral derived by hand.

    Examples
    --------
    A zone starting at its steady value stays there, so its average is that value:

    >>> sol = piecewise_solution([0.0, 4.0], [150.0], 90.0, 150.0, 1.0)
    >>> round(float(time_weighted_average(sol)), 12)
    1.0
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
    window is attained at a piece boundary or a window end (the CMFR transient).

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

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR transient (monotone on each piece).

    Examples
    --------
    Occupied for an hour, then empty: the peak is at the end of the occupied hour.

    >>> sol = piecewise_solution([0.0, 1.0, 2.0], [[150.0], [0.0]], 90.0, 150.0, 0.0)
    >>> peak, when = peak_concentration(sol)
    >>> round(float(peak[0]), 6), float(when[0])  # 1 − e^-6
    (0.997521, 1.0)
    """
    a, e = _window(solution, t_start, t_end)
    b = solution.breaks
    candidates = np.concatenate(([a], b[(b > a) & (b < e)], [e]))
    values = evaluate_piecewise(solution, candidates)
    k = np.argmax(values, axis=0)
    return _out(np.max(values, axis=0)), _out(candidates[k])


def largest_window_mean(fractions: np.ndarray, samples: float) -> float:
    """The largest mean of the daily, repeating profile ``fractions`` [–] (one value per
    sample) over any window of ``samples`` samples (rounded, at least one) [–].

    No array is longer than two days, whatever the window: a window of ``k`` whole days and
    ``r`` samples holds ``k`` times the day's sum plus the sum of ``r`` consecutive samples, so
    only windows shorter than a day are slid. A window too long to count (an infinite T) is the
    day's mean, the limit of ever longer windows.
    """
    n = fractions.size
    if not np.isfinite(samples):
        return float(np.mean(fractions))
    window = max(1, int(round(samples)))
    if window <= n:
        kernel = np.ones(window) / window
        cyclic = np.concatenate([fractions, fractions[: window - 1]])
        return float(np.max(np.convolve(cyclic, kernel, mode="valid")))
    days, rest = divmod(window, n)
    part = 0.0
    if rest:
        cyclic = np.concatenate([fractions, fractions[: rest - 1]])
        part = float(np.max(np.convolve(cyclic, np.ones(rest), mode="valid")))
    return (days * float(np.sum(fractions)) + part) / window
