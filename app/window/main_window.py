"""The zerotrace main window: one worksheet, read top to bottom.

Equation strip on top; inputs on the left; the plot in the middle with the roots of a
scan beside it; the method lanes along the bottom. The window composes and wires: the
worksheet, its parsed equation, its results and their staleness live in a
:class:`app.window.document.WorksheetDocument` the panels observe; file actions and
exports are :class:`app.window.file_actions.FileActions`; parsing, solving, scanning and
polishing are calls into solvers/ run in :class:`app.window.workers.JobRunner` lanes off
the UI thread.
"""

from __future__ import annotations

import math
import threading
import time
from pathlib import Path
from typing import Any

from PySide6.QtCore import QSettings, QSignalBlocker, Qt, QTimer
from PySide6.QtGui import QCloseEvent
from PySide6.QtWidgets import QApplication, QLabel, QMainWindow, QSplitter, QVBoxLayout, QWidget

from app import samples_dir  # noqa: F401 (the soak test finds the samples here)
from app.documents.words import confirmed_text, method_label, polish_note
from app.documents.worksheet import Parameter, Selection, Worksheet
from app.window.actions import build_actions, build_menus
from app.window.canvas import PlotPanel
from app.window.dialogs import ABOUT_HTML, CAUTION, HELP_HTML, CalcDialog, TextDialog
from app.window.document import Staleness, WorksheetDocument, result_key, scan_key
from app.window.equation_strip import Analysis, EquationStrip, analyse, name_bad_values
from app.window.file_actions import DEFAULT_SAMPLE, FileActions
from app.window.inputs import InputsPanel
from app.window.jobs import polish_job, scan_job, solve_job
from app.window.lanes import LanesPanel
from app.window.models import format_number
from app.window.recovery import RecoveryStore
from app.window.roots import RootsPanel, agreement_words, scan_summary
from app.window.workers import JobRunner

APP_NAME = "zerotrace"
AUTOSAVE_MS = 20_000


