"""The shared machinery of the batch kernels: f over a chunk's rows, the active set, and
the vectorised forms of the scalar methods' honesty rules.

* :class:`Rows` binds the equation to one chunk's parameter values once (its checks run
  once) and evaluates f (and f') on any subset of those rows as one call of the compiled
  code, with the rows' parameter-only parts of f taken along (no binding again).
* :class:`Work` holds the arrays of the rows still iterating; :meth:`Work.finish` writes
  the finished rows' results and compresses every array at once (or, for a lazy
  kernel, when the finished rows are a quarter of the arrays).
* :func:`zero_is_root`, :func:`iterate_zero`, :func:`closed_verdict` and
  :func:`central_difference` are the element-wise forms of the rules of
  :mod:`solvers.methods.common` and :mod:`solvers.methods.bracketing` (same constants,
  same order of tests): an exact 0.0 from underflow is no root, a bracket that closed on
  a jump is a discontinuity, a pole is not finite.
"""

from __future__ import annotations

import math
import sys
import threading
from collections.abc import Callable, Mapping
from typing import Any

import numpy as np

from solvers.batch.records import CONVERGED_INDEX, REASON_CODES, BatchCancelled
from solvers.equation import EquationError
from solvers.equation.compile import in_blocks
from solvers.methods.bracketing import _CHORD_SHARE, _NOISE_FALL, _SLOPE_SPREAD
from solvers.methods.common import (
    _CAPPED_REACH,
    _PROBE_GROWTH,
    _PROBE_REACH,
    _TINY,
    DERIVATIVE_STEP,
    ROUNDING_QUANTA,
    plateau_detail,
    plateau_points,
)
from solvers.units import Measured

X_TOL, F_TOL, EXACT, MAX_IT, ZERO_D, NOT_FIN, NO_SIGN, DISCONT = (
    REASON_CODES[r] for r in ("x_tolerance", "f_tolerance", "exact_zero", "max_iterations",
                              "zero_derivative", "not_finite", "no_sign_change",
                              "discontinuity"))
_FLOAT_MIN = sys.float_info.min


class Scratch:
    """Work arrays of one batch, reused from chunk to chunk.

    A chunk's work arrays (iterates, carried parameter parts, probes) are a few hundred
    kB each; numpy allocates arrays that large as fresh pages from the system, whose
    first touch costs a page fault each (about 0.2 ms per MB): made again for every
    chunk, they cost Newton over 10^5 rows more than its arithmetic (3,200 faults a
    batch against 700 for scipy's array Newton, benchmarks/bench_batch.py). Made once
    per batch and handed out again to every chunk, they fault once. A chunk's arrays
    hold nothing the next chunk reads: every kernel writes before it reads.
    """

    def __init__(self) -> None:
        self._buffers: dict[tuple[str, Any], np.ndarray] = {}

    @property
    def nbytes(self) -> int:
        """The memory the scratch holds."""
        return sum(b.nbytes for b in self._buffers.values())

    def take(self, name: str, shape: int | tuple[int, ...], dtype: Any = np.float64
             ) -> np.ndarray:
        """An array of ``shape`` (contents left over: the caller writes before reading),
        the same memory as the last one taken under ``name`` whenever it fits."""
        shape = (shape,) if shape.__class__ is int else shape
        size = math.prod(shape)
        key = (name, dtype)
        buffer = self._buffers.get(key)
        if buffer is None or buffer.size < size:
            buffer = self._buffers[key] = np.empty(size, dtype=dtype)
        return buffer[:size].reshape(shape)

    def zeros(self, name: str, shape: int | tuple[int, ...], dtype: Any = np.float64
              ) -> np.ndarray:
        """:meth:`take`, filled with zeros."""
        out = self.take(name, shape, dtype)
        out.fill(0)
        return out


_KEPT = threading.local()
KEEP_BYTES = 32 * 2**20
"""A thread keeps its scratch for its next batch when it holds no more than this (32 MB:
the default chunks take about 3 MB)."""


