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

import functools
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace

import numpy as np

from solvers.equation import Equation, parse_equation
from solvers.methods import METHODS, method_spec, run_method
from solvers.records import NO_SIGN_CHANGE, Detail, Run
from solvers.scan import Scan, scan
from solvers.worksheet import Settings, Worksheet

# The secant's x1 from a scan cell is the cell's end nearer x0, unless x0 lies within this
# share of the cell's width of it (x0 the scan's root estimate at that very end).
_X1_APART = 0.01

# How far a bracket search may grow from x0 before giving up: 2**40 times the first
# half-width covers any physical range an engineer would type.
_BRACKET_SEARCH_STEPS = 40
# Samples of the quick scan that seeds blank start values from the scan range: enough
# to separate roots a few hundredths of the range apart, cheap next to one full scan.
SEED_SAMPLES = 401

@dataclass(frozen=True)
class StartChoice:
    """How one start value was chosen: ``code`` and the numbers it refers to (values in
    the unknown's units, then counts and indices).

    Codes: x0_scan_root (x0, index, count, a, b, why: 0 the first from the left, 1 the
    one nearest the typed x0, 2 the first inside the typed bracket), x0_scan_min (x0, a,
    b), x0_bracket_midpoint (x0), x0_scan_midpoint (x0), x0_default (), x1_scan and
    x1_scan_far (x1, lo,
    hi), x1_nudged (x1), bracket_scan_cell (lo, hi), bracket_scan_range (a, b),
    bracket_grown (lo, hi), bracket_none (). :mod:`app.documents.words` says them in words.
    """

    code: str
    numbers: tuple[float, ...] = ()


@dataclass(frozen=True)
class StartValues:
    """Resolved start values: x0 (Newton), x0/x1 (secant), bracket (bracketing methods).

    ``choices`` records, as codes and numbers, how every value that was not typed by the
    user was chosen.
    """

    x0: float
    x1: float
    bracket: tuple[float, float] | None
    choices: tuple[StartChoice, ...] = ()


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

    @property
    def agreement(self) -> Agreement:
        """The converged roots grouped (different roots apart) with the shared figures."""
        return agreement(self.runs, self.worksheet.settings.xtol)

    @functools.cached_property
    def definitions_at_root(self) -> tuple[Run, dict[str, float]] | None:
        """(run, values): each defined quantity (SI) at the first converged run's root;
        None without definitions or without a converged run. Computed once and kept, so
        a front end can have it computed off its display thread and only read it there."""
        converged = self.converged_runs
        if not getattr(self.equation, "definitions", ()) or not converged:
            return None
        return converged[0], self.equation.definition_values(converged[0].root)


def equation_of(ws: Worksheet, parsed: Equation | None = None) -> Equation:
    """The worksheet's equation with its parameter values (raises EquationError).

    With ``parsed`` (an Equation of the same text, e.g. the one the window keeps), the
    worksheet's values are bound to it: no re-parse, no re-compile. Otherwise, or when the
    text or the unknown differ, the text is parsed.
    """
    values = ws.parameter_values()
    unit = ws.unknown_unit or None
    if parsed is not None and parsed.text == ws.equation and \
            compiled_for(parsed, ws.unknown_unit, ws.dimension_check):
        names = parsed.names[1:]
        same_unknown = ws.unknown in (None, parsed.unknown) and parsed.unknown not in values
        if same_unknown and all(n in values for n in names):
            return parsed.bind({n: values[n] for n in names})
    return parse_equation(ws.equation, unknown=ws.unknown, parameters=values,
                          unknown_unit=unit, check_dimensions=ws.dimension_check,
                          require_values=True)


def compiled_for(parsed: Equation, unknown_unit: str | None, check_dimensions: bool) -> bool:
    """Whether ``parsed`` was compiled for this unknown unit and dimension-check switch
    (both are fixed at parse time, unlike parameter values and their units, which bind)."""
    plan = parsed._core.units if parsed._core is not None else None
    if plan is None:
        return True
    chosen = None if plan.unit is None else plan.unit.text
    wanted = " ".join(unknown_unit.split()) if unknown_unit else None
    return chosen == (wanted or None) and plan.check_dimensions == bool(check_dimensions)


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


