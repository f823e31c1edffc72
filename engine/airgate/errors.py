"""Errors airgate reports to its users, and the exit codes of the command line.

Every input problem is an :class:`AirgateError` carrying where it was found (file, 1-based line
and column, field path), what was wrong and what is allowed, so the CLI can print one clear
message and exit with :data:`EXIT_INPUT` — never a traceback.
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable, Sequence

from airgate.escaping import terminal

#: All checks passed (or only warnings / information).
EXIT_PASS = 0
#: At least one finding of severity ``fail``.
EXIT_FAIL = 1
#: Input, rule-pack or usage error: nothing was evaluated, nothing written.
EXIT_INPUT = 2
#: The longest message or hint printed [characters]: a backstop, so no message
#: can carry a whole file even if some part of it quoted one.
MAX_MESSAGE = 600

#: A field path into a document, e.g. ``("systems", 0, "zones", 2, "area")``.
Path_ = tuple[str | int, ...]


def format_path(path: Sequence[str | int]) -> str:
    """Render a field path like ``systems[1].zones[3].area``."""
    out = ""
    for part in path:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += ("." if out else "") + str(part)
    return out


def _shown(text: str) -> str:
    """Message text as printed: controls escaped (errors reach a terminal), length capped."""
    text = terminal(text)
    return text if len(text) <= MAX_MESSAGE else text[:MAX_MESSAGE] + " …(cut)"


def nearest(word: str, choices: Iterable[str], n: int = 3) -> list[str]:
    """The closest valid choices to a mistyped ``word`` (for "did you mean ..." hints)."""
    return difflib.get_close_matches(str(word), sorted(set(choices)), n=n, cutoff=0.5)


class AirgateError(ValueError):
    """An input or usage problem, with its location and what would be valid.

    Parameters
    ----------
    message : str
        What is wrong, in words a user can act on.
    file, line, column : optional
        Where: file path and 1-based line and column.
    field : sequence of str | int, optional
        Field path inside the document, e.g. ``("systems", 0, "zones", 2, "area")``.
    allowed : sequence of str, optional
        The valid choices or form, listed in the message.
    hint : str, optional
        How to fix it.
    """

    exit_code = EXIT_INPUT
    kind = "input error"

    def __init__(
        self,
        message: str,
        *,
        file: str | None = None,
        line: int | None = None,
        column: int | None = None,
        field: Sequence[str | int] | None = None,
        allowed: Sequence[str] | None = None,
        hint: str | None = None,
    ) -> None:
        super().__init__(message)
        self.message = message
        self.file = file
        self.line = line
        self.column = column
        self.field = tuple(field) if field else ()
        self.allowed = list(allowed) if allowed else []
        self.hint = hint

    def where(self) -> str:
        parts = [_shown(self.file) if self.file else "airgate"]
        if self.line is not None:
            parts.append(str(self.line))
            if self.column is not None:
                parts.append(str(self.column))
        return ":".join(parts)

    def render(self) -> str:
        """The message as printed by the CLI: ``file:line:col: kind: field: message``.

        Every part is escaped for a terminal (a control character from the input is shown as
        ``\\x1b``, never sent raw) and capped at :data:`MAX_MESSAGE` characters.
        """
        head = f"{self.where()}: {self.kind}: "
        if self.field:
            head += f"{_shown(format_path(self.field))}: "
        lines = [head + _shown(self.message)]
        if self.allowed:
            lines.append("  allowed: " + terminal(", ".join(self.allowed)))
        if self.hint:
            lines.append("  fix: " + _shown(self.hint))
        return "\n".join(lines)

    def __str__(self) -> str:
        return self.render()


class ScheduleError(AirgateError):
    """A problem in a ventilation schedule."""

    kind = "schedule error"


class RulePackError(AirgateError):
    """A rule pack that breaks its schema or refers to what does not exist."""

    kind = "rule pack error"


class UsageError(AirgateError):
    """A command-line usage problem (unknown zone id, bad option value, ...)."""

    kind = "usage error"


class OutputError(AirgateError):
    """A report or file that cannot be written: a full disk, a closed pipe, no permission."""

    kind = "output error"


class ErrorGroup(AirgateError):
    """Several input errors found in one pass, reported together (sorted by position)."""

    def __init__(self, errors: Sequence[AirgateError]) -> None:
        self.errors = sorted(errors, key=lambda e: (e.file or "", e.line or 0, e.column or 0))
        first = self.errors[0]
        super().__init__(first.message, file=first.file, line=first.line, column=first.column,
                         field=first.field, allowed=first.allowed, hint=first.hint)
        self.kind = first.kind

    def render(self) -> str:
        body = "\n".join(e.render() for e in self.errors)
        if len(self.errors) > 1:
            body += f"\n{len(self.errors)} errors"
        return body


def raise_all(errors: Sequence[AirgateError]) -> None:
    """Raise the one error, or a group of them; do nothing when there are none.

    An error found more than once (the same place, field and message: an unknown space type met at
    every design condition, say) is reported once.
    """
    unique: dict[tuple, AirgateError] = {}
    for e in errors:
        unique.setdefault((e.file, e.line, e.column, e.field, e.message), e)
    errors = list(unique.values())
    if len(errors) == 1:
        raise errors[0]
    if errors:
        raise ErrorGroup(errors)
