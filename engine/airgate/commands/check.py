"""``airgate check``: evaluate one or more schedules, write reports, and gate on the result.

One report is ``--format NAME [-o FILE]``; several reports of one run are ``--format NAME:FILE``
(repeatable), at most one of them without a file (standard output, or ``-o``). Every schedule is evaluated before anything is written: bad input anywhere stops the run
with exit 2 and writes nothing (each regular output file is written atomically; standard
output, devices and pipes are written in place: airgate.writers.output).
"""

from __future__ import annotations

import argparse
import datetime as dt
import os
import sys
from pathlib import Path

from airgate.commands.common import add_output, add_rules_path, input_suffixes
from airgate.errors import (EXIT_FAIL, EXIT_PASS, AirgateError, ErrorGroup, ScheduleError,
                            UsageError, raise_all)
from airgate.escaping import terminal
from airgate.gcpause import paused
from airgate.readers import document
from airgate.readers.importers import IMPORTERS, is_report

#: the files of a folder that are checked: YAML/JSON schedules (not imports)
SCHEDULE_SUFFIXES = IMPORTERS["schedule"].suffixes



def add_judgement(parser, applies_to: str, review: str, failing: str, judged: str = "") -> None:
    """The options that judge an evaluation, spelled alike by ``check`` and ``compare``:
    ``--waivers``, ``--as-of``, ``--review``, ``--fail-on`` and ``--exit-zero``."""
    from airgate.evaluation.gate import FAIL_ON

    parser.add_argument("--waivers", action="append", default=[], metavar="FILE",
                        help=f"a waivers file applied to {applies_to} (repeatable)")
    parser.add_argument("--as-of", metavar="YYYY-MM-DD",
                        help="judge waiver expiry on this date (default: today)")
    parser.add_argument("--review", metavar="FILE", help=f"a reviewer's record: {review}")
    parser.add_argument("--fail-on", choices=FAIL_ON, action="append",
                        metavar="{" + ",".join(FAIL_ON) + "}",
                        help=f"what fails the run, repeatable: {', '.join(FAIL_ON)} (default "
                             f"{FAIL_ON[0]}: a failing code finding; warning: also warnings and "
                             "stale waivers; declared: also limits the schedule declares for "
                             f"itself and misses){judged}")
    parser.add_argument("--exit-zero", action="store_true",
                        help=f"exit 0 even when {failing} (input errors still exit 2)")


def register(sub) -> None:
    from airgate.writers.formats import FORMATS

    c = sub.add_parser("check", help="evaluate schedules and report findings",
                       description="Evaluate ventilation schedules against a rule pack. One "
                                   "report: --format NAME [-o FILE]. Several reports of one "
                                   "run: --format NAME:FILE, repeated (at most one format "
                                   "without a file goes to standard output).")
    c.add_argument("paths", nargs="+", metavar="PATH",
                   help=f"schedule files ({input_suffixes()}; see docs/importing.md) or "
                        f"folders holding {', '.join(SCHEDULE_SUFFIXES)} schedules")
    c.add_argument("--rules", action="append", metavar="ID|PATH",
                   help="rule pack id or path (overrides the schedule's 'rules:'); repeat it to "
                        "check supplement packs beside the first, the rates pack "
                        "(docs/schedule-format.md)")
    add_rules_path(c)
    c.add_argument("--format", action="append", metavar="NAME[:FILE]", dest="formats",
                   help=f"report format: {', '.join(FORMATS)} (default: {next(iter(FORMATS))}); "
                        "NAME:FILE writes it to FILE; repeatable, one evaluation for all")
    add_output(c, "file for the one --format given without a file (default: standard output)")
    add_judgement(c, "every schedule", "comments on findings, shown in the text, Markdown and "
                  "HTML reports against what each finding is now (one schedule)", "findings fail")
    c.add_argument("--series-step", type=int, default=0, metavar="MINUTES",
                   help="JSON: include each zone's design-day CO2 series at this step")
    c.add_argument("--trails", action="store_true",
                   help="JSON: include every zone's calculation trail (each step's formula, "
                        "source and note; without it a zone carries its values only)")
    c.add_argument("--jobs", type=int, default=0, metavar="N",
                   help="check several schedules in N processes at once (default: one per "
                        "core; 1: one after another); the reports are the same either way")