@dataclass(frozen=True)
class SeedScan:
    """What the quick scan of the scan range found: sign-change cells (a, b) with a
    root estimate in each (linear interpolation), and the sample with the least |f|."""

    a: float
    b: float
    cells: tuple[tuple[float, float, float], ...]  # (lo, hi, estimate), by x
    least: float | None


def seed_scan(
    f: Callable[[np.ndarray], np.ndarray | float], a: float, b: float,
    samples: int = SEED_SAMPLES,
) -> SeedScan:
    """Sample f on [a, b] and keep every cell where it changes sign through a root.

    A sign change across a pole or a jump is not kept: at the estimate inside the cell
    |f| must be under half its smaller value at the ends. Non-finite samples are skipped;
    never raises for what f returns.
    """
    x = np.linspace(a, b, max(int(samples), 3))
    with np.errstate(all="ignore"):
        try:
            y = np.asarray(f(x), dtype=float)
            if y.shape != x.shape:
                y = np.broadcast_to(y, x.shape).astype(float)
        except (ArithmeticError, ValueError, TypeError):
            y = np.array([_evaluate(f, float(v)) for v in x])
    y = np.where(np.isfinite(y), y, np.nan)
    cells: list[tuple[float, float, float]] = []
    for i in np.nonzero(y == 0)[0]:
        cells.append((float(x[i]), float(x[i]), float(x[i])))
    with np.errstate(invalid="ignore"):  # by the signs: a product of |f| ~ 1e300 overflows
        change = np.nonzero(np.sign(y[:-1]) * np.sign(y[1:]) < 0)[0]
    for i in change:
        lo, hi, flo, fhi = float(x[i]), float(x[i + 1]), float(y[i]), float(y[i + 1])
        guess = lo - flo * (hi - lo) / (fhi - flo)
        fg = _evaluate(f, guess)
        # Through a root f nearly vanishes at the interpolated point; across a pole or a
        # jump it stays about as large as at the nearer end.
        if math.isfinite(fg) and abs(fg) < 0.5 * min(abs(flo), abs(fhi)):
            cells.append((lo, hi, min(max(guess, lo), hi)))
    cells.sort(key=lambda c: c[2])
    finite = np.nonzero(np.isfinite(y))[0]
    least = float(x[finite[np.argmin(np.abs(y[finite]))]]) if finite.size else None
    return SeedScan(float(a), float(b), tuple(cells), least)


def _pick_cell(seed: SeedScan, x0: float | None,
               bracket: tuple[float, float] | None) -> tuple[int, int]:
    """(index of the cell to take, why: 0 first, 1 nearest the typed x0, 2 in the bracket)."""
    if bracket is not None:
        inside = [i for i, c in enumerate(seed.cells) if bracket[0] <= c[2] <= bracket[1]]
        if inside:
            return inside[0], 2
    if x0 is not None:
        return min(range(len(seed.cells)), key=lambda i: abs(seed.cells[i][2] - x0)), 1
    return 0, 0


