"""The dimensional check of an equation over its sympy tree, and the unknown's dimension.

Rules (every parameter without a unit, and every plain number, is dimensionless):

* the terms of a sum, the two sides of ``=``, the arguments of ``min``/``max`` and the two
  arguments of ``atan2`` have one dimension;
* the arguments of exp, ln, log10, log2, the trigonometric and hyperbolic functions and
  their inverses are dimensionless (an angle in rad or deg is: pint counts both as
  dimensionless), and so is every exponent; a base under an exponent that is not a
  constant is dimensionless too; ``abs`` keeps its argument's dimension;
* a constant exponent multiplies the base's dimension (``D^2``, ``R^(2/3)``, ``Q^1.85``).

The unknowns' dimensions are solved for: dimensions are vectors of exponents, so each rule
that involves unknowns is a linear equation in their vectors. The rules are noted in the
order the parser completed the parts of the text (over every line of a system) and solved
together (Gauss-Jordan over exact fractions): an unknown is fixed by the first part that
determines it, one the rules leave open is dimensionless, and then every rule is checked
with those dimensions. One equation is the case of one unknown.
Parts are located in the text by the spans the parser recorded, so a
mismatch names the part as typed and its column, whatever order sympy keeps terms in.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import sympy as sp

from solvers.equation.lexer import EquationError, _fail
from solvers.equation.parser import snippet
from solvers.units.reading import Dimension
from solvers.units.si_text import (
    dimension_words,
    is_common_quantity,
    needs_words,
    quantity_words,
    unit_size,
)

# Exponents are exact fractions here (a double exponent such as 1.85 is read as 37/20), so
# Q^1.85 with Q's dimension solved from it gives back exactly Q's dimension.
_Exact = tuple[tuple[str, Fraction], ...]
# A dimension while the unknowns' are open: (base exponents, power of each unknown).
_Dim = tuple[_Exact, tuple[Fraction, ...]]
_ZERO = Fraction(0)


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
    return _combine(a[0], b[0]), tuple(x + y for x, y in zip(a[1], b[1], strict=True))


def _pow(a: _Dim, s: Fraction) -> _Dim:
    return _scale(a[0], s), tuple(x * s for x in a[1])


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


_BESSEL_LETTERS = {"besselj": "J", "bessely": "Y", "besseli": "I", "besselk": "K"}


def _function_name(expr: Any) -> str:
    """The function's name as typed (ln, J0: sympy's log, besselj(0, ...))."""
    name = type(expr).__name__.lower()
    if name in _BESSEL_LETTERS:
        return f"{_BESSEL_LETTERS[name]}{expr.args[0]}"
    return {"log": "ln"}.get(name, name)


class _Walker:
    """Dimensions of sympy expressions, memoised.

    With ``record`` None a broken rule raises _Conflict at once; with a list, each broken
    rule is noted there as (conflict, where) and the walk goes on with the first of the two
    dimensions (the later rules then hold whenever the noted one does): the noted rules are
    linear equations in the unknowns' dimensions, solved together afterwards.
    """

    def __init__(self, symbols: Mapping[Any, _Dim], one: _Dim,
                 record: list[tuple[_Conflict, tuple[int, int]]] | None = None):
        self.symbols = symbols
        self.one = one
        self.record = record
        self.where = (0, 0)  # the part being walked (where a noted rule stands)
        self.memo: dict[Any, _Dim] = {}

    def __call__(self, expr: Any) -> _Dim:
        hit = self.memo.get(expr)
        if hit is None:
            hit = self.memo[expr] = self._dimension(expr)
        return hit

    def differ(self, conflict: _Conflict) -> None:
        if self.record is None:
            raise conflict
        self.record.append((conflict, self.where))

    def _same(self, rule: str, dims: Sequence[_Dim], function: str = "",
              args: Sequence[Any] = ()) -> _Dim:
        first = dims[0]
        for i, d in enumerate(dims[1:], 1):
            if d != first:
                terms = (args[0], args[i]) if args else None
                self.differ(_Conflict(rule, first, d, function, terms))
        return first

    def _dimension(self, expr: Any) -> _Dim:
        one = self.one
        if expr.is_Number or expr.is_NumberSymbol:
            return one
        if expr.is_Symbol:
            return self.symbols.get(expr, one)
        if expr.is_Add:
            return self._same("add", [self(a) for a in expr.args], args=expr.args)
        if expr.is_Mul:
            out = one
            for a in expr.args:
                out = _mul(out, self(a))
            return out
        if expr.is_Pow:
            base, exponent = expr.args
            d_exp = self(exponent)
            if d_exp != one:
                self.differ(_Conflict("exponent", d_exp, one))
            if exponent.is_Number:
                return _pow(self(base), _fraction(exponent))
            d_base = self(base)
            if d_base != one:
                self.differ(_Conflict("base", d_base, one))
            return one
        if isinstance(expr, _SAME_AS_ARGUMENT):
            return self(expr.args[0])
        if isinstance(expr, _ARGUMENTS_ALIKE):
            return self._same("compare", [self(a) for a in expr.args], _function_name(expr))
        if isinstance(expr, _ANY_ARGUMENT):
            for a in expr.args:
                self(a)
            return one
        if isinstance(expr, sp.atan2):
            self._same("compare", [self(a) for a in expr.args], "atan2")
            return one
        for a in expr.args:  # exp, ln, log10, log2, trigonometric, hyperbolic, ...
            d = self(a)
            if d != one:
                self.differ(_Conflict("argument", d, one, _function_name(expr)))
        return one


def dimensions_of(exprs: Sequence[Any], dimensions: Mapping[Any, Dimension]
                  ) -> tuple[Dimension | None, ...]:
    """The dimension of each expression from its symbols' (``dimensions``: symbol ->
    dimension; symbols not in it are dimensionless): a defined quantity's unit. None for an
    expression that breaks a rule (a sum of unlike terms, a unit inside exp), which a
    checked equation never holds but an unchecked one may."""
    one: _Dim = ((), ())
    walker = _Walker({s: (_exact(d), ()) for s, d in dimensions.items()}, one)
    out: list[Dimension | None] = []
    for expr in exprs:
        try:
            out.append(_plain(walker(expr)[0]))
        except _Conflict:
            out.append(None)
    return tuple(out)


@dataclass(frozen=True)
class Outcome:
    """The unknown's dimension after the check, and whether the equation fixed it.

    ``where``: (start, end) of the part of the text that fixed it (None when free).
    """

    dimension: Dimension
    fixed: bool
    where: tuple[int, int] | None


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
          names_at: Mapping[Any, int] | None = None,
          typed: Mapping[Any, str] | None = None) -> Outcome:
    """Check one equation's dimensions and find its unknown's (:func:`check_system` with
    one equation and one unknown).

    ``spans``: (sympy expression, start, end) of each part the parser built, innermost
    first; ``sides``: the lhs and rhs expressions (rhs None for ``expr = 0``) and
    (start, '=' position, end); ``dimensions``: symbol -> dimension of every parameter
    with a unit (others are dimensionless); ``given``: the dimension of the unknown unit
    the user chose, or None. Raises :class:`EquationError` naming the part as typed, the
    two dimensions and its column; or, when ``given`` does not fit the dimension the
    equation implies, naming the unit and the part that implies it. ``names_at``: symbol
    -> where it is first typed (orders a sum's two dimensions as typed in messages).
    ``typed``: parameter symbol -> its unit as typed ('' for none), for every parameter:
    when the unknown unit does not fit, the parameters whose unit alone would make it fit
    are named (:func:`suspects`).
    """
    chosen = {} if given is None else {unknown: (given, given_text or "")}
    return check_system(text, spans, (sides,), (unknown,), dimensions, chosen, names_at,
                        typed)[0]


class _Rows:
    """The noted rules as linear equations sum_j c_j X_j = r in the unknowns' dimension
    vectors X_j, kept reduced (Gauss-Jordan over exact fractions), one rule at a time."""

    def __init__(self, n: int):
        self.n = n
        self.rows: list[tuple[int, list[Fraction], dict[str, Fraction]]] = []

    @staticmethod
    def _less(r: dict[str, Fraction], q: Mapping[str, Fraction], f: Fraction
              ) -> dict[str, Fraction]:
        out = dict(r)
        for k, v in q.items():
            out[k] = out.get(k, _ZERO) - f * v
        return {k: v for k, v in out.items() if v != 0}

    def add(self, coeffs: Sequence[Fraction], rhs: _Exact) -> bool:
        """Add a rule; False when it contradicts the rules before it."""
        c = [Fraction(v) for v in coeffs]
        r: dict[str, Fraction] = {k: Fraction(v) for k, v in rhs}
        for p, pc, pr in self.rows:
            f = c[p]
            if f:
                c = [x - f * y for x, y in zip(c, pc, strict=True)]
                r = self._less(r, pr, f)
        pivot = next((j for j, v in enumerate(c) if v), None)
        if pivot is None:
            return not r
        f = c[pivot]
        c = [v / f for v in c]
        r = {k: v / f for k, v in r.items()}
        rows = []
        for p, pc, pr in self.rows:
            g = pc[pivot]
            if g:
                pc = [x - g * y for x, y in zip(pc, c, strict=True)]
                pr = self._less(pr, r, g)
            rows.append((p, pc, pr))
        rows.append((pivot, c, r))
        self.rows = rows
        return True

    def determined(self) -> dict[int, _Exact]:
        """The unknowns the rules fix whatever the others' dimensions, and their values."""
        return {p: tuple(sorted(pr.items())) for p, pc, pr in self.rows
                if all(v == 0 for j, v in enumerate(pc) if j != p)}

    def solution(self) -> list[_Exact]:
        """One solution: every unknown the rules leave open dimensionless."""
        out: list[_Exact] = [() for _ in range(self.n)]
        for p, _pc, pr in self.rows:
            out[p] = tuple(sorted(pr.items()))
        return out


def check_system(text: str, spans: Sequence[tuple[Any, int, int]],
                 sides: Sequence[tuple[Any, Any | None, tuple[int, int, int]]],
                 unknowns: Sequence[Any], dimensions: Mapping[Any, Dimension],
                 given: Mapping[Any, tuple[Dimension, str]],
                 names_at: Mapping[Any, int] | None = None,
                 typed: Mapping[Any, str] | None = None) -> tuple[Outcome, ...]:
    """Check the dimensions of equations that share unknowns, and find each unknown's.

    ``spans``: every part of every line (definitions too) as (sympy expression, start,
    end), innermost first; ``sides``: each equation's (lhs, rhs or None, (start, '='
    position, end)); ``unknowns``: their sympy Symbols; ``dimensions``: symbol -> dimension
    of every parameter with a unit (others are dimensionless); ``given``: unknown symbol ->
    (dimension, unit text) for the unknowns whose unit the user chose; ``typed``: each
    parameter's symbol -> its unit as typed ('' for none), to name in the message the
    parameters whose unit alone would make a chosen unit fit (:func:`suspects`).

    Every rule involving unknowns is a linear equation in their dimension vectors; the
    rules are taken in the order the parts stand in the text and solved together, so an
    unknown is fixed by the first part that (with the parts before it) determines it. An
    unknown the rules leave open is dimensionless (``Outcome.fixed`` False). Raises
    :class:`EquationError` naming the part as typed, the two dimensions and its column
    (with which unknowns' dimensions made it so, and where they were fixed); or, when a
    chosen unit does not fit, naming the unit and the part that implies another dimension.
    Returns one :class:`Outcome` per unknown, in order.
    """
    parts = list(spans)
    positions: dict[Any, int] = dict(names_at or {})
    for expr, a, _b in parts:
        positions.setdefault(expr, a)
    n = len(unknowns)
    none = tuple(_ZERO for _ in range(n))
    one: _Dim = ((), none)

    def run(x_dims: Mapping[Any, _Dim], record: list | None = None
            ) -> tuple[_Conflict, tuple[int, int]] | None:
        symbols: dict[Any, _Dim] = {s: (_exact(d), none) for s, d in dimensions.items()}
        symbols.update(x_dims)
        walk = _Walker(symbols, one, record)
        for expr, a, b in parts:
            walk.where = (a, b)
            try:
                walk(expr)
            except _Conflict as c:
                return c, (a, b)
        for lhs, rhs, (start, _equals, end) in sides:
            walk.where = (start, end)
            try:
                dl = walk(lhs)
                # "= 0" fits a side of any dimension (the parser gives 0.0: Float, not Integer)
                if rhs is not None and not (rhs.is_Number and rhs.is_zero):
                    dr = walk(rhs)
                    if dl != dr:
                        walk.differ(_Conflict("sides", dl, dr))
            except _Conflict as c:
                return c, (start, end)
        return None

    def fixed_run(values: Sequence[_Exact]) -> tuple[_Conflict, tuple[int, int]] | None:
        return run({u: (values[j], none) for j, u in enumerate(unknowns)})

    def unit_vector(j: int) -> tuple[Fraction, ...]:
        return tuple(Fraction(int(i == j)) for i in range(n))

    rules: list[tuple[_Conflict, tuple[int, int]]] = []
    run({u: ((), unit_vector(j)) for j, u in enumerate(unknowns)}, rules)
    given_exact = {unknowns.index(u): _exact(d) for u, (d, _t) in given.items()}
    given_text = {unknowns.index(u): t for u, (_d, t) in given.items()}
    rows = _Rows(n)
    fixed_at: dict[int, tuple[int, int]] = {}
    for conflict, where in rules:
        (a, ka), (b, kb) = conflict.a, conflict.b
        if not rows.add([x - y for x, y in zip(ka, kb, strict=True)],
                        _combine(b, a, Fraction(-1))):
            # a mismatch whatever the unknowns' dimensions the parts before allow
            involved = [j for j in range(n) if ka[j] or kb[j]]
            # the inputs whose unit alone would remove the mismatch: where it is, the
            # message shows; what caused it (U typed without its W/(m^2*K)), this names
            blame = "" if typed is None else suspects_words(suspects(
                text, parts, sides, unknowns, dimensions, given, names_at, typed,
                most=3, simplest=False))
            found = fixed_run(rows.solution())
            if found is None or found[1] != where:
                _raise(text, conflict, where, positions, blame=blame)
            because = [(unknowns[j].name, rows.solution()[j], fixed_at[j]) for j in involved
                       if j in fixed_at and fixed_at[j] != where]
            _raise(text, found[0], where, positions, _because(text, because), blame)
        for j, value in rows.determined().items():
            if j in fixed_at:
                continue
            fixed_at[j] = where
            if j in given_exact and value != given_exact[j]:
                if is_common_quantity(_plain(value)):
                    # the equation makes the unknown a plain length, pressure, ...: the
                    # unit chosen for it is the likelier slip; but an input's unit alone
                    # may be what made it so (b in cm^3 beside v in L/mol): name that too
                    blame = f"; check the unit given for '{unknowns[j].name}'"
                    if typed is not None:
                        also = suspects(text, parts, sides, unknowns, dimensions, given,
                                        names_at, typed)
                        if also:
                            blame += (", or the input's: " + suspects_words(
                                also, unknowns[j].name, given_text[j]).split(": ", 1)[1])
                elif typed is None:
                    blame = ""
                else:
                    blame = suspects_words(suspects(
                        text, parts, sides, unknowns, dimensions, given, names_at, typed),
                        unknowns[j].name, given_text[j])
                raise _fail(text, f"the unknown unit '{given_text[j]}' does not fit "
                            f"'{unknowns[j].name}': `{snippet(text, *where)}` makes it "
                            f"{dimension_words(_plain(value))}, not "
                            f"{dimension_words(_plain(given_exact[j]))}{blame}", where[0])
    for j, value in given_exact.items():  # chosen units of the unknowns left open
        if j not in fixed_at and not rows.add(unit_vector(j), value):
            found = fixed_run([*rows.solution()[:j], value, *rows.solution()[j + 1:]])
            if found is not None:
                _raise(text, found[0], found[1], positions,
                       f" (with '{unknowns[j].name}' in '{given_text[j]}')")
            raise _fail(text, f"the unknown unit '{given_text[j]}' does not fit "
                        f"'{unknowns[j].name}' with the units of the other unknowns", None)
    # unknowns the chosen units settle through the rules (x - y with x in m: y in m too)
    settled = set(rows.determined()) | set(given_exact)
    values = rows.solution()
    if rules:
        found = fixed_run(values)
        if found is not None:  # cannot happen when the rules hold: say so, never pass it
            _raise(text, found[0], found[1], positions)
    return tuple(Outcome(_plain(values[j]), j in fixed_at or j in settled, fixed_at.get(j))
                 for j in range(n))


@dataclass(frozen=True)
class Suspect:
    """A parameter whose unit alone, changed, would make the chosen units fit.

    ``name``: the parameter; ``unit``: its unit as typed ('' for none); ``dimension``: what
    that unit is; ``needed``: the dimension the equation needs it to have.
    """

    name: str
    unit: str
    dimension: Dimension
    needed: Dimension


def suspects(text: str, spans: Sequence[tuple[Any, int, int]],
             sides: Sequence[tuple[Any, Any | None, tuple[int, int, int]]],
             unknowns: Sequence[Any], dimensions: Mapping[Any, Dimension],
             given: Mapping[Any, tuple[Dimension, str]],
             names_at: Mapping[Any, int] | None, typed: Mapping[Any, str],
             most: int = 2, simplest: bool = True) -> tuple[Suspect, ...]:
    """The parameters whose unit is most likely wrong, given the unknowns' chosen units.

    Each parameter in turn is taken as one more unknown of the check (its unit set aside):
    where the equations then hold with the chosen units, the dimension they fix for it is
    what its unit should have been. Of those, the ones needing the simplest dimension
    (whole exponents, least :func:`si_text.unit_size`: a length before kg/(m*s^2),
    Pa*s before kg/m^2) are returned,
    at most ``most``, in the order typed; with ``simplest`` False every one that explains
    it (a mismatch among the inputs themselves: U in W/(m*K) where W/(m^2*K) was meant
    is explained by U's unit and by A's alike, and neither is the likelier on its face).
    A parameter the rules leave open is no suspect, nor one typed with a unit that would
    need fractional powers. A bare number that would need them is the constant of a
    correlation hiding its unit (Manning's n in s/m^(1/3), a Hazen-Williams C): such
    parameters are named only when no whole-powered one explains it, and then only the
    simplest (``simplest`` or not: the slope beside Manning's n would fit too, in
    m^(2/3)/s^2). () when no single parameter explains it.
    """
    found: list[tuple[tuple[float, float, int], int, Suspect]] = []
    hidden: list[tuple[tuple[float, float, int], int, Suspect]] = []
    order = names_at or {}
    for p, unit in typed.items():
        if p in unknowns:
            continue
        rest = {s: d for s, d in dimensions.items() if s != p}
        try:
            outcome = check_system(text, spans, sides, (*unknowns, p), rest, given,
                                   names_at)[-1]
        except EquationError:
            continue
        needed = _exact(outcome.dimension)
        now = _exact(dimensions.get(p, ()))
        if not outcome.fixed or needed == now:
            continue
        size = unit_size(outcome.dimension)
        if mass_for_force(_plain(now), outcome.dimension):
            # a force typed in lb or kg: the commonest slip of a mechanical calculation
            # (lb for lbf), named before a bare factor that would need an acceleration
            size = (0.0, 0.0, 0)
        suspect = (size, order.get(p, 0),
                   Suspect(p.name, unit, _plain(now), outcome.dimension))
        if not any(Fraction(e).denominator != 1 for _n, e in needed):
            found.append(suspect)
        elif not unit:
            hidden.append(suspect)
    if not found and hidden:
        found, simplest = hidden, True
    if not found:
        return ()
    least = min(size for size, _at, _s in found)
    return tuple(s for size, _at, s in sorted(found, key=lambda f: f[1])
                 if size == least or not simplest)[:most]


def mass_for_force(now: Dimension, needed: Dimension) -> bool:
    """Whether a unit with a mass stands where that mass times an acceleration is needed:
    lb for lbf, kg for kgf, lb*in for lbf*in (a torque), lb/in^2 for psi."""
    have = {n: float(e) for n, e in now}
    if have.get("[mass]") != 1.0:
        return False
    have["[length]"] = have.get("[length]", 0.0) + 1.0
    have["[time]"] = have.get("[time]", 0.0) - 2.0
    return {n: e for n, e in have.items() if e} == {n: float(e) for n, e in needed if e}


def suspects_words(found: Sequence[Suspect], unknown: str | None = None,
                   unit: str | None = None) -> str:
    """'; most likely an input's unit is wrong: 'h' is a pressure (Pa, typed 'psi');
    with 'D' in 'mm' the equation needs it as a length (m)' ('' for none). Without
    ``unknown`` (a mismatch among the inputs, whatever the unknown's unit): "...: 'U' has
    no unit; the equation needs 'U' in W/(m²·K)"."""
    if not found:
        return ""
    said = []
    for s in found:
        now = (f"'{s.name}' in '{s.unit}' is {quantity_words(s.dimension)}" if s.unit
               else f"'{s.name}' has no unit")
        given = f"with '{unknown}' in '{unit}' " if unknown is not None else ""
        force = ""
        if s.unit and mass_for_force(s.dimension, s.needed):
            force = (" (lb is the pound mass: type lbf for the pound-force)"
                     if "lb" in s.unit or "pound" in s.unit else
                     " (kg is a mass: type kgf for the kilogram-force, or the force in N)")
        said.append(f"{now}; {given}the equation needs '{s.name}' {needs_words(s.needed)}"
                    + force)
    powers = [Fraction(e).limit_denominator(10**6) for s in found for _n, e in s.needed]
    hides = ""
    if any(p.denominator != 1 for p in powers):
        # s/m^(1/3) can be typed; m^0.37041/s (C^1.852 = m^0.686/s^1.852) cannot: a unit's
        # powers are small numbers or fractions of them (reading.unit_text_problem)
        typed = all(p.denominator <= 99 and abs(p.numerator) <= 99 for p in powers)
        hides = ("; a correlation's constant typed as a bare number often hides such a unit "
                 "(Manning's n, a Hazen–Williams C): "
                 + ("give it that unit, or switch the dimension check off" if typed else
                    "switch the dimension check off (no unit text holds those powers)"))
    return "; most likely an input's unit is wrong: " + "; or ".join(said) + hides


def _because(text: str, fixed: Sequence[tuple[str, _Exact, tuple[int, int]]]) -> str:
    """' (with 'Q' in m³/s, as `part` makes it)' for the unknowns a mismatch involves."""
    said = [f"'{name}' in {dimension_words(_plain(value))}, as `{snippet(text, *where)}` "
            "makes it" for name, value, where in fixed]
    return f" (with {'; '.join(said)})" if said else ""


def _raise(text: str, conflict: _Conflict, where: tuple[int, int],
           positions: Mapping[Any, int], because: str = "", blame: str = "") -> None:
    """Raise the mismatch at ``where``: the part, its column, then ``blame`` (the inputs
    whose unit alone would remove it, :func:`suspects_words`)."""
    part = snippet(text, *where)
    error = _fail(text, _message(conflict, part, positions) + because, where[0])
    raise EquationError(f"{error}{blame}", error.position)
