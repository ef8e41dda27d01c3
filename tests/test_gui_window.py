"""The window driven as a user drives it: type, read the preview, solve, read the tables.

Numbers on screen must be the core's numbers (model data equals the Run), and the
roots themselves are checked against outside references named beside each check.
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest
from PySide6.QtCore import Qt

from app.documents.words import REASON_TEXT, reason_short
from app.window.models import RunModel, format_number
from solvers import pipeline

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import idle, settle, solve_and_wait, type_equation  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated
# matplotlib's Qt toolbar asks Qt about a deprecated attribute on every canvas: not ours.
pytestmark = pytest.mark.filterwarnings("ignore:Enum value .*AA_UseHighDpiPixmaps")


def test_window_constructs_without_arguments_and_fits_1280_by_800(qtbot, isolated):
    from app.window import MainWindow, main

    w = MainWindow()
    qtbot.addWidget(w)
    hint = w.minimumSizeHint()
    assert hint.width() <= 1280 and hint.height() <= 800, hint
    assert callable(main)
    # The safety caution is always on screen (common practice for engineering software).
    assert "qualified engineer" in w.caution.text()
    w.runner.stop()


def test_typing_shows_typeset_preview_and_the_unknown(qtbot, window):
    type_equation(qtbot, window, "x^3 - 2*x - 5 = 0")
    analysis = window.analysis
    assert analysis.ok and analysis.unknown == "x"
    assert "solving for x" in window.strip.status.text()
    assert not window.strip.equation_view.label.pixmap().isNull()
    assert not window.strip.derivative_view.label.pixmap().isNull()
    assert window.strip.highlighted_position() is None


def test_a_typo_is_marked_at_its_column_and_fixing_it_clears_the_mark(qtbot, window):
    type_equation(qtbot, window, "x^3 - 2*x + * 5 = 0")
    analysis = window.analysis
    assert analysis.error, "a stray operator must be reported"
    assert analysis.position is not None
    assert window.strip.highlighted_position() == analysis.position
    assert f"column {analysis.position + 1}" in window.strip.status.text()
    # Fix the typo the way a user does: move to the bad character and delete it.
    type_equation(qtbot, window, "x^3 - 2*x + 5 = 0")
    assert window.analysis.ok
    assert window.strip.highlighted_position() is None


def test_parameters_follow_the_equation_and_keep_their_values(qtbot, window):
    type_equation(qtbot, window, "a*x^2 + b*x + c")
    model = window.inputs.parameters
    assert model.names() == ["a", "b", "c"]
    # Missing values are flagged in the cell and listed as problems.
    bad = model.index(0, 1)
    assert model.data(bad, Qt.ItemDataRole.BackgroundRole) is not None
    assert "a: needs a value" in model.data(bad, Qt.ItemDataRole.ToolTipRole)
    assert window.analysis.ambiguous  # four names, none with a value
    for row, text in enumerate(("1", "-3", "2")):
        model.setData(model.index(row, 1), text)
    qtbot.waitUntil(lambda: window.analysis.ok, timeout=10_000)
    assert window.analysis.unknown == "x"
    model.setData(model.index(1, 1), "minus three")
    assert "not a finite number" in model.data(model.index(1, 1), Qt.ItemDataRole.ToolTipRole)
    model.setData(model.index(1, 1), "-3")
    type_equation(qtbot, window, "a*x^2 + b*x + c + d")
    assert model.names() == ["a", "b", "c", "d"]
    assert [r.text for r in model.rows()[:3]] == ["1", "-3", "2"]


def test_choosing_the_unknown_moves_the_other_name_into_the_table(qtbot, window):
    type_equation(qtbot, window, "p*V - n*R*T")
    box = window.strip.unknown_box
    box.setCurrentIndex(box.findData("V"))
    box.activated.emit(box.currentIndex())
    qtbot.waitUntil(lambda: window.analysis is not None and window.analysis.unknown == "V",
                    timeout=10_000)
    assert "V" not in window.inputs.parameters.names()
    assert set(window.inputs.parameters.names()) == {"p", "n", "R", "T"}


def _colebrook_reference(ws) -> float:
    """Colebrook–White friction factor by scipy.optimize.brentq on our own transcription
    (Colebrook 1939; form as in Moody's chart references), independent of zerotrace."""
    from scipy.optimize import brentq

    p = ws.parameter_values()

    def g(f: float) -> float:
        return 1 / math.sqrt(f) + 2 * math.log10(p["eps"] / (3.7 * p["D"])
                                                 + 2.51 / (p["Re"] * math.sqrt(f)))

    return brentq(g, 1e-3, 0.2, xtol=1e-15)


def test_ctrl_return_solves_and_the_tables_show_every_iterate(qtbot, window):
    assert window.load_sample("cooling-water-friction.json")
    settle(qtbot, window)
    window.strip.editor.setFocus()
    window.activateWindow()
    before = window.solution
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_Return, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: window.solution is not before and window.solution is not None,
                    timeout=20_000)
    solution = window.solution
    assert "\n" not in window.strip.text(), "Ctrl+Return must solve, not insert a line"
    reference = _colebrook_reference(window.worksheet())
    assert [r.method for r in solution.runs] == ["newton", "secant", "false_position"]
    for run in solution.runs:
        lane = window.lanes.lanes[run.method]
        model: RunModel = lane.model
        assert model.rowCount() == len(run.steps)
        for row, step in enumerate(run.steps):
            assert model.data(model.index(row, 0), Qt.ItemDataRole.UserRole) == step.k
            assert model.data(model.index(row, 1), Qt.ItemDataRole.UserRole) == step.x
            assert model.data(model.index(row, 2), Qt.ItemDataRole.UserRole) == step.fx
        digits = window.lanes.digits.value()
        assert format_number(run.root, digits) in lane.summary.text()
        assert reason_short(run.reason) in lane.summary.text()  # words, not the code
        assert run.converged and "converged" in lane.verdict.text()
        assert run.root == pytest.approx(reference, rel=1e-12)
    # Same numbers as the core computes for the same worksheet (no numerics in the window).
    direct = pipeline.solve(solution.worksheet)
    assert [r.root for r in direct.runs] == [r.root for r in solution.runs]
    assert f"agree to {solution.agreement_digits}" in window.lanes.agreement.text()


