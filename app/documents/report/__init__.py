"""The calculation sheet: a PDF a checker can sign off, and the CSV files behind it.

:func:`write_report` is handed a worksheet with the results its caller computed
through :mod:`solvers.pipeline` (the solution, and the scan when the worksheet has a
scan range): the sheet never solves. It writes

* an A4 PDF: title block with signature boxes, the caution, the equation as typed
  and typeset, the derivative Newton used, every parameter, the method settings,
  each method's result with an independent 50-digit residual, the scan's roots,
  poles, jumps and gaps, the selected design value, two figures, and every
  iterate of every method at full precision (``repr``), with the calc number and
  "page N of M" on every page;
* optionally, in ``csv_dir``, ``<pdf stem>-runs.csv`` (every iterate) and
  ``<pdf stem>-roots.csv`` (the scan), written by :mod:`app.documents.export` from the
  same ``Run`` and ``Scan`` objects, so the sheet and the CSV carry the same floats;
* when handed a solved table of inputs or sweep (``table=``), a last section with its
  summary, notes, rows (the first and last ten when long) and the design chart, and
  ``<pdf stem>-table.csv`` with every row.

Why reportlab
-------------
A calculation package is mostly long tables. reportlab's platypus layout engine
flows a table across pages by itself and repeats its header rows on every page, it
embeds TrueType fonts (we use the DejaVu faces that ship inside matplotlib, so the
sheet looks the same on every machine and prints Δ, ≤, ′ correctly), and its
canvas can be run in two passes, which is what a true "page N of M" needs (the
total is only known once the last page is laid out). Qt's PDF writer would drag
Qt into ``solvers/`` (not allowed) and has no table flow; matplotlib's PDF backend
draws figures well but has no text flow or pagination at all.

Page size: A4 portrait (ISO 216), the paper of most engineering offices outside
North America; the 170 mm x 253 mm text block also fits a US Letter sheet printed
with "fit to page".

Figures: drawn by :mod:`app.documents.figures` on a matplotlib ``Figure`` (Agg, no
pyplot), saved as a 300 dpi PNG and placed at their print size. reportlab cannot
place a PDF or SVG page without extra packages (pdfrw or svglib), and 300 dpi is
print resolution for line art of this size, so the raster costs nothing a reader
can see and keeps the dependency list as it is. The typeset equation is rendered
the same way with matplotlib's mathtext.

Failure behaviour
-----------------
* A method that did not converge is a result: the sheet is still written and says
  in a boxed line that the method did not converge, with the stop reason.
* An output path that cannot be written (missing folder, a folder in its place,
  no permission) or that exists while ``overwrite`` is False raises
  :class:`ReportError` (a ``ValueError``) with one line naming the path, *before*
  any drawing is done. A missing CSV folder is created (and removed again if the
  sheet then fails). The PDF and its CSV files are written all or nothing
  (:func:`app.documents.files.write_group`): each to a temporary file in its target
  folder, and renamed into place only when all are complete, so a full disk
  never leaves half a PDF, or CSV files without their sheet.
* A figure or a typeset formula that cannot be drawn is replaced on the sheet by a
  sentence saying so; the numbers are never dropped. A typeset formula taller than
  ``MAX_MATH_HEIGHT`` is scaled down to fit, to no less than ``MIN_MATH_SCALE``;
  below that the text as entered stands in for it. Anything else too tall for a
  page (a table row with a very long note) is split across pages or, when it
  cannot be split, shrunk to the page: the layout never fails.
* A run with more than ``MAX_TABLE_ROWS`` iterates (only possible with a huge
  iteration cap) shows its first and last ``MAX_TABLE_ROWS // 2`` on the sheet, says
  how many rows it left out, and the runs CSV holds them all. So does a scan with more
  than ``MAX_TABLE_ROWS`` roots (a wide range: up to 100,000), whose roots CSV holds them
  all, and one with more than ``sections.MAX_LISTED`` poles, jumps or gaps (listed in one
  cell each).

Modules: :mod:`.layout` (page, palette, fonts, styles, small blocks), :mod:`.typeset`
(figures and formulas as images), :mod:`.tables` (iterates, residuals),
:mod:`.sections` (the numbered sections), :mod:`.pages` (header, footer, page count,
rendering) and :mod:`.writing` (checks, identity, the all-or-nothing write). All words
come from :mod:`app.documents.words`.
"""

from app.documents.report.layout import (
    MAX_MATH_HEIGHT,
    MAX_TABLE_ROWS,
    MIN_MATH_SCALE,
    PAGE_SIZE,
    ReportError,
    ReportResult,
)
from app.documents.report.pages import _SheetTemplate
from app.documents.report.tables import _residual_mp
from app.documents.report.typeset import MATH_MIN_SCALE, _math_lines, _math_png
from app.documents.report.writing import write_report
from app.documents.words import CAUTION, NUMERICAL_DERIVATIVE_NOTE, RESIDUAL_WORDS

__all__ = [
    "CAUTION",
    "MATH_MIN_SCALE",
    "MAX_MATH_HEIGHT",
    "MAX_TABLE_ROWS",
    "MIN_MATH_SCALE",
    "NUMERICAL_DERIVATIVE_NOTE",
    "PAGE_SIZE",
    "RESIDUAL_WORDS",
    "ReportError",
    "ReportResult",
    "_SheetTemplate",
    "_math_lines",
    "_math_png",
    "_residual_mp",
    "write_report",
]
