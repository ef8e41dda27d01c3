"""Bisection, false position, Illinois and Brent over arrays: every row keeps its own
bracket and its own stop.

The element-wise form of :mod:`solvers.methods.bracketing` and
:mod:`solvers.methods.brent`: the same start-up (ends not finite, an end's exact zero
checked for underflow, ``|f| <= ftol``, no sign change), the same iterate formulas and the
same verdict on a bracket that closed (root, jump or pole: :func:`closed_verdict`).
The start-up is numpy; each iteration after it is one compiled pass over the rows
(:mod:`solvers.batch.kernels`, numba, imported on first use) and f evaluated, vectorised,
at every row's new point. The pass flags the rows it cannot decide alone; a compiled
settling loop decides those that need no call of f and writes the finished rows'
results; the rules that need probes of f run here, in numpy, on their rows only
(:func:`_settle`). Finished rows ride along until they are a quarter of the arrays
(:meth:`Work.lazy`), so a row that needs 60 bisections never slows the rows that needed
8 Brent steps.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from typing import Any

import numpy as np

from solvers.batch.records import CONVERGED_INDEX
from solvers.batch.rows import (
    EXACT,
    F_TOL,
    NO_SIGN,
    NOT_FIN,
    Work,
    capped_verdict,
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
    -+tiny, the sign opposite to the other end's), ``w.under`` marking the rows whose
    bracket began with such an end (the only rows where +-tiny is carried underflow:
    :func:`solvers.batch.rows.carried`) and the bracket as given in ``w.kept`` (a0, fa0,
    b0, fb0)."""
    xtol, rtol, ftol = s["xtol"], s["rtol"], s["ftol"]
    nan = np.full(w.size, np.nan)
    w.stop(~(np.isfinite(w.a) & np.isfinite(w.b)), NOT_FIN, nan, nan)
    w.under = np.zeros(w.size, dtype=bool)
    if not w.size:
        return
    w.fa = w.f(w.a)
    w.fb = w.f(w.b)
    w.stop(~(np.isfinite(w.fa) & np.isfinite(w.fb)), NOT_FIN, w.a, w.fa)
    w.keep(a0=w.a, b0=w.b, fa0=w.fa, fb0=w.fb)
    under_a = np.zeros(w.size, dtype=bool)
    under_b = np.zeros(w.size, dtype=bool)
    for x, fx in (("a", "fa"), ("b", "fb")):
        zero = np.flatnonzero(getattr(w, fx) == 0.0)
        if zero.size:
            at = getattr(w, x)[zero]
            verdict = zero_is_root(w, zero, at, xtol + rtol * np.abs(at))
            # (the marks go into the arrays as they are now: the a end's stop compacted
            # both, and b's underflow marked in the array of before was lost, b's 0.0 then
            # read as f within ftol)
            (under_a if x == "a" else under_b)[zero[~verdict]] = True
            code = w.codes()
            code[zero[verdict]] = EXACT
            w.finish(code, getattr(w, x), getattr(w, fx))
            keep = np.ones(code.size, dtype=bool)
            keep[zero[verdict]] = False
            under_a, under_b = under_a[keep], under_b[keep]
    both = (under_a & under_b) | ((w.a == w.b) & (under_a | under_b))
    if both.any():
        w.stop(both, NOT_FIN, w.a, w.fa)
        under_a, under_b = under_a[~both], under_b[~both]
    w.under = under_a | under_b
    if w.under.any():
        w.fa = np.where(under_a, -np.copysign(_TINY, w.fb), w.fa)
        w.fb = np.where(under_b, -np.copysign(_TINY, w.fa), w.fb)
    code = w.codes()
    a_better = np.abs(w.fa) <= np.abs(w.fb)
    mark(code, np.minimum(np.abs(w.fa), np.abs(w.fb)) <= ftol, F_TOL)
    mark(code, same_sign(w.fa, w.fb), NO_SIGN)
    w.finish(code, np.where(a_better, w.a, w.b), np.where(a_better, w.fa, w.fb))


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
    return fx


def bisection(w: Work, s: dict[str, Any]) -> None:
    """Bisection on every row's bracket: the midpoint each iterate.

    As :func:`brent`: one compiled pass per iteration (:func:`bisection_pass`), f at
    every row's midpoint between passes, the flagged rows settled without calls of f
    where the rules allow (:func:`bisection_settle`), probes in numpy on their rows.
    """
    from solvers.batch import kernels  # (numba on first use, as for brent)

    xtol, rtol, ftol, cap = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter"))
    start_brackets(w, s)
    if not w.size:
        return
    swap = w.a > w.b
    w.lo, w.hi = np.where(swap, w.b, w.a), np.where(swap, w.a, w.b)
    w.flo, w.fhi = np.where(swap, w.fb, w.fa), np.where(swap, w.fa, w.fb)
    del w.a, w.b, w.fa, w.fb
    w.mid, w.fmid = w.lo.copy(), w.flo.copy()  # (read on no pass before the first f)
    w.status = np.full(w.size, -1, dtype=np.int8)
    w.lazy()
    fixed = _fixed(w)

    def state() -> tuple[np.ndarray, ...]:
        return w.lo, w.flo, w.hi, w.fhi, w.mid, w.fmid

    first = True
    while True:
        w.tick()
        at_cap = w.k >= cap

        def run(skip: np.ndarray, at_cap: bool = at_cap, first: bool = first) -> int:
            return kernels.bisection_pass(*state(), skip, w.status, xtol, rtol, ftol, at_cap,
                                          first)

        if run(w.dead):
            _settle(w, s, fixed, state, kernels.bisection_settle, run, _bisection_probes)
            if not w.size:
                return
        first = False
        w.fmid = w.f(w.mid)
        w.k += 1


