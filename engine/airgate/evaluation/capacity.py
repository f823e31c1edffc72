"""The occupancy the scheduled intake supports: P_max of each zone of a multiple-zone system.

For a detailed-Ev, single-path system, the most people zone j can hold (the other zones
unchanged, D held) before the required Vot of ANSI/ASHRAE 62.1-2019 Section 6.2.5 and Normative
Appendix A exceeds the scheduled intake; Vot(P) is monotone in P, so it is found by bisection,
for every zone of the system at once over arrays. Part of the CO2 analysis
(:mod:`airgate.evaluation.dilution`), which records P_max in each zone's dilution trail.
Units: the engine's internal units (L/s, person).
"""

from __future__ import annotations

import math

import numpy as np

from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.trail import Trail
from airgate.models.schedule import System


class _Occupied:
    """Required Vot of a detailed-Ev system as each zone j of ``which`` alone holds
    ``people[j]`` (others unchanged, D held) [L/s]: the required Vot of ANSI/ASHRAE 62.1-2019
    Appendix A for those zones at once.
    The least Ev over the zones is ``1 + Xs − max Zpz`` (subtracting is monotone, so the same
    float as the least of ``1 + Xs − Zpz`` over the zones), the largest Zpz of the others
    taken from the two largest of the system."""

    def __init__(self, system_trail: Trail, zones: list[ZoneResult], which: np.ndarray) -> None:
        value = lambda s: np.array([z.trail.value(s) for z in zones])  # noqa: E731
        rp, ra, az, ez, pz, vpz, zpz = (value(s) for s in ("Rp", "Ra", "Az", "Ez", "Pz", "Vpz",
                                                            "Zpz"))
        # the largest Zpz of the other zones: the system's largest, or for that zone the second
        order = np.argsort(-zpz, kind="stable")
        others_max = np.full(len(zones), zpz[order[0]])
        others_max[order[0]] = zpz[order[1]] if len(zones) > 1 else -math.inf
        self.rp, self.ra, self.az, self.ez, self.pz, self.vpz, self.others_max = (
            a[which] for a in (rp, ra, az, ez, pz, vpz, others_max))
        self.d = system_trail.value("D")
        self.sum_rp = system_trail.value("Σ(Rp·Pz)")
        self.sum_ra = system_trail.value("Σ(Ra·Az)")
        self.vps = system_trail.value("Vps")

    def vot(self, people: np.ndarray) -> np.ndarray:
        """Required Vot [L/s] with each zone holding ``people``."""
        vou = self.d * (self.sum_rp + self.rp * (people - self.pz)) + self.sum_ra
        xs = vou / self.vps
        zpz = (self.rp * people + self.ra * self.az) / self.ez / self.vpz
        ev = 1 + xs - np.maximum(self.others_max, zpz)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(ev > 0, vou / np.where(ev > 0, ev, 1.0), math.inf)


def _most_people(occupied: _Occupied, target: float) -> np.ndarray:
    """The most people each zone can hold with Vot within ``target``: the bound doubled from
    max(1, Pz) until it fails (or reaches 10⁷), then 80 bisections, ended early once a
    bisection changes no bound (each step depends on the bounds alone, so the rest would
    change nothing either) [people]."""
    lo = np.zeros(len(occupied.pz))
    hi = np.maximum(1.0, occupied.pz)
    growing = np.ones(len(lo), dtype=bool)
    while True:
        growing &= (occupied.vot(hi) <= target) & (hi < 1e7)
        if not growing.any():
            break
        hi = np.where(growing, hi * 2, hi)
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        within = occupied.vot(mid) <= target
        new_lo, new_hi = np.where(within, mid, lo), np.where(within, hi, mid)
        if np.array_equal(new_lo, lo) and np.array_equal(new_hi, hi):
            break
        lo, hi = new_lo, new_hi
    return lo


def multiple_zone_capacity(system: System, result: SystemResult) -> None:
    """P_max per zone of a detailed-Ev, single-path system: the most people zone j can hold
    (others unchanged, D held) before the required Vot exceeds the scheduled intake. Found by
    bisection on the monotone Vot(P) of ANSI/ASHRAE 62.1-2019 Appendix A (derived), for every
    zone of the system at once (:class:`_Occupied`)."""
    if result.method != "detailed" or any(c.ep is not None for c in
                                          (z for z in system.zones)):
        return
    target = system.outdoor_air
    candidates = np.array([j for j, z in enumerate(result.zones)
                           if z.dilution is not None and z.trail.value("Rp") > 0], dtype=int)
    if not len(candidates):
        return
    empty_ok = _Occupied(result.trail, result.zones, candidates).vot(
        np.zeros(len(candidates))) <= target
    # no occupancy of a zone alone restores the intake when it is short with the zone empty
    short = [result.zones[j].id for j in candidates[~empty_ok]]
    which = candidates[empty_ok]
    most = _most_people(_Occupied(result.trail, result.zones, which), target)
    for j, most in zip(which.tolist(), most.tolist()):
        result.zones[j].dilution.add(
            "P_max", most, "people", note="occupants the zone can hold at the scheduled "
            "intake, other zones unchanged and D held (detailed Ev, bisection)")
    if short:
        result.notes.append(
            f"P_max (the occupants a zone can hold at the scheduled intake) is not given for "
            f"zone{'s' if len(short) > 1 else ''} {', '.join(short)}: the scheduled intake is "
            "short of the required Vot even with that zone empty, so no occupancy of the zone "
            "alone brings the system within its intake; the system's intake finding says what "
            "to change")
