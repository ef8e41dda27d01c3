"""Numbers for people: significant figures, exact digits, values with units, counts."""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

# ----------------------------------------------------------------- numbers

# Significant figures the window shows until the user chooses another count.
DEFAULT_FIGURES = 10
UNDEFINED = "undefined"  # a NaN: f or x has no value there (domain error, 0/0)


def _special(value: float) -> str | None:
    if math.isnan(value):
        return UNDEFINED
    if math.isinf(value):
        return "+inf" if value > 0 else "-inf"
    return None


def number(value: float | int | None, figures: int = DEFAULT_FIGURES, blank: str = "") -> str:
    """``value`` with ``figures`` significant figures.

    ``blank`` for None, whole numbers (and booleans) as they are, "undefined" for NaN,
    "+inf" / "-inf" for infinities.
    """
    if value is None:
        return blank
    if isinstance(value, (bool, int)):
        return str(value)
    value = float(value)
    return _special(value) or f"{value:.{figures}g}"


def significant(value: float | int | None, figures: int, blank: str = "") -> str:
    """``value`` to exactly ``figures`` significant figures, trailing zeros kept (95.1417
    to 8 figures is 95.141700: the zeros are figures too), for a count of figures asked
    for by name (``--figures``); otherwise as :func:`number`."""
    if value is None or isinstance(value, (bool, int)):
        return number(value, figures, blank)
    value = float(value)
    special = _special(value)
    if special:
        return special
    text = f"{value:#.{figures}g}"
    return text.replace(".e", "e").removesuffix(".")


def exact(value: float | int | None, blank: str = "") -> str:
    """Every digit: ``repr`` of a float (reads back as the same double), with the same
    words as :func:`number` for None, NaN and infinities."""
    if value is None:
        return blank
    if isinstance(value, (bool, int)):
        return str(value)
    value = float(value)
    return _special(value) or repr(value)


def measured_text(value: Any, converted: Any,
                  show: Callable[[Any], str] | None = None) -> str:
    """A parameter's value as entered: ``150 mm (= 0.15 m)`` when it carries a unit
    (``converted``: a :class:`solvers.units.Converted`), ``350 m`` when that unit is
    already SI, the number alone without one. The SI unit is written with a derived unit
    where that is simpler (:func:`solvers.units.si_text.unit_text`, ``derived``).
    ``show`` formats the numbers (every digit by default)."""
    show = show or exact
    if converted is None:
        return show(value)
    si = si_unit_text(converted)
    if converted.unit in (converted.si_unit, si):  # already in SI: nothing to convert
        return f"{show(converted.value)} {converted.unit}"
    return (f"{show(converted.value)} {converted.unit} "
            f"(= {si_measure_text(converted, show)})")


def si_measure_text(converted: Any, show: Callable[[Any], str] | None = None) -> str:
    """A converted value in SI for people: ``0.15 m``, ``0.523598775598299 rad`` for an
    angle, the number alone for a pure ratio typed in % or ppm (its SI unit is the
    number 1, which written after the value would read as one more digit)."""
    value = si_value_shown(converted)
    shown = (show or exact)(value)
    if shown == exact(value) and abs(value) >= 1e9:
        shown = _power_of_ten(value)
    si = si_unit_text(converted)
    return f"{shown} {si}" if si else shown


def _power_of_ten(value: float) -> str:
    """Every digit of a large value with its power of ten: 200 GPa in SI is 2e+11 Pa, not
    200000000000.0 Pa, whose zeros a checker has to count (Python's repr writes the power
    only from 1e16)."""
    from decimal import Decimal

    mantissa, power = f"{Decimal(repr(value)).normalize():e}".split("e")
    return f"{mantissa}e{power[0]}{power[1:].zfill(2)}"  # e+09, as repr writes 1e-05


