"""Page furniture (running header and footer, "page N of M") and the two-pass layout
that turns the sections into PDF bytes."""

from __future__ import annotations

import io
from collections.abc import Callable
from typing import Any

from reportlab.lib.units import mm
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfgen import canvas as rl_canvas
from reportlab.platypus import (
    Flowable,
    KeepInFrame,
    Paragraph,
    SimpleDocTemplate,
    Table,
)

from app.documents.report.layout import (
    INK,
    MARGIN_BOTTOM,
    MARGIN_TOP,
    MARGIN_X,
    PAGE_SIZE,
    RULE,
    TEXT_WIDTH,
    TOOL_NAME,
)
from app.documents.report.sections import (
    _calc_number,
    _Context,
    _equation_section,
    _figures_section,
    _iterations_section,
    _results_section,
    _scan_section,
    _settings_section,
    _title,
    _title_block,
)
from app.documents.report.table_section import table_section

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
                    _scan_section, _figures_section, _iterations_section, table_section):
        story += section(c)
    pages: list[int] = []
    doc.build(story, canvasmaker=_canvas_maker(_furniture(c), pages))
    return buffer.getvalue(), pages[-1]
