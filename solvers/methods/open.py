"""Open methods: Newton–Raphson from one start value, the secant from two.

Neither keeps a bracket, so neither is guaranteed to converge; both converge fast
(order 2 and ~1.62) on a simple root from a start value close enough to it.
"""

from __future__ import annotations

import math

from solvers.methods.common import (
    DEFAULT_FTOL,
    DEFAULT_MAX_ITER,
    DEFAULT_RTOL,
    DEFAULT_XTOL,
    DERIVATIVE_FLOOR,
    Function,
    _central_difference,
    _check_settings,
    _Evaluator,
    _finish,
    _last_finite,
    _not_finite_detail,
    _quiet,
    _start_value,
    _step_detail,
    _zero_verdict,
)
from solvers.records import (
    F_TOLERANCE,
    MAX_ITERATIONS,
    NOT_FINITE,
    X_TOLERANCE,
    ZERO_DERIVATIVE,
    Detail,
    Run,
    Step,
)


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


def _step_is_local(ev: _Evaluator, fb: float, x: float, fx: float, dx: float,
                   tol: float) -> bool:
    """Whether a secant step within the tolerance shows x to be at a root.

    Newton's step comes from f' at x, so a short step means f/f' is small there. The
    secant's comes from the chord through the last two iterates, which may be far apart:
    a chord to a point where |f| is enormous is steep, and the step it gives is short
    wherever x is (on x*exp(1.411x) - 2.978 from -0.80, -0.30 the secant jumps to 25.6,
    where f is 1.2e17, and comes back with a step of 7e-16 and f 3.18 at both ends).
    The short step counts as convergence when the two points it joins say so too, at no
    cost: the residual at least halved (superlinear progress; at a double root the
    secant's residual ratio tends to 0.38), a sign change between them (a root within
    the step), or their own chord putting the root within ``tol`` of x. Otherwise (f at
    its rounding noise at both, as happens at a root reached to the last digit) f is
    asked at x - tol and x + tol: a sign change (or an exact 0) on either side puts a
    root within the tolerance. If none does, the step was the chord's, not the root's,
    and the iteration goes on (:func:`solvers.batch.open.secant` applies the same rule
    to every row).
    """
    if abs(fx) <= 0.5 * abs(fb) or (fx < 0.0) != (fb < 0.0):
        return True
    difference = fx - fb
    if difference != 0.0 and abs(fx * dx) <= tol * abs(difference):
        return True
    for probe in (x - tol, x + tol):
        fp = ev(probe)
        if math.isfinite(fp) and (fp == 0.0 or (fp < 0.0) != (fx < 0.0)):
            return True
    return False


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
    the step just taken, ``|dx| <= xtol + rtol*|x|``, when the two points of that step
    confirm it (the residual at least halved, a sign change, or their chord putting the
    root within the tolerance; else f at x +- tol, counted in ``evaluations``, must
    change sign): a short step from a steep chord to a far iterate proves nothing, and
    the iteration goes on. Equal f at the last two points
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
        tol_x = xtol_ + rtol_ * abs(x)
        if abs(dx) <= tol_x and _step_is_local(ev, fb, x, fx, dx, tol_x):
            detail = _step_detail("step", abs(dx), xtol_, rtol_, x)
            return done(X_TOLERANCE, x, iterations, detail)
        xa, fa, xb, fb = xb, fb, x, fx
