"""The system window: several equations in several unknowns, solved side by side.

Top to bottom: the editor (one equation or definition per line, or ``;`` between them),
the unknowns with their start values (a table filled from the names the equations leave
without a value; edit the start value and the unit it is in), the parameters (name, value,
unit), the methods and the dimension-check switch, Solve;
then one lane per method (its summary over its iteration table: k, block, every unknown,
||F||, step length, damping) beside the convergence view (||F|| and step length per
iterate, :mod:`app.documents.system_figures`). The text is read in the "system-preview"
lane and solved in the "system-solve" lane of the window's job runner
(:mod:`app.window.workers`; the work itself is :mod:`app.window.system_work`), never on the
UI thread; every word comes from :mod:`app.documents.words`.

Files: Open…, Save (Ctrl+S: to the file opened or last saved), Save as…, and Recent (the
main window's one list of recent files). Unsaved work is autosaved by the main window's
recovery mechanism (:mod:`app.window.recovery`, a companion copy of the same session) and
offered again at the next start after a crash. The significant-figures box is the main
window's control (:func:`app.window.lanes.digits_box`).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from PySide6.QtCore import Qt, QTimer
from PySide6.QtGui import QAction, QKeySequence
from PySide6.QtWidgets import (
    QCheckBox,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QMenu,
    QPlainTextEdit,
    QPushButton,
    QSplitter,
    QTabWidget,
    QToolButton,
    QVBoxLayout,
    QWidget,
)

from app.documents import words
from app.documents.system_figures import draw_system_convergence
from app.documents.worksheet import MAX_EQUATION, Parameter, StartValue, SystemSpec, Worksheet
from app.window.figure_view import FigureView
from app.window.lanes import digits_box
from app.window.models import ParametersModel, number_font
from app.window.recovery import RecoveryStore
from app.window.system_models import SystemRunModel, UnknownsModel
from app.window.system_work import Reading, read_system, solve_text
from app.window.views import CopyTableView
from app.window.workers import JobRunner

DEBOUNCE_MS = 250
AUTOSAVE_MS = 20_000  # as often as the main window autosaves
SYSTEM_METHOD_NAMES = tuple(words.SYSTEM_METHOD_TITLES)


def _noted(notes: tuple[str, ...]) -> str:
    """The notes on units under the status line's text, one line each."""
    return "".join(f"\nNote: {note}" for note in notes)


