"""The words for what the equation core remarks (derivatives, units, the dimension
check, unit suspects) and the help page's paragraph on units."""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence
from typing import Any

# --------------------------------------------------------------- equation remarks
# What the equation core reports as codes (``Equation.remarks``: code, subject, numbers).

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

# The dimensional check switched off (a worksheet's dimension_check, --no-dimension-check):
# said on every document of such a worksheet, never a silent pass.
DIMENSIONS_UNCHECKED = ("not checked (switched off for this worksheet): every unit is "
                        "converted but whether the equation is consistent is yours to verify")

# The remarks about units (every document that lists an equation's remarks shows these)
UNIT_REMARKS = frozenset({"dimensions_unchecked", "absolute_temperature",
                          "temperature_offset_sum", "turn_units", "turns_times_pi",
                          "bare_gravity_constant", "hertz_without_pi",
                          "unknown_dimension_free", "unknown_dimension_fractional",
                          "system_dimension_free", "unit_suspect"})

# The remarks that say a root may be off by a factor (a sum 273.15 K off, a speed in rpm
# converted twice, a g_c without its unit, a frequency in Hz used as one in rad/s): the
# window's status line shows them as a warning, not beside a tick
SUSPECT_REMARKS = frozenset({"temperature_offset_sum", "turns_times_pi",
                             "bare_gravity_constant", "hertz_without_pi"})

DIMENSIONS_CHECKED = ("checked: both sides and every term of each sum have one dimension; "
                      "function arguments and exponents are dimensionless")

REMARK_WORDS: dict[str, Callable[[Any], str]] = {
    "unknown_has_value": lambda r: f"'{r.subject}' is the unknown: its parameter value is "
                                   "not used",
    "no_derivative": lambda r: "no symbolic derivative ("
                               + NO_DERIVATIVE_WORDS[r.subject](r.numbers)
                               + "): Newton uses a numerical one",
    "degrees": lambda r: "deg = pi/180: angles in degrees become radians",
    "radians": lambda r: "sin, cos and tan take radians (multiply by deg for degrees)",
    "angle_units": lambda r: f"{', '.join(repr(n) for n in r.subject.split(', '))} given in "
                             "an angle unit: converted to radians for sin, cos and tan (not "
                             "to be multiplied by deg again)",
    "kinks": lambda r: "abs/min/max have a kink: the derivative there uses sign/step values",
    "no_dependence": lambda r: f"the equation does not depend on '{r.subject}' once simplified",
    "e_notation": lambda r: "numbers such as 2e3 are read as 2000, not as 2*e*3",
    "dimensions_unchecked": lambda r: f"dimensions {DIMENSIONS_UNCHECKED}",
    "absolute_temperature": lambda r: f"'{r.subject}' in degC/degF is an absolute temperature, "
                                      "converted to kelvin with the offset (type delta_degC "
                                      "or delta_degF for a difference)",
    "temperature_offset_sum": lambda r: offset_sums_text([r.subject]),
    "unknown_dimension_free": lambda r: f"the equation does not fix the dimension of "
                                        f"'{r.subject}': it is taken as dimensionless",
    "system_dimension_free": lambda r: f"the equations do not fix the dimension of "
                                       f"'{r.subject}': it is taken as dimensionless",
    "unknown_dimension_fractional": lambda r: f"the dimensions give '{r.subject}' fractional "
                                              "powers of units: if a constant of the equation "
                                              "hides its unit (Manning's n, a Hazen–Williams "
                                              "coefficient) give it its unit or switch the "
                                              "dimension check off",
    "unit_suspect": lambda r: _unit_suspect(r.subject, r.numbers),
    "turn_units": lambda r: f"{_names(r.subject)} given in a unit that counts turns or "
                            "degrees (rpm, rev/s, deg/s): converted to radians, so the "
                            "equation sees rad/s (1 rpm = 2*pi/60 rad/s), not to be "
                            "multiplied by 2*pi/60 again (Hz is 1/s, no 2*pi)",
    "turns_times_pi": lambda r: f"'{r.subject}' is given in a unit that counts turns "
                                "(rpm, rev/s) and reaches the equation in rad/s already, "
                                "yet the equation multiplies it by pi: a formula written "
                                "for revolutions (2*pi*N/60, pi*D*N) converts it a "
                                "second time, 2*pi/60 (rpm) or 2*pi (rev/s) too much; "
                                "write it for the angular speed (w = N), or give "
                                f"'{r.subject}' as a plain number, in the unit the "
                                "formula was written for",
    "bare_gravity_constant": lambda r: _bare_gravity(r.subject, r.numbers),
    "hertz_without_pi": lambda r: f"'{r.subject}' given in Hz reaches the equation as "
                                  "cycles per second (1/s, no 2*pi), and the equation "
                                  "does not multiply it by pi: if it is written for the "
                                  "angular frequency in rad/s (k - m*w^2 = 0), a root in "
                                  "Hz is 2*pi times too large; put 2*pi*"
                                  f"{r.subject} in its place, or give it in rad/s",
}


