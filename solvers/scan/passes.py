"""Compiled passes over the samples (:data:`solvers.compiled.kernel`).

The candidate passes of :func:`solvers.scan.sampling._detect` and the aliasing check of
:func:`solvers.scan.sampling._underresolved` were written as a few dozen numpy calls
over each chunk; on a 2001-sample grid each call costs about as much as its arithmetic.
Here each is one loop over the samples that returns the indices of the few candidates,
with every test and every formula transcribed in the numpy code's order (the same
comparisons on the same IEEE values, so the same candidates). No transcendental
function is evaluated here (numpy's and numba's may differ in the last bit).
"""

from __future__ import annotations

import math

import numpy as np

from solvers.compiled import kernel
from solvers.scan.records import EPS

_SLACK = 64 * EPS  # the extrema's convexity test: slack on f' (as 64 * EPS * (...))
_MARGIN = 1e3 * EPS  # the extrema's bound: rounding of the values (as 1e3 * EPS * max)


@kernel
def _nan_min(a: float, b: float) -> float:
    """np.minimum of two numbers: NaN when either is NaN."""
    if a != a or b != b:
        return math.nan
    return a if a <= b else b


@kernel
def _sign(v: float) -> float:
    """np.sign of a number (NaN stays NaN)."""
    if v > 0:
        return 1.0
    if v < 0:
        return -1.0
    return v  # 0, -0 or NaN, as np.sign returns them


