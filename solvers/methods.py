"""Root-finding methods over plain callables, each returning one :class:`~solvers.result.Run`.

Every method takes ``f(x) -> float`` (numpy floats and 0-d arrays are accepted and
converted with ``float``), records every iterate as a :class:`~solvers.result.Step`
and counts every call of f (and of f' for Newton) in ``Run.evaluations``.

Tolerances (keywords, the same for every method)
------------------------------------------------
``xtol``
    absolute step tolerance, in the units of x.
``rtol``
    relative step tolerance: the step test is ``|dx| <= xtol + rtol*|x|``.
``ftol``
    absolute residual tolerance, in the units of f: ``|f(x)| <= ftol`` stops.
``max_iter``
    the most iterates a method may produce (starting points not counted).

What "step" means:

* Newton and secant: ``dx = x_k - x_{k-1}``, the step just taken.
* Bisection and Brent: the width of the bracket held, ``hi - lo``, tested against
  ``xtol + rtol*|x|`` with x the bracket end of smaller ``|f|`` (the root returned).
* Illinois: the bracket width as above (the Illinois rule moves both ends, so the
  bracket shrinks to the root).
* False position (plain regula falsi) usually keeps one end fixed, so its bracket does
  not shrink to zero. It converges linearly with some ratio c, leaving an error of
  about ``c/(1-c)`` times the last step, so it estimates the error from the steps
  between successive interpolated iterates (never a starting end):
  ``|x_k - x_{k-1}| * max(1, c/(1-c)) <= xtol + rtol*|x_k|`` with
  ``c = max(c_k, c_{k-1})``, ``c_k = |x_k - x_{k-1}| / |x_{k-1} - x_{k-2}|``, and only
  while c < 1. An estimate is no proof (a noisy f fools it), so when it is met the
  next iterate is a check half a tolerance from x_k towards the other end: a sign
  change there closes the bracket below tolerance (the stop is then the bracket
  width, as for the other bracketing methods); none moves that end on and the chords
  go on. The observed order (``Run.order`` ~ 1) shows the linear convergence.
* False position and Illinois: when rounding puts the chord's zero on (or outside) a
  bracket end, which happens beside a pole or a steep exponential where one end's
  |f| is enormous, the iterate is the bracket midpoint instead (recorded in the
  run's note), so the method cannot stall; the chord-step history then starts again.

Stop order after each new iterate: non-finite f -> ``not_finite``; ``f == 0`` ->
``exact_zero``; ``|f| <= ftol`` -> ``f_tolerance``; step test -> ``x_tolerance``;
``max_iter`` iterates produced -> ``max_iterations``.

A converged run ends at a root, never at a value that merely looks like one:

* ``f(x) == 0.0`` is an exact zero only where f did not underflow. A sum of terms
  below ~1e-308 is 0.0 too (exp(-x) - 2*exp(-2*x) at x = 800; its root is ln 2), and
  then f is 0.0 beside x as well, over a stretch far wider than any tolerance. So
  f is evaluated at x +- tol (one side for a bracketing method, whose ends often show
  f to be far above underflow near x at no cost at all). An underflowed zero stops an
  open method, and a bracketing one inside its bracket, with ``not_finite`` (recorded in
  the run's detail); a starting bracket end that underflowed is kept as an end of the sign
  opposite to the other end's, since the sign change lies between them.
* A bracket that closes on a sign change with |f| not falling towards 0 is a jump
  (``x/abs(x) + x`` at 0), reported as ``discontinuity`` with converged False, or a
  pole (|f| growing as it closes), reported as ``not_finite``. The check costs no call
  when the points already evaluated show |f| falling at least as the square root of
  the distance, else two at most (f 2**20 bracket widths out).

Defaults, chosen for engineering work
-------------------------------------
``DEFAULT_XTOL = 1e-12`` and ``DEFAULT_RTOL = 4*eps``: the relative term dominates for
|x| > ~1e3, the absolute term below. Newton and the secant, whose last step is far
smaller than the tolerance, end at full double precision for any root; the bracketing
methods stop when the bracket is within the tolerance, so a root of order one gets
about 12 correct digits and a root near 0.02 (a friction factor) about 10 from them.
Tighten xtol for small roots. ``DEFAULT_FTOL = 0.0`` switches the residual
test off, because the scale of f is the user's (a residual of 1e-6 is tiny in pascals
and huge in megapascals). ``DEFAULT_MAX_ITER = 100`` is far more than a converging
method needs (bisection from a bracket 1e15 times the tolerance needs 50) and small
enough that a failing run stops at once.

Failure behaviour
-----------------
No method raises because of f. An exception from f (ValueError, ZeroDivisionError,
OverflowError, ...), a NaN or infinite value, a complex value or an infinite x stops
the run with reason ``not_finite``; a zero derivative (Newton) or zero secant slope,
or a step that overflows because the derivative is vanishingly small, gives
``zero_derivative``; bracket ends of the same sign give ``no_sign_change``. Such a
run has ``converged`` False and its ``root`` is, for inspection only, the last
iterate with finite x and f(x) (for ``no_sign_change``: the end with smaller |f|).
numpy floating-point warnings are suppressed inside every method.
Invalid *settings* (negative tolerances, damping outside (0, 1], a non-integer
``max_iter``) are the caller's error and raise ``ValueError``.
"""

from __future__ import annotations

import functools
import math
import operator
import sys
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from solvers.result import (
    CONVERGED_REASONS,
    DISCONTINUITY,
    EXACT_ZERO,
    F_TOLERANCE,
    MAX_ITERATIONS,
    NO_SIGN_CHANGE,
    NOT_FINITE,
    X_TOLERANCE,
    ZERO_DERIVATIVE,
    Detail,
    Run,
    Step,
)

__all__ = [
    "DEFAULT_FTOL",
    "DEFAULT_MAX_ITER",
    "DEFAULT_RTOL",
    "DEFAULT_XTOL",
    "METHODS",
    "MethodSpec",
    "bisection",
    "brent",
    "false_position",
    "illinois",
    "newton",
    "run_method",
    "secant",
]

EPS = sys.float_info.epsilon
DEFAULT_XTOL = 1e-12
DEFAULT_RTOL = 4 * EPS
DEFAULT_FTOL = 0.0
DEFAULT_MAX_ITER = 100

# Central-difference step h = eps**(1/3) * max(|x|, s): eps**(1/3) balances the
# O(h^2) truncation error against the O(eps/h) rounding error (the factor scipy's
# approx_derivative uses for its 3-point rule). The step is relative to x because
# the truncation error of power laws, logarithms and square roots scales with x (an
# SI molar volume of 1e-4 m3/mol needs h ~ 1e-9, not 6e-6), floored at s = |x0|/1000
# (s = 1 when x0 = 0) so that iterates approaching a root at zero keep a usable step.
DERIVATIVE_STEP = EPS ** (1.0 / 3.0)
DERIVATIVE_FLOOR = 1e-3

