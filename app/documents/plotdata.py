"""Plot data, computed apart from drawing: what to plot of f over a range and where.

:func:`curve` samples f for a plot: several samples per pixel column reduced to the
lowest and highest value (so an f that turns faster than the pixels shows as the band it
fills, never as a false slow wave), the line broken at poles and jumps, and y-limits
chosen from the size of f near its roots (a pole or growth elsewhere in the range leaves
the frame instead of flattening every crossing onto the axis). :func:`symlog_threshold`
gives the linear band of a symmetric-log axis. Nothing here draws: the drawers in
:mod:`app.documents.figures` (window and calculation sheet alike) take a :class:`Curve`.

Evaluation of f never raises out of here: exceptions, NaN, inf and complex values are
"undefined at this x" and leave a gap in the line.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

# A jump between neighbouring samples larger than this many y-spans is drawn as a gap:
# a continuous function sampled at 2000 points never moves that far in one step
# within the visible window.
_JUMP_SPANS = 2.0
# Fraction of the finite samples kept when choosing y-limits near a pole.
_KEEP = (2.0, 98.0)


@dataclass(frozen=True)
class Curve:
    """Samples of f for plotting: ``y`` holds NaN where the line must break.

    ``ylim`` is the linear y range that shows the roots (see :func:`root_ylim`);
    ``root_scale`` is the size of |f| near the roots (the linear band of a symmetric-log
    axis) and ``full_ylim`` the whole curve with pole spikes clipped (the range of that
    axis). ``envelope`` is True when f turns faster than one pixel column: the line then
    runs through the minimum and maximum of each column and reads as a band.
    """

    x: np.ndarray
    y: np.ndarray
    ylim: tuple[float, float]
    root_scale: float | None = None
    full_ylim: tuple[float, float] | None = None
    envelope: bool = False

    def limits(self, symlog: bool = False) -> tuple[float, float]:
        """The y range to show: ``ylim``, or ``full_ylim`` on a symmetric-log axis."""
        if symlog and self.full_ylim is not None:
            return self.full_ylim
        return self.ylim


def evaluate(f: Callable[[Any], Any], x: np.ndarray) -> np.ndarray:
    """f at every x as a float array; anything undefined (raise, NaN, inf, complex) is NaN."""
    with np.errstate(all="ignore"):
        try:
            y = np.asarray(f(x))
            if y.shape != x.shape:
                y = np.broadcast_to(y, x.shape)
        except Exception:  # f misbehaving on an array: fall back to one point at a time
            y = np.array([_point(f, float(v)) for v in x])
        if np.iscomplexobj(y):
            y = np.where(np.abs(np.imag(y)) > 0, np.nan, np.real(y))
        try:
            y = y.astype(float)
        except (TypeError, ValueError):
            y = np.array([_point(f, float(v)) for v in x])
    y = np.array(y, dtype=float)
    y[~np.isfinite(y)] = np.nan
    return y


def _point(f: Callable[[Any], Any], x: float) -> float:
    try:
        with np.errstate(all="ignore"):
            v = complex(f(x))
    except Exception:
        return math.nan
    return v.real if v.imag == 0 else math.nan


def robust_ylim(y: np.ndarray) -> tuple[float, float]:
    """y-limits that show the body of the curve and y = 0, ignoring spikes at poles."""
    finite = y[np.isfinite(y)]
    if finite.size == 0:
        return (-1.0, 1.0)
    lo, hi = float(finite.min()), float(finite.max())
    plo, phi = (float(v) for v in np.percentile(finite, _KEEP))
    body = max(phi - plo, 1e-300)
    # Only cut the tails when they are spikes (a pole), not a smooth steep curve.
    if hi - phi > 5 * body:
        hi = phi + 0.5 * body
    if plo - lo > 5 * body:
        lo = plo - 0.5 * body
    span = hi - lo
    # Show the axis y = 0 unless the curve stays far away from it (then zooming to
    # the axis would flatten the curve into a line).
    if lo > 0 and lo <= 3 * span:
        lo = 0.0
    elif hi < 0 and -hi <= 3 * span:
        hi = 0.0
    span = hi - lo
    if span <= 0 or not math.isfinite(span):
        pad = max(abs(hi), 1.0) * 0.1
        return (lo - pad, hi + pad)
    pad = 0.06 * span
    return (lo - pad, hi + pad)


# How many samples of f each pixel column gets (jittered inside the column, so a
# periodic f cannot lock onto the sampling and draw a false slow wave), and a cap on the
# total so a plot never costs more than a fraction of a second of evaluations.
OVERSAMPLE = 8
MAX_SAMPLES = 65_536
# Where f turns faster than the columns, each column is sampled this many times instead,
# so its lowest and highest samples come close to f's envelope there.
BAND_OVERSAMPLE = 64
MAX_BAND_SAMPLES = 262_144
# Local extrema per column above which f is called faster than the plot resolves.
_BAND_EXTREMA = 2.0
# Each root's neighbourhood reaches at most this fraction of the range to either side.
_NEIGHBOURHOOD = 0.15
# At most this many roots are looked at for the y range (evenly spread over all of them).
_MAX_SCALE_ROOTS = 200
# A root's local |f| scale below this fraction of the median of all roots' scales (a
# touch, or a root on a very flat stretch) does not set the y range alone.
_FLOOR = 1.0 / 30.0


def _columns(f: Callable[[Any], Any], a: float, b: float, n: int) -> tuple[np.ndarray,
                                                                       np.ndarray, bool]:
    """Samples of f reduced to the lowest and highest point of each of n pixel columns.

    Each column is sampled at ``OVERSAMPLE`` points, jittered with a fixed seed (so the
    picture is the same every time); where f has more than ``_BAND_EXTREMA`` local
    extrema per column (a band), at ``BAND_OVERSAMPLE`` points. A column where f is
    undefined at some points keeps all its samples, so the gap stays where it is.
    Returns (x, y, band) with x increasing.
    """
    k = max(1, min(OVERSAMPLE, MAX_SAMPLES // n))
    x, y, band = _sample_columns(f, a, b, n, k)
    if band:
        k_band = max(k, min(BAND_OVERSAMPLE, MAX_BAND_SAMPLES // n))
        if k_band > k:
            x, y, _band = _sample_columns(f, a, b, n, k_band)
    return x, y, band


def _sample_columns(f: Callable[[Any], Any], a: float, b: float, n: int,
                    k: int) -> tuple[np.ndarray, np.ndarray, bool]:
    m = n * k
    step = (b - a) / m
    rng = np.random.default_rng(0)
    x = a + (np.arange(m) + rng.uniform(0.05, 0.95, m)) * step
    x[0], x[-1] = a, b
    y = evaluate(f, x)
    finite = np.isfinite(y)
    band = False
    if finite.sum() > 3:
        d = np.sign(np.diff(y))  # (signs: a product of steep differences overflows)
        turns = np.count_nonzero((d[:-1] * d[1:]) < 0)
        band = k > 1 and turns > _BAND_EXTREMA * n
    if k == 1:
        return x, y, band
    grid = y.reshape(n, k)
    ok = finite.reshape(n, k)
    base = np.arange(n) * k
    lo = np.where(ok, grid, np.inf).argmin(axis=1) + base
    hi = np.where(ok, grid, -np.inf).argmax(axis=1) + base
    mixed = ok.any(axis=1) & ~ok.all(axis=1)
    keep = [lo, hi, np.array([0, m - 1])]
    if mixed.any():
        keep.append((base[mixed][:, None] + np.arange(k)).ravel())
    sel = np.unique(np.concatenate(keep))
    return x[sel], y[sel], band


def _crossings(x: np.ndarray, y: np.ndarray, cut: np.ndarray) -> list[float]:
    """x where the samples change sign between neighbours not separated by a break, and
    the jump is small beside the typical |f| (a sign change across a pole is no root)."""
    with np.errstate(invalid="ignore", over="ignore"):  # |f| ~ 1e308: the sum is +inf
        change = (np.sign(y[:-1]) * np.sign(y[1:]) < 0) & ~cut
        typical = float(np.nanmedian(np.abs(y))) if np.isfinite(y).any() else 0.0
        small = (np.abs(y[:-1]) + np.abs(y[1:])) <= 4.0 * typical
    where = np.nonzero(change & small)[0]
    return [float(0.5 * (x[i] + x[i + 1])) for i in where]


def root_ylim(x: np.ndarray, y: np.ndarray, roots: Sequence[float],
              cut: np.ndarray | None = None) -> tuple[tuple[float, float], float | None]:
    """A linear y range that shows every root as a crossing, and |f|'s scale near them.

    Each root's neighbourhood runs halfway to the next root (at most ``_NEIGHBOURHOOD``
    of the range, and never across a break); its scale is the 90th percentile of |f|
    there. The range is ± the smallest of these scales (but not below ``_FLOOR`` of
    their median), cut to the curve's own pole-free extent (:func:`robust_ylim`), so a
    root beside a pole or on a flank that grows like cosh is a visible crossing, not a
    flat line on the axis; steeper stretches leave the frame. Without roots, the
    curve's body with y = 0 if near. Returns (ylim, scale or None).
    """
    body = robust_ylim(y)
    finite = np.isfinite(y)
    roots = sorted(r for r in roots if math.isfinite(r) and x[0] <= r <= x[-1])
    if not roots or finite.sum() < 3:
        return body, None
    if len(roots) > _MAX_SCALE_ROOTS:  # dense roots: an even subset sets the scale as well
        pick = np.linspace(0, len(roots) - 1, _MAX_SCALE_ROOTS).round().astype(int)
        every = roots
        roots = [every[i] for i in pick]
    span = float(x[-1] - x[0])
    stops = x[1:][cut] if cut is not None and cut.size == x.size - 1 else np.array([])
    scales = []
    for i, r in enumerate(roots):
        left = max(0.5 * (roots[i - 1] + r) if i else -math.inf, r - _NEIGHBOURHOOD * span)
        right = min(0.5 * (r + roots[i + 1]) if i + 1 < len(roots) else math.inf,
                    r + _NEIGHBOURHOOD * span)
        before, after = stops[stops <= r], stops[stops > r]
        if before.size:
            left = max(left, float(before.max()))
        if after.size:
            right = min(right, float(after.min()))
        window = y[np.searchsorted(x, left):np.searchsorted(x, right, side="right")]
        near = np.abs(window[np.isfinite(window)])
        if near.size >= 3:
            scales.append(float(np.percentile(near, 90)))
    scales = [v for v in scales if v > 0 and math.isfinite(v)]
    if not scales:
        return body, None
    scale = max(min(scales), _FLOOR * float(np.median(scales)))
    lo, hi = max(body[0], -1.1 * scale), min(body[1], 1.1 * scale)
    if not lo < 0 < hi:  # the body lies on one side: keep the axis in view all the same
        lo, hi = min(lo, 0.0), max(hi, 0.0)
    pad = 0.06 * (hi - lo) if hi > lo else 1.0
    return (lo - pad, hi + pad), scale


def curve(
    f: Callable[[Any], Any],
    a: float,
    b: float,
    n: int = 2000,
    *,
    breaks: Iterable[float] = (),
    roots: Iterable[float] = (),
) -> Curve:
    """Sample f on [a, b] for a plot n pixel columns wide.

    Every column is sampled ``OVERSAMPLE`` times and reduced to its lowest and highest
    point, so an f that oscillates faster than the pixels (``sin(100x)`` on [0, 1000])
    is drawn as the band it fills, never as a false slow wave, and a narrow spike is not
    missed. The line is broken (NaN inserted) where f is undefined, where neighbouring
    samples jump by more than two y-spans (a pole or a jump), and at every x in
    ``breaks`` (poles and discontinuities a scan reported). The y range shows the roots
    (``roots`` a scan found, and every sign change of the samples): see :func:`root_ylim`.
    Never raises for what f does; raises ValueError for a range that is not two
    different finite numbers.
    """
    if not (math.isfinite(a) and math.isfinite(b)) or a == b:
        raise ValueError(f"plot range [{a!r}, {b!r}] must be two different finite numbers")
    a, b = min(a, b), max(a, b)
    x, y, band = _columns(f, a, b, max(int(n), 2))
    full = robust_ylim(y)
    span = full[1] - full[0]
    cut = np.zeros(x.size - 1, dtype=bool)
    dy = np.abs(np.diff(y))
    with np.errstate(invalid="ignore"):
        cut |= dy > _JUMP_SPANS * span
    for xb in breaks:
        if a < xb < b:
            i = int(np.searchsorted(x, xb)) - 1
            if 0 <= i < cut.size:
                cut[i] = True
    found = [*roots, *_crossings(x, y, cut)] if not band else list(roots)
    ylim, scale = root_ylim(x, y, found, cut)
    where = np.nonzero(cut)[0] + 1
    if where.size:
        mid = 0.5 * (x[where - 1] + x[where])
        x = np.insert(x, where, mid)
        y = np.insert(y, where, np.nan)
    return Curve(x=x, y=y, ylim=ylim, root_scale=scale, full_ylim=full, envelope=band)


# ----------------------------------------------------------------- the function plot


def symlog_threshold(c: Curve) -> float:
    """The linear band of a symmetric-log y axis for ``c``: the power of ten nearest |f|'s
    scale near the roots (or a tenth of the largest |y| shown when there are no roots)."""
    if c.root_scale is not None and c.root_scale > 0:
        scale = float(c.root_scale)
    else:
        lo, hi = c.limits(True)
        scale = max(abs(lo), abs(hi), 1e-300) / 10.0
    # A whole power of ten, so the decade ticks start at the edge of the linear band
    # instead of crowding inside it.
    return 10.0 ** round(math.log10(scale))
