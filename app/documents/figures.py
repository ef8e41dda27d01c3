"""Plots of an equation and its runs, drawn with matplotlib's object API (no pyplot, no Qt).

The window draws into an embedded canvas and the calculation sheet into an Agg
figure; both call these functions, so the picture on screen and the one filed in a
report are the same.

* :func:`curve` samples f for plotting: the line is broken at poles and jumps (so no
  vertical streak is drawn across a pole) and the y-limits ignore the huge values
  near a pole, so the roots stay visible.
* :func:`draw_function` draws f with the roots, poles, jumps and undefined stretches
  of a scan marked, and optionally one run's path (tangents for Newton, secant lines,
  the shrinking bracket of a bracketing method).
* :func:`draw_convergence` draws |f(x_k)| (or |dx_k|) against k on a log axis for
  several runs, so quadratic and linear convergence can be told apart at a glance.

Evaluation of f never raises out of here: exceptions, NaN, inf and complex values are
treated as "undefined at this x" and leave a gap in the line.
"""

from __future__ import annotations

import math
import threading
from collections.abc import Callable, Iterable, Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from typing import Any

import numpy as np

# method_label and method_title are the words module's, re-exported for the drawing callers.
from app.documents.words import method_label, method_title  # noqa: F401
from solvers.records import Run

# matplotlib is not thread-safe: its mathtext parser and font objects are shared, and two
# threads rendering at once raised spurious parse errors and corrupted the heap. Every
# zerotrace caller that renders (window canvases, typesetting, the report's figures and
# formulas) holds this one lock while matplotlib lays out or draws. Re-entrant, so a
# drawing helper may call another.
MATPLOTLIB_LOCK = threading.RLock()


@contextmanager
def typesetting() -> Iterator[None]:
    """Hold :data:`MATPLOTLIB_LOCK` while mathtext sets a formula, then release what
    mathtext keeps behind.

    matplotlib's mathtext leaks for the life of the process: a class-level
    ``functools.cache`` (the sized alternatives of delimiters and radicals) keeps every
    font set it was asked about, and each glyph it loads stays in the shared per-thread
    font objects until those are cleared. Every typeset equation and derivative added
    ~40 KiB, so a session grew by several MiB per hundred edits. Dropping those caches
    after each formula frees all of it; re-opening the fonts costs well under a
    millisecond per formula.
    """
    with MATPLOTLIB_LOCK:
        try:
            yield
        finally:
            _release_mathtext_caches()


def _release_mathtext_caches() -> None:
    try:
        from matplotlib import _mathtext, font_manager, mathtext
    except ImportError:  # pragma: no cover - matplotlib always ships these
        return
    for cls in vars(_mathtext).values():
        if isinstance(cls, type):
            for member in vars(cls).values():
                clear = getattr(member, "cache_clear", None)
                if callable(clear):
                    clear()
    for cached in (getattr(mathtext.MathTextParser, "_parse_cached", None),
                   getattr(font_manager, "_get_font", None)):
        clear = getattr(cached, "cache_clear", None)
        if callable(clear):
            clear()

# Okabe & Ito (2008) colour-blind-safe palette, one colour per method. The function
# itself is drawn in near-black so it never competes with a method's path.
OKABE_ITO = {
    "orange": "#E69F00",
    "sky_blue": "#56B4E9",
    "bluish_green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish_purple": "#CC79A7",
    "black": "#000000",
}
METHOD_COLORS: dict[str, str] = {
    "newton": OKABE_ITO["blue"],
    "secant": OKABE_ITO["vermillion"],
    "false_position": OKABE_ITO["bluish_green"],
    "illinois": OKABE_ITO["reddish_purple"],
    "bisection": OKABE_ITO["orange"],
    "brent": OKABE_ITO["sky_blue"],
}
FUNCTION_COLOR = "#222222"
POLE_COLOR = "#6B6B6B"
ROOT_MARKER = {"marker": "o", "markersize": 7, "markerfacecolor": "white",
               "markeredgecolor": "#000000", "markeredgewidth": 1.5, "linestyle": "none"}

# A jump between neighbouring samples larger than this many y-spans is drawn as a gap:
# a continuous function sampled at 2000 points never moves that far in one step
# within the visible window.
_JUMP_SPANS = 2.0
# Fraction of the finite samples kept when choosing y-limits near a pole.
_KEEP = (2.0, 98.0)


