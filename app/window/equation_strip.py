"""The equation strip: the editor, its typeset form and derivative, the unknown, one status line.

The strip only displays: :func:`analyse` (run off the UI thread by the window) turns
the text into an :class:`Analysis` with the names, the unknown, the parsed
:class:`solvers.equation.Equation` or the error and its column; :meth:`EquationStrip.show_analysis`
puts that on screen. The typeset forms are matplotlib mathtext rendered to PNG in the
same worker thread (under :data:`app.documents.figures.MATPLOTLIB_LOCK`), so a settled edit
costs the UI thread only the decoding of two small images. Text over the typesetting
budget (:data:`solvers.equation.MAX_TYPESET_CHARS`) is shown as "too large to typeset".
"""

from __future__ import annotations

import io
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtGui import QColor, QFont, QPixmap, QTextCharFormat, QTextCursor, QTextFormat
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QFrame,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QPlainTextEdit,
    QScrollArea,
    QSizePolicy,
    QTextEdit,
    QToolTip,
    QVBoxLayout,
    QWidget,
)

from app.documents.figures import typesetting
from app.documents.words import (
    SUSPECT_REMARKS,
    derivative_heading,
    remarks_text,
    residual_name,
)
from app.documents.worksheet import MAX_EQUATION
from app.window.models import number_font
from solvers.pipeline import compiled_for
from solvers.units import MAX_UNIT_TEXT

DEBOUNCE_MS = 250  # long enough to skip the intermediate states of a word being typed
AUTO = "(automatic)"
TOO_LARGE = "(too large to typeset: the text as typed governs)"
TOO_LARGE_DERIVATIVE = "(too large to typeset; Newton–Raphson uses it all the same)"
TYPESET_DPI = 100.0  # at a device pixel ratio of 1
CONVENTIONAL_UNKNOWNS = ("x", "y", "z", "t")


@dataclass(frozen=True)
class Analysis:
    """What the text means: names used, the unknown, the parsed equation or why not."""

    text: str
    names: tuple[str, ...] = ()
    unknown: str | None = None
    candidates: tuple[str, ...] = ()
    ambiguous: bool = False
    missing: tuple[str, ...] = ()
    equation: Any = None
    error: str = ""
    position: int | None = None
    notes: tuple[str, ...] = field(default_factory=tuple)
    latex: str = ""  # typeset forms; present also when only parameter values are missing
    derivative_latex: str = ""
    # The typeset forms as PNG (made in the worker when analyse() is given a dpi); None
    # when mathtext cannot set it or it is over the budget (then *_note says why).
    equation_png: bytes | None = None
    derivative_png: bytes | None = None
    derivative_note: str = ""
    typeset_dpi: float | None = None  # set once the PNGs above were made

    @property
    def ok(self) -> bool:
        return self.equation is not None and not self.error


CHOOSE_UNKNOWN = "Several names could be the unknown: choose one under Unknown."


def choose_unknown(names: Sequence[str], chosen: str | None, values: Mapping[str, Any],
                   previous: str | None) -> tuple[str | None, bool]:
    """The unknown to solve for, and whether the choice was ambiguous.

    The user's explicit choice wins; otherwise the one name with no value; otherwise
    the previous unknown if still used; otherwise the first name without a value (or the
    first name; x, y, z, t preferred), flagged as ambiguous so the strip asks the user to choose.
    """
    if not names:
        return None, False
    if chosen and chosen in names:
        return chosen, False
    without = [n for n in names if values.get(n) is None]
    if len(without) == 1:
        return without[0], False
    if previous in names and (not without or previous in without):
        return previous, len(without) > 1
    pool = without or list(names)
    # The names engineers use for "the unknown" first, then order of appearance.
    pick = next((n for n in CONVENTIONAL_UNKNOWNS if n in pool), pool[0])
    return pick, True


