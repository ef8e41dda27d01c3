"""Sampling f (and f') on the grid in chunks: f made total (:class:`_Guarded`), and the
candidates each chunk yields (sign changes, zeros, minima, peaks, domain edges, extrema
between samples), with under-resolved windows resampled finer."""

from __future__ import annotations

import math
import statistics
import time
from collections.abc import Callable
from dataclasses import dataclass, field
from types import ModuleType

import numpy as np

from solvers.scan.records import EPS, ScanCancelled

DEFAULT_SAMPLES = 2001  # base samples when ``samples`` is None (adaptive refinement on top)


CHUNK = 65536  # samples evaluated per f call in the sampling pass (bounds memory)


_WINDOW = 32  # samples per window in the oscillation check


_MAX_EXTREMA = 8  # more extrema of f per window than this: resample the window finer


_RESAMPLE = 8  # refinement factor for an under-resolved window


_MAX_LEVEL = 2  # at most 64x the base density


_CAP = 256  # candidates of each kind one compiled candidate pass stores at first


_POLL = 0.02  # seconds of work between two polls of cancel()


_FLOAT = np.dtype(float)


_PASSES: ModuleType | None = None


def _passes() -> ModuleType:
    """:mod:`solvers.scan.passes`, imported on the first scan: the compiled loops bring numba
    (some 0.2-0.4 s to import) into the process, and most processes that import the core
    (`zerotrace solve`) never scan. The import system's lock makes the first use safe from
    any thread; later calls return the module."""
    global _PASSES
    if _PASSES is None:
        from solvers.scan import passes

        _PASSES = passes
    return _PASSES


def _as_real(y: object, shape: tuple[int, ...]) -> np.ndarray:
    if type(y) is np.ndarray and y.dtype == _FLOAT and y.shape == shape:
        return y  # (already what the scan needs: the usual case, no conversion)
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
        if x.size == 0:  # (nothing to ask: a call of f costs its whole overhead even so)
            return np.zeros(x.shape)
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

    def fast(self, x: float) -> float:
        """:meth:`scalar` with its conversions skipped where f returns a real float already
        (a compiled equation on a Python float, a numpy function on a number): the scalar
        refinement's inner loop calls it (:meth:`poll` written out: a call per value costs
        as much as a compiled equation's arithmetic)."""
        if self.cancel is not None and time.perf_counter() - self._polled > _POLL:
            self.check()
        try:
            y = self.f(x)
        except Exception:  # noqa: BLE001 - undefined there; scalar() decides how
            return self.scalar(x)
        if y.__class__ is float:
            return y
        if isinstance(y, float):  # (numpy's float64)
            return float(y)
        return self.scalar(x)

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
    grid: np.ndarray | None = None  # f on the base grid when it was one chunk (else None)
    # f' sampled with f (derivative check): sample pairs of one sign of f across which f'
    # changes sign toward zero, not proved root-free; same layout as ``minima``
    extrema: list[tuple[float, float, float, float, float, float]] = field(default_factory=list)
    proved: int = 0  # extrema between samples proved root-free by the tangent bound
    # the least tangent bound that proves an extremum root-free: f's rounding noise in
    # absolute terms, from the base grid's typical |f| (see _PROOF_FLOOR)
    floor: float = 0.0


def _median_abs(y: np.ndarray) -> float | None:
    """The median of the finite |y| (None when there are none), by partition: np.median's
    overhead is larger."""
    finite = np.abs(y[np.isfinite(y)])
    if not finite.size:
        return None
    half = finite.size // 2
    part = np.partition(finite, (half - 1, half) if finite.size % 2 == 0 else half)
    return float(part[half] if finite.size % 2 else 0.5 * (part[half - 1] + part[half]))


def _typical_size(cand: _Candidates) -> float:
    """f's typical sampled size: the median of the chunks' median finite |f| (0 when f
    was nowhere finite)."""
    if cand.grid is not None:
        median = _median_abs(cand.grid)
        return 0.0 if median is None else median
    # (statistics.median: the same middle value, without np.median's overhead on a short list)
    return float(statistics.median(cand.typical)) if cand.typical else 0.0


