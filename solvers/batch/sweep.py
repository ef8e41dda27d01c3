"""sweep: follow a root along one parameter by continuation, row after row.

Continuation is sequential by nature (each row starts where the previous one ended), so
each row runs the scalar method of the registry (:func:`solvers.run_method`) on the
equation bound to that row's value: every row is a full single solve (its ``Run`` is
rebuilt by :meth:`Batch.run` identically), and hundreds of values take milliseconds to a
few tenths of a second. The vectorised kernels gain nothing here.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np

from solvers.batch.driver import _parameter_values, si_units
from solvers.batch.records import (
    OUTSIDE_RANGE,
    REASON_CODES,
    Batch,
    BatchCancelled,
    _one_row,
)
from solvers.batch.rows import bind_rows
from solvers.equation import EquationError
from solvers.methods.common import (
    DEFAULT_FTOL,
    DEFAULT_MAX_ITER,
    DEFAULT_RTOL,
    DEFAULT_XTOL,
    DERIVATIVE_STEP,
    _check_settings,
)
from solvers.methods.registry import method_spec, run_method
from solvers.records import NOT_FINITE

# A converged root counts as a jump off the branch when it lies farther from the
# straight-line prediction of the last two roots than JUMP_FACTOR times the predicted
# step (or the last step). Near a fold the root moves like sqrt(distance to the fold),
# so consecutive steps grow by at most ~2.4x (sqrt(h) against sqrt(2h) - sqrt(h)) and a
# prediction error of 3 steps is not reached on the branch itself (common practice for
# step control in continuation; the constant is ours).
JUMP_FACTOR = 3.0

# Where a row's solve leaves the branch, the step from the previous row is halved up to
# this many times (down to 1/64 of it) to follow the branch to the row's value. A branch
# that even such short steps cannot follow ends there (a turning point), or turns too
# sharply for the rows' spacing: the row then keeps its own solve, with a note.
MAX_HALVINGS = 6

# A root where |f'| has fallen below this share of |f'| at the branch's previous root is
# the branch's turning point itself (a double root: f' is 0 there up to rounding, while
# on the way to a fold it shrinks like the square root of the distance, a step at a
# time): the branch ends at that row, and the next row's root lies on another branch.
FOLD_SHARE = 1e-6


def _slope(equation: Any, x: float) -> float:
    """f'(x): the symbolic derivative when there is one, else a central difference."""
    if equation.fprime is not None:
        return float(_one_row(equation.fprime)(x))
    h = DERIVATIVE_STEP * max(abs(x), 1e-3)
    f = _one_row(equation.f)
    return float((f(x + h) - f(x - h)) / (2.0 * h))


