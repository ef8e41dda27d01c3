"""A table of inputs or a sweep, from equation text to a :class:`Batch`: one path for the
command line and the window.

``solve_table`` parses the equation once (with the first row of values it accepts, so a
row whose values give part of the equation no value becomes a ``bad_parameters`` row
rather than stopping the table), sorts the columns into parameters and start values, and
runs :func:`solve_batch`. ``solve_sweep`` does the same for :func:`sweep`. Bad input is a
:class:`ValueError` (an :class:`EquationError` for the equation) with one line naming the
column or the name.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from solvers.batch.driver import solve_batch
from solvers.batch.records import Batch
from solvers.batch.sweep import sweep
from solvers.equation import EquationError, free_names, parse_equation
from solvers.methods.registry import missing_needs
from solvers.units import Measured, convert_parameters, measured

# Columns that give each row its own start values (unless the equation has a parameter
# of that name), and the start value each gives.
START_COLUMNS: Mapping[str, str] = {"x0": "x0", "x1": "x1", "bracket_a": "a", "bracket_b": "b"}
_TRIED_ROWS = 20


@dataclass(frozen=True)
class TableSolve:
    """What a table or a sweep gave: the equation, the batch, and the role of each column."""

    equation: Any
    batch: Batch
    parameters: tuple[str, ...]  # columns bound as parameters
    starts: tuple[str, ...] = ()  # columns used as start values
    constants: Mapping[str, float] = field(default_factory=dict)  # the constants used


def parse_for_rows(text: str, unknown: str | None, rows: Sequence[Mapping[str, Any]],
                   unknown_unit: str | None = None, check_dimensions: bool = True) -> Any:
    """Parse ``text`` with the first of ``rows`` (values by name, a value possibly a
    :class:`solvers.units.Measured`) it accepts; when none, raise the first row's error (a
    syntax or dimension error reads the same for every row)."""
    first: EquationError | None = None
    for row in rows[:_TRIED_ROWS]:
        try:
            return parse_equation(text, unknown=unknown, parameters=dict(row),
                                  unknown_unit=unknown_unit,
                                  check_dimensions=check_dimensions, require_values=True)
        except EquationError as exc:
            first = first or exc
    if first is None:
        raise ValueError("no rows of values")
    raise first


def _start_values(method: str, columns: Mapping[str, np.ndarray], x0: Any, x1: Any,
                  bracket: Any) -> dict[str, Any]:
    x0 = columns.get("x0", x0)
    x1 = columns.get("x1", x1)
    a = columns.get("a", bracket[0] if bracket is not None else None)
    b = columns.get("b", bracket[1] if bracket is not None else None)
    text = {"x0": "x0", "x1": "x1", "bracket": "a bracket (a, b)"}
    missing = missing_needs(method, {"x0": x0 is not None, "x1": x1 is not None,
                                     "bracket": a is not None and b is not None})
    if missing:
        raise ValueError(f"method {method} needs {text[missing[0]]}")
    return {"x0": x0, "x1": x1, "bracket": (a, b) if a is not None and b is not None else None}


def _magnitude(column: Any) -> Any:
    return column.value if isinstance(column, Measured) else column


def _row_value(column: Any, i: int) -> Any:
    """Row ``i`` of a column: a float, or a Measured float when the column has a unit."""
    if isinstance(column, Measured):
        return Measured(float(column.value[i]), column.unit)
    return float(column[i])


def solve_table(
    text: str,
    columns: Sequence[tuple[str, np.ndarray]],
    *,
    unknown: str | None = None,
    constants: Mapping[str, float] | None = None,
    method: str = "newton",
    x0: Any = None,
    x1: Any = None,
    bracket: tuple[float, float] | None = None,
    progress: Callable[[float], Any] | None = None,
    cancel: Callable[[], bool] | None = None,
    unknown_unit: str | None = None,
    check_dimensions: bool = True,
    **settings: Any,
) -> TableSolve:
    """Solve ``text`` for every row of ``columns`` ((name, values) in table order).

    Units: a column's values may be a :class:`solvers.units.Measured` (a header ``D [mm]``),
    a constant a value with a unit; they are converted once and the equation's dimensions
    checked (unless ``check_dimensions`` is False); the unknown, its start values and the
    roots are in ``unknown_unit`` (else the SI unit its dimension implies). Start-value
    columns are in the unknown's unit and carry none of their own.

    A column is a parameter of the equation, or one of :data:`START_COLUMNS` (the row's
    own x0, x1 or bracket end), or an error naming it ("column 3 'Q' is not a parameter
    of the equation"). ``constants`` are parameter values for every row (a name given both
    ways is an error); ``x0``, ``x1``, ``bracket`` start values for rows without their
    own. ``settings``: damping and the stopping rules of :func:`solve_batch`.
    """
    constants = dict(constants or {})
    names = [name for name, _ in columns]
    values = dict(columns)
    for name in names:
        if name in constants:
            raise ValueError(f"'{name}' is both a column and a constant")
    n = len(_magnitude(next(iter(values.values())))) if values else 0
    rows = [{**constants, **{k: _row_value(values[k], i) for k in names}}
            for i in range(min(n, _TRIED_ROWS))]
    how = {"unknown_unit": unknown_unit, "check_dimensions": check_dimensions}
    try:  # the start columns are no parameters, unless the equation has such a name
        equation = parse_for_rows(text, unknown, [
            {k: v for k, v in r.items() if k not in START_COLUMNS} for r in rows], **how)
    except ValueError:
        equation = parse_for_rows(text, unknown, rows, **how)
    parameters = set(equation.names[1:])
    arrays: dict[str, np.ndarray] = {}
    starts: dict[str, np.ndarray] = {}
    for j, name in enumerate(names):
        if name in parameters:
            arrays[name] = values[name]
        elif name in START_COLUMNS:
            if isinstance(values[name], Measured):
                raise ValueError(f"column {j + 1} '{name}' is a start value, in the unknown's "
                                 "unit: its header takes no unit")
            starts[START_COLUMNS[name]] = values[name]
        elif name == equation.unknown:
            raise ValueError(f"column {j + 1} '{name}' is the unknown; give start values as "
                             "x0 (or bracket_a, bracket_b) columns")
        else:
            known = ", ".join(sorted(parameters)) or "none"
            raise ValueError(f"column {j + 1} '{name}' is not a parameter of the equation "
                             f"(its parameters: {known})")
    start = _start_values(method, starts, x0, x1, bracket)
    used = {k: v for k, v in constants.items() if k in parameters}
    batch = solve_batch(equation, method=method, parameters={**used, **arrays},
                        x0=start["x0"], x1=start["x1"], bracket=start["bracket"],
                        progress=progress, cancel=cancel, **settings)
    return TableSolve(equation, batch, tuple(arrays),
                      tuple(n for n in names if n in START_COLUMNS and n not in arrays), used)


def solve_sweep(
    text: str,
    name: str,
    values: np.ndarray,
    *,
    unknown: str | None = None,
    constants: Mapping[str, float] | None = None,
    method: str = "newton",
    x0: float | None = None,
    x1: float | None = None,
    bracket: tuple[float, float] | None = None,
    bounds: tuple[float, float] | None = None,
    progress: Callable[[float], Any] | None = None,
    cancel: Callable[[], bool] | None = None,
    unknown_unit: str | None = None,
    check_dimensions: bool = True,
    **settings: Any,
) -> TableSolve:
    """Sweep parameter ``name`` of ``text`` over ``values`` by continuation (:func:`sweep`).

    ``values``: numbers, or a :class:`solvers.units.Measured` array (``--vary "D=100:200:11
    mm"``), converted once; constants may carry units;
    ``unknown_unit`` and ``check_dimensions`` as in :func:`solve_table`."""
    constants = dict(constants or {})
    if name in constants:
        raise ValueError(f"'{name}' is swept and also given a constant value")
    if name == unknown or name not in free_names(text):
        raise ValueError(f"'{name}' is " + ("the unknown" if name == unknown
                                            else "not a name of the equation"))
    unit = values.unit if isinstance(values, Measured) else ""
    values = np.asarray(_magnitude(values), dtype=np.float64).reshape(-1)
    equation = parse_for_rows(
        text, unknown, [{**constants, name: Measured(float(v), unit) if unit else float(v)}
                        for v in values[:_TRIED_ROWS]], unknown_unit, check_dimensions)
    if unit:  # the continuation binds SI magnitudes (sweep keeps the parameter's SI unit)
        values = np.asarray(convert_parameters({name: Measured(values, unit)})[0][name])
    if name not in equation.names[1:]:
        raise ValueError(f"'{name}' is the unknown; sweep a parameter")
    used = {k: v for k, v in constants.items() if k in equation.names}
    start = _start_values(method, {}, x0, x1, bracket)
    batch = sweep(equation, name, values, method=method, parameters=used, x0=start["x0"],
                  x1=start["x1"], bracket=start["bracket"], bounds=bounds, progress=progress,
                  cancel=cancel, **settings)
    return TableSolve(equation, batch, (name,), (), used)


def solve_inputs(worksheet: Any, progress: Callable[[float], Any] | None = None,
                 cancel: Callable[[], bool] | None = None) -> TableSolve:
    """A worksheet's table of inputs (``worksheet.table``, a
    :class:`solvers.worksheet.TableInputs`) solved with its equation, unknown, parameter
    values (constants for the names the table has no column of) and stopping rules."""
    t = worksheet.table
    if t is None:
        raise ValueError("the worksheet has no table of inputs")
    s = worksheet.settings
    names = {name for name, _ in t.columns}
    common: dict[str, Any] = dict(
        unknown=worksheet.unknown,
        constants={k: v for k, v in worksheet.parameter_values().items() if k not in names},
        method=t.method, x0=t.x0, x1=t.x1, bracket=t.bracket, progress=progress,
        cancel=cancel, xtol=s.xtol, rtol=s.rtol, ftol=s.ftol, max_iter=s.max_iter,
        damping=s.damping, unknown_unit=worksheet.unknown_unit,
        check_dimensions=worksheet.dimension_check)
    columns = [(name, measured(np.asarray(values, dtype=np.float64), t.unit_of(j)))
               for j, (name, values) in enumerate(t.columns)]
    if t.kind == "sweep":
        return solve_sweep(worksheet.equation, columns[0][0], columns[0][1], **common)
    return solve_table(worksheet.equation, columns, **common)
