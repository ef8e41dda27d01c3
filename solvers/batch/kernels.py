"""Compiled passes of the batch bracketing methods: one pass over a chunk's rows per
iteration (Brent, bisection, false position and Illinois).

The numpy form of Brent's method over a table spent about 70 array operations per
iteration on the bookkeeping around f (which end is better, interpolation or bisection,
the new point, the new contrapoint, the stop tests). :func:`brent_pass` does that
bookkeeping row by row in one compiled loop (:data:`solvers.compiled.kernel`: IEEE order,
no fast-math, the GIL released), transcribing the scalar method's arithmetic in the same
order, so every row takes the scalar method's steps to the bit; :func:`bisection_pass`
and :func:`regula_falsi_pass` do the same for the other bracketing methods. f stays
outside: the caller evaluates it, vectorised, at every row's new point between passes.

A pass is written without branches on the rows' data (every row computes every
quantity, e.g. Brent's interpolation step, and selections keep the right ones), so the
compiler turns it into vector instructions: most of the cost of a branching loop was
the waiting on one row's chain of divisions at a time. What it cannot decide alone it
flags in ``status`` for the settling loop of its method (:func:`brent_settle` and the
others), a plain loop over the flagged rows: a closed bracket (its verdict), f 0.0 or
not finite at the new point (the scalar ``_iterate_zero`` rules), Brent's values whose
scaling by a power of two leaves the normal doubles. The settling loop also writes the
finished rows' results in place. What needs more calls of f (probes beside an exact
0.0, probes of a closed bracket) is flagged again for the numpy rules of
:mod:`solvers.batch.rows`, which run on those rows only.

``status`` of a row: -1 goes on; a reason code of :data:`solvers.batch.records.REASON_CODES`
(below 100): the row stops with it; 100 and above: the flags below.
"""

from __future__ import annotations

import math

from llvmlite import ir
from numba import types
from numba.extending import intrinsic

from solvers.batch.rows import EXACT, F_TOL, MAX_IT, NOT_FIN, X_TOL
from solvers.compiled import kernel
from solvers.methods.bracketing import _CHORD_SHARE, _SLOPE_SPREAD
from solvers.methods.common import _CAPPED_SHRINK, _TINY

_FLOAT_MIN = 2.2250738585072014e-308  # sys.float_info.min

#: a closed bracket whose verdict needs probes of f (:func:`solvers.batch.rows.closed_verdict`)
PROBE = 100
#: f(x) == 0.0 at a new point that only probes beside x can call a root or underflow
ZERO = 101
#: f(x) == 0.0 inside an end's stretch of underflow: carried as +-tiny, the pass runs again
RERUN = 102
#: set by the pass, resolved by :func:`brent_settle`: a bracket closed below tolerance
CLOSED = 103
#: set by the pass: f at the new point is 0.0 or not finite
SPECIAL = 104
#: set by the pass: the interpolation's scaling needs ldexp (f beyond the normal doubles)
EXOTIC = 105
#: a row at the iteration cap on a bracket narrowed where |f| grew: probes of f beside it
#: tell a pole from a steep root (:func:`solvers.batch.rows.capped_verdict`)
CAPPED = 106
#: the probes found no pole there: the row stops at the cap (``max_iterations``)
CAPPED_KEPT = 107


@intrinsic
def _bits(typingctx, x):
    """The bits of a double as an int64 (a reinterpretation, no conversion)."""
    def codegen(context, builder, signature, args):
        return builder.bitcast(args[0], ir.IntType(64))

    return types.int64(types.float64), codegen


@intrinsic
def _from_bits(typingctx, x):
    """The double whose bits are the int64 x."""
    def codegen(context, builder, signature, args):
        return builder.bitcast(args[0], ir.DoubleType())

    return types.float64(types.int64), codegen


@kernel
def _interpolation_step(xa: float, fa: float, xb: float, fb: float, xc: float,
                        fc: float) -> float:
    """:func:`solvers.methods.brent._interpolation_step`, the same operations in the same
    order (NaN where the step is undefined): the rows :func:`brent_pass` leaves to
    :func:`brent_settle` (``EXOTIC``)."""
    exponent = math.frexp(max(abs(fa), abs(fb), abs(fc)))[1]
    fa, fb, fc = (math.ldexp(fa, -exponent), math.ldexp(fb, -exponent),
                  math.ldexp(fc, -exponent))
    if xa == xc:
        return -fb * (xb - xa) / (fb - fa) if fb != fa else math.nan
    slope_a = (fa - fb) / (xa - xb)
    slope_c = (fc - fb) / (xc - xb)
    denominator = slope_c * slope_a * (fc - fa)
    if denominator == 0.0 or not math.isfinite(denominator):
        return math.nan
    return -fb * (fc * slope_c - fa * slope_a) / denominator


