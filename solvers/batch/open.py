"""Newton–Raphson and the secant over arrays: every row with its own iterate and stop.

The element-wise form of :func:`solvers.methods.newton` and :func:`solvers.methods.secant`:
the same tests in the same order on each row (not finite, exact zero checked for
underflow, ``|f| <= ftol``, ``|dx| <= xtol + rtol*|x|``, the iteration cap, a zero or
non-finite derivative, a step that overflows). Rows that stop leave the work at once.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from solvers.batch.rows import (
    EXACT,
    F_TOL,
    MAX_IT,
    NOT_FIN,
    X_TOL,
    ZERO_D,
    Work,
    central_difference,
    mark,
    zero_is_root,
)
from solvers.methods.common import DERIVATIVE_FLOOR


def _test_point(w: Work, code: np.ndarray, x: np.ndarray, fx: np.ndarray,
                s: dict[str, Any]) -> None:
    """The scalar methods' tests at a new point, in their order: not finite; an exact
    zero (a root, or underflow: not finite); ``|f| <= ftol``."""
    mark(code, ~np.isfinite(fx), NOT_FIN)
    zero = np.flatnonzero(fx == 0.0)  # (not finite is never 0.0)
    if zero.size:
        at = x[zero]
        verdict = zero_is_root(w, zero, at, s["xtol"] + s["rtol"] * np.abs(at))
        code[zero] = np.where(verdict, EXACT, NOT_FIN)
    mark(code, np.abs(fx) <= s["ftol"], F_TOL)


def newton(w: Work, s: dict[str, Any]) -> None:
    """Newton–Raphson on every row of ``w`` (start array ``w.x0``); see the module notes."""
    xtol, rtol, cap, damping = (s[k] for k in ("xtol", "rtol", "max_iter", "damping"))
    symbolic = s["derivative"] == "symbolic"
    nan = np.full(w.size, np.nan)
    w.stop(~np.isfinite(w.x0), NOT_FIN, nan, nan)
    w.x = w.x0
    del w.x0  # (one array fewer to compress)
    if not symbolic:
        w.scale = np.where(w.x != 0.0, DERIVATIVE_FLOOR * np.abs(w.x), 1.0)
    w.dx = np.full(w.size, np.nan)  # NaN: no step taken yet
    w.fx = w.f(w.x)
    while w.size:
        w.tick()
        # the usual row goes on: finite |f| above ftol (not NaN, not 0.0), step above tolerance
        size = np.abs(w.fx)
        going = (size > s["ftol"]) & (size < np.inf) & ~(np.abs(w.dx) <= xtol + rtol * np.abs(w.x))
        if w.k >= cap or not going.all():
            code = w.codes()
            _test_point(w, code, w.x, w.fx, s)
            mark(code, np.abs(w.dx) <= xtol + rtol * np.abs(w.x), X_TOL)
            if w.k >= cap:
                code[code < 0] = MAX_IT
            w.finish(code, w.x, w.fx)
            if not w.size:
                break
        dfx = w.fprime(w.x) if symbolic else central_difference(w, w.x, w.fx, w.scale)
        w.step = -damping * w.fx / dfx
        x_new = w.x + w.step
        usable = np.isfinite(x_new) & np.isfinite(dfx)
        if not usable.all():
            code = w.codes()
            mark(code, ~np.isfinite(dfx), NOT_FIN)
            mark(code, dfx == 0.0, ZERO_D)
            bad = ~np.isfinite(x_new)
            mark(code, bad & ~np.isfinite(w.step), ZERO_D)  # a vanishing f': the step overflows
            mark(code, bad, NOT_FIN)
            w.finish(code, w.x, w.fx)
            x_new = w.x + w.step
        w.dx = x_new - w.x
        w.x = x_new
        w.fx = w.f(w.x)
        w.k += 1


def secant(w: Work, s: dict[str, Any]) -> None:
    """The secant method on every row of ``w`` (start arrays ``w.x0``, ``w.x1``)."""
    xtol, rtol, cap = (s[k] for k in ("xtol", "rtol", "max_iter"))
    nan = np.full(w.size, np.nan)
    w.stop(~(np.isfinite(w.x0) & np.isfinite(w.x1)), NOT_FIN, nan, nan)
    # the starting points: a zero or small residual at either ends the row there
    w.xa, w.xb = w.x0.copy(), w.x1.copy()
    w.fa = w.f(w.xa)
    code = w.codes()
    _test_point(w, code, w.xa, w.fa, s)
    w.finish(code, w.xa, w.fa)
    if not w.size:
        return
    w.fb = w.f(w.xb)
    code = w.codes()
    _test_point(w, code, w.xb, w.fb, s)
    w.finish(code, w.xb, w.fb)
    while w.size:
        w.tick()
        code = np.full(w.size, MAX_IT if w.k >= cap else -1, dtype=np.int8)
        mark(code, w.fb == w.fa, ZERO_D)
        difference = w.fb - w.fa
        # fb/(fb - fa) without overflow when f values of opposite signs are huge
        fraction = np.where(np.isinf(difference), 1.0 / (1.0 - w.fa / w.fb), w.fb / difference)
        step = -fraction * (w.xb - w.xa)
        w.x = w.xb + step
        bad = ~np.isfinite(w.x)
        mark(code, bad & ~np.isfinite(step), ZERO_D)
        mark(code, bad, NOT_FIN)
        w.finish(code, w.xb, w.fb)
        if not w.size:
            break
        w.fx = w.f(w.x)
        w.k += 1
        w.dx = w.x - w.xb
        code = w.codes()
        _test_point(w, code, w.x, w.fx, s)
        mark(code, np.abs(w.dx) <= xtol + rtol * np.abs(w.x), X_TOL)
        w.finish(code, w.x, w.fx)
        w.xa, w.fa, w.xb, w.fb = w.xb, w.fb, w.x, w.fx
