"""Shared fixtures for the window tests: a window with private settings and recovery
folder, and every modal dialog replaced by a scripted answer so no test can hang."""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtCore import QSettings  # noqa: E402
from PySide6.QtWidgets import QFileDialog, QMessageBox  # noqa: E402

SAMPLES = Path(__file__).resolve().parents[1] / "samples"


@dataclass
class Dialogs:
    """Scripted answers for QMessageBox and QFileDialog; every call is recorded."""

    question: Any = QMessageBox.StandardButton.Discard
    open_name: str = ""
    save_name: str = ""
    calls: list[tuple[str, str]] = field(default_factory=list)

    def titles(self, kind: str) -> list[str]:
        return [text for k, text in self.calls if k == kind]


@pytest.fixture
def dialogs(monkeypatch: pytest.MonkeyPatch) -> Dialogs:
    script = Dialogs()

    def question(_parent: Any, title: str, text: str, *args: Any, **kwargs: Any) -> Any:
        script.calls.append(("question", f"{title}: {text}"))
        answer = script.question
        return answer.pop(0) if isinstance(answer, list) else answer

    def warning(_parent: Any, title: str, text: str, *args: Any, **kwargs: Any) -> Any:
        script.calls.append(("warning", f"{title}: {text}"))
        return QMessageBox.StandardButton.Ok

    def refuse(*args: Any, **kwargs: Any) -> Any:
        raise AssertionError(f"unexpected modal dialog: {args[1:3]}")

    def get_open(*args: Any, **kwargs: Any) -> tuple[str, str]:
        script.calls.append(("open", script.open_name))
        return script.open_name, ""

    def get_save(*args: Any, **kwargs: Any) -> tuple[str, str]:
        script.calls.append(("save", script.save_name))
        return script.save_name, ""

    monkeypatch.setattr(QMessageBox, "question", question)
    monkeypatch.setattr(QMessageBox, "warning", warning)
    monkeypatch.setattr(QMessageBox, "critical", warning)
    monkeypatch.setattr(QMessageBox, "information", refuse)
    monkeypatch.setattr(QFileDialog, "getOpenFileName", get_open)
    monkeypatch.setattr(QFileDialog, "getSaveFileName", get_save)
    return script


