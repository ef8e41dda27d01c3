"""A process engineer's trial of the window, each finding pinned with real key and mouse
events on the real widgets (pytest-qt, offscreen).

The jobs are invented scenarios: a cubic equation of state for a made-up fluid in a drum
(a = 1.4 Pa·m⁶/mol², b = 60 cm³/mol, 8 bar, 46.85 °C: three real roots), and a
Rachford–Rice balance of a made-up three-component feed. Outside references: numpy.roots
on the cubic written out as a polynomial in v, scipy.optimize.brentq on the Rachford–Rice
function.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.optimize
from PySide6.QtCore import Qt
from PySide6.QtGui import QGuiApplication
from PySide6.QtTest import QTest

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import (  # noqa: E402
    edit_cell,
    open_tables_window,
    run_table,
    settle,
    solve_by_keys,
    type_equation,
    type_into,
)

pytest_plugins = ("gui_helpers",)

CUBIC_EOS = "P = R*T/(v - b) - a/(v^2 + 2*b*v - b^2)"
DRUM = {"P": ("8", "bar"), "R": ("8.314462618", "J/(mol*K)"), "T": ("46.85", "degC"),
        "a": ("1.4", "Pa*m^6/mol^2"), "b": ("60", "cm^3/mol")}


def drum_roots_l_per_mol() -> np.ndarray:
    """The three real roots of the drum's cubic (numpy.roots), in L/mol."""
    R, T, P, a, b = 8.314462618, 46.85 + 273.15, 8e5, 1.4, 60e-6
    # P (v - b)(v² + 2bv - b²) = RT (v² + 2bv - b²) - a (v - b), written out in powers of v
    coefficients = [P, P * b - R * T, -3 * P * b**2 - 2 * b * R * T + a,
                    P * b**3 + R * T * b**2 - a * b]
    roots = np.roots(coefficients)
    assert np.all(np.abs(roots.imag) < 1e-12)
    return np.sort(roots.real) * 1000.0


def arrow_down_to(box, wanted) -> None:
    """Down-arrow through a combo box until ``wanted(box)`` holds (bounded by its count:
    a box that never gets there fails the test instead of hanging it)."""
    for _ in range(box.count()):
        if wanted(box):
            return
        QTest.keyClick(box, Qt.Key.Key_Down)
    assert wanted(box)


def choose_unknown_by_keys(qtbot, w, name: str) -> None:
    box = w.strip.unknown_box
    box.setFocus()
    target = box.findData(name)
    assert target >= 0, f"{name} is not offered as the unknown"
    arrow_down_to(box, lambda b: b.currentIndex() == target)
    qtbot.waitUntil(lambda: w.analysis is not None and w.analysis.unknown == name
                    and not w.runner.is_busy("preview"), timeout=10_000)


def type_values_and_unit(qtbot, w, values: dict[str, tuple[str, str]], unit: str) -> None:
    """Each parameter's value and unit typed into its cells, then the unknown's unit in
    its box (Return), waiting for the analysis to take it."""
    view, model = w.inputs.parameters_view, w.inputs.parameters
    for name, (value, unit_text) in values.items():
        row = model.names().index(name)
        edit_cell(qtbot, view, row, model.VALUE, value)
        edit_cell(qtbot, view, row, model.UNIT, unit_text)
    unit_box = w.strip.unit_box
    unit_box.setFocus()
    qtbot.keyClicks(unit_box, unit)
    QTest.keyClick(unit_box, Qt.Key.Key_Return)
    qtbot.waitUntil(lambda: w.analysis is not None and w.analysis.ok
                    and w.analysis.equation.unknown_unit == unit, timeout=10_000)
    settle(qtbot, w)


def type_drum(qtbot, w) -> None:
    """The drum's cubic, solved for v in L/mol, every value typed into its cell."""
    type_equation(qtbot, w, CUBIC_EOS)
    choose_unknown_by_keys(qtbot, w, "v")
    type_values_and_unit(qtbot, w, DRUM, "L/mol")


