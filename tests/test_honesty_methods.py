"""A converged result is always a root: underflow, jumps, scaled and noisy f.

Every check names its outside reference: scipy's own root-finding test collections
(``scipy.optimize._tstutils``: the Chandrupatla set, the APS set and the "original"
discontinuous and random-valued cases), scipy.optimize.brentq, closed forms, mpmath,
and IEEE 754-2019 for signed zeros.
"""

from __future__ import annotations

import math
import random
import struct

import mpmath
import numpy as np
import pytest
from scipy.optimize import _tstutils as tstutils
from scipy.optimize import brentq

from app.documents.words import REASON_TEXT, run_message
from solvers import parse_equation
from solvers.methods import (
    DEFAULT_RTOL,
    DEFAULT_XTOL,
    METHODS,
    bisection,
    brent,
    false_position,
    illinois,
    newton,
    run_method,
    secant,
)
from solvers.records import CONVERGED_REASONS, REASONS
from solvers.residual import CODES, Residual, residual_mp

BRACKETING = (bisection, false_position, illinois, brent)


def tolerance(x: float) -> float:
    return DEFAULT_XTOL + DEFAULT_RTOL * abs(x)


def run_every_method(f, bracket, x0, x1):
    """One Run per method of the METHODS table, from the same start values."""
    return [run_method(name, f, x0=x0, x1=x1, bracket=bracket) for name in METHODS]


def assert_record(run) -> None:
    assert run.reason in REASONS
    assert run.converged == (run.reason in CONVERGED_REASONS)


def sign_change_within_tolerance(f, x: float) -> bool:
    """f changes sign (or is zero) within tolerance of x."""
    h = tolerance(x)
    lo, hi = f(x - h), f(x + h)
    return f(x) == 0.0 or lo == 0.0 or hi == 0.0 or (lo < 0.0) != (hi < 0.0)


# ------------------------------------------------------------ Brent: scale-free interpolation

X19_CASES = [c for c in tstutils.get_tests("chandrupatla") if c["ID"].startswith("fun6")]


def test_the_chandrupatla_set_has_the_five_x19_brackets():
    # scipy.optimize._tstutils, Chandrupatla collection: fun6(x) = x**19, root 0
    assert len(X19_CASES) == 5
    assert all(case["f"](2.0) == 2.0**19 and case["root"] == 0 for case in X19_CASES)


@pytest.mark.parametrize("case", X19_CASES, ids=lambda c: c["ID"])
def test_brent_on_x19_never_raises_and_converges_like_brentq(case):
    a, b = case["bracket"]
    f = case["f"]
    run = brent(f, a, b)  # default cap: converged at the root, or an honest max_iterations
    assert_record(run)
    assert run.reason in ("x_tolerance", "exact_zero", "max_iterations")
    if run.converged:
        assert abs(run.root) <= tolerance(0.0)
    # scipy.optimize.brentq with the same tolerances and a cap of 1000 converges to 0
    # (closed form: the only root of x**19); so does Brent here, with no more calls.
    reference, info = brentq(f, a, b, xtol=DEFAULT_XTOL, rtol=DEFAULT_RTOL, maxiter=1000,
                             full_output=True)
    long_run = brent(f, a, b, max_iter=1000)
    assert long_run.converged and abs(long_run.root) <= tolerance(0.0)
    assert abs(reference) <= tolerance(0.0)
    assert long_run.evaluations <= info.function_calls


def test_brent_on_a_cubic_scaled_to_1e_minus_110():
    # scipy _tstutils fun1 = x**3 - 2x - 5, root 2.0945514815423265 (mpmath, per scipy);
    # scaled by 1e-110 the interpolation once divided by an underflowed product.
    root = tstutils.get_tests("chandrupatla")[0]["root"]
    run = brent(lambda x: 1e-110 * (x**3 - 2.0 * x - 5.0), 0.0, 3.0)
    assert run.converged and abs(run.root - root) <= 2 * tolerance(root)
    unscaled = brent(lambda x: x**3 - 2.0 * x - 5.0, 0.0, 3.0)
    assert unscaled.evaluations == run.evaluations  # f*1e-110 interpolates as f does
    reference = brentq(lambda x: 1e-110 * (x**3 - 2.0 * x - 5.0), 0.0, 3.0,
                       xtol=DEFAULT_XTOL, rtol=DEFAULT_RTOL)
    assert abs(run.root - reference) <= 2 * tolerance(root)


