"""The system window's work off the UI thread: reading a system text (its unknowns,
parameters and block order, or why not) and solving it with the methods ticked. Plain
functions called in the window's job lanes; they never touch a widget."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from app.documents import words
from app.documents.worksheet import Parameter, StartValue, SystemSpec, Worksheet
from app.window.workers import Cancelled


@dataclass(frozen=True)
class Reading:
    """What the text means as a system: the unknowns and parameter names, or why not;
    ``notes``: what its units mean (:func:`app.documents.words.unit_notes`), the notes
    its solve gives."""

    unknowns: tuple[str, ...] = ()
    parameters: tuple[str, ...] = ()
    definitions: tuple[str, ...] = ()
    blocks: str = ""
    error: str = ""
    notes: tuple[str, ...] = ()


def read_system(text: str, values: dict[str, Any], given: Sequence[str] = (),
                units: Mapping[str, str] | None = None,
                dimension_check: bool = True) -> Reading:
    """The names of a system text (in a worker; never raises for bad text). The unknowns are
    ``given``, or else every name without a value; every other name is a parameter.

    Read as :func:`solve_text` parses it: ``values`` (numbers, or numbers with a unit),
    the unknowns' ``units`` (name -> unit; those of names that are no unknown are left
    out) and ``dimension_check``; so a unit that does not fit is said while typing, and
    the reading's notes on units are those its solve gives."""
    from solvers.equation import EquationError
    from solvers.equation.lines import read_lines
    from solvers.systems import parse_system
    from solvers.systems.model import _classifier

    try:
        reading = read_lines(text, _classifier(values, tuple(given) or None))
    except EquationError as exc:
        return Reading(error=str(exc))
    unknowns = tuple(given) or tuple(n for n in reading.names if n not in values)
    params = tuple(n for n in reading.names if n not in unknowns)
    chosen = {n: u for n, u in (units or {}).items() if n in unknowns}
    try:
        system = parse_system(text, unknowns or None,
                              {n: values[n] for n in params if n in values},
                              unknown_units=chosen, check_dimensions=dimension_check)
    except EquationError as exc:
        return Reading(unknowns, params, error=str(exc))
    return Reading(system.unknowns, params, system.definitions,
                   words.blocks_text(system.blocks, system.unknowns),
                   notes=words.unit_notes(system.remarks))


def solve_text(text: str, unknowns: Sequence[str], parameters: dict[str, Any],
               starts: dict[str, float], methods: Sequence[str], settings: Any,
               progress: Any = None, cancelled: Any = None,
               units: dict[str, str] | None = None,
               dimension_check: bool = True) -> Any:
    """Parse and solve (in a worker): the SystemSolution of a worksheet built from the fields.
    ``progress(fraction)`` runs across the methods (each method's share from inside its
    solve); ``cancelled()`` is polled inside every solve, each iteration and line-search
    trial (a cancel raises :class:`solvers.SystemCancelled`, which the runner reports as
    cancelled)."""
    from solvers.systems import solve_system
    from solvers.systems.pipeline import SystemSolution, system_of

    units = units or {}
    spec = SystemSpec(tuple(StartValue(n, starts[n], units.get(n)) for n in unknowns),
                      tuple(methods))
    ws = Worksheet(equation=text, parameters=tuple(Parameter(n, v)
                                                   for n, v in parameters.items()),
                   settings=settings, system=spec, dimension_check=dimension_check)
    system = system_of(ws)
    share = 1.0 / (len(methods) + 1)  # the parse counts as one share
    runs = []
    for i, method in enumerate(methods):
        if cancelled is not None and cancelled():
            raise Cancelled()

        def within(f: float, i: int = i) -> None:
            if progress is not None:
                progress(share * (1 + i + f))

        runs.append(solve_system(system, ws.system.start(), method=method, xtol=settings.xtol,
                                 rtol=settings.rtol, ftol=settings.ftol,
                                 max_iter=settings.max_iter, progress=within,
                                 cancel=cancelled))
    solution = SystemSolution(ws, system, tuple(runs))
    if solution.definitions_at_root is not None:  # worked out here: the window only reads
        system.definition_units(derived=True)
    return solution
