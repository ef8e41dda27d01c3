"""Tables of inputs: one equation solved for many rows at once, and sweeps of a parameter.

``solve_batch(equation, method=..., x0=..., bracket=...)`` runs a method of the registry
over arrays of parameter values and start values (:mod:`solvers.batch.driver`): the
element-wise forms of the scalar methods (:mod:`solvers.batch.open`,
:mod:`solvers.batch.bracketing`) with the machinery they share (:mod:`solvers.batch.rows`),
in chunks, with progress and cancel. ``sweep(equation, name, values, x0=...)`` follows a
root along a parameter by continuation (:mod:`solvers.batch.sweep`). Both return a
:class:`Batch` (:mod:`solvers.batch.records`). ``solve_table`` and ``solve_sweep``
(:mod:`solvers.batch.table`) go from equation text and columns to a batch, for every front
end alike.
"""

from solvers.batch.driver import CHUNK_ROWS, KERNELS, solve_batch
from solvers.batch.records import NOTE_CODES, OUTSIDE_RANGE, Batch, BatchCancelled
from solvers.batch.sweep import resume_sweep, sweep
from solvers.batch.table import (
    START_COLUMNS,
    TableSolve,
    solve_inputs,
    solve_sweep,
    solve_table,
)

__all__ = ["CHUNK_ROWS", "KERNELS", "NOTE_CODES", "OUTSIDE_RANGE", "START_COLUMNS", "Batch",
           "BatchCancelled",
           "TableSolve", "resume_sweep", "solve_batch", "solve_inputs", "solve_sweep",
           "solve_table", "sweep"]