def analyse(text: str, chosen: str | None, values: Mapping[str, Any],
            previous: str | None = None, *, dpi: float | None = None,
            parsed: Analysis | None = None, unknown_unit: str | None = None,
            check_dimensions: bool = True) -> Analysis:
    """Parse ``text`` for the strip (called in a worker thread; never raises for bad text).

    With ``dpi`` the typeset forms are also rendered (PNG at that resolution), so the UI
    thread does no typesetting. ``parsed`` is the previous reading: when it is of the
    same text and unknown, only the parameter values are bound again (:func:`rebind`)
    where the equation supports that, instead of a new parse. ``unknown_unit`` and
    ``check_dimensions`` are passed to the parse (a change of either parses again).
    """
    if parsed is not None and parsed.ok and not compiled_for(parsed.equation, unknown_unit,
                                                             check_dimensions):
        parsed = None
    analysis = _analyse(text, chosen, values, previous, parsed,
                        {"unknown_unit": unknown_unit, "check_dimensions": check_dimensions})
    return analysis if dpi is None else typeset(analysis, dpi)


def rebind(equation: Any, values: Mapping[str, float | None]) -> Any:
    """``equation`` with ``values`` bound late (no parse, no compile), or None when a
    parameter has no value.

    The one seam between the window and :meth:`solvers.equation.Equation.bind`; raises
    :class:`solvers.equation.EquationError` as ``bind`` does (a part with no finite
    real value for these values).
    """
    names = tuple(equation.parameters)
    if any(values.get(n) is None for n in names):
        return None
    return equation.bind({n: values[n] for n in names})


def _bound(parsed: Analysis | None, text: str, unknown: str, given: dict[str, float]) -> Any:
    """The previous parse of the same text and unknown with ``given`` bound late, or None
    (then the text is parsed, which also says where a bad value makes the equation fail)."""
    from solvers.equation import EquationError

    if parsed is None or not parsed.ok or parsed.text != text or parsed.unknown != unknown:
        return None
    try:
        return rebind(parsed.equation, given)
    except EquationError:
        return None


def typeset(analysis: Analysis, dpi: float) -> Analysis:
    """``analysis`` with its equation and derivative rendered to PNG (worker thread)."""
    from dataclasses import replace

    if not analysis.latex:
        return analysis
    u = analysis.unknown or "x"
    derivative_png, note = None, ""
    if analysis.derivative_latex:
        derivative_png = render_png(
            f"{derivative_heading(u)} = {analysis.derivative_latex}", dpi=dpi)
    elif analysis.equation is not None and analysis.equation.derivative_too_large:
        note = TOO_LARGE_DERIVATIVE
    return replace(analysis, equation_png=render_png(analysis.latex, dpi=dpi),
                   derivative_png=derivative_png, derivative_note=note, typeset_dpi=dpi)


def _analyse(text: str, chosen: str | None, values: Mapping[str, Any],
             previous: str | None, parsed: Analysis | None,
             units: Mapping[str, Any] | None = None) -> Analysis:
    from solvers.equation import EquationError, free_names, parse_equation

    if not text.strip():
        return Analysis(text, error="type an equation, for example a pump on its system "
                        "curve:  42 - 8.5*Q - 310*Q^2 = Hs + ks*Q^1.85")
    try:
        names = tuple(free_names(text))
    except EquationError as exc:
        return Analysis(text, error=str(exc), position=exc.position)
    unknown, ambiguous = choose_unknown(names, chosen, values, previous)
    if unknown is None:
        return Analysis(text, names=names, error="the equation has no unknown (no free name)")
    given = {n: values[n] for n in names if n != unknown and values.get(n) is not None}
    missing = tuple(n for n in names if n != unknown and values.get(n) is None)
    base = {"text": text, "names": names, "unknown": unknown, "candidates": names,
            "ambiguous": ambiguous, "missing": missing}
    try:
        equation = _bound(parsed, text, unknown, given) or parse_equation(
            text, unknown=unknown, parameters=given, require_values=True,
            **(units or {}))
    except EquationError as exc:
        latex = derivative = ""
        if missing:
            # The typeset form does not depend on the values: show it while the user is
            # still filling in the table (placeholder values are used for nothing else).
            latex, derivative = _typeset_only(text, unknown, given, missing)
        return Analysis(**base, error=str(exc), position=exc.position, latex=latex,
                        derivative_latex=derivative)
    except Exception as exc:  # the parser's own bug must not take the window down
        return Analysis(**base, error=f"could not read the equation ({type(exc).__name__})")
    return Analysis(**base, equation=equation, notes=remarks_text(equation.remarks),
                    latex=_with_definitions(equation),
                    derivative_latex=_derivative_latex(equation))


