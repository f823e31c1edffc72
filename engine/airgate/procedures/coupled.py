"""Dilution in a multiple-zone recirculating system: zones coupled through a mixed supply.

Pure functions on plain floats and numpy arrays in the mass-balance units of
:mod:`airgate.procedures.dilution` (airflow L/s, volume m3, rates 1/h, time h, generation
``C·L/s`` for a concentration unit ``C``; a rate is ``PER_HOUR·Q/V``), for one air handler
serving ``n_zones`` zones (the
zone axis is a 1-D array). Invalid input raises ValueError naming the parameter.

The model: each zone is the completely mixed flow reactor of [1]_, the air handler a mixing
box without volume, with filters, in-room losses and exhaust; the multiple-zone system is that
of [2]_ Section 6.2.5, whose detailed ventilation efficiency (Normative Appendix A) is the
condition that every zone does as well as if it alone received its Voz of clean air.

- Zone z (volume V_z) receives primary airflow Vpz of mixed supply at concentration C_s. It
  loses E_z of exhaust straight outdoors (0 <= E_z <= Vpz), drawn from its supply; the rest,
  Vpz − E_z, returns to the air handler. Besides its supply it may receive makeup air M_z at a
  concentration C_mu,z (outdoor air, infiltration, or air transferred from a zone outside the
  system whose concentration is known), which leaves again at C_z with an exhaust that is not
  drawn from the supply: a diagonal term, so the structure below is kept. What enters a zone
  leaves it. Transfer air between zones of one system adds off-diagonal terms: not here.
- The air handler supplies Vps = ΣVpz: an outdoor intake Vot (fraction x = Vot/Vps) through a
  filter of efficiency η_oa, and recirculated return Vps − Vot through a filter of efficiency
  η_rec. The recirculated air has the mixed-return concentration C_r = Σ(Vpz − E_z)·C_z / R
  with R = Σ(Vpz − E_z); the return not recirculated, R − (Vps − Vot) = Vot − ΣE_z, is relieved
  at the air handler. Hence ΣE_z <= Vot <= Vps.
- ``C_s = [Vot·(1 − η_oa)·C_out + (Vps − Vot)·(1 − η_rec)·C_r] / Vps = a + Σ w_z·C_z``.
- Zone balance: ``V_z·dC_z/dt = 3.6·[G_z + M_z·C_mu,z + Vpz·C_s − (Vpz + L_z)·C_z]``
  (3.6 = PER_HOUR: airflows in L/s, V in m³, t in h) with the in-room losses and makeup
  outflow ``L_z = CADR_z + (k_dep,z + k_inact,z)·V_z/3.6 + M_z``.

The system matrix is diagonal plus rank one (coupling only through the scalar C_s), which
gives the O(N) steady state below (Sherman–Morrison in closed form) and the exact transient.

References
----------
.. [1] Nazaroff, W.W. and Alvarez-Cohen, L. (2001). *Environmental Engineering Science*. Wiley,
   New York: material balance on a completely mixed flow reactor (CMFR).
.. [2] ANSI/ASHRAE Standard 62.1-2019, *Ventilation for Acceptable Indoor Air Quality*,
   Section 6.2.5 (multiple-zone recirculating systems) and Normative Appendix A.
.. [3] Golub, G.H. (1973). Some modified matrix eigenvalue problems. *SIAM Review* 15(2):
   318–334 (eigenproblems of a diagonal matrix plus a rank-one matrix).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from airgate.procedures.coupled_modes import run as _run
from airgate.procedures.numeric import (
    PER_HOUR,
    check_breaks as _check_breaks,
    in_room_loss as _in_room_loss,
    layout_pieces as _layout_pieces,
    fraction as _fraction,
    nonneg as _nonneg,
    positive as _positive,
)

__all__ = [
    "CoupledSteadyState",
    "CoupledTransient",
    "MAX_DISTINCT_RATES",
    "TooManyRates",
    "coupled_piecewise_transient",
    "coupled_required_intake",
    "coupled_steady_state",
    "supply_coupling",
]

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
                         f"{exh.sum():g} and ΣVpz {vps:g} L/s to keep the air balance")
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
    ``w_z = (1 − η_rec)·(1 − x)·(Vpz − E_z)/Σ(Vpz − E_z)`` (the mixing box of the module
    model: a material balance without volume).

    Parameters
    ----------
    primary_airflow : array_like, shape (n_zones,)
        Zone primary airflow Vpz. [L/s]
    outdoor_intake : float
        Outdoor air intake Vot, between ΣE_z and ΣVpz. [L/s]
    outdoor_concentration : float
        Outdoor concentration C_out. [C]
    outdoor_filter_efficiency : float
        Intake filter efficiency η_oa. [-]
    recirc_filter_efficiency : float
        Efficiency of the filter on recirculated air η_rec. [-]
    zone_exhaust : float or array_like, shape (n_zones,)
        Exhaust leaving each zone straight outdoors, E_z <= Vpz. [L/s]

    Returns
    -------
    a : float
        Outdoor contribution to C_s. [C]
    w : ndarray, shape (n_zones,)
        Weight of each zone concentration in C_s; Σw = (1 − η_rec)(1 − x) or 0. [-]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), material balance on the mixing box (no volume).

    Examples
    --------
    500 L/s of outdoor air (x = 0.25) with C_out = 20 through a 50 % intake filter, the
    return through a 60 % filter: a = 0.25·0.5·20 = 2.5 and Σw = 0.4·0.75 = 0.3 (by hand):

    >>> a, w = supply_coupling([400.0, 600.0, 1000.0], 500.0, 20.0, 0.5, 0.6)
    >>> round(a, 12), round(float(w.sum()), 12)
    (2.5, 0.3)
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
                         k_deposition=0.0, k_inactivation=0.0, makeup_airflow=0.0,
                         makeup_concentration=0.0):
    """Steady zone and supply concentrations of a multiple-zone recirculating system.

    Zone balances ``0 = G_z + Vpz·C_s − (Vpz + L_z)·C_z`` with ``C_s = a + Σ w_z·C_z``
    (module model): a diagonal-plus-rank-one system solved in closed form (Sherman–Morrison),
    O(N) time and memory, no N×N matrix. Without filters, losses or exhaust it reduces to
    ``C_s = C_out + (1 − x)·ΣG_z/Vot`` and ``C_z = C_s + G_z/Vpz`` (derived).

    Parameters
    ----------
    generation : array_like, shape (n_zones,)
        Zone generation G_z. [C·L/s]
    volume : float or array_like, shape (n_zones,)
        Zone volume (enters through deposition and inactivation). [m3]
    primary_airflow : array_like, shape (n_zones,)
        Zone primary airflow Vpz. [L/s]
    outdoor_intake : float
        Outdoor air intake Vot. [L/s]
    outdoor_concentration : float
        C_out. [C]
    outdoor_filter_efficiency : float
        η_oa. [-]
    recirc_filter_efficiency : float
        η_rec. [-]
    zone_exhaust : float or array_like, shape (n_zones,)
        Exhaust straight outdoors from each zone, E_z. [L/s]
    cadr : float or array_like, shape (n_zones,)
        In-room air cleaner clean-air delivery rate. [L/s]
    k_deposition, k_inactivation : float or array_like, shape (n_zones,)
        Deposition and inactivation rates. [1/h]
    makeup_airflow : float or array_like, shape (n_zones,)
        Makeup air M_z entering each zone besides its supply, leaving with an exhaust not
        drawn from the supply (>= 0). [L/s]
    makeup_concentration : float or array_like, shape (n_zones,)
        Its concentration C_mu,z (C_out for outdoor makeup or infiltration; no filter). [C]

    Returns
    -------
    CoupledSteadyState
        Zone, supply and mixed-return concentrations. [C]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR steady state for each zone and the mixing box;
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.5.

    Examples
    --------
    Two zones, no filter or loss, a quarter of the supply outdoor air (x = 0.25): by hand,
    C_s = C_out + (1 − x)·ΣG/Vot = 0 + 0.75·(600 + 200)/500 = 1.2, C_z = C_s + G_z/Vpz:

    >>> res = coupled_steady_state([600.0, 200.0], 50.0, [1000.0, 1000.0], 500.0)
    >>> round(res.supply, 12), [round(float(c), 12) for c in res.zone]
    (1.2, [1.8, 1.4])

    The second zone also exhausts 500 L/s made up by clean outdoor air (its return stays
    1000 L/s), by hand: C_2 = (200 + 1000·C_s)/1500 and
    C_s = 0.75·(C_1 + C_2)/2 with C_1 = 0.6 + C_s give C_s = 0.75·(0.6 + 200/1500)/(2 − 0.75
    − 0.5) = 0.733333…, C_1 = 1.333333…, C_2 = 0.622222…:

    >>> res = coupled_steady_state([600.0, 200.0], 50.0, [1000.0, 1000.0], 500.0,
    ...                            makeup_airflow=[0.0, 500.0])
    >>> round(res.supply, 9), [round(float(c), 9) for c in res.zone]
    (0.733333333, [1.333333333, 0.622222222])
    """
    sysm = _system(primary_airflow, outdoor_intake, zone_exhaust, recirc_filter_efficiency)
    a, _ = supply_coupling(primary_airflow, outdoor_intake, outdoor_concentration,
                           outdoor_filter_efficiency, recirc_filter_efficiency, zone_exhaust)
    vpz = np.asarray(primary_airflow, dtype=float)
    makeup = np.broadcast_to(_nonneg("makeup_airflow", makeup_airflow), vpz.shape)
    gen = np.broadcast_to(_nonneg("generation", generation), vpz.shape) + makeup * np.broadcast_to(
        _nonneg("makeup_concentration", makeup_concentration), vpz.shape)
    loss = np.broadcast_to(_in_room_loss(volume, cadr, k_deposition, k_inactivation), vpz.shape)
    loss = loss + makeup
    cz, cs = _steady(gen, vpz, loss, a, sysm)
    cr = float(np.sum(sysm.rho * cz)) if sysm.rho.sum() > 0 else float("nan")
    return CoupledSteadyState(cz, cs, cr)


def coupled_required_intake(limit, generation, volume, primary_airflow,
                            outdoor_concentration=0.0, outdoor_filter_efficiency=0.0,
                            recirc_filter_efficiency=0.0, zone_exhaust=0.0, cadr=0.0,
                            k_deposition=0.0, k_inactivation=0.0, ez=1.0, makeup_airflow=0.0,
                            makeup_concentration=0.0):
    """Least outdoor air intake that holds every zone of a coupled system at its limit.

    The steady state of :func:`coupled_steady_state` with each zone's generation counted as
    ``G_z/Ez`` (the breathing-zone form of the IAQ procedure's mass-balance equations). Every
    zone concentration is ``(G_z + Vpz·C_s)/D_z`` and C_s a ratio of two linear functions of
    Vot, so each zone moves monotonically with Vot, all in the direction of C_s (derived from
    the module model): the least intake in ``[ΣE_z, ΣVpz]`` with ``C_z <= L_z`` in every zone
    is found by bisection on ``max_z C_z/L_z``, to a relative width of 1e-12.

    Parameters
    ----------
    limit : array_like, shape (n_zones,)
        Concentration limit of each zone (> 0; ``inf`` for a zone without one). [C]
    generation, volume, primary_airflow, outdoor_concentration, outdoor_filter_efficiency, \
recirc_filter_efficiency, zone_exhaust, cadr, k_deposition, k_inactivation, makeup_airflow, \
makeup_concentration
        As in :func:`coupled_steady_state`. [C·L/s], [m3], [L/s], [C], [-], [-], [L/s],
        [L/s], [1/h], [1/h], [L/s], [C]
    ez : float or array_like, shape (n_zones,)
        Zone air distribution effectiveness Ez (> 0). [-]

    Returns
    -------
    float
        The least intake Vot; infinite where even ΣVpz of outdoor air does not meet every
        limit. [L/s]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.3 (IAQ procedure, mass balance analysis);
    Nazaroff & Alvarez-Cohen (2001), CMFR steady state for each zone and the mixing box.

    Examples
    --------
    The two zones of :func:`coupled_steady_state`'s example, zone 1 limited to 1.8: by hand
    C_s = (1 − Vot/2000)·800/Vot must be at most 1.8 − 600/1000 = 1.2, so Vot = 500 L/s:

    >>> round(coupled_required_intake([1.8, 10.0], [600.0, 200.0], 50.0, [1000.0, 1000.0]), 6)
    500.0
    """
    vpz = _nonneg("primary_airflow", primary_airflow)
    lim = np.broadcast_to(np.asarray(limit, dtype=float), vpz.shape)
    if np.any(np.isnan(lim)) or np.any(lim <= 0):
        raise ValueError(f"limit must be > 0 (inf for no limit), got {limit!r}")
    gen = _nonneg("generation", generation) / _positive("ez", ez)
    kw = dict(outdoor_concentration=outdoor_concentration,
              outdoor_filter_efficiency=outdoor_filter_efficiency,
              recirc_filter_efficiency=recirc_filter_efficiency, zone_exhaust=zone_exhaust,
              cadr=cadr, k_deposition=k_deposition, k_inactivation=k_inactivation,
              makeup_airflow=makeup_airflow, makeup_concentration=makeup_concentration)

    def worst(vot: float) -> float:
        try:
            zone = coupled_steady_state(gen, volume, vpz, vot, **kw).zone
        except ValueError:  # nothing removes it at this intake: no steady state
            return np.inf
        return float(np.max(zone / lim))

    lo = float(np.sum(np.broadcast_to(_nonneg("zone_exhaust", zone_exhaust), vpz.shape)))
    hi = float(np.sum(vpz))
    # all outdoor air first, outside the bisection: any invalid input is reported here
    if not float(np.max(coupled_steady_state(gen, volume, vpz, hi, **kw).zone / lim)) <= 1.0:
        return float("inf")
    if worst(lo) <= 1.0:
        return lo
    while hi - lo > 1e-12 * hi:
        mid = 0.5 * (lo + hi)
        if worst(mid) <= 1.0:
            hi = mid
        else:
            lo = mid
    return hi


# --------------------------------------------------------------------------- exact transient
#
# On a piece, dC/dt = A·C + b with A = −diag(d) + u·wᵀ, d_z = F·(Vpz + L_z)/V_z,
# u_z = F·Vpz/V_z, b_z = F·(G_z + Vpz·a)/V_z, F = PER_HOUR (rates per hour from L/s and m³).
# Group the zones that return air (w_z > 0) by equal rate, K groups of
# rates p_k, and take the aggregates X_k = Σ_{z in k} w_z·C_z. Their balance is closed:
#     dX/dt = M·X + β,  M = −diag(p) + c·1ᵀ,  c_k = Σ_{z in k} w_z·u_z,  β_k = Σ_{z in k} w_z·b_z,
# and the coupling signal y = wᵀC = Σ_k X_k. With S = diag(1/√c), S·M·S⁻¹ = −diag(p) + √c·√cᵀ
# is symmetric (diagonal plus rank one), so numpy.linalg.eigh gives it as Q·diag(−ν)·Qᵀ with
# orthonormal Q, and in the coordinates ζ = Qᵀ·S·X every mode is a scalar balance:
#     ζ_i(τ) = e^(−ν_i τ)·ζ_i(0) + τ·φ(ν_i τ)·g_i,   g = Qᵀ·S·β,   φ(x) = (1 − e^(−x))/x.
# A returning zone z of group k is a scalar balance driven by y, and the aggregate's own
# balance gives the convolution of y with e^(−p_k τ) without computing it:
#     C_z(τ) = e^(−p_k τ)·(C_z(0) − ρ_z·X_k(0)) + τφ(p_k τ)·(b_z − ρ_z·β_k) + ρ_z·X_k(τ),
#     ρ_z = u_z/c_k.
# A zone that returns no air (w_z = 0, rate d_z) does not feed back; its response to y is the
# convolution of e^(−d_z τ) with the modes, in the kernels of numeric.py that stay accurate when
# d_z equals a mode rate (a resonance no closed form in 1/(d_z − ν_i) survives):
#     C_z(τ) = e^(−d_z τ)·C_z(0) + τφ(d_z τ)·b_z
#              + u_z·Σ_i h_i·[ζ_i(0)·conv(d_z, ν_i, τ) + g_i·ramp(d_z, ν_i, τ)],   h = Qᵀ·√c.
# No steady state is needed (a system that removes nothing has ν = 0 and grows linearly), no
# ODE solver, and no N×N matrix: the one dense matrix is K×K.

#: The largest number K of distinct zone rates among the zones that return air. The K×K
#: eigendecomposition costs O(K³) time and 8·K² bytes (K = 4,000: 128 MB, a few seconds); a
#: system with more distinct rates is refused with TooManyRates (group equal zones, or round
#: their volumes and airflows, to bring K down).
MAX_DISTINCT_RATES = 4000


class TooManyRates(ValueError):
    """The coupled transient was asked for more than MAX_DISTINCT_RATES distinct zone rates."""


class _Modes(NamedTuple):
    d: np.ndarray  # (n,) zone decay rates (Vpz + L_z)/V_z [1/h]
    u: np.ndarray  # (n,) Vpz/V_z [1/h]
    w: np.ndarray  # (n,) weight of each zone in the supply [-]
    ret: np.ndarray  # indices of the zones that return air (w_z > 0)
    group: np.ndarray  # (n_ret,) group index of each returning zone
    p: np.ndarray  # (K,) distinct rates of the returning zones [1/h]
    sqrt_c: np.ndarray  # (K,) √c_k [1/h]
    rho: np.ndarray  # (n_ret,) u_z/c_k [-]
    nu: np.ndarray  # (K,) decay rates of the coupled modes, >= 0 [1/h]
    q: np.ndarray  # (K, K) orthonormal eigenvectors
    h: np.ndarray  # (K,) Qᵀ·√c
    others: np.ndarray  # indices of the zones that return no air
    o_rates: np.ndarray  # (K_o,) their distinct rates [1/h]
    o_group: np.ndarray  # (n_o,) group of each


def _modes(d, u, w):
    """The coupled modes of one airflow and loss configuration (the comment above)."""
    ret = np.flatnonzero(w > 0)
    p, group = np.unique(d[ret], return_inverse=True)
    k = p.size
    if k > MAX_DISTINCT_RATES:
        raise TooManyRates(
            f"the coupled transient is limited to {MAX_DISTINCT_RATES} distinct zone rates "
            f"(Vpz + losses)/V among the zones that return air; this system has {k}. Zones "
            f"of equal volume, airflow and losses count once")
    c = np.bincount(group, weights=w[ret] * u[ret], minlength=k)
    sqrt_c = np.sqrt(c)
    lam, q = np.linalg.eigh(np.diag(-p) + np.outer(sqrt_c, sqrt_c))
    others = np.flatnonzero(w <= 0)
    o_rates, o_group = np.unique(d[others], return_inverse=True)
    return _Modes(d, u, w, ret, group, p, sqrt_c, u[ret] / c[group], np.maximum(-lam, 0.0),
                  q, q.T @ sqrt_c, others, o_rates, o_group)


def _differs(x):
    """Whether each piece's row of ``x`` (n_pieces, ...) differs from the row before: (n − 1,)."""
    d = x[1:] != x[:-1]
    return d.any(axis=tuple(range(1, d.ndim)))


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


def coupled_piecewise_transient(times_breaks, generation_per_piece, volume, primary_airflow,
                                outdoor_intake, c0, output_times, *, outdoor_concentration=0.0,
                                outdoor_filter_efficiency=0.0, recirc_filter_efficiency=0.0,
                                zone_exhaust=0.0, cadr=0.0, k_deposition=0.0,
                                k_inactivation=0.0, makeup_airflow=0.0,
                                makeup_concentration=0.0):
    """Exact transient of a coupled system for inputs constant on each piece.

    Solves ``V_z·dC_z/dt = 3.6·[G_z + Vpz·C_s − (Vpz + L_z)·C_z]``, ``C_s = a + Σ w_z C_z`` (module
    model) piece by piece in closed form through the eigendecomposition of the symmetrised
    K×K coupling of the zones that return air (the comment above :func:`_modes`): no ODE
    solver, no N×N matrix, and no steady state needed, so a system that removes nothing is
    solved exactly too.

    Cost: O(K³) time and O(K²) memory once per airflow and loss configuration (reused while
    airflows and losses stay the same), then O(N + K² + K_o·K) per output time, where K is the
    number of distinct zone rates (Vpz + L_z)/V_z among the zones that return air (zones of
    the same room type count once) and K_o the number among the zones that return none.
    Size limit: K <= :data:`MAX_DISTINCT_RATES`; above it :class:`TooManyRates` (a
    ValueError) is raised before any work is done.

    Layout: zone inputs are ``(n_zones,)`` (constant) or ``(n_pieces, n_zones)`` (per piece;
    ``(n_pieces, 1)`` for all zones alike); system inputs (``outdoor_intake``,
    ``outdoor_concentration``, ``outdoor_filter_efficiency``, ``recirc_filter_efficiency``)
    are scalars or ``(n_pieces,)``. ``volume`` and ``c0`` are constant.

    Parameters
    ----------
    times_breaks : array_like, shape (n_pieces + 1,)
        Strictly increasing times bounding the pieces. [h]
    generation_per_piece : array_like, shape (n_zones,) or (n_pieces, n_zones)
        Zone generation G_z. [C·L/s]
    volume : float or array_like, shape (n_zones,)
        Zone volume V_z. [m3]
    primary_airflow : array_like, shape (n_zones,) or (n_pieces, n_zones)
        Zone primary airflow Vpz. [L/s]
    outdoor_intake : float or array_like, shape (n_pieces,)
        Outdoor air intake Vot. [L/s]
    c0 : float or array_like, shape (n_zones,)
        Zone concentrations at ``times_breaks[0]``. [C]
    output_times : array_like, shape (n_times,)
        Times within the span of ``times_breaks``, any order. [h]
    outdoor_concentration : float or array_like, shape (n_pieces,)
        C_out. [C]
    outdoor_filter_efficiency, recirc_filter_efficiency : float or array_like, (n_pieces,)
        η_oa and η_rec. [-]
    zone_exhaust, cadr : float or array_like, shape (n_zones,) or (n_pieces, n_zones)
        Zone exhaust E_z and in-room CADR. [L/s]
    k_deposition, k_inactivation : float or array_like, shape (n_zones,) or (n_pieces, n_zones)
        In-room first-order losses. [1/h]
    makeup_airflow, makeup_concentration : float or array_like, shape (n_zones,) or \
(n_pieces, n_zones)
        Makeup air besides the supply and its concentration, as in
        :func:`coupled_steady_state` (a diagonal term: the structure is kept). [L/s], [C]

    Returns
    -------
    CoupledTransient
        Zone and supply concentrations at the output times. [C]

    Raises
    ------
    TooManyRates
        More than :data:`MAX_DISTINCT_RATES` distinct rates among the zones that return air.

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR transient for each zone; Golub (1973) for the
    diagonal-plus-rank-one eigenproblem.

    Examples
    --------
    Two equal zones behave as one zone with the same outdoor fraction: 250 L/s (900 m³/h) into
    90 m³ each, a quarter outdoor air, so each gets λ = 0.25 × 10/h = 2.5/h of clean air and
    tends to G/(x·Vpz) = 150/62.5 = 2.4 as 2.4·(1 − e^(−2.5 t)) (hand calculation):

    >>> run = coupled_piecewise_transient([0.0, 1.0], [150.0, 150.0], 90.0, [250.0, 250.0],
    ...                                   125.0, 0.0, [0.4, 1.0])
    >>> [round(float(c), 9) for c in run.zone[:, 0]]
    [1.517089341, 2.202996003]
    """
    b = _check_breaks(times_breaks)
    n = b.size - 1
    zone, system = _layout_pieces(
        n,
        dict(generation=generation_per_piece, primary_airflow=primary_airflow,
             zone_exhaust=zone_exhaust, cadr=cadr, k_deposition=k_deposition,
             k_inactivation=k_inactivation, makeup_airflow=makeup_airflow,
             makeup_concentration=makeup_concentration),
        dict(outdoor_intake=outdoor_intake, outdoor_concentration=outdoor_concentration,
             outdoor_filter_efficiency=outdoor_filter_efficiency,
             recirc_filter_efficiency=recirc_filter_efficiency))
    vol = np.broadcast_to(_positive("volume", volume), zone["generation"].shape[1:])
    c = np.broadcast_to(_nonneg("c0", c0), vol.shape).astype(float)
    makeup = _nonneg("makeup_airflow", zone["makeup_airflow"])
    gen = (_nonneg("generation_per_piece", zone["generation"])
           + makeup * _nonneg("makeup_concentration", zone["makeup_concentration"]))
    loss = _in_room_loss(vol, zone["cadr"], zone["k_deposition"], zone["k_inactivation"]) + makeup
    outdoor = (_nonneg("outdoor_concentration", system["outdoor_concentration"])
               * (1 - _fraction("outdoor_filter_efficiency",
                                system["outdoor_filter_efficiency"])))
    t = np.asarray(output_times, dtype=float)
    if t.ndim != 1 or np.any(~np.isfinite(t)) or np.any((t < b[0]) | (t > b[-1])):
        raise ValueError(f"output_times must be 1-D within [{b[0]}, {b[-1]}] h")
    piece_of = np.clip(np.searchsorted(b, t, side="right") - 1, 0, n - 1)
    order = np.argsort(piece_of, kind="stable")
    bounds = np.searchsorted(piece_of[order], np.arange(n + 1))
    out_zone, out_supply = np.empty((t.size, vol.size)), np.empty(t.size)
    vpz_all = zone["primary_airflow"]
    air = (vpz_all, system["outdoor_intake"], zone["zone_exhaust"],
           system["recirc_filter_efficiency"])
    air_changed = np.zeros(n, dtype=bool)  # piece j's airflows differ from piece j − 1's
    air_changed[0] = True
    for x in air:
        air_changed[1:] |= _differs(x)
    new_modes = air_changed.copy()  # airflows or losses differ: the modes may too
    new_modes[1:] |= _differs(loss)
    sysm, last_key, x_of = None, None, np.empty(n)
    runs = []  # [modes, first piece, last piece] of consecutive pieces that share the modes
    for j in range(n):
        if air_changed[j]:
            sysm = _system(*(x[j] for x in air))
        if new_modes[j]:
            key = (vpz_all[j].tobytes(), loss[j].tobytes(), sysm.w.tobytes())
            if key != last_key:  # modes are shared while airflows and losses stay the same
                last_key = key
                runs.append([_modes(PER_HOUR * (vpz_all[j] + loss[j]) / vol,
                                    PER_HOUR * vpz_all[j] / vol, sysm.w), j, j])
        runs[-1][2] = j
        x_of[j] = sysm.x
    a = x_of * outdoor  # the supply's outdoor part per piece
    rhs = PER_HOUR * (gen + vpz_all * a[:, None]) / vol
    for m, first, last in runs:
        sel = order[bounds[first]:bounds[last + 1]]  # the run's rows, piece by piece
        c = _run(m, c, rhs[first:last + 1], np.diff(b[first:last + 2]), t[sel] - b[piece_of[sel]],
                 piece_of[sel] - first, out_zone, out_supply, sel, a[first:last + 1])
    return CoupledTransient(out_zone, out_supply)
