"""Every root of f on [a, b]: locate, classify, refine, cross-check.

How a scan works
----------------
1. **Sample** f (vectorised) at ``samples`` equally spaced points (default
   ``DEFAULT_SAMPLES`` = 2001, never more than there are floats in [a, b]), in chunks
   of ``CHUNK`` points so memory stays bounded for any sample count. Between chunks
   ``progress(fraction)`` is called and ``cancel()`` polled. Each chunk yields only
   *candidates*: sign changes between neighbouring samples, samples where f is
   exactly 0, local minima of |f| that may touch zero, sharp local maxima of |f|,
   and edges between defined and undefined (NaN) samples. Windows of 32 samples
   where f turns more than 8 times are resampled 8x finer (twice at most, so up to
   64x) before candidates are taken.
2. **Refine and classify** every sign-change bracket at once (vectorised: one f
   call per iteration for all brackets): Anderson–Björck false position, safeguarded
   by bisection and a least step of half the tolerance, until each bracket is no
   wider than xtol + rtol |x| (rtol = 4 eps, xtol = 1e-3 eps min(max(|a|, |b|), 1):
   Brent's stop rule, full double precision for a simple root, in any range). A sign
   change from a finite sample into one where f overflows to +-inf is narrowed by
   bisection until a finite value of the far sign brackets the root. A converged bracket whose
   ends' |f| fell to 1e-6 of the sampled |f| is a root; the end of smaller |f| is
   taken, then one Newton step with ``fprime`` when given and it lowers |f|.
3. Every other bracket is **bisected** from its sample ends (all at once): |f|
   growing 1000-fold (or steadily, like a logarithm) down to adjacent floats means a
   **pole**; |f| staying put means a **discontinuity** (a jump). Poles and jumps
   are never reported as roots. ``Root.run``, the project's Brent
   (:func:`solvers.methods.brent`) on a root's sample bracket with the same
   tolerances, is built when first read (few callers want every root's iterates).
4. **Touches** (even multiplicity, no sign change): every local minimum of |f|
   that a parabola through the three samples says dips at least 10 % toward zero,
   or whose lowest value is within the parabola's curvature scale (c h^2) of zero,
   is searched by a vectorised golden-section minimisation of |f| down to sqrt(eps)
   (a minimum is located no better). If the search finds the opposite sign, two
   close roots were hidden between samples: both brackets go to step 2 (close roots
   are resolved, not merged). A parabola whose vertex stays above half the least |f|
   is a positive minimum, no root. Otherwise the minimum is a root only when |f|
   there is indistinguishable from zero: no more than 16x the spread of f over a few
   steps of the minimiser's resolution, or within 8 standard deviations of f's
   rounding noise (:mod:`solvers.noise`). A touch that stops short of zero
   (x^2 + 1e-20) is not a root. With ``fprime`` the touch point is then refined by
   bracketing f' (scale-free: only ratios of f' values are used).
5. **Poles without a sign change** (1/(x - c)^2, ln|x - c|): a sharp local maximum
   of |f| (at least 10 % above its lower neighbour, or a kink: its second difference
   8x that two samples away, as for a pole riding on a large offset) is searched by
   golden section for the largest |f|; at least twice the sampled peak (or infinite)
   and |f| still growing through the last 20 halvings of the distance before float
   resolution is a pole. A bounded oscillation (sin(1/x) near 0) is not, and a sign
   change whose bisection looked like a pole is checked the same way. Beside every
   pole the stretch to the neighbouring samples is probed at distances halving down
   to a few ulps: each sign change there brackets a root no sample pair showed (a
   liquid root 1e-4 of a spacing from an equation of state's co-volume pole), and a
   dip without one is reported as a place where a pair of roots may hide.
6. **Multiplicity** m from f ~ c (x - r)^m: the slope of log|f(r +/- d)| against
   log d for d shrinking fourfold from the sample spacing (or 0.3 of the distance
   to the next feature) down to the noise level, rounded to the integer of the
   right parity (odd for a sign change, even for a touch), with no upper cap. When
   the slopes are not those of one power (an odd cluster of roots inside one sample
   spacing shows as one sign change), both sides of the refined root are searched
   for more roots.
6a. **Rounding noise**: f typed with cancellation (a polynomial written out with
   large integer coefficients) is noise near its roots, and noise changes sign at
   random. Findings close together (roots, "poles", "jumps", runs of exact zeros)
   are examined: where |f| stays within 8 standard deviations of f's own rounding
   noise (estimated from f itself, :func:`solvers.noise.noise_level`) on a stretch
   that overlaps several of them, they are one root cluster, reported once at the
   middle of the stretch with ``confirmed`` stating the stretch and the uncertainty,
   the multiplicity the slope of log|f| just outside supports (odd across a sign
   change), and the stretch in ``Scan.noise_bands``. A "noise level" above 1e-3 of
   f's typical sampled size is f itself, not rounding, and is never used.
7. **Domains**: runs of undefined samples are **gaps**; their edges are located
   by bisection. A domain edge where f tends to 0 (sqrt(x) at 0, sqrt(1 - x^2) at
   +/-1) is reported as a root at the last defined point (multiplicity 1,
   confirmed "domain edge"); one where |f| grows without bound (ln x at 0) is a
   pole; otherwise (arcsin at +/-1) it is only a gap end.
8. **Cross-check**, derivative (the default when ``fprime`` is given, see :func:`scan`):
   f' sampled with f. Between neighbouring samples of one sign of f across which f'
   changes sign toward zero lies an extremum that may hide two roots; where the secant
   slope lies between the two f' values (f' monotone there, as the mean value theorem
   demands) and the tangent lines at both samples meet above zero, f is convex there and
   cannot reach zero: proved root-free, no evaluation spent. Every other such pair goes
   to the touch search of step 4 (these extrema replace the sampled minima of |f| where
   f' is finite). Windows where f' contradicts f's differences are resampled (step 1);
   what is still unresolved at 64x is re-scanned with 64x the samples (as in 8a) and a
   warning says so.
8a. **Cross-check**, Chebyshev (the default without ``fprime``, or
   ``cross_check="chebyshev"``): the Chebyshev proxy rootfinder of
   :mod:`solvers.chebyshev` runs independently on the smooth parts. Roots both
   found list ``located_by=("sampling", "chebyshev")``; a proxy root the sampling
   missed is confirmed locally and added (``located_by=("chebyshev",)``) or, when it
   cannot be confirmed, reported in ``warnings``, as is a sampled root on a smooth
   piece the proxy did not see. Roots closer than 1e-4 of a piece's width are matched
   as one cluster (the proxy cannot separate them reliably): the cluster counts as
   located when the proxy has zeros within eps^(1/m) of it, m the cluster's total
   multiplicity. Where the proxy finds f not smooth and no pole, jump or gap
   explains it (typically an oscillation the sampling aliased), that part is
   re-scanned with 64x the samples (up to 2e6 samples in all) and a warning says so.
   A piece whose coefficients fall to f's noise floor counts as smooth (an expanded
   polynomial), so noise alone never triggers the re-scan.

``cancel()`` is polled on every f call once 20 ms of work went by since the last poll,
and between batches of the cross-check's eigenvalue work, so a cancel takes effect
within about that much work wherever the scan is.

f must take and return numpy arrays. It may return NaN/inf where it is undefined;
if it raises, the points are treated as undefined (evaluated one by one so the
defined ones survive). Floating-point warnings are suppressed during the scan.
"""

from __future__ import annotations

import bisect
import collections
import functools
import itertools
import math
import time
import warnings as _warnings
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from solvers.chebyshev import ChebyshevRoots, chebyshev_roots
from solvers.methods import brent
from solvers.noise import noise_level
from solvers.result import Run

__all__ = [
    "CHUNK",
    "DEFAULT_SAMPLES",
    "Root",
    "Scan",
    "ScanCancelled",
    "scan",
]

DEFAULT_SAMPLES = 2001  # base samples when ``samples`` is None (adaptive refinement on top)
CHUNK = 65536  # samples evaluated per f call in the sampling pass (bounds memory)
EPS = float(np.finfo(float).eps)
_WINDOW = 32  # samples per window in the oscillation check
_MAX_EXTREMA = 8  # more extrema of f per window than this: resample the window finer
_RESAMPLE = 8  # refinement factor for an under-resolved window
_MAX_LEVEL = 2  # at most 64x the base density
_POLL = 0.02  # seconds of work between two polls of cancel()


class ScanCancelled(Exception):
    """Raised by :func:`scan` when ``cancel()`` returned True."""


