"""The plot region: f over the range (with the chosen method's path) and the convergence view.

Both views are matplotlib figures embedded with FigureCanvasQTAgg and the standard
navigation toolbar; the drawing itself is :mod:`solvers.figures`, shared with the
calculation sheet. On the function view, with the toolbar's pan/zoom off:

* Shift+click sets x0 (Newton–Raphson start),
* Shift+right-click sets x1 (the secant's second point),
* Shift+drag sets the bracket [a, b] (false position).
"""

from __future__ import annotations

import math
import os
import threading
from collections.abc import Callable, Sequence
from typing import Any

from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtWidgets import (
    QComboBox,
    QHBoxLayout,
    QLabel,
    QTabWidget,
    QVBoxLayout,
    QWidget,
)

from solvers import figures
from solvers.result import Run

HINT = ("Shift+click: x0   Shift+right-click: x1   Shift+drag: bracket [a, b]   "
        "(pan/zoom with the toolbar)")
# A drag shorter than this fraction of the axis width is a click, not a bracket.
_DRAG_FRACTION = 0.01


def _import_backend() -> None:
    os.environ.setdefault("QT_API", "pyside6")
    import matplotlib.backends.backend_qtagg  # noqa: F401 (warms the import only)
    import matplotlib.figure  # noqa: F401


class _FigureView(QWidget):
    """A canvas with its navigation toolbar, built on first use.

    matplotlib's Qt backend is the largest import the window has beyond Qt and sympy;
    building the canvas after the window is on screen lets the window appear first.
    ``figure``, ``canvas`` and ``toolbar`` build it when first touched.
    """

    def __init__(self, parent: QWidget | None = None,
                 on_build: Callable[[_FigureView], None] | None = None) -> None:
        super().__init__(parent)
        self._on_build = on_build
        self._built: tuple[Any, Any, Any] | None = None
        self.bar = QHBoxLayout()
        self.bar.addStretch(1)
        self._placeholder = QLabel("preparing the plot…")
        self._placeholder.setAlignment(Qt.AlignmentFlag.AlignCenter)
        self._placeholder.setMinimumSize(320, 200)
        self._layout = QVBoxLayout(self)
        self._layout.setContentsMargins(0, 0, 0, 0)
        self._layout.setSpacing(0)
        self._layout.addLayout(self.bar)
        self._layout.addWidget(self._placeholder, 1)
        self.draws = 0
        self.dirty = False

    def ensure(self) -> tuple[Any, Any, Any]:
        if self._built is None:
            os.environ.setdefault("QT_API", "pyside6")
            from matplotlib.backends.backend_qtagg import (
                FigureCanvasQTAgg,
                NavigationToolbar2QT,
            )
            from matplotlib.figure import Figure

            # Fixed margins in pixels instead of a layout engine: constrained layout took
            # more than half of each redraw, and Solve must redraw well under 0.1 s.
            figure = Figure(figsize=(6, 3.2), dpi=100)
            canvas = _locked(FigureCanvasQTAgg)(figure)
            canvas.setMinimumSize(320, 200)
            toolbar = NavigationToolbar2QT(canvas, self)
            toolbar.setIconSize(toolbar.iconSize() * 0.8)
            stretch = self.bar.itemAt(0)
            self.bar.removeItem(stretch)
            self.bar.insertWidget(0, toolbar, 1)
            self._layout.replaceWidget(self._placeholder, canvas)
            self._placeholder.deleteLater()
            self._built = (figure, canvas, toolbar)
            canvas.mpl_connect("draw_event", self._count)
            canvas.mpl_connect("resize_event", lambda _e: self.fit_margins())
            if self._on_build is not None:
                self._on_build(self)
        return self._built

    @property
    def figure(self) -> Any:
        return self.ensure()[0]

    @property
    def canvas(self) -> Any:
        return self.ensure()[1]

    @property
    def toolbar(self) -> Any:
        return self.ensure()[2]

    def _count(self, _event: Any) -> None:
        self.draws += 1

    def fit_margins(self) -> None:
        """Margins for tick labels and axis titles, in pixels, whatever the canvas size.

        The left margin follows the widest y tick label and the top one makes room for
        the axis multiplier ("1e7"), measured from the label strings without a draw: a
        fixed margin cut the axis title off beside labels like -1000 and hid the
        multiplier, so 1.2e7 read as 1.2.
        """
        width, height = self.figure.get_size_inches() * self.figure.dpi
        if width < 50 or height < 50:
            return
        left, top = 74.0, 12.0
        axes = self.figure.axes
        if axes and axes[0].axison:
            with figures.typesetting():  # measures text with mathtext: one thread at a time
                left, top = _label_room(axes[0], self.figure.dpi)
        self.figure.subplots_adjust(left=min(0.4, left / width),
                                    right=1 - min(0.2, 26 / width),
                                    bottom=min(0.35, 46 / height),
                                    top=1 - min(0.25, top / height))

    def new_axes(self) -> Any:
        self.figure.clear()
        self.fit_margins()
        return self.figure.add_subplot()

    def redraw(self) -> None:
        """Draw now if on screen; otherwise when the view is next shown."""
        if self.isVisible():
            self.dirty = False
            self.canvas.draw_idle()
        else:
            self.dirty = True

    def showEvent(self, event: Any) -> None:  # noqa: N802 (Qt name)
        super().showEvent(event)
        if self.dirty and self._built is not None:
            self.dirty = False
            self.canvas.draw_idle()


