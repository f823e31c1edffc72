"""The procedures read like a reference library: every public function documents its
parameters with units, its result, its references and an example, and the examples run.

Checks of the documentation contract of DEVELOPERS.md ("docstrings cite equation and source
with units in brackets"; numpydoc sections); the examples' expected values are the published
examples or hand calculations the docstrings name, not output of the code under test.
"""

from __future__ import annotations

import doctest
import importlib
import inspect
import pkgutil
import re
from pathlib import Path

import numpy as np
import pytest

import airgate.procedures as procedures

MODULES = sorted(m.name for m in pkgutil.iter_modules(procedures.__path__))
ROOT = Path(__file__).resolve().parents[1]


def _public_functions(module):
    for name in getattr(module, "__all__", []):
        obj = getattr(module, name)
        if inspect.isfunction(obj) and obj.__module__ == module.__name__:
            yield name, obj


@pytest.mark.parametrize("name", MODULES)
def test_examples_run(name):
    module = importlib.import_module(f"airgate.procedures.{name}")
    result = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE, verbose=False)
    assert result.failed == 0


@pytest.mark.parametrize("name", MODULES)
def test_every_public_function_has_the_numpydoc_sections(name):
    module = importlib.import_module(f"airgate.procedures.{name}")
    for fname, fn in _public_functions(module):
        doc = inspect.getdoc(fn) or ""
        for section in ("Parameters", "Returns", "References", "Examples"):
            assert re.search(rf"^{section}\n-+$", doc, re.M), f"{name}.{fname}: no {section}"
        params = doc.split("Parameters\n", 1)[1].split("Returns\n", 1)[0]
        assert "[" in params, f"{name}.{fname}: parameters without units in brackets"
        assert ">>>" in doc.split("Examples\n", 1)[1], f"{name}.{fname}: example without a doctest"


def test_procedures_cite_only_published_documents():
    # docs/references.md: no citation of notes kept outside the repository.
    pattern = re.compile(r"domain\.md|reference-values|\.\./shared|style\.md")
    files = sorted((ROOT / "engine" / "airgate" / "procedures").glob("*.py"))
    hits = [f"{p.name}:{n}" for p in files
            for n, line in enumerate(p.read_text(encoding="utf-8").splitlines(), 1)
            if pattern.search(line)]
    assert not hits, hits


def test_every_module_is_under_600_lines():
    # DEVELOPERS.md: one module per topic, none in engine/ over 600 lines.
    for p in (ROOT / "engine" / "airgate").rglob("*.py"):
        assert len(p.read_text(encoding="utf-8").splitlines()) <= 600, p.name


