"""The STEP physical file structure of an IFC file (ISO 10303-21), checked before it is parsed.

ifcopenshell reads a damaged file leniently: an entity that refers to one the file never defines
becomes an empty attribute deep in the reading, and a syntax error is reported without a line.
This scan goes once over the DATA section and finds, each with its line and column:

- a statement that is not ``#id = ENTITY(…);`` (unbalanced parentheses, an unterminated string,
  text where a statement should start) — ISO 10303-21 §10 (data section) and §6.4 (tokens);
- an entity id defined twice;
- a reference ``#id`` to an entity the file does not define.

It returns the line of every entity, for the locations of the IFC reader's messages.
"""

from __future__ import annotations

import re

from airgate.errors import ScheduleError

_TOKEN = re.compile(rb"""
    (?P<space>[ \t\r]+)
  | (?P<newline>\n)
  | (?P<comment>/\*.*?\*/)
  | (?P<string>'(?:[^']|'')*')
  | (?P<binary>"[0-9A-Fa-f]*")
  | (?P<ref>\#[0-9]+)
  | (?P<open>\()
  | (?P<close>\))
  | (?P<end>;)
  | (?P<eq>=)
  | (?P<word>[A-Za-z_][A-Za-z0-9_]*|\.[A-Za-z_][A-Za-z0-9_]*\.|[-+0-9.Ee]+|[$*,])
""", re.VERBOSE | re.DOTALL)


class _Scan:
    def __init__(self, data: bytes, file: str) -> None:
        self.data, self.file = data, file
        self.line, self.line_start = 1, 0
        self.lines: dict[int, int] = {}
        self.refs: list[tuple[int, int, int, int]] = []  # (id, line, column, by entity)
        self.start = (1, 1)  # line and column of the statement being read

    def error(self, message: str, pos: int | None, hint: str) -> ScheduleError:
        """An error at ``pos``, or (``None``) at the start of the statement being read."""
        line, column = self.start if pos is None else (self.line, pos - self.line_start + 1)
        return ScheduleError(message, file=self.file, line=line, column=column, hint=hint)

    def run(self, start: int, stop: int) -> None:
        pos, entity, depth, state = start, 0, 0, "start"  # start → id → eq → body
        while pos < stop:
            m = _TOKEN.match(self.data, pos, stop)
            if m is None:
                what = self.data[pos:pos + 1].decode("latin-1")
                raise self.error(f"not valid IFC (STEP) syntax: unexpected {what!r}", pos,
                                 "export the model as IFC again")
            kind, text = m.lastgroup, m[0]
            if kind == "newline":
                self.line, self.line_start = self.line + 1, m.end()
            elif kind == "comment" or kind == "string" or kind == "binary":
                if kind == "string" and re.search(rb"\n\s*#[0-9]+\s*=", text):
                    raise self.error("not valid IFC (STEP) syntax: a text that is never "
                                     "closed (a missing quote ')", pos, "export the model as IFC again")
                self.line += text.count(b"\n")
                if b"\n" in text:
                    self.line_start = pos + text.rindex(b"\n") + 1
                if state == "start" and kind != "comment":
                    raise self.error("not valid IFC (STEP) syntax: a statement starts with "
                                     "#id =", pos, "export the model as IFC again")
            elif kind != "space":
                entity, depth, state = self._token(kind, text, pos, entity, depth, state)
            pos = m.end()
        if state != "start":
            raise self.error("the DATA section ends inside a statement (a missing ';' or ')')",
                             pos, "the file ends too early; export the model again")

    def _token(self, kind: str, text: bytes, pos: int, entity: int, depth: int,
               state: str) -> tuple[int, int, str]:
        syntax = "not valid IFC (STEP) syntax: "
        if state == "start":
            if kind != "ref":
                raise self.error(syntax + "a statement starts with #id =", pos,
                                 "export the model as IFC again")
            entity = int(text[1:])
            if entity in self.lines:
                raise self.error(f"entity #{entity} is defined twice (first on line "
                                 f"{self.lines[entity]})", pos, "export the model again")
            self.lines[entity] = self.line
            self.start = (self.line, pos - self.line_start + 1)
            return entity, 0, "id"
        if state == "id":
            if kind != "eq":
                raise self.error(syntax + f"'=' expected after #{entity}", pos,
                                 "export the model as IFC again")
            return entity, 0, "eq"
        if kind == "open":
            return entity, depth + 1, "body"
        if kind == "close":
            if depth == 0:
                raise self.error(syntax + "')' without '('", pos, "export the model as IFC again")
            return entity, depth - 1, "body"
        if kind == "end":
            if depth != 0 or state != "body":
                raise self.error(syntax + f"statement #{entity} ends with {depth} '(' "
                                 "unclosed", pos, "export the model as IFC again")
            return 0, 0, "start"
        if kind == "ref":
            self.refs.append((int(text[1:]), self.line, pos - self.line_start + 1, entity))
        elif kind == "eq":  # '#n =' inside a statement: the previous one was never ended
            raise self.error(syntax + f"statement #{entity} does not end before the next one "
                             "(a missing ')' or ';')", None, "export the model as IFC again")
        return entity, depth, "body" if state == "body" else state


def scan(data: bytes, file: str) -> dict[int, int]:
    """Check the DATA section of an IFC file; the line of every entity id. Raises
    :class:`ScheduleError` at the first syntax error, duplicate id or dangling reference."""
    start = re.search(rb"(?m)^\s*DATA\s*;", data)
    if start is None:
        raise ScheduleError("the IFC file has no DATA section", file=file,
                            hint="export the model as IFC again")
    stop = re.compile(rb"(?m)^\s*ENDSEC\s*;").search(data, start.end())
    if stop is None:
        raise ScheduleError("the DATA section of the IFC file has no ENDSEC;", file=file,
                            line=data.count(b"\n") + 1, hint="the file ends too early; export "
                            "the model again")
    s = _Scan(data, file)
    s.line = data.count(b"\n", 0, start.end()) + 1
    s.line_start = data.rfind(b"\n", 0, start.end()) + 1
    s.run(start.end(), stop.start())
    for ref, line, column, entity in s.refs:
        if ref not in s.lines:
            raise ScheduleError(f"entity #{entity} refers to #{ref}, which the file does not "
                                "define", file=file, line=line, column=column,
                                hint="export the model again; a reference must name an entity "
                                     "of the file")
    return s.lines