class _OnDemandRun:
    """``Root.run``: a :class:`Run`, or a zero-argument callable that makes one.

    A data descriptor used as the dataclass field's default (see "descriptor-typed
    fields" in the dataclasses documentation): the field is set as usual, but a
    callable stored there is called on first read and its Run kept. The scan refines
    all roots at once (vectorised); the per-root Brent record is only built for the
    roots somebody looks at.
    """

    def __set_name__(self, owner: type, name: str) -> None:
        self.slot = "_" + name

    def __get__(self, obj: object, objtype: type | None = None) -> Run | None:
        if obj is None:
            return None  # the field's default
        value = obj.__dict__.get(self.slot)
        if callable(value):
            value = value()
            obj.__dict__[self.slot] = value
        return value

    def __set__(self, obj: object, value: object) -> None:
        obj.__dict__[self.slot] = value

    def raw(self, obj: object) -> object:
        """The stored value without building the Run (to copy a Root cheaply)."""
        return obj.__dict__.get(self.slot)


@dataclass(frozen=True)
class Root:
    """One root of f. ``residual`` is f(x). ``confirmed`` says how it was confirmed,
    ``located_by`` which locator(s) found it ("sampling", "chebyshev"). ``bracket`` is the
    sign-change bracket between samples (None for touches and edges); ``run`` is the
    project's Brent (:func:`solvers.methods.brent`) on that bracket, built when first
    read (or Brent on f' for a touch), None when no Brent run belongs to the root."""

    x: float
    residual: float
    multiplicity: int = 1
    confirmed: str = ""
    located_by: tuple[str, ...] = ("sampling",)
    bracket: tuple[float, float] | None = None
    run: Run | None = _OnDemandRun()  # type: ignore[assignment]


def _relabel(r: Root, located_by: tuple[str, ...]) -> Root:
    """r with another ``located_by``, its on-demand Brent run left unbuilt."""
    return Root(r.x, r.residual, r.multiplicity, r.confirmed, located_by, r.bracket,
                Root.__dict__["run"].raw(r))


@dataclass(frozen=True)
class Scan:
    """Everything found on [a, b]. Lists are sorted by x.

    ``gaps``: (start, end) intervals where f is undefined (NaN), ends located to
    about one ulp. ``samples``: f evaluations in the sampling pass (base grid plus
    refined windows). ``cross_checked``: pieces where the Chebyshev proxy ran (f
    smooth there); ``chebyshev_roots``: the real zeros it located. ``noise_bands``:
    stretches where |f| is within its own rounding noise, each reported as one root
    cluster at its middle (x uncertain by the half-width). ``check``: the cross-check that
    ran ("derivative", "chebyshev" or "off"; see :func:`scan`).
    """

    a: float
    b: float
    roots: list[Root] = field(default_factory=list)
    poles: list[float] = field(default_factory=list)
    discontinuities: list[float] = field(default_factory=list)
    gaps: list[tuple[float, float]] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    samples: int = 0
    cross_checked: list[tuple[float, float]] = field(default_factory=list)
    chebyshev_roots: list[float] = field(default_factory=list)
    noise_bands: list[tuple[float, float]] = field(default_factory=list)
    check: str = "off"  # the cross-check that ran: "derivative", "chebyshev" or "off"


# ----------------------------------------------------------------------------- evaluation


def _as_real(y: object, shape: tuple[int, ...]) -> np.ndarray:
    arr = np.asarray(y)
    if np.iscomplexobj(arr):
        arr = np.where(arr.imag == 0, arr.real, np.nan)
    try:
        arr = np.asarray(arr, dtype=float)
    except (TypeError, ValueError):
        return np.full(shape, np.nan)
    if arr.shape != shape:
        try:
            arr = np.broadcast_to(arr, shape).copy()
        except ValueError:
            return np.full(shape, np.nan)
    return arr


class _Guarded:
    """f made total: arrays in, float arrays out, NaN where f raised or is complex."""

    def __init__(self, f: Callable, cancel: Callable[[], bool] | None):
        self.f = f
        self.cancel = cancel
        self.calls = 0
        self._polled = time.perf_counter()

    def check(self) -> None:
        if self.cancel is not None:
            self._polled = time.perf_counter()
            if self.cancel():
                raise ScanCancelled("scan cancelled")

    def poll(self) -> None:
        """``check`` when more than ``_POLL`` seconds of work went by since the last one:
        every f call polls, so a cancel takes effect within about that much work in any
        loop (sampling, refinement, cross-check) without asking ``cancel`` per iteration."""
        if self.cancel is not None and time.perf_counter() - self._polled > _POLL:
            self.check()

    def __call__(self, x: np.ndarray) -> np.ndarray:
        x = np.asarray(x, dtype=float)
        self.calls += 1
        self.poll()
        try:
            return _as_real(self.f(x), x.shape)
        except Exception:  # f raised: evaluate pointwise so the defined points survive
            out = np.full(x.shape, np.nan)
            flat = out.reshape(-1)
            for i, xi in enumerate(x.reshape(-1)):
                flat[i] = self.scalar(float(xi))
            return out

    def scalar(self, x: float) -> float:
        """f at one point as a float (NaN when undefined, complex or raising)."""
        self.poll()
        for arg in (x, None):
            try:
                y = self.f(x) if arg is not None else self.f(np.array([x]))
            except Exception:
                continue
            try:
                if np.iscomplexobj(y):
                    z = complex(np.asarray(y).reshape(-1)[0])
                    return z.real if z.imag == 0 else math.nan
                return float(np.asarray(y, dtype=float).reshape(-1)[0])
            except (TypeError, ValueError, IndexError):
                return math.nan
        return math.nan


# ----------------------------------------------------------------------------- sampling


@dataclass
class _Candidates:
    brackets: list[tuple[float, float, float, float]] = field(default_factory=list)
    # samples where f == 0: (x, odd by the neighbours, x left, x right, f left, f right)
    zeros: list[tuple[float, int, float, float, float, float]] = field(default_factory=list)
    minima: list[tuple[float, float, float, float, float, float]] = field(default_factory=list)
    peaks: list[tuple[float, float, float]] = field(default_factory=list)  # (lo, x, hi), |f|
    edges: list[tuple[float, float, int]] = field(default_factory=list)  # (undef x, def x, side)
    inf_points: list[float] = field(default_factory=list)
    # sign changes between a finite sample and an infinite one: (x finite, x inf, f finite)
    overflow: list[tuple[float, float, float]] = field(default_factory=list)
    flat: list[tuple[float, float]] = field(default_factory=list)
    first_defined: bool = True
    last_defined: bool = True
    unresolved: list[tuple[float, float]] = field(default_factory=list)
    samples: int = 0
    typical: list[float] = field(default_factory=list)  # median finite |f| of each chunk
    # f' sampled with f (derivative check): sample pairs of one sign of f across which f'
    # changes sign toward zero, not proved root-free; same layout as ``minima``
    extrema: list[tuple[float, float, float, float, float, float]] = field(default_factory=list)
    proved: int = 0  # extrema between samples proved root-free by the tangent bound


