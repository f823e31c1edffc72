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

    def __init__(self, system_trail: Trail, zones: list[ZoneResult], which: np.ndarray,
                 known: dict[str, np.ndarray] | None = None) -> None:
        known = known or {}

        def value(s: str) -> np.ndarray:
            if s in known:  # the caller's array over the zones
                return known[s]
            return np.array([z.trail.value(s) for z in zones])

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

    def only(self, keep: np.ndarray) -> _Occupied:
        """The same for the zones ``keep`` selects (a mask over this one's zones)."""
        other = object.__new__(_Occupied)
        other.__dict__.update(self.__dict__)
        for name in ("rp", "ra", "az", "ez", "pz", "vpz", "others_max"):
            setattr(other, name, getattr(self, name)[keep])
        return other

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


#: what a P_max step of a multiple-zone system says
P_MAX_NOTE = ("occupants the zone can hold at the scheduled intake, other zones unchanged and D "
              "held (detailed Ev, bisection)")


def multiple_zone_capacity(system: System, result: SystemResult) -> None:
    """P_max per zone of a detailed-Ev, single-path system (:func:`most_people`), added to the
    dilution trail of each zone that has one."""
    most = most_people(system, result, [z.dilution is not None for z in result.zones])
    if most is None:
        return
    for j, people in zip(*most):
        result.zones[j].dilution.add("P_max", people, "people", note=P_MAX_NOTE)


def most_people(system: System, result: SystemResult, covered: list[bool],
                known: dict[str, np.ndarray] | None = None
                ) -> tuple[list[int], list[float]] | None:
    """P_max per zone of a detailed-Ev, single-path system: the most people zone j can hold
    (others unchanged, D held) before the required Vot exceeds the scheduled intake. Found by
    bisection on the monotone Vot(P) of ANSI/ASHRAE 62.1-2019 Appendix A (derived), for every
    zone of the system at once (:class:`_Occupied`), among the zones ``covered`` (those with a
    dilution analysis) with Rp > 0: ``(zone indices, P_max of each)``, None where the system
    has none. A note names the zones short of the intake even when empty. ``known``: zone
    values the caller holds as arrays over the zones (``Pz``, ``Vpz``), read from there."""
    if result.method != "detailed" or any(c.ep is not None for c in
                                          (z for z in system.zones)):
        return None
    target = system.outdoor_air
    known = dict(known or {})
    if "Rp" not in known:
        known["Rp"] = np.array([z.trail.value("Rp") for z in result.zones])
    candidates = np.flatnonzero(np.asarray(covered, dtype=bool) & (known["Rp"] > 0))
    if not len(candidates):
        return None
    occupied = _Occupied(result.trail, result.zones, candidates, known)
    empty_ok = occupied.vot(np.zeros(len(candidates))) <= target
    # no occupancy of a zone alone restores the intake when it is short with the zone empty
    short = [result.zones[j].id for j in candidates[~empty_ok]]
    which = candidates[empty_ok]
    most = _most_people(occupied.only(empty_ok), target)
    if short:
        result.notes.append(
            f"P_max (the occupants a zone can hold at the scheduled intake) is not given for "
            f"zone{'s' if len(short) > 1 else ''} {', '.join(short)}: the scheduled intake is "
            "short of the required Vot even with that zone empty, so no occupancy of the zone "
            "alone brings the system within its intake; the system's intake finding says what "
            "to change")
    return which.tolist(), most.tolist()