def scratch() -> Scratch:
    """The calling thread's scratch from its last batch (its work arrays' pages touched
    already: a table solved again and again, a sweep or a Monte Carlo run, faults once),
    or a new one; hand it back with :func:`done_with`. A batch inside a batch (a callback
    that solves another table) takes a new one."""
    kept = getattr(_KEPT, "scratch", None)
    _KEPT.scratch = None
    return Scratch() if kept is None else kept


def done_with(used: Scratch) -> None:
    """Keep ``used`` for the thread's next batch (unless it grew beyond
    :data:`KEEP_BYTES`)."""
    if used.nbytes <= KEEP_BYTES:
        _KEPT.scratch = used


class Outcome:
    """Results of one chunk, written row by row as rows finish."""

    def __init__(self, n: int) -> None:
        self.root = np.full(n, np.nan)
        self.code = np.full(n, -1, dtype=np.int8)
        self.iterations = np.zeros(n, dtype=np.int32)
        self.evaluations = np.zeros(n, dtype=np.int32)
        self.residual = np.full(n, np.nan)
        self.notes: list[tuple[int, str]] = []

    def part(self, begin: int, end: int) -> Outcome:
        """The rows begin..end: views of these arrays (a chunk's kernel writes its results
        straight into the whole batch's, no copy afterwards) and the same notes."""
        part = object.__new__(Outcome)
        for name in ("root", "code", "iterations", "evaluations", "residual"):
            setattr(part, name, getattr(self, name)[begin:end])
        part.notes = self.notes
        return part

    def write(self, rows: np.ndarray, code: Any, root: np.ndarray, residual: np.ndarray,
              iterations: Any, evaluations: Any) -> None:
        code = np.broadcast_to(np.asarray(code, dtype=np.int8), rows.shape)
        good = CONVERGED_INDEX[code]
        self.code[rows] = code
        self.root[rows] = np.where(good, root, np.nan)
        self.residual[rows] = np.where(good, residual, np.nan)
        self.iterations[rows] = iterations
        self.evaluations[rows] = evaluations


def bind_rows(equation: Any, values: Mapping[str, Any], units: Mapping[str, str],
              rows: np.ndarray | None = None) -> Any:
    """``equation`` bound to ``values`` (floats or arrays; ``rows`` of the arrays when
    given). A name in ``units`` holds an SI magnitude and is bound with that SI unit
    (:class:`solvers.units.Measured`: a factor of one), so it keeps its dimension: a
    plain number beside values with units is dimensionless."""
    if rows is not None:
        values = {n: v[rows] if isinstance(v, np.ndarray) else v for n, v in values.items()}
    if units:
        values = {n: Measured(v, units[n]) if n in units else v for n, v in values.items()}
    return equation.bind(values)


def _find_bad_rows(equation: Any, values: Mapping[str, Any], units: Mapping[str, str],
                   rows: np.ndarray, bad: list[np.ndarray]) -> None:
    """Split ``rows`` until every row whose values the equation refuses is found."""
    try:
        bind_rows(equation, values, units, rows)
    except EquationError:
        if rows.size == 1:
            bad.append(rows)
            return
        half = rows.size // 2
        _find_bad_rows(equation, values, units, rows[:half], bad)
        _find_bad_rows(equation, values, units, rows[half:], bad)


