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
    poles: np.ndarray  # (K,) distinct decay rates p_k of the returning zones [1/h]
    anchor: np.ndarray  # (K,) pole index nearest to each root
    offset: np.ndarray  # (K,) ν_i − p_anchor(i), kept apart for accurate differences
    fprime: np.ndarray  # (K,) Σ_k c_k/(p_k − ν_i)²
    others: np.ndarray  # indices of zones that return no air
    closed: dict  # the closed form's (K, K) and (n_o, K) matrices, built on first use


class _Closed(NamedTuple):
    inv_delta: np.ndarray  # (K, K) 1/(p_k − ν_i)
    inv_delta_o: np.ndarray  # (n_o, K) 1/(d_z − ν_i), zeroed where near-resonant
    delta_o: np.ndarray  # (n_o, K) d_z − ν_i
    resonant: np.ndarray  # (n_o,) bool


def _delta(poles, anchor, offset, rows, cols):
    """p_k − ν_i for pole indices rows and root indices cols: (len(rows), len(cols))."""
    return (poles[rows][:, None] - poles[anchor[cols]][None, :]) - offset[cols][None, :]


def _column_blocks(n_rows, n_cols):
    """Slices over columns so that one (n_rows, block) array stays within _CHUNK values."""
    step = max(1, _CHUNK // max(n_rows, 1))
    return [slice(lo, min(n_cols, lo + step)) for lo in range(0, n_cols, step)]


def _cauchy_t(m, x):
    """y_i = Σ_k x_k/(p_k − ν_i) for x (K, n_vec), in column blocks: O(K²) work, O(K) memory."""
    k = m.poles.size
    out = np.empty((k, x.shape[1]))
    rows = np.arange(k)
    for blk in _column_blocks(k, k):
        out[blk] = (1.0 / _delta(m.poles, m.anchor, m.offset, rows, np.arange(k)[blk])).T @ x
    return out


def _secular_start(poles, c, anchor, lower, mid, f_mid, far):
    """Starting offsets for :func:`_secular_roots`: the root of the model that keeps the two
    poles bounding each root exactly and freezes the rest at their value at the interval's
    midpoint (the usual start for secular equations; Golub, "Some modified matrix eigenvalue
    problems", SIAM Review 15 (1973), and LAPACK's dlaed4), O(K) given the midpoint sums.
    Falls back to half the bracket where the model has no root inside it."""
    k = poles.size
    i = np.arange(k)
    other = np.where(anchor == i, i - 1, i)  # the second pole bounding root i (-1: none)
    has_other = other >= 0
    o = np.where(has_other, other, 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        rest = (f_mid - c[anchor] / (poles[anchor] - mid)
                - np.where(has_other, c[o] / (poles[o] - mid), 0.0))
        g = 1.0 - rest
        e = np.where(has_other, poles[o] - poles[anchor], 0.0)
        cx, cy = c[anchor], np.where(has_other, c[o], 0.0)
        bq = cx + cy - g * e
        disc = bq * bq + 4.0 * g * cx * e
        sgn = np.where(bq >= 0, 1.0, -1.0)
        two_pole = 2.0 * cx * e / (bq + sgn * np.sqrt(disc))
        t = np.where(has_other, two_pole, -cx / g)
    inside = np.isfinite(t) & (t * far > 0) & (np.abs(t) < np.abs(far))
    return np.where(inside, t, 0.5 * far)


def _pole_sums(poles, c, anchor, t):
    """Σ_k c_k/δ_k and Σ_k c_k/δ_k² over the poles other than each root's anchor, with
    δ_k = p_k − p_anchor − t, in column blocks (O(K) memory)."""
    psi, dpsi = np.empty(t.size), np.empty(t.size)
    for blk in _column_blocks(poles.size, t.size):
        a = anchor[blk]
        den = poles[:, None] - poles[a][None, :]
        den -= t[blk][None, :]
        den[a, np.arange(a.size)] = np.inf  # the anchor's own pole is taken out
        terms = c[:, None] / den
        psi[blk] = terms.sum(axis=0)
        terms /= den
        dpsi[blk] = terms.sum(axis=0)
    return psi, dpsi


def _secular_roots(poles, c):
    """Roots ν of Σ_k c_k/(p_k − ν) = 1 for increasing poles p and c > 0 with Σ c/p <= 1.

    Root 0 lies in [0, p_0) (at 0 when Σ c/p = 1: the system removes nothing), root i >= 1
    in (p_(i−1), p_i). Returned as ``anchor`` (pole
    index) and ``t`` with ν = p[anchor] + t, the anchor being the nearer pole. Safeguarded
    Newton on F(t)·(1 − t/e), F(t) = t·(f − 1), which takes out both poles bounding the root
    (the anchor's at t = 0, the other's at t = e), vectorised over all roots: O(K²) per
    iteration in O(K) memory.
    """
    k = poles.size
    i = np.arange(k)
    if k == 0:
        return i, np.zeros(0)
    lower = np.concatenate(([0.0], poles[:-1]))
    mid = 0.5 * (lower + poles)
    f_mid = np.concatenate([np.sum(c[:, None] / (poles[:, None] - mid[None, blk]), axis=0)
                            for blk in _column_blocks(k, k)])
    low = (i > 0) & (f_mid > 1)
    anchor = np.where(low, i - 1, i)
    half = 0.5 * (poles - lower)
    far = np.where(low, half, np.where(i == 0, -poles[0], -half))  # end where F > 0
    near = np.zeros(k)  # end t = 0 where F = −c_anchor < 0
    ca = c[anchor]
    t = _secular_start(poles, c, anchor, lower, mid, f_mid, far)
    other = np.where(anchor == i, i - 1, i)  # the second pole bounding each root (-1: none)
    gap = np.where(other >= 0, poles[np.maximum(other, 0)] - poles[anchor], 1.0)
    inv_other = np.where(other >= 0, 1.0 / gap, 0.0)
    active = i
    for _ in range(200):  # only unconverged roots are iterated
        ta, aa = t[active], anchor[active]
        psi, dpsi = _pole_sums(poles, c, aa, ta)
        f_val = -ca[active] + ta * (psi - 1)
        df = psi - 1 + ta * dpsi
        neg = f_val < 0
        near[active] = np.where(neg, ta, near[active])
        far[active] = np.where(neg, far[active], ta)
        # Newton on G = F·(1 − t/e): the factor (in [1/2, 1] on the half interval) cancels
        # the second bounding pole, so G is smooth across the interval and Newton converges
        # in a few steps from the two-pole start.
        inv_e = inv_other[active]
        g_val = f_val * (1 - ta * inv_e)
        dg = df * (1 - ta * inv_e) - f_val * inv_e
        with np.errstate(divide="ignore", invalid="ignore"):
            step = g_val / dg
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
    """Mode data for one airflow configuration: O(K²) work per root iteration, O(N + K)
    memory (the (K, K) products run in column blocks)."""
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
    fprime = np.empty(poles.size)
    rows = np.arange(poles.size)
    for blk in _column_blocks(poles.size, poles.size):
        fprime[blk] = np.sum(c[:, None] / _delta(poles, anchor, t, rows, rows[blk])**2, axis=0)
    return _Modes(nu, d_eff, u, w, group, poles, anchor, t, fprime,
                  np.flatnonzero(~coupled), {})


def _closed(m):
    """The closed form's matrices (O(K² + n_o·K) memory), built once per configuration."""
    if "data" not in m.closed:
        k = m.poles.size
        rows = np.arange(k)
        d_o = m.d[m.others]
        delta_o = (d_o[:, None] - m.poles[m.anchor][None, :]) - m.offset[None, :]
        resonant = np.any(np.abs(delta_o) < 1e-6 * np.maximum(d_o[:, None], m.nu[None, :]),
                          axis=1)
        with np.errstate(divide="ignore"):
            inv_o = np.where(resonant[:, None], 0.0, 1.0 / delta_o)
        m.closed["data"] = _Closed(1.0 / _delta(m.poles, m.anchor, m.offset, rows, rows),
                                   inv_o, delta_o, resonant)
    return m.closed["data"]


def _project(m, x, with_gamma=True, beta=None):
    """β (K, n_vec) and γ (n, n_vec) of zone vectors x (n, n_vec) (see the comment above);
    γ is None unless asked for (the march needs β only, in O(N + K) memory); β may be
    passed in when already known."""
    g = m.group
    ret = g >= 0
    x = np.asarray(x, dtype=float)
    if beta is None:
        wx = np.column_stack([np.bincount(g[ret], weights=m.w[ret] * col[ret],
                                          minlength=m.nu.size) for col in x.T])
        beta = _cauchy_t(m, wx) / m.fprime[:, None]
    if not with_gamma:
        return beta, None
    return beta, x - m.u[:, None] * _zone_sums(m, beta)


def _state(m, beta, gamma, tau):
    """C(τ) = e^(Aτ)·C(0) + ∫₀^τ e^(As)ds·b from the projections (β, γ) of [C(0), b] (two
    columns), at times τ (n_t,) since the start of the piece: shape (n_t, n). One
    (n_t, K)·(K, K) matrix product carries all the coupled modes."""
    tau = np.asarray(tau, dtype=float)[:, None]
    e_nu, i_nu = _exp_and_integral(m.nu[None, :], tau)
    modes = e_nu * beta[None, :, 0] + i_nu * beta[None, :, 1]  # (n_t, K)
    e_d, i_d = _exp_and_integral(m.d[None, :], tau)
    out = gamma[None, :, 0] * e_d + gamma[None, :, 1] * i_d + m.u * _zone_sums(m, modes.T).T
    cl = _closed(m)
    if np.any(cl.resonant):
        zr = m.others[cl.resonant]
        conv = sum(np.sum(_resonant_convolution(m, cl, zr, tau[:, :, None], integrated)
                          * beta[None, None, :, col], axis=2)
                   for col, integrated in ((0, False), (1, True)))
        out[:, zr] += m.u[zr] * conv
    return out


def _resonant_convolution(m, cl, zr, tau, integrated):
    """E = ∫₀^τ e^(−d(τ−s))·e^(−νs) ds = e^(−min(d,ν)τ)·τ·φ(|d − ν|τ) for zones zr whose rate
    nearly equals a mode rate; integrated: (τφ(ντ) − τφ(dτ))/(d − ν), or τ²·χ at the mean
    rate where d ≈ ν (relative error about ((d − ν)/d)², below 1e-12 here)."""
    dl = cl.delta_o[cl.resonant][None, :, :]
    dz = m.d[zr][None, :, None]
    nu = m.nu[None, None, :]
    if not integrated:
        return np.exp(-np.minimum(dz, nu) * tau) * tau * _phi(np.abs(dl) * tau)
    near = np.abs(dl) < 1e-6 * np.maximum(dz, nu)
    with np.errstate(divide="ignore", invalid="ignore"):
        far = ((_exp_and_integral(nu, tau)[1] - _exp_and_integral(dz, tau)[1])
               / np.where(near, 1.0, dl))
    return np.where(near, tau**2 * _chi(0.5 * (dz + nu) * tau), far)


# --------------------------------------------------------------------------- O(N) marching
#
# The closed form above spends O(K²) per output time on the zone sums Σ_i β_i e^(−ν_i τ)/(d_z −
# ν_i). The march below needs only the scalar coupling signal s(τ) = wᵀC(τ), which the modes
# give in O(K) at any time,
#     s(τ) = Σ_i β0_i e^(−ν_i τ) + Σ_i β1_i τφ(ν_i τ)
# (the e^(−d_z τ) parts of the zones cancel in wᵀ: Σ_(z in pole group k) w_z γ_z = 0), and then
# steps every zone as the scalar equation dC_z/dτ = −d_z C_z + u_z s(τ) + b_z:
#     C_z(τ+h) = e^(−d_z h)C_z(τ) + b_z hφ(d_z h) + u_z ∫₀^h e^(−d_z(h−σ)) s(τ+σ) dσ.
# The integrand is a sum of exponentials e^(cσ) with |c| <= max(d, ν) = r. Gauss–Legendre
# quadrature with n nodes integrates e^(cσ) over [0, h] with relative error below
# (ch)^(2n)·(n!)^4/((2n+1)·((2n)!)^3)·e^(|c|h) (Abramowitz & Stegun 25.4.30 with the
# derivative bound for e^(cσ)); steps are cut so that r·h <= 2, where n = 8 gives < 1e-17
# (relative to the sum of the absolute terms), far below rounding. Every output time is a step
# end. Cost O(N + K) per step and O(K) per piece (the modal coordinates are carried from piece
# to piece), against O(N + K²) per output time for the closed form; the O(K²) projection is
# done once per airflow configuration.

_GL_X, _GL_W = np.polynomial.legendre.leggauss(8)
_GL_X, _GL_W = 0.5 * (_GL_X + 1.0), 0.5 * _GL_W  # nodes and weights on [0, 1]
_STEP_RATE = 2.0  # largest r·h on one quadrature step
_CHUNK = 1 << 21  # values per block of the vectorised signal and forcing arrays
_CLOSED_MAX_VALUES = 1 << 25  # "auto" uses the closed form only below this many matrix values


def _step_lengths(h, tol):
    """Distinct step lengths, lengths closer than ``tol`` taken as one (output times known to
    a few ulps, e.g. from ``linspace``, give steps differing in the last bits; each such step
    then errs by at most tol·|dC/dt|): (lengths, index of each step's length)."""
    order = np.argsort(h, kind="stable")
    hs = h[order]
    new = np.ones(hs.size, dtype=bool)
    new[1:] = np.diff(hs) > tol
    index = np.empty(h.size, dtype=np.int64)
    index[order] = np.cumsum(new) - 1
    return hs[new], index


class _Plan(NamedTuple):
    knots: np.ndarray  # (n_k,) distinct step-end times of a piece, from 0 to τ_end [h]
    where_out: np.ndarray  # (n_out + 2,) knot of 0, of each output time and of τ_end
    parts: np.ndarray  # (n_k − 1,) quadrature steps between consecutive knots


def _march_plan(m, tau_out, tau_end):
    """Knots (0, the output times, τ_end) and the steps between them, cut so that r·h <= 2."""
    knots, where_out = np.unique(np.concatenate(([0.0], tau_out, [tau_end])),
                                 return_inverse=True)
    rate = max(float(m.d.max(initial=0.0)), float(m.nu.max(initial=0.0)))
    parts = np.maximum(1, np.ceil(np.diff(knots) * rate / _STEP_RATE)).astype(np.int64)
    return _Plan(knots, where_out, parts)


def _march(m, beta, c0, b, plan):
    """Zone concentrations at the plan's output times and at its end, by the exact modal
    coupling signal and Gauss–Legendre steps (see the comment above): ((n_out, n), (n,))."""
    knots, parts = plan.knots, plan.parts
    h = np.repeat(np.diff(knots) / parts, parts)  # step lengths
    first = np.cumsum(parts) - parts
    start = np.repeat(knots[:-1], parts) + (np.arange(h.size) - np.repeat(first, parts)) * h
    ends_at_knot = np.cumsum(parts)  # the state after this many steps is at knot k + 1
    n = c0.size
    state_at = np.empty((knots.size, n))
    state_at[0] = c0
    c = np.array(c0, dtype=float)
    lengths, h_index = _step_lengths(h, 16 * _EPS * knots[-1])
    b0, b1 = beta[:, 0], beta[:, 1]
    rows = max(1, _CHUNK // max(m.nu.size, n, 1))
    knot = 0
    for lo in range(0, h.size, rows):
        hi = min(h.size, lo + rows)
        e_m, i_m = _exp_and_integral(m.nu[None, :], start[lo:hi, None])
        base = i_m @ b1  # the generation part of s at each step start
        force = np.empty((hi - lo, n))
        step_data = {}
        for k in np.unique(h_index[lo:hi]):
            hl = lengths[k]
            sig = hl * _GL_X
            e_s, j_s = _exp_and_integral(m.nu[:, None], sig[None, :])
            sel = np.flatnonzero(h_index[lo:hi] == k)
            signal = e_m[sel] @ (b0[:, None] * e_s + b1[:, None] * j_s) + base[sel, None]
            weights = ((hl * _GL_W)[:, None] * m.u[None, :]
                       * np.exp(-m.d[None, :] * (hl - sig)[:, None]))  # (q, n)
            force[sel] = signal @ weights
            dec, tphi = _exp_and_integral(m.d, hl)
            step_data[k] = (dec, b * tphi)
        for step in range(lo, hi):
            dec, const = step_data[h_index[step]]
            c *= dec
            c += const
            c += force[step - lo]
            if step + 1 == ends_at_knot[knot]:
                knot += 1
                state_at[knot] = c
    values = state_at[plan.where_out]
    return values[1:-1], values[-1]


def _unit_costs(m, n_zones):
    """(closed form per output time, march per quadrature step): per-value costs fitted to
    timings on the benchmark machine (ns; N zones, K modes, n_o zones returning no air), the
    closed form ~3000 + 43·N + 0.08·(K² + n_o·K), the march ~9000 + 9·N + 50·K (its fixed part
    is the step loop in Python); small systems therefore take the closed form, large ones the
    march. The closed form counts as infinitely dear when its (K, K + n_o) matrices would pass
    _CLOSED_MAX_VALUES, so "auto" never builds them for a very large system."""
    k, n_o = m.nu.size, m.others.size
    closed = (3000.0 + 43.0 * n_zones + 0.08 * (k * k + n_o * k)
              if k * (k + n_o) <= _CLOSED_MAX_VALUES else np.inf)
    return closed, 9000.0 + 9.0 * n_zones + 50.0 * k


def _choose(m, method, n_zones, n_eval, plan_of):
    """Whether a piece marches (True) or takes the closed form; ``plan_of()`` makes its march
    plan, which is only made when the choice needs it: for "march", and for "auto" unless the
    closed form is cheaper per output time than the march is per step (a march has at least
    one step per output)."""
    if method == "closed":
        return False, None
    per_eval, per_step = _unit_costs(m, n_zones)
    if method == "auto" and per_eval <= per_step:
        return False, None
    plan = plan_of()
    return method == "march" or float(plan.parts.sum()) * per_step < n_eval * per_eval, plan


def _zone_sums(m, beta):
    """Σ_i β_i/(d_z − ν_i) for every zone z, columns of β (K, n_col) → (n, n_col); zero for
    a near-resonant zone, whose coupled part :func:`_state` adds by convolution."""
    cl = _closed(m)
    out = np.zeros((m.d.size, beta.shape[1]))
    ret = m.group >= 0
    out[ret] = (cl.inv_delta @ beta)[m.group[ret]]
    out[m.others] = cl.inv_delta_o @ beta
    return out


def _closed_run(m, c0, rhs, beta_c, beta_b, spans, tau, piece):
    """The closed form for a run of pieces sharing their modes, all output times at once.

    Per piece i the solution is ``C(τ) = γ0·e^(−dτ) + γ1·τφ(dτ) + u·Z(β0·e^(−ντ) + β1·τφ(ντ))``
    with Z(β) = Σ β/(d − ν) (:func:`_zone_sums`), γ0 = C_i − u·Z(β0), γ1 = b_i − u·Z(β1)
    (the comment above :func:`_chi`). The modal coordinates β0 of each piece's start follow
    from the run's first in O(K) per piece, so the zone states at the piece starts need one
    matrix product for the run and O(N) per piece: no per-piece evaluation. ``rhs`` (n, n_run)
    holds each piece's b, ``tau`` and ``piece`` (n_out,) each output's time since its piece
    started and its piece index in the run. Returns the outputs (n_out, n) and the end state.
    """
    n_run = spans.size
    e_end, i_end = _exp_and_integral(m.nu[:, None], spans[None, :])  # (K, n_run)
    b0 = np.empty((m.nu.size, n_run + 1))
    b0[:, 0] = beta_c
    for i in range(n_run):
        b0[:, i + 1] = e_end[:, i] * b0[:, i] + i_end[:, i] * beta_b[:, i]
    z0, z1 = _zone_sums(m, b0), _zone_sums(m, beta_b)  # (n, n_run + 1), (n, n_run)
    e_d, i_d = _exp_and_integral(m.d[:, None], spans[None, :])  # (n, n_run)
    u = m.u[:, None]
    gamma1 = rhs - u * z1
    starts = np.empty((m.d.size, n_run + 1))
    starts[:, 0] = c0
    for i in range(n_run):
        starts[:, i + 1] = ((starts[:, i] - m.u * z0[:, i]) * e_d[:, i]
                            + gamma1[:, i] * i_d[:, i] + m.u * z0[:, i + 1])
    gamma0 = starts[:, :-1] - u * z0[:, :-1]
    out = np.empty((tau.size, m.d.size))
    rows = max(1, _CHUNK // max(m.d.size, m.nu.size, 1))
    for lo in range(0, tau.size, rows):
        sl = slice(lo, min(tau.size, lo + rows))
        tt, pp = tau[sl, None], piece[sl]
        e_nu, i_nu = _exp_and_integral(m.nu[None, :], tt)
        modes = e_nu * b0[:, pp].T + i_nu * beta_b[:, pp].T  # (rows, K)
        e_z, i_z = _exp_and_integral(m.d[None, :], tt)
        out[sl] = (gamma0[:, pp].T * e_z + gamma1[:, pp].T * i_z
                   + m.u * _zone_sums(m, modes.T).T)
    return out, starts[:, -1]


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
                                k_inactivation=0.0, method="auto"):
    """Exact transient of a coupled system for inputs constant on each piece.

    Solves ``V_z·dC_z/dt = G_z + Vpz·C_s − (Vpz + L_z)·C_z``, ``C_s = a + Σ w_z C_z`` (module
    model, domain.md §4) piece by piece in closed form, ``C(τ) = e^(Aτ)C(0) + ∫₀^τ e^(As)ds·b``,
    through the secular-equation modes of the diagonal-plus-rank-one matrix A (see the
    comment above :func:`_chi`). No ODE solver and no N×N matrix; no steady state is needed,
    so a system that removes nothing is solved exactly too.

    Two evaluations of the same exact solution, chosen by ``method``:

    - ``"closed"``: every output time from the closed form above, O(N + K² + n_o·K) per
      output time and O(K² + n_o·K) memory;
    - ``"march"``: the coupling signal wᵀC(τ) from the modes in closed form (O(K) per time),
      each zone stepped from output time to output time against it by Gauss–Legendre
      quadrature whose error bound is below 1e-17 per step (see the comment above
      :func:`_march`): O(N + K) per step and O(N + K) memory; steps are cut so that
      rate·h <= 2, so a very fast zone over a long piece needs many steps;
    - ``"auto"`` (default): per piece, whichever of the two costs less by a rough count.

    K is the number of distinct decay rates (Vpz + L_z)/V_z among the zones that return air
    (K = N when every zone differs) and n_o the number of zones that return none. Both share
    the per-configuration work (computed once and reused while airflows and losses stay the
    same): the K secular roots by safeguarded Newton, O(K²) per iteration in O(K) memory
    (the roots interlace with the zone rates, so each needs every pole), and per piece the
    projection of the start state, O(K²). The two agree to about 1e-13 relative in the
    tests (tests/test_coupled.py).

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
    method : {"auto", "closed", "march"}
        Evaluation of the exact solution (above).

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
    if method not in ("auto", "closed", "march"):
        raise ValueError(f"method must be 'auto', 'closed' or 'march', got {method!r}")
    pieces = []  # (system, configuration key, right-hand side b, outdoor part a)
    air = (zone["primary_airflow"], system["outdoor_intake"], zone["zone_exhaust"],
           system["recirc_filter_efficiency"])
    # most profiles change generation only: inputs given once (stride 0 along the pieces)
    # share one air balance, the others are compared piece by piece
    constant = all(x.strides[0] == 0 for x in air)
    last, sysm = None, None
    for j in range(n):
        vpz = zone["primary_airflow"][j]
        inputs = tuple(x[j] for x in air)
        if last is None or not constant and not all(
                np.array_equal(x, y) for x, y in zip(inputs, last)):
            last, sysm = inputs, _system(*inputs)
        a = sysm.x * outdoor[j]
        pieces.append((sysm, (vpz.tobytes(), loss[j].tobytes(), sysm.w.tobytes()),
                       (gen[j] + vpz * a) / vol, a))
    j = 0
    while j < n:  # runs of pieces sharing airflows and losses share their modes
        stop = j + 1
        while stop < n and pieces[stop][1] == pieces[j][1]:
            stop += 1
        vpz = zone["primary_airflow"][j]
        m = _modes((vpz + loss[j]) / vol, vpz / vol, pieces[j][0].w)
        # modal coordinates of every piece's b at once (one blocked Cauchy product), and of
        # the start state; within the run they are carried forward in O(K) per piece:
        # β(C(τ)) = e^(−ντ)·β(C(0)) + τφ(ντ)·β(b), the β being left-eigenvector coordinates.
        rhs_run = np.column_stack([p[2] for p in pieces[j:stop]])
        projected = _project(m, np.column_stack((c, rhs_run)), with_gamma=False)[0]
        beta_c, beta_b = projected[:, 0], projected[:, 1:]
        sels = [np.flatnonzero(piece_of == i) for i in range(j, stop)]
        spans = np.diff(b[j:stop + 1])
        choices = [_choose(m, method, vol.size, sel.size + 1,
                           lambda sel=sel, i=i: _march_plan(m, t[sel] - b[i], spans[i - j]))
                   for i, sel in zip(range(j, stop), sels)]
        if not any(march for march, _ in choices) and not np.any(_closed(m).resonant):
            # the whole run in closed form at once (its matrices are built only here)
            sel = np.concatenate(sels)
            out_zone[sel], c = _closed_run(m, c, rhs_run, beta_c, beta_b, spans,
                                           t[sel] - b[piece_of[sel]], piece_of[sel] - j)
        else:  # piece by piece: the march, or the closed form's _state near resonance
            for k, (sel, (march, plan)) in enumerate(zip(sels, choices)):
                beta = np.column_stack((beta_c, beta_b[:, k]))
                if march:
                    out_zone[sel], c = _march(m, beta, c, rhs_run[:, k], plan)
                else:
                    gamma = _project(m, np.column_stack((c, rhs_run[:, k])), beta=beta)[1]
                    values = _state(m, beta, gamma, np.append(t[sel] - b[j + k], spans[k]))
                    out_zone[sel], c = values[:-1], values[-1]
                e_end, i_end = _exp_and_integral(m.nu, spans[k])
                beta_c = e_end * beta[:, 0] + i_end * beta[:, 1]
        for k, sel in enumerate(sels):
            out_supply[sel] = pieces[j + k][3] + out_zone[sel] @ pieces[j + k][0].w
        j = stop
    return CoupledTransient(out_zone, out_supply)
