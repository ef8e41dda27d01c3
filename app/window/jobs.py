"""Work the window runs off the UI thread: solve, polish and scan a worksheet and sample f.

Plain functions over a frozen :class:`Worksheet`; they touch no widget. ``equation`` is
the document's parse of exactly that worksheet, or None when the job must parse it
(the user pressed Solve before the live reading caught up).
"""

from __future__ import annotations

import math
from typing import Any

from app.documents import plotdata
from app.documents.worksheet import Worksheet


def plot_range(ws: Worksheet, solution: Any = None) -> tuple[float, float]:
    """Where to draw f: the scan range, else the bracket and every converged root widened,
    else around x0 and the roots.

    An open method may converge outside the bracket the bracketing methods were given (or
    that was grown around x0): a plot of the bracket alone then showed neither that root
    nor the path to it, while the lanes reported it.
    """
    if ws.scan is not None:
        return ws.scan
    start = solution.start if solution is not None else None
    bracket = ws.settings.bracket or (start.bracket if start is not None else None)
    roots = [] if solution is None else [r.root for r in solution.runs
                                         if r.converged and math.isfinite(r.root)]
    if bracket is not None:
        lo, hi = min(*bracket, *roots), max(*bracket, *roots)
        pad = 0.15 * (hi - lo)
        return (lo - pad, hi + pad)
    points = [x for x in (ws.settings.x0, start.x0 if start is not None else None)
              if x is not None]
    points += roots
    if not points:
        return (-10.0, 10.0)
    lo, hi = min(points), max(points)
    half = max(hi - lo, 0.5 * max(abs(lo), abs(hi)), 1.0)
    return (lo - half, hi + half)


def _breaks(scan: Any) -> list[float]:
    return list(scan.poles) + list(scan.discontinuities) if scan is not None else []


def solve_job(ws: Worksheet, equation: Any, scan: Any) -> tuple[Any, tuple[float, float], Any]:
    from solvers import pipeline

    solution = pipeline.solve(ws, equation)
    _prepare_definitions(solution)
    a, b = plot_range(ws, solution)
    return solution, (a, b), plotdata.curve(solution.equation.f, a, b, breaks=_breaks(scan))


def _prepare_definitions(solution: Any) -> None:
    """The definitions' values at the root and their units, worked out here, in the
    worker: the window only reads them (both are kept once computed)."""
    if solution.definitions_at_root is not None:
        solution.equation.definition_units(derived=True)


def polish_job(ws: Worksheet, equation: Any, x: float,
                scan: Any) -> tuple[Any, tuple[float, float], Any]:
    from solvers import pipeline

    solution = pipeline.polish(ws, x, equation)
    _prepare_definitions(solution)
    a, b = plot_range(ws, solution)
    breaks = list(scan.poles) if scan is not None else []
    return solution, (a, b), plotdata.curve(solution.equation.f, a, b, breaks=breaks)


def scan_job(ws: Worksheet, equation: Any, progress: Any, cancel: Any) -> tuple[Any, Any, Any]:
    from solvers import pipeline

    if equation is None:
        equation = pipeline.equation_of(ws)
    scan = pipeline.scan_worksheet(ws, equation, progress=progress, cancel=cancel)
    return scan, equation, plotdata.curve(equation.f, scan.a, scan.b, breaks=_breaks(scan))
