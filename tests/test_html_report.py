"""The HTML writer: built from autoescaping templates, and summarised above its size rule.

Common practice for generated HTML: markup comes from templates, every value is escaped by the
template engine (no hand-called escaping a new section could forget). The size rule is the one
docs/report-format.md states (more than DETAIL_LIMIT zones: failing and warning zones in full,
passing systems one row each, their zones in one compact table). Hand-computed figures follow
ANSI/ASHRAE 62.1-2019 Sections 6.2.2 and 6.2.4 with Table 6.2.2.1's office row (5 cfm/person,
0.06 cfm/ft²).
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from airgate.evaluation.batch import gather
from airgate.writers import html

from conftest import schedule

TEMPLATES = Path(html.__file__).parent / "templates"


def test_templates_escape_every_value():
    env = html.environment()
    assert env.autoescape is True
    names = sorted(p.name for p in TEMPLATES.iterdir())
    assert "page.html.j2" in names and "sections.html.j2" in names
    for path in TEMPLATES.glob("*.j2"):
        text = path.read_text("utf-8")
        # nothing may turn escaping off or mark a value as already safe
        assert "|safe" not in text.replace(" ", ""), path.name
        assert "autoescape false" not in text and "Markup" not in text, path.name
    assert "Markup(" not in Path(html.__file__).read_text("utf-8")


def test_a_control_character_is_replaced_and_markup_escaped():
    env = html.environment()
    out = env.from_string("<p>{{ x }}</p>").render(x="a<b>\x07&c")
    assert out == "<p>a&lt;b&gt;\ufffd&amp;c</p>"


def _office(i: int, occupants: int = 10, oa: str | None = None) -> dict:
    # office 1000 ft², Ez 1: Voz = 5·occupants + 0.06·1000 cfm (Sections 6.2.2.1, 6.2.2.3)
    z = {"id": f"Z{i}", "name": f"Office {i} (invented)", "space": "office-space",
         "area": "1000 ft2", "occupants": occupants, "air_distribution": "ceiling-supply-cool"}
    if oa:
        z["outdoor_air"] = oa
    return z


def _large(n_systems: int) -> dict:
    """n_systems 100 % outdoor-air systems of 4 offices each (110 cfm each, 440 cfm intake);
    in the last system zone Z3 is scheduled 100 cfm, less than its 110 cfm (Section 6.2.4)."""
    systems = []
    for k in range(n_systems):
        zones = [_office(4 * k + j) for j in range(4)]
        if k == n_systems - 1:
            zones[3] = _office(4 * k + 3, oa="100 cfm")
        systems.append({"id": f"DOAS-{k}", "kind": "outdoor-air", "outdoor_air": "500 cfm",
                        "zones": zones})
    return schedule(systems)


@pytest.fixture
def large_report(evaluate):
    return evaluate(_large(60))  # 240 zones, above the size rule


def test_large_schedule_is_summarised(large_report):
    r = large_report
    assert sum(len(s.zones) for s in r.systems) > html.DETAIL_LIMIT
    failing = {f.subject for f in r.findings if f.severity == "fail"}
    assert failing == {"DOAS-59/Z239"}
    out = html.render(gather([r], [], "fail"))
    assert "more than 200: systems that pass are listed one row each" in out
    # 59 passing systems one row each, their 236 zones in one compact table
    passing = out.split("<h3>Systems that pass</h3>")[1].split("</table>")[0]
    assert passing.count("<tr class=") == 59
    assert "Zones of the systems that pass (236)" in out
    # the failing system has its panel; only the failing zone and the system keep trails
    trails = re.findall(r"Calculation trail — (zone|system) <b>([^<]*)</b>", out)
    assert trails == [("zone", "Z239"), ("system", "DOAS-59")]
    assert "3 of the zones above are listed without their calculation trails" in out
    # the chart holds only the failing zone: 100 of 110 cfm (Section 6.2.4)
    bars = re.findall(r'<g class="row[^"]*"><title>([^<]*)</title>', out)
    assert bars == ["DOAS-59/Z239 Office 239 (invented): 100 cfm of 110 cfm (-9.1 %)"]
    # every zone is still named somewhere
    for i in range(240):
        assert f"<b>Z{i}</b>" in out
    assert html.render(gather([r], [], "fail")) == out  # same input, same bytes


def test_small_schedule_keeps_every_trail(evaluate):
    r = evaluate(_large(3))  # 12 zones
    out = html.render(gather([r], [], "fail"))
    assert "Systems that pass" not in out
    trails = re.findall(r"Calculation trail — zone <b>", out)
    assert len(trails) == 12
    assert len(re.findall(r'<g class="row', out)) == 12


def test_chunks_stream_the_page(large_report):
    parts = html.chunks(gather([large_report], [], "fail"))
    first = next(parts)
    assert first.startswith("<!DOCTYPE html>")
    rest = list(parts)
    assert len(rest) > 10  # written system by system, not as one string
    assert "".join([first, *rest]).rstrip().endswith("</html>")


def test_design_conditions_are_shown_with_the_governing_one(tmp_path):
    # The heating condition of tests/test_conditions.py: Vot by the hand calculation there
    # (ANSI/ASHRAE 62.1-2019 Section 6.2.5 and Appendix A), about 194 cfm, governs.
    from test_conditions import EZ_WARM, _hand, _run, _vav

    report = _run(tmp_path, [_vav()])
    out = html.render(gather([report], [], "fail"))
    assert "Design conditions (2): <b>heating</b> governs" in out
    row = next(line for line in out.splitlines() if "<td>▸ heating</td>" in line)
    vot = _hand([400, 800], EZ_WARM)["Vot"]
    assert f'<td class="n">{vot:,.0f}</td>' in row and "badge fail" in row
    assert "<td>cooling</td>" in out
