"""The window's scans, files, exports, recovery and closing, driven as a user would.

Every modal dialog is scripted (gui_helpers.dialogs), so a test that would otherwise
block fails instead.
"""

from __future__ import annotations

import csv
import math
import time
from pathlib import Path

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QMessageBox

from app.documents import worksheet
from app.window.recovery import RecoveryStore
from solvers import pipeline

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import SAMPLES, settle, solve_and_wait, type_equation  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated
# matplotlib's Qt toolbar asks Qt about a deprecated attribute on every canvas: not ours.
pytestmark = pytest.mark.filterwarnings("ignore:Enum value .*AA_UseHighDpiPixmaps")
Button = QMessageBox.StandardButton


def _cantilever_omegas(ws, count: int) -> list[float]:
    """Bending frequencies of a uniform cantilever: w_n = (beta_n L)^2 sqrt(EI/(rho A)) / L^2
    with beta_n L = 1.87510407, 4.69409113, 7.85475744, 10.99554073
    (Blevins, Formulas for Natural Frequency and Mode Shape, Table 8-1, clamped-free)."""
    p = ws.parameter_values()
    beta_l = [1.87510407, 4.69409113, 7.85475744, 10.99554073][:count]
    scale = math.sqrt(p["E"] * p["I"] / (p["rho"] * p["A"])) / p["L"] ** 2
    return [b * b * scale for b in beta_l]


def _scan_and_wait(qtbot, w):
    before = w.scan_result
    qtbot.mouseClick(w.inputs.scan_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: w.scan_result is not before and not w.runner.is_busy("scan"),
                    timeout=30_000)
    return w.scan_result


def test_scan_lists_every_root_and_picking_one_polishes_it(qtbot, window):
    assert window.load_sample("sign-arm-natural-frequencies.json")
    settle(qtbot, window)
    scan = _scan_and_wait(qtbot, window)
    model = window.roots_model
    assert model.rowCount() == len(scan.roots) == 3  # modes 1-3 lie below 1500 rad/s
    for row, root in enumerate(scan.roots):
        assert model.data(model.index(row, 0), Qt.ItemDataRole.UserRole) == root.x
        assert model.data(model.index(row, 2), Qt.ItemDataRole.UserRole) == root.multiplicity
    # The list is the core's scan of the same worksheet, and the physics agrees with the
    # handbook values to the 8 digits the table gives.
    direct = pipeline.scan_worksheet(window.solve_worksheet())
    assert [r.x for r in direct.roots] == [r.x for r in scan.roots]
    for found, expected in zip(scan.roots, _cantilever_omegas(window.worksheet(), 3),
                               strict=False):
        assert found.x == pytest.approx(expected, rel=2e-8)
    assert f"{len(scan.roots)} roots" in window.roots_summary.text()
    # Pick the second root: every method polishes it; the typed start values stay.
    typed = window.inputs.fields["x0"].value()
    before = window.solution
    index = model.index(1, 0)
    window.roots_view.activated.emit(index)
    qtbot.waitUntil(lambda: window.solution is not before and window.solution is not None,
                    timeout=20_000)
    for run in window.solution.runs:
        assert run.converged and run.root == pytest.approx(scan.roots[1].x, rel=1e-10)
    assert window.solution.worksheet.settings.x0 == scan.roots[1].x
    assert window.inputs.fields["x0"].value() == typed
    # The function plot marks every root of the scan.
    ax = window.plot.function_view.figure.axes[0]
    marks = [line for line in ax.get_lines() if line.get_label().startswith("root")]
    assert len(marks) == 1 and len(marks[0].get_xdata()) == len(scan.roots)


def _slow_scans(monkeypatch, delay: float = 0.002):
    """Make every evaluation of f slow (as for an expensive equation) so a scan takes seconds."""
    import importlib

    real = pipeline.scan_worksheet
    scan_module = importlib.import_module("solvers.scan")  # `solvers.scan` is also a function

    def slow(ws, equation=None, *, progress=None, cancel=None):
        eq = equation or pipeline.equation_of(ws)

        def f(x):
            time.sleep(delay)
            return eq.f(x)

        return scan_module.scan(f, ws.scan[0], ws.scan[1], fprime=eq.fprime,
                                progress=progress, cancel=cancel)

    monkeypatch.setattr(pipeline, "scan_worksheet", slow)
    return real


