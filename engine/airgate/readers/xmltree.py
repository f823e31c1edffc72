"""A small, safe XML reader that keeps each element's line and column.

Python's expat parser is used directly, with every document type declaration refused: no DTD,
so no entity can be declared (no entity expansion, no external entity, no network access), and
external entity references are refused as well. Size, element count and depth are limited.
"""

from __future__ import annotations

import xml.parsers.expat as expat
from dataclasses import dataclass, field

from airgate.errors import ScheduleError

MAX_ELEMENTS = 2_000_000
MAX_DEPTH = 100


@dataclass
class Element:
    """One XML element: local name, namespace, attributes, children, text and position."""

    tag: str
    ns: str
    attrib: dict[str, str]
    line: int
    column: int
    children: list[Element] = field(default_factory=list)
    parts: list[str] = field(default_factory=list)

    @property
    def text(self) -> str:
        return "".join(self.parts)

    def find(self, tag: str) -> Element | None:
        return next((c for c in self.children if c.tag == tag), None)

    def findall(self, tag: str) -> list[Element]:
        return [c for c in self.children if c.tag == tag]

    def iter(self, tag: str | None = None):
        todo = [self]
        while todo:
            node = todo.pop()
            if tag is None or node.tag == tag:
                yield node
            todo.extend(reversed(node.children))

    def prune(self, ns: str) -> list[Element]:
        """Remove, at any depth, the elements of a namespace other than ``ns`` (with all they
        hold); return them. A document may carry other vocabularies: they are not its own."""
        removed: list[Element] = []
        todo = [self]
        while todo:
            node = todo.pop()
            keep = [c for c in node.children if c.ns == ns]
            removed += [c for c in node.children if c.ns != ns]
            node.children = keep
            todo.extend(keep)
        return sorted(removed, key=lambda e: (e.line, e.column))

    def child_text(self, tag: str) -> str | None:
        node = self.find(tag)
        return node.text.strip() if node is not None else None


class _Refused(Exception):
    pass


def parse(data: bytes, file: str, what: str = "XML") -> Element:
    """Parse ``data``; a DTD, an entity or malformed XML is an error naming line and column."""
    parser = expat.ParserCreate(namespace_separator=" ")
    parser.SetParamEntityParsing(expat.XML_PARAM_ENTITY_PARSING_NEVER)
    stack: list[Element] = []
    root: list[Element] = []
    count = [0]

    def refuse_dtd(*_args) -> None:
        raise _Refused("the document declares a DTD (<!DOCTYPE …>); airgate reads no DTDs, so "
                       "no entities can be expanded")

    def refuse_entity(*_args) -> None:
        raise _Refused("the document declares or refers to an external entity; airgate does "
                       "not read entities")

    def start(name: str, attrs: dict[str, str]) -> None:
        count[0] += 1
        if count[0] > MAX_ELEMENTS:
            raise _Refused(f"more than {MAX_ELEMENTS} elements; the element limit stops it here")
        if len(stack) >= MAX_DEPTH:
            raise _Refused(f"nesting deeper than {MAX_DEPTH} levels; the depth limit stops it "
                           "here")
        ns, _, local = name.rpartition(" ")
        # attributes without a prefix are the element's own; a prefixed one keeps its
        # namespace in its key ("NS name"), so it never stands in for an unprefixed one
        node = Element(local, ns, dict(attrs),
                       parser.CurrentLineNumber, parser.CurrentColumnNumber + 1)
        if stack:
            stack[-1].children.append(node)
        else:
            root.append(node)
        stack.append(node)

    def end(_name: str) -> None:
        stack.pop()

    def chars(text: str) -> None:
        if stack:
            stack[-1].parts.append(text)

    parser.StartDoctypeDeclHandler = refuse_dtd
    parser.EntityDeclHandler = refuse_entity
    parser.UnparsedEntityDeclHandler = refuse_entity
    parser.ExternalEntityRefHandler = refuse_entity
    parser.StartElementHandler = start
    parser.EndElementHandler = end
    parser.CharacterDataHandler = chars
    try:
        parser.Parse(data, True)
    except _Refused as exc:
        raise ScheduleError(str(exc), file=file, line=parser.CurrentLineNumber,
                            column=parser.CurrentColumnNumber + 1,
                            hint="remove the DOCTYPE declaration and any entities") from None
    except LookupError as exc:  # the XML declaration names an encoding Python does not know
        raise ScheduleError(f"not readable {what}: {exc}", file=file, line=1, column=1,
                            hint="declare encoding=\"UTF-8\" in the <?xml …?> line, or save "
                                 "the file as UTF-8") from None
    except expat.ExpatError as exc:
        ended = exc.code in {expat.errors.codes[m] for m in (
            expat.errors.XML_ERROR_NO_ELEMENTS, expat.errors.XML_ERROR_UNCLOSED_TOKEN,
            expat.errors.XML_ERROR_UNCLOSED_CDATA_SECTION)} or exc.lineno >= data.count(b"\n")
        raise ScheduleError(f"not well-formed {what}: {expat.ErrorString(exc.code)}", file=file,
                            line=exc.lineno, column=exc.offset + 1,
                            hint="the file ends too early; is it complete?" if ended else None
                            ) from None
    if not root:
        raise ScheduleError(f"no {what} element found", file=file, line=1, column=1)
    return root[0]
