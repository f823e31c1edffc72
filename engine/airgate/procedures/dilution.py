"""Dilution of a contaminant in one well-mixed zone: steady state, CO2, transient, purge times.

Pure functions on plain floats and numpy arrays; no unit objects. Every argument broadcasts
with numpy rules, so one call evaluates any number of zones. A float in gives a float out; an
invalid input raises ValueError naming the parameter, for floats and arrays alike.

Units, those of every procedure (:mod:`airgate.units`): airflow [L/s], volume [m3],
first-order rates [1/h], time [h]; concentration in any unit ``C`` (particles/m3, ug/m3,
ppm, ...), the same for every concentration argument of one call; generation [C·L/s], so that
a steady concentration is ``C = G / Q`` (CO2 in ppm: ``G = 10⁶ × CO2 flow in L/s``). Rates
come from airflows as ``PER_HOUR·Q/V`` (:mod:`airgate.procedures.numeric`).

The zone balance, a completely mixed flow reactor with first-order losses [1]_::

    V·dC/dt = 3.6·[G + Q_oa·(1 − η_oa)·C_out + Q_mu·C_mu − (Q_oa + Q_mu + η_rec·Q_rec + CADR)·C]
              − (k_dep + k_inact)·V·C

where Q_mu is makeup air entering besides the supply at concentration C_mu (outdoor air, or air
transferred from another zone) and leaving, with the zone's exhaust, at the zone's concentration.

is linear with constant coefficients between changes of its inputs, so every result here and
in :mod:`airgate.procedures.piecewise` is its exact solution, never a numerical integration.
Its loss terms are in :mod:`airgate.procedures.losses`.

References
----------
.. [1] Nazaroff, W.W. and Alvarez-Cohen, L. (2001). *Environmental Engineering Science*. Wiley,
   New York: material balance on a completely mixed flow reactor (CMFR), steady state and
   transient, with first-order loss terms.
.. [2] CDC (2003). *Guidelines for Environmental Infection Control in Health-Care Facilities*,
   Appendix B, Table B.1 (air changes per hour and minutes to remove 99 % and 99.9 %).
.. [3] ANSI/ASHRAE Standard 62.1-2019, Section 6.2.2.2 (zone air distribution effectiveness),
   Section 6.3 and Informative Appendix E, acceptable mass balance equations for use with the
   IAQ procedure (the same well-mixed balance; the appendix title from a public copy's contents
   page, the equations from memory).
.. [4] ASHRAE 241-2023, *Control of Infectious Aerosols* (equivalent clean airflow as the sum
   of outdoor air, filtration and air cleaners).
"""

from __future__ import annotations

import numpy as np

from airgate.procedures.numeric import (
    finite as _finite,
    fraction as _fraction,
    nonneg as _nonneg,
    out as _out,
    positive as _positive,
)
# the loss terms and the piecewise-constant solution live in their own modules; their names
# are part of this module's API too
from airgate.procedures.losses import (  # noqa: F401
    air_change_rate,
    equivalent_clean_airflow,
    inactivation_rate_from_half_life,
    loss_breakdown,
    loss_rate,
)
from airgate.procedures.piecewise import (  # noqa: F401
    PiecewiseSolution,
    evaluate_piecewise,
    peak_concentration,
    piecewise_solution,
    piecewise_transient,
    time_weighted_average,
)

__all__ = [
    "breathing_zone_concentration", "co2_excess_ppm", "dcv_setpoint_ppm",
    "required_outdoor_airflow", "steady_state_concentration", "time_to_fraction_of_steady_state",
    "time_to_fraction_removed", "transient_concentration",
]