def test_brent_takes_the_same_steps_for_f_times_any_power_of_two():
    # Scaling by 2**k is exact in binary floating point, so a scale-free method must
    # take bit-identical steps (closed-form argument, no outside value needed).
    def f(x):
        return math.cos(x) - x

    base = [s.x for s in brent(f, 0.0, 1.0).steps]
    for k in (-1000, -300, -60, 7, 300, 1000):
        scaled = [s.x for s in brent(lambda x, k=k: math.ldexp(f(x), k), 0.0, 1.0).steps]
        assert scaled == base, k


SCALES = range(-320, 301)
CUBIC_ROOT = 2.0945514815423265  # scipy _tstutils fun1.root (mpmath)


def _scaled_cubic(k: int):
    # 10.0**k underflows to 0 below 1e-323; build the subnormal scale in two steps.
    scale = 10.0**k if k > -300 else 10.0 ** (k + 20) * 1e-20
    return lambda x: scale * (x**3 - 2.0 * x - 5.0)


def test_every_method_on_f_times_ten_to_the_k_for_k_from_minus_320_to_300():
    # f*10^k has the roots of f (closed form). With |f| still above underflow near the
    # root every method converges there; further down, where f*10^k is 0.0 over a
    # stretch around the root wider than the tolerance, no method may call a point of
    # that stretch a root.
    for k in SCALES:
        f = _scaled_cubic(k)
        for run in run_every_method(f, (0.0, 3.0), 2.5, 2.6):
            assert_record(run)
            if run.converged:
                assert abs(run.root - CUBIC_ROOT) <= 2 * tolerance(CUBIC_ROOT), (
                    k, run_message(run))
            if -290 <= k:
                assert run.converged, (k, run_message(run))


# ------------------------------------------------------------------ underflow is not a zero

LN2 = math.log(2.0)  # closed form: exp(-x) = 2*exp(-2x)  <=>  exp(x) = 2


@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_underflow_at_a_bracket_end_is_not_a_root(method):
    equation = parse_equation("exp(-x) = 2*exp(-2*x)")
    assert equation.f(800.0) == 0.0  # both terms underflow: exp(-800) < 5e-324
    run = method(equation.f, 0.0, 800.0)
    assert_record(run)
    assert run.root != 800.0
    if run.converged:
        assert abs(run.root - LN2) <= 2 * tolerance(LN2)
    else:  # plain false position creeps along the flat tail: it may run out of iterations
        assert method is false_position and run.reason == "max_iterations"


def test_all_methods_agree_on_ln2_not_on_800():
    f = parse_equation("exp(-x) = 2*exp(-2*x)").f
    converged = [r for r in run_every_method(f, (0.0, 800.0), 400.0, 400.5) if r.converged]
    assert {r.method for r in converged} >= {"bisection", "illinois", "brent"}
    assert all(abs(r.root - LN2) <= 2 * tolerance(LN2) for r in converged)


@pytest.mark.parametrize("start", [760.0, 1000.0])
def test_open_methods_stop_on_an_underflowed_zero(start):
    f = parse_equation("exp(-x) = 2*exp(-2*x)").f
    for run in (newton(f, start), secant(f, start, start + 1.0)):
        assert_record(run)
        assert not run.converged and run.reason == "not_finite"
        assert "underflow" in run_message(run)


@pytest.mark.parametrize("case", [c for c in tstutils.get_tests("chandrupatla")
                                  if c["ID"].startswith("fun7")], ids=lambda c: c["ID"])
@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_function_zero_by_underflow_around_its_root_is_never_converged(case, method):
    # scipy _tstutils fun7 = x*exp(-x**-2) (0 for |x| < 3.8e-4), root 0: it is 0.0 in
    # doubles for all |x| < 1/sqrt(ln(DBL_MAX)) ~ 0.0375, and scipy's brentq returns a
    # point of that stretch as its root.
    f = case["f"]
    a, b = case["bracket"]
    claimed = brentq(f, a, b)
    assert f(claimed) == 0.0 and claimed != 0.0
    run = method(f, a, b)
    assert_record(run)
    if run.converged:
        assert run.root == 0.0  # the one true root, hit exactly
    else:
        assert run.reason in ("not_finite", "max_iterations")


def test_an_exact_zero_is_still_an_exact_zero():
    # closed forms: x - 1 at 1; x**2 - 4 at 2; sqrt(x) at 0 (f undefined left of 0)
    assert bisection(lambda x: x - 1.0, 0.0, 2.0).reason == "exact_zero"
    assert newton(lambda x: x * x - 4.0, 2.0).reason == "exact_zero"
    run = brent(lambda x: math.sqrt(x) if x >= 0 else math.nan, 0.0, 1.0)
    assert run.reason == "exact_zero" and run.root == 0.0


# -------------------------------------------------------------------------- jumps and poles


