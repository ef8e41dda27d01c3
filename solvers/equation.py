r"""Equation text -> checked sympy expression -> fast real-valued callables f and f'.

The user's text is untrusted. It is never handed to ``eval``, ``sympify`` or
``parse_expr``: a whitelist tokenizer splits it (ASCII numbers, ASCII names, the
operators ``+ - * / ^ **``, parentheses, commas and one ``=``), and a small
recursive-descent parser builds sympy objects directly from the tokens. Code that
``lambdify`` generates contains no user string: the unknown is renamed to an
internal symbol and parameters are numbers by then.

Syntax (what an engineer types)
-------------------------------
* ``lhs = rhs``, or a bare expression meaning ``expr = 0``. Several lines are allowed
  (line breaks are spaces).
* ``^`` and ``**`` are powers, right-associative, binding tighter than a leading
  minus: ``-x^2`` is ``-(x^2)``, ``2^3^2`` is ``2^9``.
* Implicit multiplication only where a number is written directly against a name or
  ``(``: ``2x``, ``3(x+1)``, ``30deg``, ``2.5e-3x`` (``1e5`` is a number; ``2e-x`` is
  ``2*e - x``). ``2x^2`` is ``2*(x^2)``. Nothing riskier: ``2 x``, ``x y``,
  ``(a)(b)``, ``k(x)`` are errors, and so are the ambiguous ``1/2x`` and ``x^2y``
  (write ``1/(2*x)`` or ``x/2``; ``x^(2*y)`` or ``x^2*y``).
* Functions: sqrt exp ln log10 log2 sin cos tan asin acos atan atan2(y, x) sinh cosh
  tanh asinh acosh atanh abs min max (two or more arguments). Angles are radians.
  Constants: ``pi`` and ``deg`` (= pi/180, so ``sin(30deg)`` is 0.5).
* Bare ``log`` is refused with a message saying to write ``ln`` (natural) or
  ``log10`` (base 10): engineers' handbooks use both meanings (a Colebrook equation
  with the wrong one gives a wrong friction factor with no warning), so zerotrace
  never guesses.
* Every other name is an ordinary name: single letters engineers use (e, g, R, k, E,
  I, S, N, Q, C, O) are plain parameters, never Euler's number or the imaginary
  unit (write ``exp(1)`` for e). Names are ASCII letters, digits and ``_``, start
  with a letter, contain no ``__``, are not Python keywords and are at most
  ``MAX_NAME`` characters.

Limits and refusals
-------------------
Every refusal is an :class:`EquationError` (a ``ValueError``) with a one-line message;
``.position`` is the 0-based offset into the text where it applies (messages count
columns from 1, as editors do). The text is at most ``MAX_LENGTH`` characters and
nests at most ``MAX_DEPTH`` levels (parentheses, signs, exponents; abs/min/max at most
``MAX_KINK_DEPTH``, since sympy's sign checks on such chains grow steeply). Constant parts
are evaluated in double precision as they are read: a constant that overflows,
divides by zero or has no real value (``10^400``, ``1/0``, ``sqrt(-1)``, ``ln(0)``,
``9^9^9^9``) is refused where it stands, before sympy sees it. In ``expr`` (and
``symbolic_expr``) every constant part is then one double and only constant
exponents stay exact integers (so ``x^2`` stays real for negative x): sympy rewrites
such as ``exp(n*ln(c*x)) -> c^n x^n`` therefore never build giant exact integers.
The typeset form (``latex``) is built as a string straight from the tokens, in the
order typed (``2^{10}``, ``\pi``, ``\mathrm{deg}``, ``\ln``), mathtext-safe and
linear in the text.

The derivative comes from a chain rule of our own over the node types the parser
builds (abs' = sign, max(a, b)' = H(a - b) a' + H(b - a) b' with H(0) = 1/2): sympy's
diff goes through re/im/conjugate for abs/min/max, which is slow and cannot be
compiled. A derivative estimated at more than ``2*MAX_DERIVATIVE_NODES`` nodes, or
under abs/min/max nested more than ``MAX_KINK_NESTING`` deep, is not built: ``fprime``
is None and ``notes`` says Newton differentiates numerically.

Known effects of sympy's automatic simplification, left as they are: ``x - x`` is 0,
``sqrt(x)^2`` is x and ``exp(ln(x))`` is x (so these are defined for x < 0 too), and
``(3x)^n`` becomes ``3^n x^n`` (which can give nan instead of inf where both factors
overflow/underflow).

Evaluation
----------
``f`` and ``fprime`` are compiled once. Arrays in give float64 arrays of the same
shape out; a Python/numpy scalar in gives a Python ``float`` out. Real arithmetic:
a domain error gives NaN (``sqrt(-1)``, ``x^0.5`` for x < 0, ``acos(2)``), poles give
inf (``ln(0)`` is -inf); evaluation never raises on such values and never warns.
Scalars take a ``math``-module path (much faster than numpy on one float); any
exception there falls back to the numpy path, which gives the nan/inf.
"""

from __future__ import annotations

import keyword
import math
import re
import unicodedata
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from numbers import Real
from typing import Any

import numpy as np
import sympy as sp
from sympy.codegen.cfunctions import log2 as _sp_log2
from sympy.codegen.cfunctions import log10 as _sp_log10
from sympy.printing.lambdarepr import LambdaPrinter
from sympy.printing.latex import LatexPrinter
from sympy.printing.numpy import NumPyPrinter

__all__ = [
    "MAX_DEPTH",
    "MAX_LENGTH",
    "MAX_NAME",
    "Equation",
    "EquationError",
    "free_names",
    "parse_equation",
]

MAX_LENGTH = 2000  # characters; a long design equation is a few hundred
MAX_DEPTH = 100  # nesting levels: parentheses, signs and exponents together
MAX_NAME = 40  # characters in one name
MAX_DERIVATIVE_NODES = 5_000  # larger symbolic derivatives are not compiled (numerical f')
# Typesetting budget: LaTeX longer than this is not typeset (mathtext takes ~0.4 s per
# 1,000 characters and the result is unreadable on a strip or a page anyway), and a
# derivative of more nodes than this is not even printed to LaTeX. Callers show "too
# large to typeset" instead.
MAX_TYPESET_CHARS = 2_000
MAX_TYPESET_NODES = 1_500
MAX_KINK_NESTING = 8  # deeper abs/min/max nesting: no symbolic derivative (sympy is too slow)
MAX_KINK_DEPTH = 20  # deeper abs/min/max nesting is refused (sympy's checks grow ~depth^4)
_BIG_INT = 2**53  # larger exact integers become floats before compiling


class EquationError(ValueError):
    """Equation text that cannot be used. ``position``: 0-based offset into the text, or None."""

    def __init__(self, message: str, position: int | None = None):
        super().__init__(message)
        self.position = position


# ---------------------------------------------------------------------------------------------
# Tokens
# ---------------------------------------------------------------------------------------------

_TOKEN_RE = re.compile(
    r"(?P<ws>[ \t\r\n]+)"
    r"|(?P<num>(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)"
    r"|(?P<name>[A-Za-z_][A-Za-z0-9_]*)"
    r"|(?P<op>\*\*|[-+*/^(),=])",
    re.ASCII,
)


@dataclass(frozen=True)
class _Token:
    kind: str  # "num", "name", "op", "end"
    text: str
    pos: int
    end: int


# Common non-ASCII characters pasted from documents, and what to type instead.
_UNICODE_HINTS = {
    "\u2212": "-",  # minus sign
    "\u2013": "-",  # en dash
    "\u2014": "-",  # em dash
    "\u00d7": "*",  # multiplication sign
    "\u00b7": "*",  # middle dot
    "\u22c5": "*",  # dot operator
    "\u2219": "*",  # bullet operator
    "\u00f7": "/",
    "\u2044": "/",  # fraction slash
    "\u00b2": "^2",
    "\u00b3": "^3",
    "\u00b9": "^1",
    "\u00bd": "(1/2)",
    "\u03c0": "pi",
    "\u221a": "sqrt(...)",
    "\u00b0": "deg",
    "\u00a0": "a plain space",
    "\u2009": "a plain space",
    "\u202f": "a plain space",
    "\u2018": "nothing (no strings)",
    "\u2019": "nothing (no strings)",
    "\u201c": "nothing (no strings)",
    "\u201d": "nothing (no strings)",
    "\u2264": "an equation with '=' (no inequalities)",
    "\u2265": "an equation with '=' (no inequalities)",
    "\u03bb": "lam",  # 'lambda' is a Python keyword, so the spelled-out name is refused too
}

