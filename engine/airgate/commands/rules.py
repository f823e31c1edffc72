"""``airgate rules``: list, show, validate, test and diff rule packs."""

from __future__ import annotations

import argparse
import sys

from airgate.commands.common import add_format, add_output, add_rules_path, emit
from airgate.errors import EXIT_FAIL, EXIT_PASS, UsageError
from airgate.escaping import terminal

ACTIONS = ["list", "show ID", "validate PATH", "test [PATH]", "diff A B"]
#: output formats of ``rules show --resolved``: text (YAML with the origin of each value), JSON
FORMATS = ("text", "json")
#: output formats of ``rules diff``: text, Markdown (a reviewer's change list), JSON
DIFF_FORMATS = ("text", "markdown", "json")


def register(sub) -> None:
    r = sub.add_parser("rules", help="list, show, validate, test or diff rule packs",
                       description="Work with rule packs: built-in ones, those in --rules-path "
                                   "folders and AIRGATE_RULES_PATH, or pack files by path.")
    rs = r.add_subparsers(dest="rules_command", metavar="ACTION", help="what to do")
    ls = rs.add_parser("list", help="list the rule packs on the search path")
    add_rules_path(ls)
    show = rs.add_parser("show", help="show a pack's tables, methods, checks and requirements")
    show.add_argument("pack", metavar="ID|PATH", help="pack id or path")
    show.add_argument("--resolved", action="store_true",
                      help="print the merged pack and, for every value, the pack it came from")
    add_format(show, FORMATS, FORMATS[0], note="json needs --resolved, where text is YAML "
                                               "with the origin of each value")
    show.add_argument("--option", action="append", default=[], metavar="NAME=VALUE",
                      help="choose one of the pack's options (repeatable)")
    add_output(show)
    add_rules_path(show)
    val = rs.add_parser("validate", help="validate a pack (every option combination) or a folder")
    val.add_argument("pack", metavar="PATH", help="pack id, pack file or folder of packs")
    add_rules_path(val)
    test = rs.add_parser("test", help="run the pack tests (no PATH: every built-in pack)")
    test.add_argument("path", nargs="?", metavar="PATH",
                      help="folder of packs, pack id or file, or a test case")
    add_rules_path(test)
    diff = rs.add_parser("diff", help="entries added, removed and changed between two packs")
    diff.add_argument("old", metavar="A", help="pack id or path (the earlier one)")
    diff.add_argument("new", metavar="B", help="pack id or path (the later one)")
    add_format(diff, DIFF_FORMATS, DIFF_FORMATS[0])
    add_output(diff)
    add_rules_path(diff)


def _options(pairs: list[str]) -> dict[str, str]:
    out = {}
    for pair in pairs:
        name, sep, value = pair.partition("=")
        if not sep or not name.strip() or not value.strip():
            raise UsageError(f"--option {pair}: expected NAME=VALUE", field=("--option",),
                             hint="e.g. --option category=II")
        out[name.strip()] = value.strip()
    return out


def _checked(pack):
    from airgate.evaluation.bind import check_pack_checks
    from airgate.evaluation.checks import KNOWN_CHECKS

    check_pack_checks(pack, set(KNOWN_CHECKS))  # a pack is accepted only if it would run
    return pack


def _load(ref: str, args, options: dict[str, str] | None = None):
    """The built pack; a pack with options is built with ``options`` (or the first choices)."""
    from airgate.readers import options as opts
    from airgate.readers.rulepack import load_document, load_pack

    doc = load_document(ref, search=args.rules_path)
    declared = opts.declared(doc.data)
    try:
        if declared and not options:
            first = opts.combinations(declared)[0]
            return doc, _checked(load_pack(ref, options=first, search=args.rules_path)), False
        return doc, _checked(load_pack(ref, options=options, search=args.rules_path)), True
    except opts.OptionError as exc:
        raise UsageError(exc.message, field=("--option",), allowed=exc.allowed,
                         hint=exc.hint) from None


