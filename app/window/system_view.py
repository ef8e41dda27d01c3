"""The system window: several equations in several unknowns, solved side by side.

Top to bottom: the editor (one equation or definition per line, or ``;`` between them),
the unknowns with their start values (a table filled from the names the equations leave
without a value; edit the start column), the parameters (name, value), the methods, Solve;
then one lane per method (its summary over its iteration table: k, block, every unknown,
||F||, step length, damping) beside the convergence view (||F|| and step length per
iterate, :mod:`app.documents.system_figures`). The text is read in the "system-preview" lane and
solved in the "system-solve" lane of the window's job runner (:mod:`app.window.workers`),
never on the UI thread; every word comes from :mod:`app.documents.words`.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt, QTimer
from PySide6.QtWidgets import (
    QCheckBox,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QPlainTextEdit,
    QPushButton,
    QSplitter,
    QTabWidget,
    QVBoxLayout,
    QWidget,
)

from app.documents import words
from app.documents.system_figures import draw_system_convergence
from app.documents.worksheet import MAX_EQUATION, Parameter, StartValue, SystemSpec, Worksheet
from app.window.figure_view import FigureView
from app.window.models import ParametersModel, format_number, number_font, parse_number
from app.window.views import CopyTableView
from app.window.workers import Cancelled, JobRunner

Index = QModelIndex | QPersistentModelIndex
DEBOUNCE_MS = 250
SYSTEM_METHOD_NAMES = tuple(words.SYSTEM_METHOD_TITLES)


@dataclass
class StartRow:
    name: str
    text: str = "1.0"

    @property
    def value(self) -> float | None:
        return parse_number(self.text)


class UnknownsModel(QAbstractTableModel):
    """The unknowns in the order of x, with an editable start value each (remembered by
    name while the equations are edited)."""

    COLUMNS = ("unknown", "start value")

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self._rows: list[StartRow] = []
        self._memory: dict[str, StartRow] = {}
        self._font = number_font()

    def set_names(self, names: Sequence[str]) -> None:
        names = list(dict.fromkeys(names))
        if names == [r.name for r in self._rows]:
            return
        self.beginResetModel()
        self._rows = [self._memory.setdefault(n, StartRow(n)) for n in names]
        self.endResetModel()

    def load(self, starts: Sequence[StartValue]) -> None:
        self.beginResetModel()
        self._memory = {s.name: StartRow(s.name, repr(float(s.x0))) for s in starts}
        self._rows = list(self._memory.values())
        self.endResetModel()

    def starts(self) -> dict[str, float | None]:
        return {r.name: r.value for r in self._rows}

    def names(self) -> list[str]:
        return [r.name for r in self._rows]

    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008 (Qt signature)
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else 2

    def headerData(self, section: int, orientation: Qt.Orientation,
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if role == Qt.ItemDataRole.DisplayRole and orientation == Qt.Orientation.Horizontal:
            return self.COLUMNS[section]
        return None

    def flags(self, index: Index) -> Qt.ItemFlag:
        base = Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable
        return base | Qt.ItemFlag.ItemIsEditable if index.column() == 1 else base

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid():
            return None
        row = self._rows[index.row()]
        if role in (Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.EditRole):
            return (row.name, row.text)[index.column()]
        if role == Qt.ItemDataRole.FontRole:
            return self._font
        if role == Qt.ItemDataRole.ToolTipRole and index.column() == 1 and row.value is None:
            return f"{row.name}: {row.text.strip()!r} is not a finite number"
        return None

    def setData(self, index: Index, value: Any, role: int = Qt.ItemDataRole.EditRole) -> bool:
        if not index.isValid() or index.column() != 1 or role != Qt.ItemDataRole.EditRole:
            return False
        self._rows[index.row()].text = "" if value is None else str(value)
        self.dataChanged.emit(index, index)
        return True


class SystemRunModel(QAbstractTableModel):
    """Every iterate of one system run: k, block, each unknown, ||F||, step length, damping."""

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self.run: Any = None
        self._unknowns: tuple[str, ...] = ()
        self._font = number_font()

    def set_run(self, run: Any) -> None:
        self.beginResetModel()
        self.run = run
        self._unknowns = tuple(run.unknowns) if run is not None else ()
        self.endResetModel()

    def headers(self) -> list[str]:
        return ["k", "block", *self._unknowns, "||F||", "step length", "damping"]

    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() or self.run is None else len(self.run.steps)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self.headers())

    def headerData(self, section: int, orientation: Qt.Orientation,
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if role == Qt.ItemDataRole.DisplayRole and orientation == Qt.Orientation.Horizontal:
            return self.headers()[section]
        return None

    def raw(self, row: int, column: int) -> Any:
        s = self.run.steps[row]
        values = [s.k, s.block + 1, *s.x.values(), s.residual_norm, s.step_norm, s.damping]
        return values[column]

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid() or self.run is None:
            return None
        value = self.raw(index.row(), index.column())
        if role == Qt.ItemDataRole.DisplayRole:
            return str(value) if isinstance(value, int) else format_number(value)
        if role == Qt.ItemDataRole.ToolTipRole and isinstance(value, float):
            return repr(value)
        if role == Qt.ItemDataRole.UserRole:  # full precision for copying (views.table_text)
            return value
        if role == Qt.ItemDataRole.FontRole:
            return self._font
        if role == Qt.ItemDataRole.TextAlignmentRole:
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return None


@dataclass(frozen=True)
class Reading:
    """What the text means as a system: the unknowns and parameter names, or why not."""

    unknowns: tuple[str, ...] = ()
    parameters: tuple[str, ...] = ()
    definitions: tuple[str, ...] = ()
    blocks: str = ""
    error: str = ""


def read_system(text: str, values: dict[str, float], given: Sequence[str] = ()) -> Reading:
    """The names of a system text (in a worker; never raises for bad text). The unknowns are
    ``given``, or else every name without a value; every other name is a parameter."""
    from solvers.equation import EquationError
    from solvers.equation.lines import read_lines
    from solvers.systems import parse_system
    from solvers.systems.model import _classifier

    try:
        reading = read_lines(text, _classifier(values, tuple(given) or None))
    except EquationError as exc:
        return Reading(error=str(exc))
    unknowns = tuple(given) or tuple(n for n in reading.names if n not in values)
    params = tuple(n for n in reading.names if n not in unknowns)
    try:
        system = parse_system(text, unknowns or None,
                              {n: values[n] for n in params if n in values})
    except EquationError as exc:
        return Reading(unknowns, params, error=str(exc))
    return Reading(system.unknowns, params, system.definitions,
                   words.blocks_text(system.blocks, system.unknowns))


def solve_text(text: str, unknowns: Sequence[str], parameters: dict[str, Any],
               starts: dict[str, float], methods: Sequence[str], settings: Any,
               progress: Any = None, cancelled: Any = None,
               units: dict[str, str] | None = None,
               dimension_check: bool = True) -> Any:
    """Parse and solve (in a worker): the SystemSolution of a worksheet built from the fields.
    ``progress(fraction)`` after the parse and after each method; ``cancelled()`` is polled
    between them (a cancel raises :class:`app.window.workers.Cancelled`)."""
    from solvers.systems import solve_system
    from solvers.systems.pipeline import SystemSolution, system_of

    units = units or {}
    spec = SystemSpec(tuple(StartValue(n, starts[n], units.get(n)) for n in unknowns),
                      tuple(methods))
    ws = Worksheet(equation=text, parameters=tuple(Parameter(n, v)
                                                   for n, v in parameters.items()),
                   settings=settings, system=spec, dimension_check=dimension_check)
    system = system_of(ws)
    runs = []
    for i, method in enumerate(methods):
        if progress is not None:
            progress(i / (len(methods) + 1) + 1 / (len(methods) + 1))
        if cancelled is not None and cancelled():
            raise Cancelled()
        runs.append(solve_system(system, ws.system.start(), method=method, xtol=settings.xtol,
                                 rtol=settings.rtol, ftol=settings.ftol,
                                 max_iter=settings.max_iter))
    return SystemSolution(ws, system, tuple(runs))


class SystemWindow(QWidget):
    """The system window (see the module docstring)."""

    def __init__(self, jobs: JobRunner | None = None, parent: QWidget | None = None) -> None:
        super().__init__(parent, Qt.WindowType.Window)
        self.setWindowTitle("zerotrace — system of equations")
        self.jobs = jobs or JobRunner(self)
        self._own_jobs = jobs is None
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
        self.unknown_units: dict[str, str] = {}
        self.dimension_check = True
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
        self.cancel_button = QPushButton("&Cancel")
        self.cancel_button.setObjectName("systemCancel")
        self.cancel_button.setEnabled(False)
        self.cancel_button.clicked.connect(lambda: self.jobs.cancel("system-solve"))
        self.save_button = QPushButton("Save &as…")
        self.save_button.setObjectName("systemSave")
        self.save_button.setToolTip("Save the equations, parameters, start values and methods "
                                    "as a worksheet")
        self.save_button.clicked.connect(self.save_as)
        methods_row.addStretch(1)
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
        results = QSplitter(Qt.Orientation.Horizontal)
        results.addWidget(self.lanes)
        results.addWidget(self.convergence)
        results.setStretchFactor(0, 3)  # the lanes' tables are wider than the plot needs
        results.setStretchFactor(1, 2)
        results.setSizes([600, 400])
        splitter = QSplitter(Qt.Orientation.Vertical)
        splitter.addWidget(inputs)
        splitter.addWidget(results)
        splitter.setSizes([360, 400])
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

    # -- reading the text
    def _text_changed(self) -> None:
        text = self.editor.toPlainText()
        if len(text) > MAX_EQUATION:  # the one limit of an equation text
            self.editor.setPlainText(text[:MAX_EQUATION])
            return
        self._timer.start()

    def _values(self) -> dict[str, float]:
        return {n: v for n, v in self.parameters.remembered_values().items() if v is not None}

    def given_unknowns(self) -> tuple[str, ...]:
        return tuple(n.strip() for n in self.unknown_names.text().split(",") if n.strip())

    def _read(self) -> None:
        text = self.editor.toPlainText()
        values = self._values()
        given = self.given_unknowns()
        if not text.strip():
            self.status.setText("type the equations, one per line")
            return
        self.jobs.submit("system-preview", lambda _p, _c: read_system(text, values, given),
                         on_done=self._show_reading)

    def _show_reading(self, reading: Reading) -> None:
        self.reading = reading
        self.unknowns.set_names(reading.unknowns)
        names = list(reading.parameters)
        self.parameters.set_names(names)
        if reading.error:
            self.status.setText(reading.error)
        else:
            self.status.setText(f"{len(reading.unknowns)} equations in "
                                f"{', '.join(reading.unknowns)}; {reading.blocks}")

    # -- solving
    def solve(self) -> None:
        """Solve with the methods ticked, in the "system-solve" lane."""
        self._timer.stop()
        text = self.editor.toPlainText()
        starts = self.unknowns.starts()
        bad = [n for n, v in starts.items() if v is None]
        methods = [m for m, box in self.method_boxes.items() if box.isChecked()]
        if not starts:
            self.status.setText("no unknowns yet: type the equations first")
            return
        if bad:
            self.status.setText(f"start value of {bad[0]}: not a finite number")
            return
        if not methods:
            self.status.setText("tick at least one method")
            return
        unknowns = self.unknowns.names()
        values = self._values()
        settings = self.settings
        units, check = dict(self.unknown_units), self.dimension_check
        self.status.setText("solving…")
        self.cancel_button.setEnabled(True)

        def ended(message: str | None = None) -> None:
            self.cancel_button.setEnabled(False)
            if message is not None:
                self.status.setText(message)

        def done(solution: Any) -> None:
            ended()
            self.show_solution(solution)

        self.jobs.submit("system-solve",
                         lambda p, c: solve_text(text, unknowns, values, starts,  # type: ignore[arg-type]
                                                 methods, settings, p, c, units, check),
                         on_done=done, on_error=ended,
                         on_cancel=lambda: ended("cancelled: nothing was solved"),
                         on_progress=lambda f: self.status.setText(
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
            model.set_run(run)
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
        self.status.setText("; ".join(
            f"{words.system_method_title(r.method)}: "
            + ", ".join(f"{n} = {words.number(v)}" for n, v in r.root.items())
            + ("" if r.converged else f" — did not converge ({r.reason})")
            for r in solution.runs))

    # -- worksheets
    def worksheet(self) -> Worksheet:
        """The worksheet on screen (blank or wrong start values become 0 with the problem
        named by :meth:`solve`; the file keeps what can be opened again)."""
        starts = self.unknowns.starts()
        spec = SystemSpec(tuple(StartValue(n, v if v is not None else 0.0,
                                           self.unknown_units.get(n))
                                for n, v in starts.items()),
                          tuple(m for m, b in self.method_boxes.items() if b.isChecked())
                          or SYSTEM_METHOD_NAMES)
        params = tuple(Parameter(r.name, r.value if r.value is not None else 0.0, r.note,
                                 r.unit.strip())
                       for r in self.parameters.rows())
        title = self.title
        return Worksheet(equation=self.editor.toPlainText(), parameters=params,
                         settings=self.settings, title=title,
                         dimension_check=self.dimension_check,
                         system=spec if spec.unknowns else None)

    def save_as(self) -> bool:
        """Ask for a file and write the worksheet there (atomically); say why not if it fails."""
        from PySide6.QtWidgets import QFileDialog, QMessageBox

        from app.documents.worksheet import save

        name, _ = QFileDialog.getSaveFileName(self, "Save system worksheet", "system.json",
                                              "zerotrace worksheets (*.json);;All files (*)")
        if not name:
            return False
        ws = self.worksheet()
        if ws.system is None or not ws.equation.strip():
            self.status.setText("nothing to save yet: type the equations first")
            return False
        try:
            save(ws, name)
        except (OSError, ValueError) as exc:
            why = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
            self.status.setText(f"not saved: {why}")
            QMessageBox.warning(self, "Cannot save worksheet",
                                f"{name} was not written:\n{why}\n\nNothing on screen was lost.")
            return False
        self.status.setText(f"saved {name}")
        self._saved = ws
        return True

    @property
    def modified(self) -> bool:
        """Whether the system on screen differs from the one opened or last saved."""
        return self.worksheet() != self._saved

    def load_worksheet(self, ws: Worksheet) -> None:
        """Show a worksheet that holds a system (its text, parameters, start values)."""
        self.settings = ws.settings
        self.title = ws.title
        # the unknowns' units and the check switch are kept as the file has them (no field
        # on screen edits them yet) and written back on save
        self.unknown_units = ws.system.units() if ws.system is not None else {}
        self.dimension_check = ws.dimension_check
        self.parameters.load(ws.parameters)
        if ws.system is not None:
            self.unknowns.load(ws.system.unknowns)
            self.unknown_names.setText(", ".join(u.name for u in ws.system.unknowns))
            for name, box in self.method_boxes.items():
                box.setChecked(name in ws.system.methods)
        self.editor.setPlainText(ws.equation)
        if ws.title:
            self.setWindowTitle(f"zerotrace — {ws.title}")
        self._saved = self.worksheet()

    def closeEvent(self, event: Any) -> None:  # noqa: N802 (Qt name)
        if self.modified and self.editor.toPlainText().strip():
            from PySide6.QtWidgets import QMessageBox

            buttons = (QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard
                       | QMessageBox.StandardButton.Cancel)
            answer = QMessageBox.question(self, "Unsaved system",
                                          "The system of equations has changes that are not "
                                          "saved. Save them?", buttons)
            if answer == QMessageBox.StandardButton.Cancel or (
                    answer == QMessageBox.StandardButton.Save and not self.save_as()):
                event.ignore()
                return
        if self._own_jobs:
            self.jobs.stop()
        super().closeEvent(event)
