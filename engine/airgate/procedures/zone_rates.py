"""Breathing-zone and zone outdoor airflow of the ventilation rate procedure.

Pure functions on floats or numpy arrays (broadcasting), internal SI units: airflow [L/s],
area [m²], people [person], rates Rp [L/s per person] and Ra [L/s per m²].

Reference: ANSI/ASHRAE Standard 62.1-2019, Section 6.2.2 (breathing zone outdoor airflow and
zone outdoor airflow); equation forms also given in ../shared/domain.md §2.
"""

from __future__ import annotations

from typing import TypeVar

import numpy as np

F = TypeVar("F", float, np.ndarray)


def default_population(density: F, area: F) -> F:
    """Zone population from the table's default occupant density, ``Pz = density × Az``.

    Parameters
    ----------
    density : float or array
        Default occupant density. [person/m²]
    area : float or array
        Zone floor area Az. [m²]

    Returns
    -------
    Zone population Pz. [person]

    Source: ANSI/ASHRAE 62.1-2019 Table 6.2.2.1, default occupant density, used where the actual
    population is not known (Section 6.2.2.1).
    """
    return density * area


def breathing_zone_outdoor_airflow(rp: F, pz: F, ra: F, az: F) -> F:
    """Breathing-zone outdoor airflow ``Vbz = Rp·Pz + Ra·Az``.

    Parameters
    ----------
    rp : float or array
        Outdoor airflow rate required per person Rp. [L/s per person]
    pz : float or array
        Zone population Pz. [person]
    ra : float or array
        Outdoor airflow rate required per unit area Ra. [L/s per m²]
    az : float or array
        Zone floor area Az. [m²]

    Returns
    -------
    Vbz. [L/s]

    Source: ANSI/ASHRAE 62.1-2019 Section 6.2.2.1.
    """
    return rp * pz + ra * az


def zone_outdoor_airflow(vbz: F, ez: F) -> F:
    """Zone outdoor airflow ``Voz = Vbz / Ez``.

    Parameters
    ----------
    vbz : float or array
        Breathing-zone outdoor airflow. [L/s]
    ez : float or array
        Zone air distribution effectiveness Ez (> 0). [–]

    Returns
    -------
    Voz. [L/s]

    Source: ANSI/ASHRAE 62.1-2019 Section 6.2.2.3; Ez from Table 6.2.2.2.
    """
    return vbz / ez

