"""A bare g_c beside values with units: the US customary force-mass constant typed as a
plain number.

US texts write Newton's second law in lbm and lbf as F = m a / g_c, g_c = 32.174
lbm*ft/(lbf*s^2) (386.09 with inches; 9.80665 kg*m/(kgf*s^2) for kilogram-force). With
units, every value reaches the equation in SI, lbm as kg and lbf as N, where that constant
is 1; a g_c typed as a bare number is dimensionless, passes the dimensional check, and
divides the force 32.174 times too small: the solve converges, confidently, on 1.74 lbf
for 150 lbm at 12 ft/s^2 where 55.9 lbf was meant. Such a number, a parameter without a
unit or a number typed in the equation, is remarked (code ``bare_gravity_constant``),
never refused: a bare 32.174 can be meant.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from typing import Any

# (value, the unit that makes it the constant 1 in SI), NIST SP 811's standard gravity
# g_n = 9.80665 m/s^2 = 32.17405 ft/s^2 = 386.0886 in/s^2
GRAVITY_CONSTANTS: tuple[tuple[float, str], ...] = (
    (32.17405, "lbm*ft/(lbf*s^2)"),
    (386.0886, "lbm*in/(lbf*s^2)"),
    (9.80665, "kg*m/(kgf*s^2)"),
)
_CLOSE = 2e-3  # 32.2, 32.17, 386, 9.81 and 9.807 are each within 0.2 % of theirs


def gravity_constant(value: Any) -> int | None:
    """Which of :data:`GRAVITY_CONSTANTS` a plain number is, to within 0.2 %, or None
    (also for an array, a value with a unit or a non-number)."""
    if value.__class__ is not float and not isinstance(value, int):
        return None
    for i, (constant, _unit) in enumerate(GRAVITY_CONSTANTS):
        if abs(float(value) - constant) <= _CLOSE * constant:
            return i
    return None


def gravity_remarks(values: Mapping[str, Any], converted: Iterable[str], tokens: Iterable[Any]
                    ) -> tuple[tuple[str, str, tuple[float, ...]], ...]:
    """``("bare_gravity_constant", subject, (value, index))`` for each parameter without a
    unit whose value is a g_c of :data:`GRAVITY_CONSTANTS` (subject: its name) and each
    such number typed in the equation (subject: the number as typed); index: which g_c.

    ``values``: the bound parameters; ``converted``: the names given with a unit;
    ``tokens``: the equation's tokens (kind "num" for a number). Call it only where some
    value or the unknown has a unit."""
    with_unit = set(converted)
    out = []
    for name, value in values.items():
        i = None if name in with_unit else gravity_constant(value)
        if i is not None:
            out.append(("bare_gravity_constant", name, (float(value), float(i))))
    for t in tokens:
        if t.kind == "num":
            try:
                number = float(t.text)
            except ValueError:
                continue
            i = gravity_constant(number)
            if i is not None:
                out.append(("bare_gravity_constant", t.text, (number, float(i))))
    return tuple(out)
