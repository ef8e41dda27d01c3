"""Newton–Raphson and the secant over arrays: every row with its own iterate and stop.

The element-wise form of :func:`solvers.methods.newton` and :func:`solvers.methods.secant`:
the same tests in the same order on each row (not finite, exact zero checked for
underflow, ``|f| <= ftol``, ``|dx| <= xtol + rtol*|x|``, the iteration cap, a zero or
non-finite derivative, a step that overflows), so each row takes the scalar method's
steps to the bit. Between the calls of f (and f'), vectorised over the rows at work, an
iteration is a few compiled passes over those rows (:mod:`solvers.batch.open_kernels`);
the rows that stop are written out there and leave the arrays.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from solvers.batch.records import CONVERGED_INDEX
from solvers.batch.rows import (
    EXACT,
    F_TOL,
    NOT_FIN,
    X_TOL,
    Work,
    central_difference,
    mark,
    plateau_roots,
    zero_is_root,
)
from solvers.methods.common import DERIVATIVE_FLOOR, PLATEAU_REACH, probe_step

_PLATEAU_CALLS = 2 * len(PLATEAU_REACH)  # f's calls of the plateau search, per zero


def _test_point(w: Work, code: np.ndarray, x: np.ndarray, fx: np.ndarray,
                s: dict[str, Any]) -> None:
    """The scalar methods' tests at a starting point, in their order: not finite; an
    exact zero (a root, or underflow: not finite); ``|f| <= ftol`` (every row of the
    arrays)."""
    mark(code, ~np.isfinite(fx), NOT_FIN)
    zero = np.flatnonzero(fx == 0.0)  # (not finite is never 0.0)
    if zero.size:
        at = x[zero]
        verdict = zero_is_root(w, zero, at, s["xtol"] + s["rtol"] * np.abs(at))
        code[zero] = np.where(verdict, EXACT, NOT_FIN)
    mark(code, np.abs(fx) <= s["ftol"], F_TOL)


_KERNELS: Any = None


def _kernels() -> Any:
    """:mod:`solvers.batch.open_kernels`, imported on first use: numba's import (about
    0.15 s) stays off the start-up of commands that never solve a table."""
    global _KERNELS
    if _KERNELS is None:
        from solvers.batch import open_kernels

        _KERNELS = open_kernels
    return _KERNELS


class _AtWork:
    """The arrays of the rows at work, kept compact by the compiled kernels
    (:mod:`solvers.batch.open_kernels`): the kernels move the rows that go on to the
    front of every array in place, so the rows at work are always the first ``n``.

    ``carry`` holds, one row each, what must move with the rows besides the iterates:
    the rows' parameter parts of f that are arrays (:attr:`Rows.hoisted`), and any
    ``extra`` per-row values (Newton's difference-step floor). :meth:`at_work` points the
    work's f at the first ``n`` rows (chunk positions and parameter parts) and its
    progress at their number.
    """

    def __init__(self, w: Work, *extra: np.ndarray, room: int = 0) -> None:
        self.w = w
        n = w.size
        take = w.scratch.take
        self.rows = take("rows", n, np.int64)
        self.rows[:] = w.rows
        self.parts = w._h
        self.arrays = [j for j, h in enumerate(self.parts) if h.__class__ is np.ndarray]
        # ``room`` more columns: probes evaluated in one call with the rows at work
        self.carry = take("carry", (len(self.arrays) + len(extra), n + room))
        for row, j in enumerate(self.arrays):
            self.carry[row, :n] = self.parts[j]
        for row, values in enumerate(extra, start=len(self.arrays)):
            self.carry[row, :n] = values
        self.code = take("code", n, np.int8)
        self.dead = w.scratch.zeros("dead", n, np.int8)
        self.place = take("place", n, np.int64)  # positions the kernels list rows in
        self.dead_count = 0
        self.probes: tuple[np.ndarray, ...] | None = None  # the probes' arrays, made once
        out = w.out
        self.out = (CONVERGED_INDEX, out.code, out.root, out.residual, out.iterations,
                    out.evaluations)

    def at_work(self, n: int) -> None:
        """Point the work's f (and its count of calls per row) at the first ``n`` rows."""
        w, carry = self.w, self.carry
        w.rows = self.rows[:n]
        parts = list(self.parts)
        for row, j in enumerate(self.arrays):
            parts[j] = carry[row, :n]
        w._h = tuple(parts)

    def settle(self, n: int, k: int, root: np.ndarray, residual: np.ndarray,
               state: tuple[np.ndarray, ...]) -> int:
        """:func:`solvers.batch.open_kernels.settle`: the stopped rows among the first
        ``n`` written out (``root``, ``residual`` when converged), the ``state`` arrays
        compacted with the rest; returns the rows left in the arrays (dead ones riding
        along included: 0 only when every row has stopped)."""
        w = self.w
        m, self.dead_count = _kernels().settle(n, k, root, residual, state, self.rows,
                                               self.carry, self.dead, self.dead_count,
                                               self.code, self.place, w.calls, w._extra,
                                               *self.out)
        if m != n:
            self.at_work(m)
        return m

    def call(self, x: np.ndarray, n: int, parts: np.ndarray) -> np.ndarray:
        """f at ``x[:n]`` for rows whose parameter parts of f are ``parts[:, :n]`` (rows
        apart from those at work: probes; the caller counts the calls)."""
        values = list(self.parts)
        for row, j in enumerate(self.arrays):
            values[j] = parts[row, :n]
        return self.w.fn.call("f", x[:n], tuple(values))

    def probe_arrays(self) -> tuple[np.ndarray, ...]:
        """The arrays the probes of the exact-zero rule are staged in (made once): their
        positions, chunk rows, points (two per row) and parameter parts."""
        if self.probes is None:
            size, parts, take = self.code.size, self.carry.shape[0], self.w.scratch.take
            self.probes = (take("at", size, np.int64), take("probe_rows", size, np.int64),
                           take("probe_x", 2 * size), take("probe_parts", (parts, 2 * size)))
        return self.probes

    def f_and_probes(self, n: int, x: np.ndarray, p: int, s: dict[str, Any]) -> np.ndarray:
        """f at the rows at work ``x[:n]`` (one call for each of them, counted) and at the
        probes of the ``p`` rows the tests stopped on an exact zero, as one call: the
        probes sit after the rows at work (``x[n:n + 2p]`` and the carried parts, put
        there by :func:`solvers.batch.open_kernels.place_probes`), and
        :func:`solvers.batch.open_kernels.zero_verdicts` writes those rows' verdicts.
        Returns f at ``x[:n]`` (and beyond: the probes' values, not to be read)."""
        w = self.w
        if not p:
            return w.f(x[:n])
        end = n + 2 * p
        _, prow, _, _ = self.probes
        carry = self.carry
        values = list(self.parts)
        for row, j in enumerate(self.arrays):
            values[j] = carry[row, :end]
        fx = w.fn.call("f", x[:end], tuple(values))
        if not fx.flags.writeable or np.may_share_memory(fx, x):
            fx = np.array(fx, dtype=np.float64)  # the kernels write into f's values
        w.calls += 1
        out = self.out
        one, two = fx[n:n + p], fx[n + p:end]
        zero = (one == 0.0) | (two == 0.0)  # (the second probe is read where one is not 0.0)
        tz = np.flatnonzero(zero)
        if tz.size:  # x and f(x) as settled, before the verdicts (gathered only for these)
            r = prow[:p][tz]
            at_x, at_f = out[2][r], out[3][r]
        _kernels().zero_verdicts(p, fx[n:end], prow, w._extra, out[1], out[2], out[3], out[5])
        if tz.size:  # a neighbour at 0.0 too: a zero of rounding noise, or underflow
            root = self.noise_zeros(at_x, self.probes[3][:, tz], s)
            w._extra[r] += _PLATEAU_CALLS
            out[5][r] += _PLATEAU_CALLS
            ok = r[root]
            out[1][ok] = EXACT
            out[2][ok] = at_x[root]
            out[3][ok] = at_f[root]
        return fx

    def noise_zeros(self, xs: np.ndarray, parts: np.ndarray, s: dict[str, Any]) -> np.ndarray:
        """:func:`solvers.batch.rows.plateau_roots` for zeros ``xs`` of rows whose parameter
        parts of f are the columns of ``parts`` (the caller counts the calls)."""
        steps = np.array([probe_step(xi, s["xtol"] + s["rtol"] * abs(xi)) for xi in xs.tolist()])

        def evaluate(points: np.ndarray) -> np.ndarray:
            m = len(points)
            return self.call(points.reshape(-1), m * _PLATEAU_CALLS,
                             np.repeat(parts, _PLATEAU_CALLS, axis=1)).reshape(m, -1)

        return plateau_roots(evaluate, xs, steps)

    def extra(self, which: int, n: int) -> np.ndarray:
        """The ``which``-th extra per-row values of the first ``n`` rows."""
        return self.carry[len(self.arrays) + which, :n]


def _probe_zeros(w: Work, a: _AtWork, n: int, x: np.ndarray, s: dict[str, Any]) -> None:
    """The exact-zero rule (:func:`zero_is_root`: a root, or underflow) for the rows
    among the first ``n`` whose code is PENDING: their codes become its verdicts. The
    probes' bookkeeping is compiled (:func:`solvers.batch.open_kernels.zero_points`);
    f at the probes is one vectorised call per side."""
    code, rows, carry = a.code, a.rows, a.carry
    if a.probes is None:
        size, take = a.code.size, w.scratch.take
        a.probes = (take("at", size, np.int64), take("probe_x", size), take("probe_x2", size),
                    take("probe_parts", (carry.shape[0], size)))
    at, px, px2, pparts = a.probes
    ok = _kernels()
    p = ok.zero_points(n, x, code, s["xtol"], s["rtol"], rows, carry, w._extra, at, px, px2,
                       pparts)
    one = a.call(px, p, pparts)
    first_zero = one == 0.0
    if first_zero.any():  # (zero_second moves the other rows to the front)
        zeros = [(at[:p][first_zero].copy(), pparts[:, :p][:, first_zero].copy())]
    else:
        zeros = []
    q = ok.zero_second(p, one, code, rows, w._extra, at, px2, pparts)
    if q:
        two = a.call(px2, q, pparts)
        ok.zero_verdict(q, one, two, code, at)
        second_zero = two == 0.0
        if second_zero.any():
            zeros.append((at[:q][second_zero].copy(), pparts[:, :q][:, second_zero].copy()))
    for where, parts in zeros:  # a neighbour at 0.0 too: a zero of rounding noise, or underflow
        root = a.noise_zeros(x[where], parts, s)
        w._extra[rows[where]] += _PLATEAU_CALLS
        code[where[root]] = EXACT


def newton(w: Work, s: dict[str, Any]) -> None:
    """Newton–Raphson on every row of ``w`` (start array ``w.x0``); see the module notes.

    f and f' are evaluated on the rows at work only; everything between (the tests, the
    step, the rows that stop and their results) is compiled passes over those rows
    (:mod:`solvers.batch.open_kernels`), and the rows that stop leave the arrays at once.
    The exact-zero rule's probes beside the rows that stop on a 0.0 of f (both sides,
    counted as the scalar rule takes them) are evaluated with the next call of f, after
    the rows at work (:meth:`_AtWork.f_and_probes`): one call of f per iteration.
    """
    xtol, rtol, ftol, cap, damping = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter",
                                                     "damping"))
    symbolic = s["derivative"] == "symbolic"
    n = w.size
    x0 = w.x0
    extra = () if symbolic else (np.where(x0 != 0.0, DERIVATIVE_FLOOR * np.abs(x0), 1.0),)
    # room for the probes of the exact-zero rule after the rows at work: at most one pair
    # per row that stops, evaluated with the next call of f (f'(x) comes first)
    a = _AtWork(w, *extra, room=n)
    code, dead, rows, carry, place = a.code, a.dead, a.rows, a.carry, a.place
    at, prow, px, pparts = a.probe_arrays()
    out = a.out
    ok = _kernels()
    x, dx = w.scratch.take("x", 2 * n), w.scratch.take("dx", n)
    if ok.newton_start(n, x0, x, dx, code):  # start values not finite: those rows stop at once
        n = a.settle(n, 0, x, x, (x, dx))
        if not n:
            return
    fx = w.f(x[:n])
    k = 0
    while True:
        w.k = k
        w.tick()
        m, a.dead_count, p = ok.newton_stops(n, k, cap, xtol, rtol, ftol, x, fx, dx, dead,
                                             a.dead_count, code, rows, carry, w._extra, at,
                                             prow, px, pparts, place, w.calls, *out)
        if m != n:
            n = m
            a.at_work(n)
            if not n:
                break
        xs = x[:n]
        dfx = w.fprime(xs) if symbolic else central_difference(w, xs, fx[:n],
                                                                 a.extra(0, n))
        m, a.dead_count = ok.newton_moves(n, k, damping, x, fx, dfx, dx, dead, a.dead_count,
                                          code, rows, carry, w._extra, place, w.calls, p, px,
                                          pparts, *out)
        if m != n:
            n = m
            a.at_work(n)
        if not n:
            break  # with the probes staged at the tests, if any: evaluated below
        fx = a.f_and_probes(n, x, p, s)
        p = 0
        k += 1
    if p:  # every row has stopped: the last probes alone (placed at the front)
        ok.place_probes(0, p, x, carry, px, pparts)
        a.f_and_probes(0, x, p, s)
    a.at_work(0)


