"""Read strict JSON with the C decoder, finding positions only when they are first asked for.

A well-formed document within the limits is decoded by :func:`json.loads` alone (duplicate keys
and ``NaN`` flagged by its hooks, values and depth counted without a path per value); the
position of a path is found when a finding, an error or a report first asks for it, from an
index of the text's punctuation made then (:class:`_Finder`), and its number texts from one
scan of its tokens (or a YAML composition of the same text) the first time one is asked for.
A document with a problem is walked value by value so that the problem is reported at its line
and column, as the YAML reader reports it.
"""

from __future__ import annotations

import json
import math
import re
from bisect import bisect_right
from itertools import chain, compress
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
#: a mapping's key as written (group 1, between its quotes) up to where its value begins
_KEY = re.compile(r'[ \t\n\r]*"((?:[^"\\]|\\.)*)"[ \t\n\r]*:[ \t\n\r]*')
#: from after a key to where its value begins
_COLON = re.compile(r"[ \t\n\r]*:[ \t\n\r]*")


#: characters of the text looked at in one piece while it is indexed (bounds the memory used)
_PIECE = 1 << 22


def _marks(text: str) -> tuple[Any, Any, Any, Any, Any]:
    """Offsets (in characters, ascending) of the quotes, backslashes, brackets and commas and
    line breaks of ``text``: (quotes, backslashes, punctuation, its characters, line breaks)."""
    import numpy as np  # used by the evaluation anyway; imported when a position is first asked

    found: list[list] = [[], [], [], [], []]
    for begin in range(0, len(text), _PIECE):
        piece = text[begin: begin + _PIECE]
        if piece.isascii():
            codes = np.frombuffer(piece.encode("ascii"), np.uint8)
            follow = None
        else:  # offsets in UTF-8 bytes, less the continuation bytes before each
            codes = np.frombuffer(piece.encode("utf-8", "surrogatepass"), np.uint8)
            follow = np.flatnonzero((codes & 0xC0) == 0x80)
        punct = np.flatnonzero((codes == 0x2C) | (codes == 0x5B) | (codes == 0x5D)
                               | (codes == 0x7B) | (codes == 0x7D))
        for n, offsets in enumerate((np.flatnonzero(codes == 0x22),
                                     np.flatnonzero(codes == 0x5C), punct,
                                     None, np.flatnonzero(codes == 0x0A))):
            if offsets is None:
                found[n].append(codes[punct])
                continue
            if follow is not None and len(follow):
                offsets = offsets - np.searchsorted(follow, offsets)
            found[n].append(offsets + begin)
    empty = np.zeros(0, np.int64)
    return tuple(np.concatenate(part) if part else empty  # type: ignore[return-value]
                 for part in found)


class _Index:
    """The punctuation of well-formed JSON text outside its strings, for :class:`_Finder`:
    per nesting level, where its commas and closing brackets are (a container whose content
    is at level ``d`` ends at the first closing bracket of level ``d`` after it, and its
    members are separated by the commas of level ``d`` between), and where each line break
    is. Found over the whole text at once with numpy."""

    def __init__(self, text: str) -> None:
        import numpy as np

        quotes, backslashes, punct, chars, self.breaks = _marks(text)
        if len(backslashes) and len(quotes):  # a quote after an odd run of backslashes is text
            first = np.ones(len(backslashes), bool)
            first[1:] = backslashes[1:] != backslashes[:-1] + 1
            run_start = np.maximum.accumulate(np.where(first, backslashes, -1))
            before = np.searchsorted(backslashes, quotes) - 1
            ends = (before >= 0) & (backslashes[np.maximum(before, 0)] == quotes - 1)
            escaped = ends & ((quotes - run_start[np.maximum(before, 0)]) % 2 == 1)
            quotes = quotes[~escaped]
        outside = np.searchsorted(quotes, punct) % 2 == 0  # an even count of quotes before
        punct, chars = punct[outside], chars[outside]
        opens = (chars == 0x5B) | (chars == 0x7B)
        closes = (chars == 0x5D) | (chars == 0x7D)
        level = np.cumsum(opens.astype(np.int64) - closes)  # the level after each mark
        level[closes] += 1  # a closing bracket belongs to the level it closes
        self.commas = self._by_level(punct[chars == 0x2C], level[chars == 0x2C])
        self.closes = self._by_level(punct[closes], level[closes])

    @staticmethod
    def _by_level(offsets: Any, level: Any) -> dict[int, Any]:
        import numpy as np

        order = np.argsort(level, kind="stable")
        offsets, level = offsets[order], level[order]
        bounds = np.flatnonzero(np.diff(level)) + 1
        return {int(group[0]): part for group, part in
                zip(np.split(level, bounds), np.split(offsets, bounds)) if len(group)}

    def separators(self, start: int, level: int) -> tuple[list[int], int]:
        """The offsets after which each member of the container at ``start`` (content at
        ``level``) begins (its opening bracket, then each comma of its level), and the offset
        of its closing bracket."""
        closes = self.closes[level]
        end = int(closes[closes.searchsorted(start)])
        commas = self.commas.get(level)
        if commas is None:
            return [start], end
        return [start, *commas[commas.searchsorted(start): commas.searchsorted(end)].tolist()], end

    def line_column(self, offset: int) -> tuple[int, int]:
        line = int(self.breaks.searchsorted(offset))  # the line breaks before the offset
        return (line + 1, offset - (int(self.breaks[line - 1]) + 1 if line else 0) + 1)


