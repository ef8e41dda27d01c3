"""What a batch returns: :class:`Batch` (struct of arrays), its cancel signal, note codes.

A batch is one method over many rows of parameter values (and start values). The numbers
live in numpy arrays of the rows' broadcast shape; a row's full iteration record (every
iterate, as a single solve has it) is rebuilt on demand by :meth:`Batch.run`, which runs
the scalar method of the registry on that row's bound equation.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cached_property
from types import MappingProxyType
from typing import Any

import numpy as np

from solvers.records import CONVERGED_REASONS, REASONS, Run, Setting

__all__ = ["BATCH_REASONS", "NOTE_CODES", "OUTSIDE_RANGE", "REASON_CODES", "Batch",
           "BatchCancelled"]

# The one reason a row of a sweep can have beyond solvers.REASONS: its method converged,
# but to a root outside the range given for the unknown (``bounds``). That root is not the
# branch's: the row records no root (NaN), converged False, and a ``left_range`` note.
OUTSIDE_RANGE = "outside_range"

# Codes of ``Batch.notes`` (index, code): what a checker should know about one row.
# Words for them live in app.documents.words (BATCH_NOTE_TEXT).
NOTE_CODES: tuple[str, ...] = (
    "bad_parameters",      # the row's parameter values give a part of f no finite real value
    "failed",              # sweep: the row did not converge
    "restart_last_good",   # sweep: after a failure, started again from the last good root
    "restart_x0",          # sweep: after a failure with no good root yet, started from x0
    "branch_jump",         # sweep: the root is off the branch, which shorter steps could not follow
    "turning_point",       # sweep: f' changed sign from the last row's root: another branch
    "at_fold",             # sweep: f' is 0 at the root (a double root): the branch ends here
    "left_range",          # sweep: the root left the given range of the unknown (not taken)
    "fixed_bracket",       # sweep: a bracketing method uses the same bracket on every row
    "restart_scan",        # sweep: resumed here from a root chosen by a scan at this value
    "continued",           # sweep: reached through intermediate values (the step was too long)
)

# Every reason a row of a batch can have, in code order: the kernels' small integer codes
# are indexes into it (REASONS first, so REASON_CODES[r] == REASONS.index(r)).
BATCH_REASONS: tuple[str, ...] = (*REASONS, OUTSIDE_RANGE)
REASON_CODES: Mapping[str, int] = MappingProxyType({r: i for i, r in enumerate(BATCH_REASONS)})
CONVERGED_INDEX = np.array([r in CONVERGED_REASONS for r in BATCH_REASONS], dtype=bool)
# The converged reasons are the first codes (solvers.records lists them first): a row
# converged where its code, read as unsigned (a code never written, -1, reads 255), is
# below their number. One comparison instead of a gather over the table above.
_CONVERGED_END = int(CONVERGED_INDEX.sum())
if not CONVERGED_INDEX[:_CONVERGED_END].all():
    raise ImportError("solvers.REASONS must list the converged reasons first")


def converged_of(codes: np.ndarray) -> np.ndarray:
    """Where the rows' reason codes (int8, :data:`REASON_CODES`) are converged reasons."""
    return codes.view(np.uint8) < _CONVERGED_END


class BatchCancelled(Exception):
    """Raised by :func:`solvers.solve_batch` and :func:`solvers.sweep` when ``cancel()``
    returned True (polled between chunks and between iterations)."""