_CHAR_HINTS = {
    "'": "strings are not allowed",
    '"': "strings are not allowed",
    ".": "a '.' belongs only in a decimal number such as 0.5; no attribute access",
    ";": "one equation only",
    "!": "factorials are not supported",
    "[": "use ( ) for grouping",
    "]": "use ( ) for grouping",
    "{": "use ( ) for grouping",
    "}": "use ( ) for grouping",
    "%": "write /100 for a percentage",
    "<": "an equation needs '=', not a comparison",
    ">": "an equation needs '=', not a comparison",
    "#": "comments are not supported",
}

_ASCII_LOOKALIKES = {
    # Cyrillic and Greek letters that look like Latin ones.
    "\u0430": "a", "\u0435": "e", "\u043e": "o", "\u0440": "p", "\u0441": "c", "\u0443": "y",
    "\u0445": "x", "\u0410": "A", "\u0412": "B", "\u0415": "E", "\u041a": "K", "\u041c": "M",
    "\u041d": "H", "\u041e": "O", "\u0420": "P", "\u0421": "C", "\u0422": "T", "\u0425": "X",
    "\u0391": "A", "\u0392": "B", "\u0395": "E", "\u0396": "Z", "\u0397": "H", "\u0399": "I",
    "\u039a": "K", "\u039c": "M", "\u039d": "N", "\u039f": "O", "\u03a1": "P", "\u03a4": "T",
    "\u03a5": "Y", "\u03a7": "X", "\u03bf": "o",
}  # fmt: skip


def _where(text: str, pos: int) -> str:
    """'column N' (1-based) or 'line L, column N' for multi-line text."""
    line = text.count("\n", 0, pos)
    column = pos - (text.rfind("\n", 0, pos) + 1)
    if line:
        return f"line {line + 1}, column {column + 1}"
    return f"column {column + 1}"


def _fail(text: str, message: str, pos: int | None) -> EquationError:
    if pos is None:
        return EquationError(message, None)
    return EquationError(f"{message} at {_where(text, pos)}", pos)


def _non_ascii_message(ch: str) -> str:
    name = unicodedata.name(ch, f"U+{ord(ch):04X}")
    hint = _UNICODE_HINTS.get(ch) or _ASCII_LOOKALIKES.get(ch)
    if hint is None and 0xFF01 <= ord(ch) <= 0xFF5E:  # fullwidth forms of ASCII
        hint = chr(ord(ch) - 0xFEE0)
    if hint is None and name.startswith("GREEK "):
        hint = name.split()[-1].lower()  # "GREEK SMALL LETTER ALPHA" -> alpha
    text = f"non-ASCII character {ch!r} ({name})"
    if hint:
        quoted = hint if " " in hint or "(" in hint else f"'{hint}'"
        text += f"; type {quoted} instead"
    return text


def _tokenize(text: str) -> list[_Token]:
    """Whitelist tokenizer; anything outside the whitelist is refused with its position."""
    tokens: list[_Token] = []
    pos, n = 0, len(text)
    match = _TOKEN_RE.match
    while pos < n:
        m = match(text, pos)
        if m is None:
            ch = text[pos]
            if ord(ch) > 127:
                raise _fail(text, _non_ascii_message(ch), pos)
            if ch.isprintable():
                hint = _CHAR_HINTS.get(ch)
                message = f"character {ch!r} is not allowed" + (f" ({hint})" if hint else "")
            else:
                message = f"control character U+{ord(ch):04X} is not allowed"
            raise _fail(text, message, pos)
        kind = m.lastgroup
        if kind != "ws":
            tokens.append(_Token(kind, m.group(), pos, m.end()))  # type: ignore[arg-type]
        pos = m.end()
    tokens.append(_Token("end", "", n, n))
    return tokens


# ---------------------------------------------------------------------------------------------
# Real-valued double-precision arithmetic for constant parts (raises ArithmeticError/ValueError)
# ---------------------------------------------------------------------------------------------


def _real_pow(base: float, exponent: float) -> float:
    return math.pow(base, exponent)  # ValueError for a negative base and a fractional exponent


# min and max of signed zeros follow IEEE 754-2019 (minimum/maximum): -0 < +0, so
# max(-0.0, 0.0) is +0.0 and min(-0.0, 0.0) is -0.0 whatever the order of the
# arguments, in both evaluation paths. Python's min/max keep the first of equal values
# and numpy's the second, so f(x) and f([x]) differed where a signed zero reaches a
# function that tells them apart (atan2(x, max(-x, x)) at x = 0 gave 1 and 1 + pi).
def _real_min(*args: float) -> float:
    if any(a != a for a in args):
        return math.nan
    low = min(args)
    if low == 0.0 and any(math.copysign(1.0, a) < 0.0 for a in args if a == 0.0):
        return -0.0
    return low


def _real_max(*args: float) -> float:
    if any(a != a for a in args):
        return math.nan
    high = max(args)
    if high == 0.0 and any(math.copysign(1.0, a) > 0.0 for a in args if a == 0.0):
        return 0.0
    return high


def _ieee_minimum(a: Any, b: Any) -> Any:
    """numpy.minimum with -0.0 below +0.0 (see _real_min)."""
    low = np.minimum(a, b)
    return np.where(low == 0.0, np.where(np.signbit(a) | np.signbit(b), -0.0, 0.0), low)


def _ieee_maximum(a: Any, b: Any) -> Any:
    """numpy.maximum with +0.0 above -0.0 (see _real_max)."""
    high = np.maximum(a, b)
    both_negative = np.signbit(a) & np.signbit(b)
    return np.where(high == 0.0, np.where(both_negative, -0.0, 0.0), high)


def _real_sign(v: float) -> float:
    return v if v != v else float((v > 0) - (v < 0))


def _real_heaviside(v: float) -> float:
    # sympy's Heaviside(0) is 1/2; numpy's heaviside(x, 0.5) agrees.
    return v if v != v else (1.0 if v > 0 else 0.0 if v < 0 else 0.5)


@dataclass(frozen=True)
class _Function:
    """One function the parser knows: arity, sympy builder, double-precision evaluator."""

    min_args: int
    max_args: int | None
    build: Callable[..., Any]
    value: Callable[..., float]


def _atan2_value(y: float, x: float) -> float:
    if y == 0 and x == 0:
        raise ValueError("atan2(0, 0)")  # no defined angle; sympy gives nan
    return math.atan2(y, x)


FUNCTIONS: dict[str, _Function] = {
    "sqrt": _Function(1, 1, sp.sqrt, math.sqrt),
    "exp": _Function(1, 1, sp.exp, math.exp),
    "ln": _Function(1, 1, sp.log, math.log),
    "log10": _Function(1, 1, _sp_log10, math.log10),
    "log2": _Function(1, 1, _sp_log2, math.log2),
    "sin": _Function(1, 1, sp.sin, math.sin),
    "cos": _Function(1, 1, sp.cos, math.cos),
    "tan": _Function(1, 1, sp.tan, math.tan),
    "asin": _Function(1, 1, sp.asin, math.asin),
    "acos": _Function(1, 1, sp.acos, math.acos),
    "atan": _Function(1, 1, sp.atan, math.atan),
    "atan2": _Function(2, 2, sp.atan2, _atan2_value),
    "sinh": _Function(1, 1, sp.sinh, math.sinh),
    "cosh": _Function(1, 1, sp.cosh, math.cosh),
    "tanh": _Function(1, 1, sp.tanh, math.tanh),
    "asinh": _Function(1, 1, sp.asinh, math.asinh),
    "acosh": _Function(1, 1, sp.acosh, math.acosh),
    "atanh": _Function(1, 1, sp.atanh, math.atanh),
    "abs": _Function(1, 1, sp.Abs, abs),
    "min": _Function(2, None, sp.Min, _real_min),
    "max": _Function(2, None, sp.Max, _real_max),
}

