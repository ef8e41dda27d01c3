"""The bracketing methods on the Alefeld-Potra-Shi test set (154 cases).

Source of the cases, brackets and known roots: G. E. Alefeld, F. A. Potra and Y. Shi,
"Algorithm 748: Enclosing Zeros of Continuous Functions", ACM Trans. Math. Softw.
21(3), 1995, as shipped in scipy (``scipy.optimize._tstutils.get_tests("aps")``).
Reference solver: ``scipy.optimize.brentq`` with the same tolerances.

The one flat case is aps.13.00: f(x) = x*exp(-1/x**2) on [-1, 4], root 0, with every
derivative zero at the root. In double precision exp(-1/x**2) underflows, and the
scipy function returns exactly 0 for |x| < 1/sqrt(ln(DBL_MAX)) ~ 0.0375, so every
such x is an exact zero of f *as computed*: Brent and bisection stop there with
``exact_zero`` (a true zero of the computed f, up to 0.0375 from the mathematical
root), and Illinois's chord creeps through the region where |f| < 1e-30 and stops
at the iteration cap. scipy's own test suite accepts any point with f == 0 there
and lists the case as a known failure for Newton.
"""

from __future__ import annotations

import math

import pytest
from scipy.optimize import brentq
from scipy.optimize._tstutils import get_tests

from app.documents.words import run_message
from solvers.methods import (
    DEFAULT_RTOL,
    DEFAULT_XTOL,
    bisection,
    brent,
    false_position,
    illinois,
)
from solvers.records import REASONS

CASES = get_tests("aps")
FLAT = "aps.13.00"
REGULAR = [tc for tc in CASES if tc["ID"] != FLAT]
CONVERGING = (brent, illinois, bisection)


class Counted:
    """One APS case as a plain callable f(x), counting its calls."""

    def __init__(self, case):
        self.case = case
        self.calls = 0

    def __call__(self, x):
        self.calls += 1
        return self.case["f"](x, *self.case["args"])


def tolerance(x: float) -> float:
    return DEFAULT_XTOL + DEFAULT_RTOL * abs(x)


def test_the_set_has_154_cases_and_one_flat_case():
    assert len(CASES) == 154
    flat = Counted(next(tc for tc in CASES if tc["ID"] == FLAT))
    # exp(-1/x^2) has underflowed: f is exactly zero well away from the root 0 ...
    assert flat(0.03) == 0.0 and flat(-0.037) == 0.0
    # ... and not beyond 1/sqrt(ln(DBL_MAX)) ~ 0.0375
    assert flat(0.038) != 0.0 and 1.0 / math.sqrt(math.log(1.7976931348623157e308)) < 0.038


@pytest.mark.parametrize("method", CONVERGING, ids=lambda m: m.__name__)
@pytest.mark.parametrize("case", REGULAR, ids=lambda tc: tc["ID"])
def test_converges_to_the_known_root(method, case):
    f = Counted(case)
    a, b = case["bracket"]
    run = method(f, a, b)
    assert run.converged, run_message(run)
    assert run.reason in REASONS
    assert run.evaluations == f.calls
    known = case["root"]  # root published with the test set
    assert abs(run.root - known) <= tolerance(known), (run.root, known)
    reference = brentq(f, a, b, xtol=DEFAULT_XTOL, rtol=DEFAULT_RTOL)
    assert abs(run.root - reference) <= 2 * tolerance(reference)


@pytest.mark.parametrize("method", (brent, illinois, bisection, false_position),
                         ids=lambda m: m.__name__)
def test_flat_case_stops_on_an_exact_zero_or_says_it_did_not_converge(method):
    f = Counted(next(tc for tc in CASES if tc["ID"] == FLAT))
    run = method(f, -1.0, 4.0)
    # f == 0.0 over |x| < 0.0375 is underflow, not a root: an "exact zero" there is no
    # longer accepted; the run stops, saying so, with its last x inside that stretch.
    assert not run.converged
    assert run.reason in ("not_finite", "max_iterations")
    if run.reason == "not_finite":
        assert "underflow" in run_message(run) and abs(run.root) < 0.0376


def test_brent_uses_no_more_evaluations_than_scipy_brentq():
    # The target: total f calls on the 154 cases <= 1.0 x brentq's.
    ours = theirs = 0
    for case in CASES:
        a, b = case["bracket"]
        f = Counted(case)
        run = brent(f, a, b)
        assert run.evaluations == f.calls
        ours += f.calls
        f.calls = 0
        brentq(f, a, b, xtol=DEFAULT_XTOL, rtol=DEFAULT_RTOL)
        theirs += f.calls
    assert ours <= theirs


def test_brent_brackets_always_hold_a_sign_change():
    for case in CASES:
        f = Counted(case)
        run = brent(f, *case["bracket"])
        width = math.inf
        for step in run.steps:
            assert step.lo is not None and step.lo <= step.hi
            assert f(step.lo) * f(step.hi) <= 0.0
            assert step.hi - step.lo <= width
            width = step.hi - step.lo


def test_plain_false_position_is_slower_but_never_wrong():
    # Regula falsi keeps one end on convex stretches: linear convergence, so it runs
    # out of iterations on many cases. When it does claim convergence, the root is right.
    converged = {"false_position": 0, "illinois": 0}
    evaluations = {"false_position": 0, "illinois": 0}
    for case in REGULAR:
        for method in (false_position, illinois):
            run = method(Counted(case), *case["bracket"])
            evaluations[run.method] += run.evaluations
            if run.converged:
                converged[run.method] += 1
                assert abs(run.root - case["root"]) <= tolerance(case["root"]), case["ID"]
            else:
                assert run.reason == "max_iterations", (case["ID"], run_message(run))
    assert converged["illinois"] == len(REGULAR)
    assert converged["false_position"] < converged["illinois"]
    assert evaluations["false_position"] > 2 * evaluations["illinois"]