def name_bad_values(analysis: Analysis, parameters: Any) -> Analysis:
    """Say "P: 'abc' is not a finite number" instead of "no value for P" when P has a
    value typed that is not a number (the parser only knows it got none)."""
    bad = [row.problem for row in parameters.rows()
           if row.name in analysis.missing and row.text.strip() and row.problem]
    if not bad or analysis.ok:
        return analysis
    return replace(analysis, error="; ".join(bad) + " (in the parameters table)",
                   position=None)


def _with_definitions(equation: Any) -> str:
    """The typeset equation after its definition lines, on one line, separated by wide
    spaces and semicolons (mathtext sets one line)."""
    lines = (*getattr(equation, "definitions_latex", ()), equation.latex)
    return r";\quad ".join(lines)


def _derivative_latex(equation: Any) -> str:
    if equation.fprime is None:
        return ""
    try:
        return equation.derivative_latex
    except Exception:  # a derivative too large to typeset: leave it out of the preview
        return ""


def _typeset_only(text: str, unknown: str, given: Mapping[str, float],
                  missing: Sequence[str]) -> tuple[str, str]:
    from solvers.equation import parse_equation

    trial = dict(given)
    for value in (1.0, 0.5):
        trial.update({n: value for n in missing})
        try:
            eq = parse_equation(text, unknown=unknown, parameters=trial, require_values=True)
        except Exception:
            continue
        return _with_definitions(eq), _derivative_latex(eq)
    return "", ""


def render_png(latex: str, *, dpi: float = 110, color: str = "#111111") -> bytes | None:
    """Typeset ``latex`` (mathtext subset) as PNG bytes; None when mathtext cannot or the
    text is over :data:`solvers.equation.MAX_TYPESET_CHARS`. Safe in any thread."""
    from solvers.equation import MAX_TYPESET_CHARS

    if not latex or len(latex) > MAX_TYPESET_CHARS:
        return None
    from matplotlib import mathtext
    from matplotlib.font_manager import FontProperties

    buffer = io.BytesIO()
    try:
        with typesetting():  # the one matplotlib lock, and mathtext's leftovers freed
            mathtext.math_to_image(f"${latex}$", buffer, prop=FontProperties(size=13),
                                   dpi=dpi, format="png", color=color)
    except Exception:  # sympy LaTeX that mathtext does not know: show the text instead
        return None
    return buffer.getvalue()


class _MathLabel(QScrollArea):
    """A typeset formula that scrolls sideways when it is wider than the strip."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.label = QLabel()
        self.label.setAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter)
        self.label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.setWidget(self.label)
        self.setWidgetResizable(True)
        self.setFrameShape(QFrame.Shape.NoFrame)
        self.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAsNeeded)
        self.setVerticalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.setFixedHeight(52)
        self.setFocusPolicy(Qt.FocusPolicy.NoFocus)

    def show_png(self, png: bytes | None, fallback: str, tooltip: str | None = None) -> None:
        """Show a typeset form rendered elsewhere (``fallback`` text when there is none)."""
        ratio = self.devicePixelRatioF() or 1.0
        pixmap = None
        if png is not None:
            pixmap = QPixmap()
            if not pixmap.loadFromData(png, "PNG"):
                pixmap = None
        if pixmap is None:
            self.label.setPixmap(QPixmap())
            self.label.setText(fallback)
        else:
            pixmap.setDevicePixelRatio(ratio)
            self.label.setText("")
            self.label.setPixmap(pixmap)
        self.label.setToolTip(fallback if tooltip is None else tooltip)

    def clear(self) -> None:
        self.label.setPixmap(QPixmap())
        self.label.setText("")


def _qt_units(text: str) -> int:
    """Length of ``text`` in Qt's positions (UTF-16 code units)."""
    return len(text.encode("utf-16-le", "surrogatepass")) // 2


