"""What every method shares: default tolerances, the counting evaluator of f, the checks
of settings, the stop details, the zero and closed-bracket verdicts and the numerical
derivative.

The conventions they implement are described in :mod:`solvers.methods`.
"""

from __future__ import annotations

import functools
import math
import operator
import sys
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np

from solvers.records import (
    CONVERGED_REASONS,
    DISCONTINUITY,
    EXACT_ZERO,
    MAX_ITERATIONS,
    NOT_FINITE,
    X_TOLERANCE,
    Detail,
    Run,
    Setting,
    Step,
)

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

# f(x) in the units of f; numpy scalars and 0-d arrays are converted, anything else
# (a complex value, a list, an exception) is recorded in the run.
Function = Callable[[float], float]

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


def _check_settings(xtol: float, rtol: float, ftol: float, max_iter: int) -> dict[str, Setting]:
    """Validate the stopping rules; a bad setting is the caller's error (ValueError)."""
    values = {"xtol": xtol, "rtol": rtol, "ftol": ftol}
    checked: dict[str, Setting] = {}
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
    settings: dict[str, Setting],
    detail: Detail | None = None,
    derivative: str | None = None,
    note: Detail | None = None,
) -> Run:
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


# A bracket stopped at the iteration cap is local to a point once it has shrunk this much
# (the reach of the closed-bracket probes, the other way round).
_CAPPED_SHRINK = 2.0**-20
# How far out (in widths of the capped bracket) f is asked whether |f| falls away from
# it (a pole) or grows (a root): well inside the starting bracket (16 <= 2**20 widths)
_CAPPED_REACH = 16.0


def capped_probes(x1: float, x2: float) -> tuple[float, float]:
    """The two points beside a capped bracket [x1, x2] (either order) where f is asked:
    :data:`_CAPPED_REACH` widths out on each side, the lower side first."""
    lo, hi = (x1, x2) if x1 <= x2 else (x2, x1)
    reach = _CAPPED_REACH * (hi - lo)
    return lo - reach, hi + reach


def capped_pole(f1: float, f2: float, x1: float, x2: float, p_lo: float, p_hi: float) -> bool:
    """Whether |f| fell away from a capped bracket on both sides: f at the probes
    :func:`capped_probes` (``p_lo`` beside the lower end, ``p_hi`` the upper) finite and
    below |f| at the end it lies beside (a pole: |f| ~ 1/d; beside a root |f| grows)."""
    f_lo, f_hi = (f1, f2) if x1 <= x2 else (f2, f1)
    return (math.isfinite(p_lo) and math.isfinite(p_hi)
            and abs(p_lo) < abs(f_lo) and abs(p_hi) < abs(f_hi))


def grew_beside(f_lo: float, f_hi: float, p_lo: float, p_hi: float) -> bool:
    """Whether f at the probes beside a closed bracket (``p_lo`` beside the lower end,
    f there ``f_lo``; ``p_hi`` beside the upper) kept each end's sign and grew at least
    1.5-fold (:data:`_PROBE_GROWTH`) on both sides: the bracket holds a root."""
    return all(math.isfinite(p) and p != 0.0 and _same_sign(p, e)
               and abs(p) >= _PROBE_GROWTH * abs(e) for p, e in ((p_lo, f_lo), (p_hi, f_hi)))


