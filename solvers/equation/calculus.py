"""Calculus on the parsed expression: derivatives, kinks and the size limits.

The derivative comes from a chain rule of our own over the node types the parser builds
(abs' = sign, max(a, b)' = H(a - b) a' + H(b - a) b' with H(0) = 1/2): sympy's diff goes
through re/im/conjugate for abs/min/max, which is slow and cannot be compiled. A
derivative estimated at more than ``2*MAX_DERIVATIVE_NODES`` nodes, or under abs/min/max
nested more than ``MAX_KINK_NESTING`` deep, is not built (Newton then differentiates
numerically). :func:`jacobian` applies the same rule to several expressions and unknowns.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

import sympy as sp
from sympy.codegen.cfunctions import log2 as _sp_log2
from sympy.codegen.cfunctions import log10 as _sp_log10

from solvers.equation.parser import _is_bad

MAX_DERIVATIVE_NODES = 5_000  # larger symbolic derivatives are not compiled (numerical f')
MAX_KINK_NESTING = 8  # deeper abs/min/max nesting: no symbolic derivative (sympy is too slow)

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
    sp.erf: lambda u: 2 / sp.sqrt(sp.pi) * sp.exp(-(u**2)),
    sp.erfc: lambda u: -2 / sp.sqrt(sp.pi) * sp.exp(-(u**2)),
}

# d C_n(u) / du for the Bessel functions of orders 0 and 1 the parser builds (Abramowitz &
# Stegun 9.1.27-28 and 9.6.26-27; DLMF 10.6.2, 10.29.2): J0' = -J1, J1' = J0 - J1/u, the
# same for Y; I0' = I1, I1' = I0 - I1/u; K0' = -K1, K1' = -K0 - K1/u.
_BESSEL_DERIVATIVES: dict[Any, Callable[[Any, Any], Any]] = {
    sp.besselj: lambda n, u: (-sp.besselj(1, u) if n == 0
                              else sp.besselj(0, u) - sp.besselj(1, u) / u),
    sp.bessely: lambda n, u: (-sp.bessely(1, u) if n == 0
                              else sp.bessely(0, u) - sp.bessely(1, u) / u),
    sp.besseli: lambda n, u: (sp.besseli(1, u) if n == 0
                              else sp.besseli(0, u) - sp.besseli(1, u) / u),
    sp.besselk: lambda n, u: (-sp.besselk(1, u) if n == 0
                              else -sp.besselk(0, u) - sp.besselk(1, u) / u),
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
        elif e.func in _BESSEL_DERIVATIVES and e.args[0] in (0, 1):
            n, u = e.args
            out = _BESSEL_DERIVATIVES[e.func](n, u) * d(u)
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


def _unusable(derivative: Any) -> str | None:
    if _node_count(derivative, MAX_DERIVATIVE_NODES) > MAX_DERIVATIVE_NODES:
        return "too_large"
    if derivative.has(sp.Derivative, sp.Subs):
        return "unevaluated"
    if _is_bad(derivative):
        return "not_finite"
    return None


def derivative(expr: Any, x: Any) -> tuple[Any, str | None]:
    """(d expr/dx, None), or (None, code) when no usable symbolic derivative exists.

    Codes: "too_large" (more than MAX_DERIVATIVE_NODES terms), "kinks_nested" (abs/min/max
    nested more than MAX_KINK_NESTING deep), "unevaluated", "not_finite", "too_deep"
    (recursion), "not_handled" (a node the chain rule does not know). Never raises.
    """
    try:
        if _derivative_size(expr, x) > 2 * MAX_DERIVATIVE_NODES:
            return None, "too_large"
        if _kink_depth(expr) > MAX_KINK_NESTING:
            return None, "kinks_nested"
        d = _differentiate(expr, x)
    except RecursionError:
        return None, "too_deep"
    except _NoDerivative:
        return None, "not_handled"
    why = _unusable(d)
    return (None, why) if why else (d, None)


def jacobian(exprs: Sequence[Any], unknowns: Sequence[Any]) -> list[list[Any]] | None:
    """d exprs[i] / d unknowns[j] by the same chain rule; None if any entry is unusable."""
    rows = []
    for e in exprs:
        row = []
        for x in unknowns:
            d, why = derivative(e, x)
            if why:
                return None
            row.append(d)
        rows.append(row)
    return rows
