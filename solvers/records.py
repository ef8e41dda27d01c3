"""The records every root-finding method returns: :class:`Run`, :class:`Step`, :class:`Detail`.

A method never formats and a view never computes: every method in
:mod:`solvers.methods` returns a :class:`Run` made of :class:`Step` records, and the
same ``Run`` feeds the Qt table models, the plot overlay, the CSV export and the
calculation sheet unchanged.

Conventions (the same for every method)
---------------------------------------
* ``Step.k`` counts iterates from 0. Starting points (x0, or the two bracket ends)
  are recorded as steps too, so a reader sees every point where f was evaluated
  that took part in the iteration.
* ``Step.dx`` is the step that *produced* this iterate, ``x_k - x_{k-1}``; it is
  ``None`` for a starting point.
* ``Step.dfx`` is the derivative used at ``x_k`` (Newton only), else ``None``.
* ``Step.lo``/``Step.hi`` are the bracket ends held *after* this iterate
  (bracketing methods only), else ``None``.
* Every record is immutable: a Run's ``steps`` are a tuple and its ``settings`` a
  read-only mapping, so a Run handed to a view, a worker thread or a report is the
  Run the method returned.
* ``Run.iterations`` counts iterates produced by the method (starting points
  excluded); ``Run.evaluations`` counts calls of f, plus calls of f' for Newton
  (a numerical derivative counts the extra f calls it made).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any, TypeAlias

# A value in Run.settings: a tolerance, a count, a start value, a bracket or a label.
Setting: TypeAlias = float | int | str | tuple[float, float]

__all__ = [
    "CONVERGED_REASONS",
    "DISCONTINUITY",
    "EXACT_ZERO",
    "F_TOLERANCE",
    "MAX_ITERATIONS",
    "MAX_OBSERVED_ORDER",
    "MIN_OBSERVED_ORDER",
    "ORDER_AGREEMENT",
    "NOT_FINITE",
    "NO_SIGN_CHANGE",
    "REASONS",
    "X_TOLERANCE",
    "ZERO_DERIVATIVE",
    "Detail",
    "Run",
    "Setting",
    "Step",
    "observed_order",
]

# Stop reasons: the only values ``Run.reason`` takes (the contract outside checks rely on).
X_TOLERANCE = "x_tolerance"
F_TOLERANCE = "f_tolerance"
EXACT_ZERO = "exact_zero"
MAX_ITERATIONS = "max_iterations"
ZERO_DERIVATIVE = "zero_derivative"
NOT_FINITE = "not_finite"
NO_SIGN_CHANGE = "no_sign_change"
DISCONTINUITY = "discontinuity"

REASONS: tuple[str, ...] = (
    X_TOLERANCE,
    F_TOLERANCE,
    EXACT_ZERO,
    MAX_ITERATIONS,
    ZERO_DERIVATIVE,
    NOT_FINITE,
    NO_SIGN_CHANGE,
    DISCONTINUITY,
)
CONVERGED_REASONS = frozenset({X_TOLERANCE, F_TOLERANCE, EXACT_ZERO})

# The words for each reason (and for every Detail code) live in app.documents.words:
# the numerics core records codes and numbers, never sentences.


@dataclass(frozen=True)
class Detail:
    """What exactly stopped (or qualified) a run, as a code and the values it refers to.

    ``code`` is a key of :data:`app.documents.words.DETAIL_TEXT`; ``values`` are numbers
    (x values in the unknown's units, values of f, sizes, counts) and, where the code
    needs them, short names (the function called, "f" or "f'", or an exception's class
    name). A record for machines: front ends turn it into words.
    """

    code: str
    values: tuple[float | int | str, ...] = ()

    def as_dict(self) -> dict[str, Any]:
        return {"code": self.code, "values": list(self.values)}


@dataclass(frozen=True)
class Step:
    """One iterate of a method. Units are those of the unknown (x, dx, lo, hi) and of f."""

    k: int
    x: float
    fx: float
    dfx: float | None = None
    dx: float | None = None
    lo: float | None = None
    hi: float | None = None

    def as_dict(self) -> dict[str, Any]:
        return {
            "k": self.k,
            "x": self.x,
            "fx": self.fx,
            "dfx": self.dfx,
            "dx": self.dx,
            "lo": self.lo,
            "hi": self.hi,
        }


@dataclass(frozen=True)
class Run:
    """The uniform record of one method applied to one equation.

    ``root`` is the last (best) iterate, also when ``converged`` is False: a run
    that did not converge is a result to show, never an exception. ``settings``
    holds the tolerances and options actually used (xtol, rtol, ftol, max_iter,
    and method extras such as damping); ``derivative`` says where Newton's f'
    came from ("symbolic", "numerical", or "supplied"), ``None`` for other methods.
    ``detail`` says what exactly stopped the run (a :class:`Detail`, ``None`` when the
    reason says it all) and ``note`` anything else a checker should know about it.
    """

    method: str
    root: float
    converged: bool
    reason: str
    iterations: int
    evaluations: int
    steps: tuple[Step, ...] = ()
    settings: Mapping[str, Setting] = field(default_factory=lambda: MappingProxyType({}))
    derivative: str | None = None
    detail: Detail | None = None
    note: Detail | None = None

    def __post_init__(self) -> None:
        # Callers may hand a list of steps and a dict of settings; the record keeps
        # copies that cannot change.
        steps: Iterable[Step] = self.steps
        object.__setattr__(self, "steps", tuple(steps))
        object.__setattr__(self, "settings", MappingProxyType(dict(self.settings)))

    @property
    def residual(self) -> float:
        """f at the returned root, as the method evaluated it (NaN if no step)."""
        for step in reversed(self.steps):
            if step.x == self.root:
                return step.fx
        return math.nan

    @property
    def order(self) -> float | None:
        """Observed order of convergence from the last iterates (see :func:`observed_order`)."""
        return observed_order(self)

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready mapping with the contract's keys first."""
        return {
            "method": self.method,
            "root": self.root,
            "converged": self.converged,
            "reason": self.reason,
            "iterations": self.iterations,
            "evaluations": self.evaluations,
            "order": self.order,
            "derivative": self.derivative,
            "detail": self.detail.as_dict() if self.detail is not None else None,
            "note": self.note.as_dict() if self.note is not None else None,
            "settings": dict(self.settings),
            "steps": [s.as_dict() for s in self.steps],
        }


MIN_OBSERVED_ORDER = 0.8
# No method here converges faster than cubically (Newton at a root where f'' = 0), so a
# larger estimate comes from an uneven step pattern (Illinois's halved-end steps read
# 15 or 20), not from the method.
MAX_OBSERVED_ORDER = 3.5
# Two successive estimates of the order must agree within this share of the last for it to
# be reported (ours; a settled rate moves by a few per cent from step to step: Newton
# 1.94 then 2.00, the secant 1.68 then 1.60, false position 1.00 then 1.00).
ORDER_AGREEMENT = 0.35


def observed_order(run: Run) -> float | None:
    """Estimate the order of convergence p from the steps of the last iterates.

    Uses the step lengths s_k = |x_k - x_{k-1}| (``Step.dx``; starting points have
    none) and p ~ log(s_{k+1}/s_k) / log(s_k/s_{k-1}) over the last three; where a fourth
    step before them gives a second estimate, the two must agree within
    ``ORDER_AGREEMENT`` (35 %) of the last, else the rate has not settled and no order is
    claimed. For a
    converging sequence the steps shrink as the errors do (superlinear: s_{k+1} ~ e_k;
    linear with ratio c: s_{k+1} = c*s_k exactly as e_{k+1} = c*e_k), so no root is
    needed. Errors measured against the final iterate instead would be biased
    upwards for slow linear convergence (ratio 0.9 reads as p ~ 1.6).
    Trailing steps at rounding level (at most 1e3 ulps of the root) are dropped,
    since an order computed from rounding noise would mislead; so are a bracketing
    method's trailing steps of half its tolerance (checks, not its rate). Returns ``None``
    when fewer than three usable steps remain, when they do not shrink strictly
    (a run that is not converging has no order), or when the estimate is below
    ``MIN_OBSERVED_ORDER`` (0.8) or above ``MAX_OBSERVED_ORDER`` (3.5): no converging
    method has an order below 1 or above 3, so such a value only reflects an irregular
    step pattern (Illinois's halved-end steps, Brent switching between bisection and
    interpolation) and would mislead.
    Roughly 2 means quadratic (Newton on a simple root), ~1.6 the secant's
    superlinear rate, ~1 linear (false position, bisection, damped Newton, Newton
    on a multiple root).
    """
    if not run.steps or not math.isfinite(run.root):
        return None
    floor = 1e3 * math.ulp(run.root)
    if "bracket" in run.settings:
        # A bracketing method's steps of half the tolerance are checks (Brent's shortest
        # step, false position's sign check beside its estimate), not its rate.
        tolerance = run.settings.get("xtol", 0.0) + run.settings.get("rtol", 0.0) * abs(run.root)
        floor = max(floor, 0.5 * tolerance + 4.0 * math.ulp(run.root))  # dx is rounded
    sizes = [abs(s.dx) for s in run.steps if s.dx is not None and math.isfinite(s.dx)]
    while sizes and sizes[-1] <= floor:
        sizes.pop()
    if len(sizes) < 3:
        return None
    s0, s1, s2 = sizes[-3:]
    if not s0 > s1 > s2 > floor:
        return None
    p = math.log(s2 / s1) / math.log(s1 / s0)
    if not math.isfinite(p) or not MIN_OBSERVED_ORDER <= p <= MAX_OBSERVED_ORDER:
        return None
    if len(sizes) >= 4 and sizes[-4] > s0:
        # an order is a rate the steps have settled into: where the estimate from the
        # three steps before differs by more than ORDER_AGREEMENT of it, the last three
        # are still finding it (a secant run can read 3.5 then 0.9 before 1.6) and no
        # order is claimed
        before = math.log(s1 / s0) / math.log(s0 / sizes[-4])
        if not abs(before - p) <= ORDER_AGREEMENT * p:
            return None
    return p
