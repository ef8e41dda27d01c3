"""Specification of solvers.methods: every method, checked against outside references.

References used here (each check names its own):
* mpmath.findroot at 50 significant digits (mp.dps = 50) for well-conditioned roots;
* scipy.optimize.newton and scipy.optimize.brentq on the same callables;
* scipy.special.wrightomega, the closed form of the Colebrook equation;
* numpy.roots for an internal rate of return;
* published handbook / textbook values, each with its source;
* scipy.constants for the gas constant.
"""

from __future__ import annotations

import cmath
import math
import warnings

import mpmath
import numpy as np
import pytest
import scipy.constants
import scipy.optimize
import scipy.special
from hypothesis import given, settings
from hypothesis import strategies as st

from app.documents.words import method_title, run_message
from solvers.methods import (
    DEFAULT_FTOL,
    DEFAULT_MAX_ITER,
    DEFAULT_RTOL,
    DEFAULT_XTOL,
    METHODS,
    MethodSpec,
    bisection,
    brent,
    false_position,
    illinois,
    newton,
    run_method,
    secant,
)
from solvers.records import REASONS, Run

BRACKETING = (bisection, false_position, illinois, brent)


class Counted:
    """Wraps f and counts its calls, to check Run.evaluations exactly."""

    def __init__(self, f):
        self.f = f
        self.calls = 0

    def __call__(self, x):
        self.calls += 1
        return self.f(x)


def ulps_apart(x: float, reference: float) -> float:
    return abs(x - reference) / math.ulp(reference)


def check_run_record(run: Run) -> None:
    """Invariants every Run must satisfy (result.py conventions)."""
    assert run.reason in REASONS
    assert run.converged == (run.reason in ("x_tolerance", "f_tolerance", "exact_zero"))
    assert run.iterations == sum(1 for s in run.steps if s.dx is not None)
    for i, step in enumerate(run.steps):
        assert step.k == i
    xs = [s.x for s in run.steps]
    for prev, step in zip(run.steps, run.steps[1:], strict=False):
        if step.dx is not None:
            assert step.dx == step.x - prev.x
    if run.converged:
        assert run.root in xs  # the root is a point where f was evaluated
        assert math.isfinite(run.residual)
    assert run_message(run) and "\n" not in run_message(run)


def check_bracket_record(run: Run, f) -> None:
    """Bracketing methods: every recorded bracket holds a sign change, contains the
    iterate as one end, and never grows."""
    width = math.inf
    for step in run.steps:
        if step.lo is None:
            continue
        assert step.lo <= step.hi
        assert f(step.lo) * f(step.hi) <= 0.0
        if step.dx is not None and math.isfinite(step.fx):
            assert step.x in (step.lo, step.hi)
        assert step.hi - step.lo <= width
        width = step.hi - step.lo


# ---------------------------------------------------------------- reference problems
# name, f, f', bracket, x0, mpmath function (same equation, 50 digits)
WELL_CONDITIONED = [
    ("sqrt2", lambda x: x * x - 2.0, lambda x: 2.0 * x, (1.0, 2.0), 1.0,
     lambda x: x * x - 2),
    ("cos_fixed_point", lambda x: math.cos(x) - x, lambda x: -math.sin(x) - 1.0, (0.0, 1.0),
     1.0, lambda x: mpmath.cos(x) - x),
    # Wallis's cubic x^3 - 2x - 5 (the classic test of Newton's method, common practice)
    ("wallis_cubic", lambda x: x**3 - 2.0 * x - 5.0, lambda x: 3.0 * x * x - 2.0, (2.0, 3.0),
     2.0, lambda x: x**3 - 2 * x - 5),
    # Kepler's equation E - e sin E = M with e = 0.3, M = 1 rad (invented values)
    ("kepler", lambda e: e - 0.3 * math.sin(e) - 1.0, lambda e: 1.0 - 0.3 * math.cos(e),
     (0.0, math.pi), 1.0, lambda e: e - mpmath.mpf("0.3") * mpmath.sin(e) - 1),
    ("exp_minus_3x", lambda x: math.exp(x) - 3.0 * x, lambda x: math.exp(x) - 3.0, (0.0, 1.0),
     0.0, lambda x: mpmath.exp(x) - 3 * x),
]