def sweep(
    equation: Any,
    name: str,
    values: Sequence[float] | np.ndarray,
    *,
    x0: float | None = None,
    x1: float | None = None,
    bracket: tuple[float, float] | None = None,
    method: str = "newton",
    parameters: Mapping[str, float] | None = None,
    bounds: tuple[float, float] | None = None,
    damping: float = 1.0,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
    progress: Callable[[float], Any] | None = None,
    cancel: Callable[[], bool] | None = None,
) -> Batch:
    """Solve ``equation`` for each value of parameter ``name``, in the order given.

    Each row starts from the previous row's converged root (continuation), so one branch
    of roots is followed; the first row starts from ``x0``. For the secant the second
    start value keeps the spacing ``x1 - x0`` (``x1`` required). A bracketing method
    needs no start value: every row uses ``bracket`` (a ``fixed_bracket`` note on row 0).

    Where a row's solve does not continue the branch (it fails, lands outside ``bounds``,
    off the straight-line prediction of the last two roots, or, with one root of the
    branch known, off Newton's tangent step from it at the row's value, or where f' has
    the other sign), the step from the previous row is halved, up to :data:`MAX_HALVINGS` times, and
    the branch followed through those intermediate values (a ``continued`` note; the row's
    start is then the last intermediate root, so :meth:`Batch.run` rebuilds it). Where even
    that fails the row keeps its own solve, and the notes say how it ends.

    ``.notes`` (flat index, code) say where the branch ends or changes:
    ``failed`` (the row did not converge; the next row restarts from the last good
    root, ``restart_last_good``, or from x0 when there is none, ``restart_x0``),
    ``branch_jump`` (the root lies far off the straight-line prediction of the last two,
    or the tangent step from the one before: the branch ended, typically at a turning
    point, and another branch was found),
    ``turning_point`` (f' at the root changed sign from the previous row: the root is on
    another branch, past a fold), ``at_fold`` (|f'| at the root fell below
    :data:`FOLD_SHARE` of f' at the branch's previous root, both at this row's value (a
    parameter that only scales f is no fold): a double root, the
    branch's turning point itself; the branch ends there and the next row's root gets
    ``branch_jump``), ``continued`` (reached through intermediate values),
    ``left_range`` (the method converged to a root outside ``bounds``: that row
    records no root, ``converged`` False and the reason :data:`OUTSIDE_RANGE`, and
    continuation goes on from the last root inside), ``bad_parameters`` (the value gives
    part of f no finite value).

    Other parameters are floats: the equation's own values, with ``parameters`` over
    them and ``name`` replaced row by row. Units: where the equation holds ``name`` with a
    unit, ``values`` are in that parameter's SI base unit (the unknown keeps its own
    unit); the other parameters keep theirs. Tolerances, ``damping``, ``progress`` and ``cancel`` as
    in :func:`solvers.solve_batch` (:class:`BatchCancelled` when cancelled). Raises
    ValueError for an unknown name, values that are not finite numbers, missing start
    values or an invalid setting.
    """
    spec = method_spec(method)
    tol = _check_settings(xtol, rtol, ftol, max_iter)
    if name not in equation.names[1:]:
        what = "is the unknown" if name == equation.unknown else "is not a parameter"
        raise ValueError(f"'{name}' {what} of the equation; sweep one of its parameters")
    try:
        rows = np.asarray(values, dtype=np.float64).reshape(-1)
    except (TypeError, ValueError):
        raise ValueError("sweep values must be numbers") from None
    if not np.isfinite(rows).all():
        raise ValueError("sweep values must be finite")
    base = _parameter_values(equation, {**(parameters or {}), name: 0.0})
    # the swept values are plain numbers: in SI units when the parameter has a unit
    units = si_units(equation, {k: v for k, v in (parameters or {}).items() if k != name})
    if name in getattr(equation, "units", {}):
        units[name] = equation.units[name].si_unit
    arrays = [n for n, v in base.items() if n != name and isinstance(v, np.ndarray)]
    if arrays:
        raise ValueError(f"a sweep varies one parameter; '{arrays[0]}' holds several values")
    kind = spec.kind
    if kind != "bracket" and x0 is None:
        raise ValueError(f"method {spec.name!r} needs a start value x0")
    if kind == "two_point" and x1 is None:
        raise ValueError("the secant needs x1 (its spacing from x0 is kept from row to row)")
    if kind == "bracket" and bracket is None:
        raise ValueError(f"method {spec.name!r} needs a bracket (a, b)")
    if spec.name == "newton" and not 0.0 < float(damping) <= 1.0:
        raise ValueError(f"damping must be in (0, 1], got {damping!r}")
    symbolic = spec.name == "newton" and equation.fprime is not None
    settings: dict[str, Any] = dict(tol)
    if spec.name == "newton":
        settings["damping"] = float(damping)
        settings["derivative"] = "symbolic" if symbolic else "numerical"
    settings["swept"] = name
    if bounds is not None:
        settings["bounds"] = (float(min(bounds)), float(max(bounds)))

    n = rows.size
    root = np.full(n, np.nan)
    converged = np.zeros(n, dtype=bool)
    reason = np.full(n, REASON_CODES[NOT_FINITE], dtype=np.int8)
    iterations = np.zeros(n, dtype=np.int64)
    evaluations = np.zeros(n, dtype=np.int64)
    residual = np.full(n, np.nan)
    starts_x0 = np.full(n, np.nan)
    notes: list[tuple[int, str]] = []
    if kind == "bracket":
        notes.append((0, "fixed_bracket"))
    spacing = (float(x1) - float(x0)) if kind == "two_point" else 0.0
    first = float(x0) if x0 is not None else math.nan
    last_good: float | None = None
    branch: list[tuple[float, float]] = []  # (value, root) of the branch now followed
    last_slope: float | None = None
    restarted = False
    after_fold = False  # the row before was a branch's turning point

    def solve_at(value: float, start: float) -> tuple[Any, Any] | None:
        """(run, bound equation) of the method at ``value`` from ``start``; None when the
        value gives part of f no finite value."""
        try:
            # rows of one, as Batch.run rebuilds a row: the same arithmetic
            bound = bind_rows(equation, {k: np.array([v])
                                         for k, v in {**base, name: value}.items()}, units)
        except EquationError:
            return None
        run = run_method(
            spec.name, _one_row(bound.f),
            fprime=_one_row(bound.fprime) if symbolic else None,
            derivative_source="symbolic" if symbolic else None,
            x0=start, x1=start + spacing, bracket=bracket, damping=damping, **tol)
        return run, bound

    def inside(x: float) -> bool:
        return bounds is None or min(bounds) <= x <= max(bounds)

    def on_branch(value: float, run: Any, bound: Any, branch: list[tuple[float, float]],
                  slope_before: float | None) -> tuple[bool, float | None]:
        """(whether ``run`` continues ``branch``: converged, in the range, on the straight-
        line prediction, f' of the same sign; f' at its root, or the last finite one)."""
        if not run.converged or not inside(run.root) or \
                _jumped(branch, value, run.root, tol, _tangent(bound, branch)):
            return False, slope_before
        slope = _slope(bound, run.root)
        if not math.isfinite(slope):
            return True, slope_before
        # f' cannot change sign along one branch short of a turning point
        return slope_before is None or slope * slope_before >= 0, slope

    def halved(p_from: float, x_from: float, p_to: float, branch: list[tuple[float, float]],
               slope: float | None, depth: int = 0, known_off: bool = False
               ) -> list[tuple[float, float, Any, Any, float | None]] | None:
        """The branch followed from (p_from, x_from) to ``p_to`` by halving the step until
        each solve stays on it: the points (value, start, run, bound, f') reached, the last
        at ``p_to``; None where :data:`MAX_HALVINGS` halvings do not get there.
        ``known_off``: the whole step was solved already and left the branch (not again)."""
        if cancel is not None and cancel():
            raise BatchCancelled
        solved = None if known_off else solve_at(p_to, x_from)
        if solved is not None:
            run, bound = solved
            stays, got = on_branch(p_to, run, bound, branch, slope)
            if stays:
                return [(p_to, x_from, run, bound, got)]
        if depth >= MAX_HALVINGS:
            return None
        middle = 0.5 * (p_from + p_to)
        left = halved(p_from, x_from, middle, branch, slope, depth + 1)
        if left is None:
            return None
        value, _, run, _, got = left[-1]
        right = halved(value, run.root, p_to, _extended(branch, left), got, depth + 1)
        return None if right is None else left + right

    for k, value in enumerate(rows.tolist()):
        if cancel is not None and cancel():
            raise BatchCancelled
        if progress is not None:
            progress(k / n)
        start = last_good if last_good is not None else first
        if restarted:
            notes.append((k, "restart_last_good" if last_good is not None else "restart_x0"))
            restarted = False
        solved = solve_at(value, start)
        if solved is None:
            starts_x0[k] = start
            notes.append((k, "bad_parameters"))
            restarted, branch = True, []
            continue
        run, bound = solved
        if kind != "bracket" and branch and \
                not on_branch(value, run, bound, branch, last_slope)[0]:
            # the step from the last row was too long to stay on the branch (a jump to
            # another root, a root outside the range, no convergence): follow the branch
            # through intermediate values; where even short steps fail it ends, or turns
            # back at a turning point, before this value
            path = halved(branch[-1][0], branch[-1][1], value, branch, last_slope,
                          known_off=True)
            if path is not None:
                notes.append((k, "continued"))
                branch = _extended(branch, path[:-1])
                start, run, bound = path[-1][1], path[-1][2], path[-1][3]
                if len(path) > 1:
                    last_slope = path[-2][4]
        starts_x0[k] = start
        reason[k], iterations[k], evaluations[k] = (REASON_CODES[run.reason], run.iterations,
                                                   run.evaluations)
        if not run.converged:
            notes.append((k, "failed"))
            restarted, branch = True, []
            continue
        if not inside(run.root):
            # a root of f, but not of the branch asked for: the row has no root in the
            # range (an engineer reading the table must not take it as the branch's value)
            reason[k] = REASON_CODES[OUTSIDE_RANGE]
            notes.append((k, "left_range"))
            restarted, branch = True, []
            continue
        converged[k], root[k], residual[k] = True, run.root, run.residual
        if after_fold or _jumped(branch, value, run.root, tol, _tangent(bound, branch)):
            notes.append((k, "branch_jump"))
            branch = []
        after_fold = False
        slope = _slope(bound, run.root)
        if last_slope is not None and branch and math.isfinite(slope) and slope * last_slope < 0:
            notes.append((k, "turning_point"))
        elif (last_slope is not None and branch and math.isfinite(slope)
              and abs(slope) <= FOLD_SHARE * abs(_slope(bound, branch[-1][1]))):
            # the branch's own turning point: it ends here (the next row cannot follow it).
            # f' at the last row's root is taken at this row's value: a parameter that
            # scales f ((x - 1) exp(-p) from p = 0 to 15: f' falls 3e6-fold, the root stays
            # at 1) moves f' at both roots alike, a fold only at this one
            notes.append((k, "at_fold"))
            after_fold = True
        last_slope = slope if math.isfinite(slope) else last_slope
        branch = [] if after_fold else [*branch[-1:], (value, run.root)]
        last_good = run.root
    if progress is not None:
        progress(1.0)
    starts: dict[str, Any] = {}
    if kind == "bracket":
        starts["a"], starts["b"] = (float(v) for v in bracket)  # type: ignore[union-attr]
    else:
        starts["x0"] = starts_x0
        if kind == "two_point":
            starts["x1"] = starts_x0 + spacing
    return Batch(root=root, converged=converged, reason_code=reason,
                 iterations=iterations,
                 evaluations=evaluations, residual=residual, notes=tuple(notes),
                 method=spec.name, settings=settings, equation=equation,
                 parameters={**{n: float(v) for n, v in base.items() if n != name},
                             name: rows}, units=units,
                 starts=starts)