def _destinations(args: argparse.Namespace) -> list[tuple[str, str | None]]:
    """(format, file or None for stdout) pairs, checked before anything is evaluated."""
    from airgate.writers.formats import FORMATS
    from airgate.writers.output import is_stream

    specs = args.formats or [next(iter(FORMATS))]
    out: list[tuple[str, str | None]] = []
    for spec in specs:
        name, sep, dest = spec.partition(":")
        if name not in FORMATS:
            raise UsageError(f"unknown report format '{name}'", allowed=list(FORMATS),
                             field=("--format",), hint="e.g. --format html:report.html")
        if sep and not dest:
            raise UsageError(f"--format {spec}: give a file after the colon", field=("--format",))
        out.append((name, dest or None))
    bare = [i for i, (_, d) in enumerate(out) if d is None]
    if args.output:
        if len(bare) != 1:
            raise UsageError("-o names the file of the one --format given without a file; "
                             f"{len(bare)} are without one", field=("-o",),
                             hint="write each as --format NAME:FILE")
        out[bare[0]] = (out[bare[0]][0], args.output)
    out = [(name, None if d == "-" else d) for name, d in out]  # '-': standard output
    for name, d in out:
        if FORMATS[name].binary and d is None:
            raise UsageError(f"the {name} format is written to a file", field=("--format",),
                             hint=f"e.g. --format {name}:report{FORMATS[name].extension}")
    if any(name == "pdf" for name, _ in out):
        from airgate.writers.pdf import chromium

        chromium()  # missing: said now, before anything is evaluated
    to_stdout = [name for name, d in out if d is None]
    if len(to_stdout) > 1:
        raise UsageError("at most one format can go to standard output; "
                         f"{', '.join(to_stdout)} have no file (or '-')",
                         field=("--format",), hint="write the others as --format NAME:FILE")
    files = [Path(d).resolve() for _, d in out if d is not None and not is_stream(d)]
    if len(set(files)) != len(files):
        raise UsageError("two formats would write the same file", field=("--format",))
    for _, d in out:
        if d is not None and Path(d).is_dir():
            raise UsageError(f"cannot write {d}: it is a folder", field=("--format",))
        if d is not None and not (Path(d).parent if str(Path(d).parent) else Path(".")).is_dir():
            raise UsageError(f"cannot write {d}: folder {Path(d).parent} does not exist",
                             field=("--format",))
    return out


def schedules(paths: list[str]) -> list[str]:
    """The schedule files named, folders expanded to their *.yaml, *.yml and *.json files
    (not recursive, sorted by name); each file once, in the order given. A folder's files that
    are airgate's own JSON reports are skipped, each with a note on standard error."""
    out: list[str] = []
    for p in paths:
        path = Path(p)
        if path.is_dir():
            found = []
            for f in sorted(path.iterdir(), key=str):
                if not (f.is_file() and f.suffix.lower() in SCHEDULE_SUFFIXES):
                    continue
                if is_report(f):
                    sys.stderr.write(f"note: skipped {terminal(str(f))}: an airgate report, "
                                     "not a schedule\n")
                    continue
                found.append(str(f))
            if not found:
                raise UsageError(f"folder {p} holds no schedule (*.yaml, *.yml, *.json)",
                                 field=("PATH",))
            out += found
        else:
            document.followable(p, ScheduleError)  # a loop of links is refused here, located
            out.append(p)  # as given: reports copy the path
    seen: set[str] = set()
    return [f for f in out if not (f in seen or seen.add(f))]


