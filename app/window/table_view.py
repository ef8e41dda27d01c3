"""Tables of inputs in the window: a table (opened, pasted or generated as a sweep), run
off the UI thread with progress and cancel, its results as a table model over the
batch's arrays, failed rows marked, a row's full method lane on demand, and the design
chart (the root against a chosen column, log axes on request, failures marked).

The window never computes: the work is :func:`solvers.batch.solve_table` or
:func:`solvers.batch.solve_sweep` in the "batch" lane of the window's job runner, and
every sentence comes from :mod:`app.documents.words`.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from functools import partial
from typing import Any

import numpy as np
from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QAction, QGuiApplication, QKeySequence
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QFileDialog,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QProgressBar,
    QPushButton,
    QSpinBox,
    QSplitter,
    QVBoxLayout,
    QWidget,
)

from app.documents import words
from app.documents.worksheet import MAX_TABLE_CELLS
from app.window import table_exports
from app.window.batch_model import BatchModel
from app.window.figure_view import FigureView
from app.window.lanes import MethodLane
from app.window.models import parse_number
from app.window.views import CopyTableView

LANE = "batch"


def _number(text: str) -> float | None:
    """A field's number; None when empty; ValueError naming it when not a number."""
    text = text.strip()
    if not text:
        return None
    value = parse_number(text)  # the main window's rule: digits, point, exponent
    if value is None:
        raise ValueError(words.not_a_number(text))
    return value


LANE_ROWS = 6  # iterates a row's lane shows without scrolling


def _show_number(edit: QLineEdit, value: float | None) -> None:
    """Put ``value`` (exact, ``repr``) in ``edit`` showing its first digits: setText leaves
    the cursor at the end, and a number longer than the field then showed only its tail
    ("7988198217209432" for 2.7988198217209432)."""
    edit.setText("" if value is None else repr(float(value)))
    edit.setCursorPosition(0)


