"""Benchmark: the whole check (read, validate, evaluate, write) on a large invented portfolio.

Not a test. Run from the repository root:

    PYTHONPATH=engine python bench/bench_portfolio.py            # 1,000 and 10,000 zones
    PYTHONPATH=engine python bench/bench_portfolio.py 100000     # add sizes as arguments

The portfolio is ``synthetic.demo_portfolio``: the invented demo building repeated with renamed
systems and zones until it holds at least N zones, written to one YAML schedule. Each size runs
in a fresh process (``airgate check FILE --format text:… --format json:…``) so that start-up and
peak memory are its own. Printed, all from this one run: wall time split into reading +
validation, evaluation and writing, time per zone, peak resident memory, and each size's
per-zone time and memory as a ratio to the smallest size (1.00 everywhere means linear).
"""

from __future__ import annotations

import json
import subprocess
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from synthetic import count_zones, demo_portfolio, write  # noqa: E402

SIZES = (1000, 10000)

# Runs in the child: one check, timed by stage, then the process's peak resident memory.
CHILD = r"""
import json, resource, sys, time
from pathlib import Path
t0 = time.perf_counter()
from airgate.evaluation.batch import gather
from airgate import check
from airgate.writers import formats, output
t1 = time.perf_counter()
report = check(Path(sys.argv[1]))
t2 = time.perf_counter()
batch = gather([report], [], "fail")  # as airgate check writes its reports
output.write_all_atomic([(sys.argv[2], formats.stream("text", batch)),
                         (sys.argv[3], formats.stream("json", batch))])
t3 = time.perf_counter()
print(json.dumps({"import": t1 - t0, "check": t2 - t1, "write": t3 - t2,
                  "maxrss_kib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss}))
"""


def main(argv: list[str]) -> None:
    sizes = sorted(set(SIZES) | {int(a) for a in argv})
    print("airgate portfolio benchmark: whole check of the demo building repeated "
          "(invented data); one run, numbers from this run only")
    print(f"  {'zones':>7s} {'read+eval s':>11s} {'write s':>8s} {'us/zone':>9s} "
          f"{'peak MiB':>9s} {'time/zone ratio':>16s} {'memory/zone ratio':>18s}")
    base = None
    with tempfile.TemporaryDirectory() as tmp:
        for n in sizes:
            doc = demo_portfolio(n)
            zones = count_zones(doc)
            path = write(doc, Path(tmp) / f"portfolio-{n}.yaml")
            run = subprocess.run(
                [sys.executable, "-c", CHILD, str(path), str(path.with_suffix(".txt")),
                 str(path.with_suffix(".json"))],
                check=True, capture_output=True, text=True)
            got = json.loads(run.stdout.strip().splitlines()[-1])
            per_zone = (got["check"] + got["write"]) / zones
            mem = got["maxrss_kib"] / 1024
            base = base or (per_zone, mem / zones)
            print(f"  {zones:7d} {got['check']:11.2f} {got['write']:8.2f} "
                  f"{per_zone * 1e6:9.0f} {mem:9.0f} {per_zone / base[0]:16.2f} "
                  f"{mem / zones / base[1]:18.2f}")


if __name__ == "__main__":
    main(sys.argv[1:])
