"""``airgate check``: evaluate a schedule and report findings."""

from __future__ import annotations

import argparse
import sys

from airgate.errors import EXIT_FAIL, EXIT_PASS, UsageError


def register(sub) -> None:
    c = sub.add_parser("check", help="evaluate a schedule and report findings")
    c.add_argument("file", help="schedule file (.yaml, .yml or .json)")
    c.add_argument("--rules", help="rule pack id or path (overrides the schedule's 'rules:')")
    c.add_argument("--format", choices=["text", "json"], default="text", help="report format")
    c.add_argument("-o", "--output", help="write the report to this file instead of stdout")
    c.add_argument("--series-step", type=int, default=0, metavar="MINUTES",
                   help="JSON: include each zone's design-day CO2 series at this step")
    c.add_argument("--exit-zero", action="store_true",
                   help="exit 0 even when findings fail (input errors still exit 2)")


def run(args: argparse.Namespace) -> int:
    from airgate.evaluation.engine import check_file
    from airgate.writers import json_report, output, text

    if args.series_step < 0:
        raise UsageError("--series-step takes a number of minutes, 0 or more")
    report = check_file(args.file, args.rules)
    rendered = (json_report.render(report, args.series_step) if args.format == "json"
                else text.render(report))
    if args.output:
        output.write_atomic(args.output, rendered)
    else:
        sys.stdout.write(rendered)
    if report.verdict == "fail" and not args.exit_zero:
        return EXIT_FAIL
    return EXIT_PASS
