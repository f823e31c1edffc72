"""Read strict JSON with the C decoder, finding positions only when they are first asked for.

A well-formed document within the limits is decoded by :func:`json.loads` alone (duplicate keys
and ``NaN`` flagged by its hooks, values and depth counted without a path per value); the
position of a path is found when a finding, an error or a report first asks for it, reading
only the containers on that path (:class:`_Finder`), and its number texts from one scan of its
tokens (or a YAML composition of the same text) the first time one is asked for. A document
with a problem is walked value by value so that the problem is reported at its line and column,
as the YAML reader reports it.
"""

from __future__ import annotations

import json
import math
import re
from bisect import bisect_right
from itertools import accumulate, chain, compress
from json.decoder import scanstring
from typing import Any

from airgate.errors import AirgateError, Path_
from airgate.readers import limits as L  # the limits (docs/limits.md), read when used
from airgate.readers.document import MAX_DIGITS, Document, Lazy, parse_yaml, path_at_error
from airgate.readers.limits import limit_error
from airgate.units import MAX_MAGNITUDE, MIN_MAGNITUDE


class _Duplicated(dict):
    """A JSON object in which a key was given twice (kept to report where)."""

    def __init__(self, pairs: list[tuple[str, Any]], key: str) -> None:
        super().__init__(pairs)
        self.duplicate = key


class _Constant:
    """A ``NaN`` / ``Infinity`` token, which strict JSON does not allow."""

    def __init__(self, name: str) -> None:
        self.name = name


def _json_int(text: str) -> int | float:
    """A JSON integer; one too long to be a value is infinite, refused by the schedule reader."""
    if len(text.lstrip("-")) <= MAX_DIGITS:
        return int(text)
    return -math.inf if text.startswith("-") else math.inf