class _Finder:
    """Where the values of well-formed JSON text (with "\n" as its only line break) begin,
    found path by path: the positions :func:`_scan_json_positions` gives, without scanning the
    whole text in Python. The first position asked for indexes the text's punctuation
    (:class:`_Index`); each container on a path then finds where its members begin from the
    commas of its level (a mapping's key where it is written as asked for, :class:`_Keys`); a
    line and column are worked out from the offset (1-based, in characters)."""

    def __init__(self, text: str) -> None:
        self.text = text
        self.root = _WS.match(text).end()
        self.index: _Index | None = None  # made when a position is first asked for
        #: offset of a container → its members' offsets (a list's) or key → offset (a mapping's)
        self.members: dict[int, Any] = {}

    def _members(self, start: int, level: int) -> Any:
        """The members of the container that begins at ``start``: for a list, the offsets
        after which each begins (whitespace before it); for a mapping, its :class:`_Keys`."""
        text = self.text
        if text[_WS.match(text, start + 1).end()] in "}]":
            return {} if text[start] == "{" else []
        after, end = self.index.separators(start, level)
        return after if text[start] == "[" else _Keys(text, after, end)

    def locate(self, path: Path_) -> tuple[int, int]:
        """Line and column of ``path``, or of its nearest ancestor that has one."""
        if self.index is None:
            self.index = _Index(self.text)
        at, level = self.root, 0
        for part in path:
            members = self.members.get(at)
            if members is None:
                if self.text[at] not in "{[":
                    break
                members = self.members[at] = self._members(at, level + 1)
            if members.__class__ is list:
                if part.__class__ is not int:  # an index given otherwise (True, 1.0), or a key
                    indexes = dict.fromkeys(range(len(members)))
                    if part not in indexes:
                        break
                    part = next(i for i in indexes if i == part)
                if not 0 <= part < len(members):
                    break
                at = _WS.match(self.text, members[part] + 1).end()
            else:
                found = members.get(part)
                if found is None:
                    break
                at = found
            level += 1
        return self.index.line_column(at)


class _Keys:
    """Where the values of one mapping of the text begin, by key. A key asked for is looked
    for as written (``"key"`` between the mapping's brackets, where a member begins); a key
    not found so, or that could be written otherwise (with a quote or a backslash), has
    every key of the mapping read, once."""

    __slots__ = ("text", "after", "end", "found", "whole")

    def __init__(self, text: str, after: list[int], end: int) -> None:
        self.text, self.after, self.end = text, after, end
        self.found: dict[Any, int] = {}
        self.whole = False  # every key read

    def get(self, key: Any) -> int | None:
        at = self.found.get(key)
        if at is not None or self.whole:
            return at
        if key.__class__ is str and '"' not in key and "\\" not in key:
            text, after, ws = self.text, self.after, _WS.match
            written = f'"{key}"'
            at = text.find(written, after[0], self.end)
            while at >= 0:
                before = after[bisect_right(after, at) - 1]  # the member's comma or bracket
                if ws(text, before + 1).end() == at:
                    self.found[key] = at = _COLON.match(text, at + len(written)).end()
                    return at
                at = text.find(written, at + 1, self.end)
        self._read()
        return self.found.get(key)

    def _read(self) -> None:
        text = self.text
        for at in self.after:
            m = _KEY.match(text, at + 1)
            key = m[1]
            self.found[key if "\\" not in key else scanstring(text, m.start(1))[0]] = m.end()
        self.whole = True


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
