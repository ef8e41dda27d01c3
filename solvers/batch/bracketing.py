"""Bisection, false position, Illinois and Brent over arrays: every row keeps its own
bracket and its own stop.

The element-wise form of :mod:`solvers.methods.bracketing` and
:mod:`solvers.methods.brent`: the same start-up (ends not finite, an end's exact zero
checked for underflow, ``|f| <= ftol``, no sign change), the same iterate formulas and the
same verdict on a bracket that closed (root, jump or pole: :func:`closed_verdict`). Rows
that stop leave the work at once, so a row that needs 60 bisections never slows the rows
that needed 8 Brent steps.
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
    closed_verdict,
    iterate_zero,
    same_sign,
    zero_is_root,
)
from solvers.methods.common import _TINY


def start_brackets(w: Work, s: dict[str, Any]) -> None:
    """Evaluate both ends of every row's bracket (``w.a``, ``w.b``); stop the rows they
    settle. Leaves ``w.fa``, ``w.fb`` (an underflowed end carried as -+tiny, flagged in
    ``w.ua``, ``w.ub``) and the bracket as given in ``w.a0, w.fa0, w.b0, w.fb0``."""
    xtol, rtol, ftol = s["xtol"], s["rtol"], s["ftol"]
    nan = np.full(w.size, np.nan)
    w.stop(~(np.isfinite(w.a) & np.isfinite(w.b)), NOT_FIN, nan, nan)
    if not w.size:
        return
    w.fa = w.f(w.a)
    w.fb = w.f(w.b)
    w.stop(~(np.isfinite(w.fa) & np.isfinite(w.fb)), NOT_FIN, w.a, w.fa)
    w.a0, w.b0, w.fa0, w.fb0 = w.a.copy(), w.b.copy(), w.fa.copy(), w.fb.copy()
    w.ua = np.zeros(w.size, dtype=bool)
    w.ub = np.zeros(w.size, dtype=bool)
    for x, fx, flag in (("a", "fa", "ua"), ("b", "fb", "ub")):
        zero = getattr(w, fx) == 0.0
        if zero.any():
            xs = getattr(w, x)
            verdict = zero_is_root(w, zero, xs[zero], xtol + rtol * np.abs(xs[zero]))
            root = np.zeros(w.size, dtype=bool)
            root[np.flatnonzero(zero)[verdict]] = True
            getattr(w, flag)[zero & ~root] = True
            w.stop(root, EXACT, getattr(w, x), getattr(w, fx))
    both = (w.ua & w.ub) | ((w.a == w.b) & (w.ua | w.ub))
    w.stop(both, NOT_FIN, w.a, w.fa)
    w.fa = np.where(w.ua, -np.copysign(_TINY, w.fb), w.fa)
    w.fb = np.where(w.ub, -np.copysign(_TINY, w.fa), w.fb)
    a_better = np.abs(w.fa) <= np.abs(w.fb)
    better, fbetter = np.where(a_better, w.a, w.b), np.where(a_better, w.fa, w.fb)
    w.stop(np.minimum(np.abs(w.fa), np.abs(w.fb)) <= ftol, F_TOL, better, fbetter)
    a_better = np.abs(w.fa) <= np.abs(w.fb)
    nan = np.full(w.size, np.nan)
    w.stop(same_sign(w.fa, w.fb), NO_SIGN, nan, nan)


def _stop_closed(w: Work, mask: np.ndarray, lo, flo, ulo, hi, fhi, uhi, root, froot) -> None:
    if mask.any():
        w.stop(mask, closed_verdict(w, mask, lo, flo, ulo, hi, fhi, uhi), root, froot)


def bisection(w: Work, s: dict[str, Any]) -> None:
    """Bisection on every row's bracket: the midpoint each iterate."""
    xtol, rtol, ftol, cap = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter"))
    start_brackets(w, s)
    if not w.size:
        return
    swap = w.a > w.b
    w.lo, w.hi = np.where(swap, w.b, w.a), np.where(swap, w.a, w.b)
    w.flo, w.fhi = np.where(swap, w.fb, w.fa), np.where(swap, w.fa, w.fb)
    w.ulo, w.uhi = np.where(swap, w.ub, w.ua), np.where(swap, w.ua, w.ub)
    while w.size:
        w.tick()
        lo_better = np.abs(w.flo) <= np.abs(w.fhi)
        w.best = np.where(lo_better, w.lo, w.hi)
        w.fbest = np.where(lo_better, w.flo, w.fhi)
        w.mid = 0.5 * w.lo + 0.5 * w.hi
        narrow = w.hi - w.lo <= xtol + rtol * np.abs(w.best)
        adjacent = ~narrow & (w.k < cap) & ~((w.lo < w.mid) & (w.mid < w.hi))
        _stop_closed(w, narrow | adjacent, w.lo, w.flo, w.ulo, w.hi, w.fhi, w.uhi,
                     w.best, w.fbest)
        w.stop(np.full(w.size, w.k >= cap), MAX_IT, w.best, w.fbest)
        if not w.size:
            break
        w.fmid = w.f(w.mid)
        w.k += 1
        w.stop(~np.isfinite(w.fmid), NOT_FIN, w.best, w.fbest)
        w.umid = np.zeros(w.size, dtype=bool)
        zero = w.fmid == 0.0
        if zero.any():
            root, inside, carried = iterate_zero(
                w, zero, w.mid, w.lo, w.flo, w.ulo, w.hi, w.fhi, w.uhi,
                xtol + rtol * np.abs(w.mid))
            w.fmid = np.where(np.isnan(carried), w.fmid, carried)
            w.umid = ~np.isnan(carried)
            w.stop(root, EXACT, w.mid, w.fmid)
            w.stop(inside, NOT_FIN, w.mid, w.fmid)
        left = same_sign(w.fmid, w.flo)
        w.lo, w.flo, w.ulo = (np.where(left, w.mid, w.lo), np.where(left, w.fmid, w.flo),
                              np.where(left, w.umid, w.ulo))
        w.hi, w.fhi, w.uhi = (np.where(left, w.hi, w.mid), np.where(left, w.fhi, w.fmid),
                              np.where(left, w.uhi, w.umid))
        w.stop(np.abs(w.fmid) <= ftol, F_TOL, w.mid, w.fmid)


