"""Bracketing methods: bisection and the regula falsi family (false position, Illinois).

Each keeps a bracket [lo, hi] with a sign change, so each is guaranteed to close on a
root (or on a jump or pole, which it reports as such). The bracket start-up shared
with Brent's method lives here too.
"""

from __future__ import annotations

import math
import sys
from dataclasses import dataclass, field

from solvers.methods.common import (
    _TINY,
    DEFAULT_FTOL,
    DEFAULT_MAX_ITER,
    DEFAULT_RTOL,
    DEFAULT_XTOL,
    Function,
    _capped_reason,
    _carried,
    _check_settings,
    _closed_bracket_reason,
    _Evaluator,
    _finish,
    _last_finite,
    _not_finite_detail,
    _quiet,
    _same_sign,
    _start_value,
    _step_detail,
    _zero_is_root,
    in_rounding,
)
from solvers.records import (
    EXACT_ZERO,
    F_TOLERANCE,
    NO_SIGN_CHANGE,
    NOT_FINITE,
    Detail,
    Run,
    Setting,
    Step,
)


@dataclass
class _Bracket:
    """Mutable bracket state shared by the bracketing methods' start-up code."""

    a: float
    fa: float
    b: float
    fb: float
    underflowed: set[float] = field(default_factory=set)


def _start_bracket(
    method: str, ev: _Evaluator, settings: dict[str, Setting], steps: list[Step]
) -> Run | _Bracket:
    """Evaluate both ends of ``settings["bracket"]``; return a finished Run if they settle it.

    Both ends are recorded (k = 0, 1, ``dx`` None) with ``lo``/``hi`` the bracket as
    given when it holds a sign change (or an exact zero), else None. An end where f
    underflowed to 0.0 (see :func:`_zero_is_root`) is no root: it goes on as an end of
    the sign opposite to the other end's, with size ``_TINY`` (its Step keeps 0.0), and
    is listed in ``underflowed``.
    """

    def done(reason: str, root: float, detail: Detail | None = None) -> Run:
        return _finish(method, reason, root, steps, 0, ev.calls, settings, detail)

    a, b = settings["bracket"]
    for x in (a, b):
        if not math.isfinite(x):
            return done(NOT_FINITE, math.nan, Detail("end_not_finite", (x,)))
    fa = ev(a)
    fault_a = ev.fault
    fb = ev(b)
    lo, hi = min(a, b), max(a, b)
    finite = math.isfinite(fa) and math.isfinite(fb)
    holds = finite and (fa == 0.0 or fb == 0.0 or not _same_sign(fa, fb))
    steps.append(Step(0, a, fa, None, None, lo if holds else None, hi if holds else None))
    steps.append(Step(1, b, fb, None, None, lo if holds else None, hi if holds else None))
    if not math.isfinite(fa):
        return done(NOT_FINITE, _last_finite(steps), fault_a or Detail("f_value", (fa, a)))
    if not math.isfinite(fb):
        return done(NOT_FINITE, _last_finite(steps), _not_finite_detail(ev, b, fb))
    tolerance = settings["xtol"], settings["rtol"]
    underflowed: set[float] = set()
    for x, fx in ((a, fa), (b, fb)):
        if fx == 0.0:
            root, why = _zero_is_root(ev, x, tolerance[0] + tolerance[1] * abs(x))
            if root:
                return done(EXACT_ZERO, x, why)
            underflowed.add(x)
    if len(underflowed) == 2 or a == b and underflowed:
        return done(NOT_FINITE, a, Detail("underflow_ends", (a,)))
    if a in underflowed:
        fa = -math.copysign(_TINY, fb)
    if b in underflowed:
        fb = -math.copysign(_TINY, fa)
    better = a if abs(fa) <= abs(fb) else b
    if min(abs(fa), abs(fb)) <= settings["ftol"]:
        return done(F_TOLERANCE, better)
    if _same_sign(fa, fb):
        return done(NO_SIGN_CHANGE, better, Detail("same_sign", (a, fa, b, fb)))
    return _Bracket(a, fa, b, fb, underflowed)


_NOISE_FALL = 2.0**-30  # ends of a noise-zero bracket: |f| this far below the start's


