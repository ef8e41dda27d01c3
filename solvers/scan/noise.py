"""How much rounding moves f: an empirical estimate of f's evaluation noise.

A function typed as an expanded polynomial with large exact coefficients (a Legendre or
Chebyshev polynomial written out, (x - 1)^9 multiplied out) is evaluated with heavy
cancellation: near its roots the computed f is rounding noise of size about
eps * sum |c_k x^k|, and its sign flips at random. Below that level nothing about f's
sign or size can be trusted; a root finder that believes every sign flip reports dozens
of roots, poles and jumps where there is one root cluster.

The estimate is the one of J. J. More and S. M. Wild, "Estimating computational noise",
SIAM J. Sci. Comput. 33 (2011): sample f at 2k + 1 points a tiny step apart (the smooth
part of f is then a polynomial of low degree to many digits), take the k-th differences,
which remove that smooth part, and scale by the variance an independent noise of standard
deviation sigma gives them, C(2k, k) sigma^2. Noise does not depend on the step, the smooth
part of f showing through does: estimates at two steps a factor 8 apart must agree, or
they measured the smooth part and give no estimate. Noise below 8 eps of the values
themselves is only their own rounding (no cancellation) and counts as 0. Works on any
vectorised callable; no access to the formula is needed.

The scan's use of it follows :func:`noise_level`: whether |f| at a located minimum is
indistinguishable from zero (:func:`_at_noise`), and the merging of what rounding noise
made of one root cluster into that one root (:func:`_noise_clusters`, step 6a of
:mod:`solvers.scan`).
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from solvers.methods.common import ROUNDING_QUANTA, lowest_bit
from solvers.records import Detail
from solvers.scan.records import EPS, Root
from solvers.scan.sampling import _Guarded, _passes

__all__ = ["NOISE_POINTS", "noise_level"]

_ORDER = 4  # k-th differences: the smooth part up to a cubic drops out
NOISE_POINTS = 4 * (2 * _ORDER + 1)  # evaluations of f per point estimated
_GAMMA = math.comb(2 * _ORDER, _ORDER)  # variance of the k-th difference of unit noise
# relative steps between the points, in pairs a factor 8 apart: 2^-30 (independent rounding,
# smooth part flat to many digits) and 2^-24 (so a value quantised to the ulp of a larger
# intermediate still moves). Noise does not depend on the step; the smooth part of f that
# shows through the differences grows at least as step^4 (4096-fold per factor 8), so a pair
# whose two estimates differ more than 16-fold measured the smooth part, not noise.
_PAIRS = ((2.0**-30, 2.0**-27), (2.0**-24, 2.0**-21))
_STEPS = tuple(step for pair in _PAIRS for step in pair)
_AGREE = 16.0
_EPS = float(np.finfo(float).eps)


def noise_level(
    f: Callable[[np.ndarray], np.ndarray], x: np.ndarray, floor: float
) -> np.ndarray:
    """Standard deviation of f's rounding noise near each x (same units as f).

    Parameters
    ----------
    f : vectorised callable, numpy array in, array out (NaN where undefined).
    x : points (any shape is flattened).
    floor : the least |x| the relative step refers to (points near 0 use
        ``2^-30 * floor`` as their step), in x units.

    Returns
    -------
    numpy.ndarray
        sigma >= 0 per point; 0 where f is computed exactly (or constant) there; NaN where
        f is undefined at some of the points; the larger of the estimates at two step
        sizes that each agree with the estimate at 8 times their step. One call of f with
        ``36 len(x)`` points.
    """
    x = np.asarray(x, dtype=float).reshape(-1)
    if x.size == 0:
        return np.zeros(0)
    base = np.maximum(np.abs(x), floor)
    offsets = np.arange(-_ORDER, _ORDER + 1, dtype=float)
    stencils = []
    for rel in _STEPS:
        # a power-of-2 step: x + k step is exact (away from a power of 2), so the differences
        # see f's noise, not the rounding of the points; x keeps all its bits (points on a
        # coarse grid would make a polynomial with integer coefficients exact there). Near
        # 0, where the step exceeds |x|/64, the centre moves onto the step's grid instead.
        step = np.exp2(np.floor(np.log2(rel * base)))
        centre = np.where(np.abs(x) >= 64 * step, x / step, np.round(x / step))
        stencils.append((centre[:, None] + offsets[None, :]) * step[:, None])
    pts = np.concatenate(stencils, axis=1)
    y = np.asarray(f(pts.reshape(-1)), dtype=float).reshape(len(x), len(_STEPS), -1)
    with np.errstate(all="ignore"):
        d = np.diff(y, n=_ORDER, axis=2)
        # one estimate per step; scaled by the largest difference so that squares of tiny
        # values (f near 1e-160) do not underflow
        big = np.max(np.abs(d), axis=2, keepdims=True)
        unit = np.where(big > 0, d / np.where(big > 0, big, 1.0), 0.0)
        sigma = big[..., 0] * np.sqrt(np.mean(unit * unit, axis=2) / _GAMMA)
        # rounding of the values themselves (a few eps of |f|) is no cancellation noise
        own = 8 * _EPS * np.max(np.abs(y), axis=2)
        sigma = np.where(sigma > own, sigma, 0.0)
        best = np.zeros(len(x))
        for i in range(0, len(_STEPS), 2):
            fine, coarse = sigma[:, i], sigma[:, i + 1]
            agree = (fine > 0) & (coarse <= _AGREE * fine) & (fine <= _AGREE * coarse)
            best = np.maximum(best, np.where(agree, np.maximum(fine, coarse), 0.0))
        return np.where(np.isnan(y).any(axis=(1, 2)), np.nan, best)


_ULPS = np.array([-3, -2, -1, 0, 1, 2, 3], dtype=float)  # offsets in steps of about one ulp


def _near_values(g: _Guarded, x: np.ndarray, scale: float) -> np.ndarray:
    """f at x and at a few ulps either side, shape (len(x), 7)."""
    step = 2 * EPS * np.maximum(np.abs(x), scale)
    offsets = np.array([-3, -2, -1, 0, 1, 2, 3], dtype=float)
    pts = x[:, None] + step[:, None] * offsets[None, :]
    return g(pts.reshape(-1)).reshape(pts.shape)


def _noise(g: _Guarded, x: np.ndarray, scale: float) -> np.ndarray:
    """Spread of f over a few ulps around each x: how far rounding moves f there.

    At a genuine zero f is noise and its values a few ulps apart differ by about
    their own size; at a positive minimum they all agree to many digits.
    """
    vals = _near_values(g, x, scale)
    with np.errstate(all="ignore"):
        return np.nanmax(vals, axis=1) - np.nanmin(vals, axis=1)


_NOISE_K = 8.0  # |f| within this many standard deviations of its rounding noise is "zero"


_LOOK_ALL = 64  # up to this many roots, every one is examined for rounding noise


def _sigma(g: _Guarded, x: np.ndarray, scale: float) -> np.ndarray:
    """Standard deviation of f's rounding noise at each x (:func:`solvers.scan.noise.noise_level`),
    0 where it cannot be measured."""
    s = noise_level(g, np.asarray(x, dtype=float), 1e-3 * max(scale, 1e-300))
    return np.where(np.isfinite(s), s, 0.0)


def _at_noise(g: _Guarded, x: np.ndarray, fx: np.ndarray, xtol: float,
              scale: float) -> np.ndarray:
    """Whether |f(x)| at a located minimum of |f| is indistinguishable from zero.

    True where f(x) == 0, or |f(x)| is within 16x the spread of f over a few steps of the
    minimiser's resolution (max(2 eps |x|, xtol): moving x by what its location is worth
    moves f by more than f itself), or within ``_NOISE_K`` standard deviations of f's
    rounding noise. A touch that stops short of zero (x^2 + 1e-20) is none of these.
    """
    x, fx = np.asarray(x, dtype=float), np.abs(np.asarray(fx, dtype=float))
    ok = fx == 0
    if x.size == 0:
        return ok
    spread = _noise(g, x, max(EPS * scale, xtol / (2 * EPS)))
    ok |= fx <= 16 * spread
    rest = np.flatnonzero(~ok & np.isfinite(fx))
    if rest.size:
        ok[rest] = fx[rest] <= _NOISE_K * _sigma(g, x[rest], scale)
    return ok


def _noise_beside(g: _Guarded, x: np.ndarray, scale: float) -> np.ndarray:
    """The level of |f| that is rounding noise at points x where f may step (a bracket
    closed on adjacent floats), measured beside x: |f| at the ends of such a bracket within
    it is a root in noise, never a jump or a pole.

    The noise is measured 2^-20 of |x| (or of 1e-3 of the range near 0) either side of x (a
    stencil across x would measure the step itself at a genuine jump), as ``_NOISE_K``
    standard deviations (:func:`noise_level`) and, as for a touch (:func:`_at_noise`), 16x
    the spread of f over a few ulps; the larger over both sides counts (an estimate can
    miss noise where its points happen to fall in step with it). Beside a genuine jump or
    pole f is smooth: both are then 0 or far below |f| at the bracket's ends.
    """
    x = np.asarray(x, dtype=float)
    off = 2.0**-20 * np.maximum(np.abs(x), 1e-3 * scale)
    beside = np.concatenate([x - off, x + off])
    side = _sigma(g, beside, scale).reshape(2, -1)
    spread = _noise(g, beside, EPS * scale).reshape(2, -1)
    with np.errstate(all="ignore"):
        level = np.maximum(_NOISE_K * np.max(side, axis=0), 16 * np.max(spread, axis=0))
    return np.where(np.isfinite(level), level, 0.0)


def _ramp_points(x: np.ndarray, scale: float) -> np.ndarray:
    """Per point x (rows): x and 3 steps of about one ulp either side, then x -/+ 64 ulps:
    what :func:`_ramp_clean` judges (one compiled pass,
    :func:`solvers.scan.passes.ramp_points`)."""
    return _passes().ramp_points(np.ascontiguousarray(x, dtype=float), float(scale))


def _ramp_clean(vals: np.ndarray) -> np.ndarray:
    """Whether f (rows of values at :func:`_ramp_points`) is a clean ramp there.

    A clean point: f a ramp over a few ulps (first differences of one sign), whose noise
    there (the second differences of 7 values, sigma^2 ~ mean(d2^2) / 6) is so small that
    |f| at 64 ulps stands 4x beyond the 8 standard deviations of the noise-band test: not
    noisy, and no noise estimate (36 evaluations per point) is needed. One compiled pass
    (:func:`solvers.scan.passes.ramp_clean`): every root of a scan with few roots comes
    through here, and the numpy form cost some 15 calls.
    """
    return _passes().ramp_clean(np.ascontiguousarray(vals, dtype=float), 4 * _NOISE_K)


def _noise_bands(g: _Guarded, x: np.ndarray, a: float, b: float, scale: float,
                 singular: np.ndarray | None = None, in_noise: np.ndarray | None = None,
                 beside: np.ndarray | None = None):
    """For each candidate x: the stretch around it where |f| stays within ``_NOISE_K``
    standard deviations of f's rounding noise, as (noisy, lower end, upper end, level).

    ``noisy`` is False where |f| rises above the noise level within 64 ulps on both sides
    (a clean root, pole or jump: its stretch is then [x, x]). ``singular`` marks the poles
    and jumps, ``in_noise`` the roots whose bracket already closed in f's rounding noise
    (their noise is measured, never presumed absent from a few ulps that look like a
    ramp). ``beside`` (rows (u, v, h), NaN for none) marks a zero run [u, v] of samples
    h apart: inside it f is exactly 0.0 and shows no noise, so its level is that of the
    quantum f is rounded to just outside (:func:`_run_quantum`). Elsewhere the stretch is
    found by doubling the distance until |f| exceeds the level (an upper bound within a
    factor of 2 on each side), in one f call for all candidates.
    """
    n = len(x)
    lo, hi = x.copy(), x.copy()
    sig = np.zeros(n)
    d0 = 64 * EPS * np.maximum(np.abs(x), 1e-3 * scale)
    vals = g(_ramp_points(x, scale).reshape(-1)).reshape(n, -1)
    clean = _ramp_clean(vals)
    near = np.abs(vals[:, len(_ULPS):])
    if singular is not None:
        clean &= ~singular
    if in_noise is not None:
        clean &= ~in_noise
    runs = np.zeros(n, dtype=bool) if beside is None else np.isfinite(beside[:, 0])
    clean &= ~runs
    if np.count_nonzero(clean) == n:
        return np.zeros(n, dtype=bool), lo, hi, np.zeros(n)
    rest = np.flatnonzero(~clean)
    sig[rest] = _sigma(g, x[rest], scale)
    if singular is not None and singular.any():
        # at a pole or jump the stencil of the noise estimate straddles the singularity and
        # measures it: take the noise a millionth of the range beside it instead (the same
        # there, where it is rounding noise; tiny beside a genuine pole or jump)
        xs = x[singular]
        off = 2.0**-20 * np.maximum(np.abs(xs), 1e-3 * scale)
        side = _sigma(g, np.concatenate([xs - off, xs + off]), scale).reshape(2, -1)
        sig[singular] = np.min(side, axis=0)
    if runs.any():
        # half a quantum: the level is then _NOISE_K / 2 = 4 quanta of f's rounding
        sig[runs] = 0.5 * _run_quantum(g, beside[runs])
    level = _NOISE_K * sig
    if in_noise is not None and in_noise.any():
        # (measured where the bracket was judged: the estimate at x itself can miss it)
        level[in_noise] = np.maximum(level[in_noise], _noise_beside(g, x[in_noise], scale))
    noisy = (level > 0) & ((near[:, 0] <= level) | (near[:, 1] <= level))
    idx = np.flatnonzero(noisy)
    if idx.size == 0:
        return noisy, lo, hi, level
    k = np.arange(64)
    d = d0[idx, None] * 2.0 ** k[None, :]
    room_lo, room_hi = (x[idx] - a)[:, None], (b - x[idx])[:, None]
    dl, dr = np.minimum(d, room_lo), np.minimum(d, room_hi)
    vals = np.abs(g(np.concatenate([x[idx, None] - dl, x[idx, None] + dr]).reshape(-1)))
    vals = vals.reshape(2, idx.size, len(k))
    lev = level[idx]
    for side, dd, room in ((0, dl, room_lo), (1, dr, room_hi)):
        out = ~(vals[side] <= lev[:, None])  # above the level, or undefined
        first = np.where(out.any(axis=1), np.argmax(out, axis=1), len(k) - 1)
        outer = np.take_along_axis(dd, first[:, None], axis=1)[:, 0]
        inner = np.where(first > 0, np.take_along_axis(dd, np.maximum(first - 1, 0)[:, None],
                                                       axis=1)[:, 0], 0.0)
        sgn = -1.0 if side == 0 else 1.0
        for _ in range(8):  # the edge to about 1/256 of its last doubling
            mid = 0.5 * (inner + outer)
            above = ~(np.abs(g(x[idx] + sgn * mid)) <= lev)
            outer, inner = np.where(above, mid, outer), np.where(above, inner, mid)
        reach = np.minimum(outer, room[:, 0])
        if side == 0:
            lo[idx] = x[idx] - reach
        else:
            hi[idx] = x[idx] + reach
    return noisy, lo, hi, level


def _quantum(y: np.ndarray, least: float = 0.0) -> np.ndarray:
    """Per row of values of f: the power of two they are all whole multiples of, where
    they are at most :data:`solvers.methods.common.ROUNDING_QUANTA` of it (f rounded to a
    few steps of its terms' rounding unit, or of the least subnormal), else 0. Values of
    a smooth f need some 50 bits, not 12. A quantum not above ``least`` counts for nothing."""
    y = np.abs(y)
    out = np.zeros(len(y))
    for i in range(len(y)):
        vals = np.unique(y[i][np.isfinite(y[i]) & (y[i] > 0)]).tolist()
        if not vals:
            continue
        q = min(lowest_bit(v) for v in vals)
        if q > least and vals[-1] <= ROUNDING_QUANTA * q:
            out[i] = q
    return out


def _run_quantum(g: _Guarded, runs: np.ndarray) -> np.ndarray:
    """The quantum f is rounded to beside each zero run (rows u, v, h), or 0.

    A run of exact zeros is cancellation when f beside it takes only a few multiples of
    one quantum, the rounding unit of the terms that cancel (1 - cos x: multiples of
    2^-53 while x^2/2 is below 1e-12): the stretch is then f's rounding noise around a
    root. Beside a run of underflow, f is a few multiples of the least subnormal (a
    quantum below 1e-290 counts for nothing), and beside a stretch where f is exactly
    0.0 (the flat part of min(x, 1) - 1) f is smooth, thousands of quanta and more within
    a few sample spacings. f is asked at 16 points on each side, out to the run's width
    (4 sample spacings at least).
    """
    u, v, h = runs[:, 0], runs[:, 1], runs[:, 2]
    step = np.maximum(h, 0.25 * (v - u))[:, None]  # out to a run's width, 4 spacings at least
    k = np.arange(1, 17, dtype=float) * 0.25
    pts = np.concatenate([u[:, None] - step * k, v[:, None] + step * k], axis=1)
    y = g(pts.reshape(-1)).reshape(len(runs), -1)
    # (subnormal values are all multiples of the least subnormal: no cancellation)
    q = _quantum(y, least=1e-290)
    # Few bits alone are no rounding: a dead band sign(x) max(0, |x| - 100) on a grid of
    # half-integers is 12.5, 25, ..., 200 beside its flat stretch, exact multiples of 0.5.
    # Rounding shows as a staircase: f beside the run takes one value at two points (x^2/2
    # rounded to 2^-53 beside 1 - cos x), where exact values of a smooth f all differ.
    for i in np.flatnonzero(q):
        vals = y[i][np.isfinite(y[i]) & (y[i] != 0.0)]
        if np.unique(vals).size == vals.size or not _fine_steps(y[i], q[i]):
            q[i] = 0.0
    return q


_STEP_QUANTA = 16  # rounding of a smooth f: neighbouring values this many quanta apart at most


def _fine_steps(values: np.ndarray, q: float) -> bool:
    """Whether neighbouring finite values (in order along x, each side of a run or one
    window) differ by at most :data:`_STEP_QUANTA` quanta ``q``: a smooth f rounded to
    its quantum climbs a step or two at a time; f that is itself a step function taking
    few-bit values (a table or a converter's levels: round(64 sin(1/x))) jumps by tens of
    them between samples where it oscillates, and that is no rounding."""
    halves = values.reshape(-1, 16) if values.size == 32 else values.reshape(1, -1)
    for side in halves:
        side = side[np.isfinite(side)]
        if side.size > 1 and np.max(np.abs(np.diff(side))) > _STEP_QUANTA * q:
            return False
    return True


def _staircase(g: _Guarded, spans: list[tuple[float, float]]) -> list[bool]:
    """Whether f on each span (lo, hi) is a staircase of rounding: 64 evenly spread values
    all whole multiples of one quantum, a few thousand of it at most (:func:`_quantum`).
    Its steps contradict f' between samples however fine the sampling (1 - cos x for
    |x| < 1e-7 takes some 50 values; exp(-x) near 742 is a few dozen subnormals), which
    is rounding, not an oscillation of f."""
    if not spans:
        return []
    ends = np.array(spans, dtype=float)
    t = np.linspace(0.0, 1.0, 64)
    pts = ends[:, :1] + (ends[:, 1:] - ends[:, :1]) * t[None, :]
    y = g(pts.reshape(-1)).reshape(len(spans), -1)
    q = _quantum(y)
    return [bool(q[i] > 0 and _fine_steps(y[i], q[i])) for i in range(len(spans))]


def _cluster_multiplicity(g: _Guarded, c: np.ndarray, w: np.ndarray, room: np.ndarray,
                          level: np.ndarray):
    """(multiplicity, odd) of root clusters centred at c with noise stretch half-widths w.

    |f(c +/- D)| for D = 2w, 4w, ... (not beyond ``room``); the slope of log|f| against log D
    from the three nearest distances where |f| is at least twice the noise level (closest
    to the cluster: least influence of anything else), rounded to the integer of the
    parity the signs outside the stretch show (odd: f changes sign across it).
    """
    j = np.arange(1, 13)
    dist = w[:, None] * 2.0 ** j[None, :]
    pts = np.concatenate([c[:, None] - dist, c[:, None] + dist], axis=1)
    vals = g(pts.reshape(-1)).reshape(pts.shape)
    fm, fp = vals[:, : len(j)], vals[:, len(j):]
    valid = (np.isfinite(fm) & np.isfinite(fp) & (dist <= room[:, None])
             & (np.minimum(np.abs(fm), np.abs(fp)) > 2 * level[:, None]))
    first = np.argmax(valid, axis=1)
    any_valid = valid.any(axis=1)
    rows = np.arange(len(c))
    odd = np.where(any_valid, np.signbit(fm[rows, first]) != np.signbit(fp[rows, first]), True)
    with np.errstate(all="ignore"):
        logf = 0.5 * (np.log(np.abs(fm)) + np.log(np.abs(fp)))
        slopes = np.diff(logf, axis=1) / math.log(2.0)
    pair = valid[:, :-1] & valid[:, 1:]
    rank = np.cumsum(pair, axis=1)
    use = pair & (rank <= 3)
    est = np.array([np.median(slopes[i, use[i]]) if use[i].any() else np.nan
                    for i in range(len(c))])
    est = np.where(np.isfinite(est), est, np.where(odd, 1.0, 2.0))
    m = np.maximum(1, np.rint(est)).astype(int)
    wrong = (m % 2 == 1) != odd
    m = np.where(wrong, np.where((est >= m) | (m == 1), m + 1, m - 1), m)
    return np.maximum(m, np.where(odd, 1, 2)), odd


def _noise_clusters(g: _Guarded, roots: list[Root], poles: list[float], jumps: list[float],
                    runs: list[list[float]], notes: list[Detail], a: float, b: float,
                    scale: float, typical: Callable[[], float], h: float,
                    unsure: np.ndarray | None = None,
                    clean: np.ndarray | None = None):
    """Merge what rounding noise made of one root cluster into one root.

    A function evaluated with cancellation (an expanded polynomial) is noise near its
    roots: sign changes 1e-13 apart, minima at noise level, "poles" and "jumps" where
    bisection met noise, whole runs of exact zeros. Every root, pole, jump and zero run
    whose noise stretch (:func:`_noise_bands`) overlaps another's forms one cluster: one
    root at the middle of the stretch, uncertain by its half-width, whose multiplicity is
    what the slope of log|f| just outside the stretch supports (odd when f changes sign
    across it). A lone clean root is left as it was. Rounding noise is small beside f's
    typical size (``typical()``, the median sampled |f|, asked only when a stretch is
    noisy): a "noise level" above 1e-3 of it is
    f itself varying faster than any step (sin(1/x) near 0), not rounding, and so is a
    stretch that never ends inside [a, b]. ``clean`` (per root, when given) marks the
    roots already judged clean ramps (:func:`_ramp_clean`, evaluated with their
    multiplicity ladder): :func:`_noise_bands` would find them so again, and they are not
    examined twice. Returns (roots, poles, jumps, runs, bands) with ``bands`` the (lo, hi)
    stretches of the clusters.
    """
    xs = ([r.x for r in roots] + list(poles) + list(jumps)
          + [0.5 * (u + v) for u, v in runs])
    if not xs:
        return roots, poles, jumps, runs, []
    if (clean is not None and not (poles or jumps or runs) and bool(np.all(clean))
            and not any("bracket_in_noise" in r.confirmed for r in roots)):
        return roots, poles, jumps, runs, []  # every root a clean ramp: nothing to look at
    unsure = np.zeros(len(roots), dtype=bool) if unsure is None else unsure
    kind = np.array([0] * len(roots) + [1] * len(poles) + [2] * len(jumps) + [3] * len(runs))
    x = np.array(xs, dtype=float)
    # rounding noise shows as several findings close together (or as a pole, a jump, a zero
    # run); with more than _LOOK_ALL roots, a root with no other finding within two sample
    # spacings is examined only when its own multiplicity estimate was unsure (``unsure``)
    order = np.argsort(x)
    gap = np.diff(x[order])
    crowded = np.zeros(len(x), dtype=bool)
    near = gap <= 2 * h
    crowded[order[:-1][near]] = True
    crowded[order[1:][near]] = True
    look = crowded | (kind != 0) | (len(roots) <= _LOOK_ALL)
    look[: len(roots)] |= unsure
    in_noise = np.zeros(len(x), dtype=bool)
    in_noise[: len(roots)] = ["bracket_in_noise" in r.confirmed for r in roots]
    if clean is not None:
        # a clean ramp comes out of the noise bands as not noisy, stretch [x, x], level 0:
        # exactly what a root not looked at keeps (a bracket closed in noise is measured)
        look[: len(roots)] &= ~(clean & ~in_noise[: len(roots)])
    noisy = np.zeros(len(x), dtype=bool)
    lo, hi, level = x.copy(), x.copy(), np.zeros(len(x))
    if look.any():
        il = np.flatnonzero(look)
        # a zero run's noise is measured a sample spacing beyond each of its ends
        beside = np.full((len(x), 3), np.nan)
        for i in np.flatnonzero(kind == 3):
            u, v = runs[i - len(roots) - len(poles) - len(jumps)]
            beside[i] = (u, v, h)
        nz, lo[il], hi[il], level[il] = _noise_bands(g, x[il], a, b, scale,
                                                     (kind[il] == 1) | (kind[il] == 2),
                                                     in_noise[il], beside[il])
        noisy[il] = nz
    if noisy.any():
        # (a zero run rounded to a quantum beside it is rounding whatever f's size)
        noisy &= ((level <= 1e-3 * typical()) | (kind == 3)) & ((lo > a) | (hi < b))
    if not noisy.any():
        return roots, poles, jumps, runs, []
    for i in np.flatnonzero(kind == 3):  # a zero run spans at least its own samples
        u, v = runs[i - len(roots) - len(poles) - len(jumps)]
        lo[i], hi[i] = min(lo[i], u), max(hi[i], v)
    order = np.argsort(lo, kind="stable")
    groups: list[list[int]] = []
    ends: list[float] = []
    for i in order:
        if not noisy[i] and kind[i] != 0:
            continue  # a clean pole or jump stays what it is
        if groups and lo[i] <= ends[-1]:
            groups[-1].append(int(i))
            ends[-1] = max(ends[-1], hi[i])
        else:
            groups.append([int(i)])
            ends.append(float(hi[i]))
    d0 = 64 * EPS * np.maximum(np.abs(x), 1e-3 * scale)
    clusters = []
    for members in groups:
        mem = np.array(members)
        span_lo, span_hi = float(lo[mem].min()), float(hi[mem].max())
        wide = span_hi - span_lo > 1e3 * float(d0[mem].max())
        if len(mem) == 1 and not wide and kind[mem[0]] == 0:
            continue  # one clean root (or one with a tiny noise stretch): unchanged
        if not noisy[mem].any():
            continue
        clusters.append((mem, span_lo, span_hi))
    if not clusters:
        return roots, poles, jumps, runs, []
    c = np.array([0.5 * (u + v) for _, u, v in clusters])
    w = np.array([0.5 * (v - u) for _, u, v in clusters])
    w = np.maximum(w, d0[[mem[0] for mem, _, _ in clusters]])
    lev = np.array([float(level[mem].max()) for mem, _, _ in clusters])
    # room: up to 0.45 of the way to the next cluster or clean feature, and the range ends
    others = np.sort(np.concatenate([x[~noisy], c]))
    room = np.empty(len(c))
    for i in range(len(c)):
        gaps = np.abs(others - c[i])
        gaps = gaps[gaps > w[i]]
        room[i] = min(0.45 * gaps.min() if gaps.size else math.inf,
                      max(c[i] - a, b - c[i]))
    mult, odd = _cluster_multiplicity(g, c, w, room, lev)
    residual = g(c)
    drop = set()
    new_roots: list[Root] = []
    bands: list[tuple[float, float]] = []
    for k, (mem, u, v) in enumerate(clusters):
        drop.update(int(i) for i in mem)
        member_roots = [roots[i] for i in mem if kind[i] == 0]
        carrier = min(member_roots, key=lambda r: abs(r.x - c[k])) if member_roots else None
        located = tuple(dict.fromkeys(t for r in member_roots for t in r.located_by)) or (
            "sampling",)
        inside = len(mem) - 1
        new_roots.append(Root(
            x=float(c[k]), residual=float(residual[k]), multiplicity=int(mult[k]),
            confirmed=("noise_cluster",), located_by=located,
            bracket=carrier.bracket if carrier is not None and odd[k] else None,
            run=Root.__dict__["run"].raw(carrier) if carrier is not None and odd[k] else None,
            detail=Detail("noise_cluster", (float(lev[k]), float(u), float(v), float(w[k])))))
        bands.append((u, v))
        notes.append(Detail("noise_band", (float(u), float(v), float(lev[k]), float(c[k]),
                                           float(w[k]), int(mult[k]), int(inside))))
    keep = [i for i in range(len(x)) if i not in drop]
    out_roots = sorted([roots[i] for i in keep if kind[i] == 0] + new_roots, key=lambda r: r.x)
    out_poles = [poles[i - len(roots)] for i in keep if kind[i] == 1]
    out_jumps = [jumps[i - len(roots) - len(poles)] for i in keep if kind[i] == 2]
    out_runs = [runs[i - len(roots) - len(poles) - len(jumps)] for i in keep if kind[i] == 3]
    return out_roots, out_poles, out_jumps, out_runs, bands
