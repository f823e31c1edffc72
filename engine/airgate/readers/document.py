"""Load a YAML or JSON document into plain Python data, keeping every node's position.

YAML is read with PyYAML's safe loader (no tags that build objects), with plain scalars resolved
as the YAML 1.2 core schema does: only ``true``/``false`` are booleans (``yes``, ``no``, ``on``,
``off`` stay text), ``12:30`` is text rather than a base-60 number, ``030`` is thirty rather than
octal, ``1e5`` is a number, and dates stay text. Duplicate keys, non-scalar keys, excessive alias
expansion and nesting are input errors, each with its line and column. Positions are 1-based and
keyed by field path, e.g. ``("systems", 0, "zones", 2, "area")``; a syntax error also names the
field being read when it happened.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import yaml

from airgate.errors import AirgateError, Path_
from airgate.readers import limits as L  # the limits (docs/limits.md), read when used
from airgate.readers.document_yaml import int_of, read_events
from airgate.readers.limits import AliasBudget, current_budget, limit_error, utf8_len
from airgate.readers.textfile import (  # noqa: F401 - the readers' file functions, here too
    followable, read_bytes, read_text)

#: Digits of a whole number read exactly; a longer one is read as infinite and refused by the
#: schedule reader where it is written (Python's int() refuses more than 4,300 digits)
MAX_DIGITS = 4000

_MERGE_TAG = "tag:yaml.org,2002:merge"


class _LimitReached(Exception):
    """The composer passed :data:`~airgate.readers.limits.MAX_NODES` or ``MAX_DEPTH`` (raised with its mark)."""

    def __init__(self, what: str, mark: yaml.Mark) -> None:
        super().__init__(what)
        self.what = what
        self.mark = mark


class _Rules:
    """What both loaders add to PyYAML's safe loading: YAML 1.2 core-schema resolution of plain
    scalars, and counting of nodes and nesting while composing, so a huge or deep document is
    refused before it is held in memory."""

    composed: int
    depth: int
    #: where each alias is written: (id of the parent node, index or id of the key node) → mark
    alias_marks: dict[tuple[int, int], yaml.Mark]

    def compose_node(self, parent: yaml.Node | None, index: Any) -> yaml.Node:
        if parent is not None and self.check_event(yaml.AliasEvent):
            key = index if isinstance(index, int) else id(index)
            self.alias_marks[(id(parent), key)] = self.peek_event().start_mark
        self.composed += 1
        if self.composed > L.MAX_NODES:
            raise _LimitReached("nodes", self.peek_event().start_mark)
        if self.depth > L.MAX_DEPTH:
            raise _LimitReached("depth", self.peek_event().start_mark)
        self.depth += 1
        try:
            return super().compose_node(parent, index)  # type: ignore[misc]
        finally:
            self.depth -= 1

    def construct_yaml_int(self, node: yaml.ScalarNode) -> int:
        """Decimal, ``0o`` octal or ``0x`` hexadecimal (YAML 1.2); never 1.1 octal or base 60."""
        # int() would refuse a very long one, with no position: read as infinite, it is
        # refused by the schedule reader where it is written
        return int_of(self.construct_scalar(node), MAX_DIGITS)  # type: ignore[attr-defined]


class _Loader(_Rules, yaml.SafeLoader):
    """PyYAML's pure-Python safe loader with :class:`_Rules`: the reference reading, and the one
    whose error messages are reported."""

    yaml_implicit_resolvers: dict = {}

    def __init__(self, stream: str) -> None:
        super().__init__(stream)
        self.composed = 0
        self.depth = 0
        self.alias_marks = {}


try:  # libyaml's scanner and parser (C), with PyYAML's Python composer and constructor
    from yaml._yaml import CParser as _CParser
except ImportError:  # PyYAML built without libyaml: the pure-Python loader alone
    _CParser = None

if _CParser is not None:
    class _FastLoader(_Rules, _CParser, yaml.composer.Composer,  # type: ignore[misc]
                      yaml.constructor.SafeConstructor, yaml.resolver.Resolver):
        """The same reading as :class:`_Loader` from libyaml's events (several times faster
        on large schedules); composing stays in Python, so the limits above still apply. A
        document it cannot read is read again by :class:`_Loader` for the error message."""

        yaml_implicit_resolvers: dict = {}
        get_single_node = yaml.composer.Composer.get_single_node
        check_node = yaml.composer.Composer.check_node
        get_node = yaml.composer.Composer.get_node

        def __init__(self, stream: str) -> None:
            _CParser.__init__(self, stream)
            yaml.composer.Composer.__init__(self)
            yaml.constructor.SafeConstructor.__init__(self)
            yaml.resolver.Resolver.__init__(self)
            self.composed = 0
            self.depth = 0
            self.alias_marks = {}

    _LOADERS: tuple[type, ...] = (_FastLoader, _Loader)
else:
    _LOADERS = (_Loader,)

for _cls in _LOADERS:
    _cls.add_implicit_resolver(
        "tag:yaml.org,2002:null", re.compile(r"^(?:~|null|Null|NULL|)$"), ["~", "n", "N", ""])
    _cls.add_implicit_resolver(
        "tag:yaml.org,2002:bool", re.compile(r"^(?:true|True|TRUE|false|False|FALSE)$"),
        list("tTfF"))
    _cls.add_implicit_resolver(
        "tag:yaml.org,2002:int", re.compile(r"^(?:[-+]?[0-9]+|0o[0-7]+|0x[0-9a-fA-F]+)$"),
        list("-+0123456789"))
    _cls.add_implicit_resolver(
        "tag:yaml.org,2002:float",
        re.compile(r"^(?:[-+]?(?:\.[0-9]+|[0-9]+(?:\.[0-9]*)?)(?:[eE][-+]?[0-9]+)?"
                   r"|[-+]?\.(?:inf|Inf|INF)|\.(?:nan|NaN|NAN))$"),
        list("-+.0123456789"))
    _cls.add_implicit_resolver("tag:yaml.org,2002:merge", re.compile(r"^(?:<<)$"), ["<"])
    _cls.add_constructor("tag:yaml.org,2002:int", _cls.construct_yaml_int)


class Lazy(dict):
    """A mapping filled the first time it is read: the positions and number texts of a JSON
    document are found only when a message or a report asks for one (:func:`parse_json`)."""

    __slots__ = ("_fill",)

    def __init__(self, fill: Any) -> None:
        super().__init__()
        self._fill = fill

    def _load(self) -> None:
        fill, self._fill = self._fill, None
        if fill is not None:
            dict.update(self, fill())

    def __getitem__(self, key: Any) -> Any:
        self._load()
        return dict.__getitem__(self, key)

    def __contains__(self, key: Any) -> bool:
        self._load()
        return dict.__contains__(self, key)

    def __iter__(self):
        self._load()
        return dict.__iter__(self)

    def __len__(self) -> int:
        self._load()
        return dict.__len__(self)

    def __setitem__(self, key: Any, value: Any) -> None:
        self._load()
        dict.__setitem__(self, key, value)

    def __eq__(self, other: Any) -> bool:
        self._load()
        return dict.__eq__(self, other)

    __hash__ = None  # type: ignore[assignment]

    def __repr__(self) -> str:
        self._load()
        return dict.__repr__(self)

    def __reduce__(self):  # kept (pickled) as the plain mapping it stands for
        self._load()
        return (dict, (dict(self),))

    def get(self, key: Any, default: Any = None) -> Any:
        self._load()
        return dict.get(self, key, default)

    def pop(self, *args: Any) -> Any:
        self._load()
        return dict.pop(self, *args)

    def setdefault(self, key: Any, default: Any = None) -> Any:
        self._load()
        return dict.setdefault(self, key, default)

    def update(self, *args: Any, **kw: Any) -> None:
        self._load()
        dict.update(self, *args, **kw)

    def keys(self):
        self._load()
        return dict.keys(self)

    def values(self):
        self._load()
        return dict.values(self)

    def items(self):
        self._load()
        return dict.items(self)

    def copy(self) -> dict:
        self._load()
        return dict(self)


@dataclass
class Document:
    """Plain data plus where each value was written.

    ``texts`` keeps the source text of plain scalars that were read as numbers or booleans, so a
    text field (an id such as ``0101``) can be taken exactly as written.
    """

    file: str
    data: Any
    positions: dict[Path_, tuple[int, int]] = field(default_factory=dict)
    texts: dict[Path_, str] = field(default_factory=dict)
    #: finds the position of one path without all of ``positions`` (well-formed JSON text,
    #: :class:`airgate.readers.document_json._Finder`); None: ``positions`` holds them
    finder: Any = None
    #: True when the reader saw that every number of ``data`` is finite and within the range
    #: airgate reads (docs/limits.md), so the schedule reader need not look; None: not known
    in_range: bool | None = None

    def locate(self, path: Path_) -> tuple[int | None, int | None]:
        """Line and column of ``path``, or of its nearest ancestor that has one."""
        if self.finder is not None:
            return self.finder.locate(path)
        path = tuple(path)
        while True:
            if path in self.positions:
                return self.positions[path]
            if not path:
                return (None, None)
            path = path[:-1]

    def error(self, cls: type[AirgateError], message: str, path: Path_, **kw: Any) -> AirgateError:
        line, column = self.locate(path)
        return cls(message, file=self.file, line=line, column=column, field=path, **kw)


class _Builder:
    def __init__(self, doc: Document, loader: yaml.SafeLoader, error_cls: type[AirgateError]):
        self.doc = doc
        self.loader = loader
        self.error_cls = error_cls
        self.count = 0
        self.budget = current_budget() or AliasBudget()
        self.built: set[int] = set()
        self.alias_at: yaml.Mark | None = None  # the alias being expanded, for limit errors
        self.first_own: dict[int, int] = {}

    def fail(self, node: yaml.Node, message: str, path: Path_, hint: str | None = None):
        mark = node.start_mark
        return self.error_cls(
            message, file=self.doc.file, line=mark.line + 1, column=mark.column + 1,
            field=path, hint=hint,
        )

    def build(self, node: yaml.Node, path: Path_, depth: int, parent: yaml.Node | None = None,
              key: int = 0) -> Any:
        alias = self.loader.alias_marks.get((id(parent), key)) if parent is not None else None
        if alias is None or self.alias_at is not None:  # the outermost alias is the use site
            return self._build(node, path, depth)
        outer, self.alias_at = self.alias_at, alias
        try:
            return self._build(node, path, depth)
        finally:
            self.alias_at = outer

    def _build(self, node: yaml.Node, path: Path_, depth: int) -> Any:
        self.count += 1
        mark = node.start_mark
        again = id(node) in self.built  # reached again through an alias
        if again:
            self.budget.values += 1
            if isinstance(node, yaml.ScalarNode):
                self.budget.bytes += utf8_len(node.value)
        else:
            self.built.add(id(node))
        what = "nodes" if self.count > L.MAX_NODES else self.budget.over()
        if what:
            at = self.alias_at if again and self.alias_at is not None else mark
            raise limit_error(self.error_cls, what, self.doc.file, path, at.line + 1,
                              at.column + 1)
        if depth > L.MAX_DEPTH:
            raise limit_error(self.error_cls, "depth", self.doc.file, path,
                               mark.line + 1, mark.column + 1)
        self.doc.positions[path] = (mark.line + 1, mark.column + 1)
        if isinstance(node, yaml.MappingNode):
            return self._mapping(node, path, depth, again)
        if isinstance(node, yaml.SequenceNode):
            return [self.build(item, path + (i,), depth + 1, node, i)
                    for i, item in enumerate(node.value)]
        try:
            value = self.loader.construct_object(node, deep=True)
        except yaml.YAMLError as exc:
            raise self.fail(node, f"cannot read value: {exc}", path) from None
        if isinstance(value, (bool, int, float)) and not node.style:  # plain: None or ""
            self.doc.texts[path] = node.value
        return value

    def _flatten(self, node: yaml.MappingNode) -> int:
        """Resolve YAML merge keys (<<) once per node; the index of the node's own first pair.

        The merged pairs come first, then the mapping's own, which override them; only the
        mapping's own keys must be unique. (A node reached again through an alias is already
        flattened, so the index is remembered.)
        """
        if id(node) not in self.first_own:
            own_count = sum(1 for key, _ in node.value if key.tag != _MERGE_TAG)
            self.loader.flatten_mapping(node)
            self.first_own[id(node)] = len(node.value) - own_count
        return self.first_own[id(node)]

    def _mapping(self, node: yaml.MappingNode, path: Path_, depth: int,
                 again: bool = False) -> dict[str, Any]:
        first_own = self._flatten(node)
        out: dict[str, Any] = {}
        own: set[str] = set()
        for index, (key_node, value_node) in enumerate(node.value):
            if not isinstance(key_node, yaml.ScalarNode):
                raise self.fail(key_node, "a key must be a plain name, not a list or mapping",
                                path, hint="write 'name: value'")
            if again or id(key_node) in self.built:  # a key repeated through an alias
                self.budget.bytes += utf8_len(key_node.value)
                if self.budget.over():
                    at = self.alias_at or key_node.start_mark
                    raise limit_error(self.error_cls, self.budget.over(), self.doc.file,
                                      path, at.line + 1, at.column + 1)
            self.built.add(id(key_node))
            key = self.loader.construct_object(key_node)
            if not isinstance(key, str):
                key = key_node.value  # as written: 'true', '1', '~'
            if key in own:
                first = self.doc.positions.get(path + (key,), (None, None))[0]
                raise self.fail(
                    key_node, f"duplicate key '{key}' (first given on line {first})",
                    path + (key,), hint="give each key once",
                )
            if index >= first_own:
                own.add(key)
                self.doc.positions.pop(path + (key,), None)
                self.doc.texts.pop(path + (key,), None)
            self.doc.positions[path + (key,)] = (
                value_node.start_mark.line + 1, value_node.start_mark.column + 1,
            )
            out[key] = self.build(value_node, path + (key,), depth + 1, node, id(key_node))
        return out


class _PathTracker:
    """Follows YAML parser events to know which field is being read (for syntax errors)."""

    def __init__(self) -> None:
        #: per open collection: [is_mapping, key or index, expecting a key?]
        self.stack: list[list[Any]] = []

    def _value_started(self) -> None:
        if not self.stack:
            return
        top = self.stack[-1]
        if not top[0]:
            top[1] += 1

    def _value_done(self, scalar_key: str | None = None) -> None:
        if not self.stack or not self.stack[-1][0]:
            return
        top = self.stack[-1]
        if top[2]:  # a key was read; its value comes next
            top[1], top[2] = scalar_key, False
        else:
            top[2] = True

    def feed(self, event: yaml.Event) -> None:
        if isinstance(event, (yaml.MappingStartEvent, yaml.SequenceStartEvent)):
            self._value_started()
            mapping = isinstance(event, yaml.MappingStartEvent)
            self.stack.append([True, None, True] if mapping else [False, -1, False])
        elif isinstance(event, (yaml.MappingEndEvent, yaml.SequenceEndEvent)):
            self.stack.pop()
            self._value_done()
        elif isinstance(event, (yaml.ScalarEvent, yaml.AliasEvent)):
            self._value_started()
            self._value_done(event.value if isinstance(event, yaml.ScalarEvent) else None)

    def path(self) -> Path_:
        out: list[str | int] = []
        for is_mapping, at, expecting_key in self.stack:
            if is_mapping and (expecting_key or at is None):
                break
            if not is_mapping and at < 0:
                break
            out.append(at)
        return tuple(out)


def path_at_error(text: str, stop: int | None = None) -> Path_:
    """The field path being read where ``text`` stops parsing, or at character ``stop``.

    ``()`` when nothing is known.
    """
    tracker = _PathTracker()
    try:
        for event in yaml.parse(text, Loader=yaml.SafeLoader):
            if stop is not None and event.start_mark.index >= stop:
                break
            tracker.feed(event)
    except yaml.YAMLError:
        pass
    return tracker.path()


def _syntax_error(exc: yaml.MarkedYAMLError, text: str, file: str,
                  error_cls: type[AirgateError]) -> AirgateError:
    mark = exc.problem_mark or exc.context_mark
    problem = exc.problem or str(exc)
    hint = None
    lines = text.splitlines()
    if mark is not None and mark.line < len(lines) and "\t" in lines[mark.line][: mark.column + 1]:
        problem += " (YAML does not allow tabs for indentation)"
        hint = "indent with spaces"
    elif mark is not None and mark.index >= len(text.rstrip()):
        hint = "the file ends too early; is it complete?"
    if exc.context and exc.context_mark and exc.context_mark is not mark:
        problem += f" ({exc.context} on line {exc.context_mark.line + 1})"
    return error_cls(
        f"not valid YAML: {problem}", file=file,
        line=mark.line + 1 if mark else None, column=mark.column + 1 if mark else None,
        field=path_at_error(text, mark.index if mark else None), hint=hint,
    )


def parse_yaml(text: str, file: str, error_cls: type[AirgateError]) -> Document:
    """Parse YAML (or JSON, a near subset) text into a :class:`Document`.

    libyaml's events are read straight into data and positions first
    (:mod:`airgate.readers.document_yaml`); a text that reading gives way on is composed by the
    fast loader (libyaml's events, the Python composer), which refuses what it refused before;
    if it meets a syntax error the pure-Python loader reads the text again, so the message and
    position reported are always the reference loader's. Text
    with a tab goes to the reference loader alone: libyaml accepts tabs as separators where
    PyYAML's loader refuses them, and a schedule must read the same on every machine."""
    if len(_LOADERS) > 1 and "\t" not in text:  # libyaml takes tabs PyYAML refuses
        read = _read_events(text)
        if read is not None:
            data, positions, texts, in_range = read
            return Document(file, data, positions, texts, in_range=in_range)
        budget = current_budget()
        spent = (budget.values, budget.bytes) if budget is not None else None
        try:
            return _parse_with(_LOADERS[0], text, file, error_cls)
        except _SyntaxSeen:
            if budget is not None:  # the reading again spends it again, not twice
                budget.values, budget.bytes = spent
    try:
        return _parse_with(_Loader, text, file, error_cls)
    except _SyntaxSeen as seen:  # both readings fail: the reference loader's own report
        raise seen.error from None


def _read_events(text: str) -> tuple[Any, dict, dict, bool] | None:
    """Data, positions, texts and whether every number is in range, read straight from
    libyaml's events
    (:mod:`airgate.readers.document_yaml`), or None where the composer must read the text."""
    parser = _CParser(text)
    try:
        return read_events(parser, _FastLoader.yaml_implicit_resolvers, MAX_DIGITS)
    finally:
        parser.dispose()


class _SyntaxSeen(Exception):
    def __init__(self, error: AirgateError) -> None:
        super().__init__(error.message)
        self.error = error


def _parse_with(loader_cls: type, text: str, file: str,
                error_cls: type[AirgateError]) -> Document:
    doc = Document(file=file, data=None)
    loader = None
    try:
        loader = loader_cls(text)
        node = loader.get_single_node()
        if node is None:
            raise error_cls("document is empty", file=file, line=1, column=1,
                            hint="a schedule starts with 'schedule: 1'")
        doc.data = _Builder(doc, loader, error_cls).build(node, (), 0)
    except yaml.MarkedYAMLError as exc:
        raise _SyntaxSeen(_syntax_error(exc, text, file, error_cls)) from None
    except _LimitReached as exc:
        raise limit_error(error_cls, exc.what, file, path_at_error(text, exc.mark.index),
                           exc.mark.line + 1, exc.mark.column + 1) from None
    except yaml.YAMLError as exc:
        raise _SyntaxSeen(error_cls(f"not valid YAML: {exc}", file=file)) from None
    except RecursionError:
        raise limit_error(error_cls, "depth", file, ()) from None
    finally:
        if loader is not None:
            loader.dispose()
    return doc


def load(path: Path | str, error_cls: type[AirgateError]) -> Document:
    """Read a ``.json`` file as JSON and anything else as YAML."""
    path = Path(path)
    text = read_text(path, error_cls)
    if path.suffix.lower() == ".json":
        from airgate.readers.document_json import parse_json  # it builds on this module

        return parse_json(text, str(path), error_cls)
    return parse_yaml(text, str(path), error_cls)
