"""The public record: an Equation parsed and compiled once, bound late to parameter values.

``parse_equation`` (:mod:`solvers.equation.parsing`) reads the text once with parameters
as symbols, differentiates once and compiles f(x, *params) and f'(x, *params) once (a
:class:`_Core`, shared). An
:class:`Equation` is that core with parameter values bound: ``Equation.bind(values)``
gives a new Equation over the same compiled code, with no re-parse and no re-compile.
Values may be numpy arrays: they broadcast against each other and against x, so f over
10^5 rows of values is one vectorised call.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import sympy as sp

from solvers.equation import calculus
from solvers.equation.compile import Code, arguments, bound, floatify_big
from solvers.equation.lexer import EquationError, _fail
from solvers.equation.lines import Definition
from solvers.equation.parser import Check, _Node, snippet
from solvers.equation.typeset import derivative_latex, typeset
from solvers.equation.values import validate_parameters
from solvers.units import Converted, Plan, convert_parameters, read_unit


@dataclass(frozen=True)
class Remark:
    """Something the reader of an equation should know, as a code with its subject.

    Codes: "unknown_has_value" (subject: the unknown), "no_derivative" (subject: the
    reason code of :func:`solvers.equation.calculus.derivative`, or "not_compiled";
    numbers: the limit passed, if any), "degrees", "radians", "angle_units" (subject: the
    names whose angle unit is converted to radians; it replaces "radians"), "kinks",
    "no_dependence" (subject: the unknown), "e_notation", "temperature_offset_sum"
    (subject: a sum as typed that adds a constant to a temperature typed in degC/degF; see
    solvers.units.temperatures). app/documents/words renders them.
    """

    code: str
    subject: str = ""
    numbers: tuple[float, ...] = ()





@dataclass(frozen=True, eq=False)
class _Core:
    """What parse_equation builds once per text and unknown; shared by every binding."""

    text: str
    unknown: str
    parameter_names: tuple[str, ...]  # the order of the compiled code's *params
    symbols: tuple[Any, ...]  # sympy Symbols of the parameters, same order
    x: Any
    symbolic_expr: Any
    symbolic_derivative: Any  # None when no usable symbolic derivative
    f_code: Code  # f(x, *hoisted): the parts with parameters only are arguments
    fprime_code: Code | None  # f'(x, *hoisted)
    checks: tuple[Check, ...]  # parameter-only parts, in parse order
    n_hoisted: int  # how many parameter-only parts f and f' take as arguments
    bind_code: Code | None  # (*params) -> [*hoisted values, *check values]
    sides: tuple[_Node, _Node | None]
    remarks: tuple[Remark, ...]
    cache: dict[str, Any] = field(default_factory=dict)
    units: Plan | None = None  # the units side (solvers.units): unknown unit, dimension check
    # the definition lines before the equation, and where the equation line stands
    definitions: tuple[Definition, ...] = ()
    span: tuple[int, int] | None = None
    # f in the quantities as typed (x the unknown's quantity, not its number in the chosen
    # unit): set only where x_SI = scale*x + offset was substituted into symbolic_expr
    quantity_expr: Any = None


@dataclass(frozen=True, eq=False)
class Equation:
    """A checked equation ``lhs = rhs`` read as ``f(unknown) = lhs - rhs = 0``.

    ``parameters`` maps each parameter to its value (a float, or a float64 array when
    bound to rows). ``f`` and ``fprime`` are the compiled code with these values bound:
    vectorised, real-valued, never raising on domain errors (nan/inf instead). With float
    values a float x gives a float; with array values the result is an array of the
    broadcast shape of x and the values. ``fprime`` is None when no usable symbolic
    derivative exists (``remarks`` says why); Newton then uses a numerical derivative.
    ``expr`` and ``derivative`` have the values substituted (computed on first use; with
    array values they keep the parameters as symbols); ``symbolic_expr`` and
    ``symbolic_derivative`` keep parameters as symbols (what ``latex`` and
    ``derivative_latex`` show).

    Units (:mod:`solvers.units`): a parameter given with a unit is held in ``parameters``
    as its SI base-unit magnitude, and as entered in ``units`` (name ->
    :class:`solvers.units.Converted`). ``unknown_unit`` is the unit f takes x in and every
    root is in (chosen at parse time, or the SI unit the dimensions imply; None without
    units or when x is dimensionless); with a chosen unit, ``symbolic_expr`` and the
    derivative are in terms of x in that unit (x_SI = scale*x + offset substituted).
    """

    text: str
    unknown: str
    parameters: dict[str, Any]
    names: tuple[str, ...]
    f: Callable[[Any], Any] = field(repr=False)
    fprime: Callable[[Any], Any] | None = field(repr=False)
    remarks: tuple[Remark, ...] = ()
    _core: _Core | None = field(default=None, repr=False)
    _cache: dict[str, Any] = field(default_factory=dict, repr=False)
    unknown_unit: str | None = None  # the unit x is given and returned in (None: no unit)
    units: Mapping[str, Converted] = field(default_factory=dict, repr=False)

    def bind(self, values: Mapping[str, Any]) -> Equation:
        """The same compiled equation with new parameter values (floats or numpy arrays).

        A value may carry a unit (``"150 mm"`` or :class:`solvers.units.Measured`): it
        is converted to SI base units here, once, and the dimensions are checked for the
        new units (cached by dimension); the unknown keeps the parse's unit.

        No re-parse, no re-compile: the parameter-only parts are checked on the values
        (one compiled call) and f, f' are the shared code with the values as arguments.
        Raises :class:`EquationError` naming a missing name, a name the equation does not
        have (the unknown included), a value that is not a finite real number (or array of
        them), or a part with no finite real value for these values.
        """
        core = self._core
        assert core is not None
        values, converted = convert_parameters(values)
        given = validate_parameters(values)
        extra = [n for n in given if n not in core.parameter_names]
        if extra:
            what = ("is the unknown" if extra[0] == core.unknown
                    else "does not appear in the equation")
            raise EquationError(f"'{extra[0]}' {what}: it takes no value here")
        # values not given keep the ones bound here (with their units)
        kept = {n: v for n, v in self.parameters.items() if n not in given}
        converted = {**{n: c for n, c in self.units.items() if n in kept}, **converted}
        given = {**kept, **given}
        missing = [n for n in core.parameter_names if n not in given]
        if missing:
            raise EquationError(_no_value(missing, core.unknown))
        return _bind(core, {n: given[n] for n in core.parameter_names}, core.remarks,
                     converted)

    @property
    def unbound(self) -> tuple[str, ...]:
        """The parameters that still have no value (parsed with ``require_values=False``):
        f and f' cannot be evaluated until :meth:`bind` gives them."""
        return tuple(n for n in self._core.parameter_names if n not in self.parameters) \
            if self._core else ()

    @property
    def symbolic_expr(self) -> Any:
        return self._core.symbolic_expr if self._core else None

    @property
    def symbolic_derivative(self) -> Any:
        """d symbolic_expr / d unknown with parameters as symbols (None if unusable)."""
        return self._core.symbolic_derivative if self._core else None

    @property
    def expr(self) -> Any:
        """The expression with parameter values substituted (sympy)."""
        if "expr" not in self._cache:
            self._cache["expr"] = self._substitute(self.symbolic_expr)
        return self._cache["expr"]

    @property
    def derivative(self) -> Any:
        """d expr / d unknown with parameter values substituted; None when fprime is None."""
        if "derivative" not in self._cache:
            d = self.symbolic_derivative
            self._cache["derivative"] = None if d is None else self._substitute(d)
        return self._cache["derivative"]

    def _substitute(self, expr: Any) -> Any:
        core = self._core
        given = self.parameters
        values = {s: sp.Float(given[n]) for n, s in zip(core.parameter_names, core.symbols,
                                                        strict=True)
                  if given.get(n).__class__ is float}
        return floatify_big(expr.xreplace(values)) if values else expr

    @property
    def latex(self) -> str:
        """The typeset equation (mathtext-safe LaTeX, no $): ``lhs = rhs`` or ``expr = 0``,
        in the order typed, parameters by name, ``ln`` for the natural log."""
        cache = self._core.cache
        if "latex" not in cache:
            lhs, rhs = self._core.sides
            span = self._core.span
            text = self.text if span is None else self.text[span[0]:span[1]]
            cache["latex"] = typeset(text, lhs, rhs)
        return cache["latex"]

    # -- definitions (lines ``name = expression`` before the equation) -------------------------
    @property
    def definitions(self) -> tuple[str, ...]:
        """The names defined on the lines before the equation, in the order written."""
        return tuple(d.name for d in self._core.definitions) if self._core else ()

    @property
    def definition_records(self) -> tuple[Definition, ...]:
        """Each definition: ``name``, ``expr`` (sympy, parameters and the unknown as
        symbols, earlier definitions written out) and its ``start``/``end`` in the text."""
        return self._core.definitions if self._core else ()

    @property
    def definitions_latex(self) -> tuple[str, ...]:
        """The typeset form of each definition line (``name = expression``), in order."""
        cache = self._core.cache
        if "dlines" not in cache:
            cache["dlines"] = tuple(
                typeset(self.text[d.start:d.end], _Node(sp.Symbol(d.name), None), d.node)
                for d in self._core.definitions)
        return cache["dlines"]

    def definition_values(self, x: Any) -> dict[str, Any]:
        """Each defined quantity at the unknown's value ``x`` (a float gives floats; an
        array, or array parameters, give arrays), computed with the parameter values bound
        here. ``x`` is in the unknown's unit, as f takes it; the values are in SI (the
        parameters are bound in SI). NaN where a definition has no real value there;
        never raises on values; :class:`EquationError` while a parameter has no value."""
        core = self._core
        if core is None or not core.definitions:
            return {}
        if self.unbound:
            raise EquationError(_no_value(self.unbound, core.unknown)
                                + "; give them with Equation.bind")
        code = core.cache.get("defs")
        if code is None:
            exprs = [d.expr for d in core.definitions]
            plan = core.units
            if plan is not None and (plan.scale != 1.0 or plan.offset != 0.0):
                # x is in the unknown's unit, the definitions in SI: read x_SI as f does
                in_si = {core.x: plan.scale * core.x + plan.offset}
                exprs = [e.xreplace(in_si) for e in exprs]
            code = core.cache["defs"] = Code(exprs, [core.x], core.symbols, many=True)
        args = [np.float64(v) if v.__class__ is float else v for v in self.parameters.values()]
        with np.errstate(all="ignore"):
            out = code.vector(np.asarray(x, dtype=np.float64), *args)
        scalar = np.ndim(x) == 0 and all(np.ndim(v) == 0 for v in args)
        values = {}
        for d, v in zip(core.definitions, out, strict=True):
            arr = np.asarray(v, dtype=np.float64)
            values[d.name] = float(arr) if scalar else arr
        return values

    def definition_units(self, derived: bool = False) -> dict[str, str | None]:
        """The SI unit of each defined quantity, as :meth:`definition_values` gives it
        (``m^2``; '' when dimensionless; None where a definition mixes dimensions or the
        dimension check is off), from the parameters' units and the unknown's. Empty when
        the equation has no units at all (plain numbers: the values are in whatever
        consistent units were typed). ``derived``: text for people, with a derived unit for
        the compositions engineers use (W/(m^2*K)); files keep base units."""
        key = f"definition_units_{derived}"
        hit = self._cache.get(key)
        if hit is None:
            hit = self._cache[key] = self._definition_units(derived)
        return dict(hit)

    def _definition_units(self, derived: bool) -> dict[str, str | None]:
        core = self._core
        if core is None or not core.definitions or (not self.units and not self.unknown_unit):
            return {}
        if (core.units is not None and not core.units.check_dimensions) or any(
                r.code == "unknown_dimension_free" for r in self.remarks):
            # the unknown's dimension was never worked out: no unit can be claimed
            return {d.name: None for d in core.definitions}
        from solvers.units import read_unit, unit_text
        from solvers.units.dimensions import dimensions_of

        by_name = dict(zip(core.parameter_names, core.symbols, strict=True))
        dims = {by_name[n]: c.dimension for n, c in self.units.items() if n in by_name}
        if self.unknown_unit:
            try:
                dims[core.x] = read_unit(self.unknown_unit).dimension
            except EquationError:
                # an inferred unit with fractional powers (m^1.14/s^0.38) is not unit
                # text pint reads back: no unit can be claimed for what uses x
                return {d.name: None for d in core.definitions}
        found = dimensions_of([d.expr for d in core.definitions], dims)
        return {d.name: None if dim is None else unit_text(dim, derived=derived)
                for d, dim in zip(core.definitions, found, strict=True)}

    def in_kelvin(self, x: float) -> float | None:
        """``x`` (in the unknown's unit) as a thermodynamic temperature in K when the
        unknown is a temperature (its unit, chosen or implied, a temperature: K, degC,
        degF, degR), else None. A root below 0 K is no temperature: the documents say so
        (a correlation written for degC read in kelvin converges there)."""
        core = self._core
        plan = None if core is None else core.units
        if plan is None or not self.unknown_unit:
            return None
        try:
            unit = read_unit(self.unknown_unit)
        except EquationError:
            return None
        if unit.dimension != (("[temperature]", 1.0),):
            return None
        return float(x) * plan.scale + plan.offset

    def residual_unit(self, derived: bool = False) -> str | None:
        """The SI unit of f = lhs - rhs (what every f(x) value, the residual, is in):
        ``kg*m^2/s^3`` for a heat balance (``W`` with ``derived``, text for people); ''
        when f is dimensionless; None when it cannot be claimed: no units at all (plain
        numbers are in whatever consistent units were typed), the dimension check off,
        or the unknown's dimension never worked out. f' is this unit per the unknown's
        unit (x in ``unknown_unit``)."""
        key = f"residual_unit_{derived}"
        if key not in self._cache:
            self._cache[key] = self._residual_unit(derived)
        return self._cache[key]

    def _residual_unit(self, derived: bool) -> str | None:
        core = self._core
        plan = None if core is None else core.units
        if plan is None or not plan.check_dimensions or (
                not self.units and not self.unknown_unit) or any(
                r.code == "unknown_dimension_free" for r in self.remarks):
            return None
        from solvers.units import read_unit, unit_text
        from solvers.units.dimensions import dimensions_of

        dims = {plan.symbols[n]: c.dimension for n, c in self.units.items()
                if n in plan.symbols}
        if self.unknown_unit:
            try:
                dims[plan.unknown] = read_unit(self.unknown_unit).dimension
            except EquationError:  # fractional powers pint does not read back
                return None
        found = dimensions_of([plan.sides[0]], dims)[0]
        return None if found is None else unit_text(found, derived=derived)

    @property
    def quantity_derivative(self) -> Any:
        """df/dx in the quantities as typed, parameters as symbols (None if unusable).

        Where the unknown has a unit, :attr:`symbolic_derivative` is f' of x's number in
        that unit (what Newton evaluates): x_SI = scale*x + offset written in, and the
        scale brought out by the chain rule (1e15 in f' of a bore in mm that goes as
        D^-5). Every other symbol stands for a quantity, so this is f differentiated as
        the equation was typed, x standing for its quantity too: no unit's constants,
        the same formula whatever unit x is asked in. Without a unit on x it is
        :attr:`symbolic_derivative`.
        """
        core = self._core
        if core is None or core.quantity_expr is None or self.symbolic_derivative is None:
            return self.symbolic_derivative
        if "dquantity" not in core.cache:
            core.cache["dquantity"] = calculus.derivative(core.quantity_expr, core.x)[0]
        return core.cache["dquantity"]

    @property
    def derivative_latex(self) -> str:
        """LaTeX (mathtext-safe) of the derivative in the quantities as typed
        (:attr:`quantity_derivative`: never the unknown unit's scale factors), parameters by
        name; '' if none, or if it is over the typesetting budget (MAX_TYPESET_NODES nodes,
        MAX_TYPESET_CHARS characters of solvers.equation.typeset): see
        :attr:`derivative_too_large`."""
        cache = self._core.cache
        if "dlatex" not in cache:
            cache["dlatex"] = derivative_latex(self.quantity_derivative)
        return cache["dlatex"]

    @property
    def derivative_too_large(self) -> bool:
        """True when there is a symbolic derivative but it is over the typesetting budget."""
        return self.symbolic_derivative is not None and not self.derivative_latex

    def residual_mp(self, x: Any, dps: int = 50) -> Any:
        """f(x) in ``dps`` significant digits with mpmath (an ``mpmath.mpf``).

        Uses the same double values of constants and parameters as ``f`` (so it checks
        the equation that was solved; constant parts are the doubles the parser folded,
        parts with parameters are evaluated at ``dps`` digits from the parameters'
        doubles); x may be a float, a string or an mpf. NaN when the
        value is not real or not defined, or when the parameters are arrays. Meant for
        checking a root: f should be finite near x.
        """
        import mpmath

        core = self._core
        fn = core.cache.get("mp")
        if fn is None:  # fixed argument names: no user name in the code
            args = arguments(1, len(core.symbols))
            rename = dict(zip((core.x, *core.symbols), args, strict=True))
            fn = sp.lambdify(args, floatify_big(core.symbolic_expr.xreplace(rename)),
                             modules="mpmath")
            core.cache["mp"] = fn
        values = list(self.parameters.values())
        if any(v.__class__ is not float for v in values):
            return mpmath.mpf("nan")
        with mpmath.workdps(dps):
            try:
                r = fn(mpmath.mpf(x), *[mpmath.mpf(v) for v in values])
            except (ArithmeticError, ValueError):
                return mpmath.mpf("nan")
            if isinstance(r, mpmath.mpc):
                return mpmath.mpf(r.real) if r.imag == 0 else mpmath.mpf("nan")
            return +mpmath.mpf(r)