def test_cancel_stops_the_scan_and_restores_the_controls(qtbot, window, monkeypatch):
    _slow_scans(monkeypatch, delay=0.02)
    type_equation(qtbot, window, "sin(x)")
    window.inputs.set_field("from", 0.0)
    window.inputs.set_field("to", 100.0)
    assert window.start_scan()
    assert not window.inputs.scan_button.isEnabled() and window.cancel_button.isEnabled()
    assert not window.start_scan(), "a second scan while one runs is refused"
    qtbot.waitUntil(lambda: window.progress_updates >= 1, timeout=20_000)
    qtbot.mouseClick(window.cancel_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: not window.runner.is_busy("scan"), timeout=10_000)
    assert window.scan_result is None
    assert "cancelled" in window.roots_summary.text()
    assert window.progress.value() == 0 and not window.cancel_button.isEnabled()
    assert window.progress.format() == "no scan running"
    assert window.inputs.scan_button.isEnabled()
    updates = window.progress_updates
    qtbot.wait(200)
    assert window.progress_updates == updates, "no progress after the cancel"


def test_closing_during_a_scan_stops_it_cleanly(qtbot, window, monkeypatch):
    _slow_scans(monkeypatch, delay=0.02)
    type_equation(qtbot, window, "cos(x)")
    window.inputs.set_field("from", 0.0)
    window.inputs.set_field("to", 100.0)
    assert window.start_scan()
    qtbot.waitUntil(lambda: window.progress_updates >= 1, timeout=20_000)
    window._saved_text = worksheet.dumps(window.worksheet())  # nothing to save
    window._touched = False
    assert window.close()
    assert not window.runner.is_busy("scan")
    assert not window.isVisible()


def test_save_and_reopen_round_trip(qtbot, window, dialogs, tmp_path):
    assert window.load_sample("drainage-channel-normal-depth.json")
    settle(qtbot, window)
    model = window.inputs.parameters
    model.setData(model.index(0, model.NOTE), "changed note ✓")
    window.inputs.set_field("xtol", 1e-10)
    assert window.is_modified()
    target = tmp_path / "my channel ü.json"  # spaces and non-ASCII in the path
    dialogs.save_name = str(target)
    assert window.save()  # untitled sample copy: Save asks where
    assert not window.is_modified()
    saved = worksheet.load(target)
    assert saved == window.worksheet()
    assert saved.settings.xtol == 1e-10 and saved.parameters[0].note == "changed note ✓"
    window.new_document()
    assert window.strip.text() == ""
    assert window.open_path(target)
    settle(qtbot, window)
    assert window.worksheet() == saved
    assert not window.is_modified()
    assert str(target) in window.recent_files()


def test_a_bad_worksheet_file_is_refused_and_the_document_kept(qtbot, window, dialogs,
                                                                tmp_path):
    assert window.load_sample("project-irr.json")
    settle(qtbot, window)
    model = window.inputs.parameters
    model.setData(model.index(0, 1), "123.5")
    before = window.worksheet()
    bad = tmp_path / "broken.json"
    bad.write_text('{"format": "zerotrace-worksheet", "version": 1, "equation": "x", '
                   '"settings": {"xtol": "small"}}', encoding="utf-8")
    assert not window.open_path(bad, ask=False)
    warnings = dialogs.titles("warning")
    assert warnings and "settings.xtol" in warnings[-1]
    assert window.worksheet() == before and window.is_modified()
    truncated = tmp_path / "truncated.json"
    truncated.write_text(SAMPLES.joinpath("project-irr.json").read_text()[:100])
    assert not window.open_path(truncated, ask=False)
    assert "not valid JSON" in dialogs.titles("warning")[-1]
    assert window.worksheet() == before


def _data_rows(path: Path) -> list[list[str]]:
    with path.open(encoding="utf-8", newline="") as handle:
        lines = [line for line in handle if not line.startswith("#")]
    return list(csv.reader(lines))


