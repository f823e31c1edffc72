"""Pack options: choices a pack leaves to the schedule (``project.options``).

A pack declares its options at the top level::

    options:
      category: {label: "Indoor environment category", values: [I, II, III, IV]}

and writes a value that depends on them as a choice, nested for several options::

    Rp: {choose: category, values: {I: 10, II: 7, III: 4, IV: 2.5}}

A choice must list every value of its option and no other. The schedule picks one value per
option (``project.options: {category: II}``); an option with a ``default`` may be left out. The
choices are resolved on the document, before the pack is built, so the built pack holds plain
numbers.
"""

from __future__ import annotations

import itertools
from collections.abc import Iterator, Mapping
from typing import Any

from airgate.errors import AirgateError, RulePackError, nearest
from airgate.models.rules import PackOption, Source

Path_ = tuple[str | int, ...]


class OptionError(RulePackError):
    """The schedule's options do not fit the pack: ``problem`` is missing, unknown or value."""

    kind = "schedule error"

    def __init__(self, message: str, *, option: str | None, problem: str, **kw: Any) -> None:
        super().__init__(message, **kw)
        self.option = option
        self.problem = problem


def declared(data: dict[str, Any]) -> dict[str, PackOption]:
    out = {}
    for name, o in data.get("options", {}).items():
        src = o.get("source")
        source = None if src is None else Source(
            src.get("document", data["document"]), src.get("edition", data["edition"]),
            src.get("table", ""), src.get("section", ""))
        out[name] = PackOption(name=name, label=o["label"], values=tuple(str(v) for v in o["values"]),
                               default=None if o.get("default") is None else str(o["default"]),
                               source=source)
    return out


def is_choice(value: Any) -> bool:
    return isinstance(value, dict) and "choose" in value and "values" in value


def choices(data: Any, path: Path_ = ()) -> Iterator[tuple[Path_, dict[str, Any]]]:
    """Every outermost choice in ``data``, with its path."""
    if is_choice(data):
        yield path, data
        return
    items = data.items() if isinstance(data, dict) else (
        enumerate(data) if isinstance(data, list) else ())
    for key, value in items:
        yield from choices(value, path + (key,))


def check_choices(doc: Any) -> None:
    """Every choice names a declared option and lists exactly that option's values."""
    options = declared(doc.data)
    for path, choice in choices(doc.data):
        _check(doc, options, path, choice)


def _check(doc: Any, options: Mapping[str, PackOption], path: Path_, choice: dict) -> None:
    name = choice["choose"]
    if name not in options:
        close = nearest(name, options)
        raise doc.error(RulePackError, f"choice on undeclared option '{name}'"
                        + (f"; did you mean '{close[0]}'?" if close else ""), path + ("choose",),
                        allowed=sorted(options), hint="declare it under options: at the top level")
    wanted = set(options[name].values)
    given = {str(k) for k in choice["values"]}
    if given != wanted:
        missing, extra = sorted(wanted - given), sorted(given - wanted)
        what = "; ".join(p for p in (f"missing {', '.join(missing)}" if missing else "",
                                     f"not a value of '{name}': {', '.join(extra)}" if extra else "")
                         if p)
        raise doc.error(RulePackError, f"the choice on '{name}' must give a value for each of "
                        f"{', '.join(options[name].values)} ({what})", path + ("values",),
                        allowed=list(options[name].values))
    for key, value in choice["values"].items():
        if is_choice(value):
            _check(doc, options, path + ("values", key), value)


def choose(options: Mapping[str, PackOption], given: Mapping[str, str] | None,
           pack_id: str) -> dict[str, str]:
    """The value of every option: the schedule's choice or the option's default."""
    given = dict(given or {})
    for name, value in given.items():
        if name not in options:
            close = nearest(name, options)
            what = (f"rule pack {pack_id} has no option '{name}'" if options else
                    f"rule pack {pack_id} declares no options")
            raise OptionError(what + (f"; did you mean '{close[0]}'?" if close else ""),
                              option=name, problem="unknown", allowed=sorted(options),
                              hint="remove it, or choose a pack that declares it")
        if str(value) not in options[name].values:
            close = nearest(str(value), options[name].values)
            raise OptionError(
                f"'{value}' is not a value of option '{name}' ({options[name].label}) of rule "
                f"pack {pack_id}" + (f"; did you mean '{close[0]}'?" if close else ""),
                option=name, problem="value", allowed=list(options[name].values))
    out = {}
    for name, option in options.items():
        if name in given:
            out[name] = str(given[name])
        elif option.default is not None:
            out[name] = option.default
        else:
            raise OptionError(
                f"rule pack {pack_id} needs option '{name}' ({option.label}): choose one of "
                f"{', '.join(option.values)} under project.options", option=name,
                problem="missing", allowed=list(option.values),
                hint=f"add options: {{{name}: {option.values[0]}}} under project")
    return out


def resolve(data: Any, chosen: Mapping[str, str]) -> Any:
    """``data`` with every choice replaced by the chosen value (a copy where it changes)."""
    if is_choice(data):
        return resolve(data["values"][chosen[data["choose"]]], chosen)
    if isinstance(data, dict):
        return {k: resolve(v, chosen) for k, v in data.items()}
    if isinstance(data, list):
        return [resolve(v, chosen) for v in data]
    return data


def combinations(options: Mapping[str, PackOption]) -> list[dict[str, str]]:
    """Every combination of option values (for validating a pack under each)."""
    names = list(options)
    return [dict(zip(names, combo))
            for combo in itertools.product(*(options[n].values for n in names))]


def as_schedule_error(exc: OptionError, loaded: Any) -> AirgateError:
    """The option problem reported at the schedule's ``project.options`` (or ``project``)."""
    model_options = getattr(loaded.model.project, "options", None) or {}
    if exc.problem in ("unknown", "value") and exc.option is not None:
        path: Path_ = ("project", "options", exc.option)
    elif model_options:
        path = ("project", "options")
    else:
        path = ("project",)
    return loaded.error(exc.message, path, allowed=exc.allowed, hint=exc.hint)
