"""One embedded matplotlib figure under a small bar of our own.

:class:`FigureView` holds a FigureCanvasQTAgg (built on first use, so the window comes
up before matplotlib's Qt backend is imported) with the bar: fit to range, zoom box, pan,
copy picture, save picture. Its canvas draws under the one matplotlib lock
(:data:`app.documents.figures.MATPLOTLIB_LOCK`): the calculation sheet may be drawing in
another thread. Margins follow the tick labels, so axis titles are never cut off.
"""

from __future__ import annotations

import os
from collections.abc import Callable
from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtGui import QGuiApplication
from PySide6.QtWidgets import (
    QFileDialog,
    QHBoxLayout,
    QLabel,
    QToolButton,
    QVBoxLayout,
    QWidget,
)

from app.documents import figures


def import_backend() -> None:
    os.environ.setdefault("QT_API", "pyside6")
    import matplotlib.backends.backend_qtagg  # noqa: F401 (warms the import only)
    import matplotlib.figure  # noqa: F401


PICTURE_FILTER = "PNG pictures (*.png);;SVG drawings (*.svg);;PDF files (*.pdf)"
_SUFFIXES = {"PNG": ".png", "SVG": ".svg", "PDF": ".pdf"}


def _navigator(canvas: Any) -> Any:
    """Zoom box and pan for ``canvas``: matplotlib's backend-neutral navigation logic
    driven from our own bar (its stock Qt widget, with its margin and curve editors,
    is not used)."""
    from matplotlib.backend_bases import NavigationToolbar2

    class Navigator(NavigationToolbar2):
        def set_message(self, s: str) -> None:
            pass  # the panel has its own read-out, in the unknown's name

        def draw_rubberband(self, event: Any, x0: float, y0: float, x1: float,
                            y1: float) -> None:
            # Figure pixels with the origin bottom left to top left (drawRectangle itself
            # divides by the device pixel ratio).
            height = self.canvas.figure.bbox.height
            self.canvas.drawRectangle([int(v) for v in (x0, height - y0, x1 - x0, y0 - y1)])

        def remove_rubberband(self) -> None:
            self.canvas.drawRectangle(None)

    return Navigator(canvas)


