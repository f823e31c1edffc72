"""Indented JSON text, byte for byte as ``json.dumps(value, indent=2, ensure_ascii=False,
allow_nan=False)`` writes it, built faster than the standard library's pure-Python indented
encoder (which the C accelerator does not cover when ``indent`` is set).

The text is first made by pydantic-core's compiled serializer (``pydantic_core.to_json``, a
dependency of pydantic), about five times faster than the pieces below. Its text differs from the
standard library's in four known ways, each recognisable in its output: a number between
1e-9 and 1e-4 (``1e-7`` or ``0.00003`` where Python writes ``1e-07`` and ``3e-05``; a sweep of
every decimal exponent found no other), an exponent without its sign (``1e16``, older
pydantic-core releases), a ``None`` key (``"None"`` where Python writes
``"null"``), and ``NaN``/``Infinity`` (which Python refuses here). When its text holds any of
these — or the words ``NaN``, ``Infinity``, ``"None"``, ``0.0000`` or such an exponent appear
anywhere, even inside a string — or it refuses the value, the text is built by the pieces below
instead, so the result is always the standard library's. Meant for plain JSON data (``dict``,
``list``, ``tuple``, ``str``, ``int``, ``float``, ``bool``, ``None``); the writers give no other.

Strings are escaped by the standard library's own C function (``encode_basestring``), floats
and whole numbers written by their ``repr`` as the standard library does (the shortest text that
reads back as the same float: ``0.1``, ``425.0``, ``1e-07``); anything but plain ``dict``,
``list``, ``tuple``, ``str``, ``int``, ``float``, ``bool`` and ``None`` (a subclass, a key that is
not a string) is handed to the standard library's encoder, so the text is always the same.
``tests/test_json_encode.py`` holds the two to the same text.
"""

from __future__ import annotations

import json
import re
from json.encoder import c_make_encoder, encode_basestring

from pydantic_core import to_json as _compiled

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


#: what in the compiled serializer's text may differ from the standard library's: these words
#: anywhere (found by the C substring search), and after a digit a one-digit negative exponent
#: or an exponent without its sign (``1e16``: pydantic-core before 2.2x writes no ``+``)
_DOUBTFUL_WORDS = (b"0.0000", b"NaN", b"Infinity", b'"None"')
_EXPONENT = re.compile(rb"e-[1-9](?![0-9])|e[0-9]")


def _doubtful(text: bytes) -> bool:
    """True when ``text`` (the compiled serializer's) may not be the standard library's."""
    for word in _DOUBTFUL_WORDS:
        if word in text:
            return True
    return any(text[m.start() - 1:m.start()].isdigit() for m in _EXPONENT.finditer(text))


def dumps(value: object, level: int = 0) -> str:
    """``value`` as indented JSON text, as it stands at indentation ``level`` (the lines after
    the first are indented by ``level`` steps of two spaces)."""
    newline = "\n" + "  " * level
    try:
        text = _compiled(value, indent=2)
    except Exception:  # a value it refuses (lone surrogates, unknown types): built below
        return _dump(value, newline)
    if _doubtful(text):
        return _dump(value, newline)
    if level:
        text = text.replace(b"\n", newline.encode())
    return text.decode()


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