def residual_name(unknown: str) -> str:
    """The letter for the residual lhs - rhs: f, or F when the unknown itself is called f
    (a friction factor), so nothing reads "f(f)"."""
    return "F" if unknown == "f" else "f"


def method_color(name: str) -> str:
    return METHOD_COLORS.get(name, OKABE_ITO["black"])


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
        d = np.diff(y)
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
    with np.errstate(invalid="ignore"):
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


def draw_function(
    ax: Any,
    f: Callable[[Any], Any],
    a: float,
    b: float,
    *,
    scan: Any = None,
    run: Run | None = None,
    n: int = 2000,
    unknown: str = "x",
    precomputed: Curve | None = None,
    symlog: bool = False,
) -> Curve:
    """Draw f on [a, b] into ``ax``, with a scan's findings and one run's path.

    Roots are open circles on y = 0, poles dashed grey verticals, jumps dotted
    verticals with a cross, undefined stretches hatched. The run's path is drawn in
    its method's colour; the axes limits stay on [a, b] and on the y range that shows
    the roots (:attr:`Curve.ylim`), so neither a wild iterate nor a pole nor growth far
    from the roots squashes the crossings onto the axis. ``symlog`` puts y on a
    symmetric-log scale, linear within the |f| scale of the roots and logarithmic
    beyond, showing the whole curve (pole spikes clipped). The axes are named after
    the unknown (``V``, ``f(V)``). Returns the curve drawn.
    """
    poles = list(getattr(scan, "poles", []) or []) if scan is not None else []
    jumps = list(getattr(scan, "discontinuities", []) or []) if scan is not None else []
    roots = [r.x for r in (getattr(scan, "roots", []) or [])] if scan is not None else []
    c = precomputed if precomputed is not None else curve(f, a, b, n, breaks=poles + jumps,
                                                          roots=roots)
    ax.axhline(0.0, color="#9A9A9A", linewidth=0.8, zorder=1)
    name = f"{residual_name(unknown)}({unknown})"
    label = f"{name}, lowest and highest per pixel column" if c.envelope else name
    ax.plot(c.x, c.y, color=FUNCTION_COLOR, linewidth=1.4 if not c.envelope else 0.8,
            zorder=2, label=label)
    if scan is not None:
        _draw_scan(ax, scan, poles, jumps)
    ylim = c.limits(symlog)
    if symlog:
        ax.set_yscale("symlog", linthresh=symlog_threshold(c))
    # Limits first: the path drawers space their labels by the visible range.
    ax.set_xlim(min(a, b), max(a, b))
    ax.set_ylim(*ylim)
    if run is not None and run.steps:
        draw_path(ax, f, run)
        ax.set_xlim(min(a, b), max(a, b))
        ax.set_ylim(*ylim)
    ax.set_xlabel(unknown)
    ax.set_ylabel(name)
    fit_x_ticks(ax)
    ax.grid(True, color="#E4E4E4", linewidth=0.6, zorder=0)
    handles, _labels = ax.get_legend_handles_labels()
    if len(handles) > 1:
        ax.legend(loc="best", fontsize="small", framealpha=0.85)
    return c


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


# Tick labels: at most this many characters' width each side of a tick, and between
# labels two characters' gap (the width of a character taken as 0.6 of the font size).
_CHAR_WIDTH = 0.6


def fit_x_ticks(ax: Any) -> None:
    """x ticks whose labels never collide and never run past the figure's edge.

    Labels are kept short (plain numbers from 1e-3 to 1e4, beyond that a common
    power of ten beside the axis), and the number of ticks is the largest of 9, 7, 5,
    4, 3 whose labels fit side by side in the axes' width at the tick font size.
    """
    from matplotlib import rcParams
    from matplotlib.font_manager import FontProperties
    from matplotlib.ticker import MaxNLocator, ScalarFormatter

    formatter = ScalarFormatter(useMathText=True)
    formatter.set_powerlimits((-3, 4))
    ax.xaxis.set_major_formatter(formatter)
    lo, hi = sorted(ax.get_xlim())
    fig = ax.figure
    width_pt = ax.get_position().width * fig.get_figwidth() * 72.0
    size = FontProperties(size=rcParams["xtick.labelsize"]).get_size_in_points()
    locator = MaxNLocator(nbins=3)
    for nbins in (9, 7, 5, 4, 3):
        candidate = MaxNLocator(nbins=nbins, steps=[1, 2, 2.5, 5, 10])
        ticks = [t for t in candidate.tick_values(lo, hi) if lo <= t <= hi]
        if not ticks:
            continue
        formatter.set_locs(ticks)
        widest = max(len(_plain(formatter(t))) for t in ticks)
        if len(ticks) * (widest + 2) * _CHAR_WIDTH * size <= width_pt:
            locator = candidate
            break
    ax.xaxis.set_major_locator(locator)


