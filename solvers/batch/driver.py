"""solve_batch: one method of the registry over rows of inputs, in chunks."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

import numpy as np

from solvers.batch import bracketing
from solvers.batch.open import newton, secant
from solvers.batch.records import Batch, converged_of
from solvers.batch.rows import (
    NOT_FIN,
    Outcome,
    Rows,
    Scratch,
    Work,
    done_with,
    make_poll,
    scratch,
)
from solvers.equation import EquationError
from solvers.methods.common import (
    DEFAULT_FTOL,
    DEFAULT_MAX_ITER,
    DEFAULT_RTOL,
    DEFAULT_XTOL,
    _check_settings,
)
from solvers.methods.registry import method_spec
from solvers.units import convert_parameters

CHUNK_ROWS = 16_384
"""Rows processed together: bounded memory however many rows there are. Small enough
that a kernel's few dozen arrays (131 kB each) stay in the processor's cache and are
reused by the allocator from iteration to iteration (arrays of 10^5 rows come back as
fresh pages every time: page faults cost more than the arithmetic), and that f on a
chunk is one call of the compiled code (f is evaluated in blocks of 8192 rows from 16,384
rows on: 10^5 rows in chunks of 20,000 took three calls each, the last one short), large
enough that numpy's per-call cost is spread over many rows (a race as in bench_batch.py,
Newton race with no page faults, 10^5 rows: 1.03-1.04x scipy's array newton at 16,384,
1.03-1.05x at 12,500, 1.07-1.09x at 20,000 and 25,000, 1.13-1.15x at 8192)."""

# The one dispatch table of array kernels, keyed like solvers.METHODS.
KERNELS: Mapping[str, Callable[[Work, dict[str, Any]], None]] = {
    "newton": newton,
    "secant": secant,
    "false_position": bracketing.false_position,
    "illinois": bracketing.illinois,
    "bisection": bracketing.bisection,
    "brent": bracketing.brent,
}


def _start_arrays(spec: Any, x0: Any, x1: Any, bracket: Any) -> dict[str, Any]:
    """The start values the method's kind needs (floats or float arrays), by name."""
    given: dict[str, Any] = {"x0": x0, "x1": x1}
    if bracket is not None:
        try:
            a, b = bracket
        except (TypeError, ValueError):
            raise ValueError("bracket must be a pair (a, b) of numbers or arrays") from None
        given["a"], given["b"] = a, b
    names = {"x0": ("x0",), "x1": ("x1",), "bracket": ("a", "b")}
    out: dict[str, Any] = {}
    for need in spec.needs:
        for name in names[need]:
            value = given.get(name)
            if value is None:
                what = "a bracket (a, b)" if need == "bracket" else f"a start value {need}"
                raise ValueError(f"method {spec.name!r} needs {what}")
            try:
                arr = np.asarray(value, dtype=np.float64)
            except (TypeError, ValueError):
                raise ValueError(f"start value {name} must be numbers, got {value!r}") from None
            out[name] = float(arr) if arr.ndim == 0 else arr
    return out


def _parameter_values(equation: Any, parameters: Mapping[str, Any] | None) -> dict[str, Any]:
    """The equation's values with ``parameters`` over them; a name the equation lacks is
    the caller's error (EquationError, as bind says it), never a table of failed rows."""
    values = dict(equation.parameters)  # SI magnitudes of the values given with a unit
    given, _ = convert_parameters(parameters)
    values.update(given or {})
    names = set(equation.names[1:])
    extra = sorted(set(values) - names)
    if extra:
        what = ("is the unknown" if extra[0] == equation.unknown
                else "does not appear in the equation")
        raise EquationError(f"'{extra[0]}' {what}: it takes no value here")
    missing = sorted(names - set(values))
    if missing:
        raise EquationError("no value for " + ", ".join(f"'{n}'" for n in missing)
                            + f" (the unknown is '{equation.unknown}')")
    return {n: (np.asarray(v, dtype=np.float64) if isinstance(v, (np.ndarray, list, tuple))
                else v) for n, v in values.items()}


