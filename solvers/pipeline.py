"""From a worksheet to results: the one path every front end takes.

The CLI, the window and the calculation sheet all call these functions, so a root
shown on screen, printed in a shell and filed in a report comes from the same code
with the same settings.

* :func:`start_values` turns the worksheet's (possibly blank) start values into the
  numbers each kind of method needs, and says how each was chosen.
* :func:`solve` parses the equation once and runs the worksheet's methods side by side.
* :func:`scan_worksheet` finds every root in the worksheet's scan range.
* :func:`polish` re-runs every method from a root the scan found.

Nothing here raises for a method that fails: a failed run is a result with a reason.
Bad *input* (an equation that does not parse, a method name that does not exist)
raises :class:`solvers.equation.EquationError` or :class:`ValueError` with one line.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, replace

from solvers.equation import Equation, parse_equation
from solvers.methods import METHODS
from solvers.result import NO_SIGN_CHANGE, Run
from solvers.scan import Scan, scan
from solvers.worksheet import Settings, Worksheet

# How far a bracket search may grow from x0 before giving up: 2**40 times the first
# half-width covers any physical range an engineer would type.
_BRACKET_SEARCH_STEPS = 40


@dataclass(frozen=True)
class StartValues:
    """Resolved start values: x0 (Newton), x0/x1 (secant), bracket (bracketing methods).

    ``notes`` records, in words, every value that was not typed by the user.
    """

    x0: float
    x1: float
    bracket: tuple[float, float] | None
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class Solution:
    """The runs of one worksheet, with the parsed equation and the start values used."""

    worksheet: Worksheet
    equation: Equation
    start: StartValues
    runs: tuple[Run, ...]
    agreement_digits: int | None

    @property
    def converged_runs(self) -> tuple[Run, ...]:
        return tuple(r for r in self.runs if r.converged)


def equation_of(ws: Worksheet) -> Equation:
    """Parse the worksheet's equation with its parameters (raises EquationError)."""
    return parse_equation(ws.equation, unknown=ws.unknown, parameters=ws.parameter_values())


def _evaluate(f: Callable[[float], float], x: float) -> float:
    try:
        return float(f(x))
    except (ArithmeticError, ValueError, TypeError):
        return math.nan


def _search_bracket(
    f: Callable[[float], float], x0: float, relative: float = 0.1
) -> tuple[float, float] | None:
    """Grow an interval geometrically around x0 until f changes sign (None if never).

    The first half-width is ``relative * |x0|`` (at least ``relative``); it doubles
    each step.
    """
    half = max(abs(x0) * relative, relative)
    f0 = _evaluate(f, x0)
    if not math.isfinite(f0):
        return None
    for _ in range(_BRACKET_SEARCH_STEPS):
        for x in (x0 - half, x0 + half):
            fx = _evaluate(f, x)
            if math.isfinite(fx) and (fx == 0 or math.copysign(1, fx) != math.copysign(1, f0)):
                return (min(x0, x), max(x0, x))
        half *= 2
    return None


def _kinds(methods: tuple[str, ...]) -> set[str]:
    return {METHODS[m].kind for m in methods if m in METHODS}


def start_values(ws: Worksheet, equation: Equation | None = None) -> StartValues:
    """Resolve blank start values for the worksheet's methods.

    Bracket (only when a bracketing method is chosen): the worksheet's bracket, else its
    scan range, else an interval grown around x0 until f changes sign. x0: the
    worksheet's, else the bracket's midpoint, else 1. x1 (secant only): the worksheet's,
    else x0 nudged by 1e-4 relative (as scipy's secant does), so the first secant slope
    is a good derivative estimate. ``notes`` says which values were not typed.
    """
    s = ws.settings
    kinds = _kinds(s.methods)
    notes: list[str] = []
    bracket = s.bracket
    if bracket is None and ws.scan is not None and "bracket" in kinds:
        bracket = ws.scan
        notes.append("bracket taken from the scan range")
    x0 = s.x0
    if x0 is None:
        if bracket is not None or ws.scan is not None:
            lo, hi = bracket if bracket is not None else ws.scan
            x0 = 0.5 * (lo + hi)
            source = "bracket" if bracket is not None else "scan range"
            notes.append(f"x0 taken as the midpoint of the {source}")
        else:
            x0 = 1.0
            notes.append("x0 not given: 1.0 used")
    if bracket is None and equation is not None and "bracket" in kinds:
        bracket = _search_bracket(equation.f, x0)
        if bracket is not None:
            notes.append(f"bracket found by growing an interval around x0 = {x0!r}")
        else:
            notes.append("no bracket given and none found around x0")
    x1 = s.x1
    if x1 is None:
        x1 = x0 * (1 + 1e-4) + (1e-4 if x0 >= 0 else -1e-4)
        if "two_point" in kinds:
            notes.append("x1 taken as x0 nudged by 1e-4 (relative)")
    if bracket is not None:
        bracket = (min(bracket), max(bracket))
    return StartValues(x0=float(x0), x1=float(x1), bracket=bracket, notes=tuple(notes))


