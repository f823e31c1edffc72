"""YAML read straight from libyaml's events into plain data and positions (the fast reading).

libyaml (C) scans and parses the text; this module builds the values from its events in one
loop, with no node graph: every value is counted and its depth checked as its event arrives, so
the value and depth limits (docs/limits.md) stop a document before it is held, as the composer
of :mod:`airgate.readers.document` does. It reads the plain part of YAML that schedules are
written in — block and flow collections, plain and quoted scalars, anchors and the aliases that
repeat them, one document — and gives way (returns ``None``) on anything else: an explicit tag,
a merge key, a key that is not a scalar or is anchored or an alias, an anchor given twice, an
alias that is undefined or inside the value it names, a repeated key, a value, depth or alias
budget limit reached, a syntax error. An alias repeats the events of its anchored value where it
stands (positions those of the anchored value, as the composer gives them), spending of the
alias budget of :mod:`airgate.readers.limits` what the composer's builder spends, committed
only once the text is read. The composer then reads a text given way on again and says what it
says today (its messages and positions are the reference; ``tests/test_document_loaders.py``
and ``tests/test_document_yaml.py`` hold the two readings to the same data, positions and texts
on generated documents).
"""

from __future__ import annotations

import math
from typing import Any

import yaml
from yaml import (AliasEvent, DocumentEndEvent, DocumentStartEvent, MappingEndEvent,
                  MappingStartEvent, ScalarEvent, SequenceEndEvent, SequenceStartEvent,
                  StreamEndEvent, StreamStartEvent)

from airgate.readers import limits as L  # the limits (docs/limits.md), read when used
from airgate.readers.limits import utf8_len
from airgate.units import MAX_MAGNITUDE, MIN_MAGNITUDE

#: Nesting the composer follows before Python's recursion limit could stop it first (about
#: three frames a level under the default limit of 1,000); deeper documents give way to it,
#: so a raised ``AIRGATE_MAX_DEPTH`` is refused (or read) exactly as the composer does
COMPOSER_SAFE_DEPTH = 200

_NULL = "tag:yaml.org,2002:null"
_BOOL = "tag:yaml.org,2002:bool"
_INT = "tag:yaml.org,2002:int"
_FLOAT = "tag:yaml.org,2002:float"
_BOOLS = {"true": True, "false": False}
#: the one NaN object PyYAML's safe constructor gives, so documents compare as its do
_NAN = yaml.constructor.SafeConstructor.nan_value


#: distinct plain texts whose values are kept for their repetitions (the first ones read)
_PLAIN_KEPT = 4096


class _GiveWay(Exception):
    """The text uses something this reading leaves to the composer."""


def int_of(text: str, max_digits: int) -> int | float:
    """A YAML 1.2 core-schema whole number: decimal, ``0o`` octal or ``0x`` hexadecimal.

    A decimal of more than ``max_digits`` digits is read as infinite with its sign (Python's
    ``int()`` refuses more than 4,300 digits, with no position); the schedule reader refuses
    it where it is written.
    """
    sign = -1 if text.startswith("-") else 1
    digits = text.lstrip("+-")
    if len(digits) > max_digits:
        return math.copysign(math.inf, sign)
    if digits.startswith("0o"):
        return sign * int(digits[2:], 8)
    if digits.startswith("0x"):
        return sign * int(digits[2:], 16)
    return sign * int(digits, 10)


def float_of(text: str) -> float:
    """A YAML float as PyYAML's safe constructor reads it (``.inf``, ``-.Inf``, ``.nan``;
    the resolver admits no ``_`` or ``:``)."""
    lower = text.lower()
    sign = -1.0 if lower.startswith("-") else 1.0
    body = lower.lstrip("+-")
    if body == ".inf":
        return sign * math.inf
    if body == ".nan":
        return _NAN
    return sign * float(body)


def _plain(value: str, resolvers: dict, max_digits: int) -> Any:
    """A plain scalar's value under the implicit resolvers (YAML 1.2 core schema)."""
    for tag, regexp in resolvers.get(value[:1], ()):
        if regexp.match(value):
            if tag == _NULL:
                return None
            if tag == _BOOL:
                return _BOOLS[value.lower()]
            if tag == _INT:
                return int_of(value, max_digits)
            if tag == _FLOAT:
                return float_of(value)
            raise _GiveWay  # the merge key's tag, or one added later: the composer's
    return value


def read_events(parser: Any, resolvers: dict, max_digits: int
                ) -> tuple[Any, dict, dict, bool] | None:
    """Data, positions and number texts of the one document ``parser`` (a libyaml
    ``CParser``) reads, and whether every number of it is finite and within the range
    airgate reads (each distinct text looked at once, as it is resolved); or ``None`` when the
    composer must read it (see the module)."""
    try:
        return _build(parser.get_event, resolvers, max_digits)
    except (_GiveWay, yaml.YAMLError):
        return None


