"""The roots region: the roots a scan found, its summary and progress, Polish and the design value.

:class:`RootsPanel` shows; the window wires it to the document (scan results, staleness,
the design value) and to the Polish / design actions.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import QEvent, QObject, Qt
from PySide6.QtWidgets import (
    QAbstractItemView,
    QFrame,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QProgressBar,
    QPushButton,
    QScrollArea,
    QVBoxLayout,
)

from app.documents.words import method_label, residual_name, scan_warnings
from app.window.models import DEFAULT_DIGITS, RootsModel, fix_lines, format_number, number_font
from app.window.views import CopyTableView, FittedNumberDelegate

IDLE_FORMAT = "no scan running"
NO_RANGE = "No scan range: set 'scan from' and 'scan to'."
STALE_SCAN = "⚠ Inputs changed since this scan: scan again.\n"


def _num(x: float) -> str:
    return format_number(x, 8)


def _short(x: float) -> str:
    return format_number(x, 6)


def _listed(count: int, word: str, plural: str, xs: list[float], unit: str = "") -> str:
    return (f"{count} {word if count == 1 else plural} at "
            + ", ".join(_short(p) for p in xs[:4]) + ("…" if len(xs) > 4 else "") + unit)


def scan_summary(scan: Any, unknown: str, unit: str | None = None) -> str:
    """Roots, poles, jumps and gaps of a scan in one line, then its warnings; the range
    and the places in the unknown's ``unit`` when it has one (the range is typed in it)."""
    roots = len(scan.roots)
    in_unit = f" {unit}" if unit else ""
    parts = [f"{roots} root{'s' if roots != 1 else ''} of "
             f"{residual_name(unknown)}({unknown}) in "
             f"[{_num(scan.a)}, {_num(scan.b)}]{in_unit}"]
    poles = list(scan.poles)
    if poles:
        parts.append(_listed(len(poles), "pole", "poles", poles, in_unit))
    jumps = list(scan.discontinuities)
    if jumps:
        parts.append(_listed(len(jumps), "jump", "jumps", jumps, in_unit))
    if scan.gaps:
        parts.append(f"undefined on {len(scan.gaps)} stretch"
                     f"{'es' if len(scan.gaps) != 1 else ''}")
    text = "; ".join(parts) + "."
    warnings = scan_warnings(scan)
    if warnings:
        text += "\n⚠ " + "\n⚠ ".join(warnings[:3])
    return text


