"""Units at the edges: parse schedule and rule-pack quantities with pint, hand plain floats on.

The math layer never sees a pint Quantity. Every quantity is converted here to airgate's
internal units (an SI set chosen for the trade):

==========================  ==================  ====================  ======================
kind                        internal            IP display            SI display
==========================  ==================  ====================  ======================
airflow                     L/s                 cfm                   L/s
area                        m²                  ft²                   m²
volume                      m³                  ft³                   m³
length                      m                   ft                    m
airflow_per_person (Rp)     L/s per person      cfm/person            L/s·person
airflow_per_area (Ra)       L/s per m²          cfm/ft²               L/s·m²
people (Pz, Ps)             person              people                people
density                     person per m²       people/1000 ft²       people/100 m²
temperature_difference      K                   °F (difference)       K
velocity                    m/s                 fpm                   m/s
fraction (Ez, Ev, D, ...)   1                   –                     –
count (Nbr, MERV, class)    1                   –                     –
time                        h                   min                   min
rate (ACH, k_dep)           1/h                 1/h                   1/h
gas_flow (CO2 generation)   L/s                 L/s                   L/s
==========================  ==================  ====================  ======================

These are also the units of every procedure in :mod:`airgate.procedures` — the rate procedure
and the mass balance alike — so the evaluation hands trail values to them as they are, and
nothing between the readers and the writers converts a unit. In the mass balance an airflow per
volume, (L/s)/m³, becomes a rate per hour by the factor 3.6 (3600 s/h over 1000 L/m³), applied
inside the procedures where airflows meet volumes (``procedures.numeric.PER_HOUR``); a
generation is a concentration × L/s (CO2 in ppm: 10⁶ × its flow in L/s), so that a steady
concentration is G/Q. An emission per hour enters as such a generation through
:func:`factor` (pint).

Exact factors (common practice; NIST SP 811): 1 ft = 0.3048 m, so 1 cfm = 0.471947443 L/s and
1 cfm/ft² = 5.08 L/s·m².
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache

from airgate import cache
from airgate.escaping import excerpt

IP = "IP"
SI = "SI"
UNIT_SYSTEMS = (IP, SI)
#: the base dimension of ``person`` in airgate's registry
PEOPLE_DIMENSION = "[people]"


@lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    """airgate's pint registry: pint's defaults plus the trade's shorthand units."""
    import pint  # imported on first use: a command that converts nothing starts without it

    ureg = None
    where = cache.folder()
    if where is not None:
        # pint's own cache of its parsed definitions, beside airgate's (airgate.cache), saves
        # most of the registry's build; a cache that cannot be written or read is done without
        try:
            ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=False,
                                     cache_folder=where / "pint")
        except Exception:  # noqa: BLE001 - an unwritable folder, a cache file half written
            ureg = None
    if ureg is None:
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=False)
    # pint would otherwise read "cfm" as centi-fermi.
    ureg.define("cubic_foot_per_minute = foot ** 3 / minute = cfm")
    ureg.define("feet_per_minute = foot / minute = fpm")
    # People are a dimension of their own, so a per-person rate written without "/person"
    # ('5 cfm'), a share written for a count ('30 percent') or a formula that forgets ·Pz is a
    # dimension error rather than a silent change of meaning.
    ureg.define(f"person = {PEOPLE_DIMENSION} = people = persons = occupant = occupants")
    return ureg


@dataclass(frozen=True)
class Kind:
    """A physical kind of quantity: its internal unit and how each unit system shows it."""

    name: str
    internal: str
    ip: str
    si: str
    ip_label: str
    si_label: str
    example: str
    #: display value = value in ``ip``/``si`` unit × scale (people per 1000 ft², per 100 m²)
    ip_scale: float = 1.0
    si_scale: float = 1.0

    def unit(self, system: str) -> str:
        return self.ip if system == IP else self.si

    def label(self, system: str) -> str:
        return self.ip_label if system == IP else self.si_label

    def scale(self, system: str) -> float:
        return self.ip_scale if system == IP else self.si_scale