def mp_root(mpf, x0: float) -> float:
    """Reference root by mpmath.findroot at 50 significant digits, rounded to a double."""
    with mpmath.workdps(50):
        return float(mpmath.findroot(mpf, mpmath.mpf(x0)))


@pytest.mark.parametrize("case", WELL_CONDITIONED, ids=[c[0] for c in WELL_CONDITIONED])
def test_roots_within_four_ulps_of_mpmath(case):
    name, f, fp, (a, b), x0, mpf = case
    reference = mp_root(mpf, 0.5 * (a + b))  # mpmath at 50 digits
    assert a < reference < b
    runs = [
        newton(f, x0, fprime=fp, xtol=0.0),
        newton(f, x0, xtol=0.0),  # numerical derivative
        secant(f, a, b, xtol=0.0),
        brent(f, a, b, xtol=0.0),
        illinois(f, a, b, xtol=0.0),
        bisection(f, a, b, xtol=0.0),
    ]
    for run in runs:
        assert run.converged, run_message(run)
        assert ulps_apart(run.root, reference) <= 4, (run.method, run.root, reference)
        check_run_record(run)


@pytest.mark.parametrize("case", WELL_CONDITIONED, ids=[c[0] for c in WELL_CONDITIONED])
def test_default_tolerances_meet_xtol_against_mpmath(case):
    name, f, fp, (a, b), x0, mpf = case
    reference = mp_root(mpf, 0.5 * (a + b))  # mpmath at 50 digits
    allowed = DEFAULT_XTOL + DEFAULT_RTOL * abs(reference)
    for method in BRACKETING:
        run = method(f, a, b)
        assert run.converged, run_message(run)
        assert abs(run.root - reference) <= allowed, (run.method, run.root - reference)
    for run in (newton(f, x0, fprime=fp), newton(f, x0), secant(f, a, b)):
        assert run.converged
        assert abs(run.root - reference) <= allowed


@pytest.mark.parametrize("case", WELL_CONDITIONED, ids=[c[0] for c in WELL_CONDITIONED])
def test_agrees_with_scipy_newton_and_brentq(case):
    name, f, fp, (a, b), x0, _ = case
    ours = newton(f, x0, fprime=fp)
    theirs = scipy.optimize.newton(f, x0, fprime=fp, tol=1e-12)  # scipy reference
    assert ulps_apart(ours.root, theirs) <= 4
    counted = Counted(f)
    root, info = scipy.optimize.brentq(
        counted, a, b, xtol=DEFAULT_XTOL, rtol=DEFAULT_RTOL, full_output=True
    )
    ours = brent(f, a, b)
    assert abs(ours.root - root) <= 2 * (DEFAULT_XTOL + DEFAULT_RTOL * abs(root))
    assert ours.evaluations <= counted.calls  # no more f calls than scipy's brentq


# ---------------------------------------------------------------- engineering examples


def colebrook(friction: float, reynolds: float, relative_roughness: float) -> float:
    """Colebrook-White residual, 1/sqrt(f) + 2 log10(eps/(3.7 D) + 2.51/(Re sqrt(f)))."""
    return 1.0 / math.sqrt(friction) + 2.0 * math.log10(
        relative_roughness / 3.7 + 2.51 / (reynolds * math.sqrt(friction))
    )


def colebrook_closed_form(reynolds: float, relative_roughness: float) -> float:
    """Exact Colebrook solution through the Wright omega function (scipy.special).

    With x = 1/sqrt(f), A = 2/ln 10, B = 2.51/Re, r = (eps/D)/3.7:
    x = A*w - r/B where w = omega(r/(A B) - ln(A B)).
    """
    a_ = 2.0 / math.log(10.0)
    b_ = 2.51 / reynolds
    r_ = relative_roughness / 3.7
    w = scipy.special.wrightomega(r_ / (a_ * b_) - math.log(a_ * b_)).real
    x = a_ * w - r_ / b_
    return 1.0 / (x * x)


@pytest.mark.parametrize("reynolds, roughness", [(1e5, 0.0), (1e5, 1e-4), (1e6, 1e-3)])
def test_colebrook_friction_factor_against_wright_omega_closed_form(reynolds, roughness):
    f = lambda fr: colebrook(fr, reynolds, roughness)  # noqa: E731
    reference = colebrook_closed_form(reynolds, roughness)  # scipy.special.wrightomega
    for run in (newton(f, 0.02), secant(f, 0.01, 0.05), brent(f, 0.005, 0.1),
                illinois(f, 0.005, 0.1)):
        assert run.converged, run_message(run)
        assert abs(run.root - reference) <= 1e-12, run.method
    assert newton(f, 0.02).derivative == "numerical"


