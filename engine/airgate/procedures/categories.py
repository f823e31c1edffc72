"""Design ventilation rate of the European category method (EN 16798-1, method 1).

Pure functions on floats or numpy arrays in the procedures' unit set (:mod:`airgate.units`):
airflow [L/s], area [m²], people [person]. The total ventilation rate of a room is a rate per
person plus a rate per floor area for the building's emissions, both chosen by the indoor
environment category (I–IV) and, for the area part, by the building's pollution class (very
low, low or non-low polluting), divided by the ventilation effectiveness::

    q_tot = (n·q_p + A_R·q_B) / ε_v

The rule pack ``en-16798-1-2019`` carries the values; the engine evaluates them as
Rp·Pz + Ra·Az over Ez. A float in gives a float out; an invalid input raises ValueError naming
the parameter.

References
----------
.. [1] EN 16798-1:2019, *Energy performance of buildings — Ventilation for buildings — Part 1*,
   Section 6.3.2 and Annex B (q_p by category, q_B by category and pollution class; section,
   equation and table numbers from memory), with the worked office examples of a
   manufacturer's design note quoting the standard (docs/references.md).
"""

from __future__ import annotations

from airgate.procedures.numeric import nonneg, out, positive

__all__ = ["total_ventilation_rate"]


def total_ventilation_rate(occupants, per_person, area, per_area, effectiveness=1.0):
    """Total design ventilation rate ``q_tot = (n·q_p + A_R·q_B) / ε_v``.

    Parameters
    ----------
    occupants : float or array_like
        Number of people n (>= 0). [person]
    per_person : float or array_like
        Ventilation rate for occupancy per person q_p (>= 0). [L/s·person]
    area : float or array_like
        Room floor area A_R (>= 0). [m²]
    per_area : float or array_like
        Ventilation rate for building emissions q_B (>= 0). [L/s·m²]
    effectiveness : float or array_like
        Ventilation effectiveness ε_v (> 0; 1 for fully mixed air). [-]

    Returns
    -------
    float or ndarray
        q_tot. [L/s]

    References
    ----------
    EN 16798-1:2019, Section 6.3.2 (equation; number from memory), rates from Annex B.

    Examples
    --------
    The published worked example: a 40 m² meeting room for 15 people in a low-polluting
    building, category II (q_p = 7 L/s·person, q_B = 0.7 L/s·m²), needs 133 L/s (479 m³/h):

    >>> round(total_ventilation_rate(15, 7.0, 40.0, 0.7), 9)
    133.0
    """
    return out((nonneg("occupants", occupants) * nonneg("per_person", per_person)
                + nonneg("area", area) * nonneg("per_area", per_area))
               / positive("effectiveness", effectiveness))
