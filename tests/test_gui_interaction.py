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

from app.documents.words import start_text

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import settle, solve_by_keys, type_equation  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated
pytestmark = pytest.mark.filterwarnings("ignore:Enum value .*AA_UseHighDpiPixmaps")

SHIFT = Qt.KeyboardModifier.ShiftModifier
LEFT = Qt.MouseButton.LeftButton
RIGHT = Qt.MouseButton.RightButton


def _type(qtbot, field, text: str) -> None:
    """Replace a field's text the way a user does: focus, select all, type."""
    field.setFocus()
    field.selectAll()
    if text:
        qtbot.keyClicks(field, text)
    else:
        qtbot.keyClick(field, Qt.Key.Key_Delete)


def _plot_on_range(qtbot, window, text: str, a: float, b: float):
    type_equation(qtbot, window, text)
    _type(qtbot, window.inputs.fields["from"], repr(a))
    _type(qtbot, window.inputs.fields["to"], repr(b))
    solve_by_keys(qtbot, window)
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
    solution = solve_by_keys(qtbot, window)
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
    # Pan: dragging from x = 2 to x = 3 moves the view one unit to the left.
    qtbot.mouseClick(view.buttons["pan"], LEFT)
    assert view.buttons["pan"].isChecked() and not view.buttons["zoom"].isChecked()
    start, end = _at(canvas, ax, 2.0), _at(canvas, ax, 3.0)
    QTest.mousePress(canvas, LEFT, Qt.KeyboardModifier.NoModifier, start)
    QTest.mouseMove(canvas, end)
    QTest.mouseRelease(canvas, LEFT, Qt.KeyboardModifier.NoModifier, end)
    lo, hi = ax.get_xlim()
    assert lo == pytest.approx(-1.0, abs=0.05) and hi == pytest.approx(3.0, abs=0.05)
    qtbot.mouseClick(view.buttons["pan"], LEFT)
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
    # The pointer lands on a whole pixel: x is 1.5 to within one pixel's width of data.
    lo, hi = ax.get_xlim()
    pixel = (hi - lo) / ax.bbox.width * (canvas.device_pixel_ratio or 1.0)
    assert text.startswith("x = ") and "f(x) = " in text, text
    assert float(text.split()[2]) == pytest.approx(1.5, abs=1.5 * pixel), text


def test_each_solve_updates_the_kept_axes_instead_of_building_a_new_one(qtbot, window):
    canvas, ax = _plot_on_range(qtbot, window, "x^2 - 3*x + 1", 0.0, 4.0)
    line = window.plot._kept["line"]
    type_equation(qtbot, window, "x^2 - 3*x + 2")
    solve_by_keys(qtbot, window)
    assert window.plot.ax is ax and window.plot._kept["line"] is line
    # The kept line carries the new curve: f(0) = 2 now (it was 1).
    x, y = line.get_data()
    assert x[0] == 0.0 and y[0] == pytest.approx(2.0)
    # Only one path is drawn, the one chosen; choosing "none" with the keyboard clears it.
    box = window.plot.path_box
    box.setFocus()
    qtbot.keyClick(box, Qt.Key.Key_Home)
    assert box.currentData() == ""
    assert [ln for ln in ax.get_lines() if "iterates" in str(ln.get_label())] == []


# ----------------------------------------------------------------- methods


def _click(qtbot, widget) -> None:
    qtbot.mouseClick(widget, LEFT, pos=QPoint(8, widget.height() // 2))


def test_any_of_the_six_methods_can_be_chosen_and_the_choice_is_saved(qtbot, window, dialogs,
                                                                      tmp_path):
    from scipy.optimize import brentq

    from app.documents import worksheet
    from solvers import pipeline

    assert window.load_sample("cooling-water-friction.json")
    settle(qtbot, window)
    boxes = window.inputs.method_boxes
    assert set(boxes) == {"newton", "secant", "false_position", "illinois", "bisection",
                          "brent"}
    for name in ("illinois", "bisection", "brent", "secant"):
        _click(qtbot, boxes[name])  # tick three, untick the secant
    chosen = ("newton", "false_position", "illinois", "bisection", "brent")
    assert window.inputs.methods() == chosen
    assert tuple(window.lanes.lanes) == chosen  # the lanes follow at once
    assert window.isWindowModified()
    solution = solve_by_keys(qtbot, window)
    assert tuple(r.method for r in solution.runs) == chosen
    # Reference: scipy.optimize.brentq on the same compiled residual, [0.005, 0.1].
    f = pipeline.equation_of(solution.worksheet).f
    reference = brentq(f, 0.005, 0.1, xtol=1e-15, rtol=8.9e-16)
    for run in solution.runs:
        assert run.converged, run.method
        assert run.root == pytest.approx(reference, abs=3e-12), run.method
        assert window.lanes.lanes[run.method].run is run
    dialogs.save_name = str(tmp_path / "five-methods.json")
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_S, Qt.KeyboardModifier.ControlModifier)
    assert worksheet.load(tmp_path / "five-methods.json").settings.methods == chosen
    # Nothing ticked: said under Solve, and Solve refuses with the same words.
    for name in chosen:
        _click(qtbot, boxes[name])
    assert "tick at least one method" in window.inputs.problem_label.text()
    before = window.solution
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_Return, Qt.KeyboardModifier.ControlModifier)
    assert "tick at least one method" in window.last_error
    assert window.solution is before and not window.runner.is_busy("solve")


