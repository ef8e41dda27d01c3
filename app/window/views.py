"""Table views that copy as tab-separated text (Ctrl+C and a context menu) for spreadsheets."""

from __future__ import annotations

import math

from PySide6.QtCore import QModelIndex, QSize, Qt
from PySide6.QtGui import QAction, QFontMetrics, QGuiApplication, QKeySequence
from PySide6.QtWidgets import (
    QAbstractItemView,
    QHeaderView,
    QMenu,
    QStyledItemDelegate,
    QStyleOptionViewItem,
    QTableView,
    QWidget,
)

from app.documents import words

CELL_PADDING = 8  # pixels the style keeps free inside a cell
HIDDEN_MARK = "…"  # after a number shown with fewer figures than asked for


def fitted_text(value: float, digits: int, metrics: QFontMetrics, width: int) -> str:
    """``value`` with ``digits`` significant figures; fewer, marked "…", if it must fit ``width``.

    A number cut at the cell edge reads as a different number (5.465405906e-12 seen as
    "5.4654"); dropping trailing digits keeps the magnitude and the exponent, and the
    trailing "…" says digits are hidden (0.0003… is not 0.0003: three rows that differ
    beyond the fourth figure must not read alike). The full value is in the tooltip and
    in every copy; widening the column shows it.
    """
    full = words.number(value, digits)
    if not math.isfinite(value):
        return full
    if metrics.horizontalAdvance(full) <= width:
        return full
    text = full
    for d in range(digits - 1, 0, -1):
        shorter = words.number(value, d)
        if shorter == full:
            continue  # no figure dropped yet: still too wide
        mantissa, e, exponent = shorter.partition("e")
        text = mantissa + HIDDEN_MARK + e + exponent  # 9.188…e-05: the exponent stays last
        if metrics.horizontalAdvance(text) <= width:
            break
    return text