@kernel
def detect_pass(x, y, yp, has_yp, lo, hi, cap, floor):  # noqa: C901 - one pass, every kind
    """Candidate indices of one stretch of samples (see ``sampling._detect``).

    Returns (brackets, overflow, edges, inf_points, zeros, flat, peaks, minima, extrema,
    proved): ``brackets`` the left index k of plain sign changes (k, k+1); ``overflow``
    rows (finite index, far index) of sign changes into an overflow; ``edges`` rows (k,
    1 when defined on the left else 0); ``inf_points``, ``zeros`` (rows (k, odd)) and
    ``flat`` centre indices; ``peaks`` and ``minima`` centre indices; ``extrema`` left
    indices of pairs not proved root-free (the tangent bound must clear the rounding of the
    two values and ``floor``, f's rounding noise in absolute terms); ``proved`` how many
    were; ``most`` the largest
    count of one kind. Each kind is stored up to ``cap`` (buffers the size of the stretch
    would hold megabytes for a handful of candidates, and buffers grown in the loop slow
    every iteration down): when ``most`` exceeds ``cap`` the lists are cut short and the
    caller asks again with ``cap = most``.
    """
    n = len(x)
    last_pair = min(hi, n - 1)
    extrema = np.empty(cap, np.int64)
    n_ext = 0
    proved = 0
    if has_yp and last_pair > lo:
        for i in range(lo, last_pair):
            y0, y1 = y[i], y[i + 1]
            neg0, neg1 = (math.copysign(1.0, y0) < 0), (math.copysign(1.0, y1) < 0)
            if neg0 != neg1 or y0 == 0 or y1 == 0:
                continue
            s = -1.0 if neg0 else 1.0
            # (f' exactly 0 at the right sample: the extremum sits on it; without ``>=`` it
            # belonged to neither pair and went unchecked)
            if not (s * yp[i] < 0 and s * yp[i + 1] >= 0):
                continue
            u0, u1, p0, p1 = s * y0, s * y1, s * yp[i], s * yp[i + 1]
            h = x[i + 1] - x[i]
            secant = (u1 - u0) / h
            t = (u1 - u0 - p1 * h) / (p0 - p1)
            bound = u0 + p0 * t
            slack = _SLACK * (abs(p0) + abs(p1))
            convex = (secant >= p0 - slack) and (secant <= p1 + slack)
            if u0 != u0 or u1 != u1:
                margin = math.nan
            else:
                margin = max(_MARGIN * (u0 if u0 >= u1 else u1), floor)
            if convex and math.isfinite(bound) and bound > margin:
                proved += 1
            else:
                if n_ext < cap:
                    extrema[n_ext] = i
                n_ext += 1
    brackets = np.empty(cap, np.int64)
    n_br = 0
    overflow = np.empty(2 * cap, np.int64)
    n_ov = 0
    for k in range(lo, last_pair):
        yl, yr = y[k], y[k + 1]
        if (math.copysign(1.0, yl) < 0) == (math.copysign(1.0, yr) < 0):
            continue
        if yl != 0 and yr != 0 and math.isfinite(yl) and math.isfinite(yr):
            if n_br < cap:
                brackets[n_br] = k
            n_br += 1
        elif yl != 0 and yr != 0 and math.isinf(yl) != math.isinf(yr):
            if math.isfinite(yl):
                fin, far = k, k + 1
            else:
                fin, far = k + 1, k
            if not math.isnan(y[far]):
                if n_ov < cap:
                    overflow[2 * n_ov] = fin
                    overflow[2 * n_ov + 1] = far
                n_ov += 1
    edges = np.empty(2 * cap, np.int64)
    n_ed = 0
    infs = np.empty(cap, np.int64)
    n_inf = 0
    for k in range(lo, last_pair):
        dk, dk1 = not math.isnan(y[k]), not math.isnan(y[k + 1])
        if dk != dk1:
            if n_ed < cap:
                edges[2 * n_ed] = k
                edges[2 * n_ed + 1] = 1 if dk else 0
            n_ed += 1
    zeros = np.empty(2 * cap, np.int64)
    n_z = 0
    flat = np.empty(cap, np.int64)
    n_fl = 0
    for k in range(max(lo, 1), last_pair):
        if not (math.isfinite(y[k - 1]) and math.isfinite(y[k + 1])):
            continue
        if math.isinf(y[k]):
            if n_inf < cap:
                infs[n_inf] = k
            n_inf += 1
        elif y[k] == 0:
            if y[k - 1] == 0 or y[k + 1] == 0:
                if n_fl < cap:
                    flat[n_fl] = k
                n_fl += 1
            else:
                if n_z < cap:
                    zeros[2 * n_z] = k
                    zeros[2 * n_z + 1] = 1 if (y[k - 1] < 0) != (y[k + 1] < 0) else 0
                n_z += 1
    peaks = np.empty(cap, np.int64)
    n_pk = 0
    minima = np.empty(cap, np.int64)
    n_mn = 0
    yp_finite = True
    if has_yp:
        for i in range(n):
            if not math.isfinite(yp[i]):
                yp_finite = False
                break
    blk = np.empty(7)
    d2 = np.empty(5)
    for p in range(max(lo, 1), last_pair):
        if p > n - 2:
            break
        # da[j] = |y[j+1]| - |y[j]|, at j = p - 1 and p
        da0 = abs(y[p]) - abs(y[p - 1])
        da1 = abs(y[p + 1]) - abs(y[p])
        if da0 >= 0 and da1 <= 0:
            # a sharp local maximum of |f|: the seven samples around it, clipped at the ends
            for j in range(7):
                blk[j] = y[min(max(p + j - 3, 0), n - 1)]
            ap, al, ar = abs(blk[3]), abs(blk[2]), abs(blk[4])
            sharp = (math.isfinite(al) and al > 0 and math.isfinite(ap) and ap > 0
                     and math.isfinite(ar) and ar > 0
                     and (math.copysign(1.0, blk[2]) < 0) == (math.copysign(1.0, blk[3]) < 0)
                     and (math.copysign(1.0, blk[3]) < 0) == (math.copysign(1.0, blk[4]) < 0))
            if sharp:
                for j in range(5):
                    d2[j] = abs(blk[j] - 2 * blk[j + 1] + blk[j + 2])
                far = _nan_min(d2[0] if p >= 3 else math.inf,
                               d2[4] if p + 3 < n else math.inf)
                kink = (d2[2] > 8 * far) and (d2[2] > 1e-9 * ap)
                if (ap >= 1.1 * _nan_min(al, ar)) or kink:
                    if n_pk < cap:
                        peaks[n_pk] = p
                    n_pk += 1
        if yp_finite and has_yp:
            continue  # f' finite everywhere: the extrema stand in for every minimum
        if da0 <= 0 and da1 >= 0:
            yc, yl, yr = y[p], y[p - 1], y[p + 1]
            ac, al, ar = abs(yc), abs(yl), abs(yr)
            if not (math.isfinite(yc) and math.isfinite(yl) and math.isfinite(yr) and yc != 0):
                continue
            sc = _sign(yc)
            if not (sc == _sign(yl) and sc == _sign(yr) and (ac < al or ac < ar)):
                continue
            # parabola through the three samples: keep if it dips at least 10% toward zero.
            # In units of powers of two near |f| and the spacing (exact: the same bits
            # wherever nothing under- or overflows): on a range near 1e-200 wide the
            # slope's square overflowed, and the dip test failed for every minimum
            su = math.ldexp(1.0, math.frexp(max(al, ac, ar))[1])
            hu = math.ldexp(1.0, math.frexp(x[p] - x[p - 1])[1])
            yc, yl, yr = yc / su, yl / su, yr / su
            h1, h2 = (x[p] - x[p - 1]) / hu, (x[p + 1] - x[p]) / hu
            sgn = sc
            dd1 = (sgn * yc - sgn * yl) / h1
            dd2 = (sgn * yr - sgn * yc) / h2
            curv = (dd2 - dd1) / (0.5 * (h1 + h2))
            slope = 0.5 * (dd1 + dd2)
            if curv > 0:
                vertex = sgn * yc - slope * slope / (2 * curv)
            else:
                vertex = sgn * yc - math.inf
            keep = (vertex <= 0.9 * sgn * yc) or (vertex <= curv * h1 * h2)
            if has_yp and (math.isfinite(yp[p - 1]) and math.isfinite(yp[p])
                           and math.isfinite(yp[p + 1])):
                keep = False
            if keep:
                if n_mn < cap:
                    minima[n_mn] = p
                n_mn += 1
    # counted beyond ``cap`` but not stored: the caller asks again with room for ``most``
    most = max(n_br, n_ov, n_ed, n_inf, n_z, n_fl, n_pk, n_mn, n_ext)
    n_ov, n_ed, n_z = min(n_ov, cap), min(n_ed, cap), min(n_z, cap)
    return (brackets[:min(n_br, cap)], overflow[:2 * n_ov].reshape((n_ov, 2)),
            edges[:2 * n_ed].reshape((n_ed, 2)), infs[:min(n_inf, cap)],
            zeros[:2 * n_z].reshape((n_z, 2)), flat[:min(n_fl, cap)], peaks[:min(n_pk, cap)],
            minima[:min(n_mn, cap)], extrema[:min(n_ext, cap)], proved, most)


