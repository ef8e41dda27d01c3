"""Tables of inputs in the core: solve_batch over arrays of rows, sweep by continuation.

Outside references (each check names its own): the closed form of the Colebrook–White
equation through the Lambert W function (scipy.special.lambertw / wrightomega),
scipy.optimize.brentq and scipy.optimize.newton row by row, numpy.roots for a cubic's
real roots, numpy.cbrt, the residual written out in numpy, and the scalar methods of the
registry (the rules the rows must follow). Scenarios are invented: pipes
of a cooling-water network, a pump against a system curve, an open channel.
"""

from __future__ import annotations

import math

import mpmath
import numpy as np
import pytest
import scipy.optimize
import scipy.special

from solvers import (
    METHODS,
    REASONS,
    Batch,
    BatchCancelled,
    parse_equation,
    solve_batch,
    sweep,
)
from solvers.batch.records import BATCH_REASONS, converged_of
from solvers.records import CONVERGED_REASONS

# Colebrook–White with rr the relative roughness eps/D, solved for the Darcy factor lam.
COLEBROOK = "1/sqrt(lam) = -2*log10(rr/3.7 + 2.51/(Re*sqrt(lam)))"
BRACKET = (1e-3, 0.2)  # every turbulent friction factor of the grid lies inside


def runs_as_the_scalar_method(batch) -> list:
    """Each row rebuilt by the scalar method (``Batch.run``), asserted to give the row's
    reason, iterations and evaluations, and its root where it converged; the runs."""
    runs = []
    for i in range(batch.size):
        run = batch.run(i)
        assert (run.reason, run.iterations, run.evaluations) == (
            batch.reason_at(i), batch.iterations.flat[i], batch.evaluations.flat[i]), i
        if run.converged:
            assert batch.root.flat[i] == run.root, i
        runs.append(run)
    return runs


def colebrook_exact(Re, rr):
    """The Colebrook–White friction factor in closed form through Lambert W.

    With y = 1/sqrt(lam), a = rr/3.7, b = 2.51/Re and c = 2/ln 10 the equation reads
    y = -c ln(a + b y). Put u = a + b y: then y = (u - a)/b and u = exp(-(u - a)/(b c)),
    so (u/(b c)) exp(u/(b c)) = exp(a/(b c))/(b c) and u/(b c) = W(exp(t)) with
    t = a/(b c) - ln(b c). Hence y = -c ln(u) = -c ln(b c W(e^t)): no difference of
    large numbers (y = (u - a)/b would lose five digits on rough pipes). W(e^t) is
    scipy.special.lambertw(exp(t)) where exp(t) is a double, and
    scipy.special.wrightomega(t) (defined as W(e^t)) beyond.
    """
    a, b, c = rr / 3.7, 2.51 / Re, 2.0 / math.log(10.0)
    t = a / (b * c) - np.log(b * c)
    small = t < 700.0
    w = np.where(small, scipy.special.lambertw(np.exp(np.where(small, t, 0.0))).real,
                 scipy.special.wrightomega(t).real)
    y = -c * np.log(b * c * w)
    return 1.0 / y**2


def colebrook_residual(lam, Re, rr):
    """The residual written out with math (independent of the parser), for brentq."""
    return 1 / math.sqrt(lam) + 2 * math.log10(rr / 3.7 + 2.51 / (Re * math.sqrt(lam)))


@pytest.fixture(scope="module")
def grid():
    """A 30 x 30 grid of Reynolds numbers and relative roughness (broadcast 2-D)."""
    Re = np.logspace(np.log10(4e3), 8, 30)[:, None]
    rr = np.logspace(-6, np.log10(5e-2), 30)[None, :]
    equation = parse_equation(COLEBROOK, unknown="lam", parameters={"Re": Re, "rr": rr})
    return equation, Re, rr


def haaland(Re, rr):
    """Haaland's explicit approximation (within ~2 % of Colebrook): a start value."""
    return (-1.8 * np.log10((rr / 3.7) ** 1.11 + 6.9 / Re)) ** -2


def test_colebrook_grid_agrees_with_lambert_w_closed_form_to_1e_10(grid):
    equation, Re, rr = grid
    exact = colebrook_exact(Re, rr)  # reference: Lambert W (scipy.special)
    for method in ("newton", "brent", "bisection", "illinois", "secant"):
        start = haaland(Re, rr)
        batch = solve_batch(equation, method=method, x0=start, x1=start * 1.01,
                            bracket=BRACKET)
        assert batch.shape == (30, 30)
        assert batch.converged.all(), (method, batch.counts())
        assert np.max(np.abs(batch.root - exact) / exact) <= 1e-10, method
        assert set(batch.reason.ravel()) <= {"x_tolerance", "exact_zero", "f_tolerance"}


def test_colebrook_grid_agrees_with_brentq_row_by_row(grid):
    equation, Re, rr = grid
    batch = solve_batch(equation, method="newton", x0=0.02)
    Re_rows, rr_rows = np.broadcast_arrays(Re, rr)
    for i in range(0, Re_rows.size, 7):
        ref = scipy.optimize.brentq(colebrook_residual, *BRACKET, xtol=1e-15, rtol=1e-15,
                                    args=(Re_rows.flat[i], rr_rows.flat[i]))  # reference
        if batch.converged.flat[i]:
            assert abs(batch.root.flat[i] - ref) <= 1e-10 * ref
    # a fixed start of 0.02 is poor for the roughest pipes: Newton may leave the domain
    # there (sqrt of a negative iterate), and those rows say so instead of stopping all
    failed = ~batch.converged
    assert batch.converged.sum() > 0.5 * batch.size
    assert np.isnan(batch.root[failed]).all()
    assert set(batch.reason[failed].ravel()) <= {"not_finite", "max_iterations"}


PUMP = "H0 - k1*Q^2 = Hs + k2*Q^1.85"  # pump curve against a system curve (invented duty)
CHANNEL = "Q = (1/n)*(B*y)*((B*y)/(B + 2*y))^(2/3)*sqrt(S)"  # Manning, rectangular channel


def _pump(Q, H0, k1, Hs, k2):
    return H0 - k1 * Q**2 - Hs - k2 * Q**1.85


def _channel(y, Q, n, B, S):
    return Q - (1 / n) * (B * y) * ((B * y) / (B + 2 * y)) ** (2 / 3) * math.sqrt(S)


@pytest.mark.parametrize("method", list(METHODS))
def test_random_rows_of_two_equations_agree_with_brentq(method):
    rng = np.random.default_rng(20261202)
    rows = 200
    pump = {"H0": rng.uniform(20, 80, rows), "k1": rng.uniform(50, 400, rows),
            "Hs": rng.uniform(2, 15, rows), "k2": rng.uniform(20, 300, rows)}
    channel = {"Q": rng.uniform(0.5, 10, rows), "n": rng.uniform(0.011, 0.035, rows),
               "B": rng.uniform(1, 8, rows), "S": 10 ** rng.uniform(-4, -2, rows)}
    cases = ((PUMP, "Q", pump, _pump, (1e-6, 2.0), 0.3),
             (CHANNEL, "y", channel, _channel, (1e-3, 100.0), 1.0))
    for text, unknown, values, residual, bracket, x0 in cases:
        equation = parse_equation(text, unknown=unknown, parameters=values)
        batch = solve_batch(equation, method=method, x0=x0, x1=x0 * 1.1, bracket=bracket,
                            max_iter=2000)
        assert batch.converged.all(), (method, text, batch.counts())
        for i in range(rows):
            args = tuple(values[n][i] for n in values)
            ref = scipy.optimize.brentq(residual, *bracket, args=args, xtol=1e-14,
                                        rtol=1e-15)  # reference
            assert abs(batch.root[i] - ref) <= 1e-10 * abs(ref), (method, text, i)


@pytest.mark.parametrize("method", list(METHODS))
def test_rows_rebuilt_one_by_one_agree_with_the_vectorised_result(method):
    # The registry's scalar method on one row's bound equation (Batch.run) must reach the
    # same verdict and root: the vectorised kernels follow the same rules.
    rng = np.random.default_rng(7)
    Re = 10 ** rng.uniform(np.log10(4e3), 8, 300)
    rr = 10 ** rng.uniform(-6, np.log10(5e-2), 300)
    equation = parse_equation(COLEBROOK, unknown="lam", parameters={"Re": Re, "rr": rr})
    batch = solve_batch(equation, method=method, x0=0.02, x1=0.021, bracket=BRACKET)
    for i in range(0, 300, 11):
        run = batch.run(i)
        assert run.method == method
        # the same steps: verdict, reason, counts and root to the bit
        assert run.converged == bool(batch.converged[i]), (i, run.reason, batch.reason[i])
        assert run.reason == batch.reason[i]
        assert run.iterations == batch.iterations[i]
        assert run.evaluations == batch.evaluations[i]
        if run.converged:
            assert run.root == batch.root[i]
            assert any(s.x == run.root for s in run.steps)
        else:
            assert math.isnan(batch.root[i])


