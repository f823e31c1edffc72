"""Dwelling-unit whole-house rate (ASHRAE Standard 62.2 form): procedure, packs and engine.

Sources (ANSI/ASHRAE Standard 62.2-2019, docs/references.md):
- Qtot = 0.03·Afloor + 7.5·(Nbr + 1) cfm, Section 4.1.1: published (Uniform Mechanical Code,
  Appendix E, Equation E 605.1.3.1, public copy named in docs/references.md); the standard's
  own equation number (4-1 here) is from memory;
- table cells: published (< 500 ft², 1–5 bedrooms: 30, 38, 45, 53, 60 cfm; 4501–5000 ft²,
  5 bedrooms: 195 cfm); the rule "formula at the top of each area bin, halves rounded up" is
  derived from them;
- SI form 0.15·A + 3.5·(Nbr + 1) L/s: from memory.
"""

from __future__ import annotations

import pytest

from airgate.procedures import dwelling
from airgate.readers.rulepack import load_pack

from conftest import CFM, FT2, schedule


def test_qtot_formula_ip():
    # ANSI/ASHRAE 62.2 (2013 and later) Equation 4-1 as quoted (published): 1500 ft², 3 bedrooms
    # → 0.03 × 1500 + 7.5 × 4 = 75 cfm.
    ip = dict(per_area=dwelling.IP_PER_AREA, per_person=dwelling.IP_PER_PERSON)
    assert dwelling.whole_dwelling_airflow(1500, 3, **ip) == pytest.approx(75.0)
    assert dwelling.default_occupants(3) == 4


@pytest.mark.parametrize(("bedrooms", "printed"), [(1, 30), (2, 38), (3, 45), (4, 53), (5, 60)])
def test_table_row_below_500_ft2(bedrooms, printed):
    # ANSI/ASHRAE 62.2 table of Qtot (published): floor area < 500 ft², 1–5 bedrooms.
    assert dwelling.table_airflow(450, bedrooms) == printed


def test_table_cell_4501_to_5000_ft2_five_bedrooms():
    # ANSI/ASHRAE 62.2 table of Qtot (published): 4501–5000 ft², 5 bedrooms → 195 cfm.
    assert dwelling.table_airflow(4800, 5) == 195
    assert dwelling.table_airflow(5000, 5) == 195


def test_table_is_the_formula_at_the_top_of_the_bin_halves_up():
    # derived from the published cells: 2 bedrooms at 500 ft² is 37.5 → 38 (half up), not 37.
    assert dwelling.whole_dwelling_airflow(500, 2, dwelling.IP_PER_AREA,
                                           dwelling.IP_PER_PERSON) == pytest.approx(37.5)
    assert dwelling.table_airflow(1, 2) == 38
    assert dwelling.table_airflow(501, 2) == 53  # 0.03 × 1000 + 7.5 × 3 = 52.5 → 53
    with pytest.raises(ValueError):
        dwelling.table_airflow(0, 2)


def test_si_coefficients():
    # SI form 0.15·A + 3.5·(Nbr + 1) L/s (from memory): 140 m², 3 bedrooms → 21 + 14 = 35 L/s.
    q = dwelling.whole_dwelling_airflow(140, 3, dwelling.SI_PER_AREA, dwelling.SI_PER_PERSON)
    assert q == pytest.approx(35.0)
    assert dwelling.whole_dwelling_airflow(140, 3) == q  # the SI coefficients are the default


def test_packs_carry_the_equation_coefficients():
    # The packs' single row holds Equation 4-1's coefficients: 7.5 cfm per person and
    # 0.03 cfm/ft² (ANSI/ASHRAE 62.2-2019 Eq. 4-1, published); 3.5 L/s and 0.15 L/s·m² in SI
    # (from memory).
    ip = load_pack("ashrae-62.2-2019").categories["dwelling-unit"]
    assert ip.printed["Rp"] == 7.5 and ip.printed["Ra"] == 0.03
    assert ip.default_occupants == "bedrooms-plus-one" and ip.provenance == "published"
    si = load_pack("ashrae-62.2-2019-si").categories["dwelling-unit"]
    assert si.printed["Rp"] == 3.5 and si.printed["Ra"] == 0.15
    assert si.provenance == "from memory"