Function = Callable[[float], Any]

# --------------------------------------------------------------------------- helpers


class _Evaluator:
    """Calls f, counts the calls and turns every misbehaviour into NaN with a note.

    ``fault`` holds a :class:`Detail` of the last call's failure (an exception or a
    complex value), or None when the call returned a real number.
    """

    __slots__ = ("f", "calls", "fault", "name")

    def __init__(self, f: Function, name: str = "f") -> None:
        self.f = f
        self.calls = 0
        self.fault: Detail | None = None
        self.name = name

    def __call__(self, x: float) -> float:
        self.calls += 1
        self.fault = None
        try:
            y = self.f(x)
        except Exception as exc:  # f is the user's: any failure is a result, not a crash
            self.fault = Detail("raised", (self.name, type(exc).__name__, x))
            return math.nan
        if type(y) is float:
            return y
        return self._convert(y, x)

    def _convert(self, y: Any, x: float) -> float:
        try:
            if isinstance(y, (float, int, np.floating, np.integer)):
                return float(y)  # an int too large for a double raises OverflowError
            arr = np.asarray(y)
            if arr.size != 1:
                self.fault = Detail("many_values", (self.name, int(arr.size), x))
                return math.nan
            value = arr.reshape(()).item()
            if isinstance(value, complex):
                if value.imag != 0.0:
                    self.fault = Detail("complex", (self.name, value.real, value.imag, x))
                    return math.nan
                return float(value.real)
            if isinstance(value, (float, int)):
                return float(value)
        except Exception as exc:
            self.fault = Detail("unusable", (self.name, type(exc).__name__, x))
            return math.nan
        self.fault = Detail("not_a_number", (self.name, type(y).__name__, x))
        return math.nan


def _check_settings(xtol: float, rtol: float, ftol: float, max_iter: int) -> dict[str, Any]:
    """Validate the stopping rules; a bad setting is the caller's error (ValueError)."""
    values = {"xtol": xtol, "rtol": rtol, "ftol": ftol}
    checked: dict[str, Any] = {}
    for name, value in values.items():
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise ValueError(f"{name} must be a number, got {value!r}") from None
        if not (number >= 0.0) or math.isinf(number):
            raise ValueError(f"{name} must be finite and >= 0, got {value!r}")
        checked[name] = number
    if isinstance(max_iter, bool):
        raise ValueError(f"max_iter must be a whole number >= 0, got {max_iter!r}")
    try:
        cap = operator.index(max_iter)
    except TypeError:
        if isinstance(max_iter, float) and max_iter.is_integer():
            cap = int(max_iter)
        else:
            raise ValueError(f"max_iter must be a whole number >= 0, got {max_iter!r}") from None
    if cap < 0:
        raise ValueError(f"max_iter must be a whole number >= 0, got {max_iter!r}")
    checked["max_iter"] = cap
    return checked


def _start_value(value: Any, name: str) -> float:
    """A start value as a float; NaN and infinities pass (the run records them)."""
    try:
        return float(value)
    except (TypeError, ValueError, OverflowError):
        raise ValueError(f"{name} must be a number, got {value!r}") from None


def _quiet(method: Callable[..., Run]) -> Callable[..., Run]:
    """Run a method with numpy's floating-point warnings switched off (they become results)."""

    @functools.wraps(method)
    def wrapper(*args: Any, **kwargs: Any) -> Run:
        with np.errstate(all="ignore"):
            return method(*args, **kwargs)

    return wrapper


def _finish(
    method: str,
    reason: str,
    root: float,
    steps: list[Step],
    iterations: int,
    evaluations: int,
    settings: dict[str, Any],
    detail: Detail | None = None,
    derivative: str | None = None,
    note: Detail | None = None,
) -> Run:
    if reason == X_TOLERANCE and "bracket" in settings:
        pole = _pole_detail(root, steps)
        if pole is not None:
            reason, detail = NOT_FINITE, pole
    return Run(
        method=method,
        root=float(root),
        converged=reason in CONVERGED_REASONS,
        reason=reason,
        iterations=iterations,
        evaluations=evaluations,
        steps=steps,
        settings=settings,
        derivative=derivative,
        detail=detail,
        note=note,
    )


def _pole_detail(root: float, steps: list[Step]) -> Detail | None:
    """Why a bracket that closed on ``root`` holds a pole, not a root (None for a root).

    A continuous f that changes sign has |f| at the closed bracket's better end at most
    |f'| times the tolerance: far below |f| at the starting ends. If instead |f| there
    exceeds both starting ends, f grew without bound as the bracket shrank, so the sign
    change is a pole (tan at pi/2, 1/(x - c)); calling it a root would be wrong.
    """
    if len(steps) < 2:
        return None
    ends = max(abs(steps[0].fx), abs(steps[1].fx))
    at_root = next((abs(s.fx) for s in reversed(steps) if s.x == root), None)
    if at_root is None or not at_root > ends:
        return None
    return Detail("pole", (ends, at_root, root))


def _last_finite(steps: list[Step]) -> float:
    """The last iterate with finite x and f(x): the root reported by a failed run."""
    for step in reversed(steps):
        if math.isfinite(step.x) and math.isfinite(step.fx):
            return step.x
    return math.nan


def _not_finite_detail(ev: _Evaluator, x: float, fx: float) -> Detail:
    return ev.fault or Detail("f_value", (fx, x))


def _step_detail(what: str, size: float, xtol: float, rtol: float, x: float) -> Detail:
    """``what`` is "step" (|dx|) or "width" (a bracket's): the size and the tolerance."""
    return Detail(f"{what}_small", (size, xtol + rtol * abs(x)))


def _same_sign(u: float, v: float) -> bool:
    return (u > 0.0) == (v > 0.0)


# The smallest positive double: the size given to a bracket end or iterate whose f
# underflowed to 0 (see _zero_is_root), so that it keeps a sign without pretending
# to have a size.
_TINY = 5e-324