CONSTANT_NAMES = ("pi", "deg")
_AMBIGUOUS = {
    "log": "bare 'log' is ambiguous: write ln(...) for the natural log or log10(...) for base 10",
}
_RESERVED = frozenset(FUNCTIONS) | frozenset(CONSTANT_NAMES) | frozenset(_AMBIGUOUS)
_TRIG = ("sin", "cos", "tan")


def _check_name(text: str, token: _Token) -> None:
    name = token.text
    if name.startswith("_") or "__" in name:
        raise _fail(text, f"name {name!r} is not allowed (names start with a letter and "
                    "contain no '__')", token.pos)
    if keyword.iskeyword(name):
        raise _fail(text, f"{name!r} is a reserved word; choose another name", token.pos)
    if len(name) > MAX_NAME:
        raise _fail(text, f"name longer than {MAX_NAME} characters", token.pos)


# ---------------------------------------------------------------------------------------------
# Parser
# ---------------------------------------------------------------------------------------------

_PLAIN, _EXPONENT, _DIVISOR = 0, 1, 2  # where a factor stands (implicit products refused in 1, 2)


@dataclass(frozen=True)
class _Node:
    expr: Any  # sympy expression
    value: float | None  # double-precision value when the node is constant, else None


def _is_bad(expr: Any) -> bool:
    return bool(expr.has(sp.I, sp.zoo, sp.nan, sp.oo, -sp.oo))


