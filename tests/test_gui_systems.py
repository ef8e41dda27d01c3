"""The system window worked with real key and mouse events (pytest-qt, offscreen).

References: the root of x^2 + y^2 = 4, x*y = 1 with x > y > 0 by hand (x^2 = 2 + sqrt(3));
the pump sample against solve_system called directly (the same core, outside the window).
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest

from app.documents import worksheet
from app.window.views import CopyTableView
from solvers.systems.pipeline import solve_worksheet

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import (  # noqa: E402
    SAMPLES,
    edit_cell,
    open_system_window,
    solve_by_keys,
    solve_system_by_click,
    type_system,
)

pytest_plugins = ("gui_helpers",)

PUMP = SAMPLES / "systems" / "pump-two-parallel-lines.json"


def test_typing_a_system_filling_starts_and_solving(qtbot, window):
    sw = open_system_window(qtbot, window)
    type_system(qtbot, sw, "x^2 + y^2 = 4\nx*y = 1", ["x", "y"])
    assert "2 equations in x, y" in sw.status.text()
    edit_cell(qtbot, sw.unknowns_view, 0, 1, "2")
    edit_cell(qtbot, sw.unknowns_view, 1, 1, "0.3")
    solution = solve_system_by_click(qtbot, sw)
    x = math.sqrt(2 + math.sqrt(3))  # by hand
    assert sw.lanes.count() == 2
    for run in solution.runs:
        assert run.converged
        assert run.root["x"] == pytest.approx(x, rel=1e-15)
        assert run.root["y"] == pytest.approx(1 / x, rel=1e-15)
        model = sw.lane_models[run.method]
        assert model.rowCount() == len(run.steps)
        last = model.rowCount() - 1
        assert model.raw(last, 2) == run.root["x"] and model.raw(last, 3) == run.root["y"]
        assert model.headers()[:4] == ["k", "block", "x", "y"]
    # a lane's table copies as tab-separated text at full precision
    view = sw.lanes.widget(0).findChild(CopyTableView)
    text = view.copy_all().splitlines()
    assert text[0].split("\t")[:4] == ["k", "block", "x", "y"]
    assert text[-1].split("\t")[2] == repr(solution.runs[0].root["x"])
    # the convergence view: ||F|| and the step length of both methods
    ax = sw.convergence.figure.axes[0]
    assert len(ax.get_lines()) == 4 and ax.get_yscale() == "log"
    from app.documents.words import CAUTION_LINE

    assert sw.caution.text() == CAUTION_LINE and sw.caution.isVisible()


def test_a_system_that_has_no_solution_is_shown_as_not_converged(qtbot, window):
    sw = open_system_window(qtbot, window)
    sw.editor.setFocus()
    QTest.keyClicks(sw.editor, "x^2 + y^2 = 1; (x - 3)^2 + y^2 = 1")
    qtbot.waitUntil(lambda: sw.unknowns.names() == ["x", "y"], timeout=10_000)
    edit_cell(qtbot, sw.unknowns_view, 1, 1, "0.5")
    solution = solve_system_by_click(qtbot, sw)
    assert all(not r.converged for r in solution.runs)
    assert "did not converge" in sw.lanes.tabText(0)
    assert "did not converge" in sw.status.text()


def test_a_bad_start_value_is_named_and_nothing_runs(qtbot, window):
    sw = open_system_window(qtbot, window)
    sw.editor.setFocus()
    QTest.keyClicks(sw.editor, "a*x + y = 1; x - y = 0")
    qtbot.waitUntil(lambda: sw.unknowns.names() == ["a", "x", "y"], timeout=10_000)
    # a is meant as a parameter: name the unknowns, then give a its value
    sw.unknown_names.setFocus()
    QTest.keyClicks(sw.unknown_names, "x, y")
    qtbot.waitUntil(lambda: sw.unknowns.names() == ["x", "y"], timeout=10_000)
    qtbot.waitUntil(lambda: sw.parameters.names() == ["a"], timeout=10_000)
    assert "no value for 'a'" in sw.status.text()
    edit_cell(qtbot, sw.parameters_view, 0, 1, "3")
    edit_cell(qtbot, sw.unknowns_view, 0, 1, "abc")
    QTest.mouseClick(sw.solve_button, Qt.MouseButton.LeftButton)
    assert "start value of x" in sw.status.text() and sw.solution is None
    edit_cell(qtbot, sw.unknowns_view, 0, 1, "0")
    solution = solve_system_by_click(qtbot, sw)
    # by hand: 3x + x = 1, x = y = 1/4 (a linear system: one Newton step)
    assert solution.runs[0].root["x"] == pytest.approx(0.25, rel=1e-15)


def test_opening_a_system_worksheet_shows_it_in_the_system_window(qtbot, window, dialogs):
    dialogs.open_name = str(PUMP)
    before = window.strip.text()
    QTest.keyClick(window, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: getattr(window, "system_window", None) is not None
                    and window.system_window.isVisible(), timeout=5000)
    sw = window.system_window
    assert sw.unknowns.names() == ["Q1", "Q2", "H"]
    qtbot.waitUntil(lambda: "3 equations" in sw.status.text(), timeout=10_000)
    solution = solve_system_by_click(qtbot, sw)
    reference = solve_worksheet(worksheet.load(Path(PUMP)))  # the core, outside the window
    for run, ref in zip(solution.runs, reference.runs, strict=True):
        assert run.converged and dict(run.root) == dict(ref.root)
    # the main window keeps its own (single-equation) worksheet
    assert window.strip.text() == before


def test_closing_the_main_window_closes_the_system_window(qtbot, window):
    sw = open_system_window(qtbot, window)
    window.close()
    qtbot.waitUntil(lambda: not sw.isVisible(), timeout=5000)


def test_the_equation_strip_reads_definitions(qtbot, window, monkeypatch):
    from gui_helpers import settle

    # invented orifice: the parameters table lists the inputs, never the defined names
    editor = window.strip.editor
    editor.setFocus()
    editor.selectAll()
    editor.textCursor().removeSelectedText()
    for i, line in enumerate(("A = pi*d^2/4", "v = Q/(Cd*A)", "v^2 = 2*g*h")):
        if i:
            QTest.keyClick(editor, Qt.Key.Key_Return)
        QTest.keyClicks(editor, line)
    settle(qtbot, window)
    analysis = window.analysis
    assert set(analysis.names) == {"d", "Q", "Cd", "g", "h"}  # A and v are defined
    qtbot.waitUntil(lambda: "h" in window.inputs.parameters.names()
                    or "d" in window.inputs.parameters.names(), timeout=5000)
    shown = set(window.inputs.parameters.names())
    assert "A" not in shown and "v" not in shown
    assert analysis.latex.startswith(r"A = \frac{\pi d^{2}}{4}") and "2 g h" in analysis.latex
    # values typed with units; after Solve the note under the plot gives the defined
    # quantities at the root in SI (by hand: A = pi d^2/4 with d = 0.05 m)
    values = {"d": ("50", "mm"), "Q": ("4", "L/s"), "Cd": ("0.62", ""),
              "g": ("9.80665", "m/s^2")}
    box = window.strip.unknown_box  # solve for the head: pick h by its first letter
    box.setFocus()
    QTest.keyClick(box, Qt.Key.Key_H)
    qtbot.waitUntil(lambda: "d" in window.inputs.parameters.names(), timeout=5000)
    settle(qtbot, window)
    names = window.inputs.parameters.names()
    for name, (number, unit) in values.items():
        edit_cell(qtbot, window.inputs.parameters_view, names.index(name), 1, number)
        if unit:
            edit_cell(qtbot, window.inputs.parameters_view, names.index(name), 2, unit)
    # the values at the root are worked out in the solve job; the window only shows them
    import threading

    from solvers.equation.record import Equation

    callers = []
    evaluate = Equation.definition_values

    def spy(self, x):
        callers.append(threading.current_thread() is threading.main_thread())
        return evaluate(self, x)

    monkeypatch.setattr(Equation, "definition_values", spy)
    solution = solve_by_keys(qtbot, window)
    assert any(r.converged for r in solution.runs)
    note = window.lanes.agreement.toolTip()
    assert callers and not any(callers)  # computed, and never on the window's thread
    area = math.pi * 0.05**2 / 4
    from app.documents import words

    shown = words.number(area, window.lanes.digits.value())  # the figures the lanes show
    assert f"A = {shown} m^2" in note and " m/s." in note


def test_save_writes_a_system_worksheet_that_opens_again(qtbot, window, dialogs, tmp_path):
    sw = open_system_window(qtbot, window)
    sw.editor.setFocus()
    QTest.keyClicks(sw.editor, "x^2 + y^2 = 4; x*y = 1")
    qtbot.waitUntil(lambda: sw.unknowns.names() == ["x", "y"], timeout=10_000)
    edit_cell(qtbot, sw.unknowns_view, 0, 1, "2")
    dialogs.save_name = str(tmp_path / "pair.json")
    QTest.mouseClick(sw.save_button, Qt.MouseButton.LeftButton)
    saved = worksheet.load(tmp_path / "pair.json")
    assert saved.equation == "x^2 + y^2 = 4; x*y = 1"
    assert saved.system.start() == {"x": 2.0, "y": 1.0}
    assert saved.system.methods == ("newton", "broyden")
    # opened again (File > Open), it lands in the system window with its start values
    sw.close()
    window.activateWindow()
    qtbot.waitUntil(window.isActiveWindow, timeout=5000)
    dialogs.open_name = dialogs.save_name
    QTest.keyClick(window, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: window.system_window.isVisible(), timeout=5000)
    assert window.system_window.unknowns.starts() == {"x": 2.0, "y": 1.0}


def test_cancel_stops_a_solve_between_methods(qtbot, window, monkeypatch):
    import time

    import solvers.systems as systems_package

    original = systems_package.solve_system

    def slow(*args, **kwargs):  # a long solve: each method takes a while
        time.sleep(0.4)
        return original(*args, **kwargs)

    monkeypatch.setattr(systems_package, "solve_system", slow)
    sw = open_system_window(qtbot, window)
    sw.editor.setFocus()
    QTest.keyClicks(sw.editor, "x^2 + y^2 = 4; x*y = 1")
    qtbot.waitUntil(lambda: sw.unknowns.names() == ["x", "y"], timeout=10_000)
    QTest.mouseClick(sw.solve_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(sw.cancel_button.isEnabled, timeout=5000)
    QTest.mouseClick(sw.cancel_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: not sw.jobs.is_busy("system-solve"), timeout=10_000)
    assert sw.status.text() == "cancelled: nothing was solved"
    assert sw.solution is None and not sw.cancel_button.isEnabled()


def test_closing_with_an_unsaved_system_asks_and_cancel_keeps_it(qtbot, window, dialogs):
    from PySide6.QtWidgets import QMessageBox

    sw = open_system_window(qtbot, window)
    sw.editor.setFocus()
    QTest.keyClicks(sw.editor, "x + y = 3; x - y = 1")
    qtbot.waitUntil(lambda: sw.unknowns.names() == ["x", "y"], timeout=10_000)
    assert sw.modified
    dialogs.question = [QMessageBox.StandardButton.Cancel]
    window.close()  # the main window asks the system window first
    assert window.isVisible() and sw.isVisible()
    assert dialogs.titles("question")[-1].startswith("Unsaved system")
    dialogs.question = QMessageBox.StandardButton.Discard
    window.close()
    qtbot.waitUntil(lambda: not sw.isVisible() and not window.isVisible(), timeout=5000)


def _notes(status: str) -> list[str]:
    return [line for line in status.splitlines() if line.startswith("Note: ")]


def test_the_reading_while_typing_gives_the_unit_notes_the_solve_gives(qtbot, window):
    # An invented heat balance: a hot stream of m*cp = 2090 W/K cooled from Tin = 80 degC
    # by a wall of UA = 1500 W/K to surroundings at Ta = 20 degC. The temperatures typed
    # in degC are taken in kelvin with the offset (a unit note); the reading shows it as
    # the text and the units are typed, before Solve, and the solve gives the same notes.
    # Reference: the balance is linear, Tout = (m cp Tin + UA Ta)/(m cp + UA) (closed form).
    sw = open_system_window(qtbot, window)
    sw.unknown_names.setFocus()
    QTest.keyClicks(sw.unknown_names, "Q, Tout")
    type_system(qtbot, sw, "Q = m*cp*(Tin - Tout)\nQ = UA*(Tout - Ta)", ["Q", "Tout"])
    given = {"m": ("0.5", "kg/s"), "cp": ("4180", "J/(kg*K)"), "Tin": ("80", "degC"),
             "UA": ("1500", "W/K"), "Ta": ("20", "degC")}
    for name, (value, unit) in given.items():
        row = sw.parameters.names().index(name)
        edit_cell(qtbot, sw.parameters_view, row, 1, value)
        edit_cell(qtbot, sw.parameters_view, row, 2, unit)
    # read while typing: the offset note, before any solve
    qtbot.waitUntil(lambda: any("absolute temperature" in n for n in _notes(sw.status.text())),
                    timeout=10_000)
    assert sw.solution is None
    read = _notes(sw.status.text())
    assert "2 equations in Q, Tout" in sw.status.text()
    edit_cell(qtbot, sw.unknowns_view, 1, 1, "300")  # (in K: the unit the equations give)
    solution = solve_system_by_click(qtbot, sw)
    assert _notes(sw.status.text()) == read
    mcp, ua = 0.5 * 4180.0, 1500.0
    t_out = (mcp * (80 + 273.15) + ua * (20 + 273.15)) / (mcp + ua)  # closed form, in K
    for run in solution.runs:
        assert run.converged
        assert run.root["Tout"] == pytest.approx(t_out, rel=1e-12)
        assert run.root["Q"] == pytest.approx(ua * (t_out - 293.15), rel=1e-10)
    # the dimension check switched off (its box, by the space key): the reading says so
    # at once, and the solve says the same
    sw.dimension_box.setFocus()
    QTest.keyClick(sw.dimension_box, Qt.Key.Key_Space)
    assert not sw.dimension_box.isChecked()
    qtbot.waitUntil(lambda: any("not checked" in n for n in _notes(sw.status.text())),
                    timeout=10_000)
    read = _notes(sw.status.text())
    assert any("absolute temperature" in n for n in read)
    solve_system_by_click(qtbot, sw)
    assert _notes(sw.status.text()) == read
    # an unknown's unit typed in its cell is read too: Tout in degC is fixed by Tin and Ta
    # (no note of a free dimension), and the notes still match the solve's
    sw.dimension_box.setFocus()
    QTest.keyClick(sw.dimension_box, Qt.Key.Key_Space)
    assert sw.dimension_box.isChecked()
    edit_cell(qtbot, sw.unknowns_view, 1, 2, "degC")
    edit_cell(qtbot, sw.unknowns_view, 1, 1, "30")
    qtbot.waitUntil(lambda: not any("not checked" in n for n in _notes(sw.status.text())),
                    timeout=10_000)
    read = _notes(sw.status.text())
    solution = solve_system_by_click(qtbot, sw)
    assert _notes(sw.status.text()) == read
    assert solution.runs[0].root["Tout"] == pytest.approx(t_out - 273.15, rel=1e-12)