class MainWindow(QMainWindow):
    """The worksheet window. ``MainWindow()`` needs no arguments.

    ``settings`` (recent files, view options) defaults to QSettings("zerotrace",
    "zerotrace"); tests pass their own. ``recovery`` defaults to a store in
    :func:`app.window.recovery.recovery_dir`.
    """

    def __init__(self, settings: QSettings | None = None,
                 recovery: RecoveryStore | None = None) -> None:
        super().__init__()
        self.settings = settings if settings is not None else QSettings(APP_NAME, APP_NAME)
        self.recovery = recovery if recovery is not None else RecoveryStore()
        self.runner = JobRunner(self)
        self.document = WorksheetDocument(self)
        self.files = FileActions(self)
        self.last_error = ""
        self.progress_updates = 0
        self.solve_started_at = 0.0
        self.solve_seconds = math.nan
        self.tables: Any = None  # the tables-of-inputs window, built on first use

        self._build_widgets()
        build_actions(self)
        build_menus(self)
        self._connect()
        self.setWindowTitle(f"untitled[*] — {APP_NAME}")
        self.resize(1280, 800)
        self._autosave = QTimer(self)
        self._autosave.setInterval(AUTOSAVE_MS)
        self._autosave.timeout.connect(self.autosave_now)
        self._autosave.start()
        self._update_actions()

    # ------------------------------------------------------------------ building
    def _build_widgets(self) -> None:
        self.strip = EquationStrip()
        self.inputs = InputsPanel()
        self.inputs.setMinimumWidth(300)
        self.plot = PlotPanel()
        self.lanes = LanesPanel()
        self.roots = RootsPanel()
        # The roots region's parts by the names the rest of the program uses.
        self.roots_model, self.roots_view = self.roots.model, self.roots.view
        self.roots_summary, self.progress = self.roots.summary, self.roots.progress
        self.cancel_button, self.polish_button = self.roots.cancel_button, self.roots.polish_button
        self.design_button, self.design_label = self.roots.design_button, self.roots.design_label

        self.middle = QSplitter(Qt.Orientation.Horizontal)
        self.middle.addWidget(self.inputs)
        self.middle.addWidget(self.plot)
        self.middle.addWidget(self.roots)
        self.middle.setStretchFactor(0, 0)
        self.middle.setStretchFactor(1, 1)
        self.middle.setStretchFactor(2, 0)
        self.middle.setSizes([320, 680, 280])
        self.body = QSplitter(Qt.Orientation.Vertical)
        self.body.addWidget(self.middle)
        self.body.addWidget(self.lanes)
        self.body.setStretchFactor(0, 3)
        self.body.setStretchFactor(1, 2)
        self.body.setSizes([400, 250])
        central = QWidget()
        layout = QVBoxLayout(central)
        layout.setContentsMargins(2, 2, 2, 2)
        layout.setSpacing(2)
        layout.addWidget(self.strip)
        layout.addWidget(self.body, 1)
        self.setCentralWidget(central)

        self.caution = QLabel("⚠ " + CAUTION)
        self.caution.setObjectName("cautionLabel")
        self.caution.setStyleSheet("color: #8A2B00;")
        self.statusBar().addPermanentWidget(self.caution)
        # Tab order follows the way an engineer works: equation, unknown, inputs, actions.
        QWidget.setTabOrder(self.strip.editor, self.strip.unknown_box)
        QWidget.setTabOrder(self.strip.unknown_box, self.inputs.parameters_view)

    def _connect(self) -> None:
        doc = self.document
        self.recent_menu.aboutToShow.connect(self.files.fill_recent)
        self.samples_menu.aboutToShow.connect(self.files.fill_samples)
        self.files.fill_recent()
        self.files.fill_samples()
        # user edits -> the document
        self.strip.text_settled.connect(lambda _t: self.request_analysis())
        self.strip.unknown_chosen.connect(lambda _u: self._on_edit())
        self.strip.unit_changed.connect(self._convert_start_values)
        self.strip.units_chosen.connect(self._on_edit)
        self.strip.text_edited.connect(self._on_edit_quiet)
        self.inputs.changed.connect(self._on_edit)
        self.inputs.methods_changed.connect(self.lanes.set_methods)
        self.inputs.solve_button.clicked.connect(self.solve)
        self.inputs.scan_button.clicked.connect(self.start_scan)
        self.cancel_button.clicked.connect(self.cancel_scan)
        self.polish_button.clicked.connect(self.polish_selected)
        self.design_button.clicked.connect(self.take_design_value)
        self.roots_view.activated.connect(lambda index: self.polish_row(index.row()))
        self.plot.x0_picked.connect(lambda x: self._pick("x0", x))
        self.plot.x1_picked.connect(lambda x: self._pick("x1", x))
        self.plot.bracket_picked.connect(self._pick_bracket)
        self.lanes.method_activated.connect(self.plot.select_path)
        self.lanes.digits_changed.connect(self.roots.set_digits)
        self.runner.busy_changed.connect(lambda _lane, _busy: self._update_actions())
        # the document -> the panels
        doc.worksheetChanged.connect(self._show_worksheet)
        doc.equationChanged.connect(self._show_analysis)
        doc.staleChanged.connect(self._show_stale)
        doc.selectionChanged.connect(self._show_design_value)
        doc.modifiedChanged.connect(self.setWindowModified)
        doc.pathChanged.connect(lambda _p: self._refresh_title())
        doc.resultsChanged.connect(self._update_actions)
        self._inputs_timer = QTimer(self)
        self._inputs_timer.setSingleShot(True)
        self._inputs_timer.setInterval(250)
        self._inputs_timer.timeout.connect(self.request_analysis)

    # ------------------------------------------------------------------ the document
    # The document's state by the names tests and tools read (and two they reset).
    path = property(lambda self: self.document.path)
    analysis = property(lambda self: self.document.analysis)
    solution = property(lambda self: self.document.solution)
    scan_result = property(lambda self: self.document.scan)
    report_result = property(lambda self: self.files.report_result)
    _saved_text = property(lambda self: self.document.saved_text,
                           lambda self, text: setattr(self.document, "saved_text", text))
    _touched = property(lambda self: self.document.touched,
                        lambda self, touched: setattr(self.document, "touched", touched))

    def worksheet(self) -> Worksheet:
        """The worksheet as it stands on screen (last good value where an input is wrong)."""
        record = self.document.record
        settings, scan = self.inputs.settings(record.settings)
        parameters = tuple(Parameter(r.name, r.value, r.note, r.unit)
                           for r in self.inputs.parameters.rows() if r.value is not None)
        table = self.tables.inputs_record() if self.tables is not None else record.table
        return record.with_changes(equation=self.strip.text(),
                                   unknown=self.strip.chosen_unknown(),
                                   unknown_unit=self.strip.chosen_unit(),
                                   dimension_check=self.strip.dimension_check(),
                                   parameters=parameters, settings=settings, scan=scan,
                                   table=table)

    def solve_worksheet(self) -> Worksheet:
        """The worksheet with the unknown the strip inferred, for the pipeline."""
        return self._with_inferred_unknown(self.worksheet())

    def _with_inferred_unknown(self, ws: Worksheet) -> Worksheet:
        analysis = self.document.analysis
        if ws.unknown is None and analysis is not None and analysis.unknown:
            if analysis.text == ws.equation:
                ws = ws.with_changes(unknown=analysis.unknown)
        return ws

    def is_modified(self) -> bool:
        return self.document.is_modified(self.worksheet(), bool(self.inputs.problems()))

    def load_worksheet(self, ws: Worksheet, path: Path | None, *, modified: bool = False) -> None:
        """Show a worksheet; results of the previous one (and their messages) are cleared."""
        self.statusBar().clearMessage()
        self.document.load(ws, path)
        self.document.mark_loaded(self.worksheet(), modified=modified)
        self.request_analysis()
        self._refresh_title()

    def _show_worksheet(self, ws: Worksheet) -> None:
        """Fill every panel from a newly loaded worksheet; filling is not editing, so the
        strip's and the inputs' own signals are blocked meanwhile."""
        with QSignalBlocker(self.strip), QSignalBlocker(self.inputs):
            self.inputs.parameters.load(ws.parameters)
            self.inputs.show_settings(ws.settings, ws.scan)
            self.strip.set_chosen_unknown(ws.unknown)
            self.strip.set_chosen_unit(ws.unknown_unit)
            self.strip.set_dimension_check(ws.dimension_check)
            self.strip.set_text(ws.equation)
        self.lanes.set_methods(ws.settings.methods)
        for lane in self.lanes.lanes.values():
            lane.set_run(None)
        self.lanes.agreement.setText("Press Solve (Ctrl+Return) to run the methods side by side.")
        self.plot.set_stale(False)
        self.roots.clear(ws.scan is not None)
        self.plot.set_runs(())
        self.plot.show_message("Press Solve (Ctrl+Return) or Scan range to draw f.")
        if self.tables is not None:
            with QSignalBlocker(self.tables):
                self.tables.restore(ws.table)

    def _refresh_title(self) -> None:
        doc = self.document
        name = doc.path.name if doc.path is not None else (doc.record.title or "untitled")
        self.setWindowTitle(f"{name}[*] — {APP_NAME}")
        self.setWindowModified(self.document.judge_modified(self.worksheet(),
                                                            bool(self.inputs.problems())))

    def _on_edit_quiet(self) -> None:
        shown = self.worksheet()
        self.setWindowModified(self.document.edited(
            shown, bool(self.inputs.problems()), self._with_inferred_unknown(shown)))

    def _convert_start_values(self, before: str, after: str) -> None:
        """The unknown's unit changed: the start values, bracket and scan range keep the
        same physical values, written in the new unit (150 mm becomes 5.90551 in, not
        150 in), from a unit that was typed to the new one (blank: that dimension's SI
        unit). A unit typed into the blank box is the first statement of the values' unit,
        and converts nothing (150 typed with the box blank, then mm, is 150 mm); nor does
        a unit that is none or differs in dimension (the strip then says so)."""
        from solvers.units import converter

        source = " ".join(before.split())
        target = " ".join(after.split())
        convert = converter(source, target or None) if source else None
        if convert is None:
            return
        changed = self.inputs.convert_fields(("x0", "x1", "a", "b", "from", "to"), convert)
        if changed:
            from solvers.units.reading import turns_to_cycles

            shown = target or "SI"
            cycles = (" (a revolution counted as one cycle: 60 rpm is 1 Hz)"
                      if turns_to_cycles(source, target) or turns_to_cycles(target, source)
                      else "")
            self.statusBar().showMessage(
                f"Start values, bracket and scan range converted from {source} to {shown}"
                + cycles, 15000)

    def _on_edit(self) -> None:
        self._on_edit_quiet()
        self._inputs_timer.start()

    def _show_stale(self, stale: Staleness) -> None:
        doc = self.document
        self.plot.set_stale(stale.plot)
        if doc.solution is not None:
            self.lanes.set_stale(stale.solution)
        if doc.scan is not None:
            self.roots.set_stale(stale.scan, doc.scan, doc.scan_equation.unknown)

    # ------------------------------------------------------------------ live analysis
    def request_analysis(self) -> None:
        text = self.strip.text()
        chosen = self.strip.chosen_unknown()
        values = self.inputs.parameters.remembered_values()
        analysis = self.document.analysis
        previous = analysis.unknown if analysis is not None else self.document.record.unknown
        dpi = self.strip.typeset_dpi()  # typeset in the worker too, not on the UI thread
        unit, check = self.strip.chosen_unit(), self.strip.dimension_check()
        self.runner.submit("preview",
                           lambda _p, _c: analyse(text, chosen, values, previous, dpi=dpi,
                                                  parsed=analysis, unknown_unit=unit,
                                                  check_dimensions=check),
                           on_done=self._on_analysis, on_error=self._on_analysis_error)

    def _on_analysis(self, analysis: Analysis) -> None:
        if analysis.text != self.strip.text():
            return  # the text moved on; a newer analysis is queued
        self.document.set_analysis(analysis)

    def _show_analysis(self, analysis: Analysis) -> None:
        if analysis.names:  # fills the table; never an edit (the model emits no ``edited``)
            self.inputs.parameters.set_names([n for n in analysis.names if n != analysis.unknown])
        self.strip.show_analysis(name_bad_values(analysis, self.inputs.parameters))
        self.inputs.show_problems()
        self._refresh_title()
        self._update_actions()

    def _on_analysis_error(self, message: str) -> None:
        self.strip.show_analysis(Analysis(self.strip.text(), error=message))

    # ------------------------------------------------------------------ solve
    def _ready(self, what: str) -> Worksheet | None:
        """The worksheet to work on, or None (and why, in the status bar)."""
        self.inputs.commit_edits()
        problems = self.inputs.problems()
        if problems:
            self.report_problem(f"Cannot {what} yet: {problems[0]}")
            return None
        return self.solve_worksheet()

    def solve(self) -> bool:
        """Run the methods in the background; a second Solve while one runs replaces it."""
        ws = self._ready("solve")
        if ws is None:
            return False
        if not ws.equation.strip():
            self.report_problem("Cannot solve yet: type an equation first")
            return False
        scan = self.document.scan_for(ws)
        equation = self.document.equation_for(ws)
        key = result_key(ws)
        self.solve_started_at = time.perf_counter()
        self.statusBar().showMessage("Solving…")
        self.runner.submit("solve", lambda _p, _c: solve_job(ws, equation, scan),
                           on_done=lambda result: self._on_solved(result, key, scan),
                           on_error=self._on_solve_error)
        return True

    def _on_solved(self, result: tuple[Any, tuple[float, float], Any], key: str,
                   scan: Any, basis: str | None = None) -> None:
        solution, (a, b), curve = result
        self.document.set_solution(solution, key, basis)
        self.lanes.show_solution(solution)
        self.plot.show_function(solution.equation.f, a, b, unknown=solution.equation.unknown,
                                scan=scan, runs=solution.runs, curve=curve,
                                unit=solution.equation.unknown_unit,
                                f_unit=solution.equation.residual_unit(derived=True))
        self.document.refresh_stale(self.solve_worksheet())
        self._show_stale(self.document.stale)
        self.solve_seconds = time.perf_counter() - self.solve_started_at
        done = sum(r.converged for r in solution.runs)
        self.statusBar().showMessage(
            f"Solved: {done} of {len(solution.runs)} methods converged.", 8000)

    def _on_solve_error(self, message: str) -> None:
        self.report_problem(f"Cannot solve: {message}")

    def report_problem(self, message: str) -> None:
        """A one-line problem: status bar (and kept for tests in ``last_error``)."""
        self.last_error = message
        self.statusBar().showMessage(message, 15000)

    # ------------------------------------------------------------------ scan
    def start_scan(self) -> bool:
        if self.runner.is_busy("scan"):
            self.report_problem("A scan is already running (Esc cancels it)")
            return False
        ws = self._ready("scan")
        if ws is None:
            return False
        if ws.scan is None:
            self.report_problem("Cannot scan: set 'scan from' and 'scan to' first")
            return False
        key = scan_key(ws)
        equation = self.document.equation_for(ws)
        self.progress_updates = 0
        self.roots.scan_started(*ws.scan)
        self.runner.submit("scan", lambda progress, cancel: scan_job(ws, equation, progress,
                                                                      cancel),
                           on_done=lambda result: self._on_scanned(result, ws, key),
                           on_error=self._on_scan_error, on_cancel=self._on_scan_cancelled,
                           on_progress=self._on_scan_progress, supersede=False)
        self._update_actions()
        return True

    def _on_scan_progress(self, fraction: float) -> None:
        self.progress_updates += 1
        self.roots.scan_progress(fraction)

    def _on_scanned(self, result: tuple[Any, Any, Any], ws: Worksheet, key: str) -> None:
        scan, equation, curve = result
        self.roots.scan_ended()
        # Only a solution of this very worksheet may draw its path over the new curve.
        current = self.document.shown_solution_for(ws)
        self.document.set_scan(scan, equation, key)
        self.plot.set_stale(False)
        self.roots.show_scan(scan, equation.unknown, equation.unknown_unit,
                             equation.residual_unit(derived=True))
        self.plot.show_function(equation.f, scan.a, scan.b, unknown=equation.unknown, scan=scan,
                                unit=equation.unknown_unit,
                                f_unit=equation.residual_unit(derived=True),
                                runs=current.runs if current is not None else (), curve=curve)
        self.document.refresh_stale(self.solve_worksheet())
        self._show_stale(self.document.stale)
        summary = scan_summary(scan, equation.unknown, equation.unknown_unit)
        self.statusBar().showMessage(f"Scan done: {summary.splitlines()[0]}", 8000)

    def _on_scan_error(self, message: str) -> None:
        self.roots.scan_ended()
        self.roots_summary.setText(f"Scan failed: {message}")
        self.report_problem(f"Scan failed: {message}")

    def _on_scan_cancelled(self) -> None:
        self.roots.scan_ended()
        kept = ("the previous results are kept" if self.document.scan is not None
                else "no roots listed")
        self.roots_summary.setText(f"Scan cancelled; {kept}.")
        self.statusBar().showMessage("Scan cancelled.", 8000)

    def cancel_scan(self) -> None:
        if self.runner.is_busy("scan"):
            self.runner.cancel("scan")
            self.roots.scan_cancelling()

    # ------------------------------------------------------------------ polish
    def polish_selected(self) -> bool:
        row = self.roots.selected_row()
        if row is None:
            self.report_problem("Select a root in the list first")
            return False
        return self.polish_row(row)

    def polish_row(self, row: int) -> bool:
        """Every method started at the scan's root ``row`` (x0 at it, a bracket a few
        millionths wide around it).

        The typed start values and bracket are left as they are: they are the engineer's
        statement of where to look, which Solve and the tables of inputs start from (a
        polish's bracket written into them made every row of a table miss its root). The
        polish stays on screen until the inputs change, and says what it started from.
        """
        if not 0 <= row < self.roots_model.rowCount():
            return False
        x = self.roots_model.root(row).x
        ws = self.solve_worksheet()
        equation = self.document.equation_for(ws)
        self.statusBar().showMessage(f"Polishing the root near {_num(x)}…")
        self.solve_started_at = time.perf_counter()
        scan = self.document.scan
        basis = result_key(ws)  # the inputs it answers: an edit meanwhile makes it stale

        def done(result: tuple[Any, tuple[float, float], Any]) -> None:
            polished = result[0].worksheet
            self._on_solved(result, result_key(polished), scan, basis=basis)
            self.lanes.add_note(polish_note(polished.settings, result[0].equation.unknown_unit))

        self.runner.submit("solve", lambda _p, _c: polish_job(ws, equation, x, scan),
                           on_done=done, on_error=self._on_solve_error)
        return True

    # ------------------------------------------------------------------ design value
    def _show_design_value(self, selection: Any) -> None:
        """The design value with the unit the roots are in (the equation's as analysed)."""
        equation = getattr(self.analysis, "equation", None)
        unit = getattr(equation, "unknown_unit", None) or self.worksheet().unknown_unit
        self.roots.show_design_value(selection, unit)

    def take_design_value(self) -> bool:
        """Record the chosen root (roots list first, else the converged root) and why."""
        row = self.roots.selected_row()
        scan = self.document.scan
        solution = self.document.shown_solution_for(self.solve_worksheet())
        if row is not None and scan is not None and self.roots_view.isEnabled():
            root = self.roots_model.root(row)
            x = root.x
            reason = (f"root {row + 1} of {len(scan.roots)} found by the scan of "
                      f"[{_num(scan.a)}, {_num(scan.b)}] ({confirmed_text(root)})")
        elif solution is not None and solution.converged_runs:
            run = solution.converged_runs[0]
            x = run.root
            reason = (f"converged root of {method_label(run.method)}; "
                      + agreement_words(solution))
        else:
            self.report_problem("Nothing to take: select a root of the scan, or solve first")
            return False
        self.document.set_selection(Selection(float(x), reason))
        self._refresh_title()
        self.statusBar().showMessage(f"Design value set to {_num(x)}", 8000)
        return True

    def open_tables(self) -> None:
        """The tables-of-inputs window, given this worksheet's equation, values and rules."""
        from app.window.table_view import TableWindow

        ws = self.solve_worksheet()
        if self.tables is None:
            self.tables = TableWindow(self.runner, self)
            with QSignalBlocker(self.tables):
                self.tables.restore(ws.table)
            self.tables.inputs_changed.connect(self._refresh_title)
        s = ws.settings
        self.tables.set_worksheet(ws.equation, ws.unknown, ws.parameter_values(),
                                  {"xtol": s.xtol, "rtol": s.rtol, "ftol": s.ftol,
                                   "max_iter": s.max_iter, "damping": s.damping}, ws)
        self.tables.show()
        self.tables.raise_()

    def edit_calc_details(self) -> None:
        dialog = CalcDialog(self.worksheet(), self)
        if dialog.exec():
            self.document.change_record(dialog.apply(self.document.record))
            self._refresh_title()

    # ------------------------------------------------------------------ plot picks
    def _pick(self, key: str, x: float) -> None:
        self.inputs.set_field(key, x)
        self.statusBar().showMessage(f"{key} set to {_num(x)} from the plot", 5000)

    def _pick_bracket(self, a: float, b: float) -> None:
        self.inputs.set_field("a", a)
        self.inputs.set_field("b", b)
        self.statusBar().showMessage(f"bracket set to [{_num(a)}, {_num(b)}] from the plot", 5000)

    def step_digits(self, step: int) -> None:
        self.lanes.digits.setValue(self.lanes.digits.value() + step)

    # ------------------------------------------------------------------ files (file_actions)
    def maybe_save(self) -> bool:
        return self.files.maybe_save()

    def new_document(self) -> None:
        self.files.new_document()

    def open_file(self) -> bool:
        return self.files.open_file()

    def open_system(self, ws: Any = None, path: Path | None = None) -> Any:
        """The system window (one per main window), showing ``ws`` (opened from ``path``)
        when given and the window's unsaved changes may be dropped (it asks)."""
        from app.window.system_view import SystemWindow

        if getattr(self, "system_window", None) is None:
            self.system_window = SystemWindow(self.runner, recovery=self.recovery.companion(
                "system"), files=self.files)
        if ws is not None and self.system_window.maybe_save():
            self.system_window.load_worksheet(ws, path)
        self.system_window.show()
        self.system_window.raise_()
        return self.system_window

    def open_path(self, path: str | Path, *, ask: bool = True, as_copy: bool = False) -> bool:
        return self.files.open_path(path, ask=ask, as_copy=as_copy)

    def load_sample(self, name: str = DEFAULT_SAMPLE) -> bool:
        return self.files.load_sample(name)

    def save(self) -> bool:
        return self.files.save()

    def save_as(self) -> bool:
        return self.files.save_as()

    def recent_files(self) -> list[str]:
        return self.files.recent_files()

    def _fill_samples(self) -> None:
        self.files.fill_samples()

    def export_runs_csv(self) -> bool:
        return self.files.export_runs_csv()

    def export_roots_csv(self) -> bool:
        return self.files.export_roots_csv()

    def export_report(self) -> bool:
        return self.files.export_report()

    def autosave_now(self) -> bool:
        return self.files.autosave_now()

    def offer_recovery(self) -> bool:
        return self.files.offer_recovery()

    # ------------------------------------------------------------------ help
    def show_help(self) -> None:
        TextDialog("Using zerotrace", HELP_HTML, self).exec()

    def show_about(self) -> None:
        from app.documents.export import tool_version

        html = ABOUT_HTML.replace("<h2>zerotrace</h2>", f"<h2>zerotrace {tool_version()}</h2>", 1)
        TextDialog("About zerotrace", html, self).exec()

    # ------------------------------------------------------------------ state and closing
    def _update_actions(self) -> None:
        scanning = self.runner.is_busy("scan")
        self.scan_action.setEnabled(not scanning)
        self.inputs.scan_button.setEnabled(not scanning)
        self.cancel_action.setEnabled(scanning)
        self.export_runs_action.setEnabled(self.document.solution is not None)
        self.export_roots_action.setEnabled(self.document.scan is not None)
        self.export_pdf_action.setEnabled(not self.runner.is_busy("report"))
        solving = self.runner.is_busy("solve")
        self.inputs.solve_button.setText("&Solve (running…)" if solving else "&Solve")

    def closeEvent(self, event: QCloseEvent) -> None:  # noqa: N802 (Qt name)
        if not self.maybe_save():
            event.ignore()
            return
        if getattr(self, "system_window", None) is not None and self.system_window.isVisible() \
                and not self.system_window.close():  # it runs its jobs in this runner
            event.ignore()  # the user kept the unsaved system open
            return
        self._autosave.stop()
        self.runner.stop()
        self.recovery.clear()
        event.accept()