def _zero_is_root(ev: _Evaluator, x: float, tol: float, toward: float | None = None) -> bool:
    """Whether f(x) == 0.0 is a zero of f, not a value that underflowed to 0.

    A double 0.0 from f is also what a sum of terms below ~1e-308 gives (exp(-x) -
    2*exp(-2*x) is 0.0 at x = 800; its root is ln 2). From f alone the two differ in
    what f does beside x: at an isolated zero f is non-zero at x +- tol (a simple root
    changes sign there, a double root touches), while underflow leaves f exactly 0 over
    a stretch far wider than any tolerance. So f is evaluated at x + tol and x - tol
    (calls counted) and the zero counts as a root unless f is 0.0 at either. A NaN
    neighbour (x at the edge of f's domain, sqrt at 0) is no evidence either way, but
    one neighbour must be finite and non-zero. Both sides are needed: x can sit at the
    very edge of a stretch of underflow (f*1e-314 has one 4e-11 wide around its root),
    with one neighbour outside it.

    ``toward`` (a bracketing method's farther bracket end) is the side tried first: a
    method closing in on a stretch of underflow from inside it comes from that side, so
    that call usually settles it alone.
    """
    step = max(tol, 2.0 * math.ulp(x), sys.float_info.min)
    first = step if toward is None or toward >= x else -step
    finite = False
    for side in (x + first, x - first):
        value = ev(side)
        if value == 0.0:
            return False
        finite = finite or math.isfinite(value)
    return finite


def _zero_verdict(
    ev: _Evaluator, x: float, xtol: float, rtol: float
) -> tuple[str, Detail | None]:
    """(reason, detail) for f(x) == 0.0 in an open method: a root, or underflow."""
    if _zero_is_root(ev, x, xtol + rtol * abs(x)):
        return EXACT_ZERO, None
    return NOT_FINITE, Detail("underflow", (x,))


# Continuity check of a bracket that closed (see _closed_bracket_reason).
_PROBE_REACH = 2.0**20  # probes this many bracket widths out: still local to the root
_PROBE_GROWTH = 1.5  # |f| must grow at least this much there for a root


def _closed_bracket_reason(
    ev: _Evaluator,
    settings: dict[str, Any],
    lo: float,
    flo: float,
    hi: float,
    fhi: float,
    steps: list[Step],
    underflowed: set[float],
) -> tuple[str, Detail | None]:
    """Whether a bracket [lo, hi] that shrank below tolerance holds a root or a jump.

    Returns ``(X_TOLERANCE, None)`` for a root, ``(DISCONTINUITY, detail)`` for a jump
    and ``(NOT_FINITE, detail)`` when an end's value underflowed to 0 (f cannot tell
    where in the underflow the sign changes). A pole is left to :func:`_pole_detail`
    (its |f| grows as the bracket closes).

    Near a root f shrinks with the distance: |f| ~ C*d**p, for a power p > 0. Beside a
    jump |f| stays at the height of the jump however small the bracket. So, with
    ``near`` the smaller |f| at the closed ends and ``w`` the width:

    1. at no cost, the points already evaluated: if one at distance d >= 2w from the
       closed bracket has ``near <= |f| * sqrt(w/d)``, |f| fell at least as fast as the
       square root of the distance (p >= 1/2), and the bracket holds a root. Beside a
       jump of height J with slope s this needs (J + s*d)*sqrt(w/d) >= J: d >= J**2/(s**2*w),
       beyond any point for a jump that stands out of the slope over the tolerance.
    2. otherwise f is evaluated ``2**20`` widths out (inside the starting bracket), one
       side and then the other: if |f| grew there by 1.5 or more (any p >= 0.03, so even
       x**(1/19) passes) the bracket holds a root; if it did not on either side, a jump
       (``discontinuity``).
    """
    for x in (lo, hi):
        if x in underflowed:
            return NOT_FINITE, Detail("underflow_stretch", (x,))
    if _pole_detail(lo if abs(flo) <= abs(fhi) else hi, steps):
        return X_TOLERANCE, None  # _finish reports the pole
    near = min(abs(flo), abs(fhi))
    width = hi - lo
    for step in steps:
        distance = max(lo - step.x, step.x - hi)
        if distance >= 2.0 * width and math.isfinite(step.fx) and step.x not in underflowed:
            if near <= abs(step.fx) * math.sqrt(width / distance):
                return X_TOLERANCE, None
    a, b = sorted(settings["bracket"])
    reach = _PROBE_REACH * width
    for end, fend, probe in ((lo, flo, max(a, lo - reach)), (hi, fhi, min(b, hi + reach))):
        if probe == end:
            continue
        fprobe = ev(probe)
        if math.isfinite(fprobe) and fprobe != 0.0 and _same_sign(fprobe, fend):
            if abs(fprobe) >= _PROBE_GROWTH * abs(fend):
                return X_TOLERANCE, None
    return DISCONTINUITY, Detail("jump", (flo, fhi, lo, hi, width, reach))


# --------------------------------------------------------------------------- open methods


def _central_difference(ev: _Evaluator, x: float, fx: float, scale: float) -> float:
    """f'(x) by a central difference, shrinking the step near the edge of f's domain.

    Step h = eps**(1/3)*max(|x|, scale). If f is not finite on one side (x near the edge
    of its domain, e.g. sqrt near 0), a central difference with h/1000 is tried (its
    rounding error, ~1e-8 relative, is still small); failing that, the one-sided
    difference at the first h that had a finite side (smaller steps would be swamped
    by rounding). Returns NaN when no usable difference exists. Every call of f
    counts in ``ev.calls``.
    """
    h = DERIVATIVE_STEP * max(abs(x), scale)
    one_sided = math.nan
    for _ in range(2):
        xp = x + h
        xm = x - h
        fp = ev(xp)
        fm = ev(xm)
        fp_ok = math.isfinite(fp)
        fm_ok = math.isfinite(fm)
        if fp_ok and fm_ok:
            return (fp - fm) / (xp - xm)
        if math.isnan(one_sided):
            if fp_ok:
                one_sided = (fp - fx) / (xp - x)
            elif fm_ok:
                one_sided = (fx - fm) / (x - xm)
        h *= 1e-3
    return one_sided


