"""A thermal/process engineer's second trial of the window, each finding pinned with real
key and mouse events on the real widgets (pytest-qt, offscreen).

Invented scenarios: a tank of liquid warmed by a few kelvin (its volume growth from an
expansion coefficient typed as handbooks print it, 1/K), and a benzene-toluene bubble
point from Antoine constants in degC and mmHg. Outside references: the closed form
dV = beta V dT, scipy.optimize.brentq on the Antoine form in degC.
"""

from __future__ import annotations

import pytest
import scipy.optimize
from PySide6.QtCore import QPoint, Qt
from PySide6.QtTest import QTest

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import (  # noqa: E402
    edit_cell,
    settle,
    solve_by_keys,
    type_equation,
    type_into,
)

pytest_plugins = ("gui_helpers",)


def choose_unknown_by_keys(qtbot, w, name: str) -> None:
    box = w.strip.unknown_box
    box.setFocus()
    target = box.findData(name)
    while box.currentIndex() != target:
        QTest.keyClick(box, Qt.Key.Key_Down)
    qtbot.waitUntil(lambda: w.analysis is not None and w.analysis.unknown == name
                    and not w.runner.is_busy("preview"), timeout=10_000)


# 2.4. A reciprocal unit typed into a value cell ("3.4e-3 1/K") was not split into value
#     and unit; and the derivative beside an unknown named dV read "df/ddV", a second
#     derivative to the eye. The cell now splits, and the heading reads df/d(dV).
def test_a_reciprocal_unit_splits_and_a_d_name_is_parenthesised(qtbot, window,
                                                               monkeypatch):
    from app.window import equation_strip

    typeset: list[str] = []
    real = equation_strip.render_png

    def recording(latex: str, *args, **kwargs):
        typeset.append(latex)
        return real(latex, *args, **kwargs)

    monkeypatch.setattr(equation_strip, "render_png", recording)
    w = window
    type_equation(qtbot, w, "dV = beta*V*dT")
    view, model = fill_values(qtbot, w, (("beta", "3.4e-3 1/K"), ("V", "2 m^3"),
                                         ("dT", "15 delta_degC")))
    row = model.names().index("beta")
    assert model.index(row, model.UNIT).data() == "1/K"
    settle(qtbot, w)
    solution = solve_by_keys(qtbot, w)
    for run in solution.runs:
        assert run.converged
        assert run.root == pytest.approx(3.4e-3 * 2.0 * 15.0, rel=1e-14)  # dV = beta V dT
    qtbot.waitUntil(lambda: any(r"\frac{df}{d(dV)}" in t for t in typeset), timeout=10_000)
    assert not any("ddV" in t for t in typeset)


BUBBLE = ("Pb = p0*10^(Ab - Bb/(Cb + T)); Pt = p0*10^(At - Bt/(Ct + T)); "
          "xb*Pb + (1 - xb)*Pt = P")


def bubble_point_degC() -> float:
    """scipy.optimize.brentq on the Antoine form in degC and mmHg (constants from memory
    of the handbook tables; an invented liquid of 40 mol-% benzene at 760 mmHg)."""
    def f(t: float) -> float:
        return (0.4 * 10 ** (6.90565 - 1211.033 / (220.790 + t))
                + 0.6 * 10 ** (6.95464 - 1344.8 / (219.482 + t)) - 760.0)
    return scipy.optimize.brentq(f, 50.0, 150.0, xtol=1e-14)


def fill_values(qtbot, w, items):
    """Each (name, typed) value typed into its cell of the parameters table (F2, Return);
    returns the table's (view, model)."""
    view, model = w.inputs.parameters_view, w.inputs.parameters
    items = items.items() if hasattr(items, "items") else items
    for name, typed in items:
        edit_cell(qtbot, view, model.names().index(name), model.VALUE, typed,
                  shown=typed.split()[0])
    return view, model


def type_bubble_point(qtbot, w, c_unit: str) -> None:
    """The invented bubble point typed in: its Antoine constants (C in ``c_unit``), the
    pressures in mmHg, and the unknown T in degC (Return in the unit box)."""
    type_equation(qtbot, w, BUBBLE)
    choose_unknown_by_keys(qtbot, w, "T")
    fill_values(qtbot, w, {"p0": "1 mmHg", "Ab": "6.90565", "Bb": "1211.033 K",
                           "Cb": f"220.79 {c_unit}", "At": "6.95464", "Bt": "1344.8 K",
                           "Ct": f"219.482 {c_unit}", "xb": "0.4", "P": "760 mmHg"})
    set_unknown_unit(qtbot, w, "degC")


def set_unknown_unit(qtbot, w, unit: str) -> None:
    """``unit`` typed into the unit box (its text replaced) and Return pressed; waits until
    the equation reads the unknown in it and the window has settled."""
    unit_box = w.strip.unit_box
    type_into(qtbot, unit_box, unit)
    QTest.keyClick(unit_box, Qt.Key.Key_Return)
    qtbot.waitUntil(lambda: w.analysis is not None and w.analysis.ok
                    and w.analysis.equation.unknown_unit == unit, timeout=10_000)
    settle(qtbot, w)


# 2.2 (the window). Antoine's C typed as a difference beside T in degC gave -178 degC with
# every method agreeing and nothing said; the status line now says the sum is 273.15 K
# off for a correlation written for degC, and the constants less 273.15 give the answer.
def test_the_status_line_says_a_constant_added_to_a_degc_temperature(qtbot, window):
    w = window
    type_bubble_point(qtbot, w, "delta_degC")
    status = w.strip.status.text()
    assert "`Cb + T` and `Ct + T` add a constant" in status and "273.15 K off" in status
    view, model = fill_values(qtbot, w, (("Cb", f"{220.790 - 273.15:.3f} K"),
                        ("Ct", f"{219.482 - 273.15:.3f} K")))
    settle(qtbot, w)
    solution = solve_by_keys(qtbot, w)
    newton = next(r for r in solution.runs if r.method == "newton")
    assert newton.converged
    assert newton.root == pytest.approx(bubble_point_degC(), rel=1e-12)