@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_bracket_closing_on_a_jump_is_a_discontinuity(method):
    # x/|x| + x is -1 + x left of 0 and 1 + x right of it: |f| >= 1 except at 0, where
    # it is undefined (closed form). The sign change on [-1, 2] is a jump, not a root.
    equation = parse_equation("x/abs(x) + x")
    run = method(equation.f, -1.0, 2.0)
    assert_record(run)
    assert not run.converged and run.reason == "discontinuity"
    assert abs(run.root) <= tolerance(0.0)
    assert "jump" in run_message(run)


def _rootless_jumps(seed: int, count: int, beyond: tuple[float, float] = (1e-6, 0.9)):
    """Seeded jumps (x - c)/|x - c| + s*x with brackets around c where |s*x| < 0.95: f is
    -1 + s*x left of c and 1 + s*x right of it, so |f| > 0.05 everywhere and the sign
    change is the jump, never a root (closed form). The right end lies ``beyond`` c."""
    rng = random.Random(seed)
    cases = []
    while len(cases) < count:
        c = round(rng.uniform(-2.0, 2.0), 3)
        s = round(rng.uniform(0.01, 0.9) / (abs(c) + 1.0), 3) * rng.choice((1, -1))
        a, b = c - rng.uniform(1e-6, 0.9), c + rng.uniform(*beyond)
        if max(abs(s * a), abs(s * b)) < 0.95:
            cases.append((c, s, a, b))
    return cases


@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_jump_is_judged_by_each_side_of_the_closed_bracket_alone(method):
    # Found by an outside check against mpmath: f = (x - 1.961)/|x - 1.961| + 0.307x on
    # [1.638, 2.618] is -0.398 left of 1.961 and +1.602 right of it (closed form; no
    # root). Every bracketing method closed on 1.961 and called it a root, because an
    # iterate just beyond the right end (f 1.602) was compared with the left end's 0.398
    # as if |f| had grown away from a root. Each end is now compared with its own side.
    equation = parse_equation("(x - 1.961)/abs(x - 1.961) + 0.307*x")
    run = method(equation.f, 1.638, 2.6180000000000003)
    assert not run.converged and run.reason == "discontinuity"
    assert abs(run.root - 1.961) <= tolerance(1.961)
    # mpmath at 50 digits: no root there, |f| is at least 0.39 on both sides of the jump
    with mpmath.workdps(50):
        c = mpmath.mpf("1.961")
        for x in (c - mpmath.mpf("1e-40"), c + mpmath.mpf("1e-40")):
            assert abs((x - c) / abs(x - c) + mpmath.mpf("0.307") * x) > 0.39
    # and on 200 seeded jumps of the same kind (about a fifth were called roots before)
    for c, s, a, b in _rootless_jumps(7, 200):
        run = method(parse_equation(f"(x - {c})/abs(x - {c}) + {s}*x").f, a, b)
        assert not run.converged, (c, s, a, b, run.root, run.reason)


def test_a_jump_is_judged_by_each_side_in_a_batch_too():
    # The same kind of jumps as one table per method (solve_batch's closed-bracket verdict
    # is the scalar rule element-wise), the right end of each bracket 2e-12 to 4e-11 past
    # the jump: there the starting end is close enough to pass for |f| grown from the
    # other end's (about one row in ten converged before). No row converges (closed form).
    from solvers import solve_batch
    c, s, a, b = np.array(_rootless_jumps(11, 500, (2e-12, 4e-11))).T
    equation = parse_equation("(x - c)/abs(x - c) + s*x", unknown="x",
                              parameters={"c": c, "s": s})
    for name in ("bisection", "false_position", "illinois", "brent"):
        batch = solve_batch(equation, method=name, bracket=(a, b))
        assert not batch.converged.any(), (name, np.flatnonzero(batch.converged))


@pytest.mark.parametrize("name, honest", [("f4", ("discontinuity",)),
                                          ("f5", ("not_finite", "discontinuity"))])
@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_scipy_discontinuous_cases_converge_only_on_the_defined_zero(name, honest, method):
    # scipy _tstutils "original" set: f4 jumps at 1, f5 = 1/(1 - x) has its pole there;
    # both are defined as 0 at x = 1 itself. A pole may stay not_finite.
    f = getattr(tstutils, name)
    run = method(f, 0.5, math.sqrt(3.0))
    assert_record(run)
    if run.converged:
        assert run.root == 1.0 and f(run.root) == 0.0
    else:
        assert run.reason in honest and abs(run.root - 1.0) <= tolerance(1.0)


