"""A civil/hydraulic and mechanical engineer's first trial of the window: findings pinned.

Scenarios are invented for the trial; references are named beside each check.
"""

from __future__ import annotations

import math

import pytest
from PySide6.QtCore import Qt

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import settle, solve_and_wait, type_equation  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated
pytestmark = pytest.mark.filterwarnings("ignore:Enum value .*AA_UseHighDpiPixmaps")


# 1. A pipe length typed "1,200" in the parameters table, or a start value "1,5" in its
#    field, was only "'1,200' is not a finite number", where the command line and a table
#    of inputs say how to write it. The window now says the same: both readings of 1,200
#    (a thousands separator, 1200; a decimal comma, 1.2), one of 1,5.
def test_a_number_typed_with_commas_in_the_window_is_answered_as_on_the_command_line(
        qtbot, window):
    type_equation(qtbot, window, "x^2 = L")
    model = window.inputs.parameters
    assert model.names() == ["L"]
    cell = model.index(0, 1)
    model.setData(cell, "1,200")
    tip = model.data(cell, Qt.ItemDataRole.ToolTipRole)
    assert "'1,200' is not a finite number (a thousands separator? write 1200; or a " \
           "decimal comma? write 1.200)" in tip
    field = window.inputs.fields["x0"]
    field.setText("1,5")
    assert field.problem() == "'1,5' is not a finite number (a decimal comma? write 1.5)"
    field.setText("30")
    model.setData(cell, "1200")
    settle(qtbot, window)
    solution = solve_and_wait(qtbot, window)
    converged = [r for r in solution.runs if r.converged]
    assert converged and all(r.root == pytest.approx(math.sqrt(1200), rel=1e-15)
                             for r in converged)  # math.sqrt reference
