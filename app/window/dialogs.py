"""Help and About texts, the calculation-details dialog, and the safety caution."""

from __future__ import annotations

from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QLineEdit,
    QPlainTextEdit,
    QTextBrowser,
    QVBoxLayout,
    QWidget,
)

from app.documents.words import CAUTION as CAUTION_FULL
from app.documents.words import CAUTION_LINE, HELP_UNITS
from app.documents.worksheet import (
    MAX_CALC_FIELD,
    MAX_NOTE,
    MAX_TITLE,
    CalcInfo,
    Selection,
    Worksheet,
)
from app.window.equation_strip import limit_text
from solvers.equation.functions import FUNCTIONS

# The window's status bar shows the one-line form; help and about carry the full text.
CAUTION = CAUTION_LINE

SOURCES = """
<ul>
<li><b>scipy.optimize</b> (newton, brentq): roots and iteration behaviour of the methods
are compared against it on the same functions;</li>
<li><b>mpmath</b>: high-precision reference roots (findroot at 50 digits);</li>
<li><b>numpy</b> (polynomial roots) and <b>scipy.special</b> (Bessel-function zeros;
wrightomega, the closed form of the Colebrook friction-factor equation);</li>
<li><b>scipy.constants</b>: physical constants used in the engineering checks;</li>
<li>the <b>Alefeld–Potra–Shi</b> test set of nonlinear equations, 154 cases (ACM TOMS 21,
1995);</li>
<li>the <b>Moré–Garbow–Hillstrom</b> systems of nonlinear equations (ACM TOMS 7, 1981)
against scipy.optimize.root (MINPACK's hybrid method) from their standard starts;</li>
<li>published <b>handbook tables</b>: Blevins, <i>Formulas for Natural Frequency and Mode
Shape</i>, Table 8-1 (cantilever frequency roots); Incropera &amp; DeWitt, <i>Fundamentals of
Heat and Mass Transfer</i>, 6th ed., Table 5.1 (plane-wall eigenvalues); the CRC Handbook of
Chemistry and Physics (van der Waals constants). Each check names its source, or is marked
"from memory" / "common practice".</li>
</ul>
"""

HELP_HTML = f"""
<h2>Using zerotrace</h2>
<p><b>1. Type the equation</b> in the strip at the top: <code>lhs = rhs</code>, or an
expression meaning <code>expression = 0</code>; <code>^</code> or <code>**</code> for
powers. The typeset form and the derivative appear under it as you type; an error is
described in the status line and the offending character is underlined.
<b>Unknown</b>, beside the editor, picks the name to solve for (automatic: the one
name without a value).</p>
<p><b>2. Give the parameters</b> in the table on the left (double-click or F2 on a value).
Every other name the equation uses appears there; a tinted cell needs a valid number.</p>
<p><b>3. Start values and stopping rules.</b> Blank start values are chosen for you
(and said so). On the function plot, with pan/zoom off:
<b>Shift+click</b> sets x0, <b>Shift+right-click</b> sets x1,
<b>Shift+drag</b> sets the bracket [a, b].</p>
<p><b>4. Solve</b> (Ctrl+Return) runs the methods ticked under <b>Methods to run</b> (any of
the six; Newton–Raphson, secant and false position unless you choose others) side by side:
each lane shows the root, iterates, evaluations, stop reason and observed order, over the
table of every iterate. A method that failed is marked <b>✗ FAILED</b> with the reason.
The Convergence tab shows |f(x_k)| or |Δx_k| against k on a log axis.</p>
<p><b>5. Scan range</b> (Ctrl+Shift+Return) finds every root, pole and jump between
<i>scan from</i> and <i>scan to</i>, in the background (Esc or Cancel stops it).
Double-click a root (or select it and press Enter, or Polish) to polish it with every
method, each started at it (a bracket a few millionths wide around it); the start values
and bracket you typed are kept for Solve and the tables of inputs.
<b>Take as design value</b> (Ctrl+D) records the selected root, and why, for the
calculation sheet.</p>
<p><b>Functions:</b> <code>{" ".join(FUNCTIONS)}</code> (J0…K1: the Bessel functions
of orders 0 and 1; erf and erfc the error functions); constants <code>pi</code> and
<code>deg</code> (= π/180: <code>sin(30deg)</code>). A bare <code>log</code> is refused:
write <code>ln</code> or <code>log10</code>.</p>
<p><b>Definitions.</b> Lines before the equation may define intermediate quantities,
one per line (or separated by <code>;</code>): <code>A = pi*D^2/4</code>, then
<code>v = Q/A</code>, then the equation. The parameters table lists only the inputs; the
defined values at the root are given in the note above the lanes, by the command line and
on the calculation sheet.</p>
{HELP_UNITS}
<p><b>Systems.</b> Run ▸ System of equations (Ctrl+Shift+Y) opens a window for several
equations in several unknowns: type one equation per line, give each unknown a start value,
and Solve runs Newton–Raphson (on the Jacobian, with a line search) and Broyden side by side,
with every iterate and a convergence view of ||F|| and the step length. A system worksheet
opened with File ▸ Open goes there.</p>
<p><b>6. Tables of inputs</b> (Ctrl+T, Run menu) solve the equation for every row of a table
(open a CSV file or paste cells from a spreadsheet: one header row of parameter names, one
row of values per case; columns x0, x1, bracket_a, bracket_b give a row its own start values)
or sweep one parameter, each value started from the previous root. The run goes in the
background with progress and Cancel; rows that did not converge are shaded, with the reason
in their tooltip; double-click a row to see its method lane with every iterate (in a sweep,
scan that row and continue the sweep from another root there). The design
chart plots the root against a column (log axes on request), failures as crosses. Export the
results as CSV.</p>
<p><b>Files.</b> Worksheets are saved as JSON files of our own (.json). Export the iteration
log and the
roots as CSV (numbers written exactly) and the calculation sheet as PDF from the File menu.
Ctrl+C on any table copies the selection as tab-separated text; the context menu copies the
whole table. Unsaved work is kept in a recovery file and offered at the next start.</p>
<p><b>Keys.</b> Ctrl+N new, Ctrl+O open, Ctrl+S save, Ctrl+Shift+S save as, Ctrl+Q quit,
Ctrl+Return solve,
Ctrl+Shift+Return scan, Esc cancel scan, Ctrl+D take as design value, Ctrl+T tables of inputs,
Ctrl+1 / Ctrl+2 function / convergence view,
Ctrl+= / Ctrl+- more / fewer significant figures, Ctrl+Shift+Y system of equations,
Ctrl+Shift+W in a table: widen its columns to show every figure, F1 this help.</p>
<p style="color:#8A2B00"><b>Caution.</b> {CAUTION_FULL}</p>
"""