@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_pole_is_never_a_root(method):
    # tan has a pole at pi/2 (closed form) with a sign change across it
    run = method(math.tan, 1.0, 2.0)
    assert_record(run)
    assert not run.converged
    # plain false position creeps up the pole one side at a time and meets the cap first;
    # it still names the pole, as the methods whose bracket closes do
    assert run.reason == "not_finite" and run.detail.code in ("pole", "pole_capped")
    assert abs(run.detail.values[2] - math.pi / 2) <= 1e-6


@pytest.mark.parametrize("c", [1.31, 1.7, 1.75])
@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_bracket_holding_only_a_pole_is_named_a_pole_even_at_the_cap(method, c):
    # 1/(x - c) - 2 has its pole at c and its only root at c + 0.5 (closed form), outside
    # [1, 1.8]: the sign change in the bracket is the pole's
    run = method(lambda x: 1.0 / (x - c) - 2.0, 1.0, 1.8)
    assert_record(run)
    assert not run.converged and run.reason == "not_finite"
    if run.detail.code in ("pole", "pole_capped"):
        assert abs(run.detail.values[2] - c) <= 1e-6
    else:  # bisection may land on c itself: f raises there
        assert run.detail.code == "raised" and run.detail.values[2] == c


@pytest.mark.parametrize("method", [m for m in METHODS if m != "false_position"])
def test_a_zero_in_the_rounding_noise_of_a_multiple_root_is_no_underflow(method):
    # x^3 - 3x^2 + 3x - 1 = (x - 1)^3 (closed form): typed out, f is rounding noise, 0.0
    # at many points, for |x - 1| up to about 1.3e-5 (the scan's noise band). A method
    # landing on such a 0.0 found f 0.0 beside it too and said "f underflowed": the terms
    # are of order 1, nothing underflowed. f beside it is a few units of their rounding.
    text = "x^3 - 3*x^2 + 3*x - 1"
    eq = parse_equation(text)
    run = run_method(method, eq.f, fprime=eq.fprime, x0=2.0, x1=2.1, bracket=(0.0, 2.3))
    assert run.converged, (run.reason, run.detail)
    assert abs(run.root - 1.0) <= 2e-5
    assert run.detail is None or run.detail.code in ("zero_in_noise", "zero_between_noise")
    if run.detail is not None:
        assert "rounding noise" in run_message(run) and "underflow" not in run_message(run)


@pytest.mark.parametrize("n, bracket", [(101, (-1.0, 2.0)), (101, (-0.0625, 0.125)),
                                         (201, (-1.0, 2.0)), (201, (-1.0, 1.5))])
@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_steep_term_at_a_short_binary_fraction_is_no_rounding_noise(method, n, bracket):
    # x^n (n odd; closed form: one root, 0). At the short binary fractions the iterates
    # land on, x^n is one exact bit (2^-909 at 2^-9, 2.3e-274: "a few units of rounding"
    # by its bits alone) and 0.0 a factor 4 closer to 0 (underflow): a 0.0 there,
    # 0.0005 to 0.016 from the root, is no zero of rounding noise (mpmath: x^n there is
    # below the smallest subnormal, 2^-1074, but not 0: underflow of a single term).
    run = method(lambda x: x**n, *bracket)
    assert_record(run)
    if run.converged:
        assert abs(run.root) <= tolerance(0.0), (run.reason, run.root, run.detail)
    else:
        assert run.reason == "not_finite" and run.detail.code == "underflow_inside"
        exact = abs(mpmath.mpf(run.root)) ** n
        assert 0 < exact < mpmath.mpf(2) ** -1074 and abs(run.root) > 1e6 * tolerance(0.0)
        assert "underflow" in run_message(run)


@pytest.mark.parametrize("cap", [20, 21, 22])
@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_steep_root_between_flat_tails_at_the_cap_is_no_pole(method, cap):
    # 1e6 (x - r) exp(-(x - r)^2): one simple root r (closed form), slope 1e6 there, |f|
    # 0.45 and 1.4e-9 at the starting ends r + 4, r - 6. Stopped at the cap on a bracket
    # 4e-6 wide around r, |f| at its ends (about 2 to 4) is above both starting ends, as
    # beside a pole; 16 widths out |f| has grown (a root), where beside 1/(x - c) it falls
    r = 0.3

    def f(x):
        return 1e6 * (x - r) * math.exp(-((x - r) ** 2))

    run = method(f, r - 6.0, r + 4.0, max_iter=cap)
    assert_record(run)
    assert run.detail is None or run.detail.code != "pole_capped", run.detail
    if not run.converged:  # (false position and Illinois may still crawl on a tail)
        assert run.reason == "max_iterations"
    if method is bisection:  # the bracket narrowed onto r: |f| there above the start's
        assert abs(run.root - r) <= 1e-5 and abs(f(run.root)) > 0.45
    assert abs(brentq(f, r - 6.0, r + 4.0) - r) <= 1e-12  # scipy: the root is there


