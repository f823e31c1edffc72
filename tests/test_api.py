"""The public Python API (docs/api.md): the same reports and errors as the command line.

These tests compare the API with the CLI and run the page's worked example; the figures the
page shows for the invented demo are regression pins, the same as
``fixtures/demo/expected/report.json`` (not published values).
"""

from __future__ import annotations

import doctest
import json
import subprocess
import sys

import pytest
import yaml

import airgate
from airgate.cli import main

from conftest import DEMO, ROOT, schedule

DEMO_ARG = str(DEMO.relative_to(ROOT))


def _cli(capsys, *args: str) -> tuple[int, str, str]:
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def test_check_to_dict_is_the_cli_json_report(capsys, monkeypatch):
    monkeypatch.chdir(ROOT)
    code, out, _ = _cli(capsys, "check", DEMO_ARG, "--format", "json")
    report = airgate.check(DEMO_ARG)
    assert code == 1 and report.verdict == "fail"
    assert report.to_dict() == json.loads(out)
    assert report.to_dict()["verdict"] == report.verdict


def test_series_step_as_the_cli(capsys, monkeypatch):
    monkeypatch.chdir(ROOT)
    _, out, _ = _cli(capsys, "check", DEMO_ARG, "--format", "json", "--series-step", "30")
    assert airgate.check(DEMO_ARG).to_dict(series_step=30) == json.loads(out)


def test_the_page_example_runs(monkeypatch):
    monkeypatch.chdir(ROOT)
    result = doctest.testfile(str(ROOT / "docs" / "api.md"), module_relative=False,
                              globs={}, report=True, verbose=False)
    assert result.attempted >= 10
    assert result.failed == 0


def test_waivers_as_the_cli(capsys, monkeypatch):
    import datetime

    monkeypatch.chdir(ROOT)
    approvals = "fixtures/demo/approvals/fernhollow-approvals.yaml"
    _, out, _ = _cli(capsys, "check", DEMO_ARG, "--format", "json", "--waivers", approvals,
                     "--as-of", "2026-12-01")
    report = airgate.check(DEMO_ARG, waivers=airgate.load_waivers(approvals),
                           as_of=datetime.date(2026, 12, 1))
    assert report.to_dict() == json.loads(out)


def test_evaluate_in_steps_equals_check(monkeypatch):
    monkeypatch.chdir(ROOT)
    loaded = airgate.load_schedule(DEMO_ARG)
    pack = airgate.load_pack("ashrae-62.1-2019")
    assert airgate.evaluate(loaded, pack).to_dict() == airgate.check(DEMO_ARG).to_dict()


def test_the_cli_runs_through_the_api(capsys, monkeypatch):
    from airgate.api import core

    calls = []
    real = core.check

    def spy(*args, **kw):
        calls.append(args[0])
        return real(*args, **kw)

    monkeypatch.setattr(core, "check", spy)
    monkeypatch.chdir(ROOT)
    for command in (["check", DEMO_ARG], ["explain", DEMO_ARG, "--zone", "203"]):
        _cli(capsys, *command)
    assert calls == [DEMO_ARG, DEMO_ARG]


def test_a_bad_schedule_raises_what_the_cli_prints(capsys, monkeypatch):
    monkeypatch.chdir(ROOT)
    bad = "fixtures/bad/bad-system-kind.yaml"
    code, out, err = _cli(capsys, "check", bad)
    with pytest.raises(airgate.AirgateError) as caught:
        airgate.check(bad)
    assert code == 2 and out == ""
    assert err == caught.value.render() + "\n"
    assert (caught.value.file, caught.value.line, caught.value.column) == (bad, 11, 11)
    assert caught.value.exit_code == 2


def test_an_unknown_pack_is_a_pack_error():
    with pytest.raises(airgate.AirgateError) as caught:
        airgate.load_pack("no-such-pack")
    assert caught.value.kind == "rule pack error" and "unknown rule pack" in caught.value.message