def _valid_calls():
    """One valid call of every public procedure (outside procedures/numeric.py, whose helpers
    are the checks themselves), as keyword arguments."""
    from airgate.procedures import (categories, coupled, dilution, dwelling, efficiency, losses,
                                    multizone, network, piecewise, zone_rates)

    sol = piecewise.piecewise_solution([0.0, 1.0, 2.0], [[150.0], [0.0]], 90.0, 150.0, 0.0)
    air = dict(volume=90.0, outdoor_airflow=50.0, recirc_airflow=200.0, recirc_efficiency=0.5,
               cadr=40.0, k_deposition=0.2, k_inactivation=0.1)
    pw = dict(times_breaks=[0.0, 1.0, 2.0], generation_per_piece=[[150.0], [0.0]], volume=90.0,
              outdoor_airflow=150.0, c0=0.0, outdoor_concentration=1.0,
              outdoor_filter_efficiency=0.2, recirc_airflow=10.0, recirc_efficiency=0.5,
              cadr=5.0, k_deposition=0.1, k_inactivation=0.1)
    cp = dict(volume=[90.0, 60.0], primary_airflow=[250.0, 150.0], outdoor_intake=125.0,
              outdoor_concentration=1.0, outdoor_filter_efficiency=0.2,
              recirc_filter_efficiency=0.3, zone_exhaust=[0.0, 20.0], cadr=[5.0, 0.0],
              k_deposition=0.1, k_inactivation=0.1)
    return [
        (categories.total_ventilation_rate, dict(occupants=15, per_person=7.0, area=40.0,
                                                 per_area=0.7, effectiveness=0.9)),
        (coupled.coupled_steady_state, dict(generation=[100.0, 50.0], **cp)),
        (coupled.coupled_piecewise_transient, dict(
            times_breaks=[0.0, 1.0], generation_per_piece=[100.0, 50.0], c0=[1.0, 2.0],
            output_times=[0.5], **cp)),
        (coupled.coupled_required_intake, dict(limit=[5.0, 4.0], generation=[100.0, 50.0], ez=0.8,
                                               **{k: v for k, v in cp.items()
                                                  if k != "outdoor_intake"})),
        (coupled.supply_coupling, {k: cp[k] for k in (
            "primary_airflow", "outdoor_intake", "outdoor_concentration",
            "outdoor_filter_efficiency", "recirc_filter_efficiency", "zone_exhaust")}),
        (dilution.breathing_zone_concentration, dict(c_supply=400.0, c_exhaust=900.0, ez=0.8)),
        (dilution.co2_excess_ppm, dict(generation_Ls=0.005, airflow_Ls=7.5)),
        (dilution.dcv_setpoint_ppm, dict(outdoor_ppm=420.0, co2_generation_per_person_Ls=0.005,
                                         outdoor_air_per_person_Ls=7.5)),
        (dilution.required_outdoor_airflow, dict(
            limit=2.0, generation=100.0, outdoor_concentration=0.5, outdoor_filter_efficiency=0.3,
            supply_airflow=150.0, ez=0.8, **{k: v for k, v in air.items()
                                              if k not in ("outdoor_airflow", "recirc_airflow")})),
        (dilution.steady_state_concentration, dict(generation=100.0, outdoor_concentration=1.0,
                                                   outdoor_filter_efficiency=0.2, **air)),
        (dilution.time_to_fraction_of_steady_state, dict(lam=2.0, fraction=0.95)),
        (dilution.time_to_fraction_removed, dict(lam=2.0, fraction=0.99)),
        (dilution.transient_concentration, dict(c0=0.0, c_ss=1000.0, lam=2.0, t=0.5)),
        (dwelling.default_occupants, dict(bedrooms=3)),
        (dwelling.table_airflow, dict(area_ft2=450.0, bedrooms=2)),
        (dwelling.whole_dwelling_airflow, dict(area=140.0, bedrooms=3, per_area=0.15,
                                               per_person=3.5)),
        (efficiency.average_outdoor_air_fraction, dict(vou=250.0, vps=1000.0)),
        (efficiency.minimum_primary_airflow, dict(voz=120.0, xs=0.25, ev_target=0.85, ep=0.9,
                                                  er=0.5, ez=0.8)),
        (efficiency.occupant_diversity, dict(ps=60.0, sum_pz=100.0)),
        (efficiency.outdoor_air_intake, dict(vou=250.0, ev=0.8)),
        (efficiency.primary_outdoor_air_fraction, dict(voz=120.0, vpz=300.0)),
        (efficiency.secondary_recirculation_factors, dict(ep=0.9, er=0.5, ez=0.8)),
        (efficiency.system_ventilation_efficiency_detailed, dict(evz=[0.9, 0.8])),
        (efficiency.system_ventilation_efficiency_simplified, dict(
            d=0.5, breakpoint=0.6, slope=0.88, intercept=0.22, above_breakpoint=0.75)),
        (efficiency.system_ventilation_efficiency_table, dict(
            max_zp=0.3, rows=[(0.15, 1.0), (0.55, 0.6)])),
        (efficiency.uncorrected_outdoor_air_intake, dict(d=0.8, rp_pz=200.0, ra_az=50.0)),
        (efficiency.zone_ventilation_efficiency, dict(xs=0.25, zpz=0.4, ep=0.9, er=0.5,
                                                      ez=0.8)),
        (efficiency.zone_ventilation_efficiency_single_path, dict(xs=0.25, zpz=0.4)),
        (losses.air_change_rate, dict(airflow=50.0, volume=90.0)),
        (losses.equivalent_clean_airflow, air),
        (losses.inactivation_rate_from_half_life, dict(half_life=1.5)),
        (losses.loss_breakdown, air),
        (losses.loss_rate, air),
        (multizone.delivered_by_system_ev, dict(voz=[100.0, 50.0], vot_design=900.0,
                                                vot=1000.0)),
        (multizone.delivered_by_zone_ev, dict(vpz=[300.0, 200.0], xs=0.25, vou=250.0,
                                              vot_design=312.5, ep=[1.0, 0.6], fa=[1.0, 0.8],
                                              fb=[1.0, 0.6], fc=[1.0, 0.96],
                                              secondary=np.array([False, True]))),
        (multizone.multiple_zone_figures, dict(
            rp=[2.5, 2.5], pz=[10.0, 5.0], ra=[0.3, 0.3], az=[100.0, 50.0], ez=[1.0, 0.8],
            vpz=[200.0, 100.0], starts=[0], ps=12.0, vps=400.0, ep=[1.0, 0.6], er=[0.0, 0.5],
            method="table", breakpoint=0.6, slope=0.88, intercept=0.22, above_breakpoint=0.75,
            rows=[(0.15, 1.0), (0.55, 0.6)], above_table=0.5)),
        (network.network_march, dict(volume=[90.0, 60.0], inflow=[[0.0, 0.0], [30.0, 0.0]],
                                     removal=[80.0, 50.0], step=0.25,
                                     generation_per_step=[[100.0, 0.0]], c0=[0.0, 0.0])),
        (network.network_propagator, dict(volume=[90.0, 60.0], inflow=[[0.0, 0.0], [30.0, 0.0]],
                                          removal=[80.0, 50.0], step=0.25)),
        (network.network_steady_state, dict(generation=[100.0, 0.0], volume=[90.0, 60.0],
                                            inflow=[[0.0, 0.0], [30.0, 0.0]],
                                            removal=[80.0, 50.0])),
        (piecewise.evaluate_piecewise, dict(solution=sol, times=[0.5])),
        (piecewise.peak_concentration, dict(solution=sol, t_start=0.5, t_end=1.5)),
        (piecewise.piecewise_solution, pw),
        (piecewise.piecewise_transient, dict(output_times=[0.5], **pw)),
        (piecewise.time_weighted_average, dict(solution=sol, t_start=0.5, t_end=1.5)),
        (zone_rates.breathing_zone_outdoor_airflow, dict(rp=2.5, pz=10, ra=0.3, az=50.0)),
        (zone_rates.default_population, dict(density=0.5, area=50.0)),
        (zone_rates.zone_outdoor_airflow, dict(vbz=100.0, ez=0.8)),
    ]


def test_the_valid_calls_cover_every_public_procedure():
    covered = {fn for fn, _ in _valid_calls()}
    for name in MODULES:
        if name == "numeric":
            continue
        module = importlib.import_module(f"airgate.procedures.{name}")
        for fname, fn in _public_functions(module):
            assert fn in covered, f"{name}.{fname} has no valid call in _valid_calls"


@pytest.mark.parametrize(("fn", "kwargs"), _valid_calls(),
                         ids=lambda v: getattr(v, "__name__", ""))
def test_a_nan_in_any_numeric_argument_is_a_value_error_naming_it(fn, kwargs):
    # One policy for invalid input (DEVELOPERS.md "Rules of the road"): every procedure
    # refuses a NaN in any numeric argument, scalar or inside an array, with a ValueError whose
    # message names the argument.
    fn(**kwargs)  # the valid call works
    for name, value in kwargs.items():
        if isinstance(value, bool) or name in ("rows", "solution", "axis"):
            continue
        shape = np.shape(value)
        bad = np.full(shape, np.nan) if shape else float("nan")
        with pytest.raises(ValueError, match=name):
            fn(**{**kwargs, name: bad})