@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_closed_bracket_on_a_steep_root_between_flat_tails_is_no_pole(method):
    # 1e6 (x - r) exp(-(x - r)^2): one simple root r (closed form), |f| 3.7e-9 and 7e-9
    # at the starting ends 6 away, 1e-6 a tolerance from r. A bracket closed on r has |f|
    # above both starting ends, as a pole's has: bisection said "pole". 16 widths out
    # |f| grows (a root); beside 1/(x - c) it falls. scipy.optimize.brentq finds r.
    r, a, b = 0.12141419671852738, -5.794456928967645, 5.983516542718238

    def f(x):
        return 1e6 * (x - r) * math.exp(-((x - r) ** 2))

    run = method(f, a, b)
    assert_record(run)
    assert run.detail is None or run.detail.code not in ("pole", "pole_capped"), run.detail
    assert abs(brentq(f, a, b) - r) <= tolerance(r)
    if run.converged:
        assert abs(run.root - r) <= 2 * tolerance(r)
    pole = method(lambda x: 1.0 / (x - 0.7), 0.0, 1.5)  # a pole keeps its verdict
    if pole.reason != "max_iterations" or method is not false_position:  # (it may crawl)
        assert pole.reason == "not_finite" and pole.detail.code in ("pole", "pole_capped")


@pytest.mark.parametrize(("a", "b"), [(-5.665949264315424, 9.065518822904679),
                                    (-16.51014120593127, 26.416225929490032)])
@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_x_exp_minus_x_squared_on_a_wide_bracket_has_its_root_not_a_pole(method, a, b):
    # x exp(-x^2): one root, 0 (closed form); at the far ends of the bracket |f| is 1e-13
    # or less (exp(-32)), below |f| a tolerance from 0: bisection and Brent said "pole".
    # Beside the closed bracket |f| grows 16-fold: a root (scipy.optimize.brentq agrees)
    def f(x):
        return x * math.exp(-x * x)

    run = method(f, a, b)
    assert_record(run)
    assert abs(brentq(f, a, b)) <= tolerance(0.0)
    assert run.detail is None or run.detail.code not in ("pole", "pole_capped"), run.detail
    if method is not false_position:
        assert run.converged and abs(run.root) <= 2 * tolerance(0.0), (run.reason, run.root)


def test_newton_at_a_double_root_typed_out_converges_in_its_noise():
    # x^3 - 3x + 2 = (x - 1)^2 (x + 2) (closed form): Newton creeps linearly to the double
    # root and lands on a 0.0 of rounding noise about 5e-9 from it (the noise reaches
    # |x - 1| ~ 1.2e-8: |f| <= 3 eps there)
    eq = parse_equation("x^3 - 3*x + 2")
    run = newton(eq.f, 1.3843671526381416, fprime=eq.fprime)
    assert run.converged and run.reason == "exact_zero"
    assert abs(run.root - 1.0) <= 2e-8
    assert run.detail is not None and run.detail.code == "zero_in_noise"


def test_plain_false_position_at_the_cap_names_the_end_that_stood_still():
    # x^10 - 0.5 on [0, 1.5] is convex: every chord lands left of the root 0.5**(1/10)
    # (closed form), so the end 1.5 never moves and 100 iterations do not reach it;
    # Illinois and Brent converge on the same bracket (scipy.optimize.brentq agrees)
    def f(x):
        return x**10 - 0.5

    run = false_position(f, 0.0, 1.5)
    assert run.reason == "max_iterations" and run.detail.code == "end_held"
    assert run.detail.values == (1.5, 100)
    assert "Illinois or Brent" in run_message(run)
    root = brentq(f, 0.0, 1.5, xtol=1e-14)
    for other in (illinois, brent):
        assert abs(other(f, 0.0, 1.5).root - root) <= 1e-12


@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_capped_run_on_a_root_is_still_max_iterations(method):
    # x^9 - 0.3 (root 0.3**(1/9), closed form) with 3 iterations allowed: the bracket has
    # not closed in on anything, the cap is all there is to say
    run = method(lambda x: x**9 - 0.3, 0.0, 2.0, max_iter=3)
    assert run.reason == "max_iterations" and run.detail is None


