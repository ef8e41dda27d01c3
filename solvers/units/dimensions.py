"""The dimensional check of an equation over its sympy tree, and the unknown's dimension.

Rules (every parameter without a unit, and every plain number, is dimensionless):

* the terms of a sum, the two sides of ``=``, the arguments of ``min``/``max`` and the two
  arguments of ``atan2`` have one dimension;
* the arguments of exp, ln, log10, log2, the trigonometric and hyperbolic functions and
  their inverses are dimensionless (an angle in rad or deg is: pint counts both as
  dimensionless), and so is every exponent; a base under an exponent that is not a
  constant is dimensionless too; ``abs`` keeps its argument's dimension;
* a constant exponent multiplies the base's dimension (``D^2``, ``R^(2/3)``, ``Q^1.85``).

The unknown's dimension is solved for: dimensions are vectors of exponents, so each rule
that involves the unknown is a linear equation in its vector; the first rule that fixes it
(in the order the parser completed the parts of the text) gives it, and then every rule is
checked with it. Parts are located in the text by the spans the parser recorded, so a
mismatch names the part as typed and its column, whatever order sympy keeps terms in.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import sympy as sp

from solvers.equation.lexer import _fail
from solvers.equation.parser import snippet
from solvers.units.reading import Dimension, dimension_words

# Exponents are exact fractions here (a double exponent such as 1.85 is read as 37/20), so
# Q^1.85 with Q's dimension solved from it gives back exactly Q's dimension.
_Exact = tuple[tuple[str, Fraction], ...]
# A dimension while the unknown's is open: (base exponents, power of the unknown).
_Dim = tuple[_Exact, Fraction]
_ZERO = Fraction(0)
_ONE: _Dim = ((), _ZERO)


def _fraction(v: Any) -> Fraction | int:
    """An exact exponent: a Python int when whole (fast), else the nearest small fraction."""
    if getattr(v, "is_Integer", False):
        return int(v)
    f = float(v)
    if f.is_integer():
        return int(f)
    return Fraction(f).limit_denominator(10**6)


def _exact(d: Dimension) -> _Exact:
    return tuple((n, _fraction(e)) for n, e in d)


def _plain(d: _Exact) -> Dimension:
    return tuple((n, float(e)) for n, e in d)


def _combine(a: _Exact, b: _Exact, sb: Fraction = Fraction(1)) -> _Exact:
    out: dict[str, Fraction] = dict(a)
    for name, e in b:
        out[name] = out.get(name, _ZERO) + sb * e
    return tuple(sorted((n, e) for n, e in out.items() if e != 0))


def _scale(a: _Exact, s: Fraction) -> _Exact:
    return tuple((n, e * s) for n, e in a if e * s != 0)


def _mul(a: _Dim, b: _Dim) -> _Dim:
    return _combine(a[0], b[0]), a[1] + b[1]


def _pow(a: _Dim, s: Fraction) -> _Dim:
    return _scale(a[0], s), a[1] * s


class _Conflict(Exception):
    """Two dimensions a rule says must be equal, and which rule ('add', 'argument', ...)."""

    def __init__(self, rule: str, a: _Dim, b: _Dim, function: str = "",
                 terms: tuple[Any, Any] | None = None):
        super().__init__(rule)
        self.rule, self.a, self.b, self.function = rule, a, b, function
        self.terms = terms  # the two sympy terms whose dimensions differ (a sum)


# sympy function classes whose arguments may carry a dimension (everything else: none)
_SAME_AS_ARGUMENT = (sp.Abs,)
_ARGUMENTS_ALIKE = (sp.Min, sp.Max)
_ANY_ARGUMENT = (sp.sign, sp.Heaviside)


def _function_name(expr: Any) -> str:
    name = type(expr).__name__.lower()
    return {"log": "ln"}.get(name, name)


class _Walker:
    """Dimensions of sympy expressions, memoised; raises _Conflict at the first broken rule."""

    def __init__(self, symbols: Mapping[Any, _Dim]):
        self.symbols = symbols
        self.memo: dict[Any, _Dim] = {}

    def __call__(self, expr: Any) -> _Dim:
        hit = self.memo.get(expr)
        if hit is None:
            hit = self.memo[expr] = self._dimension(expr)
        return hit

    @staticmethod
    def _same(rule: str, dims: Sequence[_Dim], function: str = "",
              args: Sequence[Any] = ()) -> _Dim:
        first = dims[0]
        for i, d in enumerate(dims[1:], 1):
            if d != first:
                terms = (args[0], args[i]) if args else None
                raise _Conflict(rule, first, d, function, terms)
        return first

    def _dimension(self, expr: Any) -> _Dim:
        if expr.is_Number or expr.is_NumberSymbol:
            return _ONE
        if expr.is_Symbol:
            return self.symbols.get(expr, _ONE)
        if expr.is_Add:
            return self._same("add", [self(a) for a in expr.args], args=expr.args)
        if expr.is_Mul:
            out = _ONE
            for a in expr.args:
                out = _mul(out, self(a))
            return out
        if expr.is_Pow:
            base, exponent = expr.args
            d_exp = self(exponent)
            if d_exp != _ONE:
                raise _Conflict("exponent", d_exp, _ONE)
            if exponent.is_Number:
                return _pow(self(base), _fraction(exponent))
            d_base = self(base)
            if d_base != _ONE:
                raise _Conflict("base", d_base, _ONE)
            return _ONE
        if isinstance(expr, _SAME_AS_ARGUMENT):
            return self(expr.args[0])
        if isinstance(expr, _ARGUMENTS_ALIKE):
            return self._same("compare", [self(a) for a in expr.args], _function_name(expr))
        if isinstance(expr, _ANY_ARGUMENT):
            for a in expr.args:
                self(a)
            return _ONE
        if isinstance(expr, sp.atan2):
            self._same("compare", [self(a) for a in expr.args], "atan2")
            return _ONE
        for a in expr.args:  # exp, ln, log10, log2, trigonometric, hyperbolic, ...
            d = self(a)
            if d != _ONE:
                raise _Conflict("argument", d, _ONE, _function_name(expr))
        return _ONE


@dataclass(frozen=True)
class Outcome:
    """The unknown's dimension after the check, and whether the equation fixed it.

    ``where``: (start, end) of the part of the text that fixed it (None when free).
    """

    dimension: Dimension
    fixed: bool
    where: tuple[int, int] | None


def _solve(conflict: _Conflict) -> _Exact | None:
    """The unknown's dimension that makes the conflict's two sides equal, if it is open."""
    (a, ka), (b, kb) = conflict.a, conflict.b
    if ka == kb:
        return None
    return _scale(_combine(b, a, Fraction(-1)), 1 / (ka - kb))


def _typed_order(conflict: _Conflict, positions: Mapping[Any, int]) -> tuple[_Dim, _Dim]:
    """The two dimensions of a sum's conflict in the order their terms were typed."""
    if conflict.terms is not None:
        pa, pb = (_position(t, positions) for t in conflict.terms)
        if pa is not None and pb is not None and pb < pa:
            return conflict.b, conflict.a
    return conflict.a, conflict.b


