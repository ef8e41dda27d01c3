"""The independent high-precision residual f(root): a number, or a code saying why not.

A method's own residual is f evaluated in double precision by the same compiled
function it iterated with. The calculation sheet checks each root again with the
equation evaluated by mpmath at ``digits`` significant digits, independently of that
compiled code. That evaluation is asked of arbitrary user equations, so it must never
raise and never hang: a nested exponential such as ``exp(-cosh(sinh(cosh(sinh(5x)))))``
asks mpmath for an argument with more digits than memory holds (MemoryError,
OverflowError "too many digits"), a function mpmath lacks raises TypeError or
AttributeError, and a merely enormous working precision can take minutes. All of these
become a code; the caller (the report) turns codes into words.

Codes (:data:`CODES`)
---------------------
``computed``
    ``value`` holds f(x) as an ``mpmath.mpf`` with ``digits`` significant digits.
``no_finite_root``
    x is NaN or infinite: there is nothing to evaluate.
``not_real``
    f(x) is not a real number at x (NaN from mpmath: outside the domain, or complex).
``infinite``
    f(x) is infinite at x (a pole).
``overflow``
    |f(x)| is finite but beyond the double range (above ~1.8e308): no root of the
    double-precision equation is there. Such a number (exp(exp(exp(10))) has ten
    thousand digits in its exponent) would take minutes to write out, so it is not
    returned.
``not_computable``
    mpmath could not evaluate f at x (an error, memory or precision exhausted).
``time_budget``
    the evaluation took longer than ``budget`` seconds and was abandoned.

``value`` is None for every code but ``computed``.
"""

from __future__ import annotations

import math
import sys
import time
from collections.abc import Callable
from dataclasses import dataclass
from types import FrameType
from typing import TYPE_CHECKING, Protocol, TypeVar

if TYPE_CHECKING:
    from mpmath import mpf

__all__ = ["CODES", "DEFAULT_BUDGET", "DEFAULT_DIGITS", "HighPrecision", "Residual", "residual_mp"]

COMPUTED = "computed"
NO_FINITE_ROOT = "no_finite_root"
NOT_REAL = "not_real"
INFINITE = "infinite"
OVERFLOW = "overflow"
NOT_COMPUTABLE = "not_computable"
TIME_BUDGET = "time_budget"
CODES: tuple[str, ...] = (COMPUTED, NO_FINITE_ROOT, NOT_REAL, INFINITE, OVERFLOW,
                          NOT_COMPUTABLE, TIME_BUDGET)

DEFAULT_DIGITS = 50
# Seconds for one residual. A sane equation takes well under a millisecond at 50
# digits; a report evaluates one residual per method, so a hostile equation costs at
# most a few seconds in all.
DEFAULT_BUDGET = 2.0


# 2**1024 is just above the largest double.
_DOUBLE_RANGE_BITS = 1024


@dataclass(frozen=True)
class Residual:
    """f(x) at high precision (``value``, an ``mpmath.mpf``) or None, with a code."""

    value: mpf | None
    code: str


class HighPrecision(Protocol):
    """What :func:`residual_mp` evaluates: :class:`solvers.equation.Equation` is one."""

    def residual_mp(self, x: float, *, dps: int) -> mpf: ...


_T = TypeVar("_T")


class _OverBudget(Exception):
    """Raised inside the evaluation when its time is up."""


def residual_mp(
    equation: HighPrecision,
    x: float,
    *,
    digits: int = DEFAULT_DIGITS,
    budget: float = DEFAULT_BUDGET,
) -> Residual:
    """f(x) with ``digits`` significant digits by ``equation.residual_mp``; never raises.

    Parameters
    ----------
    equation
        an object with ``residual_mp(x, dps=digits)`` returning an ``mpmath.mpf``
        (:class:`solvers.equation.Equation`); anything else gives ``not_computable``.
    x
        the point, in the units of the unknown (a root found in double precision).
    digits
        working precision in significant decimal digits.
    budget
        seconds allowed. The time is checked at every Python function call of the
        evaluation (mpmath is written in Python), so an evaluation is abandoned within
        about one big-integer operation after the budget; the ones that outgrow memory
        fail at once with MemoryError or OverflowError and give ``not_computable``.

    Returns
    -------
    Residual
        ``value`` and ``code`` (see the module notes); never an exception, for any
        equation or x (KeyboardInterrupt and SystemExit still pass).
    """
    try:
        point = float(x)
    except (TypeError, ValueError, OverflowError):
        return Residual(None, NO_FINITE_ROOT)
    if not math.isfinite(point):
        return Residual(None, NO_FINITE_ROOT)
    try:
        value = _within_budget(lambda: equation.residual_mp(point, dps=digits), budget)
    except _OverBudget:
        return Residual(None, TIME_BUDGET)
    except (Exception, RecursionError, MemoryError):  # noqa: BLE001 - any failure is a code
        return Residual(None, NOT_COMPUTABLE)
    return _classify(value, digits)


def _classify(value: object, digits: int) -> Residual:
    import mpmath

    try:
        with mpmath.workdps(digits):
            number = mpmath.mpf(value)
            if mpmath.isnan(number):
                return Residual(None, NOT_REAL)
            if mpmath.isinf(number):
                return Residual(None, INFINITE)
            if number != 0 and mpmath.mag(number) > _DOUBLE_RANGE_BITS:
                return Residual(None, OVERFLOW)
            return Residual(+number, COMPUTED)
    except Exception:  # noqa: BLE001 - a complex or foreign object: not a real number
        return Residual(None, NOT_REAL)


def _within_budget(evaluate: Callable[[], _T], budget: float) -> _T:
    """Call ``evaluate()``, raising _OverBudget at a function call after ``budget`` s.

    A call-event trace function (no per-line tracing, so the cost is small) on this
    thread only; whatever tracer was set before (a debugger, coverage) is put back.
    """
    deadline = time.monotonic() + max(0.0, float(budget))
    previous = sys.gettrace()

    def tracer(frame: FrameType, event: str, arg: object) -> None:
        if event == "call" and time.monotonic() > deadline:
            raise _OverBudget
        return None

    sys.settrace(tracer)
    try:
        return evaluate()
    finally:
        sys.settrace(previous)