class SystemWindow(QWidget):
    """The system window (see the module docstring)."""

    def __init__(self, jobs: JobRunner | None = None, parent: QWidget | None = None, *,
                 recovery: RecoveryStore | None = None, files: Any = None) -> None:
        """``recovery``: where unsaved work is autosaved (the main window passes a companion
        of its own store); ``files``: the main window's file actions (recent files, and
        opening a worksheet of one equation there). Both optional for a window alone."""
        super().__init__(parent, Qt.WindowType.Window)
        self.setWindowTitle("zerotrace — system of equations")
        self.jobs = jobs or JobRunner(self)
        self._own_jobs = jobs is None
        self.recovery = recovery if recovery is not None else RecoveryStore()
        self.files = files
        self.path: Path | None = None  # the file opened or last saved (Save writes there)
        self.settings = Worksheet(equation="x").settings
        self.title = ""
        self.solution: Any = None
        self.reading = Reading()
        self.editor = QPlainTextEdit()
        self.editor.setObjectName("systemEditor")
        self.editor.setFont(number_font())
        self.editor.setPlaceholderText("one equation or definition per line, e.g.\n"
                                       "x^2 + y^2 = 4\nx*y = 1")
        self.status = QLabel("")
        self.status.setObjectName("systemStatus")
        self.status.setWordWrap(True)
        self.unknown_names = QLineEdit()
        self.unknown_names.setObjectName("systemUnknowns")
        self.unknown_names.setPlaceholderText("(automatic: every name without a value)")
        self.unknown_names.setToolTip("The unknowns, separated by commas, in the order of x")
        self.unknowns = UnknownsModel(self)
        self.unknowns_view = CopyTableView()
        self.unknowns_view.setObjectName("unknownsView")
        self.unknowns_view.setModel(self.unknowns)
        self.parameters = ParametersModel(self)
        self.dimension_box = QCheckBox("Check &dimensions")
        self.dimension_box.setObjectName("systemCheckDimensions")
        self.dimension_box.setChecked(True)
        self.dimension_box.setToolTip("Check that every equation is dimensionally consistent "
                                      "with the parameters' and the unknowns' units")
        self.parameters_view = CopyTableView()
        self.parameters_view.setModel(self.parameters)
        self.method_boxes = {}
        methods_row = QHBoxLayout()
        for name in SYSTEM_METHOD_NAMES:
            box = QCheckBox(words.system_method_title(name))
            box.setObjectName(f"system_{name}")
            box.setChecked(True)
            box.setToolTip(words.SYSTEM_METHOD_SUMMARIES.get(name, ""))
            self.method_boxes[name] = box
            methods_row.addWidget(box)
        self.solve_button = QPushButton("&Solve")
        self.solve_button.setObjectName("systemSolve")
        self.solve_button.clicked.connect(self.solve)
        # Ctrl+Return solves, as in the main window (it did nothing here: a habit from the
        # main window met silence)
        self.solve_button.setToolTip("Solve the system by every method chosen (Ctrl+Return)")
        solve_keys = QAction(self)
        solve_keys.setShortcuts([QKeySequence("Ctrl+Return"), QKeySequence("Ctrl+Enter")])
        solve_keys.triggered.connect(self.solve)
        self.addAction(solve_keys)
        self.cancel_button = QPushButton("&Cancel")
        self.cancel_button.setObjectName("systemCancel")
        self.cancel_button.setEnabled(False)
        self.cancel_button.clicked.connect(lambda: self.jobs.cancel("system-solve"))
        self.open_button = QPushButton("&Open…")
        self.open_button.setObjectName("systemOpen")
        self.open_button.setToolTip("Open a system worksheet (Ctrl+O)")
        self.open_button.clicked.connect(self.open_file)
        self.recent_menu = QMenu(self)
        self.recent_menu.aboutToShow.connect(self.fill_recent)
        self.recent_button = QToolButton()
        self.recent_button.setObjectName("systemRecent")
        self.recent_button.setText("&Recent")
        self.recent_button.setToolTip("Worksheets opened or saved lately (the main window's "
                                      "list)")
        self.recent_button.setPopupMode(QToolButton.ToolButtonPopupMode.InstantPopup)
        self.recent_button.setMenu(self.recent_menu)
        self.recent_button.setEnabled(files is not None)
        self.quick_save_button = QPushButton("Sa&ve")
        self.quick_save_button.setObjectName("systemQuickSave")
        self.quick_save_button.setToolTip("Save to the file opened or last saved (Ctrl+S); "
                                          "asks where the first time")
        self.quick_save_button.clicked.connect(self.save)
        self.save_button = QPushButton("Save &as…")
        self.save_button.setObjectName("systemSave")
        self.save_button.setToolTip("Save the equations, parameters, start values and methods "
                                    "as a worksheet")
        self.save_button.clicked.connect(self.save_as)
        for keys, slot in ((QKeySequence.StandardKey.Open, self.open_file),
                           (QKeySequence.StandardKey.Save, self.save),
                           (QKeySequence.StandardKey.SaveAs, self.save_as)):
            action = QAction(self)  # the window's keys, as the main window's File menu
            action.setShortcut(QKeySequence(keys))
            action.triggered.connect(slot)
            self.addAction(action)
        digits_label, self.digits = digits_box()
        self.digits.valueChanged.connect(self._on_digits)
        methods_row.addWidget(self.dimension_box)
        methods_row.addStretch(1)
        methods_row.addWidget(digits_label)
        methods_row.addWidget(self.digits)
        methods_row.addWidget(self.open_button)
        methods_row.addWidget(self.recent_button)
        methods_row.addWidget(self.quick_save_button)
        methods_row.addWidget(self.save_button)
        methods_row.addWidget(self.solve_button)
        methods_row.addWidget(self.cancel_button)
        self.lanes = QTabWidget()
        self.lanes.setObjectName("systemLanes")
        self.lane_models: dict[str, SystemRunModel] = {}
        self.lane_summaries: dict[str, QLabel] = {}
        self.convergence = FigureView(name="system_convergence")

        inputs = QWidget()
        grid = QVBoxLayout(inputs)
        grid.addWidget(QLabel("Equations and definitions"))
        grid.addWidget(self.editor, 1)
        grid.addWidget(self.status)
        tables = QHBoxLayout()
        left, right = QVBoxLayout(), QVBoxLayout()
        left.addWidget(QLabel("Unknowns and start values"))
        left.addWidget(self.unknown_names)
        left.addWidget(self.unknowns_view)
        right.addWidget(QLabel("Parameters"))
        right.addWidget(self.parameters_view)
        tables.addLayout(left)
        tables.addLayout(right)
        grid.addLayout(tables, 1)
        grid.addLayout(methods_row)
        self.results_note = QLabel("")
        self.results_note.setObjectName("systemStale")
        self.results_note.setStyleSheet("color: #8A2B00;")
        self.results_note.hide()
        results = QSplitter(Qt.Orientation.Horizontal)
        results.addWidget(self.lanes)
        results.addWidget(self.convergence)
        results.setStretchFactor(0, 3)  # the lanes' tables are wider than the plot needs
        results.setStretchFactor(1, 2)
        results.setSizes([780, 500])  # a lane of four unknowns fits without scrolling
        results_box = QWidget()
        results_layout = QVBoxLayout(results_box)
        results_layout.setContentsMargins(0, 0, 0, 0)
        results_layout.addWidget(self.results_note)
        results_layout.addWidget(results, 1)
        splitter = QSplitter(Qt.Orientation.Vertical)
        splitter.addWidget(inputs)
        splitter.addWidget(results_box)
        splitter.setSizes([420, 340])  # the tables of unknowns and parameters show ~6 rows
        layout = QVBoxLayout(self)
        layout.addWidget(splitter)
        self.caution = QLabel(words.CAUTION_LINE)  # the one copy, as on the main window
        self.caution.setObjectName("systemCaution")
        self.caution.setWordWrap(True)
        layout.addWidget(self.caution)
        self.resize(1000, 760)

        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(DEBOUNCE_MS)
        self._timer.timeout.connect(self._read)
        self.editor.textChanged.connect(self._text_changed)
        self._saved = self.worksheet()  # what Save wrote or the worksheet opened
        self.parameters.edited.connect(self._timer.start)
        self.unknown_names.textChanged.connect(lambda _t: self._timer.start())
        # the reading is of the units too (a unit that does not fit, the notes on units):
        # an unknown's unit or the dimension-check switch changed reads the text again
        self.unknowns.dataChanged.connect(self._unit_edited)
        self.dimension_box.toggled.connect(lambda _on: self._timer.start())
        self._solved: Worksheet | None = None  # the inputs of the results shown
        self.unknowns.dataChanged.connect(lambda *_a: self._check_stale())
        self.parameters.dataChanged.connect(lambda *_a: self._check_stale())
        self.unknown_names.textChanged.connect(lambda _t: self._check_stale())
        for box in (*self.method_boxes.values(), self.dimension_box):
            box.toggled.connect(lambda _on: self._check_stale())
        self._autosave = QTimer(self)
        self._autosave.setInterval(AUTOSAVE_MS)
        self._autosave.timeout.connect(self.autosave_now)
        self._autosave.start()

    def clear_results(self) -> None:
        """No lanes and an empty convergence view (another worksheet is shown)."""
        self.solution = None
        self._solved = None
        self.lanes.clear()
        self.lane_models.clear()
        self.lane_summaries.clear()
        draw_system_convergence(self.convergence.new_axes(), [])
        self.convergence.redraw()
        self._check_stale()

    def _check_stale(self) -> None:
        """Say so over the results when the inputs on screen are not those they came from
        (a table of an earlier text must not pass for this one's)."""
        stale = self._solved is not None and self.worksheet() != self._solved
        self.results_note.setText("⚠ The results below are for earlier inputs: press Solve "
                                  "to update them." if stale else "")
        self.results_note.setVisible(stale)
        for i in range(self.lanes.count()):
            self.lanes.widget(i).setEnabled(not stale)

    def _on_digits(self, digits: int) -> None:
        for model in self.lane_models.values():
            model.set_digits(digits)
        if self.solution is not None:
            self._say(self._roots_text(self.solution))

    # -- reading the text
    def _text_changed(self) -> None:
        text = self.editor.toPlainText()
        if len(text) > MAX_EQUATION:  # the one limit of an equation text
            self.editor.setPlainText(text[:MAX_EQUATION])
            return
        self._timer.start()
        self._check_stale()

    def _values(self) -> dict[str, float]:
        return {n: v for n, v in self.parameters.remembered_values().items() if v is not None}

    def given_unknowns(self) -> tuple[str, ...]:
        return tuple(n.strip() for n in self.unknown_names.text().split(",") if n.strip())

    def _unit_edited(self, top_left: Any, bottom_right: Any, *_roles: Any) -> None:
        if top_left.column() <= UnknownsModel.UNIT <= bottom_right.column():
            self._timer.start()

    def _read(self) -> None:
        text = self.editor.toPlainText()
        values = self._values()
        given = self.given_unknowns()
        units, check = self.unknowns.units(), self.dimension_box.isChecked()
        if not text.strip():
            self._say("type the equations, one per line")
            return
        self.jobs.submit("system-preview",
                         lambda _p, _c: read_system(text, values, given, units, check),
                         on_done=self._show_reading)

    def _show_reading(self, reading: Reading) -> None:
        self.reading = reading
        self.unknowns.set_names(reading.unknowns)
        # the parameters keep the order they have on screen (a worksheet's own order, or the
        # user's): reordering them to the reading's order would make a file just opened
        # look changed, and ask to be saved
        used = set(reading.parameters)
        shown = [n for n in self.parameters.names() if n in used]
        self.parameters.set_names(shown + [n for n in reading.parameters if n not in shown])
        if reading.error:
            self._say(reading.error, problem=True)
        else:
            self._say(f"{words.counted(len(reading.unknowns), 'equation')} in "
                      f"{', '.join(reading.unknowns)}; {reading.blocks}"
                      + _noted(reading.notes))

    def _say(self, text: str, problem: bool = False) -> None:
        """The one status line; a problem in the warning colour the main window uses."""
        self.status.setText(text)
        self.status.setStyleSheet("color: #8A2B00;" if problem else "")

    # -- solving
    def solve(self) -> None:
        """Solve with the methods ticked, in the "system-solve" lane."""
        self._timer.stop()
        text = self.editor.toPlainText()
        starts = self.unknowns.starts()
        bad = self.unknowns.problems()
        methods = [m for m, box in self.method_boxes.items() if box.isChecked()]
        if not starts:
            self._say("no unknowns yet: type the equations first", problem=True)
            return
        if bad:
            self._say(bad[0], problem=True)
            return
        if not methods:
            self._say("tick at least one method", problem=True)
            return
        unknowns = self.unknowns.names()
        values = self._values()
        settings = self.settings
        units, check = self.unknowns.units(), self.dimension_box.isChecked()
        asked = self.worksheet()
        self._say("solving…")
        self.cancel_button.setEnabled(True)

        def ended(message: str | None = None) -> None:
            self.cancel_button.setEnabled(False)
            if message is not None:
                self._say(message)

        def done(solution: Any) -> None:
            ended()
            self.show_solution(solution)
            self._solved = asked
            self._check_stale()

        self.jobs.submit("system-solve",
                         lambda p, c: solve_text(text, unknowns, values, starts,  # type: ignore[arg-type]
                                                 methods, settings, p, c, units, check),
                         on_done=done, on_error=ended,
                         on_cancel=lambda: ended("cancelled: nothing was solved"),
                         on_progress=lambda f: self._say(
                             f"solving… {round(100 * f)} %"))

    def show_solution(self, solution: Any) -> None:
        self.solution = solution
        self.lanes.clear()
        self.lane_models.clear()
        self.lane_summaries.clear()
        for run in solution.runs:
            page = QWidget()
            box = QVBoxLayout(page)
            summary = QLabel(words.system_run_message(run))
            summary.setWordWrap(True)
            model = SystemRunModel(self)
            model.set_digits(self.digits.value())
            model.set_run(run, solution.system.unknown_units)
            view = CopyTableView()
            view.setModel(model)
            view.resizeColumnsToContents()  # every figure of the iterates visible
            box.addWidget(summary)
            box.addWidget(view)
            self.lane_models[run.method] = model
            self.lane_summaries[run.method] = summary
            verdict = "" if run.converged else " (did not converge)"
            self.lanes.addTab(page, words.system_method_title(run.method) + verdict)
        ax = self.convergence.new_axes()
        draw_system_convergence(ax, list(solution.runs))
        self.convergence.redraw()
        self._say(self._roots_text(solution))

    def _roots_text(self, solution: Any) -> str:
        digits = self.digits.value()
        system = solution.system
        units = system.unknown_units
        text = "; ".join(
            f"{words.system_method_title(r.method)}: "
            + ", ".join(f"{n} = {words.number(v, digits)}"
                        + (f" {units[n]}" if units.get(n) else "")
                        for n, v in r.root.items())
            + ("" if r.converged
               else f" — did not converge ({words.reason_short(r.reason)})")
            for r in solution.runs)
        at_root = solution.definitions_at_root  # (computed in the solve job: read here)
        if at_root is not None:
            # what the definitions come to is part of the answer (a total flow, an area)
            run, values = at_root
            text += (f"\nAt {words.system_method_title(run.method)}'s root: "
                     + words.definitions_line(values, digits,
                                              system.definition_units(derived=True)))
        # what the units mean for the answer (degC taken in kelvin, a constant added to
        # such a temperature, the check off), as the terminal and the sheet say it, and as
        # the reading said it while the text was typed
        return text + _noted(words.unit_notes(system.remarks))

    # -- worksheets
    def worksheet(self) -> Worksheet:
        """The worksheet on screen (blank or wrong start values become 0 with the problem
        named by :meth:`solve`; the file keeps what can be opened again)."""
        starts = self.unknowns.starts()
        units = self.unknowns.units()
        spec = SystemSpec(tuple(StartValue(n, v if v is not None else 0.0, units.get(n))
                                for n, v in starts.items()),
                          tuple(m for m, b in self.method_boxes.items() if b.isChecked())
                          or SYSTEM_METHOD_NAMES)
        params = tuple(Parameter(r.name, r.value if r.value is not None else 0.0, r.note,
                                 r.unit.strip())
                       for r in self.parameters.rows())
        title = self.title
        return Worksheet(equation=self.editor.toPlainText(), parameters=params,
                         settings=self.settings, title=title,
                         dimension_check=self.dimension_box.isChecked(),
                         system=spec if spec.unknowns else None)

    def save(self) -> bool:
        """Save to the file opened or last saved; ask where when there is none."""
        return self.write(self.path) if self.path is not None else self.save_as()

    def save_as(self) -> bool:
        """Ask for a file and write the worksheet there (atomically); say why not if it fails."""
        from PySide6.QtWidgets import QFileDialog

        start = str(self.path) if self.path is not None else "system.json"
        name, _ = QFileDialog.getSaveFileName(self, "Save system worksheet", start,
                                              "zerotrace worksheets (*.json);;All files (*)")
        if not name:
            return False
        path = Path(name)
        return self.write(path if path.suffix else path.with_suffix(".json"))

    def write(self, path: Path) -> bool:
        """Write the worksheet to ``path``; on failure one line in the status and a warning
        (nothing on screen is lost)."""
        from PySide6.QtWidgets import QMessageBox

        from app.documents.worksheet import save
        from app.window.file_actions import write_problem

        ws = self.worksheet()
        if ws.system is None or not ws.equation.strip():
            self._say("nothing to save yet: type the equations first", problem=True)
            return False
        try:
            save(ws, path)
        except (OSError, ValueError) as exc:
            why = write_problem(path, exc)
            self._say(f"not saved: {why}", problem=True)
            QMessageBox.warning(self, "Cannot save worksheet",
                                f"{path} was not written:\n{why}\n\nNothing on screen was lost.")
            return False
        self._say(f"saved {path}")
        self._saved = ws
        self.path = path
        self.recovery.clear()
        if self.files is not None:
            self.files.add_recent(path)
        return True

    def open_file(self) -> bool:
        """Ask for a worksheet and open it (a system here; one equation in the main window)."""
        from PySide6.QtWidgets import QFileDialog

        start = str(self.path.parent) if self.path is not None else str(Path.home())
        name, _ = QFileDialog.getOpenFileName(self, "Open system worksheet", start,
                                              "zerotrace worksheets (*.json);;All files (*)")
        return self.open_path(name) if name else False

    def open_path(self, path: str | Path) -> bool:
        """Open a worksheet file; a file that cannot be read is said in one line and the
        system on screen stays as it was."""
        from PySide6.QtWidgets import QMessageBox

        from app.documents.worksheet import WorksheetError, load

        path = Path(path)
        try:
            ws = load(path)
        except WorksheetError as exc:  # load says what is wrong in one line
            why = str(exc).splitlines()[0] if str(exc) else "cannot be read"
            self._say(f"{path.name} was not opened: {why}", problem=True)
            QMessageBox.warning(self, "Cannot open worksheet",
                                f"{path.name} was not opened:\n{why}\n\n"
                                "The system on screen is unchanged.")
            return False
        if ws.system is None:  # one equation: the main window's job (it asks about its own)
            if self.files is not None:
                return bool(self.files.open_path(path))
            self._say(f"{path.name} holds one equation, not a system: open it "
                                "in the main window")
            return False
        if not self.maybe_save():
            return False
        self.load_worksheet(ws, path)
        if self.files is not None:
            self.files.add_recent(path)
        self._say(f"opened {path.name}")
        return True

    def fill_recent(self) -> None:
        """The main window's recent files, each opened from here."""
        self.recent_menu.clear()
        recent = self.files.recent_files() if self.files is not None else []
        for i, p in enumerate(recent):
            action = self.recent_menu.addAction(f"&{i + 1} {Path(p).name}")
            action.setToolTip(p)
            action.triggered.connect(lambda _c=False, p=p: self.open_path(p))
        if not recent:
            self.recent_menu.addAction("(no recent files)").setEnabled(False)

    def autosave_now(self) -> bool:
        """Write the recovery copy while there are unsaved changes (removed once saved)."""
        if self.modified and self.editor.toPlainText().strip():
            ok = self.recovery.write(self.worksheet(), str(self.path) if self.path else None)
            if not ok:
                self._say(self.recovery.last_error, problem=True)
            return ok
        self.recovery.clear()
        return False

    def maybe_save(self) -> bool:
        """Ask about unsaved changes (Save, Discard, Cancel); True when they may be dropped."""
        if not (self.modified and self.editor.toPlainText().strip()):
            return True
        from PySide6.QtWidgets import QMessageBox

        buttons = (QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard
                   | QMessageBox.StandardButton.Cancel)
        answer = QMessageBox.question(self, "Unsaved system",
                                      "The system of equations has changes that are not "
                                      "saved. Save them?", buttons)
        if answer == QMessageBox.StandardButton.Save:
            return self.save()
        return answer == QMessageBox.StandardButton.Discard

    @property
    def modified(self) -> bool:
        """Whether the system on screen differs from the one opened or last saved."""
        return self.worksheet() != self._saved

    def load_worksheet(self, ws: Worksheet, path: Path | None = None, *,
                       modified: bool = False) -> None:
        """Show a worksheet that holds a system (its text, parameters, start values).
        ``path``: where it came from (Save writes there); ``modified``: it is not saved
        there yet (recovered work)."""
        self.path = path
        self.clear_results()
        self.settings = ws.settings
        self.title = ws.title
        self.dimension_box.setChecked(ws.dimension_check)
        self.parameters.load(ws.parameters)
        # a worksheet of one equation brings no unknowns: the last system's must not stay
        unknowns = ws.system.unknowns if ws.system is not None else ()
        self.unknowns.load(unknowns)
        self.unknown_names.setText(", ".join(u.name for u in unknowns))
        if ws.system is not None:
            for name, box in self.method_boxes.items():
                box.setChecked(name in ws.system.methods)
        self.editor.setPlainText(ws.equation)
        if ws.title:
            self.setWindowTitle(f"zerotrace — {ws.title}")
        self._saved = Worksheet(equation="") if modified else self.worksheet()

    def showEvent(self, event: Any) -> None:  # noqa: N802 (Qt name)
        self._autosave.start()  # stopped by a close; the window may be shown again
        super().showEvent(event)

    def closeEvent(self, event: Any) -> None:  # noqa: N802 (Qt name)
        if not self.maybe_save():
            event.ignore()
            return
        self._autosave.stop()
        self.recovery.clear()  # saved or discarded on purpose: nothing to recover
        if self._own_jobs:
            self.jobs.stop()
        super().closeEvent(event)