def _capped_reason(ev: _Evaluator, x1: float, f1: float, x2: float, f2: float,
                   steps: list[Step]) -> tuple[str, Detail | None]:
    """(reason, detail) for a bracketing run stopped at the iteration cap, its bracket's
    ends x1, x2 (either order) with f there f1, f2.

    ``max_iterations``, unless the bracket closed in on a pole without reaching the
    tolerance: plain false position keeps one end nearly fixed and creeps up a pole of
    1/(x - c) a little at a time, so the cap comes first. Where the bracket shrank at
    least 2**20-fold and |f| at both its ends exceeds |f| at both starting ends (f grew
    on each side as the bracket narrowed), f is asked 16 widths out on each side (two
    calls, counted: :func:`capped_probes`): |f| fallen there on both sides is a pole,
    ``not_finite`` with a ``pole_capped`` detail, as a closed bracket on a pole is
    (:func:`_finish`). The ends alone are no evidence: a root where f is steep between
    flat tails (1e6 (x - r) exp(-(x - r)**2) on [r - 6, r + 4]) has |f| 3.8 at the ends
    of a bracket 4e-6 wide, 0.45 at the starting ends; 16 widths out |f| has grown.
    Either way the run has not converged.
    """
    if len(steps) >= 2:
        start = abs(steps[1].x - steps[0].x)
        ends = max(abs(steps[0].fx), abs(steps[1].fx))
        near = min(abs(f1), abs(f2))
        if abs(x2 - x1) <= _CAPPED_SHRINK * start and near > ends:
            p_lo, p_hi = capped_probes(x1, x2)
            if capped_pole(f1, f2, x1, x2, ev(p_lo), ev(p_hi)):
                best = x1 if abs(f1) <= abs(f2) else x2
                return NOT_FINITE, Detail("pole_capped", (ends, near, best))
    return MAX_ITERATIONS, None


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


def _carried(value: float, underflowed: set[float]) -> bool:
    """Whether ``value`` (f at a bracket end or iterate) is an underflowed point's carried
    +-:data:`_TINY`: in a run whose bracket began with an end in a stretch of underflow
    (``underflowed`` not empty), a value of +-5e-324 has a sign but no size, whether it
    was carried there or f returned it (f at the edge of that underflow rounds to it);
    in any other run it is f's own value, a true tiny number whose sign stands. The
    batch path (:func:`solvers.batch.rows.carried`) applies the same rule to the same
    values, so both judge such a point alike without tracking where it came from."""
    return bool(underflowed) and abs(value) == _TINY


def probe_step(x: float, tol: float) -> float:
    """How far beside x the exact-zero rule asks f: the tolerance, at least two ulps of x
    and the smallest normal double."""
    return max(tol, 2.0 * math.ulp(x), sys.float_info.min)


def _zero_is_root(ev: _Evaluator, x: float, tol: float, toward: float | None = None,
                  look: bool = True) -> tuple[bool, Detail | None]:
    """Whether f(x) == 0.0 is a zero of f, not a value that underflowed to 0, and the
    detail that goes with a root on a plateau of rounding (``zero_in_noise``, else None).

    A double 0.0 from f is also what a sum of terms below ~1e-308 gives (exp(-x) -
    2*exp(-2*x) is 0.0 at x = 800; its root is ln 2). From f alone the two differ in
    what f does beside x: at an isolated zero f is non-zero at x +- tol (a simple root
    changes sign there, a double root touches), while underflow leaves f exactly 0 over
    a stretch far wider than any tolerance. So f is evaluated at x + tol and x - tol
    (calls counted) and the zero counts as a root if f is non-zero at both. A NaN
    neighbour (x at the edge of f's domain, sqrt at 0) is no evidence either way, but
    one neighbour must be finite and non-zero. Both sides are needed: x can sit at the
    very edge of a stretch of underflow (f*1e-314 has one 4e-11 wide around its root),
    with one neighbour outside it.

    f can also be 0.0 beside x because its terms cancel to the last bit there: around a
    multiple root of an f typed out as a polynomial (x^3 - 3x + 2 is 0.0 in doubles for
    |x - 1| below about 1e-8). Where a neighbour is 0.0, f is asked further out on both
    sides (:func:`_rounding_plateau`): a root on a plateau of rounding, or underflow.
    Without ``look`` (a bracketing method's iterate, whose bracket ends tell it first:
    :func:`solvers.methods.bracketing._iterate_zero`) such a zero is no root.

    ``toward`` (a bracketing method's farther bracket end) is the side tried first: a
    method closing in on a stretch of underflow from inside it comes from that side, so
    that call usually settles it alone.
    """
    step = probe_step(x, tol)
    first = step if toward is None or toward >= x else -step
    finite = False
    for side in (x + first, x - first):
        value = ev(side)
        if value == 0.0:
            return _rounding_plateau(ev, x, step) if look else (False, None)
        finite = finite or math.isfinite(value)
    return finite, None


