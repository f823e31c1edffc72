"""Benchmark: writing the HTML report of a large invented portfolio.

Not a test. Run from the repository root:

    PYTHONPATH=engine python bench/bench_html.py              # 1,000 and 10,000 zones
    PYTHONPATH=engine python bench/bench_html.py 60000        # add sizes as arguments

The portfolio is ``synthetic.demo_portfolio`` (the invented demo building repeated; one zone of
each copy fails on purpose, so every copy of its multiple-zone system fails). Above
``airgate.writers.html.DETAIL_LIMIT`` zones the HTML report is summarised (docs/report-format.md):
failing and warning zones in full, passing systems one row each, passing zones one table row.
Each size runs in a fresh process; printed, all from this one run: the check's time, the HTML
write's time and size, peak resident memory before and after the write, and the write's time
per zone as a ratio to the smallest size (1.00 everywhere means linear). The child raises the
input limits of docs/limits.md (values per document, file size) so that the largest sizes load.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from synthetic import count_zones, demo_portfolio, write  # noqa: E402

SIZES = (1000, 10000)
#: the input limits (docs/limits.md) raised for the child: a 60,000-zone schedule has more
#: values than one document may hold by default
ENV = {**os.environ, "AIRGATE_MAX_NODES": "20000000", "AIRGATE_MAX_BYTES": str(2**31)}

# Runs in the child: one check, then the HTML written as `airgate check --format html:FILE` does.
CHILD = r"""
import json, os, resource, sys, time
from pathlib import Path
from airgate import check
from airgate.evaluation.batch import gather
from airgate.writers import formats, output
t0 = time.perf_counter()
report = check(Path(sys.argv[1]))
t1 = time.perf_counter()
before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
batch = gather([report], [], "fail")
output.write_all_atomic([(sys.argv[2], formats.stream("html", batch))])
t2 = time.perf_counter()
print(json.dumps({"check": t1 - t0, "write": t2 - t1, "bytes": os.path.getsize(sys.argv[2]),
                  "rss_before_kib": before,
                  "rss_after_kib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss}))
"""


def main(argv: list[str]) -> None:
    sizes = sorted(set(SIZES) | {int(a) for a in argv})
    print("airgate HTML report benchmark: the demo building repeated (invented data); one run, "
          "numbers from this run only")
    print(f"  {'zones':>7s} {'check s':>8s} {'html s':>7s} {'html MiB':>9s} "
          f"{'peak MiB before':>16s} {'after':>6s} {'write time/zone ratio':>22s}")
    base = None
    with tempfile.TemporaryDirectory() as tmp:
        for n in sizes:
            doc = demo_portfolio(n)
            zones = count_zones(doc)
            path = write(doc, Path(tmp) / f"portfolio-{n}.yaml")
            run = subprocess.run([sys.executable, "-c", CHILD, str(path),
                                  str(path.with_suffix(".html"))],
                                 check=True, capture_output=True, text=True, env=ENV)
            got = json.loads(run.stdout.strip().splitlines()[-1])
            per_zone = got["write"] / zones
            base = base or per_zone
            print(f"  {zones:7d} {got['check']:8.2f} {got['write']:7.2f} "
                  f"{got['bytes'] / 2**20:9.1f} {got['rss_before_kib'] / 1024:16.0f} "
                  f"{got['rss_after_kib'] / 1024:6.0f} {per_zone / base:22.2f}")


if __name__ == "__main__":
    main(sys.argv[1:])