@kernel
def brent_pass(xa, fa, xb, fb, xc, fc, d, e, bisected, skip, status, xtol: float,
               rtol: float, ftol: float, at_cap: bool, under) -> int:
    """One Brent iteration on every row that ``skip`` does not mark, from f at the last
    new point (in ``fb``) to the next new point (in ``xb``): the loop of
    :func:`solvers.methods.brent.brent` from ``fb = ev(xb)`` round to ``xb += d``.

    In the scalar order: f 0.0 or not finite flags ``SPECIAL`` (the row is left as it
    was); a sign change between a and b makes a the contrapoint (``d = e = xb - xa``);
    ``|f| <= ftol`` stops the row (``f_tolerance``); b becomes the better end; a bracket
    closed below tolerance flags ``CLOSED``; at the cap (``at_cap``) the row stops
    (``max_iterations``); otherwise the interpolation step is taken when it passes
    Brent's tests, else bisection, and ``xa, fa`` become the old b. ``under``: the rows
    whose bracket began with an end in a stretch of underflow, where +-tiny is an
    underflowed point's carried value (no interpolation through it). On the first
    pass ``fb`` is f at the bracket's second end and the contrapoint test changes
    nothing (the ends change sign, ``c = a`` already). A closed row, or one at the cap,
    keeps its state after the swap (b the better end, for its verdict); a row stopped
    or flagged at its new point keeps its state as it was.

    Every row computes every quantity and selections keep the right ones (no branch on
    the data: the loop compiles to vector instructions); a row's values are the scalar
    method's bits. Returns the number of rows stopped or flagged.
    """
    flagged = 0
    for i in range(xb.size):
        x_a, f_a, x_b, f_b, x_c, f_c = xa[i], fa[i], xb[i], fb[i], xc[i], fc[i]
        d_i, e_i = d[i], e[i]
        go = not skip[i]
        # f at the new point b
        special = not (abs(f_b) < math.inf) or f_b == 0.0  # (NaN too)
        change = (f_b > 0.0) != (f_a > 0.0)
        x_c = x_a if change else x_c
        f_c = f_a if change else f_c
        gap = x_b - x_a
        d_i = gap if change else d_i
        e_i = gap if change else e_i
        f_stop = abs(f_b) <= ftol
        # b becomes the better end; a follows the old b so the next step interpolates
        swap = abs(f_c) < abs(f_b)
        n_a = x_b if swap else x_a
        g_a = f_b if swap else f_a
        n_b = x_c if swap else x_b
        g_b = f_c if swap else f_b
        n_c = x_b if swap else x_c
        g_c = f_b if swap else f_c
        half_tol = 0.5 * (xtol + rtol * abs(n_b))
        m = 0.5 * n_c - 0.5 * n_b  # = (xc - xb)/2 exactly, without overflow
        closed = abs(m) <= half_tol
        # The interpolation step (secant when a == c, else inverse quadratic) on f
        # scaled by the power of two that puts max |f| (that of a or c: |fb| <= |fc|)
        # in [0.5, 1): exact, as the scalar's ldexp, while the factor is a normal double.
        biased = (_bits(max(abs(g_a), abs(g_c))) >> 52) & 0x7FF
        exotic = biased == 0 or biased > 2044
        factor = _from_bits((2045 - biased) << 52)  # 2**-exponent of frexp
        sa, sb, sc = g_a * factor, g_b * factor, g_c * factor
        two_point = n_a == n_c
        slope_a = (sa - sb) / (n_a - n_b)
        slope_c = (sc - sb) / (n_c - n_b)
        denominator = slope_c * slope_a * (sc - sa)
        # secant -sb*(xb - xa)/(sb - sa), quadratic -sb*(sc*slope_c - sa*slope_a)/denom.
        # (one division for both)
        top = -sb * (n_b - n_a) if two_point else -sb * (sc * slope_c - sa * slope_a)
        s = top / ((sb - sa) if two_point else denominator)
        undefined = (sb == sa) if two_point else (
            denominator == 0.0 or not (abs(denominator) < math.inf))
        s = math.nan if undefined else s
        # a value that underflowed has a sign but no size to interpolate with: bisect
        informed = not under[i] or not (abs(g_a) == _TINY or abs(g_b) == _TINY
                                    or abs(g_c) == _TINY)
        tried = informed and abs(e_i) > half_tol and abs(g_b) < abs(g_a)
        # accept only a step well inside the bracket and shrinking fast enough (NaN
        # fails), and no step below half a tolerance right after a bisection
        taken = tried and 2.0 * abs(s) < min(abs(e_i), 3.0 * abs(m) - half_tol) and not (
            abs(s) <= half_tol and bisected[i])
        step = s if taken else m
        code = (SPECIAL if special else F_TOL if f_stop else CLOSED if closed else
                MAX_IT if at_cap else EXOTIC if tried and exotic else -1)
        moves = go and code == -1
        keeps = go and code != SPECIAL and code != F_TOL
        flagged += 1 if go and code != -1 else 0
        status[i] = code if go else status[i]
        e[i] = (d_i if taken else m) if moves else (e_i if keeps else e[i])
        d[i] = step if moves else (d_i if keeps else d[i])
        bisected[i] = (step == m) if moves else bisected[i]
        xa[i] = n_b if moves else (n_a if keeps else x_a)
        fa[i] = g_b if moves else (g_a if keeps else f_a)
        xc[i] = n_c if keeps else xc[i]
        fc[i] = g_c if keeps else fc[i]
        shift = step if abs(step) > half_tol else (half_tol if m > 0 else -half_tol)
        xb[i] = n_b + shift if moves else (n_b if keeps else x_b)
        fb[i] = g_b if keeps else f_b
    return flagged


