"""The iterations: Newton on the Jacobian and Broyden's method, both globalised by a
backtracking line search on phi = ||F||^2 / 2.

Globalisation (both methods)
----------------------------
A line search, not a trust region. From x with residuals F and direction d, the step
x + lam*d is accepted when phi decreases enough (Armijo's condition with c = 1e-4:
phi(x + lam*d) <= phi(x) + c*lam*grad(phi).d, grad(phi) = J^T F); otherwise lam shrinks
(the minimiser of the quadratic through phi(0), phi'(0), phi(lam), kept within
[lam/10, lam/2]). A trial where F is not finite (ln of a negative number, overflow)
halves lam: the search backs into the domain first. A step longer than
100*max(||x||, n) is cut to that length before the search (a start far from the root
would otherwise overflow).

Newton: d solves J d = -F. Where J is singular (its smallest singular value below
n*eps times its largest, or J not finite) the step is Levenberg-Marquardt,
d = -(J^T J + mu I)^-1 J^T F with mu = sqrt(eps)*||J||^2 + ||J^T F|| (worked on J and F
scaled by powers of two, so no finite J or F overflows it), recorded as ``regularised``.
Broyden (the "good" update, B += (y - B s) s^T / s^T s) starts from a forward-difference
Jacobian and refreshes it by differences when its direction fails to
decrease ||F||, and before it may stop: a Broyden matrix can be wrong where a step is small.

Stopping (scale-aware)
----------------------
* ``x_tolerance``: a full (lam = 1, not regularised) step with |dx_i| <= xtol + rtol*|x_i|
  for every unknown, each in its own scale. For Newton that step is J^-1 F: a small step
  with a nonsingular J means a small residual in J's own units. Broyden confirms it with a
  fresh difference Jacobian.
* ``f_tolerance``: max |F_i| <= ftol (ftol in the residuals' units; 0 turns it off).
* ``exact_zero``: every residual exactly 0.
* ``zero_derivative``: the line search cannot decrease ||F|| even along the regularised
  direction: the gradient J^T F vanishes while F does not, so J is singular there (a
  minimum of ||F|| that is no root, such as two circles that do not meet). Never converged.
* ``not_finite``: F or J not finite at the start, or no finite trial along the direction.
* ``max_iterations``: the iteration cap.

Cancel and progress
-------------------
``Problem.poll(k)`` is called before every iteration, on every trial of the line search
and on every column of a difference Jacobian (each is one F call): solve_system's poll
reports progress and raises :class:`solvers.systems.records.SystemCancelled` when asked
to stop, so a cancel takes effect within one evaluation of F, even inside a long search.
"""

from __future__ import annotations

import math
import sys
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from solvers.records import (
    EXACT_ZERO,
    F_TOLERANCE,
    MAX_ITERATIONS,
    NOT_FINITE,
    X_TOLERANCE,
    ZERO_DERIVATIVE,
)

_EPS = float(np.finfo(float).eps)
_ARMIJO = 1e-4
_MIN_LAMBDA = 1e-12
_MAX_STEP = 100.0
# A damped step where grad(phi) = J^T F is this nearly orthogonal to F (relative to
# ||J|| ||F||) means J is singular in F's direction: ||F|| has a minimum there that no
# step will leave. At a root with a nonsingular J the ratio is at least 1/cond(J).
_STALL_COSINE = math.sqrt(_EPS)
_FALLBACK_LAMBDA = 0.1  # a Newton step cut below this fraction: try the regularised one too


@dataclass
class Counter:
    """Evaluations of F and J made so far (a difference Jacobian adds its F calls)."""

    evaluations: int = 0


@dataclass
class Problem:
    """One block: F and J restricted to the block's equations and unknowns."""

    F: Callable[[np.ndarray], np.ndarray]
    J: Callable[[np.ndarray], np.ndarray] | None  # None: differences only (Broyden)
    record: Callable[[np.ndarray, np.ndarray, float, float, bool], None]
    counter: Counter
    poll: Callable[[int], None] = lambda _k: None  # before each iteration and F call
    k: int = 0  # the iteration under way (what poll is told)

    def tick(self, k: int | None = None) -> None:
        """Poll (may raise SystemCancelled); ``k`` starts a new iteration."""
        if k is not None:
            self.k = k
        self.poll(self.k)


