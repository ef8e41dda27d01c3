"""The calculation sheet's page geometry, palette, fonts, paragraph styles and the
small building blocks every section uses (headings, boxed lines, key/value and grid
tables, number and text cells)."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any
from xml.sax.saxutils import escape

from matplotlib import get_data_path
from reportlab.lib import colors
from reportlab.lib.enums import TA_LEFT
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.platypus import (
    CondPageBreak,
    Flowable,
    Paragraph,
    Table,
    TableStyle,
)

from app.documents import words

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
    """Full precision: every digit of a float (the CSV's double), '—' for none."""
    return words.exact(value, blank="—")


def _text(value: str) -> str:
    """User text made safe for reportlab's paragraph markup."""
    return escape(value).replace("\n", "<br/>")


def _label(method: str) -> str:
    return words.method_title(method)


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


HEADER_FONT = "ZT-Sans-Bold"  # the header rows of every grid


def _grid_style(header_rows: int = 1, mono_from_col: int | None = None) -> list:
    style = [
        ("FONTNAME", (0, 0), (-1, header_rows - 1), HEADER_FONT),
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
    """Column widths for plain-text cells and a font size (<= size) so the table fits.

    ``rows[0]`` is the header row: it is measured in the header's bold face as well as in
    ``fonts`` (whichever is wider), since :func:`_grid_style` sets headers in bold sans;
    measured in the body's mono face alone, a header wider than its numbers ran into the
    next column's ("Unknown Newton–Raphson")."""
    pad = 6.0  # the cell's left and right padding of _grid_style (3 + 3)

    def measure(row: int, c: int) -> float:
        text = str(rows[row][c])
        width = pdfmetrics.stringWidth(text, fonts[c], 1.0)
        if row == 0:
            width = max(width, pdfmetrics.stringWidth(text, HEADER_FONT, 1.0))
        return width

    natural = [max(measure(r, c) for r in range(len(rows))) for c in range(len(fonts))]
    needed = sum(natural) * size + pad * len(fonts)
    if needed > width:
        size = max(5.5, (width - pad * len(fonts)) / sum(natural))
    widths = [n * size + pad for n in natural]
    spare = max(0.0, width - sum(widths))
    # Spare width goes to the number columns (all but the first, the counter k).
    share = spare / max(1, len(widths) - 1)
    widths = [widths[0] + (spare if len(widths) == 1 else 0.0)] + [w + share for w in widths[1:]]
    return widths, size


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
