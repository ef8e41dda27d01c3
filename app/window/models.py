"""Qt table models over the core's records: iterates of a Run, roots of a Scan, parameters.

Views never hold numbers of their own: each table is a QAbstractTableModel that reads
the frozen records from solvers/ and formats them for display. The raw float is
available under ``Qt.UserRole`` (for tests, copying at full precision and sorting);
the tooltip shows ``repr`` so no digit is ever hidden from a checker.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt, Signal
from PySide6.QtGui import QBrush, QColor, QFont, QFontDatabase

from app.documents import tables, words
from solvers.records import Run, Step

Index = QModelIndex | QPersistentModelIndex
INVALID_BACKGROUND = QColor("#FBE3D6")  # pale vermillion: reads as "attention" without red/green
INVALID_FOREGROUND = QColor("#8A2B00")
DEFAULT_DIGITS = words.DEFAULT_FIGURES


def fix_lines(label: Any, lines: int) -> None:
    """Give a changing, word-wrapped label a fixed height of ``lines`` lines.

    A label that grows with its text re-lays out the window, which resizes and redraws
    the plot; during a scan that showed up as a long pause of the UI thread.
    """
    label.setFixedHeight(label.fontMetrics().lineSpacing() * lines + 4)


def number_font() -> QFont:
    font = QFontDatabase.systemFont(QFontDatabase.SystemFont.FixedFont)
    font.setStyleHint(QFont.StyleHint.Monospace)
    return font


def format_number(value: float | int | None, digits: int = DEFAULT_DIGITS) -> str:
    """A float with ``digits`` significant figures (the words module's one formatter)."""
    return words.number(value, digits)


@dataclass(frozen=True)
class Column:
    title: str
    value: Callable[[Any], Any]
    tip: str = ""


class _RecordModel(QAbstractTableModel):
    """A read-only table of frozen records with a column table (no if-chains per column)."""

    columns: Sequence[Column] = ()

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self._rows: list[Any] = []
        self._digits = DEFAULT_DIGITS
        self._font = number_font()

    def set_digits(self, digits: int) -> None:
        self._digits = int(digits)
        if self._rows:
            self.dataChanged.emit(self.index(0, 0), self.index(len(self._rows) - 1,
                                                               len(self.columns) - 1))

    def set_rows(self, rows: Sequence[Any]) -> None:
        self.beginResetModel()
        self._rows = list(rows)
        self.endResetModel()

    def rows(self) -> list[Any]:
        return list(self._rows)

    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008 (Qt signature)
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self.columns)

    def headerData(self, section: int, orientation: Qt.Orientation,
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if orientation == Qt.Orientation.Horizontal and 0 <= section < len(self.columns):
            if role == Qt.ItemDataRole.DisplayRole:
                return self.columns[section].title
            if role == Qt.ItemDataRole.ToolTipRole:
                # the heading as the subclass shows it (with the unknown and units), whole
                # even where the column is too narrow for it, then what the column holds
                heading = self.headerData(section, orientation, Qt.ItemDataRole.DisplayRole)
                tip = self.columns[section].tip
                return f"{heading}: {tip}" if tip else heading
        return None

    def raw(self, row: int, column: int) -> Any:
        return self.columns[column].value(self._rows[row])

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid():
            return None
        value = self.raw(index.row(), index.column())
        if role == Qt.ItemDataRole.DisplayRole:
            if isinstance(value, float) or value is None:
                return format_number(value, self._digits)
            return str(value)
        if role == Qt.ItemDataRole.UserRole:
            return value
        if role == Qt.ItemDataRole.ToolTipRole and isinstance(value, float):
            return words.exact(value)
        if role == Qt.ItemDataRole.FontRole and isinstance(value, (int, float)):
            return self._font
        if role == Qt.ItemDataRole.TextAlignmentRole and isinstance(value, (int, float)):
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return None


class RunModel(_RecordModel):
    """The iterates of one :class:`Run`: k, x, f(x), f'(x), Δx, and the bracket ends."""

    columns = (
        Column("k", lambda s: s.k, "iterate number (0 = starting point)"),
        Column("x", lambda s: s.x, "iterate x_k"),
        Column("f(x)", lambda s: s.fx, "residual f(x_k)"),
        Column("f′(x)", lambda s: s.dfx, "derivative used at x_k (Newton–Raphson)"),
        Column("Δx", lambda s: s.dx, "step x_k − x_(k−1)"),
        Column("lo", lambda s: s.lo, "bracket end held after this iterate"),
        Column("hi", lambda s: s.hi, "bracket end held after this iterate"),
    )

    keys = ("k", "x", "fx", "dfx", "dx", "lo", "hi")  # the Step field of each column

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self.run: Run | None = None
        self._headings = words.iterate_headings("x")

    def set_run(self, run: Run | None, unknown: str = "x", unit: str | None = None,
                f_unit: str | None = None) -> None:
        """Show ``run``'s iterates; the headings name ``unknown`` (f, F(f), F′(f) for an
        unknown called f), its ``unit`` (``D [mm]``) and the residual's ``f_unit``."""
        self.run = run
        headings = words.iterate_headings(unknown, unit=unit, f_unit=f_unit)
        if headings != self._headings:
            self._headings = headings
            self.headerDataChanged.emit(Qt.Orientation.Horizontal, 0, len(self.columns) - 1)
        self.set_rows(run.steps if run is not None else [])

    def headerData(self, section: int, orientation: Qt.Orientation,
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if (orientation == Qt.Orientation.Horizontal and role == Qt.ItemDataRole.DisplayRole
                and 0 <= section < len(self.keys)):
            return self._headings[self.keys[section]]
        return super().headerData(section, orientation, role)

    def step(self, row: int) -> Step:
        return self._rows[row]

    def empty_columns(self) -> list[int]:
        """Columns with no value in any row (e.g. f′ for the secant): the view hides them."""
        return [c for c, col in enumerate(self.columns)
                if self._rows and all(col.value(s) is None for s in self._rows)]


class RootsModel(_RecordModel):
    """The roots of a :class:`solvers.scan.Scan`, sorted by x as the scan returns them."""

    columns = (
        Column("x", lambda r: r.x, "root"),
        Column("residual", lambda r: r.residual, "f at the root"),
        Column("mult.", lambda r: r.multiplicity, "multiplicity (2 = double root)"),
        Column("confirmed", words.confirmed_text,
               "how the scan confirmed the root"),
        Column("located by", words.located_text,
               "what located the root"),
    )

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self._titles = [c.title for c in self.columns]

    def set_roots(self, roots: Sequence[Any], unknown: str = "x",
                  unit: str | None = None, f_unit: str | None = None) -> None:
        """Show ``roots``; the headings name ``unknown``, its ``unit`` and the residual's
        ``f_unit`` (``D [mm]``, ``f(D) [m]``) as the iteration tables do."""
        headings = words.iterate_headings(unknown, unit=unit, f_unit=f_unit)
        titles = [headings["x"], headings["fx"], *(c.title for c in self.columns[2:])]
        if titles != self._titles:
            self._titles = titles
            self.headerDataChanged.emit(Qt.Orientation.Horizontal, 0, len(self.columns) - 1)
        self.set_rows(roots)

    def headerData(self, section: int, orientation: Qt.Orientation,
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if (orientation == Qt.Orientation.Horizontal and role == Qt.ItemDataRole.DisplayRole
                and 0 <= section < len(self._titles)):
            return self._titles[section]
        return super().headerData(section, orientation, role)

    def root(self, row: int) -> Any:
        return self._rows[row]


# ----------------------------------------------------------------- parameters


# A number as an engineer types it: the one rule, shared with tables and the command line.
parse_number = tables.parse_number


@dataclass
class ParameterRow:
    name: str
    text: str = ""
    note: str = ""
    unit: str = ""  # as typed; '' for a plain number (pint reads it in the parse)

    @property
    def value(self) -> float | None:
        return parse_number(self.text)

    @property
    def quantity(self) -> Any:
        """The value for the parser: the number, or a Measured with the unit (None if blank)."""
        from solvers.units import Measured

        value = self.value
        if value is None or not self.unit.strip():
            return value
        return Measured(value, self.unit.strip())

    @property
    def problem(self) -> str:
        _which, what = value_and_unit_problem(self.text, self.value, self.unit)
        return f"{self.name}: {what}" if what else ""


def value_and_unit_problem(text: str, value: float | None, unit: str) -> tuple[str, str]:
    """What is wrong with a number typed beside its unit: ("value" or "unit", the words),
    or ("", "") when nothing is. The unit is checked as text only (pint reads it later)."""
    from solvers.units import unit_text_problem

    if not text.strip():
        return "value", "needs a value"
    if value is None:
        return "value", words.not_a_number(text)
    problem = unit_text_problem(unit) if unit.strip() else ""
    return ("unit", problem) if problem else ("", "")


class NamedRows:
    """Rows that follow a list of names and remember what was typed for a name while it
    leaves and comes back (the equations being edited). A table model mixes it in and
    sets ``row_type`` (made from a name alone)."""

    row_type: Any = None

    def set_names(self, names: Sequence[str]) -> None:
        names = list(dict.fromkeys(names))
        if names == [r.name for r in self._rows]:
            return
        self.beginResetModel()
        self._rows = [self._memory.setdefault(n, self.row_type(n)) for n in names]
        self.endResetModel()


class ParametersModel(NamedRows, QAbstractTableModel):
    """Name, value, unit, note of every parameter the equation uses.

    Rows follow the equation (``set_names``); values, units and notes typed for a name are
    remembered while the equation is edited, so deleting and retyping a name, or
    fixing a typo elsewhere, never loses a value. A value typed with its unit in the value
    cell (``150 mm``) is split: the number stays, the unit goes to the unit cell.
    """

    edited = Signal()
    COLUMNS = ("name", "value", "unit", "note")
    VALUE, UNIT, NOTE = 1, 2, 3

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self._rows: list[ParameterRow] = []
        self._memory: dict[str, ParameterRow] = {}
        self._font = number_font()

    row_type = ParameterRow

    # -- content
    def load(self, parameters: Sequence[Any]) -> None:
        """Replace everything with a worksheet's parameters (name, value, note)."""
        self.beginResetModel()
        self._memory = {p.name: ParameterRow(p.name, repr(float(p.value)), p.note,
                                             getattr(p, "unit", ""))
                        for p in parameters}
        self._rows = list(self._memory.values())
        self.endResetModel()

    def names(self) -> list[str]:
        return [r.name for r in self._rows]

    def remembered_values(self) -> dict[str, Any]:
        """Every name ever given a row, with its value for the parser (a number or a
        Measured with its unit; None when blank or wrong)."""
        return {name: row.quantity for name, row in self._memory.items()}

    def rows(self) -> list[ParameterRow]:
        return list(self._rows)

    def values(self) -> dict[str, Any]:
        return {r.name: r.quantity for r in self._rows if r.value is not None}

    def problems(self) -> list[str]:
        return [r.problem for r in self._rows if r.problem]

    def set_value(self, name: str, text: str) -> None:
        for i, r in enumerate(self._rows):
            if r.name == name:
                self.setData(self.index(i, 1), text)
                return
        self._memory.setdefault(name, ParameterRow(name)).text = text

    # -- Qt
    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self.COLUMNS)

    def headerData(self, section: int, orientation: Qt.Orientation,
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if role == Qt.ItemDataRole.DisplayRole and orientation == Qt.Orientation.Horizontal:
            return self.COLUMNS[section]
        return None

    def flags(self, index: Index) -> Qt.ItemFlag:
        base = Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable
        if index.column() in (self.VALUE, self.UNIT, self.NOTE):
            base |= Qt.ItemFlag.ItemIsEditable
        return base

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid():
            return None
        row = self._rows[index.row()]
        col = index.column()
        if role in (Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.EditRole):
            return (row.name, row.text, row.unit, row.note)[col]
        bad = col in (self.VALUE, self.UNIT) and bool(row.problem)
        if role == Qt.ItemDataRole.BackgroundRole and bad:
            return QBrush(INVALID_BACKGROUND)
        if role == Qt.ItemDataRole.ForegroundRole and bad:
            return QBrush(INVALID_FOREGROUND)
        if role == Qt.ItemDataRole.ToolTipRole:
            if bad:
                return row.problem
            if col == 1 and row.value is not None:
                return repr(row.value)
            if col == self.UNIT and row.unit:  # whole where the narrow column cuts it
                return row.unit
        if role == Qt.ItemDataRole.FontRole and col in (0, 1, 2):
            return self._font
        if role == Qt.ItemDataRole.UserRole and col == 1:
            return row.value
        return None

    def setData(self, index: Index, value: Any, role: int = Qt.ItemDataRole.EditRole) -> bool:
        if not index.isValid() or role != Qt.ItemDataRole.EditRole or index.column() == 0:
            return False
        row = self._rows[index.row()]
        text = "" if value is None else str(value)
        col = index.column()
        if col == self.VALUE:
            from solvers.units import with_unit

            split = with_unit(text) if parse_number(text) is None else None
            number, unit = split if split is not None else (text, row.unit)
            if number == row.text and unit == row.unit:
                return False
            row.text, row.unit = number, unit
            index = self.index(index.row(), self.VALUE)
            last = self.index(index.row(), self.UNIT)
        else:
            field_name = "unit" if col == self.UNIT else "note"
            if col == self.UNIT:
                text = " ".join(text.split())
            if text == getattr(row, field_name):
                return False
            setattr(row, field_name, text)
            last = index
        self.dataChanged.emit(index, last)
        self.edited.emit()
        return True