def _regula_falsi(w: Work, s: dict[str, Any], illinois_rule: bool) -> None:
    xtol, rtol, ftol, cap = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter"))
    start_brackets(w, s)
    if not w.size:
        return
    # (xb, fb) the newest point, (xa, fa) the retained end of opposite sign; ga the value
    # interpolated at xa (fa, or halved by the Illinois rule)
    w.xa, w.xb, w.ga = w.a, w.b, w.fa.copy()
    nan = np.full(w.size, np.nan)
    w.previous, w.previous_step, w.previous_ratio, w.probe = (nan.copy() for _ in range(4))
    while w.size:
        w.tick()
        lo, hi = np.minimum(w.xa, w.xb), np.maximum(w.xa, w.xb)
        a_better = np.abs(w.fa) < np.abs(w.fb)
        w.best, w.fbest = np.where(a_better, w.xa, w.xb), np.where(a_better, w.fa, w.fb)
        w.stop(np.full(w.size, w.k >= cap), MAX_IT, w.best, w.fbest)
        if not w.size:
            break
        lo, hi = np.minimum(w.xa, w.xb), np.maximum(w.xa, w.xb)
        use_probe = ~np.isnan(w.probe) & (lo < w.probe) & (hi > w.probe)
        denominator = w.fb - w.ga  # never zero: fb and ga have opposite signs
        special = np.isinf(denominator) | (w.ga == 0.0)
        fraction = np.where(special, 1.0 / (1.0 - w.ga / w.fb), w.fb / denominator)
        chord = w.xb - fraction * (w.xb - w.xa)
        x = np.where(use_probe, w.probe, chord)
        w.fallback = ~use_probe & ~((lo < x) & (x < hi))
        w.checking = ~np.isnan(w.probe)
        w.probe = np.full(w.size, np.nan)
        w.x = np.where(w.fallback, 0.5 * lo + 0.5 * hi, x)
        w.lo, w.hi = lo, hi
        adjacent = w.fallback & ~((lo < w.x) & (w.x < hi))
        if adjacent.any():
            lo_first = w.xa < w.xb
            _stop_closed(w, adjacent, np.where(lo_first, w.xa, w.xb),
                         np.where(lo_first, w.fa, w.fb), np.where(lo_first, w.ua, w.ub),
                         np.where(lo_first, w.xb, w.xa), np.where(lo_first, w.fb, w.fa),
                         np.where(lo_first, w.ub, w.ua), w.best, w.fbest)
            if not w.size:
                break
        w.fx = w.f(w.x)
        w.k += 1
        w.stop(~np.isfinite(w.fx), NOT_FIN, w.best, w.fbest)
        w.ux = np.zeros(w.size, dtype=bool)
        zero = w.fx == 0.0
        if zero.any():
            root, inside, carried = iterate_zero(
                w, zero, w.x, w.xa, w.fa, w.ua, w.xb, w.fb, w.ub, xtol + rtol * np.abs(w.x))
            w.fx = np.where(np.isnan(carried), w.fx, carried)
            w.ux = ~np.isnan(carried)
            w.stop(root, EXACT, w.x, w.fx)
            w.stop(inside, NOT_FIN, w.x, w.fx)
        same = same_sign(w.fx, w.fb)
        if illinois_rule:
            w.ga = np.where(same, 0.5 * w.ga, w.fb)
        else:
            w.ga = np.where(same, w.ga, w.fb)
        w.xa, w.fa, w.ua = (np.where(same, w.xa, w.xb), np.where(same, w.fa, w.fb),
                            np.where(same, w.ua, w.ub))
        w.xb, w.fb, w.ub = w.x, w.fx, w.ux
        w.stop(np.abs(w.fx) <= ftol, F_TOL, w.x, w.fx)
        a_better = np.abs(w.fa) < np.abs(w.fb)
        w.best, w.fbest = np.where(a_better, w.xa, w.xb), np.where(a_better, w.fa, w.fb)
        lo, hi = np.minimum(w.xa, w.xb), np.maximum(w.xa, w.xb)
        narrow = hi - lo <= xtol + rtol * np.abs(w.best)
        if narrow.any():
            lo_first = w.xa < w.xb
            _stop_closed(w, narrow, np.where(lo_first, w.xa, w.xb),
                         np.where(lo_first, w.fa, w.fb), np.where(lo_first, w.ua, w.ub),
                         np.where(lo_first, w.xb, w.xa), np.where(lo_first, w.fb, w.fa),
                         np.where(lo_first, w.ub, w.ua), w.best, w.fbest)
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


