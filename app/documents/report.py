"""The calculation sheet: a PDF a checker can sign off, and the CSV files behind it.

:func:`write_report` takes a worksheet, solves and scans it through
:mod:`solvers.pipeline` (unless a solution and scan are handed in), and writes

* an A4 PDF: title block with signature boxes, the caution, the equation as typed
  and typeset, the derivative Newton used, every parameter, the method settings,
  each method's result with an independent 50-digit residual, the scan's roots,
  poles, jumps and gaps, the selected design value, two figures, and every
  iterate of every method at full precision (``repr``), with the calc number and
  "page N of M" on every page;
* optionally, in ``csv_dir``, ``<pdf stem>-runs.csv`` (every iterate) and
  ``<pdf stem>-roots.csv`` (the scan), written by :mod:`app.documents.export` from the
  same ``Run`` and ``Scan`` objects, so the sheet and the CSV carry the same floats.

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
  any solving is done. A missing CSV folder is created (and removed again if the
  sheet then fails). The PDF and its CSV files are written all or nothing
  (:func:`app.documents.files.write_group`): each to a temporary file in its target
  folder, and renamed into place only when all are complete, so a full disk
  never leaves half a PDF, or CSV files without their sheet.
* An equation that does not parse raises :class:`solvers.equation.EquationError`
  unchanged (also a ``ValueError`` with one line), as :func:`pipeline.solve` does.
* A figure or a typeset formula that cannot be drawn is replaced on the sheet by a
  sentence saying so; the numbers are never dropped. A typeset formula taller than
  ``MAX_MATH_HEIGHT`` is scaled down to fit, to no less than ``MIN_MATH_SCALE``;
  below that the text as entered stands in for it. Anything else too tall for a
  page (a table row with a very long note) is split across pages or, when it
  cannot be split, shrunk to the page: the layout never fails.
* A run with more than ``MAX_TABLE_ROWS`` iterates (only possible with a huge
  iteration cap) shows its first and last ``MAX_TABLE_ROWS // 2`` on the sheet, says
  how many rows it left out, and the runs CSV holds them all.
"""

from __future__ import annotations

import hashlib
import io
import math
import os
import struct
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path
from typing import Any
from xml.sax.saxutils import escape

from matplotlib import get_data_path
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from reportlab.lib import colors
from reportlab.lib.enums import TA_LEFT
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.pdfgen import canvas as rl_canvas
from reportlab.platypus import (
    CondPageBreak,
    Flowable,
    Image,
    KeepInFrame,
    KeepTogether,
    Paragraph,
    SimpleDocTemplate,
    Spacer,
    Table,
    TableStyle,
)

from app.documents import export, printing
from app.documents.figures import MATPLOTLIB_LOCK, typesetting
from app.documents.files import FileRefused, check_writable, read_limited, write_group
from app.documents.words import CAUTION
from app.documents.worksheet import MAX_FILE_BYTES, Worksheet, dumps
from solvers import pipeline
from solvers.result import REASON_TEXT, Run

TOOL_NAME = "zerotrace"
PAGE_SIZE = A4
MARGIN_X = 20 * mm
MARGIN_TOP = 24 * mm  # room for the running header
MARGIN_BOTTOM = 20 * mm  # room for the running footer
TEXT_WIDTH = PAGE_SIZE[0] - 2 * MARGIN_X
FIGURE_DPI = 300
RESIDUAL_DIGITS = 50  # working precision of the independent residual (decimal digits)
# A run that hit a huge iteration cap would make a book; beyond this many iterates the
# sheet shows the first and last half and points to the runs CSV for the rest.
MAX_TABLE_ROWS = 1000
SHORT_TABLE_ROWS = 40  # iteration tables up to this long are never split across pages
FRAME_HEIGHT = PAGE_SIZE[1] - MARGIN_TOP - MARGIN_BOTTOM
MAX_MATH_HEIGHT = 0.45 * FRAME_HEIGHT  # a typeset formula takes at most about half a page
MIN_MATH_SCALE = 0.55  # below ~6.5 pt on paper the text as entered reads better

NUMERICAL_DERIVATIVE_NOTE = (
    "No symbolic derivative was available: Newton–Raphson used a numerical "
    "(finite-difference) derivative of f, and its f′ column shows those estimates."
)

# Palette: dark slate for rules and headings, greys for table shading; one muted red
# for "did not converge" and one amber for the caution. Legible in greyscale print.
INK = colors.HexColor("#1b2631")
RULE = colors.HexColor("#5d6d7e")
HEAD_FILL = colors.HexColor("#e5e8ec")
BAND_FILL = colors.HexColor("#f5f6f8")
FAIL_INK = colors.HexColor("#8e1b1b")
FAIL_FILL = colors.HexColor("#fbeaea")
CAUTION_EDGE = colors.HexColor("#9a6700")
CAUTION_FILL = colors.HexColor("#fdf6e3")


class ReportError(ValueError):
    """The sheet cannot be written where asked; the message is one line naming the path."""


@dataclass(frozen=True)
class ReportResult:
    """What :func:`write_report` wrote.

    ``sha256`` is the worksheet hash printed in the title block (of the file's bytes
    when a worksheet path was given, else of the canonical worksheet JSON).
    """

    pdf_path: Path
    csv_paths: tuple[Path, ...]
    pages: int
    sha256: str


# ------------------------------------------------------------------------ fonts


_FONTS = {
    "ZT-Sans": "DejaVuSans.ttf",
    "ZT-Sans-Bold": "DejaVuSans-Bold.ttf",
    "ZT-Sans-Oblique": "DejaVuSans-Oblique.ttf",
    "ZT-Mono": "DejaVuSansMono.ttf",
    "ZT-Mono-Bold": "DejaVuSansMono-Bold.ttf",
}


def _register_fonts() -> None:
    # The DejaVu faces ship with matplotlib, so no system font is assumed.
    if "ZT-Sans" in pdfmetrics.getRegisteredFontNames():
        return
    folder = Path(get_data_path()) / "fonts" / "ttf"
    for name, file in _FONTS.items():
        pdfmetrics.registerFont(TTFont(name, str(folder / file)))
    pdfmetrics.registerFontFamily(
        "ZT-Sans", normal="ZT-Sans", bold="ZT-Sans-Bold", italic="ZT-Sans-Oblique",
        boldItalic="ZT-Sans-Bold",
    )
    pdfmetrics.registerFontFamily(
        "ZT-Mono", normal="ZT-Mono", bold="ZT-Mono-Bold", italic="ZT-Mono",
        boldItalic="ZT-Mono-Bold",
    )


