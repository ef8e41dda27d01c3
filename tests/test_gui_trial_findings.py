"""Defects a new user found in the windows, pinned with real key and mouse events
(pytest-qt, offscreen).

References: the root of x^2 + y^2 = 4, x*y = 1 with x > y > 0 by hand (x^2 = 2 + sqrt(3)).
"""

from __future__ import annotations

import math

import pytest
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest

from app.documents import words

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import (  # noqa: E402
    edit_cell,
    open_system_window,
    solve_system_by_click,
    type_system,
)

pytest_plugins = ("gui_helpers",)


def test_system_lanes_say_the_stop_reason_in_words_and_full_steps_as_one(qtbot, window):
    sw = open_system_window(qtbot, window)
    type_system(qtbot, sw, "x^2 + y^2 = 4\nx*y = 1", ["x", "y"])
    edit_cell(qtbot, sw.unknowns_view, 0, 1, "2")
    edit_cell(qtbot, sw.unknowns_view, 1, 1, "0.3")
    solution = solve_system_by_click(qtbot, sw)
    x = math.sqrt(2 + math.sqrt(3))  # by hand
    for run in solution.runs:
        assert run.converged and run.root["x"] == pytest.approx(x, rel=1e-15)
        text = sw.lane_summaries[run.method].text()
        # 5: words, never the code, on screen
        assert run.reason not in text and words.system_reason_text(run.reason) in text
        # 10: the quadratic tail takes full steps (common practice near a regular root):
        # the lane's damping column reads exactly 1 there, not 0.9999999999999999
        model = sw.lane_models[run.method]
        column = model.headers().index("damping")
        last = model.rowCount() - 1
        assert model.raw(last, column) == 1.0


def test_help_by_f1_explains_units_and_matches_the_controls(qtbot, window, monkeypatch):
    from app.window import dialogs

    shown = []
    monkeypatch.setattr(dialogs.TextDialog, "exec", lambda self: shown.append(self) or 0)
    window.activateWindow()
    window.strip.editor.setFocus()
    QTest.keyClick(window.strip.editor, Qt.Key.Key_F1)
    qtbot.waitUntil(lambda: bool(shown), timeout=5_000)
    text = " ".join(shown[0].browser.toPlainText().split())
    assert "Units." in text and "150 mm" in text
    # the controls it names are on screen under those names
    assert window.strip.dimension_box.text() == "Check dimensions" and "Check dimensions" in text
    assert "Unit box beside the unknown" in text
    sw = open_system_window(qtbot, window)
    model = sw.unknowns
    headers = [model.headerData(c, Qt.Orientation.Horizontal, Qt.ItemDataRole.DisplayRole)
               for c in range(model.columnCount())]
    assert "unit" in headers and "unit column in its unknowns table" in text
    assert "no field to edit an unknown's unit" not in open("README.md").read()
