"""The special functions in the window, typed with real key events: the equation reads as
tables print it (J_0, erf) and solves to the values scipy.special gives (jn_zeros, erfinv).
"""

from __future__ import annotations

import pytest
import scipy.special as special
from PySide6.QtCore import Qt

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import settle, solve_by_keys, type_equation  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated
pytestmark = pytest.mark.filterwarnings("ignore:Enum value .*AA_UseHighDpiPixmaps")


def _type_field(qtbot, field, text: str) -> None:
    field.setFocus()
    field.selectAll()
    qtbot.keyClicks(field, text)
    qtbot.keyClick(field, Qt.Key.Key_Return)


def test_a_bessel_equation_typed_reads_as_tabulated_and_solves_to_the_zero(qtbot, window):
    # the second zero of J0 (A&S Table 9.5; scipy.special.jn_zeros), bracketed between 4
    # and 7 and started at 5
    type_equation(qtbot, window, "J0(x) = 0")
    assert window.analysis.ok
    assert "J_{0}" in window.analysis.equation.latex
    for key, text in (("x0", "5"), ("x1", "5.1"), ("a", "4"), ("b", "7")):
        _type_field(qtbot, window.inputs.fields[key], text)
    settle(qtbot, window)
    solution = solve_by_keys(qtbot, window)
    expected = special.jn_zeros(0, 2)[1]
    converged = [r for r in solution.runs if r.converged]
    assert converged and all(r.root == pytest.approx(expected, rel=1e-12) for r in converged)


def test_a_name_k1_stays_a_parameter_in_the_window(qtbot, window):
    # an equilibrium ratio named K1 (Rachford-Rice, one invented component pair): a row of
    # the parameters table, not the Bessel function
    type_equation(qtbot, window, "z*(K1 - 1)/(1 + V*(K1 - 1)) = 0.1")
    assert "K1" in window.analysis.names  # a name (values still to give), no function
    assert "function" not in (window.analysis.error or "")
    assert "K1" in window.inputs.parameters.names()