def _styles() -> dict[str, ParagraphStyle]:
    base = ParagraphStyle(
        "body", fontName="ZT-Sans", fontSize=8.8, leading=11.6, textColor=INK, alignment=TA_LEFT
    )
    return {
        "body": base,
        "small": ParagraphStyle("small", parent=base, fontSize=7.6, leading=9.6),
        "cell": ParagraphStyle("cell", parent=base, fontSize=8.2, leading=10.2),
        "cellmono": ParagraphStyle(
            "cellmono", parent=base, fontName="ZT-Mono", fontSize=8, leading=10,
            wordWrap="CJK",  # break long equations and hashes anywhere, never overflow
        ),
        "formula": ParagraphStyle(  # breaks only at spaces: a number is never split
            "formula", parent=base, fontSize=8, leading=10, splitLongWords=0,
        ),
        "label": ParagraphStyle(
            "label", parent=base, fontName="ZT-Sans-Bold", fontSize=7.6, leading=9.6,
            textColor=RULE,
        ),
        "title": ParagraphStyle(
            "title", parent=base, fontName="ZT-Sans-Bold", fontSize=14, leading=17
        ),
        "h1": ParagraphStyle(
            "h1", parent=base, fontName="ZT-Sans-Bold", fontSize=11, leading=14,
            spaceBefore=10, spaceAfter=4,
        ),
        "h2": ParagraphStyle(
            "h2", parent=base, fontName="ZT-Sans-Bold", fontSize=9.4, leading=12,
            spaceBefore=6, spaceAfter=3,
        ),
        "caption": ParagraphStyle(
            "caption", parent=base, fontName="ZT-Sans-Oblique", fontSize=7.8, leading=10,
            spaceBefore=2, spaceAfter=8,
        ),
    }


# ------------------------------------------------------------------ formatting


def _num(value: float | int | None) -> str:
    """Full precision: ``repr`` of floats (the same text as the CSV), '—' for none."""
    if value is None:
        return "—"
    return export.number(value)


def _text(value: str) -> str:
    """User text made safe for reportlab's paragraph markup."""
    return escape(value).replace("\n", "<br/>")


def _label(method: str) -> str:
    from solvers.methods import METHODS

    spec = METHODS.get(method)
    label = getattr(spec, "label", None)
    return label if label else method.replace("_", " ")


def _relative_last_step(run: Run) -> str:
    for step in reversed(run.steps):
        if step.dx is not None:
            if not (math.isfinite(step.dx) and math.isfinite(step.x)):
                return "not finite"
            if step.x == 0:
                return f"{abs(step.dx):.3e} (absolute, x = 0)"
            return f"{abs(step.dx) / abs(step.x):.3e}"
    return "— (no step taken)"


# Words for the codes of solvers.residual (the module returns codes, never prose).
RESIDUAL_WORDS = {
    "no_finite_root": "— (no finite root)",
    "not_real": "not a real number there (outside the domain)",
    "infinite": "infinite (a pole)",
    "overflow": "beyond the double range",
    "not_computable": "not computable at this precision",
    "time_budget": "not computed (time budget exceeded)",
}


def _residual_mp(equation: Any, x: float) -> str:
    """f(root) evaluated by the equation's own 50-digit mpmath evaluation."""
    import mpmath

    from solvers.residual import residual_mp

    result = residual_mp(equation, x, digits=RESIDUAL_DIGITS)
    if result.value is None:
        return RESIDUAL_WORDS.get(result.code, result.code)
    return mpmath.nstr(result.value, 12)


def _worksheet_identity(
    ws: Worksheet, worksheet_path: str | os.PathLike[str] | None
) -> tuple[str, str, str]:
    """(file name, SHA-256 hex, what the hash covers)."""
    if worksheet_path is not None:
        path = Path(worksheet_path)
        try:
            data = read_limited(path, MAX_FILE_BYTES, what="worksheet")
        except FileRefused as exc:
            raise ReportError(f"cannot hash the worksheet file: {exc}") from None
        except OSError as exc:
            raise ReportError(
                f"{path}: cannot read the worksheet file to hash it ({exc.strerror or exc})"
            ) from None
        # A name that is not UTF-8 (bytes from another system) is shown with U+FFFD in
        # the sheet and CSV: the text must be encodable; the hash still covers the file.
        shown = os.fsencode(path.name).decode("utf-8", "replace")
        return shown, hashlib.sha256(data).hexdigest(), "SHA-256 of the worksheet file's bytes"
    try:
        text = dumps(ws)
    except ValueError as exc:
        raise ReportError(f"worksheet: cannot be written as JSON to hash it ({exc})") from None
    return (
        "(not saved to a file)",
        hashlib.sha256(text.encode("utf-8")).hexdigest(),
        "SHA-256 of the canonical worksheet JSON (the worksheet was not read from a file)",
    )


# --------------------------------------------------------------- output paths


def _check_target(path: Path, overwrite: bool) -> Path:
    """Refuse a target we could not write, before any work is done."""
    folder = path.parent if str(path.parent) else Path(".")
    if path.is_dir():
        raise ReportError(f"{path}: is a folder, not a file name")
    if not folder.exists():
        raise ReportError(f"{path}: folder {folder} does not exist")
    if not folder.is_dir():
        raise ReportError(f"{path}: {folder} is not a folder")
    if path.exists() and not overwrite:
        raise ReportError(f"{path}: already exists (use --force to replace it)")
    try:  # the only reliable writability test is to write (os.access lies for root)
        check_writable(folder)
    except OSError as exc:
        raise ReportError(f"{path}: cannot write in {folder} ({exc.strerror or exc})") from None
    return path


def _prepare_csv_dir(csv_dir: Path) -> list[Path]:
    """Create the CSV folder (and missing parents); the folders created, deepest last."""
    if csv_dir.exists() and not csv_dir.is_dir():
        raise ReportError(f"{csv_dir}: exists and is not a folder (CSV folder)")
    created = [p for p in (csv_dir, *csv_dir.parents) if not p.exists()][::-1]
    try:
        csv_dir.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ReportError(
            f"{csv_dir}: cannot create the CSV folder ({exc.strerror or exc})"
        ) from None
    return created


def _remove_empty(folders: Sequence[Path]) -> None:
    """Remove folders this run created, deepest first, if they are still empty."""
    for folder in reversed(folders):
        try:
            folder.rmdir()
        except OSError:
            return


# --------------------------------------------------------------------- images


def _png_image(png: bytes, width: float, height: float) -> Image:
    return Image(io.BytesIO(png), width=width, height=height)


def _figure(draw: Callable[[Any], None], width: float, height: float) -> Image:
    """A matplotlib Figure (Agg, no pyplot) drawn by ``draw(ax)``, placed at print size."""
    buffer = io.BytesIO()
    with MATPLOTLIB_LOCK:  # the window may be drawing in the UI thread meanwhile
        fig = Figure(figsize=(width / 72, height / 72), layout="constrained")
        FigureCanvasAgg(fig)
        ax = fig.add_subplot()
        draw(ax)
        fig.savefig(buffer, format="png", dpi=FIGURE_DPI, facecolor="white")
    return _png_image(buffer.getvalue(), width, height)


