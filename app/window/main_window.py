"""The zerotrace main window: one worksheet, read top to bottom.

Equation strip on top; inputs on the left; the plot in the middle with the roots of a
scan beside it; the method lanes along the bottom. The window only wires: parsing,
solving, scanning, polishing and exporting are calls into solvers/ (pipeline, export,
figures, worksheet), and everything that can take time runs in a
:class:`app.window.workers.JobRunner` lane off the UI thread.
"""

from __future__ import annotations

import math
import time
from pathlib import Path
from typing import Any

from PySide6.QtCore import QEvent, QSettings, Qt, QTimer
from PySide6.QtGui import QAction, QCloseEvent, QKeySequence
from PySide6.QtWidgets import (
    QAbstractItemView,
    QApplication,
    QFileDialog,
    QFrame,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QMainWindow,
    QMessageBox,
    QProgressBar,
    QPushButton,
    QScrollArea,
    QSplitter,
    QVBoxLayout,
    QWidget,
)

from app.documents import figures, worksheet
from app.documents.worksheet import Parameter, Selection, Settings, Worksheet, WorksheetError
from app.window.canvas import PlotPanel
from app.window.dialogs import ABOUT_HTML, CAUTION, HELP_HTML, CalcDialog, TextDialog
from app.window.equation_strip import Analysis, EquationStrip, analyse
from app.window.inputs import InputsPanel
from app.window.lanes import LanesPanel
from app.window.models import (
    DEFAULT_DIGITS,
    RootsModel,
    fix_lines,
    format_number,
    number_font,
)
from app.window.recovery import Recovered, RecoveryStore
from app.window.views import CopyTableView, FittedNumberDelegate
from app.window.workers import JobRunner

APP_NAME = "zerotrace"
FILE_FILTER = "zerotrace worksheets (*.json);;All files (*)"
CSV_FILTER = "CSV files (*.csv);;All files (*)"
PDF_FILTER = "PDF files (*.pdf)"
MAX_RECENT = 8
AUTOSAVE_MS = 20_000
DEFAULT_SAMPLE = "cooling-water-friction.json"
BLANK = Worksheet(equation="")
IDLE_FORMAT = "no scan running"


def samples_dir() -> Path:
    """The bundled samples (app.samples_dir() when the package provides it)."""
    import app

    finder = getattr(app, "samples_dir", None)
    if finder is not None:
        return Path(finder())
    return Path(__file__).resolve().parents[2] / "samples"


