"""YAML read straight from libyaml's events into plain data and positions (the fast reading).

libyaml (C) scans and parses the text; this module builds the values from its events in one
loop, with no node graph: every value is counted and its depth checked as its event arrives, so
the value and depth limits (docs/limits.md) stop a document before it is held, as the composer
of :mod:`airgate.readers.document` does. It reads the plain part of YAML that schedules are
written in — block and flow collections, plain and quoted scalars, one document — and gives way
(returns ``None``) on anything else: an anchor, an alias, an explicit tag, a merge key, a key
that is not a scalar, a repeated key, a value or depth limit reached, a syntax error. The
composer then reads the text again and says what it says today (its messages and positions are
the reference; ``tests/test_document_loaders.py`` holds the two readings to the same data,
positions and texts on generated documents).
"""

from __future__ import annotations

import math
from typing import Any

import yaml
from yaml import (DocumentEndEvent, DocumentStartEvent, MappingEndEvent,
                  MappingStartEvent, ScalarEvent, SequenceEndEvent, SequenceStartEvent,
                  StreamEndEvent, StreamStartEvent)

from airgate.readers import limits as L  # the limits (docs/limits.md), read when used
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
    for event in iter(get, None):
        cls = event.__class__
        if cls is ScalarEvent:
            count += 1
            if count > max_nodes or len(stack) > max_depth or event.anchor is not None \
                    or event.tag is not None:
                raise _GiveWay
            if mapping and key is None:  # a key: as written, whatever it resolves to
                key = event.value
                if key in box or (key == "<<" and event.implicit[0]):
                    raise _GiveWay  # repeated (the composer says where), or a merge
                continue
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
            if count > max_nodes or len(stack) > max_depth or event.anchor is not None \
                    or event.tag is not None or (mapping and key is None):
                raise _GiveWay  # ... or a key that is a collection
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
        elif cls is DocumentEndEvent:
            break
        else:  # an alias, or anything unforeseen
            raise _GiveWay
    if stack or len(box) != 1 or get().__class__ is not StreamEndEvent:
        raise _GiveWay  # more than one document: the composer's message
    return box[0], positions, texts, in_range