class FigureView(QWidget):
    """A canvas under its bar (fit, zoom box, pan, copy, save), built on first use.

    matplotlib's Qt backend is the largest import the window has beyond Qt and sympy;
    building the canvas after the window is on screen lets the window appear first.
    ``figure``, ``canvas`` and ``toolbar`` (the zoom/pan navigator) build it when first
    touched.
    """

    def __init__(self, parent: QWidget | None = None,
                 on_build: Callable[[FigureView], None] | None = None,
                 name: str = "plot", placeholder: str = "preparing the plot…") -> None:
        """``placeholder``: what the view says until its figure is first built (a view
        drawn only after some work says what brings it)."""
        super().__init__(parent)
        self._on_build = on_build
        self._built: tuple[Any, Any, Any] | None = None
        self.name = name
        self.fit_to_range: Callable[[], None] = self._autoscale
        self.bar = QHBoxLayout()
        self.bar.setSpacing(2)
        self.buttons: dict[str, QToolButton] = {}
        tools = (
            ("fit", "Fit", "Fit the view to the plotted range (Home)", False, self._fit),
            ("zoom", "Zoom box", "Drag a box to zoom into; right-drag zooms out", True,
             lambda: self._mode("zoom")),
            ("pan", "Pan", "Drag to move the view; right-drag stretches an axis", True,
             lambda: self._mode("pan")),
            ("copy", "Copy picture", "Copy the plot to the clipboard as a picture", False,
             self.copy_picture),
            ("save", "Save picture…", "Save the plot as PNG, SVG or PDF", False,
             self.save_picture),
        )
        for key, text, tip, checkable, slot in tools:
            button = QToolButton()
            button.setObjectName(f"{name}_{key}")
            button.setText(text)
            button.setToolTip(tip)
            button.setCheckable(checkable)
            button.setAutoRaise(True)
            button.setFocusPolicy(Qt.FocusPolicy.NoFocus)
            button.clicked.connect(lambda _c=False, slot=slot: slot())
            self.bar.addWidget(button)
            self.buttons[key] = button
        self.bar.addSpacing(8)
        self.bar.addStretch(1)
        self._placeholder = QLabel(placeholder)
        self._placeholder.setWordWrap(True)
        self._placeholder.setAlignment(Qt.AlignmentFlag.AlignCenter)
        self._placeholder.setMinimumSize(320, 200)
        self._layout = QVBoxLayout(self)
        self._layout.setContentsMargins(0, 0, 0, 0)
        self._layout.setSpacing(0)
        self._layout.addLayout(self.bar)
        self._layout.addWidget(self._placeholder, 1)
        self.draws = 0
        self.dirty = False
        self.last_picture: str = ""

    def ensure(self) -> tuple[Any, Any, Any]:
        if self._built is None:
            os.environ.setdefault("QT_API", "pyside6")
            from matplotlib.backends.backend_qtagg import FigureCanvasQTAgg
            from matplotlib.figure import Figure

            # Fixed margins in pixels instead of a layout engine: constrained layout took
            # more than half of each redraw, and Solve must redraw well under 0.1 s.
            figure = Figure(figsize=(6, 3.2), dpi=100)
            canvas = _locked(FigureCanvasQTAgg)(figure)
            canvas.setMinimumSize(320, 200)
            navigator = _navigator(canvas)
            self._layout.replaceWidget(self._placeholder, canvas)
            self._placeholder.deleteLater()
            self._built = (figure, canvas, navigator)
            canvas.mpl_connect("draw_event", self._count)
            canvas.mpl_connect("resize_event", lambda _e: self.fit_margins())
            if self._on_build is not None:
                self._on_build(self)
        return self._built

    # -- the bar
    def _mode(self, mode: str) -> None:
        """Zoom box or pan on (its button checked), or off when pressed again."""
        navigator = self.toolbar
        getattr(navigator, mode)()  # matplotlib toggles the mode
        current = str(navigator.mode)
        for key in ("zoom", "pan"):
            self.buttons[key].setChecked(current == ("zoom rect" if key == "zoom" else
                                                     "pan/zoom"))

    def _fit(self) -> None:
        self.ensure()
        self.fit_to_range()
        self.toolbar.update()  # forget the zoom history of the old view
        self.canvas.draw_idle()

    def _autoscale(self) -> None:
        for ax in self.figure.axes:
            ax.autoscale()

    def copy_picture(self) -> None:
        """The plot as it is on screen, to the clipboard (pastes into reports and mail)."""
        QGuiApplication.clipboard().setImage(self.canvas.grab().toImage())

    def save_picture(self) -> str:
        """Ask for a file and save the figure there (PNG, SVG or PDF by its suffix)."""
        name, chosen = QFileDialog.getSaveFileName(self, "Save picture",
                                                   f"{self.name}.png", PICTURE_FILTER)
        if not name:
            return ""
        path = name
        if "." not in os.path.basename(path):  # no suffix typed: the chosen filter's
            path += _SUFFIXES.get((chosen or "PNG").split()[0], ".png")
        try:
            self.figure.savefig(path, dpi=150)
        except (OSError, ValueError) as exc:
            self.last_picture = f"not saved: {exc}"
            return ""
        self.last_picture = path
        return path

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
    """``canvas_class`` whose draw holds :data:`app.documents.figures.MATPLOTLIB_LOCK` (a report or
    the typesetting may be rendering in a worker thread at the same moment)."""

    class LockedCanvas(canvas_class):
        def draw(self) -> None:
            with figures.drawing():
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
    legend = ax.get_legend()
    if legend is not None and legend.get_gid() == figures.LEGEND_ABOVE:
        # one row of legend above the axes (figures.legend_above): its text's height
        # with the handles' padding, beside or over the multiplier
        texts = legend.get_texts()
        small = texts[0].get_fontsize() if texts else size
        top += (0.6 + 1.4 * figures.legend_rows(legend)) * small * points_to_px
    return max(left, 60.0), top
