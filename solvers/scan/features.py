"""What the candidates become: touches and hidden pairs, zeros at samples, the range ends,
domain edges and gaps, poles (with the roots beside them), hidden roots inside a
root's bracket, multiplicities, and the finished roots."""

from __future__ import annotations

import functools
import math
import operator

import numpy as np

from solvers.records import Detail
from solvers.scan.kernels import _SQRT_EPS, _bracket_all, _golden, _resolve_brackets, _safe_brent
from solvers.scan.noise import _LOOK_ALL, _at_noise, _noise, _ramp_clean, _ramp_points
from solvers.scan.records import EPS, Root, _Found, _new_roots
from solvers.scan.sampling import _Guarded, _passes


def _touch_search(g: _Guarded, lo: np.ndarray, hi: np.ndarray, sign: np.ndarray,
                  xtol: float, scale: float,
                  ends: tuple[np.ndarray, np.ndarray] | None = None):
    """Minimise sign*f on each [lo, hi]: (x, f(x), crossed, touch) per row.

    A minimum is only located to about sqrt(eps) relative (f is flat there to the last
    digits), so golden section stops at that width. Then f at x +/- w (w the final width):
    a value of the opposite sign means crossed (two roots straddle x); |f(x)| at noise
    level (:func:`_at_noise`) is a touch; a parabola through the three values whose vertex
    stays above half of f(x) is a positive minimum, no root (x^2 + 1e-20, the troughs of
    a sinusoid). Only the rest, the genuine touches whose f is computed without noise,
    continue golden section to 4 eps around x before :func:`_at_noise` decides. With
    ``ends`` (f at lo and hi) a search whose convex floor proves a positive minimum stops
    early (:func:`_golden`): no root there.
    """
    positive = np.zeros(len(lo), dtype=bool)
    xb, fb, crossed = _golden(g, lo, hi, sign, xtol, rel=_SQRT_EPS,
                              ends=None if ends is None else (sign * ends[0], sign * ends[1]),
                              positive=positive)
    sure = np.flatnonzero(positive)
    if sure.size:
        # rounding noise is not convex: a floor drawn through values at noise level proves
        # nothing, and such a minimum goes on as a candidate touch
        positive[sure[_at_noise(g, xb[sure], fb[sure], xtol, scale)]] = False
    touch = np.zeros(len(xb), dtype=bool)
    rest = np.flatnonzero(~crossed & np.isfinite(fb) & ~positive)
    if rest.size == 0:
        return xb, fb, crossed, touch
    x, sfb, sg = xb[rest], sign[rest] * fb[rest], sign[rest]
    w = np.maximum(_SQRT_EPS * np.abs(x), xtol)
    both = g(np.concatenate([x - w, x + w]))
    sfl, sfr = sg * both[: rest.size], sg * both[rest.size:]
    # a value of the opposite sign beside x: two roots straddle it
    inside = ((x - w > lo[rest]), (x + w < hi[rest]))  # a split point strictly inside
    for arr, off, ok in ((sfl, -w, inside[0]), (sfr, w, inside[1])):
        flip = np.isfinite(arr) & (arr < 0) & ~crossed[rest] & ok
        crossed[rest[flip]] = True
        xb[rest[flip]] = (x + off)[flip]
        fb[rest[flip]] = (sg * arr)[flip]
    open_ = ~crossed[rest]
    noise = np.zeros(rest.size, dtype=bool)
    if open_.any():
        noise[open_] = _at_noise(g, x[open_], fb[rest][open_], xtol, scale)
    touch[rest[open_ & noise]] = True
    with np.errstate(all="ignore"):
        curv = sfl - 2 * sfb + sfr
        step = sfr - sfl
        vertex = sfb - step * step / (8 * curv)
        # the square of a difference of values near 1e-160 underflows to 0, which made
        # every touch of a small-valued f a "positive minimum": those rows again in units
        # of a power of two near |f| (exact, so nothing else changes; only where needed,
        # the common path pays one comparison)
        under = (step * step < 1e-280) & (step != 0)
        if under.any():
            unit = np.ldexp(1.0, np.frexp(np.maximum(np.abs(sfl), np.abs(sfr)))[1])
            ul, ub, ur = sfl / unit, sfb / unit, sfr / unit
            scaled = (ub - (ur - ul) ** 2 / (8 * (ul - 2 * ub + ur))) * unit
            vertex = np.where(under, scaled, vertex)
    positive = (curv > 0) & (vertex > 0.5 * sfb) & (sfb > 0)
    more = rest[open_ & ~noise & ~positive & np.isfinite(sfl) & np.isfinite(sfr)]
    if more.size:
        wm = np.maximum(_SQRT_EPS * np.abs(xb[more]), xtol)
        x2, f2, c2 = _golden(g, np.maximum(xb[more] - 2 * wm, lo[more]),
                             np.minimum(xb[more] + 2 * wm, hi[more]), sign[more], xtol)
        better = c2 | (np.abs(f2) < np.abs(fb[more]))
        xb[more[better]], fb[more[better]] = x2[better], f2[better]
        crossed[more[c2]] = True
        ok = ~c2
        if ok.any():
            touch[more[ok]] = _at_noise(g, xb[more[ok]], fb[more[ok]], xtol, scale)
    return xb, fb, crossed, touch


