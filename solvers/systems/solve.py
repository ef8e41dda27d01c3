"""solve_system: one method of SYSTEM_METHODS on a System, block by block.

The blocks of ``System.blocks`` are solved in order, each with the unknowns of earlier
blocks held at their solved values; a block that does not converge ends the solve with its
reason (later blocks keep their start values). ``by_blocks=False`` solves everything as one
block.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from solvers.records import CONVERGED_REASONS, X_TOLERANCE
from solvers.systems import iterate
from solvers.systems.model import System
from solvers.systems.records import SystemCancelled, SystemRun, SystemStep

DEFAULT_XTOL = 1e-12
DEFAULT_RTOL = 4 * float(np.finfo(float).eps)
DEFAULT_FTOL = 0.0
DEFAULT_MAX_ITER = 100


@dataclass(frozen=True)
class SystemMethod:
    """A method for systems: its name (what ``method=`` and ``--method`` take), whether it
    uses the Jacobian J, and the iteration."""

    name: str
    uses_jacobian: bool
    iterate: Callable[..., iterate.Outcome]


SYSTEM_METHODS: dict[str, SystemMethod] = {
    "newton": SystemMethod("newton", True, iterate.newton),
    "broyden": SystemMethod("broyden", False, iterate.broyden),
}


def _start(system: System, x0: Any) -> np.ndarray:
    if not isinstance(x0, Mapping):
        values = list(np.ravel(np.asarray(x0, dtype=object))) if x0 is not None else []
        if len(values) != len(system.unknowns) or isinstance(x0, str):
            raise ValueError("x0 must map each unknown to a start value (or list one start "
                             "value per unknown, in the order of System.unknowns)")
        x0 = dict(zip(system.unknowns, values, strict=True))
    extra = [n for n in x0 if n not in system.unknowns]
    if extra:
        raise ValueError(f"'{extra[0]}' is not an unknown of the system")
    missing = [n for n in system.unknowns if n not in x0]
    if missing:
        raise ValueError("no start value for " + ", ".join(f"'{n}'" for n in missing))
    values = []
    for n in system.unknowns:
        v = x0[n]
        if isinstance(v, bool) or not isinstance(v, (int, float, np.integer, np.floating)):
            raise ValueError(f"the start value of '{n}' must be a number")
        v = float(v)
        if not math.isfinite(v):
            raise ValueError(f"the start value of '{n}' must be finite")
        values.append(v)
    return np.array(values, dtype=np.float64)


def _tolerance(name: str, value: Any, default: float) -> float:
    if value is None:
        return default
    v = float(value)
    if not v >= 0 or not math.isfinite(v):
        raise ValueError(f"{name} must be a finite number >= 0")
    return v


def solve_system(system: System, x0: Mapping[str, float], *, method: str = "newton",
                 xtol: float | None = None, rtol: float | None = None,
                 ftol: float | None = None, max_iter: int | None = None,
                 by_blocks: bool = True,
                 progress: Callable[[float], None] | None = None,
                 cancel: Callable[[], bool] | None = None) -> SystemRun:
    """Solve F(x) = 0 from ``x0`` (name -> start value; or a sequence in the order of
    ``system.unknowns``) with one method of SYSTEM_METHODS.

    Tolerances: ``xtol`` (absolute step, each unknown in its own units; default 1e-12),
    ``rtol`` (relative step; default 4 eps), ``ftol`` (largest |residual| in the
    equations' units; default 0: off), ``max_iter`` (iterations per block; default 100).
    Never raises because of what F returns: a singular Jacobian, no solution, a domain
    error are the run's ``reason``. Raises ValueError for a bad method, start or setting.

    ``progress(fraction)`` (0..1) is called at the start of each iteration: the blocks
    done plus this block's iterations over ``max_iter`` (an upper bound: a solve that
    converges early jumps to 1 at the end). ``cancel()`` is polled before each iteration,
    on every line-search trial and every difference-Jacobian column; when it returns True
    the solve stops there and raises :class:`SystemCancelled` (no run is returned, so
    nothing of a cancelled solve is ever called converged).
    """
    spec = SYSTEM_METHODS.get(method)
    if spec is None:
        raise ValueError(f"unknown method {method!r}; one of " + ", ".join(SYSTEM_METHODS))
    start = _start(system, x0)
    xt = _tolerance("xtol", xtol, DEFAULT_XTOL)
    rt = _tolerance("rtol", rtol, DEFAULT_RTOL)
    ft = _tolerance("ftol", ftol, DEFAULT_FTOL)
    cap = DEFAULT_MAX_ITER if max_iter is None else int(max_iter)
    if cap < 1:
        raise ValueError("max_iter must be at least 1")
    n = len(system.unknowns)
    blocks = system.blocks if by_blocks else ((tuple(range(n)), tuple(range(n))),)
    x = start.copy()
    counter = iterate.Counter()
    steps: list[SystemStep] = []
    reason = X_TOLERANCE
    iterations = 0
    symbolic = system.jacobian_kind == "symbolic"
    shown = [-1.0]

    def poll(k: int, b: int) -> None:
        if cancel is not None and cancel():
            raise SystemCancelled(iterations + k)
        if progress is not None:
            fraction = min(1.0, (b + min(k, cap) / cap) / len(blocks))
            if fraction > shown[0]:  # once per iteration, not per F call
                shown[0] = fraction
                progress(fraction)

    for b, (eqs, idx) in enumerate(blocks):
        rows, cols = list(eqs), list(idx)

        def full(z: np.ndarray, cols: list[int] = cols) -> np.ndarray:
            if len(cols) == n:  # one block of everything: z is x in order
                return z.copy()
            xf = x.copy()
            xf[cols] = z
            return xf

        def F(z: np.ndarray, rows: list[int] = rows, full: Any = full) -> np.ndarray:
            return system.F(full(z))[rows]

        def J(z: np.ndarray, rows: list[int] = rows, cols: list[int] = cols,
              full: Any = full) -> np.ndarray:
            return system.J(full(z))[np.ix_(rows, cols)]

        def record(z: np.ndarray, fz: np.ndarray, step: float, damping: float,
                   regularised: bool, b: int = b, full: Any = full,
                   whole: bool = len(rows) == n) -> None:
            xf = full(z)
            # every equation's residual; for a block of part of the system this is one more
            # call of F, for the record only (not counted as an evaluation)
            residuals = fz if whole else system.F(xf)
            steps.append(SystemStep(len(steps), dict(zip(system.unknowns, xf.tolist(),
                                                         strict=True)),
                                    tuple(residuals.tolist()), float(np.linalg.norm(fz)),
                                    step, damping, b, regularised))

        uses_j = spec.uses_jacobian and symbolic
        if len(blocks) == 1:  # the whole system as it is: no copies, no index gathering
            F, J = system.F, system.J  # type: ignore[assignment]
        problem = iterate.Problem(F, J if uses_j else None, record, counter,
                                  lambda k, b=b: poll(k, b))
        problem.tick(0)
        # the iterations test F, J, the direction and ||F|| for finiteness themselves: a
        # product past the doubles (J of 1e300 times F) is one more such value, never a
        # RuntimeWarning on the user's terminal
        with np.errstate(over="ignore", invalid="ignore"):
            outcome = spec.iterate(problem, x[cols], xtol=xt, rtol=rt, ftol=ft, max_iter=cap)
        x[cols] = outcome.x
        iterations += outcome.iterations
        reason = outcome.reason
        if reason not in CONVERGED_REASONS:
            break
    if progress is not None:
        progress(1.0)
    residuals = system.F(x)
    return SystemRun(
        method=method, unknowns=system.unknowns,
        root=dict(zip(system.unknowns, x.tolist(), strict=True)),
        converged=reason in CONVERGED_REASONS, reason=reason, iterations=iterations,
        evaluations=counter.evaluations, steps=tuple(steps),
        residuals=tuple(residuals.tolist()), blocks=blocks,
        jacobian=("symbolic" if spec.uses_jacobian and symbolic else "differences"),
        settings={"xtol": xt, "rtol": rt, "ftol": ft, "max_iter": cap,
                  "x0": tuple(start.tolist()), "by_blocks": by_blocks})