def _extended(branch: list[tuple[float, float]],
              points: Sequence[tuple[float, float, Any, Any, Any]]) -> list[tuple[float, float]]:
    """The last two (value, root) of ``branch`` followed by ``points`` (value, start, run,
    ...): the straight-line prediction goes on from the newest two."""
    return [*branch, *((p[0], p[2].root) for p in points)][-2:]


def _tangent(bound: Any, branch: list[tuple[float, float]]) -> float | None:
    """Newton's step -f/f' at the branch's one known root, on the equation ``bound`` to
    the next value: the first-order prediction of the root's move where the straight line
    through two roots is not yet there (None with two roots, or none; NaN where f or f'
    has no finite value there)."""
    if len(branch) != 1:
        return None
    x = branch[0][1]
    with np.errstate(all="ignore"):
        return -float(_one_row(bound.f)(x)) / _slope(bound, x)


def _jumped(branch: list[tuple[float, float]], value: float, root: float,
            tol: Mapping[str, Any], tangent: float | None = None) -> bool:
    """Whether ``root`` at ``value`` lies off the straight line through the last two roots
    of the branch or, with one root known, off the ``tangent`` step from it (a NaN or
    infinite tangent predicts nothing).

    The sweep's first rows had no check: from the one root before, a solve that ran off
    to another root was taken as the branch (x^4 - 0.119x^3 - 1.165x^2 - 0.052x = p from
    the root -0.130 at p = -0.0124 to 1.174 at p = 0.0403, where the branch has ended at
    its fold: numpy.roots gives that root and -1.016, and no root near -0.13)."""
    floor = 1e3 * (tol["xtol"] + tol["rtol"] * abs(root))
    if len(branch) == 1 and tangent is not None and math.isfinite(tangent):
        r1 = branch[0][1]
        return abs((root - r1) - tangent) > JUMP_FACTOR * abs(tangent) + floor
    if len(branch) < 2:
        return False
    (p0, r0), (p1, r1) = branch
    if p1 == p0:
        return False
    predicted = (r1 - r0) * (value - p1) / (p1 - p0)
    scale = max(abs(predicted), abs(r1 - r0))
    return abs((root - r1) - predicted) > JUMP_FACTOR * scale + floor