# ---------------------------------------------------------------------------------------------
# The checks of parameter-only parts
# ---------------------------------------------------------------------------------------------


# Each check kind: does it pass on float values, and on array values (every row)?
_PASSES: dict[str, Callable[..., bool]] = {
    "value": lambda v: v - v == 0.0,
    "divisor": lambda v: v != 0.0,
    "zero_power": lambda b, e: not (b == 0.0 and e < 0.0),
}
_ROWS_FAIL: dict[str, Callable[..., Any]] = {
    "value": lambda v: ~np.isfinite(v),
    "divisor": lambda v: v == 0.0,
    "zero_power": lambda b, e: (b == 0.0) & (e < 0.0),
}


def _check_message(check: Check, text: str, values: tuple[Any, ...]) -> str:
    where = snippet(text, check.start, check.end)
    if check.kind == "divisor":
        return "division by zero"
    if check.kind == "zero_power":
        return f"'{where}' divides by zero"
    v = values[0]
    return f"'{where}' has no real value" if v != v else f"'{where}' overflows double precision"


def _run_checks(core: _Core, values: tuple[Any, ...], scalar: bool) -> tuple[Any, ...]:
    """The parameter-only parts f and f' take, computed once for ``values``; raises
    EquationError at the first checked part that fails on them."""
    code = core.bind_code
    if code is None:
        return ()
    k = core.n_hoisted
    if scalar and code._scalar is not False:
        # the math path pays off from the second binding on: compile it then, not in the parse
        fn = code._scalar if code._scalar is not None or not core.cache.get("bound") \
            else code.scalar()
        core.cache["bound"] = True
        if fn:
            try:
                out = fn(*values)
                i = k
                for check in core.checks:
                    n = len(check.exprs)
                    if not _PASSES[check.kind](*out[i:i + n]):
                        break
                    i += n
                else:
                    return tuple(float(v) for v in out[:k])
            except (ArithmeticError, ValueError, TypeError):
                pass
    with np.errstate(all="ignore"):  # numpy scalars: overflow gives inf, not OverflowError
        out = code.vector(*(np.float64(v) if v.__class__ is float else v for v in values))
    i = k
    for check in core.checks:
        n = len(check.exprs)
        parts = [np.asarray(v, dtype=np.float64) for v in out[i:i + n]]
        bad = np.asarray(_ROWS_FAIL[check.kind](*parts))
        i += n
        if bad.any():
            row = int(np.flatnonzero(bad)[0]) if bad.ndim else None
            first = tuple(np.broadcast_to(p, bad.shape).flat[row] if row is not None
                          else float(p) for p in parts)
            message = _check_message(check, core.text, first)
            err = _fail(core.text, message, check.start)
            suffix = " (with the given parameter values"
            suffix += f", row {row})" if row is not None else ")"
            raise EquationError(f"{err}{suffix}", err.position)
    if scalar:
        return tuple(float(v) for v in out[:k])
    return tuple(np.asarray(v, dtype=np.float64) for v in out[:k])