class RootsPanel(QGroupBox):
    """Scan summary, progress and cancel, the roots list, Polish and the design value."""

    def __init__(self) -> None:
        super().__init__("Roots in range")
        self.model = RootsModel(self)
        self._unit: str | None = None  # the unknown's unit of the scan shown
        self.view = CopyTableView()
        self.view.setObjectName("rootsView")
        self.view.setModel(self.model)
        self.view.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.view.setToolTip("Double-click a root (or Enter) to polish it with every "
                             "method and take it as the start values")
        # x, residual and multiplicity always fit the list (numbers drop trailing digits
        # rather than run past its edge); how each root was confirmed follows, to scroll to.
        self.delegate = FittedNumberDelegate(DEFAULT_DIGITS, self.view)
        self.view.setItemDelegate(self.delegate)
        self.view.horizontalHeader().setStretchLastSection(False)
        # The viewport, not the view: a vertical scroll bar appearing narrows only it.
        self.view.viewport().installEventFilter(self)
        self.summary = QLabel("No scan yet: set 'scan from' and 'scan to', then Scan range.")
        self.summary.setObjectName("rootsSummary")
        self.summary.setWordWrap(True)
        self.summary.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        self.summary.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        # Five lines on screen, the rest (scan warnings) scrolls: a fixed-height label cut
        # a long summary at top and bottom, and a growing one would re-lay out the window.
        summary_area = QScrollArea()
        summary_area.setObjectName("rootsSummaryArea")
        summary_area.setWidget(self.summary)
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
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 4, 4, 4)
        layout.addWidget(summary_area)
        layout.addLayout(progress_row)
        layout.addWidget(self.view, 1)
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
        layout.addLayout(buttons_row)
        layout.addWidget(self.design_label)
        self.setMinimumWidth(250)

    # -- what the document says
    def clear(self, has_range: bool) -> None:
        self.model.set_rows([])
        self.summary.setText("No scan yet." if has_range else NO_RANGE)
        self.set_stale(False, None, "")

    def show_scan(self, scan: Any, unknown: str, unit: str | None = None,
                  f_unit: str | None = None) -> None:
        """List ``scan``'s roots under headings in ``unknown``'s name and ``unit`` (and
        the residual's ``f_unit``)."""
        self.model.set_roots(scan.roots, unknown, unit, f_unit)
        self._unit = unit
        self.set_stale(False, scan, unknown)
        self.size_columns()
        if self.model.rowCount():
            self.view.selectRow(0)

    def set_stale(self, stale: bool, scan: Any, unknown: str) -> None:
        """An edit made the listed roots (not) those of the worksheet on screen."""
        self.view.setEnabled(not stale)
        self.polish_button.setEnabled(not stale)
        if scan is not None:
            self.summary.setText((STALE_SCAN if stale else "")
                                 + scan_summary(scan, unknown, self._unit))

    def show_design_value(self, selection: Any, unit: str | None = None) -> None:
        if selection is None:
            self.design_label.setText("Design value: none chosen")
            self.design_label.setToolTip("")
        else:
            self.design_label.setText(f"Design value: {format_number(selection.root, 12)}"
                                      + (f" {unit}" if unit else ""))
            self.design_label.setToolTip(f"{selection.root!r}\n{selection.reason}")

    def selected_row(self) -> int | None:
        rows = self.view.selectionModel().selectedRows()
        return rows[0].row() if rows else None

    # -- scan progress
    def scan_started(self, a: float, b: float) -> None:
        self.progress.setValue(0)
        self.progress.setFormat("scanning %p%")
        self.cancel_button.setEnabled(True)
        self.summary.setText(f"Scanning [{_num(a)}, {_num(b)}]…")

    def scan_progress(self, fraction: float) -> None:
        self.progress.setValue(int(round(1000 * min(max(fraction, 0.0), 1.0))))

    def scan_cancelling(self) -> None:
        self.progress.setFormat("cancelling…")
        self.cancel_button.setEnabled(False)

    def scan_ended(self) -> None:
        self.progress.setValue(0)
        self.progress.setFormat(IDLE_FORMAT)
        self.cancel_button.setEnabled(False)

    # -- layout
    def set_digits(self, digits: int) -> None:
        self.model.set_digits(digits)
        self.delegate.digits = digits
        self.view.viewport().update()

    def size_columns(self) -> None:
        """x and residual share what the multiplicity leaves of the list's width; the
        confirmation columns keep their text's width beyond it."""
        view = self.view
        view.resizeColumnToContents(2)
        for c in (3, 4):
            view.resizeColumnToContents(c)
        room = max(view.viewport().width() - view.columnWidth(2), 80)
        view.setColumnWidth(0, room * 11 // 20)
        view.setColumnWidth(1, room - room * 11 // 20)

    def eventFilter(self, watched: QObject, event: QEvent) -> bool:  # noqa: N802 (Qt name)
        if watched is self.view.viewport() and event.type() == QEvent.Type.Resize:
            self.size_columns()
        return super().eventFilter(watched, event)


def agreement_words(solution: Any) -> str:
    """How the converged methods compare, for the design value's reason."""
    groups = solution.agreement.groups
    if len(groups) > 1:
        return "the methods converged to different roots: " + ", ".join(
            f"{_num(x)} ({', '.join(method_label(m) for m in ms)})" for x, ms in groups)
    if solution.agreement_digits is None and len(solution.runs) == 1:
        return "no other method was run to cross-check it"
    if solution.agreement_digits is None:
        return "no other method converged to cross-check it"
    return f"methods agree to {solution.agreement_digits} significant figures"
