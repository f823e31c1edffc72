"""The printed report: the HTML report's print stylesheet and ``--format pdf:FILE``.

The PDF is printed by headless Chromium and checked by rendering its pages to images and reading
their text with poppler's ``pdftoppm`` and ``pdftotext`` (Debian's poppler-utils): the pages
render, the page is US letter for an I-P report (ANSI/ASME Y14.1, 8.5 × 11 in; common practice),
each system begins a page, the navigation is not printed and the calculation trails are. Markers
that must survive black-and-white printing are checked in the browser with print media
emulated: the row markers of fail, warning and waived findings differ in line style or width,
and the bars of zones short of outdoor air differ from the others in relative luminance by at
least 0.3 (relative luminance as W3C WCAG 2.1 defines it, from sRGB).

Skipped only when Chromium or poppler-utils is missing and ``CI`` is not set; under CI it must run
(``.ci/run`` installs both).
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
from pathlib import Path

import pytest

import airgate
from airgate.cli import main

from browser import Page, find_chromium
from conftest import DEMO, schedule

CHROMIUM = find_chromium()
POPPLER = shutil.which("pdftoppm") and shutil.which("pdftotext")
if CHROMIUM is None or not POPPLER:
    missing = "Chromium" if CHROMIUM is None else "poppler-utils"
    if os.environ.get("CI"):
        pytest.fail(f"{missing} is required under CI (apt-get install chromium poppler-utils)",
                    pytrace=False)
    pytest.skip(f"{missing} is not installed", allow_module_level=True)


@pytest.fixture(scope="module")
def printed(tmp_path_factory):
    """The demo's PDF and HTML reports from one run, and its pages' text."""
    tmp = tmp_path_factory.mktemp("pdf")
    pdf, html = tmp / "report.pdf", tmp / "report.html"
    assert main(["check", str(DEMO), "--format", f"pdf:{pdf}", "--format", f"html:{html}"]) == 1
    pages = []
    while True:
        n = len(pages) + 1
        done = subprocess.run(["pdftotext", "-f", str(n), "-l", str(n), "-layout", str(pdf), "-"],
                              capture_output=True, text=True)
        if done.returncode != 0 or n > 500:
            break
        pages.append(done.stdout)
    return pdf, html, pages


def _lines(text: str) -> list[str]:
    return [" ".join(line.split()) for line in text.splitlines() if line.strip()]


def test_the_pages_render_to_images(printed, tmp_path):
    from PIL import Image

    pdf, _, pages = printed
    assert pdf.read_bytes().startswith(b"%PDF-")
    subprocess.run(["pdftoppm", "-r", "30", "-gray", "-png", str(pdf), str(tmp_path / "p")],
                   check=True)
    images = sorted(tmp_path.glob("p-*.png"))
    assert len(images) == len(pages) >= 1 + len(airgate.check(DEMO).systems)
    for path in images:
        with Image.open(path) as im:
            gray = im.convert("L")
            inked = sum(gray.histogram()[:200])  # pixels of text, rules or curves
            assert gray.getextrema()[1] == 255 and inked > 50, path.name  # no blank page
            assert im.height / im.width == pytest.approx(11 / 8.5, rel=0.02)  # US letter


def test_each_system_begins_a_page(printed):
    _, _, pages = printed
    for s in airgate.check(DEMO).systems:
        head = f"{s.id} {s.name}"
        starts = [i for i, p in enumerate(pages) if any(
            line.startswith(head) for line in _lines(p)[:2])]
        assert starts, f"no page begins with system {s.id}"


def test_the_navigation_is_not_printed_and_the_trails_are(printed):
    _, html, pages = printed
    first = _lines(pages[0])
    assert first[0] == "airgate · ventilation review"
    nav = [line for line in first if "what fails" in line and "provenance" in line]
    assert nav == []
    assert 'href="#r1-provenance">provenance</a>' in html.read_text(encoding="utf-8")
    assert any("Calculation trail — zone 203" in p for p in pages)  # opened before printing
    assert any("licensed professional of record govern" in " ".join(p.split()) for p in pages)


MARKERS = """(() => {
  const table = document.createElement('table');
  table.innerHTML = '<tr class="fail"><td>f</td></tr><tr class="warning"><td>w</td></tr>' +
                    '<tr class="waived"><td>v</td></tr>';
  document.body.appendChild(table);
  const svg = document.querySelector('svg.airflow');
  const got = svg.querySelector('g:not(.short) .got'), short = svg.querySelector('.short .got');
  const cell = c => { const s = getComputedStyle(table.querySelector('tr.' + c + ' td'));
    return [s.borderLeftStyle, s.borderLeftWidth]; };
  return {fail: cell('fail'), warning: cell('warning'), waived: cell('waived'),
          got: getComputedStyle(got).fill, short: getComputedStyle(short).fill,
          nav: getComputedStyle(document.querySelector('.bar nav')).display};
})()"""


def _luminance(css: str) -> float:
    """WCAG 2.1 relative luminance of an ``rgb(r, g, b)`` colour (sRGB, D65)."""
    r, g, b = (int(x) / 255 for x in css[css.index("(") + 1:css.index(")")].split(",")[:3])
    lin = [c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4 for c in (r, g, b)]
    return 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2]


def test_markers_survive_black_and_white_printing(printed):
    _, html, _ = printed
    with Page(CHROMIUM) as page:
        page.open(html)
        page.call("Emulation.setEmulatedMedia", {"media": "print"})
        got = page.evaluate(MARKERS)
    styles = {tuple(got[k]) for k in ("fail", "warning", "waived")}
    assert len(styles) == 3, got  # three different line styles or widths
    assert abs(_luminance(got["got"]) - _luminance(got["short"])) >= 0.3, got
    assert got["nav"] == "none"


def test_the_paper_follows_the_unit_system(tmp_path):
    si = schedule([{"id": "S-1", "kind": "single-zone", "outdoor_air": "60 L/s",
                    "zones": [{"id": "1", "space": "office-space", "area": "100 m2",
                               "occupants": 10, "air_distribution": "ceiling-supply-cool"}]}],
                  units="SI", rules="ashrae-62.1-2019-si")
    path = tmp_path / "si.yaml"
    path.write_text(json.dumps(si), encoding="utf-8")
    out = tmp_path / "si.pdf"
    main(["check", str(path), "--format", f"pdf:{out}"])
    info = subprocess.run(["pdfinfo", str(out)], capture_output=True, text=True).stdout \
        if shutil.which("pdfinfo") else ""
    html = tmp_path / "si.html"
    main(["check", str(path), "--format", f"html:{html}"])
    assert "@page{size:A4}" in html.read_text(encoding="utf-8")
    if info:
        assert "(A4)" in info


def test_the_pdf_holds_no_clock_time(tmp_path):
    from airgate.writers.pdf import print_html

    html = "<!DOCTYPE html><html><head><title>t</title></head><body><p>airgate</p></body></html>"
    first, second = print_html(html), print_html(html)
    assert first == second
    assert b"(D:20000101000000" in first


def test_the_pdf_is_printed_untagged(tmp_path):
    # Chromium names tagged structure elements after DOM node numbers whose order varies from
    # run to run; untagged, the same page prints the same file (the determinism test checks it)
    from airgate.writers.pdf import print_html

    html = "<!DOCTYPE html><html><body><table><tr><th>a</th></tr></table></body></html>"
    assert b"/StructElem" not in print_html(html)


def test_pdf_needs_a_file_and_chromium(tmp_path, capsys, monkeypatch):
    out = tmp_path / "r.pdf"
    assert main(["check", str(DEMO), "--format", "pdf"]) == 2
    assert "the pdf format is written to a file" in capsys.readouterr().err
    monkeypatch.setenv("AIRGATE_CHROMIUM", str(tmp_path / "no-such-browser"))
    assert main(["check", str(DEMO), "--format", f"pdf:{out}"]) == 2
    err = capsys.readouterr().err
    assert "AIRGATE_CHROMIUM" in err and "Traceback" not in err
    assert not out.exists()
