"""Units in the window, worked with real key events: the unit column of the parameters table
(``150 mm`` typed in a value cell splits), the unit box beside the unknown and the
dimension-check switch. Roots are checked against closed forms (algebra, named beside each
check) and NIST SP 811's exact definitions (1 ft = 0.3048 m, 1 in = 25.4 mm).
"""

from __future__ import annotations

import math

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import settle, solve_by_keys, type_equation  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated
pytestmark = pytest.mark.filterwarnings("ignore:Enum value .*AA_UseHighDpiPixmaps")


def _type_cell(qtbot, window, row: int, column: int, text: str) -> None:
    """F2 on a cell of the parameters table, type, Return: as a user edits it."""
    view = window.inputs.parameters_view
    view.setFocus()
    view.setCurrentIndex(window.inputs.parameters.index(row, column))
    qtbot.keyClick(view, Qt.Key.Key_F2)
    qtbot.waitUntil(lambda: view.indexWidget(view.currentIndex()) is not None
                    or QApplication.focusWidget() is not view, timeout=5_000)
    editor = QApplication.focusWidget()
    editor.selectAll()
    qtbot.keyClicks(editor, text)
    qtbot.keyClick(editor, Qt.Key.Key_Return)
    qtbot.waitUntil(lambda: QApplication.focusWidget() is view, timeout=5_000)


def _type_field(qtbot, field, text: str) -> None:
    field.setFocus()
    field.selectAll()
    if text:
        qtbot.keyClicks(field, text)
    else:
        qtbot.keyClick(field, Qt.Key.Key_Delete)
    qtbot.keyClick(field, Qt.Key.Key_Return)


def _choose_unknown(qtbot, window, name: str) -> None:
    """Pick the unknown in its box with the keyboard (a closed combo box searches by key)."""
    box = window.strip.unknown_box
    box.setFocus()
    qtbot.keyClicks(box, name)
    qtbot.waitUntil(lambda: window.strip.chosen_unknown() == name, timeout=5_000)
    settle(qtbot, window)
    qtbot.waitUntil(lambda: window.analysis is not None and window.analysis.unknown == name,
                    timeout=10_000)


def _row(window, name: str) -> int:
    return window.inputs.parameters.names().index(name)


def _typed_in(qtbot, window, equation: str, unknown: str, values: dict[str, str],
              unit: str) -> None:
    """The equation typed, its unknown picked, each value typed into its cell, and the
    unknown's unit into its box (each with Return), as a user sets a problem up."""
    type_equation(qtbot, window, equation)
    _choose_unknown(qtbot, window, unknown)
    model = window.inputs.parameters
    for name, typed in values.items():
        _type_cell(qtbot, window, _row(window, name), model.VALUE, typed)
    _type_field(qtbot, window.strip.unit_box, unit)


def test_value_typed_with_its_unit_splits_and_the_root_comes_in_the_unit_box_unit(qtbot,
                                                                                   window):
    # Invented scenario: the bore of a line carrying 35 L/s at 2 ft/s.
    type_equation(qtbot, window, "Q = pi*D^2/4*v")
    _choose_unknown(qtbot, window, "D")
    model = window.inputs.parameters
    _type_cell(qtbot, window, _row(window, "Q"), model.VALUE, "35 L/s")
    _type_cell(qtbot, window, _row(window, "v"), model.VALUE, "2ft/s")
    q, v = model.rows()[_row(window, "Q")], model.rows()[_row(window, "v")]
    assert (q.text, q.unit) == ("35", "L/s")  # the value cell split it
    assert (v.text, v.unit) == ("2", "ft/s")
    assert model.data(model.index(_row(window, "Q"), model.UNIT)) == "L/s"
    _type_field(qtbot, window.strip.unit_box, "in")
    _type_field(qtbot, window.inputs.fields["x0"], "6")
    qtbot.waitUntil(lambda: window.analysis is not None and window.analysis.ok
                    and window.analysis.equation.unknown_unit == "in", timeout=10_000)
    solution = solve_by_keys(qtbot, window)
    # D = sqrt(4Q/(pi v)) (algebra) with v = 2 ft/s = 0.6096 m/s, in inches of 25.4 mm
    expected = math.sqrt(4 * 0.035 / (math.pi * 0.6096)) / 0.0254
    converged = [r for r in solution.runs if r.converged]
    assert converged and all(r.root == pytest.approx(expected, rel=1e-12) for r in converged)
    ws = window.worksheet()
    assert ws.unknown_unit == "in"
    assert {p.name: p.unit for p in ws.parameters} == {"Q": "L/s", "v": "ft/s"}


