"""Root-finding methods over plain callables, each returning one :class:`~solvers.records.Run`.

Every method takes ``f(x) -> float`` (numpy floats and 0-d arrays are accepted and
converted with ``float``), records every iterate as a :class:`~solvers.records.Step`
and counts every call of f (and of f' for Newton) in ``Run.evaluations``.

Tolerances (keywords, the same for every method)
------------------------------------------------
``xtol``
    absolute step tolerance, in the units of x.
``rtol``
    relative step tolerance: the step test is ``|dx| <= xtol + rtol*|x|``.
``ftol``
    absolute residual tolerance, in the units of f: ``|f(x)| <= ftol`` stops.
``max_iter``
    the most iterates a method may produce (starting points not counted).

What "step" means:

* Newton and secant: ``dx = x_k - x_{k-1}``, the step just taken. The secant's step
  comes from a chord that may reach a far iterate, so its short step counts only when the
  two points of the step confirm a root (residual at least halved, a sign change, or
  their own chord within the tolerance), else when f changes sign at x - tol or
  x + tol (evaluated, counted); otherwise the iteration goes on.
* Bisection and Brent: the width of the bracket held, ``hi - lo``, tested against
  ``xtol + rtol*|x|`` with x the bracket end of smaller ``|f|`` (the root returned).
* Illinois: the bracket width as above (the Illinois rule moves both ends, so the
  bracket shrinks to the root).
* False position (plain regula falsi) usually keeps one end fixed, so its bracket does
  not shrink to zero. It converges linearly with some ratio c, leaving an error of
  about ``c/(1-c)`` times the last step, so it estimates the error from the steps
  between successive interpolated iterates (never a starting end):
  ``|x_k - x_{k-1}| * max(1, c/(1-c)) <= xtol + rtol*|x_k|`` with
  ``c = max(c_k, c_{k-1})``, ``c_k = |x_k - x_{k-1}| / |x_{k-1} - x_{k-2}|``, and only
  while c < 1. An estimate is no proof (a noisy f fools it), so when it is met the
  next iterate is a check half a tolerance from x_k towards the other end: a sign
  change there closes the bracket below tolerance (the stop is then the bracket
  width, as for the other bracketing methods); none moves that end on and the chords
  go on. The observed order (``Run.order`` ~ 1) shows the linear convergence.
* False position and Illinois: when rounding puts the chord's zero on (or outside) a
  bracket end, which happens beside a pole or a steep exponential where one end's
  |f| is enormous, the iterate is the bracket midpoint instead (recorded in the
  run's note), so the method cannot stall; the chord-step history then starts again.

Stop order after each new iterate: non-finite f -> ``not_finite``; ``f == 0`` ->
``exact_zero``; ``|f| <= ftol`` -> ``f_tolerance``; step test -> ``x_tolerance``;
``max_iter`` iterates produced -> ``max_iterations``.

A converged run ends at a root, never at a value that merely looks like one:

* ``f(x) == 0.0`` is an exact zero only where f did not underflow. A sum of terms
  below ~1e-308 is 0.0 too (exp(-x) - 2*exp(-2*x) at x = 800; its root is ln 2), and
  then f is 0.0 beside x as well, over a stretch far wider than any tolerance. So
  f is evaluated at x +- tol (one side for a bracketing method, whose ends often show
  f to be far above underflow near x at no cost at all). An underflowed zero stops an
  open method, and a bracketing one inside its bracket, with ``not_finite`` (recorded in
  the run's detail); a starting bracket end that underflowed is kept as an end of the sign
  opposite to the other end's, since the sign change lies between them.
* A bracket that closes on a sign change with |f| not falling towards 0 is a jump
  (``x/abs(x) + x`` at 0), reported as ``discontinuity`` with converged False, or a
  pole (|f| growing as it closes), reported as ``not_finite``. The check costs no call
  when the starting bracket's ends show |f| falling at least as the square root of
  the distance, else two at most (f 2**20 bracket widths out). It reads the bracket as
  given, never the iterates a method happened to visit: every method, and every row of
  a batch, judges a closed bracket alike.
* A value of +-5e-324 (the smallest subnormal double) is f's own: a tiny value whose
  sign stands, unless the bracket began with an end whose f underflowed to 0.0; there
  it has a sign but no size, and counts as that underflow.

Defaults, chosen for engineering work
-------------------------------------
``DEFAULT_XTOL = 1e-12`` and ``DEFAULT_RTOL = 4*eps``: the relative term dominates for
|x| > ~1e3, the absolute term below. Newton and the secant, whose last step is far
smaller than the tolerance, end at full double precision for any root; the bracketing
methods stop when the bracket is within the tolerance, so a root of order one gets
about 12 correct digits and a root near 0.02 (a friction factor) about 10 from them.
Tighten xtol for small roots. ``DEFAULT_FTOL = 0.0`` switches the residual
test off, because the scale of f is the user's (a residual of 1e-6 is tiny in pascals
and huge in megapascals). ``DEFAULT_MAX_ITER = 100`` is far more than a converging
method needs (bisection from a bracket 1e15 times the tolerance needs 50) and small
enough that a failing run stops at once.

Failure behaviour
-----------------
No method raises because of f. An exception from f (ValueError, ZeroDivisionError,
OverflowError, ...), a NaN or infinite value, a complex value or an infinite x stops
the run with reason ``not_finite``; a zero derivative (Newton) or zero secant slope,
or a step that overflows because the derivative is vanishingly small, gives
``zero_derivative``; bracket ends of the same sign give ``no_sign_change``. Such a
run has ``converged`` False and its ``root`` is, for inspection only, the last
iterate with finite x and f(x) (for ``no_sign_change``: the end with smaller |f|).
numpy floating-point warnings are suppressed inside every method.
Invalid *settings* (negative tolerances, damping outside (0, 1], a non-integer
``max_iter``) are the caller's error and raise ``ValueError``.

Layout
------
:mod:`~solvers.methods.common` (evaluator, settings checks, stop details, numerical
derivative), :mod:`~solvers.methods.open` (Newton, secant),
:mod:`~solvers.methods.bracketing` (bisection, false position, Illinois),
:mod:`~solvers.methods.brent`, and :mod:`~solvers.methods.registry` (the method facts
:data:`METHODS` and the one dispatcher :func:`run_method`).
"""

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
from solvers.methods.registry import METHODS, MethodSpec, method_spec, run_method

__all__ = [
    "DEFAULT_FTOL",
    "DEFAULT_MAX_ITER",
    "DEFAULT_RTOL",
    "DEFAULT_XTOL",
    "METHODS",
    "Function",
    "MethodSpec",
    "bisection",
    "brent",
    "false_position",
    "illinois",
    "method_spec",
    "newton",
    "run_method",
    "secant",
]
