"""The dilution trails of a multiple-zone system are rows of a table of per-system arrays
(evaluation/trail.py, ``StepTable`` and ``RowTrail``), their steps made only when read. Each is
held here to the trail recorded step by step as the analysis did before (the reference below is
that code as it was, on the eager helpers single-path systems still use): every step field
equal, the signature and values read from the table equal to the eager trail's, and the
report (findings, notes, every zone's values and trails) the same. Schedules: the demo
building (fixtures/demo) and small invented portfolios from bench/synthetic.py.
"""

from __future__ import annotations

import pickle
import sys
from pathlib import Path

import numpy as np
import pytest

from conftest import ROOT

sys.path.insert(0, str(ROOT / "bench"))

import synthetic  # noqa: E402

from airgate.api.core import evaluate, load_pack, load_schedule  # noqa: E402
from airgate.evaluation import capacity, dilution as co2, dilution_rows, zone_air  # noqa: E402
from airgate.evaluation.trail import RowTrail, Step, StepTable, Trail, template  # noqa: E402
from airgate.procedures import coupled  # noqa: E402
from airgate.writers.json_report import to_dict  # noqa: E402

DEMO = ROOT / "fixtures" / "demo" / "fernhollow-civic-centre.yaml"


# --------------------------------------------------------------- the reference: step by step
# The multiple-zone analysis as it was before its trails became table rows (each zone's trail
# built with Trail.add / Trail.copy_from, in the same order).

def _coupled_steady(system, ctxs, result, trails, units_, air) -> bool:
    vpz = np.array([z.trail.value("Vpz") for z in result.zones])
    vot = system.outdoor_air
    if vot > vpz.sum() * (1 + 1e-12) or vot <= 0 or air.intake > vpz.sum() * (1 + 1e-12):
        return False
    if air.intake > vot:
        result.notes.append(zone_air.intake_note(system.id, vot, air.intake, units_))
    gen = np.array([co2.PPM * t.value("G") for t in trails])
    c_out = trails[0].value("C_out")
    volume = np.array([t.value("V") for t in trails])
    steady = coupled.coupled_steady_state(gen, volume, vpz, air.intake,
                                          outdoor_concentration=c_out,
                                          makeup_concentration=c_out, **air.kwargs())
    x = air.intake / vpz.sum()
    for t, z, c, za in zip(trails, result.zones, steady.zone, air.airs):
        t.copy_from(z.trail, "Vpz")
        t.add("x", x, "fraction", note="outdoor fraction of the supply at the scheduled intake"
              if air.intake == vot else "outdoor fraction of the supply at the intake the "
              "balance uses, ΣE_z (above the scheduled intake; assumed)")
        zone_air.coupled_steps(t, za, z.trail)
        t.add("C_ss", float(c), "concentration_ppm", source=co2.MB,
              note="steady state at design occupancy; zones coupled through the return air"
                   + ("; the air it exhausts or gives away leaves unreturned"
                      if za and za.any else ""))
        co2._excess(t)
        excess = t.value("C_excess")
        if excess > 0 and t.value("G") > 0:
            t.add("Q_oa", co2.PPM * t.value("G") / excess, "airflow",
                  formula="10⁶·{G} / " + co2._per_airflow("C_excess", units_), source=co2.MB,
                  note="CO2-equivalent outdoor airflow: the clean air that alone would hold the "
                       "zone at C_ss (coupled balance; the procedure's measure is Voz_delivered)")
        elif "Q_mu" in t:
            t.add("Q_oa", z.trail.value("Vpz") * x + t.value("Q_mu"), "airflow",
                  formula="{Vpz}·{x} + {Q_mu}", note="outdoor air in the zone's primary air and "
                  "its outdoor makeup (no CO2 is generated in the zone)")
        else:
            t.add("Q_oa", z.trail.value("Vpz") * x, "airflow", formula="{Vpz}·{x}",
                  note="outdoor air in the zone's primary air (no CO2 is generated in the zone)")
    return True


def _coupled_series(schedule, system, ctxs, result, trails, air) -> None:
    c_out = trails[0].value("C_out")
    day = co2.coupled_design_day(
        schedule, system, ctxs, np.array([co2.PPM * t.value("G") for t in trails]),
        np.zeros(len(ctxs)), np.array([t.value("V") for t in trails]),
        np.array([z.trail.value("Vpz") for z in result.zones]), c_out, air.intake,
        outdoor_concentration=c_out, makeup_concentration=c_out, **air.kwargs())
    if day is None:
        return
    times, conc, breaks, frac = day
    for j, (t, z, ctx) in enumerate(zip(trails, result.zones, ctxs)):
        name = ctx.zone.profile or "constant at design occupancy"
        occ = co2._sample_fractions(breaks, frac[:, j], times)
        z.series = co2.Series(times, conc[:, j], occ, name)
        co2.add_day_statistics(t, conc[:, j], times, "concentration_ppm", f", profile '{name}'")