def _detect(x: np.ndarray, y: np.ndarray, lo: int, hi: int, out: _Candidates,
            yp: np.ndarray | None = None) -> None:
    """Append candidates whose anchor index i lies in [lo, hi) of the arrays x, y.

    Sign changes and edges are anchored at the left sample of the pair (i, i+1);
    zeros and minima at the centre sample i (which needs i-1 and i+1 to exist).
    Written as a few full passes over the chunk that select a handful of indices,
    then exact tests on those few (most samples are nothing).
    """
    n = len(x)
    if yp is not None:
        _detect_extrema(x, y, yp, lo, hi, out)
    allfin = bool(np.isfinite(y).all())
    last_pair = min(hi, n - 1)
    # sign changes: the sign bit flips between neighbours (zeros and non-finite filtered next)
    neg = np.signbit(y)
    for k in np.flatnonzero(neg[:-1] != neg[1:]):
        if lo <= k < last_pair:
            yl, yr = y[k], y[k + 1]
            # signs compared, not multiplied: a product of two tiny values underflows to 0
            if yl != 0 and yr != 0 and math.isfinite(yl) and math.isfinite(yr):
                out.brackets.append((float(x[k]), float(x[k + 1]), float(yl), float(yr)))
            elif yl != 0 and yr != 0 and math.isinf(yl) != math.isinf(yr):
                # f overflows on one side (x^2 far out, exp past 709.78): the root may lie
                # between the last finite value and the overflow
                fin, far = (k, k + 1) if math.isfinite(yl) else (k + 1, k)
                if not math.isnan(y[far]):
                    out.overflow.append((float(x[fin]), float(x[far]), float(y[fin])))
    if not allfin:
        dfn = ~np.isnan(y)  # defined (inf counts: a pole sits in the defined part)
        for k in np.flatnonzero(dfn[:-1] != dfn[1:]):
            if lo <= k < last_pair:
                if dfn[k]:
                    out.edges.append((float(x[k + 1]), float(x[k]), -1))  # defined on the left
                else:
                    out.edges.append((float(x[k]), float(x[k + 1]), +1))  # defined on the right
        for k in np.flatnonzero(np.isinf(y)):
            if max(lo, 1) <= k < last_pair and math.isfinite(y[k - 1]) and math.isfinite(y[k + 1]):
                out.inf_points.append(float(x[k]))
    zero_idx = np.flatnonzero(y == 0)
    for k in zero_idx:
        if max(lo, 1) <= k < last_pair and math.isfinite(y[k - 1]) and math.isfinite(y[k + 1]):
            if y[k - 1] == 0 or y[k + 1] == 0:
                out.flat.append((float(x[k - 1]), float(x[k + 1])))
            else:
                out.zeros.append((float(x[k]), 1 if (y[k - 1] < 0) != (y[k + 1] < 0) else 0,
                                  float(x[k - 1]), float(x[k + 1]), float(y[k - 1]),
                                  float(y[k + 1])))
    # local minima of |f| away from sign changes: |f| stops falling and starts rising
    if n < 3:
        return
    da = np.diff(np.abs(y))
    # sharp local maxima of |f| (a pole without a sign change, 1/(x-c)^2, ln|x-c|): at least
    # 10 % above the lower neighbour, where a resolved smooth peak is within a fraction of 1 %
    p = np.flatnonzero((da[:-1] >= 0) & (da[1:] <= 0)) + 1
    p = p[(p >= max(lo, 1)) & (p < last_pair)]
    if p.size:
        ap, al, ar = np.abs(y[p]), np.abs(y[p - 1]), np.abs(y[p + 1])
        sharp = np.isfinite(ap) & np.isfinite(al) & np.isfinite(ar)
        sp = np.sign(y[p])
        # ... or a kink: the second difference at the peak 8x one of those two samples away
        # (a pole riding on a large offset, 1/(x - c) - 1e6, bumps |f| by far less
        # than 10 %; a smooth peak's second differences vary slowly)
        d2 = np.abs(y[p - 1] - 2 * y[p] + y[p + 1])
        far_l = np.where(p >= 3, np.abs(y[np.maximum(p - 3, 0)] - 2 * y[p - 2] + y[p - 1]),
                         np.inf)
        ok_r = p + 3 < n
        far_r = np.where(ok_r, np.abs(y[np.minimum(p + 1, n - 1)]
                                      - 2 * y[np.minimum(p + 2, n - 1)]
                                      + y[np.minimum(p + 3, n - 1)]), np.inf)
        kink = (d2 > 8 * np.minimum(far_l, far_r)) & (d2 > 1e-9 * ap)
        sharp &= (ap > 0) & ((ap >= 1.1 * np.minimum(al, ar)) | kink)
        sharp &= (sp == np.sign(y[p - 1])) & (sp == np.sign(y[p + 1]))
        for kk in p[sharp]:
            out.peaks.append((float(x[kk - 1]), float(x[kk]), float(x[kk + 1])))
    k = np.flatnonzero((da[:-1] <= 0) & (da[1:] >= 0)) + 1
    k = k[(k >= max(lo, 1)) & (k < last_pair)]
    if k.size == 0:
        return
    yc, yl, yr = y[k], y[k - 1], y[k + 1]
    ac, al, ar = np.abs(yc), np.abs(yl), np.abs(yr)
    ok = np.isfinite(yc) & np.isfinite(yl) & np.isfinite(yr) & (yc != 0)
    sc = np.sign(yc)
    ok &= (sc == np.sign(yl)) & (sc == np.sign(yr)) & ((ac < al) | (ac < ar))
    k = k[ok]
    if k.size == 0:
        return
    # parabola through the three samples: keep if it dips at least 10% toward zero ...
    h1, h2 = x[k] - x[k - 1], x[k + 1] - x[k]
    sgn = np.sign(y[k])
    d1 = (sgn * y[k] - sgn * y[k - 1]) / h1
    d2 = (sgn * y[k + 1] - sgn * y[k]) / h2
    curv = (d2 - d1) / (0.5 * (h1 + h2))
    slope = 0.5 * (d1 + d2)
    with np.errstate(all="ignore"):
        vertex = sgn * y[k] - np.where(curv > 0, slope**2 / (2 * curv), np.inf)
    # ... or comes within its own curvature scale of zero (a near-double pair whose
    # sample sits almost on the dip looks like a touch that narrowly misses)
    keep = (vertex <= 0.9 * sgn * y[k]) | (vertex <= curv * h1 * h2)
    if yp is not None:
        # with f' sampled, the extrema between samples (:func:`_detect_extrema`) stand in for
        # these minima wherever f' is finite at all three samples
        keep &= ~(np.isfinite(yp[k - 1]) & np.isfinite(yp[k]) & np.isfinite(yp[k + 1]))
    for kk in k[keep]:
        out.minima.append(
            (float(x[kk - 1]), float(x[kk]), float(x[kk + 1]),
             float(y[kk - 1]), float(y[kk]), float(y[kk + 1]))
        )


def _detect_extrema(x: np.ndarray, y: np.ndarray, yp: np.ndarray, lo: int, hi: int,
                    out: _Candidates) -> None:
    """Extrema of f between neighbouring samples (anchored at the left one, in [lo, hi)).

    Two roots hidden between samples i and i+1 (f of one sign at both) need an extremum
    of f between them, where f' changes sign, moving toward zero: s f'_i < 0 < s f'_(i+1)
    with s the sign of f. Where f' is monotone between the samples (checked: the secant
    slope lies between f'_i and f'_(i+1), as the mean value theorem then demands), s f is
    convex there and lies above both tangent lines, so it cannot fall below the value
    where they meet: above zero means no root, proved. Every other such pair is a
    candidate for the touch search (appended to ``out.extrema``).
    """
    n = len(x)
    last_pair = min(hi, n - 1)
    if last_pair <= lo:
        return
    sl = slice(lo, last_pair)
    y0, y1, d0, d1 = y[lo:last_pair], y[lo + 1:last_pair + 1], yp[sl], yp[lo + 1:last_pair + 1]
    s = np.where(np.signbit(y0), -1.0, 1.0)
    k = np.flatnonzero((np.signbit(y0) == np.signbit(y1)) & (y0 != 0) & (y1 != 0)
                       & (s * d0 < 0) & (s * d1 > 0))
    if k.size == 0:
        return
    x0, x1 = x[lo:last_pair][k], x[lo + 1:last_pair + 1][k]
    s = s[k]
    u0, u1, p0, p1 = s * y0[k], s * y1[k], s * d0[k], s * d1[k]  # u > 0, p0 < 0 < p1
    h = x1 - x0
    with np.errstate(all="ignore"):
        secant = (u1 - u0) / h
        # tangent lines u0 + p0 (t - x0) and u1 + p1 (t - x1) meet at t*
        t = (u1 - u0 - p1 * h) / (p0 - p1)  # distance of t* from x0 (in [0, h] when convex)
        bound = u0 + p0 * t
    slack = 64 * EPS * (np.abs(p0) + np.abs(p1))
    convex = (secant >= p0 - slack) & (secant <= p1 + slack)
    margin = 1e3 * EPS * np.maximum(u0, u1)  # rounding of the values themselves
    safe = convex & np.isfinite(bound) & (bound > margin)
    out.proved += int(safe.sum())
    for i in np.flatnonzero(~safe):
        out.extrema.append((float(x0[i]), float(x0[i]), float(x1[i]),
                            float(s[i] * u0[i]), float(s[i] * u0[i]), float(s[i] * u1[i])))


def _underresolved(y: np.ndarray, x: np.ndarray | None = None,
                   yp: np.ndarray | None = None) -> np.ndarray:
    """Indices of windows (of _WINDOW samples) where f has too many extrema, or (with f'
    sampled too) where f' contradicts the differences of f (:func:`_inconsistent`)."""
    n = len(y)
    if n < 3 * _WINDOW:
        return np.zeros(0, dtype=int)
    d = np.signbit(np.diff(y))
    turn = d[1:] != d[:-1]
    nwin = (len(turn)) // _WINDOW
    counts = turn[: nwin * _WINDOW].reshape(nwin, _WINDOW).sum(axis=1)
    bad = np.flatnonzero(counts > _MAX_EXTREMA)
    if yp is not None and x is not None:
        # (the last, partial window too: pair i lies in window i // _WINDOW)
        pairs = np.flatnonzero(_inconsistent(x, y, yp)) // _WINDOW
        if pairs.size:
            bad = np.union1d(bad, pairs)
    return bad


