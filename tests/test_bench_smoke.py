"""The benchmarks in bench/ still run (common practice: a smoke run keeps a benchmark from
rotting). Tiny sizes, no timing assertions: speed is only ever reported by the benchmarks
themselves, as ratios measured in one run."""

from __future__ import annotations

import sys

import numpy as np
import pytest

from conftest import ROOT

sys.path.insert(0, str(ROOT / "bench"))

import bench_dilution  # noqa: E402
import bench_portfolio  # noqa: E402
import synthetic  # noqa: E402


def test_scaling_table_runs_and_restores_the_procedure(capsys):
    from airgate.procedures import coupled

    inner = coupled._modes
    rng = np.random.default_rng(1)
    bench_dilution.scaling(rng, np.arange(25.0), np.linspace(0.0, 24.0, 25), sizes=(8, 16))
    rows = [line.split() for line in capsys.readouterr().out.splitlines()
            if line.strip()[:1].isdigit()]
    assert [int(r[0]) for r in rows] == [8, 16]
    assert rows[0][-2:] == ["1.00", "1.00"]  # the first size is the base of the ratios
    assert coupled._modes is inner


def test_two_day_target_runs(capsys):
    _, out = bench_dilution.two_day_target(np.random.default_rng(2), n_zones=6, repeats=1)
    assert out.shape == (48 * 60 + 1, 6)
    assert "of the one-second target" in capsys.readouterr().out


def test_portfolio_repeats_the_demo_with_unique_ids():
    doc = synthetic.demo_portfolio(30)
    zones = [z["id"] for s in doc["systems"] for z in s["zones"]]
    assert len(zones) >= 30 and len(set(zones)) == len(zones)
    assert len({s["id"] for s in doc["systems"]}) == len(doc["systems"])
    assert "invented" in doc["project"]["name"]


@pytest.mark.parametrize("n", [14])
def test_portfolio_benchmark_runs_end_to_end(n, capsys, monkeypatch):
    monkeypatch.setattr(bench_portfolio, "SIZES", ())
    bench_portfolio.main([str(n)])
    out = capsys.readouterr().out
    row = [line.split() for line in out.splitlines() if line.strip()[:1].isdigit()]
    assert len(row) == 1 and int(row[0][0]) >= n and row[0][-2:] == ["1.00", "1.00"]


def test_html_benchmark_runs_end_to_end(capsys, monkeypatch):
    import bench_html

    monkeypatch.setattr(bench_html, "SIZES", ())
    bench_html.main(["14"])
    out = capsys.readouterr().out
    row = [line.split() for line in out.splitlines() if line.strip()[:1].isdigit()]
    assert len(row) == 1 and int(row[0][0]) >= 14 and row[0][-1] == "1.00"


def test_vav_portfolio_is_a_valid_schedule_with_unique_ids(tmp_path):
    from airgate import check

    doc = synthetic.vav_portfolio(120, per_system=50, heights=True)
    zones = [z["id"] for s in doc["systems"] for z in s["zones"]]
    assert len(zones) == 150 and len(set(zones)) == 150
    assert all("height" in z for s in doc["systems"] for z in s["zones"])
    for suffix in (".json", ".yaml"):
        report = check(synthetic.write(doc, tmp_path / f"district{suffix}"))
        assert len(report.systems) == 3


def test_bench_run_prints_every_figure_with_its_ratio_and_target():
    import subprocess

    from conftest import subprocess_env

    run = subprocess.run([sys.executable, str(ROOT / "bench" / "run"), "--zones", "60",
                          "--sweep", "20", "--demo-zones", "40"], capture_output=True, text=True, env=subprocess_env(),
                         cwd=ROOT)
    assert run.returncode == 0, run.stderr
    out = run.stdout
    for figure in ("startup: demo check", "scale json no heights vs json.load",
                   "scale yaml no heights vs C loader", "scale json dilution on",
                   "scale yaml dilution on", "peak memory", "JSON report size",
                   "defaults: the 60-zone YAML schedule", "evaluation core (100 zones)",
                   "numpy Vot agrees", "sweep 20×20", "read and validate (json)",
                   "read and validate (yaml)", "defaults: the demo repeated to 40 zones",
                   "of it, a 50-zone check", "of it, the zones beyond",
                   "floor: the report, C encoder", "floor: the report's text written",
                   "checked whole, vs C loader"):
        assert figure in out, figure
    rows = [line for line in out.splitlines() if line.rstrip().endswith(("met", "NOT MET"))]
    assert len(rows) == 11  # startup, 4 × (scale, memory), evaluation core, sweep
    assert "read under the default limits" in out
    assert "MiB), is read (" in out  # the demo portfolio, read and validated
    # then checked whole: the demo's deliberately failing zones (fixtures/demo)
    assert "(no target; its failing zones)" in out