class _Parser:
    """Recursive descent over the tokens, building sympy objects as it goes.

    ``bindings`` maps a name to a constant ``_Node`` (parameters with values, pi, deg);
    other names become real sympy Symbols. Every constant part becomes one Float (and a
    constant exponent a small exact Integer when integral), so no later sympy step
    evaluates anything big. (The typeset form is built separately, by _Typesetter.)
    """

    def __init__(self, text: str, tokens: list[_Token], bindings: Mapping[str, Any]):
        self.text = text
        self.tokens = tokens
        self.i = 0
        self.depth = 0
        self.kinks = 0  # abs/min/max calls open around the current token
        self.bindings = bindings
        self.names: list[str] = []
        self.first_pos: dict[str, int] = {}
        self.used: set[str] = set()  # functions and constants used, for notes

    # -- helpers ------------------------------------------------------------------------------
    def fail(self, message: str, pos: int | None) -> EquationError:
        return _fail(self.text, message, pos)

    @property
    def tok(self) -> _Token:
        return self.tokens[self.i]

    def advance(self) -> _Token:
        t = self.tokens[self.i]
        self.i += 1
        return t

    def enter(self, pos: int) -> None:
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise self.fail(f"nesting deeper than {MAX_DEPTH} levels", pos)

    def snippet(self, start: int, end: int) -> str:
        s = " ".join(self.text[start:end].split())
        return s if len(s) <= 40 else s[:37] + "..."

    def constant(self, value: float, start: int, end: int) -> _Node:
        """A constant part: refused unless its double value is finite and real, else one Float.

        sympy would otherwise turn exact constants into giant exact numbers, e.g.
        exp(x + 3000*ln(7)) into 7^3000*exp(x), or (3x)^60 into 3^60*x^60.
        """
        if value != value:
            raise self.fail(f"'{self.snippet(start, end)}' has no real value", start)
        if math.isinf(value):
            raise self.fail(f"'{self.snippet(start, end)}' overflows double precision", start)
        return _Node(sp.Float(value), value)

    def evaluate(self, fn: Callable[..., float], *args: float) -> float:
        try:
            with np.errstate(all="ignore"):
                return float(fn(*args))
        except OverflowError:
            return math.inf
        except (ValueError, ZeroDivisionError, TypeError):
            return math.nan

    # -- grammar ------------------------------------------------------------------------------
    def equation(self) -> tuple[_Node, _Node | None]:
        if self.tok.kind == "end":
            raise EquationError("the equation is empty", None)
        if self.tok.text == "=":
            raise self.fail("nothing before '='", self.tok.pos)
        lhs = self.sum()
        rhs = None
        if self.tok.text == "=":
            eq = self.advance()
            if self.tok.kind == "end":
                raise self.fail("nothing after '='", eq.pos)
            rhs = self.sum()
        t = self.tok
        if t.kind != "end":
            if t.text == "=":
                raise self.fail("a second '=' (an equation has one)", t.pos)
            if t.text == ")":
                raise self.fail("')' without a matching '('", t.pos)
            if t.text == ",":
                raise self.fail("',' outside a function call", t.pos)
            raise self.fail(f"unexpected {t.text!r}", t.pos)  # pragma: no cover - defensive
        return lhs, rhs

    def sum(self) -> _Node:
        start = self.tok.pos
        terms = [self.product()]
        while self.tok.text in ("+", "-"):
            op = self.advance()
            if self.tok.kind == "end":
                raise self.fail(f"nothing after '{op.text}'", op.pos)
            term = self.product()
            if op.text == "-":
                term = _Node(-term.expr, None if term.value is None else -term.value)
            terms.append(term)
        if len(terms) == 1:
            return terms[0]
        expr = sp.Add(*[t.expr for t in terms])
        if all(t.value is not None for t in terms):
            return self.constant(math.fsum(t.value for t in terms), start, self.tok.pos)
        return self.settle(expr)

    def product(self) -> _Node:
        start = self.tok.pos
        factors = [self.signed(_PLAIN)]
        while True:
            t = self.tok
            if t.text in ("*", "/"):
                self.advance()
                if self.tok.kind == "end":
                    raise self.fail(f"nothing after '{t.text}'", t.pos)
                if t.text == "*":
                    factors.append(self.signed(_PLAIN))
                    continue
                d_start = self.tok.pos
                d = self.signed(_DIVISOR)
                if d.value == 0 or d.expr == 0:
                    raise self.fail("division by zero", d_start)
                inv = sp.Pow(d.expr, -1)
                factors.append(_Node(inv, None if d.value is None else 1.0 / d.value))
            elif t.kind in ("num", "name") or t.text == "(":
                prev = self.tokens[self.i - 1].text
                raise self.fail(f"missing operator between {prev!r} and {t.text!r}", t.pos)
            else:
                break
        if len(factors) == 1:
            return factors[0]
        expr = sp.Mul(*[f.expr for f in factors])
        if all(f.value is not None for f in factors):
            value = 1.0
            for f in factors:
                value *= f.value  # type: ignore[operator]
            return self.constant(value, start, self.tok.pos)
        return self.settle(expr)

    def signed(self, where: int) -> _Node:
        t = self.tok
        if t.text in ("+", "-"):
            self.advance()
            self.enter(t.pos)
            if self.tok.kind == "end":
                raise self.fail(f"nothing after '{t.text}'", t.pos)
            inner = self.signed(where)
            self.depth -= 1
            if t.text == "+":
                return inner
            return _Node(-inner.expr, None if inner.value is None else -inner.value)
        return self.power(where)

    def power(self, where: int) -> _Node:
        start = self.tok.pos
        base = self.primary(where)
        t = self.tok
        if t.text not in ("^", "**"):
            return base
        self.advance()
        self.enter(t.pos)
        if self.tok.kind == "end":
            raise self.fail(f"nothing after '{t.text}'", t.pos)
        exponent = self.signed(_EXPONENT)
        self.depth -= 1
        end = self.tokens[self.i - 1].end
        return self.make_power(base, exponent, start, end)

    def make_power(self, base: _Node, exponent: _Node, start: int, end: int) -> _Node:
        b, e = base.expr, exponent.expr
        if base.value is not None and exponent.value is not None:
            if base.value == 0 and exponent.value < 0:
                raise self.fail(f"'{self.snippet(start, end)}' divides by zero", start)
            value = self.evaluate(_real_pow, base.value, exponent.value)
            return self.constant(value, start, end)
        if exponent.value is not None:
            # A constant exponent is an exact Integer when integral (x^2 stays a polynomial
            # and real for negative x), else a Float. Coefficients are Floats, so sympy
            # distributing (3x)^n = 3^n x^n never builds a big exact number.
            e = _number(exponent.value)
        if base.value == 0 or b == 0:
            # 0^x: sympy's rules for a symbolic exponent would hide the domain; keep it plain.
            return self.settle(sp.Pow(b, e, evaluate=False))
        return self.settle(sp.Pow(b, e))

    def settle(self, expr: Any) -> _Node:
        """A non-constant node, unless sympy cancelled it to a number (x - x)."""
        if expr.is_Number:
            try:
                value = float(expr)
            except TypeError:  # zoo, nan
                value = math.nan
            if math.isfinite(value):
                return _Node(sp.Float(value), value)
            raise self.fail("part of the equation has no finite real value", None)
        return _Node(expr, None)

    def primary(self, where: int) -> _Node:
        t = self.advance()
        if t.kind == "num":
            node = self.number(t)
            nxt = self.tok
            if nxt.pos == t.end and (nxt.kind == "name" or nxt.text == "("):
                if where == _EXPONENT:
                    raise self.fail(
                        f"ambiguous '{t.text}{nxt.text}' in an exponent: write "
                        f"^({t.text}*{nxt.text}...) or put the factor after the power with '*'",
                        t.pos)
                if where == _DIVISOR:
                    raise self.fail(
                        f"ambiguous '/{t.text}{nxt.text}': write /({t.text}*{nxt.text}...) "
                        f"or '/{t.text}*{nxt.text}'", t.pos)
                rest = self.power(_PLAIN)  # 2x^2 is 2*(x^2)
                expr = sp.Mul(node.expr, rest.expr)
                if rest.value is not None:
                    return self.constant(node.value * rest.value,  # type: ignore[operator]
                                         t.pos, self.tokens[self.i - 1].end)
                return self.settle(expr)
            return node
        if t.kind == "name":
            return self.name(t)
        if t.text == "(":
            self.enter(t.pos)
            if self.tok.text == ")":
                raise self.fail("empty parentheses", t.pos)
            inner = self.sum()
            self.close(t)
            self.depth -= 1
            return inner
        if t.kind == "end":  # pragma: no cover - callers check for the end first
            raise self.fail("the equation ends too early", t.pos)
        if t.text == ")":
            raise self.fail("')' without a matching '('", t.pos)
        if t.text == "=":
            prev = self.tokens[self.i - 2]
            raise self.fail(f"nothing between {prev.text!r} and '='", t.pos)
        if t.text == ",":
            raise self.fail("',' outside a function call or a missing argument", t.pos)
        prev = self.tokens[self.i - 2].text if self.i >= 2 else ""
        if t.text in ("*", "**", "/", "^"):
            if prev in ("*", "**", "/", "^", "+", "-"):
                raise self.fail(f"{t.text!r} cannot follow {prev!r}", t.pos)
            raise self.fail(f"{t.text!r} needs something before it", t.pos)
        raise self.fail(f"unexpected {t.text!r}", t.pos)  # pragma: no cover - defensive

    def close(self, opener: _Token) -> None:
        t = self.tok
        if t.text == ")":
            self.advance()
            return
        if t.kind == "end":
            raise self.fail("'(' is never closed", opener.pos)
        if t.text == "=":
            raise self.fail("'=' inside parentheses", t.pos)
        if t.text == ",":
            raise self.fail("',' outside a function call", t.pos)
        raise self.fail(f"unexpected {t.text!r}", t.pos)  # pragma: no cover - defensive

    def number(self, t: _Token) -> _Node:
        value = float(t.text)
        if math.isinf(value):
            raise self.fail(f"number {t.text} is beyond double precision", t.pos)
        if value == 0 and any(c in "123456789" for c in t.text.lower().split("e")[0]):
            raise self.fail(f"number {t.text} underflows to zero in double precision", t.pos)
        return _Node(sp.Float(value), value)

    def name(self, t: _Token) -> _Node:
        name = t.text
        _check_name(self.text, t)
        is_call = self.tok.text == "("
        if name in _AMBIGUOUS:
            raise self.fail(_AMBIGUOUS[name], t.pos)
        if name in FUNCTIONS:
            if not is_call:
                raise self.fail(f"'{name}' is a function: write {name}(...)", t.pos)
            return self.call(t)
        if is_call:
            if name in CONSTANT_NAMES:
                raise self.fail(f"'{name}' is a constant, not a function: write {name}*(...)",
                                t.pos)
            raise self.fail(f"unknown function '{name}' (write {name}*(...) for a product)",
                            t.pos)
        if name in CONSTANT_NAMES:
            self.used.add(name)
            return self.bindings[name]
        if name not in self.first_pos:
            self.first_pos[name] = t.pos
            self.names.append(name)
        bound = self.bindings.get(name)
        if bound is None:
            bound = _Node(sp.Symbol(name, real=True), None)
        return bound

    def call(self, t: _Token) -> _Node:
        fn = FUNCTIONS[t.text]
        opener = self.advance()  # '('
        self.enter(opener.pos)
        kink = t.text in ("abs", "min", "max")
        if kink:
            self.kinks += 1
            if self.kinks > MAX_KINK_DEPTH:
                raise self.fail(f"abs/min/max nested deeper than {MAX_KINK_DEPTH} levels",
                                t.pos)
        args: list[_Node] = []
        if self.tok.text != ")":
            while True:
                if self.tok.text in (",", ")") or self.tok.kind == "end":
                    if self.tok.kind == "end":
                        raise self.fail("'(' is never closed", opener.pos)
                    raise self.fail(f"missing argument of {t.text}()", self.tok.pos)
                args.append(self.sum())
                if self.tok.text != ",":
                    break
                self.advance()
        self.close(opener)
        self.depth -= 1
        self.kinks -= kink
        n = len(args)
        if n < fn.min_args or (fn.max_args is not None and n > fn.max_args):
            want = (f"{fn.min_args}" if fn.max_args == fn.min_args
                    else f"at least {fn.min_args}")
            raise self.fail(f"{t.text}() takes {want} argument{'s' if want != '1' else ''}, "
                            f"got {n}", t.pos)
        self.used.add(t.text)
        end = self.tokens[self.i - 1].end
        if all(a.value is not None for a in args):
            value = self.evaluate(fn.value, *[a.value for a in args])
            return self.constant(value, t.pos, end)  # refused or folded before sympy sees it
        exprs = [a.expr for a in args]
        if t.text in ("min", "max"):
            # Fold the constant arguments to one (chosen by double value) before sympy sees them.
            consts = [a for a in args if a.value is not None]
            if len(consts) > 1:
                pick = (min if t.text == "min" else max)(consts, key=lambda a: a.value)
                exprs = [a.expr for a in args if a.value is None] + [pick.expr]
        return self.settle(fn.build(*exprs))


def _number(value: float) -> Any:
    """A sympy number for a double: an exact Integer when small and integral, else a Float."""
    if value == int(value) and abs(value) <= _BIG_INT:
        return sp.Integer(int(value))
    return sp.Float(value)


# ---------------------------------------------------------------------------------------------
# Printing: code for the numpy and math paths, and mathtext-safe LaTeX
# ---------------------------------------------------------------------------------------------


def _float_code(number: Any) -> str:
    try:
        value = float(number)
    except OverflowError:
        value = math.inf if number > 0 else -math.inf
    if math.isfinite(value):
        return repr(value)  # round-trip exact (sympy's default prints 15 digits)
    return "(1e999)" if value > 0 else "(-1e999)"


