"""The inputs column: parameters table, start values, stopping rules and the two actions.

Every number is typed as text and checked as the user types; a bad entry is tinted,
explained in its tooltip and listed by :meth:`InputsPanel.problems`, and the last
good value stays in use, so nothing typed is ever silently replaced.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from PySide6.QtCore import QSignalBlocker, Qt, Signal
from PySide6.QtWidgets import (
    QAbstractItemDelegate,
    QAbstractItemView,
    QCheckBox,
    QFrame,
    QGridLayout,
    QGroupBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPushButton,
    QScrollArea,
    QVBoxLayout,
    QWidget,
)

from app.documents import words
from app.documents.figures import method_color
from app.documents.words import method_summary, method_title
from app.documents.worksheet import (
    DEFAULT_METHODS,
    METHOD_NAMES,
    Settings,
    setting_problem,
    tolerances_problem,
)
from app.window.models import ParametersModel, fix_lines, number_font, parse_number
from app.window.views import CopyTableView, fitted_text

BAD_STYLE = "QLineEdit { background: #FBE3D6; color: #8A2B00; }"


@dataclass(frozen=True)
class FieldSpec:
    """One typed setting: its key, label, tooltip, and the check its value must pass."""

    key: str
    label: str
    tip: str
    optional: bool = False  # blank means "chosen automatically"
    check: Callable[[float], str] | None = None  # returns '' or what is wrong
    integer: bool = False


def _rule(key: str) -> Callable[[float], str]:
    """The worksheet's rule for a setting (the CLI and the file loader check the same)."""
    return lambda v: setting_problem(key, v)


START_FIELDS = (
    # the blanks as solvers.pipeline.start_values fills them
    FieldSpec("x0", "x&0", "Newton–Raphson start (blank: inside a sign change a quick scan "
              "of the scan range finds, else the bracket's midpoint). Shift+click on the plot "
              "sets it.", optional=True),
    FieldSpec("x1", "x&1", "second point of the secant (blank: the end of that sign change "
              "nearest x0, else x0 moved away from 0 by 1e-4 of itself plus 1e-4). "
              "Shift+right-click on the plot sets it.", optional=True),
    FieldSpec("a", "bracket &a", "left end of the bracket for the bracketing methods "
              "(blank: that sign change, else the scan range where f changes sign over it, "
              "else grown around x0). Shift+drag on the plot sets a and b.", optional=True),
    FieldSpec("b", "bracket &b", "right end of the bracket", optional=True),
    FieldSpec("from", "scan fro&m", "left end of the range scanned for every root "
              "and drawn in the plot", optional=True),
    FieldSpec("to", "scan t&o", "right end of the scanned range", optional=True),
)
# On screen the rules are named in words; the file keys and CLI flags stay xtol, rtol,
# ftol and max_iter (named in each tooltip, so a user can match screen, file and shell).
RULE_FIELDS = (
    FieldSpec("xtol", "step toleran&ce, absolute", "stop when |Δx| ≤ xtol + rtol·|x|: the "
              "absolute part, in units of the unknown (xtol in the worksheet, --xtol in "
              "the shell)", check=_rule("xtol")),
    FieldSpec("rtol", "step tolerance, rela&tive", "the relative part of the step test, "
              "4 machine epsilons by default (rtol, --rtol)", check=_rule("rtol")),
    FieldSpec("ftol", "residua&l tolerance", "stop when |f(x)| ≤ ftol; 0 is off, since the "
              "scale of f is yours (ftol, --ftol)", check=_rule("ftol")),
    FieldSpec("max_iter", "&iteration cap", "stop after this many iterates (max_iter, "
              "--max-iter)", check=_rule("max_iter"), integer=True),
    FieldSpec("damping", "&damping", "Newton–Raphson step multiplier λ in (0, 1]; "
              "1 is the plain method (damping, --damping)", check=_rule("damping")),
)


