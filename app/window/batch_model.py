"""The table model of a table of inputs and its results, over the batch's arrays."""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt

from app.documents import words
from app.window.models import (
    DEFAULT_DIGITS,
    INVALID_BACKGROUND,
    INVALID_FOREGROUND,
    format_number,
    number_font,
)

Index = QModelIndex | QPersistentModelIndex
RESULT_TITLES = ("root", "reason", "iterations", "residual")


class BatchModel(QAbstractTableModel):
    """Input columns and, once solved, the results, read straight from the arrays.

    Nothing is copied per row: 10^5 rows scroll as fast as 10. ``Qt.UserRole`` gives the
    raw value; a row that did not converge is shaded, its reason in words in the tooltip.
    """

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self.names: list[str] = []
        self.units: list[str] = []
        self.columns: list[np.ndarray] = []
        self.batch: Any = None
        self._digits = DEFAULT_DIGITS
        self._font = number_font()
        self._notes: dict[int, list[str]] = {}

    def set_inputs(self, names: Sequence[str], columns: Sequence[np.ndarray],
                   units: Sequence[str] = ()) -> None:
        """The input columns; ``units`` each column's unit ('' for a plain number), shown
        in its heading as ``NAME [unit]``."""
        self.beginResetModel()
        self.names = list(names)
        self.units = [units[j] if j < len(units) else "" for j in range(len(self.names))]
        self.columns = [np.asarray(c, dtype=np.float64).reshape(-1) for c in columns]
        self.batch = None
        self._notes = {}
        self.endResetModel()

    def set_batch(self, batch: Any) -> None:
        self.beginResetModel()
        self.batch = batch
        self._notes = {}
        for index, code in batch.notes:
            self._notes.setdefault(index, []).append(words.batch_note_text(code))
        self.endResetModel()

    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008 (Qt signature)
        return 0 if parent.isValid() or not self.columns else int(self.columns[0].size)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008
        if parent.isValid():
            return 0
        return len(self.names) + (len(RESULT_TITLES) if self.batch is not None else 0)

    def headerData(self, section: int, orientation: Qt.Orientation,
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if role != Qt.ItemDataRole.DisplayRole:
            return None
        if orientation == Qt.Orientation.Vertical:
            return str(section + 1)
        equation = getattr(self.batch, "equation", None)
        unknown = getattr(equation, "unknown", "") or "x"
        f_unit = equation.residual_unit(derived=True) if equation is not None else None
        headings = words.iterate_headings(unknown, unit=getattr(equation, "unknown_unit", None),
                                          f_unit=f_unit)
        # the root in the unknown's name and unit (D [mm]), the residual as f(D) in f's
        # unit (f(D) [m]), as the row's lane below heads them
        titles = [*(f"{n} [{u}]" if u else n for n, u in zip(self.names, self.units,
                                                             strict=True)),
                  headings["x"], *RESULT_TITLES[1:3], headings["fx"]]
        return titles[section] if 0 <= section < len(titles) else None

    def failed(self, row: int) -> bool:
        return self.batch is not None and not bool(self.batch.converged.flat[row])

    def raw(self, row: int, column: int) -> Any:
        if column < len(self.names):
            return float(self.columns[column][row])
        b, which = self.batch, RESULT_TITLES[column - len(self.names)]
        if which == "reason":
            return words.reason_short(b.reason_at(row))
        if which == "iterations":
            return int(b.iterations.flat[row])
        return float(getattr(b, which).flat[row])

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid():
            return None
        row, column = index.row(), index.column()
        if role == Qt.ItemDataRole.BackgroundRole:
            return INVALID_BACKGROUND if self.failed(row) else None
        if role == Qt.ItemDataRole.ForegroundRole:
            return INVALID_FOREGROUND if self.failed(row) else None
        value = self.raw(row, column)
        if role == Qt.ItemDataRole.DisplayRole:
            if isinstance(value, float):
                return "—" if math.isnan(value) and column >= len(self.names) \
                    else format_number(value, self._digits)
            return str(value)
        if role == Qt.ItemDataRole.UserRole:
            return value
        if role == Qt.ItemDataRole.ToolTipRole:
            lines = [words.exact(value)] if isinstance(value, float) else []
            if self.batch is not None:
                lines.append(words.reason_text(self.batch.reason_at(row)))
                lines.extend(self._notes.get(row, []))
            return "\n".join(lines) or None
        if role == Qt.ItemDataRole.FontRole and isinstance(value, (int, float)):
            return self._font
        if role == Qt.ItemDataRole.TextAlignmentRole and isinstance(value, (int, float)):
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return None
