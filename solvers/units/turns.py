"""Speeds and stiffnesses typed in a unit that counts turns or degrees (rpm, rev/s, deg/s).

Every value reaches the equation in SI, where an angle is counted in radians: a shaft
speed typed ``3000 rpm`` is 314.16 rad/s (1 rpm = 2π/60 rad/s, pint's reading and SI's),
while a frequency typed in Hz stays 1/s, a count of cycles with no 2π. A formula written
for the number of revolutions, ``w = 2*pi*N/60`` or ``v = pi*D*N``, applies the 2π a
second time, and the solve converges, confidently, 60/(2π) = 9.55 times off in N (a
critical speed of 34,600 rpm where 3,620 rpm was meant). Whether a formula meant N as
revolutions cannot be read from the text alone, so such units are remarked (code
``turn_units``), and a product of such a name with π, which only a formula written for
revolutions holds, is remarked more firmly (``turns_times_pi``); neither is refused.
The converse slip: a frequency in Hz is 1/s, cycles per second, and ``k - m*w^2 = 0``
(written for the angular frequency) with w in Hz solves to ω's number labelled Hz, 2π
times too large; a name in Hz that stands in no product with π is remarked
(``hertz_without_pi``).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from fractions import Fraction
from typing import Any

import sympy as sp

from solvers.units.si_text import counts_cycles, counts_turns


def turn_remarks(exprs: Iterable[Any], typed: Mapping[Any, str]
                 ) -> tuple[tuple[str, str, tuple[float, ...]], ...]:
    """Remark codes for the names typed in a unit that counts turns or degrees, or in Hz.

    ``exprs``: the equations' residuals lhs - rhs with the definitions written out, in
    the symbols as typed (before an unknown's x_SI = scale*x + offset goes in);
    ``typed``: sympy Symbol -> the unit text its value (or the unknown) was given in.

    Returns ``("hertz_without_pi", name, ())`` for each name typed in Hz (cycles per
    second, no 2π) that stands in no product with π and is used as an angular frequency
    is (squared, or inside sin, cos, exp: ``k - m*f^2 = 0`` is written for ω, and the
    root in Hz is 2π times too large; ``w = 2*pi*f`` and ``v = f*lam`` say nothing),
    ``("turns_times_pi", name, ())`` for each name in a unit of turns that stands in a
    product with π (``2*pi*N/60``, ``pi*D*N``, their squares: see :func:`_times_pi`), then
    ``("turn_units", names, ())`` naming the others (", "-joined), or () when no name
    has such a unit.
    """
    exprs = tuple(exprs)
    cycles = [s for s, unit in typed.items() if unit and counts_cycles(unit)
              and not any(_times_pi(e, s) for e in exprs)
              and any(_as_angular(e, s) for e in exprs)]
    out = tuple(("hertz_without_pi", s.name, ()) for s in cycles)
    turned = [s for s, unit in typed.items() if unit and counts_turns(unit)]
    if not turned:
        return out
    twice = [s for s in turned if any(_times_pi(e, s) for e in exprs)]
    rest = [s.name for s in turned if s not in twice]
    out += tuple(("turns_times_pi", s.name, ()) for s in twice)
    return out + ((("turn_units", ", ".join(rest), ()),) if rest else ())


def _times_pi(expr: Any, symbol: Any) -> bool:
    """Whether ``symbol`` (or a power of it) stands in a product whose number is a power
    of π times a plain fraction (2π/60 = π/30, π²/900, 30/π).

    The parser hands π over as its double, folded with the other numbers of the product
    (``2*pi*N/60`` arrives as 0.10471975511966*N), so π is recognised by its value: the
    product's number is no fraction p/q with q <= 3600 (60 squared) by itself, yet is
    one after dividing by π^k for some k in -4..4, to 1e-12 of itself. A factor typed
    with π rounded (0.1047*N) is not recognised."""
    for node in sp.preorder_traversal(expr):
        if not node.is_Mul:
            continue
        coefficient, rest = node.as_coeff_Mul()
        # a factor of the symbol alone: N, N**2, Abs(f)**0.5 (sympy's sqrt of a square)
        if coefficient.is_Number and any(a.free_symbols == {symbol}
                                         for a in sp.Mul.make_args(rest)) \
                and _holds_pi(float(coefficient)):
            return True
    return False


def _as_angular(expr: Any, symbol: Any) -> bool:
    """Whether ``symbol`` is squared (or a higher power) or inside a function's argument
    somewhere in ``expr``: how an angular frequency is used (m*w^2, sin(w*t))."""
    bases = (symbol, sp.Abs(symbol))
    for node in sp.preorder_traversal(expr):
        if node.is_Pow and node.base in bases and node.exp.is_Number \
                and abs(float(node.exp)) >= 2:
            return True
        if isinstance(node, sp.Function) and not isinstance(node, sp.Abs) \
                and symbol in node.free_symbols:
            return True
    return False


def _holds_pi(c: float) -> bool:
    """Whether ``c``, or its square or fourth power (a root taken of the product:
    (4π²)^(1/4) = sqrt(2π)), is π^k (k = ±1..±4) times a fraction p/q with q <= 3600,
    and none of the three is such a fraction itself."""
    if not math.isfinite(c) or c == 0.0:
        return False
    powers = [c, c * c, c ** 4]
    if any(_fraction(p) for p in powers):
        return False
    return any(_fraction(p / math.pi ** k) for p in powers
               for k in (1, 2, 3, 4, -1, -2, -3, -4))


def _fraction(r: float) -> bool:
    """Whether ``r`` is p/q with |p|, q <= 3600 (60 squared), to 1e-12 of itself."""
    if not 1 / 3600 <= abs(r) <= 3600:  # any large number is near a whole one
        return False
    near = Fraction(r).limit_denominator(3600)
    return abs(near.numerator) <= 3600 and abs(float(near) - r) <= 1e-12 * abs(r)