@dataclass(frozen=True, eq=False)
class Batch:
    """One method over rows of inputs: struct-of-arrays results of the rows' shape.

    Attributes
    ----------
    root : numpy.ndarray of float
        The root of each row in the unknown's units; NaN where the row did not converge.
    converged : numpy.ndarray of bool
        True only where the row's method stopped at a root of f (the same rule as
        :attr:`solvers.Run.converged`).
    reason_code : numpy.ndarray of int8
        The stop reason of each row as its index in :data:`BATCH_REASONS`: one of
        :data:`solvers.REASONS`, or :data:`OUTSIDE_RANGE` for a sweep's row whose method
        converged to a root outside the range given for the unknown (no root recorded;
        :meth:`run` rebuilds the method's run, which did converge, out there).
    reason : numpy.ndarray of str
        The same reasons as strings, made from ``reason_code`` when first read (10^5
        rows of 15-character strings are 6 MB: a table that is only counted, charted or
        shown a screenful at a time never needs them all).
    iterations, evaluations : numpy.ndarray of int
        Iterates produced and calls of f (and f') made for each row, counted as the
        scalar methods count them (a vectorised call counts once for every row in it).
    residual : numpy.ndarray of float
        f at the root in f's units (NaN where there is no root).
    notes : list of (int, str)
        ``(flat row index, code)`` for rows a checker should know about, in row order;
        codes in :data:`NOTE_CODES` (app/documents/words says each in words).
    method : str
        The method's name in :data:`solvers.METHODS`.
    settings : mapping
        The stopping rules and options used (xtol, rtol, ftol, max_iter, and method
        extras such as damping and where Newton's derivative came from).
    equation : Equation
        The parsed equation (rebound per row by :meth:`run`).
    parameters, starts : mapping
        The rows' parameter values and start values (``x0``, ``x1``, ``a``, ``b``),
        floats or arrays that broadcast to the batch's shape.
    """

    root: np.ndarray
    converged: np.ndarray
    reason_code: np.ndarray
    iterations: np.ndarray
    evaluations: np.ndarray
    residual: np.ndarray
    notes: list[tuple[int, str]] = field(default_factory=list)
    method: str = ""
    settings: Mapping[str, Setting] = field(default_factory=lambda: MappingProxyType({}))
    equation: Any = field(default=None, repr=False)
    parameters: Mapping[str, Any] = field(default_factory=lambda: MappingProxyType({}),
                                          repr=False)
    starts: Mapping[str, Any] = field(default_factory=lambda: MappingProxyType({}), repr=False)
    # the SI unit of each parameter given with a unit (``parameters`` holds its SI magnitude)
    units: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({}), repr=False)

    def __post_init__(self) -> None:
        for name in ("root", "converged", "reason_code", "iterations", "evaluations",
                     "residual"):
            # a read-only view: the record cannot be changed through its attributes (the
            # solvers hand over arrays nobody else holds; no copy of 10^6 rows)
            value = np.asarray(getattr(self, name)).view()
            value.flags.writeable = False
            object.__setattr__(self, name, value)
        # a list, as the documented contract reads (a fresh copy: nothing else holds it)
        object.__setattr__(self, "notes", [(int(i), str(c)) for i, c in self.notes])
        object.__setattr__(self, "settings", MappingProxyType(dict(self.settings)))
        object.__setattr__(self, "parameters", MappingProxyType(dict(self.parameters)))
        object.__setattr__(self, "starts", MappingProxyType(dict(self.starts)))
        object.__setattr__(self, "units", MappingProxyType(dict(self.units)))

    @cached_property
    def reason(self) -> np.ndarray:
        """The stop reason of each row as a string (see the class notes; read-only)."""
        value = reason_array(self.reason_code)
        value.flags.writeable = False
        return value

    def reason_at(self, index: int | tuple[int, ...]) -> str:
        """The stop reason of one row (flat index or index tuple), without decoding the
        others."""
        return BATCH_REASONS[int(self.reason_code.reshape(-1)[self._flat(index)])]

    @property
    def shape(self) -> tuple[int, ...]:
        return self.root.shape

    @property
    def size(self) -> int:
        return int(self.root.size)

    def __len__(self) -> int:
        return self.size

    def _flat(self, index: int | tuple[int, ...]) -> int:
        if isinstance(index, tuple):
            return int(np.ravel_multi_index(index, self.shape))
        i = int(index)
        if not -self.size <= i < self.size:
            raise IndexError(f"row {i} is outside the batch of {self.size} rows")
        return i % self.size if self.size else i

    def row_values(self, index: int | tuple[int, ...]) -> dict[str, float]:
        """The parameter values of one row (flat index or index tuple), as floats."""
        i = self._flat(index)
        return {n: _element(v, self.shape, i) for n, v in self.parameters.items()}

    def row_starts(self, index: int | tuple[int, ...]) -> dict[str, float]:
        """The start values of one row: ``x0``, ``x1``, ``a``, ``b`` as given."""
        i = self._flat(index)
        return {n: _element(v, self.shape, i) for n, v in self.starts.items()}

    def run(self, index: int | tuple[int, ...]) -> Run:
        """The full :class:`solvers.Run` of one row, every iterate on record.

        Runs the scalar method of the registry (:func:`solvers.run_method`) on the
        equation bound to this row's values, from this row's start values, with the
        batch's settings, with f evaluated by the same numpy code on an array of one:
        the kernels take the scalar method's steps, so the run ends with the row's
        reason, iterations, evaluations and root, to the bit.
        Raises :class:`solvers.EquationError` for a row whose parameter values f cannot
        use (a ``bad_parameters`` note).
        """
        from solvers.batch.rows import bind_rows
        from solvers.methods.registry import run_method

        # The row bound as rows of one, and f called on arrays of one: the same numpy
        # arithmetic as the vectorised kernels (the scalar path's math functions can
        # differ in the last bit, which an open method far from a root may amplify).
        equation = bind_rows(self.equation, {n: np.array([v]) for n, v in
                                             self.row_values(index).items()}, self.units)
        starts = self.row_starts(index)
        s = self.settings
        fprime = (_one_row(equation.fprime)
                  if s.get("derivative") == "symbolic" and equation.fprime is not None
                  else None)
        bracket = (starts["a"], starts["b"]) if "a" in starts else None
        return run_method(
            self.method, _one_row(equation.f), fprime=fprime,
            derivative_source="symbolic" if fprime is not None else None,
            x0=starts.get("x0"), x1=starts.get("x1"), bracket=bracket,
            damping=float(s.get("damping", 1.0)), xtol=float(s["xtol"]),
            rtol=float(s["rtol"]), ftol=float(s["ftol"]), max_iter=int(s["max_iter"]),
        )

    def counts(self) -> dict[str, int]:
        """How many rows stopped for each reason (reasons with no row left out)."""
        counts = np.bincount(self.reason_code.reshape(-1), minlength=len(BATCH_REASONS))
        return {r: int(c) for r, c in sorted(zip(BATCH_REASONS, counts, strict=True)) if c}


def _one_row(fn: Any) -> Any:
    """f of a scalar x through the array path: f(x) = fn([x])[0]."""

    def at(x: float) -> Any:
        return fn(np.array([x], dtype=np.float64))[0]

    return at


def _element(value: Any, shape: tuple[int, ...], i: int) -> float:
    if isinstance(value, np.ndarray):
        return float(np.broadcast_to(value, shape).reshape(-1)[i])
    return float(value)


_REASON_STRINGS = np.asarray(BATCH_REASONS)


def reason_array(codes: np.ndarray) -> np.ndarray:
    """Reason strings from the kernels' integer codes (``take``: about half the time of
    indexing with the codes, the same array of str; a 0-d array for one row given as
    scalars, where ``take`` alone answers a numpy scalar)."""
    return np.asarray(_REASON_STRINGS.take(codes))