KINDS: dict[str, Kind] = {
    k.name: k
    for k in (
        Kind("airflow", "L/s", "cfm", "L/s", "cfm", "L/s", "'850 cfm' or '400 L/s'"),
        Kind("area", "m**2", "ft**2", "m**2", "ft²", "m²", "'5000 ft2' or '465 m2'"),
        Kind("volume", "m**3", "ft**3", "m**3", "ft³", "m³", "'45000 ft3' or '1270 m3'"),
        Kind("length", "m", "ft", "m", "ft", "m", "'9 ft' or '2.7 m'"),
        Kind(
            "airflow_per_person", "L/s/person", "cfm/person", "L/s/person",
            "cfm/person", "L/s·person", "'5 cfm/person' or '2.5 L/s/person'",
        ),
        Kind(
            "airflow_per_area", "L/s/m**2", "cfm/ft**2", "L/s/m**2",
            "cfm/ft²", "L/s·m²", "'0.06 cfm/ft2' or '0.3 L/s/m2'",
        ),
        Kind("people", "person", "person", "person", "people", "people", "'25' or '25 people'"),
        Kind(
            "density", "person/m**2", "person/ft**2", "person/m**2",
            "people/1000 ft²", "people/100 m²", "'5' (per 1000 ft2 in IP, per 100 m2 in SI)",
            ip_scale=1000.0, si_scale=100.0,
        ),
        Kind(
            "temperature_difference", "delta_degC", "delta_degF", "delta_degC",
            "°F", "K", "'15 delta_degF' or '8 K'",
        ),
        Kind("velocity", "m/s", "fpm", "m/s", "fpm", "m/s", "'150 fpm' or '0.8 m/s'"),
        Kind("fraction", "dimensionless", "dimensionless", "dimensionless", "", "", "'0.8'"),
        Kind("count", "dimensionless", "dimensionless", "dimensionless", "", "", "'3'"),
        Kind("concentration_ppm", "ppm", "ppm", "ppm", "ppm", "ppm", "'1100 ppm'"),
        Kind("time", "hour", "minute", "minute", "min", "min", "'45 min'"),
        Kind("rate", "1/hour", "1/hour", "1/hour", "1/h", "1/h", "'2.5 1/h'"),
        Kind("gas_flow", "L/s", "L/s", "L/s", "L/s", "L/s", "'0.12 L/s'"),
        Kind("emission", "1/hour", "1/hour", "1/hour", "/h", "/h", "'50 /h'"),
        Kind("concentration", "1/m**3", "1/m**3", "1/m**3", "/m³", "/m³", "'3 /m3'"),
        Kind("gas_generation", "L/s/person", "L/s/person", "L/s/person", "L/s·person",
             "L/s·person", "'0.0048 L/s/person'"),
    )
}

#: pint unit strings for machine output (JSON), parseable by a stock pint registry once
#: ``person`` is defined (``person = [people]``, as airgate does, or ``person = []``). ``cfm`` is
#: written out, since stock pint reads it as centi-fermi.
JSON_UNITS: dict[tuple[str, str], str] = {
    ("airflow", IP): "ft**3/min", ("airflow", SI): "L/s",
    ("area", IP): "ft**2", ("area", SI): "m**2",
    ("volume", IP): "ft**3", ("volume", SI): "m**3",
    ("length", IP): "ft", ("length", SI): "m",
    ("airflow_per_person", IP): "ft**3/min/person", ("airflow_per_person", SI): "L/s/person",
    ("airflow_per_area", IP): "ft**3/min/ft**2", ("airflow_per_area", SI): "L/s/m**2",
    ("people", IP): "person", ("people", SI): "person",
    ("density", IP): "person/ft**2", ("density", SI): "person/m**2",
    ("temperature_difference", IP): "delta_degF", ("temperature_difference", SI): "kelvin",
    ("velocity", IP): "ft/min", ("velocity", SI): "m/s",
    ("fraction", IP): "", ("fraction", SI): "",
    ("count", IP): "", ("count", SI): "",
    ("concentration_ppm", IP): "ppm", ("concentration_ppm", SI): "ppm",
    ("time", IP): "minute", ("time", SI): "minute",
    ("rate", IP): "1/hour", ("rate", SI): "1/hour",
    ("gas_flow", IP): "L/s", ("gas_flow", SI): "L/s",
    ("emission", IP): "1/hour", ("emission", SI): "1/hour",
    ("concentration", IP): "1/m**3", ("concentration", SI): "1/m**3",
    ("gas_generation", IP): "L/s/person", ("gas_generation", SI): "L/s/person",
}

