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
                spans: Sequence[tuple[Any, int, int]],
                temperatures: Iterable[Any] = ()) -> tuple[str, ...]:
    """Each sum of ``exprs`` that adds a constant to absolute temperatures, as typed.

    ``exprs``: the equations' residuals lhs - rhs (definitions written out, before the
    unknown's x_SI = scale*x + offset goes in, so x stands for its kelvin value);
    ``absolute``: the sympy Symbols typed in degC/degF (parameters, or an unknown in such
    a unit); ``temperatures``: the other Symbols that may stand for a temperature on the
    kelvin scale: the unknowns, and parameters typed in K (not a delta_ unit).

    A sum is named when it holds one of ``absolute`` as a number times it (``T``, ``-Ti``,
    ``2*T``), every term holding one of them is such, the numbers before ``absolute`` and
    ``temperatures`` do not cancel (``To - Ti``, ``To - Ti - dT``, ``Tw - Ti`` with Tw in
    K: a shift of the scale cancels there, a balance), and either some term holds none
    of either, a constant (``Cb`` in ``Cb + T``, Cb in delta_degC or a bare number), or
    the numbers do not add up to 1 (``Cb + T`` with Cb typed in degC as well: a mean,
    ``Ti/2 + To/2``, is a temperature on any scale; a radiation sum ``T + Ts`` in degC is
    named too, rightly taken in kelvin). A sum with a temperature inside a product or a
    power (``T/Tc``, ``T^4 - Ta^4``) is left alone: there the kelvin value is what
    physics asks for; so is ``Cb + T`` with Cb typed in K (the advice followed). The
    text of each sum is taken from ``spans`` (the parser's (expression, start, end) of
    every part), else sympy's printing; each named once, in the order first met.
    """
    absolute = frozenset(absolute)
    if not absolute:
        return ()
    scale = absolute | frozenset(temperatures)
    found: list[str] = []
    for expr in exprs:
        if not isinstance(expr, sp.Basic) or not expr.free_symbols & absolute:
            continue
        for node in sp.preorder_traversal(expr):
            if isinstance(node, sp.Add) and _adds_a_constant(node, absolute, scale):
                shown = _typed(node, text, spans)
                if shown not in found:
                    found.append(shown)
    return tuple(found)


def _adds_a_constant(node: Any, absolute: frozenset[Any], scale: frozenset[Any]) -> bool:
    shift, degc, constant = sp.Integer(0), sp.Integer(0), False
    holds_absolute = False
    for term in node.args:
        symbols = term.free_symbols
        if not symbols & scale:
            constant = True
            continue
        number, rest = term.as_coeff_Mul()
        if rest in scale:
            shift += number
            if rest in absolute:
                holds_absolute, degc = True, degc + number
        elif symbols & absolute:
            return False  # a degC temperature inside a product or a function
    if not holds_absolute or shift == 0:
        return False
    # a constant beside them (Cb + T); or, without one, degC temperatures whose weights
    # make no mean (Cb + T with Cb typed in degC too: 2; a mean (Ti + To)/2 weighs
    # 1/2 + 1/2 = 1, a balance To - Ti - dT 0 whatever dT is typed in)
    return constant or (degc not in (0, 1) and shift != 1)


def _typed(node: Any, text: str, spans: Sequence[tuple[Any, int, int]]) -> str:
    for part, start, end in spans:
        if part == node:
            return " ".join(text[start:end].split())
    return str(node)


def kelvin_scale(converted: Any) -> bool:
    """Whether a parameter given with a unit may be a temperature on the kelvin scale:
    a temperature typed in K (or degR), not in a delta_ unit (a difference) nor in
    degC/degF (those are ``absolute`` already)."""
    return (converted.dimension == (("[temperature]", 1.0),)
            and not converted.absolute_temperature
            and not str(converted.unit).strip().startswith("delta_"))
