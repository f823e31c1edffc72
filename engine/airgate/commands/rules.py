"""``airgate rules``: list and show rule packs."""

from __future__ import annotations

import argparse
import sys

from airgate.errors import EXIT_PASS, UsageError


def register(sub) -> None:
    r = sub.add_parser("rules", help="list or show rule packs")
    rs = r.add_subparsers(dest="rules_command", metavar="ACTION")
    rs.add_parser("list", help="list the built-in rule packs")
    show = rs.add_parser("show", help="show a pack's tables, methods and checks")
    show.add_argument("pack", help="pack id or path")


def run(args: argparse.Namespace) -> int:
    from airgate.readers.rulepack import builtin_pack_ids, load_pack
    from airgate.writers.packs import pack_summary

    if args.rules_command == "list":
        for pack_id in builtin_pack_ids():
            pack = load_pack(pack_id)
            sys.stdout.write(f"{pack.id:28} {pack.units}  {pack.title}\n")
        return EXIT_PASS
    if args.rules_command == "show":
        from airgate.evaluation.bind import check_pack_checks
        from airgate.evaluation.checks import KNOWN_CHECKS

        pack = load_pack(args.pack)
        check_pack_checks(pack, set(KNOWN_CHECKS))  # a pack is shown only if it would run
        sys.stdout.write(pack_summary(pack))
        return EXIT_PASS
    raise UsageError("choose what to do with rule packs", allowed=["list", "show ID"],
                     hint="airgate rules list")