ABOUT_HTML = f"""
<h2>zerotrace</h2>
<p>Finds, checks and documents every real root of a nonlinear design equation, with the
method, tolerances and every iterate shown for the checker.</p>
<p style="color:#8A2B00"><b>Caution.</b> {CAUTION_FULL} A root is a property of the equation as
typed: a wrong equation, input or unit gives a wrong answer with full confidence.</p>
<p><b>What the test suite checks against</b>:</p>{SOURCES}
<p>Sample worksheets are set in invented scenarios: their designs, loads and the van der
Waals fluid are made up for demonstration; physical constants and material properties in
them are handbook values, each labelled so in its note.</p>
"""


class TextDialog(QDialog):
    """A scrollable rich-text page with a Close button (help and about)."""

    def __init__(self, title: str, html: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle(title)
        self.browser = QTextBrowser()
        self.browser.setOpenExternalLinks(False)
        self.browser.setHtml(html)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        buttons.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        layout.addWidget(self.browser)
        layout.addWidget(buttons)
        self.resize(620, 560)


class CalcDialog(QDialog):
    """Title, notes and title-block fields of the worksheet (used by the calculation sheet)."""

    def __init__(self, ws: Worksheet, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Calculation details")
        self.title = QLineEdit(ws.title)
        self.number = QLineEdit(ws.calc.number)
        self.revision = QLineEdit(ws.calc.revision)
        self.prepared = QLineEdit(ws.calc.prepared_by)
        self.checked = QLineEdit(ws.calc.checked_by)
        self.notes = QPlainTextEdit(ws.notes)
        self.notes.setTabChangesFocus(True)
        self.selection = ws.selection
        self.reason = QLineEdit(ws.selection.reason if ws.selection else "")
        self.reason.setEnabled(ws.selection is not None)
        # The worksheet's own limits, so whatever is typed here can be saved and opened.
        self.title.setMaxLength(MAX_TITLE)
        for line in (self.number, self.revision, self.prepared, self.checked):
            line.setMaxLength(MAX_CALC_FIELD)
        self.reason.setMaxLength(min(MAX_NOTE, 32767))  # 32767: QLineEdit's own ceiling
        limit_text(self.notes, MAX_NOTE, "the notes")
        self.reason.setPlaceholderText("take a root as the design value first (Ctrl+D)"
                                       if ws.selection is None else "")
        form = QFormLayout()
        form.addRow("&Title", self.title)
        form.addRow("Calculation &number", self.number)
        form.addRow("&Revision", self.revision)
        form.addRow("&Prepared by", self.prepared)
        form.addRow("C&hecked by", self.checked)
        form.addRow("N&otes", self.notes)
        form.addRow("Why this &design value", self.reason)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        layout.addLayout(form)
        layout.addWidget(buttons)
        self.resize(520, 380)

    def apply(self, ws: Worksheet) -> Worksheet:
        selection = ws.selection
        if selection is not None:
            selection = Selection(selection.root, self.reason.text())
        return ws.with_changes(
            selection=selection,
            title=self.title.text(),
            notes=self.notes.toPlainText(),
            calc=CalcInfo(self.number.text(), self.revision.text(), self.prepared.text(),
                          self.checked.text()),
        )