def test_export_iteration_log_reads_back_exactly_and_asks_before_overwriting(
        qtbot, window, dialogs, tmp_path):
    type_equation(qtbot, window, "x^3 - 2*x - 5 = 0")
    window.inputs.set_field("a", 2.0)
    window.inputs.set_field("b", 3.0)
    solution = solve_and_wait(qtbot, window)
    target = tmp_path / "iterations.csv"
    dialogs.save_name = str(target)
    assert window.export_runs_csv()
    rows = _data_rows(target)
    assert rows[0] == ["method", "k", "x", "fx", "dfx", "dx", "lo", "hi"]
    expected = [(r.method, s) for r in solution.runs for s in r.steps]
    assert len(rows) - 1 == len(expected)
    for row, (method, step) in zip(rows[1:], expected, strict=True):
        assert row[0] == method and int(row[1]) == step.k
        assert float(row[2]) == step.x and float(row[3]) == step.fx
    # Wallis's cubic x^3 - 2x - 5: root 2.0945514815423265 (numpy.roots gives the same).
    import numpy as np

    real = [z.real for z in np.roots([1, 0, -2, -5]) if abs(z.imag) < 1e-12]
    assert solution.runs[0].root == pytest.approx(real[0], rel=1e-14)
    # Exporting again to the same file asks first; "No" leaves the file alone.
    stamp = target.read_text(encoding="utf-8")
    dialogs.question = Button.No
    assert not window.export_runs_csv()
    assert any("Replace file?" in q for q in dialogs.titles("question"))
    assert target.read_text(encoding="utf-8") == stamp
    dialogs.question = Button.Yes
    assert window.export_runs_csv()


def test_export_roots_csv_after_a_scan(qtbot, window, dialogs, tmp_path):
    type_equation(qtbot, window, "(x - 1)*(x - 2)*(x - 4)")
    window.inputs.set_field("from", 0.0)
    window.inputs.set_field("to", 5.0)
    scan = _scan_and_wait(qtbot, window)
    target = tmp_path / "roots.csv"
    dialogs.save_name = str(target)
    assert window.export_roots_csv()
    rows = [r for r in _data_rows(target)[1:] if r[0] == "root"]
    assert [float(r[1]) for r in rows] == [root.x for root in scan.roots]
    assert [float(r[1]) for r in rows] == pytest.approx([1.0, 2.0, 4.0], abs=1e-12)


def test_close_with_unsaved_changes_asks_first(qtbot, window, dialogs, tmp_path):
    type_equation(qtbot, window, "x - 1")
    assert window.is_modified()
    dialogs.question = Button.Cancel
    assert not window.close()
    assert window.isVisible()
    assert any("Unsaved changes" in q for q in dialogs.titles("question"))
    dialogs.question = Button.Save
    dialogs.save_name = str(tmp_path / "kept.json")
    assert window.close()
    assert worksheet.load(tmp_path / "kept.json").equation == "x - 1"


def test_unsaved_work_is_autosaved_and_offered_at_the_next_start(qtbot, isolated, dialogs):
    from app.window import MainWindow

    folder = isolated / "recovery"
    first = MainWindow(recovery=RecoveryStore(folder))
    qtbot.addWidget(first)
    type_equation(qtbot, first, "x^2 - 7")
    assert first.autosave_now()
    assert list(folder.glob("unsaved-*.json"))
    # The session ends without closing cleanly (a crash): its recovery copy stays.
    first.runner.stop()
    first._autosave.stop()

    second = MainWindow(recovery=RecoveryStore(folder))
    qtbot.addWidget(second)
    dialogs.question = Button.Yes
    assert second.offer_recovery()
    settle(qtbot, second)
    assert second.strip.text() == "x^2 - 7"
    assert second.is_modified(), "recovered work is unsaved until the user saves it"
    assert any("Recover unsaved work?" in q for q in dialogs.titles("question"))
    assert not first.recovery.exists(), "the offered copy is taken over by the new window"

    # Declining discards the copy, so it is not offered again.
    third_store = RecoveryStore(folder)
    assert third_store.left_behind(), "the second window's own autosave is offered next time"
    dialogs.question = Button.No
    third = MainWindow(recovery=third_store)
    qtbot.addWidget(third)
    assert not third.offer_recovery()
    assert not third_store.left_behind()
    for w in (second, third):
        w._saved_text = worksheet.dumps(w.worksheet())
        w._touched = False
        w.runner.stop()


def test_main_opens_the_window_with_a_sample(qtbot, isolated, dialogs, monkeypatch):
    from PySide6.QtWidgets import QApplication

    from app.window import MainWindow, main

    seen = []

    def run_briefly(app):
        # Stand-in for the event loop (a real exec() would leave pytest-qt's loop quit):
        # let the window settle, look at it as the user would, close it.
        qtbot.wait(300)
        windows = [w for w in QApplication.topLevelWidgets()
                   if isinstance(w, MainWindow) and w.isVisible()]
        seen.extend(windows)
        for w in windows:
            settle(qtbot, w)
            w.close()
        return 0

    monkeypatch.setattr(QApplication, "exec", run_briefly)
    assert main([]) == 0
    sample = worksheet.load(SAMPLES / "cooling-water-friction.json")
    assert seen and seen[-1].strip.text() == sample.equation
    assert seen[-1].analysis.ok and seen[-1].analysis.unknown == "f"
    assert not seen[-1].isVisible()


