"""Compiled loops of the open methods over arrays: Newton's and the secant's bookkeeping.

Each kernel is one pass over the rows at work that does what numpy did in a dozen or
more whole-array operations per iteration: the scalar method's tests at a new point, in
its order (:func:`solvers.methods.newton`, :func:`solvers.methods.secant`), the step and
the new iterate, and for every row that stops its results written to the chunk's
:class:`solvers.batch.rows.Outcome` arrays at once (:func:`settle`). The rows that stop
leave the arrays as soon as they are a quarter of them: the rows that go on are moved to
the front of every array, their order kept, parameter parts of f included, so f and f'
are evaluated on the rows at work. Until then (one row in a hundred stopping, say) the
stopped rows ride along, marked ``dead``: moving every row costs more than f on the few
stopped ones.

f is never called here: it is evaluated outside, vectorised, on the first ``n`` entries
of the arrays. The arithmetic is the scalar method's, in its order (no fast-math: see
:mod:`solvers.compiled`), so every row takes the scalar method's steps to the bit.

Codes are those of :data:`solvers.batch.records.REASON_CODES` (int8); ``PENDING`` marks
a row whose f is an exact 0.0: it stops, with the verdict of the exact-zero rule (probes
of f evaluated outside, :func:`zero_points`) still to come; ``DEAD`` a row that stopped
at an earlier iteration and still rides along.
"""

from __future__ import annotations

import sys

import numpy as np

from solvers.batch.rows import EXACT, F_TOL, MAX_IT, NOT_FIN, X_TOL, ZERO_D
from solvers.compiled import kernel

_FLOAT_MIN = sys.float_info.min  # the rule's floor of the probe step
# 2*ulp(x) <= 2**-51*|x| for every normal double x (ulp <= eps*|x|); below the smallest
# normal, 2*ulp(x) = 2**-1073 is under the rule's floor anyway. So where the tolerance is
# at least 2**-51*|x| (the default rtol, 4 eps, always), 2*ulp(x) need not be computed.
_ULP_BOUND = 2.0**-51

GO_ON = -1
PENDING = -2
"""A row stopping on an exact 0.0 of f, before the exact-zero rule's verdict."""
DEAD = -3
"""A row that stopped earlier (its results written) and rides along in the arrays."""
CONFIRM = -4
"""A secant row whose step met the tolerance while the two points of the step do not
show a root: f beside the point decides (:func:`solvers.batch.open.secant`)."""

_at = np.uint64
"""An index read from an array (a row, a position), as unsigned: numba then indexes
without the check for negative indexes it adds for signed ones (half the time of the
settling loop). Every such index here is a position, never negative."""


@kernel
def _write(r, code, root, residual, k, evaluations, converged, out_code, out_root,
           out_residual, out_iterations, out_evaluations):
    """The results of chunk row ``r`` (as :meth:`Outcome.write`: NaN unless converged)."""
    out_code[r] = code
    if converged[_at(code)]:
        out_root[r] = root
        out_residual[r] = residual
    else:
        out_root[r] = np.nan
        out_residual[r] = np.nan
    out_iterations[r] = k
    out_evaluations[r] = evaluations


@kernel
def newton_start(n, x0, x, dx, code):
    """The start values ``x0`` copied into ``x`` (``dx`` NaN: no step taken yet); a row
    whose start is not finite stops there, not finite, before f is called (its ``code``).
    Returns the rows stopping."""
    stops = 0
    for i in range(n):
        xi = x0[i]
        x[i] = xi
        dx[i] = np.nan
        bad = not np.isfinite(xi)
        code[i] = NOT_FIN if bad else GO_ON
        stops += bad
    return stops


