"""A worksheet that holds a system -> its System and one SystemRun per chosen method.

The one path every front end takes for a system (the CLI and the sheet), as
:mod:`solvers.pipeline` is for one equation.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

from solvers.systems.model import System, parse_system
from solvers.systems.records import SystemRun
from solvers.systems.solve import solve_system
from solvers.worksheet import Worksheet


@dataclass(frozen=True)
class SystemSolution:
    """The system as parsed and every method's run on it, side by side."""

    worksheet: Worksheet
    system: System
    runs: tuple[SystemRun, ...]

    @functools.cached_property
    def definitions_at_root(self) -> tuple[SystemRun, dict[str, float]] | None:
        """(run, values): each defined quantity (SI) at the first converged run's root;
        None without definitions or without a converged run. Computed once and kept, so
        a front end can have it computed off its display thread and only read it there."""
        converged = [r for r in self.runs if r.converged]
        if not self.system.definitions or not converged:
            return None
        run = converged[0]
        return run, self.system.definition_values([run.root[n] for n in self.system.unknowns])


def system_of(ws: Worksheet) -> System:
    """The worksheet's equations parsed as a system (EquationError when they cannot be)."""
    if ws.system is None:
        raise ValueError("the worksheet holds one equation, not a system")
    return parse_system(ws.equation, [u.name for u in ws.system.unknowns],
                        ws.parameter_values(), unknown_units=ws.system.units(),
                        check_dimensions=ws.dimension_check)


def solve_worksheet(ws: Worksheet, system: System | None = None) -> SystemSolution:
    """Every method of ``ws.system.methods`` from the worksheet's start values, with its
    stopping rules (xtol, rtol, ftol, max_iter of ``ws.settings``)."""
    system = system or system_of(ws)
    s = ws.settings
    start = ws.system.start()  # type: ignore[union-attr]
    runs = tuple(solve_system(system, start, method=m, xtol=s.xtol, rtol=s.rtol, ftol=s.ftol,
                              max_iter=s.max_iter)
                 for m in ws.system.methods)  # type: ignore[union-attr]
    return SystemSolution(ws, system, runs)