class Rows:
    """f and f' of one chunk's rows (parameter ``values``: floats or 1-D arrays of n).

    ``bad`` marks rows whose values give a part of f with no finite real value (found by
    halving the chunk until the refused rows are single); they are not bound. ``bound``:
    the equation already bound to exactly these values, if there is one.

    The equation is bound once (its checks run once); after that f and f' are the
    compiled code called with x and the parts of f made of parameters only
    (``hoisted``: one value per bound row, or one number for every row), the values
    :meth:`solvers.Equation.bind` computed with the same numpy code. :class:`Work`
    keeps the active rows' share of them and takes them along when it compresses, so
    f at any subset of rows is one call of the compiled code: no binding again.
    """

    def __init__(self, equation: Any, values: Mapping[str, Any], n: int,
                 bound: Any = None, units: Mapping[str, str] | None = None) -> None:
        self._equation = equation
        self._values = dict(values)
        self._units = dict(units or {})
        self.fixed = not any(isinstance(v, np.ndarray) for v in self._values.values())
        self.bad = np.zeros(n, dtype=bool)
        self.size = n
        try:
            self._bound = bound if bound is not None else bind_rows(equation, self._values,
                                                                    self._units)
        except EquationError:
            if self.fixed:
                raise
            found: list[np.ndarray] = []
            _find_bad_rows(equation, self._values, self._units, np.arange(n), found)
            if not found:  # refused as a whole only: the caller's error
                raise
            self.bad[np.concatenate(found)] = True
            rows = np.flatnonzero(~self.bad)
            self._bound = self._bind(rows) if rows.size else None
            self.size = int(rows.size)
        self.hoisted: tuple[Any, ...] = ()
        self._codes: dict[str, Any] = {}
        if self._bound is not None:
            self._compiled(self._bound)

    def _bind(self, rows: np.ndarray) -> Any:
        return bind_rows(self._equation, self._values, self._units, rows)

    def part(self, begin: int, end: int) -> Rows:
        """The rows begin..end of rows bound with no bad row: the same compiled code,
        views of the parameter parts (a chunk of a bound equation binds nothing)."""
        assert not self.bad.any()
        part = object.__new__(Rows)
        part.__dict__.update(self.__dict__)
        part.bad = np.zeros(end - begin, dtype=bool)
        part.size = end - begin
        part.hoisted = tuple(h[begin:end] if h.__class__ is np.ndarray else h
                             for h in self.hoisted)
        return part

    def _compiled(self, bound: Any) -> None:
        """The compiled f and f' of the bound equation and its parameter-only parts, as
        :func:`solvers.equation.record._run_checks` computes them (numpy path)."""
        core = bound._core
        self._codes = {"f": core.f_code.vector,
                       "fprime": None if core.fprime_code is None else core.fprime_code.vector}
        if core.bind_code is None:
            return
        out = bound._cache.get("hoisted")  # computed by the binding: the same numpy code
        if out is None:
            params = (bound.parameters[name] for name in core.parameter_names)
            out = core.bind_code.vector(*(np.float64(v) if v.__class__ is float else v
                                          for v in params))
        hoisted = []
        for value in out[:core.n_hoisted]:
            arr = np.asarray(value, dtype=np.float64)
            hoisted.append(arr if arr.ndim else np.float64(arr))
        self.hoisted = tuple(hoisted)

    def call(self, which: str, x: np.ndarray, hoisted: tuple[Any, ...]) -> np.ndarray:
        """f or f' at x, one value per row, ``hoisted`` those rows' parameter parts."""
        out = in_blocks(self._codes[which], x, hoisted)
        if out.__class__ is not np.ndarray or out.shape != x.shape or out.dtype != np.float64:
            # a part free of x (or of the rows) comes back as one number, or an int
            out = np.array(np.broadcast_to(np.asarray(out, dtype=np.float64), x.shape))
        return out


Poll = Callable[[float], None]


def make_poll(progress: Callable[[float], Any] | None, cancel: Callable[[], bool] | None,
              done: int, total: int, chunk: int) -> Poll:
    """progress/cancel as one callable of the share of the chunk finished."""

    def poll(share: float) -> None:
        if cancel is not None and cancel():
            raise BatchCancelled
        if progress is not None and total:
            progress(min(1.0, (done + share * chunk) / total))

    return poll