def _tolerances(s: Settings) -> dict[str, float | int]:
    return {"xtol": s.xtol, "rtol": s.rtol, "ftol": s.ftol, "max_iter": s.max_iter}


def _no_bracket_run(name: str) -> Run:
    return Run(
        method=name,
        root=math.nan,
        converged=False,
        reason=NO_SIGN_CHANGE,
        iterations=0,
        evaluations=0,
        steps=[],
        message="no bracket: give one, or a scan range, or an x0 near a sign change",
    )


# How each kind of method is started: kind -> (equation, start values, settings) -> kwargs.
_ARGUMENTS: dict[str, Callable[[Equation, StartValues, Settings], dict]] = {
    "open": lambda eq, sv, s: {
        "x0": sv.x0,
        "fprime": eq.fprime,
        "damping": s.damping,
        "derivative_source": "symbolic" if eq.fprime is not None else "numerical",
    },
    "two_point": lambda eq, sv, s: {"x0": sv.x0, "x1": sv.x1},
    "bracket": lambda eq, sv, s: {"a": sv.bracket[0], "b": sv.bracket[1]},
}


def run_methods(equation: Equation, sv: StartValues, settings: Settings) -> tuple[Run, ...]:
    """Run each of ``settings.methods`` on the equation from the resolved start values."""
    runs: list[Run] = []
    tol = _tolerances(settings)
    for name in settings.methods:
        spec = METHODS.get(name)
        if spec is None:
            raise ValueError(f"unknown method {name!r}; choose from {', '.join(METHODS)}")
        if spec.kind == "bracket" and sv.bracket is None:
            runs.append(_no_bracket_run(name))
            continue
        kwargs = _ARGUMENTS[spec.kind](equation, sv, settings)
        runs.append(spec.function(equation.f, **kwargs, **tol))
    return tuple(runs)


def agreement_digits(runs: tuple[Run, ...] | list[Run]) -> int | None:
    """Significant figures on which all converged runs agree (None if fewer than two).

    Counted as floor(-log10(spread / |root|)) capped at 15, the most a double carries
    reliably; roots at exactly zero agree to 15 when all are zero.
    """
    roots = [r.root for r in runs if r.converged and math.isfinite(r.root)]
    if len(roots) < 2:
        return None
    spread = max(roots) - min(roots)
    scale = max(abs(x) for x in roots)
    if spread == 0:
        return 15
    if scale == 0:
        return 0
    digits = math.floor(-math.log10(spread / scale))
    return max(0, min(15, digits))


def solve(ws: Worksheet, equation: Equation | None = None) -> Solution:
    """Parse (unless given) and run every method of the worksheet side by side."""
    eq = equation if equation is not None else equation_of(ws)
    sv = start_values(ws, eq)
    runs = run_methods(eq, sv, ws.settings)
    return Solution(ws, eq, sv, runs, agreement_digits(runs))


def scan_worksheet(
    ws: Worksheet,
    equation: Equation | None = None,
    *,
    progress: Callable[[float], None] | None = None,
    cancel: Callable[[], bool] | None = None,
    samples: int | None = None,
) -> Scan:
    """Every root of the worksheet's equation in its scan range (ValueError if none set).

    ``samples`` overrides the scan's default sampling density.
    """
    if ws.scan is None:
        raise ValueError("scan: the worksheet has no scan range (set 'from' and 'to')")
    eq = equation if equation is not None else equation_of(ws)
    a, b = ws.scan
    return scan(
        eq.f, a, b, fprime=eq.fprime, samples=samples, progress=progress, cancel=cancel
    )


def polish(ws: Worksheet, x: float, equation: Equation | None = None) -> Solution:
    """Run every method of the worksheet started from a root x found by a scan.

    x0 = x, x1 = x nudged, and a bracket of x +- 1e-6 relative grown until f changes
    sign, so each method confirms the root on its own terms.
    """
    eq = equation if equation is not None else equation_of(ws)
    bracket = _search_bracket(eq.f, x, relative=1e-6)
    settings = replace(ws.settings, x0=float(x), x1=None, bracket=bracket)
    polished = replace(ws, settings=settings)
    sv = start_values(polished, eq)
    runs = run_methods(eq, sv, settings)
    return Solution(polished, eq, sv, runs, agreement_digits(runs))