def _iterate_zero(
    ev: _Evaluator,
    x: float,
    tol: float,
    ends: tuple[tuple[float, float], tuple[float, float]],
    underflowed: set[float],
    bracket: tuple[float, float],
    start: float = math.inf,
) -> tuple[float, str | None, Detail | None]:
    """What f(x) == 0.0 at an iterate x between bracket ends (x1, f1), (x2, f2) means
    (``start``: the larger |f| at the starting ends, as evaluated):
    ``(value to carry on with, None, None)``, or ``(0.0, reason, detail)`` when the method
    stops there (``exact_zero``, or ``not_finite`` with the ``underflow_inside`` detail
    naming x and ``bracket``, the bracket held before x).

    An exact zero is a root. When a bracket end underflowed too
    (a starting end beyond which f decays to 0, as exp(-x) - 2*exp(-2*x) at 800; an end
    carried as ``+-_TINY``, :func:`solvers.methods.common._carried`), x
    lies in the same stretch of underflow: it takes that end's sign and is returned
    as ``+-_TINY`` (x is added to ``underflowed``), at no call. Otherwise f is
    checked beside x (:func:`_zero_is_root`, the farther end's side first) and a
    zero that is only underflow stops the method: a stretch of zeros inside a bracket with
    real values at both ends hides on which side of x the sign change lies, so the
    method stops there (``not_finite``) instead of guessing.

    No call is spent either when the ends already show f to be far above underflow
    near x: with x between ends of opposite sign, the chord through the ends crossing
    zero within 1/16 of the bracket from x, the slopes |f(end)|/|end - x| from both
    ends within a factor 1024 of the chord's (f close to a straight line through x,
    with no drop of hundreds of orders of magnitude towards x as exp(-1/x**2) has),
    and that slope times ``tol`` at least 1024 times the smallest normal double (a
    stretch of underflow around a root there is far narrower than ``tol``).
    Where f at the nearer end is a few units of the rounding of normal-sized terms
    (:func:`solvers.methods.common.in_rounding`) and 2**-30 of ``start`` or less (f fell
    that far, perhaps to its rounding noise: an end of -2 is a round number, no noise),
    a 0.0 beside x is followed by the open methods' look further out
    (:func:`solvers.methods.common._rounding_plateau`, 32 calls): x is a zero of f's
    rounding noise (``zero_between_noise``: an odd multiple root typed out as a
    polynomial) when f there is a few units of its terms' rounding. The end alone is no
    evidence: a steep single term is a few bits too at the short binary fractions the
    iterates land on, and falls from 1e-274 to underflow within a factor of 4 in x
    (x**101 is 2**-909 at 2**-9 and 0.0 at 2**-11, 0.0005 from its root 0).
    A 0.0 beside x otherwise stops the method (not finite), without that look.
    """
    (x1, f1), (x2, f2) = ends
    for value in (f1, f2):
        if _carried(value, underflowed):
            underflowed.add(x)
            return math.copysign(_TINY, value), None, None
    far = x2 if abs(x - x1) <= abs(x - x2) else x1
    if _straight_through(x, x1, f1, x2, f2, tol):
        return 0.0, EXACT_ZERO, None
    near, f_near = (x1, f1) if abs(x - x1) <= abs(x - x2) else (x2, f2)
    # the nearer end may be rounding noise of cancelling terms (x then a zero of that
    # noise, a multiple root typed out): f's own look further out decides, since a few
    # bits at an end are also what a steep single term gives at the short binary
    # fractions the iterates land on (x**101 is 2**-909 at 2**-9, 0.0 at 2**-11)
    noise = in_rounding(f_near) and abs(f_near) <= _NOISE_FALL * start
    if _zero_is_root(ev, x, tol, toward=far, look=noise)[0]:
        return 0.0, EXACT_ZERO, (
            Detail("zero_between_noise", (abs(x - near), abs(f_near))) if noise else None)
    return 0.0, NOT_FINITE, _interior_underflow(x, *bracket)


def _interior_underflow(x: float, lo: float, hi: float) -> Detail:
    return Detail("underflow_inside", (x, lo, hi))


_SLOPE_SPREAD = 1024.0
_CHORD_SHARE = 1.0 / 16.0