def _interpolation_step(xa, fa, xb, fb, xc, fc) -> np.ndarray:
    """Element-wise :func:`solvers.methods.brent._interpolation_step` (NaN: bisect)."""
    exponent = np.frexp(np.maximum(np.maximum(np.abs(fa), np.abs(fb)), np.abs(fc)))[1]
    fa, fb, fc = (np.ldexp(v, -exponent) for v in (fa, fb, fc))
    secant = np.where(fb != fa, -fb * (xb - xa) / (fb - fa), np.nan)
    slope_a = (fa - fb) / (xa - xb)
    slope_c = (fc - fb) / (xc - xb)
    denominator = slope_c * slope_a * (fc - fa)
    bad = (denominator == 0.0) | ~np.isfinite(denominator)
    quadratic = np.where(bad, np.nan, -fb * (fc * slope_c - fa * slope_a) / denominator)
    return np.where(xa == xc, secant, quadratic)


def brent(w: Work, s: dict[str, Any]) -> None:
    """Brent's method on every row's bracket (the scalar :func:`solvers.brent`'s steps)."""
    xtol, rtol, ftol, cap = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter"))
    start_brackets(w, s)
    if not w.size:
        return
    w.xa, w.xb, w.xc = w.a.copy(), w.b.copy(), w.a.copy()
    w.fb, w.fc = w.fb.copy(), w.fa.copy()
    w.uc = w.ua.copy()
    w.d = w.xb - w.xa
    w.e = w.d.copy()
    w.bisected = np.zeros(w.size, dtype=bool)
    while w.size:
        w.tick()
        swap = np.abs(w.fc) < np.abs(w.fb)
        # b becomes the better end; a follows the old b so the next step interpolates
        w.xa, w.fa, w.ua = (np.where(swap, w.xb, w.xa), np.where(swap, w.fb, w.fa),
                            np.where(swap, w.ub, w.ua))
        w.xb, w.fb, w.ub = (np.where(swap, w.xc, w.xb), np.where(swap, w.fc, w.fb),
                            np.where(swap, w.uc, w.ub))
        w.xc, w.fc, w.uc = (np.where(swap, w.xa, w.xc), np.where(swap, w.fa, w.fc),
                            np.where(swap, w.ua, w.uc))
        half_tol = 0.5 * (xtol + rtol * np.abs(w.xb))
        m = 0.5 * w.xc - 0.5 * w.xb
        closed = np.abs(m) <= half_tol
        if closed.any():
            b_low = w.xb < w.xc
            _stop_closed(w, closed, np.where(b_low, w.xb, w.xc), np.where(b_low, w.fb, w.fc),
                         np.where(b_low, w.ub, w.uc), np.where(b_low, w.xc, w.xb),
                         np.where(b_low, w.fc, w.fb), np.where(b_low, w.uc, w.ub),
                         w.xb, w.fb)
        w.stop(np.full(w.size, w.k >= cap), MAX_IT, w.xb, w.fb)
        if not w.size:
            break
        half_tol = 0.5 * (xtol + rtol * np.abs(w.xb))
        m = 0.5 * w.xc - 0.5 * w.xb
        informed = ~(w.ua | w.ub | w.uc)
        try_step = informed & (np.abs(w.e) > half_tol) & (np.abs(w.fb) < np.abs(w.fa))
        step = _interpolation_step(w.xa, w.fa, w.xb, w.fb, w.xc, w.fc)
        accept = (try_step & (2.0 * np.abs(step) < np.minimum(np.abs(w.e), 3.0 * np.abs(m)
                                                              - half_tol))
                  & ~((np.abs(step) <= half_tol) & w.bisected))
        w.e, w.d = np.where(accept, w.d, m), np.where(accept, step, m)
        w.bisected = w.d == m
        w.xa, w.fa, w.ua = w.xb, w.fb, w.ub
        w.xb = w.xb + np.where(np.abs(w.d) > half_tol, w.d, np.where(m > 0, half_tol, -half_tol))
        w.fb = w.f(w.xb)
        w.ub = np.zeros(w.size, dtype=bool)
        w.k += 1
        zero = w.fb == 0.0
        if zero.any():
            root, inside, carried = iterate_zero(
                w, zero, w.xb, w.xa, w.fa, w.ua, w.xc, w.fc, w.uc, xtol + rtol * np.abs(w.xb))
            w.fb = np.where(np.isnan(carried), w.fb, carried)
            w.ub = ~np.isnan(carried)
            w.stop(root, EXACT, w.xb, w.fb)
            w.stop(inside, NOT_FIN, w.xb, w.fb)
        change = np.isfinite(w.fb) & ~same_sign(w.fb, w.fa)
        # the root now lies between the new b and the old b: a becomes the contrapoint
        w.xc, w.fc, w.uc = (np.where(change, w.xa, w.xc), np.where(change, w.fa, w.fc),
                            np.where(change, w.ua, w.uc))
        w.d = np.where(change, w.xb - w.xa, w.d)
        w.e = np.where(change, w.d, w.e)
        w.stop(~np.isfinite(w.fb), NOT_FIN, w.xa, w.fa)
        w.stop(np.abs(w.fb) <= ftol, F_TOL, w.xb, w.fb)