_TRAPEZOID = 0.5  # f' may disagree with f's differences by this fraction before a resample


def _inconsistent(x: np.ndarray, y: np.ndarray, yp: np.ndarray) -> np.ndarray:
    """Per sample pair (i, i+1): f' contradicts f's difference (aliasing).

    The trapezoid rule on f', h (f'_i + f'_(i+1)) / 2, predicts f_(i+1) - f_i to a relative
    (h omega)^2 / 12 for an oscillation of angular frequency omega (0.05 at 8 samples per
    period). An error above half of the change's own scale, |f_(i+1) - f_i| + h (|f'_i| +
    |f'_(i+1)|) / 2, plus 1e3 eps of |f| for rounding, means f changes faster than the
    sampling resolves: an oscillation aliased into a slow-looking curve. Pairs with a
    non-finite value are left to the other checks.
    """
    h = np.diff(x)
    dy = np.diff(y)
    avg = 0.5 * h * (yp[:-1] + yp[1:])
    scale_ = np.abs(dy) + 0.5 * h * (np.abs(yp[:-1]) + np.abs(yp[1:]))
    allow = _TRAPEZOID * scale_ + 1e3 * EPS * (np.abs(y[:-1]) + np.abs(y[1:]))
    return np.abs(dy - avg) > allow  # NaN compares False


def _sample_grid(
    g: _Guarded,
    a: float,
    b: float,
    n: int,
    out: _Candidates,
    level: int,
    progress: Callable[[float], None] | None,
    frac: tuple[float, float],
    gp: _Guarded | None = None,
) -> None:
    """Sample n equally spaced points on [a, b] in chunks and collect candidates.

    With ``gp`` (the derivative check) f' is sampled on the same points (one more
    vectorised call per chunk): windows where f' contradicts f's differences are
    resampled like windows with too many extrema, and extrema of f between samples are
    collected (:func:`_detect_extrema`).
    """
    h = (b - a) / (n - 1)
    start = 0
    while start < n:
        g.check()
        stop = min(n, start + CHUNK)
        lo_idx, hi_idx = max(start - 1, 0), min(stop + 1, n)
        idx = np.arange(lo_idx, hi_idx)
        x = a + idx * h
        if hi_idx == n:
            x[-1] = b
        y = g(x)
        yp = gp(x) if gp is not None else None
        out.samples += stop - start
        if level == 0:
            finite = np.abs(y[np.isfinite(y)])
            if finite.size:  # (the median, by partition: np.median's overhead is larger)
                half = finite.size // 2
                part = np.partition(finite, (half - 1, half) if finite.size % 2 == 0 else half)
                out.typical.append(float(part[half] if finite.size % 2
                                         else 0.5 * (part[half - 1] + part[half])))
        if start == 0:
            out.first_defined = not bool(np.isnan(y[0]))
        if stop == n:
            out.last_defined = not bool(np.isnan(y[-1]))
        offset = start - lo_idx
        windows = _underresolved(y, x, yp) if level < _MAX_LEVEL else np.zeros(0, dtype=int)
        if len(windows):
            # resample under-resolved windows finer; detect outside them on this grid
            spans = []
            for w in windows:
                w0, w1 = w * _WINDOW, (w + 1) * _WINDOW + 1
                if spans and spans[-1][1] >= w0:
                    spans[-1] = (spans[-1][0], w1)
                else:
                    spans.append((w0, w1))
            cursor = offset
            for w0, w1 in spans:
                w0c, w1c = max(w0, offset), min(w1, offset + stop - start + 1, len(x) - 1)
                if w0c >= w1c:
                    continue
                if cursor < w0c:
                    _detect(x, y, cursor, w0c, out, yp)
                sub_n = (w1c - w0c) * _RESAMPLE + 1
                _sample_grid(g, float(x[w0c]), float(x[w1c]), sub_n, out, level + 1, None, frac,
                             gp)
                cursor = w1c
            if cursor < offset + (stop - start):
                _detect(x, y, cursor, offset + (stop - start), out, yp)
        else:
            _detect(x, y, offset, offset + (stop - start), out, yp)
            if level == _MAX_LEVEL and len(_underresolved(y, x, yp)) > 0:
                out.unresolved.append((float(x[0]), float(x[-1])))
        if progress is not None:
            progress(frac[0] + (frac[1] - frac[0]) * stop / n)
        start = stop


# ----------------------------------------------------------------------------- classification

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
    lo_out, hi_out = br[:, 0].astype(float).copy(), br[:, 1].astype(float).copy()
    flo_out, fhi_out = br[:, 2].astype(float).copy(), br[:, 3].astype(float).copy()
    done = np.zeros(count, dtype=bool)
    # working copies of the brackets still shrinking (compressed as brackets finish)
    idx = np.arange(count)
    lo, hi, flo, fhi = lo_out.copy(), hi_out.copy(), flo_out.copy(), fhi_out.copy()
    wlo, whi = flo.copy(), fhi.copy()  # false-position weights (scaled f at held ends)
    prev_lo = np.zeros(count, dtype=np.int8) - 1  # end replaced last: 1 lo, 0 hi, -1 none
    w1 = np.full(count, np.inf)  # bracket widths one, two and three iterations back
    w2, w3 = w1.copy(), w1.copy()
    for it in range(max_iter + 1):
        width = hi - lo
        tol = xtol + _RTOL * np.maximum(np.abs(lo), np.abs(hi))
        finished = width <= tol
        if finished.any():
            k = idx[finished]
            done[k] = True
            lo_out[k], hi_out[k], flo_out[k], fhi_out[k] = (lo[finished], hi[finished],
                                                            flo[finished], fhi[finished])
            keep = ~finished
            idx, lo, hi, flo, fhi, wlo, whi, prev_lo, w1, w2, w3, width, tol = (
                v[keep] for v in (idx, lo, hi, flo, fhi, wlo, whi, prev_lo, w1, w2, w3, width,
                                  tol))
        if idx.size == 0 or it == max_iter:
            break
        if it % 4 == 0:
            g.check()
        # where the chord through the weighted ends meets zero (t in [0, 1] as the weights
        # have opposite signs; NaN from underflowed weights is caught by fmax below)
        t = np.where(width > 0.5 * w3, 0.5, wlo / (wlo - whi))
        half = 0.5 * tol
        x = np.fmin(np.fmax(lo + t * width, lo + half), hi - half)
        fx = g(x)
        w3, w2, w1 = w2, w1, width
        regular = np.isfinite(fx) & (fx != 0)
        if not regular.all():
            zero = fx == 0
            k = idx[zero]
            done[k] = True
            lo_out[k] = hi_out[k] = x[zero]
            flo_out[k] = fhi_out[k] = 0.0
            # NaN/inf inside: a pole or a hole, left (not done) for _classify to decide
            idx, lo, hi, flo, fhi, wlo, whi, prev_lo, w1, w2, w3, x, fx = (
                v[regular] for v in (idx, lo, hi, flo, fhi, wlo, whi, prev_lo, w1, w2, w3, x,
                                     fx))
        on_lo = np.signbit(fx) == np.signbit(flo)  # x replaces lo; hi is held
        # Anderson–Björck: the end held for the second time running is weighted by
        # m = 1 - f(x)/f(previous iterate), or 1/2 when m <= 0 (the Illinois factor)
        m = 1.0 - fx / np.where(on_lo, flo, fhi)
        m = np.where(prev_lo == on_lo, np.where(m > 0, m, 0.5), 1.0)
        wlo, whi = np.where(on_lo, fx, wlo * m), np.where(on_lo, whi * m, fx)
        lo, hi = np.where(on_lo, x, lo), np.where(on_lo, hi, x)
        flo, fhi = np.where(on_lo, fx, flo), np.where(on_lo, fhi, fx)
        prev_lo = on_lo.view(np.int8)
    return done, lo_out, hi_out, flo_out, fhi_out


