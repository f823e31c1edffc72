"""The occupant CO2 generation table against Table 4 of Persily & de Jonge (2017).

Source: Persily, A. and de Jonge, L. (2017), Carbon dioxide generation rates for building
occupants, Indoor Air 27(5), Table 4, CO2 generation in L/s per person at the table's reference
conditions, 0 °C and 101 kPa (docs/references.md). Published cells used here, age 30 to <40:
male 0.0037 / 0.0046 / 0.0053 and female 0.0029 / 0.0035 / 0.0041 L/s at 1.0 / 1.2 / 1.4 met;
age 6 to <11 at 1.2 met: male 0.0030, female 0.0027 L/s (as in a public transcription of the
table). The conversion to a volume at 20 °C is checked with pint (an independent unit library):
at constant pressure an ideal gas's volume is proportional to its absolute temperature.
"""

from __future__ import annotations

import pint
import pytest

from airgate.readers.datatables import data_table

from conftest import schedule

TABLE_4 = {  # (sex, met) → L/s per person, age 30 to <40, 0 °C and 101 kPa (published)
    ("male", "1.0"): 0.0037, ("male", "1.2"): 0.0046, ("male", "1.4"): 0.0053,
    ("female", "1.0"): 0.0029, ("female", "1.2"): 0.0035, ("female", "1.4"): 0.0041,
}


@pytest.fixture(scope="module")
def table():
    return data_table("occupant-co2-generation")


@pytest.mark.parametrize(("sex", "met"), sorted(TABLE_4))
def test_published_rows_equal_table_4(table, sex, met):
    row = table.rows[f"adult-{sex}-{met}-met"]
    assert row.value == TABLE_4[sex, met]
    assert row.provenance == "published"


@pytest.mark.parametrize(("row_id", "met"), [("adult-seated-quiet", "1.0"),
                                             ("adult-office", "1.2"),
                                             ("adult-light-activity", "1.4")])
def test_adult_activity_rows_are_the_mean_of_men_and_women(table, row_id, met):
    # Derived: the mean of the two published Table 4 cells at that activity level.
    expected = (TABLE_4["male", met] + TABLE_4["female", met]) / 2
    assert table.rows[row_id].value == pytest.approx(expected, abs=5e-7)
    assert table.rows[row_id].provenance == "derived"


def test_child_classroom_row(table):
    # Derived from Table 4, age 6 to <11 at 1.2 met: (0.0030 + 0.0027) / 2.
    assert table.rows["child-classroom"].value == pytest.approx(0.00285, abs=5e-7)


def test_no_row_is_the_older_figure_from_another_document(table):
    # 0.0052 L/s at 1.2 met is not a cell of Table 4 (its male 30 to <40 cell is 0.0046).
    assert all(abs(r.value - 0.0052) > 1e-6 for r in table.rows.values())


def test_table_states_its_temperature_basis(table):
    assert table.reference_temperature == 0
    assert "0 °C" in table.citation


def test_engine_uses_the_rate_as_a_volume_at_20_c(evaluate):
    # Table 4's volume at 0 °C scaled to 20 °C: V20 = V0 · T20 / T0 (pint, absolute temperatures).
    ureg = pint.UnitRegistry()
    ratio = (ureg.Quantity(20, ureg.degC).to(ureg.kelvin)
             / ureg.Quantity(0, ureg.degC).to(ureg.kelvin)).magnitude
    zone = {"id": "1", "space": "office-space", "area": "1000 ft2", "occupants": 10,
            "height": "9 ft", "activity": "adult-male-1.2-met"}
    report = evaluate(schedule([{"id": "S", "kind": "single-zone", "outdoor_air": "200 cfm",
                                 "zones": [zone]}]))
    t = report.systems[0].zones[0].dilution
    assert t.value("N_ref") == TABLE_4["male", "1.2"]
    assert t.value("N") == pytest.approx(TABLE_4["male", "1.2"] * ratio, rel=1e-12)
    assert "Persily" in t["N_ref"].source and "0 °C" in t["N_ref"].source