def _json_pairs(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for key, value in pairs:
        if key in out:
            return _Duplicated(pairs, key)
        out[key] = value
    return out


def _walk_json(data: Any) -> tuple[str, Path_, str] | None:
    """The first problem in parsed JSON: ``(what, path, detail)``, or None when clean."""
    todo: list[tuple[Any, Path_]] = [(data, ())]
    count = 0
    while todo:
        value, path = todo.pop()
        count += 1
        if count > L.MAX_NODES:
            return ("nodes", path, "")
        if len(path) > L.MAX_DEPTH:
            return ("depth", path, "")
        if isinstance(value, _Constant):
            return ("constant", path, value.name)
        if isinstance(value, _Duplicated):
            return ("duplicate", path + (value.duplicate,), value.duplicate)
        if isinstance(value, dict):
            todo.extend((v, path + (k,)) for k, v in reversed(list(value.items())))
        elif isinstance(value, list):
            todo.extend((v, path + (i,)) for i, v in reversed(list(enumerate(value))))
    return None


def _json_positions(text: str, file: str, error_cls: type[AirgateError]) -> Document:
    """Compose JSON text as YAML for positions (tabs, JSON whitespace, become spaces)."""
    return parse_yaml(text.replace("\t", " "), file, error_cls)


#: a JSON token: a string, a punctuation mark, or any other scalar (number, true, false, null)
_JSON_TOKEN = re.compile(r'"(?:[^"\\]|\\.)*"|[{}\[\]:,]|[^\s{}\[\]:,"]+')
#: characters YAML counts as line breaks or skips in a column besides "\n" (the scan below
#: counts lines by "\n" alone, so text holding one of these is composed as YAML instead)
_OTHER_BREAKS = re.compile("[\r\x85\u2028\u2029\ufeff]")


def _other_breaks(text: str) -> bool:
    """Whether ``text`` holds one of :data:`_OTHER_BREAKS` (in ASCII text only "\\r" can be:
    a search in C for one character)."""
    return "\r" in text if text.isascii() else _OTHER_BREAKS.search(text) is not None


def _scan_json_positions(text: str) -> tuple[dict[Path_, tuple[int, int]], dict[Path_, str]]:
    """The positions and number texts :func:`_json_positions` gives for well-formed JSON text
    whose only line break is "\\n", from one regular-expression scan of its tokens: each value's
    line and column (1-based, counted in characters as YAML counts them), and the text of every
    number and boolean as written."""
    positions: dict[Path_, tuple[int, int]] = {}
    texts: dict[Path_, str] = {}
    lines = [0, *(m.end() for m in re.finditer("\n", text))]
    line, next_start = 0, lines[1] if len(lines) > 1 else len(text) + 1
    # open collections: [path, is_mapping, next index (list) or key (mapping)]
    stack: list[list] = []
    expect_key = False
    for m in _JSON_TOKEN.finditer(text):
        tok = m.group()
        first = tok[0]
        if first in ",:":
            if first == "," and stack and stack[-1][1]:
                expect_key = True
            continue
        if first in "]}":
            stack.pop()
            expect_key = False  # an empty mapping closes where its first key would be
            continue
        if expect_key:  # a key of the open mapping
            stack[-1][2] = tok[1:-1] if "\\" not in tok else json.loads(tok)
            expect_key = False
            continue
        if not stack:
            path: Path_ = ()
        else:
            top = stack[-1]
            path = top[0] + (top[2],)
            if not top[1]:
                top[2] += 1
        start = m.start()
        while start >= next_start:
            line += 1
            next_start = lines[line + 1] if line + 1 < len(lines) else len(text) + 1
        positions[path] = (line + 1, start - lines[line] + 1)
        if first == "{":
            stack.append([path, True, None])
            expect_key = True
        elif first == "[":
            stack.append([path, False, 0])
        elif first != '"' and tok != "null":
            texts[path] = tok
    return positions, texts


#: JSON whitespace
_WS = re.compile(r"[ \t\n\r]*")
#: steps over one JSON value in C (the standard library's scanner), making as little as it can
_SKIP = json.JSONDecoder(object_pairs_hook=len, parse_int=len, parse_float=len,
                         parse_constant=len).scan_once


class _Finder:
    """Where the values of well-formed JSON text (with "\n" as its only line break) begin,
    found path by path: the positions :func:`_scan_json_positions` gives, without scanning the
    whole text. Each container on a path asked for is read once for where its members begin
    (the standard library's C scanner steps over each member); a line and column are worked
    out from the offset (1-based, in characters)."""

    def __init__(self, text: str) -> None:
        self.text = text
        self.root = _WS.match(text).end()
        self.members: dict[Path_, dict[Any, int]] = {}
        self.lines: list[int] | None = None  # where each line begins, made when first needed

    def _members(self, start: int) -> dict[Any, int]:
        """Key (or index) → offset of each member of the container that begins at ``start``."""
        text, ws = self.text, _WS.match
        out: dict[Any, int] = {}
        mapping = text[start] == "{"
        i = ws(text, start + 1).end()
        if text[i] in "}]":
            return out
        n = 0
        while True:
            if mapping:
                key, i = scanstring(text, i + 1)
                i = ws(text, ws(text, i).end() + 1).end()  # past the colon
            else:
                key, n = n, n + 1
            out[key] = i
            i = ws(text, _SKIP(text, i)[1]).end()
            if text[i] != ",":
                return out
            i = ws(text, i + 1).end()

    def locate(self, path: Path_) -> tuple[int, int]:
        """Line and column of ``path``, or of its nearest ancestor that has one."""
        at, prefix = self.root, ()
        for part in path:
            members = self.members.get(prefix)
            if members is None:
                if self.text[at] not in "{[":
                    break
                members = self.members[prefix] = self._members(at)
            if part not in members:
                break
            at, prefix = members[part], prefix + (part,)
        return self._line_column(at)

    def _line_column(self, offset: int) -> tuple[int, int]:
        if self.lines is None:
            self.lines = list(accumulate(map((1).__add__, map(len, self.text.split("\n"))),
                                         initial=0))
        line = bisect_right(self.lines, offset) - 1
        return (line + 1, offset - self.lines[line] + 1)


def _json_decode_error(exc: json.JSONDecodeError, text: str, file: str,
                       error_cls: type[AirgateError]) -> AirgateError:
    before = text[: exc.pos].rstrip()
    hint = None
    if before.endswith(",") and text[exc.pos: exc.pos + 1] in "}]":
        hint = "JSON allows no comma before a closing } or ]; remove it"
    elif exc.pos >= len(text.rstrip()):
        hint = "the file ends too early; is it complete?"
    elif exc.msg.startswith("Expecting property name") and text[exc.pos: exc.pos + 1] == "'":
        hint = "JSON names and text use double quotes"
    return error_cls(f"not valid JSON: {exc.msg}", file=file, line=exc.lineno,
                     column=exc.colno, field=path_at_error(text[: exc.pos].replace("\t", " ")),
                     hint=hint)


def _same_problem(problem: tuple[str, Path_, str] | None, exc: AirgateError) -> bool:
    """Whether the YAML reading of JSON text failed on the problem the JSON walk found."""
    if problem is None or exc.line is None:
        return False
    if problem[0] == "duplicate":
        return exc.message.startswith("duplicate key")
    return problem[0] in ("nodes", "depth") and "limit stops it" in exc.message


_CONTAINERS = frozenset({dict, list})


def _extent(data: Any) -> tuple[int, int]:
    """(values, deepest path length) of parsed JSON, counted as :func:`_walk_json` counts them
    but without building a path per value (a problem found is located by that walk): level by
    level, each level's values chained and its containers picked out in C."""
    values, deepest = 1, 0
    level = [data] if data.__class__ in _CONTAINERS else []
    while level:
        items = list(chain.from_iterable(
            [node.values() if node.__class__ is dict else node for node in level]))
        if not items:
            break
        values += len(items)
        deepest += 1
        level = list(compress(items, map(_CONTAINERS.__contains__, map(type, items))))
    return values, deepest


def _json_index(text: str, file: str,
                error_cls: type[AirgateError]) -> tuple[dict[Path_, tuple[int, int]], dict[Path_, str]]:
    """The positions and number texts of well-formed JSON text with no problem to report."""
    try:
        if not _other_breaks(text):
            return _scan_json_positions(text)
        composed = _json_positions(text, file, error_cls)
        return composed.positions, composed.texts
    except AirgateError:  # the YAML reading meets a limit JSON's does not: no positions
        return {}, {}


def parse_json(text: str, file: str, error_cls: type[AirgateError]) -> Document:
    """Parse strict JSON with the C decoder; positions are found from the text when first asked
    for (:class:`Lazy`), from a scan of its tokens or a YAML composition of the same text.

    A duplicate key, ``NaN`` or a document beyond a limit is walked value by value to report
    where, with the positions found at once."""
    flagged: list[str] = []

    def pairs(items: list[tuple[str, Any]]) -> dict[str, Any]:
        out = dict(items)
        if len(out) != len(items):
            flagged.append("duplicate")
            return _json_pairs(items)
        return out

    def constant(name: str) -> _Constant:
        flagged.append("constant")
        return _Constant(name)

    # whether every number is within the range airgate reads (docs/limits.md), seen as each
    # is read: the schedule reader then need not walk the data for them
    wide: list[bool] = []
    low, high = MIN_MAGNITUDE, MAX_MAGNITUDE

    def integer(text: str) -> int | float:
        if len(text) <= 15:  # at most 15 digits: within the range, and no longer than MAX_DIGITS
            return int(text)
        value = _json_int(text)
        if abs(value) > high:
            wide.append(True)
        return value

    def real(text: str) -> float:
        value = float(text)
        if value != 0 and not low <= abs(value) <= high:  # infinite too
            wide.append(True)
        return value

    try:
        data = json.loads(text, object_pairs_hook=pairs, parse_constant=constant,
                          parse_int=integer, parse_float=real)
    except json.JSONDecodeError as exc:
        raise _json_decode_error(exc, text, file, error_cls) from None
    except RecursionError:
        raise limit_error(error_cls, "depth", file, ()) from None
    if not flagged:
        values, deepest = _extent(data)
        if values <= L.MAX_NODES and deepest <= L.MAX_DEPTH:
            index: list = []

            def found(part: int) -> Any:
                if not index:
                    index.append(_json_index(text, file, error_cls))
                return index[0][part]

            return Document(file=file, data=data, positions=Lazy(lambda: found(0)),
                            texts=Lazy(lambda: found(1)),
                            finder=None if _other_breaks(text) else _Finder(text),
                            in_range=not wide)
    problem = _walk_json(data)
    try:
        if problem is None and not _other_breaks(text):
            positions, texts = _scan_json_positions(text)
        else:
            composed = _json_positions(text, file, error_cls)
            positions, texts = composed.positions, composed.texts
    except AirgateError as exc:
        if _same_problem(problem, exc):
            raise exc from None  # the YAML reading located the same duplicate key or limit
        positions, texts = {}, {}
    doc = Document(file=file, data=data, positions=positions, texts=texts)
    if problem is None:
        return doc
    what, path, detail = problem
    if what in ("nodes", "depth"):
        raise limit_error(error_cls, what, file, path, *doc.locate(path))
    if what == "duplicate":
        raise doc.error(error_cls, f"duplicate key '{detail}'", path, hint="give each key once")
    raise doc.error(error_cls, f"{detail} is not a number JSON allows", path,
                    hint="give a finite number")
