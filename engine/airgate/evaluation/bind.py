"""Bind schedule zones to the rule pack: occupancy category, air distribution row, population.

Unknown ids are input errors with the nearest valid ids; an air distribution that matches no row
of the Ez table says which stated conditions are missing.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import TypeVar

from airgate import formatting
from airgate.errors import AirgateError, Path_, nearest
from airgate.models.datatables import Tables
from airgate.models.loaded import LoadedSchedule
from airgate.models.rules import AirDistributionRow, OccupancyCategory, RulePack
from airgate.models.schedule import StatedDistribution, Zone


@dataclass(frozen=True)
class EzChoice:
    """The Ez used for a zone and why."""

    ez: float
    origin: str  #: "table" | "explicit" | "assumed"
    note: str
    source: str
    rows: tuple[str, ...] = ()


Row = TypeVar("Row")


def table_row(loaded: LoadedSchedule, pack: RulePack, rows: Mapping[str, Row], collection: str,
              what: str, ref: str, path: Path_, *, hint: str | None = None,
              allowed: list[str] | None = None) -> Row:
    """The row ``ref`` of one of the pack's tables (``collection``: ``occupancy``,
    ``air_distribution``, ``exhaust``). An unknown id is an input error located at ``path``
    that says what became of a retired row, else suggests the nearest ids."""
    row = rows.get(ref)
    if row is not None:
        return row
    gone = pack.retirement(collection, ref)
    close = [] if gone else nearest(ref, rows)
    raise loaded.error(
        f"unknown {what} '{ref}' in rule pack {pack.id}"
        + (f"; it was {gone.text()}" if gone else "")
        + (f"; did you mean {', '.join(repr(c) for c in close)}?" if close else ""),
        path, allowed=allowed, hint=hint)


def category(loaded: LoadedSchedule, pack: RulePack, zone: Zone, path: Path_) -> OccupancyCategory:
    return table_row(loaded, pack, pack.categories, "occupancy", "space type", zone.space,
                     path + ("space",),
                     hint="use an occupancy category id: airgate rules show " + pack.id)


def _row_needs(row: AirDistributionRow, stated: StatedDistribution) -> list[str]:
    """What the stated configuration lacks or contradicts for ``row`` (empty: it matches)."""
    needs = []
    if row.return_ is not None and stated.return_ != row.return_:
        needs.append("return" if stated.return_ is None else f"return={row.return_}")
    if row.mode is not None and stated.mode != row.mode:
        needs.append("mode" if stated.mode is None else f"mode={row.mode}")
    for name, bound in row.bounds.items():
        value = getattr(stated, name)
        if value is None:
            needs.append(name)
        elif not bound.contains(value):
            needs.append(f"{name} in range")
    return needs


def _match(loaded: LoadedSchedule, pack: RulePack, stated: StatedDistribution,
           path: Path_) -> AirDistributionRow:
    rows = [r for r in pack.configurations.values() if r.supply == stated.supply]
    matches = [r for r in rows if not _row_needs(r, stated)]
    if matches:
        return min(matches, key=lambda r: (r.ez, r.id))  # the lowest governs if several apply
    missing = sorted({n for r in rows for n in _row_needs(r, stated) if " " not in n and "=" not in n})
    hint = ("state " + ", ".join(missing)) if missing else "check the stated conditions"
    raise loaded.error(
        f"no row of {pack.air_distribution_source.table or 'the Ez table'} matches the stated "
        f"air distribution (supply: {stated.supply})", path,
        allowed=[r.id for r in rows], hint=hint + ", or give a row id",
    )


def _row(loaded: LoadedSchedule, pack: RulePack, ref: str | StatedDistribution,
         path: Path_) -> AirDistributionRow:
    if isinstance(ref, StatedDistribution):
        return _match(loaded, pack, ref, path)
    # the hint only matters when the id is not a row (a number tried as an id)
    hint = (f"to state the zone's Ez directly, write ez: {ref} with ez_basis: (why it "
            "applies) instead of air_distribution") \
        if ref not in pack.configurations and _is_number(ref) else None
    return table_row(loaded, pack, pack.configurations, "air_distribution",
                     "air distribution row", ref, path, hint=hint,
                     allowed=sorted(pack.configurations))


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def air_distribution(loaded: LoadedSchedule, pack: RulePack, zone: Zone, path: Path_,
                     key: tuple = ()) -> EzChoice:
    """The zone's Ez: explicit with its basis, the matched table row(s), or the pack default.
    ``key``: the condition id under ``air_distribution`` where it is given per condition."""
    if zone.ez is not None:
        return EzChoice(zone.ez, "explicit", f"stated in the schedule: {zone.ez_basis}",
                        "schedule")
    refs = zone.air_distribution
    if refs is None:
        if pack.default_configuration is None:
            raise loaded.error("air_distribution is not stated and the rule pack has no default",
                               path, hint="give air_distribution (a row id) or ez with ez_basis")
        row = pack.configurations[pack.default_configuration]
        return EzChoice(row.ez, "assumed", f"not stated; assumed '{row.id}': {row.label}",
                        f"{row.source.cite()} ({row.provenance})", (row.id,))
    items = refs if isinstance(refs, list) else [refs]
    base = path + ("air_distribution",) + key
    rows = [_row(loaded, pack, ref, base + ((i,) if isinstance(refs, list) else ()))
            for i, ref in enumerate(items)]
    governing = min(rows, key=lambda r: (r.ez, r.id))
    note = f"'{governing.id}': {governing.label}"
    if len(rows) > 1:
        others = ", ".join(f"{r.id} {formatting.number(r.ez, 'fraction')}" for r in rows)
        note += f" (lowest of the modes analysed: {others})"
    return EzChoice(governing.ez, "table", note,
                    f"{governing.source.cite()} ({governing.provenance})",
                    tuple(r.id for r in rows))


class Binder:
    """Binds the zones of one schedule to one pack, sharing what equal statements give.

    What a zone is bound to depends only on what it states (its space; its air distribution or
    explicit Ez), never on where it stands: the row, or the :class:`EzChoice` worked out for
    one zone, is shared by every zone that states the same (both are frozen, nothing changes
    them per zone). Only results are kept: a statement the pack refuses is worked out again for
    each zone that makes it, so each error is located at its own zone's path, as when every
    zone is bound alone.
    """

    def __init__(self, loaded: LoadedSchedule, pack: RulePack) -> None:
        self.loaded = loaded
        self.pack = pack
        self._ez: dict[tuple, EzChoice] = {}

    def category(self, zone: Zone, path: Path_) -> OccupancyCategory:
        """:func:`category`: the row of the zone's space (shared by every zone of that space)."""
        row = self.pack.categories.get(zone.space)
        return row if row is not None else category(self.loaded, self.pack, zone, path)

    def air_distribution(self, zone: Zone, path: Path_, key: tuple = ()) -> EzChoice:
        """:func:`air_distribution`, worked out once per distinct statement."""
        stated = _statement(zone)
        if stated is None:
            return air_distribution(self.loaded, self.pack, zone, path, key)
        found = self._ez.get(stated)
        if found is None:
            found = air_distribution(self.loaded, self.pack, zone, path, key)
            self._ez[stated] = found
        return found


