"""The parser: checked tokens -> sympy expression, parameters kept as symbols.

A recursive descent over the lexer's tokens builds sympy objects directly (user text
never reaches ``eval``, ``sympify`` or ``parse_expr``). Constant parts are evaluated in
double precision as they are read and refused where they stand when they overflow,
divide by zero or have no real value; parts that depend on parameters only are recorded
as :class:`Check` s, run by ``Equation.bind`` on the parameter values (in the order the
parse met them, so the same part is named as when values were folded in).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import sympy as sp

from solvers.equation.functions import FUNCTIONS, _real_pow
from solvers.equation.lexer import (
    _AMBIGUOUS,
    CONSTANT_NAMES,
    MAX_DEPTH,
    MAX_KINK_DEPTH,
    MAX_LENGTH,
    EquationError,
    _check_name,
    _fail,
    _Token,
    comma_hint,
    tokenize,
)

_BIG_INT = 2**53  # larger exact integers become floats before compiling

# ---------------------------------------------------------------------------------------------
# Parser
# ---------------------------------------------------------------------------------------------

_PLAIN, _EXPONENT, _DIVISOR = 0, 1, 2  # where a factor stands (implicit products refused in 1, 2)


def snippet(text: str, start: int, end: int) -> str:
    """The text from start to end on one line, at most 40 characters (for messages)."""
    s = " ".join(text[start:end].split())
    return s if len(s) <= 40 else s[:37] + "..."


@dataclass(frozen=True)
class _Node:
    expr: Any  # sympy expression
    value: float | None  # double-precision value when the node is constant, else None
    names: frozenset[str] = frozenset()  # the names (unknown or parameters) it depends on


@dataclass(frozen=True)
class Check:
    """A part of the equation that depends on parameters only, checked when they get values.

    ``kind`` is "value" (finite and real), "divisor" (not zero) or "zero_power" (no zero
    base under a negative exponent; ``exprs`` is (base, exponent)). It applies when the
    unknown is not among ``names``; ``start``/``end`` locate it in the text. Parameters stay
    symbols in the parse: these checks do at bind time what folding the values in did.
    """

    kind: str
    exprs: tuple[Any, ...]
    names: frozenset[str]
    start: int
    end: int


def _is_bad(expr: Any) -> bool:
    return bool(expr.has(sp.I, sp.zoo, sp.nan, sp.oo, -sp.oo))


def _unit_in_equation_hint(before: _Token, name: _Token) -> str:
    """' ('m' is a unit: ...)' when a number is followed, after a space, by a name
    that is a unit (2.5 m, 9.81 m/s^2): a unit typed into the equation, where only
    parameter values carry units; '' otherwise. pint is asked only here, on the way to
    a refusal, never while an equation that reads is parsed."""
    if before.kind != "num" or name.kind != "name":
        return ""
    try:
        from solvers.units.reading import read_unit

        read_unit(name.text)
    except Exception:  # noqa: BLE001 - not a unit (or no units here): no hint
        return ""
    return (f" ('{name.text}' is also a unit: if a unit was meant, a number with a unit "
            "goes in as a parameter's value, never in the equation)")


class _Parser:
    """Recursive descent over the tokens, building sympy objects as it goes.

    ``bindings`` maps the constants pi and deg to their ``_Node``; every other name becomes
    a real sympy Symbol (parameters stay symbols: values are bound later, see ``checks``).
    Every constant part becomes one Float (and a constant exponent a small exact Integer
    when integral), so no later sympy step evaluates anything big. (The typeset form is
    built separately, by _Typesetter.)
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
        self.called: set[str] = set()  # the functions called
        self.checks: list[Check] = []  # parameter-only parts, in the order they complete
        # every non-constant part as (sympy expression, start, end), innermost first: where
        # the dimensional check (solvers.units) names a part as typed
        self.spans: list[tuple[Any, int, int]] = []
        self.equals: int | None = None  # the position of the equation's '='
        self.refused: dict[str, str] = {}  # names this line may not use, with the reason

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
        return snippet(self.text, start, end)

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

    def combine(self, expr: Any, parts: list[_Node], start: int, end: int) -> _Node:
        """A non-constant node built from ``parts``; checked later if it has no unknown."""
        names = frozenset().union(*(p.names for p in parts))
        node = self.settle(expr, names)
        if node.value is None:
            self.checks.append(Check("value", (node.expr,), names, start, end))
            self.spans.append((node.expr, start, end))
        return node

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
            self.equals = eq.pos
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
                raise self.comma(t, "',' outside a function call")
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
                term = _Node(-term.expr, None if term.value is None else -term.value,
                             term.names)
            terms.append(term)
        if len(terms) == 1:
            return terms[0]
        expr = sp.Add(*[t.expr for t in terms])
        if all(t.value is not None for t in terms):
            return self.constant(math.fsum(t.value for t in terms), start, self.tok.pos)
        return self.combine(expr, terms, start, self.tok.pos)

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
                if d.value is None:
                    self.checks.append(Check("divisor", (d.expr,), d.names, d_start, d_start))
                inv = sp.Pow(d.expr, -1)
                factors.append(_Node(inv, None if d.value is None else 1.0 / d.value,
                                     d.names))
            elif t.kind in ("num", "name") or t.text == "(":
                before = self.tokens[self.i - 1]
                # a name defined on an earlier line is no unit typed in; a parameter named
                # like a unit (m for a mass) cannot be told apart here: the hint says "if"
                hint = "" if t.text in self.bindings else _unit_in_equation_hint(before, t)
                raise self.fail(f"missing operator between {before.text!r} and {t.text!r}"
                                + hint, t.pos)
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
        return self.combine(expr, factors, start, self.tok.pos)

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
            return _Node(-inner.expr, None if inner.value is None else -inner.value,
                         inner.names)
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
        if (base.value is None and (exponent.value is None or exponent.value < 0)) or \
                (base.value == 0 and exponent.value is None):
            self.checks.append(Check("zero_power", (b, e), base.names | exponent.names,
                                     start, end))
        if base.value == 0 or b == 0:
            # 0^x: sympy's rules for a symbolic exponent would hide the domain; keep it plain.
            return self.combine(sp.Pow(b, e, evaluate=False), [base, exponent], start, end)
        return self.combine(sp.Pow(b, e), [base, exponent], start, end)

    def settle(self, expr: Any, names: frozenset[str] = frozenset()) -> _Node:
        """A non-constant node, unless sympy cancelled it to a number (x - x)."""
        if expr.is_Number:
            try:
                value = float(expr)
            except TypeError:  # zoo, nan
                value = math.nan
            if math.isfinite(value):
                return _Node(sp.Float(value), value)
            raise self.fail("part of the equation has no finite real value", None)
        return _Node(expr, None, names)

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
                end = self.tokens[self.i - 1].end
                if rest.value is not None:
                    return self.constant(node.value * rest.value,  # type: ignore[operator]
                                         t.pos, end)
                return self.combine(expr, [rest], t.pos, end)
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
            raise self.comma(t, "',' outside a function call or a missing argument")
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
            raise self.comma(t, "',' outside a function call")
        raise self.fail(f"unexpected {t.text!r}", t.pos)  # pragma: no cover - defensive

    def comma(self, t: _Token, message: str) -> EquationError:
        """A misplaced ','; between whole numbers written tight (2,5; 1,200; 1,200,000) it
        is most likely a decimal comma or a thousands separator, and the message says how
        to write the number (:func:`lexer.comma_hint`: both readings where both fit)."""
        j = next((k for k, u in enumerate(self.tokens) if u is t), None)
        if j is not None and 0 < j < len(self.tokens) - 1:
            before = self.tokens[j - 1]
            if before.kind == "num" and before.text.isdigit() and before.end == t.pos:
                # the whole run of whole numbers written tight around commas: 1,200,000
                typed, k = before.text, j
                while (k + 1 < len(self.tokens) and self.tokens[k].text == ","
                       and self.tokens[k + 1].kind == "num"
                       and self.tokens[k + 1].text.replace(".", "", 1).isdigit()
                       and self.tokens[k + 1].pos == self.tokens[k].end
                       and self.tokens[k].pos == self.tokens[k - 1].end):
                    typed += "," + self.tokens[k + 1].text
                    k += 2
                    if "." in typed:  # 12,500.5: the decimal point ends the number
                        break
                message += comma_hint(typed)
        return self.fail(message, t.pos)

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
        if name in FUNCTIONS and (is_call or name not in NAMES_TOO):
            if not is_call:
                raise self.fail(f"'{name}' is a function: write {name}(...)", t.pos)
            if name in self.first_pos or name in self.bindings:
                raise self.fail(_both_ways(name), t.pos)
            return self.call(t)
        if name in NAMES_TOO and name in self.called:
            raise self.fail(_both_ways(name), t.pos)
        if is_call:
            if name in CONSTANT_NAMES:
                raise self.fail(f"'{name}' is a constant, not a function: write {name}*(...)",
                                t.pos)
            raise self.fail(f"unknown function '{name}' ({_did_you_mean(name)}write "
                            f"{name}*(...) for a product)", t.pos)
        if name in self.bindings:  # the constants pi and deg, and names defined on earlier lines
            self.used.add(name)
            return self.bindings[name]
        if name in self.refused:  # defined on a later line, or the name being defined
            raise self.fail(self.refused[name], t.pos)
        if name not in self.first_pos:
            self.first_pos[name] = t.pos
            self.names.append(name)
        return _Node(sp.Symbol(name, real=True), None, frozenset((name,)))

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
        self.called.add(t.text)
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
        return self.combine(fn.build(*exprs), args, t.pos, end)


