"""The window as an engineer works it: real mouse and key events on the real widgets.

Plot picks are made with QTest mouse events on the FigureCanvas widget itself (Shift as a
Qt modifier of the event, never a faked key state); methods are chosen with clicks; the
tables, bar and messages are read as a user reads them. Roots are checked against
scipy.optimize and mpmath (named beside each check).
"""

from __future__ import annotations

import math

import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtTest import QTest

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import settle, solve_and_wait, type_equation  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated
pytestmark = pytest.mark.filterwarnings("ignore:Enum value .*AA_UseHighDpiPixmaps")

SHIFT = Qt.KeyboardModifier.ShiftModifier
LEFT = Qt.MouseButton.LeftButton
RIGHT = Qt.MouseButton.RightButton


def _plot_on_range(qtbot, window, text: str, a: float, b: float):
    type_equation(qtbot, window, text)
    window.inputs.set_field("from", a)
    window.inputs.set_field("to", b)
    solve_and_wait(qtbot, window)
    canvas = window.plot.function_view.canvas
    canvas.draw()
    return canvas, window.plot.ax


def _at(canvas, ax, x: float, y: float = 0.0) -> QPoint:
    """Widget pixel of data point (x, y): matplotlib counts from the bottom left in
    device pixels, Qt from the top left in logical pixels."""
    px, py = ax.transData.transform((x, y))
    ratio = canvas.device_pixel_ratio or 1.0
    height = canvas.figure.bbox.height
    return QPoint(round(px / ratio), round((height - py) / ratio))


# ----------------------------------------------------------------- plot picks


def test_shift_click_right_click_and_drag_on_the_canvas_set_the_start_values(qtbot, window):
    canvas, ax = _plot_on_range(qtbot, window, "x^2 - 3*x + 1", 0.0, 4.0)
    fields = window.inputs.fields
    QTest.mouseClick(canvas, LEFT, SHIFT, _at(canvas, ax, 2.5))
    assert fields["x0"].value() == pytest.approx(2.5, abs=0.02)
    QTest.mouseClick(canvas, RIGHT, SHIFT, _at(canvas, ax, 3.2))
    assert fields["x1"].value() == pytest.approx(3.2, abs=0.02)
    QTest.mousePress(canvas, LEFT, SHIFT, _at(canvas, ax, 1.0))
    QTest.mouseMove(canvas, _at(canvas, ax, 2.0))
    QTest.mouseMove(canvas, _at(canvas, ax, 3.0))
    QTest.mouseRelease(canvas, LEFT, SHIFT, _at(canvas, ax, 3.0))
    assert fields["a"].value() == pytest.approx(1.0, abs=0.02)
    assert fields["b"].value() == pytest.approx(3.0, abs=0.02)
    # A click without Shift belongs to the user looking at the plot: nothing changes.
    QTest.mouseClick(canvas, LEFT, Qt.KeyboardModifier.NoModifier, _at(canvas, ax, 0.5))
    assert fields["x0"].value() == pytest.approx(2.5, abs=0.02)
    # And the picks are used: Solve from them finds the root in [1, 3], which is
    # (3 + sqrt 5)/2 ≈ 2.618 (quadratic formula, common practice).
    solution = solve_and_wait(qtbot, window)
    assert solution.start.x0 == fields["x0"].value()
    assert solution.start.bracket == (fields["a"].value(), fields["b"].value())
    fp = next(r for r in solution.runs if r.method == "false_position")
    assert fp.converged and fp.root == pytest.approx((3 + math.sqrt(5)) / 2, rel=1e-12)


def test_zoom_box_owns_the_mouse_and_fit_returns_to_the_range(qtbot, window):
    canvas, ax = _plot_on_range(qtbot, window, "x^2 - 3*x + 1", 0.0, 4.0)
    view = window.plot.function_view
    qtbot.mouseClick(view.buttons["zoom"], LEFT)
    assert view.buttons["zoom"].isChecked()
    before = window.inputs.fields["x0"].text()
    QTest.mousePress(canvas, LEFT, SHIFT, _at(canvas, ax, 1.0, 0.5))
    QTest.mouseMove(canvas, _at(canvas, ax, 2.0, -0.5))
    QTest.mouseRelease(canvas, LEFT, SHIFT, _at(canvas, ax, 2.0, -0.5))
    assert window.inputs.fields["x0"].text() == before  # zoom, not a pick
    lo, hi = ax.get_xlim()
    assert lo == pytest.approx(1.0, abs=0.05) and hi == pytest.approx(2.0, abs=0.05)
    qtbot.mouseClick(view.buttons["zoom"], LEFT)
    assert not view.buttons["zoom"].isChecked() and not view.toolbar.mode
    qtbot.mouseClick(view.buttons["fit"], LEFT)
    assert ax.get_xlim() == pytest.approx((0.0, 4.0))


def test_the_plot_bar_is_our_own_and_copies_and_saves_the_picture(qtbot, window, dialogs,
                                                                 tmp_path):
    from PySide6.QtGui import QGuiApplication

    canvas, ax = _plot_on_range(qtbot, window, "x^2 - 3*x + 1", 0.0, 4.0)
    view = window.plot.function_view
    # No stock navigation toolbar (with its margins dialog and curve editor) anywhere.
    from PySide6.QtWidgets import QToolBar

    assert not window.plot.findChildren(QToolBar)
    assert set(view.buttons) == {"fit", "zoom", "pan", "copy", "save"}
    QGuiApplication.clipboard().clear()
    qtbot.mouseClick(view.buttons["copy"], LEFT)
    assert not QGuiApplication.clipboard().image().isNull()
    dialogs.save_name = str(tmp_path / "friction-plot")
    qtbot.mouseClick(view.buttons["save"], LEFT)
    saved = tmp_path / "friction-plot.png"
    assert saved.exists() and saved.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    # The read-out names the unknown and the residual, not "x=… y=…".
    QTest.mouseMove(canvas, _at(canvas, ax, 1.5, 0.25))
    text = window.plot.readout.text()
    assert text.startswith("x = 1.5") and "f(x) = " in text, text
