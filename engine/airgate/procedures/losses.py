"""Removal mechanisms of the well-mixed zone balance: equivalent clean airflows and loss rates.

Pure functions on plain floats and numpy arrays (broadcasting), in the procedures' units
(:mod:`airgate.units`): airflow [L/s], volume [m3], rates [1/h], time [h]; a loss rate is
``PER_HOUR·(airflow/volume) + k`` with ``PER_HOUR`` = 3.6 (L/s)/m³ per 1/h
(:mod:`airgate.procedures.numeric`). A float in gives a float out; an invalid input raises
ValueError naming the parameter.

Every first-order loss term of ``V·dC/dt = G + Q_oa·(1 − η_oa)·C_out + Q_mu·C_mu − λ·V·C``
written as the airflow of clean air that would remove as much: outdoor air Q_oa, the makeup air
Q_mu that enters besides the supply and leaves with the zone's exhaust (its own concentration
C_mu is a source term, not a loss), filtration η_rec·Q_rec, in-room air cleaners CADR,
deposition k_dep·V and inactivation k_inact·V (each V/PER_HOUR in L/s); they add to λ·V.

References
----------
.. [1] Nazaroff, W.W. and Alvarez-Cohen, L. (2001). *Environmental Engineering Science*. Wiley,
   New York: the completely mixed flow reactor (CMFR) with first-order loss terms.
.. [2] ASHRAE 241-2023, *Control of Infectious Aerosols* (equivalent clean airflow as the sum
   of outdoor air, filtration as airflow × efficiency, and air cleaners).
"""

from __future__ import annotations

import numpy as np

from airgate.procedures.numeric import (
    PER_HOUR,
    fraction as _fraction,
    nonneg as _nonneg,
    out as _out,
    positive as _positive,
)

__all__ = ["air_change_rate", "equivalent_clean_airflow", "inactivation_rate_from_half_life",
           "loss_breakdown", "loss_rate"]


def loss_breakdown(volume, outdoor_airflow, recirc_airflow=0.0, recirc_efficiency=0.0,
                   cadr=0.0, k_deposition=0.0, k_inactivation=0.0, makeup_airflow=0.0):
    """Equivalent clean airflow of each removal mechanism.

    Each first-order loss term of the zone balance written as the airflow of clean air that
    would remove as much; they add.

    Parameters
    ----------
    volume : float or array_like
        Zone volume (>= 0). [m3]
    outdoor_airflow : float or array_like
        Outdoor airflow supplied to the zone, Q_oa (>= 0). [L/s]
    recirc_airflow : float or array_like
        Recirculated airflow passing a filter, Q_rec (>= 0). [L/s]
    recirc_efficiency : float or array_like
        Single-pass efficiency of that filter, η_rec, in [0, 1]. [-]
    cadr : float or array_like
        Clean-air delivery rate of in-room air cleaners (>= 0). [L/s]
    k_deposition : float or array_like
        Deposition rate on surfaces (>= 0). [1/h]
    k_inactivation : float or array_like
        Inactivation (decay) rate (>= 0). [1/h]
    makeup_airflow : float or array_like
        Makeup air Q_mu entering the zone besides its supply, which leaves at the zone's
        concentration with its exhaust (>= 0): the outflow it adds removes Q_mu·C. [L/s]

    Returns
    -------
    dict of str to float or ndarray
        ``outdoor_air`` = Q_oa, ``recirculation_filter`` = η_rec·Q_rec, ``air_cleaner`` = CADR,
        ``deposition`` = k_dep·V/3.6, ``inactivation`` = k_inact·V/3.6, ``makeup_air`` =
        Q_mu. [L/s]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR balance with first-order losses (an outflow at the
    zone concentration is such a loss); ASHRAE 241-2023 (equivalent clean airflow: outdoor
    air, filtration as airflow × efficiency, air cleaners).

    Examples
    --------
    A 90 m³ room: 50 L/s of outdoor air, 200 L/s recirculated through a 50 % filter, a
    40 L/s air cleaner and deposition at 0.2/h (0.2 × 90 m³/h = 5 L/s), by hand:

    >>> parts = loss_breakdown(90.0, 50.0, recirc_airflow=200.0, recirc_efficiency=0.5,
    ...                        cadr=40.0, k_deposition=0.2)
    >>> {k: round(v, 9) for k, v in parts.items()}
    {'outdoor_air': 50.0, 'recirculation_filter': 100.0, 'air_cleaner': 40.0,
     'deposition': 5.0, 'inactivation': 0.0, 'makeup_air': 0.0}
    """
    v = _nonneg("volume", volume)
    parts = {
        "outdoor_air": _nonneg("outdoor_airflow", outdoor_airflow),
        "recirculation_filter": _fraction("recirc_efficiency", recirc_efficiency)
        * _nonneg("recirc_airflow", recirc_airflow),
        "air_cleaner": _nonneg("cadr", cadr),
        "deposition": _nonneg("k_deposition", k_deposition) * v / PER_HOUR,
        "inactivation": _nonneg("k_inactivation", k_inactivation) * v / PER_HOUR,
        "makeup_air": _nonneg("makeup_airflow", makeup_airflow),
    }
    if all(np.ndim(p) == 0 for p in parts.values()):  # one zone: floats, no copies
        return {k: float(p) for k, p in parts.items()}
    shape = np.broadcast_shapes(*(np.shape(p) for p in parts.values()))
    return {k: np.broadcast_to(p, shape).copy() for k, p in parts.items()}