@dataclass
class Outcome:
    x: np.ndarray
    reason: str
    iterations: int


def _phi(f: np.ndarray) -> float:
    """||F||^2 / 2; inf when it overflows (a trial step far out), never a warning."""
    with np.errstate(over="ignore"):
        return 0.5 * float(f @ f)


def _finite(a: np.ndarray) -> bool:
    return bool(np.isfinite(a).all())


def _small_step(dx: np.ndarray, x: np.ndarray, xtol: float, rtol: float) -> bool:
    return bool((np.abs(dx) <= xtol + rtol * np.abs(x)).all())


def _differences(p: Problem, x: np.ndarray, f0: np.ndarray) -> np.ndarray:
    n = x.size
    jac = np.empty((f0.size, n))
    for j in range(n):
        h = math.sqrt(_EPS) * max(abs(x[j]), 1.0)
        xh = x.copy()
        xh[j] += h
        p.tick()
        p.counter.evaluations += 1
        jac[:, j] = (p.F(xh) - f0) / (xh[j] - x[j])
    return jac


def _direction(jac: np.ndarray, f: np.ndarray) -> tuple[np.ndarray, bool]:
    """(d, regularised): the Newton direction, or Levenberg-Marquardt where J is singular."""
    n = f.size
    if _finite(jac):
        s = np.linalg.svd(jac, compute_uv=False)
        if s[-1] > n * _EPS * s[0]:
            try:
                d = np.linalg.solve(jac, -f)
                if _finite(d):
                    return d, False
            except np.linalg.LinAlgError:
                pass
        return _levenberg(jac, f), True
    return np.full(n, np.nan), True


def _power_of_two(a: np.ndarray) -> float:
    """The power of two at or below the largest |a_i| (0.0 when a is all zero)."""
    largest = float(np.max(np.abs(a)))
    return math.ldexp(1.0, math.frexp(largest)[1] - 1) if largest > 0 else 0.0


def _levenberg(jac: np.ndarray, f: np.ndarray) -> np.ndarray:
    """The Levenberg-Marquardt direction -(J^T J + mu I)^-1 J^T F (see the module docstring).

    Worked on J and F divided by powers of two (sj, sf: exact, so the direction has the
    bits of the formula as written wherever that does not overflow): with r = sf/sj the
    system is divided by sj^2, or by sj^2 r where r >= 1, so that neither ||J||^2, J^T J
    nor J^T F overflows for any finite J and F (a parameter of 1e-300 in a denominator
    made ||J||^2 an OverflowError). Where J^T J is negligible beside mu the direction
    tends to -J^T F / ||J^T F||, steepest descent of unit length; the cap and the line
    search take it from there. Zero when J^T F is (nothing to descend along)."""
    sj, sf = _power_of_two(jac), _power_of_two(f)
    if sj == 0.0 or sf == 0.0:
        return np.zeros(f.size)
    js = jac / sj
    g = js.T @ (f / sf)
    a = js.T @ js
    norm_g = float(np.linalg.norm(g))
    if norm_g == 0.0:
        return np.zeros(f.size)
    lm = math.sqrt(_EPS) * float(np.linalg.norm(js, 2)) ** 2
    r = sf / sj if math.frexp(sf)[1] - math.frexp(sj)[1] < 1000 else math.inf
    with np.errstate(under="ignore"):
        if r >= 1.0:  # divided by r too: the direction's size is r, at most
            scale = 1.0 / r
            matrix = a * scale + (lm * scale + norm_g) * np.eye(f.size)
            return np.linalg.solve(matrix, -g)
        return np.linalg.solve(a + (lm + r * norm_g) * np.eye(f.size), -r * g)


def _cap(d: np.ndarray, x: np.ndarray) -> np.ndarray:
    longest = _MAX_STEP * max(float(np.linalg.norm(x)), float(x.size))
    length = float(np.linalg.norm(d))
    return d * (longest / length) if length > longest else d


def _fraction(lam: float, taken: np.ndarray, full: np.ndarray) -> float:
    """The damping recorded for a step: the fraction of the full step taken, lam times the
    cap's shortening of the direction. From lam and the directions, not from the norm of
    x_new - x (rounding in x + lam*d - x made a full step read 0.9999999999999999, and
    0.99999988 where the step is tiny beside x): a full step records exactly 1.0."""
    if taken is full:
        return float(lam)
    return min(1.0, float(lam) * float(np.linalg.norm(taken) / np.linalg.norm(full)))


