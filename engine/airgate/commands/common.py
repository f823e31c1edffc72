"""Helpers shared by commands: the options every command spells the same way.

The conventions (README, Commands): ``--format`` is the output format and ``-o/--output`` the
output file of every command that writes one; every command that reads rule packs takes
``--rules`` (a pack id or path) and ``--rules-path`` (folders searched by id). A list of choices
shown in help comes from where the list lives, never typed into the help text.
"""

from __future__ import annotations

from collections.abc import Sequence

from airgate.errors import UsageError, nearest


def unknown(what: str, value: str, ids: list[str]) -> UsageError:
    """A usage error for an id that is not in the schedule, with the nearest ids."""
    close = nearest(value, ids)
    return UsageError(f"no {what} '{value}' in the schedule"
                      + (f"; did you mean {', '.join(close)}?" if close else ""), allowed=ids)


def pick(report, zone_id: str | None, system_id: str | None):
    """(system, zones) for ``--zone`` or ``--system``; usage error when the id is unknown."""
    if zone_id is not None:
        found = report.zone(zone_id)
        if found is None:
            if report.system(zone_id) is not None:
                raise UsageError(f"'{zone_id}' is a system, not a zone", field=("--zone",),
                                 hint=f"use --system {zone_id}")
            raise unknown("zone", zone_id, [z.id for s in report.systems for z in s.zones])
        return found[0], [found[1]]
    system = report.system(system_id)
    if system is None:
        if report.zone(system_id) is not None:
            raise UsageError(f"'{system_id}' is a zone, not a system", field=("--system",),
                             hint=f"use --zone {system_id}")
        raise unknown("system", system_id, [s.id for s in report.systems])
    return system, system.zones


def at_condition(system, zones, condition: str):
    """(system, zones) as evaluated at design ``condition`` (``--condition``): the condition's own
    figures, zones and verdicts; usage error when the system lists no such condition."""
    import dataclasses

    found = next((c for c in system.conditions if c.id == condition), None)
    if found is None:
        if not system.conditions:
            raise UsageError(f"system '{system.id}' lists no design conditions",
                             hint="leave out --condition")
        ids = [c.id for c in system.conditions]
        close = nearest(condition, ids)
        raise UsageError(f"system '{system.id}' has no condition '{condition}'"
                         + (f"; did you mean {', '.join(close)}?" if close else ""), allowed=ids)
    wanted = {z.id for z in zones}
    view = dataclasses.replace(system, trail=found.trail, zones=found.zones, method=found.method,
                               critical_zone=found.critical_zone, verdict=found.verdict,
                               condition=found.id)
    return view, [z for z in found.zones if z.id in wanted]


def add_rules_path(parser) -> None:
    """``--rules-path DIR`` (repeatable): folders of rule packs searched after the built-in ones."""
    parser.add_argument("--rules-path", action="append", default=[], metavar="DIR",
                        help="a folder of rule packs, searched by id after the built-in packs "
                             "(repeatable; also AIRGATE_RULES_PATH)")


def add_rules(parser, help: str = "rule pack id or path (overrides the schedule's 'rules:')",
              default: str | None = None) -> None:
    """``--rules ID|PATH`` and ``--rules-path DIR``: the options of every command that reads
    rule packs for a schedule."""
    parser.add_argument("--rules", default=default, metavar="ID|PATH", help=help)
    add_rules_path(parser)


def add_format(parser, choices: Sequence[str], default: str, what: str = "output format",
               note: str = "") -> None:
    """``--format NAME``, one of ``choices`` (listed in help from the sequence itself)."""
    parser.add_argument("--format", choices=list(choices), default=default,
                        help=f"{what}: {', '.join(choices)} (default: {default})"
                             + (f"; {note}" if note else ""))


def add_output(parser, what: str = "file to write (default: standard output)",
               required: bool = False) -> None:
    """``-o/--output FILE``: the output file."""
    parser.add_argument("-o", "--output", metavar="FILE", required=required, help=what)


def emit(output: str | None, text: str) -> None:
    """``text`` to the ``-o`` file, or to standard output without one (or with ``-``); a
    regular file is written atomically, a device or pipe in place (airgate.writers.output)."""
    from airgate.writers.output import STDOUT, write_atomic

    write_atomic(output or STDOUT, text)


def input_suffixes() -> str:
    """The file suffixes a schedule is read from, as the importer registry lists them."""
    from airgate.readers.importers import IMPORTERS

    return ", ".join(s for i in IMPORTERS.values() for s in i.suffixes)


def add_subject(parser, system_help: str = "system id") -> None:
    """The schedule FILE, ``--zone ID`` or ``--system ID``, and the pack options (explain, plot)."""
    parser.add_argument("file", metavar="SCHEDULE",
                        help=f"schedule file ({input_suffixes()}; see docs/importing.md)")
    group = parser.add_mutually_exclusive_group(required=True)
    group.add_argument("--zone", metavar="ID", help="zone id")
    group.add_argument("--system", metavar="ID", help=system_help)
    add_rules(parser)
