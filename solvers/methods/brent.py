"""Brent's method: inverse quadratic and secant steps inside a bracket, bisection as
the safeguard that keeps it guaranteed.
"""

from __future__ import annotations

import math

from solvers.methods.bracketing import (
    _bracket_settings,
    _iterate_zero,
    _start_bracket,
)
from solvers.methods.common import (
    DEFAULT_FTOL,
    DEFAULT_MAX_ITER,
    DEFAULT_RTOL,
    DEFAULT_XTOL,
    Function,
    _capped_reason,
    _carried,
    _closed_bracket_reason,
    _Evaluator,
    _finish,
    _not_finite_detail,
    _quiet,
    _same_sign,
    _step_detail,
)
from solvers.records import (
    F_TOLERANCE,
    NOT_FINITE,
    Detail,
    Run,
    Step,
)


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
            reason, why = _capped_reason(ev, xb, fb, xc, fc, steps)
            return done(reason, xb, why)

        # A value that underflowed has a sign but no size to interpolate with: bisect.
        informed = not any(_carried(v, underflowed) for v in (fa, fb, fc))
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
            fb, stop, why = _iterate_zero(
                ev, xb, xtol_ + rtol_ * abs(xb), ((xa, fa), (xc, fc)), underflowed,
                tuple(sorted((xa, xc))), max(abs(steps[0].fx), abs(steps[1].fx)),
            )
            if stop:
                steps.append(Step(iterations + 1, xb, recorded, None, xb - last,
                                  *sorted((xb, xc))))
                return done(stop, xb, why)
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
