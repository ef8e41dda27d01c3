"""Plots of an equation and its runs, drawn with matplotlib's object API (no pyplot, no Qt).

The window draws into an embedded canvas and the calculation sheet into an Agg
figure; both call these functions, so the picture on screen and the one filed in a
report are the same.

* The data comes from :mod:`app.documents.plotdata` (:func:`curve`, re-exported here):
  samples per pixel column, breaks at poles and jumps, y-limits that show the roots.
* :func:`draw_function` draws f with the roots, poles, jumps and undefined stretches
  of a scan marked, and optionally one run's path (tangents for Newton, secant lines,
  the shrinking bracket of a bracketing method).
* :func:`draw_convergence` draws |f(x_k)| (or |dx_k|) against k on a log axis for
  several runs, so quadratic and linear convergence can be told apart at a glance.

One thread at a time in matplotlib: callers hold :data:`MATPLOTLIB_LOCK` while they
draw (the window's canvases and the calculation sheet do), and every typesetting call
goes through :func:`typesetting`.
"""

from __future__ import annotations

import math
import threading
from collections.abc import Callable, Iterable, Iterator, Sequence
from contextlib import contextmanager
from typing import Any

from app.documents.plotdata import (  # noqa: F401 - the drawers' data, re-exported
    Curve,
    curve,
    evaluate,
    robust_ylim,
    root_ylim,
    symlog_threshold,
)

# method_label and method_title are the words module's, re-exported for the drawing callers.
from app.documents.words import method_label, method_title, residual_name  # noqa: F401
from solvers.records import Run

# matplotlib is not thread-safe: its mathtext parser and font objects are shared, and two
# threads rendering at once raised spurious parse errors and corrupted the heap. Every
# zerotrace caller that renders (window canvases, typesetting, the report's figures and
# formulas) holds this one lock while matplotlib lays out or draws. Re-entrant, so a
# drawing helper may call another.
MATPLOTLIB_LOCK = threading.RLock()


@contextmanager
def drawing() -> Iterator[None]:
    """Hold :data:`MATPLOTLIB_LOCK` while matplotlib lays out or draws, with numpy's
    floating-point warnings off: its axis arithmetic over a curve whose |f| nears 1e308
    (the symmetric-log ticks, base ** decade) overflows to inf and copes with it, and a
    RuntimeWarning from inside it would reach the terminal of ``zerotrace report``."""
    import numpy as np

    with MATPLOTLIB_LOCK, np.errstate(all="ignore"):
        yield


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
    with drawing():
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

def axis_label(unknown: str, unit: str | None = None) -> str:
    """The x-axis title: the unknown's name, with its unit in brackets when it has one."""
    return f"{unknown} [{unit}]" if unit else unknown