def si_units(equation: Any, parameters: Mapping[str, Any] | None) -> dict[str, str]:
    """The SI unit of every parameter that carries one (the equation's own, or given with
    a unit in ``parameters``); :func:`_parameter_values` holds their SI magnitudes, and
    :func:`solvers.batch.rows.bind_rows` binds them with these units, so a value given with a
    unit is never bound as a plain (dimensionless) number."""
    units = {n: c.si_unit for n, c in getattr(equation, "units", {}).items()}
    _, converted = convert_parameters(parameters)
    for name in parameters or {}:
        if name in units and name not in converted:
            # a plain number would be dimensionless beside the rest: refuse the slip, never
            # a table of rows refused one by one
            raise EquationError(
                f"parameter '{name}' was given with a unit ({equation.units[name].unit}); give "
                f"its rows with a unit too (solvers.units.Measured(values, unit))")
    units.update({n: c.si_unit for n, c in converted.items()})
    return units


_CAP_REACH = 2**62


def _method_settings(method: str, equation: Any, damping: float, tol: dict[str, Any]
                     ) -> dict[str, Any]:
    settings = dict(tol)
    if method == "newton":
        damping = float(damping)
        if not 0.0 < damping <= 1.0:
            raise ValueError(f"damping must be in (0, 1], got {damping!r}")
        settings["damping"] = damping
        settings["derivative"] = "symbolic" if equation.fprime is not None else "numerical"
    return settings