def _search(p: Problem, x: np.ndarray, f: np.ndarray, d: np.ndarray, slope: float
            ) -> tuple[np.ndarray, np.ndarray, float] | None:
    """(x_new, F_new, lam) with sufficient decrease of phi along d, or None."""
    phi0 = _phi(f)
    lam = 1.0
    while lam >= _MIN_LAMBDA:
        xt = x + lam * d
        p.tick()
        p.counter.evaluations += 1
        ft = p.F(xt)
        if not _finite(ft):
            lam *= 0.5  # back into the domain first
            continue
        phit = _phi(ft)
        if phit <= phi0 + _ARMIJO * lam * slope:
            return xt, ft, lam
        denominator = 2.0 * (phit - phi0 - slope * lam)
        trial = -slope * lam * lam / denominator if denominator > 0 else 0.5 * lam
        lam = min(max(trial, 0.1 * lam), 0.5 * lam)
    return None


def _stalled(jac: np.ndarray, f: np.ndarray, step: np.ndarray, x: np.ndarray, xtol: float,
             rtol: float) -> bool:
    """After a damped step: no progress left (the step is below the tolerance although the
    full step is not), or the gradient of ||F||^2 has vanished relative to ||J|| ||F||."""
    if _small_step(step, x, xtol, rtol):
        return True
    g = float(np.linalg.norm(jac.T @ f))
    scale = float(np.linalg.norm(jac)) * float(np.linalg.norm(f))
    return scale > 0 and g <= _STALL_COSINE * scale


def _stop_on_residual(p: Problem, x: np.ndarray, f: np.ndarray, ftol: float, xtol: float,
                      rtol: float) -> str | None:
    """EXACT_ZERO / F_TOLERANCE when the residuals say so, else None.

    Every residual exactly 0.0 is also what terms below ~1e-308 give (exp(-x) = 0 has no
    root, yet evaluates to 0.0 for x > 745): as for one equation, F is evaluated beside x,
    one unknown at a time by its step tolerance, and the zero counts as a root only when
    some neighbour has finite residuals that are not all zero; otherwise the run stops as
    ``not_finite`` (underflow), never converged.
    """
    if not f.any():
        for j in range(x.size):
            step = max(xtol + rtol * abs(x[j]), 2.0 * math.ulp(x[j]), sys.float_info.min)
            for side in (step, -step):
                xs = x.copy()
                xs[j] += side
                p.counter.evaluations += 1
                fs = p.F(xs)
                if _finite(fs) and fs.any():
                    return EXACT_ZERO
        return NOT_FINITE
    if ftol > 0 and float(np.max(np.abs(f))) <= ftol:
        return F_TOLERANCE
    return None


def _start(p: Problem, x0: np.ndarray, *, xtol: float, rtol: float, ftol: float
           ) -> tuple[np.ndarray, np.ndarray, Outcome | None]:
    """F at the start point, recorded as iterate 0; an Outcome when the run ends there
    (F undefined, or the start already meets a residual stop)."""
    x = x0.copy()
    p.counter.evaluations += 1
    f = p.F(x)
    p.record(x, f, 0.0, 0.0, False)
    if not _finite(f):
        return x, f, Outcome(x, NOT_FINITE, 0)
    stop = _stop_on_residual(p, x, f, ftol, xtol, rtol)
    return x, f, (Outcome(x, stop, 0) if stop else None)


