"""The words of systems of equations and of definitions: method titles, blocks, unit
cells, result columns, the definitions at a root."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from app.documents.words.numbers import DEFAULT_FIGURES, counted, number
from app.documents.words.runs import system_reason_text

# ----------------------------------------------------------------- systems and definitions

# Titles of the methods for systems (solvers.systems.SYSTEM_METHODS).
SYSTEM_METHOD_TITLES: dict[str, str] = {
    "newton": "Newton–Raphson",  # on the Jacobian: the same name as for one equation
    "broyden": "Broyden",
}

SYSTEM_METHOD_SUMMARIES: dict[str, str] = {
    "newton": "Newton steps on the symbolic Jacobian, shortened by a line search on ||F||",
    "broyden": "Broyden's rank-one updates of a difference Jacobian, no derivatives, same "
               "line search",
}

JACOBIAN_WORDS: dict[str, str] = {
    "symbolic": "symbolic Jacobian (sympy), compiled once",
    "differences": "Jacobian by forward differences",
}


def system_method_title(name: str) -> str:
    return SYSTEM_METHOD_TITLES.get(name, name.replace("_", " "))


def system_run_message(run: Any) -> str:
    """A system run in one sentence: converged or not, why, and at what cost."""
    title = system_method_title(run.method)
    verdict = "converged" if run.converged else "did not converge"
    # the reason in words only: the code is for scripts (JSON, CSV, a table's column)
    return (f"{title} {verdict} after {counted(run.iterations, 'iteration')} and "
            f"{counted(run.evaluations, 'evaluation')} "
            f"{EVALUATIONS_OF.get(run.jacobian, EVALUATIONS_OF['symbolic'])}: "
            f"{system_reason_text(run.reason)}.")


# What a system run's evaluations count (SystemRun.evaluations), by its Jacobian: a run on
# differences never calls J, so "of F and J" would claim work it did not do.
EVALUATIONS_OF: dict[str, str] = {
    "symbolic": "of F and J",
    "differences": "of F (the difference Jacobian's included)",
}


def blocks_text(blocks: Sequence[Any], unknowns: Sequence[str]) -> str:
    """The block-triangular order in words: "solved in 2 blocks: (Q1) then (Q2, H)"."""
    if len(blocks) <= 1:
        return "solved as one block (every equation couples with the others)"
    parts = ["(" + ", ".join(unknowns[j] for j in cols) + ")" for _, cols in blocks]
    return f"solved in {len(blocks)} blocks, in this order: " + " then ".join(parts)


def unit_cell(unit: str | None) -> str:
    """A defined quantity's SI unit in a table cell: the unit, "dimensionless", or "—"
    where none can be named (the dimension check off, or a mixed dimension)."""
    return "—" if unit is None else unit or "dimensionless"


LAST_ITERATE = "last iterate (not a root)"


def result_column(title: str, converged: bool) -> str:
    """The heading of a run's column of values at its root: the method's title, or for a
    run that did not converge "Brent: last iterate (not a root)" (as the terminal says
    "definitions at the last iterate (not a root)")."""
    return title if converged else f"{title}: {LAST_ITERATE}"


def definitions_line(values: Mapping[str, float], figures: int = DEFAULT_FIGURES,
                     units: Mapping[str, str | None] | None = None) -> str:
    """Defined quantities at the root: "A = 0.0314 m^2, v = 3.18 m/s" (``units``: each
    one's SI unit, '' or None for none)."""
    units = units or {}
    return ", ".join(f"{name} = {number(v, figures)}"
                     + (f" {units[name]}" if units.get(name) else "")
                     for name, v in values.items())