@kernel
def underresolved_pass(x, y, yp, has_yp, window, max_turns, trapezoid):
    """Sorted indices of windows (of ``window`` samples) where f turns more than
    ``max_turns`` times, or (``has_yp``) where f' contradicts f's differences on some pair
    (see ``sampling._underresolved`` and ``sampling._inconsistent``)."""
    n = len(y)
    nwin = (n - 2) // window
    bad = np.zeros(nwin + 1, np.bool_)
    count = 0
    w = 0
    for i in range(nwin * window):
        d0 = (math.copysign(1.0, y[i + 1] - y[i]) < 0)
        d1 = (math.copysign(1.0, y[i + 2] - y[i + 1]) < 0)
        if d0 != d1:
            count += 1
        if (i + 1) % window == 0:
            if count > max_turns:
                bad[w] = True
            w += 1
            count = 0
    if has_yp:
        for i in range(n - 1):
            if y[i] == 0.0 and y[i + 1] == 0.0:
                # f rounded to 0.0 at both (1 - cos x for |x| < 1e-8, the flat part of
                # min(x, 1) - 1): no resolution of f to compare f' with; the run of zeros
                # is reported as such, never as an aliased oscillation
                continue
            half = 0.5 * (x[i + 1] - x[i])
            dy = y[i + 1] - y[i]
            avg = half * (yp[i] + yp[i + 1])
            scale = abs(dy) + half * (abs(yp[i]) + abs(yp[i + 1]))
            allow = trapezoid * scale + _MARGIN * (abs(y[i]) + abs(y[i + 1]))
            if abs(dy - avg) > allow:
                bad[i // window] = True
    out = np.empty(nwin + 1, np.int64)
    k = 0
    for j in range(nwin + 1):
        if bad[j]:
            out[k] = j
            k += 1
    return out[:k]


@kernel
def ab_start(active, n_act, lo, hi, flo, fhi, wlo, whi, w3, xtol, rtol, propose, done,
             out, width, x):
    """One iteration's first half of ``kernels._bracket_all`` (Anderson-Bjorck on many
    brackets), for the brackets ``active[:n_act]`` (ascending row numbers).

    Brackets that meet Brent's stop rule, ``hi - lo <= xtol + rtol max(|lo|, |hi|)``,
    are marked ``done`` and their ends written to ``out`` (rows lo, hi, f(lo), f(hi));
    the rest stay in ``active`` (compacted, in order). With ``propose`` each remaining
    bracket's next point goes to ``x[j]`` (j its place in ``active``): false position
    through the weighted ends, bisection when three iterations failed to halve the
    bracket, at least half the tolerance inside both ends. Returns the new count.
    """
    k = 0
    for j in range(n_act):
        i = active[j]
        w = hi[i] - lo[i]
        a, b = abs(lo[i]), abs(hi[i])
        if a != a or b != b:
            big = math.nan
        else:
            big = a if a >= b else b
        tol = xtol + rtol * big
        if w <= tol:
            done[i] = True
            out[i, 0], out[i, 1], out[i, 2], out[i, 3] = lo[i], hi[i], flo[i], fhi[i]
            continue
        active[k] = i
        if propose:
            if w > 0.5 * w3[i]:
                t = 0.5
            else:
                t = wlo[i] / (wlo[i] - whi[i])
            half = 0.5 * tol
            v = lo[i] + t * w
            c = lo[i] + half
            if not v >= c:  # (NaN too: np.fmax takes the other value)
                v = c
            c = hi[i] - half
            if not v <= c:
                v = c
            x[k] = v
        width[i] = w
        k += 1
    return k


@kernel
def ab_accept(active, n_act, x, fx, lo, hi, flo, fhi, wlo, whi, prev, w1, w2, w3, width,
              done, out):
    """One iteration's second half of ``kernels._bracket_all``: f(x) replaces the end of
    its sign; Anderson-Bjorck's weight m = 1 - f(x)/f(previous iterate) (1/2 where not
    positive) on the end held twice running. An exact zero ends its bracket (``done``,
    both ends at x); NaN/inf drops it from ``active`` (not done). Returns the new count."""
    k = 0
    for j in range(n_act):
        i = active[j]
        w3[i], w2[i], w1[i] = w2[i], w1[i], width[i]
        v, fv = x[j], fx[j]
        if fv == 0:
            done[i] = True
            out[i, 0], out[i, 1], out[i, 2], out[i, 3] = v, v, 0.0, 0.0
            continue
        if not math.isfinite(fv):
            continue
        on_lo = (math.copysign(1.0, fv) < 0) == (math.copysign(1.0, flo[i]) < 0)
        m = 1.0 - fv / (flo[i] if on_lo else fhi[i])
        if not m > 0:
            m = 0.5
        if prev[i] != (1 if on_lo else 0):
            m = 1.0
        wlo[i] *= m
        whi[i] *= m
        if on_lo:
            wlo[i], lo[i], flo[i] = fv, v, fv
        else:
            whi[i], hi[i], fhi[i] = fv, v, fv
        prev[i] = 1 if on_lo else 0
        active[k] = i
        k += 1
    return k


LADDER = 4.0 ** (-np.arange(11))  # the multiplicity ladder: reach * 4^-j (j = 0..10)
_ULP_STEPS = np.array([-3, -2, -1, 0, 1, 2, 3], dtype=float)  # steps of about one ulp
_LOG4 = math.log(4.0)
_TWO_EPS = 2 * EPS
_RAMP_D0 = 64 * EPS


@kernel
def ladder_points(x, reach, scale, extra):
    """Rows of the points ``features._multiplicity`` evaluates f at, per root x: x + d,
    then x - d, for d = reach * 4^-j (j = 0..10), then x + s k (k = -3..3, s = 2 eps
    max(|x|, scale), about one ulp), then the row's ``extra`` points."""
    n = len(x)
    rungs = len(LADDER)
    near = len(_ULP_STEPS)
    pts = np.empty((n, 2 * rungs + near + extra.shape[1]))
    for i in range(n):
        xi = x[i]
        for j in range(rungs):
            d = reach[i] * LADDER[j]
            pts[i, j] = xi + d
            pts[i, rungs + j] = xi - d
        a = abs(xi)
        step = _TWO_EPS * (a if a >= scale else scale)
        for k in range(near):
            pts[i, 2 * rungs + k] = xi + step * _ULP_STEPS[k]
        for k in range(extra.shape[1]):
            pts[i, 2 * rungs + near + k] = extra[i, k]
    return pts


@kernel
def ladder_read(vals, logs, odd):
    """Multiplicity, spread of the local slopes and residual per row of ``vals`` (f at
    :func:`ladder_points`; ``logs`` = log|vals|, taken by numpy), as
    ``features._multiplicity`` describes them."""
    n = vals.shape[0]
    rungs = len(LADDER)
    m_out = np.empty(n, np.int64)
    spread_out = np.empty(n)
    res = np.empty(n)
    slopes = np.empty(rungs - 1)
    valid = np.empty(rungs, np.bool_)
    pair = np.empty(rungs - 1, np.bool_)
    last = np.empty(4)
    for i in range(n):
        # the rounding floor: the largest |f| within a few ulps of the root (NaN only when
        # all are NaN, as np.fmax.reduce)
        floor = math.nan
        for k in range(len(_ULP_STEPS)):
            v = abs(vals[i, 2 * rungs + k])
            if v == v and (floor != floor or v > floor):
                floor = v
        for j in range(rungs):
            fp, fm = abs(vals[i, j]), abs(vals[i, rungs + j])
            if fp != fp or fm != fm:
                low = math.nan
            else:
                low = fp if fp <= fm else fm
            valid[j] = (low > 1e3 * floor) and math.isfinite(fp) and math.isfinite(fm)
        total = 0
        for j in range(rungs - 1):
            pair[j] = valid[j] and valid[j + 1]
            if pair[j]:
                total += 1
                slopes[j] = ((0.5 * (logs[i, j] + logs[i, rungs + j])
                              - 0.5 * (logs[i, j + 1] + logs[i, rungs + j + 1])) / _LOG4)
        # the last four usable slopes (the smallest distances above the floor), sorted
        for k in range(4):
            last[k] = math.inf
        count = 0
        for j in range(rungs - 2, -1, -1):
            if pair[j] and count < 4:
                last[count] = slopes[j]
                count += 1
        for k in range(1, count):  # (insertion sort of at most 4: np.sort compiles slowly)
            v = last[k]
            j = k - 1
            while j >= 0 and last[j] > v:
                last[j + 1] = last[j]
                j -= 1
            last[j + 1] = v
        lo_i = max(count - 1, 0) // 2
        hi_i = count // 2
        est = 0.5 * (last[lo_i] + last[hi_i])
        if not (count > 0 and math.isfinite(est)):
            est = 1.0 if odd[i] else 2.0
        r = np.rint(est)
        m = int(r) if r > 1 else 1
        if (m % 2 == 1) != odd[i]:
            m = m + 1 if (est >= m or m == 1) else m - 1
        least = 1 if odd[i] else 2
        m_out[i] = m if m >= least else least
        if total >= 2:
            hi_s, lo_s = -math.inf, math.inf
            for j in range(rungs - 1):
                if pair[j]:
                    s = slopes[j]
                    if s != s or hi_s != hi_s:
                        hi_s = math.nan
                    elif s > hi_s:
                        hi_s = s
                    if s != s or lo_s != lo_s:
                        lo_s = math.nan
                    elif s < lo_s:
                        lo_s = s
            spread_out[i] = hi_s - lo_s
        else:
            spread_out[i] = 0.0
        res[i] = vals[i, 2 * rungs + 3]
    return m_out, spread_out, res


@kernel
def ramp_points(x, scale):
    """Per point x (rows): x and 3 steps of about one ulp either side, then x -/+ 64 ulps
    (``noise._ramp_points``)."""
    n = len(x)
    near = len(_ULP_STEPS)
    pts = np.empty((n, near + 2))
    floor = 1e-3 * scale
    for i in range(n):
        a = abs(x[i])
        size = a if a >= floor else floor
        d0, step = _RAMP_D0 * size, _TWO_EPS * size
        for k in range(near):
            pts[i, k] = x[i] + step * _ULP_STEPS[k]
        pts[i, near] = x[i] - d0
        pts[i, near + 1] = x[i] + d0
    return pts


@kernel
def ramp_clean(vals, margin):
    """Per row of f at :func:`ramp_points`: a clean ramp (first differences of one sign,
    |f| at 64 ulps above ``margin`` times the noise of the second differences)
    (``noise._ramp_clean``)."""
    n = vals.shape[0]
    near = len(_ULP_STEPS)
    out = np.empty(n, np.bool_)
    d1 = np.empty(near - 1)
    for i in range(n):
        up, down = True, True
        for k in range(near - 1):
            d1[k] = vals[i, k + 1] - vals[i, k]
            up = up and d1[k] > 0
            down = down and d1[k] < 0
        total = 0.0
        for k in range(near - 2):
            d2 = d1[k + 1] - d1[k]
            total = d2 * d2 if k == 0 else total + d2 * d2
        spread = math.sqrt(total / ((near - 2) * 6))
        a, b = abs(vals[i, near]), abs(vals[i, near + 1])
        if a != a or b != b:
            low = math.nan
        else:
            low = a if a <= b else b
        out[i] = (up or down) and (low > margin * spread)
    return out


@kernel
def _np_max(a: float, b: float) -> float:
    """np.maximum of two numbers (NaN when either is NaN)."""
    if a != a or b != b:
        return math.nan
    return a if a >= b else b


@kernel
def golden_floor(act, n_act, lo, c, d, hi, flo, fc, fd, fhi, fbest, limit, has_limit, sure,
                 xs, middle):
    """The convex-floor test of ``kernels._golden`` on the rows ``act[:n_act]``
    (``kernels._convex_floor`` transcribed): ``sure[j]`` (j the place in ``act``) when the
    floor stays above half the least value found, or with ``has_limit`` above ``limit``
    (then ``xs[j]``, ``middle[j]``: where the outer chords meet and their value there, for
    the probe). Returns how many are sure."""
    count = 0
    for j in range(n_act):
        i = act[j]
        s1 = (fc[i] - flo[i]) / (c[i] - lo[i])
        s2 = (fd[i] - fc[i]) / (d[i] - c[i])
        s3 = (fhi[i] - fd[i]) / (hi[i] - d[i])
        convex = (s1 <= s2) and (s2 <= s3)
        outer = _nan_min(_nan_min(fc[i] + s2 * (lo[i] - c[i]), fc[i]),
                         _nan_min(fd[i] + s2 * (hi[i] - d[i]), fd[i]))
        if s3 > s1:
            v = (fd[i] - fc[i] + s1 * c[i] - s3 * d[i]) / (s1 - s3)
        else:
            v = c[i]
        # np.clip(v, c, d): NaN stays, as numpy's clip keeps it
        if v == v:
            v = v if v > c[i] else c[i]
            v = v if v < d[i] else d[i]
        mid = _np_max(fc[i] + s1 * (v - c[i]), fd[i] + s3 * (v - d[i]))
        low = _nan_min(outer, mid)
        floor = low if (convex and math.isfinite(low)) else -math.inf
        xs[j], middle[j] = v, mid
        if has_limit:
            sure[j] = floor > limit[i]
        else:
            sure[j] = floor > 0.5 * fbest[i]
        if sure[j]:
            count += 1
    return count


@kernel
def golden_move(act, n_act, sure, positive, active, has_ends, lo, hi, c, d, fc, fd, flo, fhi,
                ratio, left, newx):
    """The rows ``sure`` marks leave (``positive``); every other row of ``act[:n_act]``
    moves one golden-section step toward its smaller value, ``newx[j]`` the new point
    and ``left[j]`` whether the minimum lay in [lo, d] (``kernels._golden``). Returns the
    new count."""
    k = 0
    for j in range(n_act):
        i = act[j]
        if sure[j]:
            positive[i] = True
            active[i] = False
            continue
        act[k] = i
        if fc[i] <= fd[i]:
            left[k] = True
            if has_ends:
                fhi[i] = fd[i]
            hi[i], d[i], fd[i] = d[i], c[i], fc[i]
            c[i] = hi[i] - ratio * (hi[i] - lo[i])
            newx[k] = c[i]
        else:
            left[k] = False
            if has_ends:
                flo[i] = fc[i]
            lo[i], c[i], fc[i] = c[i], d[i], fd[i]
            d[i] = lo[i] + ratio * (hi[i] - lo[i])
            newx[k] = d[i]
        k += 1
    return k


@kernel
def golden_accept(act, n_act, left, newx, values, peak, sign, lo, hi, fc, fd, xbest, fbest,
                  crossed, active, rel, xtol):
    """f at the new points (``values``, raw) into the golden-section rows ``act[:n_act]``:
    the objective (-|f| for a peak, else sign f), the best value, a crossing, and the stop
    rule (``kernels._golden``). Returns the new count of rows still searching."""
    k = 0
    for j in range(n_act):
        i = act[j]
        fn = -abs(values[j]) if peak else sign[i] * values[j]
        if left[j]:
            fc[i] = fn
        else:
            fd[i] = fn
        if fn < fbest[i]:
            xbest[i] = newx[j]
            fbest[i] = fn
        if not peak:
            crossed[i] = crossed[i] or fn < 0
        width = hi[i] - lo[i]
        stop = (crossed[i] or not math.isfinite(fn) or not math.isfinite(fbest[i])
                or width <= rel * _np_max(abs(lo[i]), abs(hi[i])) + xtol)
        if stop:
            active[i] = False
            continue
        act[k] = i
        k += 1
    return k


@kernel
def root_pick(br, done, lo, hi, flo, fhi):
    """Which refined brackets are roots (converged, and |f| at both ends down to 1e-6 of
    the sampled |f|), x at the end of smaller |f|, and f there (``kernels.
    _resolve_brackets``). Returns (root, at_zero (a root with lo == hi), x, fx)."""
    n = len(lo)
    root = np.zeros(n, np.bool_)
    at_zero = np.zeros(n, np.bool_)
    x = np.empty(n)
    fx = np.empty(n)
    for i in range(n):
        g0 = _np_max(abs(br[i, 2]), abs(br[i, 3]))
        a, b = abs(flo[i]), abs(fhi[i])
        root[i] = done[i] and (_np_max(a, b) <= 1e-6 * g0)
        at_zero[i] = root[i] and lo[i] == hi[i]
        if a <= b:
            x[i], fx[i] = lo[i], flo[i]
        else:
            x[i], fx[i] = hi[i], fhi[i]
    return root, at_zero, x, fx


@kernel
def newton_try(ir, x, fx, dfx, lo, hi):
    """One Newton step x - f/f' from each root ``ir`` (f' in ``dfx``, in ``ir``'s order);
    returns (the places j in ``ir`` whose step is finite and stays in the bracket, the
    steps' x)."""
    n = len(ir)
    ok = np.empty(n, np.int64)
    xn = np.empty(n)
    k = 0
    for j in range(n):
        i = ir[j]
        xn[j] = x[i] - fx[i] / dfx[j]
        if (math.isfinite(dfx[j]) and dfx[j] != 0 and math.isfinite(fx[i]) and fx[i] != 0
                and lo[i] <= xn[j] and xn[j] <= hi[i]):
            ok[k] = j
            k += 1
    return ok[:k], xn