class NumberField(QLineEdit):
    """A line edit for one number with inline validation (tint + tooltip when wrong)."""

    def __init__(self, spec: FieldSpec, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.spec = spec
        self.setObjectName(f"field_{spec.key}")
        self.setFont(number_font())
        self.setPlaceholderText("automatic" if spec.optional else "")
        self._tip = spec.tip
        self.setToolTip(spec.tip)
        self.textChanged.connect(self._check)
        self.last_good: float | None = None
        # (text shown, exact value) while a number too long for the field is shown
        # shortened; the exact value is what value() returns and what editing shows.
        self._shortened: tuple[str, float] | None = None

    def _number(self, text: str) -> float | None:
        if self._shortened is not None and text == self._shortened[0]:
            return self._shortened[1]
        return parse_number(text)

    def problem(self) -> str:
        text = self.text().strip()
        if not text:
            return "" if self.spec.optional else "needs a value"
        value = self._number(text)
        if value is None:
            return words.not_a_number(text)
        if self.spec.integer and value != int(value):
            return "must be a whole number"
        return self.spec.check(value) if self.spec.check else ""

    def value(self) -> float | None:
        """The typed value if valid; otherwise the last good one (the problem is reported)."""
        if self.problem():
            return self.last_good
        text = self.text().strip()
        return self._number(text) if text else None

    def set_value(self, value: float | int | None) -> None:
        if value is None:
            self.setText("")
        elif self.spec.integer:
            self.setText(str(int(value)))
        else:
            self.setText(repr(float(value)))
        self._fit()

    def _swap(self, text: str) -> None:
        """Change what is shown without it counting as an edit (same number)."""
        blocked = self.blockSignals(True)
        try:
            self.setText(text)
        finally:
            self.blockSignals(blocked)
        self.setCursorPosition(0)

    def _fit(self) -> None:
        """Shorten a number that does not fit, keeping its exponent (8.8818e-16, not
        "8.881784197" cut at the edge); editing brings the exact value back."""
        if self.hasFocus() or self._shortened is not None:
            return
        text = self.text().strip()
        value = parse_number(text) if text and not self.problem() else None
        room = self.contentsRect().width() - 6
        if value is None or room <= 0 or self.fontMetrics().horizontalAdvance(text) <= room:
            self.setCursorPosition(0)
            return
        shown = fitted_text(value, 17, self.fontMetrics(), room)
        if shown != text:
            self._shortened = (shown, value)
            self._swap(shown)
            self.setToolTip(f"{self.spec.key} = {value!r} (shown shortened; click to edit "
                            f"the exact value)\n{self._tip}")

    def _unfit(self) -> None:
        if self._shortened is not None:
            shown, value = self._shortened
            self._shortened = None
            if self.text() == shown:
                self._swap(repr(value))

    def focusInEvent(self, event: Any) -> None:  # noqa: N802 (Qt name)
        self._unfit()
        super().focusInEvent(event)

    def focusOutEvent(self, event: Any) -> None:  # noqa: N802 (Qt name)
        super().focusOutEvent(event)
        self._fit()

    def resizeEvent(self, event: Any) -> None:  # noqa: N802 (Qt name)
        super().resizeEvent(event)
        self._unfit()
        self._fit()

    def _check(self) -> None:
        if self._shortened is not None and self.text() != self._shortened[0]:
            self._shortened = None  # typed over: the text is the number again
        problem = self.problem()
        if problem:
            self.setStyleSheet(BAD_STYLE)
            self.setToolTip(f"{self.spec.key}: {problem}\n{self._tip}")
        else:
            self.setStyleSheet("")
            self.setToolTip(self._tip)
            text = self.text().strip()
            self.last_good = self._number(text) if text else None


class InputsPanel(QWidget):
    """Parameters, methods, start values, stopping rules, Solve and Scan range."""

    changed = Signal()
    methods_changed = Signal(tuple)  # the chosen methods, in the table's order

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.parameters = ParametersModel(self)
        self.parameters_view = CopyTableView()
        self.parameters_view.setObjectName("parametersView")
        self.parameters_view.setModel(self.parameters)
        self.parameters_view.setSelectionBehavior(CopyTableView.SelectionBehavior.SelectItems)
        self.parameters_view.setTabKeyNavigation(True)  # Tab from value to note while typing
        header = self.parameters_view.horizontalHeader()
        header.setSectionResizeMode(0, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(1, QHeaderView.ResizeMode.Interactive)
        header.resizeSection(1, 100)
        header.setSectionResizeMode(2, QHeaderView.ResizeMode.Interactive)
        header.resizeSection(2, 60)
        header.setMinimumSectionSize(36)  # the note keeps a sliver rather than a scroll bar
        # a unit cut short keeps its end: "delta_degC" shows as "del…egC", where the
        # default "delta_…" hid whether it was degC or degF (1.8 times apart)
        self.parameters_view.setTextElideMode(Qt.TextElideMode.ElideMiddle)
        self.parameters_view.setMaximumHeight(200)
        # tall enough for every parameter up to five (a fixed 80 px showed two and a half)
        self.parameters.modelReset.connect(self._fit_parameter_rows)
        self.parameters.rowsInserted.connect(self._fit_parameter_rows)
        self.parameters.rowsRemoved.connect(self._fit_parameter_rows)
        self._fit_parameter_rows()
        self.parameters_view.setToolTip("Values of the names the equation uses (F2 to edit), "
                                        "with a unit if you like (typing '150 mm' in a value "
                                        "cell splits it). Tinted cells need a valid number.")
        self.parameters_label = QLabel("&Parameters")
        self.parameters_label.setBuddy(self.parameters_view)

        self.method_boxes: dict[str, QCheckBox] = {}
        methods_box = QGroupBox("Methods to run")
        methods_grid = QGridLayout(methods_box)
        for i, name in enumerate(METHOD_NAMES):
            box = QCheckBox(method_title(name))
            box.setObjectName(f"method_{name}")
            box.setToolTip(method_summary(name))
            # The method's colour as a stripe, as on its lane and its path in the plot.
            box.setStyleSheet(f"QCheckBox {{ border-left: 4px solid {method_color(name)}; "
                              "padding-left: 3px; }")
            box.toggled.connect(self._on_methods)
            methods_grid.addWidget(box, *divmod(i, 2))  # two columns fit the panel
            self.method_boxes[name] = box
        methods_grid.setContentsMargins(6, 4, 6, 4)
        methods_grid.setVerticalSpacing(2)
        self.fields: dict[str, NumberField] = {}
        start_box = QGroupBox("Start values and range")
        start_grid = QGridLayout(start_box)
        self._pairs(start_grid, START_FIELDS)
        rules_box = QGroupBox("Stopping rules")
        rules_grid = QGridLayout(rules_box)
        self._pairs(rules_grid, RULE_FIELDS, per_row=1)
        for grid in (start_grid, rules_grid):
            grid.setContentsMargins(6, 4, 6, 4)
            grid.setVerticalSpacing(3)
            grid.setHorizontalSpacing(4)
            grid.setColumnStretch(1, 1)
            grid.setColumnStretch(3, 1)

        self.solve_button = QPushButton("&Solve")
        self.solve_button.setObjectName("solveButton")
        self.solve_button.setToolTip("Run the chosen methods side by side (Ctrl+Return)")
        self.solve_button.setDefault(True)
        self.scan_button = QPushButton("Sca&n range")
        self.scan_button.setObjectName("scanButton")
        self.scan_button.setToolTip("Find every root, pole and jump between 'scan from' and "
                                    "'scan to' (Ctrl+Shift+Return)")
        buttons = QHBoxLayout()
        buttons.addWidget(self.solve_button)
        buttons.addWidget(self.scan_button)
        self.problem_label = QLabel()
        self.problem_label.setObjectName("inputsProblems")
        self.problem_label.setWordWrap(True)
        self.problem_label.setStyleSheet("color: #8A2B00;")
        self.problem_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        # Every problem is listed; past four lines the list scrolls (a fixed two-line label
        # cut the third problem off, and a growing one would re-lay out the window).
        self.problem_area = QScrollArea()
        self.problem_area.setObjectName("inputsProblemsArea")
        self.problem_area.setWidget(self.problem_label)
        self.problem_area.setWidgetResizable(True)
        self.problem_area.setFrameShape(QFrame.Shape.NoFrame)
        self.problem_area.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.problem_area.setFocusPolicy(Qt.FocusPolicy.NoFocus)
        self.problem_label.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        fix_lines(self.problem_area, 4)

        # The fields scroll on a small screen; the two actions below them never do.
        fields = QWidget()
        fields_layout = QVBoxLayout(fields)
        fields_layout.setContentsMargins(0, 0, 0, 0)
        fields_layout.setSpacing(4)
        fields_layout.addWidget(self.parameters_label)
        fields_layout.addWidget(self.parameters_view, 1)
        fields_layout.addWidget(methods_box)
        fields_layout.addWidget(start_box)
        fields_layout.addWidget(rules_box)
        scroll = QScrollArea()
        scroll.setWidget(fields)
        scroll.setWidgetResizable(True)
        scroll.setFrameShape(QFrame.Shape.NoFrame)
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        scroll.setFocusPolicy(Qt.FocusPolicy.NoFocus)  # Tab goes to the fields, not the frame
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 2, 4, 2)
        layout.setSpacing(4)
        layout.addWidget(scroll, 1)
        layout.addLayout(buttons)
        layout.addWidget(self.problem_area)

        self.parameters.edited.connect(self._on_changed)
        for field in self.fields.values():
            field.textChanged.connect(self._on_changed)
        self.show_settings(Settings(), None)

    def commit_edits(self) -> None:
        """Take a value still being typed in a parameter cell (Ctrl+Return from the cell
        editor solves with it, instead of "needs a value")."""
        view = self.parameters_view
        if view.state() != QAbstractItemView.State.EditingState:
            return
        editor = view.indexWidget(view.currentIndex())
        if editor is not None:
            view.commitData(editor)
            view.closeEditor(editor, QAbstractItemDelegate.EndEditHint.NoHint)

    def _fit_parameter_rows(self, *_args: Any) -> None:
        view = self.parameters_view
        rows = min(max(self.parameters.rowCount(), 2), 5)
        view.setMinimumHeight(view.horizontalHeader().sizeHint().height()
                              + rows * view.verticalHeader().defaultSectionSize()
                              + 2 * view.frameWidth()
                              + view.horizontalScrollBar().sizeHint().height())

    def _pairs(self, grid: QGridLayout, specs: tuple[FieldSpec, ...], per_row: int = 2) -> None:
        """Label/field pairs, two per row where the labels are short, so the column fits a
        1280x800 screen."""
        for i, spec in enumerate(specs):
            field = NumberField(spec)
            field.setMinimumWidth(60)
            label = QLabel(spec.label)
            label.setBuddy(field)
            label.setToolTip(spec.tip)
            row, col = divmod(i, per_row)
            grid.addWidget(label, row, 2 * col)
            grid.addWidget(field, row, 2 * col + 1)
            self.fields[spec.key] = field

    def _on_changed(self) -> None:
        self.show_problems()
        self.changed.emit()

    def show_problems(self) -> None:
        """List every problem under the actions (the list scrolls past four lines)."""
        problems = self.problems()
        self.problem_label.setText("\n".join(problems))
        self.problem_area.setToolTip("\n".join(problems))
        # Shown only while there is a problem: four empty lines kept under the actions
        # pushed the start values below the fold at 1280x800. Its height is fixed, so
        # showing it re-lays out this column only (the fields scroll), not the window.
        self.problem_area.setVisible(bool(problems))

    def methods(self) -> tuple[str, ...]:
        """The methods ticked, in the fixed order of the method table."""
        return tuple(name for name, box in self.method_boxes.items() if box.isChecked())

    def _on_methods(self) -> None:
        self.methods_changed.emit(self.methods())
        self._on_changed()

    # -- worksheet <-> fields
    def show_settings(self, settings: Settings, scan: tuple[float, float] | None) -> None:
        """Fill the fields from a worksheet: no ``changed`` or ``methods_changed`` (the
        panel's own signals are blocked; it is not an edit)."""
        with QSignalBlocker(self):
            for name, box in self.method_boxes.items():
                box.setChecked(name in settings.methods)
            values: dict[str, Any] = {
                "x0": settings.x0,
                "x1": settings.x1,
                "a": settings.bracket[0] if settings.bracket else None,
                "b": settings.bracket[1] if settings.bracket else None,
                "from": scan[0] if scan else None,
                "to": scan[1] if scan else None,
                "xtol": settings.xtol,
                "rtol": settings.rtol,
                "ftol": settings.ftol,
                "max_iter": settings.max_iter,
                "damping": settings.damping,
            }
            for key, value in values.items():
                self.fields[key].set_value(value)
        self.show_problems()

    def convert_fields(self, keys: tuple[str, ...], convert: Callable[[float], float]) -> bool:
        """Each of the fields ``keys`` holding a number rewritten as ``convert`` of it (to
        12 significant figures: the unit's factor leaves no more that mean anything);
        returns whether any changed."""
        changed = False
        for key in keys:
            value = self.fields[key].value()
            if value is None or self.fields[key].problem():
                continue
            new = convert(value)
            if math.isfinite(new):
                self.fields[key].set_value(float(f"{new:.12g}"))
                changed = True
        return changed

    def set_field(self, key: str, value: float | None) -> None:
        """Set one field as if typed (clicks on the plot use this)."""
        self.fields[key].set_value(value)

    def settings(self, base: Settings) -> tuple[Settings, tuple[float, float] | None]:
        """The settings and scan range as typed (last good value where a field is wrong)."""
        v = {key: field.value() for key, field in self.fields.items()}
        bracket = None
        if v["a"] is not None and v["b"] is not None and v["a"] != v["b"]:
            bracket = (min(v["a"], v["b"]), max(v["a"], v["b"]))
        scan = None
        if v["from"] is not None and v["to"] is not None and v["from"] < v["to"]:
            scan = (v["from"], v["to"])
        defaults = Settings()
        settings = Settings(
            methods=self.methods() or base.methods or DEFAULT_METHODS,
            x0=v["x0"],
            x1=v["x1"],
            bracket=bracket,
            xtol=_or(v["xtol"], defaults.xtol),
            rtol=_or(v["rtol"], defaults.rtol),
            ftol=_or(v["ftol"], defaults.ftol),
            max_iter=int(_or(v["max_iter"], defaults.max_iter)),
            damping=_or(v["damping"], defaults.damping),
        )
        return settings, scan

    def problems(self) -> list[str]:
        """Every input that is wrong, one line each naming the field."""
        found = [f"{key}: {field.problem()}" for key, field in self.fields.items()
                 if field.problem()]
        if not self.methods():
            found.append("methods: tick at least one method to run")
        v = {key: self.fields[key].value() for key in ("a", "b", "from", "to")}
        if (v["a"] is None) != (v["b"] is None):
            found.append("bracket: give both ends a and b, or neither")
        elif v["a"] is not None and v["a"] == v["b"]:
            found.append("bracket: the two ends must differ")
        if (v["from"] is None) != (v["to"] is None):
            found.append("scan range: give both 'from' and 'to', or neither")
        elif v["from"] is not None and not v["from"] < v["to"]:
            found.append("scan range: 'from' must be less than 'to'")
        problem = tolerances_problem(*(self.fields[k].value() for k in ("xtol", "rtol", "ftol")))
        if problem:
            found.append(f"tolerances: {problem}")
        return self.parameters.problems() + found


def _or(value: float | None, default: float) -> float:
    return default if value is None or (isinstance(value, float) and math.isnan(value)) else value
