"""Vectorised refinement kernels: all sign-change brackets at once (Anderson-Bjorck, then
bisection to classify root / pole / jump), golden-section search with its convex floor,
and the brackets beside an overflow."""

from __future__ import annotations

import collections
import functools
import itertools
import math

import numpy as np

from solvers.methods import brent
from solvers.records import Run
from solvers.scan.noise import _noise_beside
from solvers.scan.records import EPS, _Found
from solvers.scan.sampling import _Guarded, _passes

_ROOT, _POLE, _JUMP, _UNDEF = 1, 2, 3, 4


def _classify(g: _Guarded, br: np.ndarray, xtol: float):
    """Bisect all sign-change brackets at once and say root / pole / jump / undefined.

    br has rows (lo, hi, f(lo), f(hi)). Returns (kind, lo, hi, flo, fhi) arrays; for roots
    the bracket is narrowed only until the decision (Brent does the rest), for poles and
    jumps down to adjacent floats.
    """
    lo, hi, flo, fhi = (br[:, j].astype(float).copy() for j in range(4))
    g0 = np.maximum(np.abs(flo), np.abs(fhi))
    kind = np.zeros(len(lo), dtype=int)
    history = collections.deque([np.minimum(np.abs(flo), np.abs(fhi))], maxlen=21)
    for it in range(1100):
        act = np.flatnonzero(kind == 0)
        if act.size == 0:
            break
        if it % 4 == 0:
            g.check()
        left_end, right_end = lo[act], hi[act]
        mid = 0.5 * (left_end + right_end)
        fm = g(mid)
        narrow = (mid <= left_end) | (mid >= right_end) | (right_end - left_end <= xtol)
        special = ~np.isfinite(fm) | (fm == 0)
        stuck = np.zeros(act.size, dtype=bool)
        if special.any():
            bad = np.isnan(fm)
            if bad.any():  # an isolated undefined point (0 * inf at a pole): step aside
                mid[bad] = left_end[bad] + 0.381966 * (right_end[bad] - left_end[bad])
                fm[bad] = g(mid[bad])
            inf, nan, zero = np.isinf(fm), np.isnan(fm), fm == 0
            kind[act[inf]] = _POLE
            lo[act[inf]] = hi[act[inf]] = mid[inf]
            # still undefined after stepping aside: at float resolution that is the singular
            # point itself (decided below like a narrow bracket), else a hole in the domain
            width = right_end - left_end
            tight = width <= 1e-9 * np.maximum(np.abs(left_end), np.abs(right_end)) + xtol
            kind[act[nan & ~tight]] = _UNDEF
            stuck = nan & tight
            kind[act[zero]] = _ROOT
            lo[act[zero]] = hi[act[zero]] = mid[zero]
            flo[act[zero]] = fhi[act[zero]] = 0.0
            special = inf | nan | zero
        regular = ~special
        left = regular & ((fm > 0) == (flo[act] > 0))
        right = regular & ~left
        lo[act[left]], flo[act[left]] = mid[left], fm[left]
        hi[act[right]], fhi[act[right]] = mid[right], fm[right]
        big = np.maximum(np.abs(flo[act]), np.abs(fhi[act]))
        root = regular & (big <= 1e-6 * g0[act])
        kind[act[root]] = _ROOT
        cur = np.minimum(np.abs(flo), np.abs(fhi))
        history.append(cur)
        done = act[(regular & narrow & ~root) | stuck]
        if done.size:
            past = history[0][done]
            grows = cur[done] >= 1.2 * past
            steady = np.ones(done.size, dtype=bool)
            for h0, h1 in itertools.pairwise(history):
                steady &= h1[done] >= h0[done]
            huge = cur[done] >= 1e3 * g0[done]
            kind[done] = np.where((grows & steady) | huge, _POLE, _JUMP)
    kind[kind == 0] = _JUMP
    return kind, lo, hi, flo, fhi


_RTOL = 4 * EPS  # relative bracket-width tolerance of every refinement (Brent's stop rule)