def test_the_plot_shows_every_converged_root_even_outside_the_grown_bracket(qtbot, window):
    w = window
    type_drum(qtbot, w)
    # Start values and scan range left blank: x0 = 1 L/mol, the bracket grown around it
    # holds the middle root, while Newton–Raphson and the secant reach the vapour root.
    solution = solve_by_keys(qtbot, w)
    roots = drum_roots_l_per_mol()
    converged = [r.root for r in solution.runs if r.converged]
    assert any(abs(x - roots[2]) < 1e-9 * roots[2] for x in converged)  # numpy.roots
    bracket = solution.start.bracket
    assert bracket is not None and not bracket[0] <= roots[2] <= bracket[1]
    lo, hi = w.plot.ax.get_xlim()
    for x in converged:
        assert lo < x < hi, f"root {x} drawn outside the plot's [{lo}, {hi}]"


# A made-up flash drum: K-values of the three components, the feeds pasted as rows.
RACHFORD_RICE = ("z1*(K1 - 1)/(1 + V*(K1 - 1)) + z2*(K2 - 1)/(1 + V*(K2 - 1)) "
                 "+ z3*(K3 - 1)/(1 + V*(K3 - 1)) = 0")
FEEDS = [(0.30, 0.30, 0.40, 4.2), (0.10, 0.30, 0.60, 6.5), (0.05, 0.15, 0.80, 4.2),
         (0.25, 0.35, 0.40, 40.0), (0.50, 0.30, 0.20, 3.1), (0.25, 0.35, 0.40, 1.6)]
# the third and the last are all liquid at these K-values: no root in [0, 1]
K2, K3 = 1.1, 0.12


def vapour_fraction(z1: float, z2: float, z3: float, k1: float) -> float:
    """The reference: scipy.optimize.brentq on the Rachford–Rice function over [0, 1]."""
    def f(v: float) -> float:
        return sum(z * (k - 1) / (1 + v * (k - 1)) for z, k in ((z1, k1), (z2, K2), (z3, K3)))
    return scipy.optimize.brentq(f, 0.0, 1.0, xtol=1e-15)


def flash_table(qtbot, w):
    """The flash equation in the main window with a long bracket end, then Ctrl+T and the
    feeds pasted from a spreadsheet (tab-separated) into the tables window."""
    type_equation(qtbot, w, RACHFORD_RICE)
    choose_unknown_by_keys(qtbot, w, "V")
    model = w.inputs.parameters
    for name, value in (("z1", "0.3"), ("K1", "4.2"), ("z2", "0.3"), ("K2", str(K2)),
                        ("z3", "0.4"), ("K3", str(K3))):
        edit_cell(qtbot, w.inputs.parameters_view, model.names().index(name), model.VALUE,
                  value)
    type_into(qtbot, w.inputs.fields["a"], "0")
    type_into(qtbot, w.inputs.fields["b"], "0.99999999999999989")  # below 1: 1 - 2^-53
    settle(qtbot, w)
    t = open_tables_window(qtbot, w)
    qtbot.waitExposed(t)
    rows = "\n".join("\t".join(repr(v) for v in feed) for feed in FEEDS)
    QGuiApplication.clipboard().setText("z1\tz2\tz3\tK1\n" + rows + "\n")
    t.loaded, t.last_error = False, ""
    QTest.mouseClick(t.paste_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: t.loaded or bool(t.last_error), timeout=20_000)
    assert not t.last_error
    box = t.method_box
    box.setFocus()
    arrow_down_to(box, lambda b: b.currentData() == "brent")
    return t


def test_the_tables_window_shows_the_first_digits_of_the_start_values_it_is_given(qtbot,
                                                                                   window):
    t = flash_table(qtbot, window)
    # The bracket came from the worksheet: its end, longer than the field, reads from its
    # first digit (the field once showed "9999999999999989", the leading "0." out of sight).
    for edit in (t.a_edit, t.b_edit, t.equation_edit):
        assert edit.cursorPosition() == 0
    assert t.b_edit.text() == "0.9999999999999999"
    assert t.equation_edit.text() == RACHFORD_RICE