def _number(value: float) -> Any:
    """A sympy number for a double: an exact Integer when small and integral, else a Float."""
    if value == int(value) and abs(value) <= _BIG_INT:
        return sp.Integer(int(value))
    return sp.Float(value)



def checked_tokens(text: Any) -> list[_Token]:
    """The tokens of ``text`` after the checks every text gets (a string, not too long,
    not empty)."""
    if not isinstance(text, str):
        raise EquationError(f"equation text must be a string, got {type(text).__name__}")
    if len(text) > MAX_LENGTH:
        raise EquationError(f"equation longer than {MAX_LENGTH} characters ({len(text)})",
                            MAX_LENGTH)
    if not text.strip():
        raise EquationError("the equation is empty", None)
    return tokenize(text)


def read(text: Any) -> tuple[_Parser, _Node, _Node | None]:
    """Tokenize and parse ``text`` once (parameters as symbols); EquationError if unusable."""
    parser = _Parser(text, checked_tokens(text), _constant_bindings())
    try:
        lhs, rhs = parser.equation()
    except RecursionError:
        raise EquationError("the equation is nested too deeply", None) from None
    return parser, lhs, rhs


def _constant_bindings() -> dict[str, Any]:
    deg_value = math.pi / 180
    return {"pi": _Node(sp.Float(math.pi), math.pi),
            "deg": _Node(sp.Float(deg_value), deg_value)}


