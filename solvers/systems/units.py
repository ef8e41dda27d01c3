"""The units of a system: parameters converted once to SI, every line dimensionally checked
by the one checker (:func:`solvers.units.dimensions.check_system`), each unknown's unit.

Each unknown is given and returned in its unit: the compiled F and J read
``x_SI = scale*x + offset`` (constants folded in once, as for one equation; J picks up the
scale by the chain rule). Without a chosen unit an unknown's unit is the SI unit of the
dimension the equations imply; one whose dimension they leave open is dimensionless (remark
``system_dimension_free``). The check runs when any parameter used or any unknown has a
unit, unless ``check_dimensions`` is False (remark ``dimensions_unchecked``); a system of
plain numbers is compiled exactly as before.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from solvers.equation.lexer import EquationError
from solvers.equation.lines import Reading
from solvers.equation.record import Remark
from solvers.units import Converted, Unit, read_unit, unit_text


@dataclass(frozen=True)
class SystemUnits:
    """What the units make of a system: each unknown's unit (chosen or implied) and the
    (scale, offset) its code reads it with, and remark codes."""

    units: Mapping[str, str | None]
    conversions: Mapping[str, tuple[float, float]]
    remarks: tuple[Remark, ...]


def read_unknown_units(given: Any, unknowns: Sequence[str]) -> dict[str, Unit]:
    """``unknown_units`` (name -> unit text; '' or None: no chosen unit) read now.

    Raises :class:`EquationError` naming the unknown for a name that is not an unknown or
    unit text that does not read.
    """
    if given is None:
        return {}
    if not isinstance(given, Mapping):
        raise EquationError("unknown_units must be a mapping of unknown name to unit text")
    out: dict[str, Unit] = {}
    for name, text in given.items():
        if name not in unknowns:
            raise EquationError(f"unknown_units names '{name}', which is not an unknown ("
                                + ", ".join(unknowns) + ")")
        if text is None or (isinstance(text, str) and not text.strip()):
            continue
        try:
            out[name] = read_unit(text)
        except EquationError as err:
            raise EquationError(f"the unit of the unknown '{name}': {err}") from None
    return out


def resolve(reading: Reading, xs: Sequence[Any], symbols: Mapping[str, Any],
            converted: Mapping[str, Converted], chosen: Mapping[str, Unit],
            check_dimensions: bool) -> SystemUnits:
    """Check the dimensions of every line and find each unknown's unit.

    ``xs``: the unknowns' sympy Symbols (in order); ``symbols``: parameter name -> Symbol;
    ``converted``: the parameters given with a unit; ``chosen``: the unknowns' chosen
    units. Raises :class:`EquationError` (with "line N: " where the lines share one line).
    """
    used = {n: c for n, c in converted.items() if n in symbols}
    remarks = [Remark("absolute_temperature", n) for n, c in used.items()
               if c.absolute_temperature]
    remarks += _offset_sums(reading, xs, symbols, used, chosen)
    remarks += _turns(reading, xs, symbols, used, chosen)
    conversions = {x.name: (chosen[x.name].factor, chosen[x.name].offset) for x in xs
                   if x.name in chosen}
    units: dict[str, str | None] = {x.name: (chosen[x.name].text if x.name in chosen
                                              else None) for x in xs}
    if not used and not chosen:
        return SystemUnits(units, conversions, ())
    if not check_dimensions:
        return SystemUnits(units, conversions,
                           (Remark("dimensions_unchecked"), *remarks))
    from solvers.units import dimensions

    sides = tuple((eq.lhs.expr, None if eq.rhs is None else eq.rhs.expr,
                   (eq.start, eq.start, eq.end)) for eq in reading.equations)
    names_at = {s: reading.first_pos[n] for n, s in symbols.items() if n in reading.first_pos}
    names_at.update({x: reading.first_pos[x.name] for x in xs if x.name in reading.first_pos})
    try:
        outcomes = dimensions.check_system(
            reading.text, reading.spans, sides, tuple(xs),
            {symbols[n]: c.dimension for n, c in used.items()},
            {x: (chosen[x.name].dimension, chosen[x.name].text) for x in xs
             if x.name in chosen}, names_at,
            {s: used[n].unit if n in used else "" for n, s in symbols.items()})
    except EquationError as err:
        raise reading.numbered(err) from None
    for x, outcome in zip(xs, outcomes, strict=True):
        if x.name in chosen:
            continue
        units[x.name] = unit_text(outcome.dimension, derived=True) or None
        if not outcome.fixed:
            remarks.append(Remark("system_dimension_free", x.name))
        elif any(float(e) != int(e) for _n, e in outcome.dimension):
            remarks.append(Remark("unknown_dimension_fractional", x.name))
    return SystemUnits(units, conversions, tuple(remarks))


def _turns(reading: Reading, xs: Sequence[Any], symbols: Mapping[str, Any],
           used: Mapping[str, Converted], chosen: Mapping[str, Unit]) -> list[Remark]:
    """The remarks on names typed in a unit that counts turns or degrees (rpm, deg/s: see
    solvers.units.turns), parameters and unknowns alike."""
    from solvers.units.turns import turn_remarks

    typed = {symbols[n]: c.unit for n, c in used.items() if isinstance(c.unit, str)}
    typed.update({x: chosen[x.name].text for x in xs if x.name in chosen})
    residuals = [eq.lhs.expr if eq.rhs is None else eq.lhs.expr - eq.rhs.expr
                 for eq in reading.equations]
    return [Remark(*r) for r in turn_remarks(residuals, typed)]


def _offset_sums(reading: Reading, xs: Sequence[Any], symbols: Mapping[str, Any],
                 used: Mapping[str, Converted], chosen: Mapping[str, Unit]) -> list[Remark]:
    """A remark for each sum adding a constant to a temperature typed in degC/degF (a
    parameter, or an unknown in such a unit): see solvers.units.temperatures."""
    absolute = [symbols[n] for n, c in used.items() if c.absolute_temperature]
    absolute += [x for x in xs if x.name in chosen and chosen[x.name].offset != 0.0]
    if not absolute:
        return []
    from solvers.units.temperatures import kelvin_scale, offset_sums

    others = [symbols[n] for n, c in used.items() if kelvin_scale(c)]
    others += [x for x in xs if x not in absolute]
    residuals = [eq.lhs.expr if eq.rhs is None else eq.lhs.expr - eq.rhs.expr
                 for eq in reading.equations]
    return [Remark("temperature_offset_sum", shown)
            for shown in offset_sums(residuals, absolute, reading.text, reading.spans,
                                     others)]
