"""``airgate plot``: a picture of CO2 over the design day for a zone or a system's zones."""

from __future__ import annotations

import argparse

from airgate.commands.common import add_output, add_subject, pick
from airgate.errors import EXIT_PASS


def register(sub) -> None:
    from airgate.writers.plot import FORMATS

    names = sorted(set(FORMATS.values()))
    pl = sub.add_parser("plot", help="draw a zone's (or system's) CO2 over the design day",
                        description="CO2 over the design day for one zone, or for every zone of "
                                    "a system, with the limit and the occupancy profile.")
    add_subject(pl, "system id (all its zones)")
    pl.add_argument("--format", choices=names,
                    help=f"picture format: {', '.join(names)} (default: from the -o file's "
                         "extension)")
    add_output(pl, f"picture file ({', '.join(sorted(FORMATS))})", required=True)


def run(args: argparse.Namespace) -> int:
    from airgate.api.core import check
    from airgate.writers import plot

    report = check(args.file, args.rules, search=args.rules_path)
    system, zones = pick(report, args.zone, args.system)
    plot.plot(report, system, zones, args.output, args.format)
    return EXIT_PASS
