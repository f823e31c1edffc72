"""Write a schedule as YAML (format version 1), with the provenance of each value as a comment.

The output is stable: fields in the order of the schedule format, no timestamps, numbers and
texts exactly as read, so importing the same source twice gives the same file and checking the
file gives the same findings as checking the source. A text that could be misread (a number-like
id such as ``"101"``, anything starting with ``=``, ``+``, ``-`` or ``@``) is quoted.
"""

from __future__ import annotations

import json
import re
from typing import Any

from pydantic import BaseModel

from airgate.errors import ScheduleError
from airgate.escaping import BIDI_AND_SEPARATORS, terminal
from airgate.models.profiles import Profile
from airgate.models.schedule import Project, StatedDistribution, System, Zone
from airgate.readers import condition_columns as C
from airgate.readers import fields as F
from airgate.readers.document import parse_yaml

#: what a YAML stream may not hold raw (the YAML 1.2 printable set, as PyYAML reads it)
_UNPRINTABLE = re.compile(
    "[^\x09\x0A\x0D\x20-\x7E\x85\xA0-\uD7FF\uE000-\uFFFD\U00010000-\U0010FFFF]")
#: escaped inside quotes: the unprintable, what YAML folds as a line break, and the
#: bidirectional controls (shown visibly, as in every report)
_ESCAPE = re.compile(f"{_UNPRINTABLE.pattern}|[\x85{BIDI_AND_SEPARATORS}]")
_FLOW_PLAIN = re.compile(r"[A-Za-z0-9_][A-Za-z0-9_ .()/'°²³µ·×-]*(?<! )")
_YAML11_WORDS = {"yes", "no", "on", "off", "y", "n", "null", "true", "false", "~"}
_PLAIN_KEY = re.compile(r"^[A-Za-z_][A-Za-z0-9_.-]*$")


def _order(model: type[BaseModel]) -> list[str]:
    return [info.alias or name for name, info in model.model_fields.items()]


_MODELS = {"project": Project, "system": System, "zone": Zone, "profile": Profile,
           "stated": StatedDistribution}


def _sorted(node: dict[str, Any], model: str | type[BaseModel]) -> list[tuple[str, Any]]:
    order = _order(_MODELS[model] if isinstance(model, str) else model)
    rank = {k: i for i, k in enumerate(order)}
    return sorted(node.items(), key=lambda kv: (rank.get(kv[0], len(order)), ))


def _plain_ok(text: str) -> bool:
    """Whether ``text`` reads back as the same text when written without quotes."""
    if not text or text != text.strip() or "\n" in text or text.startswith(F.FORMULA_START):
        return False
    if text[0] in "'\"!&*%|>{[]},#?:`" or " #" in text or ": " in text or text.endswith(":"):
        return False
    if _ESCAPE.search(text) or not text.isprintable() or text.lower() in _YAML11_WORDS:
        return False  # control characters; words other YAML readers take for booleans or null
    try:
        doc = parse_yaml(f"k: {text}\n", "<value>", ScheduleError)
    except Exception:  # noqa: BLE001 - anything the reader refuses is written quoted
        return False
    return doc.data == {"k": text}


def _quote(text: str) -> str:
    """A double-quoted YAML (and JSON) string; characters YAML cannot print are escaped."""
    out = json.dumps(text, ensure_ascii=False)
    return _ESCAPE.sub(lambda m: f"\\u{ord(m[0]):04x}", out)


def scalar(value: Any, in_flow: bool = False) -> str:
    """One YAML scalar: true/false, a number as written, or a (quoted where needed) text.

    Inside a flow collection (``in_flow``) only plain words, numbers, units and brackets stay
    unquoted.
    """
    if value is None:
        return "null"  # a field given no value at a design condition
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return F.number_text(value)
    text = str(value)
    if in_flow and not _FLOW_PLAIN.fullmatch(text):
        return _quote(text)  # flow context gives more characters a meaning: stay conservative
    return text if _plain_ok(text) else _quote(text)


def _key(key: str) -> str:
    return key if _PLAIN_KEY.match(key) else _quote(key)