class _VectorPrinter(NumPyPrinter):
    def _print_Float(self, expr: Any) -> str:
        return _float_code(expr)

    # sympy's own numpy printing of these goes through Piecewise and simplify: slow, unbounded.
    def _print_Heaviside(self, expr: Any) -> str:
        return f"{self._module_format('numpy.heaviside')}({self._print(expr.args[0])}, 0.5)"

    def _print_sign(self, expr: Any) -> str:
        return f"{self._module_format('numpy.sign')}({self._print(expr.args[0])})"

    def _nested(self, ufunc: str, args: Any) -> str:
        # nan-propagating and IEEE 754-2019 on signed zeros, like real_min/real_max
        code = self._print(args[0])
        for arg in args[1:]:
            code = f"{ufunc}({code}, {self._print(arg)})"
        return code

    def _print_Min(self, expr: Any) -> str:
        return self._nested("ieee_minimum", expr.args)

    def _print_Max(self, expr: Any) -> str:
        return self._nested("ieee_maximum", expr.args)


class _ScalarPrinter(LambdaPrinter):
    """Python-float code whose every domain error raises (then the numpy path answers)."""

    def _print_Float(self, expr: Any) -> str:
        return _float_code(expr)

    def _print_Pow(self, expr: Any, rational: bool = False) -> str:
        base, exp = expr.args  # print each part once: nested powers must stay linear
        if exp.is_Integer:
            return f"{self.parenthesize(base, 100)}**{self._print(exp)}"  # real for real bases
        if exp == sp.S.Half:
            return f"sqrt({self._print(base)})"
        # Python's ** gives a complex number for a negative base; math.pow raises instead.
        return f"real_pow({self._print(base)}, {self._print(exp)})"

    def _print_Min(self, expr: Any) -> str:
        return "real_min(" + ", ".join(self._print(a) for a in expr.args) + ")"

    def _print_Max(self, expr: Any) -> str:
        return "real_max(" + ", ".join(self._print(a) for a in expr.args) + ")"

    def _print_sign(self, expr: Any) -> str:
        return f"real_sign({self._print(expr.args[0])})"

    def _print_Heaviside(self, expr: Any) -> str:
        return f"real_heaviside({self._print(expr.args[0])})"


_VECTOR_NAMESPACE = {"numpy": np, "ieee_minimum": _ieee_minimum, "ieee_maximum": _ieee_maximum}

_SCALAR_NAMESPACE = {
    "real_pow": _real_pow,
    "real_min": _real_min,
    "real_max": _real_max,
    "real_sign": _real_sign,
    "real_heaviside": _real_heaviside,
    "math": math,  # some sympy printers write math.log10 and the like
}


class _MathtextLatexPrinter(LatexPrinter):
    """sympy LaTeX restricted to what matplotlib's mathtext renders."""

    def _named(self, name: str, expr: Any, exp: Any) -> str:
        args = ", ".join(self._print(a) for a in expr.args)
        tex = name + r"\left(" + args + r"\right)"
        return tex if exp is None else r"\left(" + tex + r"\right)^{" + str(exp) + "}"

    def _print_log10(self, expr: Any, exp: Any = None) -> str:
        return self._named(r"\log_{10}", expr, exp)

    def _print_log2(self, expr: Any, exp: Any = None) -> str:
        return self._named(r"\log_{2}", expr, exp)

    def _print_Heaviside(self, expr: Any, exp: Any = None) -> str:
        return self._named(r"\mathrm{H}", expr, exp)

    def _print_sign(self, expr: Any, exp: Any = None) -> str:
        return self._named(r"\mathrm{sgn}", expr, exp)

    def _print_atan2(self, expr: Any, exp: Any = None) -> str:
        return self._named(r"\mathrm{atan2}", expr, exp)

    def _print_Float(self, expr: Any) -> str:
        # Constants are doubles here: print the shortest text that reads back as the same
        # double (2.0 as 2, 0.1 as 0.1), not sympy's 15 digits.
        try:
            v = float(expr)
        except OverflowError:
            return super()._print_Float(expr)
        if not math.isfinite(v):
            return super()._print_Float(expr)
        if v == int(v) and abs(v) < 1e15:
            return str(int(v))
        text = repr(v)
        if "e" in text:
            mantissa, exponent = text.split("e")
            return mantissa + r" \cdot 10^{" + str(int(exponent)) + "}"
        return text


_LATEX_SETTINGS = {"ln_notation": True}  # a printer per call: printers keep state while printing


def _latex(expr: Any) -> str:
    # The printer asks sign questions of every exponent (is it negative? is it constant?)
    # to decide what goes under a fraction bar; with real symbols, exp(-exp(-...(x)))
    # answers them by simplifying, which took time exponential in the depth (133 s for 14
    # levels). The same names without assumptions print the same text and answer at once.
    plain = {s: sp.Symbol(s.name) for s in getattr(expr, "free_symbols", ())
             if isinstance(s, sp.Symbol) and s.assumptions0}
    if plain:
        expr = expr.xreplace(plain)
    printer = _MathtextLatexPrinter(_LATEX_SETTINGS)
    try:
        tex = printer.doprint(expr)
    except ValueError:  # an integer too long for str(): show it as a float
        tex = printer.doprint(_floatify_big(expr))
    # mathtext has no \operatorname in older matplotlib; \mathrm looks the same.
    return tex.replace(r"\operatorname{", r"\mathrm{")


# ---------------------------------------------------------------------------------------------
# Compiling
# ---------------------------------------------------------------------------------------------

_Z = sp.Symbol("_z", real=True)  # the unknown inside generated code (never a user string)


def _floatify_big(expr: Any) -> Any:
    """Exact numbers beyond 2^53 become Floats (sympy can build them: (3x)^60 = 3^60 x^60)."""
    big = {a: sp.Float(a) for a in expr.atoms(sp.Rational)
           if abs(a.p) > _BIG_INT or a.q > _BIG_INT}
    return expr.xreplace(big) if big else expr


def _prepare(expr: Any, unknown: Any) -> Any:
    """Rename the unknown and turn exact numbers too big for doubles into Floats."""
    return _floatify_big(expr.xreplace({unknown: _Z}))


def _compile(expr: Any, unknown: Any) -> Callable[[Any], Any]:
    """f(x) for float or array x; floats in give a float out; never raises on domain errors."""
    code = _prepare(expr, unknown)
    # A dict namespace, not the string "numpy": the string makes lambdify probe every numpy
    # attribute, which imports numpy.f2py and friends (~0.1 s of start-up); the printer adds
    # the "from numpy import ..." lines the code needs.
    vector = sp.lambdify(_Z, code, modules=[_VECTOR_NAMESPACE], printer=_VectorPrinter)
    scalar: Any = None  # the math-module path, compiled at the first scalar call

    def compile_scalar() -> Any:
        nonlocal scalar
        try:
            scalar = sp.lambdify(_Z, code, modules=[_SCALAR_NAMESPACE, "math"],
                                 printer=_ScalarPrinter)
        except Exception:  # noqa: BLE001 - a construct the math printer lacks: numpy only
            scalar = False
        return scalar

    def on_array(x: Any) -> Any:
        arr = np.asarray(x, dtype=np.float64)
        with np.errstate(all="ignore"):
            out = vector(arr)
        out = np.asarray(out, dtype=np.float64)
        if out.shape != arr.shape:  # an expression that does not depend on x
            out = np.broadcast_to(out, arr.shape).copy()
        return out

    def on_float(x: float) -> float:
        fn = scalar if scalar is not None else compile_scalar()
        if fn:
            try:
                r = fn(x)
                if r.__class__ is float:
                    return r
                if isinstance(r, (int, float)) and not isinstance(r, bool):
                    return float(r)
            except (ArithmeticError, ValueError, TypeError):
                pass
        return float(on_array(x))

    def evaluate(x: Any) -> Any:
        if x.__class__ is float:
            return on_float(x)
        if isinstance(x, (Real, np.number)) and not isinstance(x, np.ndarray):
            return on_float(float(x))
        return on_array(x)

    return evaluate