# Names other notations give the special functions, and ours (Bessel functions by their
# letter and order, as tables print them: J0, J1, Y0, Y1, I0, I1, K0, K1)
_OTHER_NAMES = {
    **{alias: [f"{letter}0", f"{letter}1"] for letters, letter in (
        (("besselj", "jv", "jn"), "J"), (("bessely", "yv", "yn"), "Y"),
        (("besseli", "iv"), "I"), (("besselk", "kv"), "K")) for alias in letters},
    **{f"{letter.lower()}{n}": [f"{letter}{n}"] for letter in "JYIK" for n in (0, 1)},
}


# Special functions whose names engineers also give quantities (K1 an equilibrium ratio,
# J0 a moment of inertia, I1 a current): a name of theirs followed by '(' is the
# function, and without it a name like any other; one equation cannot use it both ways.
NAMES_TOO = frozenset(f"{letter}{order}" for letter in "JYIK" for order in (0, 1)) | {
    "erf", "erfc"}


def _both_ways(name: str) -> str:
    return (f"'{name}' is used both as the function {name}(...) and as a name: rename the "
            f"name (say {name.lower()}_) or write {name}*(...) for a product")


def _did_you_mean(name: str) -> str:
    """"did you mean 'sqrt'? " for a name close to one of the functions (difflib's
    ratio >= 0.6, its default), else ''."""
    import difflib

    close = _OTHER_NAMES.get(name.lower()) or difflib.get_close_matches(name, FUNCTIONS, n=2)
    if not close:
        return ""
    return "did you mean " + " or ".join(f"'{c}'" for c in close) + "? or "
