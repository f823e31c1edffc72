"""``airgate check --jobs``: several schedules checked in parallel processes give the reports
and errors of a run one after another, byte for byte (docs/ci.md; the standard of comparison is
the serial run, ``--jobs 1``)."""

from __future__ import annotations

import subprocess
import sys

import pytest
import yaml

from conftest import DEMO, ROOT, subprocess_env

FORMATS = ("json", "text", "sarif", "junit", "markdown")


def _folder(tmp_path, bad: bool = False):
    """The demo and three schedules of a pack's test cases (invented buildings) in one folder."""
    folder = tmp_path / "schedules"
    folder.mkdir()
    (folder / "a-demo.yaml").write_text(DEMO.read_text(encoding="utf-8"), encoding="utf-8")
    cases = sorted((ROOT / "rules" / "tests" / "ashrae-62.1-2019").glob("*.yaml"))[:3]
    for n, case in enumerate(cases):
        doc = yaml.safe_load(case.read_text(encoding="utf-8"))["schedule"]
        doc.setdefault("rules", "ashrae-62.1-2019")
        (folder / f"b-{n}.yaml").write_text(yaml.safe_dump(doc, sort_keys=False),
                                            encoding="utf-8")
    if bad:
        (folder / "c-bad.yaml").write_text((ROOT / "fixtures" / "bad" / "bad-system-kind.yaml")
                                           .read_text(encoding="utf-8"), encoding="utf-8")
    return folder


def _run(folder, out, jobs: str):
    out.mkdir()
    args = [sys.executable, "-m", "airgate", "check", str(folder), "--jobs", jobs]
    for name in FORMATS:
        args += ["--format", f"{name}:{out / name}"]
    run = subprocess.run(args, cwd=folder.parent, env=subprocess_env(), capture_output=True,
                         text=True)
    return run.returncode, run.stderr, {p.name: p.read_bytes() for p in sorted(out.iterdir())}


def test_parallel_reports_are_the_serial_ones(tmp_path):
    folder = _folder(tmp_path)
    serial = _run(folder, tmp_path / "serial", "1")
    parallel = _run(folder, tmp_path / "parallel", "3")
    assert serial[0] == 1 and sorted(serial[2]) == sorted(FORMATS)
    assert b"a-demo.yaml" in serial[2]["json"] and b"b-2.yaml" in serial[2]["json"]
    assert parallel == serial


def test_parallel_errors_are_the_serial_ones(tmp_path):
    folder = _folder(tmp_path, bad=True)
    serial = _run(folder, tmp_path / "serial", "1")
    parallel = _run(folder, tmp_path / "parallel", "0")  # one per core
    assert serial[0] == 2 and "multi-zone" in serial[1] and serial[2] == {}
    assert parallel == serial


def test_jobs_must_not_be_negative(tmp_path, capsys):
    from airgate.cli import main

    assert main(["check", str(DEMO), "--jobs", "-1"]) == 2
    assert "--jobs takes a number of processes" in capsys.readouterr().err


@pytest.mark.parametrize("jobs", ["1", "2"])
def test_one_schedule_is_checked_in_the_process_itself(tmp_path, monkeypatch, jobs):
    from airgate.api import core
    from airgate.cli import main

    calls = []
    real = core.check
    monkeypatch.setattr(core, "check", lambda *a, **kw: calls.append(a) or real(*a, **kw))
    assert main(["check", str(DEMO), "--jobs", jobs, "--format", f"json:{tmp_path / 'r'}"]) == 1
    assert len(calls) == 1