def _resolve_brackets(g: _Guarded, gp: _Guarded | None, br: np.ndarray, xtol: float):
    """Roots, poles and jumps of sign-change brackets (rows lo, hi, f(lo), f(hi)).

    All brackets are refined at once by :func:`_bracket_all`; a converged bracket whose
    ends' |f| fell to 1e-6 of the sampled |f| is a root (the end of smaller |f|, then one
    vectorised Newton step with f' where that lowers |f|). Every other bracket (|f| not
    falling: a pole or a jump; NaN inside; no convergence) is decided by
    :func:`_classify` from its original ends, as before. Returns (found, poles, jumps,
    undefined) with ``undefined`` the rows whose inside is partly undefined.
    """
    done, lo, hi, flo, fhi = _bracket_all(g, br, xtol)
    g0 = np.maximum(np.abs(br[:, 2]), np.abs(br[:, 3]))
    root = done & (np.maximum(np.abs(flo), np.abs(fhi)) <= 1e-6 * g0)
    x = np.where(np.abs(flo) <= np.abs(fhi), lo, hi)
    how = np.full(len(br), "sign change, Anderson-Bjorck bracketing", dtype=object)
    how[root & (lo == hi)] = "sign change; f exactly zero at an iterate"
    if gp is not None and root.any():
        ir = np.flatnonzero(root & (lo != hi))
        xr = x[ir]
        fx, dfx = g(xr), gp(xr)
        with np.errstate(all="ignore"):
            xn = xr - fx / dfx
        ok = np.isfinite(dfx) & (dfx != 0) & np.isfinite(fx) & (fx != 0)
        ok &= (lo[ir] <= xn) & (xn <= hi[ir])
        if ok.any():
            better = np.zeros(len(ir), dtype=bool)
            better[ok] = np.abs(g(xn[ok])) < np.abs(fx[ok])
            x[ir[better]] = xn[better]
            how[ir[better]] = how[ir[better]] + ", Newton polish with f'"
    ir = np.flatnonzero(root)
    # (plain Python lists: indexing numpy arrays per root costs more than the roots' records)
    found = [
        _Found(xi, True, hw, bracket=(b0, b1), run=functools.partial(_brent_record, g, row, xtol))
        for xi, hw, b0, b1, row in zip(x[ir].tolist(), how[ir].tolist(), br[ir, 0].tolist(),
                                       br[ir, 1].tolist(), br[ir], strict=True)
    ]
    poles: list[float] = []
    jumps: list[float] = []
    undefined: list[int] = []
    rest = np.flatnonzero(~root)
    if rest.size:
        kind, clo, chi, cflo, cfhi = _classify(g, br[rest], xtol)
        for j, i in enumerate(rest):
            if kind[j] == _ROOT:  # (|f| fell, but the fast iteration met NaN on the way)
                found.append(_refine(g, gp, br[i], clo[j], chi[j], cflo[j], cfhi[j], xtol))
            elif kind[j] == _POLE:
                poles.append(float(0.5 * (clo[j] + chi[j])))
            elif kind[j] == _JUMP:
                jumps.append(float(0.5 * (clo[j] + chi[j])))
            else:
                undefined.append(int(i))
    return found, poles, jumps, undefined


def _brent_record(g: _Guarded, row: np.ndarray, xtol: float) -> Run | None:
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