def limit_text(editor: QPlainTextEdit, limit: int, what: str) -> None:
    """Keep ``editor`` at most ``limit`` characters (the worksheet's limit for ``what``).

    QPlainTextEdit has no maximum length. Typing or pasting past the limit keeps what
    was there and the start of what came in, cutting the excess just before the cursor
    (never the user's existing text at the end), and says so in a tooltip.
    """
    busy = False

    def cap() -> None:
        nonlocal busy
        text = editor.toPlainText()
        excess = len(text) - limit
        if busy or excess <= 0:
            return
        busy = True
        try:
            cursor = editor.textCursor()
            units = text.encode("utf-16-le", "surrogatepass")
            end = len(units[: 2 * cursor.position()].decode("utf-16-le", "surrogatepass"))
            start = max(0, end - excess)
            cursor.setPosition(_qt_units(text[:start]))
            cursor.setPosition(_qt_units(text[:end]), QTextCursor.MoveMode.KeepAnchor)
            cursor.removeSelectedText()
            if len(editor.toPlainText()) > limit:  # set from code, cursor at 0: cut the end
                editor.setPlainText(editor.toPlainText()[:limit])
            else:
                editor.setTextCursor(cursor)
            message = f"{what} is limited to {limit} characters; the rest was left out"
            editor.setProperty("limitMessage", message)
            QToolTip.showText(editor.mapToGlobal(editor.cursorRect().bottomLeft()), message,
                              editor)
        finally:
            busy = False

    editor.textChanged.connect(cap)