@kernel
def _straight_through(x: float, x1: float, f1: float, x2: float, f2: float,
                      tol: float) -> bool:
    """:func:`solvers.batch.rows._straight_through` for one row (the same operations)."""
    if not (min(x1, x2) < x < max(x1, x2)) or (f1 > 0.0) == (f2 > 0.0):
        return False
    slope_1 = abs(f1) / abs(x - x1)
    slope_2 = abs(f2) / abs(x2 - x)
    secant = abs(f1) / abs(x2 - x1) + abs(f2) / abs(x2 - x1)
    least = min(slope_1, slope_2)
    if not (least * _SLOPE_SPREAD >= secant and least * tol >= _SLOPE_SPREAD * _FLOAT_MIN):
        return False
    chord = f1 + (f2 - f1) * ((x - x1) / (x2 - x1))
    return abs(chord) <= _CHORD_SHARE * max(abs(f1), abs(f2))


@kernel
def _closed_code(x1: float, f1: float, x2: float, f2: float, a0: float, fa0: float,
                 b0: float, fb0: float, under: bool) -> int:
    """The verdict on a closed bracket that needs no call of f (the first steps of
    :func:`solvers.batch.rows.closed_verdict`, same tests, same order): ``not_finite``
    for an end in a stretch of underflow (+-tiny in a row that began with one:
    ``under``), ``x_tolerance`` when a starting end
    shows |f| falling at least as fast as sqrt(distance), else :data:`PROBE`."""
    if x1 < x2:
        lo, flo, hi, fhi = x1, f1, x2, f2
    else:
        lo, flo, hi, fhi = x2, f2, x1, f1
    if under and (abs(flo) == _TINY or abs(fhi) == _TINY):
        return NOT_FIN
    near = min(abs(flo), abs(fhi))
    if near > max(abs(fa0), abs(fb0)):
        return PROBE  # a pole, or a steep root: the probes beside the bracket decide
    width = hi - lo
    for x0, f0 in ((a0, fa0), (b0, fb0)):
        distance = max(lo - x0, x0 - hi)
        fend = flo if x0 < lo else fhi  # each end against points on its own side
        if (distance >= 2.0 * width and math.isfinite(f0) and f0 != 0.0
                and (f0 > 0.0) == (fend > 0.0)):
            if abs(fend) <= abs(f0) * math.sqrt(width / distance):
                return X_TOL
    return PROBE


