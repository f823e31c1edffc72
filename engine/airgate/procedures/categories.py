"""Design ventilation rate of the European category method (EN 16798-1, method 1).

Pure functions on floats or numpy arrays, SI units. The total ventilation rate of a room is a
rate per person plus a rate per floor area for the building's emissions, both chosen by the
indoor environment category (I–IV) and, for the area part, by the building's pollution class
(very low, low or non-low polluting), divided by the ventilation effectiveness::

    q_tot = (n·q_p + A_R·q_B) / ε_v

Reference: EN 16798-1:2019, Section 6.3.2.2 and Annex B (Tables B.6 and B.7: q_p by category,
q_B by category and pollution class), as quoted in a manufacturer's design note with worked office
examples (published values in ../shared/reference-values.md E); section, equation and table
numbers are from memory. The rule pack
``en-16798-1-2019`` carries the values; the engine evaluates them as Rp·Pz + Ra·Az over Ez.
"""

from __future__ import annotations

from typing import TypeVar

import numpy as np

F = TypeVar("F", float, np.ndarray)

#: 1 L/s = 3.6 m³/h exactly
M3H_PER_LS = 3.6


def total_ventilation_rate(occupants: F, per_person: F, area: F, per_area: F,
                           effectiveness: F = 1.0) -> F:
    """Total design ventilation rate ``q_tot = (n·q_p + A_R·q_B) / ε_v``.

    Parameters
    ----------
    occupants : float or array
        Number of people n. [person]
    per_person : float or array
        Ventilation rate for occupancy per person q_p. [L/s·person]
    area : float or array
        Room floor area A_R. [m²]
    per_area : float or array
        Ventilation rate for building emissions q_B. [L/s·m²]
    effectiveness : float or array
        Ventilation effectiveness ε_v (> 0; 1 for fully mixed air). [–]

    Returns
    -------
    q_tot. [L/s]

    Source: EN 16798-1:2019, Section 6.3.2.2, Equation 6 (rates from Annex B).
    """
    return (occupants * per_person + area * per_area) / effectiveness


def to_cubic_metres_per_hour(airflow: F) -> F:
    """An airflow in m³/h. [L/s → m³/h] (1 L/s = 3.6 m³/h; common practice)"""
    return airflow * M3H_PER_LS