@pytest.mark.parametrize("method", list(METHODS))
def test_wandering_rows_follow_the_scalar_method_step_for_step(method):
    # Random cubics with a ripple, random starts and brackets (many without a sign
    # change): open methods wander far from a root on some rows; the row's scalar run
    # must still end the same way (same arithmetic: a last-bit difference in f would
    # send a wandering iterate elsewhere).
    rng = np.random.default_rng(11)
    n = 400
    values = {k: rng.normal(size=n) for k in ("a3", "a2", "a1", "a0")}
    equation = parse_equation("a3*x^3 + a2*x^2 + a1*x + a0 + 0.3*sin(5*x)", unknown="x",
                              parameters=values)
    x0 = rng.uniform(-2, 2, n)
    batch = solve_batch(equation, method=method, x0=x0, x1=x0 + 0.1,
                        bracket=(rng.uniform(-3, 0, n), rng.uniform(0, 3, n)), max_iter=200)
    assert len(set(batch.reason.tolist())) >= 2  # more than one way of ending
    for i in range(n):
        run = batch.run(i)
        assert (run.reason, run.iterations, run.evaluations) == (
            batch.reason[i], batch.iterations[i], batch.evaluations[i]), i
        assert run.root == batch.root[i] if run.converged else math.isnan(batch.root[i])


def test_a_failing_row_among_good_rows_keeps_nan_and_its_own_reason():
    p = np.array([4.0, 9.0, -1.0, 16.0, 25.0])  # x^2 = -1 has no real root
    equation = parse_equation("x^2 = p", unknown="x", parameters={"p": p})
    for method, kwargs, reason in (
        ("brent", {"bracket": (0.0, 10.0)}, "no_sign_change"),
        ("bisection", {"bracket": (0.0, 10.0)}, "no_sign_change"),
        ("newton", {"x0": 1.0, "max_iter": 60}, None),
    ):
        batch = solve_batch(equation, method=method, **kwargs)
        good = np.array([True, True, False, True, True])
        assert batch.converged.tolist() == good.tolist()
        # within the default tolerance xtol = 1e-12
        np.testing.assert_allclose(batch.root[good], np.sqrt(p[good]), rtol=0, atol=2e-12)
        assert math.isnan(batch.root[2]) and math.isnan(batch.residual[2])
        if reason is not None:
            assert batch.reason[2] == reason
        assert batch.reason[2] in REASONS and batch.reason[2] == batch.run(2).reason


def test_a_row_whose_values_give_no_real_value_is_not_finite_with_a_note():
    p = np.array([4.0, -1.0, 9.0])  # sqrt(p) of a negative p: the row, not the table, fails
    equation = parse_equation("x = sqrt(p)", unknown="x", parameters={"p": 1.0})
    batch = solve_batch(equation, method="newton", x0=1.0, parameters={"p": p})
    assert batch.converged.tolist() == [True, False, True]
    assert batch.reason[1] == "not_finite" and math.isnan(batch.root[1])
    assert batch.notes == [(1, "bad_parameters")]
    np.testing.assert_allclose(batch.root[[0, 2]], [2.0, 3.0], rtol=1e-15)


@pytest.mark.parametrize("method", ["bisection", "brent", "illinois", "false_position"])
def test_jumps_and_poles_are_told_apart_from_roots_row_by_row(method):
    c = np.array([0.3, 0.45, 0.6])
    rows = {"jump": ("(x - c)/abs(x - c) + 0.01*(x - c)", "discontinuity"),
            "pole": ("1/(x - c)", "not_finite"),
            "root": ("x - c", None)}
    for text, reason in rows.values():
        equation = parse_equation(text, unknown="x", parameters={"c": c})
        batch = solve_batch(equation, method=method, bracket=(0.0, 1.0), max_iter=500)
        if reason is None:
            assert batch.converged.all()
            np.testing.assert_allclose(batch.root, c, rtol=1e-12)
        else:
            assert not batch.converged.any(), (text, batch.reason)
            # plain false position creeps towards a pole from one side (one end held):
            # it may reach the cap first, which is no root either
            allowed = {reason, "max_iterations"} if method == "false_position" else {reason}
            assert set(batch.reason) <= allowed, (text, batch.reason)
            assert np.isnan(batch.root).all()
        for i in range(3):  # the scalar method says the same (the one rule)
            assert batch.run(i).reason == batch.reason[i] or (
                batch.run(i).converged and batch.converged[i])


@pytest.mark.parametrize("method", ["bisection", "brent", "illinois", "false_position"])
@pytest.mark.parametrize("cap", [5, 30, 100])
def test_a_pole_met_at_the_iteration_cap_gets_the_scalar_verdict_row_by_row(method, cap):
    # 1/(x - c) - 2: pole at c, root at c + 0.5 (closed form), outside [1, 1.8] for the
    # first three rows; the last row's bracket [1.2, 1.8] holds the root 1.6, not the pole
    c = np.array([1.31, 1.7, 1.75, 1.1])
    equation = parse_equation("1/(x - c) - 2", unknown="x", parameters={"c": c})
    batch = solve_batch(equation, method=method, bracket=(np.array([1.0, 1.0, 1.0, 1.2]), 1.8),
                        max_iter=cap)
    runs_as_the_scalar_method(batch)
    assert not batch.converged[:3].any()
    if cap == 100:  # every method names the poles by then (false position at its cap)
        assert set(batch.reason[:3]) == {"not_finite"}
        # (plain false position may crawl to its cap on this convex root: no verdict)
        assert batch.converged[3] or method == "false_position"
    if batch.converged[3]:
        assert abs(batch.root[3] - 1.6) <= 1e-12


@pytest.mark.parametrize("method", list(METHODS))
def test_zeros_of_rounding_noise_get_the_scalar_verdict_row_by_row(method):
    # (x - 1)^3 + c typed out (closed form: the root 1 - cbrt(c)); with c at 0 or below
    # rounding, f is 0.0 at many points within about 1.3e-5 of 1, so the rows land on
    # zeros of rounding noise: the batch must judge them as the scalar method does (the
    # look further out of the open methods, the bracket ends of the bracketing ones)
    c = np.array([0.0, 0.0, 0.0, 1e-20, -1e-20, 0.0, 1e-3])
    x0 = np.array([2.0, 0.3, 1.7, 2.0, 0.5, 1.01, 2.0])
    equation = parse_equation("x^3 - 3*x^2 + 3*x - 1 + c", unknown="x", parameters={"c": 0.0})
    batch = solve_batch(equation, method=method, x0=x0, x1=x0 * 1.01, bracket=(0.0, 2.3),
                        parameters={"c": c})
    for i, run in enumerate(runs_as_the_scalar_method(batch)):
        if run.converged:
            assert abs(run.root - (1.0 - np.cbrt(c[i]))) <= 2e-5, i
    # plain false position crawls to its cap here; the secant may meet two points of equal
    # noise (a flat chord: zero_derivative)
    allowed = {"false_position": {"max_iterations"}, "secant": {"zero_derivative"}}
    for i in np.flatnonzero(~batch.converged[:6]):
        assert batch.reason_at(int(i)) in allowed.get(method, set()), (i, batch.reason_at(int(i)))


@pytest.mark.parametrize("method", ["bisection", "false_position", "illinois", "brent"])
def test_a_steep_term_underflowing_inside_a_bracket_is_judged_as_the_scalar_method_does(
        method):
    # x^n, n odd (closed form: root 0): a 0.0 at a short binary fraction 0.0005 to 0.016
    # from 0, with the nearer end one exact bit (2^-909 at 2^-9), is underflow, not a
    # zero of rounding noise; beside rows of (x - 1)^3 typed out, whose 0.0 is noise
    n = np.array([101.0, 201.0, 101.0, 201.0, 3.0])
    a = np.array([-1.0, -1.0, -0.0625, -1.0, 0.0])
    b = np.array([2.0, 2.0, 0.125, 1.5, 2.3])
    c = (n == 3.0).astype(float)  # x^3 - 3x^2 + 3x - 1 on the last row
    equation = parse_equation("x^n - c*(3*x^2 - 3*x + 1)", unknown="x",
                              parameters={"n": 3.0, "c": 1.0})
    batch = solve_batch(equation, method=method, bracket=(a, b), parameters={"n": n, "c": c})
    for i, run in enumerate(runs_as_the_scalar_method(batch)):
        if run.converged:
            root = 1.0 if n[i] == 3.0 else 0.0
            assert abs(run.root - root) <= (2e-5 if n[i] == 3.0 else 1e-12), (i, run.root)
        else:
            assert run.reason in ("not_finite", "max_iterations"), (i, run.reason)


@pytest.mark.parametrize("method", ["bisection", "false_position", "illinois", "brent"])
def test_a_bracket_whose_ends_both_underflow_is_no_root_at_either_end(method):
    # (x - c) exp(-1/(x - c)^2): root c (closed form); 0.0 in doubles for |x - c| below
    # 0.0366, where mpmath gives values like 1e-59000, not 0. With both ends there, the
    # bracket tells nothing: not finite (underflow), as the scalar method says; with
    # a's 0.0 settled first, b's was read as f within ftol (a "root" 0.003 from c)
    c = np.array([0.701385077992045, 0.0, 0.5])
    a = np.array([0.6999345656800252, -1.0, 0.49])
    b = np.array([0.7040286985811256, 2.0, 0.52])
    equation = parse_equation("(x - c)*exp(-1/(x - c)^2)", unknown="x", parameters={"c": 0.0})
    batch = solve_batch(equation, method=method, bracket=(a, b), parameters={"c": c})
    for i in range(c.size):
        run = batch.run(i)
        assert (run.reason, run.iterations, run.evaluations) == (
            batch.reason_at(i), batch.iterations[i], batch.evaluations[i]), i
    assert batch.reason_at(0) == batch.reason_at(2) == "not_finite"
    assert not batch.converged[[0, 2]].any()
    d = mpmath.mpf(b[0]) - mpmath.mpf(c[0])
    exact = d * mpmath.exp(-1 / d**2)  # mpmath: not 0, but far below the least double
    assert exact != 0 and float(exact) == 0.0