@pytest.mark.parametrize("p", [1.0 / 3.0, 1.0 / 19.0])
@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_steep_continuous_root_is_not_taken_for_a_jump(method, p):
    # sign(x)*|x|**p has its root at 0 (closed form) with an infinite slope there
    def f(x):
        return math.copysign(abs(x) ** p, x)

    run = method(f, -1.0, 2.0, max_iter=200)
    assert_record(run)
    assert run.reason != "discontinuity"
    if run.converged:
        assert abs(run.root) <= tolerance(0.0)


@pytest.mark.parametrize("height", [5e-324, 1e-323, 1.0])
@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_a_step_of_the_smallest_subnormal_is_a_jump_not_underflow_nor_a_root(method, height):
    # f = +-height on either side of 1 (a step, closed form), height down to 5e-324
    # = 2**-1074, the smallest subnormal double (IEEE 754). No end underflowed to 0.0, so
    # +-5e-324 is f's own value: its sign change is real, and |f| does not grow beside
    # the closed bracket: a jump, as for a step of 1. (Half of 5e-324 rounds to 0.0 and
    # 0.7 of it back to 5e-324: read against iterates two widths away, the square-root
    # test once took this step for a root.)
    def f(x: float) -> float:
        return math.copysign(height, x - 1.0)

    run = method(f, -2.0, 3.5)
    assert_record(run)
    assert run.reason == "discontinuity", (run.reason, run.detail)
    assert run.detail.values[2] <= 1.0 <= run.detail.values[3]


# ----------------------------------------------------------------- noisy and random values


def _random_valued(seed: int):
    """scipy _tstutils f6: a random value, positive right of 1, negative left of it, 0 at
    1; memoized so that f is a function. Our own seeded copy of its rule."""
    rng = random.Random(seed)
    cache: dict[float, float] = {}

    def f(x: float) -> float:
        if x not in cache:
            cache[x] = rng.random() if x > 1 else -rng.random() if x < 1 else 0.0
        return cache[x]

    return f


@pytest.mark.parametrize("seed", range(12))
@pytest.mark.parametrize("method", BRACKETING, ids=lambda m: m.__name__)
def test_random_values_never_give_a_false_x_tolerance(method, seed):
    # scipy _tstutils f6 on its bracket [0.5, sqrt(3)]: the only sign change is at 1.
    f = _random_valued(seed)
    run = method(f, 0.5, math.sqrt(3.0))
    assert_record(run)
    if run.converged:
        assert abs(run.root - 1.0) <= tolerance(1.0), run_message(run)


def test_scipy_random_valued_case_itself():
    f = tstutils.f6
    tstutils._f6_cache.clear()
    random.seed(20261202)
    for method in BRACKETING:
        run = method(f, 0.5, math.sqrt(3.0))
        assert_record(run)
        if run.converged:
            assert abs(run.root - 1.0) <= tolerance(1.0), (method.__name__, run_message(run))


# ------------------------------------------------------------------------- property test


def _noise(x: float, seed: int) -> float:
    """A fixed pseudo-random value in [-1, 1] for each double x (f stays a function)."""
    bits = struct.unpack("<Q", struct.pack("<d", x))[0] ^ (seed * 0x9E3779B97F4A7C15)
    bits = (bits * 0xBF58476D1CE4E5B9) & 0xFFFFFFFFFFFFFFFF
    bits ^= bits >> 31
    return (bits / 2.0**64) * 2.0 - 1.0


def _case(rng: np.random.Generator):
    root = float(rng.uniform(-10.0, 10.0))
    scale = 10.0 ** float(rng.uniform(-300.0, 300.0))
    curvature = float(rng.uniform(-0.5, 0.5))
    noise = 10.0 ** float(rng.uniform(-16.0, -2.0)) * float(rng.integers(0, 2))
    jump = float(rng.integers(0, 4)) == 0
    seed = int(rng.integers(1, 2**31))

    def f(x: float) -> float:
        d = x - root
        body = (math.copysign(1.0, d) if jump and d != 0.0 else 0.0) + d * (1.0 + curvature * d * d)
        return scale * (body + noise * _noise(x, seed))

    left = root - float(rng.uniform(0.1, 20.0))
    right = root + float(rng.uniform(0.1, 20.0))
    return f, root, scale, noise, jump, (left, right)


def test_property_no_method_claims_a_false_root_on_scaled_noisy_or_jumping_f():
    # Our own generator (numpy, seeded): f = s*(sign jump? + d*(1 + c*d^2) + noise),
    # d = x - root, over a bracket around the root. Converged must mean a small |f|
    # relative to f's scale, or a sign change within tolerance; never at a jump.
    rng = np.random.default_rng(20261202)
    for _ in range(400):
        f, root, scale, noise, jump, bracket = _case(rng)
        x0 = bracket[0] + 0.6 * (bracket[1] - bracket[0])
        for run in run_every_method(f, bracket, x0, x0 + 0.01):
            assert_record(run)
            if not run.converged:
                continue
            x = run.root
            small = abs(f(x)) <= scale * (1e3 * noise + 1e-9)
            assert small or sign_change_within_tolerance(f, x), (run.method, run_message(run))
            if jump and abs(x - root) <= 1e-6 * (1.0 + abs(root)):
                # beside the jump |f| >= scale*(1 - noise): only x == root has f ~ 0
                assert x == root, (run.method, run_message(run))