def _straight_through(x: float, x1: float, f1: float, x2: float, f2: float, tol: float) -> bool:
    """f(x) == 0.0 between ends of opposite sign, in line with them (see _iterate_zero)."""
    if not (min(x1, x2) < x < max(x1, x2)) or _same_sign(f1, f2):
        return False
    slope_1 = abs(f1) / abs(x - x1)
    slope_2 = abs(f2) / abs(x2 - x)
    secant = abs(f1) / abs(x2 - x1) + abs(f2) / abs(x2 - x1)
    least = min(slope_1, slope_2)
    if not (least * _SLOPE_SPREAD >= secant and least * tol >= _SLOPE_SPREAD * sys.float_info.min):
        return False
    # The chord through the ends must itself vanish near x: x at most 1/16 of the
    # bracket from where the chord crosses zero.
    chord = f1 + (f2 - f1) * ((x - x1) / (x2 - x1))
    return abs(chord) <= _CHORD_SHARE * max(abs(f1), abs(f2))


def _bracket_settings(
    xtol: float, rtol: float, ftol: float, max_iter: int, a: float, b: float
) -> dict[str, Setting]:
    bracket = (_start_value(a, "bracket end a"), _start_value(b, "bracket end b"))
    return dict(_check_settings(xtol, rtol, ftol, max_iter), bracket=bracket)


@_quiet
def bisection(
    f: Function,
    a: float,
    b: float,
    *,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
) -> Run:
    """Bisection on the bracket [a, b] (f(a), f(b) of opposite signs).

    Each iterate is the bracket's midpoint; the bracket halves every iterate (order 1,
    ratio 1/2). Stops when the bracket width ``hi - lo <= xtol + rtol*|x|`` with x the
    end of smaller |f| (returned as the root), or when the ends are adjacent doubles
    and cannot be split (also ``x_tolerance``, recorded in the detail).
    """
    settings = _bracket_settings(xtol, rtol, ftol, max_iter, a, b)
    ev = _Evaluator(f)
    steps: list[Step] = []
    start = _start_bracket("bisection", ev, settings, steps)
    if isinstance(start, Run):
        return start
    xtol_, rtol_, ftol_, cap = (settings[n] for n in ("xtol", "rtol", "ftol", "max_iter"))
    lo, flo, hi, fhi = start.a, start.fa, start.b, start.fb
    if lo > hi:
        lo, flo, hi, fhi = hi, fhi, lo, flo
    underflowed = start.underflowed
    last = start.b
    iterations = 0

    def done(reason: str, root: float, detail: Detail | None = None) -> Run:
        return _finish("bisection", reason, root, steps, iterations, ev.calls, settings, detail)

    def closed(best: float, detail: Detail) -> Run:
        reason, why = _closed_bracket_reason(ev, settings, lo, flo, hi, fhi, steps, underflowed)
        return done(reason, best, why or detail)

    while True:
        best = lo if abs(flo) <= abs(fhi) else hi
        if hi - lo <= xtol_ + rtol_ * abs(best):
            return closed(best, _step_detail("width", hi - lo, xtol_, rtol_, best))
        if iterations >= cap:
            reason, why = _capped_reason(ev, lo, flo, hi, fhi, steps)
            return done(reason, best, why)
        mid = 0.5 * lo + 0.5 * hi
        if not lo < mid < hi:
            return closed(
                best, Detail("adjacent_doubles", (lo, hi))
            )
        fmid = ev(mid)
        iterations += 1
        if not math.isfinite(fmid):
            steps.append(Step(iterations + 1, mid, fmid, None, mid - last, lo, hi))
            return done(NOT_FINITE, best, _not_finite_detail(ev, mid, fmid))
        recorded = fmid
        if fmid == 0.0:
            fmid, stop, why = _iterate_zero(
                ev, mid, xtol_ + rtol_ * abs(mid), ((lo, flo), (hi, fhi)), underflowed, (lo, hi),
                max(abs(steps[0].fx), abs(steps[1].fx)),
            )
            if stop:
                steps.append(Step(iterations + 1, mid, recorded, None, mid - last, mid, hi))
                return done(stop, mid, why)
        if _same_sign(fmid, flo):
            lo, flo = mid, fmid
        else:
            hi, fhi = mid, fmid
        steps.append(Step(iterations + 1, mid, recorded, None, mid - last, lo, hi))
        last = mid
        if abs(fmid) <= ftol_:
            return done(F_TOLERANCE, mid)


