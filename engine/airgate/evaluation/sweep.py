"""Design sweeps: a grid of variants of one system's outdoor-air intake and zone primary
airflows, evaluated at once over numpy arrays (``airgate.sweep``, docs/api.md).

The schedule is evaluated once (:func:`airgate.evaluation.engine.evaluate`); what a variant
changes is then computed from that evaluation's trail by the same procedures
(:mod:`airgate.procedures.efficiency`), on arrays: for the variant ``j`` of the primary
airflows, the zone primary outdoor air fractions ``Zpz = Voz / Vpz``, the average outdoor air
fraction ``Xs = Vou / Vps`` (``Vps`` as stated, else ``ΣVpz``), the system ventilation
efficiency ``Ev`` by the system's method, and ``Vot = Vou / Ev`` (ANSI/ASHRAE 62.1-2019 Section
6.2.5 and Normative Appendix A). Neither the intake nor the primary airflows change ``Vou``,
``Voz`` or ``D``, so nothing else is recomputed.

A variant **passes** when none of the checks it decides fails (those the pack enables with
severity ``fail``): the intake against ``Vot`` (``system-intake``), ``Ev > 0``
(``ventilation-efficiency-positive``) and, per zone, the primary airflow against ``Voz``
(``zone-primary-airflow``) or, by the simplified procedure on a VAV system, against its
fraction of ``Voz`` (``simplified-vav-minimum``) — the comparisons the evaluation makes, with
its tolerance. Findings a variant cannot change (air classes, a pack's requirements) are those of
the schedule as given (``Sweep.report``). A system that lists design conditions is swept at one
of them (the governing one unless named): its trail, zones and fields at that condition.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from airgate import units
from airgate.evaluation.report import Report, SystemResult
from airgate.evaluation.trail import Trail
from airgate.models.rules import DetailedEv, RulePack, SimplifiedEv, TableEv
from airgate.models.schedule import System
from airgate.procedures import efficiency as eff

#: the evaluation's tolerance of a comparison (:meth:`airgate.evaluation.checks.Emitter.compare`)
_TOL = 1e-9
#: system kinds whose required intake does not depend on zone primary airflows
_FIXED_VOT = ("single-zone", "outdoor-air")


@dataclass
class Sweep:
    """The grid of variants of one system: axis 0 the intakes, axis 1 the primary-airflow
    variants. Airflows are in the schedule's unit system (``units``: cfm for IP, L/s for SI)."""

    system: str
    #: the design condition swept (None: the system lists none)
    condition: str | None
    units: str
    #: the intakes evaluated, shape (n,)
    outdoor_air: np.ndarray
    #: each zone's primary airflows evaluated, shape (m,) each
    primary_airflow: dict[str, np.ndarray]
    #: the required intake Vot of each variant, shape (n, m) (``inf`` where Ev ≤ 0)
    vot: np.ndarray
    #: the system ventilation efficiency Ev of each variant, shape (n, m)
    ev: np.ndarray
    #: whether each variant passes the checks it decides, shape (n, m)
    passes: np.ndarray
    #: the evaluation of the schedule as given
    report: Report = field(repr=False)


def _fails(pack: RulePack, check_id: str) -> bool:
    """Whether the pack enables ``check_id`` with severity fail (a miss fails the system)."""
    check = pack.checks.get(check_id)
    return check is not None and check.severity == "fail"


def _internal(values, what: str, system: str) -> np.ndarray:
    a = np.asarray(values, dtype=float)
    if a.ndim != 1 or a.size == 0:
        raise ValueError(f"{what} must be a one-dimensional array of at least one airflow, "
                         f"got shape {a.shape}")
    if not np.all(np.isfinite(a)) or np.any(a < 0):
        raise ValueError(f"{what} must hold finite airflows, 0 or more")
    return units.to_internal(a, "airflow", system)


def _result(report: Report, system_id: str) -> SystemResult:
    for s in report.systems:
        if s.id == system_id:
            return s
    raise ValueError(f"no system '{system_id}' in {report.schedule_file}; the systems are "
                     + ", ".join(s.id for s in report.systems))


@dataclass
class _Evaluated:
    """What a sweep reads of an evaluated system, or of one of its design conditions."""

    kind: str
    trail: Trail
    zones: list
    method: str | None


def _at_condition(result: SystemResult, system: System,
                  condition: str | None) -> tuple[_Evaluated, System, str | None]:
    """The system's evaluation at ``condition`` (default: the governing one, for a system that
    lists design conditions), and the system's fields resolved there."""
    if not result.conditions:
        if condition is not None:
            raise ValueError(f"system '{system.id}' lists no design conditions; leave out "
                             f"condition='{condition}'")
        return _Evaluated(result.kind, result.trail, result.zones, result.method), system, None
    cid = condition or result.condition
    for c in result.conditions:
        if c.id == cid:
            return _Evaluated(result.kind, c.trail, c.zones, c.method), system.at(cid), cid
    raise ValueError(f"system '{system.id}' has no design condition '{cid}'; its conditions are "
                     + ", ".join(c.id for c in result.conditions))


