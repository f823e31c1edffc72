"""``airgate plot``: a picture of CO2 over the design day for a zone or a system's zones."""

from __future__ import annotations

import argparse

from airgate.commands.common import add_subject, pick
from airgate.errors import EXIT_PASS


def register(sub) -> None:
    pl = sub.add_parser("plot", help="draw a zone's (or system's) CO2 over the design day")
    add_subject(pl, "system id (all its zones)")
    pl.add_argument("-o", "--output", required=True, help="picture file, .png or .svg")


def run(args: argparse.Namespace) -> int:
    from airgate.api.core import check
    from airgate.writers import plot

    report = check(args.file, args.rules, search=args.rules_path)
    system, zones = pick(report, args.zone, args.system)
    plot.plot(report, system, zones, args.output)
    return EXIT_PASS
