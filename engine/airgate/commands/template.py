"""``airgate template``: an empty schedule workbook (or CSV tables) to fill in."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from airgate.commands.common import add_format, add_output, add_rules
from airgate.errors import EXIT_PASS, UsageError

#: what ``template`` writes: an .xlsx workbook, or a set of CSV tables
FORMATS = ("xlsx", "csv")
#: the pack whose space types the template offers unless ``--rules`` names another
DEFAULT_RULES = "ashrae-62.1-2019"


def register(sub) -> None:
    from airgate.units import UNIT_SYSTEMS

    t = sub.add_parser(
        "template", help="write an empty schedule workbook or CSV tables to fill in",
        description="Write the Project, Systems, Zones and Profiles tables with their headers "
                    "and units. The workbook also lists the rule pack's space types and Ez rows "
                    "and offers them as drop-downs.")
    add_format(t, FORMATS, FORMATS[0], "file format")
    add_output(t, "workbook file (.xlsx), or for csv the STEM of STEM.zones.csv …",
               required=True)
    add_rules(t, f"rule pack id or path whose space types the drop-downs offer "
                 f"(default: {DEFAULT_RULES})", default=DEFAULT_RULES)
    t.add_argument("--units", choices=UNIT_SYSTEMS,
                   help=f"unit system of the headers: {', '.join(UNIT_SYSTEMS)} (default: the "
                        "pack's)")
    t.add_argument("--conditions", metavar="ID,ID",
                   help="design conditions (e.g. cooling,heating): adds a column per condition "
                        "for each field that may differ by condition, such as 'Primary airflow "
                        "@heating [cfm]' (docs/importing.md)")


def run(args: argparse.Namespace) -> int:
    from airgate.readers.rulepack import load_pack
    from airgate.writers import workbook

    pack = load_pack(args.rules, search=args.rules_path)
    if pack.role == "supplement":
        raise UsageError(f"--rules: {pack.id} is a supplement pack (requirements only); a "
                         "template is made from a rates pack",
                         hint="give the rates pack, e.g. --rules ashrae-62.1-2019")
    system = args.units or pack.units
    conditions = tuple(dict.fromkeys(
        c.strip() for c in (args.conditions or "").split(",") if c.strip()))
    bad = [c for c in conditions if "[" in c or "]" in c or "@" in c or c.startswith(" ")]
    if bad:
        raise UsageError(f"--conditions: {bad[0]!r} cannot be a condition id in a header",
                         hint="use ids without brackets or '@', e.g. --conditions cooling,heating")
    tables = workbook.template_tables(system, args.rules, conditions)
    out = Path(args.output)
    if args.format == "xlsx":
        if out.suffix.lower() != ".xlsx":
            raise UsageError(f"-o {out}: a workbook file name ends in .xlsx")
        files = {out: workbook.xlsx_bytes(tables, pack)}
    else:
        stem = out.with_suffix("") if out.suffix.lower() == ".csv" else out
        files = dict(workbook.csv_texts(tables, stem))
    workbook.write_files_atomic(files)
    for path in files:
        sys.stderr.write(f"wrote {path}\n")
    return EXIT_PASS