_SUPERSCRIPTS = str.maketrans({"²": "**2", "³": "**3", "·": "*", "°": "deg"})
_POWER = re.compile(r"(?<=[A-Za-z])([23])\b")
_TEMP_DIFF = re.compile(r"\b(deg\s*F|degF|F)\b")
_TEMP_DIFF_C = re.compile(r"\b(deg\s*C|degC|C)\b")


def _normalise(text: str, kind: str) -> str:
    text = text.strip().translate(_SUPERSCRIPTS).replace("^", "**")
    text = _POWER.sub(r"**\1", text)  # ft2 -> ft**2, m3 -> m**3
    if kind == "temperature_difference":
        # A supply-to-room temperature difference is a difference, never an absolute reading.
        text = _TEMP_DIFF.sub("delta_degF", text)
        text = _TEMP_DIFF_C.sub("delta_degC", text)
    return text


#: how an expected kind is named in a message, where its id does not read well
_WORDS = {"people": "number of people", "airflow_per_person": "airflow per person",
          "airflow_per_area": "airflow per area", "density": "occupant density (people per area)",
          "gas_generation": "gas generation per person"}


def _article(kind: str) -> str:
    words = _WORDS.get(kind, kind.replace("_", " "))
    return ("an " if words[0] in "aeiou" else "a ") + words


def _people_hint(q: pint.Quantity, kind: str, raw: str) -> str:
    """What to write instead, when the given quantity misses (or adds) a factor of people."""
    ureg = registry()
    want = ureg.Quantity(1.0, KINDS[kind].internal).dimensionality
    got = q.dimensionality
    person = ureg.Quantity(1.0, "person").dimensionality
    if kind == "people" and got == ureg.Quantity(1.0).dimensionality:
        return ("; occupants are a count of people, not a share or a ratio: give the number "
                "of people, e.g. '25' or '25 people'")
    if got / person == want:
        return f"; a rate per person needs '/person' in its unit, e.g. '{raw.strip()}/person'"
    if got * person == want:
        return "; this is a value per person, but a total is expected here"
    return ""


class QuantityError(ValueError):
    """A quantity that could not be read; the message says what is expected, ``hint`` (where
    there is one) what to write instead."""

    def __init__(self, message: str, hint: str | None = None) -> None:
        super().__init__(message)
        self.hint = hint


#: The longest quantity text read; anything longer is refused before it reaches pint.
MAX_QUANTITY_TEXT = 80
#: A quantity as written: a decimal number, then optionally a unit expression.
_QUANTITY = re.compile(r"^(?P<number>[-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]+)?)"
                       r"\s*(?P<unit>.*)$")
#: A unit expression after normalisation: unit names with small integer powers, joined by
#: ``*``, ``/`` or spaces (no numbers of its own, so pint never evaluates arithmetic).
_UNIT_NAME = r"[A-Za-z_µ]+(?:\*\*-?[0-9])?"
_UNIT_EXPR = re.compile(rf"^{_UNIT_NAME}(?:\s*[*/ ]\s*{_UNIT_NAME})*$")
_THOUSANDS = re.compile(r"^[-+]?[0-9]{1,3}(?:,[0-9]{3})+(?:\.[0-9]*)?(?:\s|$)")


#: The range of magnitudes airgate reads, as written and in internal units (docs/limits.md):
#: far beyond any building, and narrow enough that no product or quotient of two or three such
#: values overflows or underflows a float. Zero is always allowed.
MAX_MAGNITUDE = 1e15
MIN_MAGNITUDE = 1e-15


def in_range(value: float) -> bool:
    """Whether a finite ``value`` is zero or has a magnitude airgate reads."""
    return value == 0 or MIN_MAGNITUDE <= abs(value) <= MAX_MAGNITUDE


def range_text() -> str:
    return f"magnitudes from {MIN_MAGNITUDE:g} to {MAX_MAGNITUDE:g}, or 0"