def steady_state_concentration(generation, volume, outdoor_airflow, outdoor_concentration=0.0,
                               outdoor_filter_efficiency=0.0, recirc_airflow=0.0,
                               recirc_efficiency=0.0, cadr=0.0, k_deposition=0.0,
                               k_inactivation=0.0, makeup_airflow=0.0, makeup_concentration=0.0):
    """Steady concentration of a well-mixed zone,
    ``C_ss = (G + Q_oa·(1 − η_oa)·C_out + Q_mu·C_mu) / Q_c``.

    Q_c is the equivalent clean airflow (:func:`~airgate.procedures.losses.
    equivalent_clean_airflow`), λ·V/3.6 in L/s.

    With clean supply and no other loss, ``C_ss = G / Q_oa``.

    Parameters
    ----------
    generation : float or array_like
        Generation rate G (>= 0). [C·L/s]
    volume : float or array_like
        Zone volume (enters only through deposition and inactivation). [m3]
    outdoor_airflow : float or array_like
        Outdoor airflow, Q_oa (>= 0). [L/s]
    outdoor_concentration : float or array_like
        Outdoor concentration, C_out (>= 0). [C]
    outdoor_filter_efficiency : float or array_like
        Efficiency of the filter on outdoor air, η_oa, in [0, 1]. [-]
    recirc_airflow, recirc_efficiency, cadr, k_deposition, k_inactivation
        As in :func:`~airgate.procedures.losses.loss_breakdown`. [L/s], [-], [L/s], [1/h],
        [1/h]
    makeup_airflow : float or array_like
        Makeup air Q_mu entering besides the supply and leaving with the zone's exhaust
        (>= 0). [L/s]
    makeup_concentration : float or array_like
        Its concentration C_mu (>= 0): C_out for outdoor makeup (no filter), a source zone's
        concentration for transferred air. [C]

    Returns
    -------
    float or ndarray
        C_ss; infinite where a removal is positive but too small for the float range. [C]

    Raises
    ------
    ValueError
        If the equivalent clean airflow is zero (no steady state exists).

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR steady state (every inflow a source, every outflow at
    the zone concentration a loss).

    Examples
    --------
    100 C·L/s generated, 50 L/s of clean outdoor air:

    >>> steady_state_concentration(100.0, 50.0, 50.0)
    2.0

    The same zone exhausting 30 L/s made up by air transferred from a zone at 1.5, by hand
    (100 + 30·1.5) / (50 + 30) = 145 / 80 = 1.8125:

    >>> steady_state_concentration(100.0, 50.0, 50.0, makeup_airflow=30.0,
    ...                            makeup_concentration=1.5)
    1.8125
    """
    q_clean = np.asarray(equivalent_clean_airflow(volume, outdoor_airflow, recirc_airflow,
                                                  recirc_efficiency, cadr, k_deposition,
                                                  k_inactivation, makeup_airflow))
    if np.any(q_clean <= 0):
        raise ValueError("outdoor_airflow, makeup_airflow, recirc_airflow·recirc_efficiency, "
                         "cadr, k_deposition and k_inactivation are all 0 (no removal): no "
                         "steady state")
    source = (_nonneg("generation", generation)
              + _nonneg("outdoor_airflow", outdoor_airflow)
              * (1 - _fraction("outdoor_filter_efficiency", outdoor_filter_efficiency))
              * _nonneg("outdoor_concentration", outdoor_concentration)
              + _nonneg("makeup_airflow", makeup_airflow)
              * _nonneg("makeup_concentration", makeup_concentration))
    with np.errstate(over="ignore"):  # a removal too small for the float range gives inf
        return _out(source / q_clean)