# ----------------------------------------------------------------- one evaluation path


@pytest.mark.parametrize("text", ["atan2(x, max(-x, x)) + 1", "atan2(x, min(-x, x)) + 1",
                                  "atan2(-x, max(x, -x, -x))", "atan2(1, min(x, -x))",
                                  "max(x, -x) - min(-x, x)"])
@pytest.mark.parametrize("x", [0.0, -0.0, 1.5, -2.0])
def test_scalar_and_array_evaluation_agree_at_signed_zeros(text, x):
    # IEEE 754-2019 maximum/minimum: -0 < +0, whatever the order of the arguments;
    # math.atan2 and numpy.arctan2 follow C's atan2 on signed zeros.
    f = parse_equation(text).f
    scalar, array = f(x), f(np.array([x]))[0]
    assert struct.pack("<d", scalar) == struct.pack("<d", array), (scalar, array)


def test_the_issue_case_gives_one_value_at_zero():
    f = parse_equation("atan2(x, max(-x, x)) + 1").f
    # max(-0, +0) is +0 (IEEE 754-2019), atan2(+0, +0) = +0 (C99 Annex F): f(0) = 1
    assert f(0.0) == 1.0 and f(np.array([0.0]))[0] == 1.0


# ---------------------------------------------------------------- the 50-digit residual


def test_residual_matches_mpmath_at_a_root():
    equation = parse_equation("x^2 - 2")
    x = math.sqrt(2.0)
    result = residual_mp(equation, x)
    assert result.code == "computed"
    with mpmath.workdps(50):  # reference: mpmath, same double x
        expected = mpmath.mpf(x) ** 2 - 2
        assert abs(result.value - expected) <= mpmath.mpf(10) ** -45


@pytest.mark.parametrize("text, x", [
    ("exp(-cosh(sinh(cosh(sinh(5*x))))) = 0.05", 0.5),
    ("exp(-cosh(sinh(cosh(sinh(5*x))))) = 0.05", 3.0),
    ("exp(exp(exp(x)))", 10.0),
    ("exp(exp(exp(exp(x)))) - 1", 6.0),
    ("x^(10^6)", 2.0),
    ("sqrt(x)", -1.0),
    ("1/x", 0.0),
    ("x/abs(x) + x", 0.0),
    ("x", math.inf),
    ("x", math.nan),
])
def test_residual_never_raises_on_accepted_equations(text, x):
    result = residual_mp(parse_equation(text), x)
    assert isinstance(result, Residual) and result.code in CODES
    assert (result.value is None) == (result.code != "computed")


class _Hostile:
    def __init__(self, exc: BaseException | None) -> None:
        self.exc = exc

    def residual_mp(self, x, dps=50):
        if self.exc is None:
            while True:  # Python calls forever: only the time budget stops it
                abs(x)
                math.fabs(x)
                _ = [y for y in range(3)]
        raise self.exc


@pytest.mark.parametrize("exc", [TypeError("no mpf"), AttributeError("mpc"), MemoryError(),
                                 OverflowError("too many digits in integer"), RecursionError()])
def test_residual_turns_every_failure_into_a_code(exc):
    assert residual_mp(_Hostile(exc), 1.0) == Residual(None, "not_computable")


def test_residual_stays_within_its_time_budget():
    assert residual_mp(_Hostile(None), 1.0, budget=0.05) == Residual(None, "time_budget")


def test_report_words_cover_every_residual_code():
    from app.documents.report import RESIDUAL_WORDS, _residual_mp

    assert set(CODES) - {"computed"} <= set(RESIDUAL_WORDS)
    assert _residual_mp(_Hostile(MemoryError()), 1.0) == RESIDUAL_WORDS["not_computable"]
    assert _residual_mp(parse_equation("x - 0.5"), 0.5) == "0.0"


# --------------------------------------------------------------------- words for people


def test_every_reason_has_words_and_discontinuity_is_one():
    assert "discontinuity" in REASONS and "discontinuity" not in CONVERGED_REASONS
    from solvers.batch import OUTSIDE_RANGE

    # every Run reason, and the one more a sweep's row can have
    assert set(REASONS) | {OUTSIDE_RANGE} == set(REASON_TEXT)
    assert "jump" in REASON_TEXT["discontinuity"]


