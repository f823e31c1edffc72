"""Dwelling units through the 62.2 packs: the bedroom count's floor and the SI table cells.

Sources (docs/references.md, ANSI/ASHRAE 62.2-2019):
- Section 4.1.1: the number of bedrooms is taken as not less than one, so a dwelling unit with no
  bedroom (a studio) is rated for two occupants — published: the Uniform Mechanical Code (IAPMO),
  Appendix E, Equation E 605.1.3.1 ("Nbr = number of bedrooms; not to be less than one"; public
  online copy headed "E 605.1.3 Dwelling-Unit Ventilation", edition not identified);
- the I-P dwelling-unit table (Table 4.1a, the code's tag), all 50 cells as reproduced in the
  same copy's Table E 605.1.3.1 (published);
- the SI version of the dwelling-unit table (Table 4.1b, number from memory): 418–465 m² with
  5 bedrooms → 91 L/s, seen in a public equipment manual's reprint whose copy was not recorded,
  so from memory until compared with a named copy. Converting the I-P cell (195 cfm) gives
  92 L/s instead: the SI cells are the standard's own rounded values. The other SI cells used
  here (< 47 m²: 14, 18, 21, 25, 28 L/s for 1–5 bedrooms) are from memory.
"""

from __future__ import annotations

import pytest

from conftest import CFM, schedule


def _dwelling(area: str, bedrooms: int, intake: str) -> list[dict]:
    return [{"id": "ERV-1", "kind": "single-zone", "outdoor_air": intake,
             "zones": [{"id": "1", "space": "dwelling-unit", "area": area, "bedrooms": bedrooms}]}]


@pytest.mark.parametrize(("pack", "units", "area", "per_area", "per_person", "unit"), [
    ("ashrae-62.2-2019", "IP", 400, 0.03, 7.5, "ft2"),
    ("ashrae-62.2-2019-si", "SI", 37, 0.15, 3.5, "m2"),
])
def test_studio_is_rated_for_two_occupants(evaluate, pack, units, area, per_area, per_person, unit):
    # ANSI/ASHRAE 62.2-2019 Section 4.1.1 (Nbr not less than one): a 0-bedroom dwelling has the
    # rate of a 1-bedroom one, Qtot = Ra·A + Rp·(1 + 1).
    data = schedule(_dwelling(f"{area} {unit}", 0, "1000 cfm"), units=units, rules=pack)
    zone = evaluate(data).systems[0].zones[0]
    expected = per_area * area + per_person * 2
    scale = CFM if units == "IP" else 1.0
    assert zone.trail.value("Pz") == 2
    assert zone.trail.value("Voz") / scale == pytest.approx(expected)
    one = evaluate(schedule(_dwelling(f"{area} {unit}", 1, "1000 cfm"), units=units, rules=pack))
    assert one.systems[0].zones[0].trail.value("Voz") == pytest.approx(zone.trail.value("Voz"))


@pytest.mark.parametrize(("pack", "units", "area", "intake_ok", "intake_short"), [
    ("ashrae-62.2-2019", "IP", "400 ft2", "27 cfm", "24 cfm"),      # 12 + 15 = 27 cfm
    ("ashrae-62.2-2019-si", "SI", "37 m2", "12.6 L/s", "10 L/s"),   # 5.55 + 7 = 12.55 L/s
])
def test_studio_fan_sized_for_one_occupant_fails(evaluate, pack, units, area, intake_ok,
                                                  intake_short):
    # Same source: a fan sized for one occupant (Nbr + 1 with Nbr = 0) is short of the rate.
    ok = evaluate(schedule(_dwelling(area, 0, intake_ok), units=units, rules=pack))
    short = evaluate(schedule(_dwelling(area, 0, intake_short), units=units, rules=pack))
    assert ok.verdict == "pass" and short.verdict == "fail"


@pytest.mark.parametrize(("area", "bedrooms", "cell"), [
    (465, 5, 91),                                        # published (public reprint)
    (47, 1, 14), (47, 2, 18), (47, 3, 21), (47, 4, 25), (47, 5, 28),   # from memory
])
def test_si_pack_reproduces_si_table_cells(evaluate, area, bedrooms, cell):
    # ANSI/ASHRAE 62.2-2019 SI dwelling-unit table: each cell is the rate at the top of its
    # floor-area bin, rounded half up (the rounding rule is derived from the I-P cells).
    data = schedule(_dwelling(f"{area} m2", bedrooms, "1000 L/s"), units="SI",
                    rules="ashrae-62.2-2019-si")
    voz = evaluate(data).systems[0].zones[0].trail.value("Voz")
    assert int(voz + 0.5 + 1e-9) == cell  # half up, past float noise


def test_si_cells_are_not_conversions_of_the_ip_cells():
    # 4501–5000 ft², 5 bedrooms: I-P cell 195 cfm (published) converts to 92 L/s (1 cfm =
    # 0.471947 L/s, exact), where the SI table prints 91 L/s (from memory: an equipment manual's
    # reprint, copy not recorded).
    assert round(195 * CFM) == 92 != 91


#: Table E 605.1.3.1 of the Uniform Mechanical Code, Appendix E (= ANSI/ASHRAE 62.2 Table 4.1a),
#: cfm by floor-area bin (upper bound, ft²) and 1–5 bedrooms (published)
IP_TABLE = {
    500: (30, 38, 45, 53, 60), 1000: (45, 53, 60, 68, 75), 1500: (60, 68, 75, 83, 90),
    2000: (75, 83, 90, 98, 105), 2500: (90, 98, 105, 113, 120), 3000: (105, 113, 120, 128, 135),
    3500: (120, 128, 135, 143, 150), 4000: (135, 143, 150, 158, 165),
    4500: (150, 158, 165, 173, 180), 5000: (165, 173, 180, 188, 195),
}


@pytest.mark.parametrize("top", sorted(IP_TABLE))
def test_ip_pack_reproduces_every_ip_table_cell(evaluate, top):
    # Each cell is the pack's rate at the top of its bin, rounded half up (the rule is derived
    # from the published cells); 0 bedrooms reads the 1-bedroom column (Nbr not less than one).
    for bedrooms, cell in enumerate(IP_TABLE[top], start=1):
        for n in ((0, bedrooms) if bedrooms == 1 else (bedrooms,)):
            data = schedule(_dwelling(f"{top} ft2", n, "1000 cfm"), rules="ashrae-62.2-2019")
            voz = evaluate(data).systems[0].zones[0].trail.value("Voz") / CFM
            assert int(voz + 0.5 + 1e-9) == cell, (top, n)  # half up, past float noise
