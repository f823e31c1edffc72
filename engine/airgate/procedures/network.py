"""Well-mixed zones coupled by any airflows between them: the general linear balance.

Pure functions on numpy arrays in the units of :mod:`airgate.procedures.dilution` (airflow
L/s, volume m3, time h, generation ``C·L/s``). Zone z of volume V_z receives air from the
other zones, ``F[z, y]`` [L/s] from zone y (transferred makeup, or a recirculating system's
supply, in which zone y's return is mixed), removes ``D_z`` [L/s] (every outflow at its own
concentration plus first-order losses as equivalent airflows) and has a source ``g_z``
[C·L/s] (generation, and outdoor air at the outdoor concentration)::

    V_z·dC_z/dt = 3.6·[g_z + Σ_y F[z, y]·C_y − D_z·C_z]

A transfer between two zones of a recirculating system adds an entry off the diagonal that the
diagonal-plus-rank-one structure of :mod:`airgate.procedures.coupled` cannot hold, so such a
system is solved here as a whole: the steady state by a dense solve (``numpy.linalg.solve``,
O(N³)), the transient by the exact propagator of one time step, computed by uniformization: with
``A = 3.6·(F − diag(D))/V`` and ``q >= max_z(−A_zz)``, ``P = A + q·I`` has no negative entry,
so ``e^(A·h) = e^(−qh)·Σ_k (P·h)^k/k!`` and ``∫₀ʰ e^(A·s) ds = Σ_k P^k·∫₀ʰ e^(−qs) s^k/k! ds``
are sums of non-negative terms (no cancellation), summed until the rest is below 1e-17 of the
total. A source constant on each step then gives the exact solution at every step; a defective
A (two equal zones in series) needs no special care. O(N³) once per step length, then O(N²) per
step.

References
----------
.. [1] Nazaroff, W.W. and Alvarez-Cohen, L. (2001). *Environmental Engineering Science*. Wiley,
   New York: material balance on completely mixed flow reactors in series and in networks.
.. [2] Moler, C. and Van Loan, C. (2003). Nineteen dubious ways to compute the exponential of a
   matrix, twenty-five years later. *SIAM Review* 45(1): 3–49 (uniformization, Method 3, and
   its non-negative series for essentially non-negative matrices).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from airgate.procedures.numeric import PER_HOUR, nonneg as _nonneg, positive as _positive

__all__ = ["network_march", "network_propagator", "network_steady_state"]

_TAIL = 1e-17
_MAX_TERMS = 2000


def _inputs(volume, inflow, removal):
    f = _nonneg("inflow", inflow)
    if f.ndim != 2 or f.shape[0] != f.shape[1]:
        raise ValueError("inflow must be a square (n_zones, n_zones) matrix")
    n = f.shape[0]
    if np.any(np.diag(f) != 0):
        raise ValueError("inflow must have a zero diagonal (a zone's own air is not an inflow)")
    d = np.broadcast_to(_nonneg("removal", removal), (n,))
    v = np.broadcast_to(_positive("volume", volume), (n,))
    return f, d, v


def network_steady_state(generation, volume, inflow, removal):
    """Steady concentrations of zones coupled by any airflows.

    Solves ``(diag(D) − F)·C = g`` (module model) with a dense LU solve.

    Parameters
    ----------
    generation : array_like, shape (n_zones,)
        Source g_z: generation plus outdoor inflows times the outdoor concentration. [C·L/s]
    volume : float or array_like, shape (n_zones,)
        Zone volume (checked only; a steady state does not depend on it). [m3]
    inflow : array_like, shape (n_zones, n_zones)
        ``F[z, y]``: air from zone y entering zone z, zero diagonal. [L/s]
    removal : array_like, shape (n_zones,)
        D_z: every outflow of zone z plus its first-order losses as airflows. [L/s]

    Returns
    -------
    ndarray, shape (n_zones,)
        Zone concentrations. [C]

    Raises
    ------
    ValueError
        Where no steady state exists (a group of zones removes nothing).

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR material balances in a network.

    Examples
    --------
    Zone 1 (100 C·L/s, 50 L/s of outdoor air) passes 30 L/s to zone 2, which also takes 20 L/s
    of outdoor air: by hand C_1 = 100/80 = 1.25 (it loses 50 + 30) and
    C_2 = 30·1.25/50 = 0.75:

    >>> c = network_steady_state([100.0, 0.0], 30.0, [[0.0, 0.0], [30.0, 0.0]], [80.0, 50.0])
    >>> [round(float(x), 12) for x in c]
    [1.25, 0.75]
    """
    f, d, _ = _inputs(volume, inflow, removal)
    g = np.broadcast_to(_nonneg("generation", generation), d.shape)
    m = np.diag(d) - f
    try:
        c = np.linalg.solve(m, g)
    except np.linalg.LinAlgError:
        raise ValueError("the zones remove nothing (no outdoor air, exhaust or loss reaches "
                         "some of them): no steady state") from None
    if not np.all(np.isfinite(c)) or np.any(c < -1e-9 * max(1.0, float(np.max(np.abs(c))))):
        raise ValueError("the zones remove nothing (no outdoor air, exhaust or loss reaches "
                         "some of them): no steady state")
    return np.maximum(c, 0.0)


class Propagator(NamedTuple):
    """Exact one-step solution ``C(t + h) = Phi·C(t) + Gamma·s`` for a constant source rate
    ``s = 3.6·g/V`` [C/h]."""

    phi: np.ndarray  #: e^(A·h), (n, n)
    gamma: np.ndarray  #: ∫₀ʰ e^(A·s) ds, (n, n) [h]


def network_propagator(volume, inflow, removal, step):
    """The exact propagator of one time step of the zone network (uniformization).

    Parameters
    ----------
    volume : float or array_like, shape (n_zones,)
        Zone volume V_z (> 0). [m3]
    inflow : array_like, shape (n_zones, n_zones)
        ``F[z, y]``, zero diagonal. [L/s]
    removal : array_like, shape (n_zones,)
        D_z. [L/s]
    step : float
        Time step h (> 0). [h]

    Returns
    -------
    Propagator
        ``phi`` = e^(A·h) [-] and ``gamma`` = ∫₀ʰ e^(A·s) ds [h], A = 3.6·(F − diag(D))/V.

    References
    ----------
    Moler & Van Loan (2003), uniformization; Nazaroff & Alvarez-Cohen (2001), CMFR transient.

    Examples
    --------
    One zone at λ = 3.6·50/90 = 2 per hour over half an hour: e^(−1) and (1 − e^(−1))/2:

    >>> p = network_propagator(90.0, [[0.0]], [50.0], 0.5)
    >>> round(float(p.phi[0, 0]), 12), round(float(p.gamma[0, 0]), 12)
    (0.367879441171, 0.316060279414)
    """
    f, d, v = _inputs(volume, inflow, removal)
    h = float(_positive("step", step))
    a = PER_HOUR * (f - np.diag(d)) / v[:, None]
    q = float(np.max(PER_HOUR * d / v)) if d.size else 0.0
    n = d.size
    if q * h > 700:
        raise ValueError(f"step {h} h is too long for the fastest zone rate {q:g} 1/h "
                         "(e^(−q·h) underflows); use a shorter step")
    p = a + q * np.eye(n)
    term = np.eye(n)  # (P·h)^k / k!
    weight = np.exp(-q * h)  # Poisson probability of k events, k = 0
    tail = 1.0 - weight  # probability of more than k events
    phi = weight * term
    # ∫₀ʰ e^(−qs)·s^k/k! ds = tail_k / q^(k+1), tail_k = P(Poisson(qh) > k); for q = 0: h^(k+1)/(k+1)!
    gamma = (tail / q if q > 0 else h) * np.eye(n)
    pk = np.eye(n)  # P^k
    for k in range(1, _MAX_TERMS):
        pk = pk @ p
        if q > 0:
            weight *= q * h / k
            tail -= weight
            tail = max(tail, 0.0)
            phi_add = weight * pk / q**k
            gamma_add = (tail / q ** (k + 1)) * pk
        else:
            fact = h**k / np.prod(np.arange(1, k + 1, dtype=float))
            phi_add = fact * pk
            gamma_add = fact * h / (k + 1) * pk
        phi += phi_add
        gamma += gamma_add
        if (np.max(np.abs(phi_add)) <= _TAIL * np.max(np.abs(phi))
                and np.max(np.abs(gamma_add)) <= _TAIL * np.max(np.abs(gamma))):
            break
    return Propagator(phi, gamma)


def network_march(volume, inflow, removal, step, generation_per_step, c0):
    """Concentrations of the zone network at every step for a source constant on each step.

    ``C_(k+1) = Phi·C_k + Gamma·(3.6·g_k/V)`` with the exact propagator of
    :func:`network_propagator`: exact at every step (no numerical integration).

    Parameters
    ----------
    volume, inflow, removal, step
        As in :func:`network_propagator`. [m3], [L/s], [L/s], [h]
    generation_per_step : array_like, shape (n_steps, n_zones)
        Source g on each step. [C·L/s]
    c0 : float or array_like, shape (n_zones,)
        Concentrations at the start. [C]

    Returns
    -------
    ndarray, shape (n_steps + 1, n_zones)
        Concentrations at the start and after each step. [C]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR transient; Moler & Van Loan (2003).

    Examples
    --------
    One zone, λ = 2 per hour, source holding 1 at steady state, from 0: after one hour in
    two steps, 1 − e^(−2):

    >>> c = network_march(90.0, [[0.0]], [50.0], 0.5, [[50.0], [50.0]], 0.0)
    >>> round(float(c[-1, 0]), 12)
    0.864664716763
    """
    f, d, v = _inputs(volume, inflow, removal)
    g = _nonneg("generation_per_step", generation_per_step)
    if g.ndim != 2 or g.shape[1] != d.size:
        raise ValueError("generation_per_step must have shape (n_steps, n_zones)")
    prop = network_propagator(v, f, d, step)
    s = PER_HOUR * g / v[None, :]
    drive = s @ prop.gamma.T  # (n_steps, n)
    out = np.empty((g.shape[0] + 1, d.size))
    out[0] = np.broadcast_to(_nonneg("c0", c0), d.shape)
    phi_t = prop.phi.T
    for k in range(g.shape[0]):
        out[k + 1] = out[k] @ phi_t + drive[k]
    return out