def sweep_system(report: Report, system: System, outdoor_air,
                 primary_airflow: Mapping[str, object], condition: str | None = None) -> Sweep:
    """The grid of ``outdoor_air`` × the variants of ``primary_airflow`` for ``system``, from
    ``report`` (its evaluation), at one design condition for a system that lists them
    (``condition``, default the governing one). See the module docstring."""
    pack, ux = report.pack, report.units
    result, system, condition = _at_condition(_result(report, system.id), system, condition)
    oa = _internal(outdoor_air, "outdoor_air", ux)
    zone_ids = [z.id for z in result.zones]
    unknown = sorted(set(primary_airflow) - set(zone_ids))
    if unknown:
        raise ValueError(f"system '{system.id}' serves no zone {', '.join(unknown)}; its zones "
                         f"are {', '.join(zone_ids)}")
    swept = {zid: _internal(a, f"primary_airflow['{zid}']", ux)
             for zid, a in primary_airflow.items()}
    lengths = {a.size for a in swept.values()}
    if len(lengths) > 1:
        raise ValueError("every zone's primary_airflow array must have the same length, got "
                         + ", ".join(f"{k}: {a.size}" for k, a in swept.items()))
    m = lengths.pop() if lengths else 1
    if result.kind in _FIXED_VOT:
        if swept:
            raise ValueError(f"a {result.kind} system has no zone primary airflows to sweep")
        vot = np.full(m, result.trail.value("Vot"))
        ev = np.full(m, result.trail.value("Ev") if "Ev" in result.trail else 1.0)
        zones_ok = np.ones(m, dtype=bool)
    elif result.kind == "multiple-zone":
        vot, ev, zones_ok = _multiple_zone(result, system, pack, swept, m)
    else:
        raise ValueError(f"a {result.kind} system has no outdoor-air intake to sweep")
    intake_ok = (oa[:, None] >= vot[None, :] * (1 - _TOL)) if _fails(pack, "system-intake") \
        else np.ones((oa.size, m), dtype=bool)
    passes = intake_ok & zones_ok[None, :]
    if _fails(pack, "ventilation-efficiency-positive"):
        passes &= (ev > 0)[None, :]
    shape = (oa.size, m)
    return Sweep(
        system=system.id, condition=condition, units=ux, outdoor_air=units.to_display(oa, "airflow", ux),
        primary_airflow={k: units.to_display(a, "airflow", ux) for k, a in swept.items()},
        vot=np.broadcast_to(units.to_display(vot, "airflow", ux), shape).copy(),
        ev=np.broadcast_to(ev, shape).copy(), passes=passes, report=report)


def _multiple_zone(result: _Evaluated, system: System, pack: RulePack,
                   swept: Mapping[str, np.ndarray], m: int):
    """Vot, Ev and whether every zone's primary airflow passes, per variant (shape (m,))."""
    trail, zones = result.trail, result.zones
    voz = np.array([z.trail.value("Voz") for z in zones])
    vpz = np.empty((len(zones), m))
    for i, z in enumerate(zones):
        if z.id in swept:
            vpz[i] = swept[z.id]
        elif "Vpz" in z.trail:
            vpz[i] = z.trail.value("Vpz")
        else:
            vpz[i] = math.nan  # none scheduled (simplified procedure only)
    vou = trail.value("Vou")
    method = pack.methods[result.method]
    zones_ok = np.ones(m, dtype=bool)
    scheduled = ~np.isnan(vpz)
    if _fails(pack, "zone-primary-airflow"):
        zones_ok &= np.all(~scheduled | (vpz >= voz[:, None] * (1 - _TOL)), axis=0)
    if isinstance(method, SimplifiedEv):
        ev = np.full(m, trail.value("Ev"))
        ratio = method.vav_minimum_primary_ratio
        if system.variable_air_volume and ratio is not None and _fails(
                pack, "simplified-vav-minimum"):
            zones_ok &= np.all(scheduled & (vpz >= ratio * voz[:, None] * (1 - _TOL)), axis=0)
    else:
        if np.any(~scheduled) or np.any(vpz <= 0):
            raise ValueError(f"the {result.method} Ev method needs a positive primary airflow "
                             "for every zone in every variant")
        vps = (np.full(m, trail.value("Vps")) if system.supply_airflow is not None
               else vpz.sum(axis=0))
        xs = eff.average_outdoor_air_fraction(vou, vps)
        zpz = eff.primary_outdoor_air_fraction(voz[:, None], vpz)
        ev = _ev(method, result, pack, xs, zpz)
    positive = ev > 0
    vot = np.full(m, math.inf)
    vot[positive] = eff.outdoor_air_intake(vou, ev[positive])
    return vot, ev, zones_ok


def _ev(method, result: _Evaluated, pack: RulePack, xs: np.ndarray,
        zpz: np.ndarray) -> np.ndarray:
    """Ev per variant by the detailed or the table method (zones on axis 0 of ``zpz``)."""
    if isinstance(method, TableEv):
        ev = np.asarray(eff.system_ventilation_efficiency_table(
            zpz.max(axis=0), method.rows, method.interpolate), dtype=float)
        above = np.isnan(ev)
        if np.any(above):
            ev[above] = (_detailed(result, xs, zpz)[above] if method.above_last == "detailed"
                         else float(method.above_last))
        return ev
    assert isinstance(method, DetailedEv)
    return _detailed(result, xs, zpz)


def _detailed(result: _Evaluated, xs: np.ndarray, zpz: np.ndarray) -> np.ndarray:
    """Ev = min Evz; a zone without Ep has the single path (Ep = 1, where the general form is
    1 + Xs − Zpz)."""
    def col(symbol: str, default: float) -> np.ndarray:
        return np.array([[z.trail.value(symbol) if symbol in z.trail else default]
                         for z in result.zones])

    evz = eff.zone_ventilation_efficiency(xs[None, :], zpz, col("Ep", 1.0), col("Er", 0.0),
                                          col("Ez", 1.0))
    return np.asarray(eff.system_ventilation_efficiency_detailed(evz, axis=0), dtype=float)