class FittedNumberDelegate(QStyledItemDelegate):
    """Shows float cells with as many of the model's digits as the column has room for."""

    def __init__(self, digits: int, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.digits = digits
        self._shown: dict[tuple[str, int, int, str], str] = {}

    def initStyleOption(self, option: QStyleOptionViewItem, index: QModelIndex) -> None:  # noqa: N802
        super().initStyleOption(option, index)
        raw = index.data(Qt.ItemDataRole.UserRole)
        if isinstance(raw, float):
            # Remembered per value, figures, width and font: a repaint asks for the same
            # few hundred cells again and again.
            key = (repr(raw), self.digits, option.rect.width(), option.font.key())
            text = self._shown.get(key)
            if text is None:
                if len(self._shown) > 20_000:
                    self._shown.clear()
                text = self._shown[key] = fitted_text(raw, self.digits,
                                                      QFontMetrics(option.font),
                                                      option.rect.width() - CELL_PADDING)
            option.text = text

    def sizeHint(self, option: QStyleOptionViewItem, index: QModelIndex) -> QSize:  # noqa: N802
        """Room for every figure asked for (what "fit columns" and a double-click on the
        header's divider widen a column to)."""
        hint = super().sizeHint(option, index)
        raw = index.data(Qt.ItemDataRole.UserRole)
        if isinstance(raw, float):
            font = index.data(Qt.ItemDataRole.FontRole) or option.font
            text = fitted_text(raw, self.digits, QFontMetrics(font), 10**6)
            hint.setWidth(QFontMetrics(font).horizontalAdvance(text) + CELL_PADDING + 6)
        return hint


def table_text(view: QTableView, *, selection_only: bool = True) -> str:
    """The selected cells (or the whole table) as TSV with a header row.

    Numbers are copied at full precision (``repr``) from the model's UserRole, so a
    spreadsheet receives exactly the doubles the methods produced.
    """
    model = view.model()
    if model is None:
        return ""
    indexes = view.selectionModel().selectedIndexes() if selection_only else []
    if indexes:
        rows = sorted({i.row() for i in indexes})
        cols = sorted({i.column() for i in indexes})
    else:
        rows = list(range(model.rowCount()))
        cols = [c for c in range(model.columnCount()) if not view.isColumnHidden(c)]
    header = [str(model.headerData(c, Qt.Orientation.Horizontal) or "") for c in cols]
    lines = ["\t".join(header)]
    for r in rows:
        cells = []
        for c in cols:
            index = model.index(r, c, QModelIndex())
            raw = model.data(index, Qt.ItemDataRole.UserRole)
            if isinstance(raw, float):
                cells.append(repr(raw))
            elif isinstance(raw, int) and not isinstance(raw, bool):
                cells.append(str(raw))
            else:
                cells.append(str(model.data(index, Qt.ItemDataRole.DisplayRole) or ""))
        lines.append("\t".join(cells))
    return "\n".join(lines) + "\n"


class CopyTableView(QTableView):
    """A QTableView with Ctrl+C / context menu "Copy" and "Copy whole table" as TSV."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectItems)
        self.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.setAlternatingRowColors(True)
        # Tab leaves the table (arrows move between cells): stepping through every cell of
        # a 100-iterate table before reaching the next control is a keyboard trap.
        self.setTabKeyNavigation(False)
        self.setWordWrap(False)
        self.verticalHeader().setVisible(False)
        self.verticalHeader().setDefaultSectionSize(self.fontMetrics().height() + 6)
        self.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        self.horizontalHeader().setStretchLastSection(True)
        # A heading wider than its column keeps its start and ends in "…" (Qt's headers
        # clip both ends by default: "f′(v) [Pa/(L/mol)]" read "(v) [Pa/(L/mol)", the
        # derivative's name gone); the models give the whole heading in the tooltip.
        self.horizontalHeader().setTextElideMode(Qt.TextElideMode.ElideRight)
        self.setContextMenuPolicy(Qt.ContextMenuPolicy.CustomContextMenu)
        self.customContextMenuRequested.connect(self._menu)
        self.copy_action = QAction("&Copy", self)
        self.copy_action.setShortcut(QKeySequence.StandardKey.Copy)
        self.copy_action.setShortcutContext(Qt.ShortcutContext.WidgetShortcut)
        self.copy_action.triggered.connect(self.copy_selection)
        self.addAction(self.copy_action)
        self.copy_all_action = QAction("Copy &whole table", self)
        self.copy_all_action.triggered.connect(self.copy_all)
        self.fit_action = QAction("&Widen columns to show every figure", self)
        self.fit_action.setShortcut(QKeySequence("Ctrl+Shift+W"))
        self.fit_action.setShortcutContext(Qt.ShortcutContext.WidgetShortcut)
        self.fit_action.triggered.connect(self.fit_columns)
        # True once the user sizes a column (drag or double-click on a divider, or the
        # action above); views that share their width among columns then leave them be.
        self.user_sized = False
        self.horizontalHeader().sectionResized.connect(self._on_section_resized)
        self.addAction(self.fit_action)

    def fit_columns(self) -> None:
        """Every column as wide as its widest cell at the figures asked for."""
        self.user_sized = True
        self.resizeColumnsToContents()

    def _on_section_resized(self, _column: int, _old: int, _new: int) -> None:
        # Only a resize made with the mouse on the header is the user's.
        if QGuiApplication.mouseButtons() != Qt.MouseButton.NoButton:
            self.user_sized = True

    def copy_selection(self) -> str:
        text = table_text(self, selection_only=True)
        QGuiApplication.clipboard().setText(text)
        return text

    def copy_all(self) -> str:
        text = table_text(self, selection_only=False)
        QGuiApplication.clipboard().setText(text)
        return text

    def _menu(self, pos) -> None:  # noqa: ANN001 (QPoint)
        menu = QMenu(self)
        menu.addAction(self.copy_action)
        menu.addAction(self.copy_all_action)
        menu.addSeparator()
        menu.addAction(self.fit_action)
        menu.exec(self.viewport().mapToGlobal(pos))
