"""Load a YAML or JSON document into plain Python data, keeping every node's position.

YAML is read with PyYAML's safe loader (no tags that build objects). Duplicate keys, non-string
keys, excessive alias expansion and nesting are input errors, each with its line and column.
Positions are 1-based and keyed by field path, e.g. ``("systems", 0, "zones", 2, "area")``.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import yaml

from airgate.errors import AirgateError

Path_ = tuple[str | int, ...]

#: Hard limits that keep a hostile document from exhausting memory or the stack.
MAX_NODES = 500_000
MAX_DEPTH = 64
MAX_BYTES = 50 * 1024 * 1024


@dataclass
class Document:
    """Plain data plus where each value was written."""

    file: str
    data: Any
    positions: dict[Path_, tuple[int, int]] = field(default_factory=dict)

    def locate(self, path: Path_) -> tuple[int | None, int | None]:
        """Line and column of ``path``, or of its nearest ancestor that has one."""
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

    def fail(self, node: yaml.Node, message: str, path: Path_, hint: str | None = None):
        mark = node.start_mark
        return self.error_cls(
            message, file=self.doc.file, line=mark.line + 1, column=mark.column + 1,
            field=path, hint=hint,
        )

    def build(self, node: yaml.Node, path: Path_, depth: int) -> Any:
        self.count += 1
        if self.count > MAX_NODES:
            raise self.fail(node, f"document has more than {MAX_NODES} values (alias expansion?)",
                            path, hint="remove YAML aliases or split the file")
        if depth > MAX_DEPTH:
            raise self.fail(node, f"nesting deeper than {MAX_DEPTH} levels", path)
        self.doc.positions.setdefault(path, (node.start_mark.line + 1, node.start_mark.column + 1))
        if isinstance(node, yaml.MappingNode):
            return self._mapping(node, path, depth)
        if isinstance(node, yaml.SequenceNode):
            return [self.build(item, path + (i,), depth + 1) for i, item in enumerate(node.value)]
        try:
            return self.loader.construct_object(node, deep=True)
        except yaml.YAMLError as exc:
            raise self.fail(node, f"cannot read value: {exc}", path) from None

    def _mapping(self, node: yaml.MappingNode, path: Path_, depth: int) -> dict[str, Any]:
        self.loader.flatten_mapping(node)  # resolve YAML merge keys (<<) first
        out: dict[str, Any] = {}
        for key_node, value_node in node.value:
            if not isinstance(key_node, yaml.ScalarNode):
                raise self.fail(key_node, "a key must be a plain name", path)
            key = self.loader.construct_object(key_node)
            if not isinstance(key, str):
                key = str(key)
            if key in out:
                first = self.doc.positions.get(path + (key,), (None, None))[0]
                raise self.fail(
                    key_node, f"duplicate key '{key}' (first given on line {first})",
                    path + (key,), hint="give each key once",
                )
            self.doc.positions[path + (key,)] = (
                value_node.start_mark.line + 1, value_node.start_mark.column + 1,
            )
            out[key] = self.build(value_node, path + (key,), depth + 1)
        return out


def read_text(path: Path, error_cls: type[AirgateError]) -> str:
    """Read a UTF-8 file (a byte-order mark is allowed) or raise an error naming it."""
    name = str(path)
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise error_cls("file not found", file=name) from None
    except IsADirectoryError:
        raise error_cls("is a directory, expected a file", file=name) from None
    except OSError as exc:
        raise error_cls(f"cannot read file: {exc.strerror}", file=name) from None
    if len(raw) > MAX_BYTES:
        raise error_cls(f"file is larger than {MAX_BYTES // (1024 * 1024)} MiB", file=name)
    if b"\x00" in raw:
        raise error_cls("file is binary (contains NUL bytes), expected YAML or JSON text",
                        file=name)
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise error_cls(
            f"file is not UTF-8 text (byte 0x{raw[exc.start]:02x} at offset {exc.start})",
            file=name, line=line, hint="save the file as UTF-8",
        ) from None


def parse_yaml(text: str, file: str, error_cls: type[AirgateError]) -> Document:
    """Parse YAML (or JSON, a near subset) text into a :class:`Document`."""
    doc = Document(file=file, data=None)
    loader = yaml.SafeLoader(text)
    try:
        node = loader.get_single_node()
        if node is None:
            raise error_cls("document is empty", file=file, line=1, column=1)
        doc.data = _Builder(doc, loader, error_cls).build(node, (), 0)
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        problem = exc.problem or str(exc)
        if "\t" in problem or "'\\t'" in problem:
            problem += " (YAML does not allow tabs for indentation)"
        raise error_cls(
            f"not valid YAML: {problem}", file=file,
            line=mark.line + 1 if mark else None, column=mark.column + 1 if mark else None,
        ) from None
    except yaml.YAMLError as exc:
        raise error_cls(f"not valid YAML: {exc}", file=file) from None
    except RecursionError:
        raise error_cls(f"nesting deeper than {MAX_DEPTH} levels", file=file) from None
    finally:
        loader.dispose()
    return doc


def parse_json(text: str, file: str, error_cls: type[AirgateError]) -> Document:
    """Parse strict JSON; positions come from a YAML composition of the same text if possible."""

    def no_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
        out: dict[str, Any] = {}
        for key, value in pairs:
            if key in out:
                raise ValueError(f"duplicate key '{key}'")
            out[key] = value
        return out

    def no_constants(name: str) -> float:
        raise ValueError(f"{name} is not a number JSON allows")

    try:
        data = json.loads(text, object_pairs_hook=no_duplicates, parse_constant=no_constants)
    except json.JSONDecodeError as exc:
        raise error_cls(f"not valid JSON: {exc.msg}", file=file, line=exc.lineno,
                        column=exc.colno) from None
    except (ValueError, RecursionError) as exc:
        raise error_cls(f"not valid JSON: {exc}", file=file) from None
    try:
        positions = parse_yaml(text, file, error_cls).positions
    except AirgateError:
        positions = {}
    return Document(file=file, data=data, positions=positions)


def load(path: Path | str, error_cls: type[AirgateError]) -> Document:
    """Read a ``.json`` file as JSON and anything else as YAML."""
    path = Path(path)
    text = read_text(path, error_cls)
    if path.suffix.lower() == ".json":
        return parse_json(text, str(path), error_cls)
    return parse_yaml(text, str(path), error_cls)