@kernel
def _capped_code(x1: float, f1: float, x2: float, f2: float, a0: float, fa0: float,
                 b0: float, fb0: float) -> int:
    """The verdict on a row stopped at the iteration cap with the bracket [x1, x2] (either
    order): :func:`solvers.methods.common._capped_reason`, same tests, same order
    (:data:`CAPPED` where the bracket narrowed onto a point where |f| grew: the probes
    beside it decide, else ``max_iterations``)."""
    start = abs(b0 - a0)
    ends = max(abs(fa0), abs(fb0))
    near = min(abs(f1), abs(f2))
    if abs(x2 - x1) <= _CAPPED_SHRINK * start and near > ends:
        return CAPPED
    return MAX_IT


@kernel
def _ended_code(code: int, x1: float, f1: float, x2: float, f2: float, row: int, a0, fa0,
                b0, fb0, under: bool) -> int:
    """The verdict on a row whose bracket [x1, x2] closed (``CLOSED``: :func:`_closed_code`)
    or met the iteration cap (``MAX_IT``: :func:`_capped_code`; ``CAPPED_KEPT``, a cap
    whose probes found no pole, stays ``max_iterations``), from the row's starting ends
    (chunk row ``row`` of ``a0, fa0, b0, fb0``; ``under``: the row began with an end in a
    stretch of underflow)."""
    if code == CAPPED_KEPT:
        return MAX_IT
    if code == CLOSED:
        return _closed_code(x1, f1, x2, f2, a0[row], fa0[row], b0[row], fb0[row], under)
    return _capped_code(x1, f1, x2, f2, a0[row], fa0[row], b0[row], fb0[row])


@kernel
def _special(x: float, fx: float, x1: float, f1: float, x2: float, f2: float, xtol: float,
             rtol: float, under: bool) -> tuple[int, float]:
    """(code, f to go on with) at a new point x between the ends (x1, f1), (x2, f2) whose
    f is 0.0 or not finite: not finite; inside an end's stretch of underflow (x lies in
    it, carried with that end's sign: run again; +-tiny is carried only in a row that
    began with an end in a stretch of underflow, ``under``); an exact zero in line with the ends (a
    root); else a 0.0 the caller probes."""
    if not math.isfinite(fx):
        return NOT_FIN, fx
    if under and (abs(f1) == _TINY or abs(f2) == _TINY):
        return RERUN, math.copysign(_TINY, f1 if abs(f1) == _TINY else f2)
    if _straight_through(x, x1, f1, x2, f2, xtol + rtol * abs(x)):
        return EXACT, fx
    return ZERO, fx


@kernel
def brent_settle(xa, fa, xb, fb, xc, fc, d, e, bisected, status, under, dead, rows, a0, fa0,
                 b0, fb0, code_out, root_out, residual_out, iterations_out, evaluations_out,
                 extra, converged, k: int, calls: int, xtol: float, rtol: float
                 ) -> tuple[int, int, int]:
    """Resolve what :func:`brent_pass` flagged, row by row, without calls of f, and
    finish the rows that stop.

    ``CLOSED``: the verdict (``rows`` maps the arrays' rows to the chunk rows of ``a0,
    fa0, b0, fb0``, the bracket as given and f there), or :data:`PROBE`. ``SPECIAL``:
    not finite stops the row; an exact 0.0 with an end in a stretch of underflow takes
    that end's sign as +-tiny (:data:`RERUN`: the pass must run again on the row); in
    line with ends that show f far above underflow it is a root (``exact_zero``); else
    :data:`ZERO` (probes beside x). ``EXOTIC``: the interpolation step with the scalar's
    ldexp, and the rest of the iteration.

    A row with a reason code (from the pass, from here, or from the caller's probes) is
    finished in place, as :meth:`solvers.batch.rows.Outcome.write` writes it at its
    chunk row: the code, root xb and residual fb (NaN where ``converged[code]`` is
    false), ``k`` iterations, ``calls`` + ``extra`` evaluations; it is marked ``dead``
    and its status set back to -1. Returns the numbers of rows finished, left for
    probes, and to run again.
    """
    stopped = probes = again = 0
    for i in range(xb.size):
        code = status[i]
        if code < 0:
            continue
        if code == CLOSED or code == MAX_IT or code == CAPPED_KEPT:
            code = _ended_code(code, xb[i], fb[i], xc[i], fc[i], rows[i], a0, fa0, b0, fb0,
                               under[i])
        elif code == SPECIAL:
            code, fb[i] = _special(xb[i], fb[i], xa[i], fa[i], xc[i], fc[i], xtol, rtol,
                                   under[i])
        elif code == EXOTIC:  # the pass's tests passed: the step scaled with ldexp
            x_a, f_a, x_b, f_b, x_c, f_c = xa[i], fa[i], xb[i], fb[i], xc[i], fc[i]
            half_tol = 0.5 * (xtol + rtol * abs(x_b))
            m = 0.5 * x_c - 0.5 * x_b
            s = _interpolation_step(x_a, f_a, x_b, f_b, x_c, f_c)
            if 2.0 * abs(s) < min(abs(e[i]), 3.0 * abs(m) - half_tol) and not (
                abs(s) <= half_tol and bisected[i]
            ):
                e[i] = d[i]
                d[i] = s
            else:
                e[i] = m
                d[i] = m
            step = d[i]
            bisected[i] = step == m
            xa[i], fa[i] = x_b, f_b
            if abs(step) > half_tol:
                xb[i] = x_b + step
            else:
                xb[i] = x_b + (half_tol if m > 0 else -half_tol)
            code = -1
        if code == PROBE or code == ZERO or code == CAPPED:
            probes += 1
        elif code == RERUN:
            again += 1
        elif code >= 0:
            row = rows[i]
            good = converged[code]
            code_out[row] = code
            root_out[row] = xb[i] if good else math.nan
            residual_out[row] = fb[i] if good else math.nan
            iterations_out[row] = k
            evaluations_out[row] = calls + extra[row]
            dead[i] = True
            stopped += 1
            code = -1
        status[i] = code
    return stopped, probes, again


