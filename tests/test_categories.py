"""European category method (EN 16798-1:2019): rates by category and pollution class.

Sources (EN 16798-1:2019 Annex B, as quoted with worked office examples in a manufacturer's
design note; docs/references.md):
- q_p by category I/II/III: 10, 7, 4 L/s·person — published;
- q_B low-polluting I/II/III: 1.0, 0.7, 0.4 L/s·m²; non-low-polluting 2.0, 1.4, 0.8 —
  published (derived from worked office examples in a manufacturer's design note);
- category IV q_p 2.5, very-low-polluting row, category IV q_B — from memory;
- worked example: 40 m² low-polluting meeting room, 15 people, category II → 479 m³/h
  (7 × 15 + 0.7 × 40 = 133 L/s) — published.
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
def test_per_person_rates_published(category, q_p):
    # EN 16798-1:2019 Annex B, q_p by category (published).
    assert _rates(category, "low")[0] == pytest.approx(q_p)


@pytest.mark.parametrize(("category", "low", "non_low"), [("I", 1.0, 2.0), ("II", 0.7, 1.4),
                                                          ("III", 0.4, 0.8)])
def test_per_area_rates_published(category, low, non_low):
    # EN 16798-1:2019 Annex B, q_B for low- and non-low-polluting buildings (published).
    assert _rates(category, "low")[1] == pytest.approx(low)
    assert _rates(category, "non-low")[1] == pytest.approx(non_low)


def test_from_memory_rates():
    # From memory (EN 16798-1:2019 Annex B): category IV q_p 2.5; very-low 0.5/0.35/0.2/0.15;
    # category IV low 0.3, non-low 0.6 L/s·m².
    assert _rates("IV", "low") == pytest.approx((2.5, 0.3))
    assert _rates("IV", "non-low")[1] == pytest.approx(0.6)
    assert [_rates(c, "very-low")[1] for c in ("I", "II", "III", "IV")] == pytest.approx(
        [0.5, 0.35, 0.2, 0.15])


def test_worked_example_direct():
    # Worked example (published): 7 × 15 + 0.7 × 40 = 133 L/s = 479 m³/h (the conversion by
    # pint, an independent unit library).
    import pint

    q = categories.total_ventilation_rate(15, 7, 40, 0.7)
    assert q == pytest.approx(133.0)
    ureg = pint.UnitRegistry()
    assert round(ureg.Quantity(q, "L/s").to("m**3/hour").magnitude) == 479


def test_worked_example_through_the_engine(evaluate):
    # The same worked example (published) through the pack and the engine:
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
    # 0.7 L/s·m² (×3.6, exact), so the worked example (published) still needs 133 L/s.
    pack = (ROOT / "tests" / "packs" / "category-ii-m3h.yaml")
    zone = {"id": "M1", "space": "conference-room", "area": "40 m2", "occupants": 15,
            "air_distribution": "mixing"}
    data = schedule([{"id": "AHU-1", "kind": "single-zone", "outdoor_air": "479 m3/h",
                      "zones": [zone]}], units="SI", rules="unused")
    report = evaluate(data, rules=str(pack))  # a path outside the schedule's folder: --rules
    assert report.systems[0].zones[0].trail.value("Voz") == pytest.approx(133.0)
    assert report.verdict == "pass"


def test_co2_design_limit_by_category(evaluate):
    # Default design CO2 above outdoor by category (from memory): II 800 ppm, at the published
    # design emission of 20 L/h per person. At 133 L/s: 15 × 20/3600 ÷ 133 × 10⁶ ≈ 627 ppm.
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