class Work:
    """The rows of a chunk still iterating: named arrays of equal length, compressed together.

    ``rows`` are chunk positions (ascending). Every kernel iterates its rows in step, so
    the iteration count ``k`` is one number; calls of f made for every row of the arrays
    are counted in ``calls`` and calls for some rows only (probes) per chunk row. Every
    attribute that is an array of the arrays' length is compressed with them (private
    ones, named ``_...``, are per chunk row and are not), and so are the rows' parts of
    f made of parameters only (:attr:`Rows.hoisted`).

    Compressing costs a copy of every array, so a kernel may let finished rows ride
    along (``lazy=True``): they are marked in ``dead``, their results are written
    once, when they finish, and the arrays are compressed only when the dead rows are
    a quarter of them (then f on a dead row costs less than copying every array for
    it). The kernel then leaves dead rows out of every test that evaluates f for some
    rows only (:meth:`live`); their values go on being computed and are never read.
    """

    #: dead rows are dropped when they are this share of the arrays (or more)
    DEAD_SHARE = 0.25

    def __init__(self, out: Outcome, fn: Rows, rows: np.ndarray, poll: Poll,
                 scratch: Scratch | None = None, **arrays: np.ndarray) -> None:
        self.out, self.fn, self.poll, self.total = out, fn, poll, len(out.code)
        self.scratch = Scratch() if scratch is None else scratch
        self.rows = rows
        self.k = 0
        self.calls = 0
        self.dead: np.ndarray | None = None  # lazy kernels: finished rows still in the arrays
        self._dead_count = 0
        self._h = fn.hoisted  # the active rows' parameter parts of f (arrays or numbers)
        # per chunk row, never compressed: calls made for some rows only (probes), and
        # values kept from the start (read through ``kept``)
        self._extra = self.scratch.zeros("extra", len(out.code), np.int64)
        self._kept: dict[str, np.ndarray] = {}
        self.__dict__.update(arrays)

    def lazy(self) -> None:
        """Let finished rows ride along until they are :attr:`DEAD_SHARE` of the arrays."""
        self.dead = np.zeros(self.size, dtype=bool)
        self._dead_count = 0

    def live(self, mask: np.ndarray) -> np.ndarray:
        """``mask`` without the dead rows (the mask itself when no row is dead)."""
        if self._dead_count:
            return mask & ~self.dead
        return mask

    def keep(self, **arrays: np.ndarray) -> None:
        """Keep start values (active length now) for later reading by :meth:`kept`."""
        for name, value in arrays.items():
            whole = np.full(len(self.out.code), np.nan)
            whole[self.rows] = value
            self._kept[name] = whole

    def kept(self, idx: np.ndarray, *names: str) -> list[np.ndarray]:
        """Kept start values ``names`` of the active rows ``idx`` (one array per name)."""
        rows = self.rows.take(idx)
        return [self._kept[name].take(rows) for name in names]

    @property
    def size(self) -> int:
        return int(self.rows.size)

    def _evaluate(self, which: str, x: np.ndarray, subset: np.ndarray | None) -> np.ndarray:
        if subset is None:
            self.calls += 1
            return self.fn.call(which, x, self._h)
        if subset.dtype == bool:
            subset = np.flatnonzero(subset)
        self._extra[self.rows[subset]] += 1
        return self.fn.call(which, x, tuple(h.take(subset) if h.__class__ is np.ndarray
                                            else h for h in self._h))

    def _owned(self, which: str, x: np.ndarray, subset: np.ndarray | None) -> np.ndarray:
        # The kernels write into f's values in place: never into x itself (f = x returns
        # its argument) or a read-only broadcast.
        out = self._evaluate(which, x, subset)
        if not out.flags.writeable or np.may_share_memory(out, x):
            out = np.array(out, dtype=np.float64)
        return out

    def f_points(self, points: np.ndarray, subset: np.ndarray) -> np.ndarray:
        """f at ``points`` (one row of k points for each of the rows ``subset``, ascending
        indices of the arrays' rows), each of those rows counted k calls."""
        m, k = points.shape
        self._extra[self.rows[subset]] += k
        idx = np.repeat(subset, k)
        return self.fn.call("f", points.reshape(-1), tuple(
            h.take(idx) if h.__class__ is np.ndarray else h for h in self._h)).reshape(m, k)

    def f(self, x: np.ndarray, subset: np.ndarray | None = None) -> np.ndarray:
        """f at x for every row of the arrays (``subset`` None) or for the rows ``subset``
        marks (a boolean mask or ascending indices of the arrays' rows)."""
        return self._owned("f", x, subset)

    def fprime(self, x: np.ndarray) -> np.ndarray:
        return self._owned("fprime", x, None)

    def finish(self, code: np.ndarray, root: np.ndarray, residual: np.ndarray) -> None:
        """Finish the rows with ``code >= 0`` (their stop reasons), with root and residual
        (dead rows are finished already: their codes are not read)."""
        mask = code >= 0
        if self._dead_count:
            mask &= ~self.dead
        if mask.any():
            idx = np.flatnonzero(mask)
            self._finish(idx, code.take(idx), root.take(idx), residual.take(idx))

    def finish_at(self, idx: np.ndarray, code: np.ndarray, root: np.ndarray,
                  residual: np.ndarray) -> None:
        """:meth:`finish` for the rows ``idx`` (ascending indices of live rows; the other
        arguments are those rows' values): the rows with ``code >= 0`` finish."""
        stop = code >= 0
        if stop.all():
            self._finish(idx, code, root, residual)
        elif stop.any():
            self._finish(idx[stop], code[stop], root[stop], residual[stop])

    def _finish(self, idx: np.ndarray, code: np.ndarray, root: np.ndarray,
                residual: np.ndarray) -> None:
        rows = self.rows.take(idx)
        self.out.write(rows, code, root, residual, self.k, self.calls + self._extra.take(rows))
        if self.dead is None:
            keep = np.ones(self.size, dtype=bool)
            keep[idx] = False
            self._compress(np.flatnonzero(keep))
            return
        self.dead[idx] = True
        self._dead_count += int(idx.size)
        if self._dead_count >= self.DEAD_SHARE * self.size:
            self._compress(np.flatnonzero(~self.dead))

    def finished_in_place(self, count: int) -> None:
        """``count`` more rows were finished by a compiled pass itself (a lazy work's:
        results written to ``out`` as :meth:`finish` writes them, rows marked in
        ``dead``); the arrays are compressed as :meth:`finish` would."""
        self._dead_count += count
        if self._dead_count >= self.DEAD_SHARE * self.size:
            self._compress(np.flatnonzero(~self.dead))

    def _compress(self, keep: np.ndarray) -> None:
        """Keep the rows ``keep`` (ascending indices) of every array: one take per array."""
        n = self.size
        for name, value in list(vars(self).items()):
            if isinstance(value, np.ndarray) and value.shape == (n,) and name[0] != "_":
                setattr(self, name, value.take(keep))
        self._h = tuple(h.take(keep) if h.__class__ is np.ndarray else h for h in self._h)
        self._dead_count = 0

    def stop(self, mask: np.ndarray, code: int, root: np.ndarray, residual: np.ndarray) -> None:
        """Finish the rows ``mask`` marks with one ``code``."""
        if mask.any():
            self.finish(np.where(mask, np.int8(code), np.int8(-1)), root, residual)

    def codes(self) -> np.ndarray:
        """A fresh code array: -1 (go on) for every row of the arrays."""
        return np.full(self.size, -1, dtype=np.int8)

    def tick(self) -> None:
        self.poll(1.0 - (self.size - self._dead_count) / max(self.total, 1))


