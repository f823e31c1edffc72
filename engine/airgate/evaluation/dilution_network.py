"""CO2 and declared contaminants of a system whose zones pass makeup air to each other.

The zones are solved together as one network (:mod:`airgate.evaluation.zone_network`,
:mod:`airgate.procedures.network`): the steady state by a dense solve, the design day by the
exact one-minute propagator. The trail steps are those of :mod:`airgate.evaluation.dilution`
(CO2) and :mod:`airgate.evaluation.contaminants`, with ``C_mu``, the concentration of the makeup
air a zone receives besides its supply (its source zone's, mixed with any outdoor makeup).
Units: L/s, m³, h (internal); ppm for CO2.
"""

from __future__ import annotations

import numpy as np

from airgate.evaluation import dilution as co2
from airgate.evaluation import capacity, zone_air, zone_network
from airgate.evaluation.dilution import MB, PPM, Series
from airgate.evaluation.system_kinds import kind_of
from airgate.evaluation.trail import Trail
from airgate.procedures.numeric import in_room_loss

SOLVED = ("zones coupled by transferred makeup air: the system's balance solved as one network "
          "(dense solve)")
_MIDS = (np.arange(1440) + 0.5) * zone_network.STEP_H


def _fractions(schedule, ctxs):
    """Occupancy fractions per minute of the day (1440, n), or None when no zone has a profile
    or a profile changes off a whole minute."""
    pieces = [co2._profile_pieces(schedule, c) for c in ctxs]
    if all(p is None for p in pieces):
        return None
    out = np.ones((_MIDS.size, len(ctxs)))
    for j, p in enumerate(pieces):
        if p is None:
            continue
        minutes = np.asarray(p[0], dtype=float) * 60
        if np.any(np.abs(minutes - np.round(minutes)) > 1e-6):
            return None
        out[:, j] = co2._sample_fractions(p[0], p[1], _MIDS)
    return out


def _makeup_concentration(net, j, c, c_out):
    """Concentration of the makeup air zone j receives: its source's, mixed with outdoor."""
    t_in, o_in = net.transfer_in[j], net.outdoor_in[j]
    src = c[net.source[j]] if net.source[j] >= 0 else c_out
    return (t_in * src + o_in * c_out) / (t_in + o_in)


def analyse(system, ctxs, result, schedule, emitter, out, table) -> None:
    """CO2 of every zone of a system whose zones pass makeup air to each other."""
    volumes = [co2.volume_of(c) for c in ctxs]
    if any(v is None for v in volumes):
        return
    if kind_of(system).coupled and any("Vpz" not in z.trail for z in result.zones):
        return
    net = zone_network.build(system, result, schedule)
    if net is None:
        return
    if net.coupling is not None:
        vps = float(net.vpz.sum())
        if system.outdoor_air <= 0 or max(system.outdoor_air, net.coupling.intake) > vps * (1 + 1e-12):
            return
        if net.coupling.intake > system.outdoor_air:
            result.notes.append(zone_air.intake_note(system.id, system.outdoor_air,
                                                     net.coupling.intake, emitter.units))
    trails = [co2._start(c, z, schedule, v, table) for c, z, v in zip(ctxs, result.zones, volumes)]
    c_out = trails[0].value("C_out")
    vol = np.array(volumes)
    gen = np.array([PPM * t.value("G") for t in trails])
    try:
        conc = zone_network.steady(net, vol, gen, c_out)
    except ValueError:
        result.notes.append(f"no dilution analysis for {system.id}: some of its zones receive "
                            "no outdoor air, directly or through transferred makeup")
        return
    for j, (t, z) in enumerate(zip(trails, result.zones)):
        _steady_steps(t, z, net, j, conc, c_out, emitter.units)
    _design_day(schedule, ctxs, result, trails, net, vol, gen, c_out)
    rates = co2.rate_values(trails, coupled=net.coupling is not None)
    setpoints = co2.dcv_values(trails, result.zones)
    for ctx, z, t, rate, setpoint in zip(ctxs, result.zones, trails, rates, setpoints):
        co2._rate_steps(t, emitter.units, *rate)
        co2._dcv_steps(t, z, emitter.units, setpoint)
        if net.coupling is None:
            co2._capacity(t, z, t.value("Q_oa"), result.notes)
        if z.series is not None and ctx.zone.profile is not None:
            co2._short_term(t, ctx, z, z.series.occupancy[:-1], emitter)
        co2._limit(t, ctx, schedule, emitter)
        z.dilution = t
        out.append(z)
    if net.coupling is not None:
        capacity.multiple_zone_capacity(system, result)


