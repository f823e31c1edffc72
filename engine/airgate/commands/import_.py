"""``airgate import``: convert a table, gbXML or IFC file into a YAML schedule."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from airgate.commands.common import add_output, emit, input_suffixes
from airgate.errors import EXIT_PASS
from airgate.escaping import terminal


def register(sub) -> None:
    from airgate.readers.importers import DEFAULT, IMPORTERS

    others = [i for i in IMPORTERS.values() if i is not DEFAULT]
    i = sub.add_parser(
        "import", help=f"convert a {_or([x.name for x in others])} file into a YAML schedule",
        description=f"Read a schedule from {_or([x.what for x in others])} and write it as "
                    "a YAML schedule whose comments say where each value came from. Nothing is "
                    "written when a room or value cannot be read.")
    i.add_argument("file", metavar="FILE",
                   help=f"source file ({input_suffixes()}; a YAML/JSON schedule is rewritten "
                        "in the same layout)")
    add_output(i, "YAML file to write (default: standard output)")
    i.set_defaults(command="import_")  # the module name ('import' is a Python keyword)


def _or(items: list[str]) -> str:
    return ", ".join(items[:-1]) + f" or {items[-1]}" if len(items) > 1 else "".join(items)


def run(args: argparse.Namespace) -> int:
    from airgate.readers.sources import ImportedSchedule, read_any
    from airgate.writers import schedule_yaml

    loaded = read_any(args.file)
    _check_pack_path(loaded)
    header = [f"Ventilation schedule imported by airgate from {Path(args.file).name}."]
    origins = None
    if isinstance(loaded, ImportedSchedule):
        origins = loaded.doc.origins
        header.append(loaded.summary.text() + ".")
        header.append("Each value's comment says where it was read.")
        if loaded.notes:  # named by file name, so the YAML does not depend on the folder
            header.append("Not mapped:")
            header += [f"  {n.replace(loaded.doc.file, Path(loaded.doc.file).name)}"
                       for n in loaded.notes]
    text = schedule_yaml.render(loaded.doc.data, origins, header)
    emit(args.output, text)
    if isinstance(loaded, ImportedSchedule):
        sys.stderr.write(terminal(loaded.summary.text()) + "\n")
        for note in loaded.notes:
            sys.stderr.write(f"note: {terminal(note)}\n")
    return EXIT_PASS


def _check_pack_path(loaded) -> None:
    """A pack path the source names is held to the read scope ``check`` applies to it, so the
    schedule written is never one that ``check`` refuses for it."""
    from airgate.errors import RulePackError
    from airgate.readers.rulepack import is_path, resolve

    ref = loaded.model.rules
    if ref is None or not is_path(ref):
        return
    try:
        resolve(ref, Path(loaded.file).parent, confined=True)
    except RulePackError as exc:
        raise loaded.error(exc.message, ("rules",), allowed=exc.allowed, hint=exc.hint) from None
