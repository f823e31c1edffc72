"""Command line: ``airgate check | explain | rules | schema``.

Exit codes: 0 all pass, 1 a failing finding, 2 input or usage error, 3 internal error.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from collections.abc import Sequence

from airgate import __version__
from airgate.errors import EXIT_FAIL, EXIT_INPUT, EXIT_PASS, AirgateError, UsageError, nearest

EXIT_INTERNAL = 3


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="airgate",
        description="Check a building's ventilation schedule against a rule pack of a published "
                    "ventilation rate procedure.",
        epilog="Exit codes: 0 all pass, 1 failing findings, 2 input or usage error, "
               "3 internal error.")
    p.add_argument("--version", action="version", version=f"airgate {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")

    c = sub.add_parser("check", help="evaluate a schedule and report findings")
    c.add_argument("file", help="schedule file (.yaml, .yml or .json)")
    c.add_argument("--rules", help="rule pack id or path (overrides the schedule's 'rules:')")
    c.add_argument("--format", choices=["text", "json"], default="text", help="report format")
    c.add_argument("-o", "--output", help="write the report to this file instead of stdout")
    c.add_argument("--series-step", type=int, default=0, metavar="MINUTES",
                   help="JSON: include each zone's design-day CO2 series at this step")
    c.add_argument("--exit-zero", action="store_true",
                   help="exit 0 even when findings fail (input errors still exit 2)")

    e = sub.add_parser("explain", help="print the calculation trail of a zone or system")
    e.add_argument("file")
    g = e.add_mutually_exclusive_group(required=True)
    g.add_argument("--zone", help="zone id")
    g.add_argument("--system", help="system id")
    e.add_argument("--rules", help="rule pack id or path")

    pl = sub.add_parser("plot", help="draw a zone's (or system's) CO2 over the design day")
    pl.add_argument("file")
    g = pl.add_mutually_exclusive_group(required=True)
    g.add_argument("--zone", help="zone id")
    g.add_argument("--system", help="system id (all its zones)")
    pl.add_argument("-o", "--output", required=True, help="picture file, .png or .svg")
    pl.add_argument("--rules", help="rule pack id or path")

    r = sub.add_parser("rules", help="list or show rule packs")
    rs = r.add_subparsers(dest="rules_command", metavar="ACTION")
    rs.add_parser("list", help="list the built-in rule packs")
    show = rs.add_parser("show", help="show a pack's tables, methods and checks")
    show.add_argument("pack", help="pack id or path")

    s = sub.add_parser("schema", help="print a published JSON Schema")
    s.add_argument("which", choices=["schedule", "rules"])
    return p


def _check(args: argparse.Namespace) -> int:
    from airgate.evaluation.engine import check_file
    from airgate.writers import json_report, output, text

    report = check_file(args.file, args.rules)
    if args.series_step < 0:
        raise UsageError("--series-step takes a number of minutes, 0 or more")
    rendered = (json_report.render(report, args.series_step) if args.format == "json"
                else text.render(report))
    if args.output:
        output.write_atomic(args.output, rendered)
    else:
        sys.stdout.write(rendered)
    if report.verdict == "fail" and not args.exit_zero:
        return EXIT_FAIL
    return EXIT_PASS


def _explain(args: argparse.Namespace) -> int:
    from airgate.evaluation.engine import check_file
    from airgate.writers import explain

    report = check_file(args.file, args.rules)
    if args.zone is not None:
        found = report.zone(args.zone)
        if found is None:
            ids = [z.id for s in report.systems for z in s.zones]
            raise _unknown("zone", args.zone, ids)
        sys.stdout.write(explain.zone(report, *found))
        return EXIT_PASS
    system = report.system(args.system)
    if system is None:
        raise _unknown("system", args.system, [s.id for s in report.systems])
    sys.stdout.write(explain.system_(report, system))
    return EXIT_PASS


def _plot(args: argparse.Namespace) -> int:
    from airgate.evaluation.engine import check_file
    from airgate.writers import plot

    report = check_file(args.file, args.rules)
    if args.zone is not None:
        found = report.zone(args.zone)
        if found is None:
            raise _unknown("zone", args.zone, [z.id for s in report.systems for z in s.zones])
        system, zones = found[0], [found[1]]
    else:
        system = report.system(args.system)
        if system is None:
            raise _unknown("system", args.system, [s.id for s in report.systems])
        zones = system.zones
    plot.plot(report, system, zones, args.output)
    return EXIT_PASS


def _unknown(what: str, value: str, ids: list[str]) -> UsageError:
    close = nearest(value, ids)
    return UsageError(f"no {what} '{value}' in the schedule"
                      + (f"; did you mean {', '.join(close)}?" if close else ""), allowed=ids)


def _rules(args: argparse.Namespace, parser: argparse.ArgumentParser) -> int:
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


def _schema(args: argparse.Namespace) -> int:
    if args.which == "schedule":
        from airgate.models.schedule import Schedule

        schema = Schedule.model_json_schema()
        schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
        schema["title"] = "airgate ventilation schedule, format version 1"
    else:
        from airgate.readers.rulepack import pack_schema

        schema = pack_schema()
    sys.stdout.write(json.dumps(schema, indent=2, ensure_ascii=False, sort_keys=True) + "\n")
    return EXIT_PASS


def run(argv: Sequence[str] | None = None) -> int:
    parser = _parser()
    args = parser.parse_args(argv)
    if args.command == "check":
        return _check(args)
    if args.command == "explain":
        return _explain(args)
    if args.command == "rules":
        return _rules(args, parser)
    if args.command == "plot":
        return _plot(args)
    if args.command == "schema":
        return _schema(args)
    parser.print_help()
    return EXIT_INPUT


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``airgate`` console script; never shows a traceback for bad input."""
    try:
        return run(argv)
    except AirgateError as exc:
        sys.stderr.write(exc.render() + "\n")
        return exc.exit_code
    except KeyboardInterrupt:
        sys.stderr.write("airgate: interrupted\n")
        return EXIT_INPUT
    except BrokenPipeError:
        return EXIT_PASS
    except Exception as exc:  # a bug: say so briefly; AIRGATE_DEBUG=1 shows the traceback
        if os.environ.get("AIRGATE_DEBUG"):
            raise
        sys.stderr.write(f"airgate: internal error: {type(exc).__name__}: {exc}\n"
                         "  this is a bug in airgate; rerun with AIRGATE_DEBUG=1 and report it\n")
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