def _regula_falsi(w: Work, s: dict[str, Any], illinois_rule: bool) -> None:
    """False position or Illinois on every row's bracket: as :func:`brent`, one compiled
    pass per iteration (:func:`regula_falsi_pass`), f at every row's iterate between
    passes, the flagged rows settled (:func:`regula_falsi_settle`, probes in numpy)."""
    from solvers.batch import kernels  # (numba on first use, as for brent)

    xtol, rtol, ftol, cap = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter"))
    start_brackets(w, s)
    if not w.size:
        return
    # (xb, fb) the newest point, (xa, fa) the retained end of opposite sign; ga the value
    # interpolated at xa (fa, or halved by the Illinois rule); (x, fx) the iterate
    w.xa, w.xb, w.fa, w.fb, w.ga = w.a.copy(), w.b.copy(), w.fa.copy(), w.fb.copy(), w.fa.copy()
    del w.a, w.b
    w.x, w.fx = w.xb.copy(), w.fb.copy()  # (read on no pass before the first f)
    nan = np.full(w.size, np.nan)
    w.previous, w.previous_step, w.previous_ratio = nan, nan.copy(), nan.copy()
    w.fallback = np.zeros(w.size, dtype=bool)
    w.checking = np.zeros(w.size, dtype=bool)
    w.status = np.full(w.size, -1, dtype=np.int8)
    w.lazy()
    fixed = _fixed(w)

    def state() -> tuple[np.ndarray, ...]:
        return (w.xa, w.fa, w.xb, w.fb, w.ga, w.x, w.fx, w.previous, w.previous_step,
                w.previous_ratio, w.fallback, w.checking)

    first = True
    while True:
        w.tick()
        at_cap = w.k >= cap

        def run(skip: np.ndarray, at_cap: bool = at_cap, first: bool = first) -> int:
            return kernels.regula_falsi_pass(*state(), skip, w.status, xtol, rtol, ftol,
                                             at_cap, first, illinois_rule)

        if run(w.dead):
            _settle(w, s, fixed, state, kernels.regula_falsi_settle, run,
                    _regula_falsi_probes)
            if not w.size:
                return
        first = False
        w.fx = w.f(w.x)
        w.k += 1


def false_position(w: Work, s: dict[str, Any]) -> None:
    """Plain false position on every row's bracket."""
    _regula_falsi(w, s, illinois_rule=False)


def illinois(w: Work, s: dict[str, Any]) -> None:
    """Illinois-modified false position on every row's bracket."""
    _regula_falsi(w, s, illinois_rule=True)


def _verdicts(w: Work, idx: np.ndarray, x1, f1, x2, f2) -> np.ndarray:
    """The closed-bracket verdicts of the rows ``idx`` (the other arguments theirs)."""
    first = x1 < x2
    return closed_verdict(w, idx, np.where(first, x1, x2), np.where(first, f1, f2),
                          np.where(first, x2, x1), np.where(first, f2, f1))


def _probes(w: Work, s: dict[str, Any], *, closed: tuple[str, str, str, str],
            point: tuple[str, str], ends: tuple[str, str, str, str]) -> None:
    """The verdicts that need probes of f, in numpy on those rows: a closed bracket
    (:data:`PROBE`, :func:`closed_verdict`, its ends the arrays named by ``closed``) and
    an exact 0.0 at a new point (:data:`ZERO`, :func:`iterate_zero`: the point and the
    bracket ends around it named by ``point`` and ``ends``); their codes are written in
    ``w.status`` (exact_zero or not_finite for a zero: no end there underflowed)."""
    from solvers.batch.kernels import CAPPED, CAPPED_KEPT, PROBE, ZERO

    idx = np.flatnonzero(w.status >= PROBE)
    code = w.status.take(idx)
    rows = idx[code == PROBE]
    if rows.size:
        w.status[rows] = _verdicts(w, rows, *(getattr(w, n).take(rows) for n in closed))
    capped = idx[code == CAPPED]
    if capped.size:  # at the cap: a pole where |f| fell away on both sides
        pole = capped_verdict(w, capped, *(getattr(w, n).take(capped) for n in closed))
        w.status[capped] = np.where(pole, NOT_FIN, CAPPED_KEPT)
    zero = idx[code == ZERO]
    if zero.size:
        verdict = np.full(zero.size, -1, dtype=np.int8)
        _new_point(w, s, verdict, *(getattr(w, n).take(zero) for n in (*point, *ends)), zero)
        w.status[zero] = verdict