def _derivative_size(expr: Any, x: Any) -> int:
    """A cheap estimate of the node count of d expr/dx, to skip sympy's diff where it would
    be slow and the result too large to compile (a product of n factors gives ~n^2)."""
    memo: dict[Any, tuple[int, int]] = {}

    def walk(e: Any) -> tuple[int, int]:  # (size of e, estimated size of de/dx)
        hit = memo.get(e)
        if hit is not None:
            return hit
        if not e.args:
            out = (1, 1)
        elif x not in e.free_symbols:
            out = (_node_count(e, MAX_DERIVATIVE_NODES), 1)
        else:
            parts = [walk(a) for a in e.args]
            size = 1 + sum(p[0] for p in parts)
            if e.is_Add:
                d = 1 + sum(p[1] for p in parts)
            elif e.is_Mul:
                d = 1 + sum(p[1] for p in parts) + (len(parts) - 1) * (size - 1)
            else:  # powers and functions: f'(u) * du, with f'(u) a few copies of u
                d = 6 + 2 * (size - 1) + sum(p[1] for p in parts)
            out = (size, d)
        memo[e] = out
        return out

    return walk(expr)[1]


_KINKS = (sp.Abs, sp.Min, sp.Max)


class _NoDerivative(Exception):
    """A node the chain rule below does not know (sympy produced something unexpected)."""


def _half_step(u: Any) -> Any:
    return sp.Heaviside(u, sp.S.Half)  # 1/2 at a tie: the mean of the one-sided slopes


# d f(u) / du for one-argument functions, in real arithmetic (calculus tables).
_DERIVATIVES: dict[Any, Callable[[Any], Any]] = {
    sp.exp: sp.exp,
    sp.log: lambda u: 1 / u,
    _sp_log10: lambda u: 1 / (u * sp.log(10)),
    _sp_log2: lambda u: 1 / (u * sp.log(2)),
    sp.sin: sp.cos,
    sp.cos: lambda u: -sp.sin(u),
    sp.tan: lambda u: 1 + sp.tan(u) ** 2,
    sp.asin: lambda u: 1 / sp.sqrt(1 - u**2),
    sp.acos: lambda u: -1 / sp.sqrt(1 - u**2),
    sp.atan: lambda u: 1 / (1 + u**2),
    sp.sinh: sp.cosh,
    sp.cosh: sp.sinh,
    sp.tanh: lambda u: 1 - sp.tanh(u) ** 2,
    sp.asinh: lambda u: 1 / sp.sqrt(u**2 + 1),
    sp.acosh: lambda u: 1 / (sp.sqrt(u - 1) * sp.sqrt(u + 1)),
    sp.atanh: lambda u: 1 / (1 - u**2),
    sp.Abs: sp.sign,
}


def _differentiate(expr: Any, x: Any) -> Any:
    """d expr/dx by the chain rule over the node types the parser builds.

    sympy's own diff treats abs/min/max of arguments it cannot prove real through
    re/im/conjugate, which is slow (seconds for a few nested functions) and cannot be
    compiled; every argument here is real by construction, so abs' = sign and
    max(a, b)' = H(a - b) a' + H(b - a) b'. Raises _NoDerivative for anything else.
    """
    memo: dict[Any, Any] = {}

    def d(e: Any) -> Any:
        if x not in e.free_symbols:
            return sp.S.Zero
        hit = memo.get(e)
        if hit is not None:
            return hit
        if e == x:
            out = sp.S.One
        elif e.is_Add:
            out = sp.Add(*[d(a) for a in e.args])
        elif e.is_Mul:
            args = e.args
            out = sp.Add(*[sp.Mul(*args[:i], d(a), *args[i + 1:])
                           for i, a in enumerate(args) if x in a.free_symbols])
        elif e.is_Pow:
            b, n = e.args
            if x not in n.free_symbols:
                out = n * b ** (n - 1) * d(b)
            else:
                out = e * (d(n) * sp.log(b) + n * d(b) / b)
        elif isinstance(e, sp.atan2):
            y, w = e.args
            out = (w * d(y) - y * d(w)) / (w**2 + y**2)
        elif isinstance(e, (sp.Min, sp.Max)):
            out = d(_pairwise(e))
        elif isinstance(e, (sp.Heaviside, sp.sign)):
            out = sp.S.Zero  # steps: zero slope on either side
        elif len(e.args) == 1 and e.func in _DERIVATIVES:
            u = e.args[0]
            out = _DERIVATIVES[e.func](u) * d(u)
        else:
            raise _NoDerivative(type(e).__name__)
        memo[e] = out
        return out

    return d(expr)


def _pairwise(e: Any) -> Any:
    """min/max of n arguments as nested two-argument steps: max(a, b) = a + (b - a) H(b - a)."""
    args = list(e.args)
    out = args[0]
    for a in args[1:]:
        if isinstance(e, sp.Max):
            out = out + (a - out) * _half_step(a - out)
        else:
            out = out + (a - out) * _half_step(out - a)
    return out


def _kink_depth(expr: Any) -> int:
    """How deeply abs/min/max nest: sympy's diff of such chains slows exponentially."""
    memo: dict[Any, int] = {}

    def walk(e: Any) -> int:
        if not e.args:
            return 0
        hit = memo.get(e)
        if hit is None:
            hit = memo[e] = max(walk(a) for a in e.args) + isinstance(e, _KINKS)
        return hit

    return walk(expr)


def _node_count(expr: Any, limit: int) -> int:
    n = 0
    for _ in sp.preorder_traversal(expr):
        n += 1
        if n > limit:
            break
    return n


# ---------------------------------------------------------------------------------------------
# The public record
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class Equation:
    """A checked equation ``lhs = rhs`` read as ``f(unknown) = lhs - rhs = 0``.

    ``expr`` and ``derivative`` have parameter values (and deg = pi/180) substituted;
    ``symbolic_expr`` and ``symbolic_derivative`` keep parameters as symbols (they are
    what ``latex`` and ``derivative_latex`` show). ``f`` and ``fprime`` are compiled
    once: vectorised, real-valued, never raising on domain errors (nan/inf instead).
    ``fprime`` is None when no usable symbolic derivative exists (``notes`` says why);
    Newton then uses a numerical derivative.
    """

    text: str
    unknown: str
    parameters: dict[str, float]
    names: tuple[str, ...]
    expr: Any
    derivative: Any
    f: Callable[[Any], Any] = field(repr=False)
    fprime: Callable[[Any], Any] | None = field(repr=False)
    notes: tuple[str, ...] = ()
    symbolic_expr: Any = None
    _cache: dict[str, Any] = field(default_factory=dict, repr=False)

    @property
    def latex(self) -> str:
        """The typeset equation (mathtext-safe LaTeX, no $): ``lhs = rhs`` or ``expr = 0``,
        in the order typed, parameters by name, ``ln`` for the natural log."""
        if "latex" not in self._cache:
            lhs, rhs = self._cache["sides"]
            self._cache["latex"] = _typeset(self.text, lhs, rhs)
        return self._cache["latex"]

    @property
    def symbolic_derivative(self) -> Any:
        """d symbolic_expr / d unknown with parameters as symbols (None if unusable)."""
        if "dsym" not in self._cache:
            value = None
            if self.derivative is not None:
                try:
                    value = _differentiate(self.symbolic_expr,
                                           sp.Symbol(self.unknown, real=True))
                except (RecursionError, _NoDerivative):
                    value = None
            self._cache["dsym"] = value
        return self._cache["dsym"]

    @property
    def derivative_latex(self) -> str:
        """LaTeX (mathtext-safe) of the derivative, parameters by name; '' if none, or if
        it is over the typesetting budget (:data:`MAX_TYPESET_NODES` nodes,
        :data:`MAX_TYPESET_CHARS` characters): see :attr:`derivative_too_large`."""
        if "dlatex" not in self._cache:
            self._cache["dlatex"] = self._derivative_latex()
        return self._cache["dlatex"]

    @property
    def derivative_too_large(self) -> bool:
        """True when there is a symbolic derivative but it is over the typesetting budget."""
        return self.symbolic_derivative is not None and not self.derivative_latex

    def _derivative_latex(self) -> str:
        d = self.symbolic_derivative
        if d is None or _node_count(d, MAX_TYPESET_NODES) > MAX_TYPESET_NODES:
            return ""
        # Constants folded while differentiating (1/3.7 -> 0.27027027027027) are shown to
        # six significant figures: the typeset form is for reading; f' itself is exact.
        short = {c: sp.Float(float(f"{float(c):.6g}")) for c in d.atoms(sp.Float)}
        tex = _latex(d.xreplace(short) if short else d)
        return tex if len(tex) <= MAX_TYPESET_CHARS else ""

    def residual_mp(self, x: Any, dps: int = 50) -> Any:
        """f(x) in ``dps`` significant digits with mpmath (an ``mpmath.mpf``).

        Uses the same double values of constants and parameters as ``f`` (so it checks
        the equation that was solved); x may be a float, a string or an mpf. NaN when the
        value is not real or not defined. Meant for checking a root: f should be finite
        near x.
        """
        import mpmath

        fn = self._cache.get("mp")
        if fn is None:  # compiled from expr: parameter values in, so no user name in the code
            fn = sp.lambdify(_Z, _prepare(self.expr, sp.Symbol(self.unknown, real=True)),
                             modules="mpmath")
            self._cache["mp"] = fn
        with mpmath.workdps(dps):
            try:
                r = fn(mpmath.mpf(x))
            except (ArithmeticError, ValueError):
                return mpmath.mpf("nan")
            if isinstance(r, mpmath.mpc):
                return mpmath.mpf(r.real) if r.imag == 0 else mpmath.mpf("nan")
            return +mpmath.mpf(r)