def newton(p: Problem, x0: np.ndarray, *, xtol: float, rtol: float, ftol: float,
           max_iter: int) -> Outcome:
    """Newton with the line search; see the module docstring for the rules."""
    x, f, ended = _start(p, x0, xtol=xtol, rtol=rtol, ftol=ftol)
    if ended:
        return ended
    for k in range(1, max_iter + 1):
        p.tick(k)
        if p.J is None:
            jac = _differences(p, x, f)
        else:
            p.counter.evaluations += 1
            jac = p.J(x)
            if not _finite(jac):
                jac = _differences(p, x, f)  # e.g. a kink's derivative at the point itself
        if not _finite(jac):
            return Outcome(x, NOT_FINITE, k - 1)
        d, regularised = _direction(jac, f)
        full = d
        d = _cap(d, x)
        slope = float((jac.T @ f) @ d)
        if not regularised and d is full and _small_step(d, x, xtol, rtol):
            p.counter.evaluations += 1
            fn = p.F(x + d)
            if _finite(fn):  # the Newton step itself is within the tolerance: a root
                x = x + d
                f = fn
                p.record(x, f, float(np.linalg.norm(d)), 1.0, False)
                return Outcome(x, _stop_on_residual(p, x, f, ftol, xtol, rtol) or X_TOLERANCE, k)
        found = _search(p, x, f, d, slope) if slope < 0 else None
        if not regularised and (found is None or found[2] < _FALLBACK_LAMBDA):
            # a Newton step cut this short means J is nearly singular: try the
            # regularised direction too and keep whichever lowers ||F|| more
            d2 = _levenberg(jac, f)
            other = _search(p, x, f, d2, float((jac.T @ f) @ d2))
            if other is not None and (found is None or _phi(other[1]) < _phi(found[1])):
                found, full, d, regularised = other, d2, d2, True
        if found is None:
            return Outcome(x, ZERO_DERIVATIVE, k - 1)
        x_new, f, lam = found
        step = x_new - x
        x = x_new
        p.record(x, f, float(np.linalg.norm(step)), _fraction(lam, d, full), regularised)
        stop = _stop_on_residual(p, x, f, ftol, xtol, rtol)
        if stop:
            return Outcome(x, stop, k)
        if (lam < 1.0 or regularised) and _stalled(jac, f, step, x, xtol, rtol):
            return Outcome(x, ZERO_DERIVATIVE, k)
    return Outcome(x, MAX_ITERATIONS, max_iter)


def broyden(p: Problem, x0: np.ndarray, *, xtol: float, rtol: float, ftol: float,
            max_iter: int) -> Outcome:
    """Broyden's good update with the same line search; differences only (no J)."""
    x, f, ended = _start(p, x0, xtol=xtol, rtol=rtol, ftol=ftol)
    if ended:
        return ended
    b = _differences(p, x, f)
    fresh = True
    k = 0
    while k < max_iter:
        p.tick(k + 1)
        if not _finite(b):
            return Outcome(x, NOT_FINITE, k)
        d, regularised = _direction(b, f)
        full = d
        d = _cap(d, x)
        if not regularised and d is full and _small_step(d, x, xtol, rtol):
            if not fresh:  # confirm with a fresh Jacobian before stopping
                b, fresh = _differences(p, x, f), True
                continue
            p.counter.evaluations += 1
            fn = p.F(x + d)
            if _finite(fn):
                k += 1
                x, f = x + d, fn
                p.record(x, f, float(np.linalg.norm(d)), 1.0, False)
                return Outcome(x, _stop_on_residual(p, x, f, ftol, xtol, rtol) or X_TOLERANCE, k)
        slope = float((b.T @ f) @ d)
        found = _search(p, x, f, d, slope) if slope < 0 else None
        if found is None and not fresh:
            b, fresh = _differences(p, x, f), True
            continue
        if not regularised and (found is None or found[2] < _FALLBACK_LAMBDA):
            d2 = _levenberg(b, f)  # as in Newton: the regularised direction as well
            other = _search(p, x, f, d2, float((b.T @ f) @ d2))
            if other is not None and (found is None or _phi(other[1]) < _phi(found[1])):
                found, full, d, regularised = other, d2, d2, True
        if found is None:
            return Outcome(x, ZERO_DERIVATIVE, k)
        x_new, f_new, lam = found
        k += 1
        s = x_new - x
        y = f_new - f
        ss = float(s @ s)
        stall = (lam < 1.0 or regularised) and fresh and _stalled(b, f_new, s, x_new, xtol, rtol)
        if ss > 0:
            b = b + np.outer(y - b @ s, s) / ss
        fresh = False
        x, f = x_new, f_new
        p.record(x, f, float(np.linalg.norm(s)), _fraction(lam, d, full), regularised)
        stop = _stop_on_residual(p, x, f, ftol, xtol, rtol)
        if stop:
            return Outcome(x, stop, k)
        if stall:
            return Outcome(x, ZERO_DERIVATIVE, k)
        if (lam < 1.0 or regularised) and _small_step(s, x, xtol, rtol):
            b, fresh = _differences(p, x, f), True  # no progress with this B: refresh it
    return Outcome(x, MAX_ITERATIONS, max_iter)