def _regula_falsi(
    method: str,
    illinois_rule: bool,
    f: Function,
    a: float,
    b: float,
    xtol: float,
    rtol: float,
    ftol: float,
    max_iter: int,
) -> Run:
    """False position, plain or with the Illinois rule (shared body; see the two wrappers)."""
    settings = _bracket_settings(xtol, rtol, ftol, max_iter, a, b)
    ev = _Evaluator(f)
    steps: list[Step] = []
    start = _start_bracket(method, ev, settings, steps)
    if isinstance(start, Run):
        return start
    xtol_, rtol_, ftol_, cap = (settings[n] for n in ("xtol", "rtol", "ftol", "max_iter"))
    # (xb, fb) is the newest point, (xa, fa) the retained end of opposite sign.
    # ga is the value used for interpolation at xa: fa, or fa halved by the Illinois rule.
    xa, fa, xb, fb = start.a, start.fa, start.b, start.fb
    underflowed = start.underflowed
    ga = fa
    previous: float | None = None  # previous interpolated iterate
    previous_step: float | None = None  # |previous - the one before|
    previous_ratio: float | None = None  # previous_step / the step before it
    probe: float | None = None  # next iterate: the check of a step-based estimate
    iterations = 0
    midpoints = 0

    def done(reason: str, root: float, detail: Detail | None = None) -> Run:
        note = Detail("midpoint_steps", (midpoints,)) if midpoints else None
        return _finish(
            method, reason, root, steps, iterations, ev.calls, settings, detail, note=note
        )

    def closed(best: float, detail: Detail) -> Run:
        (lo, flo), (hi, fhi) = sorted(((xa, fa), (xb, fb)))
        reason, why = _closed_bracket_reason(ev, settings, lo, flo, hi, fhi, steps, underflowed)
        return done(reason, best, why or detail)

    while True:
        lo, hi = (xa, xb) if xa < xb else (xb, xa)
        best = xa if abs(fa) < abs(fb) else xb
        if iterations >= cap:
            reason, why = _capped_reason(ev, xa, fa, xb, fb, steps)
            if why is None and not illinois_rule:
                why = _held_end(steps)
            return done(reason, best, why)
        if probe is not None and lo < probe < hi:
            x, fallback = probe, False
        else:
            denominator = fb - ga  # never zero: fb and ga have opposite signs
            if math.isinf(denominator) or ga == 0.0:
                fraction = 1.0 / (1.0 - ga / fb)
            else:
                fraction = fb / denominator
            x = xb - fraction * (xb - xa)
            fallback = not lo < x < hi
        checking, probe = probe is not None, None
        if fallback:
            # Rounding put the chord's zero on (or past) an end, e.g. beside a pole where
            # |f| is huge: take the midpoint instead so the method cannot stall there.
            x = 0.5 * lo + 0.5 * hi
            if not lo < x < hi:
                return closed(
                    best, Detail("adjacent_doubles", (lo, hi))
                )
            midpoints += 1
        fx = ev(x)
        iterations += 1
        if not math.isfinite(fx):
            steps.append(Step(iterations + 1, x, fx, None, x - xb, lo, hi))
            return done(NOT_FINITE, best, _not_finite_detail(ev, x, fx))
        recorded = fx
        if fx == 0.0:
            fx, stop, why = _iterate_zero(
                ev, x, xtol_ + rtol_ * abs(x), ((xa, fa), (xb, fb)), underflowed, (lo, hi),
                max(abs(steps[0].fx), abs(steps[1].fx)),
            )
            if stop:
                steps.append(Step(iterations + 1, x, recorded, None, x - xb, *sorted((xb, x))))
                return done(stop, x, why)
        if _same_sign(fx, fb):
            # xa retained once more: Illinois halves its value to pull the next iterate over.
            if illinois_rule:
                ga *= 0.5
        else:
            xa, fa, ga = xb, fb, fb
        dx = x - xb
        xb, fb = x, fx
        lo, hi = (xa, xb) if xa < xb else (xb, xa)
        steps.append(Step(iterations + 1, x, recorded, None, dx, lo, hi))
        if abs(fx) <= ftol_:
            return done(F_TOLERANCE, x)
        best = xa if abs(fa) < abs(fb) else xb
        if hi - lo <= xtol_ + rtol_ * abs(best):
            return closed(best, _step_detail("width", hi - lo, xtol_, rtol_, best))
        if illinois_rule or fallback or checking:
            # Illinois: both ends move, so the bracket width alone decides. After a
            # midpoint step, or a check that found no sign change, the chord-step
            # history says nothing: start it again.
            if fallback or checking:
                previous = previous_step = previous_ratio = None
            continue
        if previous is not None:
            step = abs(x - previous)
            if previous_step is not None:
                ratio = step / previous_step
                # Linear convergence with ratio c leaves an error of about c/(1-c) times
                # the last step. Take the worse of the last two ratios, so one short step
                # after a long one (a flat stretch of f) is not taken for convergence,
                # and never accept less than the step itself.
                c = ratio if previous_ratio is None else max(ratio, previous_ratio)
                if previous_ratio is not None and c < 1.0:
                    error = step * max(1.0, c / (1.0 - c))
                    if error <= xtol_ + rtol_ * abs(x):
                        # An estimate is no proof (f with rounding noise or random values
                        # fools it): check it with f half a tolerance towards the other
                        # end. A sign change there closes the bracket below tolerance;
                        # none moves this end on, and the chords go on.
                        probe = x + math.copysign(0.5 * (xtol_ + rtol_ * abs(x)), xa - x)
                previous_ratio = ratio
            previous_step = step
        previous = x


