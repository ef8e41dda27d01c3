"""Cancel and progress inside one system solve (``solve_system(..., progress, cancel)``).

The problems are the Broyden tridiagonal and banded functions of the Moré–Garbow–Hillstrom
set (ACM TOMS 7(1), 1981), written out by tests/mgh_problems.py; scipy.optimize.root
(method "hybr") is the outside reference for the solve that is not cancelled.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest
import scipy.optimize

from solvers import SystemCancelled, parse_system, solve_system
from solvers.systems import SYSTEM_METHODS

sys.path.insert(0, str(Path(__file__).parent))
from mgh_problems import broyden_banded, broyden_tridiagonal  # noqa: E402

N = 40  # unknowns: a difference Jacobian is 40 F calls, an iteration several more


@pytest.fixture(scope="module")
def tridiagonal():
    p = broyden_tridiagonal(N)
    return p, parse_system(p.text)


class Asked:
    """A cancel() that says yes once ``after`` polls went by; counts the polls."""

    def __init__(self, after: int) -> None:
        self.after = after
        self.polls = 0

    def __call__(self) -> bool:
        self.polls += 1
        return self.polls > self.after


@pytest.mark.parametrize("method", list(SYSTEM_METHODS))
def test_cancel_between_iterations_stops_before_the_cap(tridiagonal, method):
    p, system = tridiagonal
    seen: list[float] = []
    cancel_now = [False]

    def progress(f: float) -> None:
        seen.append(f)
        if len(seen) >= 3:  # the third iteration has begun: ask to stop
            cancel_now[0] = True

    with pytest.raises(SystemCancelled) as caught:
        solve_system(system, p.x0, method=method, max_iter=10_000, xtol=0.0, rtol=0.0,
                     progress=progress, cancel=lambda: cancel_now[0])
    assert caught.value.iterations < 10_000
    assert caught.value.iterations <= 3  # the very next poll took it
    assert seen == sorted(seen) and 0.0 <= seen[0] and seen[-1] < 1.0


def test_cancel_reaches_inside_a_difference_jacobian(tridiagonal):
    # Broyden starts with a forward-difference Jacobian: N F calls before its first
    # iteration. A cancel after 5 polls must stop inside it, not after it.
    p, system = tridiagonal
    asked = Asked(5)
    with pytest.raises(SystemCancelled) as caught:
        solve_system(system, p.x0, method="broyden", cancel=asked)
    assert caught.value.iterations == 0
    assert asked.polls == 6  # polled once per column, stopped at the first yes


def test_cancel_reaches_inside_the_line_search():
    # From x = -30, where exp is flat, the first Newton step is huge and exp overflows: the
    # line search cuts it back many times. Its trials are polled (more polls than
    # iterations), and a cancel among them stops the solve before it ends.
    system = parse_system("exp(x) - 1 = y; y = 0", unknowns=["x", "y"])
    polls = Asked(10 ** 9)
    run = solve_system(system, {"x": -30.0, "y": 5.0}, method="newton", cancel=polls)
    assert run.converged
    assert polls.polls > run.iterations + 1  # more polls than iterations: trials polled
    asked = Asked(run.iterations + 2)
    with pytest.raises(SystemCancelled) as caught:
        solve_system(system, {"x": -30.0, "y": 5.0}, method="newton", cancel=asked)
    assert caught.value.iterations < run.iterations


@pytest.mark.parametrize("method", list(SYSTEM_METHODS))
def test_progress_and_a_cancel_that_never_says_yes_change_nothing(method):
    p = broyden_banded(12)
    system = parse_system(p.text)
    plain = solve_system(system, p.x0, method=method)
    seen: list[float] = []
    watched = solve_system(system, p.x0, method=method, progress=seen.append,
                           cancel=lambda: False)
    assert watched.root == plain.root and watched.steps == plain.steps
    assert watched.evaluations == plain.evaluations
    assert seen == sorted(seen) and seen[-1] == 1.0 and len(seen) >= 2
    # outside reference: scipy.optimize.root (MINPACK hybrd) from the same start
    ref = scipy.optimize.root(p.F, np.array(p.x0), method="hybr", tol=1e-12)
    assert ref.success and watched.converged
    assert np.allclose([watched.root[n] for n in system.unknowns], ref.x, rtol=1e-8,
                       atol=1e-10)


def test_progress_counts_blocks_in_order():
    # a triangular system: three blocks of one unknown each, solved in sequence
    system = parse_system("a^3 = 8; a*b^2 = 18; b + c^3 = 30")
    assert len(system.blocks) == 3
    seen: list[float] = []
    run = solve_system(system, {"a": 1.0, "b": 1.0, "c": 1.0}, progress=seen.append)
    assert run.converged and run.root["c"] == pytest.approx(3.0)  # by hand: 3 + 27 = 30
    assert seen == sorted(seen) and seen[-1] == 1.0
    assert any(1 / 3 <= f < 2 / 3 for f in seen) and any(2 / 3 <= f < 1 for f in seen)