def test_colebrook_smooth_pipe_matches_moody_chart():
    # Moody chart, smooth-pipe curve at Re = 1e5: f = 0.018 (from memory; any fluid
    # mechanics text, e.g. White, Fluid Mechanics, Fig. 6.13). Chart reading ~1 %.
    run = newton(lambda fr: colebrook(fr, 1e5, 0.0), 0.02)
    assert run.converged
    assert run.root == pytest.approx(0.018, rel=0.01)


def test_colebrook_near_explicit_swamee_jain_formula():
    # Swamee & Jain (1976), J. Hydraulics Div. ASCE 102(HY5): explicit approximation
    # f = 0.25 / log10(eps/(3.7D) + 5.74/Re^0.9)^2, stated within 1 % of Colebrook
    # for 1e-6 <= eps/D <= 1e-2 and 5e3 <= Re <= 1e8.
    for reynolds, roughness in [(1e4, 1e-3), (1e5, 1e-4), (1e6, 1e-5), (1e7, 1e-2)]:
        run = brent(lambda fr: colebrook(fr, reynolds, roughness), 0.005, 0.1)  # noqa: B023
        explicit = 0.25 / math.log10(roughness / 3.7 + 5.74 / reynolds**0.9) ** 2
        assert run.root == pytest.approx(explicit, rel=0.015)


# Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, 6th ed., Table 5.1
# (plane wall, first eigenvalue zeta_1 of zeta tan zeta = Bi), four decimals; from memory.
@pytest.mark.parametrize("biot, zeta1", [(0.1, 0.3111), (1.0, 0.8603), (10.0, 1.4289)])
def test_plane_wall_first_conduction_eigenvalue_matches_table(biot, zeta1):
    # x tan x = Bi written without the pole: x sin x - Bi cos x = 0 on (0, pi/2).
    f = lambda x: x * math.sin(x) - biot * math.cos(x)  # noqa: E731
    fp = lambda x: math.sin(x) + x * math.cos(x) + biot * math.sin(x)  # noqa: E731
    for run in (brent(f, 0.0, math.pi / 2), newton(f, 0.8, fprime=fp),
                false_position(f, 0.0, math.pi / 2), bisection(f, 0.0, math.pi / 2)):
        assert run.converged, run_message(run)
        assert abs(run.root - zeta1) <= 5e-5 + 1e-12, run.method


# Blevins, Formulas for Natural Frequency and Mode Shape, Table 8-1 (clamped-free beam,
# lambda_i of cos(l) cosh(l) + 1 = 0): 1.87510407, 4.69409113, 7.85475744; from memory.
@pytest.mark.parametrize(
    "bracket, root", [((1.0, 2.0), 1.87510407), ((4.0, 5.0), 4.69409113), ((7.0, 8.0), 7.85475744)]
)
def test_cantilever_frequency_equation_roots_match_handbook(bracket, root):
    f = lambda x: math.cos(x) * math.cosh(x) + 1.0  # noqa: E731
    for method in BRACKETING:
        run = method(f, *bracket)
        if method is false_position and not run.converged:
            continue  # plain false position may need more than max_iter (linear rate)
        assert run.converged, run_message(run)
        assert abs(run.root - root) <= 5e-9, run.method


def test_kepler_equation_textbook_example():
    # Curtis, Orbital Mechanics for Engineering Students, Example 3.2 (from memory):
    # e = 0.37255, M = 3.6029 rad gives E = 3.4794 rad (four significant figures).
    f = lambda big_e: big_e - 0.37255 * math.sin(big_e) - 3.6029  # noqa: E731
    fp = lambda big_e: 1.0 - 0.37255 * math.cos(big_e)  # noqa: E731
    run = newton(f, 3.6029, fprime=fp)
    assert run.converged
    assert run.root == pytest.approx(3.4794, abs=1e-4)
    assert brent(f, 0.0, 2 * math.pi).root == pytest.approx(run.root, abs=1e-12)