def _validate_parameters(parameters: Mapping[str, Any] | None) -> dict[str, float]:
    if parameters is None:
        return {}
    if not isinstance(parameters, Mapping):
        raise EquationError("parameters must be a mapping of name to number")
    values: dict[str, float] = {}
    for name, value in parameters.items():
        if not isinstance(name, str):
            raise EquationError(f"parameter name {name!r} is not a string")
        if name in CONSTANT_NAMES:
            # the text's 'pi' or 'deg' is always the constant: a value would be dropped unseen
            meaning = "pi = 3.14159..." if name == "pi" else "deg = pi/180"
            raise EquationError(f"parameter '{name}' has the name of the constant {meaning}; "
                                "give the parameter another name")
        if isinstance(value, bool) or not isinstance(value, (Real, np.number)) or \
                isinstance(value, complex | np.complexfloating):
            raise EquationError(f"parameter {name!r} must be a real number, "
                                f"got {type(value).__name__}")
        v = float(value)
        if not math.isfinite(v):
            raise EquationError(f"parameter {name!r} must be finite, got {v!r}")
        values[name] = v
    return values


def _read(text: Any, bindings: Mapping[str, Any]) -> tuple[_Parser, _Node, _Node | None]:
    if not isinstance(text, str):
        raise EquationError(f"equation text must be a string, got {type(text).__name__}")
    if len(text) > MAX_LENGTH:
        raise EquationError(f"equation longer than {MAX_LENGTH} characters ({len(text)})",
                            MAX_LENGTH)
    if not text.strip():
        raise EquationError("the equation is empty", None)
    parser = _Parser(text, _tokenize(text), bindings)
    try:
        lhs, rhs = parser.equation()
    except RecursionError:
        raise EquationError("the equation is nested too deeply", None) from None
    return parser, lhs, rhs


def _constant_bindings() -> dict[str, Any]:
    deg_value = math.pi / 180
    return {"pi": _Node(sp.Float(math.pi), math.pi),
            "deg": _Node(sp.Float(deg_value), deg_value)}


def free_names(text: str) -> tuple[str, ...]:
    """The names an equation uses, in order of first appearance (for a parameter table).

    Functions and the constants pi and deg are not names. Raises :class:`EquationError`
    on text that does not parse.
    """
    parser, _, _ = _read(text, _constant_bindings())
    return tuple(parser.names)


def parse_equation(text: str, unknown: str | None = None,
                   parameters: Mapping[str, float] | None = None) -> Equation:
    """Read, check and compile an equation; see the module docstring for the syntax.

    ``parameters`` maps names to numbers (entries the text does not use are ignored);
    ``unknown`` is the name to solve for, inferred when exactly one name in the text
    has no value. Raises :class:`EquationError` (one line, with ``.position`` where it
    applies) for anything it cannot use; never evaluates user text as code.
    """
    values = _validate_parameters(parameters)
    parser, lhs, rhs = _read(text, _constant_bindings())
    names = parser.names
    notes: list[str] = []

    if not names:
        raise EquationError("the equation has no unknown (it contains no names)", None)
    if unknown is None:
        open_names = [n for n in names if n not in values]
        if len(open_names) == 1:
            unknown = open_names[0]
        elif not open_names:
            raise EquationError("no unknown: every name has a value ("
                                + ", ".join(names) + "); say which one to solve for", None)
        else:
            hint = ""
            if "e" in open_names:
                hint = " ('e' is an ordinary name; write exp(...) for the exponential)"
            raise _fail(text, "cannot tell the unknown: " + ", ".join(
                f"'{n}'" for n in open_names) + " have no value; name the unknown or give "
                "values for the others" + hint, None)
    else:
        if not isinstance(unknown, str):
            raise EquationError(f"the unknown must be a name, got {type(unknown).__name__}")
        if unknown not in names:
            raise EquationError(f"the unknown '{unknown}' does not appear in the equation "
                                "(names: " + ", ".join(names) + ")", None)
        if unknown in values:
            notes.append(f"'{unknown}' is the unknown: its parameter value is not used")
        missing = [n for n in names if n != unknown and n not in values]
        if missing:
            raise _fail(text, "no value for " + ", ".join(f"'{n}'" for n in missing)
                        + f" (the unknown is '{unknown}')", parser.first_pos[missing[0]])

    used = {n: values[n] for n in names if n != unknown}
    x = sp.Symbol(unknown, real=True)

    # The same text again with parameter values bound: every constant part is checked and
    # folded in double precision, so sympy never evaluates anything big later.
    bindings = _constant_bindings()
    bindings.update({n: _Node(sp.Float(v), v) for n, v in used.items()})
    try:
        _, nlhs, nrhs = _read(text, bindings)
    except EquationError as err:
        if not used:
            raise
        raise EquationError(f"{err} (with the given parameter values)", err.position) from None

    symbolic = lhs.expr if rhs is None else lhs.expr - rhs.expr
    numeric = _floatify_big(nlhs.expr if nrhs is None else nlhs.expr - nrhs.expr)
    if not isinstance(numeric, sp.Basic) or _is_bad(numeric):
        raise EquationError("part of the equation has no finite real value"
                            + (" with the given parameter values" if used else ""), None)


    try:
        f = _compile(numeric, x)
    except Exception as err:  # noqa: BLE001 - say so in one line rather than a traceback
        raise EquationError(f"the equation cannot be compiled ({type(err).__name__})",
                            None) from None
    fprime, derivative = None, None
    try:
        if _derivative_size(numeric, x) > 2 * MAX_DERIVATIVE_NODES:
            derivative = None
            reason: str | None = f"more than {MAX_DERIVATIVE_NODES} terms"
        elif _kink_depth(numeric) > MAX_KINK_NESTING:
            derivative = None
            reason = f"abs/min/max nested more than {MAX_KINK_NESTING} deep"
        else:
            derivative = _differentiate(numeric, x)
            reason = _unusable(derivative)
        if reason is None:
            try:
                fprime = _compile(derivative, x)
            except Exception as err:  # noqa: BLE001 - Newton can still differentiate numerically
                reason = f"it cannot be compiled: {type(err).__name__}"
        if reason is not None:
            notes.append(f"no symbolic derivative ({reason}): Newton uses a numerical one")
            derivative = None
    except RecursionError:
        notes.append("no symbolic derivative (expression too deep): Newton uses a numerical one")
        derivative = None
    except _NoDerivative as why:
        notes.append(f"no symbolic derivative ({why} not handled): Newton uses a numerical one")
        derivative = None

    notes.extend(_notes(parser, names, unknown, numeric, x, text))
    return Equation(
        text=text,
        unknown=unknown,
        parameters=used,
        names=(unknown, *[n for n in names if n != unknown]),
        expr=numeric,
        derivative=derivative,
        f=f,
        fprime=fprime,
        notes=tuple(notes),
        symbolic_expr=symbolic,
        _cache={"sides": (lhs, rhs)},
    )