def _bare_gravity(subject: str, numbers: Sequence[float]) -> str:
    """A g_c typed without its unit beside values with units (numbers: the value, which
    constant of solvers.units.gravity.GRAVITY_CONSTANTS)."""
    from solvers.units.gravity import GRAVITY_CONSTANTS

    unit = GRAVITY_CONSTANTS[int(numbers[1])][1]
    what = (f"'{subject}' = {numbers[0]:g} has no unit" if subject.isidentifier()
            else f"the number {subject} in the equation has no unit")
    return (f"{what}: is it g_c? With units, lbm reaches the equation in kg and lbf (or "
            "kgf) in N, where g_c is 1, so a bare g_c makes the force "
            f"{numbers[0]:g} times too small (or too large); give it its unit "
            f"({numbers[0]:g} {unit}) or leave it out")


def _names(subject: str) -> str:
    """'N', 'w' from a remark's ", "-joined subject."""
    return ", ".join(repr(n) for n in subject.split(", "))


def _unit_suspect(name: str, numbers: Sequence[float]) -> str:
    """A parameter whose unit alone explains the unknown's fractional dimension; numbers:
    the unknown's meant dimension, the parameter's and the one it needs (7 each)."""
    from solvers.units.si_text import needs_words, numbers_dimension, quantity_words

    meant, now, needed = (numbers_dimension(numbers[i:i + 7]) for i in (0, 7, 14))
    what = f"is {quantity_words(now)}" if now else "has no unit"
    return (f"most likely the unit of '{name}' is wrong: it {what}; with the unknown "
            f"{needs_words(meant)} the equation needs '{name}' {needs_words(needed)}")


def remark_text(remark: Any) -> str:
    """One remark (``code``, ``subject``, ``numbers``) as a sentence; unknown codes as is."""
    words = REMARK_WORDS.get(remark.code)
    return words(remark) if words else remark.code.replace("_", " ")


def unit_notes(remarks: Iterable[Any]) -> tuple[str, ...]:
    """The remarks about units (:data:`UNIT_REMARKS`: degC taken in kelvin, a constant
    added to such a temperature, the check off, a dimension the equations do not fix) as
    sentences (:func:`remarks_text`): what every place that states a solve's units notes,
    the system window's reading while the user types as its solve."""
    return remarks_text(r for r in remarks if r.code in UNIT_REMARKS)


def remarks_text(remarks: Iterable[Any]) -> tuple[str, ...]:
    """Every remark of an equation (``Equation.remarks``) as sentences, in order; the
    parameters given in degC or degF named in one sentence, where the first of them stands
    (a heat balance with three temperatures said the same long sentence three times), and
    the sums adding a constant to such a temperature likewise."""
    remarks = tuple(remarks)
    temperatures = [r.subject for r in remarks if r.code == "absolute_temperature"]
    sums = [r.subject for r in remarks if r.code == "temperature_offset_sum"]
    out: list[str] = []
    for r in remarks:
        if r.code == "temperature_offset_sum":
            if r.subject == sums[0]:
                out.append(offset_sums_text(sums))
        elif r.code != "absolute_temperature" or len(temperatures) == 1:
            out.append(remark_text(r))
        elif r.subject == temperatures[0]:
            out.append(absolute_temperatures_text(temperatures))
    return tuple(out)


def offset_sums_text(sums: Sequence[str]) -> str:
    """Sums that add a constant to a temperature typed in degC/degF (one sentence)."""
    quoted = [f"`{s}`" for s in sums]
    listed = quoted[0] if len(quoted) == 1 else ", ".join(quoted[:-1]) + " and " + quoted[-1]
    verb = "adds" if len(quoted) == 1 else "add"
    return (f"{listed} {verb} a constant to a temperature typed in degC/degF, which the "
            "equation takes in kelvin (95 degC is 368.15 K there): right for a formula "
            "written for kelvin, but a correlation written for degC, such as Antoine's "
            "C + T, is then 273.15 K off; for such a correlation give each constant less "
            "273.15 (C = 220.79 becomes -52.36 K)")


def absolute_temperatures_text(names: Sequence[str]) -> str:
    """Several parameters in degC/degF: each an absolute temperature (one sentence)."""
    quoted = [f"'{n}'" for n in names]
    listed = ", ".join(quoted[:-1]) + " and " + quoted[-1]
    return (f"{listed} in degC/degF are absolute temperatures, converted to kelvin with the "
            "offset (type delta_degC or delta_degF for a difference)")


# ----------------------------------------------------------------- help (F1)

# The help page's paragraph on units (HTML; app/window/dialogs.py sets it in the page).
HELP_UNITS = (
    "<p><b>Units.</b> A parameter takes its unit in the <i>unit</i> column of the parameters "
    "table, or typed after its number (<code>150 mm</code>, <code>2.5 m/s</code>, "
    "<code>20 degC</code>); it is converted once to SI. The <b>Unit</b> box beside the "
    "unknown gives the unit of the unknown, its start values, scan range and roots (blank: "
    "the SI unit its dimensions give it). <b>Check dimensions</b> (on by default) checks that "
    "both sides and every term agree; clear it only for a correlation whose constants hide "
    "their units, and every document then says the dimensions were not checked. The system "
    "window has the same: a <i>unit</i> column in its unknowns table, units on its "
    "parameters and its own Check dimensions switch.</p>"
)
