"""The HTML report in a real browser: headless Chromium loads it and we look at what it shows.

Checks (the issue's acceptance, common practice for web pages): no console errors, exceptions
or dialogs; no request leaves the file (self-contained); on a 1280 × 800 screen the verdict and
every failing item with its shortfall are visible without scrolling; the charts, the trails and
the cautions are there; a hostile schedule's markup stays text. Screenshots are saved (to the
test's temporary folder, or to ``AIRGATE_SCREENSHOTS`` when set).

Skipped only when Chromium is not installed and ``CI`` is not set; under CI it must run.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from airgate.cli import main

import hostile
from browser import Page, find_chromium
from conftest import DEMO, ROOT

CHROMIUM = find_chromium()
if CHROMIUM is None:
    if os.environ.get("CI"):
        pytest.fail("Chromium is required under CI (apt-get install chromium)", pytrace=False)
    pytest.skip("Chromium is not installed (apt-get install chromium)", allow_module_level=True)

WIDTH, HEIGHT = 1280, 800
PNG = b"\x89PNG\r\n\x1a\n"

FIRST_SCREEN = """(() => {
  const box = e => { const r = e.getBoundingClientRect();
    return {top: r.top, bottom: r.bottom, width: r.width, height: r.height}; };
  const visible = e => { const s = getComputedStyle(e), r = e.getBoundingClientRect();
    return s.visibility !== 'hidden' && s.display !== 'none' && r.width > 0 && r.height > 0; };
  const stamp = document.querySelector('.stamp');
  const rows = [...document.querySelectorAll('#r1-failing tr.fail')];
  return {
    innerHeight: innerHeight, scrollY: scrollY,
    stamp: stamp.textContent, stampBox: box(stamp), stampVisible: visible(stamp),
    rows: rows.map(r => ({text: r.innerText, box: box(r), visible: visible(r)})),
    charts: document.querySelectorAll('svg.chart').length,
    co2: document.querySelectorAll('svg.co2 polyline').length,
    details: document.querySelectorAll('details').length,
    scripts: document.scripts.length,
    body: document.body.innerText,
  };
})()"""


def _shots(tmp_path: Path) -> Path:
    folder = os.environ.get("AIRGATE_SCREENSHOTS")
    if folder:
        Path(folder).mkdir(parents=True, exist_ok=True)
        return Path(folder)
    return tmp_path


def _render(args: list[str], target: Path) -> None:
    code = main(["check", *args, "--format", f"html:{target}"])
    assert code == 1  # both buildings fail on purpose
    assert target.is_file()


@pytest.fixture(scope="module")
def page():
    with Page(CHROMIUM, WIDTH, HEIGHT) as p:
        yield p


def test_demo_report_renders_and_shows_what_fails_on_the_first_screen(page, tmp_path,
                                                                        monkeypatch):
    monkeypatch.chdir(ROOT)
    report = tmp_path / "demo.html"
    _render([str(DEMO.relative_to(ROOT))], report)
    page.open(report)
    seen = page.evaluate(FIRST_SCREEN)
    assert page.problems() == []
    assert all(u.startswith("file://") for u in page.requests()), page.requests()
    assert seen["scrollY"] == 0 and seen["innerHeight"] == HEIGHT
    assert seen["stamp"] == "FAIL" and seen["stampVisible"]
    assert seen["stampBox"]["bottom"] <= HEIGHT
    # the demo's failing items: AHU-3's intake and zone 203 at the governing heating condition,
    # and the janitor closet's exhaust (fixtures/demo, invented data; 48 cfm required, 40
    # scheduled: -8 cfm, -16.7 %)
    texts = [r["text"] for r in seen["rows"]]
    assert len(texts) == 3
    assert "AHU-3" in texts[0] and "-701 cfm (-26.9 %)" in texts[0] and "[heating]" in texts[0]
    assert "AHU-3/203" in texts[1] and "-100.0 cfm (-25.0 %)" in texts[1]
    assert "EF-1/121" in texts[2] and "-8.00 cfm (-16.7 %)" in texts[2]
    for row in seen["rows"]:
        assert row["visible"] and row["box"]["bottom"] <= HEIGHT, row  # no scrolling needed
    assert seen["charts"] >= 2 and seen["co2"] >= 1 and seen["details"] >= 13
    assert seen["scripts"] == 1
    assert "licensed professional of record govern" in seen["body"]
    shot = page.screenshot(_shots(tmp_path) / "demo-report-first-screen.png")
    assert shot.startswith(PNG) and len(shot) > 20_000
    full = page.screenshot(_shots(tmp_path) / "demo-report-full.png", full_page=True)
    assert full.startswith(PNG) and len(full) > len(shot)


def test_print_opens_every_trail(page, tmp_path, monkeypatch):
    monkeypatch.chdir(ROOT)
    report = tmp_path / "demo.html"
    _render([str(DEMO.relative_to(ROOT))], report)
    page.open(report)
    page.call("Emulation.setEmulatedMedia", {"media": "print"})
    try:
        page.evaluate("dispatchEvent(new Event('beforeprint'))")
        shut = page.evaluate("[...document.querySelectorAll('details')].filter(d => !d.open)"
                             ".length")
        nav = page.evaluate("getComputedStyle(document.querySelector('.bar nav')).display")
    finally:
        page.call("Emulation.setEmulatedMedia", {"media": ""})
    assert shut == 0 and nav == "none"
    assert page.problems() == []


def test_hostile_names_stay_text_in_the_browser(page, tmp_path):
    schedule = hostile.hostile_schedule(tmp_path)
    report = tmp_path / "hostile.html"
    _render([str(schedule)], report)
    page.open(report)
    seen = page.evaluate("""(() => ({
        scripts: document.scripts.length,
        imgs: document.images.length,
        h1: document.querySelectorAll('h1').length,
        handlers: [...document.querySelectorAll('*')].filter(e =>
            [...e.attributes].some(a => a.name.startsWith('on'))).length,
        body: document.body.innerText}))()""")
    assert page.problems() == []  # in particular no alert() dialog
    assert seen["scripts"] == 1 and seen["imgs"] == 0 and seen["handlers"] == 0
    assert seen["h1"] == 1
    for literal in (hostile.SCRIPT, hostile.ZONE_ID, "<h1>injected</h1>"):
        assert literal in seen["body"]
    page.screenshot(_shots(tmp_path) / "hostile-report.png")


def test_browser_driver_sees_console_errors(page, tmp_path):
    # The driver itself: a page that logs an error must be caught (else the checks above
    # would pass vacuously).
    bad = tmp_path / "bad.html"
    bad.write_text("<!DOCTYPE html><title>t</title><script>console.error('boom');"
                   "undefinedFunction()</script>", encoding="utf-8")
    page.open(bad)
    problems = page.problems()
    assert any("console.error" in p for p in problems)
    assert any("exception" in p for p in problems)



def test_summarised_report_shows_what_fails_on_the_first_screen(page, tmp_path):
    # A schedule above the size rule (docs/report-format.md): 60 invented outdoor-air systems of
    # four offices, one zone scheduled 100 cfm where it needs 110 cfm (ANSI/ASHRAE 62.1-2019
    # Section 6.2.4, Table 6.2.2.1 office rates: 5·10 + 0.06·1000 = 110 cfm).
    import yaml

    from test_html_report import _large

    schedule = tmp_path / "large.yaml"
    schedule.write_text(yaml.safe_dump(_large(60), sort_keys=False), encoding="utf-8")
    report = tmp_path / "large.html"
    _render([str(schedule)], report)
    page.open(report)
    seen = page.evaluate(FIRST_SCREEN)
    assert page.problems() == []
    assert seen["stamp"] == "FAIL" and seen["stampBox"]["bottom"] <= HEIGHT
    texts = [r["text"] for r in seen["rows"]]
    assert len(texts) == 1 and "DOAS-59/Z239" in texts[0] and "-10.0 cfm (-9.1 %)" in texts[0]
    assert seen["rows"][0]["visible"] and seen["rows"][0]["box"]["bottom"] <= HEIGHT
    # the failing zone's trail and the system's, and the collapsed table of passing zones
    assert seen["details"] == 3
    assert "Systems that pass" in seen["body"]
    page.screenshot(_shots(tmp_path) / "summarised-report-first-screen.png")