def _position(expr: Any, positions: Mapping[Any, int]) -> int | None:
    for e in (expr, -expr):
        if e in positions:
            return positions[e]
    found = [positions[s] for s in expr.free_symbols if s in positions]
    return min(found) if found else None


def _message(conflict: _Conflict, part: str, positions: Mapping[Any, int]) -> str:
    first, second = _typed_order(conflict, positions)
    a, b = (dimension_words(_plain(d[0])) for d in (first, second))
    if conflict.rule == "add":
        return f"`{part}`: {a} added to {b}"
    if conflict.rule == "sides":
        return f"`{part}`: the left side is {a}, the right side is {b}"
    if conflict.rule == "compare":
        return f"`{part}`: {conflict.function} compares {a} with {b}"
    if conflict.rule == "argument":
        return f"`{part}`: the argument of {conflict.function} must be dimensionless, not {a}"
    if conflict.rule == "exponent":
        return f"`{part}`: an exponent must be dimensionless, not {a}"
    return f"`{part}`: a power with a varying exponent needs a dimensionless base, not {a}"


def check(text: str, spans: Sequence[tuple[Any, int, int]],
          sides: tuple[Any, Any | None, tuple[int, int, int]], unknown: Any,
          dimensions: Mapping[Any, Dimension], given: Dimension | None,
          unknown_name: str, given_text: str | None,
          names_at: Mapping[Any, int] | None = None) -> Outcome:
    """Check the equation's dimensions and find the unknown's.

    ``spans``: (sympy expression, start, end) of each part the parser built, innermost
    first; ``sides``: the lhs and rhs expressions (rhs None for ``expr = 0``) and
    (start, '=' position, end); ``dimensions``: symbol -> dimension of every parameter
    with a unit (others are dimensionless); ``given``: the dimension of the unknown unit
    the user chose, or None. Raises :class:`EquationError` naming the part as typed, the
    two dimensions and its column; or, when ``given`` does not fit the dimension the
    equation implies, naming the unit and the part that implies it. ``names_at``: symbol
    -> where it is first typed (orders a sum's two dimensions as typed in messages).
    """
    lhs, rhs, (start, equals, end) = sides
    parts = list(spans)
    positions: dict[Any, int] = dict(names_at or {})
    for expr, a, _b in parts:
        positions.setdefault(expr, a)
    given_exact = None if given is None else _exact(given)
    side_conflicts = rhs is not None and not (rhs.is_Number and rhs == 0)

    def run(x_dim: _Dim) -> tuple[_Conflict, tuple[int, int]] | None:
        symbols: dict[Any, _Dim] = {s: (_exact(d), _ZERO) for s, d in dimensions.items()}
        symbols[unknown] = x_dim
        walk = _Walker(symbols)
        for expr, a, b in parts:
            try:
                walk(expr)
            except _Conflict as c:
                return c, (a, b)
        try:
            dl = walk(lhs)
            if side_conflicts:
                dr = walk(rhs)
                if dl != dr:
                    raise _Conflict("sides", dl, dr)
        except _Conflict as c:
            return c, (start, end)
        return None

    open_found = run(((), Fraction(1)))
    fixed: _Exact | None = None
    where = None
    if open_found is not None:
        conflict, where = open_found
        fixed = _solve(conflict)
        if fixed is None:  # a mismatch whatever the unknown's dimension
            _raise(text, conflict, where, positions)
    if fixed is not None and given_exact is not None and fixed != given_exact:
        part = snippet(text, *where)
        raise _fail(text, f"the unknown unit '{given_text}' does not fit '{unknown_name}': "
                    f"`{part}` makes it {dimension_words(_plain(fixed))}, not "
                    f"{dimension_words(given)}", where[0])
    x_dim = fixed if fixed is not None else (given_exact or ())
    if open_found is None:
        # no rule involved the unknown's dimension with a different power on each side, and
        # every other rule held: they hold for any dimension of the unknown
        return Outcome(_plain(x_dim), False, None)
    found = run((x_dim, _ZERO))
    if found is not None:
        because = ""
        if fixed is not None and where is not None and found[1] != where:
            because = (f" (with '{unknown_name}' in {dimension_words(_plain(fixed))}, as "
                       f"`{snippet(text, *where)}` makes it)")
        _raise(text, found[0], found[1], positions, because)
    return Outcome(_plain(x_dim), fixed is not None, where)


def _raise(text: str, conflict: _Conflict, where: tuple[int, int],
           positions: Mapping[Any, int], because: str = "") -> None:
    part = snippet(text, *where)
    raise _fail(text, _message(conflict, part, positions) + because, where[0])