def _finite(value: float, raw: object, kind: str | None = None) -> float:
    if not math.isfinite(value):
        raise QuantityError(f"{excerpt(raw)} is not a finite number")
    if not in_range(value):
        where = f" ({KINDS[kind].internal.replace('**', '^')})" if kind else ""
        raise QuantityError(f"{excerpt(raw)} is out of the range airgate reads: "
                            f"{range_text()}{where}; no building has such a value")
    return value


def _read_text(raw: str, kind: str) -> tuple[float, str]:
    """Split quantity text into its number and its normalised unit expression ('' if bare)."""
    k = KINDS[kind]
    if len(raw) > MAX_QUANTITY_TEXT:
        raise QuantityError(f"quantity text is longer than {MAX_QUANTITY_TEXT} characters; "
                            f"expected a number and a unit such as {k.example}")
    text = raw.strip()
    if _THOUSANDS.match(text):
        raise QuantityError(f"cannot read {raw!r}: write the number without a thousands "
                            f"separator, e.g. {text.replace(',', '')!r}")
    match = _QUANTITY.match(text)
    if match is None:
        raise QuantityError(f"cannot read {raw!r}: expected a number first, then a unit, "
                            f"such as {k.example}")
    unit, well_formed = _unit_text(match["unit"], kind)
    if well_formed:
        return float(match["number"]), unit
    if unit and not unit[0].isalpha():
        share = kind == "people" and unit.startswith("%")
        raise QuantityError(f"cannot read {raw!r} as a number followed by a unit; expected "
                            f"{_article(kind) if share else 'a quantity'} such as {k.example}"
                            + ("; occupants are a count of people, not a share: give the "
                               "number of people" if share else ""))
    if unit and not _UNIT_EXPR.match(unit):
        raise QuantityError(f"cannot read the unit of {raw!r} (unit names with powers 2 or 3, "
                            f"joined by '/' or '*'); expected a quantity such as {k.example}")
    return float(match["number"]), unit


@lru_cache(maxsize=1024)
def _unit_text(written: str, kind: str) -> tuple[str, bool]:
    """The normalised unit expression of a quantity's unit text ('' if bare) and whether it is
    well formed (a schedule repeats a handful of unit texts thousands of times)."""
    unit = _normalise(written, kind) if written.strip() else ""
    return unit, not unit or unit[0].isalpha() and _UNIT_EXPR.match(unit) is not None


def parse(raw: object, kind: str, system: str) -> float:
    """Read a schedule quantity and return it in the internal unit of ``kind``.

    Parameters
    ----------
    raw : str | int | float
        ``"5000 ft2"``, ``"850 L/s"`` or a bare number in the project's unit system. Text must
        be a decimal number followed by an optional unit expression (no arithmetic).
    kind : str
        A key of :data:`KINDS`.
    system : str
        ``"IP"`` or ``"SI"``: the unit of bare numbers.

    Raises
    ------
    QuantityError
        Unreadable text, wrong dimension, or a value that is not finite.
    """
    k = KINDS[kind]
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise QuantityError(f"expected a number or a quantity such as {k.example}, got {raw!r}")
    if isinstance(raw, int) and abs(raw) > MAX_MAGNITUDE:  # float() would overflow
        raise QuantityError(f"{excerpt(raw)} is out of the range airgate reads: {range_text()}; "
                            "no building has such a value")
    if isinstance(raw, (int, float)):
        return _finite(to_internal(_finite(float(raw), raw), kind, system), raw, kind)
    return _parse_text(raw, kind, system)