class EquationStrip(QWidget):
    """Editor, typeset equation and derivative, unknown chooser and status line.

    Signals: ``text_settled(str)`` after the user stops typing for DEBOUNCE_MS,
    ``unknown_chosen(str)`` ('' for automatic) when the user picks the unknown,
    ``text_edited()`` at once on every change of the text.
    """

    text_settled = Signal(str)
    unknown_chosen = Signal(str)
    units_chosen = Signal()  # the unknown's unit or the dimension-check switch changed
    unit_changed = Signal(str, str)  # the unknown's unit text, before and after an edit
    text_edited = Signal()  # every change of the text (blocked with the strip while loading)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.editor = QPlainTextEdit()
        self.editor.setObjectName("equationEditor")
        self.editor.setFont(number_font())
        self.editor.setPlaceholderText("f(x) = g(x), or an expression meaning expression = 0")
        self.editor.setTabChangesFocus(True)
        self.editor.setToolTip("The equation. ^ or ** for powers; several lines are joined.")
        self.editor.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Fixed)
        metrics = self.editor.fontMetrics()
        self.editor.setFixedHeight(int(metrics.lineSpacing() * 2) + 12)
        limit_text(self.editor, MAX_EQUATION, "the equation")

        self.unknown_box = QComboBox()
        self.unknown_box.setObjectName("unknownBox")
        self.unknown_box.setToolTip("The name to solve for. Automatic: the one name with no value.")
        self.unknown_box.setMinimumContentsLength(6)
        unknown_label = QLabel("&Unknown")
        unknown_label.setBuddy(self.unknown_box)
        self.unknown_box.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
        self.unit_box = QLineEdit()
        self.unit_box.setObjectName("unknownUnitBox")
        self.unit_box.setPlaceholderText("SI")
        self.unit_box.setMaxLength(MAX_UNIT_TEXT)
        self.unit_box.setFont(number_font())
        self.unit_box.setToolTip("The unit of the unknown, its start values, scan range and "
                                 "roots (mm, ft, degC). Blank: the SI unit the equation's "
                                 "dimensions give it.")
        self.unit_box.setMaximumWidth(110)
        unit_label = QLabel("Unit")  # every letter of it is taken as an Alt key
        unit_label.setBuddy(self.unit_box)
        self.dimension_box = QCheckBox("Check dimensions")
        self.dimension_box.setObjectName("dimensionCheckBox")
        self.dimension_box.setChecked(True)
        self.dimension_box.setToolTip(
            "When parameters carry units, check that both sides and every term agree. Clear "
            "it only for a correlation whose constants hide their units; every document "
            "then says the dimensions were not checked.")

        self.equation_view = _MathLabel()
        self.derivative_view = _MathLabel()
        eq_caption = QLabel("Reads as")
        d_caption = QLabel("Derivative")
        for caption in (eq_caption, d_caption):
            caption.setStyleSheet("color: #555555;")
            caption.setFixedWidth(64)

        self.status = QLabel()
        self.status.setObjectName("equationStatus")
        self.status.setWordWrap(True)
        self.status.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)

        top = QHBoxLayout()
        top.addWidget(self.editor, 1)
        side = QVBoxLayout()
        side.addWidget(unknown_label)
        unknown_row = QHBoxLayout()
        unknown_row.addWidget(self.unknown_box)
        unknown_row.addWidget(unit_label)
        unknown_row.addWidget(self.unit_box)
        side.addLayout(unknown_row)
        side.addWidget(self.dimension_box)
        side.addStretch(1)
        top.addLayout(side)
        # Equation and derivative side by side: the strip stays short on a 800-pixel screen.
        eq_row = QHBoxLayout()
        eq_row.addWidget(eq_caption)
        eq_row.addWidget(self.equation_view, 1)
        eq_row.addSpacing(8)
        eq_row.addWidget(d_caption)
        eq_row.addWidget(self.derivative_view, 1)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(6, 4, 6, 2)
        layout.setSpacing(2)
        layout.addLayout(top)
        layout.addLayout(eq_row)
        layout.addWidget(self.status)

        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(DEBOUNCE_MS)
        self._timer.timeout.connect(lambda: self.text_settled.emit(self.text()))
        self.editor.textChanged.connect(self._timer.start)
        self.editor.textChanged.connect(self.text_edited)
        self.unknown_box.activated.connect(self._on_unknown_activated)
        self.unit_box.editingFinished.connect(self._on_unit_edited)
        self.dimension_box.toggled.connect(lambda _on: self.units_chosen.emit())
        self._unit_sent = ""
        self.analysis: Analysis | None = None

    # -- reading and writing the text
    def text(self) -> str:
        return self.editor.toPlainText()

    def set_text(self, text: str) -> None:
        """Replace the text (loading a worksheet); the debounce timer then fires as usual."""
        self.editor.setPlainText(text)

    def chosen_unknown(self) -> str | None:
        data = self.unknown_box.currentData()
        return data or None

    # ``activated`` comes only from the user, never from filling the box in code, so
    # refilling it needs no guard.
    def set_chosen_unknown(self, name: str | None) -> None:
        self.unknown_box.clear()
        self.unknown_box.addItem(AUTO, "")
        if name:
            self.unknown_box.addItem(name, name)
            self.unknown_box.setCurrentIndex(1)

    def chosen_unit(self) -> str | None:
        """The unknown's unit as typed (None when blank: the SI unit is inferred)."""
        text = " ".join(self.unit_box.text().split())
        return text or None

    def set_chosen_unit(self, unit: str | None) -> None:
        self.unit_box.setText(unit or "")
        self._unit_sent = self.unit_box.text()

    def dimension_check(self) -> bool:
        return self.dimension_box.isChecked()

    def set_dimension_check(self, on: bool) -> None:
        self.dimension_box.setChecked(bool(on))

    def _on_unit_edited(self) -> None:
        if self.unit_box.text() != self._unit_sent:  # Return and focus-out both finish
            before, self._unit_sent = self._unit_sent, self.unit_box.text()
            self.unit_changed.emit(before, self._unit_sent)
            self.units_chosen.emit()

    def _on_unknown_activated(self, _index: int) -> None:
        self.unknown_chosen.emit(self.unknown_box.currentData() or "")

    # -- showing an analysis
    def show_analysis(self, analysis: Analysis) -> None:
        self.analysis = analysis
        self._fill_unknowns(analysis)
        self._highlight(analysis.position if analysis.error else None)
        self._show_typeset(analysis)
        if analysis.ok:
            unit = getattr(analysis.equation, "unknown_unit", None)
            message = f"Ready: solving for {analysis.unknown}" + (f" in {unit}." if unit else ".")
            if analysis.ambiguous:
                message += " " + CHOOSE_UNKNOWN
            if analysis.notes:
                message += "  " + "  ".join(analysis.notes)
            warn = any(r.code in SUSPECT_REMARKS
                       for r in getattr(analysis.equation, "remarks", ()))
            self._set_status(message, ok=not analysis.ambiguous, warn=warn)
        else:
            where = ""
            if analysis.position is not None and "column" not in analysis.error:
                where = f"column {analysis.position + 1}: "
            # The unknown picked for the user (the first of several names without a value)
            # has no row in the table, so it can never be given one: the only way on is to
            # choose the unknown, which "no value for 'Tho' (the unknown is 'mh')" left unsaid.
            hint = f" {CHOOSE_UNKNOWN}" if analysis.ambiguous and analysis.missing else ""
            self._set_status(where + analysis.error + hint, ok=False)

    def _show_typeset(self, analysis: Analysis) -> None:
        if not analysis.latex:
            # Never leave an old typeset form up: it would not match the text.
            self.equation_view.clear()
            self.derivative_view.clear()
            return
        if analysis.typeset_dpi is None:
            # Not typeset in the worker (an analysis made without a dpi): typeset here.
            analysis = typeset(analysis, self.typeset_dpi())
        from solvers.equation import MAX_TYPESET_CHARS

        too_large = len(analysis.latex) > MAX_TYPESET_CHARS
        self.equation_view.show_png(analysis.equation_png,
                                    TOO_LARGE if too_large else analysis.text, analysis.text)
        u = analysis.unknown or "x"
        if analysis.derivative_latex:
            self.derivative_view.show_png(
                analysis.derivative_png,
                TOO_LARGE_DERIVATIVE if len(analysis.derivative_latex) > MAX_TYPESET_CHARS
                else f"derivative of {residual_name(u)} = lhs - rhs")
        elif analysis.derivative_note:
            self.derivative_view.show_png(None, analysis.derivative_note)
        elif analysis.equation is not None:
            self.derivative_view.show_png(
                None, "no symbolic derivative: Newton–Raphson will use a numerical one")
        else:
            self.derivative_view.clear()

    def typeset_dpi(self) -> float:
        """Resolution for the typeset forms on this screen (call in the UI thread)."""
        return TYPESET_DPI * (self.equation_view.devicePixelRatioF() or 1.0)

    def _set_status(self, text: str, *, ok: bool, warn: bool = False) -> None:
        """✓ in green when the equation is ready; ⚠ in amber when it is ready but a note
        says the root may be off by a factor (words.SUSPECT_REMARKS: a tick beside "the
        root is 9.55 times off" read as all clear); ✗ in bold vermillion for an error."""
        if ok and warn:
            self.status.setText("⚠ " + text)
            self.status.setStyleSheet("color: #8A5A00; font-weight: bold;")
            return
        self.status.setText(("✓ " if ok else "✗ ") + text)
        self.status.setStyleSheet("color: #1F5F3F;" if ok else "color: #8A2B00; font-weight: bold;")

    def _fill_unknowns(self, analysis: Analysis) -> None:
        chosen = self.chosen_unknown()
        self.unknown_box.clear()
        self.unknown_box.addItem(
            AUTO if not analysis.unknown or chosen else f"{AUTO}: {analysis.unknown}", "")
        for name in analysis.candidates:
            self.unknown_box.addItem(name, name)
        if chosen and chosen in analysis.candidates:
            self.unknown_box.setCurrentIndex(self.unknown_box.findData(chosen))
        else:
            self.unknown_box.setCurrentIndex(0)

    def _highlight(self, position: int | None) -> None:
        """Mark the offending character (or the end of the text) with a wavy vermillion line."""
        if position is None:
            self.editor.setExtraSelections([])
            return
        text = self.text()
        position = max(0, min(position, max(len(text) - 1, 0)))
        selection = QTextEdit.ExtraSelection()
        fmt = QTextCharFormat()
        fmt.setBackground(QColor("#F6C9B0"))
        fmt.setUnderlineColor(QColor("#D55E00"))
        fmt.setUnderlineStyle(QTextCharFormat.UnderlineStyle.WaveUnderline)
        fmt.setProperty(QTextFormat.Property.FullWidthSelection, False)
        selection.format = fmt
        cursor = QTextCursor(self.editor.document())
        cursor.setPosition(position)
        cursor.movePosition(QTextCursor.MoveOperation.NextCharacter,
                            QTextCursor.MoveMode.KeepAnchor)
        selection.cursor = cursor
        self.editor.setExtraSelections([selection])

    def highlighted_position(self) -> int | None:
        selections = self.editor.extraSelections()
        return selections[0].cursor.selectionStart() if selections else None


def bold(font: QFont) -> QFont:
    font = QFont(font)
    font.setBold(True)
    return font