@pytest.mark.parametrize("method", ["bisection", "false_position", "illinois", "brent"])
def test_capped_rows_on_steep_roots_and_on_poles_get_the_scalar_verdicts(method):
    # A (x - r) exp(-(x - r)^2) + B/(x - c): with A = 1e6, B = 0 a steep simple root r
    # between flat tails (closed form); with A = 0, B = 1 a pole at c and no root. At
    # the cap a bracket narrowed there has |f| above the starting ends in both; the
    # probes beside it tell them apart, row by row as the scalar method does
    rng = np.random.default_rng(20261202)
    n = 200
    a_coef = np.where(rng.random(n) < 0.5, 1e6, 0.0)
    r = rng.uniform(-1.0, 1.0, n)
    c = r + rng.uniform(-0.5, 0.5, n)
    a, b = r - rng.uniform(0.5, 6.0, n), r + rng.uniform(0.5, 6.0, n)
    equation = parse_equation("A*(x - r)*exp(-(x - r)^2) + B/(x - c)", unknown="x",
                              parameters={"A": 1.0, "r": 0.0, "c": 1.0, "B": 0.0})
    values = {"A": a_coef, "r": r, "c": c, "B": (a_coef == 0.0).astype(float)}
    poles = 0
    for cap in (15, 25, 40, 100):
        batch = solve_batch(equation, method=method, bracket=(a, b), parameters=values,
                            max_iter=cap)
        for i in range(n):
            run = batch.run(i)
            assert (run.reason, run.iterations, run.evaluations) == (
                batch.reason_at(i), batch.iterations[i], batch.evaluations[i]) or (
                run.reason == "x_tolerance"), (cap, i)  # (closed brackets: not this test)
            capped = run.detail is not None and run.detail.code == "pole_capped"
            if a_coef[i]:
                assert not capped, (cap, i, run.detail)
            elif capped:
                poles += 1
                assert abs(run.detail.values[2] - c[i]) <= 1e-3 * (b[i] - a[i])
    assert poles > 0  # the rule still names the poles it reaches


@pytest.mark.parametrize("method", ["bisection", "false_position", "illinois", "brent"])
def test_closed_brackets_on_steep_roots_are_roots_and_on_poles_poles_row_by_row(method):
    # A (x - r) exp(-(x - r)^2) + B/(x - c): rows of a steep simple root r between flat
    # tails (closed form; |f| a tolerance from r above |f| at the starting ends) and rows
    # of a pole at c. The closed bracket's probes beside it tell them apart as the scalar
    # method does: same reason, counts and root (both judge a closed bracket by the
    # bracket as given, never by the iterates one path keeps and the other does not).
    r = np.array([0.12141419671852738, 0.3, -0.4, 0.0, 0.5])
    a = np.array([-5.794456928967645, -5.7, -6.4, -1.0, 0.1])
    b = np.array([5.983516542718238, 6.3, 5.6, 1.3, 0.95])
    steep = np.array([1e6, 1e6, 1e6, 0.0, 0.0])
    c = np.array([9.0, 9.0, 9.0, 0.3141592653589793, 0.6180339887498949])
    equation = parse_equation("A*(x - r)*exp(-(x - r)^2) + B/(x - c)", unknown="x",
                              parameters={"A": 1.0, "r": 0.0, "c": 1.0, "B": 0.0})
    batch = solve_batch(equation, method=method, bracket=(a, b),
                        parameters={"A": steep, "r": r, "c": c, "B": (steep == 0.0) * 1.0})
    for i, run in enumerate(runs_as_the_scalar_method(batch)):
        pole = run.detail is not None and run.detail.code in ("pole", "pole_capped")
        assert pole == (steep[i] == 0.0 and run.reason == "not_finite"), (i, run.detail)
        if steep[i] and run.converged:
            reference = scipy.optimize.brentq(  # scipy: the root of the row's f
                lambda x, i=i: steep[i] * (x - r[i]) * math.exp(-((x - r[i]) ** 2)), a[i], b[i])
            assert abs(run.root - reference) <= 2e-12 and abs(reference - r[i]) <= 1e-12


# Hard rows for the closed-bracket verdict: seeded random equations whose closed brackets
# the starting ends alone do not settle (roots far steeper than the bracket, jumps with a
# slope, powers below 1/2), on random brackets over five decades of scale. Each: text,
# its parameters' draws (log10 range, or a plain range for "lin"), and whether the sign
# change at c is a root (closed form: each f changes sign at x = c, continuously for the
# roots, by a jump of height 2 for the jump rows).
_HARD_ROWS = [
    ("tanh(k*(x - c))", {"k": ("log", 0.0, 11.0)}, True),
    ("atan(k*(x - c)) + h*(x - c)", {"k": ("log", 0.0, 11.0), "h": ("log", -6.0, 0.0)}, True),
    ("k*(x - c)*exp(-(x - c)^2)", {"k": ("log", -3.0, 12.0)}, True),
    ("abs(x - c)^0.2*(x - c)/abs(x - c)", {}, True),
    ("(x - c)/abs(x - c) + k*(x - c)", {"k": ("log", -3.0, 3.0)}, False),
    ("1/(x - c) - k", {"k": ("lin", -3.0, 3.0)}, None),  # a pole at c, a root at c + 1/k
]


@pytest.mark.parametrize("method", ["bisection", "false_position", "illinois", "brent"])
def test_hard_closed_brackets_get_the_scalar_verdict_and_counts_row_by_row(method):
    # A closed bracket's verdict (root, jump, pole) must be the scalar method's on every
    # row, with the same calls of f: both paths judge it by the bracket as given and the
    # probes beside it (solvers.methods.common._closed_bracket_reason). Before, the
    # scalar rule also read every iterate on record and the batch keeps none: on rows
    # like these about one in sixteen differed in its count of f, and a few in the reason
    # (discontinuity against x_tolerance).
    rng = np.random.default_rng(20261203)
    n = 60
    compared = roots = jumps = 0
    for text, draws, root in _HARD_ROWS:
        scale = 10 ** rng.uniform(-2, 3, n)
        c = rng.uniform(-1, 1, n) * scale
        a, b = c - scale * rng.uniform(0.01, 3, n), c + scale * rng.uniform(0.01, 3, n)
        values = {"c": c}
        for name, (kind, low, high) in draws.items():
            u = rng.uniform(low, high, n)
            values[name] = 10**u if kind == "log" else u
        equation = parse_equation(text, unknown="x", parameters={k: 1.0 for k in values})
        batch = solve_batch(equation, method=method, bracket=(a, b), parameters=values)
        runs = runs_as_the_scalar_method(batch)  # reason, counts and root, to the bit
        compared += len(runs)
        tol = 1e-12 + 4 * np.finfo(float).eps * np.abs(c)
        if root is True:  # the closed form: a root at c, within the tolerance
            good = batch.converged
            roots += int(good.sum())
            assert (np.abs(batch.root[good] - c[good]) <= 2 * tol[good]).all(), text
        elif root is False:  # a jump at c (height 2, closed form): never a root there
            jumps += int((batch.reason == "discontinuity").sum())
            near = batch.converged & (np.abs(batch.root - c) <= 1e-6 * scale)
            assert not near.any(), (text, batch.root[near])
    assert compared == n * len(_HARD_ROWS) and roots > 2 * n and jumps > n // 2


def test_a_step_narrower_than_the_tolerance_gets_one_verdict_from_every_method():
    # tanh(k (x - c)) with 1/k below the tolerance (7e-14 and 3e-13 against 1e-12): f
    # rises from -0.76 to 0.76 within 2/k (closed form of tanh), so the closed bracket's
    # ends differ by most of the height 2 however it closed: a step at the tolerance's
    # scale. Judged by the bracket as given and the probes beside it, every method says
    # so, scalar and batch alike; judged by the iterates each happened to visit, two of
    # these runs had said x_tolerance and the others discontinuity.
    from solvers.methods import bisection, brent, false_position, illinois

    rows = [(-19.96432033651774, 13846847410531.082, -305.4258916339968, 885.6394040741267),
            (108.09795680457849, 3349992794245.961, -27.50938227086384, 305.96334431618897)]
    equation = parse_equation("tanh(k*(x - c))", unknown="x", parameters={"k": 1.0, "c": 0.0})
    for c, k, a, b in rows:
        for method in (bisection, brent, false_position, illinois):
            run = method(lambda x, c=c, k=k: math.tanh(k * (x - c)), a, b)
            assert run.reason == "discontinuity", (method.__name__, c, run.reason)
            lo, hi = run.detail.values[2:4]
            assert lo <= c <= hi or abs(c - lo) <= 1e-12 or abs(c - hi) <= 1e-12
            batch = solve_batch(equation, method=method.__name__, bracket=(a, b),
                                parameters={"k": k, "c": c})
            assert batch.reason_at(0) == "discontinuity"
            runs_as_the_scalar_method(batch)


