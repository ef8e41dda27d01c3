"""The system window's files, recovery, significant figures and cancel, driven as a user
would (pytest-qt, offscreen; every modal dialog scripted by gui_helpers).

References: x + y = 3, x - y = 1 gives x = 2, y = 1 (by hand); the pump sample's runs
against solve_system called directly on the same worksheet (the core, outside the window).
"""

from __future__ import annotations

import threading

import pytest
from PySide6.QtCore import Qt, QTimer
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QApplication, QMessageBox

from app.documents import words, worksheet
from app.window.recovery import RecoveryStore
from solvers.systems.pipeline import solve_worksheet

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import (  # noqa: E402
    SAMPLES,
    edit_cell,
    open_system_window,
    solve_system_by_click,
    type_system,
)

pytest_plugins = ("gui_helpers",)

Button = QMessageBox.StandardButton
PUMP = SAMPLES / "systems" / "pump-two-parallel-lines.json"


def _abandon(w) -> None:
    """The session ends without closing (a crash): no close event, no clean-up."""
    w.runner.stop()
    w._autosave.stop()
    if getattr(w, "system_window", None) is not None:
        w.system_window._autosave.stop()


def test_unsaved_system_work_is_offered_at_the_next_start(qtbot, isolated, dialogs):
    from app.window import MainWindow

    folder = isolated / "recovery"
    first = MainWindow(recovery=RecoveryStore(folder))
    qtbot.addWidget(first)
    first.show()
    qtbot.waitExposed(first)
    sw = open_system_window(qtbot, first)
    type_system(qtbot, sw, "x + y = 3; x - y = 1", ["x", "y"])
    assert sw.modified
    assert sw.autosave_now()  # what its autosave timer does every 20 s
    copies = [p.name for p in folder.glob("unsaved-*.json") if ".meta." not in p.name]
    assert copies == [sw.recovery.path.name] and copies[0].endswith("-system.json")
    # the same session never offers its own system copy to itself
    assert first.recovery.left_behind() == []
    _abandon(first)

    second = MainWindow(recovery=RecoveryStore(folder))
    qtbot.addWidget(second)
    second.show()
    qtbot.waitExposed(second)
    dialogs.question = Button.Yes
    assert second.offer_recovery()
    assert any("A system of equations with unsaved changes" in q
               for q in dialogs.titles("question"))
    restored = second.system_window
    qtbot.waitUntil(lambda: restored.isVisible() and restored.unknowns.names() == ["x", "y"],
                    timeout=10_000)
    assert restored.editor.toPlainText() == "x + y = 3; x - y = 1"
    assert restored.modified, "recovered work is unsaved until the user saves it"
    assert not sw.recovery.exists(), "the offered copy is taken over by the new session"
    assert restored.recovery.exists(), "and autosaved again by the new session"
    solution = solve_system_by_click(qtbot, restored)
    assert solution.runs[0].root == pytest.approx({"x": 2.0, "y": 1.0})  # by hand

    # declining discards the copy, so it is not offered again
    _abandon(second)
    dialogs.question = Button.No
    third = MainWindow(recovery=RecoveryStore(folder))
    qtbot.addWidget(third)
    assert not third.offer_recovery()
    assert not RecoveryStore(folder).left_behind()
    for w in (first, second):
        w.system_window._saved = w.system_window.worksheet()  # let the fixtures close them
    third.runner.stop()


def test_a_clean_close_leaves_no_recovery_copy(qtbot, window, dialogs):
    sw = open_system_window(qtbot, window)
    type_system(qtbot, sw, "x + y = 3; x - y = 1", ["x", "y"])
    assert sw.autosave_now() and sw.recovery.exists()
    dialogs.question = Button.Discard
    assert sw.close()
    assert not sw.recovery.exists()
    assert not sw._autosave.isActive()  # a closed window writes no copy behind the user
    # shown again (Run > System of equations), it autosaves again
    assert open_system_window(qtbot, window) is sw
    assert sw._autosave.isActive()


