"""Helpers shared by commands."""

from __future__ import annotations

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
            raise unknown("zone", zone_id, [z.id for s in report.systems for z in s.zones])
        return found[0], [found[1]]
    system = report.system(system_id)
    if system is None:
        raise unknown("system", system_id, [s.id for s in report.systems])
    return system, system.zones


def add_rules_path(parser) -> None:
    """``--rules-path DIR`` (repeatable): folders of rule packs searched after the built-in ones."""
    parser.add_argument("--rules-path", action="append", default=[], metavar="DIR",
                        help="a folder of rule packs, searched by id after the built-in packs "
                             "(repeatable; also AIRGATE_RULES_PATH)")


def add_subject(parser, system_help: str = "system id") -> None:
    """The schedule FILE, ``--zone ID`` or ``--system ID``, and the pack options (explain, plot)."""
    parser.add_argument("file")
    group = parser.add_mutually_exclusive_group(required=True)
    group.add_argument("--zone", help="zone id")
    group.add_argument("--system", help=system_help)
    parser.add_argument("--rules", help="rule pack id or path")
    add_rules_path(parser)
