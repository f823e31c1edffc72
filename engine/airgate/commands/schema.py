"""``airgate schema``: print a published JSON Schema."""

from __future__ import annotations

import argparse
import json

from airgate.commands.common import add_output, emit
from airgate.errors import EXIT_PASS

#: the published schemas: the schedule, a rule pack, a pack test case, the JSON report, the
#: JSON comparison (airgate compare), the JSON difference of two packs (airgate rules diff)
SCHEMAS = ("schedule", "rules", "pack-test", "report", "compare", "pack-diff")
#: schemas kept as files under rules/schema/
_FILES = {"pack-test": "pack-test.schema.json", "report": "report.schema.json",
          "compare": "compare.schema.json", "pack-diff": "pack-diff.schema.json"}


def register(sub) -> None:
    s = sub.add_parser("schema", help="print a published JSON Schema",
                       description="Print one of the published JSON Schemas (draft 2020-12).")
    s.add_argument("which", choices=SCHEMAS, metavar="WHICH",
                   help=f"which schema: {', '.join(SCHEMAS)}")
    add_output(s)


def run(args: argparse.Namespace) -> int:
    if args.which == "schedule":
        from airgate.models.schedule import Schedule

        schema = Schedule.model_json_schema()
        schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
        schema["title"] = "airgate ventilation schedule, format version 1"
    elif args.which == "rules":
        from airgate.readers.rulepack import pack_schema

        schema = pack_schema()
    else:
        from airgate.readers.rulepack import builtin_rules_dir

        path = builtin_rules_dir() / "schema" / _FILES[args.which]
        schema = json.loads(path.read_text(encoding="utf-8"))
    emit(args.output, json.dumps(schema, indent=2, ensure_ascii=False, sort_keys=True) + "\n")
    return EXIT_PASS
