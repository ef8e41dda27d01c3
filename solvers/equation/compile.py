"""Compiling: any list of sympy expressions -> Python code with arguments (x..., *params).

Generated code contains no user string: the unknowns become ``_x0, _x1, ...`` and the
parameters ``_p0, _p1, ...`` before printing. Each expression list is compiled once, on
two paths: numpy (vectorised; parameters may be arrays that broadcast against x and each
other) and the ``math`` module (much faster on one float; compiled at the first scalar
call; every domain error there raises, and the numpy path then gives the nan/inf). Both
paths agree, signed zeros included (see :mod:`solvers.equation.functions`).
Unit conversion, when parameters carry units, belongs before the call: the code sees
plain floats or float arrays.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from numbers import Real
from typing import Any

import numpy as np
import sympy as sp
from sympy.printing.lambdarepr import LambdaPrinter
from sympy.printing.numpy import NumPyPrinter

from solvers.equation.functions import (
    SPECIAL_UFUNCS,
    _ieee_maximum,
    _ieee_minimum,
    _real_heaviside,
    _real_max,
    _real_min,
    _real_pow,
    _real_sign,
)
from solvers.equation.parser import _BIG_INT


def _float_code(number: Any) -> str:
    try:
        value = float(number)
    except OverflowError:
        value = math.inf if number > 0 else -math.inf
    if math.isfinite(value):
        return repr(value)  # round-trip exact (sympy's default prints 15 digits)
    return "(1e999)" if value > 0 else "(-1e999)"


_HUGE = sp.Float(np.finfo(float).max)
_TINY = sp.Float(np.finfo(float).tiny)


def _out_of_range(c: Any) -> bool:
    """Whether a number is nonzero but beyond what a double holds (or subnormal)."""
    return bool(c.is_Number and c != 0 and (abs(c) > _HUGE or abs(c) < _TINY))


def _in_range_code(printer: Any, expr: Any) -> str | None:
    """Code for ``expr`` (a product) with no constant in it beyond double range, or None
    when it has no such constant.

    sympy folds the constant of a power of a product into one number: (1e200 x)^2 is
    1e400 x^2, which is inf in doubles (and inf x^2 is nan at x = 1e-200, where the
    typed form is 1). The constant's n-th root goes back inside a power x^n of the
    product (not of a sum), c x^n = (c^(1/n) x)^n, as typed; what is left is split into factors each
    inside double range, applied one at a time: 1e400 x = 1e200 (1e200 x) (up to four
    factors; a constant beyond that prints as before).
    """
    c, rest = expr.as_coeff_Mul()
    if not _out_of_range(c):
        return None
    minus = "-" if c < 0 else ""
    mag = sp.Float(abs(c), 30)
    factors = list(sp.Mul.make_args(rest))
    for i, fac in enumerate(factors):
        # only a power of a product, as sympy's folding leaves it: inside a power of a sum
        # (P^2 with P = x^2 - c of order one) the constant's root would underflow there
        if fac.is_Pow and fac.exp.is_Integer and int(fac.exp) >= 2 and not fac.base.is_Add:
            n = int(fac.exp)
            root = mag ** sp.Rational(1, n)
            if not _out_of_range(root):
                code = (f"({_float_code(root)} * {printer.parenthesize(fac.base, 50)})"
                        f"**{n}")
                others = factors[:i] + factors[i + 1:]
                if others:
                    code = f"{code} * {printer.parenthesize(sp.Mul(*others), 50)}"
                return f"({minus}({code}))"
    pieces = int(math.ceil(abs(float(sp.log(mag, 10))) / 300)) + 1
    if pieces > 4:
        return None  # beyond 1e900 no product of doubles helps: printed as inf or 0
    piece = _float_code(mag ** sp.Rational(1, pieces))
    code = printer.parenthesize(rest, 50)
    for _ in range(pieces):
        code = f"({piece} * {code})"
    return f"({minus}{code})"


class _InRangeConstants:
    """Printer mixin: products print with their constants inside double range."""

    def _print_Mul(self, expr: Any) -> str:
        if expr.is_commutative:
            code = _in_range_code(self, expr)
            if code is not None:
                return code
        return super()._print_Mul(expr)  # type: ignore[misc]


class _VectorPrinter(_InRangeConstants, NumPyPrinter):
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


def _special_printer(prefix: str) -> Callable[[Any, Any], str]:
    """A printer method for one of sympy's special functions: the scipy.special ufunc
    (:data:`solvers.equation.functions.SPECIAL_UFUNCS`) under ``prefix`` in the
    namespace, the Bessel order first, as the ufuncs take it."""

    def print_special(self: Any, expr: Any) -> str:
        ufunc = SPECIAL_UFUNCS[type(expr).__name__]
        return f"{prefix}{ufunc}(" + ", ".join(self._print(a) for a in expr.args) + ")"

    return print_special


for _name in SPECIAL_UFUNCS:
    setattr(_VectorPrinter, f"_print_{_name}", _special_printer("special_"))


class _ScalarPrinter(_InRangeConstants, LambdaPrinter):
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


for _name in SPECIAL_UFUNCS:
    setattr(_ScalarPrinter, f"_print_{_name}", _special_printer("real_"))


def _special_ufuncs(prefix: str, scalar: bool) -> dict[str, Any]:
    """The namespace entries of the special functions: the scipy.special ufuncs (imported
    when a compiled f first needs the namespace), as floats on the scalar path."""
    import scipy.special

    out: dict[str, Any] = {}
    for ufunc in set(SPECIAL_UFUNCS.values()):
        fn = getattr(scipy.special, ufunc)
        out[prefix + ufunc] = (lambda *a, _fn=fn: float(_fn(*a))) if scalar else fn
    return out


_VECTOR_NAMESPACE = {"numpy": np, "ieee_minimum": _ieee_minimum, "ieee_maximum": _ieee_maximum}
_SPECIAL_CLASSES = tuple(getattr(sp, name) for name in SPECIAL_UFUNCS)

_SCALAR_NAMESPACE = {
    "real_pow": _real_pow,
    "real_min": _real_min,
    "real_max": _real_max,
    "real_sign": _real_sign,
    "real_heaviside": _real_heaviside,
    "math": math,  # some sympy printers write math.log10 and the like
}


def floatify_big(expr: Any) -> Any:
    """Exact numbers beyond 2^53 become Floats (sympy can build them: (3x)^60 = 3^60 x^60)."""
    big = {a: sp.Float(a) for a in expr.atoms(sp.Rational)
           if abs(a.p) > _BIG_INT or a.q > _BIG_INT}
    return expr.xreplace(big) if big else expr


def arguments(n_unknowns: int, n_parameters: int) -> tuple[Any, ...]:
    """The fixed argument symbols of generated code: _x0.. for unknowns, _p0.. for parameters."""
    return (*(sp.Symbol(f"_x{i}", real=True) for i in range(n_unknowns)),
            *(sp.Symbol(f"_p{i}", real=True) for i in range(n_parameters)))


def hoist(expr: Any, unknowns: frozenset[Any], table: dict[Any, Any]) -> Any:
    """``expr`` with each largest part free of the unknowns (but not of parameters) replaced
    by a symbol ``_h<k>`` recorded in ``table`` (part -> symbol, shared across calls).

    Those parts are then computed once per binding of the parameter values, not at every
    evaluation of f: the compiled f sees them as plain numbers, as when values were
    folded in at parse time.
    """
    memo: dict[Any, Any] = {}

    def walk(e: Any) -> Any:
        hit = memo.get(e)
        if hit is not None:
            return hit
        symbols = e.free_symbols
        if not symbols:
            out = e
        elif not symbols & unknowns:
            out = table.get(e)
            if out is None:
                out = table[e] = sp.Symbol(f"_h{len(table)}", real=True)
        elif not e.args:
            out = e  # the unknown itself
        else:
            args = [walk(a) for a in e.args]
            if all(a is b for a, b in zip(args, e.args, strict=True)):
                out = e
            else:
                try:
                    out = e.func(*args, evaluate=False)  # keep the tree as parsed
                except TypeError:
                    out = e.func(*args)
        memo[e] = out
        return out

    return walk(expr)


class Code:
    """``exprs`` compiled once as functions of (unknowns..., parameters...), in that order.

    ``vector`` is the numpy path (returns one value for one expression, else a list);
    :meth:`scalar` the math path (None when the math printer cannot print the list).
    Raises whatever sympy raises when it cannot print the numpy code.
    """

    def __init__(self, exprs: Sequence[Any], unknowns: Sequence[Any],
                 parameters: Sequence[Any], *, many: bool = False):
        self.args = arguments(len(unknowns), len(parameters))
        rename = dict(zip((*unknowns, *parameters), self.args, strict=True))
        code = [floatify_big(e.xreplace(rename)) for e in exprs]
        self.code = code if many else code[0]
        # A dict namespace, not the string "numpy": the string makes lambdify probe every
        # numpy attribute, which imports numpy.f2py and friends (~0.1 s of start-up); the
        # printer adds the "from numpy import ..." lines the code needs.
        self.special = any(e.has(*_SPECIAL_CLASSES) for e in code)
        namespace = {**_VECTOR_NAMESPACE, **_special_ufuncs("special_", False)} \
            if self.special else _VECTOR_NAMESPACE
        self.vector = sp.lambdify(self.args, self.code, modules=[namespace],
                                  printer=_VectorPrinter)
        self._scalar: Any = None

    def scalar(self) -> Any:
        """The math-module function (compiled at the first call), or False if unprintable."""
        if self._scalar is None:
            try:
                namespace = {**_SCALAR_NAMESPACE, **_special_ufuncs("real_", True)} \
                    if self.special else _SCALAR_NAMESPACE
                self._scalar = sp.lambdify(self.args, self.code, modules=[namespace, "math"],
                                           printer=_ScalarPrinter)
            except Exception:  # noqa: BLE001 - a construct the math printer lacks: numpy only
                self._scalar = False
        return self._scalar


BLOCK_ROWS = 8192
"""Rows of x a compiled expression is evaluated on at a time (see :func:`in_blocks`)."""


def in_blocks(vector: Callable[..., Any], x: np.ndarray, values: tuple[Any, ...]) -> Any:
    """``vector(x, *values)`` for a long 1-D x, computed in blocks of :data:`BLOCK_ROWS`.

    The generated code makes a temporary array per operation; over 10^5 rows those are
    fresh memory every call (page faults) and far larger than the caches. In blocks of
    8192 rows (64 kB) the temporaries are reused and stay in cache: the same element-wise
    arithmetic on each element (bit for bit), in about half the time. ``values`` are
    numbers (0-d arrays too) or arrays of x's shape; anything else (broadcasting, a
    short x) is one call.
    """
    n = x.size
    if x.ndim != 1 or n < 2 * BLOCK_ROWS:
        return vector(x, *values)
    arrays = [v.__class__ is np.ndarray and v.ndim > 0 for v in values]
    if any(a and v.shape != x.shape for a, v in zip(arrays, values, strict=True)):
        return vector(x, *values)
    out = np.empty(n)
    for i in range(0, n, BLOCK_ROWS):
        j = i + BLOCK_ROWS
        out[i:j] = vector(x[i:j], *(v[i:j] if a else v
                                    for a, v in zip(arrays, values, strict=True)))
    return out


def bound(code: Code, values: tuple[Any, ...],
          rows: tuple[int, ...] = ()) -> Callable[[Any], Any]:
    """f(x) = code(x, *values), vectorised, never raising on domain errors (nan/inf instead).

    With float ``values``, a float (or numpy scalar) x gives a Python float and an array x
    an array of x's shape. With array ``values``, the result is an array of the broadcast
    shape of x, the values and ``rows`` (one vectorised call, however many rows).
    """
    vector = code.vector
    scalars = values
    # numpy scalars on the vector path: a part with parameters only overflows to inf there
    # instead of raising OverflowError as Python floats do.
    values = tuple(np.float64(v) if v.__class__ is float else v for v in values)
    if rows or not all(v.__class__ is float for v in scalars):
        shape = np.broadcast_shapes(rows, *(np.shape(v) for v in values))

        def on_rows(x: Any) -> Any:
            arr = np.asarray(x, dtype=np.float64)
            with np.errstate(all="ignore"):
                out = np.asarray(in_blocks(vector, arr, values), dtype=np.float64)
            target = np.broadcast_shapes(arr.shape, shape)
            if out.shape != target:  # a part that depends on neither x nor every value
                out = np.broadcast_to(out, target).copy()
            return out

        return on_rows

    def on_array(x: Any) -> Any:
        arr = np.asarray(x, dtype=np.float64)
        with np.errstate(all="ignore"):
            out = in_blocks(vector, arr, values)
        out = np.asarray(out, dtype=np.float64)
        if out.shape != arr.shape:  # an expression that does not depend on x
            out = np.broadcast_to(out, arr.shape).copy()
        return out

    scalar = code._scalar

    def on_float(x: float) -> float:
        nonlocal scalar
        if scalar is None:
            scalar = code.scalar()
        if scalar:
            try:
                r = scalar(x, *scalars)
                if r.__class__ is float:
                    return r
                if isinstance(r, (int, float)) and not isinstance(r, bool):
                    return float(r)
            except (ArithmeticError, ValueError, TypeError):
                pass
        return float(on_array(x))

    def evaluate(x: Any) -> Any:
        if x.__class__ is float:
            if scalar:  # (compiled: the usual case written out, a call less per value)
                try:
                    r = scalar(x, *scalars)
                    if r.__class__ is float:
                        return r
                except (ArithmeticError, ValueError, TypeError):
                    pass  # on_float asks again and answers from the numpy path
            return on_float(x)
        if isinstance(x, (Real, np.number)) and not isinstance(x, np.ndarray):
            return on_float(float(x))
        return on_array(x)

    return evaluate
