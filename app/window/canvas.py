"""The plot region: f over the range (with the chosen method's path) and the convergence view.

Both views are matplotlib figures embedded with FigureCanvasQTAgg under a small bar of
our own (fit to range, zoom box, pan, copy picture, save picture) and a read-out of the
pointer's position in the unknown's name. The samples and marks come from
:mod:`app.documents.figures`, shared with the calculation sheet. The function view keeps its
axes between redraws and only replaces the artists' data, so Solve redraws in well under
0.1 s. On the function view, with zoom and pan off:

* Shift+click sets x0 (Newton–Raphson start),
* Shift+right-click sets x1 (the secant's second point),
* Shift+drag sets the bracket [a, b] (false position).
"""

from __future__ import annotations

import math
import threading
from collections.abc import Sequence
from typing import Any

from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtGui import QGuiApplication
from PySide6.QtWidgets import (
    QComboBox,
    QHBoxLayout,
    QLabel,
    QTabWidget,
    QToolButton,
    QWidget,
)

from app.documents import figures
from app.documents.words import residual_name
from app.window.figure_view import FigureView, import_backend
from solvers.records import Run

HINT = ("Shift+click: x0   Shift+right-click: x1   Shift+drag: bracket [a, b]   "
        "(zoom box and pan on the bar above)")
# A drag shorter than this fraction of the axis width is a click, not a bracket.
_DRAG_FRACTION = 0.01