def test_redlich_kwong_molar_volumes_of_n_butane():
    # Smith, Van Ness & Abbott, Introduction to Chemical Engineering Thermodynamics,
    # 7th ed., Example 3.9: n-butane at 350 K and its vapour pressure 9.4573 bar,
    # Tc = 425.1 K, Pc = 37.96 bar; Redlich/Kwong gives V = 2555 cm3/mol (saturated
    # vapour) and 133.3 cm3/mol (saturated liquid). R from scipy.constants.
    gas_constant = scipy.constants.R  # J/(mol K)
    t, p, tc, pc = 350.0, 9.4573e5, 425.1, 37.96e5
    a = 0.42748 * gas_constant**2 * tc**2.5 / pc
    b = 0.08664 * gas_constant * tc / pc

    def residual(v):  # Pa, with v in m3/mol
        return gas_constant * t / (v - b) - a / (math.sqrt(t) * v * (v + b)) - p

    vapour = brent(residual, 1e-3, 1e-2)
    liquid = brent(residual, 1.01 * b, 2.0 * b)
    newton_vapour = newton(residual, gas_constant * t / p)  # ideal-gas start
    assert vapour.converged and liquid.converged and newton_vapour.converged
    assert vapour.root * 1e6 == pytest.approx(2555, abs=0.5)
    assert liquid.root * 1e6 == pytest.approx(133.3, abs=0.05)
    assert newton_vapour.root == pytest.approx(vapour.root, rel=1e-12)


def test_internal_rate_of_return_against_numpy_roots():
    # Cash flows of the numpy-financial documentation's irr example (from memory:
    # npf.irr([-100, 39, 59, 55, 20]) = 0.28094842115996...). Independent check:
    # numpy.roots of the NPV polynomial in v = 1/(1+r).
    flows = [-100.0, 39.0, 59.0, 55.0, 20.0]

    def npv(rate):
        return sum(c / (1.0 + rate) ** t for t, c in enumerate(flows))

    vs = np.roots(flows[::-1])  # coefficients of v^4 ... v^0
    real_v = [v.real for v in vs if abs(v.imag) < 1e-12 and v.real > 0]
    assert len(real_v) == 1
    reference = 1.0 / real_v[0] - 1.0
    for run in (brent(npv, 0.0, 1.0), newton(npv, 0.1), secant(npv, 0.05, 0.1),
                illinois(npv, 0.0, 1.0)):
        assert run.converged
        assert run.root == pytest.approx(reference, abs=1e-12)
    assert reference == pytest.approx(0.2809484211599611, abs=1e-12)


# ---------------------------------------------------------------- failures are results


def test_zero_derivative_at_start_is_recorded():
    f = Counted(lambda x: x * x - 1.0)
    fp = Counted(lambda x: 2.0 * x)
    run = newton(f, 0.0, fprime=fp)
    assert (run.reason, run.converged) == ("zero_derivative", False)
    assert run.steps[0].dfx == 0.0 and run.steps[0].fx == -1.0
    assert run.evaluations == f.calls + fp.calls == 2
    assert run.root == 0.0 and "f'(x) = 0" in run_message(run)
    check_run_record(run)


def test_secant_with_equal_values_reports_zero_slope():
    run = secant(lambda x: x * x - 1.0, -2.0, 2.0)  # f(-2) == f(2): zero slope
    assert run.reason == "zero_derivative" and not run.converged
    assert run.evaluations == 2


def test_log_stepping_negative_is_not_finite_and_quiet():
    # Newton on ln x = 0 from x0 = 3 jumps to x = 3 - 3 ln 3 < 0 (common practice).
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        np_run = newton(np.log, 3.0, fprime=lambda x: 1.0 / x)
        math_run = newton(math.log, 3.0, fprime=lambda x: 1.0 / x)
    assert caught == []  # numpy's 'invalid value' warning must not leak
    for run in (np_run, math_run):
        assert run.reason == "not_finite" and not run.converged
        assert run.steps[-1].x == pytest.approx(3.0 - 3.0 * math.log(3.0))
        assert run.root == 3.0  # the last iterate with finite f, for inspection only
        check_run_record(run)
    assert "ValueError" in run_message(math_run)
    assert math.isnan(np_run.steps[-1].fx)


def test_exception_from_f_at_a_pole_is_not_finite():
    f = Counted(lambda x: 1.0 / (x - 1.0))  # pole at 1 with a sign change across it
    run = bisection(f, 0.0, 2.0)
    assert run.reason == "not_finite" and "ZeroDivisionError" in run_message(run)
    assert run.evaluations == f.calls == 3