def _bracket_all(g: _Guarded, br: np.ndarray, xtol: float, max_iter: int = 200):
    """Anderson–Björck on every sign-change bracket at once: one f call per iteration.

    br has rows (lo, hi, f(lo), f(hi)) with f(lo), f(hi) finite, nonzero, of opposite
    sign. Each bracket is shrunk by false position with the Anderson–Björck weight on
    the end held twice running (N. Anderson and Å. Björck, BIT 12 (1972) 503-508), a
    bisection whenever three iterations failed to halve the bracket, and a least step of
    half the tolerance (as in Brent's method) so both ends close in. It stops when
    ``hi - lo <= xtol + 4 eps max(|lo|, |hi|)``, Brent's stop rule, or at an exact zero.

    Returns (done, lo, hi, flo, fhi): ``done`` marks brackets that converged (lo == hi
    at an exact zero); the others met NaN/inf inside or hit ``max_iter`` and are left
    to :func:`_classify`.
    """
    count = len(br)
    if count <= _FEW:
        return _bracket_each(g, br, xtol, max_iter)
    # the iteration's arithmetic in two compiled halves around the one call of f
    # (:func:`solvers.scan.passes.ab_start`, :func:`~solvers.scan.passes.ab_accept`): the
    # numpy form cost some 35 calls an iteration; every row is updated in place, and
    # ``active`` lists the brackets still shrinking, in order (so f sees the same points)
    out = np.array(br, dtype=float)  # rows lo, hi, f(lo), f(hi) as they end
    done = np.zeros(count, dtype=bool)
    active = np.arange(count)
    lo, hi, flo, fhi = (out[:, j].copy() for j in range(4))
    wlo, whi = flo.copy(), fhi.copy()  # false-position weights (scaled f at held ends)
    prev = np.full(count, -1, dtype=np.int8)  # end replaced last: 1 lo, 0 hi, -1 none
    w1 = np.full(count, np.inf)  # bracket widths one, two and three iterations back
    w2, w3 = w1.copy(), w1.copy()
    width, x = np.empty(count), np.empty(count)
    n_act = count
    ab_start, ab_accept = _passes().ab_start, _passes().ab_accept
    for it in range(max_iter + 1):
        propose = it < max_iter
        n_act = ab_start(active, n_act, lo, hi, flo, fhi, wlo, whi, w3, xtol, _RTOL, propose,
                         done, out, width, x)
        if n_act == 0 or not propose:
            break
        if it % 4 == 0:
            g.check()
        fx = g(x[:n_act])
        n_act = ab_accept(active, n_act, x, fx, lo, hi, flo, fhi, wlo, whi, prev, w1, w2, w3,
                          width, done, out)
    return done, out[:, 0].copy(), out[:, 1].copy(), out[:, 2].copy(), out[:, 3].copy()


# Up to this many brackets are refined on the scalar f (:func:`_bracket_each`). Chosen when
# an iteration of the vectorised loop cost some 35 numpy calls of about 1 us whatever the
# bracket count, plus one call of f (its own overhead: 3 us for cos x cosh x, 60 us for a
# sum of 20 sines), against about 1 us of Python and one scalar f (0.5 to 2.5 us) per
# bracket: the two broke even near 25 brackets. Both now run the same two compiled passes
# an iteration, which moves the break-even lower; the bound stays, as moving it would
# change results: the scalar f (math) and the vectorised f (numpy) may differ in the last
# bit, and so may the roots refined on them.
_FEW = 24