def start_values(ws: Worksheet, equation: Equation | None = None) -> StartValues:
    """Resolve blank start values; typed values are always kept as typed.

    With a scan range and the equation, a quick scan of the range (:func:`seed_scan`,
    ``SEED_SAMPLES`` points) seeds the blanks from one sign change: the first from the
    left, or the one nearest a typed x0, or one inside a typed bracket. x0 is the root
    estimate inside that cell, x1 the cell end nearest x0, the bracket the cell itself
    (it changes sign). With no sign change: x0 where |f| was least; the bracket is the
    scan range only if its ends change sign, else none. Without a scan range: x0 = the
    bracket's midpoint, else 1; the bracket grows around x0 until f changes sign; x1 is
    x0 (1 + 1e-4) + 1e-4 away from 0 (as scipy's secant does). ``choices`` records each choice
    as a code with its numbers.
    """
    s = ws.settings
    kinds = _kinds(s.methods)
    choices: list[StartChoice] = []
    x0, x1, bracket = s.x0, s.x1, s.bracket
    blanks = x0 is None or (x1 is None and "two_point" in kinds) or (
        bracket is None and "bracket" in kinds)
    seed = None
    if ws.scan is not None and equation is not None and blanks:
        seed = seed_scan(equation.f, *ws.scan)
    if seed is not None and seed.cells:
        i, why = _pick_cell(seed, x0, bracket)
        lo, hi, guess = seed.cells[i]
        if x0 is None:
            x0 = guess
            choices.append(StartChoice("x0_scan_root", (guess, i + 1, len(seed.cells),
                                                        seed.a, seed.b, why)))
        if x1 is None and "two_point" in kinds and lo != hi:
            x1 = lo if abs(lo - x0) <= abs(hi - x0) else hi
            if abs(x1 - x0) <= _X1_APART * (hi - lo):
                # x0 on (or within rounding of) that end: a chord through two points an ulp
                # apart has a slope of rounding noise; the other end makes a real chord
                x1 = hi if x1 == lo else lo
                choices.append(StartChoice("x1_scan_far", (x1, lo, hi)))
            else:
                choices.append(StartChoice("x1_scan", (x1, lo, hi)))
        if bracket is None and "bracket" in kinds and lo != hi:
            bracket = (lo, hi)
            choices.append(StartChoice("bracket_scan_cell", (lo, hi)))
    elif seed is not None:
        if x0 is None and seed.least is not None:
            x0 = seed.least
            choices.append(StartChoice("x0_scan_min", (x0, seed.a, seed.b)))
        if bracket is None and "bracket" in kinds:
            fa, fb = _evaluate(equation.f, seed.a), _evaluate(equation.f, seed.b)
            if math.isfinite(fa) and math.isfinite(fb) and fa * fb <= 0:
                bracket = (seed.a, seed.b)
                choices.append(StartChoice("bracket_scan_range", bracket))
    if bracket is None and ws.scan is not None and equation is None and "bracket" in kinds:
        bracket = ws.scan  # no equation to look at: the range as given
        choices.append(StartChoice("bracket_scan_range", bracket))
    if x0 is None:
        if bracket is not None:
            x0 = 0.5 * (bracket[0] + bracket[1])
            choices.append(StartChoice("x0_bracket_midpoint", (x0,)))
        elif ws.scan is not None:
            x0 = 0.5 * (ws.scan[0] + ws.scan[1])
            choices.append(StartChoice("x0_scan_midpoint", (x0,)))
        else:
            x0 = 1.0
            choices.append(StartChoice("x0_default"))
    if bracket is None and equation is not None and "bracket" in kinds:
        bracket = _search_bracket(equation.f, x0)
        choices.append(StartChoice("bracket_grown", bracket) if bracket is not None
                       else StartChoice("bracket_none"))
    if x1 is None:
        x1 = x0 * (1 + 1e-4) + (1e-4 if x0 >= 0 else -1e-4)
        if "two_point" in kinds:
            choices.append(StartChoice("x1_nudged", (x1,)))
    if bracket is not None:
        bracket = (float(min(bracket)), float(max(bracket)))
    return StartValues(x0=float(x0), x1=float(x1), bracket=bracket, choices=tuple(choices))


def _no_bracket_run(name: str) -> Run:
    return Run(
        method=name,
        root=math.nan,
        converged=False,
        reason=NO_SIGN_CHANGE,
        iterations=0,
        evaluations=0,
        detail=Detail("no_bracket"),
    )


def run_methods(equation: Equation, sv: StartValues, settings: Settings) -> tuple[Run, ...]:
    """Run each of ``settings.methods`` on the equation from the resolved start values.

    Every method goes through :func:`solvers.methods.run_method`, the one dispatcher; a
    bracketing method with no bracket to start from gets a ``no_sign_change`` run with
    detail ``no_bracket`` (a result, not an error). Raises ValueError for an unknown
    method name.
    """
    runs: list[Run] = []
    for name in settings.methods:
        if "bracket" in method_spec(name).needs and sv.bracket is None:
            runs.append(_no_bracket_run(name))
            continue
        runs.append(run_method(
            name,
            equation.f,
            fprime=equation.fprime,
            x0=sv.x0,
            x1=sv.x1,
            bracket=sv.bracket,
            damping=settings.damping,
            derivative_source="symbolic" if equation.fprime is not None else "numerical",
            xtol=settings.xtol,
            rtol=settings.rtol,
            ftol=settings.ftol,
            max_iter=settings.max_iter,
        ))
    return tuple(runs)


# Converged roots farther apart than this, relative to their size, are different roots
# of f, not one root found to different precision: two doubles that both satisfy the
# step test at the default tolerances agree to far better than 1e-6 (common practice).
DIFFERENT_ROOTS = 1e-6