@_quiet
def newton(
    f: Function,
    x0: float,
    *,
    fprime: Function | None = None,
    damping: float = 1.0,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
    derivative_source: str | None = None,
) -> Run:
    """Newton-Raphson from x0: ``x_{k+1} = x_k - damping * f(x_k)/f'(x_k)``.

    ``fprime=None`` uses a central-difference derivative and records
    ``run.derivative = "numerical"``: step h = eps**(1/3)*max(|x|, s) with
    s = |x0|/1000 (1 when x0 = 0), two extra f calls per iterate (more near the edge
    of f's domain, where h shrinks), all counted in ``evaluations``. A supplied
    ``fprime`` is recorded as ``derivative_source`` ("symbolic" or "supplied",
    default "supplied"); without ``fprime`` the record says "numerical" regardless.
    ``damping`` (0 < damping <= 1) shortens every step; below 1 the convergence is
    linear. Stops on the step just taken, ``|dx| <= xtol + rtol*|x|``; f is always
    evaluated at the returned root, so its residual is on record. A zero derivative,
    or one so small that the step overflows, stops with ``zero_derivative``. The
    final Step has ``dfx`` None: no derivative was needed there.
    """
    tol = _check_settings(xtol, rtol, ftol, max_iter)
    try:
        damping = float(damping)
    except (TypeError, ValueError):
        raise ValueError(f"damping must be a number in (0, 1], got {damping!r}") from None
    if not (0.0 < damping <= 1.0):
        raise ValueError(f"damping must be in (0, 1], got {damping!r}")
    if fprime is None:
        source = "numerical"  # whatever a caller hoped for, this is what is used
    else:
        source = derivative_source or "supplied"
        if source not in ("symbolic", "supplied", "numerical"):
            raise ValueError(
                f"derivative_source must be 'symbolic', 'supplied' or 'numerical', "
                f"got {derivative_source!r}"
            )
    x = _start_value(x0, "x0")
    settings = dict(tol, damping=damping, x0=x, derivative=source)
    if fprime is None:
        settings["derivative_step"] = "central difference, h = eps**(1/3)*max(|x|, s)"

    ev = _Evaluator(f)
    dev = _Evaluator(fprime, "f'") if fprime is not None else None
    xtol_, rtol_, ftol_, cap = tol["xtol"], tol["rtol"], tol["ftol"], tol["max_iter"]
    steps: list[Step] = []

    def done(reason: str, root: float, k: int, detail: Detail | None = None) -> Run:
        evaluations = ev.calls + (dev.calls if dev is not None else 0)
        return _finish("newton", reason, root, steps, k, evaluations, settings, detail, source)

    if not math.isfinite(x):
        return done(NOT_FINITE, math.nan, 0, Detail("start_not_finite", ("x0", x)))
    scale = DERIVATIVE_FLOOR * abs(x) if x != 0.0 else 1.0  # floor of the difference step
    fx = ev(x)
    k = 0
    dx: float | None = None
    while True:
        if not math.isfinite(fx):
            steps.append(Step(k, x, fx, None, dx))
            return done(NOT_FINITE, _last_finite(steps), k, _not_finite_detail(ev, x, fx))
        if fx == 0.0:
            steps.append(Step(k, x, fx, None, dx))
            reason, detail = _zero_verdict(ev, x, xtol_, rtol_)
            return done(reason, x, k, detail)
        if abs(fx) <= ftol_:
            steps.append(Step(k, x, fx, None, dx))
            return done(F_TOLERANCE, x, k)
        if dx is not None and abs(dx) <= xtol_ + rtol_ * abs(x):
            steps.append(Step(k, x, fx, None, dx))
            return done(X_TOLERANCE, x, k, _step_detail("step", abs(dx), xtol_, rtol_, x))
        if k >= cap:
            steps.append(Step(k, x, fx, None, dx))
            return done(MAX_ITERATIONS, x, k)
        dfx = _central_difference(ev, x, fx, scale) if dev is None else dev(x)
        steps.append(Step(k, x, fx, dfx, dx))
        if not math.isfinite(dfx):
            fault = (dev.fault if dev is not None else None) or (
                Detail("derivative_value", (dfx, x))
            )
            return done(NOT_FINITE, x, k, fault)
        if dfx == 0.0:
            return done(ZERO_DERIVATIVE, x, k, Detail("derivative_zero", (x,)))
        step = -damping * fx / dfx
        x_new = x + step
        if not math.isfinite(x_new):
            if not math.isfinite(step):
                return done(ZERO_DERIVATIVE, x, k, Detail("derivative_tiny", (dfx, x)))
            return done(NOT_FINITE, x, k, Detail("step_overflows", (x,)))
        dx = x_new - x
        x = x_new
        fx = ev(x)
        k += 1


@_quiet
def secant(
    f: Function,
    x0: float,
    x1: float,
    *,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
) -> Run:
    """Secant method from x0, x1: Newton's step with the slope through the last two iterates.

    Both starting points are recorded as steps (k = 0, 1, ``dx`` None). Stops on
    the step just taken, ``|dx| <= xtol + rtol*|x|``. Equal f at the last two points
    (zero slope, including x0 == x1) or a step that overflows gives
    ``zero_derivative``. Converges with order ~1.62 on a simple root, without a bracket
    (it may leave the region of interest).
    """
    tol = _check_settings(xtol, rtol, ftol, max_iter)
    xa, xb = _start_value(x0, "x0"), _start_value(x1, "x1")
    settings = dict(tol, x0=xa, x1=xb)
    xtol_, rtol_, ftol_, cap = tol["xtol"], tol["rtol"], tol["ftol"], tol["max_iter"]
    ev = _Evaluator(f)
    steps: list[Step] = []

    def done(reason: str, root: float, k: int, detail: Detail | None = None) -> Run:
        return _finish("secant", reason, root, steps, k, ev.calls, settings, detail)

    for x in (xa, xb):
        if not math.isfinite(x):
            return done(NOT_FINITE, math.nan, 0, Detail("start_not_finite", ("", x)))
    # Starting points: a zero or small residual at either ends the run there.
    fa = ev(xa)
    steps.append(Step(0, xa, fa))
    if not math.isfinite(fa):
        return done(NOT_FINITE, math.nan, 0, _not_finite_detail(ev, xa, fa))
    if fa == 0.0:
        reason, detail = _zero_verdict(ev, xa, xtol_, rtol_)
        return done(reason, xa, 0, detail)
    if abs(fa) <= ftol_:
        return done(F_TOLERANCE, xa, 0)
    fb = ev(xb)
    steps.append(Step(1, xb, fb))
    if not math.isfinite(fb):
        return done(NOT_FINITE, xa, 0, _not_finite_detail(ev, xb, fb))
    if fb == 0.0:
        reason, detail = _zero_verdict(ev, xb, xtol_, rtol_)
        return done(reason, xb, 0, detail)
    if abs(fb) <= ftol_:
        return done(F_TOLERANCE, xb, 0)

    iterations = 0
    while True:
        if iterations >= cap:
            return done(MAX_ITERATIONS, xb, iterations)
        if fb == fa:
            return done(ZERO_DERIVATIVE, xb, iterations, Detail("secant_flat", (xa, xb)))
        difference = fb - fa
        # fb/(fb - fa) without overflow when f values of opposite signs are huge
        fraction = 1.0 / (1.0 - fa / fb) if math.isinf(difference) else fb / difference
        step = -fraction * (xb - xa)
        x = xb + step
        if not math.isfinite(x):
            reason = ZERO_DERIVATIVE if not math.isfinite(step) else NOT_FINITE
            return done(reason, xb, iterations, Detail("secant_overflows", (xb,)))
        fx = ev(x)
        iterations += 1
        dx = x - xb
        steps.append(Step(iterations + 1, x, fx, None, dx))
        if not math.isfinite(fx):
            return done(NOT_FINITE, _last_finite(steps), iterations, _not_finite_detail(ev, x, fx))
        if fx == 0.0:
            reason, detail = _zero_verdict(ev, x, xtol_, rtol_)
            return done(reason, x, iterations, detail)
        if abs(fx) <= ftol_:
            return done(F_TOLERANCE, x, iterations)
        if abs(dx) <= xtol_ + rtol_ * abs(x):
            detail = _step_detail("step", abs(dx), xtol_, rtol_, x)
            return done(X_TOLERANCE, x, iterations, detail)
        xa, fa, xb, fb = xb, fb, x, fx