# 2.8 (the window). "4.18 kJ/kg.K" typed into the cp cell: the cell's tooltip and the
# status line say how it reads and the text meant, before anything is solved.
def test_a_product_after_a_slash_in_a_unit_cell_is_answered(qtbot, window):
    w = window
    type_equation(qtbot, w, "Q = m*cp*(To - Ti)")
    view, model = fill_values(qtbot, w, (("m", "2 kg/s"), ("cp", "4.18 kJ/kg.K"), ("To", "30 degC"),
                        ("Ti", "20 degC")))
    qtbot.waitUntil(lambda: "kJ/(kg*K)" in w.strip.status.text(), timeout=10_000)
    status = w.strip.status.text()
    assert "parameter 'cp'" in status and "it reads as kJ*K/kg" in status
    cell = model.index(model.names().index("cp"), model.UNIT)
    assert "write kJ/(kg*K)" in cell.data(Qt.ItemDataRole.ToolTipRole)


# 2.10. The system window said nothing of units beyond the roots: no word that Ti in degC
#       is taken in kelvin, none on a constant added to such a temperature, where the
#       terminal and the sheet of the same system say both. The notes now follow the
#       roots under the editor.
def test_the_system_window_gives_the_unit_notes_with_the_roots(qtbot, window):
    from gui_helpers import open_system_window, solve_system_by_click

    sw = open_system_window(qtbot, window)
    sw.editor.setFocus()
    QTest.keyClicks(sw.editor, "x = 1/(C + To); 2*x = k")
    sw.unknown_names.setFocus()
    QTest.keyClicks(sw.unknown_names, "x, To")
    qtbot.waitUntil(lambda: sw.parameters.names() == ["C", "k"], timeout=10_000)
    edit_cell(qtbot, sw.parameters_view, 0, 1, "200 delta_degC", shown="200")
    edit_cell(qtbot, sw.parameters_view, 1, 1, "0.001 1/K", shown="0.001")
    names = sw.unknowns.names()
    edit_cell(qtbot, sw.unknowns_view, names.index("x"), 1, "0.001")
    edit_cell(qtbot, sw.unknowns_view, names.index("To"), 1, "300")
    edit_cell(qtbot, sw.unknowns_view, names.index("To"), 2, "degC")
    solution = solve_system_by_click(qtbot, sw)
    newton = next(r for r in solution.runs if r.method == "newton")
    assert newton.converged
    # 2/(C + To_K) = k: To_K = 2/k - C = 1800 K, 1526.85 degC (closed form)
    assert newton.root["To"] == pytest.approx(1526.85, rel=1e-12)
    status = sw.status.text()
    assert "Note: `C + To` adds a constant to a temperature typed in degC/degF" in status


# 2.13. The line under the plot (agreement, failures, start notes, definitions at the
#       root) had a fixed height of three lines and its text centred in it: a longer one
#       (the root below absolute zero of finding 2.12 beside a failed false position)
#       lost the halves of its first and last lines. It now starts at the top and
#       scrolls in place; nothing is cut.
def test_a_long_agreement_line_scrolls_instead_of_losing_its_ends(qtbot, window):
    w = window
    w.resize(1280, 800)
    type_bubble_point(qtbot, w, "degC")
    solve_by_keys(qtbot, w)
    label, area = w.lanes.agreement, w.lanes.agreement_area
    assert "is below absolute zero: no temperature" in label.text()
    qtbot.waitUntil(lambda: area.verticalScrollBar().maximum() > 0, timeout=5000)
    assert label.alignment() & Qt.AlignmentFlag.AlignTop
    assert label.height() >= label.heightForWidth(label.width())  # the whole text laid out
    bar = area.verticalScrollBar()
    for _ in range(6):  # the user clicks the bar below its slider: a page at a time
        QTest.mouseClick(bar, Qt.MouseButton.LeftButton,
                         pos=QPoint(bar.width() // 2, bar.height() - 3))
    qtbot.waitUntil(lambda: bar.value() == bar.maximum(), timeout=5000)


# 2.14. A temperature difference typed "15 delta_degF" showed as "delta_…" in the
#       parameters table's narrow unit column, the same as delta_degC, 1.8 times apart
#       (NIST SP 811: 1 degF interval = 5/9 K). The cut now falls in the middle, the
#       end ("…gF") kept, and the cell's tooltip has the unit whole; the solve uses
#       15*5/9 K.
def test_a_long_unit_keeps_its_end_in_the_parameters_table(qtbot, window):
    w = window
    type_equation(qtbot, w, "Q = m*cp*dT")
    view, model = fill_values(qtbot, w, (("m", "2 kg/s"), ("cp", "4.18 kJ/(kg*K)"),
                                         ("dT", "15 delta_degF")))
    cell = model.index(model.names().index("dT"), model.UNIT)
    assert cell.data(Qt.ItemDataRole.ToolTipRole) == "delta_degF"
    assert view.textElideMode() == Qt.TextElideMode.ElideMiddle
    shown = view.fontMetrics().elidedText("delta_degF", view.textElideMode(),
                                          view.columnWidth(model.UNIT) - 8)
    assert shown.endswith("F")  # degF told from degC at a glance
    settle(qtbot, w)
    solution = solve_by_keys(qtbot, w)
    assert solution.runs[0].root == pytest.approx(2 * 4180.0 * 15 * 5 / 9, rel=1e-13)
