"""The one registry of method facts and the one dispatcher.

:data:`METHODS` maps each method's code name to a :class:`MethodSpec`: its kind
(which start values it needs), whether it is guaranteed (keeps a bracket with a sign
change) and the function that runs it. Every front end reads method facts from here
(titles and colours, which are words and pictures, live in :mod:`app.documents`), and
:func:`run_method` is the only place that turns a method name and start values into a
call.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from types import MappingProxyType
from typing import Literal

from solvers.methods.bracketing import bisection, false_position, illinois
from solvers.methods.brent import brent
from solvers.methods.common import (
    DEFAULT_FTOL,
    DEFAULT_MAX_ITER,
    DEFAULT_RTOL,
    DEFAULT_XTOL,
    Function,
)
from solvers.methods.open import newton, secant
from solvers.records import Run

Kind = Literal["open", "two_point", "bracket"]

# The start values each kind needs, as the keyword names run_method takes.
NEEDS: Mapping[str, tuple[str, ...]] = MappingProxyType({
    "open": ("x0",),
    "two_point": ("x0", "x1"),
    "bracket": ("bracket",),
})


@dataclass(frozen=True)
class MethodSpec:
    """The facts about one method that the numerics core owns.

    Attributes
    ----------
    name : str
        The code name, a key of :data:`METHODS` (``"false_position"``).
    kind : {"open", "two_point", "bracket"}
        Which start values the method needs: x0; x0 and x1; a bracket (a, b).
    guaranteed : bool
        True for a method that keeps a bracket with a sign change and so always closes
        on a root, a jump or a pole (bisection, false position, Illinois, Brent).
    function : callable
        The method itself: ``function(f, *start_values, **tolerances) -> Run``.
    """

    name: str
    kind: Kind
    guaranteed: bool
    function: Callable[..., Run]

    @property
    def needs(self) -> tuple[str, ...]:
        """The start values this method's kind needs (keyword names of :func:`run_method`)."""
        return NEEDS[self.kind]


METHODS: Mapping[str, MethodSpec] = MappingProxyType({
    spec.name: spec
    for spec in (
        MethodSpec("newton", "open", False, newton),
        MethodSpec("secant", "two_point", False, secant),
        MethodSpec("false_position", "bracket", True, false_position),
        MethodSpec("illinois", "bracket", True, illinois),
        MethodSpec("bisection", "bracket", True, bisection),
        MethodSpec("brent", "bracket", True, brent),
    )
})
"""Every method, in the order front ends list them (open methods first)."""

_NEED_TEXT = {
    "x0": "a starting value x0",
    "x1": "a second starting value x1",
    "bracket": "a bracket (a, b)",
}


@dataclass(frozen=True)
class _Call:
    """One call of run_method: f, the start values and the options, as given."""

    f: Function
    fprime: Function | None
    x0: float | None
    x1: float | None
    bracket: tuple[float, float] | None
    damping: float
    derivative_source: str | None
    tolerances: Mapping[str, float | int]


def _start_open(spec: MethodSpec, c: _Call) -> Run:
    return spec.function(c.f, c.x0, fprime=c.fprime, damping=c.damping,
                         derivative_source=c.derivative_source, **c.tolerances)


def _start_two_point(spec: MethodSpec, c: _Call) -> Run:
    return spec.function(c.f, c.x0, c.x1, **c.tolerances)


def _start_bracket(spec: MethodSpec, c: _Call) -> Run:
    lo, hi = c.bracket  # type: ignore[misc]  # run_method checked it is there
    return spec.function(c.f, lo, hi, **c.tolerances)


# How each kind of method is called: the one dispatch table.
_STARTERS: Mapping[str, Callable[[MethodSpec, _Call], Run]] = MappingProxyType({
    "open": _start_open,
    "two_point": _start_two_point,
    "bracket": _start_bracket,
})


def method_spec(name: str) -> MethodSpec:
    """The :class:`MethodSpec` of ``name``; ValueError naming the choices if there is none."""
    spec = METHODS.get(name)
    if spec is None:
        raise ValueError(f"unknown method {name!r}; choose from {', '.join(METHODS)}")
    return spec


def missing_needs(name: str, given: Mapping[str, bool]) -> tuple[str, ...]:
    """What method ``name`` needs to start ("x0", "x1", "bracket") that ``given`` (need ->
    whether it is there) lacks, in the registry's order."""
    return tuple(need for need in method_spec(name).needs if not given.get(need))


def run_method(
    name: str,
    f: Function,
    *,
    fprime: Function | None = None,
    x0: float | None = None,
    x1: float | None = None,
    bracket: tuple[float, float] | None = None,
    damping: float = 1.0,
    derivative_source: str | None = None,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
) -> Run:
    """Run method ``name`` (a key of :data:`METHODS`) from the start values its kind needs.

    Parameters
    ----------
    name : str
        A key of :data:`METHODS`.
    f : callable
        ``f(x) -> float``; whatever it returns or raises is recorded in the Run.
    fprime, damping, derivative_source
        Newton's derivative (None: a central difference), step factor in (0, 1] and
        where f' came from ("symbolic" or "supplied"); other methods ignore them.
    x0, x1, bracket
        Start values in the unknown's units: x0 (open), x0 and x1 (two_point), the
        bracket (a, b) (bracket kind). Values a method does not need are ignored.
    xtol, rtol, ftol, max_iter
        Stopping rules, the methods' defaults unless given (see :mod:`solvers.methods`).

    Returns
    -------
    Run
        The method's record; a run that fails is a result, never an exception.

    Raises
    ------
    ValueError
        For an unknown method, a missing start value or an invalid setting (a caller's
        error).
    """
    spec = method_spec(name)
    given = {"x0": x0, "x1": x1, "bracket": bracket}
    for need in spec.needs:
        if given[need] is None:
            raise ValueError(f"method {name!r} needs {_NEED_TEXT[need]}")
    tolerances = {"xtol": xtol, "rtol": rtol, "ftol": ftol, "max_iter": max_iter}
    call = _Call(f, fprime, x0, x1, bracket, damping, derivative_source, tolerances)
    return _STARTERS[spec.kind](spec, call)
