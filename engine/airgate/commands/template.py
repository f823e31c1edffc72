"""``airgate template``: an empty schedule workbook (or CSV tables) to fill in."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from airgate.errors import EXIT_PASS, UsageError


def register(sub) -> None:
    t = sub.add_parser(
        "template", help="write an empty schedule workbook or CSV tables to fill in",
        description="Write the Project, Systems, Zones and Profiles tables with their headers "
                    "and units. The workbook also lists the rule pack's space types and Ez rows "
                    "and offers them as drop-downs.")
    t.add_argument("--format", choices=["xlsx", "csv"], default="xlsx", help="file format")
    t.add_argument("-o", "--output", required=True,
                   help="workbook file (.xlsx), or for csv the STEM of STEM.zones.csv …")
    t.add_argument("--rules", default="ashrae-62.1-2019",
                   help="rule pack id or path whose space types the drop-downs offer")
    t.add_argument("--units", choices=["IP", "SI"],
                   help="unit system of the headers (default: the pack's)")


def run(args: argparse.Namespace) -> int:
    from airgate.readers.rulepack import load_pack
    from airgate.writers import workbook

    pack = load_pack(args.rules)
    system = args.units or pack.units
    tables = workbook.template_tables(system, args.rules)
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