# --------------------------------------------------------------------------- bracketing


@dataclass
class _Bracket:
    """Mutable bracket state shared by the bracketing methods' start-up code."""

    a: float
    fa: float
    b: float
    fb: float
    underflowed: set[float] = field(default_factory=set)


def _start_bracket(
    method: str, ev: _Evaluator, settings: dict[str, Any], steps: list[Step]
) -> Run | _Bracket:
    """Evaluate both ends of ``settings["bracket"]``; return a finished Run if they settle it.

    Both ends are recorded (k = 0, 1, ``dx`` None) with ``lo``/``hi`` the bracket as
    given when it holds a sign change (or an exact zero), else None. An end where f
    underflowed to 0.0 (see :func:`_zero_is_root`) is no root: it goes on as an end of
    the sign opposite to the other end's, with size ``_TINY`` (its Step keeps 0.0), and
    is listed in ``underflowed``.
    """

    def done(reason: str, root: float, detail: Detail | None = None) -> Run:
        return _finish(method, reason, root, steps, 0, ev.calls, settings, detail)

    a, b = settings["bracket"]
    for x in (a, b):
        if not math.isfinite(x):
            return done(NOT_FINITE, math.nan, Detail("end_not_finite", (x,)))
    fa = ev(a)
    fault_a = ev.fault
    fb = ev(b)
    lo, hi = min(a, b), max(a, b)
    finite = math.isfinite(fa) and math.isfinite(fb)
    holds = finite and (fa == 0.0 or fb == 0.0 or not _same_sign(fa, fb))
    steps.append(Step(0, a, fa, None, None, lo if holds else None, hi if holds else None))
    steps.append(Step(1, b, fb, None, None, lo if holds else None, hi if holds else None))
    if not math.isfinite(fa):
        return done(NOT_FINITE, _last_finite(steps), fault_a or Detail("f_value", (fa, a)))
    if not math.isfinite(fb):
        return done(NOT_FINITE, _last_finite(steps), _not_finite_detail(ev, b, fb))
    tolerance = settings["xtol"], settings["rtol"]
    underflowed: set[float] = set()
    for x, fx in ((a, fa), (b, fb)):
        if fx == 0.0:
            if _zero_is_root(ev, x, tolerance[0] + tolerance[1] * abs(x)):
                return done(EXACT_ZERO, x)
            underflowed.add(x)
    if len(underflowed) == 2 or a == b and underflowed:
        return done(NOT_FINITE, a, Detail("underflow_ends", (a,)))
    if a in underflowed:
        fa = -math.copysign(_TINY, fb)
    if b in underflowed:
        fb = -math.copysign(_TINY, fa)
    better = a if abs(fa) <= abs(fb) else b
    if min(abs(fa), abs(fb)) <= settings["ftol"]:
        return done(F_TOLERANCE, better)
    if _same_sign(fa, fb):
        return done(NO_SIGN_CHANGE, better, Detail("same_sign", (a, fa, b, fb)))
    return _Bracket(a, fa, b, fb, underflowed)


def _iterate_zero(
    ev: _Evaluator,
    x: float,
    tol: float,
    ends: tuple[tuple[float, float], tuple[float, float]],
    underflowed: set[float],
) -> float | None:
    """What f(x) == 0.0 at an iterate x between bracket ends (x1, f1), (x2, f2) means.

    Returns None when it is a root (exact zero). When a bracket end underflowed too
    (a starting end beyond which f decays to 0, as exp(-x) - 2*exp(-2*x) at 800), x
    lies in the same stretch of underflow: it takes that end's sign and is returned
    as ``+-_TINY`` (x is added to ``underflowed``), at no call. Otherwise f is
    checked beside x (:func:`_zero_is_root`, the farther end's side first) and a
    zero that is only underflow returns NaN: a stretch of zeros inside a bracket with
    real values at both ends hides on which side of x the sign change lies, so the
    method stops there (``not_finite``) instead of guessing.

    No call is spent either when the ends already show f to be far above underflow
    near x: with x between ends of opposite sign, the chord through the ends crossing
    zero within 1/16 of the bracket from x, the slopes |f(end)|/|end - x| from both
    ends within a factor 1024 of the chord's (f close to a straight line through x,
    with no drop of hundreds of orders of magnitude towards x as exp(-1/x**2) has),
    and that slope times ``tol`` at least 1024 times the smallest normal double (a
    stretch of underflow around a root there is far narrower than ``tol``).
    """
    (x1, f1), (x2, f2) = ends
    for end, value in ((x1, f1), (x2, f2)):
        if end in underflowed:
            underflowed.add(x)
            return math.copysign(_TINY, value)
    if _straight_through(x, x1, f1, x2, f2, tol):
        return None
    far = x2 if abs(x - x1) <= abs(x - x2) else x1
    if _zero_is_root(ev, x, tol, toward=far):
        return None
    return math.nan


def _interior_underflow(x: float, lo: float, hi: float) -> Detail:
    return Detail("underflow_inside", (x, lo, hi))


_SLOPE_SPREAD = 1024.0
_CHORD_SHARE = 1.0 / 16.0


def _straight_through(x: float, x1: float, f1: float, x2: float, f2: float, tol: float) -> bool:
    """f(x) == 0.0 between ends of opposite sign, in line with them (see _iterate_zero)."""
    if not (min(x1, x2) < x < max(x1, x2)) or _same_sign(f1, f2):
        return False
    slope_1 = abs(f1) / abs(x - x1)
    slope_2 = abs(f2) / abs(x2 - x)
    secant = abs(f1) / abs(x2 - x1) + abs(f2) / abs(x2 - x1)
    least = min(slope_1, slope_2)
    if not (least * _SLOPE_SPREAD >= secant and least * tol >= _SLOPE_SPREAD * sys.float_info.min):
        return False
    # The chord through the ends must itself vanish near x: x at most 1/16 of the
    # bracket from where the chord crosses zero.
    chord = f1 + (f2 - f1) * ((x - x1) / (x2 - x1))
    return abs(chord) <= _CHORD_SHARE * max(abs(f1), abs(f2))