def resume_sweep(batch: Batch, index: int, x0: float, *,
                 progress: Callable[[float], Any] | None = None,
                 cancel: Callable[[], bool] | None = None) -> Batch:
    """The sweep ``batch`` again from row ``index`` on, started there from ``x0``.

    This is the restart a branch end offers: scan f at that row's value, pick a root, and
    follow it from there (the rows before keep their results; their notes before
    ``index`` too). Row ``index`` gets a ``restart_scan`` note. The same method, settings
    and range as the sweep. Raises ValueError for a batch that is not a sweep and
    IndexError for a row outside it.
    """
    name = batch.settings.get("swept")
    if not isinstance(name, str):
        raise ValueError("not a sweep: only a sweep can be resumed from a row")
    if not 0 <= index < batch.size:
        raise IndexError(f"row {index} is outside the sweep of {batch.size} rows")
    values = np.asarray(batch.parameters[name], dtype=np.float64).reshape(-1)
    s = batch.settings
    starts = batch.starts
    kind = "bracket" if "a" in starts else "open"
    spacing = 0.0
    if "x1" in starts:
        spacing = float(np.asarray(starts["x1"]).reshape(-1)[0]
                        - np.asarray(starts["x0"]).reshape(-1)[0])
    tail = sweep(
        batch.equation, name, values[index:], x0=float(x0),
        x1=float(x0) + spacing if "x1" in starts else None,
        bracket=(starts["a"], starts["b"]) if kind == "bracket" else None,
        method=batch.method,
        parameters={n: v for n, v in batch.parameters.items() if n != name},
        bounds=s.get("bounds"), damping=float(s.get("damping", 1.0)), xtol=float(s["xtol"]),
        rtol=float(s["rtol"]), ftol=float(s["ftol"]), max_iter=int(s["max_iter"]),
        progress=progress, cancel=cancel)

    def joined(field: str) -> np.ndarray:
        return np.concatenate([getattr(batch, field)[:index], getattr(tail, field)])

    notes = ([n for n in batch.notes if n[0] < index] + [(index, "restart_scan")]
             + [(i + index, c) for i, c in tail.notes if c != "fixed_bracket"])
    new_starts = dict(starts)
    for key in ("x0", "x1"):
        if key in starts:
            new_starts[key] = np.concatenate([np.asarray(starts[key])[:index],
                                              np.asarray(tail.starts[key])])
    return Batch(root=joined("root"), converged=joined("converged"),
                 reason_code=joined("reason_code"),
                 iterations=joined("iterations"), evaluations=joined("evaluations"),
                 residual=joined("residual"), notes=tuple(notes), method=batch.method,
                 settings=batch.settings, equation=batch.equation,
                 parameters=batch.parameters, starts=new_starts, units=batch.units)