def test_save_open_recent_and_significant_figures(qtbot, window, dialogs, tmp_path):
    sw = open_system_window(qtbot, window)
    type_system(qtbot, sw, "x^2 + y^2 = 4; x*y = 1", ["x", "y"])
    dialogs.save_name = str(tmp_path / "pair")  # no suffix: .json is added
    sw.activateWindow()
    qtbot.waitUntil(sw.isActiveWindow, timeout=5000)
    QTest.keyClick(sw, Qt.Key.Key_S, Qt.KeyboardModifier.ControlModifier)
    saved = tmp_path / "pair.json"
    assert worksheet.load(saved).equation == "x^2 + y^2 = 4; x*y = 1"
    assert not sw.modified and sw.path == saved
    assert window.recent_files()[0] == str(saved)  # the main window's one list
    # a second Ctrl+S writes there again without asking
    sw.editor.setFocus()
    QTest.keyClick(sw.editor, Qt.Key.Key_End, Qt.KeyboardModifier.ControlModifier)
    QTest.keyClick(sw.editor, Qt.Key.Key_Return)
    assert sw.modified
    asked = len(dialogs.titles("save"))
    QTest.keyClick(sw, Qt.Key.Key_S, Qt.KeyboardModifier.ControlModifier)
    assert len(dialogs.titles("save")) == asked and not sw.modified

    # open the pump sample, then come back to pair.json from Recent
    dialogs.open_name = str(PUMP)
    QTest.keyClick(sw, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: sw.unknowns.names() == ["Q1", "Q2", "H"], timeout=10_000)
    assert window.recent_files()[:2] == [str(PUMP), str(saved)]

    def pick_second() -> None:
        menu = QApplication.activePopupWidget()
        assert menu is not None and [a.toolTip() for a in menu.actions()][:2] == \
            [str(PUMP), str(saved)]
        QTest.keyClick(menu, Qt.Key.Key_Down)
        QTest.keyClick(menu, Qt.Key.Key_Down)
        QTest.keyClick(menu, Qt.Key.Key_Return)

    QTimer.singleShot(300, pick_second)
    QTest.mouseClick(sw.recent_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: sw.unknowns.names() == ["x", "y"], timeout=10_000)
    assert sw.path == saved

    # significant figures: typed into the box, every cell follows; copies stay exact
    for row, text in ((0, "2"), (1, "0.3")):
        index = sw.unknowns.index(row, 1)
        rect = sw.unknowns_view.visualRect(index)
        QTest.mouseDClick(sw.unknowns_view.viewport(), Qt.MouseButton.LeftButton,
                          pos=rect.center())
        editor = sw.unknowns_view.focusWidget()
        QTest.keyClick(editor, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
        QTest.keyClicks(editor, text)
        QTest.keyClick(editor, Qt.Key.Key_Return)
    solution = solve_system_by_click(qtbot, sw)
    model = sw.lane_models["newton"]
    last = model.rowCount() - 1
    x = solution.runs[0].root["x"]
    sw.digits.setFocus()
    QTest.keyClick(sw.digits, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    QTest.keyClicks(sw.digits, "4")
    QTest.keyClick(sw.digits, Qt.Key.Key_Return)
    assert sw.digits.value() == 4
    assert model.index(last, 2).data() == f"{x:.4g}"
    assert f"x = {x:.4g}" in sw.status.text()
    QTest.keyClick(sw.digits, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    QTest.keyClicks(sw.digits, "12")
    QTest.keyClick(sw.digits, Qt.Key.Key_Return)
    assert model.index(last, 2).data() == f"{x:.12g}"
    assert model.index(last, 2).data(Qt.ItemDataRole.UserRole) == x


def test_a_bad_file_and_a_bad_equation_are_one_line(qtbot, window, dialogs, tmp_path):
    sw = open_system_window(qtbot, window)
    type_system(qtbot, sw, "x + y = 3; x - y = 1", ["x", "y"])
    bad = tmp_path / "broken.json"
    bad.write_text('{"format": "zerotrace-worksheet", "version": 1, "equation": ')
    dialogs.open_name = str(bad)
    sw.activateWindow()
    QTest.keyClick(sw, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)
    message = sw.status.text()
    assert message.startswith("broken.json was not opened:") and "\n" not in message
    assert "Traceback" not in message
    assert any(t.startswith("Cannot open worksheet") for t in dialogs.titles("warning"))
    assert sw.editor.toPlainText() == "x + y = 3; x - y = 1"  # nothing on screen lost
    # a bad equation line: one line naming what is wrong, and Solve runs nothing
    sw.editor.setFocus()
    QTest.keyClicks(sw.editor, "; x*y = = 2")
    qtbot.waitUntil(lambda: sw.reading.error != "", timeout=10_000)
    assert "\n" not in sw.status.text() and "Traceback" not in sw.status.text()
    assert sw.status.text() == sw.reading.error
    assert "#8A2B00" in sw.status.styleSheet()  # said in the warning colour, as a problem


def test_cancel_reaches_inside_a_long_solve_and_the_window_stays_live(qtbot, window,
                                                                      monkeypatch):
    # An expensive model stands in for a slow F: each evaluation of the pump sample's
    # residuals takes 30 ms (the real F, then a pause), so one solve lasts seconds.
    import solvers.systems.pipeline as pipeline

    calls = {"n": 0}
    parse = pipeline.parse_system
    release = threading.Event()

    def slow_parse(*args, **kwargs):
        system = parse(*args, **kwargs)
        real_f = system.F

        def slow_f(x):
            calls["n"] += 1
            release.wait(0.03)
            return real_f(x)

        object.__setattr__(system, "F", slow_f)
        return system

    monkeypatch.setattr(pipeline, "parse_system", slow_parse)
    ws = worksheet.load(PUMP)
    reference = solve_worksheet(ws)  # the same core without the pause: the full cost
    full_cost = sum(r.evaluations for r in reference.runs)
    calls["n"] = 0
    sw = open_system_window(qtbot, window)
    sw.load_worksheet(ws)
    qtbot.waitUntil(lambda: "3 equations" in sw.status.text(), timeout=10_000)
    calls["n"] = 0
    QTest.mouseClick(sw.solve_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: calls["n"] >= 3, timeout=10_000)  # inside the first solve
    # the window answers while the solve runs: a click toggles a method box at once
    box = sw.method_boxes["broyden"]
    was = box.isChecked()
    QTest.mouseClick(box, Qt.MouseButton.LeftButton, pos=box.rect().center())
    assert box.isChecked() != was
    assert "solving" in sw.status.text()
    QTest.mouseClick(sw.cancel_button, Qt.MouseButton.LeftButton)
    at_cancel = calls["n"]
    qtbot.waitUntil(lambda: not sw.jobs.is_busy("system-solve"), timeout=10_000)
    assert sw.status.text() == "cancelled: nothing was solved"
    assert sw.solution is None and not sw.cancel_button.isEnabled()
    assert calls["n"] - at_cancel <= 2  # the evaluation under way, then the poll stopped it
    assert calls["n"] < full_cost  # stopped inside the solve, long before its end
    stopped = calls["n"]
    qtbot.wait(300)  # nothing runs on in the background after the cancel
    assert calls["n"] == stopped


@pytest.mark.parametrize("sample", sorted((SAMPLES / "systems").glob("*.json")),
                         ids=lambda p: p.stem)
def test_a_sample_opened_and_solved_is_not_unsaved_work(qtbot, window, dialogs, sample):
    # found by looking at the window: reading the text reordered the parameters, so a file
    # just opened counted as changed and closing asked to save it
    window.activateWindow()
    qtbot.waitUntil(window.isActiveWindow, timeout=5000)
    dialogs.open_name = str(sample)
    QTest.keyClick(window, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: getattr(window, "system_window", None) is not None
                    and "equations in" in window.system_window.status.text(), timeout=10_000)
    sw = window.system_window
    order = [p.name for p in worksheet.load(sample).parameters]
    assert sw.parameters.names() == order
    solution = solve_system_by_click(qtbot, sw)
    assert all(r.converged for r in solution.runs)
    assert not sw.modified
    asked = len(dialogs.titles("question"))
    assert sw.close()
    assert len(dialogs.titles("question")) == asked, "nothing to save: closing asks nothing"


def test_results_of_earlier_inputs_say_so(qtbot, window):
    # found by looking at the window: after an edit the old lanes passed for the new text
    sw = open_system_window(qtbot, window)
    type_system(qtbot, sw, "x + y = 3; x - y = 1", ["x", "y"])
    solution = solve_system_by_click(qtbot, sw)
    assert not sw.results_note.isVisible()
    model = sw.lane_models["newton"]
    assert model.index(0, model.columnCount() - 1).data() == ""  # the start: no step yet
    assert model.index(1, model.columnCount() - 1).data() == "1"  # a full Newton step
    assert solution.runs[0].root == pytest.approx({"x": 2.0, "y": 1.0})  # by hand
    sw.editor.setFocus()
    QTest.keyClick(sw.editor, Qt.Key.Key_End, Qt.KeyboardModifier.ControlModifier)
    QTest.keyClicks(sw.editor, "0")  # x - y = 10
    assert sw.results_note.isVisible() and "earlier inputs" in sw.results_note.text()
    assert not sw.lanes.currentWidget().isEnabled()
    QTest.keyClick(sw.editor, Qt.Key.Key_Backspace)  # back to what was solved
    assert not sw.results_note.isVisible() and sw.lanes.currentWidget().isEnabled()
    QTest.keyClicks(sw.editor, "0")
    solution = solve_system_by_click(qtbot, sw)
    assert not sw.results_note.isVisible()
    assert solution.runs[0].root == pytest.approx({"x": 6.5, "y": -3.5})  # by hand


def test_unknowns_with_units_show_them_in_the_lanes_and_the_roots(qtbot, window, dialogs):
    # found by looking at the window: the units sample showed "Q1 = 42.56" with no unit
    sample = SAMPLES / "systems" / "pump-two-parallel-lines-units.json"
    units = worksheet.load(sample).system.units()
    assert units, "the sample gives its unknowns units"
    sw = open_system_window(qtbot, window)
    dialogs.open_name = str(sample)
    sw.activateWindow()
    QTest.keyClick(sw, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: "equations in" in sw.status.text(), timeout=10_000)
    solution = solve_system_by_click(qtbot, sw)
    run = solution.runs[0]
    model = sw.lane_models[run.method]
    for i, name in enumerate(run.unknowns):
        unit = units.get(name)
        assert model.headers()[2 + i] == (f"{name} [{unit}]" if unit else name)
        if unit:
            assert f"{name} = " in sw.status.text() and f" {unit}" in sw.status.text()
    # the same operating point as the sample in SI (the core on the other file)
    si = solve_worksheet(worksheet.load(PUMP)).runs[0].root
    assert run.root["H"] == pytest.approx(si["H"], rel=1e-9)
    # the definitions at the root, in SI: Q = Q1 + Q2 in m^3/s (1 L = 1e-3 m^3, NIST SP 811)
    total = words.number((run.root["Q1"] + run.root["Q2"]) / 1000, sw.digits.value())
    assert f"Q = {total} m^3/s" in sw.status.text()


def test_an_unknowns_unit_is_edited_in_its_table_and_saved(qtbot, window, dialogs, tmp_path):
    """The flow Q1 asked in m^3/h instead of L/s: the same operating point, 3.6 times the
    number (1 L/s = 3.6 m^3/h exactly, NIST SP 811 definitions of litre and hour); a unit
    that does not exist is named with its unknown and nothing runs; the unit and the
    dimension-check switch go into the file."""
    sample = SAMPLES / "systems" / "pump-two-parallel-lines-units.json"
    sw = open_system_window(qtbot, window)
    dialogs.open_name = str(sample)
    sw.activateWindow()
    QTest.keyClick(sw, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: "equations in" in sw.status.text(), timeout=10_000)
    assert [sw.unknowns.index(r, 2).data() for r in range(3)] == ["L/s", "L/s", "m"]
    in_litres = solve_system_by_click(qtbot, sw).runs[0].root["Q1"]
    edit_cell(qtbot, sw.unknowns_view, 0, 2, "fathum")
    before = sw.solution
    QTest.mouseClick(sw.solve_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: "fathum" in sw.status.text(), timeout=10_000)
    assert "unknown 'Q1'" in sw.status.text() and sw.solution is before  # nothing new ran
    edit_cell(qtbot, sw.unknowns_view, 0, 2, "L/s^")  # not even unit text: marked as it is typed
    assert "unit of Q1" in sw.unknowns.data(sw.unknowns.index(0, 2),
                                            Qt.ItemDataRole.ToolTipRole)
    QTest.mouseClick(sw.solve_button, Qt.MouseButton.LeftButton)
    assert sw.status.text().startswith("unit of Q1")
    edit_cell(qtbot, sw.unknowns_view, 0, 2, "m^3/h")
    edit_cell(qtbot, sw.unknowns_view, 0, 1, "180")
    solution = solve_system_by_click(qtbot, sw)
    run = solution.runs[0]
    assert run.converged and run.root["Q1"] == pytest.approx(3.6 * in_litres, rel=1e-9)
    assert sw.lane_models[run.method].headers()[2] == "Q1 [m^3/h]"
    QTest.mouseClick(sw.dimension_box, Qt.MouseButton.LeftButton)
    assert not sw.dimension_box.isChecked()
    dialogs.save_name = str(tmp_path / "pump-m3h.json")
    sw.activateWindow()
    QTest.keyClick(sw, Qt.Key.Key_S, Qt.KeyboardModifier.ControlModifier
                   | Qt.KeyboardModifier.ShiftModifier)
    qtbot.waitUntil(lambda: (tmp_path / "pump-m3h.json").exists(), timeout=5000)
    saved = worksheet.load(tmp_path / "pump-m3h.json")
    assert saved.system.units()["Q1"] == "m^3/h" and saved.system.start()["Q1"] == 180.0
    assert saved.dimension_check is False
