"""Deterministic output (project rule; common practice for reports that are committed and diffed):
the same input gives byte-identical files whatever the environment.

One subprocess per setting (two settings) runs every command that writes a file: every report
format of ``check`` (one schedule and a run of two), ``explain``, ``rules show`` and ``rules
diff`` in each of their formats, every schema, ``import`` from every format of the importer
registry (the demo as YAML, CSV and gbXML, and as XLSX and IFC built at test time), every
``template`` format and every ``plot`` format. The files are compared byte for byte across the
settings, which differ in everything that could leak into output: hash seed (set and dict
order), time zone (clock-derived dates, ZIP entry times), locale (adopted with ``setlocale`` as
a host program might: decimal comma, the preferred encoding of files opened without one) and
working folder. The lists of formats are taken from the registries and the lists they live in,
so a new format is covered when it is added (a new importer needs the demo in its format here).
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from conftest import DEMO, ROOT, subprocess_env
from importing import demo_ifc, demo_xlsx

APPROVALS = ROOT / "fixtures" / "demo" / "approvals" / "fernhollow-approvals.yaml"
SECOND = ROOT / "fixtures" / "edge" / "bom.yaml"
RECORD = ROOT / "fixtures" / "demo" / "review" / "round-1.yaml"
DEMO_CSV = DEMO.with_suffix(".zones.csv")
DEMO_GBXML = DEMO.with_suffix(".xml")
QUILLBY = "ashrae-62.1-2019-quillby-bay"
GERMAN = "de_DE.UTF-8"

# Runs the commands given as JSON in one process; prints their exit codes and standard error.
DRIVER = """\
import contextlib, io, json, locale, sys
locale.setlocale(locale.LC_ALL, "")
from airgate.cli import main
runs = []
for argv in json.loads(sys.argv[1]):
    err = io.StringIO()
    with contextlib.redirect_stderr(err):
        code = main(argv)
    runs.append([code, err.getvalue()])
