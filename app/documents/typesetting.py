"""Typesetting for people: an equation's LaTeX checked against matplotlib's mathtext.

The core builds LaTeX strings (``Equation.latex``, ``Equation.derivative_latex``); this
module decides whether matplotlib can set them and falls back to the text as typed. All
mathtext work holds the one matplotlib lock (:func:`app.documents.figures.typesetting`):
matplotlib is not thread-safe.
"""

from __future__ import annotations

from app.documents.figures import typesetting
from solvers.equation import MAX_TYPESET_CHARS


def mathtext(latex: str, fallback: str) -> str:
    """``$latex$`` when matplotlib's mathtext can render it, else ``fallback`` as plain text.

    Use for Figure text. LaTeX over :data:`MAX_TYPESET_CHARS` is not typeset.
    """
    from matplotlib.mathtext import MathTextParser


    candidate = f"${latex}$"
    if len(latex) > MAX_TYPESET_CHARS:  # over the typesetting budget: plain text
        return fallback.replace("$", r"\$")
    try:
        with typesetting():
            MathTextParser("agg").parse(candidate, dpi=72)
    except Exception:  # noqa: BLE001 - any mathtext failure means: show plain text
        return fallback.replace("$", r"\$")
    return candidate