@kernel
def newton_tests(n, k, cap, xtol, rtol, ftol, x, fx, dx, dead, code):
    """The tests of :func:`solvers.methods.newton` at the rows' iterates ``x[:n]`` (f
    there ``fx``, the step that led there ``dx``, NaN before the first), in its order:
    f not finite; f an exact 0.0 (``PENDING``); ``|f| <= ftol``; ``|dx| <= xtol +
    rtol*|x|``; ``k >= cap``. Writes each row's ``code`` (GO_ON when no test stops it,
    DEAD for a row marked ``dead``).

    Returns (stops, pending): the rows stopping (pending ones included) and how many of
    them are pending. (No row moves here: most iterations stop no row, and a pass that
    only compares is several times faster than one that also moves rows.)

    The tests are selections from the last to the first (the first that holds wins, as
    in the scalar method's chain of ifs), not branches: where most rows stop, which test
    stops a row follows no pattern, and the pass takes half the time without branches.
    """
    stops = 0
    pending = 0
    last = MAX_IT if k >= cap else GO_ON
    for i in range(n):
        fi = fx[i]
        # NaN before the first step: the step test never holds
        c = X_TOL if abs(dx[i]) <= xtol + rtol * abs(x[i]) else last
        c = F_TOL if abs(fi) <= ftol else c
        c = PENDING if fi == 0.0 else c
        c = NOT_FIN if not np.isfinite(fi) else c
        c = DEAD if dead[i] else c
        code[i] = c
        stops += c >= 0
        pending += c == PENDING
    return stops + pending, pending


@kernel
def settle(n, k, root, residual, state, rows, hoisted, dead, dead_count, code, place, calls,
           extra, converged, out_code, out_root, out_residual, out_iterations,
           out_evaluations):
    """Write out the rows among the first ``n`` whose ``code`` is a stop reason
    (iterations ``k``, evaluations ``calls`` plus the row's own ``extra``; ``root`` and
    ``residual`` when converged) and mark them ``dead``. When the dead rows
    (``dead_count`` before) are a quarter of the rows or more, the others move to the
    front of every array of ``state`` (a tuple: the method's iterates), of rows and of
    every row of ``hoisted`` (one row per parameter part of f), their order kept, and no
    row is dead any more.

    Returns (rows at work, dead rows among them).
    """
    # the stopping rows' positions first (``place``), with no branch on the code
    s = 0
    for i in range(n):
        place[s] = i
        s += code[i] >= 0
    for t in range(s):
        i = _at(place[t])
        r = _at(rows[i])
        _write(r, code[i], root[i], residual[i], k, calls + extra[r], converged, out_code,
               out_root, out_residual, out_iterations, out_evaluations)
        dead[i] = 1
    dead_count += s
    if 4 * dead_count < n:
        return n, dead_count
    m = 0
    for i in range(n):
        place[m] = i
        m += dead[i] == 0
    for a in state:
        for t in range(m):
            a[t] = a[_at(place[t])]
    for t in range(m):
        rows[t] = rows[_at(place[t])]
    for j in range(hoisted.shape[0]):
        for t in range(m):
            hoisted[j, t] = hoisted[j, _at(place[t])]
    dead[:m] = 0
    return m, 0


@kernel
def newton_step(n, damping, x, fx, dfx, dx, dead, code):
    """Newton's step on the rows ``x[:n]`` (f there ``fx``, f' ``dfx``), as
    :func:`solvers.methods.newton` takes it: f' not finite (not finite) or 0.0 (zero
    derivative) stops the row; ``step = -damping*fx/dfx``, ``x_new = x + step``; a new
    iterate that is not finite stops it (zero derivative when the step itself overflowed,
    else not finite). Every row gets ``x = x_new``, ``dx = x_new - x`` (a stopped row's
    are never read: it has failed, so its root is NaN; a dead row's neither) and its
    ``code``.

    Returns the rows stopping (then :func:`settle` writes them out).
    """
    stops = 0
    for i in range(n):
        xi = x[i]
        d = dfx[i]
        step = -damping * fx[i] / d
        x_new = xi + step
        c = GO_ON
        if dead[i]:
            c = DEAD
        elif not np.isfinite(d):
            c = NOT_FIN
        elif d == 0.0:
            c = ZERO_D
        elif not np.isfinite(x_new):
            c = ZERO_D if not np.isfinite(step) else NOT_FIN
        code[i] = c
        stops += c >= 0
        x[i] = x_new
        dx[i] = x_new - xi
    return stops