def test_a_failed_method_is_marked_with_its_reason(qtbot, window):
    # Newton on atan(x) from |x0| > 1.39 overshoots further each step and diverges
    # (a standard counterexample; common practice). The bracket [-1, 2] is fine.
    type_equation(qtbot, window, "atan(x)")
    window.inputs.set_field("x0", 3.0)
    window.inputs.set_field("x1", 3.5)
    window.inputs.set_field("a", -1.0)
    window.inputs.set_field("b", 2.0)
    solution = solve_and_wait(qtbot, window)
    newton = next(r for r in solution.runs if r.method == "newton")
    assert not newton.converged
    verdict = window.lanes.lanes["newton"].verdict.text()
    assert "FAILED" in verdict and REASON_TEXT[newton.reason] in verdict
    fp = next(r for r in solution.runs if r.method == "false_position")
    assert fp.converged and abs(fp.root) < 1e-9  # atan has its only zero at 0
    assert "Failed: Newton" in window.lanes.agreement.text()


def test_significant_figures_are_user_settable(qtbot, window):
    type_equation(qtbot, window, "x^2 - 2")
    window.inputs.set_field("x0", 1.0)
    solve_and_wait(qtbot, window)
    model = window.lanes.lanes["newton"].model
    last = model.index(model.rowCount() - 1, 1)
    window.lanes.digits.setValue(4)
    assert model.data(last, Qt.ItemDataRole.DisplayRole) == "1.414"  # sqrt(2) = 1.41421356...
    window.lanes.digits.setValue(12)
    assert model.data(last, Qt.ItemDataRole.DisplayRole) == "1.41421356237"