def _bracket_each(g: _Guarded, br: np.ndarray, xtol: float, max_iter: int = 200):
    """:func:`_bracket_all` on the scalar f: the same iteration (Anderson-Bjorck weights,
    the bisection after three iterations that failed to halve the bracket, the least step
    of half the tolerance, Brent's stop rule) in the same compiled halves
    (:func:`solvers.scan.passes.ab_start`, ``ab_accept``), all brackets in step, with f
    asked one point at a time on Python floats. Same returns.

    (It was the iteration written out in Python floats, bracket after bracket, with
    numpy's rules where Python's differ: the compiled halves do that arithmetic in the
    same order, so each bracket meets the same points and f the same values, and about
    1 us of Python an evaluation became a few us an iteration: the cantilever's 16
    brackets 81 us -> 39 us.)
    """
    g.check()
    count = len(br)
    out = np.array(br, dtype=float).reshape(count, 4)  # rows lo, hi, f(lo), f(hi) as they end
    done = np.zeros(count, dtype=bool)
    active = np.arange(count)
    lo, hi, flo, fhi = (out[:, j].copy() for j in range(4))
    wlo, whi = flo.copy(), fhi.copy()
    prev = np.full(count, -1, dtype=np.int8)
    w1 = np.full(count, np.inf)
    w2, w3 = w1.copy(), w1.copy()
    width, x, fx = np.empty(count), np.empty(count), np.empty(count)
    n_act = count
    ab_start, ab_accept = _passes().ab_start, _passes().ab_accept
    # g.fast written out (a Python call less per evaluation): f itself where it answers a
    # float, g.scalar (its conversions) where it does not
    f, scalar, poll = g.f, g.scalar, g.poll
    polled = g.cancel is not None
    values: list[float] = []
    for it in range(max_iter + 1):
        propose = it < max_iter
        n_act = ab_start(active, n_act, lo, hi, flo, fhi, wlo, whi, w3, xtol, _RTOL, propose,
                         done, out, width, x)
        if n_act == 0 or not propose:
            break
        values.clear()
        for v in x[:n_act].tolist():
            if polled:
                poll()
            try:
                fv = f(v)
            except Exception:  # noqa: BLE001 - undefined there; scalar() decides how
                fv = scalar(v)
            else:
                if fv.__class__ is not float:
                    fv = float(fv) if isinstance(fv, float) else scalar(v)
            values.append(fv)
        fx[:n_act] = values
        n_act = ab_accept(active, n_act, x, fx, lo, hi, flo, fhi, wlo, whi, prev, w1, w2, w3,
                          width, done, out)
    return done, out[:, 0].copy(), out[:, 1].copy(), out[:, 2].copy(), out[:, 3].copy()


def _resolve_brackets(g: _Guarded, gp: _Guarded | None, br: np.ndarray, xtol: float,
                      scale: float = 1.0):
    """Roots, poles and jumps of sign-change brackets (rows lo, hi, f(lo), f(hi)).

    All brackets are refined at once by :func:`_bracket_all`; a converged bracket whose
    ends' |f| fell to 1e-6 of the sampled |f| is a root (the end of smaller |f|, then one
    vectorised Newton step with f' where that lowers |f|). Every other bracket (|f| not
    falling: a pole or a jump; NaN inside; no convergence) is decided by
    :func:`_classify` from its original ends, as before; a "jump" whose ends' |f| lie
    within f's rounding noise (:func:`solvers.scan.noise._noise_beside`; ``scale`` is the
    range's largest |x|, the noise estimate's step floor) is a root that bisection met in
    noise (confirmed code ``bracket_in_noise``).
    Returns (found, poles, jumps, undefined) with ``undefined`` the rows whose inside is
    partly undefined.
    """
    done, lo, hi, flo, fhi = _bracket_all(g, br, xtol)
    # (compiled passes, :func:`solvers.scan.passes.root_pick` and ``newton_try``, around
    # the calls of f' and f: the numpy form cost some 30 calls, for every scan)
    root, zero_end, x, fend = _passes().root_pick(br, done, lo, hi, flo, fhi)
    at_zero, bracketed = ("zero_at_iterate",), ("anderson_bjorck",)  # (shared tuples)
    how: list[tuple[str, ...]] = [at_zero if z else bracketed for z in zero_end.tolist()]
    if gp is not None and root.any():
        ir = np.flatnonzero(root & (lo != hi))
        # f at x is the bracket end's value the refinement already has (no second call)
        ok, xn = _passes().newton_try(ir, x, fend, gp(x[ir]), lo, hi)
        if ok.size:
            better = ok[np.abs(g(xn[ok])) < np.abs(fend[ir[ok]])]
            x[ir[better]] = xn[better]
            for i in ir[better].tolist():
                how[i] = how[i] + ("newton_polish",)
    ir = np.flatnonzero(root)
    # (plain Python lists: indexing numpy arrays per root costs more than the roots' records)
    found = [
        _Found(xi, True, how[i], (row[0], row[1]), functools.partial(_brent_record, g, row, xtol))
        for xi, i, row in zip(x[ir].tolist(), ir.tolist(), br[ir].tolist(), strict=True)
    ]
    poles: list[float] = []
    jumps: list[float] = []
    undefined: list[int] = []
    rest = np.flatnonzero(~root)
    if rest.size:
        kind, clo, chi, cflo, cfhi = _classify(g, br[rest], xtol)
        jump = np.flatnonzero(kind == _JUMP)
        if jump.size:
            # a sign change of f whose ends sit in f's rounding noise is a root (or one
            # member of a noise cluster), never a jump: noise only looks like a step
            level = _noise_beside(g, 0.5 * (clo[jump] + chi[jump]), scale)
            noisy = (level > 0) & (np.maximum(np.abs(cflo[jump]), np.abs(cfhi[jump])) <= level)
            kind[jump[noisy]] = _ROOT
        in_noise = np.zeros(len(rest), dtype=bool)
        if jump.size:
            in_noise[jump[noisy]] = True
        for j, i in enumerate(rest):
            if kind[j] == _ROOT:  # (|f| fell, but the fast iteration met NaN on the way)
                r = _refine(g, gp, br[i], clo[j], chi[j], cflo[j], cfhi[j], xtol)
                if in_noise[j]:
                    r.how = r.how + ("bracket_in_noise",)
                found.append(r)
            elif kind[j] == _POLE:
                poles.append(float(0.5 * (clo[j] + chi[j])))
            elif kind[j] == _JUMP:
                jumps.append(float(0.5 * (clo[j] + chi[j])))
            else:
                undefined.append(int(i))
    return found, poles, jumps, undefined


