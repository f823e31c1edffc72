"""``natural``: zones ventilated through openings to the outdoors, no mechanical intake.

The Natural Ventilation Procedure of ANSI/ASHRAE 62.1-2019 (Section 6.4): the openable area is at
least a fraction of the net occupiable floor area, the naturally ventilated floor lies within a
multiple of the ceiling height H of the openings (by their arrangement), and a mechanical system
is still required unless the openings are permanently open or the zone has no heating or
cooling. The fraction and the multiples are the pack's (``natural_ventilation``); the check ids,
severities and citations are the pack's ``checks``.
"""

from __future__ import annotations

from collections.abc import Iterator

from airgate import formatting
from airgate.errors import AirgateError
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Amount, Location
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.system_kinds.common import SystemKind
from airgate.evaluation.zones import ZoneContext
from airgate.models.rules import RulePack
from airgate.models.schedule import System

#: how much above a limit a figure may be before it fails (rounding of stated values)
_TOLERANCE = 1e-9

_FIELDS = ("openable_area", "depth")


def natural(system: System, ctxs: list[ZoneContext], zones: list[ZoneResult],
            result: SystemResult, pack: RulePack, emitter: Emitter, where: Location,
            locate) -> None:
    """Natural ventilation: each zone's openings and depth against the pack's limits.

    Adds to each zone trail ``A_open`` [m²], ``f_open`` [–], ``A_open_min = f_open·Az`` [m²],
    ``H`` [m], ``k_depth`` [–], ``depth_max = k_depth·H`` [m] and ``depth`` [m]; the system has
    no intake, so its trail has no ``Vot``.
    """
    rules = pack.natural_ventilation
    for ctx, z in zip(ctxs, zones):
        nv = ctx.zone.natural_ventilation
        base = ctx.path + ("natural_ventilation",)
        t = z.trail
        at = {name: locate(base + (name,)) for name in _FIELDS}
        t.add("A_open", nv.openable_area, "area", origin="schedule",
              note="openable area of the openings to the outdoors", source=at["openable_area"])
        t.add("f_open", rules.openable_fraction.value, "fraction", origin="table",
              note="least openable area per net occupiable floor area",
              source=rules.openable_fraction.cite())
        need = t.add("A_open_min", t.value("f_open") * t.value("Az"), "area",
                     formula="{f_open}·{Az}", source=rules.openable_fraction.cite())
        emitter.compare("natural-opening-area", ctx.subject, "openable area", need,
                        nv.openable_area, "area", at["openable_area"], system=system.id,
                        zone=ctx.zone.id, advice="enlarge the openings or ventilate the zone "
                                                 "mechanically")
        ratio = rules.depth_ratio[nv.arrangement]
        t.add("H", ctx.zone.height, "length", origin="schedule", note="ceiling height",
              source=locate(ctx.path + ("height",)))
        t.add("k_depth", ratio.value, "fraction", origin="table",
              note=f"greatest depth per ceiling height, {nv.arrangement} openings",
              source=ratio.cite())
        limit = t.add("depth_max", t.value("k_depth") * t.value("H"), "length",
                      formula="{k_depth}·{H}", source=ratio.cite())
        t.add("depth", nv.depth, "length", origin="schedule",
              note="distance from the openings the naturally ventilated floor reaches",
              source=at["depth"])
        if nv.depth > limit * (1 + _TOLERANCE):
            amt = lambda v: formatting.amount(v, "length", emitter.units)  # noqa: E731
            emitter.emit(
                "natural-depth", ctx.subject,
                f"zone depth {amt(nv.depth)} exceeds {amt(limit)} ({ratio.value:g}"
                f" × ceiling height {amt(ctx.zone.height)}, {nv.arrangement} openings); add "
                "openings on another side or ventilate the zone mechanically",
                at["depth"], required=Amount(limit, "length", at_most=True),
                provided=Amount(nv.depth, "length"),
                system=system.id, zone=ctx.zone.id)
        if not nv.permanently_open and nv.conditioned:
            emitter.emit(
                "natural-mechanical-system", ctx.subject,
                "the openings are not declared permanently open and the zone is not declared "
                "without heating or cooling (conditioned: false): a mechanical ventilation system "
                "designed to a ventilation procedure is also required; schedule it as a system of "
                "its own, or declare the exception that applies",
                locate(base), system=system.id, zone=ctx.zone.id)
    result.notes.append(
        "natural ventilation: the openings and the zone depth were checked; the outdoor air the "
        "openings admit depends on weather and use and was not computed, so the zones' Voz is "
        "the rate procedure's figure for reference only and no CO2 or contaminant balance was run")


def _check_inputs(loaded, pack: RulePack, i: int) -> list[AirgateError]:
    """Every zone states its openings and its ceiling height; the pack has the limits."""
    system = loaded.model.systems[i]
    if pack.natural_ventilation is None:
        return [loaded.error(
            f"rule pack {pack.id} has no natural ventilation procedure (no natural_ventilation "
            "table), so a natural system cannot be checked with it",
            ("systems", i, "kind"), hint="use a pack that has one (ashrae-62.1-2019 or "
                                         "ashrae-62.1-2019-si), or describe a mechanical system")]
    errors = []
    for j, zone in enumerate(system.zones):
        path = ("systems", i, "zones", j)
        if zone.natural_ventilation is None:
            errors.append(loaded.error(
                f"zone {zone.id} of natural system {system.id} states no natural_ventilation",
                path + ("natural_ventilation",),
                hint="add natural_ventilation: {openable_area: '40 ft2', arrangement: "
                     "single-sided, depth: '18 ft'}"))
        elif zone.natural_ventilation.arrangement not in pack.natural_ventilation.depth_ratio:
            errors.append(loaded.error(
                f"rule pack {pack.id} has no depth limit for "
                f"{zone.natural_ventilation.arrangement} openings",
                path + ("natural_ventilation", "arrangement"),
                allowed=sorted(pack.natural_ventilation.depth_ratio)))
        if zone.height is None:
            errors.append(loaded.error(
                f"zone {zone.id} of natural system {system.id} states no height: the depth limit "
                "is a multiple of the ceiling height", path + ("height",),
                hint="add height: '10 ft' (or '3 m'), the ceiling height"))
    return errors


def _zone_checks(system: System, z: ZoneResult, result: SystemResult,
                 pack: RulePack) -> Iterator[tuple]:
    t = z.trail
    if "A_open" in t:
        yield ("natural-opening-area", ("natural_ventilation", "openable_area"),
               Amount(t.value("A_open_min"), "area"), Amount(t.value("A_open"), "area"))
        yield ("natural-depth", ("natural_ventilation", "depth"),
               Amount(t.value("depth_max"), "length", at_most=True),
               Amount(t.value("depth"), "length"))
        yield "natural-mechanical-system", ("natural_ventilation",), None, None


KIND = SystemKind(
    name="natural", evaluate=natural, check_inputs=_check_inputs,
    zone_fields=frozenset({"natural_ventilation"}), zone_checks=_zone_checks,
    intake=False,
    summary="openings to the outdoors, no intake: openable area and depth against the ceiling "
            "height (Section 6.4)")
