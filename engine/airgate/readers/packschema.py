"""The published rule-pack JSON Schema and validation of a pack document against it.

A pack that breaks the schema stops the run (exit 2) with the file, line and field path of the
problem. For a layered pack the document is the merged one and every path is traced back to the
file that wrote it (:class:`airgate.readers.layering.PackDocument`).
"""

from __future__ import annotations

import json
import math
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import Any

from airgate import units
from airgate.errors import RulePackError, nearest
from airgate.escaping import EXCERPT, excerpt


def builtin_rules_dir() -> Path:
    """The built-in ``rules/`` folder: inside an installed wheel, else the source checkout's."""
    packaged = resources.files("airgate").joinpath("_rules")
    if packaged.is_dir():
        return Path(str(packaged))
    return Path(__file__).resolve().parents[3] / "rules"


def schema_path(name: str = "rule-pack") -> Path:
    """The file of a published JSON Schema of ``rules/schema/``."""
    return builtin_rules_dir() / "schema" / f"{name}.schema.json"


@lru_cache(maxsize=4)
def schema(name: str = "rule-pack") -> dict[str, Any]:
    """A published JSON Schema (draft 2020-12) of ``rules/schema/``: rule-pack or pack-test."""
    return json.loads(schema_path(name).read_text(encoding="utf-8"))


def pack_schema() -> dict[str, Any]:
    """The published rule-pack JSON Schema (draft 2020-12)."""
    return schema("rule-pack")


def non_finite(data: Any, path: tuple = ()) -> tuple | None:
    """The path of the first NaN or infinite number (JSON Schema lets them pass), or of one out
    of the range airgate reads (docs/limits.md), or None."""
    if isinstance(data, bool):
        return None
    if isinstance(data, int) and abs(data) > units.MAX_MAGNITUDE:
        return path  # also beyond any float
    if isinstance(data, (int, float)) and not (math.isfinite(data) and units.in_range(data)):
        return path
    items = data.items() if isinstance(data, dict) else (
        enumerate(data) if isinstance(data, list) else ())
    for key, value in items:
        found = non_finite(value, path + (key,))
        if found is not None:
            return found
    return None


def get(data: Any, path: tuple) -> Any:
    for part in path:
        data = data[part]
    return data


def _quoted_short(message: str, instance: Any) -> str:
    """jsonschema's message with the value it quotes shortened to an excerpt (the value may be
    a whole file's text)."""
    whole = repr(instance)
    if len(whole) <= EXCERPT:
        return message
    return message.replace(whole, excerpt(instance))


def _numeral(doc: Any, path: tuple) -> str:
    """The number as the pack's file wrote it ('' when unknown or not a plain numeral)."""
    source = getattr(doc, "doc", None)
    text = getattr(source, "texts", {}).get(tuple(path), "") if source is not None else ""
    return text if text[:1].isdigit() or text[:1] in "+-." and text[1:2].isdigit() else ""


#: a JSON Schema type as a pack writer reads it, and how to write it in YAML
_TYPES = {"object": ("a mapping", "write it as 'key: value' lines indented under the field"),
          "array": ("a list", "write it as a list, one '- ' item per line"),
          "string": ("text", "write it as text (in quotes if it looks like a number)"),
          "number": ("a number", "write a plain number, without units"),
          "integer": ("a whole number", "write a whole number"),
          "boolean": ("true or false", "write true or false"),
          "null": ("nothing (null)", "leave the value empty")}


def _type_message(wanted: Any, instance: Any) -> tuple[str, str | None]:
    """'expected a mapping, got 3' and how to write it, for a JSON Schema ``type`` error."""
    names = [wanted] if isinstance(wanted, str) else list(wanted)
    words = [_TYPES.get(n, (n, None)) for n in names]
    if isinstance(instance, bool) or instance is None:
        got = json.dumps(instance)
    elif isinstance(instance, dict):
        got = "a mapping"
    elif isinstance(instance, list):
        got = "a list"
    else:
        got = excerpt(instance) if len(repr(instance)) > EXCERPT else repr(instance)
    return (f"expected {' or '.join(w for w, _ in words)}, got {got}",
            words[0][1] if len(words) == 1 else None)


def validate(doc: Any, name: str = "rule-pack", error_cls: type = RulePackError) -> None:
    """Check ``doc.data`` against a published schema; raise on the most relevant error.

    ``doc`` is anything with ``data`` and ``error(cls, message, path, **kw)``.
    """
    bad = non_finite(doc.data)
    if bad is not None:
        value = get(doc.data, bad)
        if isinstance(value, float) and not math.isfinite(value) and not _numeral(doc, bad):
            raise doc.error(error_cls, f"must be a finite number, got {value!r}", bad,
                            hint="give the table value as a number")
        shown = _numeral(doc, bad) or excerpt(value)
        if len(shown) > 20:
            shown = f"a number of {sum(c.isdigit() for c in shown)} digits"
        raise doc.error(error_cls, f"{shown} is out of the range airgate reads: "
                        f"{units.range_text()}", bad, hint="give the table value in the pack's "
                        "units; no table of a ventilation standard holds such a value")
    import jsonschema  # imported on use: a pack kept in the cache (readers.cache) needs none

    validator = jsonschema.Draft202012Validator(schema(name))
    error = jsonschema.exceptions.best_match(validator.iter_errors(doc.data))
    if error is None:
        return
    while error.validator in ("anyOf", "oneOf") and error.context:
        # a value or a choice on an option: report the branch that got furthest, the plain
        # value's when none did (so 'five' is "not of type 'number'")
        deepest = max(len(e.relative_path) for e in error.context)
        error = next(e for e in error.context if len(e.relative_path) == deepest)
    path = tuple(error.absolute_path)
    message = _quoted_short(error.message, error.instance)
    allowed: list[str] = []
    if error.validator == "additionalProperties":
        known = sorted(error.schema.get("properties", {}))
        extra = [k for k in error.instance if k not in known] if isinstance(error.instance, dict) else []
        if extra:
            path = path + (extra[0],)
            close = nearest(extra[0], known)
            message = f"unknown field '{extra[0]}'" + (f"; did you mean '{close[0]}'?" if close else "")
            allowed = known
    elif error.validator == "enum":
        allowed = [json.dumps(v) for v in error.validator_value]
    elif error.validator == "type":
        message, hint = _type_message(error.validator_value, error.instance)
        raise doc.error(error_cls, message, path, hint=hint)
    elif error.validator == "required" and isinstance(error.instance, dict):
        missing = [k for k in error.validator_value if k not in error.instance]
        if missing:
            message = f"missing required field '{missing[0]}'"
    raise doc.error(error_cls, message, path, allowed=allowed)