def solve_batch(
    equation: Any,
    *,
    method: str = "newton",
    x0: Any = None,
    x1: Any = None,
    bracket: Any = None,
    parameters: Mapping[str, Any] | None = None,
    damping: float = 1.0,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
    chunk_rows: int = CHUNK_ROWS,
    progress: Callable[[float], Any] | None = None,
    cancel: Callable[[], bool] | None = None,
) -> Batch:
    """Solve ``equation`` for every row of its parameter values and start values.

    Parameters
    ----------
    equation : Equation
        From :func:`solvers.parse_equation`; its parameter values (floats or numpy
        arrays) are the rows, unless ``parameters`` gives others.
    method : str
        A key of :data:`solvers.METHODS`: ``newton`` and ``secant`` (open), ``bisection``,
        ``false_position``, ``illinois``, ``brent`` (bracketing, guaranteed).
    x0, x1, bracket
        Start values in the unknown's units, as the method's kind needs them: scalars or
        arrays, broadcast with the parameter arrays (``bracket=(a, b)``, each end a
        scalar or an array: every row keeps its own bracket).
    parameters : mapping, optional
        Parameter values to bind over the equation's own (name -> float or array); the
        equation is not parsed again.
    damping
        Newton's step factor in (0, 1]. Newton uses the symbolic f' when the equation has
        one, else a central difference (``settings["derivative"]`` says which).
    xtol, rtol, ftol, max_iter
        The stopping rules of the scalar methods, checked by the same function.
    chunk_rows : int
        Rows processed together (default 16,384; the rows are split in equal chunks):
        memory stays bounded for 10^7 rows.
    progress, cancel : callable, optional
        ``progress(fraction)`` is called between iterations and chunks; ``cancel()`` is
        polled there and, when it returns True, :class:`BatchCancelled` is raised.

    Returns
    -------
    Batch
        Arrays of the rows' broadcast shape. Each row follows the scalar method's rules
        (element-wise, with its own bracket, iterate and stop): ``converged`` only at a
        root of f (an exact 0.0 that is underflow is ``not_finite``, a bracket closing on
        a jump ``discontinuity``, on a pole ``not_finite``). A failing row never stops
        the others and keeps NaN for its root and residual. A row whose parameter values
        give a part of f no finite real value (``sqrt`` of a negative value, a division
        by zero) is ``not_finite`` with a ``bad_parameters`` note.

    Raises
    ------
    ValueError
        An unknown method, a missing start value, an invalid setting, or rows that do
        not broadcast together (the caller's errors; :class:`solvers.EquationError` for
        parameter names the equation does not have).
    """
    spec = method_spec(method)
    tol = _check_settings(xtol, rtol, ftol, max_iter)
    settings = _method_settings(spec.name, equation, damping, tol)
    values = _parameter_values(equation, parameters)
    units = si_units(equation, parameters)
    starts = _start_arrays(spec, x0, x1, bracket)
    chunk_rows = int(chunk_rows)
    if chunk_rows < 1:
        raise ValueError(f"chunk_rows must be >= 1, got {chunk_rows}")
    # (start values apart from parameters: a parameter may be called a or b, as the
    # bracket's ends are)
    arrays = {**{k: v for k, v in values.items() if isinstance(v, np.ndarray)},
              **{f"start {k}": v for k, v in starts.items() if isinstance(v, np.ndarray)}}
    try:
        shape = np.broadcast_shapes(*(v.shape for v in arrays.values()))
    except ValueError:
        shapes = ", ".join(f"{n} {v.shape}" for n, v in arrays.items())
        raise ValueError(f"rows do not broadcast together: {shapes}") from None
    total = int(np.prod(shape)) if shape else 1
    flat = {n: (np.broadcast_to(v, shape).reshape(-1) if isinstance(v, np.ndarray) else v)
            for n, v in values.items()}
    flat_starts = {n: np.broadcast_to(np.asarray(v, dtype=np.float64), shape).reshape(-1)
                   for n, v in starts.items()}
    kernel = KERNELS[spec.name]
    # the compiled passes count in 64-bit integers: a cap beyond any run's reach (the
    # scalar methods take Python's integers) is the same cap as 2**62 for them
    passes = {**settings, "max_iter": min(settings["max_iter"], _CAP_REACH)}
    result = Outcome(total)
    chunks = max(1, -(-total // chunk_rows))
    step = -(-total // chunks)  # equal chunks: no short tail chunk
    # Rows the equation is already bound to (1-D arrays of every row): its checks have
    # run, so no chunk binds again; each takes its share of the parameter parts.
    whole = None
    if parameters is None and all(not isinstance(v, np.ndarray) or v.shape == (total,)
                                  for v in values.values()):
        whole = Rows(equation, flat, total, equation, units)
    work = scratch()  # one set of work arrays for every chunk
    try:
        with np.errstate(all="ignore"):
            for begin in range(0, total, step):
                end = min(begin + step, total)
                poll = make_poll(progress, cancel, begin, total, end - begin)
                poll(0.0)
                fn = (whole if end - begin == total else whole.part(begin, end)) \
                    if whole is not None else None
                _solve_chunk(equation, kernel, passes, flat, flat_starts, begin, end,
                             result, poll, fn, units, work)
    finally:
        done_with(work)
    if progress is not None:
        progress(1.0)
    return Batch(
        root=result.root.reshape(shape),
        converged=converged_of(result.code).reshape(shape),
        reason_code=result.code.reshape(shape),
        iterations=result.iterations.reshape(shape),
        evaluations=result.evaluations.reshape(shape),
        residual=result.residual.reshape(shape),
        notes=tuple(sorted(result.notes)), method=spec.name, settings=settings,
        equation=equation, parameters=values, starts=starts, units=units,
    )


def _solve_chunk(equation: Any, kernel: Callable[[Work, dict[str, Any]], None],
                 settings: dict[str, Any], values: dict[str, Any], starts: dict[str, Any],
                 begin: int, end: int, result: Outcome, poll: Any, fn: Rows | None,
                 units: Mapping[str, str], scratch: Scratch) -> None:
    n = end - begin
    if fn is None:
        chunk_values = {k: (v[begin:end] if isinstance(v, np.ndarray) else v)
                        for k, v in values.items()}
        fn = Rows(equation, chunk_values, n, None, units)
    out = result if n == len(result.code) else result.part(begin, end)
    bad = np.flatnonzero(fn.bad)
    if bad.size:
        nothing = np.full(bad.size, np.nan)
        out.write(bad, NOT_FIN, nothing, nothing, np.zeros(bad.size, np.int64),
                  np.zeros(bad.size, np.int64))
        out.notes.extend((begin + int(i), "bad_parameters") for i in bad)
        rows = np.flatnonzero(~fn.bad)
        chunk_starts = {k: v[begin:end].take(rows) for k, v in starts.items()}
    else:
        rows = np.arange(n)
        chunk_starts = {k: v[begin:end].copy() for k, v in starts.items()}
    if rows.size:
        kernel(Work(out, fn, rows, poll, scratch, **chunk_starts), settings)
