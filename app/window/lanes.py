"""Method lanes: one per method, side by side, each a summary line over its iteration table."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from PySide6.QtCore import QEvent, Qt, Signal
from PySide6.QtWidgets import (
    QFrame,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QScrollArea,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from app.documents import words
from app.documents.figures import method_color
from app.documents.words import method_label, method_title
from app.window.models import DEFAULT_DIGITS, RunModel, fix_lines, format_number, number_font
from app.window.views import CopyTableView, FittedNumberDelegate
from solvers.records import Run
from solvers.worksheet import DEFAULT_METHODS

FAILED_STYLE = "color: #8A2B00; font-weight: bold;"
LANE_WIDTH = 380  # pixels: room for the summary and five number columns at 5 figures
OK_STYLE = "color: #1F5F3F; font-weight: bold;"


def summary_text(run: Run, digits: int) -> str:
    """Root, iterates, evaluations, stop reason and observed order, on two lines.

    A run that did not converge has no root: its last iterate is shown as "last x" so it
    can never be copied into a design as one.
    """
    order_text = words.order_text(run.order, "n/a")
    what = "root" if run.converged else "last x"
    return (f"{what} {format_number(run.root, digits)}   stop: {words.reason_short(run.reason)}\n"
            f"{_count(run.iterations, 'iterate')} · {_count(run.evaluations, 'evaluation')} · "
            f"order ≈ {order_text}")


def _count(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"


def verdict_text(run: Run) -> str:
    if run.converged:
        extra = f"  (f′ {run.derivative})" if run.derivative else ""
        return "✓ converged" + extra
    detail = words.detail_text(run.detail)
    return f"✗ FAILED: {words.reason_text(run.reason)}" + (f" — {detail}" if detail else "")


class TwoLineLabel(QLabel):
    """A word-wrapped label of two lines whose text ends in "…" where it would need more
    (a failed run's record can run to four); the caller puts the whole text in its
    tooltip. ``full_text()`` is the text set."""

    def __init__(self, text: str = "", parent: QWidget | None = None) -> None:
        super().__init__(text, parent)
        self._full = text

    def setText(self, text: str) -> None:  # noqa: N802 (Qt name)
        self._full = text
        self._fit()

    def full_text(self) -> str:
        return self._full

    def resizeEvent(self, event: Any) -> None:  # noqa: N802 (Qt name)
        super().resizeEvent(event)
        self._fit()

    def _fit(self) -> None:
        metrics = self.fontMetrics()
        # two lines' width, less the slack word wrapping loses at line ends
        room = int(0.9 * 2 * max(1, self.contentsRect().width()))
        QLabel.setText(self, metrics.elidedText(self._full, Qt.TextElideMode.ElideRight,
                                                room))


class MethodLane(QFrame):
    """One method's result: coloured title, verdict, summary, and its iterates."""

    activated = Signal(str)  # method name, when the user works in this lane

    def __init__(self, method: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.method = method
        self._named: tuple[str, str | None] = ("x", None)  # the unknown and its unit
        self.setObjectName(f"lane_{method}")
        self.setFrameShape(QFrame.Shape.StyledPanel)
        self.setMinimumWidth(LANE_WIDTH)
        color = method_color(method)
        self.title = QLabel(method_title(method))
        # Qt paints a one-sided border only when the rule names the widget and clears the
        # others; without the selector the stripe silently never appeared.
        self.title.setStyleSheet(f"QLabel {{ font-weight: bold; border: none; "
                                 f"border-left: 6px solid {color}; padding-left: 5px; }}")
        self.verdict = TwoLineLabel("not run yet")
        self.verdict.setObjectName(f"verdict_{method}")
        self.verdict.setWordWrap(True)
        # from the top, ending in "…" where it needs more than its two lines (centred and
        # cut, its first and last lines lost their halves); the tooltip has it all
        self.verdict.setAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop)
        fix_lines(self.verdict, 2)
        self.summary = QLabel("")
        self.summary.setObjectName(f"summary_{method}")
        self.summary.setFont(number_font())
        self.summary.setWordWrap(True)
        fix_lines(self.summary, 2)
        self.summary.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.model = RunModel(self)
        self.table = CopyTableView()
        self.table.setObjectName(f"table_{method}")
        self.table.setModel(self.model)
        # The columns share the lane's width: a column half past the edge shows only the
        # leading digits of a right-aligned number (5.465405906e-12 read as 5.4654). A
        # number too long for its cell drops trailing digits instead, keeping its exponent
        # and ending in "…"; the user widens a column by dragging its divider, double-
        # clicking it, or Ctrl+Shift+W (every column), and the table then scrolls sideways.
        self.delegate = FittedNumberDelegate(DEFAULT_DIGITS, self.table)
        self.table.setItemDelegate(self.delegate)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        header.setStretchLastSection(False)
        header.setMinimumSectionSize(32)
        self.table.setTextElideMode(Qt.TextElideMode.ElideMiddle)
        self.table.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAsNeeded)
        self.table.setHorizontalScrollMode(CopyTableView.ScrollMode.ScrollPerPixel)
        self.table.viewport().installEventFilter(self)
        self.table.setToolTip(f"Every iterate of {method_label(method)} (Ctrl+C copies "
                              "the selection as tab-separated text)")
        self.table.clicked.connect(lambda _i: self.activated.emit(self.method))
        head = QHBoxLayout()
        head.addWidget(self.title, 0, Qt.AlignmentFlag.AlignTop)  # level with the verdict
        head.addWidget(self.verdict, 1)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 3, 4, 3)
        layout.setSpacing(2)
        layout.addLayout(head)
        layout.addWidget(self.summary)
        layout.addWidget(self.table, 1)
        self._digits = DEFAULT_DIGITS

    @property
    def run(self) -> Run | None:
        return self.model.run

    def set_run(self, run: Run | None, unknown: str = "x", unit: str | None = None,
                f_unit: str | None = None) -> None:
        """``f_unit``: the residual's unit for people (f and f′ columns), None unknown."""
        self._named = (unknown, unit)
        self.model.set_run(run, unknown, unit, f_unit)
        for c in range(self.model.columnCount()):
            self.table.setColumnHidden(c, c in self.model.empty_columns())
        self._size_columns()
        self._refresh()

    def _size_columns(self) -> None:
        # Only the iterate number has a width of its own; the number columns share the
        # rest alike (no cell is read to size them: resizeColumnsToContents was a third
        # of the time from Solve to a full screen). Widths the user set are kept.
        table = self.table
        if table.user_sized:
            return
        first = table.fontMetrics().horizontalAdvance("8888") + 12
        shown = [c for c in range(1, self.model.columnCount()) if not table.isColumnHidden(c)]
        room = table.viewport().width() - first
        # Every column inside the lane (a column half past the edge shows the leading
        # digits of a right-aligned number as if they were all); what does not fit is
        # marked "…" in the cell, and the user widens the column to read it.
        table.setColumnWidth(0, first)
        for i, c in enumerate(shown):
            share = room // len(shown) + (1 if i < room % len(shown) else 0)
            table.setColumnWidth(c, max(share, 32))

    def eventFilter(self, watched: Any, event: Any) -> bool:  # noqa: N802 (Qt name)
        if (watched is self.table.viewport() and event.type() == QEvent.Type.Resize
                and event.size().width() != event.oldSize().width()):
            self._size_columns()
        return super().eventFilter(watched, event)

    def set_digits(self, digits: int) -> None:
        self._digits = digits
        self.delegate.digits = digits
        self.model.set_digits(digits)
        self._size_columns()
        self._refresh()

    def set_stale(self, stale: bool) -> None:
        self.table.setEnabled(not stale)
        if stale and self.run is not None:
            self.verdict.setText("inputs changed since this run: press Solve")
            self.verdict.setStyleSheet("color: #555555; font-style: italic;")
        else:
            self._refresh()

    def _refresh(self) -> None:
        run = self.run
        if run is None:
            self.verdict.setText("not run yet")
            self.verdict.setStyleSheet("color: #555555;")
            self.summary.setText("")
            self.summary.setToolTip("")
            return
        self.verdict.setText(verdict_text(run))
        self.verdict.setStyleSheet(OK_STYLE if run.converged else FAILED_STYLE)
        # the whole verdict, record included: a long one does not fit its two lines
        self.verdict.setToolTip(verdict_text(run) if not run.converged
                                else words.reason_text(run.reason))
        self.summary.setText(summary_text(run, self._digits))
        self.summary.setToolTip(f"root = {words.exact(run.root)}\n"
                                f"{words.run_message(run, *self._named)}")