def _math_png(latex: str, size: float = 12.0) -> tuple[bytes, float, float] | None:
    """``latex`` typeset by matplotlib mathtext: (PNG, width, height in points), or None."""
    if not latex or len(latex) > 3000:
        return None
    from matplotlib.font_manager import FontProperties
    from matplotlib.mathtext import math_to_image

    text = latex if latex.startswith("$") else f"${latex}$"
    buffer = io.BytesIO()
    try:
        with typesetting():  # the matplotlib lock; frees what mathtext keeps behind
            math_to_image(text, buffer, prop=FontProperties(size=size), dpi=FIGURE_DPI,
                          format="png")
    except Exception:  # mathtext knows a subset of LaTeX; fall back to the text as typed
        return None
    # Print size from the PNG's own header (IHDR width, height in pixels at FIGURE_DPI),
    # which spares a second mathtext parse.
    pixels_w, pixels_h = struct.unpack(">II", buffer.getvalue()[16:24])
    return buffer.getvalue(), pixels_w * 72 / FIGURE_DPI, pixels_h * 72 / FIGURE_DPI


def _math(latex: str, max_width: float, size: float = 12.0,
          max_height: float = MAX_MATH_HEIGHT) -> Image | None:
    """Typeset ``latex`` with matplotlib mathtext; None when mathtext cannot set it legibly."""
    typeset = _math_png(latex, size)
    if typeset is None:
        return None
    png, width, height = typeset
    scale = min(1.0, max_width / width if width > 0 else 1.0,
                max_height / height if height > 0 else 1.0)
    if scale < MIN_MATH_SCALE:  # would print below ~6.5 pt: the plain text is clearer
        return None
    return _png_image(png, width * scale, height * scale)


# A typeset derivative too wide for one line is set over several, never shrunk below this
# fraction of its 12 pt size (about 9 pt); more lines than MATH_LINES go to the text form.
MATH_MIN_SCALE = 0.75
MATH_LINES = 8


def _math_lines(lead: str, terms: Sequence[str], max_width: float,
                size: float = 12.0) -> list[Image] | None:
    """``lead`` followed by the signed ``terms`` ("+ a", "- b"), set over as many lines as
    the width needs, a term never split; None when a line cannot be set legibly."""
    lines: list[tuple[bytes, float, float]] = []
    current = lead
    held: tuple[bytes, float, float] | None = None
    for term in terms:
        trial = f"{current} {term}"
        typeset = _math_png(trial, size)
        if typeset is None:
            return None
        if typeset[1] <= max_width or held is None:
            current, held = trial, typeset
            continue
        lines.append(held)
        if len(lines) >= MATH_LINES:  # too long to set: the text form below carries it
            return None
        current = r"\qquad " + term
        held = _math_png(current, size)
        if held is None:
            return None
    if held is not None:
        lines.append(held)
    if not lines or len(lines) > MATH_LINES:
        return None
    images = []
    for png, width, height in lines:
        scale = min(1.0, max_width / width) if width > 0 else 1.0
        if scale < MATH_MIN_SCALE:
            return None
        images.append(_png_image(png, width * scale, height * scale))
    return images


# --------------------------------------------------------------------- tables


def _key_value_table(rows: Sequence[tuple[str, Any]], st: dict, key_width: float = 44 * mm):
    data = [[Paragraph(_text(k), st["label"]), v] for k, v in rows]
    table = Table(data, colWidths=[key_width, TEXT_WIDTH - key_width], hAlign="LEFT")
    table.setStyle(
        TableStyle(
            [
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("LINEBELOW", (0, 0), (-1, -1), 0.25, colors.HexColor("#d0d5db")),
                ("TOPPADDING", (0, 0), (-1, -1), 2.5),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 2.5),
                ("LEFTPADDING", (0, 0), (-1, -1), 3),
            ]
        )
    )
    return table


def _grid_style(header_rows: int = 1, mono_from_col: int | None = None) -> list:
    style = [
        ("FONTNAME", (0, 0), (-1, header_rows - 1), "ZT-Sans-Bold"),
        ("FONTSIZE", (0, 0), (-1, -1), 8),
        ("TEXTCOLOR", (0, 0), (-1, -1), INK),
        ("BACKGROUND", (0, 0), (-1, header_rows - 1), HEAD_FILL),
        ("LINEABOVE", (0, 0), (-1, 0), 0.8, INK),
        ("LINEBELOW", (0, header_rows - 1), (-1, header_rows - 1), 0.6, INK),
        ("LINEBELOW", (0, -1), (-1, -1), 0.8, INK),
        ("ROWBACKGROUNDS", (0, header_rows), (-1, -1), [colors.white, BAND_FILL]),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("TOPPADDING", (0, 0), (-1, -1), 2),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
        ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ("RIGHTPADDING", (0, 0), (-1, -1), 3),
    ]
    if mono_from_col is not None:
        style.append(("FONTNAME", (mono_from_col, header_rows), (-1, -1), "ZT-Mono"))
    return style


def _fitted_widths(
    rows: Sequence[Sequence[str]], fonts: Sequence[str], width: float, size: float
) -> tuple[list[float], float]:
    """Column widths for plain-text cells and a font size (<= size) so the table fits."""
    pad = 6.0
    natural = [
        max(pdfmetrics.stringWidth(str(row[c]), fonts[c], 1.0) for row in rows)
        for c in range(len(fonts))
    ]
    needed = sum(natural) * size + pad * len(fonts)
    if needed > width:
        size = max(5.5, (width - pad * len(fonts)) / sum(natural))
    widths = [n * size + pad for n in natural]
    spare = max(0.0, width - sum(widths))
    # Spare width goes to the number columns (all but the first, the counter k).
    share = spare / max(1, len(widths) - 1)
    widths = [widths[0] + (spare if len(widths) == 1 else 0.0)] + [w + share for w in widths[1:]]
    return widths, size


# Columns of an iteration table, kept only when some step of the run has the value.
_STEP_COLUMNS: tuple[tuple[str, str], ...] = (
    ("x", "x\u2096"),
    ("fx", "f(x\u2096)"),
    ("dfx", "f\u2032(x\u2096)"),
    ("dx", "\u0394x\u2096 = x\u2096 \u2212 x\u2096\u208b\u2081"),
    ("lo", "bracket lo"),
    ("hi", "bracket hi"),
)


