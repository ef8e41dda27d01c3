"""Defects seen in the window, each pinned with real mouse and key events on the real widgets.

1. A polish wrote its bracket (a few millionths wide around one root) into the typed
   bracket fields; the tables window took it as every row's bracket and a Brent run
   failed on every row. A polish now leaves the typed inputs alone, and a shared bracket
   that misses most rows' roots is said plainly, with what to do.
2. The design chart's legend could cover the crosses of failed rows: it is above the axes.
3. Pasting from an empty clipboard said "empty file".
4. At 1280x800 the inputs column had to be scrolled to reach the start values.
5. Worksheet refusals named a list entry by its index (``parameters[1].value``); they name
   it by its own name (``parameter "D", value``), from the CLI and in the window.
6. With the unknown in a unit, the derivative was typeset with that unit's scale factors
   (10^15 for a bore in mm); it is typeset as the equation was typed.

Outside references: scipy.optimize.brentq for the friction factors (Colebrook–White, the
cooling-water sample's invented line).
"""

from __future__ import annotations

import math

import pytest
import scipy.optimize
from PySide6.QtCore import Qt
from PySide6.QtGui import QGuiApplication
from PySide6.QtTest import QTest

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import open_tables_window, run_table, settle, type_into  # noqa: E402

from app.cli import main  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated
pytestmark = pytest.mark.filterwarnings("ignore:Enum value .*AA_UseHighDpiPixmaps")

COLEBROOK = "1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))"


def colebrook(f: float, Re: float, eps: float = 4.5e-5, D: float = 0.15) -> float:
    return 1 / math.sqrt(f) + 2 * math.log10(eps / (3.7 * D) + 2.51 / (Re * math.sqrt(f)))


