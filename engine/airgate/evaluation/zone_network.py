"""A system whose zones pass makeup air to each other: the dilution balance as one network.

Where a zone's makeup air is transferred from another zone of the same system
(``exhaust.makeup: {transfer_from: Y}``), the receiving zone's balance holds Y's concentration:
an entry off the diagonal. For an outdoor-air system the zones are otherwise independent; for a
multiple-zone recirculating system it adds to the diagonal-plus-rank-one coupling through the
return air, which the O(N) procedures of :mod:`airgate.procedures.coupled` cannot hold. Such a
system is solved as a whole by :mod:`airgate.procedures.network` (a dense solve, O(N³) for the
system's N zones; an exact one-minute propagator for the design day). Other systems keep their
structured procedures.

The flows are those of :mod:`airgate.evaluation.zone_air` (the CMFR material balance, Nazaroff
& Alvarez-Cohen 2001): zone z receives ``F[z, Y] = Ve_design`` from its source Y and removes it
again at its own concentration; the source gives it away from its supply (its ``Vtr_out``).
Units: L/s, m³, h (internal); concentrations in the unit of the analysis.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from airgate.evaluation import zone_air
from airgate.evaluation.report import SystemResult
from airgate.evaluation.system_kinds import kind_of
from airgate.models.schedule import Schedule, System
from airgate.procedures import coupled, network

STEP_H = 1.0 / 60.0  #: the design day's step [h]: profiles change on whole minutes


@dataclass(frozen=True)
class Network:
    """The flows of one system's zones [L/s], independent of the contaminant."""

    ids: list
    airs: tuple  #: each zone's ZoneAir (None: no exhaust and gives none)
    source: np.ndarray  #: index of the zone each zone's makeup comes from (−1: none)
    transfer_in: np.ndarray  #: makeup air transferred in from that zone
    outdoor_in: np.ndarray  #: outdoor air entering besides the supply (stated makeup, infiltration)
    supply_outdoor: np.ndarray  #: single path: the outdoor air each zone's supply brings
    vpz: np.ndarray | None  #: multiple-zone: the zone primary airflows
    coupling: zone_air.CoupledAir | None  #: multiple-zone: return weights and intake


def transfers_within(system: System, result: SystemResult, schedule: Schedule) -> bool:
    """Whether a zone of the system takes its makeup air from another zone of the system."""
    airs = zone_air.zone_air(schedule)
    ids = {z.id for z in result.zones}
    return any((a := airs.get(z)) is not None and a.makeup == "transfer" and a.source in ids
               for z in ids)


def build(system: System, result: SystemResult, schedule: Schedule) -> Network | None:
    """The network of a system whose zones pass makeup air to each other, or None where a zone
    takes its makeup from a zone outside the system (a note says so)."""
    airs = zone_air.zone_air(schedule)
    ids = [z.id for z in result.zones]
    index = {z: i for i, z in enumerate(ids)}
    zair = tuple(airs.get(z) for z in ids)
    for zid, a in zip(ids, zair):
        if a is not None and a.makeup == "transfer" and a.source not in index:
            note = zone_air.transfer_note(zid, a)
            if note not in result.notes:
                result.notes.append(note)
            return None
    source = np.array([index[a.source] if a and a.makeup == "transfer" else -1 for a in zair])
    transfer_in = np.array([a.transferred_in if a else 0.0 for a in zair])
    if kind_of(system).coupled:
        vpz = np.array([z.trail.value("Vpz") for z in result.zones])
        air = zone_air.coupled(ids, vpz, system.outdoor_air, airs)
        return Network(ids, zair, source, transfer_in, air.makeup, np.zeros(len(ids)), vpz, air)
    q = np.array([z.trail.value("Voz_delivered") for z in result.zones])
    drawn = np.array([a.drawn if a else 0.0 for a in zair])
    stated = np.array([a.outdoor_makeup if a else 0.0 for a in zair])
    return Network(ids, zair, source, transfer_in, stated + np.maximum(drawn - q, 0.0), q,
                   None, None)


def matrices(net: Network, generation: np.ndarray, c_out: float, *, loss=0.0,
             eta_oa: float = 0.0, eta_rec: float = 0.0):
    """``(g, F, D)`` of :mod:`airgate.procedures.network` for one analysis: ``generation``
    [C·L/s] per zone, outdoor concentration ``c_out``, in-room losses ``loss`` [L/s] per zone
    and the system filter's efficiencies on outdoor and recirculated air. On a single path the
    outdoor air is filtered and no air is recirculated between zones (an outdoor-air system)."""
    n = len(net.ids)
    f = np.zeros((n, n))
    receiving = np.flatnonzero(net.source >= 0)
    f[receiving, net.source[receiving]] += net.transfer_in[receiving]
    d = np.broadcast_to(loss, (n,)) + net.outdoor_in + net.transfer_in
    g = generation + net.outdoor_in * c_out
    if net.coupling is not None:
        a, w = coupled.supply_coupling(net.vpz, net.coupling.intake, c_out, eta_oa, eta_rec,
                                       net.coupling.not_returned)
        f += np.outer(net.vpz, w)
        np.fill_diagonal(f, 0.0)
        d = d + net.vpz - net.vpz * w  # own return recirculated: off the removal, not an inflow
        g = g + net.vpz * a
    else:
        d = d + net.supply_outdoor
        g = g + net.supply_outdoor * (1 - eta_oa) * c_out
    return g, f, d


def steady(net: Network, volume, generation, c_out, **kw) -> np.ndarray:
    """Steady concentrations of the network's zones (dense solve)."""
    g, f, d = matrices(net, generation, c_out, **kw)
    return network.network_steady_state(g, volume, f, d)


def design_day(net: Network, volume, people, constant, fractions, c_out, c0, **kw):
    """Concentrations each minute over the second of two design days (exact propagator):
    ``fractions`` (1440, n) of design occupancy per minute, generation
    ``people·fraction + constant`` [C·L/s]. Returns (1441, n), midnight to midnight."""
    g0, f, d = matrices(net, np.zeros(len(net.ids)), c_out, **kw)
    per_minute = fractions * people[None, :] + constant[None, :] + g0[None, :]
    two_days = np.concatenate([per_minute, per_minute])
    run = network.network_march(volume, f, d, STEP_H, two_days, c0)
    return run[per_minute.shape[0]:]