def waiver_entries(paths: list[str]):
    """The entries of the waivers files and their structural problems: the well-formed entries
    are still evaluated, so that an unknown check id (known only with the rule pack) is
    reported in the same round as a missing field."""
    from airgate.evaluation.waivers import from_file
    from airgate.readers.waivers import read_waivers_partly

    entries, errors = [], []
    for w in paths:
        loaded, where, problems = read_waivers_partly(w)
        errors += problems
        if loaded is not None:
            entries += from_file(loaded, where)
    return entries, errors


def review_entries(path: str | None):
    """The comments of a reviewer's record and its structural problems (the well-formed
    comments are still evaluated, so that an unknown check id is reported in the same round)."""
    if path is None:
        return [], []
    from airgate.evaluation.review import from_file
    from airgate.readers.review import read_review

    loaded, where, problems = read_review(path)
    return ([] if loaded is None else from_file(loaded, where)), problems


def _unique(errors: list[AirgateError]) -> list[AirgateError]:
    """Each problem once (a waivers file's unknown check id is found with every schedule)."""
    seen: set[str] = set()
    return [e for e in errors if not (str(e.render()) in seen or seen.add(str(e.render())))]


def as_of_date(text: str | None) -> dt.date | None:
    if text is None:
        return None
    try:
        return dt.date.fromisoformat(text)
    except ValueError:
        raise UsageError(f"--as-of takes a date written YYYY-MM-DD, got {text!r}",
                         field=("--as-of",)) from None


class _Progress:
    """A one-line progress bar on standard error, only when it is a terminal."""

    def __init__(self, total: int) -> None:
        self.total = total
        self.on = total > 1 and sys.stderr.isatty()

    def step(self, done: int, name: str) -> None:
        if not self.on:
            return
        width = 24
        filled = width * done // self.total
        bar = "█" * filled + "·" * (width - filled)
        sys.stderr.write(f"\r\033[Kchecking {bar} {done}/{self.total} {terminal(name[-40:])}")
        sys.stderr.flush()

    def close(self) -> None:
        if self.on:
            sys.stderr.write("\r\033[K")
            sys.stderr.flush()


def _jobs(args: argparse.Namespace, files: int) -> int:
    """Processes for a run of ``files`` schedules: ``--jobs``, or one per core."""
    if args.jobs < 0:
        raise UsageError("--jobs takes a number of processes, 1 or more (0: one per core)",
                         field=("--jobs",))
    cores = (len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity")
             else os.cpu_count() or 1)
    return max(1, min(args.jobs or cores, files))


def _check_one(f: str, rules, entries, as_of, search, comments, series=True):
    """A worker's check of one schedule: its report, or None when the check raised (the parent
    then checks that schedule itself, so its errors are raised exactly as in a serial run)."""
    from airgate.api.core import check

    try:
        return check(f, rules, waivers=entries, as_of=as_of, search=search, review=comments,
                     series=series)
    except Exception:  # noqa: BLE001 - reported by the parent's own check of the file
        return None


def _in_workers(files: list[str], jobs: int, args, entries, as_of, comments,
                progress: _Progress, series: bool = True) -> list:
    """Each schedule's report checked in ``jobs`` processes, in the order given; None for a
    schedule whose check raised or whose report could not be handed back."""
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    methods = multiprocessing.get_all_start_methods()
    context = multiprocessing.get_context("fork" if "fork" in methods else None)
    out: list = []
    try:
        with ProcessPoolExecutor(jobs, mp_context=context) as pool:
            futures = [pool.submit(_check_one, f, args.rules, entries, as_of,
                                   args.rules_path, comments, series) for f in files]
            for i, (f, future) in enumerate(zip(files, futures)):
                progress.step(i, f)
                try:
                    out.append(future.result())
                except Exception:  # noqa: BLE001 - a report that does not pickle: checked here
                    out.append(None)
    except OSError:  # no processes to be had (a sandbox without semaphores): checked here
        pass
    return out + [None] * (len(files) - len(out))