def double_click_row(qtbot, view, row: int) -> None:
    rect = view.visualRect(view.model().index(row, 0))
    QTest.mouseClick(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    QTest.mouseDClick(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    QTest.mouseRelease(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())


def paste_rows(qtbot, t, text: str) -> None:
    QGuiApplication.clipboard().setText(text)
    t.loaded, t.last_error = False, ""
    qtbot.mouseClick(t.paste_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: t.loaded or bool(t.last_error), timeout=20_000)


def test_polish_keeps_the_typed_start_values_and_a_table_run_uses_them(qtbot, window):
    assert window.load_sample("cooling-water-friction.json")
    settle(qtbot, window)
    typed = {k: window.inputs.fields[k].value() for k in ("x0", "x1", "a", "b")}
    assert typed == {"x0": 0.02, "x1": 0.03, "a": 0.005, "b": 0.1}  # the sample's
    before = window.scan_result
    qtbot.mouseClick(window.inputs.scan_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: window.scan_result is not before
                    and not window.runner.is_busy("scan"), timeout=30_000)
    root = window.scan_result.roots[0].x
    assert root == pytest.approx(scipy.optimize.brentq(colebrook, 0.005, 0.1, args=(1.2e5,),
                                                       xtol=1e-15), rel=1e-12)  # brentq
    solved = window.solution
    double_click_row(qtbot, window.roots_view, 0)  # polish the root
    qtbot.waitUntil(lambda: window.solution is not solved and window.solution is not None
                    and not window.runner.is_busy("solve"), timeout=20_000)
    polished = window.solution
    for run in polished.runs:
        assert run.converged and run.root == pytest.approx(root, rel=1e-10)
    # The polish ran from its own narrow bracket, and the typed inputs are untouched.
    a, b = polished.worksheet.settings.bracket
    assert a <= root <= b and b - a < 1e-4
    assert {k: window.inputs.fields[k].value() for k in typed} == typed
    # It is current for these inputs (not greyed as stale) and says what it started from.
    assert not window.document.stale.solution
    note = window.lanes.agreement.text()
    assert "Polish of the root" in note and "you typed are kept" in note
    # The worksheet (what Save writes) keeps the typed bracket.
    assert window.worksheet().settings.bracket == (0.005, 0.1)

    tables = open_tables_window(qtbot, window)
    qtbot.waitExposed(tables)
    assert (tables.a_edit.text(), tables.b_edit.text()) != ("", "")
    assert float(tables.a_edit.text()) == 0.005 and float(tables.b_edit.text()) == 0.1
    reynolds = [5e3, 4e4, 1.2e5, 8e5, 5e6]
    paste_rows(qtbot, tables, "Re\n" + "\n".join(repr(r) for r in reynolds))
    assert not tables.last_error
    tables.method_box.setCurrentIndex(tables.method_box.findData("brent"))
    run_table(qtbot, tables)
    batch = tables.done.batch
    assert batch.converged.all()
    for k, Re in enumerate(reynolds):
        ref = scipy.optimize.brentq(colebrook, 0.005, 0.1, args=(Re,), xtol=1e-15)  # brentq
        assert batch.root[k] == pytest.approx(ref, rel=1e-10)
    assert "bracket" not in tables.status.text()  # no advice where nothing failed

    # A bracket as narrow as a polish's, typed for every row: most rows miss, and the
    # window says why and what to do rather than only counting the failures.
    type_into(qtbot, tables.a_edit, repr(a))
    type_into(qtbot, tables.b_edit, repr(b))
    run_table(qtbot, tables)
    batch = tables.done.batch
    assert batch.converged.tolist() == [False, False, True, False, False]
    status = tables.status.text()
    assert "4 of 5 rows" in status and "does not enclose" in status
    assert "bracket_a" in status and "Widen" in status
    # The remedy it names works: each row its own bracket, the shared one cleared.
    rows = ["Re\tbracket_a\tbracket_b"] + [f"{Re!r}\t0.005\t0.1" for Re in reynolds]
    paste_rows(qtbot, tables, "\n".join(rows))
    type_into(qtbot, tables.a_edit, "")
    type_into(qtbot, tables.b_edit, "")
    run_table(qtbot, tables)
    assert not tables.last_error and tables.done.batch.converged.all()
    assert "does not enclose" not in tables.status.text()


def test_the_cli_gives_the_same_advice_for_a_shared_bracket_that_misses(tmp_path, capsys):
    table = tmp_path / "flows.csv"
    table.write_text("Re\n5000\n40000\n120000\n", encoding="utf-8")
    root = scipy.optimize.brentq(colebrook, 0.005, 0.1, args=(1.2e5,), xtol=1e-15)  # brentq
    code = main(["batch", COLEBROOK, "--unknown", "f", "--table", str(table),
                 "--param", "eps=4.5e-5", "--param", "D=0.15", "--method", "brent",
                 "--bracket", repr(root * (1 - 1e-4)), repr(root * (1 + 1e-4))])
    out = capsys.readouterr().out
    assert code == 0
    assert "1 converged" in out and "2 stopped on no sign change" in out
    assert "advice:" in out and "2 of 3 rows" in out and "bracket_b" in out
    # A bracket that encloses every row's root gives no advice.
    code = main(["batch", COLEBROOK, "--unknown", "f", "--table", str(table),
                 "--param", "eps=4.5e-5", "--param", "D=0.15", "--method", "brent",
                 "--bracket", "0.005", "0.1"])
    out = capsys.readouterr().out
    assert code == 0 and "3 converged" in out and "advice:" not in out


def test_pasting_an_empty_clipboard_says_the_clipboard_holds_no_table(qtbot, window):
    """3. It said "empty file", for a paste."""
    tables = open_tables_window(qtbot, window)
    qtbot.waitExposed(tables)
    QGuiApplication.clipboard().clear()
    paste_rows_as_is(qtbot, tables)
    shown = tables.status.text()
    assert "the clipboard holds no table" in shown and "empty" in shown
    assert "file" not in shown and tables.model.rowCount() == 0
    assert "header row" in shown  # what to copy instead
    # Text that is no table either (comment lines only) is named as such.
    QGuiApplication.clipboard().setText("# Re\n\n# 120000\n")
    paste_rows_as_is(qtbot, tables)
    assert "the clipboard holds no table (only comment lines" in tables.status.text()
    # A real table pasted afterwards is read.
    paste_rows(qtbot, tables, "Re\teps\n120000\t4.5e-5\n")
    assert not tables.last_error and tables.model.rowCount() == 1


def paste_rows_as_is(qtbot, t) -> None:
    t.loaded, t.last_error = False, ""
    qtbot.mouseClick(t.paste_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: t.loaded or bool(t.last_error), timeout=20_000)


def _legend_clear_of_data(figure) -> None:
    """The design chart's legend lies wholly inside the figure and wholly outside the
    axes, so no converged point and no failure cross can be under it."""
    figure.canvas.draw()
    ax = figure.axes[0]
    legend = ax.get_legend()
    assert legend is not None
    renderer = figure.canvas.get_renderer()
    box, axes_box, fig_box = (legend.get_window_extent(renderer), ax.get_window_extent(renderer),
                              figure.bbox)
    assert box.y0 >= axes_box.y1 - 0.5  # above the axes: over no data
    assert fig_box.x0 <= box.x0 and box.x1 <= fig_box.x1 and box.y1 <= fig_box.y1 + 0.5
    # the failure crosses themselves are drawn inside the axes, and not under the legend
    crosses = [line for line in ax.get_lines() if line.get_marker() == "x"]
    assert crosses
    for line in crosses:
        points = line.get_transform().transform(line.get_xydata())
        for px, py in points:
            assert axes_box.x0 <= px <= axes_box.x1 and axes_box.y0 <= py <= axes_box.y1
            assert not (box.x0 <= px <= box.x1 and box.y0 <= py <= box.y1)
    assert min(t.get_fontsize() for t in legend.get_texts()) >= 7  # readable


def test_the_design_chart_legend_never_hides_failed_rows(qtbot, window):
    """2. The legend sat inside the axes ("best"), over the crosses of failed rows when
    every corner held data."""
    tables = open_tables_window(qtbot, window)
    qtbot.waitExposed(tables)
    tables.resize(1280, 800)
    type_into(qtbot, tables.equation_edit, "x^2 - p")
    type_into(qtbot, tables.unknown_edit, "x")
    # rows with no real root (p < 0) among rows that have one, in every part of the chart
    values = [9, -1, 4, -2, 1, 16, -3, 25, 0.25, -4, 36, 2, -5, 30, 20]
    paste_rows(qtbot, tables, "p\n" + "\n".join(str(v) for v in values))
    tables.method_box.setCurrentIndex(tables.method_box.findData("newton"))
    type_into(qtbot, tables.x0_edit, "3")
    run_table(qtbot, tables)
    batch = tables.done.batch
    # x = sqrt(p) where p >= 0 (closed form); no row with p < 0 converges
    for k, p in enumerate(values):
        if p >= 0:
            assert batch.converged[k] and batch.root[k] == pytest.approx(math.sqrt(p), rel=1e-12)
        else:
            assert not batch.converged[k]
    _legend_clear_of_data(tables.chart.figure)
    qtbot.mouseClick(tables.log_y, Qt.MouseButton.LeftButton)  # redrawn: still clear
    qtbot.waitUntil(lambda: tables.chart.figure.axes[0].get_yscale() == "log")
    _legend_clear_of_data(tables.chart.figure)


def _start_values_in_sight(window) -> None:
    """Every start-value field (x0, x1, the bracket, the scan range) wholly inside the
    inputs column's visible part, its scroll bar at the top."""
    from PySide6.QtCore import QPoint
    from PySide6.QtWidgets import QScrollArea

    scroll = window.inputs.findChild(QScrollArea)
    assert scroll.verticalScrollBar().value() == 0
    viewport = scroll.viewport()
    for key in ("x0", "x1", "a", "b", "from", "to"):
        field = window.inputs.fields[key]
        top = field.mapTo(viewport, QPoint(0, 0)).y()
        assert 0 <= top and top + field.height() <= viewport.height(), key
        assert field.height() >= field.sizeHint().height()  # not squeezed to fit


@pytest.mark.parametrize("sample", ["sign-arm-natural-frequencies.json",  # 5 parameters
                                    "project-irr.json",  # 8: the table scrolls past 5 rows
                                    "cooling-water-friction.json"])
def test_the_start_values_show_without_scrolling_at_1280_by_800(qtbot, window, sample):
    """4. At 1280x800 the inputs column had to be scrolled to reach the start values."""
    assert (window.width(), window.height()) == (1280, 800)
    assert window.load_sample(sample)
    settle(qtbot, window)
    qtbot.wait(50)  # the layout after the panels refill
    _start_values_in_sight(window)
    # The lanes below keep room for their summary and a few iterates (not crammed).
    assert window.lanes.height() >= 220
    # A problem typed into a field is listed under Solve (the list appears), and the
    # start values it names are still in sight; corrected, the list goes away again.
    x0 = window.inputs.fields["x0"]
    qtbot.mouseDClick(x0, Qt.MouseButton.LeftButton)
    QTest.keyClick(x0, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    qtbot.keyClicks(x0, "abc")
    qtbot.waitUntil(lambda: window.inputs.problem_area.isVisible())
    assert window.inputs.problem_label.text().startswith("x0:")
    QTest.keyClick(x0, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    qtbot.keyClicks(x0, "50")
    qtbot.waitUntil(lambda: not window.inputs.problem_area.isVisible())
    qtbot.wait(50)
    _start_values_in_sight(window)


# ------------------------------------------------------------------ 5. worksheet refusals


def _broken_copy(tmp_path, change, name="broken.json"):
    import json
    from pathlib import Path

    data = json.loads((Path(__file__).parents[1] / "samples" / "cooling-water-friction.json")
                      .read_text("utf-8"))
    change(data)
    path = tmp_path / name
    path.write_text(json.dumps(data), "utf-8")
    return path


# (what is broken, the words that must name it; the sample's parameters are Re, eps, D)
REFUSED = [
    (lambda d: d["parameters"][2].__setitem__("value", "0.15 m"),
     'parameter "D", value: must be a number, got str'),
    (lambda d: d["parameters"][1].pop("value"), 'parameter "eps", value: missing'),
    (lambda d: d["parameters"][0].__setitem__("unit", "furlongz"),
     "parameter \"Re\", unit: unknown unit 'furlongz'"),
    (lambda d: d["parameters"][2].__setitem__("name", "2D"),
     "parameter 3, name: '2D' is not a valid name"),
    (lambda d: d.__setitem__("table", {"columns": [{"name": "Re", "values": [1e5, 2e5, "x"]}]}),
     'table column "Re", row 3: must be a number, got str'),
    (lambda d: d["settings"].__setitem__("bracket", [0.005, None]),
     "settings.bracket, second end: must be a number, got NoneType"),
]


@pytest.mark.parametrize(("change", "named"), REFUSED, ids=[n.split(":")[0] for _, n in REFUSED])
def test_the_cli_names_a_bad_worksheet_field_by_the_parameter(tmp_path, capsys, change, named):
    path = _broken_copy(tmp_path, change)
    code = main(["solve", "--worksheet", str(path)])
    err = capsys.readouterr().err
    assert code == 2 and named in err and len(err.strip().splitlines()) == 1
    assert "parameters[" not in err and "columns[" not in err  # no index to count


def test_the_window_names_a_bad_worksheet_field_by_the_parameter(qtbot, window, dialogs,
                                                                 tmp_path):
    """5. Opening a worksheet said 'parameters[2].value'; it names the parameter."""
    before = window.strip.text()
    path = _broken_copy(tmp_path, REFUSED[0][0])
    dialogs.open_name = str(path)
    window.activateWindow()
    qtbot.waitUntil(window.isActiveWindow, timeout=5000)
    QTest.keyClick(window, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)  # File > Open
    qtbot.waitUntil(lambda: bool(dialogs.titles("warning")), timeout=5000)
    assert window.last_error == f"broken.json: {REFUSED[0][1]}"
    assert REFUSED[0][1] in dialogs.titles("warning")[-1]
    assert window.strip.text() == before  # the worksheet on screen is kept


# ------------------------------------------------------------------ 6. derivative shown


def test_the_derivative_is_shown_in_the_quantities_typed_whatever_the_unknowns_unit(
        qtbot, window):
    """6. With the bore asked in mm the strip typeset f' with 10^15 (the mm's scale to the
    sixth power, by the chain rule); it shows df/dD of the equation as typed."""
    from gui_helpers import solve_by_keys

    assert window.load_sample("cooling-line-bore-us-customary.json")  # D in mm
    settle(qtbot, window)
    qtbot.waitUntil(lambda: window.analysis.derivative_png is not None, timeout=10_000)
    shown = window.analysis.derivative_latex
    mantissa = f"{40 / math.pi ** 2:.6g}"  # d/dD of 8 fD L Q^2/(pi^2 g D^5): -5 * 8/pi^2
    assert shown == rf"\frac{{{mantissa} \cdot L \cdot Q^{{2}} \cdot \mathrm{{fD}}}}" \
                    r"{D^{6} \cdot g}"
    assert "10^{" not in shown
    # The same formula when the bore is asked in inches (typed into the unit box).
    box = window.strip.unit_box
    qtbot.mouseDClick(box, Qt.MouseButton.LeftButton)
    QTest.keyClick(box, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    qtbot.keyClicks(box, "in")
    QTest.keyClick(box, Qt.Key.Key_Return)
    qtbot.waitUntil(lambda: window.analysis.equation is not None
                    and window.analysis.equation.unknown_unit == "in", timeout=10_000)
    assert window.analysis.derivative_latex == shown
    # Newton still takes f' of D in inches (the scale is in what it evaluates) and lands
    # on the closed form D = (8 fD L Q^2 / (pi^2 g hf))^(1/5), in SI from NIST SP 811's
    # factors (ft = 0.3048 m, US gal = 3.785411784e-3 m^3).
    ft, gal = 0.3048, 3.785411784e-3
    hf, L, Q, g = 15 * ft, 800 * ft, 450 * gal / 60, 32.174 * ft
    bore_in = (8 * 0.018 * L * Q**2 / (math.pi**2 * g * hf)) ** 0.2 / 0.0254
    x0 = window.inputs.fields["x0"]  # a start in inches (the sample's is in mm)
    qtbot.mouseDClick(x0, Qt.MouseButton.LeftButton)
    QTest.keyClick(x0, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    qtbot.keyClicks(x0, "5")
    settle(qtbot, window)
    solution = solve_by_keys(qtbot, window)
    newton = next(r for r in solution.runs if r.method == "newton")
    assert newton.converged and newton.derivative == "symbolic"
    assert newton.root == pytest.approx(bore_in, rel=1e-9)


def test_the_sheet_typesets_the_same_derivative_and_says_what_newton_evaluated(tmp_path,
                                                                               capsys):
    """6, on the sheet: the typeset f' is the strip's; the numbers are Newton's, per mm."""
    import pypdf

    samples = __import__("pathlib").Path(__file__).parents[1] / "samples"
    for sample, said in (("cooling-line-bore-us-customary.json", True),  # D in mm
                         ("cooling-water-friction.json", False)):  # no units
        pdf = tmp_path / f"{sample}.pdf"
        assert main(["report", str(samples / sample), "--pdf", str(pdf)]) == 0
        capsys.readouterr()
        text = " ".join(pypdf.PdfReader(str(pdf)).pages[0].extract_text().split())
        assert "Derivative used by Newton" in text
        assert ("with the parameter values, and D as its number in mm (as Newton takes it):"
                in text) is said


def _legend_above_axes(figure) -> None:
    """A legend in the rows above the axes, inside the figure: over no curve or point."""
    figure.canvas.draw()
    ax = figure.axes[0]
    legend = ax.get_legend()
    assert legend is not None
    renderer = figure.canvas.get_renderer()
    box, axes_box = legend.get_window_extent(renderer), ax.get_window_extent(renderer)
    assert box.y0 >= axes_box.y1 - 0.5
    assert figure.bbox.x0 <= box.x0 and box.x1 <= figure.bbox.x1
    assert box.y1 <= figure.bbox.y1 + 0.5


def test_the_function_and_convergence_plots_keep_their_legends_off_the_curves(qtbot,
                                                                              window):
    # the rod sample (invented): five eigenvalues of x J1(x)/J0(x) = Bi with J0's zeros as
    # poles (scipy.special.jn_zeros), the curve through every part of the axes; a legend
    # inside them ("best") covered part of it
    import scipy.special

    assert window.load_sample("rod-quench-eigenvalues.json")
    settle(qtbot, window)
    qtbot.mouseClick(window.inputs.scan_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: window.scan_result is not None, timeout=30_000)
    qtbot.mouseClick(window.inputs.solve_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: window.solution is not None, timeout=30_000)
    assert sorted(window.scan_result.poles) == pytest.approx(
        scipy.special.jn_zeros(0, 5), rel=1e-9)
    _legend_above_axes(window.plot.function_view.figure)
    window.plot.setCurrentIndex(1)
    qtbot.waitUntil(lambda: bool(window.plot.convergence_view.figure.axes), timeout=10_000)
    _legend_above_axes(window.plot.convergence_view.figure)


def test_a_failed_lanes_whole_verdict_is_in_its_tooltip(qtbot, window):
    # the wall sample (invented): plain false position on [0.01, 1.5] of x tan x = Bi keeps
    # the end 1.5 (the curve is convex there: common practice) and meets its cap; the
    # record that says so is longer than the lane's two lines, and its hover holds it whole
    assert window.load_sample("wall-conduction-eigenvalues.json")
    settle(qtbot, window)
    qtbot.mouseClick(window.inputs.solve_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: window.solution is not None, timeout=30_000)
    run = next(r for r in window.solution.runs if r.method == "false_position")
    assert not run.converged and run.detail.code == "end_held"
    tip = window.lanes.lanes["false_position"].verdict.toolTip()
    assert "FAILED" in tip and "stood still for the last 100 iterations" in tip
