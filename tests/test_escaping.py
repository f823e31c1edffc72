"""Every string from the input is escaped in the HTML, XML (JUnit), SARIF and Markdown reports.

The schedule (tests/hostile.py) puts markup, script, XML and Markdown syntax in the project name,
system and zone ids and names, and in a waiver's reason and approver. The expected behaviour is
common practice for each format: HTML and XML show the text literally (a parser gets the same
characters back, and no element or attribute comes from the input); Markdown shows it
literally (no HTML tag from the input survives, table pipes are escaped).
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from html.parser import HTMLParser

import pytest

from airgate.cli import main

import hostile
from test_report_formats import assert_valid_sarif


@pytest.fixture
def schedule(tmp_path):
    return str(hostile.hostile_schedule(tmp_path))


def render(capsys, schedule: str, fmt: str) -> str:
    code = main(["check", schedule, "--format", fmt])
    assert code == 1  # the hostile building fails its intake on purpose
    return capsys.readouterr().out


class _Collect(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, list]] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, attrs))

    def handle_data(self, data):
        self.text.append(data)


def test_html_escapes_every_input_string(capsys, schedule):
    out = render(capsys, schedule, "html")
    parser = _Collect()
    parser.feed(out)
    tags = [t for t, _ in parser.tags]
    assert tags.count("script") == 1  # only the report's own (opens trails for printing)
    assert "img" not in tags and "textarea" not in tags
    assert tags.count("h1") == 1  # the project title; the zone name's <h1> stays text
    assert not [(t, a) for t, a in parser.tags for name, _ in a if name.startswith("on")]
    text = "".join(parser.text)
    for literal in (hostile.PROJECT, hostile.ZONE_NAME, hostile.REASON, hostile.ZONE_ID,
                    hostile.SYSTEM_ID):
        assert literal in text


def test_junit_escapes_every_input_string(capsys, schedule):
    out = render(capsys, schedule, "junit")
    root = ET.fromstring(out.encode("utf-8"))
    suite = root.find("testsuite")
    props = {p.get("name"): p.get("value") for p in suite.iter("property")}
    assert props["project"] == hostile.PROJECT
    names = [c.get("name") for c in suite.iter("testcase")]
    subject = f"{hostile.SYSTEM_ID}/{hostile.ZONE_ID}"
    assert f"{subject} zone-limits-ev" in names
    skipped = [c for c in suite.iter("testcase") if c.find("skipped") is not None]
    assert hostile.REASON in skipped[0].find("skipped").get("message")
    assert "<script>" not in out and "&lt;script&gt;" in out


def test_sarif_keeps_input_strings_as_data(capsys, schedule):
    out = render(capsys, schedule, "sarif")
    doc = assert_valid_sarif(out)
    results = doc["runs"][0]["results"]
    subjects = {r["properties"]["subject"] for r in results}
    assert f"{hostile.SYSTEM_ID}/{hostile.ZONE_ID}" in subjects
    (waived,) = [r for r in results if r["suppressions"]]
    assert hostile.REASON in waived["suppressions"][0]["justification"]
    assert json.loads(out)["runs"][0]["properties"]["schedules"][0]["project"] == hostile.PROJECT


def test_markdown_escapes_every_input_string(capsys, schedule):
    out = render(capsys, schedule, "markdown")
    stripped = out
    for tag in ("<details>", "<summary>", "</summary>", "</details>", "<sub>", "</sub>"):
        stripped = stripped.replace(tag, "")  # the report's own tags
    assert "<" not in stripped
    assert ">" not in stripped.replace("\n> ", "\n")  # the cautions' blockquote only
    assert "&lt;script&gt;alert('x')&lt;/script&gt;" in out
    assert "\\]\\]&gt;" in out and "\\~\\~gone\\~\\~" in out and "\\*bold\\*" in out
    for line in out.splitlines():
        if line.startswith("| "):  # every table row keeps its columns: input pipes escaped
            assert line.replace("\\|", "").count("|") == 7, line  # six columns
    assert "@team" not in out and "&#64;team" in out  # a name pings no one