def _brent_record(g: _Guarded, row: list[float] | np.ndarray, xtol: float) -> Run | None:
    """The project's Brent on one sample bracket (its ends' f values already known)."""
    known = {float(row[0]): float(row[2]), float(row[1]): float(row[3])}

    def f_known(x: float) -> float:
        value = known.pop(x, None)
        return g.scalar(x) if value is None else value

    try:
        return brent(f_known, float(row[0]), float(row[1]), xtol=xtol, rtol=_RTOL, ftol=0.0,
                     max_iter=200)
    except ArithmeticError:
        return None


def _convex_floor(lo, c, d, hi, flo, fc, fd, fhi, where: bool = False):
    """Least value a convex function through the four points lo < c < d < hi can take on
    [lo, hi] (-inf where the four values are not convex: slopes must not decrease).

    A convex function lies above every chord's extension beyond the chord: on [lo, c] and
    [d, hi] above the line through c and d, on [c, d] above both the line through lo, c
    and the one through d, hi (their meeting point, or an end of [c, d]). With ``where``
    also that meeting point x* in [c, d] and the lines' value there: (floor, x*, value).
    """
    with np.errstate(all="ignore"):
        s1, s2, s3 = (fc - flo) / (c - lo), (fd - fc) / (d - c), (fhi - fd) / (hi - d)
        convex = (s1 <= s2) & (s2 <= s3)
        outer = np.minimum(np.minimum(fc + s2 * (lo - c), fc), np.minimum(fd + s2 * (hi - d),
                                                                          fd))
        # lines fc + s1 (x - c) and fd + s3 (x - d) meet at x*, clamped to [c, d]
        xs = np.clip(np.where(s3 > s1, (fd - fc + s1 * c - s3 * d) / (s1 - s3), c), c, d)
        middle = np.maximum(fc + s1 * (xs - c), fd + s3 * (xs - d))
        low = np.minimum(outer, middle)
    floor = np.where(convex & np.isfinite(low), low, -np.inf)
    return (floor, xs, middle) if where else floor


_GOLDEN = (math.sqrt(5) - 1) / 2


