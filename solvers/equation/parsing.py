"""Reading an equation once: the text parsed, differentiated and compiled with the
parameters as arguments (:class:`solvers.equation.record._Core`), then bound to the values
given, or left waiting for :meth:`solvers.equation.record.Equation.bind` (parse once, bind
late). The records and the binding live in :mod:`solvers.equation.record`.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import replace
from typing import Any

import sympy as sp

from solvers.equation import calculus
from solvers.equation.compile import Code, floatify_big, hoist
from solvers.equation.lexer import EquationError
from solvers.equation.lines import check_shadowing, read_lines
from solvers.equation.parser import _is_bad, _Node
from solvers.equation.record import Equation, Remark, _bind, _Core, _no_value
from solvers.equation.values import choose_unknown, validate_parameters
from solvers.units import Converted, convert_parameters, plan_for

_TRIG = ("sin", "cos", "tan")
_LIMITS = {"too_large": (calculus.MAX_DERIVATIVE_NODES,),
           "kinks_nested": (calculus.MAX_KINK_NESTING,)}


def _build_core(text: str, parser: Any, lhs: _Node, rhs: _Node | None, unknown: str,
                unknown_unit: str | None = None, check_dimensions: bool = True) -> _Core:
    """Differentiate and compile once, with the parameters as arguments."""
    names = [n for n in parser.names if n != unknown]
    x = sp.Symbol(unknown, real=True)
    symbols = tuple(sp.Symbol(n, real=True) for n in names)
    symbolic = floatify_big(lhs.expr if rhs is None else lhs.expr - rhs.expr)
    plan = plan_for(text, parser, lhs, rhs, x, dict(zip(names, symbols, strict=True)),
                    unknown_unit, check_dimensions)
    quantity_expr = None
    if plan.scale != 1.0 or plan.offset != 0.0:
        quantity_expr = symbolic
        # x is in the unknown's unit: the code reads x_SI = scale*x + offset, constants
        # compiled in (no wrapper per call); f' picks up the scale by the chain rule
        symbolic = symbolic.xreplace({x: plan.scale * x + plan.offset})
    if not isinstance(symbolic, sp.Basic) or _is_bad(symbolic):
        raise EquationError("part of the equation has no finite real value", None)
    # Parts with parameters only are computed once per binding and passed to f and f' as
    # arguments (_h0, _h1, ...), so f costs what it cost when values were folded in.
    table: dict[Any, Any] = {}
    unknowns = frozenset((x,))
    remarks: list[Remark] = []
    f_expr = hoist(symbolic, unknowns, table)
    derivative, why = calculus.derivative(symbolic, x)
    d_expr = None if derivative is None else hoist(derivative, unknowns, table)
    hoisted = list(table.values())
    try:
        f_code = Code([f_expr], [x], hoisted)
    except Exception as err:  # noqa: BLE001 - say so in one line rather than a traceback
        raise EquationError(f"the equation cannot be compiled ({type(err).__name__})",
                            None) from None
    fprime_code = None
    if d_expr is not None:
        try:
            fprime_code = Code([d_expr], [x], hoisted)
        except Exception:  # noqa: BLE001 - Newton can still differentiate numerically
            derivative, why = None, "not_compiled"
    if why is not None:
        remarks.append(Remark("no_derivative", why, _LIMITS.get(why, ())))
    checks = tuple(c for c in parser.checks if unknown not in c.names)
    bind_code = None
    if table or checks:
        try:
            bind_code = Code([*table, *(e for c in checks for e in c.exprs)], [], symbols,
                             many=True)
        except Exception as err:  # noqa: BLE001 - one line rather than a traceback
            raise EquationError(f"the equation cannot be compiled ({type(err).__name__})",
                                None) from None
    remarks.extend(_remarks(parser, parser.names, unknown, symbolic, x, text))
    return _Core(text=text, unknown=unknown, parameter_names=tuple(names), symbols=symbols,
                 x=x, symbolic_expr=symbolic, symbolic_derivative=derivative, f_code=f_code,
                 fprime_code=fprime_code, checks=checks, n_hoisted=len(table),
                 bind_code=bind_code,
                 sides=(lhs, rhs), remarks=tuple(remarks), units=plan,
                 quantity_expr=quantity_expr)


def parse_equation(text: str, unknown: str | None = None,
                   parameters: Mapping[str, Any] | None = None,
                   unknown_unit: str | None = None, *,
                   check_dimensions: bool = True,
                   require_values: bool | None = None) -> Equation:
    """Read, check and compile an equation; see :mod:`solvers.equation` for the syntax.

    ``parameters`` maps names to numbers, numpy arrays (entries the text does not use
    are ignored; arrays broadcast), or values with a unit: a string ``"150 mm"`` or a
    :class:`solvers.units.Measured` (converted once to SI base units); ``unknown`` is the
    name to solve for, inferred when exactly one name in the text has no value.
    ``unknown_unit`` is the unit f takes x in and roots are in (it must fit the dimension
    the equation implies; without it, the SI unit of that dimension). When any parameter
    or the unknown has a unit the dimensions are checked, unless ``check_dimensions`` is
    False (the remark ``dimensions_unchecked`` then says so).

    Parse once, bind late: with ``unknown`` named, parameters may be left without a value
    (``require_values`` False, the default then): the equation is parsed and compiled, its
    :attr:`Equation.unbound` lists them, and f and f' raise :class:`EquationError`
    naming them until :meth:`Equation.bind` gives them. ``require_values=True`` (what the
    front ends pass) refuses a missing value here, with its position. Raises
    :class:`EquationError` (one line, with ``.position`` where it applies) for anything it
    cannot use, including a part with no finite real value for the given values or a
    dimensional mismatch; never evaluates user text as code. The result's
    :meth:`Equation.bind` gives other values without parsing again.
    """
    parameters, converted = convert_parameters(parameters)
    values = validate_parameters(parameters)
    reading = read_lines(text)
    check_shadowing(reading, values, () if unknown is None else (unknown,))
    remarks: list[Remark] = []
    line = reading.equations[0]
    if not reading.names and reading.definitions:
        # every name of the equation was defined above ('x = 1; x = 2'): say so, not that
        # the text has no names
        written = text[line.start:line.end].strip()
        used = [d.name for d in reading.definitions
                if re.search(rf"(?<![\w.]){re.escape(d.name)}(?!\w)", written)]
        if used:
            raise EquationError(
                f"the equation '{written}' has no unknown left: "
                + ", ".join(f"'{n}'" for n in used)
                + (" is" if len(used) == 1 else " are") + " defined above it, and an "
                "unknown cannot also be given a definition", line.start)
    if require_values is None:
        require_values = unknown is None
    unknown = choose_unknown(text, reading.names, unknown, values, reading.first_pos,
                             require_values)
    if unknown in values:
        remarks.append(Remark("unknown_has_value", unknown))
    core = _build_core(text, reading, line.lhs, line.rhs, unknown, unknown_unit,
                       check_dimensions)
    if reading.definitions or line.start > 0 or line.end < len(text.rstrip()):
        core = replace(core, definitions=tuple(reading.definitions),
                       span=(line.start, line.end))
    missing = [n for n in core.parameter_names if n not in values]
    if missing:
        return _unbound(core, {n: values[n] for n in core.parameter_names if n in values},
                        missing, unknown_unit, tuple(remarks) + core.remarks, converted)
    used = {n: values[n] for n in core.parameter_names}
    return _bind(core, used, tuple(remarks) + core.remarks, converted)


def _unbound(core: _Core, values: dict[str, Any], missing: list[str],
             unknown_unit: str | None, remarks: tuple[Remark, ...],
             converted: Mapping[str, Converted]) -> Equation:
    """The parsed equation with some parameters still without a value: f and f' say
    which when called (nothing is checked or evaluated until :meth:`Equation.bind`)."""
    why = _no_value(missing, core.unknown) + "; give them with Equation.bind"  # (as above)

    def unusable(x: Any) -> Any:
        raise EquationError(why)

    return Equation(text=core.text, unknown=core.unknown, parameters=values,
                    names=(core.unknown, *core.parameter_names), f=unusable,
                    fprime=None if core.fprime_code is None else unusable, remarks=remarks,
                    _core=core, unknown_unit=unknown_unit,
                    units={n: c for n, c in converted.items() if n in values})


def _remarks(parser: Any, names: list[str], unknown: str, expr: Any, x: Any,
             text: str) -> list[Remark]:
    remarks = []
    if "deg" in parser.used:
        remarks.append(Remark("degrees"))
    if parser.used.intersection(_TRIG) and "deg" not in parser.used:
        remarks.append(Remark("radians"))
    if parser.used.intersection({"abs", "min", "max"}):
        remarks.append(Remark("kinks"))
    if x not in expr.free_symbols:
        remarks.append(Remark("no_dependence", unknown))
    if any(n in ("e", "E") for n in names) and re.search(r"[0-9.][eE][+-]?[0-9]", text):
        remarks.append(Remark("e_notation"))
    return remarks