def flow(value: Any, model: str | None = None, in_flow: bool = False) -> str:
    """A value on one line: scalars, ``[a, b]`` lists and ``{k: v}`` mappings."""
    if isinstance(value, list):
        return "[" + ", ".join(flow(v, model, True) for v in value) + "]"
    if isinstance(value, dict):
        items = _sorted(value, model) if model in _MODELS else list(value.items())
        return "{" + ", ".join(f"{_key(k)}: {flow(v, None, True)}" for k, v in items) + "}"
    return scalar(value, in_flow)


class _Out:
    def __init__(self, origins: dict[tuple, Any]) -> None:
        self.lines: list[str] = []
        self.origins = origins

    def comment(self, path: tuple, nearest: bool = False) -> str:
        path = tuple(path)
        o = self.origins.get(path)
        if o is None:  # a mapping or list written on one line: where its first part came from
            inner = sorted((p for p in self.origins if p[: len(path)] == path),
                           key=lambda p: [str(x) for x in p])
            o = self.origins[inner[0]] if inner else None
        while o is None and nearest and len(path) > 1:
            path = path[:-1]
            o = self.origins.get(path)
        if o is None:
            return ""
        text = f"from {o.source}" + (f" ({o.note})" if o.note else "")
        return "  # " + terminal(text)  # a line break of any kind would end the comment

    def line(self, indent: int, text: str, path: tuple | None = None,
             nearest: bool = False) -> None:
        self.lines.append(" " * indent + text + (self.comment(path, nearest) if path else ""))


def _fields(out: _Out, node: dict[str, Any], model: str | type[BaseModel], path: tuple,
            indent: int, first_prefix: str = "", skip: tuple[str, ...] = (),
            nearest_first: bool = False) -> None:
    """One line per field, each with its origin; the first line starts with ``first_prefix``."""
    first = True
    for key, value in _sorted(node, model):
        if key in skip:
            continue
        prefix = first_prefix if first else " " * len(first_prefix)
        sub = "stated" if key == "air_distribution" else None
        if key in C.CONDITION_FIELDS.get(model, ()) and isinstance(value, dict) \
                and "supply" not in value:  # one line per design condition, with its origin
            out.line(indent, f"{prefix}{_key(key)}:")
            for condition, at in value.items():
                out.line(indent + len(prefix) + 2, f"{_key(condition)}: {flow(at, sub)}",
                         path + (key, condition))
        else:
            out.line(indent, f"{prefix}{_key(key)}: {flow(value, sub)}", path + (key,),
                     nearest=first and nearest_first)
        first = False


def render(data: dict[str, Any], origins: dict[tuple, Any] | None = None,
           header: list[str] | None = None) -> str:
    """The schedule ``data`` as YAML text; ``origins`` (path → Origin) become comments."""
    out = _Out(origins or {})
    for text in header or []:
        for part in text.split("\n"):
            out.lines.append(("# " + terminal(part)).rstrip())
    out.line(0, f"schedule: {scalar(data.get('schedule', 1))}")
    out.line(0, "project:", ("project",))
    _fields(out, data.get("project") or {}, "project", ("project",), 2)
    if data.get("rules") is not None:
        out.line(0, f"rules: {scalar(data['rules'])}", ("rules",))
    profiles = data.get("profiles") or {}
    if profiles:
        out.lines.append("")
        out.line(0, "profiles:")
        for name, profile in profiles.items():
            out.line(2, f"{_key(name)}:", ("profiles", name))
            _fields(out, profile, "profile", ("profiles", name), 4)
    for name, model in F.list_tables().items():
        items = data.get(name) or []
        if not items:
            continue
        out.lines.append("")
        out.line(0, f"{name}:", (name,))
        for i, item in enumerate(items):
            _fields(out, item, model, (name, i), 2, first_prefix="- ", nearest_first=True)
    out.lines.append("")
    out.line(0, "systems:")
    for i, system in enumerate(data.get("systems") or []):
        base = ("systems", i)
        if i:
            out.lines.append("")
        _fields(out, system, "system", base, 2, first_prefix="- ", skip=("zones",))
        out.line(4, "zones:")
        for j, zone in enumerate(system.get("zones") or []):
            _fields(out, zone, "zone", base + ("zones", j), 6, first_prefix="- ")
    return "\n".join(out.lines) + "\n"
