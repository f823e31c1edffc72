"""People are a unit of their own: a per-person value never passes for a total, nor a share for a
count of people.

The independent reference is a stock pint registry in which ``person`` is given a base dimension
(pint as an outside computation); unit factors are exact (1 ft = 0.3048 m, NIST SP 811; common
practice). Located input errors for a whole schedule are in ``fixtures/bad/`` (test_bad_input.py):
``occupants-percent.yaml``, ``co2-generation-not-per-person.yaml`` and the pack
``pack-requirement-rate-without-people.yaml``.
"""

from __future__ import annotations

import pint
import pytest

from airgate import units
from airgate.models import formula as fx


@pytest.fixture(scope="module")
def ureg():
    reg = pint.UnitRegistry()
    reg.define("person = [people] = people")
    return reg


@pytest.mark.parametrize(("raw", "kind", "unit"), [
    ("5 cfm/person", "airflow_per_person", "ft**3/min/person"),
    ("2.5 L/s/person", "airflow_per_person", "L/s/person"),
    ("9 m3/h/person", "airflow_per_person", "m**3/h/person"),
    ("25 people", "people", "person"),
    ("0.005 people/ft2", "density", "person/ft**2"),
    ("18.72 L/h/person", "gas_generation", "L/h/person"),
])
def test_per_person_quantities_convert_as_stock_pint_does(ureg, raw, kind, unit):
    number = float(raw.split()[0])
    internal = ureg.Quantity(number, unit).to(units.KINDS[kind].internal.replace("L", "liter"))
    assert units.parse(raw, kind, units.IP) == pytest.approx(internal.magnitude, rel=1e-12)


@pytest.mark.parametrize(("raw", "kind", "fix"), [
    ("5 cfm", "airflow_per_person", "'5 cfm/person'"),
    ("2.5 L/s", "airflow_per_person", "'2.5 L/s/person'"),
    ("0.0052 L/s", "gas_generation", "'0.0052 L/s/person'"),
])
def test_a_rate_without_per_person_is_refused_with_the_fix(raw, kind, fix):
    with pytest.raises(units.QuantityError, match="per person") as err:
        units.parse(raw, kind, units.IP)
    assert fix in str(err.value)


@pytest.mark.parametrize("raw", ["30 percent", "0.3 dimensionless", "30 ppm", "30 %", "30%"])
def test_a_share_is_not_a_count_of_people(raw):
    with pytest.raises(units.QuantityError, match="count of people, not a share"):
        units.parse(raw, "people", units.IP)


def test_a_per_person_value_is_not_a_total():
    with pytest.raises(units.QuantityError, match="value per person, but a total is expected"):
        units.parse("5 cfm/person", "airflow", units.IP)
    with pytest.raises(units.QuantityError, match="expected an occupant density"):
        units.parse("0.05 m**-2", "density", units.SI)


def test_bare_numbers_stay_in_people():
    # Counts do not depend on the unit system: 25 is 25 people in IP and SI.
    assert units.parse(25, "people", units.IP) == units.parse("25", "people", units.SI) == 25
    assert units.parse("25 occupants", "people", units.SI) == 25


def test_display_densities_per_1000_ft2_and_per_100_m2(ureg):
    # 5 people per 1000 ft² is 0.005 person/ft² = 0.0538196 person/m²; 5 per 100 m² is 0.05.
    per_ft2 = ureg.Quantity(0.005, "person/ft**2").to("person/m**2").magnitude
    assert units.to_internal(5, "density", units.IP) == pytest.approx(per_ft2, rel=1e-12)
    assert units.to_internal(5, "density", units.SI) == pytest.approx(0.05, rel=1e-12)
    assert units.to_display(per_ft2, "density", units.IP) == pytest.approx(5, rel=1e-12)


def test_a_formula_that_forgets_the_people_fails_the_dimension_check():
    kinds = {"Voz": "airflow", "Az": "area", "Pz": "people", "Rp": "airflow_per_person",
             "Ra": "airflow_per_area", "N": "gas_generation", "Q": "airflow"}
    fx.check_dimensions(fx.parse("Rp * Pz + Ra * Az"), kinds, "airflow")
    fx.check_dimensions(fx.parse("N * Pz / Q"), kinds, "concentration_ppm")
    with pytest.raises(fx.FormulaError, match=r"different dimensions.*multiplied by a number of "
                                              r"people"):
        fx.check_dimensions(fx.parse("Rp + Ra * Az"), kinds, "airflow")
    with pytest.raises(fx.FormulaError, match=r"gives a value of dimension.*\[people\].*"
                                              r"multiplied by a number of people"):
        fx.check_dimensions(fx.parse("Rp"), kinds, "airflow")
    with pytest.raises(fx.FormulaError, match="gives a value of dimension"):
        fx.check_dimensions(fx.parse("N / Q"), kinds, "concentration_ppm")


def test_the_json_units_carry_the_people_dimension(ureg):
    airflow = ureg.Quantity(1, "L/s").dimensionality
    person = ureg.Quantity(1, "person").dimensionality
    for system in units.UNIT_SYSTEMS:
        rp = ureg.Quantity(1, units.JSON_UNITS[("airflow_per_person", system)])
        assert rp.dimensionality == airflow / person
        assert ureg.Quantity(1, units.JSON_UNITS[("people", system)]).dimensionality == person
        density = ureg.Quantity(1, units.JSON_UNITS[("density", system)])
        assert density.dimensionality == person / ureg.Quantity(1, "m**2").dimensionality


def _table_dir(tmp_path, unit_text):
    """A copy of the built-in rules folder whose CO2 generation table declares ``unit_text``."""
    import shutil

    from airgate.readers.rulepack import builtin_rules_dir

    root = tmp_path / "rules"
    shutil.copytree(builtin_rules_dir() / "schema", root / "schema")
    (root / "data").mkdir()
    text = (builtin_rules_dir() / "data" / "occupant-co2-generation.yaml").read_text("utf-8")
    (root / "data" / "occupant-co2-generation.yaml").write_text(
        text.replace("units: L/s/person", f"units: {unit_text}"), encoding="utf-8")
    return root


@pytest.mark.parametrize(("unit_text", "factor"), [("L/s/person", 1.0),
                                                    ("L/h/person", 1 / 3600)])
def test_co2_generation_table_values_are_read_in_their_units(tmp_path, monkeypatch, unit_text,
                                                             factor):
    # 1 h = 3600 s (exact): a table in L/h per person is read as L/s per person (0.00405 is the
    # row as the file writes it: the input, read in the declared units).
    from airgate.readers import datatables

    monkeypatch.setattr(datatables, "builtin_rules_dir", lambda: _table_dir(tmp_path, unit_text))
    datatables.data_table.cache_clear()
    try:
        table = datatables.data_table("occupant-co2-generation")
    finally:
        datatables.data_table.cache_clear()
    assert table.units == "L/s/person"
    assert table.rows["adult-office"].value == pytest.approx(0.00405 * factor, rel=1e-12)


def test_co2_generation_table_not_per_person_is_refused(tmp_path, monkeypatch):
    from airgate.errors import RulePackError
    from airgate.readers import datatables

    monkeypatch.setattr(datatables, "builtin_rules_dir", lambda: _table_dir(tmp_path, "L/s"))
    datatables.data_table.cache_clear()
    try:
        with pytest.raises(RulePackError, match="needs '/person'") as err:
            datatables.data_table("occupant-co2-generation")
    finally:
        datatables.data_table.cache_clear()
    assert err.value.field == ("units",) and err.value.line is not None