def _iteration_table(run: Run, st: dict) -> list[Flowable]:
    label = _label(run.method)
    if not run.steps:
        return [
            Paragraph(f"<b>{escape(label)}</b>: no iterates. {_text(run.message)}", st["body"])
        ]
    columns = [
        (key, head)
        for key, head in _STEP_COLUMNS
        if key in ("x", "fx") or any(getattr(s, key) is not None for s in run.steps)
    ]
    steps = list(run.steps)
    omitted = 0
    if len(steps) > MAX_TABLE_ROWS:
        half = MAX_TABLE_ROWS // 2
        omitted = len(steps) - 2 * half
        steps = steps[:half] + [None] + steps[-half:]  # type: ignore[list-item]
    header = ["k"] + [head for _, head in columns]
    body: list[list[str]] = []
    gap_row = None
    for step in steps:
        if step is None:
            gap_row = len(body)
            body.append([f"… {omitted} iterates left out here; the runs CSV holds every one"]
                        + [""] * len(columns))
            continue
        body.append([str(step.k)] + [_num(getattr(step, key)) for key, _ in columns])
    fonts = ["ZT-Mono"] * (len(columns) + 1)
    measured = [header] + [r for i, r in enumerate(body) if i != gap_row]
    widths, size = _fitted_widths(measured, fonts, TEXT_WIDTH, 7.8)
    banner = (
        f"{label} — {len(run.steps)} points recorded, {run.iterations} iterations, "
        f"stop: {run.reason}"
    )
    data = [[banner] + [""] * len(columns), header] + body
    style = _grid_style(header_rows=2)
    style += [
        ("SPAN", (0, 0), (-1, 0)),
        ("FONTNAME", (0, 2), (-1, -1), "ZT-Mono"),
        ("FONTSIZE", (0, 0), (-1, -1), size),
        ("FONTSIZE", (0, 0), (-1, 0), 8.4),
        ("LEADING", (0, 0), (-1, -1), size * 1.25),
        ("ALIGN", (0, 1), (-1, -1), "RIGHT"),
        ("ALIGN", (0, 0), (-1, 0), "LEFT"),
        ("BACKGROUND", (0, 0), (-1, 0), colors.white),
        ("LINEBELOW", (0, 0), (-1, 0), 0.3, RULE),
        ("TOPPADDING", (0, 2), (-1, -1), 1.2),
        ("BOTTOMPADDING", (0, 2), (-1, -1), 1.2),
    ]
    if not run.converged:
        style.append(("TEXTCOLOR", (0, 0), (-1, 0), FAIL_INK))
    if gap_row is not None:
        r = gap_row + 2
        style += [("SPAN", (0, r), (-1, r)), ("ALIGN", (0, r), (-1, r), "CENTER"),
                  ("FONTNAME", (0, r), (-1, r), "ZT-Sans-Oblique")]
    table = Table(data, colWidths=widths, repeatRows=2, hAlign="LEFT", style=TableStyle(style))
    # A short table is kept whole (moved to the next page rather than split in two);
    # a long one flows, its banner and header repeated on every page.
    return [KeepTogether([table])] if len(body) <= SHORT_TABLE_ROWS else [table]


def _heading(text: str, st: dict, level: str = "h1") -> list[Flowable]:
    """A heading that never ends a page: it moves over unless ~30 mm of its section fit."""
    return [CondPageBreak((32 if level == "h1" else 24) * mm), Paragraph(escape(text), st[level])]


def _boxed(paragraph: Paragraph, edge, fill) -> Table:
    box = Table([[paragraph]], colWidths=[TEXT_WIDTH])
    box.setStyle(
        TableStyle(
            [
                ("BOX", (0, 0), (-1, -1), 0.9, edge),
                ("BACKGROUND", (0, 0), (-1, -1), fill),
                ("LEFTPADDING", (0, 0), (-1, -1), 6),
                ("RIGHTPADDING", (0, 0), (-1, -1), 6),
                ("TOPPADDING", (0, 0), (-1, -1), 4),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 5),
            ]
        )
    )
    return box


# ------------------------------------------------------------------- sections


@dataclass(frozen=True)
class _Context:
    ws: Worksheet
    solution: Any
    scan: Any
    file_name: str
    sha256: str
    hash_basis: str
    when: datetime
    version: str
    st: dict


def _calc_number(ws: Worksheet) -> str:
    return ws.calc.number.strip() or "(not assigned)"


def _title(ws: Worksheet, equation: Any) -> str:
    if ws.title.strip():
        return ws.title.strip()
    text = " ".join(ws.equation.split())
    text = text if len(text) <= 80 else text[:79] + "…"
    return f"Root of {text} for {equation.unknown}"


def _title_block(c: _Context) -> list[Flowable]:
    st, ws = c.st, c.ws
    lab = st["label"]

    def cell(text: str, style: str = "cell") -> Paragraph:
        return Paragraph(_text(text), st[style])

    data = [
        [cell("Calculation sheet", "label"), Paragraph(_text(_title(ws, c.solution.equation)),
                                                      st["title"]), "", "", "", ""],
        [Paragraph("Calc no.", lab), cell(_calc_number(ws)), Paragraph("Revision", lab),
         cell(ws.calc.revision or "—"), Paragraph("Date", lab), cell(c.when.date().isoformat())],
        [Paragraph("Prepared by", lab), cell(ws.calc.prepared_by), Paragraph("Signature", lab),
         "", Paragraph("Date", lab), ""],
        [Paragraph("Checked by", lab), cell(ws.calc.checked_by), Paragraph("Signature", lab),
         "", Paragraph("Date", lab), ""],
        [Paragraph("Tool", lab), cell(f"{TOOL_NAME} {c.version}"), Paragraph("Worksheet", lab),
         cell(c.file_name, "cellmono"), "", ""],
        [Paragraph("SHA-256", lab), cell(c.sha256, "cellmono"), "", "", "", ""],
        [Paragraph("", lab), cell(c.hash_basis + "; generated "
                                  + c.when.strftime("%Y-%m-%d %H:%M UTC"), "small"),
         "", "", "", ""],
    ]
    widths = [25 * mm, 43 * mm, 23 * mm, 41 * mm, 12 * mm, 26 * mm]
    # Signature rows keep at least 24 pt of writing room and grow with long names.
    table = Table(data, colWidths=widths, minRowHeights=[0, 0, 24, 24, 0, 0, 0])
    table.setStyle(
        TableStyle(
            [
                ("SPAN", (1, 0), (-1, 0)),
                ("SPAN", (3, 4), (-1, 4)),
                ("SPAN", (1, 5), (-1, 5)),
                ("SPAN", (1, 6), (-1, 6)),
                ("BOX", (0, 0), (-1, -1), 1.0, INK),
                ("INNERGRID", (0, 0), (-1, -1), 0.3, RULE),
                ("BACKGROUND", (0, 0), (-1, 0), HEAD_FILL),
                ("VALIGN", (0, 0), (-1, -1), "MIDDLE"),
                ("VALIGN", (0, 2), (-1, 3), "TOP"),
                ("TOPPADDING", (0, 0), (-1, -1), 3),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 3),
                ("TOPPADDING", (0, 0), (-1, 0), 6),
                ("BOTTOMPADDING", (0, 0), (-1, 0), 7),
            ]
        )
    )
    out: list[Flowable] = [table, Spacer(1, 8)]
    out.append(
        _boxed(Paragraph(f"<b>Caution.</b> {escape(CAUTION)}", st["body"]), CAUTION_EDGE,
               CAUTION_FILL)
    )
    if ws.notes.strip():
        out += [*_heading("Purpose and notes", st, "h2"), Paragraph(_text(ws.notes), st["body"])]
    return out