def _plain(label: str) -> str:
    """A tick label's visible characters (mathtext markup removed)."""
    for token in ("$", "\\mathdefault", "{", "}", "\\times", "^"):
        label = label.replace(token, "")
    return label


def _draw_scan(ax: Any, scan: Any, poles: Sequence[float], jumps: Sequence[float]) -> None:
    for i, (ga, gb) in enumerate(getattr(scan, "gaps", []) or []):
        ax.axvspan(ga, gb, facecolor="none", edgecolor="#B0B0B0", hatch="//", linewidth=0,
                   zorder=0, label="f undefined" if i == 0 else None)
    for i, xp in enumerate(poles):
        ax.axvline(xp, color=POLE_COLOR, linestyle=(0, (6, 3)), linewidth=1.1, zorder=1,
                   label="pole" if i == 0 else None)
    for i, xj in enumerate(jumps):
        ax.axvline(xj, color=POLE_COLOR, linestyle=":", linewidth=1.3, zorder=1)
        ax.plot([xj], [0.0], marker="X", color=POLE_COLOR, markersize=7, linestyle="none",
                zorder=3, label="jump" if i == 0 else None)
    roots = list(getattr(scan, "roots", []) or [])
    if roots:
        ax.plot([r.x for r in roots], [0.0] * len(roots), zorder=4,
                label=f"root{'s' if len(roots) > 1 else ''} ({len(roots)})", **ROOT_MARKER)


def draw_path(ax: Any, f: Callable[[Any], Any], run: Run, *, limit: int = 40) -> None:
    """Overlay a run's iterates on a function plot, the way its method moves."""
    drawer = _PATH_DRAWERS.get(run.method, _draw_iterates)
    drawer(ax, f, run, limit)


def _finite_steps(run: Run, limit: int) -> list:
    return [s for s in run.steps[:limit] if math.isfinite(s.x) and math.isfinite(s.fx)]


def _draw_iterates(ax: Any, f: Callable[[Any], Any], run: Run, limit: int) -> None:
    color = method_color(run.method)
    steps = _finite_steps(run, limit)
    ax.plot([s.x for s in steps], [s.fx for s in steps], marker="o", markersize=4,
            linestyle="none", color=color, zorder=5, label=f"{method_title(run.method)} iterates")
    # Number the first iterates so table rows and picture can be matched; skip a label
    # that would sit on top of the previous one (iterates crowd near the root).
    lo, hi = ax.get_xlim()
    gap = 0.03 * abs(hi - lo)
    placed: list[float] = []
    for s in steps[:10]:
        if all(abs(s.x - p) > gap for p in placed):
            ax.annotate(str(s.k), (s.x, s.fx), textcoords="offset points", xytext=(4, 4),
                        fontsize="x-small", color=color, zorder=6)
            placed.append(s.x)


def _draw_tangents(ax: Any, f: Callable[[Any], Any], run: Run, limit: int) -> None:
    """Newton: from (x_k, f_k) along the tangent down to (x_{k+1}, 0), then up to the curve."""
    color = method_color(run.method)
    steps = _finite_steps(run, limit)
    for s, nxt in zip(steps, steps[1:], strict=False):
        ax.plot([s.x, nxt.x], [s.fx, 0.0], color=color, linewidth=1.0, zorder=4)
        ax.plot([nxt.x, nxt.x], [0.0, nxt.fx], color=color, linewidth=0.8, linestyle=":",
                zorder=4)
    _draw_iterates(ax, f, run, limit)


def _draw_secants(ax: Any, f: Callable[[Any], Any], run: Run, limit: int) -> None:
    """Secant: the line through the last two iterates, extended to where it meets y = 0."""
    color = method_color(run.method)
    steps = _finite_steps(run, limit)
    for p, q, nxt in zip(steps, steps[1:], steps[2:], strict=False):
        ax.plot([p.x, q.x, nxt.x], [p.fx, q.fx, 0.0], color=color, linewidth=1.0, zorder=4)
        ax.plot([nxt.x, nxt.x], [0.0, nxt.fx], color=color, linewidth=0.8, linestyle=":",
                zorder=4)
    _draw_iterates(ax, f, run, limit)