# The typeset form is built as a string straight from the tokens (after the checked parse
# has accepted them), in the order typed: linear in the text, and nothing for sympy's
# printer to simplify or to slow down on (its printing of unevaluated nested trees can be
# exponential).
_SUM, _NEG, _PROD, _FRAC, _POW, _ATOM = range(6)

_TEX_FUNCTIONS = {
    "ln": r"\ln", "log10": r"\log_{10}", "log2": r"\log_{2}", "sin": r"\sin", "cos": r"\cos",
    "tan": r"\tan", "asin": r"\arcsin", "acos": r"\arccos", "atan": r"\arctan",
    "sinh": r"\sinh", "cosh": r"\cosh", "tanh": r"\tanh", "asinh": r"\mathrm{asinh}",
    "acosh": r"\mathrm{acosh}", "atanh": r"\mathrm{atanh}", "atan2": r"\mathrm{atan2}",
    "min": r"\min", "max": r"\max",
}


@dataclass(frozen=True)
class _Tex:
    tex: str
    prec: int
    number: bool = False  # a bare number (a product writes \cdot before it)


def _paren(node: _Tex, below: int) -> str:
    return rf"\left({node.tex}\right)" if node.prec < below else node.tex


class _Typesetter:
    """Recursive descent over tokens the checked parse accepted, producing LaTeX."""

    def __init__(self, tokens: list[_Token]):
        self.tokens = tokens
        self.i = 0
        self.symbols: dict[str, str] = {}

    @property
    def tok(self) -> _Token:
        return self.tokens[self.i]

    def advance(self) -> _Token:
        self.i += 1
        return self.tokens[self.i - 1]

    def equation(self) -> str:
        lhs = self.sum().tex
        if self.tok.text == "=":
            self.advance()
            return f"{lhs} = {self.sum().tex}"
        return f"{lhs} = 0"

    def sum(self) -> _Tex:
        first = self.product()
        parts = [first.tex]
        while self.tok.text in ("+", "-"):
            op = self.advance().text
            parts.append(f"{op} {_paren(self.product(), _PROD)}")
        return first if len(parts) == 1 else _Tex(" ".join(parts), _SUM)

    def product(self) -> _Tex:
        top, bottom = [self.signed()], []
        while self.tok.text in ("*", "/"):
            (top if self.advance().text == "*" else bottom).append(self.signed())
        if len(top) == 1 and not bottom:
            return top[0]
        negative = top[0].prec == _NEG and bool(bottom)
        if negative:  # -a/b is typeset as - a/b, the sign before the fraction
            top[0] = _Tex(top[0].tex[2:], top[0].prec + 1)
        numerator = self.juxtapose(top)
        if not bottom:
            return _Tex(numerator, _PROD)
        tex = rf"\frac{{{numerator}}}{{{self.juxtapose(bottom)}}}"
        return _Tex("- " + tex, _NEG) if negative else _Tex(tex, _FRAC)

    @staticmethod
    def juxtapose(factors: list[_Tex]) -> str:
        tex = _paren(factors[0], _NEG) if len(factors) > 1 else factors[0].tex
        for f in factors[1:]:
            tex += (r" \cdot " if f.number or f.tex[:1].isdigit() else " ") + _paren(f, _FRAC)
        return tex

    def signed(self) -> _Tex:
        if self.tok.text in ("+", "-"):
            op = self.advance().text
            inner = self.signed()
            return inner if op == "+" else _Tex("- " + _paren(inner, _PROD), _NEG)
        return self.power()

    def power(self) -> _Tex:
        base = self.primary()
        if self.tok.text not in ("^", "**"):
            return base
        self.advance()
        exponent = self.signed()
        return _Tex(f"{_paren(base, _ATOM)}^{{{exponent.tex}}}", _POW)

    def primary(self) -> _Tex:
        t = self.advance()
        if t.kind == "num":
            number = _Tex(_tex_number(t.text), _ATOM, number=True)
            nxt = self.tok
            if nxt.pos == t.end and (nxt.kind == "name" or nxt.text == "("):
                rest = self.power()
                joint = r" \cdot " if rest.tex[:1].isdigit() else " "
                return _Tex(number.tex + joint + _paren(rest, _FRAC), _PROD)
            return number
        if t.text == "(":
            inner = self.sum()
            self.advance()  # ')'
            return inner
        if self.tok.text == "(":  # a function call
            self.advance()
            args = []
            while self.tok.text != ")":
                args.append(self.sum().tex)
                if self.tok.text == ",":
                    self.advance()
            self.advance()  # ')'
            return self.call(t.text, args)
        if t.text == "pi":
            return _Tex(r"\pi", _ATOM)
        if t.text == "deg":
            return _Tex(r"\mathrm{deg}", _ATOM)
        tex = self.symbols.get(t.text)
        if tex is None:
            tex = self.symbols[t.text] = _latex(sp.Symbol(t.text))
        return _Tex(tex, _ATOM)

    @staticmethod
    def call(name: str, args: list[str]) -> _Tex:
        joined = ", ".join(args)
        if name == "sqrt":
            return _Tex(rf"\sqrt{{{joined}}}", _ATOM)
        if name == "exp":
            return _Tex(rf"e^{{{joined}}}", _POW)
        if name == "abs":
            return _Tex(rf"\left|{joined}\right|", _ATOM)
        return _Tex(rf"{_TEX_FUNCTIONS[name]}\left({joined}\right)", _ATOM)


def _tex_number(text: str) -> str:
    mantissa, _, exponent = text.lower().partition("e")
    if not exponent:
        return text
    power = rf"10^{{{int(exponent)}}}"
    return power if mantissa in ("1", "1.", "1.0") else rf"{mantissa} \cdot {power}"


def _typeset(text: str, lhs: _Node, rhs: _Node | None) -> str:
    """LaTeX of the equation in the order it was typed (parameters by name); if that
    cannot be built, sympy's printing of the checked expression."""
    try:
        return _Typesetter(_tokenize(text)).equation()
    except Exception:  # noqa: BLE001 - cosmetic path: fall back to the checked expression
        sides = [lhs] if rhs is None else [lhs, rhs]
        tex = [_latex(side.expr) for side in sides]
        return " = ".join(tex) + (" = 0" if len(tex) == 1 else "")


def _unusable(derivative: Any) -> str | None:
    if _node_count(derivative, MAX_DERIVATIVE_NODES) > MAX_DERIVATIVE_NODES:
        return f"more than {MAX_DERIVATIVE_NODES} terms"
    if derivative.has(sp.Derivative, sp.Subs):
        return "sympy left it unevaluated"
    if _is_bad(derivative):
        return "it is not real or not finite"
    return None


def _notes(parser: _Parser, names: list[str], unknown: str, numeric: Any, x: Any,
           text: str) -> list[str]:
    notes = []
    if "deg" in parser.used:
        notes.append("deg = pi/180: angles in degrees become radians")
    if parser.used.intersection(_TRIG) and "deg" not in parser.used:
        notes.append("sin, cos and tan take radians (multiply by deg for degrees)")
    if parser.used.intersection({"abs", "min", "max"}):
        notes.append("abs/min/max have a kink: the derivative there uses sign/step values")
    if x not in numeric.free_symbols:
        notes.append(f"the equation does not depend on '{unknown}' once simplified")
    if any(n in ("e", "E") for n in names) and re.search(r"[0-9.][eE][+-]?[0-9]", text):
        notes.append("numbers such as 2e3 are read as 2000, not as 2*e*3")
    return notes
