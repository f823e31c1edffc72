"""System ventilation efficiency procedures.

Sources: ANSI/ASHRAE Standard 62.1-2019 Section 6.2.5 and Normative Appendix A; the Ev table
of ANSI/ASHRAE 62.1-2010 Table 6-3 as reproduced in the 2020 Mechanical Code of New York State,
Table 403.3.1.1.2.3.2 (docs/references.md)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from airgate.procedures import efficiency as eff

# Ev against the largest Zp (ANSI/ASHRAE 62.1-2010 Table 6-3; 2020 Mechanical Code of New York
# State Table 403.3.1.1.2.3.2):
# <=0.15 -> 1.0, <=0.25 -> 0.9, <=0.35 -> 0.8, <=0.45 -> 0.7, <=0.55 -> 0.6, interpolation permitted.
TABLE = [(0.15, 1.0), (0.25, 0.9), (0.35, 0.8), (0.45, 0.7), (0.55, 0.6)]


@pytest.mark.parametrize("zp, ev", TABLE)
def test_ev_table_rows_state_mechanical_code(zp, ev):
    assert eff.system_ventilation_efficiency_table(zp, TABLE) == pytest.approx(ev)


def test_ev_table_interpolates_and_steps():
    # Linear interpolation is permitted by the table's note (ANSI/ASHRAE 62.1-2010 Table 6-3).
    assert eff.system_ventilation_efficiency_table(0.20, TABLE) == pytest.approx(0.95)
    assert eff.system_ventilation_efficiency_table(0.10, TABLE) == pytest.approx(1.0)
    # Without interpolation the value of the row whose range holds Zp applies.
    assert eff.system_ventilation_efficiency_table(0.20, TABLE, interpolate=False) == 0.9
    assert np.isnan(eff.system_ventilation_efficiency_table(0.6, TABLE))


@pytest.mark.parametrize("d, ev", [(0.0, 0.22), (0.5, 0.66), (0.59, 0.7392), (0.60, 0.75),
                                   (0.9, 0.75), (1.0, 0.75)])
def test_simplified_ev_62_1_2019(d, ev):
    # Ev = 0.88·D + 0.22 for D < 0.60, 0.75 otherwise (ANSI/ASHRAE 62.1-2019 Section 6.2.5,
    # simplified procedure; from memory).
    assert eff.system_ventilation_efficiency_simplified(d) == pytest.approx(ev)


def test_vou_and_diversity():
    # Vou = D·Σ(Rp·Pz) + Σ(Ra·Az), D = Ps/ΣPz (ANSI/ASHRAE 62.1-2019 Section 6.2.5; from
    # memory).
    d = eff.occupant_diversity(30.0, 40.0)
    assert d == 0.75
    assert eff.uncorrected_outdoor_air_intake(d, 200.0, 258.0) == pytest.approx(408.0)


fractions = st.floats(min_value=0.0, max_value=1.0, allow_nan=False)


@given(xs=fractions, zpz=fractions, ez=st.floats(0.5, 1.2), er=fractions)
def test_secondary_form_reduces_to_single_path_when_ep_is_one(xs, zpz, ez, er):
    # ANSI/ASHRAE 62.1-2019 Normative Appendix A: with Ep = 1 (a single supply path) the
    # secondary-recirculation form is the single-path 1 + Xs − Zpz.
    general = eff.zone_ventilation_efficiency(xs, zpz, ep=1.0, er=er, ez=ez)
    assert general == pytest.approx(1 + xs - zpz, abs=1e-12)


@given(voz=st.floats(1, 5000), xs=st.floats(0.05, 1.0), target=st.floats(0.3, 1.0),
       ep=st.floats(0.2, 1.0), er=fractions, ez=st.floats(0.5, 1.2))
def test_minimum_primary_airflow_reaches_target_exactly(voz, xs, target, ep, er, ez):
    # Derived: Vpz_min solves Evz(Voz/Vpz) = target (ANSI/ASHRAE 62.1-2019 Normative Appendix A
    # form rearranged by hand).
    vpz = eff.minimum_primary_airflow(voz, xs, target, ep, er, ez)
    # the general form written out here (62.1-2019 Normative Appendix A, from memory):
    # Fa = Ep + (1 − Ep)·Er, Fb = Ep, Fc = 1 − (1 − Ez)(1 − Er)(1 − Ep),
    # Evz = (Fa + Xs·Fb − Zpz·Ep·Fc)/Fa
    fa, fb, fc = ep + (1 - ep) * er, ep, 1 - (1 - ez) * (1 - er) * (1 - ep)
    if np.isinf(vpz):
        assert fa * (1 - target) + xs * fb <= 0
        return
    evz = (fa + xs * fb - voz / vpz * ep * fc) / fa
    assert evz == pytest.approx(target, rel=1e-9, abs=1e-12)


def test_minimum_primary_airflow_single_path_formula():
    # ANSI/ASHRAE 62.1-2019 Normative Appendix A, Evz = 1 + Xs − Voz/Vpz rearranged by hand:
    # Vpz ≥ Voz / (1 + Xs − Ev_target).
    assert eff.minimum_primary_airflow(186.0, 0.229, 0.719) == pytest.approx(186.0 / 0.51)


def test_array_and_float_agree():
    # API contract (module docstring): arrays broadcast and give what floats give.
    xs = np.array([0.2, 0.3])
    zpz = np.array([0.5, 0.1])
    out = eff.zone_ventilation_efficiency_single_path(xs, zpz)
    np.testing.assert_allclose(out, [1 + 0.2 - 0.5, 1 + 0.3 - 0.1], rtol=1e-15)  # 1 + Xs − Zpz
    assert eff.system_ventilation_efficiency_detailed(out) == pytest.approx(0.7)
    np.testing.assert_allclose(eff.system_ventilation_efficiency_simplified(np.array([0.5, 0.7])),
                               [0.66, 0.75])


def test_zone_axis_of_the_reductions():
    # API contract: Ev = min Evz (ANSI/ASHRAE 62.1-2019 Normative Appendix A) and the sums of
    # Vou (Section 6.2.5) are taken over the zone axis the caller names.
    evz = np.array([[0.9, 0.7, 1.0], [0.8, 0.95, 0.85]])  # two design conditions × three zones
    np.testing.assert_array_equal(eff.system_ventilation_efficiency_detailed(evz), [0.7, 0.8])
    np.testing.assert_array_equal(eff.system_ventilation_efficiency_detailed(evz, axis=0),
                                  [0.8, 0.7, 0.85])
    vou = eff.uncorrected_outdoor_air_intake([0.5, 1.0], [[10.0, 30.0], [20.0, 20.0]],
                                             [[1.0, 2.0], [3.0, 4.0]], axis=1)
    np.testing.assert_allclose(vou, [0.5 * 40 + 3, 1.0 * 40 + 7])


@pytest.mark.parametrize(("call", "name"), [
    (lambda v: eff.occupant_diversity(10.0, v), "sum_pz"),
    (lambda v: eff.average_outdoor_air_fraction(100.0, v), "vps"),
    (lambda v: eff.primary_outdoor_air_fraction(50.0, v), "vpz"),
    (lambda v: eff.outdoor_air_intake(100.0, v), "ev"),
    (lambda v: eff.zone_ventilation_efficiency(0.2, 0.3, ez=v), "ez"),
])
@pytest.mark.parametrize("bad", [0.0, np.array([1.0, 0.0]), -1.0, np.nan])
def test_invalid_input_is_a_value_error_naming_the_parameter(call, name, bad):
    # One policy for floats and arrays alike (module docstring): no ZeroDivisionError, no inf
    # with a warning, but ValueError naming the parameter (common practice for an API).
    with pytest.raises(ValueError, match=name):
        call(bad)


def test_float_in_float_out():
    # API contract (module docstring): a float in gives a Python float out.
    assert type(eff.outdoor_air_intake(250.0, 0.8)) is float
    assert type(eff.system_ventilation_efficiency_table(0.2, TABLE)) is float
    assert type(eff.system_ventilation_efficiency_detailed([0.9, 0.8])) is float