def test_return_on_a_row_of_the_results_opens_its_lane(qtbot, window):
    t = flash_table(qtbot, window)
    run_table(qtbot, t)
    view = t.view
    QTest.mouseClick(view.viewport(), Qt.MouseButton.LeftButton,
                     pos=view.visualRect(t.model.index(0, 0)).center())
    assert t.lane is None  # a click selects the row; Return opens it
    for row in (0, 1, 2, 3):
        if row:
            QTest.keyClick(view, Qt.Key.Key_Down)
        QTest.keyClick(view, Qt.Key.Key_Return)
        qtbot.waitUntil(lambda row=row: t.lane is not None and t.lane_row == row)
        z1, z2, z3, k1 = FEEDS[row]
        run = t.lane.run
        if row == 2:  # all liquid: f(0) and f(1) of one sign
            assert not run.converged and run.reason == "no_sign_change"
        else:
            assert run.converged
            assert run.root == pytest.approx(vapour_fraction(z1, z2, z3, k1), abs=2e-12)


def test_a_heading_too_long_for_its_column_keeps_its_start_and_is_whole_in_its_tooltip(
        qtbot, window):
    from PySide6.QtCore import QEvent, QPoint
    from PySide6.QtGui import QHelpEvent
    from PySide6.QtWidgets import QApplication, QToolTip

    w = window
    type_drum(qtbot, w)
    solve_by_keys(qtbot, w)
    table = w.lanes.lanes["newton"].table
    header = table.horizontalHeader()
    column = table.model().keys.index("dfx")
    heading = table.model().headerData(column, Qt.Orientation.Horizontal)
    assert heading == "f′(v) [Pa/(L/mol)]"
    assert header.sectionSize(column) < header.fontMetrics().horizontalAdvance(heading)
    # Shortened at its end: the derivative's name stays in sight (it was clipped at both
    # ends, reading "(v) [Pa/(L/mol)", as if it were a second column of v).
    assert header.textElideMode() == Qt.TextElideMode.ElideRight
    middle = QPoint(header.sectionViewportPosition(column) + header.sectionSize(column) // 2,
                    header.height() // 2)
    QApplication.sendEvent(header.viewport(),
                           QHelpEvent(QEvent.Type.ToolTip, middle,
                                      header.viewport().mapToGlobal(middle)))
    qtbot.waitUntil(lambda: QToolTip.isVisible())
    assert QToolTip.text().startswith(heading + ": ")
    QToolTip.hideText()


def tick_label_overlaps(ax, renderer) -> list[tuple[str, str, str]]:
    """Pairs of visible tick labels (within the view) whose boxes overlap, on each axis."""
    clashes = []
    for axis in (ax.xaxis, ax.yaxis):
        lo, hi = sorted(axis.get_view_interval())
        labels = [t.label1 for t in axis.get_major_ticks() + axis.get_minor_ticks()
                  if lo <= t.get_loc() <= hi and t.label1.get_visible() and t.label1.get_text()]
        boxes = [label.get_window_extent(renderer) for label in labels]
        clashes += [(axis.axis_name, labels[i].get_text(), labels[j].get_text())
                    for i in range(len(boxes)) for j in range(i + 1, len(boxes))
                    if boxes[i].overlaps(boxes[j])]
    return clashes


def test_a_design_chart_on_log_axes_over_a_decade_or_two_has_readable_labels(qtbot, window):
    from app.documents.figures import MATPLOTLIB_LOCK

    t = flash_table(qtbot, window)
    run_table(qtbot, t)
    box = t.against_box
    box.setFocus()
    # K1 from 1.6 to 40: about one and a half decades
    arrow_down_to(box, lambda b: b.currentText() == "K1")
    for check in (t.log_x, t.log_y):
        QTest.mouseClick(check, Qt.MouseButton.LeftButton,
                         pos=check.rect().topLeft() + check.rect().center() / 4)
    qtbot.waitUntil(lambda: t.log_x.isChecked() and t.log_y.isChecked())
    figure = t.chart.figure
    with MATPLOTLIB_LOCK:
        figure.canvas.draw()
        ax = figure.axes[0]
        assert ax.get_xscale() == ax.get_yscale() == "log"
        # labels such as "3×10⁰4×10⁰" ran into each other; plain numbers, set apart
        assert tick_label_overlaps(ax, figure.canvas.get_renderer()) == []
        shown = [t.get_text() for t in ax.xaxis.get_ticklabels(which="both") if t.get_text()]
    assert "10" in shown and "20" in shown


def test_a_long_sweep_sends_the_window_no_more_progress_than_its_bar_can_show(qtbot, window):
    """5,000 rows reported progress 5,000 times, each an event the UI thread had to take
    in turn: the queue never emptied and typing and timers waited behind it."""
    from PySide6.QtCore import QEvent, QObject

    from app.window.workers import _bridge

    class Count(QObject):
        calls = 0

        def eventFilter(self, _watched, event):  # noqa: N802 (Qt name)
            if event.type() == QEvent.Type.MetaCall:  # a queued report from a worker
                Count.calls += 1
            return False

    t = open_tables_window(qtbot, window)
    type_into(qtbot, t.equation_edit, "x^3 - x - p")  # follows one root of a cubic
    type_into(qtbot, t.unknown_edit, "x")
    type_into(qtbot, t.sweep_name_edit, "p")
    type_into(qtbot, t.sweep_from, "2")
    type_into(qtbot, t.sweep_to, "40")
    t.sweep_count.setFocus()
    QTest.keyClick(t.sweep_count, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    qtbot.keyClicks(t.sweep_count, "5000")
    QTest.mouseClick(t.sweep_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: t.model.rowCount() == 5000)
    type_into(qtbot, t.x0_edit, "1.5")
    counter = Count()
    bridge = _bridge()
    bridge.installEventFilter(counter)
    try:
        QTest.mouseClick(t.run_button, Qt.MouseButton.LeftButton)
        qtbot.waitUntil(lambda: t.done is not None, timeout=120_000)
    finally:
        bridge.removeEventFilter(counter)
    batch = t.done.batch
    assert int(batch.converged.sum()) == 5000
    # the last row against the real root of x^3 - x - 40 (numpy.roots)
    real = [r.real for r in np.roots([1, 0, -1, -40]) if abs(r.imag) < 1e-12]
    assert batch.root[-1] == pytest.approx(real[0], rel=1e-14)
    assert t.progress.value() == 1000
    assert Count.calls <= 1000 + 10  # a thousandth of the work at a time, and the end


def test_the_scan_summary_gives_the_range_in_the_unknowns_unit(qtbot, window):
    w = window
    type_drum(qtbot, w)
    type_into(qtbot, w.inputs.fields["from"], "0.07")  # in L/mol, the unknown's unit
    type_into(qtbot, w.inputs.fields["to"], "5")
    settle(qtbot, w)
    before = w.scan_result
    QTest.keyClick(w.strip.editor, Qt.Key.Key_Return,
                   Qt.KeyboardModifier.ControlModifier | Qt.KeyboardModifier.ShiftModifier)
    qtbot.waitUntil(lambda: w.scan_result is not None and w.scan_result is not before
                    and not w.runner.is_busy("scan"), timeout=30_000)
    found = [r.x for r in w.scan_result.roots]
    assert found == pytest.approx(list(drum_roots_l_per_mol()), rel=1e-9)  # numpy.roots
    assert w.roots_summary.text().startswith("3 roots of f(v) in [0.07, 5] L/mol.")


def test_temperatures_in_degc_are_noted_once_in_the_status_line(qtbot, window):
    """A made-up glycol cooler's heat balance with three temperatures in degC: the status
    line said the same sentence about offsets three times, over three lines."""
    w = window
    type_equation(qtbot, w, "mh*cph*(Thi - Tho) = mc*cpc*(Tco - Tci)")
    choose_unknown_by_keys(qtbot, w, "Tco")
    values = {"mh": ("3.2", "kg/s"), "cph": ("3.9", "kJ/(kg*K)"), "Thi": ("118", "degC"),
              "Tho": ("70", "degC"), "mc": ("2.6", "kg/s"), "cpc": ("4.1", "kJ/(kg*K)"),
              "Tci": ("41", "degC")}
    type_values_and_unit(qtbot, w, values, "degC")
    status = w.strip.status.text()
    assert status.count("converted to kelvin") == 1
    assert "'Thi', 'Tho' and 'Tci' in degC/degF are absolute temperatures" in status
    solution = solve_by_keys(qtbot, w)
    # closed form of the balance: Tco = Tci + mh·cph·(Thi − Tho)/(mc·cpc)
    expected = 41 + 3.2 * 3.9 * (118 - 70) / (2.6 * 4.1)
    for run in solution.runs:
        assert run.converged and run.root == pytest.approx(expected, rel=1e-12)


def test_the_exported_table_says_which_bracket_every_row_was_given(qtbot, window, dialogs,
                                                                   tmp_path):
    import csv

    t = flash_table(qtbot, window)
    type_into(qtbot, t.b_edit, "1")
    run_table(qtbot, t)
    dialogs.save_name = str(tmp_path / "flash.csv")
    QTest.mouseClick(t.export_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: (tmp_path / "flash.csv").exists())
    lines = (tmp_path / "flash.csv").read_text(encoding="utf-8").splitlines()
    settings = next(line for line in lines if line.startswith("# settings:"))
    # the bracket is how the file can be run again; it was missing from the # lines
    assert "method=brent" in settings
    assert "bracket_a=0.0" in settings and "bracket_b=1.0" in settings
    rows = list(csv.DictReader(line for line in lines if not line.startswith("#")))
    for row, feed in zip(rows, FEEDS, strict=True):
        if row["converged"] == "True":
            assert float(row["root"]) == pytest.approx(vapour_fraction(*feed), abs=2e-12)
        else:
            assert row["reason"] == "no_sign_change" and row["root"] == ""


def test_with_the_unknown_picked_for_the_user_a_missing_value_says_to_choose_it(qtbot,
                                                                                 window):
    """A cooler's balance (made up): every name has no value at first, so the first one,
    mh, is taken as the unknown and has no row. Filling every row but Tho left "no value
    for 'Tho' (the unknown is 'mh')" with no word on how to go on."""
    w = window
    type_equation(qtbot, w, "mh*cph*(Thi - Tho) = mc*cpc*(Tco - Tci)")
    assert w.analysis.unknown == "mh" and w.analysis.ambiguous
    view, model = w.inputs.parameters_view, w.inputs.parameters
    for name, value in (("cph", "3900"), ("Thi", "118"), ("mc", "2.6"), ("cpc", "4100"),
                        ("Tco", "86.2"), ("Tci", "41")):
        edit_cell(qtbot, view, model.names().index(name), model.VALUE, value)
    qtbot.waitUntil(lambda: w.analysis.missing == ("Tho",)
                    and not w.runner.is_busy("preview"), timeout=10_000)
    status = w.strip.status.text()
    assert "no value for 'Tho'" in status and "choose one under Unknown" in status
    choose_unknown_by_keys(qtbot, w, "Tho")
    edit_cell(qtbot, view, model.names().index("mh"), model.VALUE, "3.2")
    settle(qtbot, w)
    qtbot.waitUntil(lambda: w.analysis.ok, timeout=10_000)
    assert "choose one under Unknown" not in w.strip.status.text()
    solution = solve_by_keys(qtbot, w)
    expected = 118 - 2.6 * 4100 * (86.2 - 41) / (3.2 * 3900)  # closed form of the balance
    assert all(r.converged and r.root == pytest.approx(expected, rel=1e-12)
               for r in solution.runs)


def test_the_sheets_function_figure_spans_the_roots_the_methods_reached(qtbot, window,
                                                                        dialogs, tmp_path):
    import re

    pypdf = pytest.importorskip("pypdf")
    w = window
    type_drum(qtbot, w)
    solve_by_keys(qtbot, w)
    target = tmp_path / "drum.pdf"
    dialogs.save_name = str(target)
    w.export_pdf_action.trigger()  # File ▸ Export calculation sheet (PDF)…
    qtbot.waitUntil(lambda: w.report_result is not None and not w.runner.is_busy("report"),
                    timeout=60_000)
    text = " ".join(" ".join(page.extract_text().split())
                    for page in pypdf.PdfReader(str(target)).pages)
    caption = re.search(r"Figure 1\..*?over the bracket (?:and the roots, )?or the "
                        r"iterates' span \[([-0-9.e]+), ([-0-9.e]+)\]", text)
    assert caption, text[:2000]
    lo, hi = float(caption.group(1)), float(caption.group(2))
    vapour = drum_roots_l_per_mol()[2]  # numpy.roots; Newton–Raphson reaches it
    assert lo < vapour < hi


def test_one_pasted_row_is_counted_as_one_row(qtbot, window):
    t = flash_table(qtbot, window)
    QGuiApplication.clipboard().setText("z1\tz2\tz3\tK1\r\n0.3\t0.3\t0.4\t4.2\r\n\r\n")
    t.loaded, t.last_error = False, ""
    QTest.mouseClick(t.paste_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: t.loaded or bool(t.last_error), timeout=20_000)
    assert t.status.text() == "1 row of z1, z2, z3, K1"  # said "1 rows"
    run_table(qtbot, t)
    assert float(t.done.batch.root[0]) == pytest.approx(vapour_fraction(*FEEDS[0]), abs=2e-12)


def test_ctrl_return_solves_in_the_system_window_as_in_the_main_window(qtbot, window):
    from gui_helpers import open_system_window, type_system

    sw = open_system_window(qtbot, window)
    type_system(qtbot, sw, "x^2 + y^2 = 4\nx*y = 1", ["x", "y"])
    edit_cell(qtbot, sw.unknowns_view, 0, 1, "2")
    edit_cell(qtbot, sw.unknowns_view, 1, 1, "0.3")
    sw.editor.setFocus()
    QTest.keyClick(sw.editor, Qt.Key.Key_Return, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: sw.solution is not None
                    and not sw.jobs.is_busy("system-solve"), timeout=20_000)
    assert sw.editor.toPlainText() == "x^2 + y^2 = 4\nx*y = 1"
    # by hand: x^2 = 2 + sqrt(3), y = 1/x for the root with x > y > 0
    x = (2 + 3 ** 0.5) ** 0.5
    for run in sw.solution.runs:
        assert run.converged
        assert run.root["x"] == pytest.approx(x, rel=1e-12)
        assert run.root["y"] == pytest.approx(1 / x, rel=1e-12)


def test_ctrl_return_runs_the_table_in_the_tables_window(qtbot, window):
    t = flash_table(qtbot, window)
    type_into(qtbot, t.b_edit, "1")
    QTest.keyClick(t.b_edit, Qt.Key.Key_Return, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: t.done is not None, timeout=20_000)
    batch = t.done.batch
    for i, feed in enumerate(FEEDS):
        if batch.converged[i]:
            assert float(batch.root[i]) == pytest.approx(vapour_fraction(*feed), abs=2e-12)
    assert int(batch.converged.sum()) == 4  # two feeds are all liquid


def test_the_convergence_plot_names_the_residuals_and_the_steps_units(qtbot, window):
    w = window
    type_drum(qtbot, w)
    solution = solve_by_keys(qtbot, w)
    assert any(abs(r.root - drum_roots_l_per_mol()[2]) < 1e-9 for r in solution.runs)
    w.activateWindow()
    QTest.keyClick(w, Qt.Key.Key_2, Qt.KeyboardModifier.ControlModifier)  # the view
    qtbot.waitUntil(lambda: bool(w.plot.convergence_view.figure.axes))
    ax = w.plot.convergence_view.figure.axes[0]
    assert ax.get_ylabel() == "|f(v_k)| [Pa]"  # the function plot's f(v) [Pa]
    box = w.plot.quantity_box
    box.setFocus()
    arrow_down_to(box, lambda b: b.currentData() == "step")
    qtbot.waitUntil(lambda: w.plot.convergence_view.figure.axes[0].get_ylabel()
                    == "|Δv_k| [L/mol]")


def test_a_rows_lane_shows_several_iterates_without_scrolling(qtbot, window):
    from app.window.table_view import LANE_ROWS

    t = flash_table(qtbot, window)
    type_into(qtbot, t.b_edit, "1")
    run_table(qtbot, t)
    view = t.view
    QTest.mouseClick(view.viewport(), Qt.MouseButton.LeftButton,
                     pos=view.visualRect(t.model.index(0, 0)).center())
    QTest.keyClick(view, Qt.Key.Key_Return)
    qtbot.waitUntil(lambda: t.lane is not None and t.lane_row == 0)
    table = t.lane.table
    qtbot.waitUntil(lambda: table.isVisible() and table.viewport().height() > 0)
    assert t.lane.run.root == pytest.approx(vapour_fraction(*FEEDS[0]), abs=2e-12)  # brentq
    assert len(t.lane.run.steps) > LANE_ROWS
    # the rows in sight: the lane once showed two and a half of them
    shown = table.viewport().height() // table.verticalHeader().defaultSectionSize()
    assert shown >= LANE_ROWS
