"""The system window's tables: the unknowns with their start values, and one method's
iterates (Qt models; numbers formatted by :func:`app.window.models.format_number`)."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt
from PySide6.QtGui import QBrush

from app.documents import words
from app.documents.worksheet import StartValue
from app.window.models import (
    DEFAULT_DIGITS,
    INVALID_BACKGROUND,
    INVALID_FOREGROUND,
    NamedRows,
    format_number,
    number_font,
    parse_number,
    value_and_unit_problem,
)

Index = QModelIndex | QPersistentModelIndex


@dataclass
class StartRow:
    name: str
    text: str = "1.0"
    unit: str = ""  # as typed; '' for the SI unit the equations imply (or none)

    @property
    def value(self) -> float | None:
        return parse_number(self.text)

    @property
    def problem(self) -> str:
        """What is wrong with the start value or the unit, naming the unknown ('' if fine)."""
        which, what = value_and_unit_problem(self.text, self.value, self.unit)
        if not what:
            return ""
        return f"{'start value' if which == 'value' else 'unit'} of {self.name}: {what}"


class UnknownsModel(NamedRows, QAbstractTableModel):
    """The unknowns in the order of x, with an editable start value and unit each
    (remembered by name while the equations are edited). The start value is in the unit;
    a blank unit means the SI unit the equations imply."""

    COLUMNS = ("unknown", "start value", "unit")
    VALUE, UNIT = 1, 2
    row_type = StartRow

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self._rows: list[StartRow] = []
        self._memory: dict[str, StartRow] = {}
        self._font = number_font()

    def load(self, starts: Sequence[StartValue]) -> None:
        self.beginResetModel()
        self._memory = {s.name: StartRow(s.name, repr(float(s.x0)), s.unit or "")
                        for s in starts}
        self._rows = list(self._memory.values())
        self.endResetModel()

    def starts(self) -> dict[str, float | None]:
        return {r.name: r.value for r in self._rows}

    def units(self) -> dict[str, str]:
        """name -> unit, for the unknowns on screen that have one."""
        return {r.name: r.unit.strip() for r in self._rows if r.unit.strip()}

    def problems(self) -> list[str]:
        return [r.problem for r in self._rows if r.problem]

    def names(self) -> list[str]:
        return [r.name for r in self._rows]

    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008 (Qt signature)
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self.COLUMNS)

    def headerData(self, section: int, orientation: Qt.Orientation,
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if role == Qt.ItemDataRole.DisplayRole and orientation == Qt.Orientation.Horizontal:
            return self.COLUMNS[section]
        if role == Qt.ItemDataRole.ToolTipRole and orientation == Qt.Orientation.Horizontal \
                and section == self.UNIT:
            return ("the unit the unknown's start value and result are in (e.g. L/s); "
                    "blank: the SI unit the equations imply")
        return None

    def flags(self, index: Index) -> Qt.ItemFlag:
        base = Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable
        return base | Qt.ItemFlag.ItemIsEditable if index.column() > 0 else base

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid():
            return None
        row = self._rows[index.row()]
        col = index.column()
        if role in (Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.EditRole):
            return (row.name, row.text, row.unit)[col]
        if role == Qt.ItemDataRole.FontRole:
            return self._font
        which, _what = value_and_unit_problem(row.text, row.value, row.unit)
        # only the cell at fault is marked: a bad unit is not a bad start value
        bad = col > 0 and which == ("unit" if col == self.UNIT else "value")
        problem = row.problem if bad else ""
        if role == Qt.ItemDataRole.BackgroundRole and bad:
            return QBrush(INVALID_BACKGROUND)
        if role == Qt.ItemDataRole.ForegroundRole and bad:
            return QBrush(INVALID_FOREGROUND)
        if role == Qt.ItemDataRole.ToolTipRole and bad:
            return problem
        return None

    def setData(self, index: Index, value: Any, role: int = Qt.ItemDataRole.EditRole) -> bool:
        if not index.isValid() or index.column() == 0 or role != Qt.ItemDataRole.EditRole:
            return False
        row = self._rows[index.row()]
        text = "" if value is None else str(value)
        if index.column() == self.UNIT:
            text = " ".join(text.split())
            if text == row.unit:
                return False
            row.unit = text
        else:
            if text == row.text:
                return False
            row.text = text
        self.dataChanged.emit(index, index)
        return True


class SystemRunModel(QAbstractTableModel):
    """Every iterate of one system run: k, block, each unknown, ||F||, step length, damping."""

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self.run: Any = None
        self._unknowns: tuple[str, ...] = ()
        self._units: dict[str, str] = {}
        self._font = number_font()
        self._digits = DEFAULT_DIGITS

    def set_digits(self, digits: int) -> None:
        self._digits = int(digits)
        if self.rowCount():
            self.dataChanged.emit(self.index(0, 0),
                                  self.index(self.rowCount() - 1, self.columnCount() - 1))

    def set_run(self, run: Any, units: dict[str, str] | None = None) -> None:
        """Show ``run``; ``units`` (unknown -> unit) label the unknowns' columns ``Q1 [L/s]``
        as the tables window labels its columns (the iterates are in those units)."""
        self.beginResetModel()
        self.run = run
        self._unknowns = tuple(run.unknowns) if run is not None else ()
        self._units = dict(units or {})
        self.endResetModel()

    def headers(self) -> list[str]:
        named = [f"{n} [{self._units[n]}]" if self._units.get(n) else n for n in self._unknowns]
        return ["k", "block", *named, "||F||", "step length", "damping"]

    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() or self.run is None else len(self.run.steps)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self.headers())

    def headerData(self, section: int, orientation: Qt.Orientation,
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if role == Qt.ItemDataRole.DisplayRole and orientation == Qt.Orientation.Horizontal:
            return self.headers()[section]
        return None

    def starts_block(self, row: int) -> bool:
        """Whether the row is a block's start point (no step taken to reach it)."""
        steps = self.run.steps
        return row == 0 or steps[row - 1].block != steps[row].block

    def raw(self, row: int, column: int) -> Any:
        s = self.run.steps[row]
        # a block's start point has no step: blank, not a step of length 0 with damping 0
        step = (None, None) if self.starts_block(row) else (s.step_norm, s.damping)
        values = [s.k, s.block + 1, *s.x.values(), s.residual_norm, *step]
        return values[column]

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid() or self.run is None:
            return None
        value = self.raw(index.row(), index.column())
        if role == Qt.ItemDataRole.DisplayRole:
            return str(value) if isinstance(value, int) else format_number(value, self._digits)
        if role == Qt.ItemDataRole.ToolTipRole and isinstance(value, float):
            return words.exact(value)
        if role == Qt.ItemDataRole.ToolTipRole and value is None:
            return "the start point of this block: no step yet"
        if role == Qt.ItemDataRole.UserRole:  # full precision for copying (views.table_text)
            return value
        if role == Qt.ItemDataRole.FontRole:
            return self._font
        if role == Qt.ItemDataRole.TextAlignmentRole:
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return None