def _list(args) -> int:
    from airgate.readers import layering
    from airgate.readers.rulepack import load_document
    from airgate.writers.packs import pack_list

    roots = layering.search_roots(args.rules_path)
    rows = []
    for pack_id, path, root, shadowed in layering.packs_on_path(roots):
        doc = load_document(str(path), search=roots)
        where = "" if root.label == "built-in" else f"  [{root.path}]"
        if shadowed:
            where += "  (shadowed by an earlier folder of the search path)"
        rows.append((pack_id, doc.data["units"], doc.extends or "", doc.data["title"], where))
    sys.stdout.write(pack_list(rows))
    return EXIT_PASS


def _show(args) -> int:
    from airgate.readers import options as opts
    from airgate.writers import pack_resolved
    from airgate.writers.output import json_text
    from airgate.writers.packs import pack_summary

    chosen = _options(args.option)
    doc, pack, resolved = _load(args.pack, args, chosen)
    if args.resolved:
        data = opts.resolve(doc.data, pack.chosen) if chosen else doc.data
        if args.format == "json":
            emit(args.output, json_text(pack_resolved.resolved_json(doc, data)))
        else:
            emit(args.output, pack_resolved.resolved_yaml(doc, data))
        return EXIT_PASS
    if args.format == "json":
        raise UsageError("--format json goes with --resolved", field=("--format",))
    emit(args.output, pack_summary(pack, None if resolved else doc))
    return EXIT_PASS


def _validate(args) -> int:
    from pathlib import Path

    from airgate.readers import layering
    from airgate.readers import options as opts
    from airgate.readers.rulepack import load_document, load_pack

    target = Path(args.pack)
    search = list(args.rules_path)
    if target.is_dir():
        refs = [str(p) for s in layering.PACK_SUFFIXES for p in sorted(target.glob(f"*{s}"))]
        search.insert(0, str(target))
        if not refs:
            raise UsageError(f"{target} holds no rule pack files", field=("PATH",))
    else:
        refs = [args.pack]
    for ref in refs:
        doc = load_document(ref, search=search)
        declared = opts.declared(doc.data)
        combos = opts.combinations(declared) if declared else [{}]
        for combo in combos:
            pack = _checked(load_pack(ref, options=combo, search=search))
        counts = (("occupancy categories", pack.categories),
                  ("air distribution rows", pack.configurations),
                  ("Ev methods", pack.methods), ("checks", pack.checks),
                  ("requirements", pack.requirements), ("exhaust rows", pack.exhaust))
        parts = [f"{what} {len(items)}" for what, items in counts
                 if items or what != "exhaust rows"]
        extra = f"; extends {' → '.join(doc.lineage[1:])}" if doc.extends else ""
        if declared:
            extra += f"; {len(combos)} option combinations"
        sys.stdout.write(terminal(f"ok  {doc.pack_id} ({doc.file}): {', '.join(parts)}{extra}")
                         + "\n")
    return EXIT_PASS


def _test(args) -> int:
    from airgate.api import packtests
    from airgate.writers.pack_reports import tests_text

    results = packtests.run(args.path, args.rules_path)
    sys.stdout.write(tests_text(results))
    return EXIT_PASS if all(r.ok for r in results) else EXIT_FAIL


def _diff(args) -> int:
    from airgate.api.packdiff import diff
    from airgate.readers.rulepack import load_document
    from airgate.writers.output import json_text
    from airgate.writers.pack_reports import diff_json, diff_markdown, diff_text

    old = load_document(args.old, search=args.rules_path)
    new = load_document(args.new, search=args.rules_path)
    result = diff(old, new)
    writers = {"json": lambda r: json_text(diff_json(r)), "markdown": diff_markdown,
               "text": diff_text}
    emit(args.output, writers[args.format](result))
    return EXIT_PASS


def run(args: argparse.Namespace) -> int:
    actions = {"list": _list, "show": _show, "validate": _validate, "test": _test, "diff": _diff}
    if args.rules_command in actions:
        return actions[args.rules_command](args)
    raise UsageError("choose what to do with rule packs", allowed=ACTIONS,
                     hint="airgate rules list")
