"""European category method (EN 16798-1:2019): rates by category and pollution class.

Sources (EN 16798-1:2019 Annex B; docs/references.md):
- q_p by category I/II/III: 10, 7, 4 L/s·person, and q_B low-polluting I/II/III: 1.0, 0.7,
  0.4 L/s·m², non-low-polluting 2.0, 1.4, 0.8 — from memory for EN 16798-1:2019; they agree with
  every office cell of the predecessor standard's table (EN 15251:2007, indoor climate classes
  A/B/C = categories I/II/III) as tabulated in a manufacturer's design guide (EXHAUSTO, "Indoor
  climate class", German edition), held below;
- category IV q_p 2.5, very-low-polluting row, category IV q_B — from memory;
- worked example: 40 m² low-polluting meeting room, 15 people, category II → 479 m³/h
  (7 × 15 + 0.7 × 40 = 133 L/s) — derived from those rates (from memory), not from a copy.
"""

from __future__ import annotations

import pytest

from airgate.procedures import categories
from airgate.readers.rulepack import load_pack

from conftest import ROOT, schedule

PACK = "en-16798-1-2019"


def _rates(category: str, pollution: str) -> tuple[float, float]:
    row = load_pack(PACK, options={"category": category, "pollution": pollution}).categories[
        "conference-room"]
    return row.rp, row.ra


@pytest.mark.parametrize(("category", "q_p"), [("I", 10), ("II", 7), ("III", 4)])
def test_per_person_rates_from_memory(category, q_p):
    # EN 16798-1:2019 Annex B, q_p by category (from memory; see the EN 15251 table below).
    assert _rates(category, "low")[0] == pytest.approx(q_p)


@pytest.mark.parametrize(("category", "low", "non_low"), [("I", 1.0, 2.0), ("II", 0.7, 1.4),
                                                          ("III", 0.4, 0.8)])
def test_per_area_rates_from_memory(category, low, non_low):
    # EN 16798-1:2019 Annex B, q_B for low- and non-low-polluting buildings (from memory; see the
    # EN 15251 table below).
    assert _rates(category, "low")[1] == pytest.approx(low)
    assert _rates(category, "non-low")[1] == pytest.approx(non_low)


#: EXHAUSTO design guide "Indoor climate class" (German edition, exhausto.ch), office table of
#: EN 15251:2007 rates: room → (m² per person, {class: (low-polluting, non-low-polluting) L/s·m²})
#: with classes A, B, C = categories I, II, III. Its auditorium cells (0.75 m² per person; 16.0,
#: 11.2, 6.4 low) are those of 1.5 people per m² and are left out (docs/references.md).
EN_15251_OFFICES = {
    "single-office": (10, {"I": (2.0, 3.0), "II": (1.4, 2.1), "III": (0.8, 1.2)}),
    "landscaped-office": (15, {"I": (1.7, 2.7), "II": (1.2, 1.9), "III": (0.7, 1.1)}),
    "conference-room": (2, {"I": (6.0, 7.0), "II": (4.2, 4.9), "III": (2.4, 2.8)}),
}


@pytest.mark.parametrize("room", sorted(EN_15251_OFFICES))
@pytest.mark.parametrize("category", ["I", "II", "III"])
def test_rates_and_densities_reproduce_the_en_15251_office_table(room, category):
    # q_p·(people per m²) + q_B at the pack's default density, rounded to 0.1 L/s·m², equals each
    # cell of the EXHAUSTO table of EN 15251:2007 rates (the predecessor standard: agreement,
    # not a copy of EN 16798-1:2019, so the pack keeps the values `from memory`).
    m2_per_person, cells = EN_15251_OFFICES[room]
    for pollution, printed in zip(("low", "non-low"), cells[category]):
        row = load_pack(PACK, options={"category": category, "pollution": pollution}).categories[
            room]
        assert row.density == pytest.approx(1 / m2_per_person, rel=1e-3)
        per_area = row.rp * row.density + row.ra
        assert int(per_area * 10 + 0.5 + 1e-9) / 10 == printed, (room, category, pollution)


def test_from_memory_rates():
    # From memory (EN 16798-1:2019 Annex B): category IV q_p 2.5; very-low 0.5/0.35/0.2/0.15;
    # category IV low 0.3, non-low 0.6 L/s·m².
    assert _rates("IV", "low") == pytest.approx((2.5, 0.3))
    assert _rates("IV", "non-low")[1] == pytest.approx(0.6)
    assert [_rates(c, "very-low")[1] for c in ("I", "II", "III", "IV")] == pytest.approx(
        [0.5, 0.35, 0.2, 0.15])