def _equation_section(c: _Context) -> list[Flowable]:
    st, eq = c.st, c.solution.equation
    math_width = TEXT_WIDTH - 44 * mm - 8
    typeset = _math(getattr(eq, "latex", ""), math_width)
    rows: list[tuple[str, Any]] = [
        ("As entered", Paragraph(_text(c.ws.equation), st["cellmono"])),
        ("Typeset", typeset or Paragraph(
            "(mathtext cannot typeset this form legibly; the text as entered governs)",
            st["small"])),
        ("Unknown", Paragraph(f"<font name='ZT-Mono'>{escape(eq.unknown)}</font>", st["cell"])),
    ]
    newton_runs = [r for r in c.solution.runs if r.method == "newton"]
    numerical = getattr(eq, "fprime", None) is None or any(
        r.derivative == "numerical" for r in newton_runs
    )
    if numerical:
        rows.append(("Derivative used by Newton", Paragraph(NUMERICAL_DERIVATIVE_NOTE, st["cell"])))
    else:
        lead = "" if newton_runs else "Newton–Raphson not run; symbolic derivative for reference: "
        fname = "F" if eq.unknown == "f" else "f"  # never "df/df" when the unknown is f
        terms = printing.latex_terms(getattr(eq, "symbolic_derivative", None))
        images = (_math_lines(f"\\frac{{d{fname}}}{{d{eq.unknown}}} =", terms, math_width)
                  if terms else None)
        if images is None:
            lead += "(too long to typeset legibly) "
        # Our own syntax (ln, log10, ^), spaced between factors so a line breaks there and
        # never inside a number.
        formula = printing.breakable(printing.equation_text(eq.derivative))
        text = Paragraph(
            _text(lead + "with the parameter values: ") + f"<font name='ZT-Mono'>"
            f"{_text(formula)}</font>", st["formula"]
        )
        rows.append(("Derivative used by Newton", [*images, text] if images else text))
    notes = tuple(getattr(eq, "notes", ()) or ())
    if notes:
        rows.append(("Reading of the text", Paragraph(_text("; ".join(notes)), st["cell"])))
    out: list[Flowable] = [*_heading("1  Equation", st, "h1"), _key_value_table(rows, st)]

    out += _heading("2  Parameters", st, "h1")
    params = c.ws.parameters
    if not params:
        out.append(Paragraph("The equation has no named parameters.", st["body"]))
    else:
        data = [["Name", "Value", "Note"]] + [
            [Paragraph(f"<font name='ZT-Mono'>{escape(p.name)}</font>", st["cell"]),
             Paragraph(escape(_num(p.value)), st["cellmono"]),
             Paragraph(_text(p.note), st["cell"])]
            for p in params
        ]
        widths = [30 * mm, 46 * mm, TEXT_WIDTH - 76 * mm]
        out.append(Table(data, colWidths=widths, repeatRows=1, hAlign="LEFT",
                         style=TableStyle(_grid_style())))
    return out


def _settings_section(c: _Context) -> list[Flowable]:
    # The settings the runs actually used (a polished solution carries its own).
    st, s, sv = c.st, c.solution.worksheet.settings, c.solution.start

    def value(v: Any, entered: Any) -> Paragraph:
        text = escape(_num(v) if not isinstance(v, tuple) else f"[{_num(v[0])}, {_num(v[1])}]")
        how = "as entered" if entered is not None else "chosen by the program (see notes)"
        return Paragraph(f"<font name='ZT-Mono'>{text}</font>  <i>{how}</i>", st["cell"])

    def mono(text: str) -> Paragraph:
        return Paragraph(f"<font name='ZT-Mono'>{escape(text)}</font>", st["cell"])

    kinds = _method_kinds(s.methods)
    rows: list[tuple[str, Any]] = [
        ("Methods", Paragraph(escape(", ".join(_label(m) for m in s.methods)), st["cell"])),
    ]
    if kinds & {"open", "two_point"}:
        rows.append(("Initial guess x0", value(sv.x0, s.x0)))
    if "two_point" in kinds:
        rows.append(("Second point x1 (secant)", value(sv.x1, s.x1)))
    if "bracket" in kinds or sv.bracket is not None:
        rows.append(("Bracket [a, b]", value(sv.bracket, s.bracket) if sv.bracket is not None
                     else Paragraph("none: bracketing methods could not start", st["cell"])))
    rows += [
        ("Scan range", mono(f"[{_num(c.ws.scan[0])}, {_num(c.ws.scan[1])}]")
         if c.ws.scan else Paragraph("not set", st["cell"])),
        ("Step tolerance xtol", mono(_num(s.xtol))),
        ("Relative tolerance rtol", mono(_num(s.rtol))),
        ("Residual tolerance ftol", mono(_num(s.ftol) + ("  (test off)" if s.ftol == 0 else ""))),
        ("Maximum iterations", mono(str(s.max_iter))),
        ("Newton damping", mono(_num(s.damping) + ("  (full Newton step)" if s.damping == 1
                                                  else "  (fraction of the Newton step)"))),
        ("Stopping rule", Paragraph(
            "A run stops when |Δx| ≤ xtol + rtol·|x|, when |f(x)| ≤ ftol, when f(x) = 0 "
            "exactly, or after the maximum number of iterations (then it has not converged).",
            st["cell"])),
    ]
    if sv.notes:
        rows.append(("Start value notes", Paragraph(_text("; ".join(sv.notes)), st["cell"])))
    return [*_heading("3  Method settings", st, "h1"), _key_value_table(rows, st)]


def _method_kinds(methods: Sequence[str]) -> set[str]:
    from solvers.methods import METHODS

    return {getattr(METHODS.get(m), "kind", "") for m in methods}


