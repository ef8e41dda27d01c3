"""Words for what the equation core reports as codes (``Equation.remarks``).

The core (solvers.equation) records each remark as a code with its subject and numbers;
this module is the one place that turns them into sentences for people (window status
line, CLI notes, calculation sheet). To be folded into app/documents/words.py.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from typing import Any

# Why there is no symbolic derivative, by the reason code of solvers.equation.calculus.
NO_DERIVATIVE_WORDS: dict[str, Callable[[tuple[float, ...]], str]] = {
    "too_large": lambda n: f"more than {n[0]:g} terms",
    "kinks_nested": lambda n: f"abs/min/max nested more than {n[0]:g} deep",
    "unevaluated": lambda n: "sympy left it unevaluated",
    "not_finite": lambda n: "it is not real or not finite",
    "too_deep": lambda n: "expression too deep",
    "not_handled": lambda n: "a function not handled",
    "not_compiled": lambda n: "it cannot be compiled",
}

REMARK_WORDS: dict[str, Callable[[Any], str]] = {
    "unknown_has_value": lambda r: f"'{r.subject}' is the unknown: its parameter value is "
                                   "not used",
    "no_derivative": lambda r: "no symbolic derivative ("
                               + NO_DERIVATIVE_WORDS[r.subject](r.numbers)
                               + "): Newton uses a numerical one",
    "degrees": lambda r: "deg = pi/180: angles in degrees become radians",
    "radians": lambda r: "sin, cos and tan take radians (multiply by deg for degrees)",
    "kinks": lambda r: "abs/min/max have a kink: the derivative there uses sign/step values",
    "no_dependence": lambda r: f"the equation does not depend on '{r.subject}' once simplified",
    "e_notation": lambda r: "numbers such as 2e3 are read as 2000, not as 2*e*3",
}


def remark_text(remark: Any) -> str:
    """One remark (``code``, ``subject``, ``numbers``) as a sentence; unknown codes as is."""
    words = REMARK_WORDS.get(remark.code)
    return words(remark) if words else remark.code.replace("_", " ")


def remarks_text(remarks: Iterable[Any]) -> tuple[str, ...]:
    """Every remark of an equation (``Equation.remarks``) as sentences, in order."""
    return tuple(remark_text(r) for r in remarks)