def test_worked_example_direct():
    # Worked example (derived): 7 × 15 + 0.7 × 40 = 133 L/s = 479 m³/h (the conversion by
    # pint, an independent unit library).
    import pint

    q = categories.total_ventilation_rate(15, 7, 40, 0.7)
    assert q == pytest.approx(133.0)
    ureg = pint.UnitRegistry()
    assert round(ureg.Quantity(q, "L/s").to("m**3/hour").magnitude) == 479


def test_worked_example_through_the_engine(evaluate):
    # The same worked example (derived) through the pack and the engine:
    # Voz = 15 × 7 + 40 × 0.7 = 133 L/s, 479 m³/h.
    zone = {"id": "M1", "space": "conference-room", "area": "40 m2", "occupants": 15,
            "air_distribution": "mixing"}
    for intake, verdict in (("479 m3/h", "pass"), ("470 m3/h", "fail")):
        data = schedule([{"id": "AHU-1", "kind": "single-zone", "outdoor_air": intake,
                          "zones": [zone]}], units="SI", rules=PACK)
        data["project"]["options"] = {"category": "II", "pollution": "low"}
        report = evaluate(data)
        voz = report.systems[0].zones[0].trail.value("Voz")
        assert voz == pytest.approx(133.0)
        assert round(voz * 3.6) == 479
        assert report.verdict == verdict


def test_ventilation_effectiveness_divides(evaluate):
    # q_design = q_tot / ε_v (EN 16798-1 §6.3.2.2, from memory): an explicit ε_v of 0.8 gives
    # 133 / 0.8 = 166.25 L/s.
    zone = {"id": "M1", "space": "conference-room", "area": "40 m2", "occupants": 15, "ez": 0.8,
            "ez_basis": "measured ventilation effectiveness (invented)"}
    data = schedule([{"id": "AHU-1", "kind": "single-zone", "outdoor_air": "200 L/s",
                      "zones": [zone]}], units="SI", rules=PACK)
    data["project"]["options"] = {"category": "II", "pollution": "low"}
    voz = evaluate(data).systems[0].zones[0].trail.value("Voz")
    assert voz == pytest.approx(166.25)


def test_tables_may_be_written_in_cubic_metres_per_hour(tmp_path, evaluate):
    # A pack may write its SI table in m³/h: 25.2 m³/h·person and 2.52 m³/h·m² are 7 L/s and
    # 0.7 L/s·m² (×3.6, exact), so the worked example (derived) still needs 133 L/s.
    pack = (ROOT / "tests" / "packs" / "category-ii-m3h.yaml")
    zone = {"id": "M1", "space": "conference-room", "area": "40 m2", "occupants": 15,
            "air_distribution": "mixing"}
    data = schedule([{"id": "AHU-1", "kind": "single-zone", "outdoor_air": "479 m3/h",
                      "zones": [zone]}], units="SI", rules="unused")
    report = evaluate(data, rules=str(pack))  # a path outside the schedule's folder: --rules
    assert report.systems[0].zones[0].trail.value("Voz") == pytest.approx(133.0)
    assert report.verdict == "pass"


def test_co2_design_limit_by_category(evaluate):
    # Default design CO2 above outdoor by category (from memory): II 800 ppm, at the design
    # emission of 20 L/h per person (from memory too, as in the pack). At 133 L/s: 15 × 20/3600 ÷ 133 × 10⁶ ≈ 627 ppm.
    zone = {"id": "M1", "space": "conference-room", "area": "40 m2", "occupants": 15,
            "air_distribution": "mixing"}
    data = schedule([{"id": "AHU-1", "kind": "single-zone", "outdoor_air": "133 L/s",
                      "zones": [zone]}], units="SI", rules=PACK)
    data["project"]["options"] = {"category": "II", "pollution": "low"}
    report = evaluate(data)
    outcome = next(o for o in report.requirements if o.rule == "design-co2-above-outdoor")
    assert outcome.verdict == "pass"
    data["systems"][0]["outdoor_air"] = "100 L/s"
    report = evaluate(data)
    finding = next(f for f in report.findings if f.rule == "design-co2-above-outdoor")
    assert finding.provided.value == pytest.approx(15 * 20 / 3600 / 100 * 1e6, rel=1e-3)
    assert finding.required.value == pytest.approx(800)


@pytest.mark.parametrize("bad", [0.0, -1.0, float("nan")])
def test_invalid_effectiveness_is_a_value_error_naming_it(bad):
    # One policy for the procedures (module docstring): ValueError naming the parameter.
    with pytest.raises(ValueError, match="effectiveness"):
        categories.total_ventilation_rate(15, 7, 40, 0.7, bad)