@kernel
def bisection_pass(lo, flo, hi, fhi, mid, fmid, skip, status, xtol: float, rtol: float,
                   ftol: float, at_cap: bool, first: bool) -> int:
    """One bisection iteration on every row that ``skip`` does not mark, from f at the
    last midpoint (``fmid``; none on the ``first`` pass) to the next midpoint (``mid``):
    the loop of :func:`solvers.methods.bracketing.bisection` from ``fmid = ev(mid)`` round
    to the next ``mid``.

    In the scalar order: f 0.0 or not finite flags ``SPECIAL`` (the row is left as it
    was); the midpoint replaces the end of its sign; ``|f| <= ftol`` stops the row
    (``f_tolerance``, at the midpoint); a bracket closed below tolerance, or of two
    adjacent doubles, flags ``CLOSED``; at the cap the row stops (``max_iterations``);
    otherwise ``mid`` is the next midpoint. Selections, no branches on the data, as in
    :func:`brent_pass`. Returns the number of rows stopped or flagged.
    """
    flagged = 0
    for i in range(lo.size):
        x_lo, f_lo, x_hi, f_hi, x_m, f_m = lo[i], flo[i], hi[i], fhi[i], mid[i], fmid[i]
        go = not skip[i]
        special = not first and (not (abs(f_m) < math.inf) or f_m == 0.0)
        left = (f_m > 0.0) == (f_lo > 0.0)
        n_lo = x_m if not first and left else x_lo
        g_lo = f_m if not first and left else f_lo
        n_hi = x_hi if first or left else x_m
        g_hi = f_hi if first or left else f_m
        f_stop = not first and abs(f_m) <= ftol
        best = n_lo if abs(g_lo) <= abs(g_hi) else n_hi
        closed = n_hi - n_lo <= xtol + rtol * abs(best)
        m = 0.5 * n_lo + 0.5 * n_hi
        split = n_lo < m and m < n_hi
        code = (SPECIAL if special else F_TOL if f_stop else CLOSED if closed else
                MAX_IT if at_cap else -1 if split else CLOSED)
        keeps = go and code != SPECIAL
        flagged += 1 if go and code != -1 else 0
        status[i] = code if go else status[i]
        lo[i] = n_lo if keeps else x_lo
        flo[i] = g_lo if keeps else f_lo
        hi[i] = n_hi if keeps else x_hi
        fhi[i] = g_hi if keeps else f_hi
        mid[i] = m if go and code == -1 else x_m
    return flagged


