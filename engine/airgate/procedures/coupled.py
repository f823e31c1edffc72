"""Dilution in a multiple-zone recirculating system: zones coupled through a mixed supply.

Pure functions on plain floats and numpy arrays in SI (airflow m3/h, volume m3, rates 1/h,
time h, generation ``C·m3/h`` for a concentration unit ``C``), for one air handler serving
``n_zones`` zones (the zone axis is a 1-D array).

Model (domain.md §4, "Multiple-zone recirculating system", with filters, losses and exhaust)
---------------------------------------------------------------------------------------------
- Zone z (volume V_z) receives primary airflow Vpz of mixed supply at concentration C_s. It
  loses E_z of exhaust straight outdoors (0 <= E_z <= Vpz); the rest, Vpz − E_z, returns to
  the air handler. Air mass is balanced: what enters a zone leaves it; transfer air between
  zones and infiltration are not modelled.
- The air handler supplies Vps = ΣVpz: an outdoor intake Vot (fraction x = Vot/Vps) through a
  filter of efficiency η_oa, and recirculated return Vps − Vot through a filter of efficiency
  η_rec. The recirculated air has the mixed-return concentration C_r = Σ(Vpz − E_z)·C_z / R
  with R = Σ(Vpz − E_z); the return not recirculated, R − (Vps − Vot) = Vot − ΣE_z, is relieved
  at the air handler. Hence ΣE_z <= Vot <= Vps.
- ``C_s = [Vot·(1 − η_oa)·C_out + (Vps − Vot)·(1 − η_rec)·C_r] / Vps = a + Σ w_z·C_z``.
- Zone balance: ``V_z·dC_z/dt = G_z + Vpz·C_s − (Vpz + L_z)·C_z`` with the in-room losses
  ``L_z = CADR_z + (k_dep,z + k_inact,z)·V_z`` (domain.md §4 mass balance).

The system matrix is diagonal plus rank one (coupling only through the scalar C_s), which
gives the O(N) steady state below (Sherman–Morrison in closed form) and the exact transient.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from airgate.procedures.numeric import (
    check_breaks as _check_breaks,
    exp_and_integral as _exp_and_integral,
    fraction as _fraction,
    nonneg as _nonneg,
    phi as _phi,
    positive as _positive,
)

__all__ = [
    "CoupledSteadyState",
    "CoupledTransient",
    "coupled_piecewise_transient",
    "coupled_steady_state",
    "supply_coupling",
]

_EPS = np.finfo(float).eps
_FLOW_TOL = 1e-12  # relative slack on the air balance checks, for rounded inputs


class _System(NamedTuple):
    vps: float
    x: float  # outdoor fraction of supply, Vot/Vps
    r: float  # recirculated fraction of supply that passes the filter, (1 − η_rec)(Vps − Vot)/Vps
    one_minus_r: float  # computed without cancellation
    rho: np.ndarray  # return share of each zone, (Vpz − E_z)/R
    w: np.ndarray  # r·rho


def _system(primary_airflow, outdoor_intake, zone_exhaust, recirc_filter_efficiency):
    vpz = _nonneg("primary_airflow", primary_airflow)
    if vpz.ndim != 1:
        raise ValueError("primary_airflow must be a 1-D array over zones")
    exh = np.broadcast_to(_nonneg("zone_exhaust", zone_exhaust), vpz.shape)
    vot = float(_nonneg("outdoor_intake", outdoor_intake))
    eta = float(_fraction("recirc_filter_efficiency", recirc_filter_efficiency))
    vps = float(vpz.sum())
    if vps <= 0:
        raise ValueError("the system primary airflow ΣVpz must be > 0")
    if np.any(exh > vpz * (1 + _FLOW_TOL)):
        raise ValueError("zone_exhaust may not exceed the zone primary airflow")
    ret = np.maximum(vpz - exh, 0.0)
    if vot > vps * (1 + _FLOW_TOL) or vot < exh.sum() * (1 - _FLOW_TOL):
        raise ValueError(f"outdoor_intake must lie between the total zone exhaust "
                         f"{exh.sum():g} and ΣVpz {vps:g} m3/h to keep the air balance")
    recirc = max(vps - vot, 0.0)
    big_r = float(ret.sum())
    rho = ret / big_r if big_r > 0 else np.zeros_like(ret)
    r = (1 - eta) * recirc / vps
    one_minus_r = (min(vot, vps) + eta * recirc) / vps
    return _System(vps, min(vot, vps) / vps, r, one_minus_r, rho, r * rho)


def supply_coupling(primary_airflow, outdoor_intake, outdoor_concentration=0.0,
                    outdoor_filter_efficiency=0.0, recirc_filter_efficiency=0.0,
                    zone_exhaust=0.0):
    """Mixed-supply concentration as a linear function of the zone concentrations.

    ``C_s = a + Σ w_z·C_z`` with ``a = x·(1 − η_oa)·C_out`` and
    ``w_z = (1 − η_rec)·(1 − x)·(Vpz − E_z)/Σ(Vpz − E_z)`` (module model; domain.md §4).

    Parameters
    ----------
    primary_airflow : array_like, shape (n_zones,)
        Zone primary airflow Vpz. [m3/h]
    outdoor_intake : float
        Outdoor air intake Vot, between ΣE_z and ΣVpz. [m3/h]
    outdoor_concentration : float
        Outdoor concentration C_out. [C]
    outdoor_filter_efficiency : float
        Intake filter efficiency η_oa. [-]
    recirc_filter_efficiency : float
        Efficiency of the filter on recirculated air η_rec. [-]
    zone_exhaust : float or array_like, shape (n_zones,)
        Exhaust leaving each zone straight outdoors, E_z <= Vpz. [m3/h]

    Returns
    -------
    a : float
        Outdoor contribution to C_s. [C]
    w : ndarray, shape (n_zones,)
        Weight of each zone concentration in C_s; Σw = (1 − η_rec)(1 − x) or 0. [-]
    """
    s = _system(primary_airflow, outdoor_intake, zone_exhaust, recirc_filter_efficiency)
    eta_oa = float(_fraction("outdoor_filter_efficiency", outdoor_filter_efficiency))
    a = s.x * (1 - eta_oa) * float(_nonneg("outdoor_concentration", outdoor_concentration))
    return a, s.w.copy()


class CoupledSteadyState(NamedTuple):
    """Steady concentrations of a coupled system.

    Attributes
    ----------
    zone : ndarray, shape (n_zones,)
        Zone concentration C_z. [C]
    supply : float
        Mixed supply concentration C_s. [C]
    mixed_return : float
        Return-air concentration C_r before the filter (NaN when no air returns). [C]
    """

    zone: np.ndarray
    supply: float
    mixed_return: float


def _steady(gen, vpz, loss, a, sysm):
    """Closed-form steady state: C_z = (G_z + Vpz·C_s)/D_z, D_z = Vpz + L_z, and C_s from
    C_s = a + Σ w_z C_z, i.e. C_s·(1 − Σ w_z Vpz/D_z) = a + Σ w_z G_z/D_z."""
    dz = vpz + loss
    if np.any(dz <= 0):
        raise ValueError("a zone with neither primary airflow nor in-room losses has no "
                         "steady state")
    # 1 − Σ w Vpz/D written as (1 − r) + r·Σ rho·L/D, free of cancellation for small x
    removal = sysm.one_minus_r + sysm.r * float(np.sum(sysm.rho * loss / dz))
    if removal <= 0:
        raise ValueError("the system removes nothing (no outdoor air, filter or loss): "
                         "no steady state")
    cs = (a + float(np.sum(sysm.w * gen / dz))) / removal
    return (gen + vpz * cs) / dz, cs


def coupled_steady_state(generation, volume, primary_airflow, outdoor_intake,
                         outdoor_concentration=0.0, outdoor_filter_efficiency=0.0,
                         recirc_filter_efficiency=0.0, zone_exhaust=0.0, cadr=0.0,
                         k_deposition=0.0, k_inactivation=0.0):
    """Steady zone and supply concentrations of a multiple-zone recirculating system.

    Zone balances ``0 = G_z + Vpz·C_s − (Vpz + L_z)·C_z`` with ``C_s = a + Σ w_z·C_z``
    (module model, domain.md §4): a diagonal-plus-rank-one system solved in closed form
    (Sherman–Morrison), O(N) time and memory, no N×N matrix. Without filters, losses or
    exhaust it reduces to ``C_s = C_out + (1 − x)·ΣG_z/Vot`` and ``C_z = C_s + G_z/Vpz``
    (domain.md §4).

    Parameters
    ----------
    generation : array_like, shape (n_zones,)
        Zone generation G_z. [C·m3/h]
    volume : float or array_like, shape (n_zones,)
        Zone volume (enters through deposition and inactivation). [m3]
    primary_airflow : array_like, shape (n_zones,)
        Zone primary airflow Vpz. [m3/h]
    outdoor_intake : float
        Outdoor air intake Vot. [m3/h]
    outdoor_concentration : float
        C_out. [C]
    outdoor_filter_efficiency : float
        η_oa. [-]
    recirc_filter_efficiency : float
        η_rec. [-]
    zone_exhaust : float or array_like, shape (n_zones,)
        Exhaust straight outdoors from each zone, E_z. [m3/h]
    cadr : float or array_like, shape (n_zones,)
        In-room air cleaner clean-air delivery rate. [m3/h]
    k_deposition, k_inactivation : float or array_like, shape (n_zones,)
        Deposition and inactivation rates. [1/h]

    Returns
    -------
    CoupledSteadyState
    """
    sysm = _system(primary_airflow, outdoor_intake, zone_exhaust, recirc_filter_efficiency)
    a, _ = supply_coupling(primary_airflow, outdoor_intake, outdoor_concentration,
                           outdoor_filter_efficiency, recirc_filter_efficiency, zone_exhaust)
    vpz = np.asarray(primary_airflow, dtype=float)
    gen = np.broadcast_to(_nonneg("generation", generation), vpz.shape)
    loss = np.broadcast_to(_in_room_loss(volume, cadr, k_deposition, k_inactivation), vpz.shape)
    cz, cs = _steady(gen, vpz, loss, a, sysm)
    cr = float(np.sum(sysm.rho * cz)) if sysm.rho.sum() > 0 else float("nan")
    return CoupledSteadyState(cz, cs, cr)


def _in_room_loss(volume, cadr, k_deposition, k_inactivation):
    """L_z = CADR + (k_dep + k_inact)·V [m3/h]."""
    v = _positive("volume", volume)
    return (_nonneg("cadr", cadr)
            + (_nonneg("k_deposition", k_deposition)
               + _nonneg("k_inactivation", k_inactivation)) * v)


# --------------------------------------------------------------------------- exact transient
#
# On a piece, dC/dt = A·C + b with A = −diag(d) + u·wᵀ, d_z = D_z/V_z, u_z = Vpz/V_z and
# b_z = (G_z + Vpz·a)/V_z, so C(τ) = e^(Aτ)·C(0) + (∫₀^τ e^(As) ds)·b: no steady state is
# needed, and a system that removes nothing (concentrations growing linearly) is exact too.
# For a vector x the coupling signal wᵀe^(Aτ)x is a sum of exponentials e^(−ν_i τ) whose rates
# are the roots of the secular equation  Σ_k c_k/(p_k − ν) = 1  over the distinct decay rates
# p_k of the zones that return air (c_k = Σ w_z u_z over zones with d_z = p_k), one root per
# interval between poles. Given that signal every zone is a scalar linear ODE, solved exactly:
#     (e^(Aτ)x)_z = γ_z·e^(−d_z τ) + u_z·Σ_i β_i e^(−ν_i τ)/(d_z − ν_i),
#     β_i = [Σ_z w_z x_z/(d_z − ν_i)] / [Σ_k c_k/(p_k − ν_i)²],
#     γ_z = x_z − u_z·Σ_i β_i/(d_z − ν_i);
# the integral over [0, τ] replaces each e^(−rτ) by τ·φ(rτ), φ(y) = (1 − e^(−y))/y.
# Roots are kept as (anchor pole, offset) so that every difference d_z − ν_i is accurate.


def _chi(x):
    """(1 − e^(−x) − x·e^(−x)) / x², limit 1/2 at 0 (series below 1e-3)."""
    x = np.asarray(x, dtype=float)
    small = x < 1e-3
    safe = np.where(small, 1.0, x)
    series = 0.5 + x * (-1 / 3 + x * (1 / 8 + x * (-1 / 30 + x / 144)))
    return np.where(small, series, (-np.expm1(-safe) - safe * np.exp(-safe)) / safe**2)


class _Modes(NamedTuple):
    nu: np.ndarray  # (K,) decay rates of the coupled modes [1/h]
    d: np.ndarray  # (n,) zone decay rates, equal ones merged [1/h]
    u: np.ndarray  # (n,)
    w: np.ndarray  # (n,)
    group: np.ndarray  # (n,) pole index of a returning zone, -1 for the others
    inv_delta: np.ndarray  # (K, K) 1/(p_k − ν_i)
    fprime: np.ndarray  # (K,)
    others: np.ndarray  # indices of zones that return no air
    inv_delta_o: np.ndarray  # (n_o, K) 1/(d_z − ν_i), zeroed where near-resonant
    delta_o: np.ndarray  # (n_o, K) d_z − ν_i
    resonant: np.ndarray  # (n_o,) bool


def _secular_roots(poles, c):
    """Roots ν of Σ_k c_k/(p_k − ν) = 1 for increasing poles p and c > 0 with Σ c/p <= 1.

    Root 0 lies in [0, p_0) (at 0 when Σ c/p = 1: the system removes nothing), root i >= 1
    in (p_(i−1), p_i). Returned as ``anchor`` (pole
    index) and ``t`` with ν = p[anchor] + t, the anchor being the nearer pole. Safeguarded
    Newton on F(t) = t·(f − 1) (the anchor's pole removed), vectorised over all roots:
    O(K²) per iteration.
    """
    k = poles.size
    i = np.arange(k)
    if k == 0:
        return i, np.zeros(0)
    lower = np.concatenate(([0.0], poles[:-1]))
    mid = 0.5 * (lower + poles)
    f_mid = np.sum(c[:, None] / (poles[:, None] - mid[None, :]), axis=0)
    low = (i > 0) & (f_mid > 1)
    anchor = np.where(low, i - 1, i)
    half = 0.5 * (poles - lower)
    far = np.where(low, half, np.where(i == 0, -poles[0], -half))  # end where F > 0
    near = np.zeros(k)  # end t = 0 where F = −c_anchor < 0
    ca = c[anchor]
    t = 0.5 * far
    active = i
    for _ in range(200):  # only unconverged roots are iterated
        ta, aa = t[active], anchor[active]
        den = (poles[:, None] - poles[aa][None, :]) - ta[None, :]
        mask = i[:, None] == aa[None, :]
        den = np.where(mask, 1.0, den)
        terms = np.where(mask, 0.0, c[:, None] / den)
        psi = terms.sum(axis=0)
        f_val = -ca[active] + ta * (psi - 1)
        df = psi - 1 + ta * np.sum(terms / den, axis=0)
        neg = f_val < 0
        near[active] = np.where(neg, ta, near[active])
        far[active] = np.where(neg, far[active], ta)
        with np.errstate(divide="ignore", invalid="ignore"):
            step = f_val / df
        t_new = ta - step
        ok = np.isfinite(t_new) & ((t_new - near[active]) * (t_new - far[active]) < 0)
        t_new = np.where(f_val == 0, ta,
                         np.where(ok, t_new, 0.5 * (near[active] + far[active])))
        tol = 8 * _EPS * np.abs(t_new)
        done = (np.abs(t_new - ta) <= tol) | (np.abs(far[active] - near[active]) <= tol)
        t[active] = t_new
        active = active[~done]
        if active.size == 0:
            break
    return anchor, t


def _modes(d, u, w):
    """Mode data for one airflow configuration: O(N + K² + n_o·K) memory and work per root
    iteration, n_o being the number of zones that return no air."""
    coupled = w * u > 1e-290  # subnormal couplings would overflow 1/(p − ν); they are nil
    idx = np.flatnonzero(coupled)
    order = idx[np.argsort(d[idx], kind="stable")]
    ds = d[order]
    new = np.ones(ds.size, dtype=bool)
    new[1:] = np.diff(ds) > 8 * _EPS * ds[1:]  # merge rates equal to rounding
    group = np.full(d.size, -1)
    group[order] = np.cumsum(new) - 1
    poles = ds[new]
    d_eff = d.copy()
    d_eff[order] = poles[group[order]]
    c = np.bincount(group[idx], weights=(w * u)[idx], minlength=poles.size)
    anchor, t = _secular_roots(poles, c)
    nu = poles[anchor] + t
    delta = (poles[:, None] - poles[anchor][None, :]) - t[None, :]
    fprime = np.sum(c[:, None] / delta**2, axis=0)
    others = np.flatnonzero(~coupled)
    delta_o = (d[others][:, None] - poles[anchor][None, :]) - t[None, :]
    resonant = np.any(np.abs(delta_o) < 1e-6 * np.maximum(d[others][:, None], nu[None, :]),
                      axis=1)
    with np.errstate(divide="ignore"):
        inv_o = np.where(resonant[:, None], 0.0, 1.0 / delta_o)
    return _Modes(nu, d_eff, u, w, group, 1.0 / delta, fprime, others, inv_o, delta_o,
                  resonant)


def _project(m, x):
    """β (K, n_vec) and γ (n, n_vec) of zone vectors x (n, n_vec) (see the comment above)."""
    g = m.group
    ret = g >= 0
    x = np.asarray(x, dtype=float)
    wx = np.column_stack([np.bincount(g[ret], weights=m.w[ret] * col[ret], minlength=m.nu.size)
                          for col in x.T])
    beta = (m.inv_delta.T @ wx) / m.fprime[:, None]
    gamma = x.copy()
    gamma[ret] -= m.u[ret, None] * (m.inv_delta @ beta)[g[ret]]
    gamma[m.others] -= m.u[m.others, None] * (m.inv_delta_o @ beta)
    return beta, gamma


def _state(m, beta, gamma, tau):
    """C(τ) = e^(Aτ)·C(0) + ∫₀^τ e^(As)ds·b from the projections (β, γ) of [C(0), b] (two
    columns), at times τ (n_t,) since the start of the piece: shape (n_t, n). One
    (n_t, K)·(K, K) matrix product carries all the coupled modes."""
    tau = np.asarray(tau, dtype=float)[:, None]
    e_nu, i_nu = _exp_and_integral(m.nu[None, :], tau)
    modes = e_nu * beta[None, :, 0] + i_nu * beta[None, :, 1]  # (n_t, K)
    e_d, i_d = _exp_and_integral(m.d[None, :], tau)
    out = gamma[None, :, 0] * e_d + gamma[None, :, 1] * i_d
    ret = m.group >= 0
    out[:, ret] += m.u[ret] * (modes @ m.inv_delta.T)[:, m.group[ret]]
    out[:, m.others] += m.u[m.others] * (modes @ m.inv_delta_o.T)
    if np.any(m.resonant):
        zr = m.others[m.resonant]
        conv = sum(np.sum(_resonant_convolution(m, zr, tau[:, :, None], integrated)
                          * beta[None, None, :, col], axis=2)
                   for col, integrated in ((0, False), (1, True)))
        out[:, zr] += m.u[zr] * conv
    return out


def _resonant_convolution(m, zr, tau, integrated):
    """E = ∫₀^τ e^(−d(τ−s))·e^(−νs) ds = e^(−min(d,ν)τ)·τ·φ(|d − ν|τ) for zones zr whose rate
    nearly equals a mode rate; integrated: (τφ(ντ) − τφ(dτ))/(d − ν), or τ²·χ at the mean
    rate where d ≈ ν (relative error about ((d − ν)/d)², below 1e-12 here)."""
    dl = m.delta_o[m.resonant][None, :, :]
    dz = m.d[zr][None, :, None]
    nu = m.nu[None, None, :]
    if not integrated:
        return np.exp(-np.minimum(dz, nu) * tau) * tau * _phi(np.abs(dl) * tau)
    near = np.abs(dl) < 1e-6 * np.maximum(dz, nu)
    with np.errstate(divide="ignore", invalid="ignore"):
        far = ((_exp_and_integral(nu, tau)[1] - _exp_and_integral(dz, tau)[1])
               / np.where(near, 1.0, dl))
    return np.where(near, tau**2 * _chi(0.5 * (dz + nu) * tau), far)


class CoupledTransient(NamedTuple):
    """Concentrations of a coupled system at the output times.

    Attributes
    ----------
    zone : ndarray, shape (n_times, n_zones)
        Zone concentrations. [C]
    supply : ndarray, shape (n_times,)
        Mixed supply concentration. [C]
    """

    zone: np.ndarray
    supply: np.ndarray


def _layout(n, zone_inputs, system_inputs):
    """Broadcast zone inputs to (n_pieces, n_zones) and system inputs to (n_pieces,)."""
    zone = {}
    for name, value in zone_inputs.items():
        a = np.asarray(value, dtype=float)
        if a.ndim > 2 or a.ndim == 2 and a.shape[0] not in (1, n):
            raise ValueError(f"{name}: shape {a.shape}, expected (n_zones,) or (n_pieces={n}, "
                             f"n_zones)")
        zone[name] = a.reshape((1,) * (2 - a.ndim) + a.shape)
    shape = (n, np.broadcast_shapes(*(a.shape for a in zone.values()))[1])
    zone = {k: np.broadcast_to(a, shape) for k, a in zone.items()}
    system = {}
    for name, value in system_inputs.items():
        a = np.asarray(value, dtype=float)
        if a.ndim > 1 or a.ndim == 1 and a.shape[0] not in (1, n):
            raise ValueError(f"{name}: shape {a.shape}, expected a scalar or (n_pieces={n},)")
        system[name] = np.broadcast_to(a, (n,))
    return zone, system


def coupled_piecewise_transient(times_breaks, generation_per_piece, volume, primary_airflow,
                                outdoor_intake, c0, output_times, *, outdoor_concentration=0.0,
                                outdoor_filter_efficiency=0.0, recirc_filter_efficiency=0.0,
                                zone_exhaust=0.0, cadr=0.0, k_deposition=0.0,
                                k_inactivation=0.0):
    """Exact transient of a coupled system for inputs constant on each piece.

    Solves ``V_z·dC_z/dt = G_z + Vpz·C_s − (Vpz + L_z)·C_z``, ``C_s = a + Σ w_z C_z`` (module
    model, domain.md §4) piece by piece in closed form, ``C(τ) = e^(Aτ)C(0) + ∫₀^τ e^(As)ds·b``,
    through the secular-equation modes of the diagonal-plus-rank-one matrix A (see the
    comment above :func:`_chi`). No ODE solver and no N×N matrix; no steady state is needed,
    so a system that removes nothing is solved exactly too.

    Complexity, honestly: with K the number of distinct decay rates (V_pz + L_z)/V_z among
    the zones that return air (K = N when every zone differs, K = 1 for identical zones) and
    n_o the zones that return none, each airflow configuration costs O(K² + n_o·K) per root
    iteration (most roots converge in under ten Newton steps, the few that fall back to
    bisection are iterated alone; computed once and reused while airflows and losses stay
    the same); each piece and each output time then cost O(N + K² + n_o·K),
    the K² part being one matrix product. That is O(N) per step only when K is small; for
    K = N it is O(N²) per step — exact, but not linear.

    Layout: zone inputs are ``(n_zones,)`` (constant) or ``(n_pieces, n_zones)`` (per piece;
    ``(n_pieces, 1)`` for all zones alike); system inputs (``outdoor_intake``,
    ``outdoor_concentration``, ``outdoor_filter_efficiency``, ``recirc_filter_efficiency``)
    are scalars or ``(n_pieces,)``. ``volume`` and ``c0`` are constant.

    Parameters
    ----------
    times_breaks : array_like, shape (n_pieces + 1,)
        Strictly increasing times bounding the pieces. [h]
    generation_per_piece : array_like, shape (n_zones,) or (n_pieces, n_zones)
        Zone generation G_z. [C·m3/h]
    volume : float or array_like, shape (n_zones,)
        Zone volume V_z. [m3]
    primary_airflow : array_like, shape (n_zones,) or (n_pieces, n_zones)
        Zone primary airflow Vpz. [m3/h]
    outdoor_intake : float or array_like, shape (n_pieces,)
        Outdoor air intake Vot. [m3/h]
    c0 : float or array_like, shape (n_zones,)
        Zone concentrations at ``times_breaks[0]``. [C]
    output_times : array_like, shape (n_times,)
        Times within the span of ``times_breaks``, any order. [h]
    outdoor_concentration : float or array_like, shape (n_pieces,)
        C_out. [C]
    outdoor_filter_efficiency, recirc_filter_efficiency : float or array_like, (n_pieces,)
        η_oa and η_rec. [-]
    zone_exhaust, cadr : float or array_like, shape (n_zones,) or (n_pieces, n_zones)
        Zone exhaust E_z and in-room CADR. [m3/h]
    k_deposition, k_inactivation : float or array_like, shape (n_zones,) or (n_pieces, n_zones)
        In-room first-order losses. [1/h]

    Returns
    -------
    CoupledTransient
    """
    b = _check_breaks(times_breaks)
    n = b.size - 1
    zone, system = _layout(
        n,
        dict(generation=generation_per_piece, primary_airflow=primary_airflow,
             zone_exhaust=zone_exhaust, cadr=cadr, k_deposition=k_deposition,
             k_inactivation=k_inactivation),
        dict(outdoor_intake=outdoor_intake, outdoor_concentration=outdoor_concentration,
             outdoor_filter_efficiency=outdoor_filter_efficiency,
             recirc_filter_efficiency=recirc_filter_efficiency))
    vol = np.broadcast_to(_positive("volume", volume), zone["generation"].shape[1:])
    c = np.broadcast_to(_nonneg("c0", c0), vol.shape).astype(float)
    gen = _nonneg("generation_per_piece", zone["generation"])
    loss = _in_room_loss(vol, zone["cadr"], zone["k_deposition"], zone["k_inactivation"])
    outdoor = (_nonneg("outdoor_concentration", system["outdoor_concentration"])
               * (1 - _fraction("outdoor_filter_efficiency",
                                system["outdoor_filter_efficiency"])))
    t = np.asarray(output_times, dtype=float)
    if t.ndim != 1 or np.any(~np.isfinite(t)) or np.any((t < b[0]) | (t > b[-1])):
        raise ValueError(f"output_times must be 1-D within [{b[0]}, {b[-1]}] h")
    piece_of = np.clip(np.searchsorted(b, t, side="right") - 1, 0, n - 1)
    out_zone, out_supply = np.empty((t.size, vol.size)), np.empty(t.size)
    key, m = None, None
    for j in range(n):
        vpz = zone["primary_airflow"][j]
        sysm = _system(vpz, system["outdoor_intake"][j], zone["zone_exhaust"][j],
                       system["recirc_filter_efficiency"][j])
        new_key = (vpz.tobytes(), loss[j].tobytes(), sysm.w.tobytes())
        if new_key != key:  # modes depend on airflows and losses only, not on generation
            key, m = new_key, _modes((vpz + loss[j]) / vol, vpz / vol, sysm.w)
        a = sysm.x * outdoor[j]
        beta, gamma = _project(m, np.column_stack((c, (gen[j] + vpz * a) / vol)))
        sel = np.flatnonzero(piece_of == j)
        values = _state(m, beta, gamma, np.append(t[sel] - b[j], b[j + 1] - b[j]))
        out_zone[sel] = values[:-1]
        out_supply[sel] = a + values[:-1] @ sysm.w
        c = values[-1]
    return CoupledTransient(out_zone, out_supply)
