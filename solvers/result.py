"""The one result record every root-finding method returns.

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
* ``Run.iterations`` counts iterates produced by the method (starting points
  excluded); ``Run.evaluations`` counts calls of f, plus calls of f' for Newton
  (a numerical derivative counts the extra f calls it made).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

# Stop reasons: the only values ``Run.reason`` takes (DESIGN.md contract).
X_TOLERANCE = "x_tolerance"
F_TOLERANCE = "f_tolerance"
EXACT_ZERO = "exact_zero"
MAX_ITERATIONS = "max_iterations"
ZERO_DERIVATIVE = "zero_derivative"
NOT_FINITE = "not_finite"
NO_SIGN_CHANGE = "no_sign_change"

REASONS: tuple[str, ...] = (
    X_TOLERANCE,
    F_TOLERANCE,
    EXACT_ZERO,
    MAX_ITERATIONS,
    ZERO_DERIVATIVE,
    NOT_FINITE,
    NO_SIGN_CHANGE,
)
CONVERGED_REASONS = frozenset({X_TOLERANCE, F_TOLERANCE, EXACT_ZERO})

# One-line explanations for people (reports, GUI tooltips, CLI).
REASON_TEXT: dict[str, str] = {
    X_TOLERANCE: "step below tolerance |dx| <= xtol + rtol*|x|",
    F_TOLERANCE: "residual below tolerance |f| <= ftol",
    EXACT_ZERO: "f(x) is exactly zero",
    MAX_ITERATIONS: "iteration cap reached before the tolerances were met",
    ZERO_DERIVATIVE: "derivative zero or vanishing: Newton step undefined",
    NOT_FINITE: "f or x became infinite or NaN (domain error or overflow)",
    NO_SIGN_CHANGE: "f has the same sign at both bracket ends",
}


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
    ``message`` is a one-line account for people.
    """

    method: str
    root: float
    converged: bool
    reason: str
    iterations: int
    evaluations: int
    steps: list[Step] = field(default_factory=list)
    settings: dict[str, Any] = field(default_factory=dict)
    derivative: str | None = None
    message: str = ""

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
        """JSON-ready mapping with the DESIGN.md keys first."""
        return {
            "method": self.method,
            "root": self.root,
            "converged": self.converged,
            "reason": self.reason,
            "iterations": self.iterations,
            "evaluations": self.evaluations,
            "order": self.order,
            "derivative": self.derivative,
            "message": self.message,
            "settings": dict(self.settings),
            "steps": [s.as_dict() for s in self.steps],
        }


def observed_order(run: Run) -> float | None:
    """Estimate the order of convergence p from the last iterates.

    Uses the errors e_k = |x_k - root| of the last few iterates and
    p ~ log(e_{k+1}/e_k) / log(e_k/e_{k-1}) (the usual computational estimate),
    taken where the errors are still well above rounding level. Returns ``None``
    when the run has too few usable iterates (fewer than three distinct errors
    above 1e3 ulps of the root), since an order computed from rounding noise would
    mislead. Roughly 2 means quadratic (Newton on a simple root), ~1.6 the
    secant's superlinear rate, ~1 linear (false position, bisection, multiple roots).
    """
    if not run.steps or not math.isfinite(run.root):
        return None
    root = run.root
    floor = 1e3 * math.ulp(root) if root != 0 else 1e-300
    xs = [s.x for s in run.steps if s.dx is not None or s.k == 0]
    errors = [abs(x - root) for x in xs if math.isfinite(x)]
    usable = [e for e in errors if e > floor]
    if len(usable) < 3:
        return None
    e0, e1, e2 = usable[-3:]
    try:
        denominator = math.log(e1 / e0)
        if denominator == 0 or not math.isfinite(denominator):
            return None
        p = math.log(e2 / e1) / denominator
    except (ValueError, ZeroDivisionError):
        return None
    if not math.isfinite(p) or p <= 0:
        return None
    return p
