"""app.documents.figures: plotting samples and drawings shared by the window and the report."""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from matplotlib.figure import Figure

from app.documents import figures
from solvers.equation import parse_equation
from solvers.methods import false_position, newton, secant


def test_curve_breaks_the_line_at_a_pole_and_ignores_its_spike():
    c = figures.curve(lambda x: 1.0 / (x - 1.0), 0.0, 3.0, n=2001)
    x, y = c.x, c.y
    # No drawn segment joins the two sides of the pole at x = 1.
    for i in range(len(x) - 1):
        if np.isfinite(y[i]) and np.isfinite(y[i + 1]):
            assert not (x[i] < 1.0 < x[i + 1])
    lo, hi = c.ylim
    # The samples next to the pole reach |y| ~ 1000; the limits show the body of the curve.
    assert np.nanmax(np.abs(y)) > 500
    assert -60 < lo < -0.5 and 0.5 < hi < 60


def test_curve_keeps_a_smooth_function_whole_and_shows_the_axis():
    c = figures.curve(lambda x: x**2 + 1.0, 0.0, 3.0, n=301)
    assert np.all(np.isfinite(c.y))
    lo, hi = c.ylim
    assert lo <= 0.0 and hi >= 10.0  # 0 on screen (the axis), and the whole curve up to 10


def test_curve_leaves_gaps_where_f_is_undefined_and_never_raises():
    c = figures.curve(lambda x: np.sqrt(x), -1.0, 1.0, n=201)
    assert np.all(np.isnan(c.y[c.x < 0]))
    assert np.all(np.isfinite(c.y[c.x > 0]))

    def hostile(x):
        raise ZeroDivisionError("no")

    c = figures.curve(hostile, 0.0, 1.0, n=11)
    assert np.all(np.isnan(c.y)) and c.ylim == (-1.0, 1.0)
    c = figures.curve(lambda x: 3.0, 0.0, 1.0, n=5)  # a constant "vectorises" to a scalar
    assert np.all(c.y == 3.0)
    with pytest.raises(ValueError, match="plot range"):
        figures.curve(lambda x: x, 1.0, 1.0)


def _runs(text: str, x0: float, a: float, b: float):
    eq = parse_equation(text)
    return eq, [newton(eq.f, x0, fprime=eq.fprime), secant(eq.f, x0, x0 + 0.1),
                false_position(eq.f, a, b)]


def test_draw_function_marks_roots_poles_and_the_newton_tangents():
    from types import SimpleNamespace

    eq, runs = _runs("x^2 - 2", 3.0, 0.0, 3.0)
    newton_run = runs[0]
    # sqrt(2) = 1.41421356237309504... (exact value; common practice)
    assert newton_run.root == pytest.approx(math.sqrt(2), rel=1e-15)
    roots = [SimpleNamespace(x=-math.sqrt(2)), SimpleNamespace(x=math.sqrt(2))]
    scan = SimpleNamespace(roots=roots, poles=[0.5], discontinuities=[], gaps=[(2.5, 2.7)])
    fig = Figure()
    ax = fig.add_subplot()
    figures.draw_function(ax, eq.f, -3.0, 3.0, scan=scan, run=newton_run, unknown="x")
    labels = [line.get_label() for line in ax.get_lines()]
    roots = next(line for line in ax.get_lines() if line.get_label().startswith("root"))
    assert list(roots.get_xdata()) == [-math.sqrt(2), math.sqrt(2)]
    assert "pole" in labels and "f(x)" in labels
    finite_steps = [s for s in newton_run.steps if math.isfinite(s.x)]
    tangents = [line for line in ax.get_lines()
                if line.get_color() == figures.method_color("newton")
                and len(line.get_xdata()) == 2 and line.get_linestyle() == "-"]
    # One tangent from each iterate to where it meets the axis.
    assert len(tangents) == len(finite_steps) - 1
    for line, (s, nxt) in zip(tangents, zip(finite_steps, finite_steps[1:], strict=False),
                              strict=True):
        assert list(line.get_xdata()) == [s.x, nxt.x]
        assert list(line.get_ydata()) == [s.fx, 0.0]
    assert ax.get_xlim() == (-3.0, 3.0)


def test_draw_function_shows_the_shrinking_bracket_of_false_position():
    eq, runs = _runs("x^3 - 2*x - 5", 2.0, 2.0, 3.0)
    fp = runs[2]
    fig = Figure()
    ax = fig.add_subplot()
    figures.draw_function(ax, eq.f, 1.5, 3.5, run=fp, unknown="x")
    bars = [line for line in ax.get_lines() if line.get_linewidth() == figures.BRACKET_WIDTH]
    brackets = [(s.lo, s.hi) for s in fp.steps if s.lo is not None and s.hi is not None]
    distinct = [b for i, b in enumerate(brackets) if i == 0 or b != brackets[i - 1]]
    drawn = [tuple(float(v) for v in line.get_xdata()) for line in bars]
    # The first brackets the method held, in order, each drawn once, at most BRACKET_BARS.
    assert drawn == distinct[: figures.BRACKET_BARS] and len(drawn) > 2
    widths = [abs(line.get_xdata()[1] - line.get_xdata()[0]) for line in bars]
    assert widths[-1] < widths[0]


def test_draw_convergence_is_log_scale_and_shows_every_iterate_with_a_residual():
    eq, runs = _runs("x^3 - 2*x - 5", 2.0, 2.0, 3.0)
    fig = Figure()
    ax = fig.add_subplot()
    figures.draw_convergence(ax, runs)
    assert ax.get_yscale() == "log"
    lines = ax.get_lines()
    assert len(lines) == 3
    for line, run in zip(lines, runs, strict=True):
        ks, vs = figures.convergence_series(run)
        assert list(line.get_xdata()) == ks
        assert list(line.get_ydata()) == [abs(s.fx) for s in run.steps if s.fx not in (0.0,)
                                          and math.isfinite(s.fx)]
    # Newton from x0 = 2 on this cubic reaches |f| < 1e-10 within a handful of iterates
    # (quadratic convergence on a simple root; common practice), and the plot shows it.
    _ks, vs = figures.convergence_series(runs[0])
    assert vs[-1] < 1e-10 and len(vs) < 10
    assert vs[-2] < vs[-3] ** 1.5  # superlinear: each residual far below the one before
    fig2 = Figure()
    ax2 = fig2.add_subplot()
    figures.draw_convergence(ax2, runs, quantity="step")
    assert ax2.get_ylabel() == "|Δx_k|"


def test_figures_uses_no_pyplot_and_no_qt():
    code = ("import sys, app.documents.figures; "
            "print('matplotlib.pyplot' in sys.modules, 'PySide6' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=Path(__file__).resolve().parents[1], check=True).stdout
    assert out.split() == ["False", "False"]