def _angle_remarks(remarks: tuple[Remark, ...], unknown: str, unknown_unit: str | None,
                   used: Mapping[str, Converted]) -> tuple[Remark, ...]:
    """"radians" (multiply by deg for degrees) is advice for plain numbers: where an angle
    carries its unit (th in deg, a parameter "30 deg") it is converted to radians already,
    and multiplying by deg as well would take the sine of an angle 57.3 times too small.
    Then "angle_units" names those angles instead."""
    if not any(r.code == "radians" for r in remarks):
        return remarks
    from solvers.units.si_text import is_angle

    angled = [unknown] if unknown_unit and is_angle(unknown_unit) else []
    angled += [n for n, c in used.items() if isinstance(c.unit, str) and is_angle(c.unit)]
    if not angled:
        return remarks
    return tuple(r for r in remarks if r.code != "radians") + (
        Remark("angle_units", ", ".join(angled)),)


def _gravity_remarks(core: _Core, values: Mapping[str, Any],
                     used: Mapping[str, Converted]) -> tuple[Remark, ...]:
    """A g_c typed as a bare number beside values with units (32.174 in F = m*a/gc with m
    in lbm: 32.174 times too small; see solvers.units.gravity); the equation's numbers
    are read from its tokens once per parse."""
    from solvers.units.gravity import gravity_remarks

    tokens = core.cache.get("tokens")
    if tokens is None:
        from solvers.equation.lexer import tokenize

        tokens = core.cache["tokens"] = tuple(t for t in tokenize(core.text)
                                              if t.kind == "num")
    return tuple(Remark(*r) for r in gravity_remarks(values, used, tokens))