# Each method's arrays: the closed bracket's ends, the new point, the ends around it.
_brent_probes = functools.partial(_probes, closed=("xb", "fb", "xc", "fc"),
                                  point=("xb", "fb"), ends=("xa", "fa", "xc", "fc"))
_bisection_probes = functools.partial(_probes, closed=("lo", "flo", "hi", "fhi"),
                                      point=("mid", "fmid"), ends=("lo", "flo", "hi", "fhi"))
_regula_falsi_probes = functools.partial(_probes, closed=("xa", "fa", "xb", "fb"),
                                         point=("x", "fx"), ends=("xa", "fa", "xb", "fb"))


def brent(w: Work, s: dict[str, Any]) -> None:
    """Brent's method on every row's bracket (the scalar :func:`solvers.brent`'s steps).

    Each iteration is one compiled pass over the rows (:func:`brent_pass`: the new
    point's stop tests and contrapoint, the better end, the closed-bracket test, the
    interpolation or bisection step) and f evaluated, vectorised, at every row's new
    point. Rows the pass flags are resolved by :func:`brent_settle` without calls of f,
    or, where the rules need probes of f (beside an exact 0.0, around a closed bracket),
    by the numpy rules on those rows only. Lazy (:meth:`Work.lazy`): finished rows ride
    along until they are a quarter of the arrays.
    """
    # numba is imported on the first Brent over a table, not with the package: the
    # command line and the window start without it
    from solvers.batch import kernels

    xtol, rtol, ftol, cap = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter"))
    start_brackets(w, s)
    if not w.size:
        return
    # b: the best point so far; a: the previous b; c: the contrapoint; d: the step just
    # taken, e: the one before it (the scalar method's names); every array the pass's own
    w.xa, w.xb, w.xc = w.a.copy(), w.b.copy(), w.a.copy()
    w.fa, w.fb, w.fc = w.fa.copy(), w.fb.copy(), w.fa.copy()
    del w.a, w.b
    w.d = w.xb - w.xa
    w.e = w.d.copy()
    w.bisected = np.zeros(w.size, dtype=bool)
    w.status = np.full(w.size, -1, dtype=np.int8)
    w.lazy()
    fixed = _fixed(w)

    def state() -> tuple[np.ndarray, ...]:
        return w.xa, w.fa, w.xb, w.fb, w.xc, w.fc, w.d, w.e, w.bisected

    while True:
        w.tick()
        at_cap = w.k >= cap

        def run(skip: np.ndarray, at_cap: bool = at_cap) -> int:
            return kernels.brent_pass(*state(), skip, w.status, xtol, rtol, ftol, at_cap,
                                      w.under)

        if run(w.dead):
            _settle(w, s, fixed, state, kernels.brent_settle, run, _brent_probes)
            if not w.size:
                return
        w.fb = w.f(w.xb)
        w.k += 1


def _fixed(w: Work) -> tuple[np.ndarray, ...]:
    """What a settling loop reads besides the rows' state: the bracket as given and f
    there, per chunk row (the closed-bracket verdicts), and where the results go."""
    out = w.out
    return (*(w._kept[name] for name in ("a0", "fa0", "b0", "fb0")), out.code, out.root,
            out.residual, out.iterations, out.evaluations, w._extra, CONVERGED_INDEX)


def _settle(w: Work, s: dict[str, Any], fixed: tuple[np.ndarray, ...],
            state: Callable[[], tuple[np.ndarray, ...]], settle: Callable[..., Any],
            run: Callable[[np.ndarray], int],
            probes: Callable[[Work, dict[str, Any]], None]) -> None:
    """Resolve the rows a pass flagged and finish those that stop: ``settle`` (compiled)
    decides what needs no call of f and writes the finished rows, ``probes`` (numpy)
    what needs probes of f; rows carried in an end's stretch of underflow go through
    the pass again (``run``, on those rows only) until none is flagged."""
    from solvers.batch.kernels import RERUN

    def settled() -> tuple[int, int, int]:
        return settle(*state(), w.status, w.under, w.dead, w.rows, *fixed, w.k, w.calls,
                      s["xtol"], s["rtol"])

    while True:
        stopped, probing, again = settled()
        if probing:  # verdicts that need calls of f: then finish those rows too
            probes(w, s)
            stopped += settled()[0]
        w.finished_in_place(stopped)
        if not again:
            return
        # x in an end's stretch of underflow, carried as +-tiny: the rest of its iteration
        if not run(w.status != RERUN):
            return