class TableWindow(QWidget):
    """The view of a table of inputs or a sweep, opened from the main window.

    Its inputs (the table, the method, the start values) are part of the worksheet:
    :meth:`inputs_record` gives them as a :class:`solvers.worksheet.TableInputs`,
    :meth:`restore` shows a saved one, and ``inputs_changed`` tells the main window.
    """

    inputs_changed = Signal()

    def __init__(self, runner: Any, parent: QWidget | None = None) -> None:
        super().__init__(parent, Qt.WindowType.Window)
        self.setObjectName("tableWindow")
        self.setWindowTitle("Tables of inputs — zerotrace")
        self.runner = runner
        self.kind = "table"  # or "sweep"
        self.units: list[str] = []  # each column's unit, '' for a plain number
        self.sweep_name = ""
        self.constants: dict[str, float] = {}
        self.settings: dict[str, Any] = {}
        self.done: Any = None
        self.headers: list[str] = []
        self.cells: list[Sequence[str]] = []
        self.last_error = ""
        self.loaded = False  # a table read in (open, paste) and shown
        self.equation_edit = QLineEdit()
        self.equation_edit.setObjectName("tableEquation")
        self.unknown_edit = QLineEdit()
        self.unknown_edit.setObjectName("tableUnknown")
        self.unknown_edit.setMaximumWidth(90)
        self.open_button = QPushButton("&Open table…")
        self.paste_button = QPushButton("&Paste table")
        self.sweep_name_edit = QLineEdit()
        self.sweep_from = QLineEdit()
        self.sweep_to = QLineEdit()
        self.sweep_count = QSpinBox()
        self.sweep_count.setRange(2, 100_000)
        self.sweep_count.setValue(41)
        self.sweep_log = QCheckBox("log spacing")
        self.sweep_button = QPushButton("Make s&weep")
        self.method_box = QComboBox()
        from solvers import METHODS

        for name in METHODS:
            self.method_box.addItem(words.method_title(name), name)
        self.x0_edit, self.x1_edit = QLineEdit(), QLineEdit()
        self.a_edit, self.b_edit = QLineEdit(), QLineEdit()
        self.run_button = QPushButton("&Run")
        self.run_button.setToolTip("Solve every row (Ctrl+Return)")
        self.cancel_button = QPushButton("&Cancel")
        self.cancel_button.setEnabled(False)
        self.progress = QProgressBar()
        self.progress.setRange(0, 1000)
        self.status = QLabel("")
        self.status.setObjectName("tableStatus")
        self.status.setWordWrap(True)
        self.export_button = QPushButton("&Export results (CSV)…")
        self.export_button.setEnabled(False)
        self.sheet_button = QPushButton("Calculation s&heet (PDF)…")
        self.sheet_button.setEnabled(False)
        self.worksheet: Any = None
        self.sheet_path = ""
        # A sweep's row can be scanned and the sweep resumed from one of its roots there.
        self.scan_button = QPushButton("Sc&an this row")
        self.scan_button.setEnabled(False)
        self.scan_roots = QComboBox()
        self.resume_button = QPushButton("Continue the sweep from this root")
        self.resume_button.setEnabled(False)
        for name in ("open_button", "paste_button", "sweep_button", "run_button",
                     "cancel_button", "export_button", "sheet_button", "x0_edit", "x1_edit",
                     "a_edit", "b_edit", "sweep_name_edit", "sweep_from", "sweep_to", "sweep_count",
                     "sweep_log", "method_box", "scan_button", "scan_roots",
                     "resume_button"):
            getattr(self, name).setObjectName(name)

        self.model = BatchModel(self)
        self.view = CopyTableView()
        self.view.setObjectName("tableResults")
        self.view.setModel(self.model)
        self.view.verticalHeader().setVisible(True)  # row numbers, as messages count them
        self.view.verticalHeader().setDefaultSectionSize(self.fontMetrics().height() + 6)
        # activated: a double-click, and Return or Enter on the current row (the keyboard's
        # way to a row's lane; doubleClicked alone left it to the mouse)
        self.view.activated.connect(lambda index: self.open_row(index.row()))
        self.chart = FigureView(name="design", placeholder="The design chart (the root "
                                "against a column) is drawn when the table is run.")
        self.against_box = QComboBox()
        self.against_box.setObjectName("against_box")
        self.log_x = QCheckBox("log x")
        self.log_y = QCheckBox("log y")
        for box in (self.log_x, self.log_y):
            box.setObjectName(box.text().replace(" ", "_"))
            box.toggled.connect(lambda _on: self.draw_chart())
        self.against_box.currentIndexChanged.connect(lambda _i: self.draw_chart())
        self.chart.bar.addWidget(QLabel("against"))
        self.chart.bar.addWidget(self.against_box)
        self.chart.bar.addWidget(self.log_x)
        self.chart.bar.addWidget(self.log_y)
        self.lane_holder = QVBoxLayout()
        self.lane: MethodLane | None = None
        self.lane_row = -1

        self._record: Any = None  # inputs_record, kept until the inputs change
        self._layout()
        for edit in (self.x0_edit, self.x1_edit, self.a_edit, self.b_edit):
            edit.textChanged.connect(self._inputs_edited)
        self.method_box.currentIndexChanged.connect(self._inputs_edited)
        self.open_button.clicked.connect(self.open_table)
        self.paste_button.clicked.connect(self.paste_table)
        self.sweep_button.clicked.connect(self.make_sweep)
        self.run_button.clicked.connect(self.run)
        run_keys = QAction(self)  # Ctrl+Return runs, as it solves in the main window
        run_keys.setShortcuts([QKeySequence("Ctrl+Return"), QKeySequence("Ctrl+Enter")])
        run_keys.triggered.connect(lambda: self.run_button.isEnabled() and self.run())
        self.addAction(run_keys)
        self.cancel_button.clicked.connect(self.cancel)
        self.export_button.clicked.connect(self.export_csv)
        self.sheet_button.clicked.connect(self.export_sheet)
        self.scan_button.clicked.connect(self.scan_row)
        self.resume_button.clicked.connect(self.resume_from_root)
        self.resize(1100, 760)

    def _layout(self) -> None:
        top = QGridLayout()
        top.addWidget(QLabel("Equation"), 0, 0)
        top.addWidget(self.equation_edit, 0, 1, 1, 7)
        top.addWidget(QLabel("unknown"), 0, 8)
        top.addWidget(self.unknown_edit, 0, 9)
        top.addWidget(self.open_button, 1, 0)
        top.addWidget(self.paste_button, 1, 1)
        top.addWidget(QLabel("or sweep"), 1, 2)
        top.addWidget(self.sweep_name_edit, 1, 3)
        top.addWidget(QLabel("from"), 1, 4)
        top.addWidget(self.sweep_from, 1, 5)
        top.addWidget(QLabel("to"), 1, 6)
        top.addWidget(self.sweep_to, 1, 7)
        top.addWidget(self.sweep_count, 1, 8)
        top.addWidget(self.sweep_log, 1, 9)
        top.addWidget(self.sweep_button, 1, 10)
        top.addWidget(QLabel("Method"), 2, 0)
        top.addWidget(self.method_box, 2, 1)
        for column, (label, edit) in enumerate((("x0", self.x0_edit), ("x1", self.x1_edit),
                                                ("bracket a", self.a_edit),
                                                ("b", self.b_edit))):
            top.addWidget(QLabel(label), 2, 2 + 2 * column)
            top.addWidget(edit, 2, 3 + 2 * column)
        actions = QHBoxLayout()
        for widget in (self.run_button, self.cancel_button, self.progress, self.export_button,
                       self.sheet_button):
            actions.addWidget(widget)
        upper = QSplitter(Qt.Orientation.Horizontal)
        upper.addWidget(self.view)
        upper.addWidget(self.chart)
        upper.setSizes([520, 560])
        restart = QHBoxLayout()
        for widget in (self.scan_button, self.scan_roots, self.resume_button):
            restart.addWidget(widget)
        restart.addStretch(1)
        self.lane_holder.addLayout(restart)
        lanes = QWidget()
        lanes.setLayout(self.lane_holder)
        body = QSplitter(Qt.Orientation.Vertical)
        body.addWidget(upper)
        body.addWidget(lanes)
        body.setSizes([480, 200])
        layout = QVBoxLayout(self)
        layout.addLayout(top)
        layout.addLayout(actions)
        layout.addWidget(self.status)
        layout.addWidget(body, 1)
        caution = QLabel("⚠ " + words.CAUTION)
        caution.setWordWrap(True)
        caution.setStyleSheet("color: #8A2B00;")
        layout.addWidget(caution)

    # ------------------------------------------------------------------ inputs
    def set_worksheet(self, equation: str, unknown: str | None,
                      constants: Mapping[str, float], settings: Mapping[str, Any],
                      worksheet: Any = None) -> None:
        """The equation, its parameter values (constants for columns the table lacks) and
        the stopping rules of the main window's worksheet (``worksheet`` itself for the
        calculation sheet)."""
        self.worksheet = worksheet
        self.equation_edit.setText(equation)
        self.equation_edit.setCursorPosition(0)  # its beginning in sight, not its end
        self.unknown_edit.setText(unknown or "")
        self.constants = dict(constants)
        self.settings = dict(settings)
        # the worksheet's start values and bracket fill the fields left blank (a table
        # saved with its own start values keeps them)
        ws_settings = getattr(worksheet, "settings", None)
        if ws_settings is not None:
            bracket = ws_settings.bracket or (None, None)
            for edit, value in ((self.x0_edit, ws_settings.x0), (self.x1_edit, ws_settings.x1),
                                (self.a_edit, bracket[0]), (self.b_edit, bracket[1])):
                if value is not None and not edit.text().strip():
                    _show_number(edit, value)

    def say(self, text: str) -> None:
        self.last_error = ""
        self.status.setText(text)

    def refuse(self, text: str) -> None:
        self.last_error = text
        self.status.setText("✗ " + text)

    def set_table(self, headers: Sequence[str], names: Sequence[str],
                  columns: Sequence[np.ndarray], cells: Sequence[Sequence[str]],
                  kind: str, units: Sequence[str] = ()) -> None:
        """Show a table of inputs; ``units``: each column's unit ('' or none: a plain
        number), as a header NAME [unit] gives it."""
        self.kind = kind
        self.units = [units[j] if j < len(units) else "" for j in range(len(names))]
        self.headers, self.cells = list(headers), list(cells)
        self.model.set_inputs(names, columns, self.units)
        self.done = None
        self.export_button.setEnabled(False)
        self.sheet_button.setEnabled(False)
        self._clear_results()
        self.against_box.blockSignals(True)
        self.against_box.clear()
        self.against_box.addItems(list(names))
        self.against_box.blockSignals(False)
        self.view.fit_columns()
        rows = len(columns[0]) if columns else 0
        text = f"{words.counted(rows, 'row')} of {', '.join(names)}"
        if not self._keepable():
            text += (f" (over {MAX_TABLE_CELLS} numbers: kept in this view, not in the "
                     "worksheet file; open it from its CSV file)")
        self.say(text)
        self._inputs_edited()

    def _clear_results(self) -> None:
        """No chart and no row lane of an earlier table: they would pass for this one's."""
        if self.lane is not None:
            self.lane.hide()
            self.lane.setParent(None)
            self.lane.deleteLater()
            self.lane = None
        self.lane_row = -1
        self.scan_roots.clear()
        self.scan_button.setEnabled(False)
        self.resume_button.setEnabled(False)
        if self.chart._built is not None:
            self.chart.new_axes()
            self.chart.redraw()

    def _keepable(self) -> bool:
        return sum(c.size for c in self.model.columns) <= MAX_TABLE_CELLS

    def _inputs_edited(self, *_args: Any) -> None:
        self._record = None
        self.inputs_changed.emit()

    def inputs_record(self) -> Any:
        """The table, method and start values as the worksheet keeps them (None when no
        table is loaded or it is over the worksheet's limit; a start field that is not a
        number is left out)."""
        from solvers.worksheet import TableInputs

        if not self.model.columns or not self._keepable():
            return None
        if self._record is None:
            def field(edit: QLineEdit) -> float | None:
                try:
                    return _number(edit.text())
                except ValueError:
                    return None

            a, b = field(self.a_edit), field(self.b_edit)
            self._record = TableInputs(
                columns=tuple((name, tuple(column.tolist())) for name, column in
                              zip(self.model.names, self.model.columns, strict=True)),
                kind=self.kind, method=self.method_box.currentData(),
                x0=field(self.x0_edit), x1=field(self.x1_edit),
                bracket=(a, b) if a is not None and b is not None and a != b else None,
                units=tuple(self.units) if any(self.units) else ())
        return self._record

    def restore(self, inputs: Any) -> None:
        """Show a worksheet's saved table (None clears the view)."""
        if inputs is None:
            self.model.set_inputs([], [])
            self.done = None
            self.headers, self.cells, self.units = [], [], []
            self._inputs_edited()
            return
        names = [name for name, _ in inputs.columns]
        columns = [np.asarray(values, dtype=np.float64) for _, values in inputs.columns]
        with_signals_blocked = (self.method_box, self.x0_edit, self.x1_edit, self.a_edit,
                                self.b_edit)
        for widget in with_signals_blocked:
            widget.blockSignals(True)
        self.method_box.setCurrentIndex(max(0, self.method_box.findData(inputs.method)))
        for edit, value in ((self.x0_edit, inputs.x0), (self.x1_edit, inputs.x1),
                            (self.a_edit, inputs.bracket[0] if inputs.bracket else None),
                            (self.b_edit, inputs.bracket[1] if inputs.bracket else None)):
            _show_number(edit, value)
        for widget in with_signals_blocked:
            widget.blockSignals(False)
        if inputs.kind == "sweep":
            self.sweep_name = names[0]
        units = [inputs.unit_of(j) for j in range(len(names))]
        from app.documents.tables import column_header

        headers = [column_header(n, u) for n, u in zip(names, units, strict=True)]
        self.set_table(headers, names, columns, [[repr(float(v)) for v in c] for c in columns],
                       inputs.kind, units)

    def _use_table(self, table: Any) -> None:
        from solvers.equation import EquationError
        from solvers.units import read_unit

        for j, c in enumerate(table.columns):
            if c.unit:
                try:  # a unit pint does not know is named now, not when the table runs
                    read_unit(c.unit)
                except EquationError as exc:
                    self.refuse(f"column {j + 1} {c.header!r}: {exc}")
                    return
        names = [c.name for c in table.columns]
        self.set_table([c.header for c in table.columns], names,
                       [table.values[n] for n in names], table.cells, "table",
                       [c.unit for c in table.columns])

    def _read(self, read: Any) -> bool:
        """Read a table off the UI thread (a file of 10^6 rows takes seconds), in the
        "batch" lane; the view takes it when it is read."""
        def work(_progress: Any, _cancel: Any) -> Any:
            return read()

        def failed(message: str) -> None:
            self._idle()
            self.refuse(message)

        self.run_button.setEnabled(False)
        self.say("reading the table…")
        self.loaded = False
        return self.runner.submit(LANE, work, on_done=self._table_read, on_error=failed)

    def _table_read(self, table: Any) -> None:
        self._idle()
        self._use_table(table)
        self.loaded = not self.last_error

    def load_table(self, path: str) -> bool:
        from app.documents.tables import read_table

        return self._read(partial(read_table, path))

    def open_table(self) -> bool:
        path, _ = QFileDialog.getOpenFileName(self, "Open a table of inputs", "",
                                              "CSV tables (*.csv *.txt);;All files (*)")
        return bool(path) and self.load_table(path)

    def paste_table(self) -> bool:
        from app.documents.tables import parse_table

        return self._read(partial(parse_table, QGuiApplication.clipboard().text(), pasted=True))

    def make_sweep(self) -> bool:
        """A sweep of one parameter, ``NAME`` or ``NAME [unit]``: the values from and to in
        that unit; without one, in the unit the worksheet gives that parameter."""
        from app.documents.tables import column_header, read_header
        from solvers.equation import EquationError
        from solvers.units import Measured, read_unit

        typed = self.sweep_name_edit.text().strip()
        try:
            start, stop = _number(self.sweep_from.text()), _number(self.sweep_to.text())
        except ValueError as exc:
            self.refuse(f"sweep: {exc}")
            return False
        header = read_header(typed)
        if header is None or start is None or stop is None:
            self.refuse("sweep: give the parameter's name (NAME or NAME [unit]) and the "
                        "values from and to")
            return False
        name, unit = header
        if not unit and isinstance(self.constants.get(name), Measured):
            unit = self.constants[name].unit  # the worksheet's unit for that parameter
        if unit:
            try:
                read_unit(unit)
            except EquationError as exc:
                self.refuse(f"sweep: {exc}")
                return False
        count = self.sweep_count.value()
        if self.sweep_log.isChecked():
            if not (start > 0 and stop > 0):
                self.refuse("sweep: log spacing needs values from and to above 0")
                return False
            values = np.geomspace(start, stop, count)
        else:
            values = np.linspace(start, stop, count)
        self.sweep_name = name
        self.log_x.setChecked(self.sweep_log.isChecked())  # the chart spaced as the sweep
        self.set_table([column_header(name, unit)], [name], [values],
                       [[repr(float(v)) for v in values]], "sweep", [unit])
        return True

    # ------------------------------------------------------------------ running
    def run(self) -> bool:
        from solvers.batch import START_COLUMNS, solve_sweep, solve_table
        from solvers.methods.registry import missing_needs
        from solvers.units import Measured

        if not self.model.columns:
            self.refuse("open, paste or make a table first")
            return False
        try:
            starts = {k: _number(e.text()) for k, e in (("x0", self.x0_edit),
                                                         ("x1", self.x1_edit),
                                                         ("a", self.a_edit),
                                                         ("b", self.b_edit))}
        except ValueError as exc:
            self.refuse(f"start value: {exc}")
            return False
        bracket = (starts["a"], starts["b"]) if None not in (starts["a"], starts["b"]) else None
        method = self.method_box.currentData()
        # a row's own start values come in the columns the table reader names
        # (START_COLUMNS: x0, x1, bracket_a, bracket_b), as from the shell
        own = {START_COLUMNS[n] for n in self.model.names if n in START_COLUMNS}
        given = {"x0": starts["x0"] is not None or "x0" in own,
                 "x1": starts["x1"] is not None or "x1" in own,
                 "bracket": bracket is not None or {"a", "b"} <= own}
        missing = missing_needs(method, given)
        if missing:
            self.refuse(words.method_needs_text(method, missing))
            return False
        text = self.equation_edit.text()
        unknown = self.unknown_edit.text().strip() or None
        names = self.model.names
        constants = {k: v for k, v in self.constants.items() if k not in names}
        ws = self.worksheet
        common = dict(unknown=unknown, constants=constants,
                      method=method, x0=starts["x0"],
                      x1=starts["x1"], bracket=bracket, **self.settings,
                      unknown_unit=getattr(ws, "unknown_unit", None),
                      check_dimensions=getattr(ws, "dimension_check", True))
        columns = [Measured(c, u) if u else c
                   for c, u in zip(self.model.columns, self.units, strict=True)]
        if self.kind == "sweep":
            job = partial(solve_sweep, text, names[0], columns[0], **common)
        else:
            job = partial(solve_table, text, list(zip(names, columns, strict=True)), **common)

        def work(progress: Any, cancel: Any) -> Any:
            return job(progress=progress, cancel=cancel)

        self.progress.setValue(0)
        return self._submit(work)

    def _submit(self, work: Any) -> bool:
        """Run ``work(progress, cancel)`` in the batch lane, the view showing it running."""
        self.run_button.setEnabled(False)
        self.cancel_button.setEnabled(True)
        self.say("running…")
        return self.runner.submit(LANE, work, on_done=self._on_done, on_error=self._on_error,
                                  on_cancel=self._on_cancelled,
                                  on_progress=lambda f: self.progress.setValue(int(f * 1000)))

    def cancel(self) -> None:
        self.runner.cancel(LANE)

    def _idle(self) -> None:
        self.run_button.setEnabled(True)
        self.cancel_button.setEnabled(False)

    def _on_done(self, done: Any) -> None:
        self._idle()
        self.done = done
        self.model.set_batch(done.batch)
        # every figure of the root and the reason's words in sight (Qt measures the first
        # rows only, so 10^5 rows cost what 1000 do)
        self.view.resizeColumnsToContents()
        self.progress.setValue(1000)
        self.export_button.setEnabled(True)
        self.sheet_button.setEnabled(self.worksheet is not None)
        advice = words.shared_bracket_advice(done.batch)
        self.say(words.batch_summary(done.batch) + (f"\n⚠ {advice}" if advice else ""))
        self.draw_chart()

    def _on_error(self, message: str) -> None:
        self._idle()
        self.refuse(message)

    def _on_cancelled(self) -> None:
        self._idle()
        self.say("cancelled: no results")

    # ------------------------------------------------------------------ results
    def draw_chart(self) -> None:
        if self.done is None or not self.model.columns:
            return
        from app.documents import figures

        column = max(0, self.against_box.currentIndex())
        ax = self.chart.new_axes()
        figures.draw_design_chart(ax, self.model.columns[column], self.done.batch,
                                  name=self.model.names[column],
                                  x_unit=self.model.units[column],
                                  unknown=self.done.equation.unknown,
                                  unit=self.done.equation.unknown_unit,
                                  log_x=self.log_x.isChecked(), log_y=self.log_y.isChecked(),
                                  line=self.kind == "sweep")
        self.chart.fit_margins()  # now that the axes hold their labels and legend
        self.chart.redraw()

    def open_row(self, row: int) -> None:
        """Show row ``row``'s full run (every iterate) in a method lane."""
        if self.done is None or not 0 <= row < self.model.rowCount():
            return
        batch = self.done.batch
        try:
            run = batch.run(row)
        except ValueError as exc:
            self.refuse(f"row {row + 1}: {exc}")
            return
        if self.lane is None or self.lane.method != batch.method:
            if self.lane is not None:
                self.lane.setParent(None)
                self.lane.deleteLater()
            self.lane = MethodLane(batch.method)
            # room for a few iterates: the splitter's share left it two rows and a half
            rows = self.lane.table.verticalHeader().defaultSectionSize()
            self.lane.table.setMinimumHeight(LANE_ROWS * rows
                                             + self.lane.table.horizontalHeader().sizeHint()
                                             .height() + 4)
            self.lane_holder.addWidget(self.lane)
        self.lane.set_run(run, batch.equation.unknown, batch.equation.unknown_unit,
                          batch.equation.residual_unit(derived=True))
        self.lane_row = row
        self.scan_button.setEnabled(self.kind == "sweep")
        self.scan_roots.clear()
        self.resume_button.setEnabled(False)
        self.say(f"row {row + 1}: " + words.run_message(run, batch.equation.unknown,
                                                         batch.equation.unknown_unit))

    def scan_range(self) -> tuple[float, float]:
        """Where a row is scanned: the worksheet's scan range, else around the sweep's roots."""
        ws = self.worksheet
        if ws is not None and ws.scan and ws.equation.strip() == self.equation_edit.text().strip():
            return float(ws.scan[0]), float(ws.scan[1])
        roots = self.done.batch.root[np.isfinite(self.done.batch.root)]
        if roots.size == 0:
            return -10.0, 10.0
        lo, hi = float(roots.min()), float(roots.max())
        span = hi - lo if hi > lo else max(1.0, abs(lo))
        return lo - span, hi + span

    def scan_row(self) -> bool:
        """Scan f at the open row's value (the "batch" lane): its roots are offered as
        restarts of the sweep."""
        from solvers import scan

        if self.done is None or self.lane_row < 0 or self.kind != "sweep":
            return False
        batch, row = self.done.batch, self.lane_row
        bound = batch.equation.bind(batch.row_values(row))
        a, b = self.scan_range()

        def work(progress: Any, cancel: Any) -> Any:
            return scan(bound.f, a, b, fprime=bound.fprime, progress=progress, cancel=cancel)

        def done(found: Any) -> None:
            self._idle()
            self.scan_roots.clear()
            for root in found.roots:
                self.scan_roots.addItem(words.exact(root.x), root.x)
            self.resume_button.setEnabled(bool(found.roots))
            name = batch.settings["swept"]
            value = words.exact(float(batch.row_values(row)[name]))
            listed = ", ".join(words.exact(r.x) for r in found.roots) or "none"
            self.say(f"roots at {name} = {value} in [{words.exact(a)}, {words.exact(b)}]: "
                     f"{listed}")

        self.run_button.setEnabled(False)
        self.cancel_button.setEnabled(True)
        self.say("scanning…")
        return self.runner.submit(LANE, work, on_done=done, on_error=self._on_error,
                                  on_cancel=self._on_cancelled,
                                  on_progress=lambda f: self.progress.setValue(int(f * 1000)))

    def resume_from_root(self) -> bool:
        """The sweep again from the open row, started from the root chosen in the list."""
        from solvers.batch import TableSolve, resume_sweep

        if self.done is None or self.scan_roots.count() == 0:
            return False
        done, row, x0 = self.done, self.lane_row, float(self.scan_roots.currentData())

        def work(progress: Any, cancel: Any) -> Any:
            batch = resume_sweep(done.batch, row, x0, progress=progress, cancel=cancel)
            return TableSolve(done.equation, batch, done.parameters, done.starts,
                              done.constants)

        return self._submit(work)

    # the exports live in app.window.table_exports
    def export_csv(self) -> bool:
        return table_exports.export_csv(self)

    def results(self) -> Any:
        return table_exports.results(self)

    def export_sheet(self) -> bool:
        return table_exports.export_sheet(self)
