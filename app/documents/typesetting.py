"""Typesetting checks that need matplotlib (kept out of the numerics core)."""

from __future__ import annotations


def mathtext(latex: str, fallback: str) -> str:
    """``$latex$`` when matplotlib's mathtext can render it, else ``fallback`` as plain text.

    Imports matplotlib lazily. Use for Figure text, e.g.
    ``mathtext(equation.latex, equation.text)``.
    """
    from matplotlib.mathtext import MathTextParser

    candidate = f"${latex}$"
    try:
        MathTextParser("agg").parse(candidate, dpi=72)
    except Exception:  # noqa: BLE001 - any mathtext failure means: show plain text
        return fallback.replace("$", r"\$")
    return candidate