# ----------------------------------------------------------------- start values


def test_blank_start_values_are_seeded_from_the_scan_range(qtbot, window):
    """The sample's friction factor with x0, x1 and the bracket cleared: all three methods
    converge on the Colebrook root (reference: scipy.optimize.brentq on the same f)."""
    from scipy.optimize import brentq

    from solvers import pipeline

    assert window.load_sample("cooling-water-friction.json")
    settle(qtbot, window)
    for key in ("x0", "x1", "a", "b"):
        _type(qtbot, window.inputs.fields[key], "")
    solution = solve_by_keys(qtbot, window)
    f = pipeline.equation_of(solution.worksheet).f
    reference = brentq(f, 0.005, 0.1, xtol=1e-15, rtol=8.9e-16)
    start = solution.start
    lo, hi = start.bracket
    assert lo < reference < hi and f(lo) * f(hi) < 0  # a bracket that changes sign
    assert [c.code for c in start.choices] == ["x0_scan_root", "x1_scan", "bracket_scan_cell"]
    for run in solution.runs:
        assert run.converged and run.root == pytest.approx(reference, abs=2e-12), run.method
    note = window.lanes.agreement.toolTip() + window.lanes.agreement.text()
    assert "quick scan of [0.005, 0.1]" in note and "one sign change" in note


@pytest.mark.parametrize(("x0", "expected", "why"), [(None, -math.sqrt(2), 0),
                                                      (1.0, math.sqrt(2), 1)])
def test_which_scan_root_seeds_the_start_is_said(x0, expected, why):
    """x^2 - 2 on [-3, 3]: f(-3) and f(3) have the same sign, so the whole range is no
    bracket. The seed takes the first sign change, or the one nearest a typed x0; roots
    ±sqrt(2) (common practice)."""
    from dataclasses import replace

    from app.documents.worksheet import Settings, Worksheet
    from solvers import pipeline

    ws = Worksheet(equation="x^2 - 2", settings=replace(Settings(), x0=x0), scan=(-3.0, 3.0))
    solution = pipeline.solve(ws)
    first = solution.start.choices[0]
    if x0 is None:
        assert first.code == "x0_scan_root" and first.numbers[1:3] == (1, 2)
        assert first.numbers[5] == why and "sign change 1 of 2" in start_text(first)
    else:
        assert first.code == "x1_scan" or first.code == "bracket_scan_cell"
    lo, hi = solution.start.bracket
    assert lo < expected < hi and (lo * lo - 2) * (hi * hi - 2) < 0
    for run in solution.runs:
        assert run.converged and run.root == pytest.approx(expected, rel=1e-12), run.method


def test_methods_that_found_different_roots_are_said_to_disagree(qtbot, window, capsys):
    """x^2 - 2 from x0 = 1 (Newton: +sqrt 2), x0 = -1, x1 = -1.1 (secant: -sqrt 2) and
    the bracket [0, 3] (false position: +sqrt 2): not "agree to 0 figures"."""
    from app import cli
    from solvers import pipeline

    type_equation(qtbot, window, "x^2 - 2")
    for key, value in (("x0", "1"), ("x1", "-1.1"), ("a", "0"), ("b", "3")):
        _type(qtbot, window.inputs.fields[key], value)
    solution = solve_by_keys(qtbot, window)
    assert solution.agreement_digits is None
    groups = pipeline.agreement(solution.runs).groups
    assert [round(x, 12) for x, _m in groups] == [round(-math.sqrt(2), 12),
                                                  round(math.sqrt(2), 12)]
    text = window.lanes.agreement.text()
    assert "different roots" in text and "agree to" not in text
    assert "-1.4142136 by secant;" in text and "Newton–Raphson" in text.split(";")[1]
    assert cli.main(["solve", "x^2 - 2", "--x0", "1", "--x1", "-1.1", "--bracket", "0",
                     "3"]) == 0
    out = capsys.readouterr().out
    assert "found different roots" in out and "agree to" not in out


