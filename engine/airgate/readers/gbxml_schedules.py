"""gbXML people schedules → airgate occupancy profiles.

A gbXML ``Schedule`` points through a ``YearSchedule`` to a ``WeekSchedule``, whose ``Day``
elements name a ``DaySchedule`` per day type. A ``DaySchedule`` divides the day evenly into as
many blocks as it has ``ScheduleValue`` elements (gbXML 6.01 schema, DaySchedule and
ScheduleValue documentation): 24 values are hours, 48 half hours. Consecutive blocks with the
same non-zero value become one ``"HH:MM-HH:MM"`` range of the profile.
"""

from __future__ import annotations

from typing import Any

from airgate.readers.xmltree import Element

_WEEKDAY = ("Weekday", "Mon", "Tue", "Wed", "Thu", "Fri")
_WEEKEND = ("Weekend", "WeekendOrHoliday", "Sat", "Sun")


def _clock(minutes: int) -> str:
    return f"{minutes // 60:02d}:{minutes % 60:02d}"


def day_ranges(values: list[float]) -> dict[str, float]:
    """Equal blocks over 24 h → ``{"HH:MM-HH:MM": fraction}`` (zero blocks left out)."""
    step = 1440 // len(values)
    out: dict[str, float] = {}
    start = 0
    for i in range(1, len(values) + 1):
        if i == len(values) or values[i] != values[start]:
            if values[start]:
                out[f"{_clock(start * step)}-{_clock(i * step)}"] = values[start]
            start = i
    return out


def _day(r, node: Element) -> dict[str, float] | None:
    values = node.findall("ScheduleValue")
    where = r.origin(node)
    if not values or 1440 % len(values):
        r.b.error(where, f"a DaySchedule divides the day into equal blocks; {len(values)} "
                  "values do not divide it into whole minutes",
                  hint="give 24 (hourly), 48 (half-hourly) or 96 (quarter-hourly) values")
        return None
    out: list[float] = []
    for v in values:
        try:
            out.append(float(v.text))
        except ValueError:
            r.b.error(r.origin(v, node), f"ScheduleValue {v.text.strip()!r} is not a number",
                      hint="give a fraction of the design population, e.g. 0.9")
            return None
    return day_ranges(out)


def profile(r, sched: Element) -> str | None:
    """Read ``sched`` into the builder's ``profiles``; its profile name (None on error)."""
    b = r.b
    name_el = sched.find("Name")
    name = name_el.text.strip() if name_el is not None and name_el.text.strip() else \
        sched.attrib["id"]
    if sched.attrib.get("type") not in (None, "Fraction"):
        b.note(r.origin(sched), f"schedule '{name}' is of type {sched.attrib.get('type')}, not "
               "Fraction: not read as an occupancy profile")
        return None
    years = sched.findall("YearSchedule")
    if not years:
        b.error(r.origin(sched), "the people schedule has no YearSchedule",
                hint="give YearSchedule with a WeekScheduleId")
        return None
    if len(years) > 1:
        b.note(r.origin(years[1], sched), f"schedule '{name}': only the first YearSchedule is "
               "read (airgate profiles describe one design day of each kind)")
    ref = years[0].find("WeekScheduleId")
    if ref is None:
        b.error(r.origin(years[0], sched), "the YearSchedule has no WeekScheduleId")
        return None
    week = r._ref(ref, "weekScheduleIdRef", "WeekSchedule", years[0], None)
    if week is None:
        return None
    slots: dict[str, list[Element]] = {"weekday": [], "weekend": [], "all": []}
    for day in week.findall("Day"):
        kind = day.attrib.get("dayType", "")
        slot = ("weekday" if kind in _WEEKDAY else "weekend" if kind in _WEEKEND
                else "all" if kind == "All" else None)
        if slot is None:
            b.note(r.origin(day, week), f"Day of type {kind} not read (airgate profiles have a "
                   "weekday and a weekend day)")
            continue
        target = r._ref(day, "dayScheduleIdRef", "DaySchedule", week, None)
        if target is not None:
            slots[slot].append(target)
    chosen: dict[str, Element] = {}
    for slot in ("weekday", "weekend"):
        found = {id(d): d for d in slots[slot]} or {id(d): d for d in slots["all"]}
        if len(found) > 1:
            b.error(r.origin(week), f"the {slot} days of week schedule "
                    f"'{week.attrib.get('id')}' name different day schedules",
                    hint=f"airgate profiles have one {slot} day; name one DaySchedule")
            return None
        if found:
            chosen[slot] = next(iter(found.values()))
    if "weekday" not in chosen:
        b.error(r.origin(week), "the week schedule names no weekday (Weekday, Mon–Fri or All)")
        return None
    if name in b.data.get("profiles", {}):
        b.error(r.origin(sched), f"two people schedules are named '{name}'",
                hint="give each Schedule its own Name")
        return None
    spec: dict[str, Any] = {}
    for slot, node in chosen.items():
        if slot == "weekend" and node is chosen["weekday"]:
            continue  # the same day all week: the profile's weekend defaults to its weekday
        ranges = _day(r, node)
        if ranges is None:
            return None
        spec[slot] = (ranges, r.origin(node))
    b.data.setdefault("profiles", {})
    b.origins[("profiles", name)] = r.origin(sched)
    for slot, (ranges, where) in spec.items():
        b.put(("profiles", name, slot), ranges, where)
    return name