def _results_section(c: _Context) -> list[Flowable]:
    st, sol = c.st, c.solution
    runs = list(sol.runs)
    head = ["Method", "Root x", "Conv.", "Stop reason", "Iter.", "Evals", "Order"]
    data: list[list[Any]] = [head]
    for r in runs:
        order = r.order
        data.append([
            Paragraph(escape(_label(r.method)), st["cell"]),
            _num(r.root),
            "yes" if r.converged else "NO",
            r.reason,
            str(r.iterations),
            str(r.evaluations),
            "—" if order is None else f"{order:.2f}",
        ])
    widths = [30 * mm, 47 * mm, 17 * mm, 31 * mm, 13 * mm, 13 * mm, 19 * mm]
    widths[-1] += TEXT_WIDTH - sum(widths)
    style = _grid_style()
    style += [
        ("FONTNAME", (1, 1), (1, -1), "ZT-Mono"),
        ("FONTNAME", (3, 1), (3, -1), "ZT-Mono"),
        ("FONTSIZE", (3, 1), (3, -1), 7.4),
        ("ALIGN", (4, 0), (-1, -1), "RIGHT"),
    ]
    for i, r in enumerate(runs, start=1):
        if not r.converged:
            style += [("TEXTCOLOR", (2, i), (3, i), FAIL_INK),
                      ("FONTNAME", (2, i), (2, i), "ZT-Sans-Bold")]
    out: list[Flowable] = [
        *_heading("4  Results", st, "h1"),
        Table(data, colWidths=widths, repeatRows=1, hAlign="LEFT", style=TableStyle(style)),
        Spacer(1, 4),
    ]
    for r in runs:
        if not r.converged:
            detail = f" {r.message.strip()}" if r.message.strip() else ""
            if detail and detail[-1] not in ".!?":
                detail += "."
            out += [Spacer(1, 3), _boxed(Paragraph(
                f"<b>{escape(_label(r.method))} did not converge.</b> Stop reason "
                f"<font name='ZT-Mono'>{escape(r.reason)}</font>: "
                f"{escape(REASON_TEXT.get(r.reason, ''))}.{_text(detail)} Its last iterate "
                f"<font name='ZT-Mono'>{escape(_num(r.root))}</font> is not a root.",
                st["body"]), FAIL_INK, FAIL_FILL)]
    out.append(Spacer(1, 4))
    for r in runs:
        label = _label(r.method)
        account = r.message.strip()
        if account.startswith(label):  # the method's own account opens with its name
            account = account[len(label):].strip()
        out.append(Paragraph(
            f"<b>{escape(label)}</b> <font name='ZT-Mono'>{escape(r.reason)}</font>: "
            f"{escape(REASON_TEXT.get(r.reason, ''))}."
            + (f" <i>Record:</i> {_text(account)}" if account else ""),
            ParagraphStyle("reason", parent=st["small"], spaceAfter=1.5, leftIndent=8,
                           firstLineIndent=-8)))

    out += _heading("Verification of each root", st, "h2")
    vhead = [Paragraph(t, st["label"]) for t in (
        "Method", "f(root), double precision, as the method computed it",
        f"f(root) evaluated at {RESIDUAL_DIGITS} digits (mpmath)", "last step |Δx| / |x|")]
    vdata: list[list[Any]] = [vhead]
    for r in runs:
        vdata.append([Paragraph(escape(_label(r.method)), st["cell"]), _num(r.residual),
                      _residual_mp(sol.equation, r.root), _relative_last_step(r)])
    vwidths = [30 * mm, 48 * mm, 56 * mm, TEXT_WIDTH - 134 * mm]
    vstyle = _grid_style() + [("FONTNAME", (1, 1), (-1, -1), "ZT-Mono"),
                              ("FONTSIZE", (0, 0), (-1, 0), 7.6)]
    out.append(Table(vdata, colWidths=vwidths, repeatRows=1, hAlign="LEFT",
                     style=TableStyle(vstyle)))
    out.append(Paragraph(
        f"The {RESIDUAL_DIGITS}-digit residual is f evaluated again at the returned double by "
        "arbitrary-precision arithmetic, independent of the floating-point evaluation each "
        "method used; a residual at rounding level of f confirms the root to double precision.",
        st["small"]))

    converged = [r for r in runs if r.converged and math.isfinite(r.root)]
    if sol.agreement_digits is not None:
        spread = max(r.root for r in converged) - min(r.root for r in converged)
        agree = (
            f"<b>Agreement.</b> The {len(converged)} converged methods agree to "
            f"{sol.agreement_digits} significant digits (largest difference between their "
            f"roots: <font name='ZT-Mono'>{escape(_num(spread))}</font>)."
        )
    elif len(converged) == 1:
        agree = ("<b>Agreement.</b> Only one method converged, so there is no second method to "
                 "agree with; the root rests on that method alone.")
    else:
        agree = "<b>Agreement.</b> No method converged: this sheet reports no root."
    out += [Spacer(1, 4), Paragraph(agree, st["body"])]
    return out


def _scan_section(c: _Context) -> list[Flowable]:
    st, sc, ws = c.st, c.scan, c.ws
    out: list[Flowable] = [*_heading("5  Roots in the scan range", st, "h1")]
    if sc is None:
        out.append(_boxed(Paragraph(
            "<b>No scan range was set in the worksheet</b>, so no search for other roots was "
            "made: the methods' roots above may not be the only ones.", st["body"]),
            CAUTION_EDGE, CAUTION_FILL))
    else:
        samples = getattr(sc, "samples", None)
        sampled = f" with {samples} samples" if samples else ""
        out.append(Paragraph(
            f"The range [<font name='ZT-Mono'>{escape(_num(sc.a))}</font>, "
            f"<font name='ZT-Mono'>{escape(_num(sc.b))}</font>] was scanned{sampled} for every "
            f"real root: {len(sc.roots)} found.", st["body"]))
        out.append(Spacer(1, 4))
        if sc.roots:
            data: list[list[Any]] = [["#", "Root x", "Residual f(x)", "Mult.", "Confirmed by"]]
            for i, root in enumerate(sc.roots, start=1):
                how = getattr(root, "confirmed", "") or ""
                located = " + ".join(getattr(root, "located_by", ()) or ())
                if located:
                    how = f"{how} (located by {located})" if how else f"located by {located}"
                data.append([str(i), _num(root.x), _num(root.residual), str(root.multiplicity),
                             Paragraph(_text(how or "—"), st["small"])])
            widths = [8 * mm, 44 * mm, 44 * mm, 12 * mm]
            widths.append(TEXT_WIDTH - sum(widths))
            style = _grid_style() + [("FONTNAME", (1, 1), (2, -1), "ZT-Mono"),
                                     ("ALIGN", (3, 0), (3, -1), "RIGHT")]
            out.append(Table(data, colWidths=widths, repeatRows=1, hAlign="LEFT",
                             style=TableStyle(style)))
        rows: list[tuple[str, Any]] = []

        def xs(values: Sequence[float]) -> Paragraph:
            text = ", ".join(_num(v) for v in values) if values else "none"
            return Paragraph(escape(text), st["cellmono"])

        rows.append(("Poles", xs(list(sc.poles))))
        rows.append(("Jumps (discontinuities)", xs(list(getattr(sc, "discontinuities", [])))))
        gaps = list(getattr(sc, "gaps", []))
        rows.append(("Gaps (f undefined)", Paragraph(escape(
            "; ".join(f"[{_num(a)}, {_num(b)}]" for a, b in gaps) if gaps else "none"),
            st["cellmono"])))
        warnings = list(getattr(sc, "warnings", []))
        if warnings:
            rows.append(("Scan warnings", Paragraph(_text("; ".join(warnings)), st["cell"])))
        out += [Spacer(1, 4), _key_value_table(rows, st)]

    out += _heading("Design value", st, "h2")
    sel = ws.selection
    if sel is None:
        out.append(Paragraph(
            "No root was selected as the design value in the worksheet: the checker must "
            "confirm which root applies.", st["body"]))
    else:
        reason = _text(sel.reason) if sel.reason.strip() else "<i>no reason given</i>"
        where = ""
        if sc is not None and sc.roots:
            nearest = min(range(len(sc.roots)), key=lambda i: abs(sc.roots[i].x - sel.root))
            where = (f" It is nearest scanned root #{nearest + 1} "
                     f"(difference <font name='ZT-Mono'>"
                     f"{escape(_num(sel.root - sc.roots[nearest].x))}</font>).")
        out.append(_boxed(Paragraph(
            f"<b>Selected design value:</b> {escape(c.solution.equation.unknown)} = "
            f"<font name='ZT-Mono'>{escape(_num(sel.root))}</font>.{where}<br/>"
            f"<b>Reason:</b> {reason}", st["body"]), INK, colors.white))
    return out