@kernel
def secant_step(n, k, cap, xa, fa, xb, fb, x, dead, code):
    """The secant's step on the rows ``[:n]`` (last two points ``(xa, fa)``,
    ``(xb, fb)``), as :func:`solvers.methods.secant` takes it: the cap (max iterations,
    ``k >= cap``), equal f at the two points (zero derivative), then ``x = xb + step``
    with ``step = -fb/(fb - fa)*(xb - xa)`` (``1/(1 - fa/fb)`` for the fraction when the
    difference overflows); a new point that is not finite stops the row (zero derivative
    when the step itself overflowed, else not finite). Writes ``x`` and each row's
    ``code``; returns the rows stopping (all failures: their root is NaN)."""
    stops = 0
    for i in range(n):
        a = fa[i]
        b = fb[i]
        c = GO_ON
        if dead[i]:
            c = DEAD
        elif k >= cap:
            c = MAX_IT
        elif b == a:
            c = ZERO_D
        else:
            difference = b - a
            if np.isinf(difference):
                fraction = 1.0 / (1.0 - a / b)
            else:
                fraction = b / difference
            step = -fraction * (xb[i] - xa[i])
            xi = xb[i] + step
            x[i] = xi
            if not np.isfinite(xi):
                c = ZERO_D if not np.isfinite(step) else NOT_FIN
        code[i] = c
        stops += c >= 0
    return stops


@kernel
def secant_tests(n, xtol, rtol, ftol, xa, fa, xb, fb, x, fx, dead, code):
    """The secant's tests at its new points ``x[:n]`` (f there ``fx``, the step
    ``dx = x - xb``), in :func:`solvers.methods.secant`'s order: f not finite; f an
    exact 0.0 (``PENDING``); ``|f| <= ftol``; ``|dx| <= xtol + rtol*|x|``, when the two
    points of the step confirm it (else ``CONFIRM``: f beside the point decides). Then
    every row moves on: ``(xa, fa) = (xb, fb)``, ``(xb, fb) = (x, fx)`` (a row that stops
    has its point in ``xb``, ``fb``). Returns (stops, pending, confirm): stops and pending
    as :func:`newton_tests`, confirm the CONFIRM rows (not counted in stops)."""
    stops = 0
    pending = 0
    confirm = 0
    for i in range(n):
        xi = x[i]
        fi = fx[i]
        b = fb[i]
        tol = xtol + rtol * abs(xi)
        dx = xi - xb[i]
        # solvers.methods.open._step_is_local's tests at no cost: the residual at least
        # halved, a sign change, or the step's own chord within the tolerance. As in
        # newton_tests, selections from the last test to the first, no branches (the
        # values of a test that does not decide are computed and not read).
        difference = fi - b
        local = ((abs(fi) <= 0.5 * abs(b)) | ((fi < 0.0) != (b < 0.0))
                 | ((difference != 0.0) & (abs(fi * dx) <= tol * abs(difference))))
        c = (X_TOL if local else CONFIRM) if abs(dx) <= tol else GO_ON
        c = F_TOL if abs(fi) <= ftol else c
        c = PENDING if fi == 0.0 else c
        c = NOT_FIN if not np.isfinite(fi) else c
        c = DEAD if dead[i] else c
        code[i] = c
        stops += c >= 0
        pending += c == PENDING
        confirm += c == CONFIRM
        xa[i] = xb[i]
        fa[i] = fb[i]
        xb[i] = xi
        fb[i] = fi
    return stops + pending, pending, confirm


@kernel
def _pending(n: int, code, at) -> int:
    """The positions of the rows of ``code[:n]`` that are PENDING written to ``at`` (listed
    with no branch on the code, which follows no pattern); returns how many."""
    p = 0
    for i in range(n):
        at[p] = i
        p += code[i] == PENDING
    return p