@lru_cache(maxsize=4096)
def _parse_text(raw: str, kind: str, system: str) -> float:
    """:func:`parse` of quantity text, kept per text (a schedule repeats many of its values;
    a text that cannot be read raises each time, and is not kept)."""
    k = KINDS[kind]
    value, unit = _read_text(raw, kind)
    _finite(value, raw)
    if not unit:
        return _finite(to_internal(value, kind, system), raw, kind)
    try:
        factor = _unit_factor(unit, k.internal)
    except Exception:  # noqa: BLE001 - the full conversion below says what is wrong
        factor = None
    if factor is not None:
        return _finite(value * factor, raw, kind)
    ureg = registry()
    import pint  # already imported by registry()

    try:
        q = ureg.Quantity(value, unit)
    except pint.UndefinedUnitError as exc:
        names = ", ".join(repr(n) for n in exc.unit_names) or repr(unit)
        close = _lower_case(unit, kind)
        raise QuantityError(
            f"unknown unit {names} in {raw!r}"
            + (f"; did you mean '{close}'?" if close else
               f"; expected a quantity such as {k.example}"),
            hint=(f"write the unit in lower case: '{match_number(raw)} {close}'" if close
                  else f"give {_article(kind)} such as {k.example}")) from exc
    except Exception as exc:  # pint raises several kinds for malformed unit expressions
        raise QuantityError(f"cannot read the unit of {raw!r}; expected a quantity such as "
                            f"{k.example}") from exc
    try:
        converted = float(q.to(k.internal).magnitude)
    except pint.DimensionalityError as exc:
        found = _kind_of(q)
        what = (f"is {_article(found)} ({q.units:~P})" if found
                else f"has units of {q.units:~P}, which is no quantity airgate reads")
        raise QuantityError(
            f"{raw!r} {what}; expected {_article(kind)}{_people_hint(q, kind, raw)}",
            hint=f"give {_article(kind)} such as {k.example}") from exc
    return _finite(converted, raw, kind)


def match_number(raw: str) -> str:
    """The number a quantity text begins with, as written."""
    m = _QUANTITY.match(raw.strip())
    return m["number"] if m else raw.strip()


def _lower_case(unit: str, kind: str) -> str | None:
    """``unit`` in lower case when that is a unit of ``kind`` (``CFM`` → ``cfm``), else None."""
    low = unit.lower()
    if low == unit:
        return None
    try:
        registry().Quantity(1.0, low).to(KINDS[kind].internal)
    except Exception:  # noqa: BLE001 - not a unit, or not of this kind: no suggestion
        return None
    return low


def _kind_of(q: pint.Quantity) -> str | None:
    """The first kind (in :data:`KINDS` order) with the dimensions of ``q``, or None."""
    ureg = registry()
    for name, k in KINDS.items():
        if name in ("gas_flow", "emission", "count", "concentration"):
            continue  # same dimensions as airflow, rate, fraction: named by the first
        if ureg.Quantity(1.0, k.internal).dimensionality == q.dimensionality:
            return name
    return None


@lru_cache(maxsize=1024)
def _unit_factor(unit: str, internal: str) -> float | None:
    """Internal units per ``unit`` when the conversion is a pure factor (pint, once per unit
    expression: schedules repeat a handful of units thousands of times), else None (an offset
    unit such as degF, converted in full each time). Raises what pint raises for a bad unit."""
    ureg = registry()
    if float(ureg.Quantity(0.0, unit).to(internal).magnitude) != 0.0:
        return None
    return float(ureg.Quantity(1.0, unit).to(internal).magnitude)


@lru_cache(maxsize=64)
def _factor(kind: str, system: str) -> float:
    """Internal units per display unit (display value × factor = internal value)."""
    k = KINDS[kind]
    ureg = registry()
    if k.name == "temperature_difference":
        return float(ureg.Quantity(1.0, k.unit(system)).to(k.internal).magnitude)
    return float(ureg.Quantity(1.0, k.unit(system)).to(k.internal).magnitude) / k.scale(system)


@lru_cache(maxsize=64)
def factor(from_unit: str, to_unit: str) -> float:
    """``to_unit`` per ``from_unit``, by pint (e.g. ``factor("1/hour", "L/s/m**3")`` is 1/3.6:
    an emission per hour as the procedures' generation, concentration × L/s)."""
    return float(registry().Quantity(1.0, from_unit).to(to_unit).magnitude)


def to_internal(value: float, kind: str, system: str) -> float:
    """A bare number in the ``system`` display unit of ``kind``, in internal units."""
    return value * _factor(kind, system)


def to_display(value: float, kind: str, system: str) -> float:
    """An internal value in the ``system`` display unit of ``kind`` (e.g. L/s → cfm)."""
    return value / _factor(kind, system)


def to_json_unit(value: float, kind: str, system: str) -> float:
    """An internal value in the unit named by :data:`JSON_UNITS` (no display scaling)."""
    return to_display(value, kind, system) / KINDS[kind].scale(system)


def label(kind: str, system: str) -> str:
    """The short unit label shown to people, e.g. ``cfm`` or ``L/s·m²``."""
    return KINDS[kind].label(system)