def _locked(canvas_class: type) -> type:
    """``canvas_class`` whose draw holds :data:`solvers.figures.MATPLOTLIB_LOCK` (a report or
    the typesetting may be rendering in a worker thread at the same moment)."""

    class LockedCanvas(canvas_class):
        def draw(self) -> None:
            with figures.MATPLOTLIB_LOCK:
                super().draw()

    return LockedCanvas


def _label_room(ax: Any, dpi: float) -> tuple[float, float]:
    """Pixels needed left of the axes (tick labels, ticks, axis title) and above them."""
    from matplotlib.textpath import TextToPath

    measure = TextToPath()
    axis = ax.yaxis
    formatter = axis.get_major_formatter()
    lo, hi = sorted(ax.get_ylim())
    locs = [v for v in axis.get_majorticklocs() if lo <= v <= hi]
    labels = formatter.format_ticks(locs) if locs else []
    ticks = ax.get_yticklabels()
    prop = ticks[0].get_fontproperties() if ticks else axis.label.get_fontproperties()
    widest = 0.0
    for text in labels:
        if text:
            ismath = text.count("$") >= 2
            w, _h, _d = measure.get_text_width_height_descent(text, prop, ismath=ismath)
            widest = max(widest, w)
    points_to_px = dpi / 72.0
    size = axis.label.get_fontproperties().get_size_in_points()
    # tick length and pad (3.5 pt each), label pad (4 pt), the title's height, a spare 6 px
    left = (widest + 3.5 + 3.5 + 4.0 + 1.2 * size) * points_to_px + 6
    offset = formatter.get_offset() if hasattr(formatter, "get_offset") else ""
    top = 12.0 + (1.5 * size * points_to_px if offset else 0.0)
    return max(left, 60.0), top


class PlotPanel(QTabWidget):
    """Tabs "Function" and "Convergence"; emits picks made with the mouse."""

    x0_picked = Signal(float)
    x1_picked = Signal(float)
    bracket_picked = Signal(float, float)
    path_method_changed = Signal(str)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.function_view = _FigureView(on_build=self._connect_mouse)
        self.path_box = QComboBox()
        self.path_box.setObjectName("pathBox")
        self.path_box.setToolTip("Whose iterates are drawn over f")
        self.path_box.setMinimumContentsLength(14)
        path_label = QLabel("Sho&w path of")  # Alt+W, like Show on the other tab
        path_label.setBuddy(self.path_box)
        self.function_view.bar.addWidget(path_label)
        self.function_view.bar.addWidget(self.path_box)
        self.hint = QLabel(HINT)
        self.hint.setStyleSheet("color: #555555;")
        self.function_view.layout().addWidget(self.hint)

        self.convergence_view = _FigureView()
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
        self._press: tuple[float, int] | None = None
        self._span: Any = None
        self._message = "Type an equation, then press Solve (Ctrl+Return) or Scan range."
        # Import matplotlib's Qt backend in the background while the window comes up, then
        # build the canvases on the UI thread (widgets must be made there).
        self._importer = threading.Thread(target=_import_backend, name="zerotrace-mpl",
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

    def _connect_mouse(self, view: _FigureView) -> None:
        canvas = view.canvas
        canvas.mpl_connect("button_press_event", self._on_press)
        canvas.mpl_connect("motion_notify_event", self._on_motion)
        canvas.mpl_connect("button_release_event", self._on_release)

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
        ax = self.function_view.new_axes()
        ax.set_axis_off()
        ax.text(0.5, 0.5, text, ha="center", va="center", color="#555555", wrap=True)
        self._f = None
        self.function_view.redraw()

    def show_function(self, f: Any, a: float, b: float, *, unknown: str = "x", scan: Any = None,
                      runs: Sequence[Run] = (), curve: figures.Curve | None = None) -> None:
        """Draw f on [a, b] with the scan's marks and the selected method's path."""
        self._f, self._range, self._scan, self._unknown = f, (a, b), scan, unknown
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

    def _draw_function(self) -> None:
        if self._f is None or self._range is None:
            return
        ax = self.function_view.new_axes()
        method = self.path_method()
        run = next((r for r in self._runs if r.method == method), None)
        a, b = self._range
        try:
            figures.draw_function(ax, self._f, a, b, scan=self._scan, run=run,
                                  unknown=self._unknown, precomputed=self._curve)
        except ValueError as exc:
            ax.clear()
            ax.set_axis_off()
            ax.text(0.5, 0.5, f"cannot draw: {exc}", ha="center", va="center")
        self.function_view.fit_margins()
        self._span = None
        self.function_view.redraw()

    def _draw_convergence(self) -> None:
        # Built only when its tab is on screen: Solve then pays for one figure, not two.
        if self.currentWidget() is not self.convergence_view:
            self._convergence_stale = True
            return
        self._convergence_stale = False
        ax = self.convergence_view.new_axes()
        figures.draw_convergence(ax, self._runs, quantity=self.quantity_box.currentData())
        self.convergence_view.fit_margins()
        self.convergence_view.redraw()

    # -- mouse picks
    def _active(self, event: Any) -> bool:
        if self._f is None or event.inaxes is None or event.xdata is None:
            return False
        if self.function_view.toolbar.mode:  # pan or zoom owns the mouse
            return False
        return "shift" in (event.key or "")

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


def _to_resolution(x: float, lo: float, hi: float) -> float:
    """``x`` rounded to a thousandth of the visible span: a mouse pick is good to about a
    pixel, and 17 figures of it would be false precision in the worksheet."""
    span = abs(hi - lo)
    if not (math.isfinite(x) and math.isfinite(span)) or span == 0:
        return x
    decimals = -math.floor(math.log10(span / 1000))
    return float(round(x, decimals))
