"""A process engineer's trial of the window, each finding pinned with real key and mouse
events on the real widgets (pytest-qt, offscreen).

The jobs are invented scenarios: a cubic equation of state for a made-up fluid in a drum
(a = 1.4 Pa·m⁶/mol², b = 60 cm³/mol, 8 bar, 46.85 °C: three real roots), and a
Rachford–Rice balance of a made-up three-component feed. Outside references: numpy.roots
on the cubic written out as a polynomial in v, scipy.optimize.brentq on the Rachford–Rice
function.
"""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import (  # noqa: E402
    edit_cell,
    settle,
    solve_by_keys,
    type_equation,
)

pytest_plugins = ("gui_helpers",)

CUBIC_EOS = "P = R*T/(v - b) - a/(v^2 + 2*b*v - b^2)"
DRUM = {"P": ("8", "bar"), "R": ("8.314462618", "J/(mol*K)"), "T": ("46.85", "degC"),
        "a": ("1.4", "Pa*m^6/mol^2"), "b": ("60", "cm^3/mol")}


def drum_roots_l_per_mol() -> np.ndarray:
    """The three real roots of the drum's cubic (numpy.roots), in L/mol."""
    R, T, P, a, b = 8.314462618, 46.85 + 273.15, 8e5, 1.4, 60e-6
    # P (v - b)(v² + 2bv - b²) = RT (v² + 2bv - b²) - a (v - b), written out in powers of v
    coefficients = [P, P * b - R * T, -3 * P * b**2 - 2 * b * R * T + a,
                    P * b**3 + R * T * b**2 - a * b]
    roots = np.roots(coefficients)
    assert np.all(np.abs(roots.imag) < 1e-12)
    return np.sort(roots.real) * 1000.0


def choose_unknown_by_keys(qtbot, w, name: str) -> None:
    box = w.strip.unknown_box
    box.setFocus()
    target = box.findData(name)
    while box.currentIndex() != target:
        QTest.keyClick(box, Qt.Key.Key_Down)
    qtbot.waitUntil(lambda: w.analysis is not None and w.analysis.unknown == name
                    and not w.runner.is_busy("preview"), timeout=10_000)


def type_drum(qtbot, w) -> None:
    """The drum's cubic, solved for v in L/mol, every value typed into its cell."""
    type_equation(qtbot, w, CUBIC_EOS)
    choose_unknown_by_keys(qtbot, w, "v")
    view, model = w.inputs.parameters_view, w.inputs.parameters
    for name, (value, unit) in DRUM.items():
        row = model.names().index(name)
        edit_cell(qtbot, view, row, model.VALUE, value)
        edit_cell(qtbot, view, row, model.UNIT, unit)
    unit_box = w.strip.unit_box
    unit_box.setFocus()
    qtbot.keyClicks(unit_box, "L/mol")
    QTest.keyClick(unit_box, Qt.Key.Key_Return)
    qtbot.waitUntil(lambda: w.analysis is not None and w.analysis.ok
                    and w.analysis.equation.unknown_unit == "L/mol", timeout=10_000)
    settle(qtbot, w)


def test_the_plot_shows_every_converged_root_even_outside_the_grown_bracket(qtbot, window):
    w = window
    type_drum(qtbot, w)
    # Start values and scan range left blank: x0 = 1 L/mol, the bracket grown around it
    # holds the middle root, while Newton–Raphson and the secant reach the vapour root.
    solution = solve_by_keys(qtbot, w)
    roots = drum_roots_l_per_mol()
    converged = [r.root for r in solution.runs if r.converged]
    assert any(abs(x - roots[2]) < 1e-9 * roots[2] for x in converged)  # numpy.roots
    bracket = solution.start.bracket
    assert bracket is not None and not bracket[0] <= roots[2] <= bracket[1]
    lo, hi = w.plot.ax.get_xlim()
    for x in converged:
        assert lo < x < hi, f"root {x} drawn outside the plot's [{lo}, {hi}]"
