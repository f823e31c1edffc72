"""``airgate explain``: the calculation trail of a zone or a system."""

from __future__ import annotations

import argparse
import sys

from airgate.commands.common import add_subject, pick
from airgate.errors import EXIT_PASS


def register(sub) -> None:
    e = sub.add_parser("explain", help="print the calculation trail of a zone or system")
    add_subject(e)


def run(args: argparse.Namespace) -> int:
    from airgate.api.core import check
    from airgate.writers import explain

    report = check(args.file, args.rules, search=args.rules_path)
    system, zones = pick(report, args.zone, args.system)
    if args.zone is not None:
        sys.stdout.write(explain.zone(report, system, zones[0]))
    else:
        sys.stdout.write(explain.system_(report, system))
    return EXIT_PASS