def test_overflow_is_not_finite():
    for f in (lambda x: math.exp(x) - 2.0, lambda x: np.exp(x) - 2.0):
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            run = newton(f, 1000.0)
        assert caught == []
        assert run.reason == "not_finite" and not run.converged
        assert run.evaluations == 1


def test_complex_result_is_not_finite():
    run = newton(lambda x: cmath.sqrt(x) - 2.0, -1.0)
    assert run.reason == "not_finite" and "complex" in run_message(run)
    # Python's fractional power of a negative float is complex: (-8.0)**(1/3)
    run = bisection(lambda x: x ** (1.0 / 3.0) - 1.0, -8.0, 8.0)
    assert run.reason == "not_finite" and "complex" in run_message(run)
    # numpy gives nan instead, quietly
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        run = brent(lambda x: np.power(x, 1.0 / 3.0) - 1.0, -8.0, 8.0)
    assert caught == [] and run.reason == "not_finite"


def test_f_returning_several_values_is_not_finite():
    run = newton(lambda x: np.array([x, x]), 1.0)
    assert run.reason == "not_finite" and "2 values" in run_message(run)


def test_non_finite_start_values_are_results():
    assert newton(math.sin, math.nan).reason == "not_finite"
    assert brent(math.sin, -1.0, math.inf).reason == "not_finite"


def test_no_sign_change_returns_the_better_end_unconverged():
    f = Counted(lambda x: x * x + 1.0)
    for method in BRACKETING:
        f.calls = 0
        run = method(f, -1.0, 2.0)
        assert (run.reason, run.converged) == ("no_sign_change", False)
        assert run.root == -1.0  # |f(-1)| = 2 < |f(2)| = 5
        assert run.evaluations == f.calls == 2 and run.iterations == 0
        assert all(s.lo is None and s.hi is None for s in run.steps)


def test_max_iterations_stops_and_counts():
    f = Counted(lambda x: x**3 - 2.0)
    run = bisection(f, 0.0, 2.0, max_iter=5)
    assert (run.reason, run.iterations, run.evaluations, f.calls) == (
        "max_iterations", 5, 7, 7
    )
    assert newton(lambda x: x - 3.0, 1.0, max_iter=0).reason == "max_iterations"
    # plain false position on a convex f keeps one end: linear and slow (common practice)
    slow = false_position(lambda x: math.exp(x) - 10.0, 0.0, 10.0)
    assert slow.reason == "max_iterations" and slow.iterations == DEFAULT_MAX_ITER
    assert illinois(lambda x: math.exp(x) - 10.0, 0.0, 10.0).converged


def test_damping_tames_newton_on_arctan():
    # Undamped Newton on atan x = 0 diverges for |x0| > 1.3917 (common practice).
    undamped = newton(math.atan, 1.5, fprime=lambda x: 1.0 / (1.0 + x * x))
    damped = newton(math.atan, 1.5, fprime=lambda x: 1.0 / (1.0 + x * x), damping=0.5)
    assert not undamped.converged
    assert abs(undamped.steps[3].x) > abs(undamped.steps[1].x) > 1.5
    assert damped.converged and abs(damped.root) <= 1e-12
    assert damped.steps[1].dx == pytest.approx(-0.5 * math.atan(1.5) * (1 + 1.5**2))
    assert damped.settings["damping"] == 0.5
    assert damped.order == pytest.approx(1.0, abs=0.1)  # damping makes Newton linear


def test_exact_zero_and_residual_tolerance():
    assert newton(lambda x: x - 1.0, 1.0).reason == "exact_zero"
    run = bisection(lambda x: x - 1.0, 0.0, 2.0)
    assert (run.reason, run.root, run.iterations) == ("exact_zero", 1.0, 1)
    loose = newton(lambda x: x * x - 2.0, 1.0, ftol=1e-3)
    assert loose.reason == "f_tolerance" and abs(loose.residual) <= 1e-3
    assert abs(newton(lambda x: x * x - 2.0, 1.0).residual) <= 4.5e-16


