"""``airgate explain``: the calculation trail of a zone or a system."""

from __future__ import annotations

import argparse

from airgate.commands.common import add_output, add_subject, at_condition, emit, pick
from airgate.errors import EXIT_PASS


def register(sub) -> None:
    e = sub.add_parser("explain", help="print the calculation trail of a zone or system",
                       description="The calculation trail of one zone (--zone) or one system "
                                   "(--system), step by step, with each equation, its values "
                                   "and its source.")
    add_subject(e)
    e.add_argument("--condition", metavar="ID",
                   help="design condition of the system to explain (default: the governing one)")
    add_output(e)


def run(args: argparse.Namespace) -> int:
    from airgate.api.core import check
    from airgate.writers import explain

    report = check(args.file, args.rules, search=args.rules_path)
    system, zones = pick(report, args.zone, args.system)
    if args.condition is not None:
        system, zones = at_condition(system, zones, args.condition)
    if args.zone is not None:
        emit(args.output, explain.zone(report, system, zones[0]))
    else:
        emit(args.output, explain.system_(report, system))
    return EXIT_PASS