@kernel
def _probe_step(xi: float, xtol: float, rtol: float) -> float:
    """The exact-zero rule's probe step at x: ``max(tol, 2*ulp(x), smallest normal)``
    with ``tol = xtol + rtol*|x|`` (:func:`solvers.methods.common._zero_is_root`)."""
    s = xtol + rtol * abs(xi)
    if s < _ULP_BOUND * abs(xi):  # only then can 2*ulp(x) exceed the tolerance
        u = 2.0 * np.spacing(abs(xi))
        if u > s:
            s = u
    if _FLOAT_MIN > s:
        s = _FLOAT_MIN
    return s


@kernel
def zero_points(n, x, code, xtol, rtol, rows, hoisted, extra, at, px, px2, pparts):
    """The probes of the exact-zero rule (:func:`solvers.methods.common._zero_is_root`,
    element-wise :func:`solvers.batch.rows.zero_is_root`) for the rows of ``x[:n]`` whose
    ``code`` is PENDING: ``step = max(tol, 2*ulp(x), smallest normal)`` with
    ``tol = xtol + rtol*|x|``, the probes ``px = x + step`` (first) and ``px2 = x - step``;
    ``at`` their positions, ``pparts`` their parameter parts of f; the first probe
    counted in the row's ``extra``. Returns how many."""
    p = _pending(n, code, at)
    for t in range(p):
        i = _at(at[t])
        xi = x[i]
        s = _probe_step(xi, xtol, rtol)
        px[t] = xi + s
        px2[t] = xi - s
        extra[_at(rows[i])] += 1
    for j in range(hoisted.shape[0]):
        for t in range(p):
            pparts[j, t] = hoisted[j, _at(at[t])]
    return p


@kernel
def zero_second(p, one, code, rows, extra, at, px2, pparts):
    """After f at the first probes (``one``): a probe that is 0.0 too makes the zero
    underflow (NOT_FIN, no more calls, as the scalar rule stops there); the other rows,
    moved to the front of at, one, px2 and pparts when some row left, take their second
    probe (counted). Returns how many second probes."""
    zeros = 0
    for t in range(p):
        zeros += one[t] == 0.0
    if not zeros:  # the usual case: every row takes its second probe, nothing moves
        for t in range(p):
            extra[rows[at[t]]] += 1
        return p
    q = 0
    for t in range(p):
        i = at[t]
        if one[t] == 0.0:
            code[i] = NOT_FIN
            continue
        at[q] = i
        one[q] = one[t]
        px2[q] = px2[t]
        for j in range(pparts.shape[0]):
            pparts[j, q] = pparts[j, t]
        extra[rows[i]] += 1
        q += 1
    return q


@kernel
def zero_verdict(q, one, two, code, at):
    """The verdict beside the second probes (``two``): a root (EXACT) unless f is 0.0 there
    too; one of the two neighbours must be finite."""
    for t in range(q):
        root = two[t] != 0.0 and (np.isfinite(one[t]) or np.isfinite(two[t]))
        code[at[t]] = EXACT if root else NOT_FIN


@kernel
def zero_probes(n, x, code, xtol, rtol, rows, hoisted, extra, at, prow, px, pparts):
    """Newton's form of :func:`zero_points`: both probes of every PENDING row of
    ``x[:n]`` at once, to be evaluated with the next call of f (one call instead of two
    more, :func:`zero_verdicts` then reads them). With ``p`` such rows: ``px[:p]`` the
    first probes (x + step), ``px[p:2p]`` the second (x - step), ``pparts[:, :2p]`` their
    parameter parts, ``prow[:p]`` their chunk rows. Each row's code becomes EXACT for
    now (a root, :func:`settle` writes x and f there), its first probe counted in its
    ``extra``. Returns ``p``."""
    p = _pending(n, code, at)
    for t in range(p):
        i = _at(at[t])
        xi = x[i]
        s = _probe_step(xi, xtol, rtol)
        px[t] = xi + s
        px[p + t] = xi - s
        r = rows[i]
        prow[t] = r
        extra[_at(r)] += 1
        code[i] = EXACT
    for j in range(hoisted.shape[0]):
        for t in range(p):
            value = hoisted[j, _at(at[t])]
            pparts[j, t] = value
            pparts[j, p + t] = value
    return p