def test_a_failed_save_says_so_and_keeps_everything(qtbot, window, dialogs, tmp_path):
    type_equation(qtbot, window, "x^2 - 5")
    dialogs.save_name = str(tmp_path / "no such folder" / "w.json")
    assert not window.save()
    assert "Cannot save worksheet" in dialogs.titles("warning")[-1]
    assert window.strip.text() == "x^2 - 5" and window.is_modified() and window.path is None
    # An export to a folder that does not exist is refused the same way.
    window.inputs.set_field("x0", 2.0)
    solve_and_wait(qtbot, window)
    dialogs.save_name = str(tmp_path / "no such folder" / "runs.csv")
    assert not window.export_runs_csv()
    assert "Cannot export" in dialogs.titles("warning")[-1]


def test_the_calculation_sheet_is_written_in_the_background(qtbot, window, dialogs, tmp_path):
    pypdf = pytest.importorskip("pypdf")
    assert window.load_sample("pump-system-operating-point.json")
    settle(qtbot, window)
    solution = solve_and_wait(qtbot, window)
    target = tmp_path / "sheet with spaces.pdf"
    dialogs.save_name = str(target)
    assert window.export_report()
    qtbot.waitUntil(lambda: not window.runner.is_busy("report"), timeout=60_000)
    assert window.report_result is not None, window.last_error
    assert target.read_bytes()[:5] == b"%PDF-"
    text = "".join(page.extract_text() for page in pypdf.PdfReader(str(target)).pages)
    newton = next(r for r in solution.runs if r.method == "newton")
    # The sheet shows the root the window showed (same Solution object, passed through).
    assert f"{newton.root:.6g}"[:6] in text.replace(" ", "")


def test_samples_menu_opens_each_sample_as_an_untitled_copy(qtbot, window):
    window._fill_samples()
    actions = window.samples_menu.actions()
    assert len(actions) == len(list(SAMPLES.glob("*.json"))) >= 1
    action = next(a for a in actions if "irr" in a.text())
    action.trigger()
    settle(qtbot, window)
    assert window.path is None, "a sample opens as a copy: Save must ask where"
    assert window.strip.text() == worksheet.load(SAMPLES / "project-irr.json").equation


def test_results_are_marked_stale_when_inputs_change(qtbot, window):
    type_equation(qtbot, window, "x^2 - a")
    window.inputs.parameters.set_value("a", "2")
    window.inputs.set_field("x0", 1.0)
    qtbot.waitUntil(lambda: window.analysis.ok, timeout=10_000)
    solve_and_wait(qtbot, window)
    lane = window.lanes.lanes["newton"]
    assert "converged" in lane.verdict.text() and lane.table.isEnabled()
    window.inputs.parameters.set_value("a", "3")
    assert "inputs changed" in lane.verdict.text() and not lane.table.isEnabled()
    window.inputs.parameters.set_value("a", "2")  # back to what was solved
    assert "converged" in lane.verdict.text()


def test_a_scanned_root_taken_as_design_value_is_saved_with_its_reason(qtbot, window,
                                                                        dialogs, tmp_path):
    type_equation(qtbot, window, "(x - 1)*(x - 2)*(x - 4)")
    window.inputs.set_field("from", 0.0)
    window.inputs.set_field("to", 5.0)
    scan = _scan_and_wait(qtbot, window)
    window.roots_view.selectRow(1)
    qtbot.keyClick(window.roots_view, Qt.Key.Key_D, Qt.KeyboardModifier.ControlModifier)
    selection = window.worksheet().selection
    assert selection is not None and selection.root == scan.roots[1].x
    assert selection.root == pytest.approx(2.0, abs=1e-12)  # the middle factor's zero
    assert "root 2 of 3" in selection.reason
    assert "Design value: 2" in window.design_label.text()
    dialogs.save_name = str(tmp_path / "design.json")
    assert window.save()
    assert worksheet.load(tmp_path / "design.json").selection == selection
    # A scan made stale by an edit cannot supply the design value.
    window.inputs.set_field("to", 6.0)
    assert not window.roots_view.isEnabled()
    assert "Inputs changed since this scan" in window.roots_summary.text()
