"""Whole-dwelling mechanical ventilation rate of a dwelling unit (ASHRAE Standard 62.2 form).

Pure functions on floats or numpy arrays in the procedures' unit set (:mod:`airgate.units`):
area [m²], airflow [L/s]. The rate has the shape of the ventilation rate procedure, a rate per
person plus a rate per floor area, with the occupancy taken as the number of bedrooms plus one:
``Qtot = per_area·Afloor + per_person·(Nbr + 1)``, published as ``0.03·Afloor + 7.5·(Nbr + 1)``
[cfm, ft²] and ``0.15·Afloor + 3.5·(Nbr + 1)`` [L/s, m²] (the SI coefficients are rounded
separately, not converted, and are from memory). Editions before 2013 used 0.01 cfm/ft². The
rule packs ``ashrae-62.2-2019`` and ``ashrae-62.2-2019-si`` carry the coefficients; the engine
evaluates them as Rp·Pz + Ra·Az with Pz = Nbr + 1. A float in gives a float out; an invalid
input raises ValueError naming the parameter.

References
----------
.. [1] ANSI/ASHRAE Standard 62.2-2019, *Ventilation and Acceptable Indoor Air Quality in
   Residential Buildings*, Section 4.1.1, Equation 4-1 (total required ventilation rate), and
   the dwelling-unit ventilation tables (Table 4-1a I-P; numbers from memory).
"""

from __future__ import annotations

import math

from airgate.procedures.numeric import nonneg, out

__all__ = ["default_occupants", "table_airflow", "whole_dwelling_airflow"]

#: Equation 4-1 as published in I-P: per area [cfm/ft²] and per occupant [cfm/person]; the
#: packs carry these, converted to L/s at the edges (rule-pack reader)
IP_PER_AREA = 0.03
IP_PER_PERSON = 7.5
#: SI coefficients (from memory): per area [L/s·m²] and per occupant [L/s·person]
SI_PER_AREA = 0.15
SI_PER_PERSON = 3.5
#: width of the floor-area bins of the published I-P table [ft²]
TABLE_BIN = 500.0


def default_occupants(bedrooms):
    """Default occupancy of a dwelling unit, ``Nbr + 1``.

    Parameters
    ----------
    bedrooms : float or array_like
        Number of bedrooms Nbr (>= 0). [-]

    Returns
    -------
    float or ndarray
        Occupants. [person]

    References
    ----------
    ANSI/ASHRAE Standard 62.2-2019, Section 4.1.1 (occupancy is the number of bedrooms plus
    one unless a higher occupancy is known).

    Examples
    --------
    >>> default_occupants(3)
    4.0
    """
    return out(nonneg("bedrooms", bedrooms) + 1.0)


def whole_dwelling_airflow(area, bedrooms, per_area=SI_PER_AREA, per_person=SI_PER_PERSON):
    """Total required ventilation rate ``Qtot = per_area·Afloor + per_person·(Nbr + 1)``.

    Parameters
    ----------
    area : float or array_like
        Dwelling-unit floor area Afloor (>= 0). [m²]
    bedrooms : float or array_like
        Number of bedrooms Nbr (>= 0). [-]
    per_area : float
        Rate per floor area (>= 0); default the SI coefficient 0.15. [L/s·m²]
    per_person : float
        Rate per occupant (>= 0); default the SI coefficient 3.5. [L/s·person]

    Returns
    -------
    float or ndarray
        Qtot. [L/s]

    References
    ----------
    ANSI/ASHRAE Standard 62.2-2019, Section 4.1.1, Equation 4-1.

    Examples
    --------
    140 m² with 3 bedrooms: 0.15 × 140 + 3.5 × 4 = 35 L/s.

    >>> round(whole_dwelling_airflow(140.0, 3), 9)
    35.0
    """
    return out(nonneg("per_area", per_area) * nonneg("area", area)
               + nonneg("per_person", per_person) * default_occupants(bedrooms))


def table_airflow(area_ft2: float, bedrooms: int) -> int:
    """The cell of the published I-P table of Qtot for a floor area and a number of bedrooms.

    The one procedure in the table's own units (ft² bins, whole cfm), as a check value: for
    floor-area bins of 500 ft² (< 500, 501–1000, …, 4501–5000) the table gives Equation 4-1 at
    the top of the bin, rounded to whole cfm, halves up.

    Parameters
    ----------
    area_ft2 : float
        Floor area (> 0). [ft²]
    bedrooms : int
        Number of bedrooms (>= 0). [-]

    Returns
    -------
    int
        Qtot from the table. [cfm]

    References
    ----------
    ANSI/ASHRAE Standard 62.2-2019, Table 4-1a (I-P) (published cells; the bin rule is derived
    from them).

    Examples
    --------
    The published cells for < 500 ft² with 1 to 5 bedrooms, and 4501–5000 ft² with 5:

    >>> [table_airflow(450, n) for n in range(1, 6)]
    [30, 38, 45, 53, 60]
    >>> table_airflow(4800, 5)
    195
    """
    if not (math.isfinite(area_ft2) and area_ft2 > 0):
        raise ValueError(f"area_ft2 must be finite and > 0, got {area_ft2!r}")
    top = math.ceil(area_ft2 / TABLE_BIN) * TABLE_BIN
    q = IP_PER_AREA * top + IP_PER_PERSON * default_occupants(bedrooms)
    return int(math.floor(q + 0.5))