def required_outdoor_airflow(limit, generation, volume, outdoor_concentration=0.0,
                             outdoor_filter_efficiency=0.0, supply_airflow=0.0,
                             recirc_efficiency=0.0, cadr=0.0, k_deposition=0.0,
                             k_inactivation=0.0, ez=1.0):
    """Least outdoor airflow that holds a zone's breathing-zone steady state at a limit.

    The steady state of :func:`steady_state_concentration` in the breathing-zone form of the
    IAQ procedure's mass-balance equations, where the generation counts as ``G/Ez``::

        C_bz(Q) = (G/Ez + Q·(1 − η_oa)·C_out) / (Q + η_rec·Q_rec(Q) + B)

    with ``B = CADR + (k_dep + k_inact)·V/3.6`` and the recirculated airflow
    ``Q_rec(Q) = max(S − Q, 0)`` for a supply airflow S (the rest of the supply is recirculated
    through the filter; none when S = 0). ``C_bz`` is monotone in Q on each side of S, so the
    least Q with ``C_bz(Q) <= L`` is in closed form: 0 when ``G/Ez <= L·(η_rec·S + B)``;
    else, when ``C_bz(S) <= L`` (the root lies below S),
    ``Q = (G/Ez − L·(η_rec·S + B)) / (L·(1 − η_rec) − (1 − η_oa)·C_out)``; else (more
    outdoor air than the supply: none recirculated) ``Q = (G/Ez − L·B) / (L − (1 − η_oa)·C_out)``.
    With one filter on the mixed air (η_oa = η_rec = Ef) and R = 1 the first is the
    appendix's ``Vo = (N − Ez·R·Vr·Ef·Cbz) / (Ez·(Cbz − (1 − Ef)·Co))`` with ``Vr = S − Vo``.

    Parameters
    ----------
    limit : float or array_like
        Concentration limit L (> 0). [C]
    generation : float or array_like
        Generation rate G (>= 0). [C·L/s]
    volume : float or array_like
        Zone volume (enters only through deposition and inactivation). [m3]
    outdoor_concentration : float or array_like
        Outdoor concentration C_out (>= 0). [C]
    outdoor_filter_efficiency : float or array_like
        Efficiency of the filter on outdoor air η_oa, in [0, 1]. [-]
    supply_airflow : float or array_like
        Supply airflow S; the part that is not outdoor air is recirculated (>= 0). [L/s]
    recirc_efficiency : float or array_like
        Efficiency of the filter on recirculated air η_rec, in [0, 1]. [-]
    cadr, k_deposition, k_inactivation : float or array_like
        As in :func:`~airgate.procedures.losses.loss_breakdown`. [L/s], [1/h], [1/h]
    ez : float or array_like
        Zone air distribution effectiveness Ez (> 0). [-]

    Returns
    -------
    float or ndarray
        The least outdoor airflow Q (>= 0); infinite where no outdoor airflow meets the
        limit (the filtered outdoor air alone is at or above it). [L/s]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.3 (IAQ procedure, mass balance analysis) and its
    appendix of mass-balance equations for single-zone systems (Cbz and Vo with filter on the
    mixed air; the equations' form entered from memory); Nazaroff & Alvarez-Cohen (2001),
    CMFR steady state.

    Examples
    --------
    100 C·L/s into clean outdoor air, limit 2: Q = G/L = 50 L/s. With 100 L/s of supply
    through a 50 % filter, C_out = 0.5 and limit 1.5, by hand
    Q = (100 − 1.5·0.5·100) / (1.5·0.5 − 0.5·0.5) = 25 / 0.5 = 50 L/s, and then
    C_bz = (100 + 50·0.5·0.5) / (50 + 0.5·50) = 112.5 / 75 = 1.5:

    >>> required_outdoor_airflow(2.0, 100.0, 50.0)
    50.0
    >>> round(required_outdoor_airflow(1.5, 100.0, 50.0, 0.5, 0.5, 100.0, 0.5), 9)
    50.0
    """
    lim = _positive("limit", limit)
    g = _nonneg("generation", generation) / _positive("ez", ez)
    c_out = _nonneg("outdoor_concentration", outdoor_concentration)
    a = (1 - _fraction("outdoor_filter_efficiency", outdoor_filter_efficiency)) * c_out
    s = _nonneg("supply_airflow", supply_airflow)
    eta = _fraction("recirc_efficiency", recirc_efficiency)
    b = equivalent_clean_airflow(volume, 0.0, cadr=cadr, k_deposition=k_deposition,
                                 k_inactivation=k_inactivation)
    none_needed = g <= lim * (eta * s + b)
    below_supply = g + s * a <= lim * (s + b)  # C_bz(S) <= L: the root lies in [0, S]
    with np.errstate(divide="ignore", invalid="ignore"):
        q_mixed = (g - lim * (eta * s + b)) / (lim * (1 - eta) - a)
        q_outdoor = np.where(lim > a, (g - lim * b) / (lim - a), np.inf)
    q = np.where(none_needed, 0.0, np.where(below_supply, q_mixed, q_outdoor))
    return _out(np.maximum(q, 0.0))


def breathing_zone_concentration(c_supply, c_exhaust, ez):
    """Breathing-zone concentration, ``C_bz = C_supply + (C_exhaust − C_supply) / Ez``.

    Parameters
    ----------
    c_supply : float or array_like
        Concentration of the supply air. [C]
    c_exhaust : float or array_like
        Concentration of the exhaust (return) air. [C]
    ez : float or array_like
        Zone air distribution effectiveness Ez (> 0). [-]

    Returns
    -------
    float or ndarray
        C_bz. [C]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.2.2 (Ez as the effectiveness with which the
    supply reaches the breathing zone), applied to the well-mixed balance (derived).

    Examples
    --------
    >>> breathing_zone_concentration(400.0, 1000.0, 0.8)
    1150.0
    """
    cs = _finite("c_supply", c_supply)
    return _out(cs + (_finite("c_exhaust", c_exhaust) - cs) / _positive("ez", ez))


def co2_excess_ppm(generation_Ls, airflow_Ls):  # noqa: N803 - trade unit in the name
    """Steady CO2 excess over outdoor air, ``ΔC = 10⁶ · G / Q``.

    Both flows are in litres per second (ppm is a volume fraction × 10⁶, so only their ratio
    matters).

    Parameters
    ----------
    generation_Ls : float or array_like
        CO2 generation (>= 0). [L/s]
    airflow_Ls : float or array_like
        Outdoor airflow diluting it (> 0). [L/s]

    Returns
    -------
    float or ndarray
        Excess CO2 concentration. [ppm]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR steady state; ASHRAE technical FAQ on CO2 (7.5 L/s
    per person corresponds to about 700 ppm above outdoors).

    Examples
    --------
    The FAQ's rule of thumb: 0.0052 L/s per person at 7.5 L/s per person, about 700 ppm:

    >>> round(co2_excess_ppm(0.0052, 7.5))
    693
    """
    return _out(1e6 * _nonneg("generation_Ls", generation_Ls)
                / _positive("airflow_Ls", airflow_Ls))