@pytest.mark.parametrize("method", ["bisection", "false_position", "illinois", "brent"])
def test_f_returning_the_smallest_subnormal_is_its_own_value_unless_the_row_began_in_underflow(
        method):
    # f truly +-5e-324 (2**-1074, the smallest subnormal double; IEEE 754: +-1 times it
    # is exact). Where the bracket began with no end in underflow that is f's own tiny
    # value and its sign stands: a step of +-s at c (s*min(max(1e300 (x - c), -1), 1):
    # closed form, f = -s left of c and +s right of it beyond 1e-300) is a jump
    # (discontinuity) for s = 5e-324 as for s = 1, never underflow nor a root; a line
    # s (x - c) whose values at the closed bracket are a few units of 2**-1074 is a root
    # at c or stops honestly. Where the bracket began with an end whose f underflowed to
    # 0.0 (exp(-x) - 2 exp(-2x) beyond x = 745.13: exp(-x) rounds to 0.0 there, to
    # 5e-324 on (744.44, 745.13], C99/IEEE round to nearest), a +-5e-324 beside that
    # stretch has a sign but no size, as the carried underflow: root ln 2 (closed
    # form). Batch and scalar method judge every row alike, to the bit.
    rng = np.random.default_rng(5)
    n = 40
    c = rng.uniform(-0.5, 0.5, n)
    a, b = c - rng.uniform(0.01, 3, n), c + rng.uniform(0.01, 3, n)
    step = parse_equation("s*min(max(1e300*(x - c), -1), 1)", unknown="x",
                          parameters={"s": 1.0, "c": 0.0})
    for s in (5e-324, 1e-323, 1e-300, 1.0):
        batch = solve_batch(step, method=method, bracket=(a, b), parameters={"s": s, "c": c})
        runs_as_the_scalar_method(batch)
        assert set(batch.reason) == {"discontinuity"}, (s, batch.counts())
    line = parse_equation("s*(x - c)", unknown="x", parameters={"s": 1.0, "c": 0.0})
    batch = solve_batch(line, method=method, bracket=(a, b),
                        parameters={"s": 10 ** rng.uniform(-312, -310, n), "c": c})
    runs_as_the_scalar_method(batch)
    good = batch.converged
    assert (np.abs(batch.root[good] - c[good]) <= 2e-12).all()
    assert set(batch.reason[~good]) <= {"not_finite"}  # a 0.0 inside: underflow
    tail = parse_equation("exp(-x) - 2*exp(-2*x)", unknown="x")
    ends = rng.uniform(744.3, 745.6, n)
    assert (tail.f(ends) == 5e-324).any() and (tail.f(ends) == 0.0).any()
    batch = solve_batch(tail, method=method, bracket=(rng.uniform(0.0, 0.5, n), ends))
    runs_as_the_scalar_method(batch)
    good = batch.converged
    np.testing.assert_allclose(batch.root[good], math.log(2.0), rtol=1e-11)
    assert good.sum() >= n // 2 or method == "false_position"  # (it creeps: the cap)


def test_an_exact_zero_from_underflow_is_not_a_root_row_by_row():
    # exp(-x) - 2 exp(-2x): root ln 2; at x = 800 both terms underflow to 0.0.
    equation = parse_equation("exp(-x) - 2*exp(-2*x)", unknown="x")
    batch = solve_batch(equation, method="newton", x0=np.array([0.5, 800.0, 1.0]))
    assert batch.converged.tolist() == [True, False, True]
    assert batch.reason[1] == "not_finite"
    np.testing.assert_allclose(batch.root[[0, 2]], math.log(2.0), rtol=1e-14)
    secant = solve_batch(equation, method="secant", x0=np.array([0.5, 800.0]),
                         x1=np.array([0.6, 801.0]))
    assert secant.converged.tolist() == [True, False]
    # the probe beside x = 800 is 0.0 too: the scalar rule then looks 32 points further
    # out for f's rounding noise (none: f is 0.0 out to 800 -+ 4e-3) and stops (f(800),
    # f(800 + step), 32 more), and the row's count says the same
    for result in (batch, secant):
        run = result.run(1)
        assert (run.reason, run.evaluations) == (result.reason[1], result.evaluations[1])
    assert batch.evaluations[1] == 2 + 32


def test_newton_landing_in_underflow_after_a_large_residual_is_not_a_root():
    # exp(-x^2) has no real root (exp > 0: closed form). From x0 Newton's first iterate
    # is x1 = x0 + 1/(2*x0) (the step -f/f' in closed form), where exp(-x1^2) is below
    # the smallest subnormal double 2**-1074 (IEEE 754 binary64) and f is an exact 0.0,
    # although f at x0 was ~1 and |f'*dx| ~1: the size of the last residual is no proof
    # that a 0.0 is a root. Only f beside x1 (0.0 there too, and out to 4e-3 of x1:
    # underflow, no rounding noise) tells; batch and scalar method stop not finite, after
    # f(x0), f'(x0), f(x1), one probe and the 32 points of the look for rounding noise.
    x0 = np.array([0.01, 0.015, 0.005, 0.5])
    equation = parse_equation("exp(-x^2)", unknown="x")
    batch = solve_batch(equation, method="newton", x0=x0)
    x1 = x0 + 1.0 / (2.0 * x0)
    assert (x1[:3] > 28.0).all() and math.exp(-(28.0**2)) == 0.0  # underflows (IEEE 754)
    assert not batch.converged[:3].any() and set(batch.reason[:3]) == {"not_finite"}
    assert np.isnan(batch.root[:3]).all() and batch.evaluations[:3].tolist() == [36] * 3
    # from 0.5 it creeps outward (x + 1/(2x) each step) and reaches the cap, beside them
    assert batch.reason[3] == "max_iterations" and math.isnan(batch.root[3])
    for i in range(4):
        run = batch.run(i)  # the scalar method: the same verdict and counts
        assert (run.reason, run.iterations, run.evaluations) == (
            batch.reason[i], batch.iterations[i], batch.evaluations[i]), i
        if i < 3:
            assert run.detail is not None and run.detail.code == "underflow"


def test_newton_exact_zeros_with_no_tolerance_probe_at_two_ulps_or_the_smallest_normal():
    # x - c: Newton's first step from 1 lands on c exactly (f linear; c - 1 + 1 rounds
    # back to c for these c), or, for a subnormal c, one step later. With xtol = rtol = 0
    # the exact-zero rule probes f at x +- max(2 ulp(x), smallest normal double) (the
    # rule's floor); f there is +-that step, not 0.0, so each is an exact zero at c
    # (closed form), with the scalar method's counts.
    c = np.array([1e20, 3.0, 0.0, -7e-310, -2.5e15])
    equation = parse_equation("x - c", unknown="x", parameters={"c": c})
    batch = solve_batch(equation, method="newton", x0=1.0, xtol=0.0, rtol=0.0)
    assert batch.converged.all() and set(batch.reason) == {"exact_zero"}
    assert batch.root.tolist() == c.tolist()
    for i in range(c.size):
        run = batch.run(i)
        assert (run.reason, run.iterations, run.evaluations, run.root) == (
            batch.reason[i], batch.iterations[i], batch.evaluations[i], batch.root[i]), i


@pytest.mark.parametrize("method", ["newton", "secant"])
def test_open_rows_of_f_times_ten_to_the_k_keep_the_scalar_verdicts_down_to_underflow(method):
    # s*(x^3 - 2x - 5) for s = 10^k, k = -320..300: the roots of the cubic (numpy.roots),
    # whatever s; where s*f is 0.0 over a stretch around the root wider than the
    # tolerance (k below about -300) no row may be called converged there. Every row
    # must end as the scalar method ends (probes on one side or both, counts, root).
    # Between 1e-314 and 1e-310 the stretch is about as wide as the tolerance: there
    # an iterate near its edge has f 0.0 on one side only (the second probe decides).
    k = np.concatenate([np.arange(-320, 301), np.linspace(-314.0, -310.0, 401)])
    s = np.array([10.0**j if j > -300 else 10.0 ** (j + 20) * 1e-20 for j in k])
    root = max(r.real for r in np.roots([1.0, 0.0, -2.0, -5.0]) if abs(r.imag) < 1e-12)
    equation = parse_equation("s*(x^3 - 2*x - 5)", unknown="x", parameters={"s": s})
    batch = solve_batch(equation, method=method, x0=2.5, x1=2.6)
    tol = 1e-12 + 8.9e-16 * root
    assert batch.converged[k >= -290].all()
    assert (np.abs(batch.root[batch.converged] - root) <= 2 * tol).all()
    assert {"exact_zero", "not_finite"} <= set(batch.reason.tolist())
    for i in range(k.size):
        run = batch.run(i)
        assert (run.reason, run.iterations, run.evaluations) == (
            batch.reason[i], batch.iterations[i], batch.evaluations[i]), k[i]
        assert run.root == batch.root[i] if run.converged else math.isnan(batch.root[i])


