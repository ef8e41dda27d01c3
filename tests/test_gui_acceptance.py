"""Acceptance checks of the window as an engineer reads it: every number readable, every
label consistent, nothing on screen that could be mistaken for a result it is not.

Each test here was written from a defect seen on a screenshot of the real window under
Xvfb at 1280x800 (the numbers in them are outside references named beside each check).
"""

from __future__ import annotations

import math

import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QFontMetrics
from PySide6.QtWidgets import QStyleOptionViewItem

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import idle, settle, solve_and_wait, type_equation  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated
pytestmark = pytest.mark.filterwarnings("ignore:Enum value .*AA_UseHighDpiPixmaps")


def _visible_columns(table) -> list[int]:
    model = table.model()
    return [c for c in range(model.columnCount()) if not table.isColumnHidden(c)]


def test_no_lane_column_is_cut_off_at_the_window_edge(qtbot, window):
    """A right-aligned number in a half-visible column shows its leading digits only:
    5.465405906e-12 read as "5.4654". Every column of every lane must be fully inside
    the table, and a number too long for its cell keeps its exponent (elided in the middle)."""
    type_equation(qtbot, window, "x^2 - 2")
    window.inputs.set_field("x0", 1.0)
    window.lanes.digits.setValue(17)
    solve_and_wait(qtbot, window)
    qtbot.wait(50)
    for lane in window.lanes.lanes.values():
        table = lane.table
        header = table.horizontalHeader()
        last = _visible_columns(table)[-1]
        right = header.sectionPosition(last) + header.sectionSize(last)
        assert right <= table.viewport().width() + 1, (lane.method, right,
                                                       table.viewport().width())
        # What each cell paints keeps the number's magnitude (its exponent) and fits.
        option = QStyleOptionViewItem()
        option.initFrom(table)
        model = table.model()
        for c in _visible_columns(table):
            for r in range(model.rowCount()):
                index = model.index(r, c)
                raw = model.data(index, Qt.ItemDataRole.UserRole)
                if not isinstance(raw, float) or not math.isfinite(raw) or raw == 0:
                    continue
                option.rect = table.visualRect(index)
                table.itemDelegate().initStyleOption(option, index)
                assert QFontMetrics(option.font).horizontalAdvance(option.text) <= \
                    option.rect.width(), (lane.method, option.text)
                shown = option.text.replace("…", "")  # '…': figures hidden
                assert float(shown) == pytest.approx(raw, rel=0.5), (option.text, raw)


def test_a_run_that_did_not_converge_never_shows_a_root(qtbot, window):
    """x^2 + 1 has no real root (common practice): no lane may label its last iterate a root."""
    type_equation(qtbot, window, "x^2 + 1")
    window.inputs.set_field("x0", 0.5)
    window.inputs.set_field("a", -1.0)
    window.inputs.set_field("b", 2.0)
    solution = solve_and_wait(qtbot, window)
    assert not any(r.converged for r in solution.runs)
    for lane in window.lanes.lanes.values():
        text = lane.summary.text()
        assert not text.startswith("root"), text
        assert "last x" in text, text