def not_a_number(text: str) -> str:
    """"'abc' is not a finite number" for a field or cell that must hold one, with how to
    write a number typed with commas ('1,200': a thousands separator or a decimal comma,
    :func:`solvers.equation.lexer.comma_hint`), as the command line and tables say it."""
    from solvers.equation.lexer import comma_hint

    text = text.strip()
    return f"{text!r} is not a finite number{comma_hint(text)}"


def si_value_shown(converted: Any) -> float:
    """A converted value's SI magnitude as people read it, to 15 significant figures: 15 ft
    is 4.572 m, not the double nearest the product, 4.571999999999999 (that double is what
    the solve uses and the JSON keeps)."""
    return float(f"{converted.si_value:.15g}")


def si_unit_text(converted: Any) -> str:
    """The SI unit of a converted value for people: the unit as entered with each factor
    made coherent where every factor is a prefixed SI unit (kJ/kg -> J/kg, W/(m^2*K^4) as
    it is), N*m for a force times a length (lbf*ft: a torque, not "J"), the radian of a
    value per or times an angle kept (rpm in rad/s, kN*m/rad in N*m/rad), else a derived
    unit for the compositions engineers use (W/(m^2*K), not kg/(s^3*K)); an angle in
    rad; '' for a pure ratio (%, ppm: SI writes its unit as the number 1). Files keep
    ``converted.si_unit``, in base units."""
    from solvers.units.si_text import coherent_text, is_angle, moment_text, radian_text, unit_text

    if not converted.dimension:  # SI's unit of a ratio is 1: an angle says rad, else none
        return "rad" if isinstance(converted.unit, str) and is_angle(converted.unit) else ""
    typed = converted.unit if isinstance(converted.unit, str) else None
    # a speed in rpm or a stiffness in kN*m/rad is per radian in SI: the radian is said
    # (rad/s, N*m/rad), not dropped as SI's base units do (1/s, "J")
    rest, power = radian_text(typed) if typed else (None, 0)
    if power:
        typed = rest
    text = (typed and (coherent_text(typed) or moment_text(typed))) \
        or unit_text(converted.dimension, derived=True) or converted.si_unit
    return _with_radian(text, power)


def _with_radian(text: str, power: int) -> str:
    """``text`` with the radian the value is counted in: 1/s -> rad/s, N*m -> N*m/rad;
    ``text`` as it is where the radian does not fit in simply (a power of 2, a
    denominator already there)."""
    if power == 1 and text.startswith("1/"):
        return "rad/" + text[2:]
    if power == 1 and "/" not in text:
        return text + "*rad"
    if power == -1 and "/" not in text:
        return text + "/rad"
    return text


def order_text(order: float | None, blank: str = "—") -> str:
    """An observed order of convergence (2.00 quadratic, 1.62 secant, 1.00 linear)."""
    return blank if order is None else f"{order:.2f}"


def figures_word(n: int) -> str:
    return counted(n, "significant figure")


def counted(n: int, noun: str, plural: str | None = None) -> str:
    """``n`` and its noun, singular for one: "1 cell", "3 cells", "1 iteration", "2 blocks"
    (``plural`` where adding an s is wrong: "1 match", "2 matches")."""
    return f"{n} {noun if n == 1 else plural or noun + 's'}"


def clipped(text: str, room: int) -> str:
    """``text`` cut to ``room`` characters, ending in "…" where it was cut (a table cell
    that must stay narrow never ends mid-expression as if that were all there is)."""
    return text if len(text) <= room else text[:room - 1].rstrip() + "…"


def sweep_text(name: str, start: float, stop: float, count: int, *, unit: str = "",
               log: bool = False) -> str:
    """What a sweep varies, for people: "p from -1 to 1 in 41 values, linear spacing".

    START and STOP as numbers a person types (15 significant figures: no float noise,
    no type names); the values themselves stay exact in the data cells."""
    u = f" {unit}" if unit else ""
    return (f"{name} from {start:.15g}{u} to {stop:.15g}{u} in {counted(count, 'value')}, "
            f"{'logarithmic' if log else 'linear'} spacing; each row starts from the "
            "previous row's root")