def test_newton_rows_finishing_decades_apart_match_scipy_and_the_scalar_run():
    # Cube roots of c over 24 decades from x0 = 1: from 0 iterations (c = 1: f is 0.0
    # at the start, a probed exact zero) to 49 (c = 1e12 overshoots to 3e11 first), so
    # the work's finished rows ride along and the arrays are compressed several times;
    # x0 = 0 rows stop at once on f'(0) = 0, beside the others.
    rng = np.random.default_rng(17)
    c = 10 ** rng.uniform(-12, 12, 500)
    c[:5] = 1.0
    x0 = np.ones_like(c)
    x0[5:10] = 0.0
    equation = parse_equation("x^3 - c", unknown="x", parameters={"c": c})
    batch = solve_batch(equation, method="newton", x0=x0, max_iter=200)
    assert len(set(batch.iterations.tolist())) > 20
    assert set(batch.reason[:5]) == {"exact_zero"}
    assert set(batch.reason[5:10]) == {"zero_derivative"}
    assert batch.converged[10:].all()
    # reference: numpy.cbrt, and scipy.optimize.newton row by row (same tolerances)
    np.testing.assert_allclose(batch.root[10:], np.cbrt(c[10:]), rtol=1e-13, atol=0)
    for i in range(10, 500, 7):
        ref = scipy.optimize.newton(lambda x, c=c[i]: x**3 - c, 1.0,
                                    fprime=lambda x: 3 * x**2, tol=1e-12, maxiter=200)
        assert abs(batch.root[i] - ref) <= 1e-10 * abs(ref), i
    for i in list(range(10)) + list(range(10, 500, 13)):
        run = batch.run(i)  # the scalar method row by row: the same steps and counts
        assert (run.reason, run.iterations, run.evaluations) == (
            batch.reason[i], batch.iterations[i], batch.evaluations[i]), i
        assert run.root == batch.root[i] if run.converged else math.isnan(batch.root[i])


def test_newton_with_a_numerical_derivative_keeps_each_rows_steps_with_rows_riding_along():
    # The same cube roots with f' by central differences (as for an equation sympy cannot
    # differentiate): the difference's calls are made for every row of the arrays, dead
    # rows included, and must still be counted as the scalar method counts them.
    import dataclasses

    rng = np.random.default_rng(19)
    c = 10 ** rng.uniform(-9, 9, 300)
    equation = dataclasses.replace(
        parse_equation("x^3 - c", unknown="x", parameters={"c": c}), fprime=None)
    batch = solve_batch(equation, method="newton", x0=1.0, max_iter=200)
    assert batch.settings["derivative"] == "numerical"
    assert batch.converged.all() and len(set(batch.iterations.tolist())) > 15
    # reference: numpy.cbrt (a difference quotient's f' still converges to the root)
    np.testing.assert_allclose(batch.root, np.cbrt(c), rtol=1e-12, atol=0)
    for i in range(0, 300, 9):
        run = batch.run(i)
        assert run.derivative == "numerical"
        assert (run.reason, run.iterations, run.evaluations) == (
            batch.reason[i], batch.iterations[i], batch.evaluations[i]), i
        assert run.root == batch.root[i]


def test_brent_rows_of_roots_jumps_and_exact_zeros_in_one_batch_keep_their_verdicts():
    # One equation, three kinds of row: a root (g = 1, J = 0), a jump of height 2 at c
    # (a ramp 2e-15 wide, narrower than any tolerance; g = 0.01, J = 1) and a root the
    # first bisection lands on exactly (c = 0.5). Rows close at different iterations,
    # jumps after the closed-bracket probes: the verdicts must stay each row's own.
    rng = np.random.default_rng(23)
    n = 600
    c = rng.uniform(0.05, 0.95, n)
    c[:20] = 0.5
    jump = np.zeros(n)
    jump[20:220] = 1.0
    g = np.where(jump == 1.0, 0.01, 1.0)
    equation = parse_equation("g*(x - c) + J*max(min(1e15*(x - c), 1), -1)", unknown="x",
                              parameters={"g": g, "c": c, "J": jump})
    batch = solve_batch(equation, method="brent", bracket=(0.0, 1.0), chunk_rows=128)
    assert set(batch.reason[:20]) == {"exact_zero"}
    assert set(batch.reason[20:220]) == {"discontinuity"}  # a jump is no root (the rule)
    assert np.isnan(batch.root[20:220]).all()
    assert batch.converged[220:].all()
    # reference: scipy.optimize.brentq row by row on the same function written in Python
    for i in range(220, n, 9):
        ref = scipy.optimize.brentq(lambda x, c=c[i]: x - c, 0.0, 1.0, xtol=1e-14,
                                    rtol=1e-15)
        assert abs(batch.root[i] - ref) <= 1e-10 * abs(ref), i
    for i in list(range(0, 30, 3)) + list(range(30, n, 11)):
        run = batch.run(i)
        assert (run.reason, run.iterations, run.evaluations) == (
            batch.reason[i], batch.iterations[i], batch.evaluations[i]), i


@pytest.mark.parametrize("method", ["brent", "bisection", "illinois", "false_position"])
def test_rows_through_every_branch_of_the_compiled_pass_take_the_scalar_steps(
        method, monkeypatch):
    # The batch bracketing methods iterate by one compiled pass per iteration
    # (solvers/batch/kernels.py) that flags what it cannot decide alone. These rows reach
    # every flag and stop: f scaled beyond the normal doubles (Brent's interpolation
    # scaled by ldexp), an end beyond exp's underflow (iterates carried in its stretch
    # of underflow), a stretch of underflow around a triple root (probes beside an
    # exact 0.0), poles and jumps (closed-bracket verdicts, with and without probes),
    # the cap and ftol. Each row must end as the scalar method ends, to the bit: reason,
    # counts and root.
    from solvers.batch import kernels

    seen: set[int] = set()
    family = "regula_falsi" if method in ("illinois", "false_position") else method
    name = f"{family}_settle"
    settle = getattr(kernels, name)
    status_at = {"brent": 9, "bisection": 6, "regula_falsi": 12}[family]  # (after the state)

    def watched(*args):
        status = args[status_at]
        seen.update(int(v) for v in np.unique(status[status >= 0]))
        counts = settle(*args)
        seen.update(int(v) for v in np.unique(status[status >= 0]))
        return counts

    monkeypatch.setattr(kernels, name, watched)
    rng = np.random.default_rng(29)
    n = 120
    c = rng.uniform(-0.5, 0.5, n)
    cubic = {k: rng.normal(size=n) for k in ("a3", "a2", "a1", "a0")}
    ripple = "a3*x^3 + a2*x^2 + a1*x + a0 + 0.3*sin(5*x)"
    cubic_bracket = (rng.uniform(-3, 0, n), rng.uniform(0, 3, n))
    none = np.full(n, np.nan)  # no row may converge: no root of f is to be seen there
    cases = [  # text, parameters, bracket, settings, the root where one converges
        ("s*(x - c)*(1 + x^2)", {"s": 10 ** rng.uniform(306, 308, n), "c": c}, (-1.0, 1.0),
         {}, c),
        ("s*(x - c)*(1 + x^2)", {"s": 10 ** rng.uniform(-312, -309, n), "c": c},
         (-1.0, 1.0), {}, c),
        ("exp(-x) - 2*exp(-2*x)", {}, (rng.uniform(0.0, 0.5, n), rng.uniform(760, 900, n)),
         {}, np.full(n, math.log(2.0))),
        # f underflows to 0.0 over a stretch far wider than the tolerance around c
        ("s*(x - c)^3", {"s": 10 ** rng.uniform(-300, -290, n), "c": c}, (-1.0, 1.0), {},
         none),
        ("1/(x - c)", {"c": c}, (-1.0, 1.0), {}, none),
        ("(x - c)/abs(x - c) + 0.01*(x - c)", {"c": c}, (-1.0, 1.0), {}, none),
        (ripple, cubic, cubic_bracket, {"max_iter": 5}, None),
        (ripple, cubic, cubic_bracket, {"ftol": 1e-6}, None),
        # the first midpoint far inside exp's underflow (false position's chords creep)
        ("exp(-x) - 2*exp(-2*x)", {}, (rng.uniform(0.0, 0.5, n), rng.uniform(1500, 2000, n)),
         {}, np.full(n, math.log(2.0))),
    ]
    compared = found = 0
    for text, values, bracket, settings, roots in cases:
        equation = parse_equation(text, unknown="x", parameters=values)
        batch = solve_batch(equation, method=method, bracket=bracket, chunk_rows=64,
                            **settings)
        for i in range(n):
            run = batch.run(i)  # (f at +-5e-324 too: one rule, solvers.batch.rows.carried)
            compared += 1
            assert (run.reason, run.iterations, run.evaluations) == (
                batch.reason[i], batch.iterations[i], batch.evaluations[i]), (text, i)
            assert run.root == batch.root[i] if run.converged else math.isnan(batch.root[i])
        if roots is none:
            assert not batch.converged.any(), (text, batch.counts())
        elif roots is not None:  # reference: the closed form (c; ln 2 for the exponentials)
            good = batch.converged
            found += int(good.sum())
            np.testing.assert_allclose(batch.root[good], roots[good], rtol=1e-10, atol=2e-12)
    # (plain false position creeps: on the exponentials it reaches the cap, no root)
    assert found > n and compared == len(cases) * n
    flags = {kernels.PROBE, kernels.ZERO, kernels.RERUN, kernels.CLOSED, kernels.SPECIAL}
    if method == "brent":
        flags.add(kernels.EXOTIC)
    assert flags <= seen
    assert {REASONS.index(r) for r in ("f_tolerance", "max_iterations")} <= seen