# ----------------------------------------------------------------- tables


def _painted(table, row: int, column: int) -> str:
    from PySide6.QtWidgets import QStyleOptionViewItem

    index = table.model().index(row, column)
    option = QStyleOptionViewItem()
    option.initFrom(table)
    option.rect = table.visualRect(index)
    table.itemDelegate().initStyleOption(option, index)
    return option.text


def test_tables_show_the_figures_asked_for_or_say_some_are_hidden(qtbot, window):
    type_equation(qtbot, window, "x^2 - 2")
    _type(qtbot, window.inputs.fields["x0"], "1")
    spin = window.lanes.digits
    spin.setFocus()
    spin.selectAll()
    qtbot.keyClicks(spin, "15")
    qtbot.keyClick(spin, Qt.Key.Key_Enter)
    assert spin.value() == 15
    solve_by_keys(qtbot, window)
    qtbot.wait(20)
    table = window.lanes.lanes["newton"].table
    model = table.model()
    last = model.rowCount() - 1
    raw = model.data(model.index(last, 1), Qt.ItemDataRole.UserRole)
    shown = _painted(table, last, 1)
    assert shown == f"{raw:.15g}" or shown.endswith("…"), shown
    # Widen every column (Ctrl+Shift+W in the table): all 15 figures, no mark.
    table.setFocus()
    qtbot.keyClick(table, Qt.Key.Key_W, Qt.KeyboardModifier.ControlModifier
                   | Qt.KeyboardModifier.ShiftModifier)
    for r in range(model.rowCount()):
        for c in range(1, model.columnCount()):
            value = model.data(model.index(r, c), Qt.ItemDataRole.UserRole)
            if isinstance(value, float) and not table.isColumnHidden(c):
                assert _painted(table, r, c) == f"{value:.15g}", (r, c)
    # The widths the user chose survive the next Solve.
    width = table.columnWidth(1)
    solve_by_keys(qtbot, window)
    assert table.columnWidth(1) == width


def test_a_narrow_column_marks_the_figures_it_hides(qtbot, window):
    """Iterates that differ only past the fourth figure must not read alike."""
    from PySide6.QtGui import QFontMetrics

    from app.window.views import fitted_text

    metrics = QFontMetrics(window.font())
    room = metrics.horizontalAdvance("0.0003…")
    shown = [fitted_text(x, 10, metrics, room) for x in (3.0000012e-4, 3.00000001e-4)]
    assert shown == ["0.0003…", "0.0003…"]
    assert fitted_text(3e-4, 10, metrics, room) == "0.0003"  # nothing hidden, no mark


# ----------------------------------------------------------------- inputs and messages


def test_every_input_problem_is_listed_and_a_bad_parameter_is_named(qtbot, window):
    type_equation(qtbot, window, "P*x - 1")
    view = window.inputs.parameters_view
    index = window.inputs.parameters.index(0, 1)
    view.setFocus()
    view.setCurrentIndex(index)
    qtbot.keyClick(view, Qt.Key.Key_F2)
    editor = view.focusWidget()
    qtbot.keyClicks(editor, "abc")
    qtbot.keyClick(editor, Qt.Key.Key_Return)
    for key, text in (("x0", "abc"), ("xtol", "-1"), ("max_iter", "0.5")):
        field = window.inputs.fields[key]
        field.setFocus()
        field.selectAll()
        qtbot.keyClicks(field, text)
    settle(qtbot, window)
    qtbot.waitUntil(lambda: "P:" in window.strip.status.text())
    lines = window.inputs.problem_label.text().splitlines()
    assert len(lines) == 4, lines  # the parameter and all three fields, none cut off
    assert lines[0].startswith("P: 'abc' is not a finite number")
    assert {ln.split(":")[0] for ln in lines[1:]} == {"x0", "xtol", "max_iter"}
    area = window.inputs.problem_area
    assert area.widget().sizeHint().height() <= area.height() or \
        area.verticalScrollBar().maximum() > 0
    status = window.strip.status.text()
    assert "'abc' is not a finite number" in status and "no value" not in status