def _bracket_settings(xtol, rtol, ftol, max_iter, a, b) -> dict[str, Any]:
    bracket = (_start_value(a, "bracket end a"), _start_value(b, "bracket end b"))
    return dict(_check_settings(xtol, rtol, ftol, max_iter), bracket=bracket)


@_quiet
def bisection(
    f: Function,
    a: float,
    b: float,
    *,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
) -> Run:
    """Bisection on the bracket [a, b] (f(a), f(b) of opposite signs).

    Each iterate is the bracket's midpoint; the bracket halves every iterate (order 1,
    ratio 1/2). Stops when the bracket width ``hi - lo <= xtol + rtol*|x|`` with x the
    end of smaller |f| (returned as the root), or when the ends are adjacent doubles
    and cannot be split (also ``x_tolerance``, recorded in the detail).
    """
    settings = _bracket_settings(xtol, rtol, ftol, max_iter, a, b)
    ev = _Evaluator(f)
    steps: list[Step] = []
    start = _start_bracket("bisection", ev, settings, steps)
    if isinstance(start, Run):
        return start
    xtol_, rtol_, ftol_, cap = (settings[n] for n in ("xtol", "rtol", "ftol", "max_iter"))
    lo, flo, hi, fhi = start.a, start.fa, start.b, start.fb
    if lo > hi:
        lo, flo, hi, fhi = hi, fhi, lo, flo
    underflowed = start.underflowed
    last = start.b
    iterations = 0

    def done(reason: str, root: float, detail: Detail | None = None) -> Run:
        return _finish("bisection", reason, root, steps, iterations, ev.calls, settings, detail)

    def closed(best: float, detail: Detail) -> Run:
        reason, why = _closed_bracket_reason(ev, settings, lo, flo, hi, fhi, steps, underflowed)
        return done(reason, best, why or detail)

    while True:
        best = lo if abs(flo) <= abs(fhi) else hi
        if hi - lo <= xtol_ + rtol_ * abs(best):
            return closed(best, _step_detail("width", hi - lo, xtol_, rtol_, best))
        if iterations >= cap:
            return done(MAX_ITERATIONS, best)
        mid = 0.5 * lo + 0.5 * hi
        if not lo < mid < hi:
            return closed(
                best, Detail("adjacent_doubles", (lo, hi))
            )
        fmid = ev(mid)
        iterations += 1
        if not math.isfinite(fmid):
            steps.append(Step(iterations + 1, mid, fmid, None, mid - last, lo, hi))
            return done(NOT_FINITE, best, _not_finite_detail(ev, mid, fmid))
        recorded = fmid
        if fmid == 0.0:
            carried = _iterate_zero(
                ev, mid, xtol_ + rtol_ * abs(mid), ((lo, flo), (hi, fhi)), underflowed
            )
            if carried is None or math.isnan(carried):
                steps.append(Step(iterations + 1, mid, fmid, None, mid - last, mid, hi))
                if carried is None:
                    return done(EXACT_ZERO, mid)
                return done(NOT_FINITE, mid, _interior_underflow(mid, lo, hi))
            fmid = carried
        if _same_sign(fmid, flo):
            lo, flo = mid, fmid
        else:
            hi, fhi = mid, fmid
        steps.append(Step(iterations + 1, mid, recorded, None, mid - last, lo, hi))
        last = mid
        if abs(fmid) <= ftol_:
            return done(F_TOLERANCE, mid)


def _regula_falsi(
    method: str,
    illinois_rule: bool,
    f: Function,
    a: float,
    b: float,
    xtol: float,
    rtol: float,
    ftol: float,
    max_iter: int,
) -> Run:
    """False position, plain or with the Illinois rule (shared body; see the two wrappers)."""
    settings = _bracket_settings(xtol, rtol, ftol, max_iter, a, b)
    ev = _Evaluator(f)
    steps: list[Step] = []
    start = _start_bracket(method, ev, settings, steps)
    if isinstance(start, Run):
        return start
    xtol_, rtol_, ftol_, cap = (settings[n] for n in ("xtol", "rtol", "ftol", "max_iter"))
    # (xb, fb) is the newest point, (xa, fa) the retained end of opposite sign.
    # ga is the value used for interpolation at xa: fa, or fa halved by the Illinois rule.
    xa, fa, xb, fb = start.a, start.fa, start.b, start.fb
    underflowed = start.underflowed
    ga = fa
    previous: float | None = None  # previous interpolated iterate
    previous_step: float | None = None  # |previous - the one before|
    previous_ratio: float | None = None  # previous_step / the step before it
    probe: float | None = None  # next iterate: the check of a step-based estimate
    iterations = 0
    midpoints = 0

    def done(reason: str, root: float, detail: Detail | None = None) -> Run:
        note = Detail("midpoint_steps", (midpoints,)) if midpoints else None
        return _finish(
            method, reason, root, steps, iterations, ev.calls, settings, detail, note=note
        )

    def closed(best: float, detail: Detail) -> Run:
        (lo, flo), (hi, fhi) = sorted(((xa, fa), (xb, fb)))
        reason, why = _closed_bracket_reason(ev, settings, lo, flo, hi, fhi, steps, underflowed)
        return done(reason, best, why or detail)

    while True:
        lo, hi = (xa, xb) if xa < xb else (xb, xa)
        best = xa if abs(fa) < abs(fb) else xb
        if iterations >= cap:
            return done(MAX_ITERATIONS, best)
        if probe is not None and lo < probe < hi:
            x, fallback = probe, False
        else:
            denominator = fb - ga  # never zero: fb and ga have opposite signs
            if math.isinf(denominator) or ga == 0.0:
                fraction = 1.0 / (1.0 - ga / fb)
            else:
                fraction = fb / denominator
            x = xb - fraction * (xb - xa)
            fallback = not lo < x < hi
        checking, probe = probe is not None, None
        if fallback:
            # Rounding put the chord's zero on (or past) an end, e.g. beside a pole where
            # |f| is huge: take the midpoint instead so the method cannot stall there.
            x = 0.5 * lo + 0.5 * hi
            if not lo < x < hi:
                return closed(
                    best, Detail("adjacent_doubles", (lo, hi))
                )
            midpoints += 1
        fx = ev(x)
        iterations += 1
        if not math.isfinite(fx):
            steps.append(Step(iterations + 1, x, fx, None, x - xb, lo, hi))
            return done(NOT_FINITE, best, _not_finite_detail(ev, x, fx))
        recorded = fx
        if fx == 0.0:
            carried = _iterate_zero(
                ev, x, xtol_ + rtol_ * abs(x), ((xa, fa), (xb, fb)), underflowed
            )
            if carried is None or math.isnan(carried):
                steps.append(Step(iterations + 1, x, fx, None, x - xb, *sorted((xb, x))))
                if carried is None:
                    return done(EXACT_ZERO, x)
                return done(NOT_FINITE, x, _interior_underflow(x, lo, hi))
            fx = carried
        if _same_sign(fx, fb):
            # xa retained once more: Illinois halves its value to pull the next iterate over.
            if illinois_rule:
                ga *= 0.5
        else:
            xa, fa, ga = xb, fb, fb
        dx = x - xb
        xb, fb = x, fx
        lo, hi = (xa, xb) if xa < xb else (xb, xa)
        steps.append(Step(iterations + 1, x, recorded, None, dx, lo, hi))
        if abs(fx) <= ftol_:
            return done(F_TOLERANCE, x)
        best = xa if abs(fa) < abs(fb) else xb
        if hi - lo <= xtol_ + rtol_ * abs(best):
            return closed(best, _step_detail("width", hi - lo, xtol_, rtol_, best))
        if illinois_rule or fallback or checking:
            # Illinois: both ends move, so the bracket width alone decides. After a
            # midpoint step, or a check that found no sign change, the chord-step
            # history says nothing: start it again.
            if fallback or checking:
                previous = previous_step = previous_ratio = None
            continue
        if previous is not None:
            step = abs(x - previous)
            if previous_step is not None:
                ratio = step / previous_step
                # Linear convergence with ratio c leaves an error of about c/(1-c) times
                # the last step. Take the worse of the last two ratios, so one short step
                # after a long one (a flat stretch of f) is not taken for convergence,
                # and never accept less than the step itself.
                c = ratio if previous_ratio is None else max(ratio, previous_ratio)
                if previous_ratio is not None and c < 1.0:
                    error = step * max(1.0, c / (1.0 - c))
                    if error <= xtol_ + rtol_ * abs(x):
                        # An estimate is no proof (f with rounding noise or random values
                        # fools it): check it with f half a tolerance towards the other
                        # end. A sign change there closes the bracket below tolerance;
                        # none moves this end on, and the chords go on.
                        probe = x + math.copysign(0.5 * (xtol_ + rtol_ * abs(x)), xa - x)
                previous_ratio = ratio
            previous_step = step
        previous = x


