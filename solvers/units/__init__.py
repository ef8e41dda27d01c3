"""Units of parameters and of the unknown (pint): converted once, at bind time.

A parameter value may carry a unit: a string ``"150 mm"``, ``"0.35 m^3/s"``,
``"1.0 mPa*s"``, ``"25 degC"``, or a :class:`Measured` ``(value, unit)`` whose value may be
a numpy array (a table column ``D [mm]``: :func:`measured` turns the column and its unit
text into a parameter value). ``parse_equation`` and ``Equation.bind`` convert every such
value once to SI base units (m, kg, s, K, mol, A, cd; angles in rad) and the compiled f
sees plain floats or float arrays, so the iteration loops pay nothing for units.

The unknown x is given and returned in ``unknown_unit``: the compiled code reads
``x_SI = scale*x + offset`` (constants folded in at compile time, nothing per call; a
scale of 1 and offset 0 compile to the code of an equation without units). Without a
chosen unit the unknown's unit is the SI unit of the dimension the equation implies.

When any parameter or the unknown carries a unit, the equation's dimensions are checked
(:mod:`solvers.units.dimensions`): a mismatch is an ``EquationError`` naming the part as
typed, the two dimensions and the column. Parameters without a unit and plain numbers are
dimensionless. ``check_dimensions=False`` skips the check (for correlations whose
constants hide their units); the equation then carries the remark code
``dimensions_unchecked`` so every document says so.

Offset temperatures, one rule: ``degC``/``degF`` alone are absolute temperatures
(25 degC -> 298.15 K, remark ``absolute_temperature``); in a compound unit
(``J/(kg*degC)``) they are differences, as pint reads them; a difference on its own is
typed ``delta_degC``/``delta_degF``. An unknown in degC is converted with the offset.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import lru_cache
from numbers import Real
from typing import Any

import numpy as np

from solvers.equation.lexer import EquationError
from solvers.units.reading import (
    DIMENSIONLESS,
    MAX_UNIT_TEXT,
    Dimension,
    Unit,
    converter,
    read_unit,
    split_value,
    unit_text_problem,
)
from solvers.units.si_text import dimension_numbers, dimension_words, unit_text

__all__ = [
    "DIMENSIONLESS", "MAX_UNIT_TEXT", "Converted", "Dimension", "Measured", "Plan", "Unit",
    "convert_parameters", "converter", "dimension_words", "measured", "read_unit", "split_value",
    "unit_text", "unit_text_problem", "with_unit",
]


@dataclass(frozen=True)
class Measured:
    """A parameter value with its unit: ``value`` a number or a numpy array, ``unit`` text.

    ``Measured(np.array([100, 150, 200]), "mm")`` is a table column ``D [mm]``.
    """

    value: Any
    unit: str


def measured(value: Any, unit: str) -> Measured:
    """A :class:`Measured` with its unit text checked now (raises :class:`EquationError`).

    ``unit`` '' gives the value back unchanged (a column without a unit).
    """
    if isinstance(unit, str) and not unit.strip():
        return value
    read_unit(unit)
    return Measured(value, unit.strip() if isinstance(unit, str) else unit)


def with_unit(text: str) -> tuple[str, str] | None:
    """``"150 mm"`` -> ("150", "mm"): a number followed by unit text, split (no pint);
    None when the text is not a number followed by something that could be a unit."""
    m = _VALUE_AND_UNIT.fullmatch(text)
    return (m.group(1), m.group(2) or m.group(3)) if m else None


# A unit starts with a letter (or µ ° % Ω, or a parenthesis), or is a reciprocal typed
# as handbooks print it, "1/K" (an expansion coefficient), "1/s": that one only after a
# space or "*", so that "21/s" is never read as 2 in 1/s.
_VALUE_AND_UNIT = re.compile(
    r"\s*([+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)(?![eE][+-]?[0-9])"
    r"(?:\s*\*?\s*([A-Za-zµμ°%Ω(].*?)|(?:\s+\*?|\*)\s*(1\s*/\s*[A-Za-zµμ°%Ω(].*?))\s*",
    re.ASCII | re.DOTALL)


@dataclass(frozen=True)
class Converted:
    """A parameter given with a unit: as entered and in SI base units."""

    value: Any  # as entered: a float or a float64 array
    unit: str  # as entered
    si_value: Any  # value * factor + offset
    si_unit: str  # SI base units (ASCII), '1' when dimensionless
    dimension: Dimension
    absolute_temperature: bool = False  # degC/degF alone: converted with the offset


def _number_or_array(name: str, value: Any) -> Any:
    if isinstance(value, np.ndarray):
        if value.dtype.kind not in "iuf":
            raise EquationError(f"parameter {name!r} must be real numbers, "
                                f"got an array of {value.dtype}")
        arr = value.astype(np.float64)
        return float(arr) if arr.ndim == 0 else arr
    if isinstance(value, bool) or not isinstance(value, (Real, np.number)) or \
            isinstance(value, complex | np.complexfloating):
        raise EquationError(f"parameter {name!r} must be a real number, "
                            f"got {type(value).__name__}")
    return float(value)


def _convert(name: str, value: Any, unit: Unit | str) -> Converted:
    if not isinstance(unit, Unit):
        try:
            unit = read_unit(unit)
        except EquationError as err:
            raise EquationError(f"parameter {name!r}: {err}") from None
    if value.__class__ is float:
        magnitude = value
        si = value * unit.factor + unit.offset
    else:
        magnitude = _number_or_array(name, value)
        with np.errstate(all="ignore"):
            si = magnitude * unit.factor + unit.offset
    return Converted(magnitude, unit.text, si, unit.si_text, unit.dimension,
                     absolute_temperature=unit.offset != 0.0)


@lru_cache(maxsize=4096)
def _value_string(text: str) -> tuple[float, Unit | None]:
    """``"150 mm"`` -> (150.0, its Unit); (number, None) without a unit (cached by text)."""
    number, unit = split_value(text)
    return number, (read_unit(unit) if unit else None)


def convert_parameters(values: Mapping[str, Any] | None
                       ) -> tuple[Mapping[str, Any] | None, dict[str, Converted]]:
    """Values with units -> SI magnitudes; others untouched. Returns (values, converted).

    Strings hold a number and a unit (``"150 mm"``; a number alone as text is refused);
    :class:`Measured` or a pair ``(value, "mm")`` holds a value (or array) and a unit.
    Raises :class:`EquationError` naming the parameter. Without any unit the mapping is
    returned as it came (no copy).
    """
    if values is None or not isinstance(values, Mapping):
        return values, {}
    if not any(isinstance(v, (str, Measured, tuple)) for v in values.values()):
        return values, {}
    out: dict[str, Any] = {}
    converted: dict[str, Converted] = {}
    for name, value in values.items():
        if isinstance(value, str):
            try:
                number, unit = _value_string(value)
            except EquationError as err:
                raise EquationError(f"parameter {name!r}: {err}") from None
            if unit is None:  # a number as text is a type slip, as before units: say so
                raise EquationError(f"parameter {name!r}: {value.strip()[:40]!r} is text "
                                    "without a unit; give a number, or a number and a unit")
            c = _convert(str(name), number, unit)
            converted[name] = c
            out[name] = c.si_value
        elif isinstance(value, tuple) and len(value) == 2 and isinstance(value[1], str):
            c = _convert(str(name), value[0], value[1])  # (value or array, "mm")
            converted[name] = c
            out[name] = c.si_value
        elif isinstance(value, Measured):
            c = _convert(str(name), value.value, value.unit)
            converted[name] = c
            out[name] = c.si_value
        else:
            out[name] = value
    return out, converted


@dataclass(frozen=True)
class Resolution:
    """What the units make of one binding: the unknown's unit and remark codes."""

    unknown_unit: str | None
    remarks: tuple[tuple[str, str, tuple[float, ...]], ...] = ()