def method_color(name: str) -> str:
    return METHOD_COLORS.get(name, OKABE_ITO["black"])


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
    unit: str | None = None,
    f_unit: str | None = None,
) -> Curve:
    """Draw f on [a, b] into ``ax``, with a scan's findings and one run's path.

    Roots are open circles on y = 0, poles dashed grey verticals, jumps dotted
    verticals with a cross, undefined stretches hatched. The run's path is drawn in
    its method's colour; the axes limits stay on [a, b] and on the y range that shows
    the roots (:attr:`Curve.ylim`), so neither a wild iterate nor a pole nor growth far
    from the roots squashes the crossings onto the axis. ``symlog`` puts y on a
    symmetric-log scale, linear within the |f| scale of the roots and logarithmic
    beyond, showing the whole curve (pole spikes clipped). The axes are named after
    the unknown (``V``, ``f(V)``), x with its ``unit`` (``D [mm]``), f with the residual's
    ``f_unit`` (``f(T) [W]``; None or '' for none). Returns the curve drawn.
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
    ax.set_xlabel(axis_label(unknown, unit))
    ax.set_ylabel(axis_label(name, f_unit))
    fit_x_ticks(ax)
    ax.grid(True, color="#E4E4E4", linewidth=0.6, zorder=0)
    handles, _labels = ax.get_legend_handles_labels()
    if len(handles) > 1:
        legend_above(ax)  # inside the axes it would cover part of the curve
    return c


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
    gaps = list(getattr(scan, "gaps", []) or [])
    if gaps:
        # one collection of bands over the full height (x in data, y in axes units), not
        # an axvspan each: a scan of log10(cos x) over a range 1e200 wide has 34,000 gaps,
        # and as many patches took matplotlib 45 s to add and draw
        from matplotlib.collections import PolyCollection

        bands = PolyCollection([[(ga, 0.0), (ga, 1.0), (gb, 1.0), (gb, 0.0)] for ga, gb in gaps],
                               transform=ax.get_xaxis_transform(), facecolor="none",
                               edgecolor="#B0B0B0", hatch="//", linewidth=0, zorder=0,
                               label="f undefined")
        ax.add_collection(bands, autolim=False)
        ends = [(x, 0.0) for gap in gaps for x in gap]
        ax.update_datalim(ends, updatex=True, updatey=False)  # as axvspan: x limits only
        ax.autoscale_view()
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


def convergence_label(quantity: str = "residual", unknown: str = "x", *,
                      unit: str | None = None, f_unit: str | None = None) -> str:
    """The y-axis title of a convergence plot, in the unknown's name: |f(V_k)|, |ΔV_k|;
    with the residual's ``f_unit`` or the unknown's ``unit`` when known (|f(v_k)| [Pa],
    |Δv_k| [L/mol]), as the function plot's axes and the tables' headings name them."""
    label, _pick = CONVERGENCE_QUANTITIES[quantity]
    if unknown != "x":
        label = {"residual": f"|{residual_name(unknown)}({unknown}_k)|",
                 "step": f"|Δ{unknown}_k|"}.get(quantity, label)
    in_unit = {"residual": f_unit, "step": unit}.get(quantity)
    return f"{label} [{in_unit}]" if in_unit else label


def iterate_axis(ax: Any) -> None:
    """The x axis of iterates k: named, with ticks on whole numbers only (an iterate 1.5
    does not exist; matplotlib's default locator put ticks there on a short run)."""
    from matplotlib.ticker import MaxNLocator

    ax.xaxis.set_major_locator(MaxNLocator(integer=True))
    ax.set_xlabel("iterate k")


def draw_convergence(ax: Any, runs: Iterable[Run], *, quantity: str = "residual",
                     unknown: str = "x", unit: str | None = None,
                     f_unit: str | None = None) -> None:
    """|f(x_k)| (quantity="residual") or |Δx_k| ("step") against k, log y-axis, every run,
    with the axis named after the unknown and in its unit (``unit``) or the residual's
    (``f_unit``) when known.

    A run that did not converge is drawn dashed; an iterate where the value is exactly
    zero cannot sit on a log axis and is left out (the table still shows it).
    """
    label = convergence_label(quantity, unknown, unit=unit, f_unit=f_unit)
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
        legend_above(ax)  # inside the axes it would cover some method's iterates
    else:
        ax.text(0.5, 0.5, "no iterates to show yet", transform=ax.transAxes,
                ha="center", va="center", color="#666666")
    iterate_axis(ax)
    ax.set_ylabel(label)
    ax.grid(True, which="both", color="#E4E4E4", linewidth=0.6)


def design_chart_data(values: Any, batch: Any) -> tuple[Any, Any, Any, list[float]]:
    """The design chart's points, computed apart from drawing.

    ``values`` is the parameter the chart runs along (one per row of ``batch``). Returns
    (x, root) of the converged rows in the order of x, the x of the rows that did not
    converge, and the x where a sweep's branch ended (``branch_jump``/``turning_point``
    notes).
    """
    import numpy as np

    x = np.asarray(values, dtype=float).reshape(-1)
    root = np.asarray(batch.root, dtype=float).reshape(-1)
    good = np.asarray(batch.converged, dtype=bool).reshape(-1) & np.isfinite(x)
    order = np.argsort(x[good], kind="stable")
    ends = sorted({float(x[i]) for i, code in batch.notes
                   if code in ("branch_jump", "turning_point") and 0 <= i < x.size})
    return x[good][order], root[good][order], x[~good & np.isfinite(x)], ends


# Log axes spanning less than this many decades also label 2 and 5 within each decade.
FEW_DECADES = 2.0


def plain_log_labels(axis: Any) -> None:
    """Label a log axis spanning under :data:`FEW_DECADES` decades with plain numbers
    (0.05, 0.1, 0.2; 2, 5, 10, 20): each decade, and 2 and 5 within it; a wider span
    (the view as zoomed, read at each draw) by its decades alone, as powers of ten.

    matplotlib's own labels on a span of one or two decades are "2×10⁰ 3×10⁰ 4×10⁰ 6×10⁰",
    set so close that neighbours ran into each other on a chart a few hundred pixels wide.
    """
    from matplotlib.ticker import Formatter, LogFormatterSciNotation

    class _Labels(Formatter):
        def __init__(self, minor: bool) -> None:
            self.minor = minor
            self.powers = LogFormatterSciNotation()

        def set_axis(self, axis: Any) -> None:
            super().set_axis(axis)
            self.powers.set_axis(axis)

        def set_locs(self, locs: Any) -> None:
            self.powers.set_locs(locs)

        def __call__(self, x: float, pos: Any = None) -> str:
            if not (x > 0 and math.isfinite(x)):
                return ""
            lo, hi = sorted(self.axis.get_view_interval())
            few = lo > 0 and math.log10(hi / lo) < FEW_DECADES
            if not few:
                return "" if self.minor else self.powers(x, pos)
            mantissa = round(x / 10.0 ** math.floor(math.log10(x) + 1e-9), 6)
            if self.minor and mantissa not in (2, 5):
                return ""
            return f"{x:g}"

    axis.set_major_formatter(_Labels(minor=False))
    axis.set_minor_formatter(_Labels(minor=True))


def draw_design_chart(ax: Any, values: Any, batch: Any, *, name: str, unknown: str,
                      log_x: bool = False, log_y: bool = False, line: bool = True,
                      x_unit: str = "", unit: str | None = None) -> int:
    """The root against one parameter: converged rows as a line with markers (``line``
    for a sweep, markers alone for a table in no order), rows that did not converge as
    red crosses along the bottom, the ends of a sweep's branch as dotted verticals. The
    axes name the parameter and the unknown with their units (``x_unit``, ``unit``).

    Log axes on request (only positive values are shown on a log axis). Returns the
    number of converged rows drawn.
    """
    from matplotlib.transforms import blended_transform_factory

    x, y, failed, ends = design_chart_data(values, batch)
    if log_x:
        keep = x > 0
        x, y, failed = x[keep], y[keep], failed[failed > 0]
        ends = [e for e in ends if e > 0]
    if log_y:
        keep = y > 0
        x, y = x[keep], y[keep]
    ax.plot(x, y, color=METHOD_COLORS.get(batch.method, FUNCTION_COLOR),
            linestyle="-" if line else "none", marker="o", markersize=3 if x.size > 200 else 4,
            linewidth=1.2, label=f"{unknown} (converged)", zorder=3)
    if failed.size:
        bottom = blended_transform_factory(ax.transData, ax.transAxes)
        ax.plot(failed, [0.02] * failed.size, transform=bottom, linestyle="none",
                marker="x", color=OKABE_ITO["vermillion"], markersize=6,
                label="did not converge", zorder=4)
    for i, end in enumerate(ends):
        ax.axvline(end, color=POLE_COLOR, linestyle=":", linewidth=1.0,
                   label="branch ended" if i == 0 else None, zorder=2)
    if log_x:
        ax.set_xscale("log")
        plain_log_labels(ax.xaxis)
    if log_y:
        ax.set_yscale("log")
        plain_log_labels(ax.yaxis)
    ax.set_xlabel(f"{name} [{x_unit}]" if x_unit else name)
    ax.set_ylabel(f"{unknown} [{unit}]" if unit else unknown)
    ax.grid(True, which="both", color="#E4E4E4", linewidth=0.6, zorder=0)
    if failed.size or ends:
        legend_above(ax)
    return int(x.size)


# The gid of a legend set above its axes: the window's margins make room for it.
LEGEND_ABOVE = "legend-above-axes"


def legend_above(ax: Any) -> Any:
    """The axes' legend in one row above them (two when its labels are long), right-aligned,
    with no frame.

    Inside the axes a legend hides data wherever it goes: "best" weighs the points it
    would cover but still covers some when every corner holds data (the crosses of failed
    rows along the bottom among them). Above the axes it covers nothing. A constrained
    layout (the sheet) makes room for it; the window's margins do (its gid says so).
    """
    handles, labels = ax.get_legend_handles_labels()
    # one row while the labels are short enough to stay over the axes, else two
    columns = len(labels) if sum(len(t) for t in labels) <= LEGEND_ROW_CHARS else \
        -(-len(labels) // 2)
    legend = ax.legend(handles, labels, loc="lower right", bbox_to_anchor=(1.0, 1.0),
                       ncol=max(1, columns), fontsize="small", frameon=False,
                       borderaxespad=0.2, handlelength=1.6, columnspacing=1.2)
    legend.set_gid(LEGEND_ABOVE)
    return legend


LEGEND_ROW_CHARS = 70  # characters of labels one row above a plot's axes holds


def legend_rows(legend: Any) -> int:
    """How many rows a legend set by :func:`legend_above` takes."""
    count = len(legend.get_texts())
    columns = max(1, int(getattr(legend, "_ncols", count) or count))
    return max(1, -(-count // columns))
