"""System ventilation efficiency procedures (reference-values.md C)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from airgate.procedures import efficiency as eff

# Ev against the largest Zp, as published in a state mechanical code table (reference-values.md C):
# <=0.15 -> 1.0, <=0.25 -> 0.9, <=0.35 -> 0.8, <=0.45 -> 0.7, <=0.55 -> 0.6, interpolation permitted.
TABLE = [(0.15, 1.0), (0.25, 0.9), (0.35, 0.8), (0.45, 0.7), (0.55, 0.6)]


@pytest.mark.parametrize("zp, ev", TABLE)
def test_ev_table_rows_state_mechanical_code(zp, ev):
    assert eff.system_ventilation_efficiency_table(zp, TABLE) == pytest.approx(ev)


def test_ev_table_interpolates_and_steps():
    # Linear interpolation is permitted by the table's note (reference-values.md C).
    assert eff.system_ventilation_efficiency_table(0.20, TABLE) == pytest.approx(0.95)
    assert eff.system_ventilation_efficiency_table(0.10, TABLE) == pytest.approx(1.0)
    # Without interpolation the value of the row whose range holds Zp applies.
    assert eff.system_ventilation_efficiency_table(0.20, TABLE, interpolate=False) == 0.9
    assert np.isnan(eff.system_ventilation_efficiency_table(0.6, TABLE))


@pytest.mark.parametrize("d, ev", [(0.0, 0.22), (0.5, 0.66), (0.59, 0.7392), (0.60, 0.75),
                                   (0.9, 0.75), (1.0, 0.75)])
def test_simplified_ev_62_1_2019(d, ev):
    # Ev = 0.88·D + 0.22 for D < 0.60, 0.75 otherwise (62.1-2019 and later; from memory).
    assert eff.system_ventilation_efficiency_simplified(d) == pytest.approx(ev)


def test_vou_and_diversity():
    # Vou = D·Σ(Rp·Pz) + Σ(Ra·Az), D = Ps/ΣPz (reference-values.md C, from memory).
    d = eff.occupant_diversity(30.0, 40.0)
    assert d == 0.75
    assert eff.uncorrected_outdoor_air_intake(d, 200.0, 258.0) == pytest.approx(408.0)


fractions = st.floats(min_value=0.0, max_value=1.0, allow_nan=False)


@given(xs=fractions, zpz=fractions, ez=st.floats(0.5, 1.2), er=fractions)
def test_secondary_form_reduces_to_single_path_when_ep_is_one(xs, zpz, ez, er):
    # Check stated in reference-values.md C: with Ep = 1 the general form is 1 + Xs − Zpz.
    general = eff.zone_ventilation_efficiency(xs, zpz, ep=1.0, er=er, ez=ez)
    assert general == pytest.approx(1 + xs - zpz, abs=1e-12)


@given(voz=st.floats(1, 5000), xs=st.floats(0.05, 1.0), target=st.floats(0.3, 1.0),
       ep=st.floats(0.2, 1.0), er=fractions, ez=st.floats(0.5, 1.2))
def test_minimum_primary_airflow_reaches_target_exactly(voz, xs, target, ep, er, ez):
    # Derived: Vpz_min solves Evz(Voz/Vpz) = target (Appendix A form rearranged; domain.md §2).
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
    # domain.md §2: Vpz ≥ Voz / (1 + Xs − Ev_target).
    assert eff.minimum_primary_airflow(186.0, 0.229, 0.719) == pytest.approx(186.0 / 0.51)


def test_array_and_float_agree():
    xs = np.array([0.2, 0.3])
    zpz = np.array([0.5, 0.1])
    out = eff.zone_ventilation_efficiency_single_path(xs, zpz)
    np.testing.assert_allclose(out, [1 + 0.2 - 0.5, 1 + 0.3 - 0.1], rtol=1e-15)  # 1 + Xs − Zpz
    assert eff.system_ventilation_efficiency_detailed(out) == pytest.approx(0.7)
    np.testing.assert_allclose(eff.system_ventilation_efficiency_simplified(np.array([0.5, 0.7])),
                               [0.66, 0.75])
