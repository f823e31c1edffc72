"""Indented JSON text, byte for byte as ``json.dumps(value, indent=2, ensure_ascii=False,
allow_nan=False)`` writes it, built faster than the standard library's pure-Python indented
encoder (which the C accelerator does not cover when ``indent`` is set).

Strings are escaped by the standard library's own C function (``encode_basestring``), floats
and whole numbers written by their ``repr`` as the standard library does (the shortest text that
reads back as the same float: ``0.1``, ``425.0``, ``1e-07``); anything but plain ``dict``,
``list``, ``tuple``, ``str``, ``int``, ``float``, ``bool`` and ``None`` (a subclass, a key that is
not a string) is handed to the standard library's encoder, so the text is always the same.
``tests/test_json_encode.py`` holds the two to the same text.
"""

from __future__ import annotations

import json
from json.encoder import c_make_encoder, encode_basestring

_STDLIB = json.JSONEncoder(indent=2, ensure_ascii=False, allow_nan=False)
_FLOAT_REPR = float.__repr__
_INT_REPR = int.__repr__
_INF = float("inf")
_SCALARS = frozenset({str, float, int, bool, type(None)})
#: one C encoder per indentation depth, for mappings of scalars: the standard library's C
#: encoder writes the items with the separator given, which here holds the line break and
#: indentation of the depth, so only the braces are written here
_FLAT: dict[str, object] = {}


def _flat_encoder(newline: str):
    enc = _FLAT.get(newline)
    if enc is None:
        enc = _FLAT[newline] = c_make_encoder(
            None, _STDLIB.default, encode_basestring, None, ": ", "," + newline + "  ",
            False, False, False)
    return enc


def dumps(value: object, level: int = 0) -> str:
    """``value`` as indented JSON text, as it stands at indentation ``level`` (the lines after
    the first are indented by ``level`` steps of two spaces)."""
    return _dump(value, "\n" + "  " * level)


def _dump(value: object, newline: str) -> str:
    t = type(value)
    if t is str:
        return encode_basestring(value)
    if t is float:
        if value != value or value == _INF or value == -_INF:
            return _STDLIB.encode(value)  # raises: JSON has no NaN or infinity
        return _FLOAT_REPR(value)
    if t is dict:
        if not value:
            return "{}"
        inner = newline + "  "
        for item in value.values():
            if type(item) not in _SCALARS:
                break
        else:  # keys are checked by the C encoder: only str keys reach here unchanged
            if all(type(key) is str for key in value):
                return "{" + inner + "".join(_flat_encoder(newline)(value, 0))[1:-1] \
                    + newline + "}"
        parts = []
        for key, item in value.items():
            if type(key) is not str:
                return _fallback(value, newline)
            parts.append(encode_basestring(key) + ": " + _dump(item, inner))
        return "{" + inner + ("," + inner).join(parts) + newline + "}"
    if t is list or t is tuple:
        if not value:
            return "[]"
        inner = newline + "  "
        return "[" + inner + ("," + inner).join([_dump(item, inner) for item in value]) \
            + newline + "]"
    if value is None:
        return "null"
    if value is True:
        return "true"
    if value is False:
        return "false"
    if t is int:
        return _INT_REPR(value)
    return _fallback(value, newline)


def _fallback(value: object, newline: str) -> str:
    """The standard library's text of ``value``, indented at ``newline`` (a JSON string holds no
    raw line break, so indenting every line is exact)."""
    return _STDLIB.encode(value).replace("\n", newline)
