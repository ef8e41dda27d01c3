"""Sums that add a constant to an absolute temperature typed in degC or degF.

A temperature typed ``95 degC`` reaches the equation in kelvin (368.15 K). Differences
(``To - Ti``), balances (``To = Ti + dT``) and ratios of kelvin temperatures do not care
which scale was typed; a sum that adds a constant to a temperature does: Antoine's
``B/(C + T)`` is written for T in degC, and with T in kelvin and C given as
``220.79 delta_degC`` the same text reads 220.79 + 368.15 where 220.79 + 95 was meant,
and the solve converges, confidently, 273.15 K off. Which scale a correlation was written
for cannot be read from its text, so such a sum is remarked (code
``temperature_offset_sum``, subject: the sum as typed), never refused.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import Any

import sympy as sp


def offset_sums(exprs: Iterable[Any], absolute: Iterable[Any], text: str,
                spans: Sequence[tuple[Any, int, int]]) -> tuple[str, ...]:
    """Each sum of ``exprs`` that adds a constant to absolute temperatures, as typed.

    ``exprs``: the equations' residuals lhs - rhs (definitions written out, before the
    unknown's x_SI = scale*x + offset goes in, so x stands for its kelvin value);
    ``absolute``: the sympy Symbols typed in degC/degF (parameters, or the unknown in such
    a unit). A sum is named when every term that holds one of them is a number times
    one of them (``T``, ``-Ti``, ``2*T``), those numbers do not cancel (``To - Ti`` and
    ``To - Ti - dT`` are shifts of the scale that cancel: a balance, not a correlation),
    and some other term holds none of them (``Cb``, ``dT``). A sum with a temperature
    inside a product or a power (``T/Tc``, ``T^4 - Ta^4``) is left alone: there the
    kelvin value is what physics asks for. The text of each sum is taken from ``spans``
    (the parser's (expression, start, end) of every part), else sympy's printing; each
    named once, in the order first met.
    """
    absolute = frozenset(absolute)
    if not absolute:
        return ()
    found: list[str] = []
    for expr in exprs:
        if not isinstance(expr, sp.Basic) or not expr.free_symbols & absolute:
            continue
        for node in sp.preorder_traversal(expr):
            if isinstance(node, sp.Add) and _adds_a_constant(node, absolute):
                shown = _typed(node, text, spans)
                if shown not in found:
                    found.append(shown)
    return tuple(found)


def _adds_a_constant(node: Any, absolute: frozenset[Any]) -> bool:
    shift, constant = sp.Integer(0), False
    for term in node.args:
        if not term.free_symbols & absolute:
            constant = True
            continue
        number, rest = term.as_coeff_Mul()
        if rest not in absolute:
            return False  # a temperature inside a product or a function
        shift += number
    return constant and shift != 0


def _typed(node: Any, text: str, spans: Sequence[tuple[Any, int, int]]) -> str:
    for part, start, end in spans:
        if part == node:
            return " ".join(text[start:end].split())
    return str(node)