def test_each_lane_carries_its_method_colour(qtbot, window):
    """The lane's colour stripe is what ties it to its path and convergence line (the
    Okabe–Ito palette in app.documents.figures); it must actually be painted."""
    from PySide6.QtGui import QColor

    from app.documents.figures import method_color

    for method, lane in window.lanes.lanes.items():
        image = lane.title.grab().toImage()
        pixel = image.pixelColor(1, image.height() // 2)
        assert pixel == QColor(method_color(method)), (method, pixel.name())


def test_method_names_are_capitalised_alike_wherever_they_are_titles(qtbot, window):
    """Lane titles, the path chooser and plot legends read "Newton–Raphson", "Secant",
    "False position": one style for every title, not "Newton–Raphson" beside "secant"."""
    type_equation(qtbot, window, "x^3 - 2*x - 5")
    window.inputs.set_field("a", 2.0)
    window.inputs.set_field("b", 3.0)
    solve_and_wait(qtbot, window)
    titles = [lane.title.text() for lane in window.lanes.lanes.values()]
    assert titles == ["Newton–Raphson", "Secant", "False position"]
    box = window.plot.path_box
    assert [box.itemText(i) for i in range(1, box.count())] == titles
    window.plot.setCurrentIndex(1)
    legend = window.plot.convergence_view.figure.axes[0].get_legend()
    assert [t.get_text() for t in legend.get_texts()] == titles


def test_a_number_too_long_for_its_field_is_shown_shortened_and_kept_exact(qtbot, window):
    """The default rtol 4 eps = 8.881784197001252e-16 (numpy.finfo(float).eps * 4) was
    shown as "8.881784197" with the exponent cut off: it read as 8.9. A field whose
    number does not fit shows it with fewer digits and its exponent; editing shows, and
    solving uses, the exact value."""
    import numpy as np
    from PySide6.QtWidgets import QApplication

    assert window.load_sample("gas-molar-volume-vdw.json")
    settle(qtbot, window)
    window.inputs.set_field("x0", 9.188058343089123e-05)  # a root of the sample, say
    for key, field in window.inputs.fields.items():
        room = field.contentsRect().width() - 4
        assert field.fontMetrics().horizontalAdvance(field.text()) <= room, (key, field.text())
        if field.text():
            shown = float(field.text().replace("…", ""))  # '…': figures hidden
            assert shown == pytest.approx(field.value(), rel=1e-2), (key, field.text())
    rtol = window.inputs.fields["rtol"]
    assert rtol.value() == 4 * np.finfo(float).eps
    assert window.worksheet().settings.rtol == 4 * np.finfo(float).eps
    assert window.worksheet().settings.x0 == 9.188058343089123e-05
    modified = window.is_modified()
    window.activateWindow()
    rtol.setFocus()
    qtbot.waitUntil(lambda: QApplication.focusWidget() is rtol, timeout=5000)
    assert rtol.text() == repr(float(4 * np.finfo(float).eps))  # the whole number to edit
    assert window.is_modified() == modified  # showing the whole number is no edit


def _scan_and_wait(qtbot, w):
    assert w.start_scan(), w.last_error
    qtbot.waitUntil(lambda: w.scan_result is not None and not w.runner.is_busy("scan"),
                    timeout=30_000)
    idle(qtbot, w)


def test_the_roots_list_shows_x_residual_and_multiplicity_whole(qtbot, window):
    """Plane-wall sample x tan x = Bi on [0, 12]: one root on each branch of tan, four in
    all (common practice). Their x, residual and multiplicity must all be inside the list,
    not a multiplicity column cut at the edge with its '1' out of sight (17 figures asked)."""
    assert window.load_sample("wall-conduction-eigenvalues.json")
    settle(qtbot, window)
    window.lanes.digits.setValue(17)
    _scan_and_wait(qtbot, window)
    view = window.roots_view
    header = view.horizontalHeader()
    assert window.roots_model.rowCount() == 4
    right = header.sectionPosition(2) + header.sectionSize(2)
    assert right <= view.viewport().width() + 1, (right, view.viewport().width())
    assert header.offset() == 0
    option = QStyleOptionViewItem()
    option.initFrom(view)
    for r in range(4):
        for c in (0, 1):
            index = window.roots_model.index(r, c)
            raw = window.roots_model.data(index, Qt.ItemDataRole.UserRole)
            option.rect = view.visualRect(index)
            view.itemDelegate().initStyleOption(option, index)
            assert QFontMetrics(option.font).horizontalAdvance(option.text) <= \
                option.rect.width(), option.text
            if raw:
                assert float(option.text.replace("…", "")) == pytest.approx(raw, rel=0.5)


def _headings(model, count: int) -> list[str]:
    return [model.headerData(c, Qt.Orientation.Horizontal) for c in range(count)]


def test_the_roots_list_heads_its_columns_with_the_unknown_and_its_unit(qtbot, window):
    """The roots list names the unknown as the iteration tables do: the bore D in the unit it
    is wanted in, and the residual f(D) (invented US customary sample; the Darcy-Weisbach
    form is common practice). x tan x = Bi keeps x and f(x)."""
    assert window.load_sample("wall-conduction-eigenvalues.json")
    settle(qtbot, window)
    _scan_and_wait(qtbot, window)
    assert _headings(window.roots_model, 3) == ["x", "f(x)", "mult."]
    assert window.load_sample("cooling-line-bore-us-customary.json")
    settle(qtbot, window)
    for name, text in (("from", "20"), ("to", "500")):
        field = window.inputs.fields[name]
        field.setFocus()
        field.selectAll()
        qtbot.keyClicks(field, text)
    qtbot.keyClick(window.inputs.fields["to"], Qt.Key.Key_Tab)
    _scan_and_wait(qtbot, window)
    # f = hf - fD*(L/D)*v^2/(2g) is a head: the residual in m
    assert _headings(window.roots_model, 3) == ["D [mm]", "f(D) [m]", "mult."]
    assert window.roots_model.rowCount() == 1
    # the design value taken from the list says its unit too
    qtbot.mouseClick(window.roots.design_button, Qt.MouseButton.LeftButton)
    label = window.roots.design_label.text()
    assert label.startswith("Design value: 144.9") and label.endswith(" mm")


def test_a_long_scan_summary_is_readable_from_its_first_line(qtbot, window):
    """sin(1/x) on [1e-4, 1] oscillates without bound near 0 (common practice): the scan
    adds warnings, and the summary ran past its five lines, cut at top and bottom. The
    whole text must be reachable (it scrolls), starting with the count of roots."""
    from PySide6.QtWidgets import QScrollArea

    type_equation(qtbot, window, "sin(1/x)")
    window.inputs.set_field("from", 1e-4)
    window.inputs.set_field("to", 1.0)
    settle(qtbot, window)
    _scan_and_wait(qtbot, window)
    label = window.roots_summary
    assert "⚠" in label.text() and label.text().count("\n") >= 2
    qtbot.wait(20)
    assert label.height() >= label.heightForWidth(label.width()), "text cut off"
    area = label.parentWidget().parentWidget()
    assert isinstance(area, QScrollArea) and area.widget() is label
    assert area.verticalScrollBar().value() == 0
    assert label.alignment() & Qt.AlignmentFlag.AlignTop


@pytest.mark.parametrize("sample", ["project-irr.json", "gas-molar-volume-vdw.json",
                                    "sign-arm-natural-frequencies.json"])
def test_axis_titles_and_the_axis_multiplier_are_inside_the_plot(qtbot, window, sample):
    """The internal-rate-of-return sample draws f up to 1.2e7: matplotlib writes the
    '1e7' multiplier above the axis, and it was cut off at the top, so f read as 1.2.
    Tick labels like -1000 pushed the axis title f(V) off the left edge."""
    assert window.load_sample(sample)
    settle(qtbot, window)
    solve_and_wait(qtbot, window)
    view = window.plot.function_view
    view.canvas.draw()
    renderer = view.canvas.get_renderer()
    ax = window.plot.ax
    figure_box = view.figure.bbox
    ylabel = ax.yaxis.label.get_window_extent(renderer)
    assert ylabel.x0 >= 0, (sample, ylabel)
    offset = ax.yaxis.get_offset_text()
    if offset.get_text():
        box = offset.get_window_extent(renderer)
        assert box.y1 <= figure_box.y1, (sample, box, figure_box)
    for label in ax.get_yticklabels():
        if label.get_text():
            assert label.get_window_extent(renderer).x0 >= 0, (sample, label.get_text())


def test_messages_and_help_name_the_unknown_chooser_by_its_label(qtbot, window):
    """The status line said "choose one under Solve for" and the help spoke of "Solve for",
    but the chooser beside the editor is labelled "Unknown"."""
    from PySide6.QtWidgets import QLabel

    from app.window.dialogs import HELP_HTML
    from app.window.equation_strip import Analysis

    buddies = [lab for lab in window.strip.findChildren(QLabel)
               if lab.buddy() is window.strip.unknown_box]
    label = buddies[0].text().replace("&", "")
    window.strip.show_analysis(Analysis("x + y", names=("x", "y"), unknown="x",
                                        candidates=("x", "y"), ambiguous=True,
                                        equation=object()))
    status = window.strip.status.text()
    assert "Solve for" not in status and f"under {label}" in status, status
    assert "Solve for" not in HELP_HTML and f"<b>{label}</b>" in HELP_HTML
    # Every shortcut of the Run menu is listed in the help's key list.
    assert "Ctrl+D" in HELP_HTML


def test_about_names_the_tables_the_tests_really_use(qtbot, window):
    """The About page claimed handbook tables of "friction factors, normal depths": the
    tests hold no such table (Colebrook is checked through scipy.special.wrightomega and
    brentq, Manning through brentq). It must name the tables the test files cite."""
    from app.window.dialogs import ABOUT_HTML

    for cited in ("Blevins", "Table 8-1", "Incropera", "Table 5.1", "CRC Handbook",
                  "wrightomega", "154"):
        assert cited in ABOUT_HTML, cited
    assert "normal depths" not in ABOUT_HTML


def _tab_chain(window, start, steps: int = 40) -> list:
    """The widgets Tab visits from ``start``, as the window's focus chain orders them."""
    from PySide6.QtWidgets import QApplication

    seen = []
    widget = start
    for _ in range(steps):
        seen.append(widget)
        widget = widget.nextInFocusChain()
        while not (widget.focusPolicy() & Qt.FocusPolicy.TabFocus) or not widget.isVisible() \
                or not widget.isEnabled():
            widget = widget.nextInFocusChain()
    assert QApplication.instance() is not None
    return seen


def test_tab_visits_only_controls_and_leaves_the_tables(qtbot, window):
    """Tab stopped on the invisible frame around the inputs, and inside an iteration table
    walked through every cell (100 iterates x 5 columns) before reaching anything else."""
    from PySide6.QtWidgets import QApplication, QScrollArea

    assert window.load_sample("wall-conduction-eigenvalues.json")
    settle(qtbot, window)
    solve_and_wait(qtbot, window)
    chain = _tab_chain(window, window.strip.editor)
    assert not [w for w in chain if isinstance(w, QScrollArea)], "a bare frame takes focus"
    # The plot's tabs take focus once (the tab bar), not twice (tab widget and tab bar).
    assert window.plot not in chain
    window.activateWindow()
    table = window.lanes.lanes["false_position"].table  # 100 iterates (its stop reason)
    table.setFocus()
    qtbot.waitUntil(lambda: QApplication.focusWidget() is table, timeout=5000)
    table.setCurrentIndex(table.model().index(0, 1))
    qtbot.keyClick(table, Qt.Key.Key_Tab)
    assert QApplication.focusWidget() is not table, "Tab must leave a read-only table"
    roots = window.roots_view
    assert not roots.tabKeyNavigation()


def test_when_the_unknown_is_called_f_the_residual_is_not_also_f(qtbot, window):
    """The opening sample solves the Colebrook equation for the friction factor f: the plot
    read "f(f)", the roots panel "1 root of f(f)" and the derivative "df/df". The residual
    takes another letter (F) when the unknown is f."""
    assert window.load_sample("cooling-water-friction.json")
    settle(qtbot, window)
    assert window.analysis.unknown == "f"
    _scan_and_wait(qtbot, window)
    solve_and_wait(qtbot, window)
    assert "f(f)" not in window.roots_summary.text()
    assert "F(f)" in window.roots_summary.text()
    ax = window.plot.ax
    assert ax.get_ylabel() == "F(f)"
    assert "F(f)" in [line.get_label() for line in ax.get_lines()]
    assert window.strip.derivative_view.label.toolTip().startswith("derivative of F =")
    from app.window.equation_strip import derivative_heading

    assert derivative_heading("f") == r"\frac{dF}{df}"
    assert derivative_heading("x") == r"\frac{df}{dx}"


def test_a_new_worksheet_does_not_keep_the_old_ones_status(qtbot, window):
    """After Solve, File > New left "Solved: 3 of 3 methods converged." in the status bar
    for the empty worksheet."""
    type_equation(qtbot, window, "x^2 - 2")
    window.inputs.set_field("x0", 1.0)
    solve_and_wait(qtbot, window)
    assert window.statusBar().currentMessage().startswith("Solved")
    window.new_document()
    assert not window.statusBar().currentMessage().startswith("Solved")
    assert window.load_sample("project-irr.json")
    assert window.statusBar().currentMessage() == "Opened project-irr.json"


def test_about_says_which_version_is_running(qtbot, window, monkeypatch):
    """A checker filing a calculation needs the tool's version; About did not give it.
    It must match the one the CSV files record (app.documents.export.tool_version)."""
    from app.documents.export import tool_version
    from app.window import dialogs

    shown = []
    monkeypatch.setattr(dialogs.TextDialog, "exec", lambda self: shown.append(self) or 0)
    window.show_about()
    text = shown[0].browser.toPlainText()
    assert f"zerotrace {tool_version()}" in text
    assert "qualified engineer" in text


def test_a_scan_never_overlays_the_iterates_of_another_equation(qtbot, window):
    """Solve x^2 - 2, then type sin(1/x) and scan: the plot of sin(1/x) carried Newton's
    iterates of x^2 - 2 (points at f values of the other equation) as its path."""
    type_equation(qtbot, window, "x^2 - 2")
    window.inputs.set_field("x0", 1.0)
    solve_and_wait(qtbot, window)
    assert window.plot.path_box.count() == 4  # none + the three methods
    type_equation(qtbot, window, "x^3 - 2*x - 5")
    window.inputs.set_field("from", 0.0)
    window.inputs.set_field("to", 4.0)
    settle(qtbot, window)
    _scan_and_wait(qtbot, window)
    # Wallis's cubic has one real root, 2.0945514815423265 (numpy.roots gives the same).
    assert [r.x for r in window.scan_result.roots] == [pytest.approx(2.0945514815423265)]
    assert window.plot.path_box.count() == 1, "stale iterates drawn over the new curve"
    labels = [line.get_label() for line in window.plot.ax.get_lines()]
    assert not any("iterates" in label for label in labels), labels


def test_the_plot_says_when_it_shows_an_earlier_input(qtbot, window):
    """After an edit the lanes said "inputs changed since this run" but the plot kept the
    old curve with no word, even while the editor held a typo."""
    from app.window.canvas import HINT

    type_equation(qtbot, window, "x^2 - 2")
    window.inputs.set_field("x0", 1.0)
    solve_and_wait(qtbot, window)
    assert window.plot.hint.text() == HINT
    type_equation(qtbot, window, "x^2 - 2 +")
    assert "earlier" in window.plot.hint.text()
    type_equation(qtbot, window, "x^2 - 3")
    solve_and_wait(qtbot, window)
    assert window.plot.hint.text() == HINT


def test_a_failed_write_names_the_file_and_folder_not_a_temporary_name(qtbot, window,
                                                                        dialogs, tmp_path):
    """Exporting into a folder that does not exist said: No such file or directory:
    '/…/.x.csv.fhc3288s.tmp', the name of a temporary file the user never chose."""
    type_equation(qtbot, window, "x^2 - 2")
    window.inputs.set_field("x0", 1.0)
    solve_and_wait(qtbot, window)
    target = tmp_path / "no such folder" / "log.csv"
    dialogs.save_name = str(target)
    assert not window.export_runs_csv()
    message = dialogs.titles("warning")[-1]
    assert ".tmp" not in message, message
    assert str(target.parent) in message and "does not exist" in message, message
    dialogs.save_name = str(tmp_path / "missing" / "sheet.json")
    assert not window.save_as()
    message = dialogs.titles("warning")[-1]
    assert ".tmp" not in message and "does not exist" in message, message


def _mnemonic(text: str) -> str | None:
    i = text.replace("&&", "").find("&")
    return text.replace("&&", "")[i + 1].lower() if i >= 0 else None


def test_alt_keys_are_unique_in_the_window_and_in_each_menu(qtbot, window):
    """Alt+P went to both the Parameters table and the Polish button, Alt+D to damping and
    the design value, Alt+R to the Run menu and rtol, Alt+H to Help and the path chooser;
    in the File menu r and s were doubled, in the Run menu c."""
    from PySide6.QtWidgets import QAbstractButton, QLabel

    window.plot.setCurrentIndex(0)
    qtbot.wait(20)
    keys: dict[str, list[str]] = {}
    for action in window.menuBar().actions():
        keys.setdefault(_mnemonic(action.text()), []).append(action.text())
    for widget in window.findChildren(QLabel) + window.findChildren(QAbstractButton):
        if not widget.isVisible():
            continue
        if isinstance(widget, QLabel) and widget.buddy() is None:
            continue
        key = _mnemonic(widget.text())
        if key:
            keys.setdefault(key, []).append(widget.text())
    keys.pop(None, None)
    assert {k: v for k, v in keys.items() if len(v) > 1} == {}
    for menu in [a.menu() for a in window.menuBar().actions()]:
        seen: dict[str, list[str]] = {}
        for action in menu.actions():
            key = _mnemonic(action.text())
            if key:
                seen.setdefault(key, []).append(action.text())
        assert {k: v for k, v in seen.items() if len(v) > 1} == {}, menu.title()


def test_ctrl_return_while_typing_a_parameter_value_solves_with_that_value(qtbot, window):
    """Typing a value in the parameters table and pressing Ctrl+Return said "Cannot solve
    yet: a: needs a value": the value still sat in the cell editor. 4x - 2 = 0 has its root
    at 0.5 (exact arithmetic)."""
    from PySide6.QtWidgets import QApplication

    type_equation(qtbot, window, "a*x - 2")
    view = window.inputs.parameters_view
    window.activateWindow()
    view.setFocus()
    index = view.model().index(0, 1)
    view.setCurrentIndex(index)
    view.edit(index)
    qtbot.waitUntil(lambda: QApplication.focusWidget() is not view, timeout=5000)
    editor = QApplication.focusWidget()
    qtbot.keyClicks(editor, "4")
    before = window.solution
    qtbot.keyClick(editor, Qt.Key.Key_Return, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: window.solution is not before and window.solution is not None,
                    timeout=10_000)
    assert window.solution.worksheet.parameter_values()["a"] == 4.0
    assert window.solution.runs[0].root == pytest.approx(0.5, rel=1e-14)


def test_a_start_value_picked_on_the_plot_carries_no_false_precision(qtbot, window):
    """Shift+click at x = 2.5 on a plot of [0, 4] set x0 = 2.50137362637362... (17 figures
    for a pick one pixel wide). The pick is rounded to the plot's resolution."""
    from PySide6.QtCore import QPoint
    from PySide6.QtTest import QTest

    type_equation(qtbot, window, "x^3 - 2*x - 5")
    window.inputs.set_field("from", 0.0)
    window.inputs.set_field("to", 4.0)
    solve_and_wait(qtbot, window)
    canvas = window.plot.function_view.canvas
    canvas.draw()
    ax = window.plot.ax
    px, py = ax.transData.transform((2.50137362637, 0.0))
    ratio = canvas.device_pixel_ratio or 1.0  # a real Shift+click on the canvas widget
    where = QPoint(round(px / ratio), round((canvas.figure.bbox.height - py) / ratio))
    QTest.mouseClick(canvas, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.ShiftModifier,
                     where)
    x0 = window.inputs.fields["x0"].value()
    assert x0 == pytest.approx(2.5, abs=0.02)
    assert len(repr(x0)) <= 6, x0  # e.g. 2.501: a thousandth of the 4-unit span
    assert window.inputs.fields["x0"].text() == repr(x0)
