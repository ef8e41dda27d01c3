"""Per-run tables of the sheet: every iterate at full precision, the relative last step
and the independent 50-digit residual."""

from __future__ import annotations

import math
from typing import Any
from xml.sax.saxutils import escape

from reportlab.lib import colors
from reportlab.platypus import (
    Flowable,
    KeepTogether,
    Paragraph,
    Table,
    TableStyle,
)

from app.documents import words
from app.documents.report.layout import (
    FAIL_INK,
    MAX_TABLE_ROWS,
    RESIDUAL_DIGITS,
    RULE,
    SHORT_TABLE_ROWS,
    TEXT_WIDTH,
    _fitted_widths,
    _grid_style,
    _label,
    _num,
    _text,
)
from app.documents.words import RESIDUAL_WORDS
from solvers.records import Run


def _relative_last_step(run: Run) -> str:
    for step in reversed(run.steps):
        if step.dx is not None:
            if not (math.isfinite(step.dx) and math.isfinite(step.x)):
                return "not finite"
            if step.x == 0:
                return f"{abs(step.dx):.3e} (absolute, x = 0)"
            return f"{abs(step.dx) / abs(step.x):.3e}"
    return "— (no step taken)"


def _residual_mp(equation: Any, x: float) -> str:
    """f(root) evaluated by the equation's own 50-digit mpmath evaluation."""
    import mpmath

    from solvers.residual import residual_mp

    result = residual_mp(equation, x, digits=RESIDUAL_DIGITS)
    if result.value is None:
        return RESIDUAL_WORDS.get(result.code, result.code)
    return mpmath.nstr(result.value, 12)


# Columns of an iteration table (Step fields), kept only when some step of the run has the value.
_STEP_KEYS = ("x", "fx", "dfx", "dx", "lo", "hi")


def _iteration_table(run: Run, st: dict, unknown: str = "x",
                     unit: str | None = None, f_unit: str | None = None) -> list[Flowable]:
    label = _label(run.method)
    if not run.steps:
        message = words.run_message(run, unknown, unit)
        return [Paragraph(f"<b>{escape(label)}</b>: no iterates. {_text(message)}",
                          st["body"])]
    headings = words.iterate_headings(unknown, "sheet", unit, f_unit)
    columns = [
        (key, headings[key])
        for key in _STEP_KEYS
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
        f"{label} — {words.counted(len(run.steps), 'point')} recorded, "
        f"{words.counted(run.iterations, 'iteration')}, "
        f"stop: {words.reason_short(run.reason)}"
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