def test_copy_a_table_as_tab_separated_text(qtbot, window):
    from PySide6.QtGui import QGuiApplication

    type_equation(qtbot, window, "x^2 - 2")
    window.inputs.set_field("x0", 1.0)
    solution = solve_and_wait(qtbot, window)
    lane = window.lanes.lanes["newton"]
    text = lane.table.copy_all()
    assert QGuiApplication.clipboard().text() == text
    lines = text.strip("\n").split("\n")
    header = lines[0].split("\t")
    assert header[:3] == ["k", "x", "f(x)"]
    run = solution.runs[0]
    for line, step in zip(lines[1:], run.steps, strict=True):
        cells = line.split("\t")
        assert int(cells[0]) == step.k and float(cells[1]) == step.x
    # Ctrl+C on a selection copies just that block.
    lane.table.setFocus()
    lane.table.selectionModel().select(
        lane.model.index(1, 1), lane.table.selectionModel().SelectionFlag.Select)
    qtbot.keyClick(lane.table, Qt.Key.Key_C, Qt.KeyboardModifier.ControlModifier)
    assert QGuiApplication.clipboard().text() == f"x\n{run.steps[1].x!r}\n"


def test_convergence_view_plots_every_method(qtbot, window):
    type_equation(qtbot, window, "x^3 - 2*x - 5")
    window.inputs.set_field("a", 2.0)
    window.inputs.set_field("b", 3.0)
    solution = solve_and_wait(qtbot, window)
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_2, Qt.KeyboardModifier.ControlModifier)
    assert window.plot.currentWidget() is window.plot.convergence_view
    ax = window.plot.convergence_view.figure.axes[0]
    assert ax.get_yscale() == "log"
    labels = [line.get_label() for line in ax.get_lines()]
    assert len(labels) == len(solution.runs)
    # The function view (Ctrl+1) shows the curve itself.
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_1, Qt.KeyboardModifier.ControlModifier)
    assert window.plot.currentWidget() is window.plot.function_view
    fax = window.plot.function_view.figure.axes[0]
    assert any(line.get_label() == "f(x)" for line in fax.get_lines())


# Shift+click, Shift+right-click and Shift+drag on the plot: real Qt mouse events on the
# canvas in tests/test_gui_interaction.py (a faked matplotlib key state hid that they did
# nothing).


def test_second_solve_while_one_runs_shows_only_the_newest_answer(qtbot, window, monkeypatch):
    import time

    real_solve = pipeline.solve

    def slow_solve(ws, equation=None):
        time.sleep(0.3)  # a slow equation, simulated
        return real_solve(ws, equation)

    monkeypatch.setattr(pipeline, "solve", slow_solve)
    type_equation(qtbot, window, "x^2 - c")
    window.inputs.parameters.set_value("c", "2")
    settle(qtbot, window)
    qtbot.waitUntil(lambda: window.analysis.ok, timeout=10_000)
    shown = []
    original = window.lanes.show_solution
    monkeypatch.setattr(window.lanes, "show_solution",
                        lambda s: (shown.append(s), original(s))[1])
    window.inputs.set_field("x0", 1.0)
    assert window.solve()
    assert window.runner.is_busy("solve")
    window.inputs.parameters.set_value("c", "3")
    assert window.solve()
    idle(qtbot, window)
    assert len(shown) == 1, "the superseded answer must never be shown"
    assert shown[0].worksheet.parameter_values()["c"] == 3.0
    assert window.solution.runs[0].root == pytest.approx(math.sqrt(3), rel=1e-14)