def test_numba_is_imported_on_the_first_compiled_pass_not_at_start_up():
    # The command line and the window start without the compiler (start-up benchmark);
    # a batch Brent loads it, and the cached kernels, on first use.
    import subprocess
    import sys
    from pathlib import Path

    code = ("import sys, app.cli, solvers; print('numba' in sys.modules); "
            "import numpy as np; "
            "e = solvers.parse_equation('x^2 - p', unknown='x', parameters={'p': np.ones(3)}); "
            "b = solvers.solve_batch(e, method='brent', bracket=(0.0, 2.0)); "
            "print('numba' in sys.modules, bool(b.converged.all()))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=Path(__file__).resolve().parents[1], check=True).stdout
    assert out.split() == ["False", "True", "True"]


def test_compiled_f_in_blocks_is_the_same_arithmetic_as_one_call():
    # f over more rows than two blocks is evaluated block by block
    # (solvers.equation.compile.in_blocks): every value bit for bit that of one call of
    # the same generated code on the whole arrays, and within rounding of the residual
    # written out with numpy (the outside reference).
    from solvers.equation.compile import BLOCK_ROWS, in_blocks

    n = 5 * BLOCK_ROWS + 123
    rng = np.random.default_rng(5)
    Re = 10 ** rng.uniform(np.log10(4e3), 8, n)
    rr = 10 ** rng.uniform(-6, np.log10(5e-2), n)
    lam = rng.uniform(0.008, 0.08, n)
    equation = parse_equation(COLEBROOK, unknown="lam", parameters={"Re": Re, "rr": rr})
    core = equation._core
    hoisted = tuple(np.asarray(v, dtype=np.float64) for v in core.bind_code.vector(
        *(equation.parameters[name] for name in core.parameter_names))[:core.n_hoisted])
    whole = core.f_code.vector(lam, *hoisted)
    assert np.array_equal(in_blocks(core.f_code.vector, lam, hoisted), whole)
    assert np.array_equal(equation.f(lam), whole)
    assert np.array_equal(equation.fprime(lam), core.fprime_code.vector(lam, *hoisted))
    numpy_residual = 1 / np.sqrt(lam) + 2 * np.log10(rr / 3.7 + 2.51 / (Re * np.sqrt(lam)))
    np.testing.assert_allclose(whole, numpy_residual, rtol=1e-12, atol=1e-12)


def test_non_finite_start_values_and_values_fail_only_their_rows():
    equation = parse_equation("x^3 - 2", unknown="x")
    batch = solve_batch(equation, method="newton", x0=np.array([1.0, np.nan, np.inf, 2.0]))
    assert batch.converged.tolist() == [True, False, False, True]
    assert (batch.reason[[1, 2]] == "not_finite").all()
    for i in range(4):  # the scalar method: a start that is not finite costs no call of f
        run = batch.run(i)
        assert (run.reason, run.evaluations) == (batch.reason[i], batch.evaluations[i])
    assert batch.evaluations[[1, 2]].tolist() == [0, 0]
    bracket = solve_batch(equation, method="brent",
                          bracket=(np.array([0.0, -np.inf]), np.array([2.0, 2.0])))
    assert bracket.converged.tolist() == [True, False]
    np.testing.assert_allclose(bracket.root[0], 2 ** (1 / 3), rtol=0, atol=2e-12)


def test_chunks_give_the_same_rows_as_one_piece():
    rng = np.random.default_rng(3)
    Re = 10 ** rng.uniform(np.log10(4e3), 8, 1000)
    rr = 10 ** rng.uniform(-6, np.log10(5e-2), 1000)
    equation = parse_equation(COLEBROOK, unknown="lam", parameters={"Re": Re, "rr": rr})
    for method in METHODS:
        whole = solve_batch(equation, method=method, x0=0.02, x1=0.021, bracket=BRACKET)
        pieces = solve_batch(equation, method=method, x0=0.02, x1=0.021, bracket=BRACKET,
                             chunk_rows=37)
        assert (whole.converged == pieces.converged).all(), method
        # the same steps: a chunk of a bound equation takes views of its parameter parts
        assert (whole.iterations == pieces.iterations).all(), method
        assert (whole.evaluations == pieces.evaluations).all(), method
        # to the bit: a chunk's work arrays are the last chunk's memory taken again
        # (rows.Scratch), and nothing a chunk left there is read by the next
        np.testing.assert_array_equal(pieces.root, whole.root)
        np.testing.assert_array_equal(pieces.residual, whole.residual)
        assert (whole.reason == pieces.reason).all()


def test_a_batch_inside_another_batchs_callback_leaves_both_rows_untouched():
    # each thread hands its work arrays from one batch to its next (rows.scratch); a
    # table solved from inside another's progress callback must take arrays of its own
    rng = np.random.default_rng(11)
    Re = 10 ** rng.uniform(np.log10(4e3), 8, 600)
    rr = 10 ** rng.uniform(-6, np.log10(5e-2), 600)
    equation = parse_equation(COLEBROOK, unknown="lam", parameters={"Re": Re, "rr": rr})
    alone = solve_batch(equation, x0=0.02, chunk_rows=100)
    inner: list[Batch] = []

    def progress(share: float) -> None:
        if not inner:
            inner.append(solve_batch(equation, method="secant", x0=0.02, x1=0.021,
                                     chunk_rows=100))

    outer = solve_batch(equation, x0=0.02, chunk_rows=100, progress=progress)
    again = solve_batch(equation, method="secant", x0=0.02, x1=0.021, chunk_rows=100)
    np.testing.assert_array_equal(outer.root, alone.root)
    np.testing.assert_array_equal(outer.evaluations, alone.evaluations)
    np.testing.assert_array_equal(inner[0].root, again.root)
    np.testing.assert_array_equal(inner[0].evaluations, again.evaluations)
    # and against the outside reference: the Lambert W closed form, row by row
    np.testing.assert_allclose(outer.root[outer.converged],
                               colebrook_exact(Re, rr)[outer.converged], rtol=1e-10)


def test_progress_rises_to_one_and_cancel_stops_the_batch():
    p = np.linspace(1.0, 100.0, 5000)
    equation = parse_equation("x^2 = p", unknown="x", parameters={"p": p})
    seen: list[float] = []
    batch = solve_batch(equation, method="bisection", bracket=(0.0, 20.0), chunk_rows=1000,
                        progress=seen.append)
    assert batch.converged.all()
    assert seen[-1] == 1.0 and seen == sorted(seen) and len(seen) > 10
    polls = []

    def cancel() -> bool:
        polls.append(1)
        return len(polls) > 3

    with pytest.raises(BatchCancelled):
        solve_batch(equation, method="bisection", bracket=(0.0, 20.0), chunk_rows=1000,
                    cancel=cancel)
    assert len(polls) == 4


@pytest.mark.parametrize("method", ["newton", "secant"])
def test_open_methods_report_progress_every_iteration_and_stop_on_cancel(method):
    # The open methods' compiled iterations still poll between the calls of f: progress
    # rises to 1 through every chunk and iteration, and cancel stops the batch at once.
    p = np.linspace(1.0, 100.0, 5000)
    equation = parse_equation("x^2 = p", unknown="x", parameters={"p": p})
    seen: list[float] = []
    batch = solve_batch(equation, method=method, x0=30.0, x1=31.0, chunk_rows=1000,
                        progress=seen.append)
    assert batch.converged.all()
    np.testing.assert_allclose(batch.root, np.sqrt(p), rtol=1e-14)  # reference: numpy.sqrt
    assert seen[-1] == 1.0 and seen == sorted(seen) and len(seen) > 5 * 8
    polls = []

    def cancel() -> bool:
        polls.append(1)
        return len(polls) > 6

    with pytest.raises(BatchCancelled):
        solve_batch(equation, method=method, x0=30.0, x1=31.0, chunk_rows=1000,
                    cancel=cancel)
    assert len(polls) == 7


def test_settings_are_checked_as_for_one_solve():
    equation = parse_equation("x - p", unknown="x", parameters={"p": np.arange(3.0)})
    with pytest.raises(ValueError, match="xtol"):
        solve_batch(equation, x0=1.0, xtol=-1.0)
    with pytest.raises(ValueError, match="max_iter"):
        solve_batch(equation, x0=1.0, max_iter=2.5)
    with pytest.raises(ValueError, match="unknown method"):
        solve_batch(equation, method="regula", x0=1.0)
    with pytest.raises(ValueError, match="bracket"):
        solve_batch(equation, method="brent")
    with pytest.raises(ValueError, match="broadcast"):
        solve_batch(equation, x0=np.ones(4))


@pytest.mark.parametrize("method", list(METHODS))
def test_one_row_given_as_scalars_and_a_cap_beyond_64_bits_solve_as_one_solve(method):
    # x^2 - 2: root sqrt(2) (closed form). Scalars alone make a batch of one row with
    # 0-d arrays; a cap of 10^20 is as good as none, as in the scalar method
    equation = parse_equation("x^2 - 2")
    batch = solve_batch(equation, method=method, x0=1.0, x1=1.5, bracket=(0.0, 2.0),
                        max_iter=10**20)
    assert batch.reason.shape == () and str(batch.reason) == batch.reason_at(0)
    assert batch.reason_at(0) == batch.run(0).reason and bool(batch.converged)
    assert abs(float(batch.root) - math.sqrt(2.0)) <= 1e-12
    assert batch.settings["max_iter"] == 10**20


def test_the_record_is_read_only_and_counts_reasons():
    equation = parse_equation("x - p", unknown="x", parameters={"p": np.arange(4.0)})
    batch = solve_batch(equation, method="brent", bracket=(-1.0, 10.0))
    assert isinstance(batch, Batch) and len(batch) == 4
    with pytest.raises(ValueError):
        batch.root[0] = 1.0
    assert sum(batch.counts().values()) == 4
    assert batch.row_values(2) == {"p": 2.0}


def test_reasons_are_codes_read_as_words_on_demand_and_agree_everywhere():
    # rows that end in three ways: a root (twice), an exact zero, no sign change
    equation = parse_equation("(x - p)*q", unknown="x",
                              parameters={"p": np.array([0.3, 0.0, 5.0, 0.2]),
                                          "q": np.array([1.0, 1.0, 1.0, 1.0])})
    batch = solve_batch(equation, method="bisection", bracket=(-1.0, 1.0))
    assert batch.reason_code.dtype == np.int8
    with pytest.raises(ValueError):
        batch.reason[0] = "x_tolerance"
    with pytest.raises(ValueError):
        batch.reason_code[0] = 0
    for i in range(len(batch)):
        # the string array, one row's reason and the scalar method's own run say the same
        assert batch.reason[i] == batch.reason_at(i) == batch.run(i).reason
        assert batch.converged[i] == (batch.reason_at(i) in CONVERGED_REASONS)
    assert batch.counts() == {r: int(np.sum(batch.reason == r)) for r in set(batch.reason)}


def test_a_code_never_written_is_not_read_as_converged():
    codes = np.array([-1, *range(len(BATCH_REASONS))], dtype=np.int8)
    assert converged_of(codes).tolist() == [False] + [r in CONVERGED_REASONS
                                                     for r in BATCH_REASONS]


# ----------------------------------------------------------------- sweep


def test_sweep_follows_a_branch_to_its_turning_point_and_says_where_it_ends():
    # x^3 - x - p = 0: three real roots for |p| < 2/(3 sqrt 3); the lowest branch folds
    # into the middle one at p* = 2/(3 sqrt 3) (f = f' = 0 at x = -1/sqrt 3). p is given
    # no value at parse time: the sweep binds it (parse once, bind late).
    equation = parse_equation("x^3 - x - p", unknown="x")
    values = np.linspace(-1.0, 1.0, 41)
    batch = sweep(equation, "p", values, x0=-1.3)
    turning = 2.0 / (3.0 * math.sqrt(3.0))
    assert batch.converged.all()
    for k, p in enumerate(values):
        roots = np.roots([1.0, 0.0, -1.0, -p])  # reference: numpy.roots
        real = np.sort(roots[np.abs(roots.imag) < 1e-9].real)
        expected = real[0] if p < turning else real[-1]  # the branch, then the jump
        assert abs(batch.root[k] - expected) <= 1e-12, (k, p)
    first_past = int(np.argmax(values > turning))
    assert (first_past, "branch_jump") in batch.notes
    assert all(code != "branch_jump" for k, code in batch.notes if k != first_past)
    run = batch.run(first_past)  # started from the previous row's root
    assert run.steps[0].x == batch.root[first_past - 1]


@pytest.mark.parametrize(("text", "name", "values", "root"), [
    ("(x - 1)*exp(-p)", "p", [0.0, 15.0, 30.0, 45.0], 1.0),
    ("k*(x - 2) + 0.001*k*(x - 2)^3", "k", [1.0, 1e-7, 1e-14, 1e-21], 2.0),
])
def test_a_parameter_that_only_scales_f_is_no_turning_point(text, name, values, root):
    # closed form: the root stays put (1 and 2) while f' there falls a millionfold and
    # more from row to row: no fold, the branch goes on (it read at_fold, then a
    # branch_jump onto the same root)
    equation = parse_equation(text, unknown="x", parameters={name: values[0]})
    batch = sweep(equation, name, np.array(values), x0=root + 1.0)
    assert batch.converged.all()
    np.testing.assert_allclose(batch.root, root, rtol=0.0, atol=1e-12)
    assert not {code for _, code in batch.notes} & {"at_fold", "branch_jump",
                                                    "turning_point"}, batch.notes


def test_a_sweep_row_exactly_at_the_turning_point_ends_the_branch_there():
    # x^3 - 3x + c: for c < 2 a branch of roots above 1 falls to the double root x = 1 at
    # c = 2 (f = f' = 0 there: (x - 1)^2 (x + 2)), and beyond c = 2 only the root below
    # -2 is left (numpy.roots). Typed out, f is 0.0 in doubles near x = 1: the row at
    # c = 2 is a zero of f's rounding noise, not underflow (it failed, "f underflowed").
    equation = parse_equation("x^3 - 3*x + c", unknown="x", parameters={"c": -1.0})
    values = np.linspace(-1.0, 3.0, 9)
    batch = sweep(equation, "c", values, x0=1.5)
    assert batch.converged.all()
    fold = int(np.flatnonzero(values == 2.0)[0])
    for k, c in enumerate(values):
        roots = np.roots([1.0, 0.0, -3.0, c])
        real = np.sort(roots[np.abs(roots.imag) < 1e-6].real)
        expected = real[-1] if k <= fold else real[0]
        # the double root is located only to f's rounding noise (about 1.2e-8 around 1)
        assert abs(batch.root[k] - expected) <= (2e-8 if k == fold else 1e-12), (k, c)
    assert (fold, "at_fold") in batch.notes and (fold + 1, "branch_jump") in batch.notes
    assert batch.run(fold).detail is None or batch.run(fold).detail.code == "zero_in_noise"


def test_sweep_restarts_after_a_failed_row_and_says_from_where():
    # x^2 = p has no real root for p < 0: those rows fail, the next good row restarts.
    equation = parse_equation("x^2 = p", unknown="x", parameters={"p": 1.0})
    values = np.array([1.0, 2.0, -1.0, 3.0, 4.0])
    batch = sweep(equation, "p", values, x0=1.0, max_iter=50)
    assert batch.converged.tolist() == [True, True, False, True, True]
    assert (2, "failed") in batch.notes and (3, "restart_last_good") in batch.notes
    np.testing.assert_allclose(batch.root[[0, 1, 3, 4]], np.sqrt(values[[0, 1, 3, 4]]),
                               rtol=1e-14)
    first_bad = sweep(equation, "p", np.array([-1.0, 4.0]), x0=1.0, max_iter=50)
    assert (1, "restart_x0") in first_bad.notes and first_bad.converged[1]


def test_sweep_notes_a_root_leaving_the_range_and_rejects_bad_names():
    equation = parse_equation("x - p", unknown="x", parameters={"p": 1.0})
    batch = sweep(equation, "p", [1.0, 2.0, 5.0], x0=1.0, bounds=(0.0, 3.0))
    assert (2, "left_range") in batch.notes
    # 5 is a root of x - p, but outside the range: not reported as the branch's root
    assert batch.converged.tolist() == [True, True, False] and np.isnan(batch.root[2])
    with pytest.raises(ValueError, match="unknown"):
        sweep(equation, "x", [1.0], x0=1.0)
    with pytest.raises(ValueError, match="not a parameter"):
        sweep(equation, "q", [1.0], x0=1.0)
    bracketed = sweep(equation, "p", [1.0, 2.0], method="brent", bracket=(0.0, 3.0))
    assert (0, "fixed_bracket") in bracketed.notes and bracketed.converged.all()


def test_parameters_go_over_the_equations_own_and_unknown_names_are_refused():
    from solvers import EquationError

    equation = parse_equation("x^2 - p*q", unknown="x", parameters={"p": 2.0, "q": 1.0})
    batch = solve_batch(equation, x0=1.0, parameters={"p": np.array([1.0, 4.0])})
    np.testing.assert_allclose(batch.root, [1.0, 2.0], rtol=1e-15)
    with pytest.raises(EquationError, match="'z' does not appear"):
        solve_batch(equation, x0=1.0, parameters={"z": np.array([1.0, 4.0])})
    np.testing.assert_allclose(sweep(equation, "p", [1.0, 4.0], x0=1.0,
                                     parameters={"q": 4.0}).root, [2.0, 4.0], rtol=1e-15)


def test_a_table_from_text_and_columns_takes_start_columns_and_names_bad_ones():
    from solvers.batch import solve_table

    p = np.array([4.0, 9.0, 16.0])
    done = solve_table("x^2 = p", [("p", p), ("x0", np.array([1.0, 1.0, 1.0]))],
                       unknown="x")
    assert done.parameters == ("p",) and done.starts == ("x0",)
    np.testing.assert_allclose(done.batch.root, [2.0, 3.0, 4.0], rtol=1e-15)
    with pytest.raises(ValueError, match="column 2 'Q' is not a parameter"):
        solve_table("x^2 = p", [("p", p), ("Q", p)], unknown="x", x0=1.0)
    with pytest.raises(ValueError, match="needs a bracket"):
        solve_table("x^2 = p", [("p", p)], unknown="x", method="brent")
    # the first row gives part of the equation no value: parsed with the next row instead
    done = solve_table("x = sqrt(p)", [("p", np.array([-1.0, 4.0]))], unknown="x", x0=1.0)
    assert done.batch.converged.tolist() == [False, True]
    assert done.batch.notes == [(0, "bad_parameters")]


def test_a_sweep_resumed_from_a_scanned_root_follows_that_branch():
    # x^3 - x - p: between the folds at p = -+2/(3 sqrt 3) there are three branches; from
    # p = 0 the middle one (x = 0 there) runs down to the lower fold at p* = +2/(3 sqrt 3).
    from solvers import scan
    from solvers.batch import resume_sweep

    equation = parse_equation("x^3 - x - p", unknown="x", parameters={"p": -1.0})
    values = np.linspace(-1.0, 1.0, 41)
    batch = sweep(equation, "p", values, x0=-1.3)
    index = 20  # p = 0
    row = equation.bind(batch.row_values(index))
    found = scan(row.f, -2.0, 2.0, fprime=row.fprime)
    middle = sorted(r.x for r in found.roots)[1]
    assert abs(middle) < 1e-12  # the scan's three roots at p = 0: -1, 0, 1
    resumed = resume_sweep(batch, index, middle)
    assert (index, "restart_scan") in resumed.notes
    np.testing.assert_array_equal(resumed.root[:index], batch.root[:index])
    turning = 2.0 / (3.0 * math.sqrt(3.0))
    for k in range(index, 41):
        p = values[k]
        roots = np.roots([1.0, 0.0, -1.0, -p])  # reference: numpy.roots
        real = np.sort(roots[np.abs(roots.imag) < 1e-9].real)
        if p < turning:
            assert abs(resumed.root[k] - real[1]) <= 1e-12, (k, p)  # the middle branch
    # past the fold the middle branch ends: a jump, or a row that fails there
    assert any(code in ("branch_jump", "failed") and k > index for k, code in resumed.notes)
    assert resumed.run(index).steps[0].x == middle


def test_every_method_of_the_registry_has_an_array_kernel():
    from solvers.batch import KERNELS

    assert set(KERNELS) == set(METHODS)  # one dispatch table, keyed like METHODS


def test_a_sweeps_rows_are_rebuilt_exactly():
    equation = parse_equation("x^3 - x - p + 0.1*sin(7*x)", unknown="x",
                              parameters={"p": 0.0})
    batch = sweep(equation, "p", np.linspace(-1.0, 1.0, 61), x0=-1.3)
    for i in range(batch.size):
        run = batch.run(i)
        assert (run.reason, run.iterations, run.evaluations) == (
            batch.reason[i], batch.iterations[i], batch.evaluations[i])
        assert run.root == batch.root[i] if run.converged else math.isnan(batch.root[i])


def test_a_sweep_with_long_steps_follows_its_branch_through_intermediate_values():
    # Invented fin: efficiency tanh(mL)/(mL) = 0.8 with m = sqrt(2h/(k t)). f is even in L,
    # so from the last row's root a long step in h sends Newton to the mirror root -L;
    # the sweep halves the step and stays on the physical branch (L > 0) instead.
    from scipy.optimize import brentq  # reference: scipy's bracketing root finder

    text = "m = sqrt(2*h/(k*t)); tanh(m*L)/(m*L) = eta"
    equation = parse_equation(text, unknown="L", parameters={"h": 10.0, "k": 205.0,
                                                             "t": 0.002, "eta": 0.8})
    values = np.array([10.0, 105.0, 200.0])  # W/(m^2 K): three rows far apart
    for bounds in (None, (0.0, 1.0)):
        batch = sweep(equation, "h", values, x0=0.1, bounds=bounds)
        assert batch.converged.all()
        for k, h in enumerate(values):
            m = math.sqrt(2 * h / (205.0 * 0.002))
            expected = brentq(lambda L, m=m: math.tanh(m * L) / (m * L) - 0.8, 1e-4, 10.0,
                              xtol=1e-15)
            assert batch.root[k] == pytest.approx(expected, rel=1e-12), (bounds, k)
        assert (1, "continued") in batch.notes
        assert not any(code in ("turning_point", "branch_jump", "failed", "left_range")
                       for _, code in batch.notes)
        # the row is rebuilt from its recorded start: the last intermediate root
        run = batch.run(1)
        assert run.root == batch.root[1] and run.steps[0].x != batch.root[0]


def test_a_sweep_past_a_fold_still_ends_the_branch_after_halving_the_step():
    # x^3 - x - p: the lowest branch ends at the fold p* = 2/(3 sqrt 3); no halving of the
    # step follows it further, so the row past it keeps its own solve (the upper branch,
    # numpy.roots) with a branch_jump note, and no "continued" note is claimed there.
    equation = parse_equation("x^3 - x - p", unknown="x", parameters={"p": 0.0})
    values = np.array([0.0, 0.2, 0.38, 0.5])
    batch = sweep(equation, "p", values, x0=-1.0)
    real = np.sort(np.roots([1.0, 0.0, -1.0, -0.5]).real[
        np.abs(np.roots([1.0, 0.0, -1.0, -0.5]).imag) < 1e-9])
    assert batch.root[3] == pytest.approx(real[-1], rel=1e-14)
    assert (3, "branch_jump") in batch.notes and (3, "continued") not in batch.notes
    assert batch.run(3).steps[0].x == batch.root[2]


def test_a_sweep_that_leaves_its_branch_on_its_second_row_says_so():
    # Found by an outside check against numpy.roots: x^4 - 0.119x^3 - 1.165x^2 - 0.052x = p
    # from the root -0.1302 at p = -0.0124 (numpy.roots: 1.157, -0.991, -0.130, 0.083).
    # By p = 0.0403 the branch through -0.130 has met 0.083 at their fold and ended
    # (numpy.roots: 1.174, -1.016 and a complex pair), and Newton from -0.130 runs to
    # 1.174. With one root of the branch known there was no straight line to hold it to,
    # and the row was taken as the branch without a note; Newton's tangent step from the
    # root before is now the prediction it is held to.
    coefficients = [1.0, -0.119, -1.165, -0.052]
    text = "x^4 - 0.119*x^3 - 1.165*x^2 - 0.052*x - p"
    equation = parse_equation(text, unknown="x", parameters={"p": 0.0})
    values = np.linspace(-0.012418451332719016, 0.9900670849195903, 20)
    batch = sweep(equation, "p", values, x0=-0.1625407602628483)
    for k, p in enumerate(values[:2]):
        roots = np.roots([*coefficients, -p])  # reference: numpy.roots
        real = roots[np.abs(roots.imag) < 1e-9].real
        assert np.min(np.abs(real - batch.root[k])) <= 1e-12, (k, p, real)
    assert abs(batch.root[0] - (-0.13015664004121252)) <= 1e-12
    assert batch.root[1] > 1.0  # the other branch: only said with a note
    assert (1, "branch_jump") in batch.notes


@pytest.mark.parametrize("method", ["newton", "secant"])
def test_a_branch_that_goes_on_is_not_flagged_on_its_second_row(method):
    # The tangent check's other side: the smooth lowest branch of x^3 - x = p for p from
    # -1 to -0.5 (numpy.roots: its smallest real root) in steps of 0.1 and of 0.5, with
    # no note on any row.
    cubic = parse_equation("x^3 - x - p", unknown="x", parameters={"p": 0.0})
    for count in (6, 2):
        values = np.linspace(-1.0, -0.5, count)
        batch = sweep(cubic, "p", values, x0=-1.3, method=method,
                      x1=-1.29 if method == "secant" else None)
        assert batch.converged.all() and not batch.notes, batch.notes
        for k, p in enumerate(values):
            roots = np.roots([1.0, 0.0, -1.0, -p])
            lowest = min(roots[np.abs(roots.imag) < 1e-9].real)
            assert batch.root[k] == pytest.approx(lowest, abs=1e-12)


def test_parameters_named_like_the_bracket_ends_broadcast_with_the_bracket():
    # van der Waals' a and b beside a bracket (a, b) of their own shape: the shapes were
    # merged by name and the rows refused. Reference: numpy.roots of the cubic in v,
    # p v^3 - (p b + R T) v^2 + a v - a b = 0 (invented CO2-like gas states).
    R, T, p = 8.314, 320.0, 4e6
    a = np.array([[0.30], [0.36], [0.40]])
    b = np.array([[4.0e-5], [4.3e-5], [4.6e-5]])
    equation = parse_equation("(p + a/v^2)*(v - b) = R*T", unknown="v",
                              parameters={"a": a, "b": b, "R": R, "T": T, "p": p})
    low = np.array([2e-4, 3e-4, 4e-4, 5e-4])
    batch = solve_batch(equation, method="brent", bracket=(low, 2e-3))
    assert batch.root.shape == (3, 4) and batch.converged.all()
    for i in range(3):
        roots = np.roots([p, -(p * b[i, 0] + R * T), a[i, 0], -a[i, 0] * b[i, 0]])
        gas = max(r.real for r in roots if abs(r.imag) < 1e-12)
        np.testing.assert_allclose(batch.root[i], gas, rtol=0, atol=2e-12)  # xtol 1e-12