def _draw_bracket(ax: Any, f: Callable[[Any], Any], run: Run, limit: int) -> None:
    """Bracketing methods: each bracket [lo, hi] as a bar stacked along the bottom edge."""
    color = method_color(run.method)
    transform = ax.get_xaxis_transform()  # x in data units, y in axes fraction
    bars = [s for s in run.steps[:limit] if s.lo is not None and s.hi is not None]
    # Drop repeats, keep at most BRACKET_BARS so the strip stays a thin band at the bottom.
    distinct = [s for i, s in enumerate(bars) if i == 0 or (s.lo, s.hi) != (bars[i - 1].lo,
                                                                          bars[i - 1].hi)]
    shown = distinct[:BRACKET_BARS]
    for i, s in enumerate(shown):
        y = 0.025 + 0.016 * i
        ax.plot([s.lo, s.hi], [y, y], transform=transform, color=color,
                linewidth=BRACKET_WIDTH, solid_capstyle="butt", alpha=1.0 - 0.5 * i / len(shown),
                zorder=5, label="bracket, first iterates (bottom up)" if i == 0 else None)
    _draw_iterates(ax, f, run, limit)


BRACKET_BARS = 8
BRACKET_WIDTH = 2.2
# The scan's marks on their own, for a view that keeps its axes and curve between redraws.
draw_scan_marks = _draw_scan

_PATH_DRAWERS: dict[str, Callable[[Any, Callable[[Any], Any], Run, int], None]] = {
    "newton": _draw_tangents,
    "secant": _draw_secants,
    "false_position": _draw_bracket,
    "illinois": _draw_bracket,
    "bisection": _draw_bracket,
    "brent": _draw_bracket,
}


# ----------------------------------------------------------------- convergence plot

CONVERGENCE_QUANTITIES: dict[str, tuple[str, Callable[[Any], float | None]]] = {
    "residual": ("|f(x_k)|", lambda s: s.fx),
    "step": ("|Δx_k|", lambda s: s.dx),
}


def convergence_series(run: Run, quantity: str = "residual") -> tuple[list[int], list[float]]:
    """(k, |value|) pairs of a run that can go on a log axis (zeros and NaN left out)."""
    _label, pick = CONVERGENCE_QUANTITIES[quantity]
    ks, vs = [], []
    for s in run.steps:
        v = pick(s)
        if v is None or not math.isfinite(v) or v == 0:
            continue
        ks.append(s.k)
        vs.append(abs(v))
    return ks, vs


def convergence_label(quantity: str = "residual", unknown: str = "x") -> str:
    """The y-axis title of a convergence plot, in the unknown's name: |f(V_k)|, |ΔV_k|."""
    label, _pick = CONVERGENCE_QUANTITIES[quantity]
    if unknown == "x":
        return label
    return {"residual": f"|{residual_name(unknown)}({unknown}_k)|",
            "step": f"|Δ{unknown}_k|"}.get(quantity, label)


def draw_convergence(ax: Any, runs: Iterable[Run], *, quantity: str = "residual",
                     unknown: str = "x") -> None:
    """|f(x_k)| (quantity="residual") or |Δx_k| ("step") against k, log y-axis, every run,
    with the axis named after the unknown.

    A run that did not converge is drawn dashed; an iterate where the value is exactly
    zero cannot sit on a log axis and is left out (the table still shows it).
    """
    label = convergence_label(quantity, unknown)
    any_points = False
    markers = {"newton": "o", "secant": "s", "false_position": "^", "illinois": "v",
               "bisection": "D", "brent": "P"}
    for run in runs:
        ks, vs = convergence_series(run, quantity)
        if not ks:
            continue
        any_points = True
        ax.plot(ks, vs, color=method_color(run.method), marker=markers.get(run.method, "o"),
                markersize=4, linewidth=1.4, linestyle="-" if run.converged else "--",
                label=method_title(run.method) + ("" if run.converged else " (did not converge)"))
    if any_points:
        ax.set_yscale("log")
        ax.legend(loc="best", fontsize="small", framealpha=0.85)
    else:
        ax.text(0.5, 0.5, "no iterates to show yet", transform=ax.transAxes,
                ha="center", va="center", color="#666666")
    ax.set_xlabel("iterate k")
    ax.set_ylabel(label)
    ax.grid(True, which="both", color="#E4E4E4", linewidth=0.6)
