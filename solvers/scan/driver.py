"""The scan itself: :func:`scan` checks its arguments and picks the cross-check;
:func:`_scan` runs the steps the package docstring lists; :func:`_resample` re-scans
what a cross-check found unresolved."""

from __future__ import annotations

import bisect
import functools
import math
import warnings as _warnings
from collections.abc import Callable

import numpy as np

from solvers.records import Detail
from solvers.scan.crosscheck import ChebyshevRoots, _cross_check, chebyshev_roots
from solvers.scan.features import (
    _beside_poles,
    _dedupe_points,
    _domains,
    _finish,
    _grows_without_bound,
    _hidden_roots,
    _range_ends,
    _touch,
    _touch_search,
    _zero_samples,
)
from solvers.scan.kernels import (
    _SQRT_EPS,
    _golden,
    _golden_start,
    _overflow_brackets,
    _resolve_brackets,
)
from solvers.scan.noise import _noise_clusters, _sigma, _staircase
from solvers.scan.records import EPS, Root, Scan, _Found
from solvers.scan.sampling import (
    DEFAULT_SAMPLES,
    _Candidates,
    _Guarded,
    _sample_grid,
    _typical_size,
)


def _check_range(a: float, b: float) -> tuple[float, float]:
    try:
        a, b = float(a), float(b)
    except (TypeError, ValueError) as exc:
        raise ValueError(f"scan range must be two numbers, got a={a!r}, b={b!r}") from exc
    if not (math.isfinite(a) and math.isfinite(b)):
        raise ValueError(f"scan range must be finite, got [{a}, {b}]")
    if not a < b:
        raise ValueError(f"scan range needs a < b, got [{a}, {b}]")
    if not math.isfinite(b - a):
        raise ValueError(f"scan range [{a}, {b}] is too wide: its width overflows a double")
    return a, b