def test_invalid_settings_raise_value_error():
    f = math.sin
    with pytest.raises(ValueError, match="xtol"):
        newton(f, 1.0, xtol=-1.0)
    with pytest.raises(ValueError, match="rtol"):
        brent(f, -1.0, 1.0, rtol=math.nan)
    with pytest.raises(ValueError, match="max_iter"):
        secant(f, 1.0, 2.0, max_iter=2.5)
    for damping in (0.0, 1.5, -0.5):
        with pytest.raises(ValueError, match="damping"):
            newton(f, 1.0, damping=damping)
    with pytest.raises(ValueError, match="x0 must be a number"):
        newton(f, "one")
    with pytest.raises(ValueError, match="bracket end b"):
        brent(f, 0.0, None)


def test_settings_record_the_values_used_as_plain_floats():
    run = brent(math.sin, np.float32(3), 4, xtol=1e-9)
    assert run.settings["bracket"] == (3.0, 4.0)
    assert type(run.settings["bracket"][0]) is float and run.settings["xtol"] == 1e-9
    run = newton(math.sin, 3, derivative_source="symbolic")  # no fprime: numerical
    assert run.derivative == "numerical" and run.settings["x0"] == 3.0


# ---------------------------------------------------------------- records and counting

ALL_RUNS = [
    ("newton", lambda f, fp: newton(f, 1.0, fprime=fp)),
    ("newton_numerical", lambda f, fp: newton(f, 1.0)),
    ("secant", lambda f, fp: secant(f, 1.0, 2.0)),
    ("false_position", lambda f, fp: false_position(f, 1.0, 2.0)),
    ("illinois", lambda f, fp: illinois(f, 1.0, 2.0)),
    ("bisection", lambda f, fp: bisection(f, 1.0, 2.0)),
    ("brent", lambda f, fp: brent(f, 1.0, 2.0)),
]


@pytest.mark.parametrize("name, call", ALL_RUNS, ids=[n for n, _ in ALL_RUNS])
def test_evaluations_counted_exactly_and_steps_recorded(name, call):
    f = Counted(lambda x: x**3 - 2.0 * x - 1.5)
    fp = Counted(lambda x: 3.0 * x * x - 2.0)
    run = call(f, fp)
    assert run.converged
    assert run.evaluations == f.calls + fp.calls
    check_run_record(run)
    assert run.steps[0].dx is None
    assert set(run.settings) >= {"xtol", "rtol", "ftol", "max_iter"}
    assert run.settings["xtol"] == DEFAULT_XTOL and run.settings["ftol"] == DEFAULT_FTOL
    if run.method in ("bisection", "false_position", "illinois", "brent"):
        check_bracket_record(run, f.f)
        assert run.steps[1].dx is None  # both bracket ends are starting points
        assert run.derivative is None
    if run.method == "newton":
        assert all(s.dfx is not None for s in run.steps[:-1])


def test_newton_numerical_derivative_is_accurate_and_recorded():
    f = Counted(lambda x: math.exp(x) - 5.0)
    run = newton(f, 1.0)
    assert run.derivative == "numerical"
    assert run.evaluations == f.calls == 3 * run.iterations + 1
    for step in run.steps[:-1]:
        assert step.dfx == pytest.approx(math.exp(step.x), rel=1e-9)
    assert newton(f, 1.0, fprime=math.exp).derivative == "supplied"
    assert newton(f, 1.0, fprime=math.exp, derivative_source="symbolic").derivative == "symbolic"


def test_numerical_derivative_one_sided_at_domain_edge():
    # sqrt(x) - 1e-4 from x0 = 2e-8: x0 - h < 0, where sqrt is nan, until h shrinks.
    run = newton(lambda x: np.sqrt(x) - 1e-4, 2e-8)
    assert run.converged and run.root == pytest.approx(1e-8, rel=1e-12)
    for step in run.steps[:-1]:
        assert step.dfx == pytest.approx(0.5 / math.sqrt(step.x), rel=1e-6)


def test_numerical_derivative_at_the_edge_of_the_domain_falls_back_to_one_side():
    # f = sqrt(x) - 0.5 from x0 = 0: f(0 - h) is nan for every h, so the first
    # derivative is the forward difference sqrt(h)/h with h = eps**(1/3) (scale 1).
    f = Counted(lambda x: math.sqrt(x) - 0.5 if x >= 0.0 else math.nan)
    run = newton(f, 0.0)
    assert run.evaluations == f.calls
    h = np.finfo(float).eps ** (1.0 / 3.0)
    assert run.steps[0].dfx == pytest.approx(1.0 / math.sqrt(h), rel=1e-9)
    assert run.converged and run.root == pytest.approx(0.25, rel=1e-12)