def test_cli_says_the_bracket_closed_on_a_jump(capsys):
    from app.cli import main

    code = main(["solve", "x/abs(x) + x", "--method", "bisection", "--method", "brent",
                 "--bracket", "-1", "2"])
    out, err = capsys.readouterr()
    assert code == 0, err
    assert "discontinuity" in out and "jump" in out
    code = main(["solve", "x/abs(x) + x", "--method", "brent", "--bracket", "-1", "2",
                 "--json"])
    out, _ = capsys.readouterr()
    assert code == 0 and '"reason": "discontinuity"' in out and '"converged": false' in out


def test_cli_x19_and_scaled_cubic_no_longer_fail(capsys):
    from app.cli import main

    for argv in (["solve", "x^19", "--method", "brent", "--bracket", "-1", "4"],
                 ["solve", "1e-110*(x^3 - 2x - 5)", "--method", "brent", "--bracket", "0", "3"]):
        assert main(argv) == 0, capsys.readouterr().err


def test_window_lane_states_the_discontinuity_in_words():
    pytest.importorskip("PySide6")
    from app.window.lanes import verdict_text

    run = brent(parse_equation("x/abs(x) + x").f, -1.0, 2.0)
    text = verdict_text(run)
    assert "FAILED" in text and REASON_TEXT["discontinuity"] in text


def _secant_roots_are_roots(text: str, values: dict, x: float, tol: float) -> bool:
    """mpmath at 50 digits: f changes sign within ``tol`` of x (or is 0 there)."""
    expression = parse_equation(text, unknown="x", parameters=values).expr
    import sympy

    g = sympy.lambdify(list(expression.free_symbols), expression, "mpmath")
    with mpmath.workdps(50):
        lo, hi = g(mpmath.mpf(x) - tol), g(mpmath.mpf(x) + tol)
        return g(mpmath.mpf(x)) == 0 or lo * hi <= 0


def test_a_short_secant_step_from_a_steep_chord_is_not_convergence():
    # Found by an outside check against mpmath: x*exp(1.411x) = 2.978 from -0.80, -0.30.
    # The secant's third point is 25.6, where f is 1.2e17; the chord back from it is so
    # steep that the next step is 7e-16, with f -3.18 at both of its ends. A short step
    # proves nothing when the chord is not local: this was reported as converged at
    # -0.30, where mpmath gives f = -3.175, far from the root brentq finds at 0.6.
    equation = parse_equation("x*exp(1.411*x) - 2.978")
    run = secant(equation.f, -0.802274872519793, -0.302274872519793)
    assert_record(run)
    assert not run.converged
    root = brentq(equation.f, 0.0, 2.0, xtol=1e-15)  # reference: scipy's brentq
    with mpmath.workdps(50):
        x = mpmath.mpf(run.steps[4].x)
        assert abs(x * mpmath.exp(mpmath.mpf("1.411") * x) - mpmath.mpf("2.978")) > 3
    assert abs(run.steps[4].x - root) > 0.5


def test_secant_converged_only_at_roots_on_a_flat_tail_scalar_and_batch():
    # x*exp(q*x) = p: a flat tail (f -> -p as x -> -inf) that sends chords far. From 400
    # seeded starts, about a fifth of the secant's runs were called converged on the tail
    # before; every converged row (scalar and solve_batch alike, the batch rebuilt row by
    # row by the scalar method to the same reason and counts) must now have f changing
    # sign within the tolerance of its root (mpmath at 50 digits).
    from solvers import solve_batch
    rng = np.random.default_rng(3)
    n = 400
    p, q = rng.uniform(-2, 2, n), rng.uniform(0.1, 3, n)
    x0 = rng.uniform(-3, 3, n)
    x1 = x0 + rng.choice([1e-3, 0.1, -0.05, 0.5], n)
    equation = parse_equation("x*exp(q*x) - p", unknown="x", parameters={"p": p, "q": q})
    batch = solve_batch(equation, method="secant", x0=x0, x1=x1)
    assert 0.3 * n < batch.converged.sum() < n  # some rows do fail: the test bites
    for i in range(n):
        run = batch.run(i)
        assert (run.reason, run.iterations, run.evaluations) == (
            batch.reason[i], batch.iterations[i], batch.evaluations[i]), i
        if batch.converged[i]:
            x = float(batch.root[i])
            assert _secant_roots_are_roots("x*exp(q*x) - p", {"p": p[i], "q": q[i]}, x,
                                           tolerance(x)), (i, x)