def _eager_multiple_zone(system, ctxs, result, schedule, emitter, out, table) -> None:
    volumes = [co2.volume_of(c) for c in ctxs]
    if any(v is None for v in volumes) or any("Vpz" not in z.trail for z in result.zones):
        return
    air = zone_air.system_air(system, result, schedule)
    if air is None:
        return
    trails = [co2._start(c, z, schedule, v, table)
              for c, z, v in zip(ctxs, result.zones, volumes)]
    if not _coupled_steady(system, ctxs, result, trails, emitter.units, air):
        return
    _coupled_series(schedule, system, ctxs, result, trails, air)
    rates = co2.rate_values(trails, coupled=True)
    setpoints = co2.dcv_values(trails, result.zones)
    for ctx, z, t, rate, setpoint in zip(ctxs, result.zones, trails, rates, setpoints):
        co2._rate_steps(t, emitter.units, *rate)
        co2._dcv_steps(t, z, emitter.units, setpoint)
        if z.series is not None and ctx.zone.profile is not None:
            co2._short_term(t, ctx, z, z.series.occupancy[:-1], emitter)
        co2._limit(t, ctx, schedule, emitter)
        z.dilution = t
        out.append(z)
    capacity.multiple_zone_capacity(system, result)


# --------------------------------------------------------------------------- the schedules

def _varied(n: int, per_system: int, units: str) -> dict:
    """An invented portfolio touching every branch of the analysis: a declared CO2 limit that
    some zones exceed, zones with an activity or a stated CO2 generation, occupancy profiles on
    some systems, zone exhaust (made up outdoors, or drawn from the supply), and a stated
    volume."""
    doc = synthetic.vav_portfolio(n, per_system=per_system, heights=True, seed=7)
    doc["project"]["units"] = units
    doc["project"]["co2_limit"] = 900  # ppm (invented)
    doc["profiles"] = {"day": {"weekday": {"08:00-12:00": 1.0, "13:00-17:00": 0.4}},
                       "short": {"weekday": {"09:00-09:05": 1.0, "09:05-17:00": 0.2}}}
    activities = ("child-classroom", "adult-seated-quiet", "adult-light-activity")
    for s, system in enumerate(doc["systems"]):
        for k, zone in enumerate(system["zones"]):
            if k % 5 == 1:
                zone["activity"] = activities[(s + k) % 3]
            if k % 7 == 3:
                zone["co2_generation"] = 0.0052
            if s % 2 == 1:
                zone["profile"] = ("day", "short")[k % 2]
            if s % 3 == 2 and k in (2, 6):
                zone["exhaust"] = {"category": "kitchenettes", "airflow": "60 cfm",
                                   **({"makeup": "outdoor"} if k == 6 else {})}
            if k == 4:
                zone["volume"] = "20000 ft3"
    return doc


@pytest.fixture(scope="module", params=["demo", "district", "varied-IP", "varied-SI"])
def schedule_path(request, tmp_path_factory):
    if request.param == "demo":
        return DEMO
    folder = Path(tmp_path_factory.mktemp("rows"))
    if request.param == "district":
        doc = synthetic.vav_portfolio(96, per_system=12, heights=True)
    else:
        doc = _varied(60, 10, request.param.split("-")[1])
    return synthetic.write(doc, folder / f"{request.param}.json")


def _both(path, monkeypatch):
    loaded = load_schedule(path)
    pack = load_pack(loaded.model.rules)
    lazy = evaluate(loaded, pack)
    with monkeypatch.context() as m:
        m.setattr(dilution_rows, "multiple_zone", _eager_multiple_zone)
        eager = evaluate(load_schedule(path), pack)
    return lazy, eager


def _pairs(lazy, eager):
    assert [s.id for s in lazy.systems] == [s.id for s in eager.systems]
    for a, b in zip(lazy.systems, eager.systems):
        assert a.notes == b.notes
        assert [z.id for z in a.zones] == [z.id for z in b.zones]
        for za, zb in zip(a.zones, b.zones):
            assert (za.dilution is None) == (zb.dilution is None)
            if za.dilution is not None:
                yield za, zb


def _fields(step: Step) -> tuple:
    return (step.symbol, step.value, step.kind, step.formula, str(step.source), step.note,
            step.origin, type(step.source))