def scan(
    f: Callable[[np.ndarray], np.ndarray],
    a: float,
    b: float,
    *,
    fprime: Callable[[np.ndarray], np.ndarray] | None = None,
    samples: int | None = None,
    progress: Callable[[float], None] | None = None,
    cancel: Callable[[], bool] | None = None,
    cross_check: bool | str = True,
) -> Scan:
    """Find every real root of f on [a, b]; report poles, jumps and undefined gaps.

    f (and fprime, if given) are vectorised callables: numpy array in, array out, NaN/inf
    where undefined; exceptions from f count as undefined. ``samples`` is the number of
    equally spaced base samples (default ``DEFAULT_SAMPLES`` = 2001, at least 3); windows
    where f oscillates faster than that are resampled up to 64x finer automatically.
    Roots are refined (all brackets in step, on the vectorised f, or a point at a time on
    the scalar f when there are few) to Brent's stop rule with rtol = 4 eps
    (about full double precision for a simple root; a root of multiplicity m is only
    determined to about eps^(1/m) relative unless f is evaluated without cancellation).
    ``progress(fraction)`` is called from the calling thread between chunks and at the
    end (1.0); ``cancel()`` is polled on f calls (at least every 20 ms of work, in every
    loop) and between eigenvalue batches of the cross-check, and a True answer raises
    :class:`ScanCancelled`. Where f is rounding noise, what the noise made of one root
    cluster is reported as that one root (``Scan.noise_bands`` holds the stretches).

    ``cross_check`` picks the second look at what sampling can miss (``Scan.check`` says
    which ran):

    - ``True`` / ``"auto"`` (default): ``"derivative"`` when ``fprime`` is given, else
      ``"chebyshev"``.
    - ``"derivative"`` (needs ``fprime``): f' is sampled on the same grid. Guarantee:
      wherever f' changes sign at most once between neighbouring samples, every extremum
      of f between samples that moves toward zero is either proved root-free (f' monotone
      there by the mean value theorem test, and the tangent lines at both samples meet
      above f's rounding noise) or searched, so hidden close pairs and touches are found;
      grid windows where f's differences disagree with f' (trapezoid rule off by more than half:
      an oscillation aliased by the sampling) are resampled up to 64x finer, and what is
      still unresolved then is re-scanned with 64x the samples, with a warning. Not
      covered: a feature narrower than a sample spacing that leaves neither f nor f'
      changed at any sample (a spike between samples).
    - ``"chebyshev"`` / ``"deep"``: the Chebyshev proxy rootfinder runs independently on
      the smooth pieces (package docstring, step 8a); parts where it finds f not smooth for
      no known reason are re-scanned with 64x the samples. Also covers a spike between
      samples wherever the proxy resolves it; costs eigenvalue work (several times the
      sampling). With ``fprime`` the derivative check runs as well.
    - ``False`` / ``"off"``: sampling alone (sampled minima of |f| still catch touches and
      close pairs the sampling shows).

    Raises ValueError (one line) for a bad range, sample count or ``cross_check`` value
    (``"derivative"`` without ``fprime``); never raises because f misbehaves. See the
    package docstring (:mod:`solvers.scan`) for the classification rules.
    """
    a, b = _check_range(a, b)
    if samples is None:
        n = DEFAULT_SAMPLES
    else:
        try:
            n = int(samples)
        except (TypeError, ValueError) as exc:
            raise ValueError(f"samples must be an integer >= 3, got {samples!r}") from exc
        if n < 3 or n != samples:
            raise ValueError(f"samples must be an integer >= 3, got {samples!r}")
    # no more samples than there are floats in [a, b] (a range a few ulps wide)
    n = max(3, min(n, int((b - a) / math.ulp(max(abs(a), abs(b)))) // 2 + 1))
    mode = _check_mode(cross_check, fprime)
    with np.errstate(all="ignore"), _warnings.catch_warnings():
        _warnings.simplefilter("ignore")
        return _scan(f, a, b, fprime, n, progress, cancel, mode)


# cross_check values and the check each one runs
_MODES = {True: "auto", "auto": "auto", False: "off", "off": "off",
          "derivative": "derivative", "chebyshev": "chebyshev", "deep": "chebyshev"}


def _check_mode(cross_check: object, fprime: object) -> str:
    """The cross-check a ``cross_check`` value asks for: "off", "derivative" or
    "chebyshev" ("auto": the derivative check when f' is given, else the proxy)."""
    try:
        mode = _MODES[cross_check]  # type: ignore[index]
    except (KeyError, TypeError):
        raise ValueError("cross_check must be True, False, 'auto', 'derivative', 'chebyshev' "
                         f"or 'deep', got {cross_check!r}") from None
    if mode == "auto":
        mode = "derivative" if fprime is not None else "chebyshev"
    if mode == "derivative" and fprime is None:
        raise ValueError("cross_check='derivative' needs fprime (f' as a vectorised callable)")
    return mode


def _scan(f, a, b, fprime, n, progress, cancel, mode, depth=0) -> Scan:
    cross_check = mode == "chebyshev"
    g = _Guarded(f, cancel)
    gp = _Guarded(fprime, cancel) if fprime is not None else None
    scale = max(abs(a), abs(b))
    # absolute floor of the step test, for roots at (or near) zero: at most 1e-3 eps, so a
    # wide range (up to 1e300) does not blur a root of order one into zero
    xtol = 1e-3 * EPS * min(scale, 1.0)
    h = (b - a) / (n - 1)
    notes: list[Detail] = []
    cand = _Candidates()
    g.check()
    _sample_grid(g, a, b, n, cand, 0, progress, (0.0, 0.8),
                 gp if mode != "off" and gp is not None else None)
    if cand.extrema:
        # extrema between samples that no sampled minimum of |f| already covers
        cover = sorted((m[0], m[2]) for m in cand.minima)
        starts = [u for u, _ in cover]
        for e in cand.extrema:
            i = bisect.bisect_right(starts, e[0]) - 1
            if i < 0 or cover[i][1] < e[2]:
                cand.minima.append(e)

    found: list[_Found] = []
    poles: list[float] = list(cand.inf_points)
    jumps: list[float] = []
    bounded: list[float] = []  # sign changes that looked like poles, but |f| stays bounded
    runs: list[list[float]] = []
    for u, v in sorted(cand.flat):
        if runs and u <= runs[-1][1]:
            runs[-1][1] = max(runs[-1][1], v)
        else:
            runs.append([u, v])
    brackets = list(cand.brackets) + _overflow_brackets(g, cand.overflow)
    if cand.zeros:
        found += _zero_samples(g, np.array(cand.zeros), h, brackets)

    # touches and hidden close pairs from local minima of |f|
    if cand.minima:
        m = np.array(cand.minima)
        sign = np.sign(m[:, 4])
        xb, fb, crossed, touch = _touch_search(g, m[:, 0], m[:, 2], sign, xtol, scale,
                                               ends=(m[:, 3], m[:, 5]))
        for i in np.nonzero(crossed)[0]:
            brackets.append((m[i, 0], xb[i], m[i, 3], fb[i]))
            brackets.append((xb[i], m[i, 2], fb[i], m[i, 5]))
        for i in np.flatnonzero(touch):
            found.append(_touch(g, gp, m[i, 0], m[i, 2], float(xb[i]), xtol))
    # sharp peaks of |f| without a sign change: poles when |f| keeps growing toward a point
    if cand.peaks:
        pk = np.array(cand.peaks)
        # |f| at the peak sample, at its two neighbours (the search's bracket ends) and at
        # golden section's first two points, in one call
        c0, d0 = _golden_start(pk[:, 0], pk[:, 2])
        f3 = np.abs(g(np.concatenate([pk.T.reshape(-1), c0, d0]))).reshape(5, -1)
        fk = f3[1]
        # a maximum is located only to sqrt(eps) too; where |f| still changes across that
        # width (a pole there, not a flat smooth peak) the search goes on down to 4 eps,
        # where the growth test needs to stand next to it. A peak proved bounded below
        # twice the sampled |f| (``_golden``'s ``limit``: concave, and the probe where the
        # outer chords meet below them) is no pole, and its search stops there (the peaks
        # of |f| of a sampled oscillation, sin(x^2))
        bounded_peak = np.zeros(len(pk), dtype=bool)
        xb, fb, _ = _golden(g, pk[:, 0], pk[:, 2], np.ones(len(pk)), xtol, peak=True,
                            rel=_SQRT_EPS, ends=(-f3[0], -f3[2]), positive=bounded_peak,
                            limit=-2.0 * fk, first=(-f3[3], -f3[4]))
        w = np.maximum(_SQRT_EPS * np.abs(xb), xtol)
        open_ = np.flatnonzero(np.isfinite(fb) & ~bounded_peak)
        side = np.abs(g(np.concatenate([xb[open_] - w[open_], xb[open_] + w[open_]])))
        change = np.max(np.abs(side.reshape(2, -1) - np.abs(fb[open_])), axis=0)
        follow = open_[~(change <= 1e-6 * np.abs(fb[open_]))]
        if follow.size:
            wf = w[follow]
            lo_f = np.maximum(xb[follow] - 2 * wf, pk[follow, 0])
            hi_f = np.minimum(xb[follow] + 2 * wf, pk[follow, 2])
            x2, f2, _ = _golden(g, lo_f, hi_f, np.ones(follow.size), xtol, peak=True)
            better = ~np.isfinite(f2) | (np.abs(f2) >= np.abs(fb[follow]))
            xb[follow[better]], fb[follow[better]] = x2[better], f2[better]
        top = np.abs(fb)
        grows = (top >= 2.0 * fk) & np.isfinite(fb) & ~bounded_peak
        unbounded = ~np.isfinite(fb) & ~bounded_peak
        if grows.any():
            unbounded[grows] = _grows_without_bound(g, xb[grows], h, xtol)
        for i in np.flatnonzero(unbounded):
            poles.append(float(xb[i]))
    # ends of the range: |f| at noise level at a or b is a root there
    found.extend(_range_ends(g, a, b, h, xtol, scale, brackets))

    g.check()
    if progress is not None:
        progress(0.85)
    if len(brackets) > MAX_ROOTS:
        # memory and time grow with the roots kept (sin(1e4 x) on [0, 1000] has 3e6):
        # refine the first MAX_ROOTS and say where the rest begin
        brackets.sort()
        cut = brackets[MAX_ROOTS][0]
        brackets = brackets[:MAX_ROOTS]
        notes.append(Detail("many_sign_changes", (MAX_ROOTS, float(a), float(b), float(cut))))
    if brackets:
        br = np.array(brackets, dtype=float)
        roots_here, poles_here, jumps_here, undefined = _resolve_brackets(g, gp, br, xtol, scale)
        found += roots_here
        if poles_here:
            # a bracket whose |f| grew while bisected is a pole only if |f| keeps growing
            # right up to it; a bounded oscillation (sin(1/x) near 0) only looked like one
            ph = np.array(poles_here)
            real = _grows_without_bound(g, ph, h, xtol)
            poles += [float(p) for p in ph[real]]
            bounded += [float(p) for p in ph[~real]]
        jumps += jumps_here
        for i in undefined:
            notes.append(Detail("undefined_inside", (float(br[i, 0]), float(br[i, 1]))))
    gaps, edge_roots, edge_poles = _domains(g, cand, a, b, h, xtol, scale)
    found.extend(edge_roots)
    poles.extend(edge_poles)
    if poles:
        found += _beside_poles(g, gp, _dedupe_points(poles, scale), a, b, h, xtol, notes)

    flagged: list[int] = []
    clean: list[bool] = []
    roots = _finish(g, found, poles, jumps, gaps, h, scale, flagged, clean)
    hidden = _hidden_roots(g, gp, [roots[i] for i in flagged], xtol)
    if hidden:
        clean = []
        roots = _finish(g, found + hidden, poles, jumps, gaps, h, scale, clean=clean)
    # rounding noise: sign changes, touches, "poles", "jumps" and zero runs that are one
    # root cluster of a function evaluated with cancellation become that one root
    poles, jumps = _dedupe_points(poles, scale), _dedupe_points(jumps, scale)
    # f's typical size, taken only if the noise look finds a noisy stretch to judge
    typical = functools.cache(functools.partial(_typical_size, cand))
    unsure = np.zeros(len(roots), dtype=bool)
    unsure[[i for i in flagged if i < len(roots)]] = True
    roots, poles, jumps, runs, bands = _noise_clusters(g, roots, poles, jumps, runs, notes, a,
                                                       b, scale, typical, h, unsure,
                                                       np.array(clean) if clean else None)
    for u, v in runs:
        notes.append(Detail("zero_run", (float(u), float(v))))
    for p in bounded:
        if not any(u <= p <= v for u, v in bands):
            notes.append(Detail("bounded_oscillation", (float(p),)))
    # windows still unresolved at 64x: not an oscillation where rounding noise made them
    # (inside a noise band) or where a pole, jump or domain edge inside explains them (f'
    # contradicts f's differences across a pole of tan x, as it must)
    singular = sorted(list(poles) + list(jumps) + [e for gap in gaps for e in gap])
    unresolved = [(u, v) for u, v in _merge_spans(cand.unresolved)
                  if not any(p <= u and v <= q for p, q in bands)
                  and not _holds_any(singular, u, v)]
    # nor where f is a staircase of its rounding (its steps contradict f' at any sampling)
    unresolved = [span for span, stair in zip(unresolved, _staircase(g, unresolved),
                                              strict=True) if not stair]
    extra_samples = 0
    if mode == "derivative" and depth == 0 and unresolved:
        # what the sampling could not resolve even 64x finer (f' contradicting f there too)
        # is re-scanned with 64x the samples, as the Chebyshev check does with rough pieces
        roots, extra_samples = _resample(f, fprime, unresolved, n, a, b, progress, cancel,
                                         roots, poles, jumps, notes, scale, mode)
        poles, jumps = _dedupe_points(poles, scale), _dedupe_points(jumps, scale)
        roots, poles, jumps, _, more = _noise_clusters(g, roots, poles, jumps, [], notes, a, b,
                                                       scale, typical, h)
        bands = sorted(bands + more)
    else:
        for u, v in unresolved:
            notes.append(Detail("fast_oscillation", (float(u), float(v))))

    cheb: ChebyshevRoots | None = None
    if cross_check:
        g.check()
        if progress is not None:
            progress(0.9)
        # the simple roots found so far let the proxy skip eigenvalue work where it provably
        # has exactly those zeros (chebyshev._certify); it still locates everything else
        simple = np.array(sorted(r.x for r in roots if r.multiplicity == 1), dtype=float)
        cheb = chebyshev_roots(g, a, b, max_pieces=min(max(256, n // 8), 4096), cancel=cancel,
                               on_cancel=g.check, noise=_MemoNoise(g, scale),
                               known=simple)
        before = len(roots)
        roots = _cross_check(g, gp, cheb, roots, poles, jumps, gaps, notes, h, xtol, scale,
                             bands)
        if len(roots) > before:
            # a proxy zero "confirmed" by a sign change of rounding noise beside a known root
            # merges with it like any other noise
            roots, poles, jumps, _, more = _noise_clusters(g, roots, poles, jumps, [], notes, a,
                                                           b, scale, typical, h)
            bands = sorted(bands + more)
        explained = sorted(list(poles) + list(jumps) + [e for gap in gaps for e in gap]
                           + [e for run in runs for e in run] + [e for bd in bands for e in bd])
        rough = []
        for u, v in cheb.skipped:
            i = bisect.bisect_left(explained, u)
            if i < len(explained) and explained[i] <= v:
                continue  # a pole, jump or domain edge inside: not smooth, as expected
            rough.append((u, v))
        if rough and depth == 0:
            roots, spent = _resample(f, fprime, rough, n, a, b, progress, cancel, roots,
                                     poles, jumps, notes, scale, mode)
            extra_samples += spent
            # what the finer re-scan made of rounding noise merges like the rest
            poles, jumps = _dedupe_points(poles, scale), _dedupe_points(jumps, scale)
            roots, poles, jumps, _, more = _noise_clusters(g, roots, poles, jumps, [], notes, a,
                                                           b, scale, typical, h)
            bands = sorted(bands + more)
        elif rough:
            notes.append(Detail("proxy_rough", (len(rough), float(rough[0][0]),
                                                float(rough[-1][1]))))
    if progress is not None:
        progress(1.0)
    # later noise looks (after a re-scan or the cross-check) can find a band around what an
    # earlier step, or a re-scan's own look, recorded as an oscillation or a zero run:
    # inside the final bands those are rounding noise of the one root cluster, not findings
    notes = _outside_bands(notes, bands)
    return Scan(
        a=a,
        b=b,
        roots=roots,
        poles=sorted(_dedupe_points(poles, scale)),
        discontinuities=sorted(_dedupe_points(jumps, scale)),
        gaps=gaps,
        details=tuple(notes),
        samples=cand.samples + extra_samples,
        cross_checked=[(p.a, p.b) for p in cheb.pieces] if cheb else [],
        chebyshev_roots=list(cheb.roots) if cheb else [],
        noise_bands=bands,
        check=mode,
    )


class _MemoNoise:
    """x -> f's rounding-noise deviation (:func:`solvers.scan.noise._sigma`), each x measured
    once. The proxy asks at every piece's ends and middle, level after level: a child's
    ends are its parent's end and middle, already measured (the estimate at a point does
    not depend on the other points asked with it, so a remembered value is the same)."""

    def __init__(self, g: _Guarded, scale: float):
        self.g, self.scale = g, scale
        self.seen: dict[float, float] = {}

    def __call__(self, x: np.ndarray) -> np.ndarray:
        keys = np.asarray(x, dtype=float).reshape(-1).tolist()
        new = [k for k in dict.fromkeys(keys) if k not in self.seen]
        if new:
            self.seen.update(zip(new, _sigma(self.g, np.array(new), self.scale).tolist(),
                                 strict=True))
        return np.array([self.seen[k] for k in keys], dtype=float)


_RESAMPLE_BUDGET = 2_000_000  # samples spent re-scanning parts the cross-check could not resolve


MAX_ROOTS = 100_000  # sign changes refined by one scan: beyond that, a narrower range is needed


def _holds_any(points: list[float], u: float, v: float) -> bool:
    """Whether any of the sorted ``points`` lies in [u, v]."""
    i = bisect.bisect_left(points, u)
    return i < len(points) and points[i] <= v


def _merge_spans(spans: list[tuple[float, float]]) -> list[tuple[float, float]]:
    """Sorted spans with overlapping or touching ones joined."""
    out: list[tuple[float, float]] = []
    for u, v in sorted(spans):
        if out and u <= out[-1][1]:
            out[-1] = (out[-1][0], max(v, out[-1][1]))
        else:
            out.append((u, v))
    return out


def _resample(f, fprime, rough, n, a, b, progress, cancel, roots, poles, jumps, notes, scale,
              mode="chebyshev"):
    """Re-scan, 64x denser, the parts the cross-check found unresolved for no known reason.

    Sampling can alias an oscillation faster than its spacing into a smooth-looking
    curve; the Chebyshev proxy, refined down to short pieces, does not, and neither does
    f' (its values contradict f's differences there). Where either gave up, the sampling
    is repeated at 64x the density (within a budget of ``_RESAMPLE_BUDGET`` samples, with
    the same cross-check ``mode``) and its roots, poles and jumps are merged in.
    Returns (roots, samples spent); progress moves from 0.9 toward 1 per interval.
    """
    density = 64 * (n - 1) / (b - a)
    budget = max(_RESAMPLE_BUDGET, 4 * n)
    merged = list(roots)
    done: list[tuple[float, float]] = []
    spent = 0
    for k, (u, v) in enumerate(rough):
        count = int(density * (v - u)) + 1
        floats = int((v - u) / math.ulp(max(abs(u), abs(v)))) + 1
        if floats < 2 * count / 64:  # the grid already sat on (nearly) every float there
            continue
        count = min(count, floats)
        if count > budget or len(merged) >= MAX_ROOTS:
            break
        budget -= count
        if progress is not None:
            progress(0.9 + 0.09 * k / len(rough))
        sub = _scan(f, u, v, fprime, max(count, 3), None, cancel, mode, depth=1)
        spent += sub.samples
        merged += sub.roots
        poles += sub.poles
        jumps += sub.discontinuities
        notes.extend(sub.details)
        done.append((u, v))
    left = [span for span in rough if span not in done]
    if done:
        notes.append(Detail("rescanned", (mode, len(done), float(done[0][0]),
                                          float(done[-1][1]))))
    if left:
        notes.append(Detail("rescan_budget", (mode, len(left), float(left[0][0]),
                                              float(left[-1][1]))))
    merged.sort(key=lambda r: r.x)
    out: list[Root] = []
    for r in merged:
        if out and abs(r.x - out[-1].x) <= 1e3 * EPS * max(abs(r.x), 1e-3 * scale):
            if "chebyshev" in r.located_by and "chebyshev" not in out[-1].located_by:
                out[-1] = r
            continue
        out.append(r)
    return out, spent


# The details that name a stretch of f's behaviour and that rounding noise also produces.
_NOISE_LOOKALIKES = frozenset({"bounded_oscillation", "fast_oscillation", "zero_run"})


def _outside_bands(notes: list[Detail], bands: list[tuple[float, float]]) -> list[Detail]:
    """``notes`` with what the final noise bands explain taken out: an oscillation or zero
    run lying (mostly: at least half of its stretch) inside a band, and a band's detail
    that a later look at the same stretch replaced (the later one, made with more
    samples, is the one the root cluster reports)."""
    if not bands:
        return notes

    def covered(d: Detail) -> bool:
        lo, hi = float(d.values[0]), float(d.values[-1])
        if hi <= lo:
            return any(u <= lo <= v for u, v in bands)
        shared = sum(max(0.0, min(hi, v) - max(lo, u)) for u, v in bands)
        return shared >= 0.5 * (hi - lo)

    kept: list[Detail] = []
    seen: list[tuple[float, float]] = []
    for d in reversed(notes):
        if d.code == "noise_band":
            lo, hi = float(d.values[0]), float(d.values[1])
            if any(lo <= v and u <= hi for u, v in seen):
                continue  # an earlier look at a stretch a later one covers
            seen.append((lo, hi))
        elif d.code in _NOISE_LOOKALIKES and covered(d):
            continue
        kept.append(d)
    return kept[::-1]
