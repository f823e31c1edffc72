"""The CI integration files work as documented (docs/ci.md, .pre-commit-hooks.yaml).

Expected values: the pre-commit hook-definition keys (id, name, entry, language, files,
pass_filenames, require_serial: pre-commit's documented manifest fields, common practice), the
console script named in pyproject.toml, and the examples in docs that must run (style.md habit).
"""

from __future__ import annotations

import re
import shlex
import tomllib
import xml.etree.ElementTree as ET

import yaml

from airgate.cli import main

from conftest import ROOT
from test_report_formats import assert_valid_sarif


def test_pre_commit_hook_runs_the_check_on_schedules():
    (hook,) = yaml.safe_load((ROOT / ".pre-commit-hooks.yaml").read_text(encoding="utf-8"))
    assert hook["id"] == "airgate-check" and hook["language"] == "python"
    assert hook["pass_filenames"] is True and hook["require_serial"] is True
    command = shlex.split(hook["entry"])
    scripts = tomllib.loads((ROOT / "pyproject.toml").read_text("utf-8"))["project"]["scripts"]
    assert command[0] in scripts and command[1] == "check"
    pattern = re.compile(hook["files"])
    assert pattern.search("schedules/level-2.yaml") and pattern.search("a/schedules/b.json")
    assert not pattern.search(".ci/config.yaml") and not pattern.search("schedules/x/old.yaml")


def test_hook_command_on_passed_filenames(tmp_path, capsys, monkeypatch):
    # pre-commit appends the changed files to the entry; the demo fails on purpose
    monkeypatch.chdir(ROOT)
    (hook,) = yaml.safe_load((ROOT / ".pre-commit-hooks.yaml").read_text(encoding="utf-8"))
    argv = shlex.split(hook["entry"])[1:] + ["fixtures/demo/fernhollow-civic-centre.yaml",
                                             "fixtures/edge/bom.yaml"]
    assert main(argv) == 1
    assert "Run summary — 2 schedules, 1 fail" in capsys.readouterr().out


def _example(doc: str, starts: str) -> list[str]:
    text = (ROOT / "docs" / doc).read_text(encoding="utf-8")
    for block in re.findall(r"```sh\n(.*?)```", text, flags=re.S):
        if block.startswith(starts):
            return shlex.split(block.replace("\\\n", " "))
    raise AssertionError(f"no example starting {starts!r} in {doc}")


def test_report_format_example_runs(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(ROOT)
    argv = _example("report-format.md", "airgate check fixtures/demo")
    argv = [re.sub(r"^(html|junit|sarif):", lambda m: f"{m.group(1)}:{tmp_path}/", a)
            for a in argv[1:]]
    assert main(argv) == 1  # the demo fails on purpose
    assert capsys.readouterr().out.startswith("airgate 0.1.0 — ventilation review")
    assert (tmp_path / "review.html").read_text("utf-8").startswith("<!DOCTYPE html>")
    ET.fromstring((tmp_path / "results.xml").read_bytes())
    assert_valid_sarif((tmp_path / "results.sarif").read_text("utf-8"))


def test_ci_example_runs_on_a_schedules_folder(tmp_path, capsys, monkeypatch):
    import shutil

    for folder in ("schedules", "approvals", "reports"):
        (tmp_path / folder).mkdir()
    shutil.copy(ROOT / "fixtures/demo/fernhollow-civic-centre.yaml", tmp_path / "schedules")
    shutil.copy(ROOT / "fixtures/demo/approvals/fernhollow-approvals.yaml",
                tmp_path / "approvals" / "waivers.yaml")
    monkeypatch.chdir(tmp_path)
    argv = _example("ci.md", "airgate check schedules/ \\\n")
    assert main(argv[1:]) == 1  # zone 203 of the demo still fails: its waiver expired
    for name in ("airgate-junit.xml", "airgate.sarif", "airgate-comment.md",
                 "airgate-review.html"):
        assert (tmp_path / "reports" / name).stat().st_size > 0
    assert "Waivers" in capsys.readouterr().out
    one = _example("ci.md", "airgate check schedules/ --format junit -o ")
    (tmp_path / "reports" / "airgate-junit.xml").unlink()
    assert main(one[1:]) == 1 and capsys.readouterr().out == ""
    ET.fromstring((tmp_path / "reports" / "airgate-junit.xml").read_bytes())
