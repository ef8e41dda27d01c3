"""Bisection, false position, Illinois and Brent over arrays: every row keeps its own
bracket and its own stop.

The element-wise form of :mod:`solvers.methods.bracketing` and
:mod:`solvers.methods.brent`: the same start-up (ends not finite, an end's exact zero
checked for underflow, ``|f| <= ftol``, no sign change), the same iterate formulas and the
same verdict on a bracket that closed (root, jump or pole: :func:`closed_verdict`). Rows
that stop leave the work at once, so a row that needs 60 bisections never slows the rows
that needed 8 Brent steps. Updates that touch few rows (a swap of ends, a new
contrapoint) are written in place on those rows only.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from solvers.batch.rows import (
    EXACT,
    F_TOL,
    MAX_IT,
    NO_SIGN,
    NOT_FIN,
    Work,
    carried,
    closed_verdict,
    iterate_zero,
    mark,
    same_sign,
    zero_is_root,
)
from solvers.methods.common import _TINY


def start_brackets(w: Work, s: dict[str, Any]) -> None:
    """Evaluate both ends of every row's bracket (``w.a``, ``w.b``); stop the rows they
    settle. Leaves ``w.fa``, ``w.fb`` (an end whose f underflowed to 0.0 carried as
    -+tiny, the sign opposite to the other end's) and the bracket as given in
    ``w.kept`` (a0, fa0, b0, fb0); ``w.tiny`` says whether any end was carried."""
    xtol, rtol, ftol = s["xtol"], s["rtol"], s["ftol"]
    nan = np.full(w.size, np.nan)
    w.stop(~(np.isfinite(w.a) & np.isfinite(w.b)), NOT_FIN, nan, nan)
    w.tiny = False
    if not w.size:
        return
    w.fa = w.f(w.a)
    w.fb = w.f(w.b)
    w.stop(~(np.isfinite(w.fa) & np.isfinite(w.fb)), NOT_FIN, w.a, w.fa)
    w.keep(a0=w.a, b0=w.b, fa0=w.fa, fb0=w.fb)
    under_a = np.zeros(w.size, dtype=bool)
    under_b = np.zeros(w.size, dtype=bool)
    for x, fx, under in (("a", "fa", under_a), ("b", "fb", under_b)):
        zero = np.flatnonzero(getattr(w, fx) == 0.0)
        if zero.size:
            at = getattr(w, x)[zero]
            verdict = zero_is_root(w, zero, at, xtol + rtol * np.abs(at))
            under[zero[~verdict]] = True
            code = w.codes()
            code[zero[verdict]] = EXACT
            w.finish(code, getattr(w, x), getattr(w, fx))
            keep = np.ones(code.size, dtype=bool)
            keep[zero[verdict]] = False
            under_a, under_b = under_a[keep], under_b[keep]
            under = under_a if x == "a" else under_b
    both = (under_a & under_b) | ((w.a == w.b) & (under_a | under_b))
    if both.any():
        w.stop(both, NOT_FIN, w.a, w.fa)
        under_a, under_b = under_a[~both], under_b[~both]
    if under_a.any() or under_b.any():
        w.tiny = True
        w.fa = np.where(under_a, -np.copysign(_TINY, w.fb), w.fa)
        w.fb = np.where(under_b, -np.copysign(_TINY, w.fa), w.fb)
    code = w.codes()
    a_better = np.abs(w.fa) <= np.abs(w.fb)
    mark(code, np.minimum(np.abs(w.fa), np.abs(w.fb)) <= ftol, F_TOL)
    mark(code, same_sign(w.fa, w.fb), NO_SIGN)
    w.finish(code, np.where(a_better, w.a, w.b), np.where(a_better, w.fa, w.fb))


def _closed(w: Work, code: np.ndarray, closed: np.ndarray, x1, f1, x2, f2) -> None:
    """Write the verdicts of the rows whose bracket (x1, x2) closed into ``code``."""
    idx = np.flatnonzero(closed)
    if idx.size:
        code[idx] = _verdicts(w, idx, x1[idx], f1[idx], x2[idx], f2[idx])


def _new_point(w: Work, s: dict[str, Any], code: np.ndarray, x: np.ndarray, fx: np.ndarray,
               x1, f1, x2, f2, idx: np.ndarray | None = None) -> np.ndarray:
    """The tests at a bracketing iterate x (ends (x1, f1), (x2, f2)), in the scalar order:
    not finite; an exact zero (root, underflow inside, or carried from an end's stretch
    of underflow). The arguments are of the rows ``idx`` (None: every row of the
    arrays). Returns f to go on with."""
    mark(code, ~np.isfinite(fx), NOT_FIN)
    zero = np.flatnonzero(fx == 0.0)
    if zero.size:
        rows = zero if idx is None else idx.take(zero)
        root, inside, value = iterate_zero(w, rows, x[zero], x1[zero], f1[zero], x2[zero],
                                           f2[zero], s["xtol"] + s["rtol"] * np.abs(x[zero]))
        code[zero[root]] = EXACT
        code[zero[inside]] = NOT_FIN
        fx = fx.copy()
        fx[zero] = value
        w.tiny = w.tiny or bool(carried(value).any())
    return fx


def bisection(w: Work, s: dict[str, Any]) -> None:
    """Bisection on every row's bracket: the midpoint each iterate."""
    xtol, rtol, ftol, cap = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter"))
    start_brackets(w, s)
    if not w.size:
        return
    swap = w.a > w.b
    w.lo, w.hi = np.where(swap, w.b, w.a), np.where(swap, w.a, w.b)
    w.flo, w.fhi = np.where(swap, w.fb, w.fa), np.where(swap, w.fa, w.fb)
    del w.a, w.b, w.fa, w.fb
    while w.size:
        w.tick()
        lo_better = np.abs(w.flo) <= np.abs(w.fhi)
        best, fbest = np.where(lo_better, w.lo, w.hi), np.where(lo_better, w.flo, w.fhi)
        w.mid = 0.5 * w.lo + 0.5 * w.hi
        code = w.codes()
        closed = w.hi - w.lo <= xtol + rtol * np.abs(best)
        if w.k < cap:  # two adjacent doubles cannot be split: closed as well
            closed |= ~((w.lo < w.mid) & (w.mid < w.hi))
        _closed(w, code, closed, w.lo, w.flo, w.hi, w.fhi)
        if w.k >= cap:
            code[code < 0] = MAX_IT
        w.finish(code, best, fbest)
        if not w.size:
            break
        fmid = w.f(w.mid)
        w.k += 1
        code = w.codes()
        fmid = _new_point(w, s, code, w.mid, fmid, w.lo, w.flo, w.hi, w.fhi)
        left = np.flatnonzero(same_sign(fmid, w.flo) & (code < 0))
        right = np.flatnonzero(~same_sign(fmid, w.flo) & (code < 0))
        w.lo[left], w.flo[left] = w.mid[left], fmid[left]
        w.hi[right], w.fhi[right] = w.mid[right], fmid[right]
        mark(code, np.abs(fmid) <= ftol, F_TOL)
        w.finish(code, w.mid, fmid)


def _regula_falsi(w: Work, s: dict[str, Any], illinois_rule: bool) -> None:
    xtol, rtol, ftol, cap = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter"))
    start_brackets(w, s)
    if not w.size:
        return
    # (xb, fb) the newest point, (xa, fa) the retained end of opposite sign; ga the value
    # interpolated at xa (fa, or halved by the Illinois rule)
    w.xa, w.xb, w.ga = w.a, w.b, w.fa.copy()
    del w.a, w.b
    nan = np.full(w.size, np.nan)
    if not illinois_rule:
        w.previous, w.previous_step, w.previous_ratio = nan.copy(), nan.copy(), nan.copy()
    w.probe = nan.copy()
    while w.size:
        w.tick()
        lo, hi = np.minimum(w.xa, w.xb), np.maximum(w.xa, w.xb)
        use_probe = (lo < w.probe) & (w.probe < hi)  # (false where there is none: NaN)
        denominator = w.fb - w.ga  # never zero: fb and ga have opposite signs
        special = np.isinf(denominator) | (w.ga == 0.0)
        if special.any():
            fraction = np.where(special, 1.0 / (1.0 - w.ga / w.fb), w.fb / denominator)
        else:
            fraction = w.fb / denominator
        x = np.where(use_probe, w.probe, w.xb - fraction * (w.xb - w.xa))
        w.fallback = ~use_probe & ~((lo < x) & (x < hi))
        w.checking = ~np.isnan(w.probe)
        if w.fallback.any():  # rounding put the chord's zero on an end: the midpoint
            x = np.where(w.fallback, 0.5 * lo + 0.5 * hi, x)
        w.x = x
        a_better = np.abs(w.fa) < np.abs(w.fb)
        w.best, w.fbest = np.where(a_better, w.xa, w.xb), np.where(a_better, w.fa, w.fb)
        code = np.full(w.size, MAX_IT if w.k >= cap else -1, dtype=np.int8)
        if w.k < cap:
            _closed(w, code, w.fallback & ~((lo < x) & (x < hi)), w.xa, w.fa, w.xb, w.fb)
        w.finish(code, w.best, w.fbest)
        if not w.size:
            break
        w.probe = np.full(w.size, np.nan)
        fx = w.f(w.x)
        w.k += 1
        code = w.codes()
        fx = _new_point(w, s, code, w.x, fx, w.xa, w.fa, w.xb, w.fb)
        w.fx = fx
        # (a row that stops here reports best, the end of smaller |f| before this iterate,
        # as the scalar method does: for exact zero and ftol the iterate itself, below)
        same = same_sign(fx, w.fb)
        moved = np.flatnonzero(~same)
        if illinois_rule:  # xa retained once more: halve its value to pull the next over
            w.ga = np.where(same, 0.5 * w.ga, w.fb)
        else:
            w.ga[moved] = w.fb[moved]
        w.xa[moved], w.fa[moved] = w.xb[moved], w.fb[moved]
        w.xb, w.fb = w.x, fx
        mark(code, np.abs(fx) <= ftol, F_TOL)
        converged_here = (code == EXACT) | (code == F_TOL)
        a_better = np.abs(w.fa) < np.abs(w.fb)
        best = np.where(a_better, w.xa, w.xb)
        fbest = np.where(a_better, w.fa, w.fb)
        closed = (code < 0) & (np.abs(w.xb - w.xa) <= xtol + rtol * np.abs(best))
        _closed(w, code, closed, w.xa, w.fa, w.xb, w.fb)
        w.finish(code, np.where(converged_here, w.x, best), np.where(converged_here, fx, fbest))
        if illinois_rule or not w.size:
            continue  # Illinois: both ends move, so the bracket width alone decides
        _false_position_estimate(w, xtol, rtol)


def _false_position_estimate(w: Work, xtol: float, rtol: float) -> None:
    """Plain false position's check of its linear-convergence estimate (the scalar
    method's rule): when the error estimated from the last chord steps is below
    tolerance, the next iterate is the probe half a tolerance towards the other end."""
    reset = w.fallback | w.checking
    nan = np.full(w.size, np.nan)
    w.previous_step = np.where(reset, nan, w.previous_step)
    w.previous_ratio = np.where(reset, nan, w.previous_ratio)
    go = ~reset & ~np.isnan(w.previous)
    step = np.abs(w.x - w.previous)
    had_step = go & ~np.isnan(w.previous_step)
    with np.errstate(all="ignore"):
        ratio = step / w.previous_step
        c = np.where(np.isnan(w.previous_ratio), ratio, np.maximum(ratio, w.previous_ratio))
        error = step * np.maximum(1.0, c / (1.0 - c))
    tolerance = xtol + rtol * np.abs(w.x)
    check = had_step & ~np.isnan(w.previous_ratio) & (c < 1.0) & (error <= tolerance)
    w.probe = np.where(check, w.x + np.copysign(0.5 * tolerance, w.xa - w.x), np.nan)
    w.previous_ratio = np.where(had_step, ratio, w.previous_ratio)
    w.previous_step = np.where(go, step, w.previous_step)
    w.previous = np.where(reset, nan, w.x)


def false_position(w: Work, s: dict[str, Any]) -> None:
    """Plain false position on every row's bracket."""
    _regula_falsi(w, s, illinois_rule=False)


def illinois(w: Work, s: dict[str, Any]) -> None:
    """Illinois-modified false position on every row's bracket."""
    _regula_falsi(w, s, illinois_rule=True)


_SAFE = 2.0**300  # f values within [2**-300, 2**300]: the interpolation cannot overflow


def _interpolation_step(xa, fa, xb, fb, xc, fc, dead, afa, afb, afc) -> np.ndarray:
    """Element-wise :func:`solvers.methods.brent._interpolation_step` (not finite: bisect).

    The step is homogeneous of degree 0 in f, and scaling by a power of two is exact, so
    the scalar method's scaling changes nothing where the values are far from under- and
    overflow: it is applied only when some row's values are not (``dead`` rows, a lazy
    work's finished ones, left out of that question). Brent keeps |fb| <= |fc|, so the
    largest |f| of a row is that of a or c (``afa``, ``afb``, ``afc``: the |f| the caller
    keeps, read only). Every value is the scalar's, bit for bit (written in place to
    spare the temporaries; signs moved only where that is exact, below); the secant is
    computed only when some row has a == c, the quadratic only when some row has not.
    """
    big = np.maximum(afa, afc)
    if not (big.max() < _SAFE and big.min() > 1.0 / _SAFE):
        out = ~((big < _SAFE) & (big > 1.0 / _SAFE))
        if dead is not None:
            out &= ~dead
        if out.any():
            exponent = np.frexp(np.maximum(big, afb))[1]
            fa, fb, fc = (np.ldexp(v, -exponent) for v in (fa, fb, fc))
    # The scalar's -fb*(...) written as fb*(...) with the differences the other way
    # round: x - y is -(y - x) and (-u)*v is -(u*v) exactly in binary floating point,
    # so every value is the scalar's, bit for bit, with one operation fewer.
    two_point = np.equal(xa, xc)
    some_two = two_point.any()
    back = np.subtract(xa, xb)
    secant = None
    if some_two:
        # secant: -fb*(xb - xa)/(fb - fa) (NaN or inf where fb == fa)
        secant = np.multiply(fb, back)
        secant /= np.subtract(fb, fa, out=big)
        if two_point.all():
            return secant
    slope_a = np.subtract(fa, fb)
    slope_a /= back
    slope_c = np.subtract(fc, fb)
    slope_c /= np.subtract(xc, xb, out=big)
    # quadratic: -fb*(fc*slope_c - fa*slope_a)/(slope_c*slope_a*(fc - fa))
    denominator = np.multiply(slope_c, slope_a)
    denominator *= np.subtract(fc, fa, out=big)
    quadratic = np.multiply(fa, slope_a, out=slope_a)
    quadratic -= np.multiply(fc, slope_c, out=slope_c)
    quadratic *= fb
    quadratic /= denominator
    if some_two:  # (np.where: a masked copyto is slower on a mask of scattered rows)
        quadratic = np.where(two_point, secant, quadratic)
    # A zero or overflowing denominator gives a step that is not finite: the scalar
    # method bisects there, and so does the caller, since a step that is not finite
    # never passes its test 2|step| < min(|e|, 3|m| - half_tol).
    return quadratic


def _verdicts(w: Work, idx: np.ndarray, x1, f1, x2, f2) -> np.ndarray:
    """The closed-bracket verdicts of the rows ``idx`` (the other arguments theirs)."""
    first = x1 < x2
    return closed_verdict(w, idx, np.where(first, x1, x2), np.where(first, f1, f2),
                          np.where(first, x2, x1), np.where(first, f2, f1))


def brent(w: Work, s: dict[str, Any]) -> None:
    """Brent's method on every row's bracket (the scalar :func:`solvers.brent`'s steps).

    Lazy (:meth:`Work.lazy`): finished rows ride along until they are a quarter of the
    arrays. Each iteration asks with a few operations on every row which rows closed
    their bracket or met a new point that stops them (not finite, 0.0, ``ftol``); the
    verdicts and probes run on those rows only.
    """
    xtol, rtol, ftol, cap = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter"))
    start_brackets(w, s)
    if not w.size:
        return
    w.xa, w.xb, w.xc = w.a.copy(), w.b.copy(), w.a.copy()
    w.fb, w.fc = w.fb.copy(), w.fa.copy()
    # |f| at a, b and c, kept beside the values: the new b's |f| is computed for the
    # stop tests anyway, and a, c take theirs over from b and a
    w.afa, w.afb, w.afc = np.abs(w.fa), np.abs(w.fb), np.abs(w.fc)
    del w.a, w.b
    w.d = w.xb - w.xa
    w.e = w.d.copy()
    w.bisected = np.zeros(w.size, dtype=bool)
    w.lazy()
    while w.size:
        w.tick()
        afa, afb, afc = w.afa, w.afb, w.afc
        swap = np.flatnonzero(afc < afb)
        if swap.size:  # b becomes the better end; a follows the old b to interpolate
            old_b, old_fb, old_afb = w.xb[swap], w.fb[swap], afb[swap]
            w.xa[swap], w.fa[swap], afa[swap] = old_b, old_fb, old_afb
            w.xb[swap], w.fb[swap], afb[swap] = w.xc[swap], w.fc[swap], afc[swap]
            w.xc[swap], w.fc[swap], afc[swap] = old_b, old_fb, old_afb
        half_tol = np.abs(w.xb)
        half_tol *= rtol
        half_tol += xtol
        half_tol *= 0.5  # = 0.5*(xtol + rtol*|xb|)
        m = 0.5 * w.xc
        m -= 0.5 * w.xb  # = (xc - xb)/2 without overflow on wide brackets
        abs_m = np.abs(m)
        closed = abs_m <= half_tol
        if w._dead_count:
            np.greater(closed, w.dead, out=closed)  # closed and not dead
        if w.k >= cap or closed.any():
            if w.k >= cap:
                idx = np.flatnonzero(w.live(np.ones(w.size, dtype=bool)))
                code = np.full(idx.size, MAX_IT, dtype=np.int8)
                shut = np.flatnonzero(closed.take(idx))
            else:
                idx = np.flatnonzero(closed)
                code = np.empty(idx.size, dtype=np.int8)
                shut = np.arange(idx.size)
            if shut.size:
                at = idx.take(shut)
                code[shut] = _verdicts(w, at, w.xb.take(at), w.fb.take(at), w.xc.take(at),
                                       w.fc.take(at))
            w.half_tol, w.m, w.abs_m = half_tol, m, abs_m
            w.finish_at(idx, code, w.xb.take(idx), w.fb.take(idx))
            if not w.size:
                break
            half_tol, m, abs_m = w.half_tol, w.m, w.abs_m
            afa, afb, afc = w.afa, w.afb, w.afc
            del w.half_tol, w.m, w.abs_m
        abs_e = np.abs(w.e)
        accept = abs_e > half_tol
        accept &= afb < afa
        if w.tiny:  # a value that underflowed has a sign but no size: bisect there
            accept &= ~(carried(w.fa) | carried(w.fb) | carried(w.fc))
        step = _interpolation_step(w.xa, w.fa, w.xb, w.fb, w.xc, w.fc, w.dead, afa, afb, afc)
        size = np.abs(step)
        # 2|step| < min(|e|, 3|m| - half_tol), and no tiny step twice after a bisection
        small = size <= half_tol
        limit = np.multiply(abs_m, 3.0, out=abs_m)
        limit -= half_tol
        np.minimum(abs_e, limit, out=limit)
        size *= 2.0
        accept &= size < limit
        # the steps taken: an accepted step shorter than half_tol moves half_tol instead
        # (every bisection of a row at work is longer: its bracket has not closed);
        # short steps are proposed only near the end, so most iterations ask no more
        short = None
        if small.any():
            np.greater(accept, small & w.bisected, out=accept)  # not (small, bisected)
            short = np.flatnonzero(small & accept)
        # e takes over d (its array too) and d the step, where a row bisects m in both
        # (few rows: written by index)
        w.e = w.d
        if not accept.all():
            bisect = np.flatnonzero(~accept)
            m_bisect = m.take(bisect)
            w.e[bisect] = m_bisect
            step[bisect] = m_bisect
        w.d = step
        w.bisected = np.equal(step, m, out=w.bisected)
        w.xa, w.fa, w.afa = w.xb, w.fb, afb
        w.xb = w.xb + step
        if short is not None and short.size:
            w.xb[short] = w.xa.take(short) + np.copysign(half_tol.take(short), m.take(short))
        w.fb = w.f(w.xb)
        w.k += 1
        # the usual row goes on: f finite, not 0.0, above ftol
        w.afb = size = np.abs(w.fb, out=size)
        going = size > ftol
        if w._dead_count:
            going |= w.dead
        if not (going.all() and size.max() < np.inf):
            going &= size < np.inf
            if w._dead_count:
                going |= w.dead
            idx = np.flatnonzero(~going)
            if idx.size:
                fx = w.fb.take(idx)
                code = np.full(idx.size, -1, dtype=np.int8)
                x = w.xb.take(idx)
                fx = _new_point(w, s, code, x, fx, w.xa.take(idx), w.fa.take(idx),
                                w.xc.take(idx), w.fc.take(idx), idx)
                w.fb[idx] = fx
                w.afb[idx] = np.abs(fx)
                mark(code, np.abs(fx) <= ftol, F_TOL)
                w.finish_at(idx, code, x, fx)
                if not w.size:
                    break
        # the root now lies between the new b and the old b: a becomes the contrapoint
        # (every row at work has a finite f here, not 0.0: the others have stopped)
        change = np.flatnonzero((w.fb > 0.0) != (w.fa > 0.0))
        if change.size:
            xa, fa = w.xa[change], w.fa[change]
            w.xc[change], w.fc[change] = xa, fa
            np.abs(w.fc, out=w.afc)  # (one pass: cheaper than moving |fa| at the rows)
            d = w.xb[change] - xa
            w.d[change] = d
            w.e[change] = d
