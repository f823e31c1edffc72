"""System-level outdoor air of multiple-zone recirculating systems: diversity, Vou, Ev, Vot.

Pure functions on floats or numpy arrays (broadcasting) in the procedures' unit set
(:mod:`airgate.units`): airflow [L/s], people [person], fractions [-]. A float in gives a float
out; an invalid input raises ValueError naming the parameter, for floats and arrays alike.

References
----------
.. [1] ANSI/ASHRAE Standard 62.1-2019, *Ventilation for Acceptable Indoor Air Quality*,
   Section 6.2.5 (multiple-zone recirculating systems: D, Vou, Vot, the simplified procedure)
   and Normative Appendix A (zone-by-zone Ev, single supply path and secondary recirculation).
.. [2] ANSI/ASHRAE Standard 62.1-2010, Table 6-3 *System Ventilation Efficiency* (Ev against
   the largest Zp).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from airgate.procedures.numeric import finite, fraction, nonneg, out, positive

__all__ = [
    "average_outdoor_air_fraction", "minimum_primary_airflow", "occupant_diversity",
    "outdoor_air_intake", "primary_outdoor_air_fraction", "secondary_recirculation_factors",
    "system_ventilation_efficiency_detailed", "system_ventilation_efficiency_simplified",
    "system_ventilation_efficiency_table", "uncorrected_outdoor_air_intake",
    "zone_ventilation_efficiency", "zone_ventilation_efficiency_single_path",
]


def occupant_diversity(ps, sum_pz):
    """Occupant diversity ``D = Ps / ΣPz``.

    Parameters
    ----------
    ps : float or array_like
        System population Ps, the most people expected at once in all zones (>= 0). [person]
    sum_pz : float or array_like
        Sum of the zone populations ΣPz (> 0). [person]

    Returns
    -------
    float or ndarray
        D. [-]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.5 (occupant diversity).

    Examples
    --------
    >>> occupant_diversity(60.0, 100.0)
    0.6
    """
    return out(nonneg("ps", ps) / positive("sum_pz", sum_pz))


def uncorrected_outdoor_air_intake(d, rp_pz, ra_az, axis=None):
    """Uncorrected outdoor air intake ``Vou = D·Σ(Rp·Pz) + Σ(Ra·Az)``.

    Parameters
    ----------
    d : float or array_like
        Occupant diversity D (>= 0). [-]
    rp_pz : float or array_like
        Rp·Pz of each zone, or already their sum. [L/s]
    ra_az : float or array_like
        Ra·Az of each zone, or already their sum. [L/s]
    axis : int, optional
        Zone axis of ``rp_pz`` and ``ra_az`` to sum over; None (default) takes them as sums.

    Returns
    -------
    float or ndarray
        Vou. [L/s]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.5.

    Examples
    --------
    Two zones, D = 0.8:

    >>> float(uncorrected_outdoor_air_intake(0.8, [100.0, 150.0], [30.0, 20.0], axis=0))
    250.0
    """
    rp_pz, ra_az = nonneg("rp_pz", rp_pz), nonneg("ra_az", ra_az)
    if axis is not None:
        rp_pz, ra_az = rp_pz.sum(axis=axis), ra_az.sum(axis=axis)
    return out(nonneg("d", d) * rp_pz + ra_az)


def average_outdoor_air_fraction(vou, vps):
    """Average outdoor air fraction ``Xs = Vou / Vps``.

    Parameters
    ----------
    vou : float or array_like
        Uncorrected outdoor air intake (>= 0). [L/s]
    vps : float or array_like
        System primary airflow at the condition analysed (> 0). [L/s]

    Returns
    -------
    float or ndarray
        Xs. [-]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Normative Appendix A.

    Examples
    --------
    >>> average_outdoor_air_fraction(250.0, 1000.0)
    0.25
    """
    return out(nonneg("vou", vou) / positive("vps", vps))


def primary_outdoor_air_fraction(voz, vpz):
    """Zone primary outdoor air fraction ``Zpz = Voz / Vpz``.

    Parameters
    ----------
    voz : float or array_like
        Zone outdoor airflow (>= 0). [L/s]
    vpz : float or array_like
        Zone primary airflow at the condition analysed (> 0). [L/s]

    Returns
    -------
    float or ndarray
        Zpz. [-]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Normative Appendix A.

    Examples
    --------
    >>> primary_outdoor_air_fraction(120.0, 300.0)
    0.4
    """
    return out(nonneg("voz", voz) / positive("vpz", vpz))


def zone_ventilation_efficiency_single_path(xs, zpz):
    """Zone ventilation efficiency with a single supply path, ``Evz = 1 + Xs − Zpz``.

    Parameters
    ----------
    xs : float or array_like
        Average outdoor air fraction Xs (>= 0). [-]
    zpz : float or array_like
        Zone primary outdoor air fraction Zpz (>= 0). [-]

    Returns
    -------
    float or ndarray
        Evz; zero or negative where no intake can ventilate the zone. [-]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Normative Appendix A (single supply systems).

    Examples
    --------
    >>> zone_ventilation_efficiency_single_path(0.25, 0.4)
    0.85
    """
    return out(1.0 + nonneg("xs", xs) - nonneg("zpz", zpz))


def secondary_recirculation_factors(ep, er, ez):
    """Mixing factors ``Fa = Ep + (1−Ep)·Er``, ``Fb = Ep``, ``Fc = 1 − (1−Ez)(1−Er)(1−Ep)``.

    Parameters
    ----------
    ep : float or array_like
        Primary air fraction of the zone supply Ep, in [0, 1] (1 for a single path). [-]
    er : float or array_like
        Fraction of the secondary recirculated air drawn from the system return Er, in
        [0, 1]. [-]
    ez : float or array_like
        Zone air distribution effectiveness Ez (> 0). [-]

    Returns
    -------
    fa, fb, fc : float or ndarray
        The three factors. [-]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Normative Appendix A (secondary recirculation; the factor
    forms are from memory and must be verified against the standard).

    Examples
    --------
    With a single supply path (Ep = 1) every factor is 1:

    >>> [float(f) for f in secondary_recirculation_factors(1.0, 0.0, 0.8)]
    [1.0, 1.0, 1.0]
    """
    ep, er = fraction("ep", ep), fraction("er", er)
    ez = positive("ez", ez)
    return (out(ep + (1.0 - ep) * er), out(ep),
            out(1.0 - (1.0 - ez) * (1.0 - er) * (1.0 - ep)))


def zone_ventilation_efficiency(xs, zpz, ep=1.0, er=0.0, ez=1.0):
    """General zone ventilation efficiency ``Evz = (Fa + Xs·Fb − Zpz·Ep·Fc) / Fa``.

    Reduces to ``1 + Xs − Zpz`` when Ep = 1 (single supply path).

    Parameters
    ----------
    xs, zpz : float or array_like
        Average and zone primary outdoor air fractions (>= 0). [-]
    ep, er, ez : float or array_like
        See :func:`secondary_recirculation_factors`; Ep and Er may not both be 0 (Fa = 0). [-]

    Returns
    -------
    float or ndarray
        Evz. [-]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Normative Appendix A (secondary recirculation; from
    memory).

    Examples
    --------
    >>> zone_ventilation_efficiency(0.25, 0.4)
    0.85
    """
    fa, fb, fc = (np.asarray(f) for f in secondary_recirculation_factors(ep, er, ez))
    if np.any(fa <= 0):
        raise ValueError(f"ep and er may not both be 0 (Fa = Ep + (1 − Ep)·Er = 0), got "
                         f"ep={ep!r}, er={er!r}")
    return out((fa + nonneg("xs", xs) * fb - nonneg("zpz", zpz) * np.asarray(ep) * fc) / fa)


def system_ventilation_efficiency_detailed(evz, axis=-1):
    """System ventilation efficiency by the detailed procedure: ``Ev = min(Evz)``.

    Parameters
    ----------
    evz : array_like
        Zone ventilation efficiencies of the zones served (finite, at least one). [-]
    axis : int, optional
        Zone axis to take the least value over (default the last).

    Returns
    -------
    float or ndarray
        Ev: a float for a 1-D input. [-]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Normative Appendix A.

    Examples
    --------
    >>> system_ventilation_efficiency_detailed([0.95, 0.85, 1.1])
    0.85
    """
    a = finite("evz", evz)
    if a.ndim == 0 or a.shape[axis] == 0:
        raise ValueError(f"evz must hold at least one zone along axis {axis}, got {evz!r}")
    return out(np.min(a, axis=axis))


def system_ventilation_efficiency_simplified(d, breakpoint=0.60, slope=0.88, intercept=0.22,
                                             above_breakpoint=0.75):
    """Simplified system ventilation efficiency: ``Ev = 0.88·D + 0.22`` for D < 0.60, else 0.75.

    Parameters
    ----------
    d : float or array_like
        Occupant diversity D (>= 0). [-]
    breakpoint, slope, intercept, above_breakpoint : float
        The coefficients as the rule pack states them. [-]

    Returns
    -------
    float or ndarray
        Ev. [-]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.5 (simplified procedure; coefficients from
    memory, carried by the rule pack).

    Examples
    --------
    >>> round(system_ventilation_efficiency_simplified(0.5), 12)
    0.66
    >>> system_ventilation_efficiency_simplified(0.7)
    0.75
    """
    dd = nonneg("d", d)
    breakpoint, slope = finite("breakpoint", breakpoint), finite("slope", slope)
    intercept = finite("intercept", intercept)
    above_breakpoint = finite("above_breakpoint", above_breakpoint)
    return out(np.where(dd < breakpoint, slope * dd + intercept, above_breakpoint))


def system_ventilation_efficiency_table(max_zp, rows: Sequence[tuple[float, float]],
                                        interpolate: bool = True):
    """Ev from a table against the largest zone primary outdoor air fraction.

    Parameters
    ----------
    max_zp : float or array_like
        Largest Zpz of the zones served (>= 0). [-]
    rows : sequence of (max_zp, ev)
        Ascending rows: Ev applies up to and including each max_zp. [-]
    interpolate : bool
        Linear interpolation between rows (the tables permit it); otherwise the step value.

    Returns
    -------
    float or ndarray
        Ev, or NaN above the last row (the caller applies the pack's rule there). [-]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2010, Table 6-3 (≤ 0.15 → 1.0, ≤ 0.25 → 0.9, ≤ 0.35 → 0.8,
    ≤ 0.45 → 0.7, ≤ 0.55 → 0.6; interpolation permitted).

    Examples
    --------
    The published table: a largest Zp of 0.35 gives 0.8, halfway to 0.45 gives 0.75.

    >>> rows = [(0.15, 1.0), (0.25, 0.9), (0.35, 0.8), (0.45, 0.7), (0.55, 0.6)]
    >>> system_ventilation_efficiency_table(0.35, rows)
    0.8
    >>> round(system_ventilation_efficiency_table(0.40, rows), 12)
    0.75
    """
    zp = nonneg("max_zp", max_zp)
    xs = np.array([r[0] for r in rows], dtype=float)
    ev = np.array([r[1] for r in rows], dtype=float)
    if xs.size == 0 or np.any(np.diff(xs) <= 0):
        raise ValueError(f"rows must be non-empty and ascending in max_zp, got {rows!r}")
    if interpolate:
        res = np.interp(zp, xs, ev)  # flat (= first row) below the first breakpoint
    else:
        res = ev[np.clip(np.searchsorted(xs, zp, side="left"), 0, len(xs) - 1)]
    return out(np.where(zp > xs[-1] + 1e-12, np.nan, res))


def outdoor_air_intake(vou, ev):
    """Outdoor air intake flow ``Vot = Vou / Ev``.

    Parameters
    ----------
    vou : float or array_like
        Uncorrected outdoor air intake (>= 0). [L/s]
    ev : float or array_like
        System ventilation efficiency (> 0). [-]

    Returns
    -------
    float or ndarray
        Vot. [L/s]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.5.

    Examples
    --------
    >>> outdoor_air_intake(250.0, 0.8)
    312.5
    """
    return out(nonneg("vou", vou) / positive("ev", ev))


def minimum_primary_airflow(voz, xs, ev_target, ep=1.0, er=0.0, ez=1.0):
    """Least zone primary airflow Vpz at which the zone reaches ``Evz >= ev_target``.

    Solves ``(Fa + Xs·Fb − (Voz/Vpz)·Ep·Fc)/Fa = Ev_target`` for Vpz, holding Xs fixed:
    ``Vpz = Voz·Ep·Fc / (Fa·(1 − Ev_target) + Xs·Fb)``; single path: ``Voz / (1 + Xs − Ev_target)``.

    Parameters
    ----------
    voz : float or array_like
        Zone outdoor airflow (>= 0). [L/s]
    xs : float or array_like
        Average outdoor air fraction at the scheduled condition (>= 0). [-]
    ev_target : float or array_like
        The system ventilation efficiency needed (finite). [-]
    ep, er, ez : float or array_like
        Secondary recirculation parameters, see :func:`secondary_recirculation_factors`. [-]

    Returns
    -------
    float or ndarray
        Vpz [L/s]; infinite where no primary airflow reaches the target.

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Normative Appendix A, rearranged for Vpz (derived).

    Examples
    --------
    >>> minimum_primary_airflow(120.0, 0.25, 0.85)
    300.0
    """
    fa, fb, fc = (np.asarray(f) for f in secondary_recirculation_factors(ep, er, ez))
    denom = fa * (1.0 - finite("ev_target", ev_target)) + nonneg("xs", xs) * fb
    num = nonneg("voz", voz) * np.asarray(ep) * fc
    with np.errstate(divide="ignore", invalid="ignore"):
        return out(np.where(denom > 0, num / np.where(denom > 0, denom, 1.0), np.inf))
