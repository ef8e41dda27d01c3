"""The functions an equation may call: arity, sympy builder and double-precision value.

The real-valued helpers here are shared by the parser (folding constant parts) and by
the compiled scalar and vector code, so both paths agree, signed zeros included.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
import sympy as sp
from sympy.codegen.cfunctions import log2 as _sp_log2
from sympy.codegen.cfunctions import log10 as _sp_log10

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


def _special(name: str) -> Callable[..., float]:
    """The double-precision value of a scipy.special function (the same ufunc the compiled
    code calls, so folded constants and both evaluation paths agree to the bit); a value
    that is not finite (K0 at 0, Y1 below 0) raises, as the math functions do."""

    def value(*args: float) -> float:
        import scipy.special

        result = float(getattr(scipy.special, name)(*args))
        if not math.isfinite(result):
            raise ValueError(f"{name}{args} is not finite")
        return result

    return value


def _bessel(kind: Any, order: int) -> Callable[[Any], Any]:
    def build(x: Any) -> Any:
        return kind(order, x)

    return build


# Bessel functions of the first and second kinds and their modified forms, of orders 0
# and 1 (cylindrical conduction eigenvalues, fins, circular membranes and plates): the
# scipy.special ufuncs jv, yv, iv, kv take the order as their first argument.
_BESSEL = {"J": (sp.besselj, "jv"), "Y": (sp.bessely, "yv"), "I": (sp.besseli, "iv"),
           "K": (sp.besselk, "kv")}
# sympy's class of each kind -> the scipy.special ufunc the compiled code calls
SPECIAL_UFUNCS: dict[str, str] = {"erf": "erf", "erfc": "erfc", "besselj": "jv",
                                  "bessely": "yv", "besseli": "iv", "besselk": "kv"}


def _bessel_value(ufunc: str, order: int) -> Callable[[float], float]:
    value = _special(ufunc)
    return lambda x: value(float(order), x)


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
    "erf": _Function(1, 1, sp.erf, _special("erf")),
    "erfc": _Function(1, 1, sp.erfc, _special("erfc")),
    **{f"{letter}{order}": _Function(1, 1, _bessel(kind, order), _bessel_value(ufunc, order))
       for letter, (kind, ufunc) in _BESSEL.items() for order in (0, 1)},
}