def _golden_start(lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The first two points of golden section on each [lo, hi]."""
    return hi - _GOLDEN * (hi - lo), lo + _GOLDEN * (hi - lo)


def _golden(g: _Guarded, lo: np.ndarray, hi: np.ndarray, sign: np.ndarray, xtol: float,
            *, peak: bool = False, rel: float = 4 * EPS,
            ends: tuple[np.ndarray, np.ndarray] | None = None,
            positive: np.ndarray | None = None, limit: np.ndarray | None = None,
            first: tuple[np.ndarray, np.ndarray] | None = None):
    """Vectorised golden-section minimisation of sign*f on each [lo, hi].

    Returns (xbest, fbest, crossed) where crossed marks searches that met a value of the
    opposite sign (then xbest is that point: two roots straddle it). With ``peak`` it
    maximises |f| instead (fbest is then -|f|, and nothing is ever "crossed"); a search
    that meets inf or NaN stops there. It stops when the bracket is no wider than
    ``rel max(|lo|, |hi|) + xtol``. With ``ends`` (sign*f at lo and hi) a search also stops
    once sign*f is convex through the bracket's four points and its convex floor
    (:func:`_convex_floor`) stays above half the least value found: a positive minimum,
    marked True in ``positive`` (a bool array of the rows' length, filled in place).
    With ``peak`` and ``limit`` (-2 |f| sampled at each peak) a row stops, marked in
    ``positive``, once |f| is concave through the four points, its ceiling (minus the
    convex floor of -|f|) stays below twice the sampled peak, and |f| at the point x*
    where the two outer chords meet lies strictly below them: a bounded peak, which the
    pole test (twice the sampled peak, or infinite) can never call a pole, so locating
    its top to sqrt(eps) would be work for nothing. Why no pole passes: |f| near a pole
    (1/|x - c|^k, ln|x - c|, on any offset) is convex on each side of it. A pole in
    [lo, c] or [d, hi] leaves three of the points on one convex side, and the four values
    are not concave. A pole in (c, d) can make them look concave, but then x* lies on one
    side of it, where the convex |f| is on or above the extension of that side's chord
    beyond it: |f(x*)| is at least the chords' value there, and the strict test fails.
    ``first``: the objective already evaluated at the first two points
    (:func:`_golden_start`), when the caller asked f for them with other points.
    """

    def objective(v: np.ndarray, s: np.ndarray) -> np.ndarray:
        return -np.abs(g(v)) if peak else s * g(v)

    r = _GOLDEN
    lo, hi = lo.copy(), hi.copy()
    c, d = _golden_start(lo, hi)
    if first is not None:
        fc, fd = first[0].astype(float), first[1].astype(float)
    else:
        # (both first points in one call of f: each call costs f's whole overhead)
        fc, fd = objective(np.concatenate([c, d]), np.concatenate([sign, sign])).reshape(2, -1)
    xbest = np.where(fc <= fd, c, d)
    fbest = np.minimum(fc, fd)
    crossed = (fbest < 0) if not peak else np.zeros(len(lo), dtype=bool)
    active = ~crossed & np.isfinite(fbest)
    if ends is not None:
        flo, fhi = ends[0].astype(float).copy(), ends[1].astype(float).copy()
    # each step in compiled passes around its calls of f (:func:`solvers.scan.passes.
    # golden_floor`, ``golden_move``, ``golden_accept``): the numpy form cost some 40 calls
    # a step. ``act`` lists the rows still searching, in order (f sees the same points)
    sign = np.asarray(sign, dtype=float)
    count = len(lo)
    act = np.flatnonzero(active)
    n_act = act.size
    act = np.concatenate([act, np.zeros(count - n_act, dtype=act.dtype)])
    has_floor = ends is not None and positive is not None
    if ends is None:
        flo = fhi = np.empty(count)  # (unused: no ends to keep up to date)
    sure = np.zeros(count, dtype=bool)
    xs, middle, newx = np.empty(count), np.empty(count), np.empty(count)
    left = np.zeros(count, dtype=bool)
    lim = limit if limit is not None else fbest
    pos = positive if positive is not None else np.zeros(count, dtype=bool)
    passes = _passes()
    golden_floor, golden_move, golden_accept = (passes.golden_floor, passes.golden_move,
                                                passes.golden_accept)
    for _ in range(120):
        if n_act == 0:
            break
        g.check()
        sure[:n_act] = False
        if has_floor:
            if golden_floor(act, n_act, lo, c, d, hi, flo, fc, fd, fhi, fbest, lim,
                            limit is not None, sure, xs, middle) and limit is not None:
                # the probe at x*: -|f| there strictly above the chords' value (the
                # objective is -|f|), as it is for a concave |f| and never beside a pole
                probe = np.flatnonzero(sure[:n_act])
                sure[probe] = objective(xs[probe], sign[act[probe]]) > middle[probe]
        n_act = golden_move(act, n_act, sure, pos, active, ends is not None, lo, hi, c, d,
                            fc, fd, flo, fhi, r, left, newx)
        if n_act == 0:
            break
        n_act = golden_accept(act, n_act, left, newx, g(newx[:n_act]), peak, sign, lo, hi,
                              fc, fd, xbest, fbest, crossed, active, rel, xtol)
    return xbest, sign * fbest, crossed


_SQRT_EPS = math.sqrt(EPS)


def _overflow_brackets(g: _Guarded, pairs: list[tuple[float, float, float]]) -> list:
    """Brackets with finite ends inside sign changes whose one end overflows to +-inf.

    Bisects (by value, then in the doubles' bit pattern once the midpoint stalls) until a
    finite value of the infinite end's sign appears: that and the finite end bracket a
    root. Where f is inf right up to the last finite point there is no root (a pole
    sampled exactly, or an overflow boundary), and nothing is returned.
    """
    out = []
    for xf, xi, yf in pairs:
        lo, hi = xf, xi  # lo: finite with yf's sign; hi: infinite with the other sign
        for _ in range(2200):  # enough to halve the 2^64 doubles between any two points
            mid = 0.5 * (lo + hi)
            if mid in (lo, hi) or abs(hi - lo) > 1e3 * abs(mid) + 1e-300:
                # halve in the bit pattern: spans many binades geometrically
                mid = _bit_midpoint(lo, hi)
            if mid in (lo, hi):
                break
            fm = g.scalar(mid)
            if math.isnan(fm):
                break
            if fm == 0 or (math.isfinite(fm) and (fm < 0) != (yf < 0)):
                out.append((min(xf, mid), max(xf, mid), *((yf, fm) if xf < mid else (fm, yf))))
                break
            if math.isfinite(fm):
                lo = mid
            else:
                hi = mid
    return out


def _bit_midpoint(u: float, v: float) -> float:
    """The double halfway between u and v in order of representation (geometric spacing)."""
    def key(t: float) -> int:
        i = int(np.array(t, dtype=np.float64).view(np.int64))
        return i if i >= 0 else -(i & 0x7FFFFFFFFFFFFFFF)

    def unkey(i: int) -> float:
        bits = i if i >= 0 else (-i) | (1 << 63)
        return float(np.array(bits, dtype=np.uint64).view(np.float64))

    return unkey((key(u) + key(v)) // 2)


def _refine(g, gp, row, lo, hi, flo, fhi, xtol) -> _Found:
    """Brent from the narrowed bracket, then a Newton step with f' if it helps."""
    bracket = (float(row[0]), float(row[1]))
    if lo == hi:
        return _Found(float(lo), True, ("zero_at_bisection",), bracket=bracket)
    known = {float(lo): float(flo), float(hi): float(fhi)}

    def f_known(x: float) -> float:  # the bracket ends were evaluated while classifying
        value = known.pop(x, None)
        return g.scalar(x) if value is None else value

    try:
        run = brent(f_known, float(lo), float(hi), xtol=xtol, rtol=4 * EPS, ftol=0.0,
                    max_iter=200)
    except ArithmeticError:  # (the scan never fails because an interpolation divided badly)
        run = None
    x = float(run.root) if run is not None else math.nan
    how: tuple[str, ...] = ("brent",) + (() if run is None or run.converged
                                         else ("brent_stopped",))
    if not (lo <= x <= hi) or not math.isfinite(x):
        x = float(lo if abs(flo) <= abs(fhi) else hi)
        how = ("brent_left",)
    if gp is not None:
        fx, dfx = g.scalar(x), gp.scalar(x)
        if math.isfinite(dfx) and dfx != 0 and math.isfinite(fx) and fx != 0:
            xn = x - fx / dfx
            if lo <= xn <= hi and abs(g.scalar(xn)) < abs(fx):
                x, how = xn, how + ("newton_polish",)
    return _Found(x, True, how, bracket=bracket, run=run)


def _safe_brent(fn, lo: float, hi: float, xtol: float) -> Run | None:
    """The project's Brent as a record of a root already located; None if it raised."""
    try:
        return brent(fn, lo, hi, xtol=xtol, rtol=4 * EPS, ftol=0.0, max_iter=200)
    except ArithmeticError:
        return None