# The plateau search: f at x -+ step * 4**j, j = 1..16 (out to about 4e9 steps: 4e-3 of
# x at the default tolerances), and what f may be just beyond a plateau of rounding.
PLATEAU_REACH = tuple(4.0**j for j in range(1, 17))
ROUNDING_QUANTA = 4096  # f a few units of its terms' rounding: at most this many of them


def plateau_points(x: float, step: float) -> list[float]:
    """The points :func:`_rounding_plateau` asks f at: the left side, nearest first,
    then the right side."""
    return [x - step * m for m in PLATEAU_REACH] + [x + step * m for m in PLATEAU_REACH]


def lowest_bit(v: float) -> float:
    """The largest power of two that v (finite, > 0) is a whole multiple of."""
    mantissa, exponent = math.frexp(v)
    whole = int(mantissa * 2.0**53)
    return math.ldexp(1.0, exponent - 53 + (whole & -whole).bit_length() - 1)


def in_rounding(v: float) -> bool:
    """Whether a value of f is a few units of the rounding of normal-sized terms: a whole
    multiple, at most :data:`ROUNDING_QUANTA`, of a power of two above 1e-290 (a smooth non-zero
    value needs some 50 bits; a subnormal one is a multiple of 2**-1074 only)."""
    if v == 0.0 or not math.isfinite(v):
        return False
    q = lowest_bit(abs(v))
    return q > 1e-290 and abs(v) <= ROUNDING_QUANTA * q


def plateau_detail(x: float, step: float, values: Sequence[float]) -> Detail | None:
    """The verdict on f's ``values`` at :func:`plateau_points` (x, step): a ``zero_in_noise``
    detail (the distance out to f's nearest non-zero value, and its size) when f(x) ==
    0.0 is a zero of f's rounding noise, else None (underflow).

    Beyond a plateau of cancelling terms the first non-zero value of f on each side is
    a few units of the terms' rounding: a small whole multiple (at most 4096) of a power
    of two that is a normal double's unit (above 1e-290). Beyond a stretch of underflow
    f is subnormal or tiny, a multiple of 2**-1074 only, or nothing within reach; a
    smooth non-zero value needs some 50 bits, not 12.
    """
    half = len(PLATEAU_REACH)
    nearest: tuple[float, float] | None = None
    for side in (values[:half], values[half:]):
        found = None
        for m, v in zip(PLATEAU_REACH, side, strict=True):
            if v != 0.0:
                if in_rounding(v):
                    found = (step * m, abs(v))
                break
        if found is None:
            return None
        nearest = found if nearest is None or found[0] < nearest[0] else nearest
    assert nearest is not None
    return Detail("zero_in_noise", nearest)


def _rounding_plateau(ev: _Evaluator, x: float, step: float) -> tuple[bool, Detail | None]:
    """f(x) == 0.0 and 0.0 beside it (the probe ``step`` away): (root, detail) from f at
    32 more points (:func:`plateau_points`, counted; :func:`plateau_detail` decides)."""
    detail = plateau_detail(x, step, [ev(p) for p in plateau_points(x, step)])
    return detail is not None, detail


def _zero_verdict(
    ev: _Evaluator, x: float, xtol: float, rtol: float
) -> tuple[str, Detail | None]:
    """(reason, detail) for f(x) == 0.0 in an open method: a root, or underflow."""
    root, detail = _zero_is_root(ev, x, xtol + rtol * abs(x))
    if root:
        return EXACT_ZERO, detail
    return NOT_FINITE, Detail("underflow", (x,))