def dcv_setpoint_ppm(outdoor_ppm, co2_generation_per_person_Ls,  # noqa: N803
                     outdoor_air_per_person_Ls):
    """CO2 set point that holds a zone at its outdoor air per person at steady state.

    ``C_zone = C_out + 10⁶ · N / Voz_per_person``. Flows in litres per second.

    Parameters
    ----------
    outdoor_ppm : float or array_like
        Outdoor CO2 concentration (>= 0). [ppm]
    co2_generation_per_person_Ls : float or array_like
        CO2 generation per person, N (>= 0). [L/s]
    outdoor_air_per_person_Ls : float or array_like
        Outdoor airflow per person to hold (> 0). [L/s]

    Returns
    -------
    float or ndarray
        Zone CO2 set point. [ppm]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR steady state; N for an office occupant, about
    0.0048 L/s, from Persily & de Jonge (2017), Indoor Air 27(5), Table 4.

    Examples
    --------
    >>> dcv_setpoint_ppm(420.0, 0.0048, 7.5)
    1060.0
    """
    return _out(_nonneg("outdoor_ppm", outdoor_ppm)
                + co2_excess_ppm(
                    _nonneg("co2_generation_per_person_Ls", co2_generation_per_person_Ls),
                    _positive("outdoor_air_per_person_Ls", outdoor_air_per_person_Ls)))


def transient_concentration(c0, c_ss, lam, t):
    """Concentration after a time t at constant inputs, ``C(t) = C_ss + (C0 − C_ss)·e^(−λt)``.

    Parameters
    ----------
    c0 : float or array_like
        Concentration at t = 0. [C]
    c_ss : float or array_like
        Steady concentration for the constant inputs. [C]
    lam : float or array_like
        Loss rate λ (>= 0). [1/h]
    t : float or array_like
        Elapsed time (>= 0). [h]

    Returns
    -------
    float or ndarray
        C(t). [C]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR transient.

    Examples
    --------
    A clean room after one time constant holds 1 − 1/e of its steady value:

    >>> round(transient_concentration(0.0, 1000.0, 2.0, 0.5), 6)
    632.120559
    """
    c_ss = _finite("c_ss", c_ss)
    decay = np.exp(-_nonneg("lam", lam) * _nonneg("t", t))
    return _out(c_ss + (_finite("c0", c0) - c_ss) * decay)


def time_to_fraction_removed(lam, fraction):
    """Time for the concentration to fall by a fraction f once the source stops.

    ``t = ln(1 / (1 − f)) / λ``.

    Parameters
    ----------
    lam : float or array_like
        Loss rate λ (> 0). [1/h]
    fraction : float or array_like
        Fraction removed f, 0 <= f < 1 (0.99 for 99 %). [-]

    Returns
    -------
    float or ndarray
        Time. [h]

    References
    ----------
    CDC (2003), Guidelines for Environmental Infection Control in Health-Care Facilities,
    Appendix B, Table B.1 (and its footnote formula); Nazaroff & Alvarez-Cohen (2001).

    Examples
    --------
    Table B.1: at 6 air changes per hour, 46 minutes to remove 99 % and 69 to remove 99.9 %:

    >>> [round(60 * time_to_fraction_removed(6.0, f)) for f in (0.99, 0.999)]
    [46, 69]
    """
    f = _fraction("fraction", fraction, open_top=True)
    with np.errstate(over="ignore"):  # a loss rate too small for the float range gives inf
        return _out(-np.log1p(-f) / _positive("lam", lam))


def time_to_fraction_of_steady_state(lam, fraction=0.95):
    """Time for a clean zone to reach a fraction f of its steady concentration.

    From ``C/C_ss = 1 − e^(−λt)``: ``t = ln(1 / (1 − f)) / λ``; 95 % takes about 3/λ, the
    ``T = 3·v/Vbz`` averaging time of ANSI/ASHRAE 62.1-2019 Section 6.2.6.2. Same formula as
    :func:`time_to_fraction_removed`.

    Parameters
    ----------
    lam : float or array_like
        Loss rate λ (> 0). [1/h]
    fraction : float or array_like
        Fraction of the steady value f, 0 <= f < 1. [-]

    Returns
    -------
    float or ndarray
        Time. [h]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR transient; ANSI/ASHRAE Standard 62.1-2019, Section
    6.2.6.2 (short-term conditions).

    Examples
    --------
    >>> round(time_to_fraction_of_steady_state(1.0), 4)
    2.9957
    """
    return time_to_fraction_removed(lam, fraction)