def _build(get: Any, resolvers: dict, max_digits: int) -> tuple[Any, dict, dict, bool]:
    if get().__class__ is not StreamStartEvent or get().__class__ is not DocumentStartEvent:
        raise _GiveWay  # an empty stream, or a directive the parser reports
    max_nodes = L.MAX_NODES
    max_depth = min(L.MAX_DEPTH, COMPOSER_SAFE_DEPTH)
    positions: dict = {}
    texts: dict = {}
    plain: dict = {}  # plain text → its value, for the first _PLAIN_KEPT texts
    in_range = True
    low, high = MIN_MAGNITUDE, MAX_MAGNITUDE
    stack: list = []
    # the open collection: its value, path, whether a mapping, the key read (None: expecting
    # a key) or the last index of a sequence
    box: Any = []  # the document's one value, once read
    path: tuple = ()
    mapping = False
    key: Any = -1
    count = 0
    # anchors and aliases: the events of each anchored value (an alias's expanded), repeated
    # where an alias names it, and what repeating them spends of the alias budget, as the
    # composer's builder counts it (each value again, the text of each scalar and key again)
    anchors: dict[str, list] = {}
    recording: list[tuple[str, list, int]] = []  # anchored collections still open
    replay: list = []  # events still to repeat, the next last
    budget = L.current_budget()
    spent_values = budget.values if budget is not None else 0
    spent_bytes = budget.bytes if budget is not None else 0
    max_values, max_bytes = L.MAX_ALIAS_VALUES, L.MAX_ALIAS_BYTES
    again = False
    while True:
        if replay:
            event = replay.pop()
            again = True
        else:
            event = get()
            if event is None:
                break
            again = False
        cls = event.__class__
        if recording and cls is not AliasEvent:
            for _, events, _ in recording:
                events.append(event)
        if cls is ScalarEvent:
            count += 1
            if count > max_nodes or len(stack) > max_depth or event.tag is not None:
                raise _GiveWay
            if event.anchor is not None and not again:
                if mapping and key is None or event.anchor in anchors:
                    raise _GiveWay  # an anchored key, or an anchor given twice
                anchors[event.anchor] = [event]
            if again:
                spent_bytes += utf8_len(event.value)
                if spent_bytes > max_bytes:
                    raise _GiveWay  # the composer refuses it where the budget runs out
            if mapping and key is None:  # a key: as written, whatever it resolves to
                key = event.value
                if key in box or (key == "<<" and event.implicit[0]):
                    raise _GiveWay  # repeated (the composer says where), or a merge
                continue
            if again:
                spent_values += 1
                if spent_values > max_values:
                    raise _GiveWay
            if mapping:
                here = path + (key,)
                key = None
            else:
                key += 1
                here = path + (key,) if stack else ()
            mark = event.start_mark
            positions[here] = (mark.line + 1, mark.column + 1)
            value = event.value
            if event.implicit[0]:
                text = value
                value = plain.get(text, plain)
                if value is plain:  # a repeated text (space types, units) resolved once
                    value = _plain(text, resolvers, max_digits)
                    if (value.__class__ is int or value.__class__ is float) and value != 0 \
                            and not low <= abs(value) <= high:  # NaN too
                        in_range = False
                    if len(plain) < _PLAIN_KEPT:
                        plain[text] = value
                if value is not None and value.__class__ is not str:
                    texts[here] = text
            if mapping:
                box[here[-1]] = value
            else:
                box.append(value)
        elif cls is MappingStartEvent or cls is SequenceStartEvent:
            count += 1
            if count > max_nodes or len(stack) > max_depth or event.tag is not None \
                    or (mapping and key is None):
                raise _GiveWay  # ... or a key that is a collection
            if event.anchor is not None and not again:
                if event.anchor in anchors:
                    raise _GiveWay  # an anchor given twice
                anchors[event.anchor] = events = [event]
                recording.append((event.anchor, events, len(stack)))
            if again:
                spent_values += 1
                if spent_values > max_values:
                    raise _GiveWay
            if mapping:
                here = path + (key,)
            else:
                key += 1
                here = path + (key,) if stack else ()
            mark = event.start_mark
            positions[here] = (mark.line + 1, mark.column + 1)
            value = {} if cls is MappingStartEvent else []
            if mapping:
                box[key] = value
            else:
                box.append(value)
            stack.append((box, path, mapping, key))
            box, path = value, here
            mapping = cls is MappingStartEvent
            key = None if mapping else -1
        elif cls is MappingEndEvent or cls is SequenceEndEvent:
            box, path, mapping, key = stack.pop()
            if mapping:
                key = None
            if recording and recording[-1][2] == len(stack):
                recording.pop()  # the anchored collection is complete
        elif cls is AliasEvent:
            events = anchors.get(event.anchor)
            if events is None or (mapping and key is None) or \
                    any(name == event.anchor for name, _, _ in recording):
                raise _GiveWay  # undefined, a key, or inside the value it names
            replay.extend(reversed(events))
        elif cls is DocumentEndEvent:
            break
        else:  # anything unforeseen
            raise _GiveWay
    if stack or len(box) != 1 or get().__class__ is not StreamEndEvent:
        raise _GiveWay  # more than one document: the composer's message
    if budget is not None:
        budget.values, budget.bytes = spent_values, spent_bytes
    return box[0], positions, texts, in_range