def _statement(zone: Zone) -> tuple | None:
    """What decides a zone's :class:`EzChoice` without an explicit Ez, as a key: its stated
    air distribution (a row id, a stated configuration, a list of modes, or none); None where
    it cannot be a key (an explicit Ez, which costs nothing to bind, or a value not hashable)."""
    if zone.ez is not None:
        return None
    refs = zone.air_distribution
    stated = (True, tuple(refs)) if isinstance(refs, list) else (False, refs)
    try:
        hash(stated)
    except TypeError:
        return None
    return stated


def check_pack_checks(pack: RulePack, known: set[str]) -> None:
    """Every check a pack lists must be one the engine implements (else the pack is wrong)."""
    from airgate.errors import RulePackError

    from airgate.evaluation.checks import DECLARED_CHECKS

    for i, check_id in enumerate(pack.checks):
        if check_id in DECLARED_CHECKS:
            file, line, column, field = pack.where(("checks", i, "id"))
            raise RulePackError(
                f"'{check_id}' judges a limit the schedule declares for itself; it is not a "
                "check of a rule pack", file=file, line=line, column=column, field=field,
                hint="remove it from checks: airgate evaluates every limit a schedule "
                "declares and reports it as a declared finding")
        if check_id not in known:
            file, line, column, field = pack.where(("checks", i, "id"))
            close = nearest(check_id, known)
            raise RulePackError(
                f"unknown check '{check_id}'" + (f"; did you mean '{close[0]}'?" if close else ""),
                file=file, line=line, column=column, field=field,
                allowed=sorted(known),
            )


def collect(errors: list[AirgateError], fn, *args):
    """Run ``fn``; on an input error remember it and return None, so all errors are reported."""
    try:
        return fn(*args)
    except AirgateError as exc:
        errors.append(exc)
        return None


def dilution_refs(loaded: LoadedSchedule, zone: Zone, path: Path_, tables: Tables) -> None:
    """The zone's occupancy profile and CO2 activity (a row of ``tables``) must exist."""
    profiles = loaded.model.profiles
    if zone.profile is not None and zone.profile not in profiles:
        close = nearest(zone.profile, profiles)
        raise loaded.error(
            f"unknown occupancy profile '{zone.profile}'"
            + (f"; did you mean '{close[0]}'?" if close else ""), path + ("profile",),
            allowed=sorted(profiles), hint="define it under 'profiles:' or remove the reference")
    table = tables["occupant-co2-generation"]
    if zone.activity is not None and zone.activity not in table.rows:
        close = nearest(zone.activity, table.rows)
        raise loaded.error(
            f"unknown occupant activity '{zone.activity}'"
            + (f"; did you mean '{close[0]}'?" if close else ""), path + ("activity",),
            allowed=sorted(table.rows))
