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


# 2. The start-value fields' tooltips said x0 blank is "the midpoint of the bracket", x1
#    blank "x0 nudged by 1e-4" and the bracket blank "the scan range", while blanks are
#    seeded from a quick scan of the scan range first (the README's rule). They now say
#    the rule the solve follows, checked here against what a solve with blanks chose.
def test_the_start_fields_tooltips_say_how_blanks_are_filled(qtbot, window):
    fields = window.inputs.fields
    assert "quick scan of the scan range" in fields["x0"].toolTip()
    assert "the end of that sign change nearest x0" in fields["x1"].toolTip()
    assert "else x0 moved away from 0 by 1e-4 of itself plus 1e-4" in fields["x1"].toolTip()
    assert "that sign change, else the scan range" in fields["a"].toolTip()
    # Manning's normal depth (an invented canal, plain SI numbers) with every start blank
    type_equation(qtbot, window, "Q = (1/n)*((b + z*y)*y)^(5/3)/(b + 2*y*sqrt(1 + z^2))^(2/3)"
                                 "*sqrt(S)")
    model = window.inputs.parameters
    for name, value in {"Q": "6.5", "n": "0.016", "b": "2.4", "z": "1.5", "S": "0.0008"}.items():
        model.setData(model.index(model.names().index(name), 1), value)
    for key, value in (("x0", None), ("x1", None), ("a", None), ("b", None), ("from", 0.01),
                       ("to", 5.0)):
        window.inputs.set_field(key, value)
    settle(qtbot, window)
    solution = solve_and_wait(qtbot, window)
    codes = [c.code for c in solution.start.choices]
    assert codes[:3] == ["x0_scan_root", "x1_scan", "bracket_scan_cell"]
    lo, hi = solution.start.bracket
    assert solution.start.x1 in (lo, hi)  # an end of the sign change
    # the depth by scipy.optimize.brentq on the same Manning equation (common practice)
    import scipy.optimize

    def f(y: float) -> float:
        return 6.5 - (1 / 0.016) * ((2.4 + 1.5 * y) * y) ** (5 / 3) / (
            2.4 + 2 * y * math.sqrt(1 + 1.5**2)) ** (2 / 3) * math.sqrt(0.0008)

    depth = scipy.optimize.brentq(f, 0.05, 5.0, xtol=1e-15, rtol=1e-15)
    assert all(r.root == pytest.approx(depth, rel=1e-13) for r in solution.runs if r.converged)
    assert lo <= depth <= hi


# 3. With the sewer's angle in degrees, a lane's headings "f′(th) [m^3/s/deg]" and
#    "f(th) [m^3/s]" were cut at both ends without a sign ("th) [m^3/s/de"), where a cell
#    too narrow for its figures ends in "…". Every table's headings now elide on the
#    right: the name stays readable and the "…" says that more is there.
def test_a_heading_wider_than_its_column_ends_in_an_ellipsis(qtbot, window):
    from PySide6.QtGui import QFontMetrics

    type_equation(qtbot, window, "x^2 = c")
    window.inputs.parameters.setData(window.inputs.parameters.index(0, 1), "2")
    settle(qtbot, window)
    solve_and_wait(qtbot, window)
    views = [lane.table for lane in window.lanes.lanes.values()] + [window.roots.view]
    for view in views:
        header = view.horizontalHeader()
        assert header.textElideMode() == Qt.TextElideMode.ElideRight
        # what the header paints for a heading wider than its section (Qt's own eliding)
        title = "f′(th) [m^3/s/deg]"
        shown = QFontMetrics(header.font()).elidedText(title, header.textElideMode(), 60)
        assert shown.endswith("…") and shown.startswith("f")