def test_the_start_up_sample_opens_unmodified(qtbot, window):
    assert window.load_sample()
    settle(qtbot, window)
    qtbot.wait(50)
    assert not window.is_modified() and not window.isWindowModified()
    assert "*" not in window.windowTitle().replace("[*]", "")


def test_stopping_rules_are_named_in_words_and_saved_under_their_keys(qtbot, window, dialogs,
                                                                       tmp_path):
    import json

    from PySide6.QtWidgets import QLabel

    words = {"xtol": "step tolerance, absolute", "rtol": "step tolerance, relative",
             "ftol": "residual tolerance", "max_iter": "iteration cap"}
    labels = {lab.buddy(): lab.text().replace("&", "")
              for lab in window.inputs.findChildren(QLabel) if lab.buddy() is not None}
    for key, text in words.items():
        assert labels[window.inputs.fields[key]] == text
        assert key.replace("_", "-") in window.inputs.fields[key].toolTip()
    type_equation(qtbot, window, "x^2 - 2")
    field = window.inputs.fields["xtol"]
    field.setFocus()
    field.selectAll()
    qtbot.keyClicks(field, "1e-9")
    dialogs.save_name = str(tmp_path / "rules.json")
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_S, Qt.KeyboardModifier.ControlModifier)
    saved = json.loads((tmp_path / "rules.json").read_text())["settings"]
    assert saved["xtol"] == 1e-9 and {"rtol", "ftol", "max_iter"} <= set(saved)


def test_lanes_of_methods_no_longer_chosen_leave_the_screen_at_once(qtbot, window):
    assert window.load_sample("cooling-water-friction.json")
    settle(qtbot, window)
    _click(qtbot, window.inputs.method_boxes["brent"])
    brent = window.lanes.lanes["brent"]
    qtbot.waitUntil(brent.isVisible)  # Qt shows a widget added to a layout on the next pass
    assert window.load_sample("wall-conduction-eigenvalues.json")  # three methods again
    assert tuple(window.lanes.lanes) == ("newton", "secant", "false_position")
    assert not brent.isVisible()
    assert window.inputs.methods() == ("newton", "secant", "false_position")


def test_the_seed_scan_keeps_roots_and_drops_poles():
    """x tan x = Bi (plane-wall conduction eigenvalues; here Bi = 0.9): on [0, 12] one
    root on each branch of tan and sign changes across the poles at (k - 1/2)π (common
    practice). Only the roots may seed a start; reference: scipy.optimize.brentq on each
    branch (k-1)π .. (k-1/2)π."""
    from scipy.optimize import brentq

    from solvers import parse_equation, pipeline

    eq = parse_equation("x*tan(x) = Bi", unknown="x", parameters={"Bi": 0.9})
    seed = pipeline.seed_scan(eq.f, 0.0, 12.0)
    branches = [((k - 1) * math.pi + 1e-9, (k - 0.5) * math.pi - 1e-9) for k in range(1, 5)]
    reference = [brentq(eq.f, a, b, xtol=1e-14) for a, b in branches]
    assert len(seed.cells) == 4
    for (lo, hi, guess), root in zip(seed.cells, reference, strict=True):
        assert lo <= root <= hi and abs(guess - root) < (hi - lo)


def test_a_worksheet_listing_a_method_twice_is_refused_by_name():
    import json

    from app.documents import worksheet

    text = json.dumps({"format": "zerotrace-worksheet", "version": 1, "equation": "x^2 - 2",
                       "settings": {"methods": ["brent", "newton", "brent"]}})
    with pytest.raises(worksheet.WorksheetError,
                       match=r"^settings\.methods: 'brent' is listed twice") as info:
        worksheet.loads(text)
    assert info.value.field == "settings.methods[2]"  # the JSON path, for programs


def test_a_design_value_taken_from_one_of_two_different_roots_says_so(qtbot, window):
    type_equation(qtbot, window, "x^2 - 2")
    for key, value in (("x0", "1"), ("x1", "-1.1"), ("a", "0"), ("b", "3")):
        _type(qtbot, window.inputs.fields[key], value)
    solve_by_keys(qtbot, window)
    window.strip.editor.setFocus()
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_D, Qt.KeyboardModifier.ControlModifier)
    reason = window.worksheet().selection.reason
    assert "different roots" in reason and "None" not in reason, reason


