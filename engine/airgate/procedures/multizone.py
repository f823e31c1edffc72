"""Multiple-zone recirculating systems, every zone and every system in one pass over arrays.

The ventilation rate procedure of a multiple-zone recirculating system — the zone figures
(Vbz, Voz, Zpz, Evz) and the system figures (ΣPz, D, Vou, Vps, Xs, Ev, Vot) — for any number of
systems at once: the zones of all systems in one set of arrays, system after system, and
``starts``, the index of each system's first zone. Zone equations are applied elementwise, the
sums, least and largest values over a system's zones are segmented reductions
(``numpy.add.reduceat``, ``numpy.minimum.reduceat``, ``numpy.maximum.reduceat``, once per
array), and a system figure reaches its zones by ``numpy.repeat`` over the systems' sizes. The
inputs are checked once each (a reduction, not a mask), infinities from the sums the procedure
makes anyway, and no work is done for a branch no system takes (stated Ps or Vps, secondary
recirculation, zones without Vpz, Ev ≤ 0). The equations are those of :mod:`.zone_rates` and
:mod:`.efficiency`, in the same order of operations, so a zone's figures are the same floats as
those functions give for it alone; a sum over more than eight zones may differ from a
left-to-right sum in its last binary digit (numpy sums in pairs).

Units (:mod:`airgate.units`): airflow [L/s], area [m²], people [person], Rp [L/s per person],
Ra [L/s per m²], fractions [-]. Invalid input raises ValueError naming the parameter.

References
----------
.. [1] ANSI/ASHRAE Standard 62.1-2019, *Ventilation for Acceptable Indoor Air Quality*,
   Section 6.2.2 (Vbz = Rp·Pz + Ra·Az, Equation 6-1; Voz = Vbz/Ez, Equation 6-2; equation
   numbers from memory), Section 6.2.5 (D = Ps/ΣPz, Vou = D·Σ(Rp·Pz) + Σ(Ra·Az), Vot = Vou/Ev,
   the simplified Ev) and Normative Appendix A (Zpz = Voz/Vpz, Xs = Vou/Vps, Evz = 1 + Xs − Zpz
   and its secondary-recirculation form, Ev = min Evz).
.. [2] ANSI/ASHRAE Standard 62.1-2010, Table 6-3 (Ev against the largest Zp).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import NamedTuple

import numpy as np

from airgate.procedures import efficiency as eff
from airgate.procedures.numeric import finite, out

__all__ = ["MultipleZoneFigures", "delivered_by_system_ev", "delivered_by_zone_ev",
           "multiple_zone_figures"]

METHODS = ("simplified", "detailed", "table")


class MultipleZoneFigures(NamedTuple):
    """The figures of :func:`multiple_zone_figures`: per zone (length N) and per system
    (length M). NaN where a figure does not exist (no Vpz, so no Zpz; no Vps, so no Xs)."""

    vbz: np.ndarray  #: breathing-zone outdoor airflow, per zone [L/s]
    voz: np.ndarray  #: zone outdoor airflow, per zone [L/s]
    zpz: np.ndarray  #: zone primary outdoor air fraction, per zone (NaN: no Vpz) [-]
    fa: np.ndarray  #: secondary-recirculation factors Fa, Fb, Fc, per zone [-]
    fb: np.ndarray
    fc: np.ndarray
    evz: np.ndarray  #: zone ventilation efficiency, per zone (NaN: no Xs or no Vpz) [-]
    system: np.ndarray  #: the system of each zone (index into the per-system arrays)
    sum_pz: np.ndarray  #: ΣPz, per system [person]
    ps: np.ndarray  #: system population Ps (stated, else ΣPz) [person]
    d: np.ndarray  #: occupant diversity (1 where ΣPz = 0) [-]
    sum_rp_pz: np.ndarray  #: Σ(Rp·Pz) [L/s]
    sum_ra_az: np.ndarray  #: Σ(Ra·Az) [L/s]
    vou: np.ndarray  #: uncorrected outdoor air intake [L/s]
    vps: np.ndarray  #: system primary airflow (stated, else ΣVpz; NaN: neither) [L/s]
    xs: np.ndarray  #: average outdoor air fraction (NaN: no Vps) [-]
    max_zpz: np.ndarray  #: largest Zpz (the table method only; NaN otherwise) [-]
    ev: np.ndarray  #: system ventilation efficiency by the method [-]
    critical: np.ndarray  #: index of the critical zone (-1: the method has none) [-]
    from_zones: np.ndarray  #: Ev is the least Evz (detailed, or the table's fallback) [bool]
    vot: np.ndarray  #: outdoor air intake Vot = Vou/Ev (inf where Ev ≤ 0) [L/s]


def _zones(name, value, n=None, *, strict=False, top=np.inf, whole=True):
    """A 1-D float array of values >= 0 (> 0 with ``strict``) and below ``top`` (at most it, for
    a finite ``top``), of length ``n`` (a scalar is broadcast), or ValueError naming ``name``.
    Reductions, not masks: NaN fails every comparison. ``whole=False`` checks the lower bound
    only (the caller finds infinities in sums it makes anyway, :func:`_finite`)."""
    return _checked(name, value, n, strict=strict, top=top, whole=whole)[0]


def _checked(name, value, n=None, *, strict=False, top=np.inf, whole=True):
    """:func:`_zones` and the least value of the array (NaN where some value is NaN), which the
    caller may use again instead of reducing the array a second time."""
    a = np.asarray(value, dtype=float)
    if a.ndim == 0 and n is not None:
        a = np.full(n, float(a))
    if a.ndim != 1 or a.size == 0 or (n is not None and a.size != n):
        raise ValueError(f"{name} must be a one-dimensional array of {n or 'at least one'} "
                         f"values, got shape {a.shape}")
    lo = a.min()
    ok = lo > 0 if strict else lo >= 0
    if ok and whole:
        hi = a.max()
        ok = hi < top if top == np.inf else hi <= top
    if not ok:
        what = f"lie in {'(' if strict else '['}0, {top:g}]" if top < np.inf else \
            f"be finite and {'>' if strict else '>='} 0"
        raise ValueError(f"{name} must {what}, got {value!r}")
    return a, lo


def _finite(sums, **arrays) -> None:
    """ValueError naming the first of ``arrays`` holding an infinity, when some of ``sums``
    (made from them: an infinite input makes its sum infinite or NaN) is not finite."""
    if all(np.isfinite(v).all() for v in sums):
        return
    for name, a in arrays.items():
        if not np.isfinite(a).all():
            raise ValueError(f"{name} must be finite and >= 0, got {a!r}")


def _mask(name, value, n):
    """A boolean array of length ``n`` (a bool is broadcast), or ValueError naming ``name``."""
    a = np.asarray(value)
    if a.dtype != bool:
        raise ValueError(f"{name} must be True/False values, got {value!r}")
    a = np.full(n, a) if a.ndim == 0 else a
    if a.shape != (n,):
        raise ValueError(f"{name} must hold {n} values, got shape {a.shape}")
    return a


def _starts(starts, n):
    """Segment starts: integers, the first 0, strictly increasing, below ``n``; with the number
    of zones of each segment (each at least one)."""
    s = np.asarray(starts)
    ok = s.ndim == 1 and s.size > 0 and s.dtype.kind in "iu" and s[0] == 0 and s[-1] < n
    if ok:
        sizes = np.empty(s.size, dtype=np.intp)
        np.subtract(s[1:], s[:-1], out=sizes[:-1])
        sizes[-1] = n - s[-1]
        ok = sizes.min() > 0
    if not ok:
        raise ValueError(f"starts must be the increasing integer index of each system's first "
                         f"zone, starting at 0 and below {n}, got {starts!r}")
    return s, sizes


#: a value 1 that any number of zones can share (read-only; see :func:`_ones`)
_ONE = np.ones(1)
_ONE.flags.writeable = False


def _ones(n):
    """A read-only array of ``n`` ones, all views of one value (Fa = Fb = Fc = 1)."""
    return np.ndarray((n,), np.float64, _ONE, 0, (0,))


def _first_where(hit, starts):
    """Index of the first True of each segment (each segment has one)."""
    found = np.flatnonzero(hit)
    return found[np.searchsorted(found, starts)]


def multiple_zone_figures(rp, pz, ra, az, ez, vpz, starts, ps=0.0, ps_stated=False, vps=0.0,
                          vps_stated=False, ep=None, er=None, method="detailed", breakpoint=0.60,
                          slope=0.88, intercept=0.22, above_breakpoint=0.75,
                          rows: Sequence[tuple[float, float]] = (), interpolate=True,
                          above_table=None) -> MultipleZoneFigures:
    """Zone and system figures of multiple-zone systems, all systems in one pass.

    Zones: ``Vbz = Rp·Pz + Ra·Az``, ``Voz = Vbz/Ez``, ``Zpz = Voz/Vpz``,
    ``Evz = (Fa + Xs·Fb − Zpz·Ep·Fc)/Fa`` (``1 + Xs − Zpz`` with Ep = 1). Systems:
    ``D = Ps/ΣPz`` (1 where ΣPz = 0), ``Vou = D·Σ(Rp·Pz) + Σ(Ra·Az)``, ``Xs = Vou/Vps``, Ev by
    ``method`` (simplified: ``slope·D + intercept`` below ``breakpoint``, else
    ``above_breakpoint``; detailed: ``min Evz``; table: the table against the largest Zpz,
    above its last row ``above_table``, or the detailed Ev where that is None), and
    ``Vot = Vou/Ev`` (inf where Ev ≤ 0).

    Parameters
    ----------
    rp, pz, ra, az : array_like
        Per zone, system after system: Rp [L/s per person], Pz [person], Ra [L/s per m²],
        Az [m²] (finite, >= 0).
    ez : array_like
        Zone air distribution effectiveness Ez per zone (> 0). [-]
    vpz : array_like
        Zone primary airflow per zone (>= 0; 0 marks a zone with none scheduled, which has no
        Zpz or Evz and leaves ΣVpz unknown). [L/s]
    starts : array_like of int
        Index of each system's first zone (0 first, strictly increasing). [-]
    ps, vps : float or array_like
        Per system: the stated system population [person] and primary airflow [L/s] (>= 0),
        used where ``ps_stated`` / ``vps_stated``; else ΣPz and ΣVpz.
    ps_stated, vps_stated : bool or array_like of bool
        Per system: whether Ps, Vps are stated. [-]
    ep, er : float or array_like or None
        Per zone: primary air fraction Ep in (0, 1] (1: a single supply path) and the
        secondary recirculation drawn from the system return Er in [0, 1]; None (default):
        every zone a single supply path (Ep 1, Er 0). [-]
    method : str
        ``"simplified"``, ``"detailed"`` or ``"table"``, for every system of the call. [-]
    breakpoint, slope, intercept, above_breakpoint : float
        Coefficients of the simplified Ev, as the rule pack states them. [-]
    rows : sequence of (max_zp, ev)
        The Ev table, ascending (method ``"table"``). [-]
    interpolate : bool
        Interpolate the table between rows. [-]
    above_table : float or None
        Ev above the table's last row; None: the detailed Ev (least Evz). [-]

    Returns
    -------
    MultipleZoneFigures
        Per-zone and per-system arrays (see the class).

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.2.1 (Equation 6-1), 6.2.2.3 (Equation 6-2),
    Section 6.2.5 and Normative Appendix A; ANSI/ASHRAE 62.1-2010 Table 6-3 for the table.

    Examples
    --------
    Two systems: offices (Rp 2.5 L/s·person, Ra 0.3 L/s·m², Table 6-1 SI) of 10 people on
    100 m² and 5 people on 50 m², Ez 1, Vpz 200 and 100 L/s; and one zone of 4 people on 40 m²,
    Ez 0.8, Vpz 100 L/s. By hand: Vou = 55 + 27.5 = 82.5 L/s, Xs = 82.5/300 = 0.275,
    Zpz = 0.275 for both, Evz = Ev = 1, Vot = 82.5 L/s; the second, Voz = 22/0.8 = 27.5 L/s,
    Xs = 0.22, Evz = 1 + 0.22 − 0.275 = 0.945, Vot = 22/0.945 = 23.28 L/s.

    >>> f = multiple_zone_figures([2.5, 2.5, 2.5], [10, 5, 4], [0.3, 0.3, 0.3],
    ...                           [100, 50, 40], [1, 1, 0.8], [200, 100, 100], [0, 2])
    >>> [round(float(v), 4) for v in f.vou], [round(float(v), 4) for v in f.vot]
    ([82.5, 22.0], [82.5, 23.2804])
    >>> [round(float(v), 4) for v in f.evz], f.critical.tolist()
    ([1.0, 1.0, 0.945], [0, 2])
    """
    rp = _zones("rp", rp, whole=False)
    n = rp.size
    pz, ra = _zones("pz", pz, n, whole=False), _zones("ra", ra, n, whole=False)
    az, (vpz, least_vpz) = _zones("az", az, n, whole=False), _checked("vpz", vpz, n, whole=False)
    ez = _zones("ez", ez, n, strict=True)
    starts, sizes = _starts(starts, n)
    m = starts.size
    ps, vps = _zones("ps", ps, m), _zones("vps", vps, m)
    ps_stated, vps_stated = _mask("ps_stated", ps_stated, m), _mask("vps_stated", vps_stated, m)
    any_ps, any_vps = bool(ps_stated.any()), bool(vps_stated.any())
    ep = None if ep is None else _zones("ep", ep, n, strict=True, top=1.0)
    er = None if er is None else _zones("er", er, n, top=1.0)
    if method not in METHODS:
        raise ValueError(f"method must be one of {', '.join(METHODS)}, got {method!r}")
    coefficients = [finite(k, v) for k, v in (("breakpoint", breakpoint), ("slope", slope),
                                             ("intercept", intercept),
                                             ("above_breakpoint", above_breakpoint))]
    if above_table is not None:
        above_table = float(finite("above_table", above_table))
    if any_vps and not (vps[vps_stated] > 0).all():
        raise ValueError(f"vps must be > 0 where stated, got {vps!r}")
    system = np.repeat(np.arange(m), sizes)  # the system of each zone

    # a system figure reaches its zones by np.repeat(figure, sizes): the same floats as
    # indexing by ``system``, in a third of the time
    rp_pz, ra_az = rp * pz, ra * az
    sum_rp_pz, sum_ra_az = np.add.reduceat(rp_pz, starts), np.add.reduceat(ra_az, starts)
    vbz = np.add(rp_pz, ra_az, out=rp_pz)  # Equation 6-1 (Rp·Pz is summed already)
    voz = vbz / ez  # Equation 6-2
    sum_pz = np.add.reduceat(pz, starts)
    if any_ps:
        ps = np.where(ps_stated, ps, sum_pz)
        occupied = sum_pz > 0
        d = np.where(occupied, ps / np.where(occupied, sum_pz, 1.0), 1.0)
        vou = d * sum_rp_pz + sum_ra_az
    else:  # Ps = ΣPz: D = 1 exactly (and 1 where ΣPz = 0), so D·Σ(Rp·Pz) is Σ(Rp·Pz)
        ps, d = sum_pz, np.ones(m)
        vou = sum_rp_pz + sum_ra_az
    sum_vpz = np.add.reduceat(vpz, starts)
    # an infinite input makes its sum, and so Vou or ΣVpz, infinite or NaN (inputs are >= 0)
    if not np.isfinite(vou + sum_vpz).all():
        _finite((sum_rp_pz, sum_ra_az, sum_vpz), rp=rp, pz=pz, ra=ra, az=az, vpz=vpz)
    if least_vpz > 0:  # every zone has a Vpz (the detailed and table methods need it)
        zpz = voz / vpz
        vps = np.where(vps_stated, vps, sum_vpz) if any_vps else sum_vpz
    else:
        known = vpz > 0
        every = np.logical_and.reduceat(known, starts)
        zpz = np.where(known, voz / np.where(known, vpz, 1.0), np.nan)
        vps = np.where(vps_stated, vps, np.where(every, sum_vpz, np.nan))
    xs = vou / vps  # NaN where Vps is not known
    if ep is None or ep.min() == 1.0:  # single paths: Fa = Fb = Fc = 1, Evz = 1 + Xs − Zpz
        fa = fb = fc = _ones(n)
        evz = np.repeat(1.0 + xs, sizes)
        evz -= zpz
    else:
        fa, fb, fc = (np.asarray(f) for f in eff.secondary_recirculation_factors(
            ep, np.zeros(n) if er is None else er, ez))
        evz = (fa + np.repeat(xs, sizes) * fb - zpz * ep * fc) / fa
    ev, critical, from_zones, max_zpz = _system_ev(
        method, d, evz, zpz, sizes, starts, coefficients, rows, interpolate, above_table)
    if ev.min() > 0:  # NaN is not
        vot = vou / ev
    else:
        positive = ev > 0
        vot = np.where(positive, vou / np.where(positive, ev, 1.0), np.inf)
    return MultipleZoneFigures(vbz, voz, zpz, fa, fb, fc, evz, system, sum_pz, ps, d, sum_rp_pz,
                               sum_ra_az, vou, vps, xs, max_zpz, ev, critical, from_zones, vot)


def _system_ev(method, d, evz, zpz, sizes, starts, coefficients, rows, interpolate,
               above_table):
    """Ev of each system by ``method``, its critical zone (-1: none), whether Ev is the least
    Evz, and the largest Zpz (the table method; NaN otherwise)."""
    m = starts.size
    if method == "simplified":  # Section 6.2.5
        return (np.asarray(eff.system_ventilation_efficiency_simplified(d, *coefficients)),
                np.full(m, -1), np.zeros(m, dtype=bool), np.full(m, np.nan))
    least = np.minimum.reduceat(evz, starts)  # Appendix A: Ev = min Evz
    if method == "detailed":
        return (least, _first_where(evz == np.repeat(least, sizes), starts),
                np.ones(m, dtype=bool), np.full(m, np.nan))
    max_zpz = np.maximum.reduceat(zpz, starts)  # the table against the largest Zpz
    ev = np.atleast_1d(eff.system_ventilation_efficiency_table(max_zpz, rows, interpolate))
    critical = _first_where(zpz == np.repeat(max_zpz, sizes), starts)
    from_zones = np.zeros(m, dtype=bool)
    above = np.isnan(ev)
    if above_table is not None:
        ev = np.where(above, above_table, ev)
    elif above.any():
        from_zones = above
        ev = np.where(above, least, ev)
        critical = np.where(above, _first_where(evz == np.repeat(least, sizes), starts),
                            critical)
    return ev, critical, from_zones, max_zpz


def delivered_by_zone_ev(vpz, xs, vou, vot_design, ep=1.0, fa=1.0, fb=1.0, fc=1.0,
                         secondary=False):
    """Zone outdoor airflow the scheduled intake satisfies, where each zone has its own Evz.

    The zone is ventilated enough when ``Evz ≥ Vou/Vot_design``; solved for the zone outdoor
    airflow (``Zpz = Voz/Vpz``): single path ``Vpz·(1 + Xs − Vou/Vot_design)``, secondary
    recirculation ``Vpz·(Fa·(1 − Vou/Vot_design) + Xs·Fb)/(Ep·Fc)``; 0 where that is not
    positive, where ``Ep·Fc = 0``, or where no intake is scheduled (``Vot_design = 0``).

    Parameters
    ----------
    vpz : float or array_like
        Zone primary airflow (>= 0). [L/s]
    xs : float or array_like
        Average outdoor air fraction of the zone's system (>= 0). [-]
    vou : float or array_like
        Uncorrected outdoor air intake of the zone's system (>= 0). [L/s]
    vot_design : float or array_like
        Scheduled outdoor air intake of the zone's system (>= 0). [L/s]
    ep, fa, fb, fc : float or array_like
        Ep and the secondary-recirculation factors (:func:`.efficiency.secondary_recirculation_factors`;
        used where ``secondary``). [-]
    secondary : bool or array_like of bool
        Whether the zone states Ep (the secondary-recirculation form). [-]

    Returns
    -------
    float or ndarray
        Voz_delivered. [L/s]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Normative Appendix A (Evz, single supply path and secondary
    recirculation), rearranged for the zone outdoor airflow (derived).

    Examples
    --------
    Vpz 300 L/s, Xs 0.25, Vou/Vot_design = 250/312.5 = 0.8: 300·(1 + 0.25 − 0.8) = 135 L/s.

    >>> round(float(delivered_by_zone_ev(300.0, 0.25, 250.0, 312.5)), 9)
    135.0
    """
    vpz, xs, vou = (np.asarray(v, dtype=float) for v in (vpz, xs, vou))
    for name, a in (("vpz", vpz), ("xs", xs), ("vou", vou)):
        _check(name, a)
    design = _check("vot_design", np.asarray(vot_design, dtype=float))
    ep, fa, fb, fc = (_check(k, np.asarray(v, dtype=float))
                      for k, v in (("ep", ep), ("fa", fa), ("fb", fb), ("fc", fc)))
    secondary = np.asarray(secondary)
    if secondary.dtype != bool:
        raise ValueError(f"secondary must be True/False values, got {secondary!r}")
    with np.errstate(divide="ignore", invalid="ignore"):
        single = vpz * (1 + xs - vou / design)
        mixed = np.where(ep * fc > 0, vpz * (fa * (1 - vou / design) + xs * fb) / (ep * fc), 0.0)
        value = np.where(secondary, mixed, single)
        value = np.where((design > 0) & (value > 0), value, 0.0)
    return out(value)


def delivered_by_system_ev(voz, vot_design, vot):
    """Zone outdoor airflow at the scheduled intake where Ev is one figure for the system.

    The procedure judges only the intake, so each zone receives its Voz in the ratio of the
    scheduled to the required intake, ``Voz·Vot_design/Vot``; where the system requires none
    (``Vot = 0``), a zone requiring outdoor air receives the scheduled intake and any other none.

    Parameters
    ----------
    voz : float or array_like
        Zone outdoor airflow (>= 0). [L/s]
    vot_design : float or array_like
        Scheduled outdoor air intake of the zone's system (>= 0). [L/s]
    vot : float or array_like
        Required outdoor air intake of the zone's system (>= 0, finite). [L/s]

    Returns
    -------
    float or ndarray
        Voz_delivered. [L/s]

    References
    ----------
    ANSI/ASHRAE Standard 62.1-2019, Section 6.2.5 (Vot = Vou/Ev), shared in proportion (derived).

    Examples
    --------
    >>> delivered_by_system_ev(100.0, 900.0, 1000.0)
    90.0
    """
    voz, design, vot = (_check(k, np.asarray(v, dtype=float))
                        for k, v in (("voz", voz), ("vot_design", vot_design), ("vot", vot)))
    with np.errstate(divide="ignore", invalid="ignore"):
        value = np.where(vot > 0, voz * design / np.where(vot > 0, vot, 1.0),
                         np.where(voz > 0, design, 0.0))
    return out(value)


def _check(name, a):
    """``a`` unless some value is NaN, infinite or negative (ValueError naming ``name``)."""
    if a.size and not (a.min() >= 0 and a.max() < np.inf):
        raise ValueError(f"{name} must be finite and >= 0, got {a!r}")
    return a