@dataclass(frozen=True, eq=False)
class Plan:
    """The units side of a parsed equation: built once per parse, resolved per binding.

    ``unit``: the unknown unit the user chose (None: inferred). ``scale``/``offset``: what
    the compiled code multiplies x by and adds to it (x_SI = scale*x + offset).
    """

    text: str
    spans: tuple[tuple[Any, int, int], ...]
    sides: tuple[Any, Any, tuple[int, int, int]]
    unknown: Any  # the unknown's sympy Symbol
    symbols: Mapping[str, Any]  # parameter name -> sympy Symbol
    names_at: Mapping[Any, int]  # sympy Symbol -> where its name is first typed
    unit: Unit | None
    check_dimensions: bool
    cache: dict[Any, Any] = field(default_factory=dict)  # Resolutions; offset sums

    @property
    def scale(self) -> float:
        return 1.0 if self.unit is None else self.unit.factor

    @property
    def offset(self) -> float:
        return 0.0 if self.unit is None else self.unit.offset

    def resolve(self, converted: Mapping[str, Converted]) -> Resolution:
        """Check the dimensions for these parameter units (cached by their dimensions)."""
        used = {n: c for n, c in converted.items() if n in self.symbols}
        temperatures = tuple(("absolute_temperature", n, ()) for n, c in used.items()
                             if c.absolute_temperature) + self._offset_sums(used) \
            + self._turns(used)
        if not used and self.unit is None:
            return Resolution(None, ())
        given_text = None if self.unit is None else self.unit.text
        if not self.check_dimensions:
            return Resolution(given_text, (("dimensions_unchecked", "", ()), *temperatures))
        key = tuple(sorted((n, c.dimension) for n, c in used.items()))
        hit = self.cache.get(key)
        if hit is None:
            from solvers.units import dimensions

            typed = {s: used[n].unit if n in used else "" for n, s in self.symbols.items()}
            outcome = dimensions.check(
                self.text, self.spans, self.sides, self.unknown,
                {self.symbols[n]: c.dimension for n, c in used.items()},
                None if self.unit is None else self.unit.dimension,
                self.unknown.name, given_text, self.names_at, typed)
            remarks: tuple[tuple[str, str, tuple[float, ...]], ...] = ()
            if not outcome.fixed and self.unit is None:
                remarks = (("unknown_dimension_free", self.unknown.name, ()),)
            elif any(float(e) != int(e) for _n, e in outcome.dimension):
                # m^(60/37)/s^(20/37): most likely a constant whose unit the text hides,
                # or a parameter's unit is wrong: name that parameter when one alone
                # explains it (see _suspect_remarks)
                remarks = (("unknown_dimension_fractional", self.unknown.name, ()),
                           *self._suspect_remarks(outcome.dimension, used, typed))
            unit = given_text if given_text is not None else (
                unit_text(outcome.dimension, derived=True) or None)
            hit = self.cache[key] = Resolution(unit, remarks)
        return Resolution(hit.unknown_unit, hit.remarks + temperatures)


    def _offset_sums(self, used: Mapping[str, Converted]
                     ) -> tuple[tuple[str, str, tuple[float, ...]], ...]:
        """("temperature_offset_sum", the sum as typed, ()) for each sum that adds a
        constant to a temperature typed in degC/degF (see solvers.units.temperatures),
        cached by which names are such temperatures."""
        from solvers.units.temperatures import kelvin_scale

        absolute = [self.symbols[n] for n, c in used.items() if c.absolute_temperature]
        if self.offset != 0.0:
            absolute.append(self.unknown)
        if not absolute:
            return ()
        others = [self.symbols[n] for n, c in used.items() if kelvin_scale(c)]
        if self.offset == 0.0:
            others.append(self.unknown)
        key = ("offset_sums", frozenset(s.name for s in absolute),
               frozenset(s.name for s in others))
        if key not in self.cache:
            from solvers.units.temperatures import offset_sums

            lhs, rhs, _where = self.sides
            residual = lhs if rhs is None else lhs - rhs
            self.cache[key] = tuple(("temperature_offset_sum", shown, ()) for shown in
                                    offset_sums((residual,), absolute, self.text,
                                                self.spans, others))
        return self.cache[key]

    def _turns(self, used: Mapping[str, Converted]
               ) -> tuple[tuple[str, str, tuple[float, ...]], ...]:
        """The remarks on names typed in a unit that counts turns or degrees (rpm, deg/s:
        see solvers.units.turns), the unknown's unit included; cached by those units."""
        typed = {self.symbols[n]: c.unit for n, c in used.items() if isinstance(c.unit, str)}
        if self.unit is not None:
            typed[self.unknown] = self.unit.text
        key = ("turns", tuple(sorted((s.name, u) for s, u in typed.items())))
        if key not in self.cache:
            from solvers.units.turns import turn_remarks

            lhs, rhs, _where = self.sides
            self.cache[key] = turn_remarks((lhs if rhs is None else lhs - rhs,), typed)
        return self.cache[key]

    def _suspect_remarks(self, dimension: Dimension, used: Mapping[str, Converted],
                         typed: Mapping[Any, str]
                         ) -> tuple[tuple[str, str, tuple[float, ...]], ...]:
        """("unit_suspect", parameter, numbers) for the parameters whose unit alone, if
        wrong, explains the unknown's fractional dimension.

        The unknown's dimension with each exponent rounded to a whole number is taken as
        what was meant (m^(7/5)*s^(2/5)/kg^(1/5) -> m) and
        :func:`solvers.units.dimensions.suspects` names the parameters that would make
        that fit. numbers: the unknown's meant dimension, the parameter's dimension and
        the one it would need, each as :func:`si_text.dimension_numbers` (21 numbers).
        """
        from solvers.units import dimensions

        if any(abs(abs(e - round(e)) - 0.5) < 1e-9 for _n, e in dimension):
            return ()  # m^(1/2) or m^(5/2): no whole exponent is nearer, nothing to guess
        meant = tuple((n, float(round(e))) for n, e in dimension if round(e))
        found = dimensions.suspects(
            self.text, self.spans, (self.sides,), (self.unknown,),
            {self.symbols[n]: c.dimension for n, c in used.items()},
            {self.unknown: (meant, unit_text(meant))}, self.names_at, typed)
        # a bare constant needing fractional powers is named by the remark on the unknown's
        # fractional dimension already; against a meant dimension that is only a rounding
        # guess (a Hazen-Williams Q rounds to a volume, m^3) its unit would mislead
        return tuple(("unit_suspect", s.name, (*dimension_numbers(meant),
                                               *dimension_numbers(s.dimension),
                                               *dimension_numbers(s.needed)))
                     for s in found if all(float(e).is_integer() for _n, e in s.needed))