def equivalent_clean_airflow(volume, outdoor_airflow, recirc_airflow=0.0, recirc_efficiency=0.0,
                             cadr=0.0, k_deposition=0.0, k_inactivation=0.0, makeup_airflow=0.0):
    """Equivalent clean airflow ``Q_oa + η_rec·Q_rec + CADR + (k_dep + k_inact)·V/3.6 + Q_mu``.

    Parameters
    ----------
    volume, outdoor_airflow, recirc_airflow, recirc_efficiency, cadr, k_deposition, \
k_inactivation, makeup_airflow
        As in :func:`loss_breakdown`. [m3], [L/s], [L/s], [-], [L/s], [1/h], [1/h], [L/s]

    Returns
    -------
    float or ndarray
        The sum of :func:`loss_breakdown`, λ·V in L/s. [L/s]

    References
    ----------
    ASHRAE 241-2023 (equivalent clean airflow); Nazaroff & Alvarez-Cohen (2001), CMFR balance.

    Examples
    --------
    >>> round(equivalent_clean_airflow(90.0, 50.0, 200.0, 0.5, 40.0, 0.2), 9)
    195.0
    """
    parts = loss_breakdown(volume, outdoor_airflow, recirc_airflow, recirc_efficiency, cadr,
                           k_deposition, k_inactivation, makeup_airflow)
    return _out(parts["outdoor_air"] + parts["recirculation_filter"] + parts["air_cleaner"]
                + parts["deposition"] + parts["inactivation"] + parts["makeup_air"])


def loss_rate(volume, outdoor_airflow, recirc_airflow=0.0, recirc_efficiency=0.0, cadr=0.0,
              k_deposition=0.0, k_inactivation=0.0, makeup_airflow=0.0):
    """First-order loss rate, ``λ = 3.6·(Q_oa + Q_mu + η_rec·Q_rec + CADR)/V + k_dep + k_inact``.

    With outdoor air alone it is the outdoor-air change rate (ACH).

    Parameters
    ----------
    volume : float or array_like
        Zone volume (> 0). [m3]
    outdoor_airflow, recirc_airflow, recirc_efficiency, cadr, k_deposition, k_inactivation, \
makeup_airflow
        As in :func:`loss_breakdown`. [L/s], [L/s], [-], [L/s], [1/h], [1/h], [L/s]

    Returns
    -------
    float or ndarray
        λ. [1/h]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR balance: the first-order loss rate constant.

    Examples
    --------
    50 L/s (180 m³/h) of outdoor air through a 90 m³ room is 2 air changes per hour:

    >>> round(loss_rate(90.0, 50.0), 12)
    2.0
    """
    v = _positive("volume", volume)
    return _out(PER_HOUR * equivalent_clean_airflow(v, outdoor_airflow, recirc_airflow,
                                                    recirc_efficiency, cadr, k_deposition,
                                                    k_inactivation, makeup_airflow) / v)


def air_change_rate(airflow, volume):
    """Air changes per hour of an airflow through a volume, ``ACH = 3.6·Q/V``.

    Parameters
    ----------
    airflow : float or array_like
        Airflow, or equivalent clean airflow (>= 0). [L/s]
    volume : float or array_like
        Zone volume (> 0). [m3]

    Returns
    -------
    float or ndarray
        ACH. [1/h]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR residence time (its inverse); CDC (2003) Appendix B
    states purge times per air change rate.

    Examples
    --------
    >>> round(air_change_rate(50.0, 90.0), 12)
    2.0
    """
    return _out(PER_HOUR * _nonneg("airflow", airflow) / _positive("volume", volume))


def inactivation_rate_from_half_life(half_life):
    """First-order inactivation rate from a half-life, ``k_inact = ln 2 / t½``.

    Parameters
    ----------
    half_life : float or array_like
        Half-life (> 0). [h]

    Returns
    -------
    float or ndarray
        k_inact. [1/h]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), first-order decay.

    Examples
    --------
    >>> round(inactivation_rate_from_half_life(1.0), 12)  # ln 2
    0.69314718056
    """
    return _out(np.log(2.0) / _positive("half_life", half_life))