def test_changing_the_unknowns_unit_keeps_the_start_values_physical(qtbot, window):
    # Invented scenario: a bore started at 150 mm, then asked in inches. The start values
    # keep their lengths (NIST SP 811: 1 in = 25.4 mm exactly): 150 mm is 5.90551 in, and
    # the bracket [100, 200] mm is [3.93701, 7.87402] in; the root is the same length.
    _typed_in(qtbot, window, "Q = pi*D^2/4*v", "D", {"Q": "35 L/s", "v": "2 m/s"}, "mm")
    fields = window.inputs.fields
    for key, text in (("x0", "150"), ("a", "100"), ("b", "200")):
        _type_field(qtbot, fields[key], text)
    qtbot.waitUntil(lambda: window.analysis is not None and window.analysis.ok
                    and window.analysis.equation.unknown_unit == "mm", timeout=10_000)
    _type_field(qtbot, window.strip.unit_box, "in")
    assert fields["x0"].value() == pytest.approx(150 / 25.4, rel=1e-11)
    assert fields["a"].value() == pytest.approx(100 / 25.4, rel=1e-11)
    assert fields["b"].value() == pytest.approx(200 / 25.4, rel=1e-11)
    assert "converted from mm to in" in window.statusBar().currentMessage()
    qtbot.waitUntil(lambda: window.analysis is not None and window.analysis.ok
                    and window.analysis.equation.unknown_unit == "in", timeout=10_000)
    solution = solve_by_keys(qtbot, window)
    expected_in = math.sqrt(4 * 0.035 / (math.pi * 2.0)) / 0.0254  # D = sqrt(4Q/(pi v))
    converged = [r for r in solution.runs if r.converged]
    assert converged and all(r.root == pytest.approx(expected_in, rel=1e-12)
                             for r in converged)
    # a unit typed into the blank box states the unit of what is there: nothing converts
    _type_field(qtbot, window.strip.unit_box, "")
    _type_field(qtbot, fields["x0"], "0.15")
    _type_field(qtbot, window.strip.unit_box, "m")
    assert fields["x0"].value() == 0.15


def test_a_dimensional_mismatch_is_named_in_the_status_line(qtbot, window):
    type_equation(qtbot, window, "H = Q + D")
    model = window.inputs.parameters
    _type_cell(qtbot, window, _row(window, "Q"), model.VALUE, "0.35 m^3/s")
    _type_cell(qtbot, window, _row(window, "D"), model.VALUE, "150 mm")
    qtbot.waitUntil(lambda: "added to" in window.strip.status.text(), timeout=10_000)
    status = window.strip.status.text()
    assert "`Q + D`" in status and "m³/s added to m" in status


def test_a_bad_unit_is_tinted_and_an_unknown_one_named_with_close_names(qtbot, window):
    type_equation(qtbot, window, "x = a*b")
    model = window.inputs.parameters
    _type_cell(qtbot, window, _row(window, "a"), model.VALUE, "2")
    _type_cell(qtbot, window, _row(window, "a"), model.UNIT, "m;ls")
    assert "not allowed in a unit" in model.rows()[_row(window, "a")].problem
    _type_cell(qtbot, window, _row(window, "a"), model.UNIT, "mmm")
    _type_cell(qtbot, window, _row(window, "b"), model.VALUE, "3")
    qtbot.waitUntil(lambda: "unknown unit 'mmm'" in window.strip.status.text(),
                    timeout=10_000)
    assert "'mm'" in window.strip.status.text()


def test_switching_the_dimension_check_off_lets_a_correlation_through(qtbot, window):
    # Hazen-Williams-like power law with a constant whose unit is hidden (invented numbers)
    _typed_in(qtbot, window, "Q = k*D^2.63", "D", {"Q": "50 L/s", "k": "3.1"}, "mm")
    qtbot.waitUntil(lambda: "does not fit" in window.strip.status.text(), timeout=10_000)
    window.strip.dimension_box.setFocus()
    qtbot.keyClick(window.strip.dimension_box, Qt.Key.Key_Space)  # a real key toggles it
    assert not window.strip.dimension_check()
    qtbot.waitUntil(lambda: window.analysis is not None and window.analysis.ok,
                    timeout=10_000)
    assert any("not checked" in n for n in window.analysis.notes)
    assert window.worksheet().dimension_check is False
    _type_field(qtbot, window.inputs.fields["x0"], "200")
    solution = solve_by_keys(qtbot, window)
    expected_mm = 1000 * (0.05 / 3.1) ** (1 / 2.63)  # D = (Q/k)^(1/2.63) (algebra), in mm
    assert solution.runs[0].root == pytest.approx(expected_mm, rel=1e-12)


def test_a_worksheet_with_units_opens_with_its_units_shown(qtbot, window, tmp_path):
    from app.documents.worksheet import Parameter, Worksheet, save

    path = tmp_path / "bore.json"
    save(Worksheet("Q = pi*D^2/4*v", unknown="D", unknown_unit="mm", dimension_check=False,
                   parameters=(Parameter("Q", 35.0, "", "L/s"), Parameter("v", 2.0, "", "m/s"))),
         path)
    assert window.open_path(path, ask=False)
    settle(qtbot, window)
    assert window.strip.unit_box.text() == "mm"
    assert not window.strip.dimension_box.isChecked()
    model = window.inputs.parameters
    assert model.data(model.index(_row(window, "Q"), model.UNIT)) == "L/s"
    assert window.worksheet().parameters == (Parameter("Q", 35.0, "", "L/s"),
                                             Parameter("v", 2.0, "", "m/s"))
    assert not window.is_modified()  # opening is not editing
    qtbot.waitUntil(lambda: window.analysis is not None and window.analysis.ok,
                    timeout=10_000)
    assert window.analysis.equation.unknown_unit == "mm"
    assert "in mm" in window.strip.status.text()
