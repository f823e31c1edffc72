"""A tiny arithmetic grammar for rule-pack formulas, parsed without ``eval``.

A formula is text such as ``"max(floor * Pz, Voz)"`` or ``"co2_emission * Pz / Q_oa"``::

    expr  := term (("+" | "-") term)*
    term  := unary (("*" | "/") unary)*
    unary := "-" unary | atom
    atom  := NUMBER | NAME | FUNC "(" expr ("," expr)* ")" | "(" expr ")"
    FUNC  := min | max

Names are the trail symbols of a zone or system (``Voz``, ``Pz``, ``Vot_design`` …) and the
requirement's own named parameters; numbers are plain dimensionless factors. Nothing else is
accepted: no attribute access, no other calls, no strings. The parsed tree is evaluated with pint
quantities, so adding an airflow to an area, or a result of the wrong dimension, is refused when
the pack is loaded (:func:`check_dimensions`), not when a building is checked.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any, Union

import pint

from airgate import units

#: longest formula text and deepest nesting accepted (a formula is one line of arithmetic)
MAX_LENGTH = 200
MAX_DEPTH = 20
FUNCTIONS = ("min", "max")

_TOKEN = re.compile(r"\s*(?:(?P<number>(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]+)?)"
                    r"|(?P<name>[A-Za-z_][A-Za-z0-9_]*)|(?P<op>[-+*/(),]))")


class FormulaError(ValueError):
    """A formula that cannot be read or does not make sense; ``column`` is 1-based in the text."""

    def __init__(self, message: str, column: int | None = None) -> None:
        super().__init__(message)
        self.message = message
        self.column = column


@dataclass(frozen=True)
class Num:
    value: float


@dataclass(frozen=True)
class Name:
    name: str
    column: int


@dataclass(frozen=True)
class Neg:
    operand: Node


@dataclass(frozen=True)
class Bin:
    op: str
    left: Node
    right: Node
    column: int


@dataclass(frozen=True)
class Call:
    func: str
    args: tuple[Node, ...]
    column: int


Node = Union[Num, Name, Neg, Bin, Call]


def _tokens(text: str) -> list[tuple[str, str, int]]:
    out: list[tuple[str, str, int]] = []
    pos = 0
    while pos < len(text):
        if text[pos:].strip() == "":
            break
        match = _TOKEN.match(text, pos)
        if match is None or match.end() == pos:
            start = pos + (len(text[pos:]) - len(text[pos:].lstrip()))
            raise FormulaError(f"unexpected character {text[start]!r}", start + 1)
        kind = match.lastgroup
        start = match.start(kind)
        out.append((kind, match.group(kind), start + 1))
        pos = match.end()
    return out


class _Parser:
    def __init__(self, text: str) -> None:
        self.text = text
        self.tokens = _tokens(text)
        self.i = 0
        self.depth = 0

    def peek(self) -> tuple[str, str, int] | None:
        return self.tokens[self.i] if self.i < len(self.tokens) else None

    def take(self) -> tuple[str, str, int]:
        token = self.peek()
        if token is None:
            raise FormulaError("the formula ends too early", len(self.text) + 1)
        self.i += 1
        return token

    def expect(self, op: str) -> None:
        token = self.take()
        if token[:2] != ("op", op):
            raise FormulaError(f"expected '{op}', found '{token[1]}'", token[2])

    def nest(self, column: int) -> None:
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise FormulaError(f"nested deeper than {MAX_DEPTH} levels", column)

    def expr(self) -> Node:
        node = self.term()
        while (t := self.peek()) is not None and t[0] == "op" and t[1] in "+-":
            self.take()
            node = Bin(t[1], node, self.term(), t[2])
        return node

    def term(self) -> Node:
        node = self.unary()
        while (t := self.peek()) is not None and t[0] == "op" and t[1] in "*/":
            self.take()
            node = Bin(t[1], node, self.unary(), t[2])
        return node

    def unary(self) -> Node:
        t = self.peek()
        if t is not None and t[:2] == ("op", "-"):
            self.take()
            self.nest(t[2])
            node = Neg(self.unary())
            self.depth -= 1
            return node
        return self.atom()

    def atom(self) -> Node:
        kind, text, column = self.take()
        if kind == "number":
            value = float(text)
            underflow = value == 0 and re.search("[1-9]", re.split("[eE]", text)[0])
            if not (math.isfinite(value) and units.in_range(value)) or underflow:
                raise FormulaError(f"the number {text} is out of the range airgate reads "
                                   f"({units.range_text()})", column)
            return Num(value)
        if kind == "name":
            nxt = self.peek()
            if nxt is not None and nxt[:2] == ("op", "("):
                if text not in FUNCTIONS:
                    raise FormulaError(f"unknown function '{text}' (only min and max)", column)
                self.take()
                self.nest(column)
                args = [self.expr()]
                while (t := self.peek()) is not None and t[:2] == ("op", ","):
                    self.take()
                    args.append(self.expr())
                self.expect(")")
                self.depth -= 1
                return Call(text, tuple(args), column)
            return Name(text, column)
        if (kind, text) == ("op", "("):
            self.nest(column)
            node = self.expr()
            self.expect(")")
            self.depth -= 1
            return node
        raise FormulaError(f"unexpected '{text}'", column)


def parse(text: str) -> Node:
    """Parse formula text into a tree; raise :class:`FormulaError` with the column at fault."""
    if not isinstance(text, str) or not text.strip():
        raise FormulaError("a formula must be non-empty text")
    if len(text) > MAX_LENGTH:
        raise FormulaError(f"a formula is at most {MAX_LENGTH} characters")
    parser = _Parser(text)
    node = parser.expr()
    extra = parser.peek()
    if extra is not None:
        raise FormulaError(f"unexpected '{extra[1]}' after the end of the expression", extra[2])
    return node


def names(node: Node) -> list[Name]:
    """Every name the formula uses, in order of appearance."""
    if isinstance(node, Name):
        return [node]
    if isinstance(node, Neg):
        return names(node.operand)
    if isinstance(node, Bin):
        return names(node.left) + names(node.right)
    if isinstance(node, Call):
        return [n for a in node.args for n in names(a)]
    return []


def evaluate(node: Node, env: Mapping[str, Any]) -> Any:
    """Value of the tree with ``env`` (name → pint quantity or number).

    Raises ``KeyError`` for a missing name, ``ZeroDivisionError``, and pint's
    ``DimensionalityError`` for mixed dimensions.
    """
    if isinstance(node, Num):
        return node.value
    if isinstance(node, Name):
        return env[node.name]
    if isinstance(node, Neg):
        return -evaluate(node.operand, env)
    if isinstance(node, Bin):
        a, b = evaluate(node.left, env), evaluate(node.right, env)
        if node.op == "+":
            return a + b
        if node.op == "-":
            return a - b
        if node.op == "*":
            return a * b
        if _magnitude(b) == 0:
            raise ZeroDivisionError("division by zero")
        return a / b
    values = [evaluate(a, env) for a in node.args]
    best = values[0]
    for v in values[1:]:
        better = (v > best) if node.func == "max" else (v < best)
        if better:
            best = v
    return best


def _magnitude(x: Any) -> float:
    return float(x.magnitude) if isinstance(x, pint.Quantity) else float(x)


def quantity(value: float, kind: str) -> pint.Quantity:
    """An internal value of ``kind`` (airgate.units) as a pint quantity."""
    return units.registry().Quantity(value, units.KINDS[kind].internal)


def value_in(result: Any, kind: str) -> float:
    """A formula result in the internal unit of ``kind`` (raises DimensionalityError)."""
    ureg = units.registry()
    q = result if isinstance(result, pint.Quantity) else ureg.Quantity(result, "dimensionless")
    return float(q.to(units.KINDS[kind].internal).magnitude)


def check_dimensions(node: Node, kinds: Mapping[str, str], result_kind: str) -> None:
    """Refuse a formula whose names are unknown or whose dimensions do not add up.

    ``kinds`` maps every allowed name to its quantity kind; ``result_kind`` is the kind the
    formula must give.
    """
    for n in names(node):
        if n.name not in kinds:
            close = [k for k in sorted(kinds) if k.lower() == n.name.lower()]
            raise FormulaError(f"unknown name '{n.name}'"
                               + (f"; did you mean '{close[0]}'?" if close else ""), n.column)
    env = {name: quantity(1.0, kind) for name, kind in kinds.items()}
    try:
        result = evaluate(node, env)
    except pint.DimensionalityError as exc:
        raise FormulaError(f"mixes quantities of different dimensions ({exc.dim1} and "
                           f"{exc.dim2}) in a sum, a difference or min/max"
                           + _people_hint(str(exc.dim1), str(exc.dim2))) from None
    except ZeroDivisionError:
        raise FormulaError("divides by zero") from None
    try:
        value_in(result, result_kind)
    except pint.DimensionalityError:
        got = result.dimensionality if isinstance(result, pint.Quantity) else "dimensionless"
        want = units.registry().Quantity(1.0, units.KINDS[result_kind].internal).dimensionality
        raise FormulaError(f"gives a value of dimension {got}, but the requirement compares "
                           f"{result_kind.replace('_', ' ')} values ({want})"
                           + _people_hint(str(got), str(want))) from None


def _people_hint(a: str, b: str) -> str:
    """A pointer when two dimensions differ by people: a rate per person times a count."""
    if (units.PEOPLE_DIMENSION in a) != (units.PEOPLE_DIMENSION in b):
        return ("; a value per person (Rp, a per-person rate or generation) gives a total only "
                "when multiplied by a number of people (·Pz or ·Ps)")
    return ""
