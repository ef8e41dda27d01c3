"""Tables of inputs in the window, worked with real mouse and key events: open a table,
run it off the UI thread, read the shaded failed rows, open a row's lane, draw the design
chart, sweep a parameter, cancel a long run, export the results.

Outside references: scipy.optimize.brentq row by row for the friction factors shown,
numpy.roots for the swept cubic. Scenarios are invented (cooling-water pipes).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.optimize
from csv_files import read_results
from gui_helpers import open_tables_window, type_into  # noqa: E402
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest

from app.documents import words

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated

COLEBROOK = "1/sqrt(lam) = -2*log10(rr/3.7 + 2.51/(Re*sqrt(lam)))"


def residual(lam, Re, rr):
    return 1 / math.sqrt(lam) + 2 * math.log10(rr / 3.7 + 2.51 / (Re * math.sqrt(lam)))


def click(qtbot, button) -> None:
    qtbot.mouseClick(button, Qt.MouseButton.LeftButton)


@pytest.fixture
def tables(qtbot, window):
    t = open_tables_window(qtbot, window)  # the menu action's shortcut opens the view
    qtbot.waitExposed(t)
    type_into(qtbot, t.equation_edit, COLEBROOK)
    type_into(qtbot, t.unknown_edit, "lam")
    return t


def open_and_wait(qtbot, t, button=None) -> None:
    t.loaded, t.last_error = False, ""
    click(qtbot, button or t.open_button)
    qtbot.waitUntil(lambda: t.loaded or bool(t.last_error), timeout=60_000)


def run_and_wait(qtbot, t) -> None:
    before = t.done
    click(qtbot, t.run_button)
    qtbot.waitUntil(lambda: t.done is not None and t.done is not before, timeout=20_000)


def test_a_table_runs_in_the_background_and_failed_rows_are_marked(qtbot, window, dialogs,
                                                                     tables, tmp_path):
    path = tmp_path / "pipes.csv"
    path.write_text("Re,rr,x0\n1.2e5,4.5e-4,0.02\n2.4e6,3e-5,0.012\n8000,0.02,-1\n",
                    encoding="utf-8")  # the third row starts at a negative friction factor
    dialogs.open_name = str(path)
    open_and_wait(qtbot, tables)
    assert tables.model.rowCount() == 3 and tables.model.names == ["Re", "rr", "x0"]
    run_and_wait(qtbot, tables)
    batch = tables.done.batch
    assert batch.converged.tolist() == [True, True, False]
    model = tables.model
    root_column = model.names.__len__()
    for row, (Re, rr) in enumerate(((1.2e5, 4.5e-4), (2.4e6, 3e-5))):
        ref = scipy.optimize.brentq(residual, 1e-3, 0.2, args=(Re, rr), xtol=1e-15)  # reference
        shown = model.data(model.index(row, root_column), Qt.ItemDataRole.UserRole)
        assert abs(shown - ref) <= 1e-10 * ref
        assert model.data(model.index(row, 0), Qt.ItemDataRole.BackgroundRole) is None
    failed = model.index(2, root_column)
    assert model.data(failed, Qt.ItemDataRole.BackgroundRole) is not None  # shaded
    assert model.data(failed, Qt.ItemDataRole.DisplayRole) == "—"
    # the reason column reads in words, the code's sentence in the tooltip
    reason = model.index(2, root_column + 1)
    code = str(batch.reason[2])
    assert model.data(reason, Qt.ItemDataRole.DisplayRole) == words.reason_short(code) != code
    assert words.reason_text(code) in model.data(reason, Qt.ItemDataRole.ToolTipRole)
    assert "NaN" in model.data(failed, Qt.ItemDataRole.ToolTipRole) or \
        "infinite" in model.data(failed, Qt.ItemDataRole.ToolTipRole)
    assert "2 converged" in tables.status.text()
    assert tables.chart.figure.axes and tables.chart.figure.axes[0].lines


def test_double_clicking_a_row_shows_its_method_lane_with_every_iterate(qtbot, window,
                                                                         dialogs, tables,
                                                                         tmp_path):
    path = tmp_path / "pipes.csv"
    path.write_text("Re,rr\n1.2e5,4.5e-4\n2.4e6,3e-5\n", encoding="utf-8")
    dialogs.open_name = str(path)
    open_and_wait(qtbot, tables)
    tables.method_box.setCurrentIndex(tables.method_box.findData("brent"))
    type_into(qtbot, tables.a_edit, "0.001")
    type_into(qtbot, tables.b_edit, "0.2")
    run_and_wait(qtbot, tables)
    view = tables.view
    rect = view.visualRect(tables.model.index(1, 0))
    # a double click as the user makes it: press, release, then the second press
    QTest.mouseClick(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    QTest.mouseDClick(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    qtbot.waitUntil(lambda: tables.lane is not None and tables.lane_row == 1)
    run = tables.lane.run
    assert run.method == "brent" and run.converged
    assert run.root == pytest.approx(float(tables.done.batch.root[1]), rel=1e-13)
    assert tables.lane.model.rowCount() == len(run.steps) >= 3
    # the lane's headings name the table's unknown, as a single solve's do
    lane = tables.lane.model
    headings = [lane.headerData(c, Qt.Orientation.Horizontal) for c in range(3)]
    assert headings == ["k", "lam", "f(lam)"]


def test_a_sweep_follows_the_branch_and_the_chart_marks_where_it_ended(qtbot, window, tables):
    type_into(qtbot, tables.equation_edit, "x^3 - x - p")
    type_into(qtbot, tables.unknown_edit, "x")
    type_into(qtbot, tables.sweep_name_edit, "p")
    type_into(qtbot, tables.sweep_from, "-1")
    type_into(qtbot, tables.sweep_to, "1")
    tables.sweep_count.setValue(21)
    click(qtbot, tables.sweep_button)
    type_into(qtbot, tables.x0_edit, "-1.3")
    run_and_wait(qtbot, tables)
    batch = tables.done.batch
    assert batch.converged.all()
    values = np.linspace(-1, 1, 21)
    for k, p in enumerate(values):
        roots = np.roots([1.0, 0.0, -1.0, -p])  # reference: numpy.roots
        real = roots[np.abs(roots.imag) < 1e-9].real
        assert np.min(np.abs(real - batch.root[k])) <= 1e-12
    assert any(code == "branch_jump" for _, code in batch.notes)
    ax = tables.chart.figure.axes[0]
    assert any(line.get_linestyle() == ":" for line in ax.lines)  # the branch's end
    click(qtbot, tables.log_y)  # log axes on request: only positive roots remain
    assert tables.chart.figure.axes[0].get_yscale() == "log"


def test_cancel_stops_a_long_run_and_says_so(qtbot, window, tables, monkeypatch):
    from PySide6.QtGui import QGuiApplication

    rng = np.random.default_rng(5)
    Re = 10 ** rng.uniform(3.7, 8, 400_000)
    rr = 10 ** rng.uniform(-6, -1.4, 400_000)
    rows = ["Re\trr"] + [f"{r!r}\t{e!r}" for r, e in zip(Re.tolist(), rr.tolist(), strict=True)]
    QGuiApplication.clipboard().setText("\n".join(rows))
    open_and_wait(qtbot, tables, tables.paste_button)
    assert tables.model.rowCount() == 400_000
    # 800,000 numbers: over what a worksheet file keeps, so the view keeps them and says so
    assert "kept in this view" in tables.status.text()
    assert tables.inputs_record() is None and window.worksheet().table is None
    tables.method_box.setCurrentIndex(tables.method_box.findData("bisection"))
    type_into(qtbot, tables.a_edit, "0.001")
    type_into(qtbot, tables.b_edit, "0.2")
    click(qtbot, tables.run_button)
    qtbot.waitUntil(lambda: tables.progress.value() > 0, timeout=20_000)
    click(qtbot, tables.cancel_button)
    qtbot.waitUntil(lambda: "cancelled" in tables.status.text(), timeout=20_000)
    assert tables.done is None and tables.run_button.isEnabled()


def test_bad_tables_and_fields_say_what_is_wrong_in_one_line(qtbot, window, dialogs, tables,
                                                              tmp_path):
    path = tmp_path / "bad.csv"
    path.write_text("Re,rr\n1e5,\n", encoding="utf-8")
    dialogs.open_name = str(path)
    open_and_wait(qtbot, tables)
    assert "row 1 (line 2), column 'rr': missing value" in tables.last_error
    path.write_text("Re,Q\n1e5,3\n", encoding="utf-8")
    open_and_wait(qtbot, tables)
    type_into(qtbot, tables.x0_edit, "0.02")
    click(qtbot, tables.run_button)
    qtbot.waitUntil(lambda: bool(tables.last_error), timeout=20_000)
    assert "column 2 'Q' is not a parameter" in tables.last_error or "'rr'" in tables.last_error
    type_into(qtbot, tables.x0_edit, "abc")
    click(qtbot, tables.run_button)
    assert "start value: 'abc' is not a finite number" in tables.last_error
    type_into(qtbot, tables.x0_edit, "2_0")  # float() would read 20; the fields do not
    click(qtbot, tables.run_button)
    assert "start value: '2_0' is not a finite number" in tables.last_error


def test_results_export_as_csv_with_every_input_column(qtbot, window, dialogs, tables,
                                                       tmp_path):
    path = tmp_path / "pipes.csv"
    path.write_text("Re,rr\n1.2e5,4.5e-4\n2.4e6,3e-5\n", encoding="utf-8")
    dialogs.open_name = str(path)
    open_and_wait(qtbot, tables)
    type_into(qtbot, tables.x0_edit, "0.008")
    run_and_wait(qtbot, tables)
    out = tmp_path / "out.csv"
    dialogs.save_name = str(out)
    click(qtbot, tables.export_button)
    lines = out.read_text(encoding="utf-8").splitlines()
    assert any(line.startswith("# caution:") for line in lines)
    rows = read_results(out)[1]
    assert [r["Re"] for r in rows] == ["1.2e5", "2.4e6"]
    assert float(rows[0]["root"]) == float(tables.done.batch.root[0])


def test_the_calculation_sheet_carries_the_table(qtbot, window, dialogs, tables, tmp_path):
    import pypdf

    window.load_sample()  # the cooling-water sample: f from Re, eps, D
    window.activateWindow()
    window.open_tables()  # the worksheet handed again, as Ctrl+T does
    path = tmp_path / "re.csv"
    path.write_text("Re\n5e4\n2e5\n1e6\n", encoding="utf-8")
    dialogs.open_name = str(path)
    open_and_wait(qtbot, tables)
    type_into(qtbot, tables.x0_edit, "0.01")
    run_and_wait(qtbot, tables)
    assert tables.done.batch.converged.all()
    pdf = tmp_path / "sheet.pdf"
    dialogs.save_name = str(pdf)
    click(qtbot, tables.sheet_button)
    qtbot.waitUntil(lambda: tables.sheet_path == str(pdf), timeout=60_000)
    text = " ".join(" ".join(p.extract_text().split()) for p in pypdf.PdfReader(str(pdf)).pages)
    assert "Table of inputs and results" in text
    assert all(repr(float(r)) in text for r in tables.done.batch.root)


def test_a_sweeps_row_is_scanned_and_the_sweep_resumed_from_a_root_there(qtbot, window,
                                                                         tables):
    type_into(qtbot, tables.equation_edit, "x^3 - x - p")
    type_into(qtbot, tables.unknown_edit, "x")
    type_into(qtbot, tables.sweep_name_edit, "p")
    type_into(qtbot, tables.sweep_from, "-1")
    type_into(qtbot, tables.sweep_to, "1")
    tables.sweep_count.setValue(41)
    click(qtbot, tables.sweep_button)
    type_into(qtbot, tables.x0_edit, "-1.3")
    run_and_wait(qtbot, tables)
    view = tables.view
    view.scrollTo(tables.model.index(20, 0))
    rect = view.visualRect(tables.model.index(20, 0))  # p = 0
    QTest.mouseClick(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    QTest.mouseDClick(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    qtbot.waitUntil(lambda: tables.lane_row == 20)
    click(qtbot, tables.scan_button)
    qtbot.waitUntil(lambda: tables.resume_button.isEnabled(), timeout=20_000)
    assert tables.scan_roots.count() == 3  # x^3 - x = 0: -1, 0, 1
    tables.scan_roots.setFocus()
    QTest.keyClick(tables.scan_roots, Qt.Key.Key_Down)  # from -1 to the middle root, 0
    assert abs(tables.scan_roots.currentData()) < 1e-12
    before = tables.done
    click(qtbot, tables.resume_button)
    qtbot.waitUntil(lambda: tables.done is not before, timeout=20_000)
    batch = tables.done.batch
    assert (20, "restart_scan") in batch.notes
    roots = np.roots([1.0, 0.0, -1.0, -0.05])  # reference: numpy.roots at p = 0.05
    middle = np.sort(roots[np.abs(roots.imag) < 1e-9].real)[1]
    assert abs(batch.root[21] - middle) <= 1e-12


def test_the_table_is_saved_with_the_worksheet_and_comes_back(qtbot, window, dialogs, tables,
                                                              tmp_path):
    from app.documents.worksheet import load

    window.load_sample()
    window.activateWindow()
    window.open_tables()
    path = tmp_path / "re.csv"
    path.write_text("Re\n5e4\n2e5\n", encoding="utf-8")
    dialogs.open_name = str(path)
    open_and_wait(qtbot, tables)
    tables.method_box.setCurrentIndex(tables.method_box.findData("brent"))
    type_into(qtbot, tables.a_edit, "0.005")
    type_into(qtbot, tables.b_edit, "0.1")
    assert window.isWindowModified()  # the table is part of the worksheet
    saved = tmp_path / "with-table.json"
    dialogs.save_name = str(saved)
    window.activateWindow()
    window.strip.editor.setFocus()
    qtbot.waitUntil(lambda: window.strip.editor.hasFocus())
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_S,
                   Qt.KeyboardModifier.ControlModifier | Qt.KeyboardModifier.ShiftModifier)
    qtbot.waitUntil(saved.exists)
    table = load(saved).table
    assert table.columns == (("Re", (5e4, 2e5)),) and table.method == "brent"
    assert table.bracket == (0.005, 0.1)
    window.new_document()
    assert tables.model.rowCount() == 0
    assert window.open_path(saved, ask=False)
    assert tables.model.names == ["Re"] and tables.model.rowCount() == 2
    assert tables.method_box.currentData() == "brent" and tables.a_edit.text() == "0.005"
    assert not window.isWindowModified()


def test_a_table_with_units_in_its_headers_runs_and_is_saved_with_them(qtbot, window, dialogs,
                                                                         tables, tmp_path):
    """Headers NAME [unit]: a pipe length in feet and a head loss in feet give the bore in
    the unit asked for. Darcy-Weisbach D = f L v^2 / (2 g h) (common practice; numbers of an
    invented scenario); the international foot is 0.3048 m exactly (NIST SP 811)."""
    from app.documents.worksheet import load

    type_into(qtbot, tables.equation_edit, "h = f*L/D*v^2/(2*g)")
    type_into(qtbot, tables.unknown_edit, "D")
    from solvers.units import Measured

    tables.constants = {"f": 0.02, "v": Measured(2.0, "m/s"), "g": Measured(9.80665, "m/s^2")}
    path = tmp_path / "lines.csv"
    path.write_text("L [ft],h [ft]\n328.0839895013123,9.842519685039369\n1000,5\n",
                    encoding="utf-8")
    dialogs.open_name = str(path)
    open_and_wait(qtbot, tables)
    assert tables.units == ["ft", "ft"] and not tables.last_error
    tables.method_box.setCurrentIndex(tables.method_box.findData("brent"))
    type_into(qtbot, tables.a_edit, "1e-4")
    type_into(qtbot, tables.b_edit, "10")
    run_and_wait(qtbot, tables)
    batch = tables.done.batch
    assert batch.converged.all()
    expected = [0.02 * L * 0.3048 * 4 / (2 * 9.80665 * h * 0.3048)
                for L, h in ((328.0839895013123, 9.842519685039369), (1000, 5))]
    assert batch.root == pytest.approx(expected, rel=1e-10)  # in m: the SI unit of D
    model = tables.model
    titles = [model.headerData(c, Qt.Orientation.Horizontal) for c in range(model.columnCount())]
    assert titles == ["L [ft]", "h [ft]", "D [m]", "reason", "iterations", "f(D) [m]"]
    record = tables.inputs_record()
    assert record.units == ("ft", "ft")
    # the export writes the constants as entered and in SI (a trial found the click did
    # nothing when a constant had a unit)
    out = tmp_path / "lines-out.csv"
    dialogs.save_name = str(out)
    click(qtbot, tables.export_button)
    qtbot.waitUntil(out.exists, timeout=5000)
    text = out.read_text(encoding="utf-8")
    assert "v=2.0 m/s" in text and "g=9.80665 m/s^2" in text and "# caution:" in text
    assert f"results written to {out}" in tables.status.text()
    saved = tmp_path / "units-table.json"
    window.load_sample()
    window.open_tables()
    dialogs.open_name = str(path)
    open_and_wait(qtbot, tables)
    dialogs.save_name = str(saved)
    window.activateWindow()
    window.strip.editor.setFocus()
    qtbot.waitUntil(lambda: window.strip.editor.hasFocus())
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_S,
                   Qt.KeyboardModifier.ControlModifier | Qt.KeyboardModifier.ShiftModifier)
    qtbot.waitUntil(saved.exists)
    assert load(saved).table.units == ("ft", "ft")


def test_a_header_with_an_unknown_unit_is_named_when_the_table_is_opened(qtbot, window,
                                                                          dialogs, tables,
                                                                          tmp_path):
    path = tmp_path / "bad-unit.csv"
    path.write_text("Re,rr [furlongz]\n1e5,1\n", encoding="utf-8")
    dialogs.open_name = str(path)
    open_and_wait(qtbot, tables)
    assert "column 2 'rr [furlongz]'" in tables.last_error
    assert "furlong" in tables.last_error  # a close name is suggested


def test_the_worksheets_start_values_fill_the_blank_fields(qtbot, window, dialogs, tmp_path):
    """The invented US customary bore sample has x0 = 100 mm and the bracket [20, 500] mm:
    the tables window opens with them (a trial found its fields blank and Run refused);
    with x0 cleared, Run names the method by its title and what it needs."""
    assert window.load_sample("cooling-line-bore-us-customary.json")
    modified = window.isWindowModified()
    t = open_tables_window(qtbot, window)
    assert (t.x0_edit.text(), t.a_edit.text(), t.b_edit.text()) == ("100.0", "20.0", "500.0")
    assert window.isWindowModified() == modified  # filling blank fields is no edit
    path = tmp_path / "lines.csv"
    path.write_text("L [ft],hf [ft]\n800,15\n1200,15\n", encoding="utf-8")
    dialogs.open_name = str(path)
    open_and_wait(qtbot, t)
    type_into(qtbot, t.x0_edit, "")
    click(qtbot, t.run_button)
    assert t.last_error == "Newton–Raphson needs a start value x0"
    type_into(qtbot, t.x0_edit, "100")
    run_and_wait(qtbot, t)
    batch = t.done.batch
    assert batch.converged.all()
    # the sample's own Darcy-Weisbach bore at L = 800 ft (the main window's solve, the same
    # core) and, at 1200 ft, D ~ L^(1/5) (common practice: hf ~ L / D^5 at fixed flow)
    solution = window.solve_worksheet()
    from solvers import pipeline

    d800 = pipeline.solve(solution).runs[0].root
    assert batch.root[0] == pytest.approx(d800, rel=1e-10)
    assert batch.root[1] == pytest.approx(d800 * 1.5 ** 0.2, rel=1e-10)


def test_a_sweep_takes_the_parameters_unit_and_a_new_table_clears_the_old_results(
        qtbot, window, dialogs):
    """Sweeping the flow Q of the invented US customary bore sample: the values typed are
    in gal/min as the worksheet gives Q (or in the unit typed, Q [L/s]); each bore equals the
    core's single solve at that flow. Making a new sweep clears the previous chart and row
    lane (a trial saw them stay, labelled for the old table)."""
    from gui_helpers import SAMPLES

    from app.documents.worksheet import load
    from solvers import brent, parse_equation

    assert window.load_sample("cooling-line-bore-us-customary.json")
    t = open_tables_window(qtbot, window)
    type_into(qtbot, t.sweep_name_edit, "Q")
    type_into(qtbot, t.sweep_from, "100")
    type_into(qtbot, t.sweep_to, "900")
    t.sweep_count.setValue(9)
    click(qtbot, t.sweep_button)
    assert t.headers == ["Q [gal/min]"] and t.units == ["gal/min"]
    run_and_wait(qtbot, t)
    batch = t.done.batch
    assert batch.converged.all()
    ws = load(SAMPLES / "cooling-line-bore-us-customary.json")
    values = ws.parameter_values()
    for row, q in ((0, 100.0), (8, 900.0)):
        eq = parse_equation(ws.equation, unknown="D", unknown_unit="mm",
                            parameters={**values, "Q": f"{q} gal/min"})
        single = brent(eq.f, 20.0, 500.0)  # the core's own scalar solve, in mm
        assert batch.root[row] == pytest.approx(single.root, rel=1e-10)
    rect = t.view.visualRect(t.model.index(3, 0))
    QTest.mouseClick(t.view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    QTest.mouseDClick(t.view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    qtbot.waitUntil(lambda: t.lane is not None and t.lane_row == 3)
    ax = t.chart.figure.axes[0]
    assert ax.lines and ax.get_xlabel() == "Q [gal/min]" and ax.get_ylabel() == "D [mm]"
    type_into(qtbot, t.sweep_name_edit, "Q [L/s]")
    type_into(qtbot, t.sweep_from, "5")
    type_into(qtbot, t.sweep_to, "50")
    click(qtbot, t.sweep_button)
    assert t.headers == ["Q [L/s]"] and t.lane is None and t.lane_row == -1
    assert not any(ax.lines for ax in t.chart.figure.axes)
    type_into(qtbot, t.sweep_name_edit, "Q [fathum/s]")  # a misspelt unit
    click(qtbot, t.sweep_button)
    assert t.last_error.startswith("sweep:")
