"""Text -> :class:`System`: n equations in n unknowns, parsed, differentiated and compiled once.

The lines are read as for one equation (:mod:`solvers.equation.lines`): ``;`` or a line
break ends a line, a name defined on a line is written out into every later line. Which
lines are definitions:

* with ``unknowns`` given: every line ``name = expression`` whose name is neither an
  unknown nor a parameter (its right side may use the unknowns: ``v1 = Q1/A1``);
* without: every line ``name = expression`` whose name is not a parameter and has not
  appeared on an earlier line, and whose right side uses only parameters, constants and
  earlier definitions. The unknowns are then the names left without a value.

Every other line is an equation (``lhs = rhs``, or an expression meaning ``expr = 0``).
F and the symbolic Jacobian (the chain rule of :mod:`solvers.equation.calculus`) are
compiled once as functions of (x..., *params); where no symbolic Jacobian can be built,
``J`` is forward differences (``System.jacobian_kind`` says which).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import sympy as sp

from solvers.equation import calculus
from solvers.equation.compile import Code, floatify_big
from solvers.equation.lexer import CONSTANT_NAMES, EquationError, _fail
from solvers.equation.lines import Line, Reading, check_shadowing, read_lines
from solvers.equation.parser import _is_bad
from solvers.equation.record import _PASSES, Remark, _check_message
from solvers.equation.values import misnamed_hint, validate_parameters
from solvers.systems import units as system_units
from solvers.systems.structure import Block, block_order
from solvers.units import Converted, convert_parameters

_FD_STEP = math.sqrt(np.finfo(float).eps)  # forward-difference step, relative (common practice)


@dataclass(frozen=True, eq=False)
class System:
    """A checked square system F(x) = 0 with its parameter values bound.

    ``unknowns`` (names, the order of x), ``definitions`` (names defined on the lines),
    ``equations`` (each equation line as typed), ``exprs`` (sympy, lhs - rhs, parameters
    as symbols, definitions written out), ``jacobian_exprs`` (rows of sympy entries, or
    None), ``incidence`` (which unknowns each equation uses), ``blocks`` (the
    block-triangular order: (equation indices, unknown indices) solvable one after
    another), ``parameters`` (name -> float, in SI base units when given with a unit).

    Units: ``unknown_units`` (name -> the unit each unknown is given and returned in, or
    None when it has none), ``parameter_units`` (the parameters given with a unit, as
    entered and in SI), ``check_dimensions`` (whether the dimensional check was asked for;
    it runs when any parameter or unknown has a unit) and ``remarks`` (codes, as for one
    equation: ``dimensions_unchecked``, ``absolute_temperature``,
    ``system_dimension_free``, ``unknown_dimension_fractional``).

    ``F(x)`` -> float array (n,), ``J(x)`` -> float array (n, n), ``x`` an array-like in
    the order of ``unknowns``: real arithmetic, NaN/inf where undefined, never raising on
    values. Each call of ``F`` or ``J`` is one evaluation (a difference Jacobian is n + 1).
    """

    text: str
    unknowns: tuple[str, ...]
    definitions: tuple[str, ...]
    equations: tuple[str, ...]
    exprs: tuple[Any, ...]
    jacobian_exprs: tuple[tuple[Any, ...], ...] | None
    incidence: tuple[tuple[bool, ...], ...]
    blocks: tuple[Block, ...]
    parameters: Mapping[str, float]
    _f_code: Code = field(repr=False)
    _j_code: Code | None = field(repr=False)
    _symbols: tuple[Any, ...] = field(repr=False)
    _xs: tuple[Any, ...] = field(repr=False)
    _definition_exprs: tuple[Any, ...] = field(repr=False, default=())
    # the same before each unknown's x_SI = scale*x + offset went in (x standing for x_SI):
    # what the dimensions are read from (an offset of degC is a bare number added to K)
    _si_exprs: tuple[Any, ...] = field(repr=False, default=())
    _si_definition_exprs: tuple[Any, ...] = field(repr=False, default=())
    unknown_units: Mapping[str, str | None] = field(default_factory=dict)
    parameter_units: Mapping[str, Converted] = field(default_factory=dict)
    check_dimensions: bool = True
    remarks: tuple[Any, ...] = ()
    _cache: dict[str, Any] = field(default_factory=dict, repr=False)

    @property
    def jacobian_kind(self) -> str:
        """"symbolic" (compiled from sympy) or "differences" (forward differences)."""
        return "symbolic" if self._j_code is not None else "differences"

    def F(self, x: Any) -> np.ndarray:
        """The residuals lhs - rhs of every equation at ``x`` (float array of shape (n,))."""
        return _call(self._f_code, x, self.parameters, len(self.unknowns))

    def J(self, x: Any) -> np.ndarray:
        """dF_i/dx_j at ``x`` (float array (n, n)): symbolic where it could be built, else
        forward differences with the step sqrt(eps)*max(|x_j|, 1)."""
        n = len(self.unknowns)
        if self._j_code is not None:
            return _call(self._j_code, x, self.parameters, n * n).reshape(n, n)
        return differences(self.F, np.asarray(x, dtype=np.float64))

    def definition_values(self, x: Any) -> dict[str, float]:
        """Each defined quantity at ``x`` (NaN where it has no real value there)."""
        if not self.definitions:
            return {}
        code = self._cache.get("defs")
        if code is None:
            code = self._cache["defs"] = Code(self._definition_exprs, self._xs, self._symbols,
                                              many=True)
        values = _call(code, x, self.parameters, len(self.definitions))
        return {name: float(v) for name, v in zip(self.definitions, values, strict=True)}

    def definition_units(self, derived: bool = False) -> dict[str, str | None]:
        """The SI unit of each defined quantity, as :meth:`definition_values` gives it
        (``m^2``; '' when dimensionless; None where a definition mixes dimensions, the
        dimension check is off or an unknown's dimension is free). Empty when the system
        has no units at all. ``derived``: text for people (W/(m^2*K)); files keep base
        units."""
        key = f"definition_units_{derived}"  # the dimension walk once per system and style
        if key not in self._cache:
            self._cache[key] = self._definition_units(derived)
        return dict(self._cache[key])

    def _definition_units(self, derived: bool) -> dict[str, str | None]:
        if not self.definitions:
            return {}
        units = self._units_of(self._si_definition_exprs or self._definition_exprs, derived)
        return {} if units is None else dict(zip(self.definitions, units, strict=True))

    def residual_units(self, derived: bool = False) -> tuple[str | None, ...]:
        """The SI unit of each equation's residual lhs - rhs, as :meth:`F` gives it, in
        the order of ``equations`` (``m^3/s`` for a junction's flow balance; '' when
        dimensionless; None where it cannot be claimed: the dimension check off, an
        unknown's dimension free). Empty when the system has no units at all: its
        residuals are in whatever consistent units were typed. ``derived`` as for
        :meth:`definition_units`."""
        key = f"residual_units_{derived}"
        if key not in self._cache:
            self._cache[key] = self._units_of(self._si_exprs or self.exprs, derived) or ()
        return tuple(self._cache[key])

    def _units_of(self, exprs: Any, derived: bool) -> tuple[str | None, ...] | None:
        """The SI unit of each of ``exprs`` (in the unknowns and parameters), None for
        a system without units."""
        if not self.parameter_units and not any(self.unknown_units.values()):
            return None
        if not self.check_dimensions or any(
                getattr(r, "code", "") == "system_dimension_free" for r in self.remarks):
            return (None,) * len(exprs)
        from solvers.units import read_unit, unit_text
        from solvers.units.dimensions import dimensions_of

        dims = {s: self.parameter_units[s.name].dimension for s in self._symbols
                if s.name in self.parameter_units}
        for x in self._xs:  # x in its unit: the same dimension as in SI
            unit = self.unknown_units.get(x.name)
            if unit:
                try:
                    dims[x] = read_unit(unit).dimension
                except EquationError:  # fractional powers: no unit can be claimed
                    return (None,) * len(exprs)
        found = dimensions_of(exprs, dims)
        return tuple(None if dim is None else unit_text(dim, derived=derived)
                     for dim in found)


def differences(F: Any, x: np.ndarray) -> np.ndarray:
    """Forward-difference Jacobian of ``F`` at ``x`` (n extra calls of F)."""
    f0 = F(x)
    n = x.size
    jac = np.empty((f0.size, n))
    for j in range(n):
        h = _FD_STEP * max(abs(x[j]), 1.0)
        xh = x.copy()
        xh[j] += h
        jac[:, j] = (F(xh) - f0) / (xh[j] - x[j])
    return jac


def _call(code: Code, x: Any, parameters: Mapping[str, float], size: int) -> np.ndarray:
    args = [float(v) for v in np.asarray(x, dtype=np.float64).ravel()]
    values = list(parameters.values())
    scalar = code.scalar()
    if scalar:
        try:
            out = scalar(*args, *values)
            return np.array(out, dtype=np.float64).reshape(size)
        except (ArithmeticError, ValueError, TypeError):
            pass  # a domain error on the math path: the numpy path gives the nan/inf
    with np.errstate(all="ignore"):
        out = code.vector(*(np.float64(a) for a in args), *(np.float64(v) for v in values))
    return np.array([float(np.asarray(v, dtype=np.float64)) for v in out], dtype=np.float64)


# ---------------------------------------------------------------------------------------------
# Parsing
# ---------------------------------------------------------------------------------------------


def _names_in(line: Line) -> list[str]:
    from solvers.equation.functions import FUNCTIONS
    from solvers.equation.parser import NAMES_TOO

    tokens = line.tokens
    return [t.text for i, t in enumerate(tokens[2:], start=2)
            if t.kind == "name" and t.text not in CONSTANT_NAMES
            and not (t.text in FUNCTIONS and i + 1 < len(tokens) and tokens[i + 1].text == "(")
            and not (t.text in FUNCTIONS and t.text not in NAMES_TOO)]


def _classifier(values: Mapping[str, Any], unknowns: Sequence[str] | None) -> Any:
    defined: set[str] = set()
    seen: set[str] = set()

    def is_definition(i: int, line: Line, lines: list[Line]) -> bool:
        name = line.defines()
        names = [t.text for t in line.tokens if t.kind == "name"]
        verdict = False
        if name is not None and name not in values:
            if unknowns is not None:
                verdict = name not in unknowns
            else:
                verdict = name not in seen and all(
                    n in values or n in defined for n in _names_in(line))
        seen.update(names)
        if verdict:
            defined.add(name)  # type: ignore[arg-type]
        return verdict

    return is_definition


def _check_unknowns(unknowns: Any) -> tuple[str, ...] | None:
    if unknowns is None:
        return None
    if isinstance(unknowns, str) or not isinstance(unknowns, Sequence):
        raise EquationError("the unknowns must be a list of names")
    out = []
    for u in unknowns:
        if not isinstance(u, str):
            raise EquationError(f"an unknown must be a name, got {type(u).__name__}")
        if u in out:
            raise EquationError(f"the unknown '{u}' is named twice")
        out.append(u)
    return tuple(out)


def _choose_unknowns(reading: Reading, given: tuple[str, ...] | None,
                     values: Mapping[str, Any]) -> tuple[str, ...]:
    names = reading.names
    if given is None:
        chosen = tuple(n for n in names if n not in values)
        if not chosen:
            raise EquationError("no unknowns: every name has a value; say which to solve for")
        return chosen
    for u in given:
        if u not in names:
            raise EquationError(f"the unknown '{u}' does not appear in the equations")
    missing = [n for n in names if n not in given and n not in values]
    if missing:
        raise reading.numbered(_fail(
            reading.text, "no value for " + ", ".join(f"'{n}'" for n in missing)
            + " (the unknowns are " + ", ".join(given) + ")"
            + misnamed_hint(missing, values, names),
            reading.first_pos[missing[0]]))
    return given


def _count_message(n_eq: int, unknowns: tuple[str, ...]) -> str:
    n = len(unknowns)
    listed = ", ".join(unknowns)
    more = n_eq - n
    if more > 0:
        return (f"{n_eq} equations in {n} unknown{'s' if n != 1 else ''} ({listed}): "
                f"{more} equation{'s' if more != 1 else ''} more than unknowns")
    return (f"{n_eq} equation{'s' if n_eq != 1 else ''} in {n} unknowns ({listed}): "
            f"{-more} equation{'s' if more != -1 else ''} fewer than unknowns")


def _run_checks(reading: Reading, unknowns: tuple[str, ...], symbols: tuple[Any, ...],
                values: tuple[float, ...]) -> None:
    """The parts with parameters only must have finite real values (as for one equation)."""
    checks = [c for c in reading.checks if not c.names & set(unknowns)]
    if not checks:
        return
    code = Code([e for c in checks for e in c.exprs], [], symbols, many=True)
    with np.errstate(all="ignore"):
        out = code.vector(*(np.float64(v) for v in values))
    i = 0
    for check in checks:
        n = len(check.exprs)
        parts = tuple(float(np.asarray(v, dtype=np.float64)) for v in out[i:i + n])
        i += n
        if not _PASSES[check.kind](*parts):
            message = _check_message(check, reading.text, parts)
            err = reading.numbered(_fail(reading.text, message, check.start))
            raise EquationError(f"{err} (with the given parameter values)", err.position)


def parse_system(text: str, unknowns: Sequence[str] | None = None,
                 parameters: Mapping[str, Any] | None = None, *,
                 unknown_units: Mapping[str, str | None] | None = None,
                 check_dimensions: bool = True) -> System:
    """Read, check and compile a system of equations; see the module docstring.

    ``parameters`` maps names to numbers, or to numbers with a unit (``"150 mm"``,
    :class:`solvers.units.Measured`, a pair ``(0.15, "m")``), converted once to SI base
    units here (one value each; entries the text does not use are ignored). ``unknowns``:
    the names to solve for, in the order of x; when omitted, every name of the equations
    without a value, in order of first appearance. ``unknown_units`` (name -> unit text)
    chooses the unit an unknown's start value and root are in; the others are in the SI
    unit of the dimension the equations imply. When any parameter or unknown has a unit,
    every line is checked dimensionally (both sides, every term of a sum, dimensionless
    function arguments and exponents) unless ``check_dimensions`` is False.

    Raises :class:`EquationError` (one line, with ``.position`` where it applies) for text
    that does not parse, a bad definition, more or fewer equations than unknowns (saying
    which), an equation with none of the unknowns, an unknown in no equation, a part
    with no finite real value for the parameter values, a unit that does not read, a
    dimensional mismatch (naming the part as typed, the two dimensions, the line and
    column) or an unknown's unit that does not fit the dimension the equations imply.
    """
    parameters, converted = convert_parameters(parameters)
    values = validate_parameters(parameters)
    for name, value in values.items():
        if value.__class__ is not float:
            raise EquationError(f"parameter {name!r}: a system takes one number per "
                                "parameter, not an array")
    given = _check_unknowns(unknowns)
    reading = read_lines(text, _classifier(values, given))
    check_shadowing(reading, values, given or ())
    chosen = _choose_unknowns(reading, given, values)
    chosen_units = system_units.read_unknown_units(unknown_units, chosen)
    if not reading.equations:
        raise EquationError("no equation: every line is a definition")
    if len(reading.equations) != len(chosen):
        raise EquationError(_count_message(len(reading.equations), chosen))
    xs = tuple(sp.Symbol(n, real=True) for n in chosen)
    param_names = tuple(n for n in reading.names if n not in chosen)
    symbols = tuple(sp.Symbol(n, real=True) for n in param_names)
    bound = tuple(values[n] for n in param_names)
    units = system_units.resolve(reading, xs, dict(zip(param_names, symbols, strict=True)),
                                 converted, chosen_units, check_dimensions)
    # each unknown in its unit: x_SI = scale*x + offset, constants compiled in once
    in_si = {x: units.conversions[x.name][0] * x + units.conversions[x.name][1]
             for x in xs if x.name in units.conversions}
    exprs, si_exprs = [], []
    for eq in reading.equations:
        expr = floatify_big(eq.lhs.expr if eq.rhs is None else eq.lhs.expr - eq.rhs.expr)
        if not isinstance(expr, sp.Basic) or _is_bad(expr):
            raise reading.numbered(_fail(text, "this equation has no finite real value",
                                         eq.start))
        if not expr.free_symbols & set(xs):
            raise reading.numbered(_fail(text, "this equation holds none of the unknowns ("
                                         + ", ".join(chosen) + ")", eq.start))
        si_exprs.append(expr)
        exprs.append(expr.xreplace(in_si) if in_si else expr)
    incidence = tuple(tuple(x in e.free_symbols for x in xs) for e in exprs)
    for j, name in enumerate(chosen):
        if not any(row[j] for row in incidence):
            raise EquationError(f"the unknown '{name}' appears in no equation "
                                "(only in a definition no equation uses)")
    _run_checks(reading, chosen, symbols, bound)
    jac = calculus.jacobian(exprs, xs)
    try:
        f_code = Code(exprs, xs, symbols, many=True)
        j_code = None if jac is None else Code([e for row in jac for e in row], xs, symbols,
                                               many=True)
    except Exception as err:  # noqa: BLE001 - one line rather than a traceback
        raise EquationError(f"the equations cannot be compiled ({type(err).__name__})",
                            None) from None
    return System(
        text=text, unknowns=chosen,
        definitions=tuple(d.name for d in reading.definitions),
        equations=tuple(" ".join(text[e.start:e.end].split()) for e in reading.equations),
        exprs=tuple(exprs),
        jacobian_exprs=None if jac is None else tuple(tuple(r) for r in jac),
        incidence=incidence, blocks=block_order(incidence),
        parameters=dict(zip(param_names, bound, strict=True)),
        _f_code=f_code, _j_code=j_code, _symbols=symbols, _xs=xs,
        _definition_exprs=tuple(d.expr.xreplace(in_si) if in_si else d.expr
                                for d in reading.definitions),
        _si_exprs=tuple(si_exprs),
        _si_definition_exprs=tuple(d.expr for d in reading.definitions),
        unknown_units=units.units,
        parameter_units={n: c for n, c in converted.items() if n in param_names},
        check_dimensions=bool(check_dimensions),
        remarks=units.remarks + _gravity(text, param_names, values, converted, chosen_units))


def _gravity(text: str, names: Sequence[str], values: Mapping[str, Any],
             converted: Mapping[str, Any], chosen_units: Mapping[str, Any]
             ) -> tuple[Remark, ...]:
    """A g_c typed as a bare number beside values with units, as for one equation (see
    solvers.units.gravity): only where some parameter or unknown has a unit."""
    used = [n for n in names if n in converted]
    if not used and not chosen_units:
        return ()
    from solvers.equation.lexer import tokenize
    from solvers.units.gravity import gravity_remarks

    tokens = [t for t in tokenize(text) if t.kind == "num"]
    return tuple(Remark(*r) for r in gravity_remarks(
        {n: values[n] for n in names}, used, tokens))
