"""Lines of a calculation: definitions (``name = expression``) and the equation(s) after them.

Text is split into lines at ``;`` and at line breaks that end a complete line; each line is
parsed by the ordinary parser, and a defined name is replaced by its (already parsed)
right side wherever a later line uses it, so f, f' and the compiled code are exactly what
the equation with every definition written out would give.

When a line break ends a line
-----------------------------
A line break used to be a space, and a long equation may still be broken over several
lines. A line break starts a new line only where all of these hold:

* the parentheses opened so far are closed;
* the text since the previous line holds an ``=``;
* the text before the break ends with a number, a name or ``)``, and the text after it
  starts with a number, a name or ``(``.

Written on one line, such a break would have been two operands side by side, which was
always an error; so every text that parsed before parses to the same equation now. A
line that begins with ``+`` or ``-`` continues the line before it (``-x + A = 0`` after a
definition needs a ``;``, or ``0 = ...``). ``;`` always ends a line (never inside
parentheses).

Definitions
-----------
In a single equation every line before the last is a definition ``name = expression``.
Its right side may use parameters, names defined on earlier lines, the constants and the
unknown (``v = Q/(b*y)`` with the unknown y: f and f' see v written out). Refused, with the
position: a name defined twice, defined after it is used, used in its own definition,
a definition of ``pi``, ``deg`` or a function name, and (checked by the caller, who knows
them) a definition that shadows a parameter or the unknown.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field
from typing import Any

from solvers.equation.functions import FUNCTIONS
from solvers.equation.lexer import (
    _AMBIGUOUS,
    CONSTANT_NAMES,
    EquationError,
    _check_name,
    _fail,
    _Token,
)
from solvers.equation.parser import (
    NAMES_TOO,
    Check,
    _constant_bindings,
    _Node,
    _Parser,
    checked_tokens,
)


@dataclass(frozen=True)
class Line:
    """One line of the text: its tokens (no end token) and its span in the text."""

    tokens: tuple[_Token, ...]
    start: int
    end: int

    def defines(self) -> str | None:
        """The name on the left when the line reads ``name = ...``, else None."""
        t = self.tokens
        if len(t) >= 2 and t[0].kind == "name" and t[1].text == "=":
            return t[0].text
        return None


@dataclass(frozen=True)
class Definition:
    """A definition line: ``name`` = ``node`` (its right side, earlier definitions written
    out), at ``start``..``end`` in the text."""

    name: str
    node: _Node
    start: int
    end: int

    @property
    def expr(self) -> Any:
        return self.node.expr


@dataclass(frozen=True)
class Statement:
    """An equation line: ``lhs = rhs`` (rhs None for ``expr = 0``), at ``start``..``end``."""

    lhs: _Node
    rhs: _Node | None
    start: int
    end: int


@dataclass
class Reading:
    """Everything the lines gave: the names (parameters or unknowns, in order of first
    appearance, defined names excluded), where each first stands, the functions and
    constants used, the parameter-only checks, the definitions and the equation lines."""

    text: str
    names: list[str] = field(default_factory=list)
    first_pos: dict[str, int] = field(default_factory=dict)
    used: set[str] = field(default_factory=set)
    checks: list[Check] = field(default_factory=list)
    definitions: list[Definition] = field(default_factory=list)
    equations: list[Statement] = field(default_factory=list)
    lines: list[Line] = field(default_factory=list)
    # every non-constant part of every line as (sympy expression, start, end), innermost
    # first, and the position of the (first) equation's '=': where the dimensional check
    # (solvers.units) names a part as typed
    spans: list[tuple[Any, int, int]] = field(default_factory=list)
    equals: int | None = None

    @property
    def equation_span(self) -> tuple[int, int]:
        """Where the (first) equation line stands in the text: (start, end)."""
        line = self.equations[0]
        return line.start, line.end

    def numbered(self, err: EquationError) -> EquationError:
        """``err`` with "line N: " in front when the lines are separated by ';' on one
        line of text (several lines of text already say "line L, column C")."""
        return numbered(err, self.text, self.lines)

    def absorb(self, parser: _Parser) -> None:
        for name in parser.names:
            if name not in self.first_pos:
                self.names.append(name)
                self.first_pos[name] = parser.first_pos[name]
        self.used |= parser.used
        self.checks.extend(parser.checks)
        self.spans.extend(parser.spans)


_ENDS_OPERAND = ("num", "name")


def numbered(err: EquationError, text: str, lines: list[Line]) -> EquationError:
    """See :meth:`Reading.numbered`."""
    pos = err.position
    if pos is None or len(lines) < 2 or "\n" in text.strip():
        return err
    k = max((i for i, line in enumerate(lines) if line.start <= pos), default=0)
    return EquationError(f"line {k + 1}: {err}", pos)


def _ends_operand(t: _Token) -> bool:
    return t.text == ")" or t.kind == "num" or (
        t.kind == "name" and (t.text not in FUNCTIONS or t.text in NAMES_TOO))


def _starts_operand(t: _Token) -> bool:
    return t.kind in _ENDS_OPERAND or t.text == "("


def split_lines(text: str, tokens: list[_Token]) -> list[Line]:
    """The lines of ``text`` (see the module docstring for where a line break ends one)."""
    lines: list[Line] = []
    current: list[_Token] = []
    depth = 0
    has_equals = False

    def close() -> None:
        nonlocal current, depth, has_equals
        if current:
            lines.append(Line(tuple(current), current[0].pos, current[-1].end))
        current, depth, has_equals = [], 0, False

    for t in tokens:
        if t.kind == "end":
            break
        if t.text == ";":
            if depth > 0:
                raise _fail(text, "';' inside parentheses (a ';' ends a line)", t.pos)
            close()
            continue
        if current and depth == 0 and has_equals and "\n" in text[current[-1].end:t.pos] \
                and _ends_operand(current[-1]) and _starts_operand(t):
            close()
        current.append(t)
        depth += (t.text == "(") - (t.text == ")")
        has_equals = has_equals or t.text == "="
    close()
    return lines


def _parser(text: str, tokens: Iterable[_Token], end: int, bindings: dict[str, _Node],
            refused: dict[str, str]) -> _Parser:
    parser = _Parser(text, [*tokens, _Token("end", "", end, end)], bindings)
    parser.refused = refused
    return parser


def _parse(parser: _Parser) -> tuple[_Node, _Node | None]:
    try:
        return parser.equation()
    except RecursionError:
        raise EquationError("the equation is nested too deeply", None) from None


def read_lines(text: Any,
               is_definition: Callable[[int, Line, list[Line]], bool] | None = None) -> Reading:
    """Split, then parse every line; definitions are written out into later lines.

    ``is_definition(i, line, lines)`` says whether line ``i`` is a definition; the default
    (one equation) is: every line but the last. A line taken for a definition must read
    ``name = expression``. Raises :class:`EquationError` with the position for anything
    unusable.
    """
    tokens = checked_tokens(text)
    lines = split_lines(text, tokens)
    if not lines:
        raise EquationError("the equation is empty", None)
    if is_definition is None:
        def is_definition(i: int, line: Line, all_lines: list[Line]) -> bool:
            return i < len(all_lines) - 1
    reading = Reading(text, lines=lines)
    try:
        _read(text, lines, is_definition, reading)
    except EquationError as err:
        raise numbered(err, text, lines) from None
    return reading


def _read(text: str, lines: list[Line], is_definition: Callable[[int, Line, list[Line]], bool],
          reading: Reading) -> None:
    bindings: dict[str, _Node] = dict(_constant_bindings())
    chosen = [is_definition(i, line, lines) for i, line in enumerate(lines)]
    later: dict[str, int] = {}  # defined name -> the start of its definition
    for line, definition in zip(lines, chosen, strict=True):
        if definition:
            name = _defined_name(text, line)
            if name in later:
                raise _fail(text, f"'{name}' is defined twice", line.start)
            later[name] = line.start
    used_before: dict[str, int] = {}
    for line, definition in zip(lines, chosen, strict=True):
        if not definition:
            parser = _parser(text, line.tokens, line.end, bindings, _later(later, None))
            lhs, rhs = _parse(parser)
            reading.absorb(parser)
            reading.equations.append(Statement(lhs, rhs, line.start, line.end))
            if reading.equals is None:
                reading.equals = parser.equals
            for name in parser.names:
                used_before.setdefault(name, parser.first_pos[name])
            continue
        name = line.tokens[0].text
        if name in used_before:
            raise _fail(text, f"'{name}' is used before the line that defines it",
                        used_before[name])
        del later[name]
        refused = _later(later, name)
        body = line.tokens[2:]
        parser = _parser(text, body, line.end, bindings, refused)
        if not body:
            raise _fail(text, "nothing after '='", line.tokens[1].pos)
        node, second = _parse(parser)
        if second is not None:
            pos = next(t.pos for t in body if t.text == "=")
            raise _fail(text, f"a second '=' in the definition of '{name}'", pos)
        reading.absorb(parser)
        for used in parser.names:
            used_before.setdefault(used, parser.first_pos[used])
        bindings[name] = node
        reading.definitions.append(Definition(name, node, line.start, line.end))


def _later(later: dict[str, int], own: str | None) -> dict[str, str]:
    refused = {n: f"'{n}' is defined on a later line; define it before using it"
               for n in later}
    if own is not None:
        refused[own] = f"'{own}' is used in its own definition"
    return refused


def _defined_name(text: str, line: Line) -> str:
    name = line.defines()
    if name is None:
        raise _fail(text, "a line before the equation must define a name: "
                    "name = expression (or join the lines into one equation)", line.start)
    token = line.tokens[0]
    _check_name(text, token)
    if name in CONSTANT_NAMES:
        raise _fail(text, f"'{name}' is a constant and cannot be defined", token.pos)
    if (name in FUNCTIONS and name not in NAMES_TOO) or name in _AMBIGUOUS:
        raise _fail(text, f"'{name}' is a function name and cannot be defined", token.pos)
    return name


def check_shadowing(reading: Reading, parameters: Iterable[str],
                    unknowns: Iterable[str]) -> None:
    """A definition may not give a parameter or an unknown a second meaning, nor a value a
    special function's name the text calls (K1 given 2.0 beside K1(x): the text reads
    the Bessel function, where a product K1*(x) may have been meant)."""
    params, xs = set(parameters), set(unknowns)
    defined = {d.name for d in reading.definitions}
    for name in sorted((params | xs) & NAMES_TOO & reading.used - defined):
        call = re.search(rf"(?<![\w.]){re.escape(name)}\s*\(", reading.text)
        raise _fail(reading.text, f"'{name}' is given a value, but {name}(...) in the equation "
                    f"is the function {name}: write {name}*(...) for a product, or rename the "
                    "value", call.start() if call else 0)
    for d in reading.definitions:
        if d.name in params:
            raise reading.numbered(_fail(reading.text, f"'{d.name}' is defined here but is "
                                         "also given as a parameter; rename one of them",
                                         d.start))
        if d.name in xs:
            raise reading.numbered(_fail(reading.text, f"'{d.name}' is the unknown and "
                                         "cannot be defined", d.start))


def one_line(text: str) -> str:
    """The text on one line, its lines joined by ``"; "`` (what ends a line is the rule of
    :func:`split_lines`, so the one line reads back as the same equation or system; a break
    inside a line becomes a space). Text that cannot be read has its whitespace runs made
    single spaces. Never raises."""
    try:
        lines = split_lines(text, checked_tokens(text))
    except (EquationError, RecursionError, TypeError):
        return " ".join(str(text).split())
    return "; ".join(" ".join(text[line.start:line.end].split()) for line in lines)


def free_names(text: str) -> tuple[str, ...]:
    """The names an equation uses, in order of first appearance (for a parameter table).

    Functions, the constants pi and deg and the names its definitions define are not
    names. Raises :class:`EquationError` on text that does not parse.
    """
    return tuple(read_lines(text).names)