def test_help_and_about_carry_the_caution_and_the_sources(qtbot, window):
    from app.window.dialogs import ABOUT_HTML, HELP_HTML

    for html in (HELP_HTML, ABOUT_HTML):
        assert "qualified engineer" in html and "local codes" in html
    for source in ("scipy.optimize", "mpmath", "numpy", "scipy.special", "scipy.constants",
                   "Alefeld–Potra–Shi", "handbook"):
        assert source in ABOUT_HTML
    assert window.help_action.shortcut().toString() == "F1"


def test_help_names_every_window_shortcut_and_the_methods_solve_runs(qtbot, window):
    # Outside reference: the window's own menus (app/window/actions.py ACTIONS, read back
    # from the live QActions) and the README's window section: Solve runs the methods
    # ticked in "Methods to run", any of the six. The help page must say the same.
    import re

    from app.window.actions import ACTIONS
    from app.window.dialogs import HELP_HTML

    keys = re.search(r"<b>Keys\.</b>(.*?)</p>", HELP_HTML, re.S).group(1)
    keys = " ".join(keys.split())
    shown = set(re.findall(r"(?:Ctrl\+(?:Shift\+)?(?:Return|[A-Z0-9=+-])|Esc|F1)(?![\w])",
                           keys))
    missing = []
    for name, text, _slot, shortcut, _tip in ACTIONS:
        if shortcut is None:
            continue
        sequence = getattr(window, name).shortcut().toString()
        if sequence and sequence not in shown:
            missing.append(f"{text.replace('&', '')} ({sequence})")
    assert not missing, f"the help's Keys paragraph leaves out {missing}"
    solve = re.search(r"<b>4\. Solve</b>(.*?)</p>", HELP_HTML, re.S).group(1)
    assert "Methods to run" in solve
    from PySide6.QtWidgets import QGroupBox

    assert "Methods to run" in [box.title() for box in window.inputs.findChildren(QGroupBox)]
    assert len(window.inputs.method_boxes) == 6


def test_tab_moves_from_the_equation_to_the_unknown_then_the_parameters(qtbot, window):
    from PySide6.QtWidgets import QApplication

    window.activateWindow()
    window.strip.editor.setFocus()
    qtbot.waitUntil(lambda: QApplication.focusWidget() is window.strip.editor, timeout=5000)
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_Tab)
    assert QApplication.focusWidget() is window.strip.unknown_box
    assert window.strip.text() == "", "Tab must move the focus, not type a tab"
    qtbot.keyClick(window.strip.unknown_box, Qt.Key.Key_Tab)
    assert QApplication.focusWidget() is window.inputs.parameters_view
    assert window.solve_action.shortcut().toString() == "Ctrl+Return"


def test_the_launch_loads_the_scans_compiled_passes_in_the_background():
    # `zerotrace` starts numba and loads the scan's compiled passes in a thread of its own
    # as the window opens, so a user's first scan does not wait for them (nor the window's
    # thread for the GIL they hold while loading). In a fresh process, so that no scan of
    # another test has loaded them already.
    import subprocess
    import sys

    probe = (
        "import threading\n"
        "from app.window.main_window import warm_compiled_loops\n"
        "from solvers.scan import passes\n"
        "kernels = (passes.detect_pass, passes.ab_start, passes.ab_accept,\n"
        "           passes.ladder_points, passes.ladder_read)\n"
        "before = [bool(k.signatures) for k in kernels]\n"
        "thread = warm_compiled_loops()\n"
        "assert thread.daemon and thread is not threading.current_thread()\n"
        "thread.join(timeout=280)\n"  # a fresh install compiles them here (seconds)
        "print(before, [bool(k.signatures) for k in kernels], thread.is_alive())\n"
    )
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                         cwd=Path(__file__).resolve().parents[1], timeout=290)
    assert out.returncode == 0, out.stderr
    assert out.stdout.split() == ["[False,", "False,", "False,", "False,", "False]",
                                  "[True,", "True,", "True,", "True,", "True]", "False"]
