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
                s: dict[str, Any], idx: np.ndarray | None = None) -> None:
    """The scalar methods' tests at a new point, in their order: not finite; an exact
    zero (a root, or underflow: not finite); ``|f| <= ftol``. ``code``, ``x``, ``fx``
    are of the rows ``idx`` (live rows; None: every row of the arrays, dead ones not
    probed)."""
    mark(code, ~np.isfinite(fx), NOT_FIN)
    if idx is None:
        zero = np.flatnonzero(w.live(fx == 0.0))  # (not finite is never 0.0)
        rows = zero
    else:
        zero = np.flatnonzero(fx == 0.0)
        rows = idx.take(zero)
    if zero.size:
        at = x[zero]
        verdict = zero_is_root(w, rows, at, s["xtol"] + s["rtol"] * np.abs(at))
        code[zero] = np.where(verdict, EXACT, NOT_FIN)
    mark(code, np.abs(fx) <= s["ftol"], F_TOL)


def newton(w: Work, s: dict[str, Any]) -> None:
    """Newton–Raphson on every row of ``w`` (start array ``w.x0``); see the module notes.

    Lazy (:meth:`Work.lazy`): a Newton row needs a handful of iterations and most rows
    finish together, so compressing the arrays at every stop would cost more than f on
    the few finished rows. Each iteration first asks, with a few operations on every
    row, which rows may stop or met a bad derivative; the full tests (and their probes)
    run on those rows only.
    """
    xtol, rtol, ftol, cap, damping = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter",
                                                     "damping"))
    symbolic = s["derivative"] == "symbolic"
    nan = np.full(w.size, np.nan)
    w.stop(~np.isfinite(w.x0), NOT_FIN, nan, nan)
    w.x = w.x0
    del w.x0  # (one array fewer to compress)
    if not symbolic:
        w.scale = np.where(w.x != 0.0, DERIVATIVE_FLOOR * np.abs(w.x), 1.0)
    w.lazy()
    w.dx = np.full(w.size, np.nan)  # NaN: no step taken yet
    w.fx = w.f(w.x)
    # Work arrays reused from iteration to iteration, written in place (out=): the
    # arrays of a batch are large, and fresh ones cost page faults on every iteration.
    w.x_new = np.empty(w.size)
    w.limit = np.empty(w.size)
    w.size_ = np.empty(w.size)
    w.going = np.empty(w.size, dtype=bool)
    w.other = np.empty(w.size, dtype=bool)
    while w.size:
        w.tick()
        # the usual row goes on: finite |f| above ftol (not NaN, not 0.0), step above
        # tolerance (after the first step dx of a row at work is never NaN: a row whose
        # step is not finite stops, so > is the scalar test's "not <=")
        size, going, other, limit = w.size_, w.going, w.other, w.limit
        np.abs(w.fx, out=size)
        np.greater(size, ftol, out=going)
        going &= np.less(size, np.inf, out=other)
        np.multiply(np.abs(w.x, out=limit), rtol, out=limit)
        limit += xtol  # (= xtol + rtol*|x|: the same sum)
        if w.k:
            going &= np.greater(np.abs(w.dx, out=size), limit, out=other)
        if w._dead_count:
            going |= w.dead
        if w.k >= cap or not going.all():
            idx = np.flatnonzero(w.live(np.ones(w.size, dtype=bool)) if w.k >= cap
                                 else ~going)
            x, fx = w.x.take(idx), w.fx.take(idx)
            code = np.full(idx.size, -1, dtype=np.int8)
            _test_point(w, code, x, fx, s, idx)
            mark(code, np.abs(w.dx.take(idx)) <= limit.take(idx), X_TOL)
            if w.k >= cap:
                code[code < 0] = MAX_IT
            w.finish_at(idx, code, x, fx)
            if not w.size:
                break
        dfx = w.fprime(w.x) if symbolic else central_difference(w, w.x, w.fx, w.scale)
        step = np.multiply(w.fx, -damping, out=w.size_)  # (= -damping*fx: one product)
        step /= dfx
        x_new = np.add(w.x, step, out=w.x_new)
        usable = np.isfinite(x_new, out=w.going)
        usable &= np.isfinite(dfx, out=w.other)
        if w._dead_count:
            usable |= w.dead
        if not usable.all():
            idx = np.flatnonzero(~usable)
            d, st = dfx.take(idx), step.take(idx)
            code = np.full(idx.size, -1, dtype=np.int8)
            mark(code, ~np.isfinite(d), NOT_FIN)
            mark(code, d == 0.0, ZERO_D)
            bad = ~np.isfinite(x_new.take(idx))
            mark(code, bad & ~np.isfinite(st), ZERO_D)  # a vanishing f': the step overflows
            mark(code, bad, NOT_FIN)
            w.finish_at(idx, code, w.x.take(idx), w.fx.take(idx))
            x_new = w.x_new  # (compressed with the rest if rows left)
        np.subtract(x_new, w.x, out=w.dx)
        w.x, w.x_new = x_new, w.x  # the old x is the next iteration's buffer
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