class PlotPanel(QTabWidget):
    """Tabs "Function" and "Convergence"; emits picks made with the mouse."""

    x0_picked = Signal(float)
    x1_picked = Signal(float)
    bracket_picked = Signal(float, float)
    path_method_changed = Signal(str)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.function_view = FigureView(on_build=self._connect_mouse, name="function")
        self.function_view.fit_to_range = self._fit_function
        self.path_box = QComboBox()
        self.path_box.setObjectName("pathBox")
        self.path_box.setToolTip("Whose iterates are drawn over f")
        self.path_box.setMinimumContentsLength(14)
        path_label = QLabel("Sho&w path of")  # Alt+W, like Show on the other tab
        path_label.setBuddy(self.path_box)
        self.function_view.bar.addWidget(path_label)
        self.function_view.bar.addWidget(self.path_box)
        # A symmetric-log y axis shows the whole curve (poles, growth like cosh) while
        # staying linear in a band around zero, so the crossings remain visible.
        self.symlog_button = QToolButton()
        self.symlog_button.setObjectName("function_symlog")
        self.symlog_button.setText("Log y")
        self.symlog_button.setToolTip(
            "Symmetric-log y axis: the whole curve, linear in a band around zero")
        self.symlog_button.setCheckable(True)
        self.symlog_button.setAutoRaise(True)
        self.symlog_button.setFocusPolicy(Qt.FocusPolicy.NoFocus)
        self.symlog_button.toggled.connect(lambda _on: self._draw_function())
        self.function_view.bar.addWidget(self.symlog_button)
        self.hint = QLabel(HINT)
        self.hint.setStyleSheet("color: #555555;")
        self.readout = QLabel("")
        self.readout.setObjectName("plotReadout")
        self.readout.setToolTip("Where the pointer is, in the plot's own names")
        self.readout.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        under = QHBoxLayout()
        under.addWidget(self.hint, 1)
        under.addWidget(self.readout)
        self.function_view.layout().addLayout(under)

        self.convergence_view = FigureView(name="convergence")
        self.quantity_box = QComboBox()
        self.quantity_box.setObjectName("quantityBox")
        for key, (label, _pick) in figures.CONVERGENCE_QUANTITIES.items():
            self.quantity_box.addItem(f"{label} against k", key)
        quantity_label = QLabel("Sho&w")
        quantity_label.setBuddy(self.quantity_box)
        self.convergence_view.bar.addWidget(quantity_label)
        self.convergence_view.bar.addWidget(self.quantity_box)

        self.setFocusPolicy(Qt.FocusPolicy.NoFocus)  # its tab bar is the one Tab stop
        self.addTab(self.function_view, "Function")
        self.addTab(self.convergence_view, "Convergence")
        self._convergence_stale = True
        self.currentChanged.connect(self._on_tab)
        self.path_box.activated.connect(self._on_path)
        self.quantity_box.activated.connect(lambda _i: self._draw_convergence())

        self._f: Any = None
        self._range: tuple[float, float] | None = None
        self._scan: Any = None
        self._runs: tuple[Run, ...] = ()
        self._curve: figures.Curve | None = None
        self._unknown = "x"
        self._unit: str | None = None
        self._f_unit: str | None = None  # the residual's unit, on the y axis
        self._press: tuple[float, int] | None = None
        self._span: Any = None
        # The function view's axes and its lasting artists (curve, y = 0), kept between
        # redraws: building a new axes was a third of each Solve's redraw.
        self._kept: dict[str, Any] | None = None
        self._limits: tuple[tuple[float, float], tuple[float, float]] | None = None
        self._message = "Type an equation, then press Solve (Ctrl+Return) or Scan range."
        # Import matplotlib's Qt backend in the background while the window comes up, then
        # build the canvases on the UI thread (widgets must be made there).
        self._importer = threading.Thread(target=import_backend, name="zerotrace-mpl",
                                          daemon=True)
        self._importer.start()
        self._poll = QTimer(self)
        self._poll.setInterval(20)
        self._poll.timeout.connect(self._build_views)
        self._poll.start()

    def _build_views(self) -> None:
        if self._importer.is_alive():
            return
        self._poll.stop()
        if self.function_view._built is None:
            self.function_view.ensure()
            if self._f is None:
                self.show_message(self._message)

    def _connect_mouse(self, view: FigureView) -> None:
        canvas = view.canvas
        canvas.mpl_connect("button_press_event", self._on_press)
        canvas.mpl_connect("motion_notify_event", self._on_motion)
        canvas.mpl_connect("button_release_event", self._on_release)
        canvas.mpl_connect("motion_notify_event", self._on_pointer)
        canvas.mpl_connect("figure_leave_event", lambda _e: self.readout.setText(""))

    def _on_tab(self, _index: int) -> None:
        if self.currentWidget() is self.convergence_view and self._convergence_stale:
            self._draw_convergence()

    # -- content
    @property
    def ax(self) -> Any:
        axes = self.function_view.figure.axes
        return axes[0] if axes else None

    def set_stale(self, stale: bool) -> None:
        """Say under the plot that it shows an earlier input (no redraw: a label only)."""
        if stale:
            self.hint.setText("⚠ The plot shows an earlier input: press Solve or Scan range "
                              "to redraw it.")
            self.hint.setStyleSheet("color: #8A2B00;")
        else:
            self.hint.setText(HINT)
            self.hint.setStyleSheet("color: #555555;")

    def path_method(self) -> str | None:
        return self.path_box.currentData() or None

    def show_message(self, text: str) -> None:
        self._message = text
        self._f = None
        if self.function_view._built is None:
            return  # drawn by _build_views once the window is up
        self._show_text(text)

    def show_function(self, f: Any, a: float, b: float, *, unknown: str = "x", scan: Any = None,
                      runs: Sequence[Run] = (), curve: figures.Curve | None = None,
                      unit: str | None = None, f_unit: str | None = None) -> None:
        """Draw f on [a, b] with the scan's marks and the selected method's path (x in
        ``unit``, f in ``f_unit``, each named on its axis)."""
        self._f, self._range, self._scan, self._unknown = f, (a, b), scan, unknown
        self._unit, self._f_unit = unit, f_unit
        self._curve = curve
        self._runs = tuple(runs)
        self._fill_paths()
        self._draw_function()
        self._draw_convergence()

    def set_runs(self, runs: Sequence[Run]) -> None:
        self._runs = tuple(runs)
        self._fill_paths()
        self._draw_function()
        self._draw_convergence()

    def select_path(self, method: str) -> None:
        index = self.path_box.findData(method)
        if index >= 0 and index != self.path_box.currentIndex():
            self.path_box.setCurrentIndex(index)
            self._on_path(index)

    def _fill_paths(self) -> None:
        current = self.path_box.currentData()
        self.path_box.blockSignals(True)
        self.path_box.clear()
        self.path_box.addItem("none", "")
        for run in self._runs:
            self.path_box.addItem(figures.method_title(run.method), run.method)
        index = self.path_box.findData(current) if current else -1
        if index < 0 and self._runs:
            index = 1
        self.path_box.setCurrentIndex(max(index, 0))
        self.path_box.blockSignals(False)

    def _on_path(self, _index: int) -> None:
        self._draw_function()
        self.path_method_changed.emit(self.path_box.currentData() or "")

    def _function_axes(self) -> dict[str, Any]:
        """The function axes with its curve line and y = 0, made once and then kept."""
        view = self.function_view
        kept = self._kept
        if kept is None or kept["ax"] not in view.figure.axes:
            ax = view.new_axes()
            zero = ax.axhline(0.0, color="#9A9A9A", linewidth=0.8, zorder=1)
            (line,) = ax.plot([], [], color=figures.FUNCTION_COLOR, linewidth=1.4, zorder=2)
            ax.grid(True, color="#E4E4E4", linewidth=0.6, zorder=0)
            kept = self._kept = {"ax": ax, "line": line, "zero": zero}
        return kept

    def _draw_function(self) -> None:
        """Redraw f, the scan's marks and the chosen path into the kept axes.

        Only the curve's data changes in place; the marks and the path (a few artists)
        are removed and drawn anew by :mod:`app.documents.figures`.
        """
        if self._f is None or self._range is None:
            return
        kept = self._function_axes()
        ax, line = kept["ax"], kept["line"]
        for artist in [*ax.lines, *ax.collections, *ax.patches, *ax.texts]:
            if artist is not line and artist is not kept["zero"]:
                artist.remove()
        if ax.legend_ is not None:
            ax.legend_.remove()
        self._span = None
        method = self.path_method()
        run = next((r for r in self._runs if r.method == method), None)
        a, b = self._range
        scan = self._scan
        poles = list(scan.poles) if scan is not None else []
        jumps = list(scan.discontinuities) if scan is not None else []
        try:
            c = self._curve if self._curve is not None else figures.curve(
                self._f, a, b, breaks=poles + jumps)
        except ValueError as exc:
            self._show_text(f"cannot draw: {exc}")
            return
        name = f"{residual_name(self._unknown)}({self._unknown})"
        line.set_data(c.x, c.y)
        line.set_label(name)
        if scan is not None:
            figures.draw_scan_marks(ax, scan, poles, jumps)
        symlog = self.symlog_button.isChecked()
        if symlog:
            ax.set_yscale("symlog", linthresh=figures.symlog_threshold(c))
        else:
            ax.set_yscale("linear")
        limits = ((min(a, b), max(a, b)), c.limits(symlog))
        # Limits first: the path drawers space their labels by the visible range.
        ax.set_xlim(*limits[0])
        ax.set_ylim(*limits[1])
        if run is not None and run.steps:
            figures.draw_path(ax, self._f, run)
            ax.set_xlim(*limits[0])
            ax.set_ylim(*limits[1])
        self._limits = limits
        ax.set_xlabel(figures.axis_label(self._unknown, self._unit))
        ax.set_ylabel(figures.axis_label(name, self._f_unit))
        handles, _labels = ax.get_legend_handles_labels()
        if len(handles) > 1:
            figures.legend_above(ax)  # inside the axes it would cover part of the curve
        self.function_view.fit_margins()
        self.function_view.toolbar.update()  # a new picture: the zoom history restarts
        self.function_view.redraw()

    def _fit_function(self) -> None:
        """Fit: back to the plotted range and the curve's own y-limits."""
        kept = self._kept
        if kept is None or self._limits is None or kept["ax"] not in self.function_view.figure.axes:
            return
        kept["ax"].set_xlim(*self._limits[0])
        kept["ax"].set_ylim(*self._limits[1])

    def _show_text(self, text: str) -> None:
        ax = self.function_view.new_axes()
        ax.set_axis_off()
        ax.text(0.5, 0.5, text, ha="center", va="center", color="#555555", wrap=True)
        self.function_view.redraw()

    def _draw_convergence(self) -> None:
        # Built only when its tab is on screen: Solve then pays for one figure, not two.
        if self.currentWidget() is not self.convergence_view:
            self._convergence_stale = True
            return
        self._convergence_stale = False
        ax = self.convergence_view.new_axes()
        figures.draw_convergence(ax, self._runs, quantity=self.quantity_box.currentData(),
                                 unknown=self._unknown, unit=self._unit, f_unit=self._f_unit)
        self.convergence_view.fit_margins()
        self.convergence_view.redraw()

    # -- mouse picks
    def _active(self, event: Any) -> bool:
        if self._f is None or event.inaxes is None or event.xdata is None:
            return False
        if self.function_view.toolbar.mode:  # zoom box or pan owns the mouse
            return False
        return _shift_held(event)

    def _on_pointer(self, event: Any) -> None:
        """The read-out: the pointer's position in the unknown's and the residual's names."""
        kept = self._kept
        if (kept is None or self._f is None or event.inaxes is not kept["ax"]
                or event.xdata is None or event.ydata is None):
            self.readout.setText("")
            return
        u = self._unknown
        self.readout.setText(f"{u} = {event.xdata:.6g}   "
                             f"{residual_name(u)}({u}) = {event.ydata:.4g}")

    def _on_press(self, event: Any) -> None:
        if self._active(event):
            self._press = (float(event.xdata), int(event.button))

    def _on_motion(self, event: Any) -> None:
        if self._press is None or event.inaxes is None or event.xdata is None:
            return
        x0 = self._press[0]
        ax = event.inaxes
        if self._span is not None:
            self._span.remove()
        self._span = ax.axvspan(min(x0, event.xdata), max(x0, event.xdata),
                                color=figures.method_color("false_position"), alpha=0.15)
        self.function_view.canvas.draw_idle()

    def _on_release(self, event: Any) -> None:
        if self._press is None:
            return
        start, button = self._press
        self._press = None
        if self._span is not None:
            self._span.remove()
            self._span = None
            self.function_view.canvas.draw_idle()
        end = float(event.xdata) if event.xdata is not None else start
        lo, hi = self.ax.get_xlim() if self.ax is not None else (start, end)
        dragged = abs(end - start) > _DRAG_FRACTION * abs(hi - lo)
        start, end = (_to_resolution(v, lo, hi) for v in (start, end))
        if dragged:
            self.bracket_picked.emit(min(start, end), max(start, end))
        elif button == 3:
            self.x1_picked.emit(start)
        else:
            self.x0_picked.emit(start)


def _shift_held(event: Any) -> bool:
    """Whether Shift was down, read from the Qt mouse event itself.

    matplotlib's ``event.key`` only knows keys pressed while the canvas had keyboard
    focus, which a canvas clicked straight from the editor never has; the modifiers Qt
    delivers with the mouse event are the truth.
    """
    gui = getattr(event, "guiEvent", None)
    modifiers = gui.modifiers() if gui is not None and hasattr(gui, "modifiers") else \
        QGuiApplication.keyboardModifiers()
    return bool(modifiers & Qt.KeyboardModifier.ShiftModifier)


def _to_resolution(x: float, lo: float, hi: float) -> float:
    """``x`` rounded to a thousandth of the visible span: a mouse pick is good to about a
    pixel, and 17 figures of it would be false precision in the worksheet."""
    span = abs(hi - lo)
    if not (math.isfinite(x) and math.isfinite(span)) or span == 0:
        return x
    decimals = -math.floor(math.log10(span / 1000))
    return float(round(x, decimals))