def _convex_floor(lo, c, d, hi, flo, fc, fd, fhi) -> np.ndarray:
    """Least value a convex function through the four points lo < c < d < hi can take on
    [lo, hi] (-inf where the four values are not convex: slopes must not decrease).

    A convex function lies above every chord's extension beyond the chord: on [lo, c] and
    [d, hi] above the line through c and d, on [c, d] above both the line through lo, c
    and the one through d, hi (their meeting point, or an end of [c, d]).
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
    return np.where(convex & np.isfinite(low), low, -np.inf)


def _golden(g: _Guarded, lo: np.ndarray, hi: np.ndarray, sign: np.ndarray, xtol: float,
            *, peak: bool = False, rel: float = 4 * EPS,
            ends: tuple[np.ndarray, np.ndarray] | None = None,
            positive: np.ndarray | None = None):
    """Vectorised golden-section minimisation of sign*f on each [lo, hi].

    Returns (xbest, fbest, crossed) where crossed marks searches that met a value of the
    opposite sign (then xbest is that point: two roots straddle it). With ``peak`` it
    maximises |f| instead (fbest is then -|f|, and nothing is ever "crossed"); a search
    that meets inf or NaN stops there. It stops when the bracket is no wider than
    ``rel max(|lo|, |hi|) + xtol``. With ``ends`` (sign*f at lo and hi) a search also stops
    once sign*f is convex through the bracket's four points and its convex floor
    (:func:`_convex_floor`) stays above half the least value found: a positive minimum,
    marked True in ``positive`` (a bool array of the rows' length, filled in place).
    """

    def objective(v: np.ndarray, s: np.ndarray) -> np.ndarray:
        return -np.abs(g(v)) if peak else s * g(v)

    r = (math.sqrt(5) - 1) / 2
    lo, hi = lo.copy(), hi.copy()
    c = hi - r * (hi - lo)
    d = lo + r * (hi - lo)
    fc, fd = objective(c, sign), objective(d, sign)
    xbest = np.where(fc <= fd, c, d)
    fbest = np.minimum(fc, fd)
    crossed = (fbest < 0) if not peak else np.zeros(len(lo), dtype=bool)
    active = ~crossed & np.isfinite(fbest)
    if ends is not None:
        flo, fhi = ends[0].astype(float).copy(), ends[1].astype(float).copy()
    for _ in range(120):
        act = np.nonzero(active)[0]
        if len(act) == 0:
            break
        g.check()
        if ends is not None and positive is not None:
            floor = _convex_floor(lo[act], c[act], d[act], hi[act], flo[act], fc[act],
                                  fd[act], fhi[act])
            sure = floor > 0.5 * fbest[act]
            if sure.any():
                positive[act[sure]] = True
                active[act[sure]] = False
                act = act[~sure]
                if act.size == 0:
                    break
        left = fc[act] <= fd[act]  # minimum in [lo, d]
        il, ir = act[left], act[~left]
        if ends is not None:
            fhi[il], flo[ir] = fd[il], fc[ir]
        hi[il], d[il], fd[il] = d[il], c[il], fc[il]
        c[il] = hi[il] - r * (hi[il] - lo[il])
        lo[ir], c[ir], fc[ir] = c[ir], d[ir], fd[ir]
        d[ir] = lo[ir] + r * (hi[ir] - lo[ir])
        newx = np.empty(len(act))
        newx[left] = c[il]
        newx[~left] = d[ir]
        fn = objective(newx, sign[act])
        fc[il] = fn[left]
        fd[ir] = fn[~left]
        better = fn < fbest[act]
        xbest[act[better]] = newx[better]
        fbest[act[better]] = fn[better]
        if not peak:
            crossed[act] |= fn < 0
        width = hi[act] - lo[act]
        stop = (
            crossed[act]
            | ~np.isfinite(fn)
            | ~np.isfinite(fbest[act])
            | (width <= rel * np.maximum(np.abs(lo[act]), np.abs(hi[act])) + xtol)
        )
        active[act[stop]] = False
    return xbest, sign * fbest, crossed


_SQRT_EPS = math.sqrt(EPS)


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
        vertex = sfb - (sfr - sfl) ** 2 / (8 * curv)
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
    """Standard deviation of f's rounding noise at each x (:func:`solvers.noise.noise_level`),
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


def _multiplicity(
    g: _Guarded, x: np.ndarray, reach: np.ndarray, odd: np.ndarray, scale: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Integer m with f ~ c (x - r)^m near each root, parity forced by ``odd``; the
    spread of the local slopes (large when other roots hide within the probed distance);
    and f at each root (the residual).

    |f(r +/- d)| at d = reach * 4^-j (j = 0..10); the local slope of log|f| against
    log d, taken from the four smallest d still 1000x above the rounding floor (the
    largest |f| within a few ulps of r). All points go to f in one call.
    """
    if len(x) == 0:
        return np.zeros(0, dtype=int), np.zeros(0), np.zeros(0)
    j = np.arange(11)
    d = reach[:, None] * 4.0 ** (-j[None, :])
    step = 2 * EPS * np.maximum(np.abs(x), scale)
    ulps = x[:, None] + step[:, None] * np.array([-3, -2, -1, 0, 1, 2, 3], dtype=float)
    pts = np.concatenate([x[:, None] + d, x[:, None] - d, ulps], axis=1)
    vals = g(pts.reshape(-1)).reshape(pts.shape)
    near = vals[:, 2 * len(j):]
    vals = np.abs(vals[:, : 2 * len(j)])
    fp, fm = vals[:, : len(j)], vals[:, len(j):]
    floor = np.nanmax(np.abs(near), axis=1)
    valid = (np.minimum(fp, fm) > 1e3 * floor[:, None]) & np.isfinite(fp) & np.isfinite(fm)
    logf = 0.5 * (np.log(fp) + np.log(fm))
    slopes = (logf[:, :-1] - logf[:, 1:]) / math.log(4.0)
    pair = valid[:, :-1] & valid[:, 1:]
    # the last four usable slopes of each row (smallest distances above the floor)
    rank = np.cumsum(pair[:, ::-1], axis=1)[:, ::-1]
    last4 = pair & (rank <= 4)
    ordered = np.sort(np.where(last4, slopes, np.inf), axis=1)
    count = last4.sum(axis=1)
    lo_i = np.maximum(count - 1, 0)[:, None] // 2
    hi_i = count[:, None] // 2
    with np.errstate(all="ignore"):
        est = 0.5 * (np.take_along_axis(ordered, lo_i, axis=1)
                     + np.take_along_axis(ordered, np.minimum(hi_i, ordered.shape[1] - 1),
                                          axis=1))[:, 0]
    est = np.where((count > 0) & np.isfinite(est), est, np.where(odd, 1.0, 2.0))
    m = np.maximum(1, np.rint(est)).astype(int)
    wrong = (m % 2 == 1) != odd
    m = np.where(wrong, np.where((est >= m) | (m == 1), m + 1, m - 1), m)
    m = np.maximum(m, np.where(odd, 1, 2))
    with np.errstate(all="ignore"):
        spread = (np.max(np.where(pair, slopes, -np.inf), axis=1)
                  - np.min(np.where(pair, slopes, np.inf), axis=1))
    return m, np.where(pair.sum(axis=1) >= 2, spread, 0.0), near[:, 3]


# ----------------------------------------------------------------------------- the scan


@dataclass
class _Found:
    x: float
    odd: bool
    how: str
    bracket: tuple[float, float] | None = None
    run: Run | Callable[[], Run] | None = None  # a callable: Root.run built on demand
    located_by: tuple[str, ...] = ("sampling",)


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
    Roots are refined, all brackets at once, to Brent's stop rule with rtol = 4 eps
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
      above zero) or searched, so hidden close pairs and touches are found; grid windows
      where f's differences disagree with f' (trapezoid rule off by more than half:
      an oscillation aliased by the sampling) are resampled up to 64x finer, and what is
      still unresolved then is re-scanned with 64x the samples, with a warning. Not covered: a feature narrower than a sample
      spacing that leaves neither f nor f' changed at any sample (a spike between samples).
    - ``"chebyshev"`` / ``"deep"``: the Chebyshev proxy rootfinder runs independently on
      the smooth pieces (module docstring, step 8); parts where it finds f not smooth for
      no known reason are re-scanned with 64x the samples. Also covers a spike between
      samples wherever the proxy resolves it; costs eigenvalue work (several times the
      sampling). With ``fprime`` the derivative check runs as well.
    - ``False`` / ``"off"``: sampling alone (sampled minima of |f| still catch touches and
      close pairs the sampling shows).

    Raises ValueError (one line) for a bad range, sample count or ``cross_check`` value
    (``"derivative"`` without ``fprime``); never raises because f misbehaves. See the
    module docstring for the classification rules.
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
    notes: list[str] = []
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
        fk = np.abs(g(pk[:, 1]))
        # a maximum is located only to sqrt(eps) too; where |f| still changes across that
        # width (a pole there, not a flat smooth peak) the search goes on down to 4 eps,
        # where the growth test needs to stand next to it
        xb, fb, _ = _golden(g, pk[:, 0], pk[:, 2], np.ones(len(pk)), xtol, peak=True,
                            rel=_SQRT_EPS)
        w = np.maximum(_SQRT_EPS * np.abs(xb), xtol)
        side = np.abs(g(np.concatenate([xb - w, xb + w]))).reshape(2, -1)
        change = np.max(np.abs(side - np.abs(fb)), axis=0)
        follow = np.flatnonzero(np.isfinite(fb) & ~(change <= 1e-6 * np.abs(fb)))
        if follow.size:
            wf = w[follow]
            lo_f = np.maximum(xb[follow] - 2 * wf, pk[follow, 0])
            hi_f = np.minimum(xb[follow] + 2 * wf, pk[follow, 2])
            x2, f2, _ = _golden(g, lo_f, hi_f, np.ones(follow.size), xtol, peak=True)
            better = ~np.isfinite(f2) | (np.abs(f2) >= np.abs(fb[follow]))
            xb[follow[better]], fb[follow[better]] = x2[better], f2[better]
        top = np.abs(fb)
        grows = (top >= 2.0 * fk) & np.isfinite(fb)
        unbounded = ~np.isfinite(fb)
        if grows.any():
            unbounded[grows] = _grows_without_bound(g, xb[grows], h)
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
        notes.append(f"more than {MAX_ROOTS} sign changes in [{a:.6g}, {b:.6g}]: roots refined "
                     f"only up to x = {cut:.6g}; scan a narrower range for the rest")
    if brackets:
        br = np.array(brackets, dtype=float)
        roots_here, poles_here, jumps_here, undefined = _resolve_brackets(g, gp, br, xtol)
        found += roots_here
        if poles_here:
            # a bracket whose |f| grew while bisected is a pole only if |f| keeps growing
            # right up to it; a bounded oscillation (sin(1/x) near 0) only looked like one
            ph = np.array(poles_here)
            real = _grows_without_bound(g, ph, h)
            poles += [float(p) for p in ph[real]]
            bounded += [float(p) for p in ph[~real]]
        jumps += jumps_here
        for i in undefined:
            notes.append(f"f undefined somewhere inside [{br[i, 0]:.6g}, {br[i, 1]:.6g}] "
                         "between two samples of opposite sign")
    gaps, edge_roots, edge_poles = _domains(g, cand, a, b, h, xtol, scale)
    found.extend(edge_roots)
    poles.extend(edge_poles)
    if poles:
        found += _beside_poles(g, gp, _dedupe_points(poles, scale), a, b, h, xtol, notes)

    flagged: list[int] = []
    roots = _finish(g, found, poles, jumps, gaps, h, scale, flagged)
    hidden = _hidden_roots(g, gp, [roots[i] for i in flagged], xtol)
    if hidden:
        roots = _finish(g, found + hidden, poles, jumps, gaps, h, scale)
    # rounding noise: sign changes, touches, "poles", "jumps" and zero runs that are one
    # root cluster of a function evaluated with cancellation become that one root
    poles, jumps = _dedupe_points(poles, scale), _dedupe_points(jumps, scale)
    typical = float(np.median(cand.typical)) if cand.typical else 0.0
    unsure = np.zeros(len(roots), dtype=bool)
    unsure[[i for i in flagged if i < len(roots)]] = True
    roots, poles, jumps, runs, bands = _noise_clusters(g, roots, poles, jumps, runs, notes, a,
                                                       b, scale, typical, h, unsure)
    for u, v in runs:
        notes.append(f"f is exactly zero at consecutive samples in [{u:.6g}, {v:.6g}]; "
                     "not counted as isolated roots")
    for p in bounded:
        if not any(u <= p <= v for u, v in bands):
            notes.append(f"f oscillates, bounded, ever faster near x = {p:.12g}: a sign "
                         "change there was not resolved into roots (no pole)")
    unresolved = [(u, v) for u, v in _merge_spans(cand.unresolved)
                  if not any(p <= u and v <= q for p, q in bands)]  # (noise: no oscillation)
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
            notes.append(f"f oscillates faster than 64x the sampling on [{u:.6g}, {v:.6g}]; "
                         "roots there may be missed: raise samples")

    cheb: ChebyshevRoots | None = None
    if cross_check:
        g.check()
        if progress is not None:
            progress(0.9)
        # the simple roots found so far let the proxy skip eigenvalue work where it provably
        # has exactly those zeros (chebyshev._certify); it still locates everything else
        simple = np.array(sorted(r.x for r in roots if r.multiplicity == 1), dtype=float)
        cheb = chebyshev_roots(g, a, b, max_pieces=min(max(256, n // 8), 4096), cancel=cancel,
                               on_cancel=g.check, noise=lambda x: _sigma(g, x, scale),
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
            notes.append(f"cross-check: f is not smooth enough for the Chebyshev proxy on "
                         f"{len(rough)} interval(s) in [{rough[0][0]:.6g}, {rough[-1][1]:.6g}] "
                         "that no pole, jump or gap explains (rough f, or oscillation faster "
                         "than the sampling): roots there rest on sampling alone")
    if progress is not None:
        progress(1.0)
    return Scan(
        a=a,
        b=b,
        roots=roots,
        poles=sorted(_dedupe_points(poles, scale)),
        discontinuities=sorted(_dedupe_points(jumps, scale)),
        gaps=gaps,
        warnings=notes,
        samples=cand.samples + extra_samples,
        cross_checked=[(p.a, p.b) for p in cheb.pieces] if cheb else [],
        chebyshev_roots=list(cheb.roots) if cheb else [],
        noise_bands=bands,
        check=mode,
    )


_RESAMPLE_BUDGET = 2_000_000  # samples spent re-scanning parts the cross-check could not resolve
MAX_ROOTS = 100_000  # sign changes refined by one scan: beyond that, a narrower range is needed


_RESCAN_WHY = {  # what made a re-scan necessary, by cross-check mode
    "chebyshev": "cross-check: f not smooth enough for the Chebyshev proxy",
    "derivative": "f oscillates faster than 64x the sampling (f' contradicts f's differences)",
}


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
        notes.extend(sub.warnings)
        done.append((u, v))
    left = [span for span in rough if span not in done]
    why = _RESCAN_WHY[mode]
    if done:
        notes.append(f"{why} on {len(done)} interval(s) in [{done[0][0]:.6g}, "
                     f"{done[-1][1]:.6g}]; re-scanned there with 64x the samples")
    if left:
        notes.append(f"{why} on {len(left)} interval(s) in [{left[0][0]:.6g}, "
                     f"{left[-1][1]:.6g}], beyond the re-scan budget: roots there rest on "
                     "sampling alone; raise samples")
    merged.sort(key=lambda r: r.x)
    out: list[Root] = []
    for r in merged:
        if out and abs(r.x - out[-1].x) <= 1e3 * EPS * max(abs(r.x), 1e-3 * scale):
            if "chebyshev" in r.located_by and "chebyshev" not in out[-1].located_by:
                out[-1] = r
            continue
        out.append(r)
    return out, spent


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
        found.append(_Found(float(x0[i]), odd, "f exactly zero at a sample"))
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


def _refine(g, gp, row, lo, hi, flo, fhi, xtol) -> _Found:
    """Brent from the narrowed bracket, then a Newton step with f' if it helps."""
    bracket = (float(row[0]), float(row[1]))
    if lo == hi:
        return _Found(float(lo), True, "sign change; f exactly zero at a bisection point",
                      bracket=bracket)
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
    how = "sign change, Brent" + ("" if run is None or run.converged
                                  else f" (stopped: {run.reason})")
    if not (lo <= x <= hi) or not math.isfinite(x):
        x = float(lo if abs(flo) <= abs(fhi) else hi)
        how = "sign change, bisection (Brent left the bracket)"
    if gp is not None:
        fx, dfx = g.scalar(x), gp.scalar(x)
        if math.isfinite(dfx) and dfx != 0 and math.isfinite(fx) and fx != 0:
            xn = x - fx / dfx
            if lo <= xn <= hi and abs(g.scalar(xn)) < abs(fx):
                x, how = xn, how + ", Newton polish with f'"
    return _Found(x, True, how, bracket=bracket, run=run)


def _touch(g, gp, lo, hi, xm, xtol) -> _Found:
    """A confirmed touch at xm; with f' refine the extremum by bracketing f'.

    The bracketing is the scan's own vectorised Anderson-Bjorck (:func:`_bracket_all`):
    its interpolation uses only ratios of f' values, so it is scale-free (f' of x^8 near 0
    underflows gracefully instead of dividing by zero).
    """
    how = "touch: |f| minimum (golden section) at noise level"
    if gp is not None:
        dl, dr = gp.scalar(lo), gp.scalar(hi)
        if math.isfinite(dl) and math.isfinite(dr) and dl != 0 and dr != 0 and (dl < 0) != (dr < 0):
            row = np.array([[float(lo), float(hi), dl, dr]])
            done, blo, bhi, bflo, bfhi = _bracket_all(gp, row, xtol)
            xr = float(blo[0] if abs(bflo[0]) <= abs(bfhi[0]) else bhi[0])
            level = max(abs(g.scalar(xm)), 16 * float(_noise(g, np.array([xr]), EPS)[0]))
            if done[0] and lo <= xr <= hi and abs(g.scalar(xr)) <= level:
                return _Found(xr, False, "touch: f' sign change, bracketing on f'; |f| at noise "
                              "level", run=functools.partial(_safe_brent, gp.scalar, float(lo),
                                                             float(hi), xtol))
    return _Found(xm, False, how)


def _safe_brent(fn, lo: float, hi: float, xtol: float) -> Run | None:
    """The project's Brent as a record of a root already located; None if it raised."""
    try:
        return brent(fn, lo, hi, xtol=xtol, rtol=4 * EPS, ftol=0.0, max_iter=200)
    except ArithmeticError:
        return None


def _range_ends(g, a, b, h, xtol, scale, brackets: list) -> list[_Found]:
    """Roots sitting at (or within a sample of) the range ends without a sign change.

    A sign change hidden between an end and its neighbouring sample (two roots closer to
    the end than the sample spacing) is split at the |f| minimum into two brackets,
    appended to ``brackets`` for the common refinement.
    """
    out = []
    for end, inner, side in ((a, a + h, +1), (b, b - h, -1)):
        fe, fi = g.scalar(end), g.scalar(inner)
        if not (math.isfinite(fe) and math.isfinite(fi)):
            continue
        if fe == 0:
            if fi != 0:  # (f zero on a whole stretch is reported as such, not as a root)
                # parity from the mirror point outside the range, where f is defined there:
                # x^2 at 0 is a touch (even), sin x at 0 a crossing (odd)
                fo = g.scalar(2 * end - inner)
                odd = not (math.isfinite(fo) and fo != 0) or (fo < 0) != (fi < 0)
                out.append(_Found(end, odd, "f exactly zero at the range end"))
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
            out.append(_Found(end, True, "range end: |f| at noise level"))
        elif _at_noise(g, xb, fb, xtol, scale)[0]:
            out.append(_Found(float(xb[0]), False, "touch: |f| minimum (golden section) at noise "
                              "level"))
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
            roots.append(_Found(float(dfd[i]), True, "domain edge: f = 0 at the last defined point",
                                located_by=("sampling",)))
            continue
        if len(seq) < 4:
            continue
        falling = np.all(np.diff(seq[-10:]) <= 0)
        rising = np.all(np.diff(seq[-10:]) >= 0)
        if falling and abs(fd[i]) <= 1e-3 * seq[0]:
            roots.append(_Found(float(dfd[i]), True,
                                "domain edge: f -> 0 at the last defined point"))
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
                  xtol: float, notes: list[str]) -> list[_Found]:
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
                notes.append(f"beside the pole at x = {pv[i]:.12g}, |f| dips to "
                             f"{ay[dips + 1].min():.3g} within {float(abs(x[0] - pv[i])):.3g} "
                             "without a sign change: a pair of roots may hide there")
    if not brackets:
        return []
    return _resolve_brackets(g, gp, np.array(brackets, dtype=float), xtol)[0]


def _grows_without_bound(g: _Guarded, xp: np.ndarray, h: float) -> np.ndarray:
    """Whether |f| keeps growing toward each located peak xp (a pole), or levels off (a
    bounded peak that only outgrew the samples, like sin(1/x) near 0).

    |f(xp +/- d)| for d halving 20 times down to 64 ulps of xp (so the probes resolve the
    last doublings before float resolution): a pole grows steadily on at least one side
    (monotone, the last value at least 1.2x the first: ln|x - c| gains about 1.7x over
    those halvings near x = 1, 1/(x - c)^2 10^12x); a bounded smooth peak changes by a
    relative (d / its width)^2 there, nothing.
    """
    k = np.arange(21)
    least = 64 * EPS * np.maximum(np.abs(xp), EPS * h)
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


def _finish(g, found: list[_Found], poles, jumps, gaps, h, scale, flags=None) -> list[Root]:
    """Deduplicate, estimate multiplicities, evaluate residuals, sort.

    ``flags``, when a list, receives the indices of roots whose local slopes are not
    consistent with one c (x - r)^m (more roots may hide within a sample spacing).
    """
    found = sorted((r for r in found if math.isfinite(r.x)), key=lambda r: r.x)
    zero = min(scale, 1.0)  # x floor near zero, as for the step test's xtol
    merged: list[_Found] = []
    for r in found:
        if merged and abs(r.x - merged[-1].x) <= 64 * EPS * max(abs(r.x), 1e-3 * zero):
            prev = merged[-1]
            if prev.bracket is None and r.bracket is not None:
                merged[-1] = r
            continue
        merged.append(r)
    if not merged:
        return []
    x = np.array([r.x for r in merged])
    features = np.sort(np.array(
        list(x) + list(poles) + list(jumps) + [p for gap in gaps for p in gap], dtype=float))
    # distance to the nearest other feature (root, pole, jump, gap end) on either side
    left = np.searchsorted(features, x, side="left") - 1
    right = np.searchsorted(features, x, side="right")
    padded = np.concatenate([[-np.inf], features, [np.inf]])
    nearest = np.minimum(x - padded[left + 1], padded[right + 1] - x)
    reach = np.minimum(h, 0.3 * nearest)
    reach = np.maximum(reach, 64 * EPS * np.maximum(np.abs(x), 1e-3 * zero))
    odd = np.array([r.odd for r in merged])
    mult, spread, res = _multiplicity(g, x, reach, odd, EPS * scale)
    if flags is not None:
        flags.extend(int(i) for i in np.flatnonzero(spread > 0.5))
    return [
        Root(
            x=xi,
            residual=ri,
            multiplicity=1 if r.how.startswith("domain edge") else mi,
            confirmed=r.how,
            located_by=r.located_by,
            bracket=r.bracket,
            run=r.run,
        )
        for r, xi, ri, mi in zip(merged, x.tolist(), res.tolist(), mult.tolist(), strict=True)
    ]


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
    for z, u in zip(near, used, strict=False):
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
            notes.append(f"cross-check: the Chebyshev proxy has a zero near x = {x:.12g} "
                         f"(|f| = {abs(g.scalar(x)):.3g}) that the scan could not confirm")
        for conf in confirmed:
            known = [r.x for r in out] + [r.x for r in added]
            if all(abs(conf.x - k) > 1e3 * EPS * max(abs(k), 1e-3 * scale) for k in known):
                added.append(conf)
    if added:
        new = _finish(g, added, poles, jumps, gaps, h, scale)
        out = sorted(out + new, key=lambda r: r.x)
        notes.append(f"cross-check: {len(new)} root(s) located only by the Chebyshev proxy and "
                     "then confirmed: " + ", ".join(f"{r.x:.12g}" for r in new))
    return out


def _match_proxy(cheb: ChebyshevRoots, roots: list[Root], notes: list[str]):
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
    for j, r in enumerate(roots):
        k = cluster[j]
        if cpiece[k] < 0:
            out.append(r)
        elif located[k]:
            out.append(_relabel(r, tuple(dict.fromkeys(r.located_by + ("chebyshev",)))))
        else:
            p = cheb.pieces[cpiece[k]]
            out.append(r)
            notes.append(f"cross-check: root at x = {r.x:.12g} found by sampling, not by "
                         f"the Chebyshev proxy on [{p.a:.6g}, {p.b:.6g}]")
    return out, near, used


def _confirm_near(g, gp, x, h, xtol, scale) -> list[_Found]:
    """Look for sign changes or a touch within a small window around a proxy root."""
    w = max(min(h, 1e-6 * max(abs(x), 1.0)), 1e3 * EPS * max(abs(x), 1e-3 * scale))
    for width in (w, 100 * w):
        pts = np.linspace(x - width, x + width, 65)
        y = g(pts)
        cand = _Candidates()
        _detect(pts, y, 0, len(pts), cand)
        found = [_Found(xz, bool(odd), "f exactly zero (near a Chebyshev proxy root)",
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
            for r in _resolve_brackets(g, gp, np.array(brackets, dtype=float), xtol)[0]:
                r.located_by = ("chebyshev",)
                found.append(r)
        if found:
            return found
    return []


# ----------------------------------------------------------------------------- noise clusters


@dataclass(frozen=True)
class _Band:
    lo: float
    hi: float
    members: tuple[int, ...]  # indices into the candidate list


def _noise_bands(g: _Guarded, x: np.ndarray, a: float, b: float, scale: float,
                 singular: np.ndarray | None = None):
    """For each candidate x: the stretch around it where |f| stays within ``_NOISE_K``
    standard deviations of f's rounding noise, as (noisy, lower end, upper end, level).

    ``noisy`` is False where |f| rises above the noise level within 64 ulps on both sides
    (a clean root, pole or jump: its stretch is then [x, x]). ``singular`` marks the poles
    and jumps. Elsewhere the stretch is
    found by doubling the distance until |f| exceeds the level (an upper bound within a
    factor of 2 on each side), in one f call for all candidates.
    """
    n = len(x)
    lo, hi = x.copy(), x.copy()
    sig = np.zeros(n)
    # a clean point: f a ramp over a few ulps (first differences of one sign), whose noise
    # there (the second differences of 7 values, sigma^2 ~ mean(d2^2) / 6) is so small that
    # |f| at 64 ulps stands 4x beyond the 8 standard deviations of the test below: not
    # noisy, and no noise estimate (36 evaluations per point) is needed
    d0 = 64 * EPS * np.maximum(np.abs(x), 1e-3 * scale)
    step = 2 * EPS * np.maximum(np.abs(x), 1e-3 * scale)
    pts = np.concatenate([x[:, None] + step[:, None] * _ULPS[None, :], (x - d0)[:, None],
                          (x + d0)[:, None]], axis=1)
    vals = g(pts.reshape(-1)).reshape(pts.shape)
    d1 = np.diff(vals[:, : len(_ULPS)], axis=1)
    d2 = np.diff(d1, axis=1)
    up, down = (d1 > 0).all(axis=1), (d1 < 0).all(axis=1)
    near = np.abs(vals[:, len(_ULPS):])
    clean = (up | down) & (np.min(near, axis=1) > 4 * _NOISE_K * np.sqrt(np.mean(d2 * d2, axis=1)
                                                                       / 6))
    if singular is not None:
        clean &= ~singular
    if clean.all():
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
    level = _NOISE_K * sig
    noisy = (sig > 0) & ((near[:, 0] <= level) | (near[:, 1] <= level))
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
                    runs: list[list[float]], notes: list[str], a: float, b: float,
                    scale: float, typical: float, h: float, unsure: np.ndarray | None = None):
    """Merge what rounding noise made of one root cluster into one root.

    A function evaluated with cancellation (an expanded polynomial) is noise near its
    roots: sign changes 1e-13 apart, minima at noise level, "poles" and "jumps" where
    bisection met noise, whole runs of exact zeros. Every root, pole, jump and zero run
    whose noise stretch (:func:`_noise_bands`) overlaps another's forms one cluster: one
    root at the middle of the stretch, uncertain by its half-width, whose multiplicity is
    what the slope of log|f| just outside the stretch supports (odd when f changes sign
    across it). A lone clean root is left as it was. Rounding noise is small beside f's
    typical size (``typical``, the median sampled |f|): a "noise level" above 1e-3 of it is
    f itself varying faster than any step (sin(1/x) near 0), not rounding, and so is a
    stretch that never ends inside [a, b]. Returns (roots, poles, jumps, runs,
    bands) with ``bands`` the (lo, hi) stretches of the clusters.
    """
    xs = ([r.x for r in roots] + list(poles) + list(jumps)
          + [0.5 * (u + v) for u, v in runs])
    if not xs:
        return roots, poles, jumps, runs, []
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
    noisy = np.zeros(len(x), dtype=bool)
    lo, hi, level = x.copy(), x.copy(), np.zeros(len(x))
    if look.any():
        il = np.flatnonzero(look)
        nz, lo[il], hi[il], level[il] = _noise_bands(g, x[il], a, b, scale,
                                                     (kind[il] == 1) | (kind[il] == 2))
        noisy[il] = nz
    noisy &= (level <= 1e-3 * typical) & ((lo > a) | (hi < b))
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
        how = (f"root cluster within rounding noise: |f| <= {lev[k]:.3g} (its evaluation noise) "
               f"on [{u:.12g}, {v:.12g}]; x uncertain by +/-{w[k]:.3g}; multiplicity from the "
               "slope of log|f| outside")
        new_roots.append(Root(
            x=float(c[k]), residual=float(residual[k]), multiplicity=int(mult[k]),
            confirmed=how, located_by=located,
            bracket=carrier.bracket if carrier is not None and odd[k] else None,
            run=Root.__dict__["run"].raw(carrier) if carrier is not None and odd[k] else None))
        bands.append((u, v))
        notes.append(f"f is rounding noise on [{u:.12g}, {v:.12g}] (|f| <= {lev[k]:.3g}): one "
                     f"root cluster reported at x = {c[k]:.12g} +/- {w[k]:.3g}, multiplicity "
                     f"{int(mult[k])}" + (f"; {inside} more sign change(s), touch(es), pole(s) "
                                           "or jump(s) inside were noise" if inside else ""))
    keep = [i for i in range(len(x)) if i not in drop]
    out_roots = sorted([roots[i] for i in keep if kind[i] == 0] + new_roots, key=lambda r: r.x)
    out_poles = [poles[i - len(roots)] for i in keep if kind[i] == 1]
    out_jumps = [jumps[i - len(roots) - len(poles)] for i in keep if kind[i] == 2]
    out_runs = [runs[i - len(roots) - len(poles) - len(jumps)] for i in keep if kind[i] == 3]
    return out_roots, out_poles, out_jumps, out_runs, bands