print(json.dumps(runs))
"""


def _sources(built: dict[str, Path]) -> dict[str, Path]:
    """The demo in the format of every importer of the registry."""
    from airgate.readers.importers import IMPORTERS

    demo = {"schedule": DEMO, "csv": DEMO_CSV, "gbxml": DEMO_GBXML, **built}
    assert set(demo) == set(IMPORTERS), "give the demo in the new import format here"
    return demo


def report_formats() -> list[str]:
    """Every report format; pdf only where Chromium prints it (always under CI)."""
    from airgate.writers import formats

    have = shutil.which("chromium") or shutil.which("chromium-browser")
    return [f for f in formats.FORMATS if f != "pdf" or have or os.environ.get("CI")]


def _commands(built: dict[str, Path]) -> list[list[str]]:
    """Every command writing into ``out/``; ``built`` holds the demo as XLSX and IFC."""
    from airgate.commands import rules, schema, template
    from airgate.writers import formats, plot

    waived = ["--waivers", str(APPROVALS), "--as-of", "2026-12-01"]
    out = [
        ["check", str(DEMO), *waived, "--series-step", "60",
         *[f"--format={f}:out/one.{f}" for f in report_formats()]],
        ["check", str(DEMO), str(SECOND), *waived,
         *[f"--format={f}:out/run.{f}" for f in report_formats()]],
        *[["compare", str(SECOND), str(DEMO), "--exit-zero", "--review", str(RECORD),
           "--format", f, "-o", f"out/compare.{f}"] for f in formats.COMPARE_FORMATS],
        ["explain", str(DEMO), "--zone", "203", "-o", "out/explain-zone.txt"],
        ["explain", str(DEMO), "--system", "AHU-3", "-o", "out/explain-system.txt"],
        ["rules", "show", "en-16798-1-2019", "-o", "out/show.txt"],
    ]
    for f in rules.FORMATS:
        out.append(["rules", "show", QUILLBY, "--resolved", "--format", f, "-o", f"out/res.{f}"])
    for f in rules.DIFF_FORMATS:
        out.append(["rules", "diff", "ashrae-62.1-2019", QUILLBY, "--format", f,
                    "-o", f"out/diff.{f}"])
    out += [["schema", s, "-o", f"out/schema-{s}.json"] for s in schema.SCHEMAS]
    out += [["import", str(src), "-o", f"out/import-{name}.yaml"]
            for name, src in _sources(built).items()]
    out += [["template", "--format", f, "-o", f"out/template.{f}"] for f in template.FORMATS]
    out += [["plot", str(DEMO), "--system", "AHU-3", "--format", f, "-o", f"out/plot.{f}"]
            for f in sorted(set(plot.FORMATS.values()))]
    return out


def _german_locale(tmp: Path) -> dict[str, str]:
    """LOCPATH and LC_ALL for a German locale compiled into ``tmp`` (glibc's localedef), so the
    setting does not depend on the locales a machine has installed."""
    if shutil.which("localedef") is None:
        if os.environ.get("CI"):
            pytest.fail("localedef (Debian package 'locales') is needed under CI")
        pytest.skip("localedef is missing")
    done = subprocess.run(["localedef", "-i", "de_DE", "-f", "UTF-8", str(tmp / GERMAN)],
                          capture_output=True, text=True)
    if not (tmp / GERMAN).is_dir():
        pytest.fail(f"localedef could not build {GERMAN}: {done.stderr}")
    return {"LOCPATH": str(tmp), "LC_ALL": GERMAN, "LANG": GERMAN}


def test_every_output_is_byte_identical_across_environments(tmp_path):
    built = {"xlsx": demo_xlsx(tmp_path), "ifc": demo_ifc(tmp_path)}
    commands = _commands(built)
    locales = tmp_path / "locales"
    locales.mkdir()
    # two settings that differ in every respect at once: seed, UTC offset (+12:45 against
    # −3:30, so the two clocks mostly read different dates), locale and preferred encoding
    # (UTF-8 against ASCII), working folder
    settings = {
        "seed-4242-chatham-german": {"PYTHONHASHSEED": "4242", "TZ": "Pacific/Chatham",
                                     **_german_locale(locales)},
        "seed-random-st-johns-ascii": {"PYTHONHASHSEED": "random", "TZ": "America/St_Johns",
                                       "LC_ALL": "C", "LANG": "C", "PYTHONUTF8": "0",
                                       "PYTHONCOERCECLOCALE": "0"},
    }
    results = {}
    for name, env in settings.items():
        cwd = tmp_path / name
        (cwd / "out").mkdir(parents=True)
        done = subprocess.run([sys.executable, "-c", DRIVER, json.dumps(commands)], cwd=cwd,
                              env=subprocess_env(**env), capture_output=True, text=True,
                              encoding="utf-8")
        assert done.returncode == 0, done.stderr
        runs = json.loads(done.stdout)
        files = {p.relative_to(cwd).as_posix(): p.read_bytes()
                 for p in sorted((cwd / "out").iterdir())}
        results[name] = (runs, files)

    (base_runs, base_files), *others = results.values()
    assert others
    # every command ran; the demo fails on purpose (exit 1), the rest exit 0
    assert [code for code, _ in base_runs] == [1, 1] + [0] * (len(commands) - 2), base_runs
    expected = {a[a.index("-o") + 1] for a in commands if "-o" in a}
    expected |= {spec.split(":", 1)[1] for a in commands for spec in a if spec.startswith("--format=")}
    expected = {e for e in expected if not e.endswith("template.csv")}
    assert expected <= set(base_files) and len(base_files) > len(commands)
    for runs, files in others:
        assert runs == base_runs
        assert sorted(files) == sorted(base_files)
        differ = [f for f in files if files[f] != base_files[f]]
        assert differ == []
