"""The worked example: the fictional City of Quillby Bay's amendments on the demo building.

The demo (fixtures/demo, invented) passes DOAS-1 under ashrae-62.1-2019. Under the City's pack
(invented amendments) its libraries need 0.15 cfm/ft² instead of 0.12, so zones 110 and 111 fall
short: 5 × 40 + 0.15 × 3200 = 680 cfm against 640 scheduled, 5 × 25 + 0.15 × 1100 = 290 against
270. The expectations are those the pack's own test case states
(rules/tests/ashrae-62.1-2019-quillby-bay/fernhollow-demo.yaml); here they are held against the
demo file itself.
"""

from __future__ import annotations

import pytest

from airgate.api import packtests
from airgate import check
from airgate.readers import layering
from airgate.readers.rulepack import builtin_rules_dir
from airgate.readers.schedule import read_schedule

from conftest import CFM, DEMO

QUILLBY = "ashrae-62.1-2019-quillby-bay"
CASE = builtin_rules_dir() / "tests" / QUILLBY / "fernhollow-demo.yaml"


def test_the_pack_test_expectations_hold_for_the_demo_file():
    result = packtests.run_case(CASE, QUILLBY, layering.search_roots(),
                                schedule=read_schedule(DEMO))
    assert result.failures == []
    assert result.expectations >= 10


def test_verdicts_change_exactly_at_the_amended_rate():
    base, city = check(DEMO), check(DEMO, QUILLBY)
    # EF-1 fails under both (its janitor closet is short of the exhaust row the amendment
    # leaves as it is); only DOAS-1 changes, at the amended library rate; NV-1, the naturally
    # ventilated pavilion, passes under both (the amendment leaves Section 6.4 as it is)
    assert [s.verdict for s in base.systems] == ["pass", "pass", "fail", "fail", "pass"]
    assert [s.verdict for s in city.systems] == ["pass", "fail", "fail", "fail", "pass"]
    failing = sorted(f"{f.subject} {f.rule}" for f in city.findings if f.severity == "fail")
    assert failing == ["AHU-3 system-intake", "AHU-3/203 zone-limits-ev",
                       "DOAS-1/110 zone-outdoor-air", "DOAS-1/111 zone-outdoor-air",
                       "EF-1/121 zone-exhaust"]
    zone = city.zone("110")[1].trail
    assert zone.value("Voz") / CFM == pytest.approx(680.0)
    assert "Section 403.3.1, Libraries (invented), amending ANSI/ASHRAE Standard 62.1" in \
        zone["Ra"].source
    warnings = [f for f in city.findings if f.severity == "warning"]
    assert [(f.subject, f.rule) for f in warnings] == [("RTU-1", "recirculating-filter-merv-13")]


def test_the_report_names_the_city_and_keeps_every_caution():
    report = check(DEMO, QUILLBY)
    assert report.pack.jurisdiction == "City of Quillby Bay (fictional)"
    assert report.cautions[0].startswith("Ventilation affects health")
    assert "licensed professional of record govern" in report.cautions[0]
    assert any("fictional city" in c for c in report.cautions)