@pytest.fixture
def isolated(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    """Private recovery folder and settings files for one test."""
    monkeypatch.setenv("ZEROTRACE_RECOVERY_DIR", str(tmp_path / "recovery"))
    QSettings.setPath(QSettings.Format.NativeFormat, QSettings.Scope.UserScope,
                      str(tmp_path / "settings"))
    QSettings.setPath(QSettings.Format.IniFormat, QSettings.Scope.UserScope,
                      str(tmp_path / "settings"))
    return tmp_path


@pytest.fixture
def window(qtbot: Any, isolated: Path, dialogs: Dialogs) -> Any:
    from app.window import MainWindow
    from app.window.recovery import RecoveryStore

    settings = QSettings(str(isolated / "settings.ini"), QSettings.Format.IniFormat)
    w = MainWindow(settings=settings, recovery=RecoveryStore(isolated / "recovery"))
    qtbot.addWidget(w)
    w.show()
    qtbot.waitExposed(w)
    yield w
    w.runner.stop()


def settle(qtbot: Any, w: Any, timeout: int = 10_000) -> None:
    """Wait until the live analysis matches the text in the editor."""
    qtbot.waitUntil(lambda: w.analysis is not None and w.analysis.text == w.strip.text(),
                    timeout=timeout)


def idle(qtbot: Any, w: Any, timeout: int = 20_000) -> None:
    """Wait until no background job is running."""
    qtbot.waitUntil(lambda: not any(w.runner.is_busy(lane) for lane in
                                    ("preview", "solve", "scan", "report")), timeout=timeout)


def type_equation(qtbot: Any, w: Any, text: str) -> None:
    """Replace the equation the way a user does: select all, type."""
    editor = w.strip.editor
    editor.setFocus()
    editor.selectAll()
    editor.textCursor().removeSelectedText()
    qtbot.keyClicks(editor, text)
    settle(qtbot, w)


def solve_and_wait(qtbot: Any, w: Any) -> Any:
    before = w.solution
    assert w.solve(), w.last_error
    qtbot.waitUntil(lambda: w.solution is not None and w.solution is not before
                    and not w.runner.is_busy("solve"), timeout=20_000)
    return w.solution


def solve_by_keys(qtbot: Any, w: Any) -> Any:
    """Ctrl+Return in the equation editor, then wait for the answer on screen."""
    from PySide6.QtCore import Qt

    before = w.solution
    qtbot.keyClick(w.strip.editor, Qt.Key.Key_Return, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: w.solution is not None and w.solution is not before
                    and not w.runner.is_busy("solve"), timeout=20_000)
    return w.solution


def open_system_window(qtbot: Any, w: Any) -> Any:
    """Ctrl+Shift+Y on the main window; the system window once it is on screen."""
    from PySide6.QtCore import Qt
    from PySide6.QtTest import QTest

    w.activateWindow()  # the shortcut belongs to the main window
    qtbot.waitUntil(w.isActiveWindow, timeout=5000)
    QTest.keyClick(w, Qt.Key.Key_Y,
                   Qt.KeyboardModifier.ControlModifier | Qt.KeyboardModifier.ShiftModifier)
    qtbot.waitUntil(lambda: getattr(w, "system_window", None) is not None
                    and w.system_window.isVisible(), timeout=5000)
    qtbot.waitExposed(w.system_window)
    return w.system_window


def solve_system_by_click(qtbot: Any, sw: Any) -> Any:
    """Click the system window's Solve, then wait for its solution."""
    from PySide6.QtCore import Qt
    from PySide6.QtTest import QTest

    before = sw.solution
    QTest.mouseClick(sw.solve_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: sw.solution is not None and sw.solution is not before
                    and not sw.jobs.is_busy("system-solve"), timeout=20_000)
    return sw.solution


def edit_cell(qtbot: Any, view: Any, row: int, column: int, text: str,
              shown: str | None = None) -> None:
    """Edit a table cell as a user does: click, double-click, select all, type, Return;
    then wait until the cell shows ``shown`` (default: the text typed)."""
    from PySide6.QtCore import Qt
    from PySide6.QtTest import QTest

    index = view.model().index(row, column)
    rect = view.visualRect(index)
    QTest.mouseClick(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    QTest.mouseDClick(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    # QTest's double click ends pressed (press, double-click, no release): the button then
    # stays down for Qt until the next release, and a later column resized by the program
    # passed for one the user dragged. The user's second release ends it.
    QTest.mouseRelease(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    editor = view.focusWidget()
    QTest.keyClick(editor, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    QTest.keyClicks(editor, text)
    QTest.keyClick(editor, Qt.Key.Key_Return)
    expected = text if shown is None else shown
    qtbot.waitUntil(lambda: view.model().index(row, column).data() == expected, timeout=3000)


def type_system(qtbot: Any, sw: Any, text: str, names: list[str]) -> None:
    """Type ``text`` into the system window's editor (Return for each line break) and wait
    until its unknowns table lists ``names``."""
    from PySide6.QtCore import Qt
    from PySide6.QtTest import QTest

    sw.editor.setFocus()
    for i, line in enumerate(text.split("\n")):
        if i:
            QTest.keyClick(sw.editor, Qt.Key.Key_Return)
        QTest.keyClicks(sw.editor, line)
    qtbot.waitUntil(lambda: sw.unknowns.names() == names, timeout=10_000)


def open_tables_window(qtbot: Any, w: Any) -> Any:
    """Ctrl+T in the main window's equation editor; the tables window once it is shown."""
    from PySide6.QtCore import Qt

    w.activateWindow()
    w.strip.editor.setFocus()
    qtbot.waitUntil(lambda: w.strip.editor.hasFocus())
    qtbot.keyClick(w.strip.editor, Qt.Key.Key_T, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: w.tables is not None and w.tables.isVisible())
    return w.tables


def type_into(qtbot: Any, edit: Any, text: str) -> None:
    """Replace a line edit's text as a user does: focus, select all, delete, type."""
    from PySide6.QtCore import Qt
    from PySide6.QtTest import QTest

    edit.setFocus()
    edit.selectAll()
    QTest.keyClick(edit, Qt.Key.Key_Delete)
    qtbot.keyClicks(edit, text)


def run_table(qtbot: Any, t: Any) -> None:
    """Click Run in the tables window and wait for its new results."""
    from PySide6.QtCore import Qt

    before = t.done
    qtbot.mouseClick(t.run_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: t.done is not None and t.done is not before, timeout=20_000)