# Continuity check of a bracket that closed (see _closed_bracket_reason).
_PROBE_REACH = 2.0**20  # probes this many bracket widths out: still local to the root
_PROBE_GROWTH = 1.5  # |f| must grow at least this much there for a root


def _closed_bracket_reason(
    ev: _Evaluator,
    settings: dict[str, Setting],
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
    where in the underflow the sign changes). ``(NOT_FINITE, pole detail)`` for a pole:
    |f| at the closed bracket above both starting ends (:func:`_pole_detail`) and falling
    away 16 widths out on both sides (:func:`capped_pole`, two calls).

    Near a root f shrinks with the distance: |f| ~ C*d**p, for a power p > 0. Beside a
    jump |f| stays at the height of the jump however small the bracket. So, with ``w``
    the width:

    1. at no cost, the bracket as given (``steps[0]``, ``steps[1]``: f at its ends as
       evaluated; an end whose f underflowed to 0.0 tells nothing): if one at distance
       d >= 2w from the closed bracket has the sign of the closed end on its side and
       ``|f(end)| <= |f| * sqrt(w/d)``, |f| fell at least as fast as the square root of
       the distance (p >= 1/2), and the bracket holds a root. Beside a jump of height J
       with slope s this needs (J + s*d)*sqrt(w/d) >= J: d >= J**2/(s**2*w), beyond any
       point for a jump that stands out of the slope over the tolerance. Each end is
       compared only with the starting end on its own side: across a jump from -0.4 to
       1.6, a point just beyond the 1.6 end would otherwise pass for |f| grown from the
       0.4 of the other end. Only the starting ends, not every iterate on record: the
       verdict on a closed bracket is then a matter of that bracket and the one given,
       not of the points a method happened to visit on the way, so every method and
       the batch path (:func:`solvers.batch.rows.closed_verdict`, which keeps no
       iterates) judge it alike, with the same calls of f.
    2. otherwise f is evaluated ``2**20`` widths out (inside the starting bracket), one
       side and then the other: if |f| grew there by 1.5 or more (any p >= 0.03, so even
       x**(1/19) passes) the bracket holds a root; if it did not on either side, a jump
       (``discontinuity``).
    """
    for x, fx in ((lo, flo), (hi, fhi)):
        if _carried(fx, underflowed):
            return NOT_FINITE, Detail("underflow_stretch", (x,))
    pole = _pole_detail(lo if abs(flo) <= abs(fhi) else hi, steps)
    if pole is not None:
        # |f| at the closed bracket above both starting ends: a pole where |f| falls away
        # 16 widths out on each side (two calls); beside a steep root between flat tails
        # (1e6 (x - r) exp(-(x - r)**2) from r -+ 6: 1.4e-9 at the ends, 1e-6 a tolerance
        # from r) it grows, and the tests below judge the bracket
        p_lo, p_hi = capped_probes(lo, hi)
        v_lo, v_hi = ev(p_lo), ev(p_hi)
        if capped_pole(flo, fhi, lo, hi, v_lo, v_hi):
            return NOT_FINITE, pole
        if grew_beside(flo, fhi, v_lo, v_hi):
            return X_TOLERANCE, None  # |f| grew on both sides: a root
    width = hi - lo
    for start in steps[:2]:  # the bracket as given, f there as evaluated
        distance = max(lo - start.x, start.x - hi)
        # compared with the closed end on its own side: across a jump the far side's |f|
        # is the jump's height, larger than the near side's for no root at all
        fend = flo if start.x < lo else fhi
        if (distance >= 2.0 * width and math.isfinite(start.fx) and start.fx != 0.0
                and _same_sign(start.fx, fend)
                and abs(fend) <= abs(start.fx) * math.sqrt(width / distance)):
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