def test_huge_f_values_of_opposite_sign_do_not_overflow_the_interpolation():
    f = lambda x: 1e308 * (x - 1.5)  # noqa: E731  f(1) - f(2) overflows to -inf
    for run in (secant(f, 1.0, 2.0), false_position(f, 1.0, 2.0), illinois(f, 1.0, 2.0)):
        assert run.converged and run.root == 1.5, run_message(run)


def test_bracket_spanning_most_of_the_double_range():
    f = lambda x: x - 1e300  # noqa: E731  hi - lo overflows to inf
    for method in (brent, bisection, illinois):
        run = method(f, -1e308, 1.7e308)
        assert run.converged and run.root == pytest.approx(1e300, rel=1e-15), run_message(run)


def test_huge_integer_from_f_is_not_finite():
    run = newton(lambda x: 10**400, 1.0)
    assert run.reason == "not_finite" and "OverflowError" in run_message(run)


def test_accepts_numpy_scalars_and_returns_plain_floats():
    run = brent(lambda x: np.float64(x) ** 2 - 2.0, np.float64(1.0), 2)
    assert type(run.root) is float and run.converged
    assert newton(lambda x: np.array(x * x - 2.0), 1.0).converged


# ---------------------------------------------------------------- observed order


def test_observed_order_shows_each_method_for_what_it_is():
    f = lambda x: math.cos(x) - x  # noqa: E731
    fp = lambda x: -math.sin(x) - 1.0  # noqa: E731
    assert newton(f, 1.0, fprime=fp).order == pytest.approx(2.0, abs=0.15)  # quadratic
    assert secant(f, 0.0, 1.0).order == pytest.approx(1.618, abs=0.25)  # golden ratio
    assert false_position(f, 0.0, 1.0).order == pytest.approx(1.0, abs=0.1)  # linear
    assert bisection(f, 0.0, 1.0).order == pytest.approx(1.0, abs=0.05)
    double = newton(lambda x: (x - 1.0) ** 2, 3.0, fprime=lambda x: 2.0 * (x - 1.0))
    assert double.converged and double.order == pytest.approx(1.0, abs=0.05)  # multiple root


def test_no_order_is_claimed_before_the_rate_has_settled():
    # Invented fin, tanh(mL)/(mL) = 0.8 with m = 14.8159 1/m: the secant's last three steps
    # read 0.90 and the three before them 3.48. The secant's order is the golden ratio
    # (1 + sqrt 5)/2 (its standard convergence theory), so 0.90 is not an order but a
    # rate still settling: none is reported. Newton from 0.0300031 reads 3.47 then 2.00.
    m = 14.8159
    f = lambda L: math.tanh(m * L) / (m * L) - 0.8  # noqa: E731
    run = secant(f, 0.03, 0.0300031)
    assert run.converged and run.order is None
    steps = [abs(s.dx) for s in run.steps if s.dx is not None]
    early = math.log(steps[-3] / steps[-4]) / math.log(steps[-4] / steps[-5])
    late = math.log(steps[-2] / steps[-3]) / math.log(steps[-3] / steps[-4])
    assert abs(early - late) > 0.35 * late  # the two estimates the rule compares
    settled = secant(lambda x: math.cos(x) - x, 0.0, 1.0)  # estimates 1.68 then 1.60
    assert settled.order == pytest.approx((1 + math.sqrt(5)) / 2, abs=0.1)


def test_slow_linear_convergence_is_not_read_as_superlinear():
    # false position on exp(x) - 10 over [0, 3]: ratio near 0.8 (one end fixed)
    run = false_position(lambda x: math.exp(x) - 10.0, 0.0, 3.0)
    assert run.converged and run.order == pytest.approx(1.0, abs=0.05)


# ---------------------------------------------------------------- dispatch table


def test_methods_table_matches_the_interface():
    kinds = {"newton": "open", "secant": "two_point", "false_position": "bracket",
             "illinois": "bracket", "bisection": "bracket", "brent": "bracket"}
    assert {name: spec.kind for name, spec in METHODS.items()} == kinds
    for name, spec in METHODS.items():
        assert isinstance(spec, MethodSpec) and spec.name == name and method_title(name)