def _num(x: float) -> str:
    return format_number(x, 8)


def warm_compiled_loops() -> threading.Thread:
    """Start numba and load the scan's compiled passes in a background thread, now.

    The first scan of a process otherwise pays numba's start (about 0.5 s: its import, its
    registries, each pass loaded from the cache, or compiled once after an install) in the
    worker, and while that holds the GIL the window's thread waits: gaps of 150-230 ms.
    Done at launch, it is over before a user asks for a scan. The thread touches neither
    Qt nor matplotlib; a failure here only leaves the work to the first scan.
    """
    def warm() -> None:
        import numpy as np

        from solvers.scan import scan

        try:  # enough roots (over 24) that the vectorised refinement runs too
            scan(lambda x: np.sin(20.0 * x), 0.3, 10.0,
                 fprime=lambda x: 20.0 * np.cos(20.0 * x), cross_check=False)
        except Exception:  # noqa: BLE001 - the first real scan will say what is wrong
            pass

    thread = threading.Thread(target=warm, name="zerotrace-warm-up", daemon=True)
    thread.start()
    return thread


def main(argv: list[str] | None = None) -> int:
    """Create the application, show the window with a sample (or the file named), run it."""
    import sys

    args = list(sys.argv[1:] if argv is None else argv)
    app = QApplication.instance() or QApplication([APP_NAME, *args])
    app.setOrganizationName(APP_NAME)
    app.setApplicationName(APP_NAME)
    window = MainWindow()
    files = [a for a in args if not a.startswith("-")]
    opened = window.open_path(files[0], ask=False) if files else False
    if not opened:
        window.load_sample()
    window.show()
    QTimer.singleShot(0, window.offer_recovery)
    QTimer.singleShot(0, warm_compiled_loops)
    return int(app.exec())