@dataclass(frozen=True)
class Agreement:
    """How the converged runs' roots compare.

    ``digits``: significant figures on which they all agree (0..15), or None when fewer
    than two converged or when they found different roots. ``groups``: the distinct
    roots found, each with the methods that found it, sorted by x (one group when they
    agree).
    """

    digits: int | None
    groups: tuple[tuple[float, tuple[str, ...]], ...]

    @property
    def different_roots(self) -> bool:
        return len(self.groups) > 1


def agreement(runs: Sequence[Run], xtol: float = 0.0) -> Agreement:
    """Group the converged runs by root and count the figures they share.

    Two roots belong to one group when they differ by at most ``DIFFERENT_ROOTS``
    relative to the larger, plus 2·xtol (the absolute step tolerance they ran with, so
    roots at or near zero group too).
    """
    found = sorted((r.root, r.method) for r in runs if r.converged and math.isfinite(r.root))
    groups: list[tuple[list[float], list[str]]] = []
    for x, method in found:
        if groups:
            last = groups[-1][0][-1]
            if abs(x - last) <= DIFFERENT_ROOTS * max(abs(x), abs(last)) + 2 * xtol:
                groups[-1][0].append(x)
                groups[-1][1].append(method)
                continue
        groups.append(([x], [method]))
    summary = tuple((xs[len(xs) // 2], tuple(ms)) for xs, ms in groups)
    if len(found) < 2 or len(groups) > 1:
        return Agreement(None, summary)
    return Agreement(_digits([x for x, _m in found]), summary)


def _digits(roots: list[float]) -> int:
    spread = max(roots) - min(roots)
    scale = max(abs(x) for x in roots)
    if spread == 0:
        return 15
    if scale == 0:
        return 0
    return max(0, min(15, math.floor(-math.log10(spread / scale))))


def agreement_digits(runs: Sequence[Run], xtol: float = 0.0) -> int | None:
    """Significant figures on which all converged runs agree.

    None if fewer than two converged, or if they converged to different roots (see
    :func:`agreement`: then no count of figures means anything). Counted as
    floor(-log10(spread / |root|)) capped at 15, the most a double carries reliably;
    roots at exactly zero agree to 15 when all are zero.
    """
    return agreement(runs, xtol).digits


def solve(ws: Worksheet, equation: Equation | None = None) -> Solution:
    """Parse (unless given) and run every method of the worksheet side by side.

    Parameters
    ----------
    ws : Worksheet
        The equation, its parameters, the methods and their settings (tolerances in
        the units of the unknown and of f).
    equation : Equation, optional
        The worksheet's equation already parsed; parsed from ``ws`` when None.

    Returns
    -------
    Solution
        The runs in the worksheet's method order, the start values and how each was
        chosen, and the figures on which the converged roots agree. A method that
        fails gives a run with its reason, never an exception.

    Raises
    ------
    EquationError
        When the equation does not parse (one line, with the position).
    ValueError
        For a method name that is not in :data:`solvers.methods.METHODS`.
    """
    eq = equation if equation is not None else equation_of(ws)
    sv = start_values(ws, eq)
    runs = run_methods(eq, sv, ws.settings)
    return Solution(ws, eq, sv, runs, agreement_digits(runs, ws.settings.xtol))


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
    return Solution(polished, eq, sv, runs, agreement_digits(runs, settings.xtol))


def solve_and_scan(
    ws: Worksheet,
    *,
    equation: Equation | None = None,
    solution: Solution | None = None,
    scan: Scan | None = None,
    progress: Callable[[float], None] | None = None,
    cancel: Callable[[], bool] | None = None,
) -> tuple[Solution, Scan | None]:
    """Every result a calculation sheet reports: the worksheet's solution and, when it
    has a scan range, the scan of that range (``None`` without one).

    A ``solution`` or ``scan`` already computed for this worksheet is used as it is, and
    ``equation`` (the worksheet's parsed equation, if the caller keeps one) spares the
    parse; otherwise the equation is parsed once for both. ``progress(fraction)`` runs
    from 0 to 1: the solve is the first quarter, the scan the rest. Raises as
    :func:`solve` does.
    """
    if solution is None:
        solution = solve(ws, equation)
    if progress is not None:
        progress(0.25)
    if ws.scan is None or scan is not None:
        return solution, scan if ws.scan is not None else None
    report = (lambda p: progress(0.25 + 0.75 * p)) if progress is not None else None
    return solution, scan_worksheet(ws, solution.equation, progress=report, cancel=cancel)
