"""Pictures on the sheet: matplotlib figures and typeset formulas (mathtext) placed as
300 dpi PNG images, a long formula broken over several lines."""

from __future__ import annotations

import io
import struct
from collections.abc import Callable, Sequence
from typing import Any

from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from reportlab.platypus import (
    Image,
)

from app.documents.figures import typesetting
from app.documents.report.layout import (
    FIGURE_DPI,
    MAX_MATH_HEIGHT,
    MIN_MATH_SCALE,
)

# --------------------------------------------------------------------- images


def _png_image(png: bytes, width: float, height: float) -> Image:
    return Image(io.BytesIO(png), width=width, height=height)


def _figure(draw: Callable[[Any], None], width: float, height: float) -> Image:
    """A matplotlib Figure (Agg, no pyplot) drawn by ``draw(ax)``, placed at print size."""
    buffer = io.BytesIO()
    # One thread at a time in matplotlib: the window may be drawing in the UI thread, and
    # axis labels go through mathtext, whose caches typesetting() releases afterwards.
    with typesetting():
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