def _confirm_steps(w: Work, a: _AtWork, n: int, x: np.ndarray, fx: np.ndarray,
                   s: dict[str, Any]) -> int:
    """The secant's step rule beside the point (:func:`solvers.methods.open._step_is_local`)
    for the rows among the first ``n`` whose code is CONFIRM (their point ``x``, f there
    ``fx``): f at x - tol, then, where that shows no sign change, at x + tol (each
    probe counted in the row's ``extra`` as the scalar rule takes it); a sign change (or
    an exact 0) makes the row stop at a root (X_TOL), none sends it on (GO_ON). Both
    sides are evaluated in one call of f (the second side's value read only where the
    scalar rule asks for it). Rare rows: numpy. Returns the rows stopped."""
    ok = _kernels()
    code = a.code
    at = np.flatnonzero(code[:n] == ok.CONFIRM)
    m = at.size
    if not m:
        return 0
    point, sign = x[at], fx[at] < 0.0
    tol = s["xtol"] + s["rtol"] * np.abs(point)
    with np.errstate(all="ignore"):
        fp = a.call(np.concatenate((point - tol, point + tol)), 2 * m,
                    np.concatenate((a.carry[:, at], a.carry[:, at]), axis=1))
    shows = np.isfinite(fp) & ((fp == 0.0) | ((fp < 0.0) != np.concatenate((sign, sign))))
    first = shows[:m]
    root = first | shows[m:]
    rows = a.rows[at]  # distinct rows: one count each
    w._extra[rows] += 1
    w._extra[rows[~first]] += 1  # the second side, asked only where the first showed none
    code[at] = np.where(root, np.int8(X_TOL), np.int8(ok.GO_ON))
    return int(root.sum())


