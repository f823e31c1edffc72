"""System-level outdoor air of multiple-zone recirculating systems: diversity, Vou, Ev, Vot.

Pure functions on floats or numpy arrays, internal SI units: airflow [L/s], people [person],
fractions [–].

References: ANSI/ASHRAE Standard 62.1-2019, Section 6.2.5 (multiple-zone recirculating systems,
including the simplified procedure for Ev) and Normative Appendix A (zone-by-zone calculation of
Ev, single supply path and secondary recirculation); the Ev-versus-max-Zp table of earlier editions
(62.1-2004 to 2013, Table 6.3 / 6.2.5.2). Equation forms as in ../shared/domain.md §2.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TypeVar

import numpy as np

F = TypeVar("F", float, np.ndarray)


def occupant_diversity(ps: F, sum_pz: F) -> F:
    """Occupant diversity ``D = Ps / ΣPz``.

    Parameters
    ----------
    ps : float or array
        System population Ps: the most people expected at once in all zones. [person]
    sum_pz : float or array
        Sum of zone populations ΣPz (> 0). [person]

    Returns
    -------
    D. [–]

    Source: ANSI/ASHRAE 62.1-2019 Section 6.2.5 (occupant diversity).
    """
    return ps / sum_pz


def uncorrected_outdoor_air_intake(d: F, sum_rp_pz: F, sum_ra_az: F) -> F:
    """Uncorrected outdoor air intake ``Vou = D·Σ(Rp·Pz) + Σ(Ra·Az)``.

    Parameters
    ----------
    d : float or array
        Occupant diversity D. [–]
    sum_rp_pz : float or array
        Σ(Rp·Pz) over the zones. [L/s]
    sum_ra_az : float or array
        Σ(Ra·Az) over the zones. [L/s]

    Returns
    -------
    Vou. [L/s]

    Source: ANSI/ASHRAE 62.1-2019 Section 6.2.5.
    """
    return d * sum_rp_pz + sum_ra_az


def average_outdoor_air_fraction(vou: F, vps: F) -> F:
    """Average outdoor air fraction ``Xs = Vou / Vps``.

    Parameters
    ----------
    vou : float or array
        Uncorrected outdoor air intake. [L/s]
    vps : float or array
        System primary airflow at the condition analysed (> 0). [L/s]

    Source: ANSI/ASHRAE 62.1-2019 Normative Appendix A.
    """
    return vou / vps


def primary_outdoor_air_fraction(voz: F, vpz: F) -> F:
    """Zone primary outdoor air fraction ``Zpz = Voz / Vpz``.

    Parameters
    ----------
    voz : float or array
        Zone outdoor airflow. [L/s]
    vpz : float or array
        Zone primary airflow at the condition analysed (> 0). [L/s]

    Source: ANSI/ASHRAE 62.1-2019 Normative Appendix A.
    """
    return voz / vpz


def zone_ventilation_efficiency_single_path(xs: F, zpz: F) -> F:
    """Zone ventilation efficiency with a single supply path, ``Evz = 1 + Xs − Zpz``.

    Parameters
    ----------
    xs : float or array
        Average outdoor air fraction Xs. [–]
    zpz : float or array
        Zone primary outdoor air fraction Zpz. [–]

    Source: ANSI/ASHRAE 62.1-2019 Normative Appendix A (single supply systems).
    """
    return 1.0 + xs - zpz


def secondary_recirculation_factors(ep: F, er: F, ez: F) -> tuple[F, F, F]:
    """Mixing factors ``Fa = Ep + (1−Ep)·Er``, ``Fb = Ep``, ``Fc = 1 − (1−Ez)(1−Er)(1−Ep)``.

    Parameters
    ----------
    ep : float or array
        Primary air fraction of the zone supply Ep (1 for single-path). [–]
    er : float or array
        Fraction of secondary recirculated air drawn from the system return Er. [–]
    ez : float or array
        Zone air distribution effectiveness Ez. [–]

    Source: ANSI/ASHRAE 62.1-2019 Normative Appendix A (from memory; with Ep = 1 every factor is 1).
    """
    fa = ep + (1.0 - ep) * er
    fb = ep
    fc = 1.0 - (1.0 - ez) * (1.0 - er) * (1.0 - ep)
    return fa, fb, fc


def zone_ventilation_efficiency(xs: F, zpz: F, ep: F = 1.0, er: F = 0.0, ez: F = 1.0) -> F:
    """General zone ventilation efficiency ``Evz = (Fa + Xs·Fb − Zpz·Ep·Fc) / Fa``.

    Reduces to ``1 + Xs − Zpz`` when Ep = 1 (single supply path).

    Parameters
    ----------
    xs, zpz : float or array
        Average and zone primary outdoor air fractions. [–]
    ep, er, ez : float or array
        See :func:`secondary_recirculation_factors`. [–]

    Source: ANSI/ASHRAE 62.1-2019 Normative Appendix A (secondary recirculation; from memory).
    """
    fa, fb, fc = secondary_recirculation_factors(ep, er, ez)
    return (fa + xs * fb - zpz * ep * fc) / fa


def system_ventilation_efficiency_detailed(evz: np.ndarray | Sequence[float]) -> float:
    """System ventilation efficiency by the detailed procedure: ``Ev = min(Evz)``.

    Parameters
    ----------
    evz : array
        Zone ventilation efficiencies of all zones served. [–]

    Source: ANSI/ASHRAE 62.1-2019 Normative Appendix A.
    """
    return float(np.min(np.asarray(evz, dtype=float)))


def system_ventilation_efficiency_simplified(
    d: F, breakpoint: float = 0.60, slope: float = 0.88, intercept: float = 0.22,
    above_breakpoint: float = 0.75,
) -> F:
    """Simplified system ventilation efficiency: ``Ev = 0.88·D + 0.22`` for D < 0.60, else 0.75.

    Parameters
    ----------
    d : float or array
        Occupant diversity D. [–]
    breakpoint, slope, intercept, above_breakpoint : float
        The coefficients as the rule pack states them. [–]

    Source: ANSI/ASHRAE 62.1-2019 Section 6.2.5 (simplified procedure; from memory).
    """
    dd = np.asarray(d, dtype=float)
    out = np.where(dd < breakpoint, slope * dd + intercept, above_breakpoint)
    return out if out.ndim else float(out)


def system_ventilation_efficiency_table(
    max_zp: F, rows: Sequence[tuple[float, float]], interpolate: bool = True
) -> F:
    """Ev from a table against the largest zone primary outdoor air fraction.

    Parameters
    ----------
    max_zp : float or array
        Largest Zpz of the zones served. [–]
    rows : sequence of (max_zp, ev)
        Ascending rows: Ev applies up to and including each max_zp. [–]
    interpolate : bool
        Linear interpolation between rows (the tables permit it); otherwise the step value.

    Returns
    -------
    Ev, or NaN above the last row (the caller applies the pack's rule for that range). [–]

    Source: ANSI/ASHRAE 62.1-2004 to 2013, Table 6-3 / 6.2.5.2 (≤0.15 → 1.0 … ≤0.55 → 0.6),
    as quoted in a state mechanical code (reference-values.md C).
    """
    zp = np.asarray(max_zp, dtype=float)
    xs = np.array([r[0] for r in rows])
    ev = np.array([r[1] for r in rows])
    if interpolate:
        out = np.interp(zp, xs, ev)  # flat (= first row) below the first breakpoint
    else:
        out = ev[np.clip(np.searchsorted(xs, zp, side="left"), 0, len(xs) - 1)]
    out = np.where(zp > xs[-1] + 1e-12, np.nan, out)
    return out if out.ndim else float(out)


def outdoor_air_intake(vou: F, ev: F) -> F:
    """Outdoor air intake flow ``Vot = Vou / Ev``.

    Parameters
    ----------
    vou : float or array
        Uncorrected outdoor air intake. [L/s]
    ev : float or array
        System ventilation efficiency (> 0). [–]

    Source: ANSI/ASHRAE 62.1-2019 Section 6.2.5.
    """
    return vou / ev


def minimum_primary_airflow(voz: F, xs: F, ev_target: F, ep: F = 1.0, er: F = 0.0,
                            ez: F = 1.0) -> F:
    """Least zone primary airflow Vpz at which the zone reaches ``Evz ≥ ev_target``.

    Solves ``(Fa + Xs·Fb − (Voz/Vpz)·Ep·Fc)/Fa = Ev_target`` for Vpz, holding Xs fixed:
    ``Vpz = Voz·Ep·Fc / (Fa·(1 − Ev_target) + Xs·Fb)``; single path: ``Voz / (1 + Xs − Ev_target)``.

    Parameters
    ----------
    voz : float or array
        Zone outdoor airflow. [L/s]
    xs : float or array
        Average outdoor air fraction at the scheduled condition. [–]
    ev_target : float or array
        The system ventilation efficiency needed. [–]
    ep, er, ez : float or array
        Secondary recirculation parameters, see :func:`secondary_recirculation_factors`. [–]

    Returns
    -------
    Vpz. [L/s]; infinite where no primary airflow reaches the target.

    Source: rearrangement of ANSI/ASHRAE 62.1-2019 Normative Appendix A (derived);
    ../shared/domain.md §2.
    """
    fa, fb, fc = secondary_recirculation_factors(ep, er, ez)
    denom = fa * (1.0 - ev_target) + xs * fb
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.where(np.asarray(denom) > 0, voz * ep * fc / np.where(denom > 0, denom, 1.0), np.inf)
    return out if np.ndim(out) else float(out)