@kernel
def _two_end_settle(e1, f1, e2, f2, x, fx, status, under, dead, rows, a0, fa0, b0, fb0,
                    code_out,
                    root_out, residual_out, iterations_out, evaluations_out, extra,
                    converged, k: int, calls: int, xtol: float, rtol: float,
                    first_on_tie: bool) -> tuple[int, int, int]:
    """The settling loop of a method with a bracket [e1, e2] and one new point x:
    ``CLOSED`` rows get their verdict (root: the end of smaller |f|, e1 on a tie when
    ``first_on_tie``), ``SPECIAL`` rows the rules of an exact 0.0 or a value that is not
    finite at x (root: x); rows with a reason code are finished in place. Returns the
    numbers of rows finished, left for probes, and to run again."""
    stopped = probes = again = 0
    for i in range(x.size):
        code = status[i]
        if code < 0:
            continue
        if code == CLOSED or code == MAX_IT or code == CAPPED_KEPT:
            code = _ended_code(code, e1[i], f1[i], e2[i], f2[i], rows[i], a0, fa0, b0, fb0,
                               under[i])
        elif code == SPECIAL:
            code, fx[i] = _special(x[i], fx[i], e1[i], f1[i], e2[i], f2[i], xtol, rtol,
                                   under[i])
        if code == PROBE or code == ZERO or code == CAPPED:
            probes += 1
        elif code == RERUN:
            again += 1
        elif code >= 0:
            row = rows[i]
            good = converged[code]
            at_x = code == F_TOL or code == EXACT
            first = abs(f1[i]) <= abs(f2[i]) if first_on_tie else abs(f1[i]) < abs(f2[i])
            root = x[i] if at_x else (e1[i] if first else e2[i])
            residual = fx[i] if at_x else (f1[i] if first else f2[i])
            code_out[row] = code
            root_out[row] = root if good else math.nan
            residual_out[row] = residual if good else math.nan
            iterations_out[row] = k
            evaluations_out[row] = calls + extra[row]
            dead[i] = True
            stopped += 1
            code = -1
        status[i] = code
    return stopped, probes, again


@kernel
def bisection_settle(lo, flo, hi, fhi, mid, fmid, status, under, dead, rows, a0, fa0, b0,
                     fb0, code_out, root_out, residual_out, iterations_out, evaluations_out,
                     extra, converged, k: int, calls: int, xtol: float, rtol: float
                     ) -> tuple[int, int, int]:
    """:func:`brent_settle` for bisection (:func:`_two_end_settle` on [lo, hi] and the
    midpoint; lo on a tie of |f|, as the scalar bisection)."""
    return _two_end_settle(lo, flo, hi, fhi, mid, fmid, status, under, dead, rows, a0, fa0,
                           b0, fb0, code_out, root_out, residual_out, iterations_out,
                           evaluations_out, extra, converged, k, calls, xtol, rtol, True)


@kernel
def _maximum(u: float, v: float) -> float:
    """numpy.maximum of two numbers: NaN when either is NaN."""
    if u != u or v != v:
        return math.nan
    return u if u >= v else v