@_quiet
def false_position(
    f: Function,
    a: float,
    b: float,
    *,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
) -> Run:
    """Plain false position (regula falsi) on the bracket [a, b].

    Each iterate is where the chord through the bracket ends crosses zero; the end of
    the same sign is replaced. On a convex or concave f one end never moves, so the
    convergence is linear (order 1) and can be slow; users should see this.
    Stops when the bracket width ``<= xtol + rtol*|x|``. When the linear-convergence
    error estimate from the last chord steps is below tolerance, the next iterate is
    the check half a tolerance towards the other end, whose sign change closes the
    bracket (module notes give the exact rule): the estimate alone never stops it.
    Returns the bracket end of smaller |f|.
    """
    return _regula_falsi("false_position", False, f, a, b, xtol, rtol, ftol, max_iter)


@_quiet
def illinois(
    f: Function,
    a: float,
    b: float,
    *,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
) -> Run:
    """Illinois-modified false position on the bracket [a, b] (Dowell & Jarratt, 1971).

    As false position, but whenever the same end is retained again its f value is
    halved for the next interpolation, so both ends move and the order is ~1.44.
    Stops when the bracket width ``hi - lo <= xtol + rtol*|x|`` with x the end of
    smaller |f| (returned as the root).
    """
    return _regula_falsi("illinois", True, f, a, b, xtol, rtol, ftol, max_iter)


@_quiet
def brent(
    f: Function,
    a: float,
    b: float,
    *,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
) -> Run:
    """Brent's method on the bracket [a, b] (R. P. Brent, *Algorithms for Minimization
    without Derivatives*, 1973, ch. 4, procedure ``zero``).

    Keeps a bracket [b, c] with |f(b)| <= |f(c)|, and takes an inverse quadratic (or
    secant) step from b when it is short enough, else bisects: superlinear on smooth f,
    and never worse than about the square of bisection's count (Brent's bound). The
    arithmetic follows the form used in scipy's ``brentq`` (divided differences for
    the interpolation), which is the reference it is benchmarked against; the f
    values are scaled by a power of two first, so the steps do not depend on the
    units of f (f*1e-110 and x**19 interpolate as f and x do), and an interpolation
    that under- or overflows bisects instead. Two departures from the book, both
    cheaper on the test sets: a step shorter than half the tolerance proposed right
    after a bisection is replaced by another bisection (the interpolation then rests on
    points far from b, such as a bracket end beside a pole, so its "root within half a
    tolerance" is not to be trusted), and a value that underflowed is never
    interpolated through.
    Stops when the bracket width ``|c - b| <= xtol + rtol*|b|``; the smallest step
    taken is ``(xtol + rtol*|b|)/2``. Returns b, the bracket end of smaller |f|.
    """
    settings = _bracket_settings(xtol, rtol, ftol, max_iter, a, b)
    ev = _Evaluator(f)
    steps: list[Step] = []
    start = _start_bracket("brent", ev, settings, steps)
    if isinstance(start, Run):
        return start
    xtol_, rtol_, ftol_, cap = (settings[n] for n in ("xtol", "rtol", "ftol", "max_iter"))

    # b: the best point so far; a: the previous b; c: the contrapoint (sign opposite to b).
    # d: the step just taken, e: the one before it (Brent's names).
    xa, fa = start.a, start.fa
    xb, fb = start.b, start.fb
    xc, fc = xa, fa
    underflowed = start.underflowed
    d = e = xb - xa
    last = xb
    iterations = 0
    bisected = False

    def done(reason: str, root: float, detail: Detail | None = None) -> Run:
        return _finish("brent", reason, root, steps, iterations, ev.calls, settings, detail)

    def closed(detail: Detail) -> Run:
        (lo, flo), (hi, fhi) = sorted(((xb, fb), (xc, fc)))
        reason, why = _closed_bracket_reason(ev, settings, lo, flo, hi, fhi, steps, underflowed)
        return done(reason, xb, why or detail)

    while True:
        if abs(fc) < abs(fb):
            # Make b the better end; a follows the old b so the next step interpolates.
            xa, fa = xb, fb
            xb, fb = xc, fc
            xc, fc = xa, fa
        half_tol = 0.5 * (xtol_ + rtol_ * abs(xb))
        m = 0.5 * xc - 0.5 * xb  # = (xc - xb)/2 exactly, without overflow on wide brackets
        if abs(m) <= half_tol:
            width = abs(xc - xb)
            return closed(_step_detail("width", width, xtol_, rtol_, xb))
        if iterations >= cap:
            return done(MAX_ITERATIONS, xb)

        # A value that underflowed has a sign but no size to interpolate with: bisect.
        informed = not underflowed or underflowed.isdisjoint((xa, xb, xc))
        if informed and abs(e) > half_tol and abs(fb) < abs(fa):
            s = _interpolation_step(xa, fa, xb, fb, xc, fc)
            # Accept only a step well inside the bracket and shrinking fast enough
            # (an undefined step, NaN, fails the test and bisects).
            if 2.0 * abs(s) < min(abs(e), 3.0 * abs(m) - half_tol) and not (
                abs(s) <= half_tol and bisected
            ):
                e, d = d, s
            else:
                e = d = m
        else:
            e = d = m

        bisected = d == m
        xa, fa = xb, fb
        if abs(d) > half_tol:
            xb += d
        else:
            xb += half_tol if m > 0 else -half_tol
        fb = recorded = ev(xb)
        iterations += 1
        if fb == 0.0:
            carried = _iterate_zero(
                ev, xb, xtol_ + rtol_ * abs(xb), ((xa, fa), (xc, fc)), underflowed
            )
            if carried is None or math.isnan(carried):
                steps.append(Step(iterations + 1, xb, fb, None, xb - last, *sorted((xb, xc))))
                if carried is None:
                    return done(EXACT_ZERO, xb)
                return done(NOT_FINITE, xb, _interior_underflow(xb, *sorted((xa, xc))))
            fb = carried
        if math.isfinite(fb) and not _same_sign(fb, fa):
            # The root now lies between the new b and the old b: a becomes the contrapoint.
            xc, fc = xa, fa
            e = d = xb - xa
        lo, hi = (xb, xc) if xb < xc else (xc, xb)
        steps.append(Step(iterations + 1, xb, recorded, None, xb - last, lo, hi))
        last = xb
        if not math.isfinite(fb):
            return done(NOT_FINITE, xa, _not_finite_detail(ev, xb, fb))
        if abs(fb) <= ftol_:
            return done(F_TOLERANCE, xb)