def plot_range(ws: Worksheet, solution: Any = None) -> tuple[float, float]:
    """Where to draw f: the scan range, else the bracket widened, else around x0 or the roots."""
    if ws.scan is not None:
        return ws.scan
    start = getattr(solution, "start", None)
    bracket = ws.settings.bracket or getattr(start, "bracket", None)
    if bracket is not None:
        a, b = bracket
        pad = 0.15 * (b - a)
        return (a - pad, b + pad)
    points = [x for x in (ws.settings.x0, getattr(start, "x0", None)) if x is not None]
    if solution is not None:
        points += [r.root for r in solution.runs if r.converged and math.isfinite(r.root)]
    if not points:
        return (-10.0, 10.0)
    lo, hi = min(points), max(points)
    half = max(hi - lo, 0.5 * max(abs(lo), abs(hi)), 1.0)
    return (lo - half, hi + half)


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
        self.path: Path | None = None
        self._doc: Worksheet = BLANK
        self._saved_text = _as_saved(BLANK)
        self._touched = False
        self._loading = False
        self.analysis: Analysis | None = None
        self.solution: Any = None
        self.scan_result: Any = None
        self.scan_equation: Any = None
        self._scan_key: str | None = None
        self._solve_key: str | None = None
        self._plot_key: tuple[str, str] | None = None  # what the plot was drawn from
        self.last_error = ""
        self.solve_started_at = 0.0
        self.solve_seconds = math.nan

        self._build_widgets()
        self._build_actions()
        self._build_menus()
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

        self.roots_model = RootsModel(self)
        self.roots_view = CopyTableView()
        self.roots_view.setObjectName("rootsView")
        self.roots_view.setModel(self.roots_model)
        self.roots_view.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.roots_view.setToolTip("Double-click a root (or Enter) to polish it with every "
                                   "method and take it as the start values")
        # x, residual and multiplicity always fit the list (numbers drop trailing digits
        # rather than run past its edge); how each root was confirmed follows, to scroll to.
        self.roots_delegate = FittedNumberDelegate(DEFAULT_DIGITS, self.roots_view)
        self.roots_view.setItemDelegate(self.roots_delegate)
        self.roots_view.horizontalHeader().setStretchLastSection(False)
        # The viewport, not the view: a vertical scroll bar appearing narrows only it.
        self.roots_view.viewport().installEventFilter(self)
        self.roots_summary = QLabel("No scan yet: set 'scan from' and 'scan to', then Scan range.")
        self.roots_summary.setObjectName("rootsSummary")
        self.roots_summary.setWordWrap(True)
        self.roots_summary.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        self.roots_summary.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        # Five lines on screen, the rest (scan warnings) scrolls: a fixed-height label cut
        # a long summary at top and bottom, and a growing one would re-lay out the window.
        summary_area = QScrollArea()
        summary_area.setObjectName("rootsSummaryArea")
        summary_area.setWidget(self.roots_summary)
        summary_area.setWidgetResizable(True)
        summary_area.setFrameShape(QFrame.Shape.NoFrame)
        summary_area.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        summary_area.setFocusPolicy(Qt.FocusPolicy.NoFocus)
        fix_lines(summary_area, 5)
        self.progress = QProgressBar()
        self.progress.setObjectName("scanProgress")
        self.progress.setRange(0, 1000)
        self.progress.setTextVisible(True)
        # The progress row is always there (idle when no scan runs): showing and hiding it
        # would re-lay out the window and redraw the plot in the middle of a scan.
        self.progress.setFormat(IDLE_FORMAT)
        self.cancel_button = QPushButton("Cancel")
        self.cancel_button.setObjectName("cancelScanButton")
        self.cancel_button.setToolTip("Stop the scan (Esc); earlier results are kept")
        self.cancel_button.setEnabled(False)
        self.polish_button = QPushButton("Polish")  # Enter on a root polishes it
        self.polish_button.setObjectName("polishButton")
        progress_row = QHBoxLayout()
        progress_row.addWidget(self.progress, 1)
        progress_row.addWidget(self.cancel_button)
        roots_box = QGroupBox("Roots in range")
        roots_layout = QVBoxLayout(roots_box)
        roots_layout.setContentsMargins(4, 4, 4, 4)
        roots_layout.addWidget(summary_area)
        roots_layout.addLayout(progress_row)
        roots_layout.addWidget(self.roots_view, 1)
        self.design_button = QPushButton("Ta&ke as design value")
        self.design_button.setObjectName("designButton")
        self.design_button.setToolTip("Record the selected root as the design value, with "
                                      "how it was chosen (Ctrl+D); shown on the calculation "
                                      "sheet")
        self.design_label = QLabel("Design value: none chosen")
        self.design_label.setObjectName("designLabel")
        self.design_label.setFont(number_font())
        self.design_label.setWordWrap(True)
        fix_lines(self.design_label, 2)
        buttons_row = QHBoxLayout()
        buttons_row.addWidget(self.polish_button)
        buttons_row.addWidget(self.design_button)
        roots_layout.addLayout(buttons_row)
        roots_layout.addWidget(self.design_label)
        roots_box.setMinimumWidth(250)

        self.middle = QSplitter(Qt.Orientation.Horizontal)
        self.middle.addWidget(self.inputs)
        self.middle.addWidget(self.plot)
        self.middle.addWidget(roots_box)
        self.middle.setStretchFactor(0, 0)
        self.middle.setStretchFactor(1, 1)
        self.middle.setStretchFactor(2, 0)
        self.middle.setSizes([320, 680, 280])
        self.body = QSplitter(Qt.Orientation.Vertical)
        self.body.addWidget(self.middle)
        self.body.addWidget(self.lanes)
        self.body.setStretchFactor(0, 3)
        self.body.setStretchFactor(1, 2)
        self.body.setSizes([380, 270])
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

    def _action(self, text: str, slot: Any, shortcut: Any = None, tip: str = "") -> QAction:
        action = QAction(text, self)
        if shortcut is not None:
            if isinstance(shortcut, (list, tuple)):
                action.setShortcuts([QKeySequence(s) for s in shortcut])
            else:
                action.setShortcut(QKeySequence(shortcut))
        if tip:
            action.setStatusTip(tip)
            action.setToolTip(tip)
        action.triggered.connect(lambda _checked=False: slot())
        self.addAction(action)
        return action

    def _build_actions(self) -> None:
        k = QKeySequence.StandardKey
        self.new_action = self._action("&New", self.new_document, k.New)
        self.open_action = self._action("&Open…", self.open_file, k.Open)
        self.save_action = self._action("&Save", self.save, k.Save)
        self.save_as_action = self._action("Save &As…", self.save_as, k.SaveAs)
        self.export_runs_action = self._action(
            "Export &iteration log (CSV)…", self.export_runs_csv,
            tip="Every iterate of every method, numbers written exactly")
        self.export_roots_action = self._action("Export roo&ts (CSV)…", self.export_roots_csv)
        self.export_pdf_action = self._action("Export calculation s&heet (PDF)…",
                                              self.export_report)
        self.quit_action = self._action("&Quit", self.close, k.Quit)
        self.calc_action = self._action("Calculation &details…", self.edit_calc_details)
        self.solve_action = self._action("&Solve", self.solve, ["Ctrl+Return", "Ctrl+Enter"],
                                         "Run every method side by side")
        self.scan_action = self._action("Scan &range", self.start_scan,
                                        ["Ctrl+Shift+Return", "Ctrl+Shift+Enter"],
                                        "Find every root, pole and jump in the scan range")
        self.cancel_action = self._action("&Cancel scan", self.cancel_scan, "Esc")
        self.polish_action = self._action("&Polish selected root", self.polish_selected)
        self.design_action = self._action(
            "Take as &design value", self.take_design_value, "Ctrl+D",
            "Record the selected root (or the converged root) as the design value")
        self.function_view_action = self._action(
            "&Function plot", lambda: self.plot.setCurrentIndex(0), "Ctrl+1")
        self.convergence_view_action = self._action(
            "&Convergence plot", lambda: self.plot.setCurrentIndex(1), "Ctrl+2")
        self.more_digits_action = self._action(
            "&More significant figures", lambda: self._step_digits(1), ["Ctrl+=", "Ctrl++"])
        self.fewer_digits_action = self._action(
            "Fe&wer significant figures", lambda: self._step_digits(-1), "Ctrl+-")
        self.help_action = self._action("&Using zerotrace", self.show_help, k.HelpContents)
        self.about_action = self._action("&About zerotrace", self.show_about)

    def _build_menus(self) -> None:
        bar = self.menuBar()
        file_menu = bar.addMenu("&File")
        file_menu.addActions([self.new_action, self.open_action])
        self.recent_menu = file_menu.addMenu("Open &recent")
        self.samples_menu = file_menu.addMenu("Sa&mples")
        file_menu.addSeparator()
        file_menu.addActions([self.save_action, self.save_as_action])
        file_menu.addSeparator()
        file_menu.addActions([self.export_runs_action, self.export_roots_action,
                              self.export_pdf_action])
        file_menu.addSeparator()
        file_menu.addAction(self.quit_action)
        edit_menu = bar.addMenu("&Edit")
        edit_menu.addAction(self.calc_action)
        run_menu = bar.addMenu("&Run")
        run_menu.addActions([self.solve_action, self.scan_action, self.cancel_action,
                             self.polish_action, self.design_action])
        view_menu = bar.addMenu("&View")
        view_menu.addActions([self.function_view_action, self.convergence_view_action])
        view_menu.addSeparator()
        view_menu.addActions([self.more_digits_action, self.fewer_digits_action])
        help_menu = bar.addMenu("&Help")
        help_menu.addActions([self.help_action, self.about_action])
        self.recent_menu.aboutToShow.connect(self._fill_recent)
        self.samples_menu.aboutToShow.connect(self._fill_samples)
        self._fill_recent()
        self._fill_samples()

    def _connect(self) -> None:
        self.strip.text_settled.connect(lambda _t: self.request_analysis())
        self.strip.unknown_chosen.connect(lambda _u: self._on_edit())
        self.strip.editor.textChanged.connect(self._on_edit_quiet)
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
        self.lanes.digits_changed.connect(self.roots_model.set_digits)
        self.lanes.digits_changed.connect(self._on_roots_digits)
        self.runner.busy_changed.connect(lambda _lane, _busy: self._update_actions())
        self._inputs_timer = QTimer(self)
        self._inputs_timer.setSingleShot(True)
        self._inputs_timer.setInterval(250)
        self._inputs_timer.timeout.connect(self.request_analysis)

    # ------------------------------------------------------------------ the document
    def worksheet(self) -> Worksheet:
        """The worksheet as it stands on screen (last good value where an input is wrong)."""
        settings, scan = self.inputs.settings(self._doc.settings)
        rows = self.inputs.parameters.rows()
        parameters = tuple(Parameter(r.name, r.value, r.note) for r in rows
                           if r.value is not None)
        return self._doc.with_changes(
            equation=self.strip.text(),
            unknown=self.strip.chosen_unknown(),
            parameters=parameters,
            settings=settings,
            scan=scan,
        )

    def solve_worksheet(self) -> Worksheet:
        """The worksheet with the unknown the strip inferred, for the pipeline."""
        ws = self.worksheet()
        if ws.unknown is None and self.analysis is not None and self.analysis.unknown:
            if self.analysis.text == ws.equation:
                ws = ws.with_changes(unknown=self.analysis.unknown)
        return ws

    def is_modified(self) -> bool:
        if self._loading:
            return False
        try:
            current = _as_saved(self.worksheet())
        except ValueError:
            return True
        has_bad_text = bool(self.inputs.problems()) and self._touched
        return current != self._saved_text or has_bad_text

    def load_worksheet(self, ws: Worksheet, path: Path | None, *, modified: bool = False) -> None:
        """Show a worksheet; results of the previous one (and their messages) are cleared."""
        self.statusBar().clearMessage()
        self._loading = True
        try:
            self._doc = ws
            self.path = path
            self.inputs.parameters.load(ws.parameters)
            self.inputs.show_settings(ws.settings, ws.scan)
            self.strip.set_chosen_unknown(ws.unknown)
            self.strip.set_text(ws.equation)
            self.lanes.set_methods(ws.settings.methods)
            for lane in self.lanes.lanes.values():
                lane.set_run(None)
            self.lanes.agreement.setText("Press Solve (Ctrl+Return) to run the methods side "
                                         "by side.")
            self.solution = None
            self.scan_result = None
            self._scan_key = self._solve_key = None
            self._plot_key = None
            self.plot.set_stale(False)
            self.roots_model.set_rows([])
            self.roots_summary.setText("No scan yet." if ws.scan else
                                       "No scan range: set 'scan from' and 'scan to'.")
            self.plot.set_runs(())
            self.plot.show_message("Press Solve (Ctrl+Return) or Scan range to draw f.")
            self.roots_view.setEnabled(True)
            self.polish_button.setEnabled(True)
            self._show_design_value()
        finally:
            self._loading = False
        self._saved_text = "" if modified else _as_saved(self.worksheet())
        self._touched = modified
        self.request_analysis()
        self._refresh_title()

    def _refresh_title(self) -> None:
        name = self.path.name if self.path is not None else (self._doc.title or "untitled")
        self.setWindowTitle(f"{name}[*] — {APP_NAME}")
        self.setWindowModified(self.is_modified())

    def _on_edit_quiet(self) -> None:
        if not self._loading:
            self._touched = True
            self._mark_stale()
            self._refresh_title()

    def _on_edit(self) -> None:
        if self._loading:
            return
        self._touched = True
        self._mark_stale()
        self._refresh_title()
        self._inputs_timer.start()

    def _key(self, ws: Worksheet) -> str:
        """What a result depends on (everything except the notes and title block)."""
        return worksheet.dumps(ws.with_changes(title="", notes="", calc=BLANK.calc,
                                               selection=None))

    def _scan_key_of(self, ws: Worksheet) -> str:
        """What a scan depends on: the equation, parameters and range, not the start values."""
        return self._key(ws.with_changes(settings=Settings()))

    def _mark_stale(self) -> None:
        ws = self.solve_worksheet()
        if self._plot_key is not None:
            kind, key = self._plot_key
            now = self._key(ws) if kind == "solve" else self._scan_key_of(ws)
            self.plot.set_stale(now != key)
        if self.solution is not None:
            self.lanes.set_stale(self._key(ws) != self._solve_key)
        if self.scan_result is not None:
            stale = self._scan_key_of(ws) != self._scan_key
            self.roots_view.setEnabled(not stale)
            self.polish_button.setEnabled(not stale)
            text = scan_summary(self.scan_result, self.scan_equation.unknown)
            if stale:
                text = "⚠ Inputs changed since this scan: scan again.\n" + text
            self.roots_summary.setText(text)

    # ------------------------------------------------------------------ live analysis
    def request_analysis(self) -> None:
        text = self.strip.text()
        chosen = self.strip.chosen_unknown()
        model = self.inputs.parameters
        values = model.remembered_values()
        previous = self.analysis.unknown if self.analysis is not None else self._doc.unknown
        dpi = self.strip.typeset_dpi()  # typeset in the worker too, not on the UI thread
        self.runner.submit("preview",
                           lambda _p, _c: analyse(text, chosen, values, previous, dpi=dpi),
                           on_done=self._on_analysis, on_error=self._on_analysis_error)

    def _on_analysis(self, analysis: Analysis) -> None:
        if analysis.text != self.strip.text():
            return  # the text moved on; a newer analysis is queued
        self.analysis = analysis
        if analysis.names:
            loading, self._loading = self._loading, True
            try:
                self.inputs.parameters.set_names(
                    [n for n in analysis.names if n != analysis.unknown])
            finally:
                self._loading = loading
        self.strip.show_analysis(_name_bad_values(analysis, self.inputs.parameters))
        self.inputs.show_problems()
        self._refresh_title()
        self._update_actions()

    def _on_analysis_error(self, message: str) -> None:
        self.strip.show_analysis(Analysis(self.strip.text(), error=message))

    # ------------------------------------------------------------------ solve
    def solve(self) -> bool:
        """Run the methods in the background; a second Solve while one runs replaces it."""
        self.inputs.commit_edits()
        problems = self.inputs.problems()
        if problems:
            self._report(f"Cannot solve yet: {problems[0]}")
            return False
        ws = self.solve_worksheet()
        if not ws.equation.strip():
            self._report("Cannot solve yet: type an equation first")
            return False
        scan = self.scan_result if self._scan_key == self._scan_key_of(ws) else None
        key = self._key(ws)
        self.solve_started_at = time.perf_counter()
        self.statusBar().showMessage("Solving…")
        self.runner.submit("solve", lambda _p, _c: _solve_job(ws, scan),
                           on_done=lambda result: self._on_solved(result, key, scan),
                           on_error=self._on_solve_error)
        return True

    def _on_solved(self, result: tuple[Any, tuple[float, float], Any], key: str,
                   scan: Any) -> None:
        solution, (a, b), curve = result
        self.solution = solution
        self._solve_key = key
        self._plot_key = ("solve", key)
        self.lanes.show_solution(solution)
        self.plot.show_function(solution.equation.f, a, b, unknown=solution.equation.unknown,
                                scan=scan, runs=solution.runs, curve=curve)
        self._mark_stale()
        self.solve_seconds = time.perf_counter() - self.solve_started_at
        done = sum(r.converged for r in solution.runs)
        self.statusBar().showMessage(
            f"Solved: {done} of {len(solution.runs)} methods converged.", 8000)
        self._update_actions()

    def _on_solve_error(self, message: str) -> None:
        self._report(f"Cannot solve: {message}")

    def _report(self, message: str) -> None:
        """A one-line problem: status bar (and kept for tests in ``last_error``)."""
        self.last_error = message
        self.statusBar().showMessage(message, 15000)

    # ------------------------------------------------------------------ scan
    def start_scan(self) -> bool:
        if self.runner.is_busy("scan"):
            self._report("A scan is already running (Esc cancels it)")
            return False
        self.inputs.commit_edits()
        problems = self.inputs.problems()
        if problems:
            self._report(f"Cannot scan yet: {problems[0]}")
            return False
        ws = self.solve_worksheet()
        if ws.scan is None:
            self._report("Cannot scan: set 'scan from' and 'scan to' first")
            return False
        key = self._scan_key_of(ws)
        self.progress.setValue(0)
        self.progress.setFormat("scanning %p%")
        self.cancel_button.setEnabled(True)
        self.progress_updates = 0
        self.roots_summary.setText(f"Scanning [{_num(ws.scan[0])}, {_num(ws.scan[1])}]…")
        self.runner.submit("scan", lambda progress, cancel: _scan_job(ws, progress, cancel),
                           on_done=lambda result: self._on_scanned(result, ws, key),
                           on_error=self._on_scan_error, on_cancel=self._on_scan_cancelled,
                           on_progress=self._on_scan_progress, supersede=False)
        self._update_actions()
        return True

    def _on_scan_progress(self, fraction: float) -> None:
        self.progress_updates += 1
        self.progress.setValue(int(round(1000 * min(max(fraction, 0.0), 1.0))))

    def _end_scan_ui(self) -> None:
        self.progress.setValue(0)
        self.progress.setFormat(IDLE_FORMAT)
        self.cancel_button.setEnabled(False)

    def _on_scanned(self, result: tuple[Any, Any, Any], ws: Worksheet, key: str) -> None:
        scan, equation, curve = result
        self._end_scan_ui()
        self.scan_result, self.scan_equation, self._scan_key = scan, equation, key
        self._plot_key = ("scan", key)
        self.plot.set_stale(False)
        self.roots_model.set_rows(scan.roots)
        self.roots_view.setEnabled(True)
        self.polish_button.setEnabled(True)
        self._size_roots_columns()
        self.roots_summary.setText(scan_summary(scan, equation.unknown))
        # Only a solution of this very worksheet may draw its path over the new curve.
        current = self.solution is not None and self._solve_key == self._key(ws)
        runs = self.solution.runs if current else ()
        self.plot.show_function(equation.f, scan.a, scan.b, unknown=equation.unknown, scan=scan,
                                runs=runs, curve=curve)
        if self.roots_model.rowCount():
            self.roots_view.selectRow(0)
        self.statusBar().showMessage(
            f"Scan done: {scan_summary(scan, equation.unknown).splitlines()[0]}", 8000)
        self._update_actions()

    def _on_scan_error(self, message: str) -> None:
        self._end_scan_ui()
        self.roots_summary.setText(f"Scan failed: {message}")
        self._report(f"Scan failed: {message}")

    def _on_scan_cancelled(self) -> None:
        self._end_scan_ui()
        kept = "the previous results are kept" if self.scan_result is not None else \
            "no roots listed"
        self.roots_summary.setText(f"Scan cancelled; {kept}.")
        self.statusBar().showMessage("Scan cancelled.", 8000)

    def cancel_scan(self) -> None:
        if self.runner.is_busy("scan"):
            self.runner.cancel("scan")
            self.progress.setFormat("cancelling…")
            self.cancel_button.setEnabled(False)

    def _on_roots_digits(self, digits: int) -> None:
        self.roots_delegate.digits = digits
        self.roots_view.viewport().update()

    def _size_roots_columns(self) -> None:
        """x and residual share what the multiplicity leaves of the list's width; the
        confirmation columns keep their text's width beyond it."""
        view = self.roots_view
        view.resizeColumnToContents(2)
        for c in (3, 4):
            view.resizeColumnToContents(c)
        room = max(view.viewport().width() - view.columnWidth(2), 80)
        view.setColumnWidth(0, room * 11 // 20)
        view.setColumnWidth(1, room - room * 11 // 20)

    def eventFilter(self, watched: Any, event: Any) -> bool:  # noqa: N802 (Qt name)
        if watched is self.roots_view.viewport() and event.type() == QEvent.Type.Resize:
            self._size_roots_columns()
        return super().eventFilter(watched, event)

    # ------------------------------------------------------------------ polish
    def polish_selected(self) -> bool:
        rows = self.roots_view.selectionModel().selectedRows()
        if not rows:
            self._report("Select a root in the list first")
            return False
        return self.polish_row(rows[0].row())

    def polish_row(self, row: int) -> bool:
        if not 0 <= row < self.roots_model.rowCount():
            return False
        x = self.roots_model.root(row).x
        ws = self.solve_worksheet()
        self.statusBar().showMessage(f"Polishing the root near {_num(x)}…")
        self.solve_started_at = time.perf_counter()
        scan = self.scan_result

        def done(result: tuple[Any, tuple[float, float], Any]) -> None:
            solution = result[0]
            s = solution.worksheet.settings
            # Seed the start values from the root so a later Solve repeats the polish.
            self.inputs.set_field("x0", s.x0)
            self.inputs.set_field("x1", s.x1)
            if s.bracket is not None:
                self.inputs.set_field("a", s.bracket[0])
                self.inputs.set_field("b", s.bracket[1])
            self._on_solved(result, self._key(self.solve_worksheet()), scan)

        self.runner.submit("solve", lambda _p, _c: _polish_job(ws, x, scan),
                           on_done=done, on_error=self._on_solve_error)
        return True

    # ------------------------------------------------------------------ design value
    def take_design_value(self) -> bool:
        """Record the chosen root (roots list first, else the converged root) and why."""
        rows = self.roots_view.selectionModel().selectedRows()
        if rows and self.scan_result is not None and self.roots_view.isEnabled():
            i = rows[0].row()
            root = self.roots_model.root(i)
            scan = self.scan_result
            x = root.x
            reason = (f"root {i + 1} of {len(scan.roots)} found by the scan of "
                      f"[{_num(scan.a)}, {_num(scan.b)}] ({getattr(root, 'confirmed', '')})")
        elif self.solution is not None and self.solution.converged_runs and \
                self._solve_key == self._key(self.solve_worksheet()):
            run = self.solution.converged_runs[0]
            x = run.root
            reason = f"converged root of {figures.method_label(run.method)}; " + \
                _agreement_words(self.solution)
        else:
            self._report("Nothing to take: select a root of the scan, or solve first")
            return False
        self._doc = self._doc.with_changes(selection=Selection(float(x), reason))
        self._touched = True
        self._show_design_value()
        self._refresh_title()
        self.statusBar().showMessage(f"Design value set to {_num(x)}", 8000)
        return True

    def _show_design_value(self) -> None:
        sel = self._doc.selection
        if sel is None:
            self.design_label.setText("Design value: none chosen")
            self.design_label.setToolTip("")
        else:
            self.design_label.setText(f"Design value: {format_number(sel.root, 12)}")
            self.design_label.setToolTip(f"{sel.root!r}\n{sel.reason}")

    # ------------------------------------------------------------------ plot picks
    def _pick(self, key: str, x: float) -> None:
        self.inputs.set_field(key, x)
        self.statusBar().showMessage(f"{key} set to {_num(x)} from the plot", 5000)

    def _pick_bracket(self, a: float, b: float) -> None:
        self.inputs.set_field("a", a)
        self.inputs.set_field("b", b)
        self.statusBar().showMessage(f"bracket set to [{_num(a)}, {_num(b)}] from the plot", 5000)

    def _step_digits(self, step: int) -> None:
        self.lanes.digits.setValue(self.lanes.digits.value() + step)

    # ------------------------------------------------------------------ files
    def maybe_save(self) -> bool:
        """Ask about unsaved changes; True when it is fine to drop the current document."""
        if not self.is_modified():
            return True
        answer = QMessageBox.question(
            self, "Unsaved changes",
            "The worksheet has changes that are not saved. Save them first?",
            QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard
            | QMessageBox.StandardButton.Cancel, QMessageBox.StandardButton.Save)
        if answer == QMessageBox.StandardButton.Save:
            return self.save()
        return answer == QMessageBox.StandardButton.Discard

    def new_document(self) -> None:
        if self.maybe_save():
            self.load_worksheet(BLANK, None)

    def open_file(self) -> bool:
        if not self.maybe_save():
            return False
        start = str(self.path.parent) if self.path is not None else str(Path.home())
        name, _ = QFileDialog.getOpenFileName(self, "Open worksheet", start, FILE_FILTER)
        return self.open_path(name, ask=False) if name else False

    def open_path(self, path: str | Path, *, ask: bool = True, as_copy: bool = False) -> bool:
        """Open a worksheet file; on any problem say so and keep the open document."""
        if ask and not self.maybe_save():
            return False
        path = Path(path)
        try:
            ws = worksheet.load(path)
        except WorksheetError as exc:  # load turns every failure into one line naming the field
            self.last_error = str(exc).splitlines()[0] if str(exc) else "cannot be read"
            QMessageBox.warning(self, "Cannot open worksheet",
                                f"{path.name} was not opened:\n{self.last_error}\n\n"
                                "The worksheet on screen is unchanged.")
            return False
        self.load_worksheet(ws, None if as_copy else path)
        if not as_copy:
            self._add_recent(path)
        self.statusBar().showMessage(f"Opened {path.name}", 5000)
        return True

    def load_sample(self, name: str = DEFAULT_SAMPLE) -> bool:
        """Open a bundled sample as an untitled copy (Save asks where, never over the sample)."""
        return self.open_path(samples_dir() / name, ask=False, as_copy=True)

    def save(self) -> bool:
        if self.path is None:
            return self.save_as()
        return self._write(self.path)

    def save_as(self) -> bool:
        start = str(self.path) if self.path is not None else str(
            Path.home() / ((self._doc.title or "worksheet")[:40].replace("/", "-") + ".json"))
        name, _ = QFileDialog.getSaveFileName(self, "Save worksheet", start, FILE_FILTER)
        if not name:
            return False
        path = Path(name)
        if not path.suffix:
            path = path.with_suffix(".json")
        return self._write(path)

    def _write(self, path: Path) -> bool:
        ws = self.worksheet()
        problems = self.inputs.problems()
        try:
            worksheet.save(ws, path)
        except (OSError, ValueError) as exc:
            why = write_problem(path, exc)
            self.last_error = why
            # A field past the worksheet's limits is refused before writing (it could not
            # be opened again); anything else is about the folder.
            fix = ("correct that field and save again" if isinstance(exc, WorksheetError)
                   else "try another folder")
            QMessageBox.warning(self, "Cannot save worksheet",
                                f"{path} was not written:\n{why}\n\nNothing on screen was lost; "
                                f"{fix}.")
            return False
        self.path = path
        self._doc = ws
        self._saved_text = _as_saved(ws)
        self._touched = False
        self.recovery.clear()
        self._add_recent(path)
        self._refresh_title()
        note = f" (not saved, still wrong: {problems[0]})" if problems else ""
        self.statusBar().showMessage(f"Saved {path.name}{note}", 8000)
        return True

    def _add_recent(self, path: Path) -> None:
        recent = [p for p in self.recent_files() if p != str(path)]
        recent.insert(0, str(path))
        self.settings.setValue("recent", recent[:MAX_RECENT])
        self._fill_recent()

    def recent_files(self) -> list[str]:
        value = self.settings.value("recent", [])
        if isinstance(value, str):
            value = [value]
        return [str(v) for v in (value or [])]

    def _fill_recent(self) -> None:
        self.recent_menu.clear()
        recent = self.recent_files()
        for i, p in enumerate(recent):
            action = self.recent_menu.addAction(f"&{i + 1} {Path(p).name}")
            action.setToolTip(p)
            action.triggered.connect(lambda _c=False, p=p: self.open_path(p))
        self.recent_menu.setEnabled(bool(recent))

    def _fill_samples(self) -> None:
        self.samples_menu.clear()
        try:
            files = sorted(samples_dir().glob("*.json"))
        except OSError:
            files = []
        for p in files:
            action = self.samples_menu.addAction(p.stem.replace("-", " "))
            action.triggered.connect(lambda _c=False, p=p: self._open_sample(p))
        self.samples_menu.setEnabled(bool(files))

    def _open_sample(self, path: Path) -> None:
        if self.maybe_save():
            self.open_path(path, ask=False, as_copy=True)

    def edit_calc_details(self) -> None:
        dialog = CalcDialog(self.worksheet(), self)
        if dialog.exec():
            self._doc = dialog.apply(self._doc)
            self._touched = True
            self._refresh_title()

    # ------------------------------------------------------------------ exports
    def _ask_output(self, title: str, suggestion: str, file_filter: str) -> Path | None:
        """A save dialog plus our own overwrite question (the same on every platform)."""
        folder = self.path.parent if self.path is not None else Path.home()
        name, _ = QFileDialog.getSaveFileName(
            self, title, str(folder / suggestion), file_filter,
            options=QFileDialog.Option.DontConfirmOverwrite)
        if not name:
            return None
        path = Path(name)
        if path.exists():
            answer = QMessageBox.question(
                self, "Replace file?", f"{path.name} already exists in {path.parent}. "
                "Replace it?", QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No,
                QMessageBox.StandardButton.No)
            if answer != QMessageBox.StandardButton.Yes:
                return None
        return path

    def _stem(self) -> str:
        return self.path.stem if self.path is not None else "worksheet"

    def export_runs_csv(self) -> bool:
        if self.solution is None:
            self._report("Nothing to export yet: press Solve first")
            return False
        path = self._ask_output("Export iteration log", f"{self._stem()}-iterations.csv",
                                CSV_FILTER)
        if path is None:
            return False
        from app.documents import export

        try:
            export.runs_csv(self.solution.runs, path, meta=export.solution_meta(self.solution))
        except OSError as exc:
            QMessageBox.warning(self, "Cannot export",
                                f"{path} was not written:\n{write_problem(path, exc)}")
            return False
        self.statusBar().showMessage(f"Iteration log written to {path}", 8000)
        return True

    def export_roots_csv(self) -> bool:
        if self.scan_result is None:
            self._report("Nothing to export yet: run Scan range first")
            return False
        path = self._ask_output("Export roots", f"{self._stem()}-roots.csv", CSV_FILTER)
        if path is None:
            return False
        from app.documents import export

        eq = self.scan_equation
        meta = export.metadata(equation=eq.text, unknown=eq.unknown, parameters=eq.parameters)
        try:
            export.roots_csv(self.scan_result, path, meta=meta)
        except OSError as exc:
            QMessageBox.warning(self, "Cannot export",
                                f"{path} was not written:\n{write_problem(path, exc)}")
            return False
        self.statusBar().showMessage(f"Roots written to {path}", 8000)
        return True

    def export_report(self) -> bool:
        """Write the PDF calculation sheet in the background (app.documents.report)."""
        try:
            from app.documents import report
        except ImportError:
            self._report("The calculation sheet is not available in this installation")
            return False
        if self.inputs.problems():
            self._report(f"Cannot write the sheet yet: {self.inputs.problems()[0]}")
            return False
        if self.runner.is_busy("report"):
            self._report("A calculation sheet is already being written")
            return False
        path = self._ask_output("Export calculation sheet", f"{self._stem()}.pdf", PDF_FILTER)
        if path is None:
            return False
        ws = self.solve_worksheet()
        # The sheet hashes the worksheet file it names: only name it when the file on
        # disk is exactly what is on screen.
        origin = str(self.path) if self.path is not None and not self.is_modified() else None
        current = self.solution if self._solve_key == self._key(ws) else None
        scan = self.scan_result if self._scan_key == self._scan_key_of(ws) else None
        self.statusBar().showMessage("Writing the calculation sheet…")
        self.report_result: Any = None

        def work(progress: Any, cancel: Any) -> Any:
            from solvers import pipeline

            # The sheet is handed results, never solves: what is on screen, else computed
            # here, off the UI thread, through the same pipeline.
            solution, result = current, scan
            if solution is None:
                solution = pipeline.solve(ws)
            if result is None and ws.scan is not None:
                result = pipeline.scan_worksheet(ws, solution.equation, cancel=cancel,
                                                 progress=lambda p: progress(0.6 * p))
            return report.write_report(ws, path, solution=solution, scan=result,
                                       worksheet_path=origin, overwrite=True,
                                       progress=lambda p: progress(0.6 + 0.4 * p))

        def done(result: Any) -> None:
            self.report_result = result
            self.statusBar().showMessage(
                f"Calculation sheet written to {getattr(result, 'pdf_path', path)}", 10000)

        def failed(message: str) -> None:
            self.last_error = message
            QMessageBox.warning(self, "Cannot write the calculation sheet",
                                f"{path.name} was not written:\n{message}")

        self.runner.submit("report", work, on_done=done, on_error=failed, supersede=False,
                           on_progress=lambda v: self.statusBar().showMessage(
                               f"Writing the calculation sheet… {int(100 * v)}%"))
        return True

    # ------------------------------------------------------------------ help
    def show_help(self) -> None:
        TextDialog("Using zerotrace", HELP_HTML, self).exec()

    def show_about(self) -> None:
        from app.documents.export import tool_version

        html = ABOUT_HTML.replace("<h2>zerotrace</h2>", f"<h2>zerotrace {tool_version()}</h2>", 1)
        TextDialog("About zerotrace", html, self).exec()

    # ------------------------------------------------------------------ recovery
    def autosave_now(self) -> bool:
        """Write the recovery copy if there are unsaved changes (removed once saved)."""
        if self.is_modified() and self.strip.text().strip():
            ok = self.recovery.write(self.worksheet(), str(self.path) if self.path else None)
            if not ok:
                self.statusBar().showMessage(self.recovery.last_error, 8000)
            return ok
        self.recovery.clear()
        return False

    def offer_recovery(self) -> bool:
        """Offer the newest worksheet an earlier session left unsaved; True if restored."""
        left = self.recovery.left_behind()
        unreadable = getattr(self.recovery, "unreadable", [])
        if unreadable:  # never dropped silently: say where the copy is kept
            path, why = unreadable[0]
            self.last_error = f"A recovery copy could not be read and was kept: {path} ({why})"
            self.statusBar().showMessage(self.last_error, 15000)
        if not left:
            return False
        item: Recovered = left[0]
        when = time.strftime("%Y-%m-%d %H:%M", time.localtime(item.saved_at))
        where = f" (from {item.origin})" if item.origin else ""
        answer = QMessageBox.question(
            self, "Recover unsaved work?",
            f"A worksheet with unsaved changes was kept from {when}{where}:\n\n"
            f"{item.worksheet.title or item.worksheet.equation[:80]}\n\nOpen it now? "
            "(No discards the recovery copy.)",
            QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No,
            QMessageBox.StandardButton.Yes)
        if answer != QMessageBox.StandardButton.Yes:
            item.discard()
            return False
        origin = Path(item.origin) if item.origin else None
        self.load_worksheet(item.worksheet, origin, modified=True)
        item.discard()
        self.autosave_now()
        self.statusBar().showMessage("Recovered unsaved work: save it to keep it.", 10000)
        return True

    # ------------------------------------------------------------------ state and closing
    def _update_actions(self) -> None:
        scanning = self.runner.is_busy("scan")
        self.scan_action.setEnabled(not scanning)
        self.inputs.scan_button.setEnabled(not scanning)
        self.cancel_action.setEnabled(scanning)
        self.export_runs_action.setEnabled(self.solution is not None)
        self.export_roots_action.setEnabled(self.scan_result is not None)
        self.export_pdf_action.setEnabled(not self.runner.is_busy("report"))
        solving = self.runner.is_busy("solve")
        self.inputs.solve_button.setText("&Solve (running…)" if solving else "&Solve")

    def closeEvent(self, event: QCloseEvent) -> None:  # noqa: N802 (Qt name)
        if not self.maybe_save():
            event.ignore()
            return
        self._autosave.stop()
        self.runner.stop()
        self.recovery.clear()
        event.accept()


# ---------------------------------------------------------------------- background jobs
# Plain functions: they run in worker threads and touch no widget.


def _solve_job(ws: Worksheet, scan: Any) -> tuple[Any, tuple[float, float], Any]:
    from solvers import pipeline

    solution = pipeline.solve(ws)
    a, b = plot_range(ws, solution)
    breaks = list(getattr(scan, "poles", []) or []) + list(
        getattr(scan, "discontinuities", []) or []) if scan is not None else []
    return solution, (a, b), figures.curve(solution.equation.f, a, b, breaks=breaks)


def _polish_job(ws: Worksheet, x: float, scan: Any) -> tuple[Any, tuple[float, float], Any]:
    from solvers import pipeline

    solution = pipeline.polish(ws, x)
    a, b = plot_range(ws, solution)
    breaks = list(getattr(scan, "poles", []) or []) if scan is not None else []
    return solution, (a, b), figures.curve(solution.equation.f, a, b, breaks=breaks)


def _scan_job(ws: Worksheet, progress: Any, cancel: Any) -> tuple[Any, Any, Any]:
    from solvers import pipeline

    equation = pipeline.equation_of(ws)
    scan = pipeline.scan_worksheet(ws, equation, progress=progress, cancel=cancel)
    breaks = list(scan.poles) + list(getattr(scan, "discontinuities", []) or [])
    return scan, equation, figures.curve(equation.f, scan.a, scan.b, breaks=breaks)


def _agreement_words(solution: Any) -> str:
    """How the converged methods compare, for the design value's reason."""
    groups = solution.agreement.groups
    if len(groups) > 1:
        return "the methods converged to different roots: " + ", ".join(
            f"{_num(x)} ({', '.join(figures.method_label(m) for m in ms)})" for x, ms in groups)
    if solution.agreement_digits is None:
        return "no other method converged to cross-check it"
    return f"methods agree to {solution.agreement_digits} significant figures"


def _as_saved(ws: Worksheet) -> str:
    """The worksheet as text for "is it modified?": parameters in name order, since the
    table lists them in the equation's order, which need not be the file's."""
    ordered = tuple(sorted(ws.parameters, key=lambda p: p.name))
    return worksheet.dumps(ws.with_changes(parameters=ordered))


def _name_bad_values(analysis: Analysis, parameters: Any) -> Analysis:
    """Say "P: 'abc' is not a finite number" instead of "no value for P" when P has a
    value typed that is not a number (the parser only knows it got none)."""
    from dataclasses import replace

    bad = [row.problem for row in parameters.rows()
           if row.name in analysis.missing and row.text.strip() and row.problem]
    if not bad or analysis.ok:
        return analysis
    return replace(analysis, error="; ".join(bad) + " (in the parameters table)",
                   position=None)


def write_problem(path: Path, exc: BaseException) -> str:
    """Why ``path`` could not be written, in words about the file the user chose.

    Files are written through a temporary file beside the target; its name in the
    system's message ('.log.csv.d7zhy582.tmp') means nothing to the user.
    """
    folder = path.parent
    if not folder.exists():
        return f"the folder {folder} does not exist"
    if not folder.is_dir():
        return f"{folder} is a file, not a folder"
    if isinstance(exc, OSError) and exc.strerror:
        return f"{exc.strerror} (in the folder {folder})"
    return str(exc)


def _num(x: float) -> str:
    return format_number(x, 8)


def _short(x: float) -> str:
    return format_number(x, 6)


def scan_summary(scan: Any, unknown: str) -> str:
    roots = len(scan.roots)
    parts = [f"{roots} root{'s' if roots != 1 else ''} of "
             f"{figures.residual_name(unknown)}({unknown}) in "
             f"[{_num(scan.a)}, {_num(scan.b)}]"]
    poles = list(scan.poles)
    if poles:
        parts.append(f"{len(poles)} pole{'s' if len(poles) != 1 else ''} at "
                     + ", ".join(_short(p) for p in poles[:4]) + ("…" if len(poles) > 4 else ""))
    jumps = list(getattr(scan, "discontinuities", []) or [])
    if jumps:
        parts.append(f"{len(jumps)} jump{'s' if len(jumps) != 1 else ''} at "
                     + ", ".join(_short(p) for p in jumps[:4]) + ("…" if len(jumps) > 4 else ""))
    gaps = list(getattr(scan, "gaps", []) or [])
    if gaps:
        parts.append(f"undefined on {len(gaps)} stretch{'es' if len(gaps) != 1 else ''}")
    text = "; ".join(parts) + "."
    warnings = list(getattr(scan, "warnings", []) or [])
    if warnings:
        text += "\n⚠ " + "\n⚠ ".join(warnings[:3])
    return text


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
    return int(app.exec())