@kernel
def regula_falsi_pass(xa, fa, xb, fb, ga, x, fx, previous, previous_step,
                      previous_ratio, fallback, checking, skip, status, xtol: float,
                      rtol: float, ftol: float, at_cap: bool, first: bool,
                      illinois: bool) -> int:
    """One false position (``illinois``: Illinois) iteration on every row that ``skip``
    does not mark, from f at the last iterate (``x``, ``fx``; none on the ``first``
    pass) to the next iterate: the loop of
    :func:`solvers.methods.bracketing._regula_falsi`, in the form of the numpy kernel
    before it (NaN for "none" in the step history; the probe is made and taken in the
    same pass).

    In the scalar order: f 0.0 or not finite flags ``SPECIAL`` (the row is left as it
    was); the iterate replaces b, and a the old b on a sign change (Illinois halves
    the value interpolated at a kept a); ``|f| <= ftol`` stops the row (at the
    iterate); a bracket closed below tolerance flags ``CLOSED``; plain false position
    checks its linear-convergence estimate (the next iterate is then the probe half a
    tolerance towards a); at the cap the row stops; the next iterate is the probe, the
    chord's zero, or the midpoint where rounding put the chord's zero on an end (two
    adjacent doubles: ``CLOSED``). Selections, no branches on the data, as in
    :func:`brent_pass`. Returns the number of rows stopped or flagged.
    """
    flagged = 0
    for i in range(xb.size):
        x_a, f_a, x_b, f_b, g_a = xa[i], fa[i], xb[i], fb[i], ga[i]
        x_n, f_n = x[i], fx[i]
        prev, p_step, p_ratio = previous[i], previous_step[i], previous_ratio[i]
        was_fallback, was_checking = fallback[i], checking[i]
        go = not skip[i]
        # f at the last iterate
        special = not first and (not (abs(f_n) < math.inf) or f_n == 0.0)
        moved = not first and (f_n > 0.0) != (f_b > 0.0)
        kept = not first and not moved
        n_a = x_b if moved else x_a
        h_a = f_b if moved else f_a
        h_ga = f_b if moved else (0.5 * g_a if kept and illinois else g_a)
        n_b = x_b if first else x_n
        h_b = f_b if first else f_n
        f_stop = not first and abs(f_n) <= ftol
        lo = min(n_a, n_b)
        hi = max(n_a, n_b)
        a_better = abs(h_a) < abs(h_b)
        best = n_a if a_better else n_b
        closed = not first and abs(n_b - n_a) <= xtol + rtol * abs(best)
        # plain false position: the estimate from the last chord steps
        reset = was_fallback or was_checking
        p_step = math.nan if reset else p_step
        p_ratio = math.nan if reset else p_ratio
        going = not reset and not math.isnan(prev)
        step = abs(x_n - prev)
        had_step = going and not math.isnan(p_step)
        ratio = step / p_step
        c = ratio if math.isnan(p_ratio) else _maximum(ratio, p_ratio)
        error = step * _maximum(1.0, c / (1.0 - c))
        tolerance = xtol + rtol * abs(x_n)
        check = (had_step and not math.isnan(p_ratio) and c < 1.0 and error <= tolerance
                 and not first and not illinois)
        p = x_n + math.copysign(0.5 * tolerance, n_a - x_n) if check else math.nan
        estimate = not first and not illinois
        n_ratio = ratio if estimate and had_step else p_ratio
        n_step = step if estimate and going else p_step
        n_prev = (math.nan if reset else x_n) if estimate else prev
        # the next iterate
        use_probe = lo < p and p < hi
        denominator = h_b - h_ga  # never zero: fb and ga have opposite signs
        if abs(denominator) == math.inf or h_ga == 0.0:
            fraction = 1.0 / (1.0 - h_ga / h_b)
        else:
            fraction = h_b / denominator
        chord = n_b - fraction * (n_b - n_a)
        nxt = p if use_probe else chord
        n_fallback = not use_probe and not (lo < nxt and nxt < hi)
        nxt = 0.5 * lo + 0.5 * hi if n_fallback else nxt
        adjacent = n_fallback and not (lo < nxt and nxt < hi)
        code = (SPECIAL if special else F_TOL if f_stop else CLOSED if closed else
                MAX_IT if at_cap else CLOSED if adjacent else -1)
        moves = go and code == -1
        keeps = go and code != SPECIAL
        flagged += 1 if go and code != -1 else 0
        status[i] = code if go else status[i]
        xa[i] = n_a if keeps else x_a
        fa[i] = h_a if keeps else f_a
        xb[i] = n_b if keeps else x_b
        fb[i] = h_b if keeps else f_b
        ga[i] = h_ga if keeps else g_a
        x[i] = nxt if moves else x_n
        previous[i] = n_prev if moves else prev
        previous_step[i] = n_step if moves else previous_step[i]
        previous_ratio[i] = n_ratio if moves else previous_ratio[i]
        fallback[i] = n_fallback if moves else was_fallback
        checking[i] = (not math.isnan(p)) if moves else was_checking
    return flagged


@kernel
def regula_falsi_settle(xa, fa, xb, fb, ga, x, fx, previous, previous_step, previous_ratio,
                        fallback, checking, status, under, dead, rows, a0, fa0, b0, fb0,
                        code_out, root_out, residual_out, iterations_out, evaluations_out,
                        extra, converged, k: int, calls: int, xtol: float, rtol: float
                        ) -> tuple[int, int, int]:
    """:func:`brent_settle` for false position and Illinois (:func:`_two_end_settle` on
    the ends a, b and the iterate; b on a tie of |f|, as the scalar methods)."""
    return _two_end_settle(xa, fa, xb, fb, x, fx, status, under, dead, rows, a0, fa0, b0,
                           fb0, code_out, root_out, residual_out, iterations_out,
                           evaluations_out, extra, converged, k, calls, xtol, rtol, False)