def mark(code: np.ndarray, mask: np.ndarray, value: int) -> None:
    """Give ``value`` to the rows ``mask`` marks that have no code yet (first test wins)."""
    code[mask & (code < 0)] = value


def same_sign(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    return (u > 0.0) == (v > 0.0)


def zero_is_root(w: Work, subset: np.ndarray, x: np.ndarray, tol: np.ndarray,
                 toward: np.ndarray | None = None, look: bool = True) -> np.ndarray:
    """Element-wise :func:`solvers.methods.common._zero_is_root` for the rows ``subset``
    marks (x, tol, toward given for those rows): f(x) == 0.0 is a root unless f is 0.0
    beside x too (underflow); one neighbour must be finite. The side ``toward`` (or
    x + step) first; the other side only where the first was not 0.0, as the scalar
    rule stops there (each call counted for its rows)."""
    if subset.dtype == bool:
        subset = np.flatnonzero(subset)
    step = np.maximum(np.maximum(tol, 2.0 * np.spacing(np.abs(x))), _FLOAT_MIN)
    first = step if toward is None else np.where(toward >= x, step, -step)
    one = w.f(x + first, subset)
    verdict = one != 0.0
    zero = ~verdict
    ask = np.flatnonzero(verdict)
    if ask.size:
        two = w.f(x[ask] - first[ask], subset[ask])
        verdict[ask] = (two != 0.0) & (np.isfinite(one[ask]) | np.isfinite(two))
        zero[ask] = two == 0.0
    if look and zero.any():  # a neighbour at 0.0 too: a zero of rounding noise, or underflow
        iz = np.flatnonzero(zero)
        verdict[iz] = plateau_roots(lambda points: w.f_points(points, subset[iz]), x[iz],
                                    step[iz])
    return verdict


def in_rounding_array(v: np.ndarray) -> np.ndarray:
    """Element-wise :func:`solvers.methods.common.in_rounding` (the same arithmetic: the
    lowest set bit of the 53-bit mantissa, exact)."""
    v = np.abs(np.asarray(v, dtype=np.float64))
    ok = np.isfinite(v) & (v != 0.0)
    mantissa, exponent = np.frexp(np.where(ok, v, 1.0))
    whole = (mantissa * 2.0**53).astype(np.int64)
    q = np.ldexp((whole & -whole).astype(np.float64), exponent - 53)
    return ok & (q > 1e-290) & (v <= ROUNDING_QUANTA * q)


def plateau_roots(evaluate: Callable[[np.ndarray], np.ndarray], x: np.ndarray,
                  step: np.ndarray) -> np.ndarray:
    """Element-wise :func:`solvers.methods.common._rounding_plateau` for zeros x whose
    probe ``step`` away gave 0.0 too: whether each is a zero of f's rounding noise (a
    root) rather than underflow. ``evaluate`` takes the points (a row of
    :func:`plateau_points` per zero) and returns f there, counting the calls. Rare rows:
    the verdict is the scalar rule's own function, row by row."""
    xs, steps = x.tolist(), step.tolist()
    points = np.array([plateau_points(xi, si) for xi, si in zip(xs, steps, strict=True)])
    values = evaluate(points)
    return np.array([plateau_detail(xi, si, row) is not None
                     for xi, si, row in zip(xs, steps, values.tolist(), strict=True)],
                    dtype=bool)


def _straight_through(x, x1, f1, x2, f2, tol) -> np.ndarray:
    """Element-wise :func:`solvers.methods.bracketing._straight_through` (its constants)."""
    inside = (np.minimum(x1, x2) < x) & (x < np.maximum(x1, x2)) & ~same_sign(f1, f2)
    slope_1 = np.abs(f1) / np.abs(x - x1)
    slope_2 = np.abs(f2) / np.abs(x2 - x)
    secant = np.abs(f1) / np.abs(x2 - x1) + np.abs(f2) / np.abs(x2 - x1)
    least = np.minimum(slope_1, slope_2)
    steady = (least * _SLOPE_SPREAD >= secant) & (least * tol >= _SLOPE_SPREAD * _FLOAT_MIN)
    chord = f1 + (f2 - f1) * ((x - x1) / (x2 - x1))
    return inside & steady & (np.abs(chord) <= _CHORD_SHARE * np.maximum(np.abs(f1), np.abs(f2)))


def carried(f: np.ndarray, under: np.ndarray) -> np.ndarray:
    """Where a value is the signed tiny number an underflowed point is carried as:
    element-wise :func:`solvers.methods.common._carried`, ``under`` marking the rows
    whose bracket began with an end in a stretch of underflow (``Work.under``).

    Points whose f underflowed to 0.0 are carried as +-5e-324 (the smallest double, a
    sign without a size). In a row that began with such an end the value marks them, and
    an f that returned +-5e-324 there counts as underflow too (the scalar rule: it has no
    size either); in every other row +-5e-324 is f's own tiny value, whose sign stands.
    """
    return under & (np.abs(f) == _TINY)


def iterate_zero(w: Work, idx: np.ndarray, x, x1, f1, x2, f2, tol):
    """f(x) == 0.0 at bracketing iterates: element-wise
    :func:`solvers.methods.bracketing._iterate_zero` for the active rows ``idx`` (the
    other arguments are those rows' values, ends (x1, f1) and (x2, f2)).

    Returns (root, inside, value): ``root`` marks exact zeros, ``inside`` zeros that are
    only underflow between real ends (the run stops not finite), ``value`` the f to go on
    with (the signed tiny value inside an end's stretch of underflow, else 0.0).
    """
    under = w.under.take(idx)
    u1, u2 = carried(f1, under), carried(f2, under)
    value = np.zeros(x.size)
    value = np.where(u1, np.copysign(_TINY, f1), np.where(u2, np.copysign(_TINY, f2), value))
    rest = ~(u1 | u2)
    root = rest & _straight_through(x, x1, f1, x2, f2, tol)
    # the nearer end perhaps rounding noise of cancelling terms, far below the start's:
    # those rows look further out where a neighbour is 0.0 too (the scalar rule)
    fa0, fb0 = w.kept(idx, "fa0", "fb0")
    f_near = np.where(np.abs(x - x1) <= np.abs(x - x2), f1, f2)
    noise = (in_rounding_array(f_near)
             & (np.abs(f_near) <= _NOISE_FALL * np.maximum(np.abs(fa0), np.abs(fb0))))
    inside = np.zeros(x.size, dtype=bool)
    far = np.where(np.abs(x - x1) <= np.abs(x - x2), x2, x1)
    for look in (False, True):
        ask = rest & ~root & (noise == look)
        if ask.any():
            verdict = zero_is_root(w, idx[ask], x[ask], tol[ask], far[ask], look=look)
            where = np.flatnonzero(ask)
            root[where[verdict]] = True
            inside[where[~verdict]] = True
    return root, inside, value


def closed_verdict(w: Work, idx: np.ndarray, lo, flo, hi, fhi) -> np.ndarray:
    """Codes for the active rows ``idx`` whose brackets [lo, hi] closed below tolerance
    (the other arguments are those rows' values): element-wise
    :func:`solvers.methods.common._closed_bracket_reason` and the pole test of
    :func:`solvers.methods.common._finish`.

    Uses the work's kept start values ``a0, fa0, b0, fb0`` (the bracket as given, f
    there as evaluated). ``x_tolerance`` for a root; ``not_finite`` for an end in a stretch of
    underflow or a pole (|f| at the closed bracket above both starting ends);
    ``discontinuity`` for a jump (|f| not growing away from the bracket).
    """
    code = np.full(idx.size, X_TOL, dtype=np.int8)
    a0, fa0, b0, fb0 = w.kept(idx, "a0", "fa0", "b0", "fb0")
    began = w.under.take(idx)
    under = carried(flo, began) | carried(fhi, began)
    near = np.minimum(np.abs(flo), np.abs(fhi))
    pole = ~under & (near > np.maximum(np.abs(fa0), np.abs(fb0)))
    grew = np.zeros(idx.size, dtype=bool)
    if pole.any():  # a pole where |f| falls away beside the bracket, else a steep root
        ip = np.flatnonzero(pole)
        fell, grew[ip] = beside_verdict(w, idx[ip], lo[ip], flo[ip], hi[ip], fhi[ip])
        pole[ip[~fell]] = False
        grew &= ~pole
    code[under | pole] = NOT_FIN
    open_ = ~under & ~pole
    if not open_.any():
        return code
    width = hi - lo
    decided = ~open_ | grew  # (|f| grew on both sides beside a steep root: a root)
    # 1. the starting ends (already evaluated): |f| fell at least as fast as sqrt(distance)
    for x0, f0 in ((a0, fa0), (b0, fb0)):
        distance = np.maximum(lo - x0, x0 - hi)
        fend = np.where(x0 < lo, flo, fhi)  # each end against points on its own side
        usable = ((distance >= 2.0 * width) & np.isfinite(f0) & (f0 != 0.0)
                  & same_sign(f0, fend))
        with np.errstate(all="ignore"):
            decided |= usable & (np.abs(fend) <= np.abs(f0) * np.sqrt(width / distance))
    if decided.all():  # every row a root or not finite: no probe to place
        return code
    # 2. probes 2**20 widths out, one side then the other: |f| must grow there
    reach = _PROBE_REACH * width
    for end, fend, probe in ((lo, flo, np.maximum(np.minimum(a0, b0), lo - reach)),
                             (hi, fhi, np.minimum(np.maximum(a0, b0), hi + reach))):
        ask = ~decided & (probe != end)
        if not ask.any():
            continue
        fp = w.f(probe[ask], idx[ask])
        grew = (np.isfinite(fp) & (fp != 0.0) & same_sign(fp, fend[ask])
                & (np.abs(fp) >= _PROBE_GROWTH * np.abs(fend[ask])))
        decided[np.flatnonzero(ask)[grew]] = True
    code[~decided] = DISCONT
    return code


def beside_verdict(w: Work, idx: np.ndarray, x1, f1, x2, f2) -> tuple[np.ndarray, np.ndarray]:
    """f at :func:`solvers.methods.common.capped_probes` beside the brackets [x1, x2]
    (either order) of the active rows ``idx`` (the other arguments those rows' values;
    two calls per row, the lower side first): (fell, grew), element-wise
    :func:`solvers.methods.common.capped_pole` (|f| fell away on both sides: a pole) and
    :func:`solvers.methods.common.grew_beside` (it grew 1.5-fold on both: a root)."""
    first = x1 <= x2
    lo, hi = np.where(first, x1, x2), np.where(first, x2, x1)
    f_lo, f_hi = np.where(first, f1, f2), np.where(first, f2, f1)
    reach = _CAPPED_REACH * (hi - lo)
    p_lo = w.f(lo - reach, idx)
    p_hi = w.f(hi + reach, idx)
    fell = (np.isfinite(p_lo) & np.isfinite(p_hi) & (np.abs(p_lo) < np.abs(f_lo))
            & (np.abs(p_hi) < np.abs(f_hi)))
    grew = np.ones(idx.size, dtype=bool)
    for p, e in ((p_lo, f_lo), (p_hi, f_hi)):
        grew &= (np.isfinite(p) & (p != 0.0) & same_sign(p, e)
                 & (np.abs(p) >= _PROBE_GROWTH * np.abs(e)))
    return fell, grew


def capped_verdict(w: Work, idx: np.ndarray, x1, f1, x2, f2) -> np.ndarray:
    """The rows ``idx`` stopped at the cap on brackets [x1, x2]: True where |f| fell away
    on both sides (a pole; :func:`beside_verdict`)."""
    return beside_verdict(w, idx, x1, f1, x2, f2)[0]


def central_difference(w: Work, x: np.ndarray, fx: np.ndarray, scale: np.ndarray) -> np.ndarray:
    """Element-wise :func:`solvers.methods.common._central_difference` (h shrinks by 1000
    where a side is not finite, then a one-sided difference; NaN when none is usable)."""
    h = DERIVATIVE_STEP * np.maximum(np.abs(x), scale)
    out = np.full(x.size, np.nan)
    one_sided = np.full(x.size, np.nan)
    need = np.ones(x.size, dtype=bool)
    for _ in range(2):
        if not need.any():
            break
        xs, hs = x[need], h[need]
        xp, xm = xs + hs, xs - hs
        everyone = bool(need.all())
        fp = w.f(xp) if everyone else w.f(xp, need)
        fm = w.f(xm) if everyone else w.f(xm, need)
        fp_ok, fm_ok = np.isfinite(fp), np.isfinite(fm)
        both = fp_ok & fm_ok
        where = np.flatnonzero(need)
        out[where[both]] = ((fp - fm) / (xp - xm))[both]
        fresh = np.isnan(one_sided[where])
        side_p = fresh & ~both & fp_ok
        side_m = fresh & ~both & ~fp_ok & fm_ok
        one_sided[where[side_p]] = ((fp - fx[need]) / (xp - xs))[side_p]
        one_sided[where[side_m]] = ((fx[need] - fm) / (xs - xm))[side_m]
        need[where[both]] = False
        h = h * 1e-3
    return np.where(np.isnan(out), one_sided, out)
