"""Chebyshev proxy rootfinder: the scan's independent second locator.

Boyd's method (J. P. Boyd, "Computing zeros on a real interval through Chebyshev
expansion and polynomial rootfinding", SIAM J. Numer. Anal. 40 (2002)): on each
subinterval, interpolate f at Chebyshev points with a degree raised until the
coefficients decay; the zeros of the interpolant are the eigenvalues of the
colleague matrix (``numpy.polynomial.chebyshev.chebroots``); real ones in [-1, 1]
are mapped back to x. A subinterval whose coefficients do not decay by the largest
degree is halved; one with non-finite values is halved too, so the defined parts
next to a gap are still covered, down to a depth limit below which it is skipped
(the function is not smooth there: a pole, a jump, a domain edge).

:func:`chebyshev_roots` only locates (on any vectorised f, independently of the scan).
The scan's side of the check is at the end of this module: :func:`_cross_check` matches
the proxy's zeros with the sampled roots (:func:`_match_proxy`) and confirms the ones the
sampling missed (:func:`_confirm_near`); see :mod:`solvers.scan` (step 8a).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from solvers.records import Detail
from solvers.scan.features import _finish, _touch
from solvers.scan.kernels import _golden, _resolve_brackets
from solvers.scan.noise import _at_noise
from solvers.scan.records import EPS, Root, _Found, _relabel
from solvers.scan.sampling import _Candidates, _detect

# Degrees tried on a piece, smallest first (Boyd: keep degrees modest, subdivide instead:
# the eigenvalue cost grows as degree^3). LAST_DEGREE is tried only where subdividing
# further is not allowed (depth limit or piece budget). One degree: its series is cut to
# its significant length (trailing coefficients below 0.1 DECAY_TOL dropped), so a piece a
# lower degree would resolve gets the same short series from this one fit, without the
# extra calls of f per level (each costs f's whole overhead); and an oscillation aliased
# into a smooth-looking interpolant at 9 or 17 nodes cannot pass as resolved there.
DEGREES: tuple[int, ...] = (32,)
LAST_DEGREE = 64
# Trailing coefficients below this fraction of the largest count as decayed.
DECAY_TOL = 1e-13
# A root of the proxy counts as real when |imag| <= this (in the piece's [-1, 1] units).
IMAG_TOL = 1e-6


@dataclass(frozen=True)
class ChebyshevPiece:
    """One subinterval [a, b] where the proxy was accepted, and its degree."""

    a: float
    b: float
    degree: int


@dataclass(frozen=True)
class ChebyshevRoots:
    """What the proxy located.

    ``roots``: real zeros of the accepted proxies, sorted, in x units.
    ``near_real``: every zero of the proxies inside the pieces with small imaginary
    part, kept as complex numbers (a double root shows up as a close pair, possibly
    complex); the scan uses them to count clusters.
    ``pieces``: the subintervals where the proxy was accepted (f smooth there).
    ``skipped``: subintervals given up because f is not smooth there (no coefficient
    decay at the depth limit, or NaN/inf at some nodes); ``undefined``: subintervals
    where f is NaN/inf at every node (or identically zero). ``ring``: the zeros inside
    the pieces with |imag| up to 0.1 of the piece's half-width (the zeros of a proxy of
    a root of multiplicity m spread on a small circle around it), in x units.
    """

    roots: tuple[float, ...]
    near_real: tuple[complex, ...]
    pieces: tuple[ChebyshevPiece, ...]
    skipped: tuple[tuple[float, float], ...]
    undefined: tuple[tuple[float, float], ...] = ()
    ring: tuple[complex, ...] = ()


@functools.cache
def _nodes(degree: int) -> tuple[np.ndarray, np.ndarray]:
    """Chebyshev points of the first kind on [-1, 1] and the matrix taking values there to
    Chebyshev coefficients (the interpolant numpy's ``chebinterpolate`` builds)."""
    k = np.arange(degree + 1)
    theta = np.pi * (k + 0.5) / (degree + 1)
    matrix = (2.0 / (degree + 1)) * np.cos(np.outer(k, theta))
    matrix[0] *= 0.5
    return np.cos(theta), matrix


def _resolve(f: Callable[[np.ndarray], np.ndarray], spans: np.ndarray,
             degrees: tuple[int, ...] = DEGREES,
             noise: Callable[[np.ndarray], np.ndarray] | None = None):
    """Try every degree on every span [a, b] (rows of ``spans``) with one f call per degree.

    Returns (status, coefficients) lists: status "ok" (coefficients decayed), "undefined"
    (f NaN/inf at every node, or identically zero), "nonfinite" (at some nodes), or
    "unresolved" (no decay by the largest degree). With ``noise`` (x -> standard deviation
    of f's rounding noise), a span whose coefficients fall to the noise floor by the largest
    degree is "ok" too: rounding noise of deviation sigma at the nodes puts about
    sigma sqrt(2 / (n + 1)) into every coefficient, and no degree resolves it further.
    """
    count = len(spans)
    status = np.full(count, "unresolved", dtype=object)
    coefficients: list[np.ndarray | None] = [None] * count
    pending = np.arange(count)
    half = 0.5 * (spans[:, 1] - spans[:, 0])
    mid = 0.5 * (spans[:, 1] + spans[:, 0])
    for degree in degrees:
        if pending.size == 0:
            break
        t, matrix = _nodes(degree)
        pts = mid[pending, None] + half[pending, None] * t[None, :]
        y = np.asarray(f(pts.reshape(-1)), dtype=float).reshape(pts.shape)
        finite = np.isfinite(y)
        c = np.where(finite, y, 0.0) @ matrix.T
        scale = np.max(np.abs(c), axis=1)
        tail = np.max(np.abs(c[:, -3:]), axis=1)
        whole = finite.all(axis=1)
        status[pending[~whole]] = np.where(finite[~whole].any(axis=1), "nonfinite", "undefined")
        status[pending[whole & (scale == 0.0)]] = "undefined"  # f vanishes identically
        ok = whole & (scale > 0.0) & (tail <= DECAY_TOL * scale)
        # trailing coefficients below a tenth of the decay tolerance are dropped
        significant = np.abs(c) > 0.1 * DECAY_TOL * scale[:, None]
        length = c.shape[1] - np.argmax(significant[:, ::-1], axis=1)
        for row in np.flatnonzero(ok):
            status[pending[row]] = "ok"
            coefficients[pending[row]] = c[row, : length[row]]
        left = whole & (scale > 0.0) & ~ok
        if noise is not None and degree == degrees[-1] and left.any():
            rows = np.flatnonzero(left)
            u, v = spans[pending[rows], 0], spans[pending[rows], 1]
            sigma = np.asarray(noise(np.concatenate([u, 0.5 * (u + v), v])), dtype=float)
            floor = 2.0 * np.nanmax(sigma.reshape(3, -1), axis=0)
            quiet = (floor > DECAY_TOL * scale[rows]) & (tail[rows] <= floor)
            for row, fl in zip(rows[quiet], floor[quiet], strict=True):
                status[pending[row]] = "ok"
                keep = np.flatnonzero(np.abs(c[row]) > fl)
                coefficients[pending[row]] = c[row, : (keep[-1] + 1 if keep.size else 1)]
            left[rows[quiet]] = False
        pending = pending[left]
    return list(status), coefficients


@functools.cache
def _colleague_base(n: int) -> tuple[np.ndarray, np.ndarray]:
    """The coefficient-free part of numpy's ``chebcompanion`` for degree n, and its
    last-column scaling."""
    mat = np.zeros((n, n))
    scl = np.array([1.0] + [np.sqrt(0.5)] * (n - 1))
    top = mat.reshape(-1)[1::n + 1]
    bot = mat.reshape(-1)[n::n + 1]
    top[0] = np.sqrt(0.5)
    top[1:] = 0.5
    bot[...] = top
    return mat, 0.5 * scl / scl[-1]


def _colleagues(cs: np.ndarray) -> np.ndarray:
    """Colleague matrices of the Chebyshev series in the rows of cs (all of one length),
    each exactly numpy's ``chebcompanion`` (built in one batch)."""
    n = cs.shape[1] - 1
    base, column = _colleague_base(n)
    mats = np.broadcast_to(base, (len(cs), n, n)).copy()
    mats[:, :, -1] -= (cs[:, :-1] / cs[:, -1:]) * column
    return mats


# Every z with |Re z| <= 1 + 1e-9 and |Im z| <= IMAG_TOL lies inside the Bernstein
# ellipse of parameter rho = 1.002, where |T_k(z)| <= rho^k (Trefethen, Approximation
# Theory and Approximation Practice, ch. 8). So |c_0| > rho^n sum_{k>=1} |c_k| means the
# series has no zero there: the zeros the scan would use. (Checked for IMAG_TOL = 1e-6.)
_NEAR_BOUND = 1.002


def _zeros(coefficients: list[np.ndarray],
           between: Callable[[], None] | None = None) -> list[np.ndarray]:
    """Zeros of Chebyshev series in [-1, 1] units, as ``chebroots`` computes them, but with
    the colleague-matrix eigenvalue problems of equal size solved in batches of bounded
    work (``between()`` is called before each batch: the cancel poll)."""
    out: list[np.ndarray] = [np.zeros(0, dtype=complex)] * len(coefficients)
    groups: dict[int, list[int]] = {}
    for i, c in enumerate(coefficients):
        if len(c) > 2 and abs(c[0]) > _NEAR_BOUND ** (len(c) - 1) * np.sum(np.abs(c[1:])):
            continue  # provably no zero near [-1, 1]: no eigenvalue problem needed
        if len(c) == 2:
            out[i] = np.array([-c[0] / c[1]], dtype=complex)
        elif len(c) > 2:
            groups.setdefault(len(c), []).append(i)
    for length, group in groups.items():
        # about 1e6 multiply-adds of eigenvalue work per batch (a few milliseconds)
        size = max(1, int(1e6 // length**3))
        for start in range(0, len(group), size):
            if between is not None:
                between()
            members = group[start:start + size]
            # same rotation as numpy's chebroots, for accuracy with small leading coefficients
            stack = _colleagues(np.stack([coefficients[i] for i in members]))[:, ::-1, ::-1]
            values = np.linalg.eigvals(stack)
            for i, v in zip(members, values, strict=True):
                out[i] = np.asarray(v, dtype=complex)
    return out


# Degrees up to this are certified by counting (the Chebyshev-to-Bernstein matrix grows
# as about 2^n / sqrt(n): 1.5e6 at degree 21, 3e9 at 32, so rounding there stays far below
# the coefficients' signs); higher degrees always go to the eigenvalues.
_COUNT_DEGREE = 32
_CERTIFY_STEP = 1e-9  # a known root's sign change is checked at t +/- this ([-1, 1] units)


@functools.cache
def _bernstein(n: int) -> tuple[np.ndarray, np.ndarray]:
    """The matrix taking Chebyshev coefficients (degree n, on [-1, 1]) to Bernstein
    coefficients of the same polynomial on [-1, 1], and its entrywise absolute value.

    Entry (j, k) = sum_i (-1)^(k-i) C(2k, 2i) C(n-k, j-i) / C(n, j) (A. Rababah,
    "Transformation of Chebyshev-Bernstein polynomial basis", Comput. Methods Appl. Math.
    3 (2003) 608-622), summed in exact integers and rounded once.
    """
    m = np.zeros((n + 1, n + 1))
    for k in range(n + 1):
        for j in range(n + 1):
            total = sum((-1) ** (k - i) * math.comb(2 * k, 2 * i) * math.comb(n - k, j - i)
                        for i in range(max(0, j + k - n), min(j, k) + 1))
            m[j, k] = total / math.comb(n, j)
    return m, np.abs(m)


def _certify(coefficients: list[np.ndarray], known: list[np.ndarray]) -> list[bool]:
    """Which proxies provably have exactly the ``known`` zeros (in [-1, 1] units) in and
    near [-1, 1], so that no eigenvalue problem is needed for them.

    Descartes' rule in the Bernstein basis: the number V of sign variations of the
    Bernstein coefficients is at least the number of zeros in the Obreshkoff lens over the
    interval (the region seen from the segment under an angle above pi - pi / (n + 2); it
    holds every point within about (pi / (2 (n + 2))) times the half-width of the segment,
    away from its ends) and has V's parity (N. Obreshkoff, 1963; B. Mourrain, F. Rouillier
    and M.-F. Roy, "The Bernstein basis and real root isolation", MSRI Publications 52
    (2005); from memory). A proxy is certified when no coefficient's sign is in doubt from
    rounding, V equals the number of known zeros, and the proxy changes sign across each
    (at t +/- ``_CERTIFY_STEP``): its zeros in and near the segment are then exactly those,
    each simple, and no complex pair sits close to the real line there.
    """
    out = [False] * len(coefficients)
    checks: list[tuple[int, np.ndarray]] = []
    # pieces of one degree counted together (one product for all of them: a scan of a fast
    # oscillation has hundreds of pieces, and a call per piece cost more than the counting)
    by_degree: dict[int, list[int]] = {}
    for i, c in enumerate(coefficients):
        if 1 <= len(c) - 1 <= _COUNT_DEGREE:
            by_degree.setdefault(len(c) - 1, []).append(i)
    for n, members in by_degree.items():
        m, m_abs = _bernstein(n)
        cs = np.array([coefficients[i] for i in members])
        bern = cs @ m.T
        doubt = 2 * (n + 2) * np.finfo(float).eps * (np.abs(cs) @ m_abs.T)
        sure = ~np.logical_or.reduce(np.abs(bern) <= doubt, axis=1)
        signs = np.signbit(bern)
        variations = np.add.reduce(signs[:, :-1] != signs[:, 1:], axis=1, dtype=int)
        for i, ok, v in zip(members, sure.tolist(), variations.tolist(), strict=True):
            if ok and v == len(known[i]):
                checks.append((i, known[i]))
    checks.sort(key=lambda item: item[0])
    if not checks:
        return out
    # the proxies at t -/+ the step around their known zeros, in one evaluation
    width = max(len(coefficients[i]) for i, _ in checks)
    table = np.zeros((len(checks), width))
    for row, (i, _) in enumerate(checks):
        table[row, : len(coefficients[i])] = coefficients[i]
    # (each check's row number once per known zero: one repeat, not an array per check)
    rows = np.repeat(np.arange(len(checks)), [len(t) for _, t in checks])
    ts = np.concatenate([t for _, t in checks])
    if ts.size:
        pts = np.clip(np.concatenate([ts - _CERTIFY_STEP, ts + _CERTIFY_STEP]), -1.0, 1.0)
        basis = np.cos(np.outer(np.arccos(pts), np.arange(width)))
        values = np.sum(basis * table[np.concatenate([rows, rows])], axis=1)
        left, right = values[: ts.size], values[ts.size:]
        flips = (left != 0) & (right != 0) & (np.signbit(left) != np.signbit(right))
    else:
        flips = np.zeros(0, dtype=bool)
    start = 0
    flipped = flips.tolist()  # (list slices: a numpy slice and .all() per check cost more)
    for i, t in checks:
        out[i] = all(flipped[start:start + len(t)])
        start += len(t)
    return out


def chebyshev_roots(
    f: Callable[[np.ndarray], np.ndarray],
    a: float,
    b: float,
    *,
    pieces: int = 8,
    max_depth: int = 10,
    max_pieces: int = 1024,
    cancel: Callable[[], bool] | None = None,
    on_cancel: Callable[[], None] | None = None,
    noise: Callable[[np.ndarray], np.ndarray] | None = None,
    known: np.ndarray | None = None,
) -> ChebyshevRoots:
    """Locate the real zeros of a vectorised f on [a, b] by Chebyshev proxies.

    f takes and returns numpy arrays and must not raise (wrap it first); non-finite
    values mark a piece as unusable. [a, b] is first cut into ``pieces`` equal parts
    (so one proxy never spans a huge dynamic range), each halved up to ``max_depth``
    times when the coefficients of degree 32 do not decay to 1e-13 of the largest
    (degree 64 is tried where no further halving is allowed).
    All pieces of one subdivision level are evaluated together (one f call per degree
    and level); a level with more than ``max_pieces`` pieces is not attempted (f is
    noisy or rough almost everywhere) and its pieces are reported as skipped.
    ``cancel`` is polled per level and between eigenvalue batches; when it returns True,
    ``on_cancel`` is called (it is expected to raise). ``noise`` (x -> standard deviation
    of f's rounding noise, e.g. :func:`solvers.scan.noise.noise_level`) lets a piece whose
    coefficients fall to the noise floor count as resolved (an expanded polynomial near its
    roots) instead of being halved down to the depth limit. ``known`` (sorted x of simple
    roots located by other means, e.g. the scan's sampling) lets a piece skip its eigenvalue
    problem when the proxy provably has exactly those zeros there (:func:`_certify`); its
    zeros are then reported at those x (each within 1e-9 of the piece's half-width).
    """
    edges = np.linspace(a, b, max(1, pieces) + 1)
    level = np.column_stack([edges[:-1], edges[1:]])
    accepted: list[tuple[float, float, np.ndarray]] = []
    skipped: list[tuple[float, float]] = []
    undefined: list[tuple[float, float]] = []
    for depth in range(max_depth + 1):
        if level.size == 0:
            break
        if cancel is not None and on_cancel is not None and cancel():
            on_cancel()
        if len(level) > max_pieces:
            skipped.extend((float(u), float(v)) for u, v in level)
            break
        with np.errstate(all="ignore"):  # NaN/inf from f are results here, not warnings
            status, coefficients = _resolve(f, level, noise=noise)
        rough = [i for i, st in enumerate(status) if st == "unresolved"]
        if rough and (depth == max_depth or 2 * len(rough) > max_pieces):
            with np.errstate(all="ignore"):
                last_status, last_coefficients = _resolve(f, level[rough], (LAST_DEGREE,),
                                                          noise)
            for i, st, c in zip(rough, last_status, last_coefficients, strict=True):
                status[i], coefficients[i] = st, c
        split = []
        for (u, v), st, c in zip(level, status, coefficients, strict=True):
            if st == "ok":
                accepted.append((float(u), float(v), c))
            elif st == "undefined":
                undefined.append((float(u), float(v)))
            elif depth == max_depth:
                skipped.append((float(u), float(v)))
            else:
                w = 0.5 * (u + v)
                split += [(u, w), (w, v)]
        level = np.array(split, dtype=float).reshape(-1, 2)
    accepted.sort(key=lambda item: item[0])

    def poll() -> None:
        if cancel is not None and on_cancel is not None and cancel():
            on_cancel()

    coefficients = [c for _, _, c in accepted]
    certified = [False] * len(accepted)
    if known is not None and len(accepted):
        known = np.asarray(known, dtype=float)
        us = np.array([u for u, _, _ in accepted])
        vs = np.array([v for _, v, _ in accepted])
        starts = np.searchsorted(known, us, side="left").tolist()
        stops = np.searchsorted(known, vs, side="left").tolist()
        inner = [(known[lo:hi] - 0.5 * (u + v)) / (0.5 * (v - u))
                 for lo, hi, u, v in zip(starts, stops, us.tolist(), vs.tolist(), strict=True)]
        certified = _certify(coefficients, inner)
    zeros = _zeros([np.zeros(1) if ok else c for ok, c in zip(certified, coefficients,
                                                                strict=True)], poll)
    for i, ok in enumerate(certified):
        if ok:
            zeros[i] = inner[i].astype(complex)
    # all zeros of all pieces in one array, each with its piece's centre and half-width
    t = np.concatenate(zeros) if zeros else np.zeros(0, dtype=complex)
    counts = [len(z) for z in zeros]
    u = np.repeat(np.array([a for a, _, _ in accepted], dtype=float), counts)
    v = np.repeat(np.array([b for _, b, _ in accepted], dtype=float), counts)
    half, mid = 0.5 * (v - u), 0.5 * (v + u)
    close = (np.abs(t.real) <= 1.0 + 1e-9) & (np.abs(t.imag) <= IMAG_TOL)
    near = np.empty(int(close.sum()), dtype=complex)
    near.real, near.imag = (mid + half * t.real)[close], (half * t.imag)[close]
    real = np.clip((mid + half * t.real), u, v)[close & (np.abs(t.imag) <= 1e-10)]
    loose = (np.abs(t.real) <= 1.0 + 1e-9) & (np.abs(t.imag) <= 0.1)
    ring = (mid + half * t.real)[loose] + 1j * (half * t.imag)[loose]
    return ChebyshevRoots(
        roots=tuple(np.sort(real).tolist()),
        near_real=tuple(near.tolist()),
        pieces=tuple(ChebyshevPiece(u, v, len(c) - 1) for u, v, c in accepted),
        skipped=_merge(skipped),
        undefined=_merge(undefined),
        ring=tuple(ring.tolist()),
    )


def _merge(spans: list[tuple[float, float]]) -> tuple[tuple[float, float], ...]:
    merged: list[tuple[float, float]] = []
    for u, v in sorted(spans):
        if merged and merged[-1][1] >= u:
            merged[-1] = (merged[-1][0], max(v, merged[-1][1]))
        else:
            merged.append((u, v))
    return tuple(merged)


def _cross_check(g, gp, cheb: ChebyshevRoots, roots: list[Root], poles, jumps, gaps, notes,
                 h, xtol, scale, bands=()) -> list[Root]:
    """Match sampled roots with proxy roots on the smooth pieces; confirm or warn."""
    pieces = cheb.pieces
    if not pieces:
        return roots
    roots = sorted(roots, key=lambda r: r.x)
    if not roots:
        near = np.array(cheb.near_real, dtype=complex)
        near = near[np.argsort(near.real)] if len(near) else near
        used = np.zeros(len(near), dtype=bool)
        out: list[Root] = []
    else:
        out, near, used = _match_proxy(cheb, roots, notes)
    # proxy roots nobody matched
    features = list(poles) + list(jumps) + [e for gap in gaps for e in gap]
    extra: list[float] = []
    # (Python complex and bool: iterating the arrays makes a numpy scalar per zero)
    for z, u in zip(near.tolist(), used.tolist(), strict=False):
        if u or abs(z.imag) > 1e-10 * max(1.0, scale):
            continue
        x = float(z.real)
        if any(abs(x - q) <= h for q in features):
            continue
        if any(u - (v - u) <= x <= v + (v - u) for u, v in bands):
            continue  # inside (or right beside) a stretch where f is rounding noise
        if extra and abs(x - extra[-1]) <= 1e-9 * max(scale, 1.0):
            continue
        extra.append(x)
    added: list[_Found] = []
    for x in extra:
        g.check()
        confirmed = _confirm_near(g, gp, x, h, xtol, scale)
        if not confirmed:
            notes.append(Detail("proxy_unconfirmed", (float(x), abs(float(g.scalar(x))))))
        for conf in confirmed:
            known = [r.x for r in out] + [r.x for r in added]
            if all(abs(conf.x - k) > 1e3 * EPS * max(abs(k), 1e-3 * scale) for k in known):
                added.append(conf)
    if added:
        new = _finish(g, added, poles, jumps, gaps, h, scale)
        out = sorted(out + new, key=lambda r: r.x)
        notes.append(Detail("proxy_only_roots", tuple(float(r.x) for r in new)))
    return out


def _match_proxy(cheb: ChebyshevRoots, roots: list[Root], notes: list[Detail]):
    """Mark the sampled roots (sorted, at least one) the proxy also located.

    Roots closer than 1e-4 of their piece's width form one cluster (a near-double pair
    the proxy cannot separate); a cluster counts as located when a proxy zero lies within
    ``radius`` of it, radius = max(4 (1e-12)^(1/m), 1e-9) piece widths for total
    multiplicity m, and at most 0.45 of the gap to the next cluster (so no zero serves
    two). Vectorised: the cluster windows are disjoint, so each proxy zero falls in at
    most one. Returns (roots relabelled, proxy zeros sorted by real part, which matched).
    """
    starts = np.array([p.a for p in cheb.pieces])
    ends = np.array([p.b for p in cheb.pieces])
    x = np.array([r.x for r in roots])
    mult = np.array([r.multiplicity for r in roots], dtype=float)
    # the piece holding each root (as bisect_right on the starts, then its neighbour)
    i = np.searchsorted(starts, x, side="right") - 1
    ic = np.maximum(i, 0)
    inside = (i >= 0) & (x <= ends[ic])
    left = (i >= 1) & (ends[np.maximum(i - 1, 0)] >= x)
    piece = np.where(inside, i, np.where(left, i - 1, -1))
    pw = np.where(piece >= 0, (ends - starts)[np.maximum(piece, 0)], np.nan)
    join = np.zeros(len(x), dtype=bool)
    join[1:] = (piece[1:] >= 0) & (np.diff(x) <= 1e-4 * pw[1:])
    cluster = np.cumsum(~join) - 1
    heads = np.flatnonzero(~join)
    tails = np.append(heads[1:] - 1, len(x) - 1)
    first, last = x[heads], x[tails]
    cpiece = piece[heads]
    width = pw[heads]
    total = np.add.reduceat(mult, heads)
    radius = np.maximum(4 * (1e-12) ** (1.0 / total) * width, 1e-9 * width)
    gap = first[1:] - last[:-1]
    radius[1:] = np.minimum(radius[1:], 0.45 * gap)
    radius[:-1] = np.minimum(radius[:-1], 0.45 * gap)
    near = np.array(cheb.near_real, dtype=complex)
    near = near[np.argsort(near.real)] if len(near) else near
    used = np.zeros(len(near), dtype=bool)
    located = np.zeros(len(heads), dtype=bool)
    if len(near):
        zr = near.real
        k = np.searchsorted(first - radius, zr, side="right") - 1
        kc = np.maximum(k, 0)
        ok = (k >= 0) & (zr <= last[kc] + radius[kc]) & (cpiece[kc] >= 0)
        hit = ok & (np.abs(near - np.clip(zr, first[kc], last[kc])) <= radius[kc])
        used |= hit
        located[kc[hit]] = True
    # a multiple root's proxy zeros spread on a small circle (radius ~ (noise)^(1/m)): for
    # a cluster of total multiplicity m >= 2 a proxy zero off the real line within the
    # same radius counts too
    ring = np.array(getattr(cheb, "ring", ()), dtype=complex)
    if len(ring):
        for k in np.flatnonzero(~located & (total >= 2) & (cpiece >= 0)):
            dist = np.abs(ring - np.clip(ring.real, first[k], last[k]))
            located[k] = bool(np.any(dist <= radius[k]))
    out: list[Root] = []
    # (plain lists, and each located_by's relabelled tuple made once: numpy indexing and
    # the tuple per root cost more than the record, with hundreds of roots)
    piece_of, found_by = cpiece.tolist(), located.tolist()
    labels: dict[tuple[str, ...], tuple[str, ...]] = {}
    for k, r in zip(cluster.tolist(), roots, strict=True):
        kp = piece_of[k]
        if kp < 0:
            out.append(r)
        elif found_by[k]:
            label = labels.get(r.located_by)
            if label is None:
                label = labels[r.located_by] = tuple(dict.fromkeys(r.located_by
                                                                   + ("chebyshev",)))
            out.append(_relabel(r, label))
        else:
            p = cheb.pieces[kp]
            out.append(r)
            notes.append(Detail("sampling_only_root", (float(r.x), float(p.a), float(p.b))))
    return out, near, used


def _confirm_near(g, gp, x, h, xtol, scale) -> list[_Found]:
    """Look for sign changes or a touch within a small window around a proxy root."""
    w = max(min(h, 1e-6 * max(abs(x), 1.0)), 1e3 * EPS * max(abs(x), 1e-3 * scale))
    for width in (w, 100 * w):
        pts = np.linspace(x - width, x + width, 65)
        y = g(pts)
        cand = _Candidates()
        _detect(pts, y, 0, len(pts), cand)
        found = [_Found(xz, bool(odd), ("zero_near_proxy",),
                        located_by=("chebyshev",)) for xz, odd, *_ in cand.zeros]
        brackets = list(cand.brackets)
        if cand.minima:
            mm = np.array(cand.minima)
            xb, fb, crossed = _golden(g, mm[:, 0], mm[:, 2], np.sign(mm[:, 4]), xtol)
            for i in range(len(mm)):
                if crossed[i]:
                    brackets += [(mm[i, 0], xb[i], mm[i, 3], fb[i]),
                                 (xb[i], mm[i, 2], fb[i], mm[i, 5])]
                    continue
                if _at_noise(g, xb[i:i + 1], fb[i:i + 1], xtol, scale)[0]:
                    r = _touch(g, gp, mm[i, 0], mm[i, 2], float(xb[i]), xtol)
                    r.located_by = ("chebyshev",)
                    found.append(r)
        if brackets:
            for r in _resolve_brackets(g, gp, np.array(brackets, dtype=float), xtol, scale)[0]:
                r.located_by = ("chebyshev",)
                found.append(r)
        if found:
            return found
    return []