@kernel
def zero_verdicts(p, values, prow, extra, out_code, out_root, out_residual,
                  out_evaluations):
    """The exact-zero rule's verdicts for the ``p`` rows :func:`zero_probes` staged (f at
    their first probes ``values[:p]``, second ``values[p:2p]``), written over the results
    :func:`settle` wrote for them: a first probe at 0.0 is underflow (not finite; the
    scalar rule stops there, so the second probe, evaluated anyway, is not counted);
    else the second probe is counted and the zero is a root unless f is 0.0 there too,
    one of the two neighbours finite. A row that is no root gets NaN for its root and
    residual."""
    for t in range(p):
        one = values[t]
        r = _at(prow[t])
        root = False
        if one != 0.0:
            two = values[p + t]
            extra[r] += 1
            out_evaluations[r] += 1
            root = two != 0.0 and (np.isfinite(one) or np.isfinite(two))
        if not root:
            out_code[r] = NOT_FIN
            out_root[r] = np.nan
            out_residual[r] = np.nan


@kernel
def place_probes(n, p, x, hoisted, px, pparts):
    """The ``p`` rows' staged probes (``px[:2p]``, their parameter parts ``pparts[:, :2p]``)
    copied to ``x[n:n + 2p]`` and ``hoisted[:, n:n + 2p]``: after the first ``n`` rows,
    to be evaluated in one call of f with them."""
    for t in range(2 * p):
        x[n + t] = px[t]
    for j in range(hoisted.shape[0]):
        for t in range(2 * p):
            hoisted[j, n + t] = pparts[j, t]


@kernel
def newton_stops(n, k, cap, xtol, rtol, ftol, x, fx, dx, dead, dead_count, code, rows, hoisted,
                 extra, at, prow, px, pparts, place, calls, converged, out_code, out_root,
                 out_residual, out_iterations, out_evaluations):
    """One call for what follows each call of f in Newton's loop: :func:`newton_tests`
    at ``x[:n]``; when rows stop, the exact-zero rule's probes of the pending ones staged
    (:func:`zero_probes`) and the stopped rows written out (:func:`settle`, state
    ``(x, fx, dx)``). Returns (rows at work, dead rows among them, probes staged)."""
    stops, pending = newton_tests(n, k, cap, xtol, rtol, ftol, x, fx, dx, dead, code)
    p = 0
    if stops:
        if pending:
            p = zero_probes(n, x, code, xtol, rtol, rows, hoisted, extra, at, prow, px, pparts)
        n, dead_count = settle(n, k, x, fx, (x, fx, dx), rows, hoisted, dead, dead_count,
                               code, place, calls, extra, converged, out_code, out_root,
                               out_residual, out_iterations, out_evaluations)
    return n, dead_count, p


@kernel
def newton_moves(n, k, damping, x, fx, dfx, dx, dead, dead_count, code, rows, hoisted, extra,
                 place, calls, p, px, pparts, converged, out_code, out_root, out_residual,
                 out_iterations, out_evaluations):
    """One call for what follows each call of f' in Newton's loop: :func:`newton_step`
    on ``x[:n]``, the rows it stops written out (:func:`settle`), then the ``p`` rows'
    staged probes (``px[:2p]``, ``pparts[:, :2p]``) placed right after the rows at work,
    in ``x`` and ``hoisted``, for the next call of f. Returns (rows at work, dead rows
    among them)."""
    if newton_step(n, damping, x, fx, dfx, dx, dead, code):
        n, dead_count = settle(n, k, x, fx, (x, fx, dx), rows, hoisted, dead, dead_count,
                               code, place, calls, extra, converged, out_code, out_root,
                               out_residual, out_iterations, out_evaluations)
    place_probes(n, p, x, hoisted, px, pparts)
    return n, dead_count


__all__ = ["DEAD", "GO_ON", "PENDING", "newton_moves", "newton_start", "newton_step",
           "newton_stops", "newton_tests", "place_probes",
           "secant_step", "secant_tests", "settle", "zero_points", "zero_probes",
           "zero_second", "zero_verdict", "zero_verdicts"]