@pytest.mark.parametrize("name", list(METHODS))
def test_run_method_dispatches_by_kind(name):
    f = lambda x: x * x - 2.0  # noqa: E731
    run = run_method(name, f, fprime=lambda x: 2 * x, x0=1.0, x1=2.0, bracket=(1.0, 2.0),
                     xtol=1e-10)
    assert run.method == name and run.converged
    assert run.settings["xtol"] == 1e-10
    assert run.root == pytest.approx(math.sqrt(2.0), abs=1e-10)


def test_run_method_refuses_unknown_names_and_missing_start_values():
    with pytest.raises(ValueError, match="unknown method"):
        run_method("regula", math.sin, x0=1.0)
    with pytest.raises(ValueError, match="bracket"):
        run_method("brent", math.sin, x0=1.0)
    with pytest.raises(ValueError, match="x1"):
        run_method("secant", math.sin, x0=1.0)


def test_defaults_are_documented_values():
    assert (DEFAULT_XTOL, DEFAULT_RTOL, DEFAULT_FTOL, DEFAULT_MAX_ITER) == (
        1e-12, 4 * np.finfo(float).eps, 0.0, 100
    )


# ---------------------------------------------------------------- hostile f, every method


def _raises(exc):
    def f(x):
        raise exc("hostile f")

    return f


HOSTILE = {
    "ValueError": _raises(ValueError),
    "ZeroDivisionError": _raises(ZeroDivisionError),
    "OverflowError": _raises(OverflowError),
    "nan": lambda x: math.nan,
    "inf": lambda x: math.inf,
    "numpy_nan": lambda x: np.float64(0.0) / np.float64(0.0),
    "complex": lambda x: complex(x, 1.0),
    "none": lambda x: None,
    "text": lambda x: "1.5",
    "array": lambda x: np.array([x, 2 * x]),
}


@pytest.mark.parametrize("name", list(METHODS))
@pytest.mark.parametrize("hostile", list(HOSTILE))
def test_every_method_records_a_misbehaving_f_as_not_finite(name, hostile):
    f = Counted(HOSTILE[hostile])
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        run = run_method(name, f, fprime=f if name == "newton" else None, x0=1.0, x1=2.0,
                         bracket=(1.0, 2.0))
    assert caught == []
    assert (run.reason, run.converged) == ("not_finite", False)
    assert run.evaluations == f.calls
    check_run_record(run)


@pytest.mark.parametrize("name", [n for n, s in METHODS.items() if s.kind == "bracket"])
def test_bracketing_methods_stop_at_a_nan_inside_the_bracket(name):
    # sqrt-like domain hole inside [-1, 3]: f is nan on (0.9, 1.1), sign change across it
    f = Counted(lambda x: math.nan if 0.9 < x < 1.1 else x - 1.0)
    run = run_method(name, f, bracket=(-1.0, 3.0))
    assert run.reason == "not_finite" and not run.converged
    assert run.evaluations == f.calls
    assert math.isfinite(run.root) and math.isfinite(run.residual)


# ---------------------------------------------------------------- property: any bracket


@settings(max_examples=150, deadline=None)
@given(
    root=st.floats(-100.0, 100.0),
    p=st.floats(0.1, 10.0),
    left=st.floats(1e-3, 100.0),
    right=st.floats(1e-3, 100.0),
)
def test_bracketing_methods_find_the_root_of_any_monotone_cubic(root, p, left, right):
    # f(x) = x^3 + p x - q is increasing, so [root - left, root + right] holds its only root.
    q = root**3 + p * root
    f = Counted(lambda x: x**3 + p * x - q)
    # the computed q carries rounding; the root of the computed cubic moves by about
    # eps*|q| / f'(root) (first-order perturbation, common practice)
    slack = 2 * (DEFAULT_XTOL + DEFAULT_RTOL * abs(root)) + 64 * np.finfo(float).eps * (
        abs(root) ** 3 + p * abs(root)
    ) / (3 * root**2 + p)
    for method in (brent, illinois, bisection):
        f.calls = 0
        run = method(f, root - left, root + right)
        assert run.converged, run_message(run)
        assert abs(run.root - root) <= slack
        assert run.evaluations == f.calls
        check_run_record(run)
        check_bracket_record(run, f.f)
