"""Breathing-zone and zone outdoor airflow of the ventilation rate procedure.

Pure functions on floats or numpy arrays (broadcasting) in the procedures' unit set
(:mod:`airgate.units`): airflow [L/s], area [m²], people [person], Rp [L/s per person], Ra
[L/s per m²]. A float in gives a float out; an invalid input raises ValueError naming the
parameter, for floats and arrays alike.

References
----------
.. [1] ANSI/ASHRAE Standard 62.1-2019, *Ventilation for Acceptable Indoor Air Quality*,
   Section 6.2.2 (breathing zone outdoor airflow, Section 6.2.2.1 with Table 6-1; zone air
   distribution effectiveness, Section 6.2.2.2 with Table 6-2; zone outdoor airflow, Section
   6.2.2.3).
"""

from __future__ import annotations

from airgate.procedures.numeric import nonneg, out, positive

__all__ = ["breathing_zone_outdoor_airflow", "default_population", "zone_outdoor_airflow"]


def default_population(density, area):
    """Zone population from the table's default occupant density, ``Pz = density × Az``.

    Used where the actual population is not known.

    Parameters
    ----------
    density : float or array_like
        Default occupant density (>= 0). [person/m²]
    area : float or array_like
        Zone floor area Az (>= 0). [m²]

    Returns
    -------
    float or ndarray
        Zone population Pz. [person]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.2.1 and Table 6-1 (default occupant density).

    Examples
    --------
    Table 6-1 lists 50 people per 100 m² for conference/meeting rooms; 186 m² gives 93:

    >>> default_population(0.50, 186.0)
    93.0
    """
    return out(nonneg("density", density) * nonneg("area", area))


def breathing_zone_outdoor_airflow(rp, pz, ra, az):
    """Breathing-zone outdoor airflow ``Vbz = Rp·Pz + Ra·Az`` (Equation 6-1).

    Parameters
    ----------
    rp : float or array_like
        Outdoor airflow rate required per person Rp (>= 0). [L/s per person]
    pz : float or array_like
        Zone population Pz (>= 0). [person]
    ra : float or array_like
        Outdoor airflow rate required per unit area Ra (>= 0). [L/s per m²]
    az : float or array_like
        Zone floor area Az (>= 0). [m²]

    Returns
    -------
    float or ndarray
        Vbz. [L/s]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.2.1, Equation 6-1 (equation number from
    memory), with Rp and Ra from Table 6-1.

    Examples
    --------
    Conference/meeting room of Table 6-1 (SI: Rp = 2.5 L/s·person, Ra = 0.3 L/s·m²), 93 people
    on 186 m²:

    >>> round(breathing_zone_outdoor_airflow(2.5, 93, 0.3, 186.0), 9)
    288.3
    """
    return out(nonneg("rp", rp) * nonneg("pz", pz) + nonneg("ra", ra) * nonneg("az", az))


def zone_outdoor_airflow(vbz, ez):
    """Zone outdoor airflow ``Voz = Vbz / Ez`` (Equation 6-2).

    Parameters
    ----------
    vbz : float or array_like
        Breathing-zone outdoor airflow (>= 0). [L/s]
    ez : float or array_like
        Zone air distribution effectiveness Ez (> 0). [-]

    Returns
    -------
    float or ndarray
        Voz. [L/s]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.2.3, Equation 6-2 (equation number from
    memory); Ez from Table 6-2.

    Examples
    --------
    Ceiling supply of warm air with ceiling return (Ez = 0.8 in Table 6-2):

    >>> round(zone_outdoor_airflow(288.3, 0.8), 9)
    360.375
    """
    return out(nonneg("vbz", vbz) / positive("ez", ez))
