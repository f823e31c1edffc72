"""Whole-dwelling mechanical ventilation rate of a dwelling unit (ASHRAE Standard 62.2 form).

Pure functions on floats or numpy arrays. The rate has the shape of the ventilation rate
procedure, a rate per person plus a rate per floor area, with the occupancy taken as the number
of bedrooms plus one:

- I-P: ``Qtot = 0.03·Afloor + 7.5·(Nbr + 1)``  [cfm; Afloor in ft²]
- SI:  ``Qtot = 0.15·Afloor + 3.5·(Nbr + 1)``  [L/s; Afloor in m²]

References: ANSI/ASHRAE Standard 62.2-2016 and 2019, Section 4.1.1, Equation 4-1 (total required
ventilation rate), as quoted in a model mechanical code appendix and a national-laboratory guide
(published; ../shared/reference-values.md D); the SI coefficients, and the section, equation
and table numbers, are from memory. Editions
before 2013 used 0.01·Afloor. The rule packs ``ashrae-62.2-2019`` and ``ashrae-62.2-2019-si``
carry the coefficients; the engine evaluates them as Rp·Pz + Ra·Az with Pz = Nbr + 1.
"""

from __future__ import annotations

import math
from typing import TypeVar

import numpy as np

F = TypeVar("F", float, np.ndarray)

#: I-P coefficients of Equation 4-1: per area [cfm/ft²] and per occupant [cfm/person]
IP_PER_AREA = 0.03
IP_PER_PERSON = 7.5
#: SI coefficients (from memory): per area [L/s·m²] and per occupant [L/s·person]
SI_PER_AREA = 0.15
SI_PER_PERSON = 3.5
#: width of the floor-area bins of the published table [ft²]
TABLE_BIN = 500.0


def default_occupants(bedrooms: F) -> F:
    """Default occupancy of a dwelling unit, ``Nbr + 1``.

    Parameters
    ----------
    bedrooms : float or array
        Number of bedrooms Nbr (≥ 0). [–]

    Returns
    -------
    Occupants. [person]

    Source: ANSI/ASHRAE 62.2-2016/2019, Section 4.1.1 (occupancy is the number of bedrooms plus
    one unless higher occupancy is known).
    """
    return bedrooms + 1


def whole_dwelling_airflow(area: F, bedrooms: F, per_area: float = IP_PER_AREA,
                           per_person: float = IP_PER_PERSON) -> F:
    """Total required ventilation rate ``Qtot = per_area·Afloor + per_person·(Nbr + 1)``.

    Parameters
    ----------
    area : float or array
        Dwelling-unit floor area Afloor. [ft² with the I-P coefficients, m² with the SI ones]
    bedrooms : float or array
        Number of bedrooms Nbr. [–]
    per_area, per_person : float
        Coefficients: 0.03 and 7.5 (I-P, default) or 0.15 and 3.5 (SI).
        [cfm/ft² and cfm/person, or L/s·m² and L/s·person]

    Returns
    -------
    Qtot. [cfm, or L/s with the SI coefficients]

    Source: ANSI/ASHRAE 62.2-2016/2019, Section 4.1.1, Equation 4-1.
    """
    return per_area * area + per_person * default_occupants(bedrooms)


def _round_half_up(x: float) -> int:
    return int(math.floor(x + 0.5))


def table_airflow(area: float, bedrooms: int) -> int:
    """The cell of the published I-P table of Qtot for a floor area and a number of bedrooms.

    The table gives, for floor-area bins of 500 ft² (< 500, 501–1000, …, 4501–5000), the
    formula evaluated at the top of the bin and rounded to whole cfm, halves up: < 500 ft² with
    1–5 bedrooms gives 30, 38, 45, 53 and 60 cfm.

    Parameters
    ----------
    area : float
        Floor area, > 0. [ft²]
    bedrooms : int
        Number of bedrooms. [–]

    Returns
    -------
    Qtot from the table. [cfm]

    Source: ANSI/ASHRAE 62.2-2016/2019, Table 4-1a (I-P) (published values; the bin rule is
    derived from them).
    """
    if area <= 0:
        raise ValueError("the floor area must be greater than zero")
    top = math.ceil(area / TABLE_BIN) * TABLE_BIN
    return _round_half_up(whole_dwelling_airflow(top, bedrooms))