_HELD = 10  # iterations one end must have stood still to be named at the cap


def _held_end(steps: list[Step]) -> Detail | None:
    """Plain false position stopped at the cap: the bracket end that stood still through
    the last iterations, and for how many (``end_held``), where it did for at least
    :data:`_HELD` of them. On a convex or concave f every chord lands on the same side
    of the root, so one end never moves and convergence is linear and can be very slow:
    the words suggest Illinois or Brent, which move both ends."""
    for side in ("lo", "hi"):
        held = 0
        end = None
        for step in reversed(steps[2:]):  # the iterates (steps 0 and 1: the ends given)
            value = getattr(step, side)
            if value is None or (end is not None and value != end):
                break
            end = value
            held += 1
        if end is not None and held >= _HELD:
            return Detail("end_held", (end, held))
    return None


@_quiet
def false_position(
    f: Function,
    a: float,
    b: float,
    *,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
) -> Run:
    """Plain false position (regula falsi) on the bracket [a, b].

    Each iterate is where the chord through the bracket ends crosses zero; the end of
    the same sign is replaced. On a convex or concave f one end never moves, so the
    convergence is linear (order 1) and can be slow; users should see this.
    Stops when the bracket width ``<= xtol + rtol*|x|``. When the linear-convergence
    error estimate from the last chord steps is below tolerance, the next iterate is
    the check half a tolerance towards the other end, whose sign change closes the
    bracket (module notes give the exact rule): the estimate alone never stops it.
    Returns the bracket end of smaller |f|.
    """
    return _regula_falsi("false_position", False, f, a, b, xtol, rtol, ftol, max_iter)


@_quiet
def illinois(
    f: Function,
    a: float,
    b: float,
    *,
    xtol: float = DEFAULT_XTOL,
    rtol: float = DEFAULT_RTOL,
    ftol: float = DEFAULT_FTOL,
    max_iter: int = DEFAULT_MAX_ITER,
) -> Run:
    """Illinois-modified false position on the bracket [a, b] (Dowell & Jarratt, 1971).

    As false position, but whenever the same end is retained again its f value is
    halved for the next interpolation, so both ends move and the order is ~1.44.
    Stops when the bracket width ``hi - lo <= xtol + rtol*|x|`` with x the end of
    smaller |f| (returned as the root).
    """
    return _regula_falsi("illinois", True, f, a, b, xtol, rtol, ftol, max_iter)