def _unit(area, bedrooms=None, occupants=None, intake="100 cfm"):
    zone = {"id": "1", "space": "dwelling-unit", "area": area}
    if bedrooms is not None:
        zone["bedrooms"] = bedrooms
    if occupants is not None:
        zone["occupants"] = occupants
    return [{"id": "ERV-1", "kind": "single-zone", "outdoor_air": intake, "zones": [zone]}]


@pytest.mark.parametrize(("area", "bedrooms"), [(450, 1), (1500, 3), (4800, 5), (2999, 0)])
def test_engine_evaluates_equation_4_1(evaluate, area, bedrooms):
    # Qtot = 0.03·Afloor + 7.5·(Nbr + 1) cfm (ANSI/ASHRAE 62.2-2019 Eq. 4-1, published), by hand;
    # Pz = Nbr + 1 in the trail, with Nbr taken as not less than one (Section 4.1.1: a studio is
    # rated for two occupants; published in the Uniform Mechanical Code, Appendix E).
    report = evaluate(schedule(_unit(f"{area} ft2", bedrooms), rules="ashrae-62.2-2019"))
    zone = report.systems[0].zones[0]
    rated = max(bedrooms, 1)
    assert zone.trail.value("Pz") == rated + 1
    assert zone.trail["Pz"].formula == ("{Nbr} + 1" if bedrooms else "max({Nbr}, 1) + 1")
    assert zone.trail.value("Voz") / CFM == pytest.approx(0.03 * area + 7.5 * (rated + 1))


def test_table_cells_through_the_engine(evaluate):
    # Published table cells, evaluated at the top of their bins and rounded half up:
    # < 500 ft² with 3 bedrooms → 45 cfm; 4501–5000 ft² with 5 bedrooms → 195 cfm.
    for area, bedrooms, printed in [(500, 3, 45), (5000, 5, 195)]:
        report = evaluate(schedule(_unit(f"{area} ft2", bedrooms), rules="ashrae-62.2-2019"))
        voz = report.systems[0].zones[0].trail.value("Voz") / CFM
        assert int(voz + 0.5) == printed


def test_stated_occupants_override_bedrooms_plus_one(evaluate):
    # Equation 4-1 with a known higher occupancy (6 people): 0.03 × 1500 + 7.5 × 6 = 90 cfm.
    report = evaluate(schedule(_unit("1500 ft2", 3, occupants=6), rules="ashrae-62.2-2019"))
    assert report.systems[0].zones[0].trail.value("Voz") / CFM == pytest.approx(90.0)


def test_si_pack_on_an_si_schedule(evaluate):
    # SI form (from memory): 140 m², 3 bedrooms → 35 L/s; a 34 L/s fan fails, 35 L/s passes.
    for intake, verdict in (("35 L/s", "pass"), ("34 L/s", "fail")):
        data = schedule(_unit("140 m2", 3, intake=intake), units="SI", rules="ashrae-62.2-2019-si")
        report = evaluate(data)
        assert report.systems[0].zones[0].trail.value("Voz") == pytest.approx(35.0)
        assert report.verdict == verdict


def test_area_in_square_metres_on_the_ip_pack(evaluate):
    # Units at the edges: 139.35 m² is 1500 ft² (1 ft = 0.3048 m, common practice).
    report = evaluate(schedule(_unit(f"{1500 * FT2} m2", 3), rules="ashrae-62.2-2019"))
    assert report.systems[0].zones[0].trail.value("Voz") / CFM == pytest.approx(75.0)


@pytest.mark.parametrize("bad", [-1.0, float("nan")])
def test_invalid_input_is_a_value_error_naming_the_parameter(bad):
    # One policy for the procedures (module docstring): ValueError naming the parameter.
    with pytest.raises(ValueError, match="area"):
        dwelling.whole_dwelling_airflow(bad, 2)
    with pytest.raises(ValueError, match="bedrooms"):
        dwelling.default_occupants(bad)
    with pytest.raises(ValueError, match="area_ft2"):
        dwelling.table_airflow(bad, 2)