def _path_run(solution: Any, ws: Worksheet) -> Run | None:
    """The run whose path the function figure shows: the converged run nearest the design
    value (or the first converged run), else the first run with iterates."""
    runs = [r for r in solution.runs if r.steps]
    converged = [r for r in runs if r.converged and math.isfinite(r.root)]
    if converged and ws.selection is not None:
        return min(converged, key=lambda r: abs(r.root - ws.selection.root))
    if converged:
        return converged[0]
    return runs[0] if runs else None


def _plot_range(c: _Context, run: Run | None) -> tuple[float, float]:
    if c.scan is not None:
        return float(c.scan.a), float(c.scan.b)
    if c.solution.start.bracket is not None:
        return c.solution.start.bracket
    xs = [s.x for s in (run.steps if run else []) if math.isfinite(s.x)]
    if xs:
        lo, hi = min(xs), max(xs)
        pad = 0.1 * (hi - lo) or 0.1 * max(abs(lo), 1.0)
        return lo - pad, hi + pad
    return -1.0, 1.0


def _figures_section(c: _Context) -> list[Flowable]:
    from app.documents import figures

    st, sol = c.st, c.solution
    out: list[Flowable] = [CondPageBreak(95 * mm), *_heading("6  Figures", st, "h1")]
    run = _path_run(sol, c.ws)
    a, b = _plot_range(c, run)
    f, unknown = sol.equation.f, sol.equation.unknown
    where = "the scan range" if c.scan is not None else "the bracket or the iterates' span"
    path = f" and the path of {_label(run.method)}" if run is not None else ""
    captions = (
        f"Figure 1. The function whose root is sought (left side minus right side) against "
        f"{sol.equation.unknown}, over {where} [{_num(a)}, {_num(b)}], with the roots, poles and "
        f"jumps the scan found{path}.",
        f"Figure 2. Convergence: {figures.convergence_label('residual', unknown)} against "
        "iterate k for every method (log scale).",
    )
    draws = (
        lambda ax: figures.draw_function(ax, f, a, b, scan=c.scan, run=run, unknown=unknown),
        lambda ax: figures.draw_convergence(ax, list(sol.runs), unknown=unknown),
    )
    for caption, draw in zip(captions, draws, strict=True):
        try:
            image: Flowable = _figure(draw, TEXT_WIDTH, 74 * mm)
        except Exception as exc:  # a figure must never cost the checker the numbers
            image = Paragraph(f"(figure could not be drawn: {escape(str(exc))[:200]})",
                              st["small"])
        out.append(KeepTogether([image, Paragraph(escape(caption), st["caption"])]))
    return out


def _iterations_section(c: _Context) -> list[Flowable]:
    st = c.st
    out: list[Flowable] = [
        CondPageBreak(60 * mm),
        *_heading("7  Iteration tables", st, "h1"),
        Paragraph(
            "Every point each method evaluated, at full double precision (the same digits as "
            "the runs CSV). k = 0 (and k = 1 for the two-point and bracketing methods) are the "
            "starting points; Δx is the step that produced the iterate; bracket lo/hi are the "
            "ends held after it.", st["small"]),
        Spacer(1, 4),
    ]
    for run in c.solution.runs:
        out.append(CondPageBreak(40 * mm))  # never a banner and one row at a page foot
        out += _iteration_table(run, st)
        out.append(Spacer(1, 10))
    return out


# --------------------------------------------------------------- page furniture


def _fit(text: str, font: str, size: float, room: float) -> str:
    """``text`` cut with an ellipsis so it is at most ``room`` points wide."""
    if pdfmetrics.stringWidth(text, font, size) <= room:
        return text
    while text and pdfmetrics.stringWidth(text + "…", font, size) > room:
        text = text[:-1]
    return text + "…"


def _furniture(c: _Context) -> Callable[[rl_canvas.Canvas, int], None]:
    width, height = PAGE_SIZE
    calc = f"Calc {_calc_number(c.ws)}"
    if c.ws.calc.revision:
        calc += f"  ·  Rev {c.ws.calc.revision}"
    # The calc number is never cut: a long one gets a smaller face, up to 60% of the line.
    calc_size = min(8.0, 8.0 * 0.6 * TEXT_WIDTH / pdfmetrics.stringWidth(calc, "ZT-Sans-Bold", 8))
    calc_width = pdfmetrics.stringWidth(calc, "ZT-Sans-Bold", calc_size)
    title = _fit(_title(c.ws, c.solution.equation), "ZT-Sans", 8, TEXT_WIDTH - calc_width - 8 * mm)
    left_foot = f"{TOOL_NAME} {c.version}  ·  worksheet SHA-256 {c.sha256[:16]}…"

    def draw(canv: rl_canvas.Canvas, total: int) -> None:
        canv.saveState()
        canv.setStrokeColor(RULE)
        canv.setLineWidth(0.5)
        top = height - 14 * mm
        canv.setFillColor(INK)
        canv.setFont("ZT-Sans-Bold", calc_size)
        canv.drawString(MARGIN_X, top, calc)
        canv.setFont("ZT-Sans", 8)
        canv.drawRightString(width - MARGIN_X, top, title)
        canv.line(MARGIN_X, top - 3, width - MARGIN_X, top - 3)
        bottom = 12 * mm
        canv.line(MARGIN_X, bottom + 9, width - MARGIN_X, bottom + 9)
        canv.setFont("ZT-Sans", 7.2)
        canv.setFillColor(RULE)
        canv.drawString(MARGIN_X, bottom, left_foot)
        canv.setFillColor(INK)
        canv.setFont("ZT-Sans-Bold", 8)
        canv.drawRightString(width - MARGIN_X, bottom,
                             f"page {canv.getPageNumber()} of {total}")
        canv.restoreState()

    return draw


def _canvas_maker(draw: Callable[[rl_canvas.Canvas, int], None], pages: list[int]):
    """A canvas that holds every page until the end, then stamps 'page N of M' on each."""

    class _TwoPassCanvas(rl_canvas.Canvas):
        def __init__(self, *args: Any, **kwargs: Any) -> None:
            super().__init__(*args, **kwargs)
            self._held: list[dict] = []

        def showPage(self) -> None:  # noqa: N802 (reportlab's name)
            self._held.append(dict(self.__dict__))
            self._startPage()

        def save(self) -> None:
            total = len(self._held)
            for state in self._held:
                self.__dict__.update(state)
                draw(self, total)
                rl_canvas.Canvas.showPage(self)
            pages.append(total)
            rl_canvas.Canvas.save(self)

    return _TwoPassCanvas