def test_a_pack_loaded_for_other_options_is_an_error_at_the_schedule(tmp_path):
    data = schedule([{"id": "AHU-1", "kind": "single-zone", "outdoor_air": "133 L/s", "zones": [
        {"id": "M1", "space": "conference-room", "area": "40 m2", "occupants": 15,
         "air_distribution": "mixing"}]}], units="SI", rules="en-16798-1-2019")
    data["project"]["options"] = {"category": "II", "pollution": "low"}
    path = tmp_path / "offices.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    loaded = airgate.load_schedule(path)
    other = airgate.load_pack("en-16798-1-2019", options={"category": "I", "pollution": "low"})
    with pytest.raises(airgate.AirgateError) as caught:
        airgate.evaluate(loaded, other)
    assert caught.value.file == str(path) and caught.value.field == ("project", "options")
    assert caught.value.line is not None
    same = airgate.load_pack("en-16798-1-2019", options=loaded.model.project.options)
    assert airgate.evaluate(loaded, same).to_dict() == airgate.check(path).to_dict()


def test_series_false_drops_only_the_series(capsys, monkeypatch):
    # evaluate(series=False) (docs/api.md): the design-day series are let go, nothing else
    # changes; asking such a report for series is an error, not an empty answer. Regression
    # pins against the demo's own report with series kept (not published values).
    monkeypatch.chdir(ROOT)
    kept, dropped = airgate.check(DEMO_ARG), airgate.check(DEMO_ARG, series=False)
    with_series = [z for s in kept.systems for z in s.zones if z.series is not None]
    assert with_series and kept.series  # the demo has design days
    assert all(z.series is None and z.rise is None for s in dropped.systems for z in s.zones)
    assert not dropped.series
    assert dropped.to_dict() == kept.to_dict()
    assert [z.dilution.value("C_peak") for s in dropped.systems for z in s.zones
            if z.dilution is not None and "C_peak" in z.dilution.steps] == \
        [z.dilution.value("C_peak") for s in kept.systems for z in s.zones
         if z.dilution is not None and "C_peak" in z.dilution.steps]
    with pytest.raises(ValueError, match="series=False"):
        dropped.to_dict(series_step=30)
    from airgate.evaluation.batch import gather
    from airgate.writers import formats

    with pytest.raises(ValueError, match="series=False"):  # a format that draws them
        formats.render("html", gather([dropped], []))
    assert formats.render("json", gather([dropped], [])) == \
        formats.render("json", gather([kept], []))


@pytest.mark.parametrize(("formats", "step", "kept"), [
    (["json"], 0, False), (["text", "sarif", "junit", "markdown"], 0, False),
    (["json"], 30, True), (["json", "html:r.html"], 0, True), (["pdf:r.pdf"], 0, True)])
def test_check_keeps_the_series_only_for_what_draws_them(formats, step, kept):
    # The formats registry says which formats draw the series (html, pdf); --series-step asks
    # for them in JSON (docs/report-format.md).
    from airgate.commands.check import keeps_series

    targets = [(f.partition(":")[0], f.partition(":")[2] or None) for f in formats]
    args = type("Args", (), {"series_step": step})()
    assert keeps_series(args, targets) is kept


def test_html_report_is_the_same_when_json_is_written_beside_it(tmp_path, monkeypatch):
    # The evaluation keeps the series for a run that writes html, whatever else it writes:
    # the html written beside json is the html written alone.
    monkeypatch.chdir(ROOT)
    alone, both = tmp_path / "alone.html", tmp_path / "both.html"
    main(["check", DEMO_ARG, "--format", f"html:{alone}"])
    main(["check", DEMO_ARG, "--format", f"json:{tmp_path / 'r.json'}", "--format",
          f"html:{both}"])
    assert alone.read_bytes() == both.read_bytes()
    charts = both.read_text(encoding="utf-8").count("<figure>")  # one per design-day series
    assert charts == sum(z.series is not None for s in airgate.check(DEMO_ARG).systems
                         for z in s.zones) > 0


def test_import_airgate_loads_nothing_else():
    """``import airgate`` is cheap: no engine, no pydantic, numpy, pint or YAML until used."""
    code = ("import sys, airgate; print(sorted(m for m in sys.modules if m.startswith("
            "('airgate', 'pydantic', 'numpy', 'pint', 'yaml', 'jsonschema'))))")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         env={"PYTHONPATH": str(ROOT / "engine")}, cwd=ROOT)
    assert run.returncode == 0, run.stderr
    assert run.stdout.strip() == "['airgate']"


def test_the_public_names():
    assert {"load_schedule", "load_pack", "load_waivers", "evaluate", "check", "Report",
            "AirgateError"} <= set(airgate.__all__)
    with pytest.raises(AttributeError):
        airgate.no_such_name  # noqa: B018