def test_lazy_trails_are_the_eager_ones(schedule_path, monkeypatch):
    # reference: the analysis as recorded step by step before (the code above, byte-identical
    # output being the aim)
    lazy, eager = _both(schedule_path, monkeypatch)
    pairs = list(_pairs(lazy, eager))
    rows = [za for za, _ in pairs if type(za.dilution) is RowTrail]
    assert rows, "no multiple-zone trail kept as a table row"
    # read from the table, before any step is made
    for za, zb in pairs:
        a, b = za.dilution, zb.dilution
        assert a.signature() == b.signature()
        assert a.values() == b.values()
        for symbol, _ in b.signature():
            assert symbol in a and a.value(symbol) == b.value(symbol)
        assert "no such step" not in a
    # the steps, made on first use: every field equal; also in a report sent to another
    # process (check --jobs, folders: pickled) before any step was made
    returned = pickle.loads(pickle.dumps(lazy))
    for za, zb in [*pairs, *_pairs(returned, eager)]:
        a, b = za.dilution, zb.dilution
        assert list(a.steps) == list(b.steps)
        for sa, sb in zip(a.steps.values(), b.steps.values()):
            assert _fields(sa) == _fields(sb)
        assert a.signature() == b.signature() and a.values() == b.values()
    # the findings (short-term averaging, declared limits), notes, series and every value
    assert [f.__dict__ if hasattr(f, "__dict__") else f for f in lazy.findings] == \
        [f.__dict__ if hasattr(f, "__dict__") else f for f in eager.findings]
    for za, zb in pairs:
        assert (za.series is None) == (zb.series is None)
        if za.series is not None:
            assert np.array_equal(za.series.ppm, zb.series.ppm)
            assert np.array_equal(za.series.occupancy, zb.series.occupancy)
            assert za.series.profile == zb.series.profile
    assert to_dict(lazy, series_step=60, trails=True) == to_dict(eager, series_step=60,
                                                                 trails=True)


def test_varied_portfolio_reaches_every_branch(tmp_path):
    # common practice: the comparison above only holds for the branches its schedules reach
    doc = _varied(60, 10, "IP")
    report = evaluate(load_schedule(synthetic.write(doc, tmp_path / "v.json")),
                      load_pack("ashrae-62.1-2019"))
    trails = [z.dilution for s in report.systems for z in s.zones if z.dilution is not None]
    symbols = {symbol for t in trails for symbol, _ in t.signature()}
    for symbol in ("N_ref", "N", "C_dcv", "Voz_min", "tau", "C_peak", "T", "Pz_avg", "C_limit",
                   "P_max", "Vd", "Q_mu"):
        assert symbol in symbols, symbol
    notes = {t["N"].note for t in trails}
    assert "CO2 generation per occupant stated in the schedule" in notes
    assert any(type(t) is Trail for t in trails)  # zones with exhaust hold their own steps
    assert any(f.rule == "concentration-limit" for f in report.findings)
    assert any(f.rule == "short-term-averaging" for f in report.findings)


def test_row_trail_adds_after_its_table_steps():
    # common practice (the Trail API): adding to a row makes its steps first, then records the
    # new one after them; reading a missing symbol raises KeyError as a plain trail does
    sources = [Trail(), Trail()]
    for i, t in enumerate(sources):
        t.add("Pz", 10.0 + i, "people", note="" if i else "stated")
    table = StepTable(sources)
    table.add("V", [100.0, 200.0], "volume", template(note="height × Az"))
    table.copy("Pz", [10.0, 11.0], "people")
    table.add("G", [0.04, 0.0], "gas_flow", template(formula="{N}·{Pz}"), where=[True, False])
    first, second = table.trails()
    assert first.signature() == (("V", "volume"), ("Pz", "people"), ("G", "gas_flow"))
    assert second.signature() == (("V", "volume"), ("Pz", "people"))
    assert second.values() == [200.0, 11.0]
    assert "G" not in second and "G" in first
    with pytest.raises(KeyError):
        second.value("G")
    second.add("P_max", 3.0, "people", note="added later")
    assert list(second.steps) == ["V", "Pz", "P_max"]
    assert second["Pz"] == Step("Pz", 11.0, "people", "", "", "system value", "system")
    assert first["Pz"].note == "stated"
    assert second.values() == [200.0, 11.0, 3.0]


@pytest.mark.parametrize("columns", [3, 64, 65, 80])
def test_rows_group_by_the_columns_they_hold(columns):
    # common practice (the Trail API): each row holds the columns its mask says, in column
    # order, whatever the number of columns (a row's columns are grouped as the bits of one
    # number up to 64 columns, as rows of a boolean array beyond)
    n = 7
    table = StepTable([Trail() for _ in range(n)])
    held = [[(row + col) % 3 != 0 or col == 0 for col in range(columns)] for row in range(n)]
    for col in range(columns):
        table.add(f"s{col}", [row * 1000.0 + col for row in range(n)], "volume",
                  template(note=f"column {col}"), where=[held[row][col] for row in range(n)])
    for row, t in enumerate(table.trails()):
        cols = [col for col in range(columns) if held[row][col]]
        assert t.signature() == tuple((f"s{col}", "volume") for col in cols)
        assert t.values() == [row * 1000.0 + col for col in cols]
        assert list(t.steps.values()) == [
            Step(f"s{col}", row * 1000.0 + col, "volume", note=f"column {col}") for col in cols]