def plan_for(text: str, parser: Any, lhs: Any, rhs: Any, unknown: Any,
             symbols: Mapping[str, Any], unknown_unit: str | None,
             check_dimensions: bool) -> Plan:
    """The :class:`Plan` of a parse (``unknown_unit`` read now: EquationError if bad)."""
    unit = None
    if unknown_unit is not None:
        if not isinstance(unknown_unit, str):
            raise EquationError("the unknown unit must be text, got "
                                f"{type(unknown_unit).__name__}")
        if unknown_unit.strip():
            try:
                unit = read_unit(unknown_unit)
            except EquationError as err:
                raise EquationError(f"unknown unit: {err}") from None
    # the equation's own line: definition lines before it are not its left side
    start, end = getattr(parser, "equation_span", (len(text) - len(text.lstrip()),
                                                   len(text.rstrip())))
    equals = parser.equals if parser.equals is not None else end
    sides = (lhs.expr, None if rhs is None else rhs.expr, (start, equals, end))
    names_at = {s: parser.first_pos[n] for n, s in symbols.items() if n in parser.first_pos}
    if unknown.name in parser.first_pos:
        names_at[unknown] = parser.first_pos[unknown.name]
    return Plan(text=text, spans=tuple(parser.spans), sides=sides, unknown=unknown,
                symbols=dict(symbols), names_at=names_at, unit=unit,
                check_dimensions=bool(check_dimensions))