def _interpolation_step(
    xa: float, fa: float, xb: float, fb: float, xc: float, fc: float
) -> float:
    """Brent's interpolation step from b (secant when a == c, else inverse quadratic).

    NaN when the step is undefined; Brent then bisects. The step depends only on
    ratios of f values, so it must not depend on the units of f: the values are first
    scaled by a power of two, so that the largest is in [0.5, 1). The scaling is exact,
    so wherever nothing under- or overflows the step is bit for bit that of the
    divided-difference form in scipy's ``brentq`` (its evaluation counts stay equal),
    and f*2**k takes the same steps for every k. Where the form still under- or
    overflows (f ~ x**19 near its root: a product of two slopes and a difference of f)
    the step is NaN and Brent bisects, as brentq does when its division yields inf or
    NaN.
    """
    exponent = math.frexp(max(abs(fa), abs(fb), abs(fc)))[1]
    fa, fb, fc = (math.ldexp(v, -exponent) for v in (fa, fb, fc))
    if xa == xc:
        return -fb * (xb - xa) / (fb - fa) if fb != fa else math.nan
    slope_a = (fa - fb) / (xa - xb)
    slope_c = (fc - fb) / (xc - xb)
    denominator = slope_c * slope_a * (fc - fa)
    if denominator == 0.0 or not math.isfinite(denominator):
        return math.nan
    return -fb * (fc * slope_c - fa * slope_a) / denominator


# --------------------------------------------------------------------------- dispatch


@dataclass(frozen=True)
class MethodSpec:
    """One entry of :data:`METHODS`.

    ``kind`` says which start values the method needs: "open" (x0), "two_point"
    (x0 and x1) or "bracket" (a and b).
    """

    name: str
    function: Callable[..., Run]
    kind: str


METHODS: dict[str, MethodSpec] = {
    "newton": MethodSpec("newton", newton, "open"),
    "secant": MethodSpec("secant", secant, "two_point"),
    "false_position": MethodSpec("false_position", false_position, "bracket"),
    "illinois": MethodSpec("illinois", illinois, "bracket"),
    "bisection": MethodSpec("bisection", bisection, "bracket"),
    "brent": MethodSpec("brent", brent, "bracket"),
}


def _need(value: Any, what: str, name: str) -> Any:
    if value is None:
        raise ValueError(f"method {name!r} needs {what}")
    return value


def _call_open(spec, f, fprime, x0, x1, bracket, newton_options, tol) -> Run:
    return spec.function(
        f, _need(x0, "a starting value x0", spec.name), fprime=fprime, **newton_options, **tol
    )


def _call_two_point(spec, f, fprime, x0, x1, bracket, newton_options, tol) -> Run:
    return spec.function(
        f,
        _need(x0, "a starting value x0", spec.name),
        _need(x1, "a second starting value x1", spec.name),
        **tol,
    )


def _call_bracket(spec, f, fprime, x0, x1, bracket, newton_options, tol) -> Run:
    lo, hi = _need(bracket, "a bracket (a, b)", spec.name)
    return spec.function(f, lo, hi, **tol)


_CALLERS = {"open": _call_open, "two_point": _call_two_point, "bracket": _call_bracket}


def run_method(
    name: str,
    f: Function,
    *,
    fprime: Function | None = None,
    x0: float | None = None,
    x1: float | None = None,
    bracket: tuple[float, float] | None = None,
    damping: float = 1.0,
    derivative_source: str | None = None,
    **tol: Any,
) -> Run:
    """Run method ``name`` (a key of :data:`METHODS`) with the start values its kind needs.

    ``fprime``, ``damping`` and ``derivative_source`` reach Newton only; ``tol`` holds
    xtol, rtol, ftol, max_iter. Raises ValueError for an unknown method or a missing
    start value (a caller's error); f misbehaving is recorded in the Run as usual.
    """
    spec = METHODS.get(name)
    if spec is None:
        raise ValueError(f"unknown method {name!r}; choose from {', '.join(METHODS)}")
    newton_options = {"damping": damping, "derivative_source": derivative_source}
    return _CALLERS[spec.kind](spec, f, fprime, x0, x1, bracket, newton_options, tol)