def test_log_y_button_shows_the_whole_curve_and_keeps_the_crossings(qtbot, window):
    # cosh grows to ~1e8 on [0, 20] while its crossing of 1e3 sits near x = 7.6: the linear
    # axis shows |f| near that root, the symmetric-log axis the whole curve.
    canvas, ax = _plot_on_range(qtbot, window, "cosh(x) - 1000", 0.0, 20.0)
    button = window.plot.symlog_button
    assert not button.isChecked() and ax.get_yscale() == "linear"
    linear_top = ax.get_ylim()[1]
    # Closed form: cosh(20) - 1000 = 2.4e8 (math.cosh), far above the linear view.
    assert linear_top < (math.cosh(20.0) - 1000) / 100
    qtbot.mouseClick(button, LEFT)
    ax = window.plot.ax
    assert button.isChecked() and ax.get_yscale() == "symlog"
    assert ax.get_ylim()[1] >= 0.9 * (math.cosh(20.0) - 1000)
    lo, hi = ax.get_ylim()
    assert lo < 0 < hi  # the zero line, where the root sits, stays in view
    qtbot.mouseClick(button, LEFT)
    assert window.plot.ax.get_yscale() == "linear"
    assert window.plot.ax.get_ylim()[1] == pytest.approx(linear_top)


def test_the_convergence_view_names_the_real_unknown(qtbot, window):
    type_equation(qtbot, window, "V^3 - 2*V - 1")
    _type(qtbot, window.inputs.fields["x0"], "2")
    solve_by_keys(qtbot, window)
    bar = window.plot.tabBar()
    qtbot.mouseClick(bar, LEFT, pos=bar.tabRect(1).center())  # the Convergence tab
    assert window.plot.currentWidget() is window.plot.convergence_view
    qtbot.waitUntil(lambda: bool(window.plot.convergence_view.figure.axes), timeout=5000)
    labels = [a.get_ylabel() for a in window.plot.convergence_view.figure.axes]
    assert any("V_k" in label for label in labels), labels


def test_iteration_tables_are_headed_in_the_unknowns_own_name(qtbot, window):
    """An unknown called f (a friction factor) heads its lanes f, F(f), F′(f), Δf: never
    "x, f(x)" beside an equation with no x in it, and never "f(f)"."""
    assert window.load_sample("cooling-water-friction.json")
    settle(qtbot, window)
    solution = solve_by_keys(qtbot, window)
    assert solution.equation.unknown == "f"
    lane = window.lanes.lanes["newton"]
    header = lane.table.horizontalHeader()
    titles = [lane.model.headerData(c, Qt.Orientation.Horizontal) for c in range(header.count())]
    assert titles[:5] == ["k", "f", "F(f)", "F′(f)", "Δf"]
    type_equation(qtbot, window, "V^3 - 2*V - 1")
    _type(qtbot, window.inputs.fields["x0"], "2")
    solve_by_keys(qtbot, window)
    lane = window.lanes.lanes["newton"]
    assert [lane.model.headerData(c, Qt.Orientation.Horizontal) for c in range(3)] == \
        ["k", "V", "f(V)"]


@pytest.mark.parametrize("typed, meant", [
    ("1_000", None), ("nan", None), ("1e400", None), ("1,5", None), ("0x10", None),
    (" 2.5e-3 ", 2.5e-3), (".5", 0.5), ("-4E+2", -400.0),
])
def test_a_number_field_takes_only_what_a_calc_sheet_would_show(qtbot, window, typed, meant):
    """Digits, a point and an exponent (common practice for a calc sheet): Python's float()
    would also take '1_000' or 'nan', which the sheet could not show as typed."""
    field = window.inputs.fields["x0"]
    _type(qtbot, field, typed)
    if meant is None:
        assert "is not a finite number" in field.problem()
    else:
        assert field.problem() == "" and field.value() == meant


def test_non_ascii_digits_are_no_number_and_the_typographic_minus_is_a_minus():
    """Full-width and Arabic-Indic digits pass float() but are not what the field shows
    back (typed through the clipboard, not the keyboard: the test reads the parser)."""
    from app.window.models import parse_number

    assert parse_number("１２") is None and parse_number("٣") is None
    assert parse_number("−0.25") == -0.25