def digits_box() -> tuple[QLabel, QSpinBox]:
    """The significant-figures control (its label and spin box) of every window's tables."""
    box = QSpinBox()
    box.setObjectName("digitsBox")
    box.setRange(3, 17)
    box.setValue(DEFAULT_DIGITS)
    box.setToolTip("Significant figures shown in the tables (copies are always "
                   "full precision)")
    label = QLabel("Si&gnificant figures")
    label.setBuddy(box)
    return label, box


class LanesPanel(QWidget):
    """The lanes side by side, the agreement note and the significant-figures control."""

    method_activated = Signal(str)
    digits_changed = Signal(int)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.lanes: dict[str, MethodLane] = {}
        self.agreement = QLabel("Press Solve (Ctrl+Return) to run the methods side by side.")
        self.agreement.setObjectName("agreementNote")
        self.agreement.setWordWrap(True)
        self.agreement.setAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop)
        self.agreement.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        # three lines on screen (agreement, failures and start-value notes), fixed so a
        # new text never re-lays the window out; a longer text (a root below absolute
        # zero, a long start note) scrolls in place: a fixed-height label alone cut its
        # first and last lines in half, and what they said was lost
        self.agreement_area = QScrollArea()
        self.agreement_area.setObjectName("agreementArea")
        self.agreement_area.setWidget(self.agreement)
        self.agreement_area.setWidgetResizable(True)
        self.agreement_area.setFrameShape(QFrame.Shape.NoFrame)
        self.agreement_area.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.agreement_area.setFocusPolicy(Qt.FocusPolicy.NoFocus)  # Tab visits controls
        fix_lines(self.agreement_area, 3)
        digits_label, self.digits = digits_box()
        head = QHBoxLayout()
        head.addWidget(self.agreement_area, 1)
        head.addWidget(digits_label)
        head.addWidget(self.digits)
        # Lanes keep a readable width; more than fit side by side scroll sideways (six
        # lanes squeezed into 1280 pixels showed "0.…" in every cell).
        row_widget = QWidget()
        self._row = QHBoxLayout(row_widget)
        self._row.setContentsMargins(0, 0, 0, 0)
        self._row.setSpacing(6)
        self.scroll = QScrollArea()
        self.scroll.setObjectName("lanesScroll")
        self.scroll.setWidget(row_widget)
        self.scroll.setWidgetResizable(True)
        self.scroll.setFrameShape(QFrame.Shape.NoFrame)
        self.scroll.setVerticalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.scroll.setFocusPolicy(Qt.FocusPolicy.NoFocus)
        # The lanes are exactly as tall as the visible strip (the scroll area alone made
        # them taller once its sideways scroll bar appeared, cutting off the tables' ends).
        self._row_widget = row_widget
        self.scroll.viewport().installEventFilter(self)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 2, 4, 2)
        layout.setSpacing(3)
        layout.addLayout(head)
        layout.addWidget(self.scroll, 1)
        self.digits.valueChanged.connect(self._on_digits)
        self.set_methods(DEFAULT_METHODS)

    def set_methods(self, methods: Sequence[str]) -> None:
        """One lane per method, in this order; a lane kept keeps its run."""
        if list(methods) == list(self.lanes):
            return
        old = self.lanes
        for lane in old.values():
            self._row.removeWidget(lane)
        self.lanes = {}
        for name in methods:
            lane = old.pop(name, None)
            if lane is None:
                lane = MethodLane(name)
                lane.set_digits(self.digits.value())
                lane.activated.connect(self.method_activated)
            self._row.addWidget(lane, 1)
            self.lanes[name] = lane
        for lane in old.values():
            lane.hide()  # off screen now, not when the event loop gets round to it
            lane.setParent(None)
            lane.deleteLater()

    def eventFilter(self, watched: Any, event: Any) -> bool:  # noqa: N802 (Qt name)
        if watched is self.scroll.viewport() and event.type() == QEvent.Type.Resize:
            self._row_widget.setMaximumHeight(event.size().height())
        return super().eventFilter(watched, event)

    def show_solution(self, solution: Any) -> None:
        self.set_methods([r.method for r in solution.runs])
        for run in solution.runs:
            self.lanes[run.method].set_run(run, solution.equation.unknown,
                                           solution.equation.unknown_unit,
                                           solution.equation.residual_unit(derived=True))
        text = agreement_text(solution, self.digits.value())
        self.agreement.setText(text)
        self.agreement.setToolTip(text.replace("  ", "\n"))
        self.agreement.setStyleSheet("")

    def set_stale(self, stale: bool) -> None:
        for lane in self.lanes.values():
            lane.set_stale(stale)

    def add_note(self, note: str) -> None:
        """One more sentence under the agreement (what a polish started from)."""
        text = f"{self.agreement.text()}  {note}"
        self.agreement.setText(text)
        self.agreement.setToolTip(text.replace("  ", "\n"))

    def _on_digits(self, value: int) -> None:
        for lane in self.lanes.values():
            lane.set_digits(value)
        self.digits_changed.emit(value)


def agreement_text(solution: Any, digits: int = 6) -> str:
    """The agreement sentence (the words module's), failures and start-value notes."""
    text = words.agreement_text(solution)
    failed = [method_label(r.method) for r in solution.runs if not r.converged]
    if failed:
        text += f"  Failed: {', '.join(failed)} (see the lane for why)."
    notes = words.start_notes(solution.start, getattr(solution.equation, "unknown_unit", None))
    if notes:
        text += "  Start values: " + "; ".join(notes) + "."
    at_root = solution.definitions_at_root  # (computed in the solve job: read here)
    if at_root is not None:
        # what the definitions come to is part of the answer (a Reynolds number tells the
        # flow regime the friction relation assumed)
        run, values = at_root
        text += (f"  At {method_label(run.method)}'s root: "
                 + words.definitions_line(values, digits,
                                          solution.equation.definition_units(derived=True))
                 + ".")
    return text.strip()