def _steady_steps(t: Trail, z, net, j: int, conc, c_out: float, units: str) -> None:
    air = net.airs[j]
    if net.coupling is not None:
        x = net.coupling.intake / float(net.vpz.sum())
        t.copy_from(z.trail, "Vpz")
        t.add("x", x, "fraction", note="outdoor fraction of the supply at the intake the "
              "balance uses")
        zone_air.coupled_steps(t, air, z.trail)
    else:
        t.copy_from(z.trail, "Voz_delivered")
        t.add("Q_oa", net.supply_outdoor[j], "airflow",
              note="= Voz_delivered, the outdoor air the zone receives")
        zone_air.single_path(t, air, z.trail)
    if "Q_mu" in t and net.transfer_in[j] > 0:
        t.add("C_mu", _makeup_concentration(net, j, conc, c_out), "concentration_ppm",
              source=MB, note=f"makeup air from zone {air.source} at its steady concentration"
              + (", mixed with outdoor air" if net.outdoor_in[j] > 0 else ""))
    formula = ""
    if net.coupling is None:
        formula = co2.single_path_formula(t, units)
    t.add("C_ss", float(conc[j]), "concentration_ppm", formula=formula, source=MB,
          note="steady state at design occupancy; " + SOLVED)
    co2._excess(t)
    if net.coupling is None:
        return
    excess = t.value("C_excess")
    if excess > 0 and t.value("G") > 0:
        t.add("Q_oa", PPM * t.value("G") / excess, "airflow",
              formula="10⁶·{G} / " + co2._per_airflow("C_excess", units), source=MB,
              note="CO2-equivalent outdoor airflow: the clean air that alone would hold the "
                   "zone at C_ss (network balance; the procedure's measure is Voz_delivered)")
    else:
        t.add("Q_oa", z.trail.value("Vpz") * t.value("x"), "airflow", formula="{Vpz}·{x}",
              note="outdoor air in the zone's primary air (no CO2 is generated in the zone)")


def _design_day(schedule, ctxs, result, trails, net, vol, gen, c_out) -> None:
    frac = _fractions(schedule, ctxs)
    if frac is None:
        return
    run = zone_network.design_day(net, vol, gen, np.zeros_like(gen), frac, c_out,
                                  np.full(len(ctxs), c_out))
    times = co2.DAY_TIMES
    for j, (t, z, ctx) in enumerate(zip(trails, result.zones, ctxs)):
        name = ctx.zone.profile or "constant at design occupancy"
        occ = np.append(frac[:, j], frac[0, j])
        z.series = Series(times, run[:, j], occ, name)
        co2.add_day_statistics(t, run[:, j], times, "concentration_ppm", f", profile '{name}'")


def contaminant(system, ctxs, result, c, schedule, filt, start, generation, per_second):
    """One declared contaminant over a system solved as a network: C_ss and, with profiles,
    the design day (``start``, ``generation`` and ``per_second`` are the contaminant module's
    trail start, emission split and unit conversion)."""
    if any(z.dilution is None for z in result.zones):
        return None
    net = zone_network.build(system, result, schedule)
    if net is None:
        return None
    trails = [start(ctx, z, c, filt) for ctx, z in zip(ctxs, result.zones)]
    vol = np.array([t.value("V") for t in trails])
    loss = in_room_loss(vol, np.array([t.value("CADR") for t in trails]),
                        np.array([t.value("k_dep") for t in trails]),
                        np.array([t.value("k_inact") for t in trails]))
    kw = dict(loss=loss, eta_oa=trails[0].value("eta"), eta_rec=trails[0].value("eta"))
    parts = [generation(ctx, z, c) for ctx, z in zip(ctxs, result.zones)]
    people = per_second(np.array([p for p, _ in parts]))
    rest = per_second(np.array([r for _, r in parts]))
    conc = zone_network.steady(net, vol, people + rest, c.outdoor, **kw)
    for t, cz in zip(trails, conc):
        t.add("C_ss", float(cz), "concentration", source=MB,
              note=f"{c.unit}/m³ at steady state; {SOLVED}; the equivalent clean airflow by "
                   "mechanism is not given for a zone solved this way")
    frac = _fractions(schedule, ctxs)
    if frac is not None:
        run = zone_network.design_day(net, vol, people, rest, frac, c.outdoor,
                                      np.full(len(ctxs), c.outdoor), **kw)
        for j, t in enumerate(trails):
            co2.add_day_statistics(t, run[:, j], co2.DAY_TIMES, "concentration", "")
    return trails