def secant(w: Work, s: dict[str, Any]) -> None:
    """The secant method on every row of ``w`` (start arrays ``w.x0``, ``w.x1``).

    The two starting points are tested with numpy, once per chunk; the iterations then
    run as Newton's do: the step and the tests at the new point compiled
    (:func:`solvers.batch.open_kernels.secant_step`, ``secant_tests``), f on the rows at
    work only.
    """
    xtol, rtol, ftol, cap = (s[k] for k in ("xtol", "rtol", "ftol", "max_iter"))
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
    n = w.size
    if not n:
        return
    a = _AtWork(w)
    code, dead = a.code, a.dead
    ok = _kernels()
    xa, fa, xb, fb = (np.array(v, dtype=np.float64) for v in (w.xa, w.fa, w.xb, w.fb))
    x = np.empty(n)
    state = (xa, fa, xb, fb, x)
    k = 0
    while True:
        w.k = k
        w.tick()
        if ok.secant_step(n, k, cap, xa, fa, xb, fb, x, dead, code):
            n = a.settle(n, k, xb, fb, state)
            if not n:
                break
        fx = w.f(x[:n])
        k += 1
        stops, pending, confirm = ok.secant_tests(n, xtol, rtol, ftol, xa, fa, xb, fb, x, fx,
                                                  dead, code)
        if confirm:
            stops += _confirm_steps(w, a, n, xb, fb, s)
        if stops:
            if pending:
                _probe_zeros(w, a, n, xb, s)
            n = a.settle(n, k, xb, fb, state)
            if not n:
                break
    a.at_work(0)