def _detect(x: np.ndarray, y: np.ndarray, lo: int, hi: int, out: _Candidates,
            yp: np.ndarray | None = None) -> None:
    """Append candidates whose anchor index i lies in [lo, hi) of the arrays x, y.

    Sign changes and edges are anchored at the left sample of the pair (i, i+1);
    zeros and minima at the centre sample i (which needs i-1 and i+1 to exist). One
    compiled pass (:func:`solvers.scan.passes.detect_pass`) selects the indices of the
    few candidates (most samples are nothing); their records are built here:

    - sign changes: the sign bit flips between neighbours, both values finite and
      nonzero (signs compared, not multiplied: a product of two tiny values underflows
      to 0); a flip from a finite value into an overflow to +-inf (x^2 far out, exp past
      709.78) is kept apart, as the root may lie between the last finite value and it;
    - edges between defined and undefined (NaN) samples; infinite samples between
      finite ones; exact zeros (runs of them are ``flat``);
    - sharp local maxima of |f| (a pole without a sign change, 1/(x-c)^2, ln|x-c|): one
      sign at the peak and both neighbours, and at least 10 % above the lower neighbour,
      where a resolved smooth peak is within a fraction of 1 %, or a kink: the second
      difference at the peak 8x one of those two samples away (a pole riding on a large
      offset, 1/(x - c) - 1e6, bumps |f| by far less than 10 %; a smooth peak's second
      differences vary slowly);
    - local minima of |f| of one sign whose parabola through the three samples dips at
      least 10 % toward zero, or comes within its own curvature scale of zero (a
      near-double pair whose sample sits almost on the dip looks like a touch that
      narrowly misses); with f' sampled, the extrema between samples
      (:func:`_detect_extrema`) stand in for them wherever f' is finite at all three.
    """
    # only [lo, hi) and 4 samples either side are read (the kink test reaches 3 away):
    # between resampled windows a chunk is visited piece by piece, not whole each time
    start, stop = max(lo - 4, 0), min(hi + 4, len(x))
    if start > 0 or stop < len(x):
        x, y = x[start:stop], y[start:stop]
        yp = None if yp is None else yp[start:stop]
        lo, hi = lo - start, hi - start
    detect_pass = _passes().detect_pass
    found = detect_pass(x, y, y if yp is None else yp, yp is not None, lo, hi, _CAP,
                        out.floor)
    if found[-1] > _CAP:  # (more candidates of one kind than the buffers held: a fast
        # oscillation; asked again with room for all)
        found = detect_pass(x, y, y if yp is None else yp, yp is not None, lo, hi, found[-1],
                            out.floor)
    brackets, overflow, edges, infs, zeros, flat, peaks, minima, extrema, proved, _ = found
    if yp is not None:
        _detect_extrema(x, y, extrema, proved, out)
    # (whole columns to Python floats at once: per-element numpy indexing costs more than
    # the records when a fast oscillation gives hundreds)
    if brackets.size:
        out.brackets.extend(zip(x[brackets].tolist(), x[brackets + 1].tolist(),
                                y[brackets].tolist(), y[brackets + 1].tolist(), strict=True))
    for fin, far in overflow.tolist():
        out.overflow.append((float(x[fin]), float(x[far]), float(y[fin])))
    for k, left in edges.tolist():
        if left:
            out.edges.append((float(x[k + 1]), float(x[k]), -1))  # defined on the left
        else:
            out.edges.append((float(x[k]), float(x[k + 1]), +1))  # defined on the right
    out.inf_points.extend(x[infs].tolist())
    for k in flat.tolist():
        out.flat.append((float(x[k - 1]), float(x[k + 1])))
    for k, odd in zeros.tolist():
        out.zeros.append((float(x[k]), odd, float(x[k - 1]), float(x[k + 1]),
                          float(y[k - 1]), float(y[k + 1])))
    if peaks.size:
        out.peaks.extend(zip(x[peaks - 1].tolist(), x[peaks].tolist(), x[peaks + 1].tolist(),
                             strict=True))
    if minima.size:
        out.minima.extend(zip(x[minima - 1].tolist(), x[minima].tolist(),
                              x[minima + 1].tolist(), y[minima - 1].tolist(),
                              y[minima].tolist(), y[minima + 1].tolist(), strict=True))