def _bind(core: _Core, values: dict[str, Any], remarks: tuple[Remark, ...],
          converted: Mapping[str, Converted] | None = None) -> Equation:
    unknown_unit = None
    used: dict[str, Converted] = {}
    if core.units is not None:
        used = {n: c for n, c in (converted or {}).items() if n in values}
        resolution = core.units.resolve(used)
        unknown_unit = resolution.unknown_unit
        remarks = _angle_remarks(remarks, core.unknown, unknown_unit, used) + tuple(
            Remark(*r) for r in resolution.remarks)
        if used or core.units.unit is not None:
            remarks += _gravity_remarks(core, values, used)
    args = tuple(values.values())
    scalar = all(v.__class__ is float for v in args)
    rows: tuple[int, ...] = ()
    if not scalar:
        try:
            rows = np.broadcast_shapes(*(np.shape(v) for v in args))
        except ValueError:
            shapes = ", ".join(f"{n} {np.shape(v)}" for n, v in values.items()
                               if v.__class__ is not float)
            raise EquationError(f"parameter rows do not broadcast together: {shapes}") from None
    hoisted = _run_checks(core, args, scalar)
    equation = Equation(
        text=core.text,
        unknown=core.unknown,
        parameters=values,
        names=(core.unknown, *core.parameter_names),
        f=bound(core.f_code, hoisted, rows),
        fprime=None if core.fprime_code is None else bound(core.fprime_code, hoisted, rows),
        remarks=remarks,
        _core=core,
        unknown_unit=unknown_unit,
        units=used,
    )
    if not scalar:
        # the numpy path's values (arrays of the rows): solve_batch takes f's parameter
        # parts from here instead of computing them again (solvers.batch.rows.Rows)
        equation._cache["hoisted"] = hoisted
    return equation


def _no_value(missing: Sequence[str], unknown: str) -> str:
    return ("no value for " + ", ".join(f"'{n}'" for n in missing)
            + f" (the unknown is '{unknown}')")