def _multiplicity(
    g: _Guarded, x: np.ndarray, reach: np.ndarray, odd: np.ndarray, scale: float,
    extra: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Integer m with f ~ c (x - r)^m near each root, parity forced by ``odd``; the
    spread of the local slopes (large when other roots hide within the probed distance);
    and f at each root (the residual).

    |f(r +/- d)| at d = reach * 4^-j (j = 0..10); the local slope of log|f| against
    log d, taken from the four smallest d still 1000x above the rounding floor (the
    largest |f| within a few ulps of r). All points go to f in one call, with ``extra``
    (more points per root, rows) whose values are written back into ``extra``.
    """
    if len(x) == 0:
        return np.zeros(0, dtype=int), np.zeros(0), np.zeros(0)
    # (two compiled passes around the one call of f, and numpy's log between them: the
    # numpy form of the points and of the slopes cost some 40 calls, for every scan)
    passes = _passes()
    pts = passes.ladder_points(x, reach, scale, np.zeros((len(x), 0)) if extra is None else extra)
    vals = g(pts.reshape(-1)).reshape(pts.shape)
    if extra is not None:
        extra[...] = vals[:, pts.shape[1] - extra.shape[1]:]
    rungs = 2 * len(passes.LADDER)
    logs = np.log(np.abs(vals[:, :rungs]))
    return passes.ladder_read(vals, logs, np.asarray(odd, dtype=bool))


def _zero_samples(g: _Guarded, z: np.ndarray, h: float, brackets: list) -> list[_Found]:
    """Roots at samples where f == 0; parity from f just beside the zero, not from the
    neighbouring samples (another root may sit between), and a sign change between a
    neighbour and the point beside the zero is a further bracket."""
    x0 = z[:, 0]
    d = np.maximum(1e-6 * h, 64 * EPS * np.abs(x0))
    fl, fr = g(x0 - d), g(x0 + d)
    found = []
    for i in range(len(z)):
        usable = math.isfinite(fl[i]) and math.isfinite(fr[i]) and fl[i] != 0 and fr[i] != 0
        odd = ((fl[i] < 0) != (fr[i] < 0)) if usable else bool(z[i, 1])
        found.append(_Found(float(x0[i]), odd, ("zero_at_sample",)))
        for xa, fa, xb, fb in ((z[i, 2], z[i, 4], x0[i] - d[i], fl[i]),
                               (x0[i] + d[i], fr[i], z[i, 3], z[i, 5])):
            if (xa < xb and math.isfinite(fa) and math.isfinite(fb) and fa != 0 and fb != 0
                    and (fa < 0) != (fb < 0)):
                brackets.append((float(xa), float(xb), float(fa), float(fb)))
    return found


def _dedupe_points(xs: list[float], scale: float) -> list[float]:
    out: list[float] = []
    for x in sorted(xs):
        if out and abs(x - out[-1]) <= 1e3 * EPS * max(abs(x), scale * 1e-3):
            continue
        out.append(x)
    return out


def _touch(g, gp, lo, hi, xm, xtol) -> _Found:
    """A confirmed touch at xm; with f' refine the extremum by bracketing f'.

    The bracketing is the scan's own vectorised Anderson-Bjorck (:func:`_bracket_all`):
    its interpolation uses only ratios of f' values, so it is scale-free (f' of x^8 near 0
    underflows gracefully instead of dividing by zero).
    """
    how = ("touch_golden",)
    if gp is not None:
        dl, dr = gp.scalar(lo), gp.scalar(hi)
        if math.isfinite(dl) and math.isfinite(dr) and dl != 0 and dr != 0 and (dl < 0) != (dr < 0):
            row = np.array([[float(lo), float(hi), dl, dr]])
            done, blo, bhi, bflo, bfhi = _bracket_all(gp, row, xtol)
            xr = float(blo[0] if abs(bflo[0]) <= abs(bfhi[0]) else bhi[0])
            level = max(abs(g.scalar(xm)), 16 * float(_noise(g, np.array([xr]), EPS)[0]))
            if done[0] and lo <= xr <= hi and abs(g.scalar(xr)) <= level:
                return _Found(xr, False, ("touch_fprime",),
                              run=functools.partial(_safe_brent, gp.scalar, float(lo),
                                                    float(hi), xtol))
    return _Found(xm, False, how)


def _range_ends(g, a, b, h, xtol, scale, brackets: list) -> list[_Found]:
    """Roots sitting at (or within a sample of) the range ends without a sign change.

    A sign change hidden between an end and its neighbouring sample (two roots closer to
    the end than the sample spacing) is split at the |f| minimum into two brackets,
    appended to ``brackets`` for the common refinement.
    """
    out = []
    for end, inner, side in ((a, a + h, +1), (b, b - h, -1)):
        fe, fi = g.fast(end), g.fast(inner)
        if not (math.isfinite(fe) and math.isfinite(fi)):
            continue
        if fe == 0:
            if fi != 0:  # (f zero on a whole stretch is reported as such, not as a root)
                # parity from the mirror point outside the range, where f is defined there:
                # x^2 at 0 is a touch (even), sin x at 0 a crossing (odd)
                fo = g.scalar(2 * end - inner)
                odd = not (math.isfinite(fo) and fo != 0) or (fo < 0) != (fi < 0)
                out.append(_Found(end, odd, ("zero_at_range_end",)))
            continue
        if fi == 0 or (fe < 0) != (fi < 0) or abs(fe) >= abs(fi):
            continue
        lo, hi = (end, inner) if side > 0 else (inner, end)
        xb, fb, crossed = _golden(g, np.array([lo]), np.array([hi]), np.array([np.sign(fe)]),
                                  xtol)
        if crossed[0]:  # a sign change inside, missed by the sampling: bracket both roots
            fx = float(fb[0])
            brackets.append((float(lo), float(xb[0]), *((fe, fx) if side > 0 else (fi, fx))))
            brackets.append((float(xb[0]), float(hi), *((fx, fi) if side > 0 else (fx, fe))))
            continue
        if _at_noise(g, np.array([end]), np.array([fe]), xtol, scale)[0]:
            out.append(_Found(end, True, ("range_end_noise",)))
        elif _at_noise(g, xb, fb, xtol, scale)[0]:
            out.append(_Found(float(xb[0]), False, ("touch_golden",)))
    return out


def _domains(g, cand, a, b, h, xtol, scale):
    """Locate gap edges by bisection; classify each defined-side edge (root, pole, plain)."""
    if not cand.edges:
        if not cand.first_defined:
            return [(a, b)], [], []
        return [], [], []
    e = np.array([(u, d) for u, d, _ in cand.edges], dtype=float)
    side = np.array([s for _, _, s in cand.edges])
    und, dfd = e[:, 0].copy(), e[:, 1].copy()
    for _ in range(200):
        g.check()
        act = np.abs(dfd - und) > np.maximum(2 * EPS * np.maximum(np.abs(und), np.abs(dfd)), xtol)
        if not np.any(act):
            break
        mid = 0.5 * (und[act] + dfd[act])
        fin = ~np.isnan(g(mid))
        ia = np.nonzero(act)[0]
        dfd[ia[fin]] = mid[fin]
        und[ia[~fin]] = mid[~fin]
    # a tidy value next to the edge where f is exactly 0 (e.g. 0 for sqrt(x)) beats the
    # last float bisection reached
    tidy = np.round(dfd / max(scale, 1e-300), 12) * max(scale, 1e-300)
    ftidy = g(tidy)
    fd = g(dfd)
    use = (ftidy == 0) & (fd != 0) & (np.abs(tidy - dfd) <= 1e-9 * scale)
    dfd = np.where(use, tidy, dfd)
    fd = np.where(use, ftidy, fd)
    # probes moving into the defined side: |f| trend toward the edge
    j = np.arange(30)
    probes = dfd[:, None] + side[:, None] * h * 2.0 ** (-j[None, :])
    fp = np.abs(g(probes.reshape(-1)).reshape(probes.shape))
    roots, poles = [], []
    for i in range(len(dfd)):
        seq = fp[i][np.isfinite(fp[i])]
        if np.isinf(fd[i]):
            poles.append(float(dfd[i]))
            continue
        if fd[i] == 0:
            roots.append(_Found(float(dfd[i]), True, ("domain_edge_zero",),
                                located_by=("sampling",)))
            continue
        if len(seq) < 4:
            continue
        falling = np.all(np.diff(seq[-10:]) <= 0)
        rising = np.all(np.diff(seq[-10:]) >= 0)
        if falling and abs(fd[i]) <= 1e-3 * seq[0]:
            roots.append(_Found(float(dfd[i]), True,
                                ("domain_edge_limit",)))
        elif rising and abs(fd[i]) >= 2 * seq[0]:
            poles.append(float(dfd[i]))
    # assemble gaps from edges in order
    order = np.argsort(0.5 * (und + dfd))
    gaps: list[tuple[float, float]] = []
    open_at = a if not cand.first_defined else None
    for i in order:
        if side[i] < 0:  # defined on the left: a gap starts
            open_at = float(dfd[i])
        else:
            start = open_at if open_at is not None else a
            gaps.append((start, float(dfd[i])))
            open_at = None
    if open_at is not None:
        gaps.append((open_at, b))
    return gaps, roots, poles


def _beside_poles(g: _Guarded, gp, poles: list[float], a: float, b: float, h: float,
                  xtol: float, notes: list[Detail]) -> list[_Found]:
    """Roots between a pole and its neighbouring samples, where no sample pair brackets them.

    f runs from +-inf at the pole to the value at the next sample; a root 1e-4 of a sample
    spacing from the pole (a cubic equation of state's liquid root beside its co-volume
    pole) leaves both samples of one sign. Each side is probed at p +/- h 2^-k (k = 0..52,
    down to a few ulps of p) in one f call; every sign change between neighbouring probes
    is a bracket refined like any other. A side where |f| dips and rises again between
    the probes without a sign change could hide a pair of roots: that is said plainly.
    """
    pv = np.array(poles, dtype=float)
    k = np.arange(53)
    least = 4 * EPS * np.maximum(np.abs(pv), 1e-3 * max(abs(a), abs(b)))
    d = np.maximum(h * 2.0 ** -k[None, :], least[:, None])
    brackets = []
    for side in (-1.0, 1.0):
        pts = np.clip(pv[:, None] + side * d, a, b)
        vals = g(pts.reshape(-1)).reshape(pts.shape)
        for i in range(len(pv)):
            x, y = pts[i], vals[i]
            ok = np.isfinite(y) & (y != 0) & (x != pv[i])
            x, y = x[ok], y[ok]
            if len(x) < 2:
                continue
            flips = np.flatnonzero(np.signbit(y[:-1]) != np.signbit(y[1:]))
            for j in flips:
                lo, hi = (j + 1, j) if x[j + 1] < x[j] else (j, j + 1)
                brackets.append((x[lo], x[hi], y[lo], y[hi]))
            ay = np.abs(y)  # ordered from far to near: |f| should rise toward the pole
            dips = np.flatnonzero((ay[1:-1] < ay[:-2]) & (ay[1:-1] < ay[2:]))
            if not flips.size and dips.size and ay[dips + 1].min() < 1e-3 * ay.max():
                notes.append(Detail("pole_dip", (float(pv[i]), float(ay[dips + 1].min()),
                                                 float(abs(x[0] - pv[i])))))
    if not brackets:
        return []
    return _resolve_brackets(g, gp, np.array(brackets, dtype=float), xtol)[0]


def _grows_without_bound(g: _Guarded, xp: np.ndarray, h: float,
                         xtol: float = 0.0) -> np.ndarray:
    """Whether |f| keeps growing toward each located peak xp (a pole), or levels off (a
    bounded peak that only outgrew the samples, like sin(1/x) near 0).

    |f(xp +/- d)| for d halving 20 times down to 64 ulps of xp (so the probes resolve the
    last doublings before float resolution), but never below 2 xtol, the absolute
    resolution the peak was located to: near x = 0 the ulps are far finer than that, and
    probes closer to xp than the pole is would all stand on one side of it, where |f| is
    flat (1/x^2 located at -7.5e-21 by a search that stops at 2.2e-19). A pole grows
    steadily on at least one side (monotone, the last value at least 1.2x the first:
    ln|x - c| gains about 1.7x over those halvings near x = 1, 1/(x - c)^2 10^12x); a
    bounded smooth peak changes by a relative (d / its width)^2 there, nothing.
    """
    k = np.arange(21)
    least = np.maximum(64 * EPS * np.maximum(np.abs(xp), EPS * h), 2.0 * xtol)
    d = np.minimum(least[:, None] * 2.0 ** (20 - k[None, :]), h)
    pts = np.concatenate([xp[:, None] - d, xp[:, None] + d], axis=1)
    vals = np.abs(g(pts.reshape(-1)).reshape(pts.shape))
    out = np.zeros(len(xp), dtype=bool)
    for side in (vals[:, : len(k)], vals[:, len(k):]):
        inf = np.isinf(side).any(axis=1)
        fin = np.where(np.isfinite(side), side, np.nan)
        steady = np.all(np.diff(fin, axis=1) >= 0, axis=1)  # NaN fails: undefined in between
        out |= inf | (steady & (fin[:, -1] >= 1.2 * fin[:, 0]))
    return out


def _hidden_roots(g, gp, suspects: list[Root], xtol: float) -> list[_Found]:
    """More roots inside the sample bracket of a root whose local shape is not one power.

    An odd cluster (three roots within a sample spacing) shows one sign change; Brent
    finds one of them. Each side of it is searched (golden section) for a value of the
    opposite sign, which brackets the others.
    """
    brackets, probes = [], []
    for r in suspects:
        if r.bracket is None:
            continue
        lo0, hi0 = r.bracket
        d = 64 * EPS * max(abs(r.x), EPS)
        for u, v in ((lo0, r.x - d), (r.x + d, hi0)):
            if not u < v:
                continue
            fu, fv = g.scalar(u), g.scalar(v)
            if not (math.isfinite(fu) and math.isfinite(fv)) or fu == 0 or fv == 0:
                continue
            if (fu < 0) != (fv < 0):
                brackets.append((u, v, fu, fv))
            else:
                probes.append((u, v, fu, fv))
    found: list[_Found] = []
    if probes:
        pr = np.array(probes)
        xb, fb, crossed = _golden(g, pr[:, 0], pr[:, 1], np.sign(pr[:, 2]), xtol)
        for i in np.flatnonzero(crossed):
            brackets += [(pr[i, 0], xb[i], pr[i, 2], fb[i]), (xb[i], pr[i, 1], fb[i], pr[i, 3])]
        # no crossing, but an interior minimum at noise level: a hidden touch
        rest = np.flatnonzero(~crossed & np.isfinite(fb))
        if rest.size:
            # an interior minimum, not the search running down to the known root's side
            margin = 1e3 * 64 * EPS * np.maximum(np.abs(xb[rest]), EPS)
            inner = (xb[rest] - pr[rest, 0] > margin) & (pr[rest, 1] - xb[rest] > margin)
            touch = inner & _at_noise(g, xb[rest], fb[rest], xtol, 1.0)
            for i in rest[touch]:
                found.append(_touch(g, gp, pr[i, 0], pr[i, 1], float(xb[i]), xtol))
    if brackets:
        found += _resolve_brackets(g, gp, np.array(brackets, dtype=float), xtol)[0]
    return found


_by_x = operator.attrgetter("x")


def _finish(g, found: list[_Found], poles, jumps, gaps, h, scale, flags=None,
            clean=None) -> list[Root]:
    """Deduplicate, estimate multiplicities, evaluate residuals, sort.

    ``flags``, when a list, receives the indices of roots whose local slopes are not
    consistent with one c (x - r)^m (more roots may hide within a sample spacing).
    ``clean``, when a list, receives per root whether f is a clean ramp there
    (:func:`solvers.scan.noise._ramp_clean`, judged from points evaluated with the
    multiplicity ladder, in the same call of f), for the noise look; it stays empty with
    more than ``_LOOK_ALL`` roots (the noise look then examines only crowded roots).
    """
    found = sorted((r for r in found if math.isfinite(r.x)), key=_by_x)
    zero = min(scale, 1.0)  # x floor near zero, as for the step test's xtol
    if not found:
        return []
    x = np.array([r.x for r in found])
    close = np.abs(x[1:] - x[:-1]) <= 64 * EPS * np.maximum(np.abs(x[1:]), 1e-3 * zero)
    if np.count_nonzero(close):  # (else every root stays: the loop below would keep all)
        merged: list[_Found] = []
        for r in found:
            if merged and abs(r.x - merged[-1].x) <= 64 * EPS * max(abs(r.x), 1e-3 * zero):
                prev = merged[-1]
                if prev.bracket is None and r.bracket is not None:
                    merged[-1] = r
                continue
            merged.append(r)
        x = np.array([r.x for r in merged])
    else:
        merged = found
    xs = x.tolist()
    # distance to the nearest other feature (root, pole, jump, gap end) on either side
    if len(poles) or len(jumps) or len(gaps):
        features = np.sort(np.array(
            xs + list(poles) + list(jumps) + [p for gap in gaps for p in gap], dtype=float))
        left = np.searchsorted(features, x, side="left") - 1
        right = np.searchsorted(features, x, side="right")
        padded = np.concatenate([[-np.inf], features, [np.inf]])
        nearest = np.minimum(x - padded[left + 1], padded[right + 1] - x)
    else:  # (the roots alone: sorted and distinct, their neighbours are the features)
        spacing = x[1:] - x[:-1]
        nearest = np.minimum(np.concatenate([[np.inf], spacing]),
                             np.concatenate([spacing, [np.inf]]))
    reach = np.minimum(h, 0.3 * nearest)
    reach = np.maximum(reach, 64 * EPS * np.maximum(np.abs(x), 1e-3 * zero))
    odd = np.array([r.odd for r in merged])
    # (only where the noise look examines every root: beyond _LOOK_ALL roots it examines
    # the crowded ones alone, and the points would be spent for nothing)
    ramp = _ramp_points(x, scale) if clean is not None and len(x) <= _LOOK_ALL else None
    mult, spread, res = _multiplicity(g, x, reach, odd, EPS * scale, ramp)
    if flags is not None:
        flags.extend(int(i) for i in np.flatnonzero(spread > 0.5))
    if ramp is not None:
        clean.extend(_ramp_clean(ramp).tolist())
    return _new_roots(merged, xs, res.tolist(), mult.tolist())