def _detect_extrema(x: np.ndarray, y: np.ndarray, i: np.ndarray, proved: int,
                    out: _Candidates) -> None:
    """Extrema of f between neighbouring samples: the pairs (i, i+1) ``detect_pass`` kept.

    Two roots hidden between samples i and i+1 (f of one sign at both) need an extremum
    of f between them, where f' changes sign, moving toward zero: s f'_i < 0 < s f'_(i+1)
    with s the sign of f. Where f' is monotone between the samples (checked: the secant
    slope lies between f'_i and f'_(i+1), as the mean value theorem then demands), s f is
    convex there and lies above both tangent lines, so it cannot fall below the value
    where they meet: above zero means no root, proved (``proved`` counts those). Every
    other such pair is a candidate for the touch search (appended to ``out.extrema``).
    """
    out.proved += int(proved)
    if i.size:
        left, right = x[i].tolist(), y[i].tolist()
        out.extrema.extend(zip(left, left, x[i + 1].tolist(), right, right,
                               y[i + 1].tolist(), strict=True))


def _underresolved(y: np.ndarray, x: np.ndarray | None = None,
                   yp: np.ndarray | None = None) -> np.ndarray:
    """Indices of windows (of _WINDOW samples) where f has too many extrema, or (with f'
    sampled too) where f' contradicts the differences of f, for some pair of samples
    (i, i+1) in the window (the last, partial window too).

    The trapezoid rule on f', h (f'_i + f'_(i+1)) / 2, predicts f_(i+1) - f_i to a relative
    (h omega)^2 / 12 for an oscillation of angular frequency omega (0.05 at 8 samples per
    period). An error above half of the change's own scale, |f_(i+1) - f_i| + h (|f'_i| +
    |f'_(i+1)|) / 2, plus 1e3 eps of |f| for rounding, means f changes faster than the
    sampling resolves: an oscillation aliased into a slow-looking curve. Pairs with a
    non-finite value, or with f exactly 0.0 at both (a run of zeros), are left to the
    other checks. One compiled pass
    (:func:`solvers.scan.passes.underresolved_pass`).
    """
    n = len(y)
    if n < 3 * _WINDOW:
        return np.zeros(0, dtype=int)
    has_yp = yp is not None and x is not None
    return _passes().underresolved_pass(y if x is None else x, y, yp if has_yp else y, has_yp,
                              _WINDOW, _MAX_EXTREMA, _TRAPEZOID)


_TRAPEZOID = 0.5  # f' may disagree with f's differences by this fraction before a resample

# An extremum between samples is proved root-free only where the tangent lines meet above
# f's rounding noise, not merely above zero: f's values near a double root are rounding
# (x^2 - 4.62x + 5.3361, typed out, is 8.9e-16 at the sample 2.31 where f' is 8.9e-16 too,
# and -8.9e-16 beside it), so their tangent bound proves nothing. The noise of f is that of
# its terms, which f's values near the root do not show; the typical sampled |f| (the
# median) stands for them, times 64 eps (common practice for a rounding allowance; the
# factor is ours).
_PROOF_FLOOR = 64.0


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
            if n <= CHUNK:
                out.grid = y  # the only chunk: its median is taken if the noise look asks
            else:
                median = _median_abs(y)
                if median is not None:
                    out.typical.append(median)
            if gp is not None:
                out.floor = _PROOF_FLOOR * EPS * _typical_size(out)
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
