"""``airgate compare OLD NEW``: what changed between two revisions of a schedule (a resubmittal
against the round before): verdicts, inputs, values beyond a tolerance, findings resolved and new
(docs/compare.md). Both schedules are evaluated as ``check`` would; the exit status is that of
``check`` on NEW (with the same ``--fail-on`` and ``--exit-zero``).
"""

from __future__ import annotations

import argparse
import math
from pathlib import Path

from airgate.commands.check import add_judgement, as_of_date, review_entries, waiver_entries
from airgate.commands.common import add_format, add_output, add_rules, input_suffixes
from airgate.errors import (EXIT_FAIL, EXIT_PASS, AirgateError, ErrorGroup, ScheduleError,
                            UsageError, raise_all)
from airgate.readers import document

HELP = "what changed between two revisions of a schedule"
DESCRIPTION = ("Evaluate two revisions of a schedule and list what changed: verdicts, inputs "
               "(with the line in each file), values that moved beyond a tolerance, findings "
               "resolved and new. The exit status is that of 'check' on NEW.")


def register(sub) -> None:
    from airgate.evaluation.compare import DEFAULT_TOLERANCE
    from airgate.writers.formats import COMPARE_FORMATS

    c = sub.add_parser("compare", help=HELP, description=DESCRIPTION)
    c.add_argument("old", metavar="OLD", help=f"the earlier schedule ({input_suffixes()})")
    c.add_argument("new", metavar="NEW", help="the revised schedule")
    add_rules(c, help="rule pack id or path for both (overrides each schedule's 'rules:')")
    add_format(c, list(COMPARE_FORMATS), next(iter(COMPARE_FORMATS)))
    add_output(c)
    c.add_argument("--tolerance", type=float, default=DEFAULT_TOLERANCE * 100,
                   metavar="PERCENT",
                   help="list a value when it moved by more than this share of itself "
                        f"(default: {DEFAULT_TOLERANCE * 100:g} %%)")
    add_judgement(c, "both schedules", "each comment against NEW, those whose finding was "
                  "resolved flagged for closing", "NEW fails", "; judged on NEW")


def run(args: argparse.Namespace) -> int:
    from airgate.api.compare import compare
    from airgate.evaluation.batch import gather
    from airgate.writers import formats, output

    if not (math.isfinite(args.tolerance) and args.tolerance >= 0):
        raise UsageError(f"--tolerance takes a percentage, 0 or more, got {args.tolerance:g}",
                         field=("--tolerance",), hint="e.g. --tolerance 1 (1 %)")
    if args.output and not output.is_stream(args.output):
        target = Path(args.output).resolve()
        if any(document.followable(f, ScheduleError) == target
               for f in (args.old, args.new, *args.waivers, *filter(None, [args.review]))):
            raise UsageError("the comparison would overwrite one of the files read",
                             field=("-o",))
    as_of = as_of_date(args.as_of)
    entries, errors = waiver_entries(args.waivers)
    comments, review_errors = review_entries(args.review)
    errors += review_errors
    try:
        cmp = compare(args.old, args.new, args.rules, search=args.rules_path, waivers=entries,
                      as_of=as_of, tolerance=args.tolerance / 100, review=comments)
    except ErrorGroup as exc:
        raise_all(errors + list(exc.errors))
    except AirgateError as exc:
        raise_all(errors + [exc])
    raise_all(errors)
    batch = gather([cmp.new], entries, args.fail_on)
    output.write_atomic(args.output or output.STDOUT,
                        formats.compare_stream(args.format, cmp, batch))
    if batch.gate_fails() and not args.exit_zero:
        return EXIT_FAIL
    return EXIT_PASS
