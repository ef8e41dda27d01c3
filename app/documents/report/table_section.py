"""The calculation sheet's section for a table of inputs or a sweep: what was solved, a
summary, the notes, the rows (the first and last ones when the table is long; the table
CSV beside the sheet holds every row) and the design chart."""

from __future__ import annotations

import math
from typing import Any
from xml.sax.saxutils import escape

from reportlab.lib.units import mm
from reportlab.platypus import (
    CondPageBreak,
    Flowable,
    KeepTogether,
    Paragraph,
    Spacer,
    Table,
    TableStyle,
)

from app.documents import words
from app.documents.report.layout import (
    FAIL_INK,
    TEXT_WIDTH,
    _fitted_widths,
    _grid_style,
    _heading,
    _label,
    _num,
)
from app.documents.report.typeset import _figure
from app.documents.tables import read_header

SHOWN_ROWS = 10  # first and last rows printed when a table is longer than twice this
SHOWN_NOTES = 20


def shown_rows(count: int, shown: int = SHOWN_ROWS) -> list[int | None]:
    """The rows printed: every row, or the first and last ``shown`` with None between."""
    if count <= 2 * shown + 1:
        return list(range(count))
    return [*range(shown), None, *range(count - shown, count)]


def table_section(c: Any, number: str = "8") -> list[Flowable]:
    """The section for ``c.table`` (a :class:`app.documents.tables.TableResults`), or
    nothing when the sheet has no table."""
    t = getattr(c, "table", None)
    if t is None:
        return []
    from app.documents import figures

    st, batch, equation = c.st, t.done.batch, t.done.equation
    what = ("a sweep of " + t.names[0] + ", each value started from the previous root"
            if t.kind == "sweep" else f"a table of {words.counted(batch.size, 'row')}")
    settings = "; ".join(f"{k} = {v}" for k, v in batch.settings.items() if k != "swept")
    out: list[Flowable] = [
        CondPageBreak(70 * mm),
        *_heading(f"{number}  Table of inputs and results", st, "h1"),
        Paragraph(escape(f"The equation solved for {equation.unknown} over {what}, by "
                         f"{_label(batch.method)} ({settings}). "
                         f"{words.batch_summary(batch)}."), st["body"]),
        Spacer(1, 3),
    ]
    for index, code in batch.notes[:SHOWN_NOTES]:
        out.append(Paragraph(escape(f"Row {index + 1}: {words.batch_note_text(code)}."),
                             st["small"]))
    if len(batch.notes) > SHOWN_NOTES:
        out.append(Paragraph(escape(f"… {len(batch.notes) - SHOWN_NOTES} more notes in the "
                                    "table CSV."), st["small"]))
    out += [Spacer(1, 4), _rows_table(t, st), Spacer(1, 6)]
    column = t.against if 0 <= t.against < len(t.names) else 0
    caption = (f"Figure 3. Design chart: {equation.unknown} against {t.names[column]} for every "
               "row that converged; crosses along the bottom mark rows that did not, dotted "
               "lines where a sweep's branch ended.")
    try:
        image: Flowable = _figure(
            lambda ax: figures.draw_design_chart(
                ax, t.columns[column], batch, name=t.names[column], unknown=equation.unknown,
                line=t.kind == "sweep", x_unit=(read_header(t.headers[column]) or ("", ""))[1],
                unit=equation.unknown_unit),
            TEXT_WIDTH, 74 * mm)
    except Exception as exc:  # a figure must never cost the checker the numbers
        image = Paragraph(f"(figure could not be drawn: {escape(str(exc))[:200]})", st["small"])
    out.append(KeepTogether([image, Paragraph(escape(caption), st["caption"])]))
    return out


def _rows_table(t: Any, st: dict) -> Table:
    batch = t.done.batch
    equation = t.done.equation
    headings = words.iterate_headings(equation.unknown, "ascii", equation.unknown_unit,
                                      equation.residual_unit(derived=True))
    # the root in the unknown's name and unit, the residual in f's, the reason in words
    # (the CSV keeps codes)
    header = ["row", *t.headers, headings["x"], "reason", "iter.", headings["fx"]]
    body: list[list[str]] = []
    failed_rows: list[int] = []
    gap = None
    for i in shown_rows(batch.size):
        if i is None:
            gap = len(body)
            body.append([f"… {batch.size - 2 * SHOWN_ROWS} rows left out here; the table CSV "
                         "holds every one"] + [""] * (len(header) - 1))
            continue
        root = float(batch.root.flat[i])
        residual = float(batch.residual.flat[i])
        if not batch.converged.flat[i]:
            failed_rows.append(len(body))
        body.append([str(i + 1), *(str(cells[i]) for cells in t.cells),
                     _num(root) if math.isfinite(root) else "—",
                     words.reason_short(batch.reason_at(i)),
                     str(int(batch.iterations.flat[i])),
                     _num(residual) if math.isfinite(residual) else "—"])
    measured = [header] + [r for k, r in enumerate(body) if k != gap]
    widths, size = _fitted_widths(measured, ["ZT-Mono"] * len(header), TEXT_WIDTH, 7.8)
    style = _grid_style()
    style += [("FONTNAME", (0, 1), (-1, -1), "ZT-Mono"), ("FONTSIZE", (0, 0), (-1, -1), size)]
    if gap is not None:
        style += [("SPAN", (0, gap + 1), (-1, gap + 1)),
                  ("FONTNAME", (0, gap + 1), (-1, gap + 1), "ZT-Sans-Oblique")]
    for row in failed_rows:
        style += [("TEXTCOLOR", (0, row + 1), (-1, row + 1), FAIL_INK)]
    return Table([header, *body], colWidths=widths, repeatRows=1, hAlign="LEFT",
                 style=TableStyle(style))
