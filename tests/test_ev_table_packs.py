"""The older Ev-versus-Zp tables as packs extending ashrae-62.1-2019.

Sources: rows ≤ 0.15 → 1.0, ≤ 0.25 → 0.9, ≤ 0.35 → 0.8, ≤ 0.45 → 0.7, ≤ 0.55 → 0.6 with linear
interpolation permitted (ANSI/ASHRAE 62.1-2010 Table 6-3; above 0.55 the detailed calculation), and
the extended form ≤ 0.65 → 0.5, ≤ 0.75 → 0.4, > 0.75 → 0.3 — published in the 2020 Mechanical Code
of New York State, Table 403.3.1.1.2.3.2 (docs/references.md).
"""

from __future__ import annotations

import pytest

from airgate.procedures import efficiency as eff
from airgate.readers.rulepack import load_pack

from conftest import DEMO

ROWS = [(0.15, 1.0), (0.25, 0.9), (0.35, 0.8), (0.45, 0.7), (0.55, 0.6)]


def test_rows_of_both_variants():
    a = load_pack("ashrae-62.1-2019-ev-table")
    b = load_pack("ashrae-62.1-2019-ev-table-extended")
    assert a.methods["table"].rows == tuple(ROWS) and a.methods["table"].above_last == "detailed"
    assert b.methods["table"].rows == tuple(ROWS + [(0.65, 0.5), (0.75, 0.4)])
    assert b.methods["table"].above_last == 0.3
    assert a.default_method == b.default_method == "table"
    assert a.methods["table"].provenance == "published"
    # the rate tables are the base pack's
    assert a.categories == load_pack("ashrae-62.1-2019").categories


@pytest.mark.parametrize(("zp", "ev"), [(0.10, 1.0), (0.20, 0.95), (0.55, 0.6), (0.50, 0.65)])
def test_interpolated_values(zp, ev):
    # linear interpolation between published rows (permitted by the table's note)
    table = load_pack("ashrae-62.1-2019-ev-table").methods["table"]
    assert eff.system_ventilation_efficiency_table(zp, table.rows, table.interpolate) == \
        pytest.approx(ev)


def test_the_demo_under_both_variants(evaluate):
    # The demo's AHU-3 (invented) by the table method, at each design condition. Cooling: largest
    # Zp 186 / 600 = 0.310 (zone 203), within both tables: Ev = 0.9 − 0.1 × (0.310 − 0.25) / 0.1
    # = 0.84 (derived, interpolated). Heating (Ez 0.8, 203 at its 300 cfm minimum): largest Zp
    # 232.5 / 300 = 0.775, above both tables. Variant A sends it to the detailed calculation,
    # Ev = 1 + Xs − Zp = 1 + 1366 / 4550 − 0.775 = 0.525; variant B gives Ev 0.3 above Zp 0.75.
    import yaml

    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["systems"][2]["ventilation_efficiency"] = "table"
    for pack, heating in (("ashrae-62.1-2019-ev-table", 0.525),
                          ("ashrae-62.1-2019-ev-table-extended", 0.3)):
        report = evaluate(data, pack)
        by_id = {c.id: c.trail for c in report.systems[2].conditions}
        assert by_id["cooling"].value("max Zpz") == pytest.approx(0.310, abs=5e-4)
        assert by_id["cooling"].value("Ev") == pytest.approx(0.84, abs=5e-4)
        assert by_id["heating"].value("max Zpz") == pytest.approx(0.775, abs=5e-4)
        assert by_id["heating"].value("Ev") == pytest.approx(heating, abs=5e-4)