class _SheetTemplate(SimpleDocTemplate):
    """SimpleDocTemplate whose layout never fails on a flowable too tall for a page.

    reportlab puts a flowable that fits nowhere on the current page on a fresh one
    (marking it ``_postponed``) and raises LayoutError if it fails there too. Before
    that second try this template lets a table split inside a row (a very long note
    or derivative then runs on over the page) and shrinks anything that still cannot
    be split to the frame, so the sheet is always written.
    """

    def handle_flowable(self, flowables: list[Flowable]) -> None:  # reportlab's name
        f = flowables[0] if flowables else None
        if f is not None and getattr(f, "_postponed", False) and not isinstance(
            f, KeepInFrame
        ):
            if isinstance(f, Table) and _text_cells_only(f):
                f.splitInRow = 1  # safe only for text: reportlab loops on a tall picture
            if not self._fits_or_splits(f):
                flowables[0] = KeepInFrame(self.frame._width - self.frame._leftPadding
                                           - self.frame._rightPadding,
                                           self.frame._height - self.frame._topPadding
                                           - self.frame._bottomPadding,
                                           [f], mode="shrink")
        super().handle_flowable(flowables)

    def _fits_or_splits(self, f: Flowable) -> bool:
        frame = self.frame
        try:
            _, height = f.wrapOn(self.canv, frame._getAvailableWidth(), frame._y - frame._y1p)
            if height <= frame._y - frame._y1p:
                return True
            parts = f.splitOn(self.canv, frame._getAvailableWidth(), frame._y - frame._y1p)
        except Exception:  # noqa: BLE001 - a flowable that cannot even be measured: shrink it
            return False
        if not parts:
            return False
        _, first = parts[0].wrapOn(self.canv, frame._getAvailableWidth(),
                                   frame._y - frame._y1p)
        return first <= frame._y - frame._y1p


def _text_cells_only(table: Table) -> bool:
    """True when every cell is text (strings, paragraphs), which splits inside a row."""
    def text(value: Any) -> bool:
        if isinstance(value, (list, tuple)):
            return all(text(v) for v in value)
        return value is None or isinstance(value, (str, Paragraph))

    return all(text(cell) for row in getattr(table, "_cellvalues", ()) for cell in row)


def _render(c: _Context) -> tuple[bytes, int]:
    buffer = io.BytesIO()
    doc = _SheetTemplate(
        buffer,
        pagesize=PAGE_SIZE,
        leftMargin=MARGIN_X,
        rightMargin=MARGIN_X,
        topMargin=MARGIN_TOP,
        bottomMargin=MARGIN_BOTTOM,
        title=f"{_calc_number(c.ws)} {_title(c.ws, c.solution.equation)}",
        author=c.ws.calc.prepared_by,
        subject="Calculation sheet: numerical root of a design equation",
        creator=f"{TOOL_NAME} {c.version}",
    )
    story: list[Flowable] = []
    for section in (_title_block, _equation_section, _settings_section, _results_section,
                    _scan_section, _figures_section, _iterations_section):
        story += section(c)
    pages: list[int] = []
    doc.build(story, canvasmaker=_canvas_maker(_furniture(c), pages))
    return buffer.getvalue(), pages[-1]


# ----------------------------------------------------------------------- entry


def write_report(
    ws: Worksheet,
    pdf_path: str | os.PathLike[str],
    *,
    csv_dir: str | os.PathLike[str] | None = None,
    worksheet_path: str | os.PathLike[str] | None = None,
    overwrite: bool = False,
    solution: Any = None,
    scan: Any = None,
    progress: Callable[[float], None] | None = None,
) -> ReportResult:
    """Write the calculation sheet of ``ws`` to ``pdf_path`` (and its CSVs to ``csv_dir``).

    ``solution`` (a :class:`solvers.pipeline.Solution`) and ``scan`` are computed
    through the pipeline when not given; the scan only when the worksheet has a
    scan range. ``worksheet_path`` names the file in the title block and is
    hashed (SHA-256 of its bytes); without it the canonical worksheet JSON is
    hashed and the sheet says so. ``progress(fraction)`` is called with values
    from 0 to 1 from the calling thread.

    Raises :class:`ReportError` for an output path that cannot be written or that
    exists while ``overwrite`` is False (checked before any work), and
    ``EquationError`` for an equation that does not parse. A method that does not
    converge is reported on the sheet, never raised.
    """
    _register_fonts()

    def report(fraction: float) -> None:
        if progress is not None:
            progress(fraction)

    pdf = _check_target(Path(pdf_path), overwrite)
    created: list[Path] = []
    try:
        result = _write_report(ws, pdf, csv_dir, worksheet_path, overwrite, solution, scan,
                               report, created)
    except BaseException:
        _remove_empty(created)  # all or nothing: not even an empty CSV folder is left
        raise
    return result


def _write_report(ws: Worksheet, pdf: Path, csv_dir: Any, worksheet_path: Any,
                  overwrite: bool, solution: Any, scan: Any,
                  report: Callable[[float], None], created: list[Path]) -> ReportResult:
    csv_targets: list[Path] = []
    if csv_dir is not None:
        folder = Path(csv_dir)
        created += _prepare_csv_dir(folder)
        names = [f"{pdf.stem}-runs.csv"]
        if scan is not None or ws.scan is not None:
            names.append(f"{pdf.stem}-roots.csv")
        csv_targets = [_check_target(folder / name, overwrite) for name in names]
    file_name, sha, basis = _worksheet_identity(ws, worksheet_path)
    report(0.0)

    if solution is None:
        solution = pipeline.solve(ws)
    report(0.25)
    if scan is None and ws.scan is not None:
        scan = pipeline.scan_worksheet(
            ws, solution.equation, progress=lambda p: report(0.25 + 0.35 * p)
        )
    report(0.6)

    context = _Context(
        ws=ws, solution=solution, scan=scan, file_name=file_name, sha256=sha,
        hash_basis=basis, when=datetime.now(timezone.utc), version=export.tool_version(),
        st=_styles(),
    )
    data, pages = _render(context)
    report(0.9)

    meta = export.solution_meta(
        solution,
        extra={"calc number": _calc_number(ws), "worksheet": file_name, "worksheet sha256": sha},
    )
    files: list[tuple[Path, bytes]] = []
    for target in csv_targets:
        text = io.StringIO()
        if target.name.endswith("-runs.csv"):
            export.runs_csv(solution.runs, text, meta=meta)
        else:
            export.roots_csv(scan, text, meta=meta)
        files.append((target, text.getvalue().encode("utf-8")))
    files.append((pdf, data))  # renamed last: when it is there, its CSV files are too
    try:  # all or nothing: a full disk leaves neither the sheet nor its CSV files
        write_group(files, overwrite=overwrite)
    except OSError as exc:
        raise ReportError(f"cannot write the report: {exc}") from None
    report(1.0)
    return ReportResult(pdf_path=pdf, csv_paths=tuple(csv_targets), pages=pages, sha256=sha)