def keeps_series(args: argparse.Namespace, targets: list[tuple[str, str | None]]) -> bool:
    """Whether the evaluation keeps the zones' design-day series: only a format that draws
    them (html, pdf) or ``--series-step`` reads them; the rest let them go (about 11.5 kB a
    zone with a design day, docs/performance.md)."""
    from airgate.writers.formats import FORMATS

    return args.series_step > 0 or any(FORMATS[name].series for name, _ in targets)


def _evaluate(files: list[str], args, entries, as_of, comments=(), series: bool = True):
    """Every schedule's report, in the order given; with several schedules and cores, checked
    in parallel processes (``--jobs``), with results identical to a serial run. ``series``:
    keep the zones' design-day series (:func:`keeps_series`)."""
    from airgate.api.core import check

    jobs = _jobs(args, len(files))
    reports, errors = [], []
    progress = _Progress(len(files))
    try:
        done = (_in_workers(files, jobs, args, entries, as_of, comments, progress, series)
                if jobs > 1 else [None] * len(files))
        for i, (f, report) in enumerate(zip(files, done)):
            if report is not None:
                reports.append(report)
                continue
            progress.step(i, f)
            try:
                reports.append(check(f, args.rules, waivers=entries, as_of=as_of,
                                     search=args.rules_path, review=comments,
                                     series=series))
            except ErrorGroup as exc:
                errors += exc.errors
            except AirgateError as exc:
                errors.append(exc)
        progress.step(len(files), "")
    finally:
        progress.close()
    raise_all(errors)  # every bad schedule of the run is reported, then nothing is written
    return reports


def run(args: argparse.Namespace) -> int:
    """``airgate check``: the collector paused for the whole command (airgate/gcpause.py), not
    for reading, evaluating and writing each apart, and resumed only after :func:`_run` has
    returned and its schedules and reports are freed: resumed while a portfolio's objects were
    alive, the collector's next pass would walk every one of them (about 0.3 s per 100,000
    zones each time, docs/performance.md)."""
    with paused():
        return _run(args)


def _run(args: argparse.Namespace) -> int:
    from airgate.evaluation.batch import gather
    from airgate.writers import formats, output

    if args.series_step < 0:
        raise UsageError("--series-step takes a number of minutes, 0 or more")
    targets = _destinations(args)
    as_of = as_of_date(args.as_of)
    files = schedules(args.paths)
    if args.review and len(files) > 1:
        raise UsageError(f"--review takes the record of one schedule; {len(files)} are checked",
                         field=("--review",), hint="check the schedule the record is about alone")
    written = {Path(d).resolve() for _, d in targets if d is not None}
    read = [*files, *args.waivers, *([args.review] if args.review else [])]
    if any(document.followable(f, ScheduleError) in written for f in read):
        raise UsageError("a report would overwrite one of the schedules, waivers files or "
                         "records read", field=("--format",))
    entries, waiver_errors = waiver_entries(args.waivers)
    comments, review_errors = review_entries(args.review)
    waiver_errors += review_errors
    try:
        reports = _evaluate(files, args, entries, as_of, comments, keeps_series(args, targets))
    except ErrorGroup as exc:
        raise_all(_unique(waiver_errors + list(exc.errors)))
    except AirgateError as exc:
        raise_all(_unique(waiver_errors + [exc]))
    raise_all(waiver_errors)
    batch = gather(reports, entries, args.fail_on)
    # every regular file of the run appears together or not at all; streams (standard
    # output, devices, pipes) are written in place before the files are moved into place
    output.write_all([(output.STDOUT if d is None else d,
                       formats.stream(name, batch, args.series_step, args.trails))
                      for name, d in targets])
    if batch.gate_fails() and not args.exit_zero:
        return EXIT_FAIL
    return EXIT_PASS
