"""Findings of an adversarial review of the scan, each reduced to its smallest case.

Every check names its outside reference (closed forms; mpmath at 50 digits). The equations
are typed as a user types them and compiled by ``parse_equation``; each runs with f' (the
derivative cross-check, as the app runs it) and without (the Chebyshev cross-check).
The generator that found them is ``benchmarks/scan_adversary.py``.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from solvers import parse_equation
from solvers.scan import scan


def both_checks(text: str, a: float, b: float):
    """The scan with f' and without it, on the compiled equation."""
    eq = parse_equation(text, "x")
    return [scan(eq.f, a, b, fprime=eq.fprime), scan(eq.f, a, b)]


@pytest.mark.parametrize(("text", "a", "b", "roots"), [
    ("1/x^2 + 1", -1.0, 2.03, []),
    ("1/x^2 - 1e8", -1e-3, 2.03e-3, [-1e-4, 1e-4]),
    ("1/x^2 + 1e8/(x - 3e-5)", -3e-5, 9e-3, None),
])
def test_even_pole_at_zero_is_a_pole(text, a, b, roots) -> None:
    # closed form: 1/x^2 grows without bound at x = 0. The peak search there stops at its
    # absolute resolution (about 1e-19 from 0), where 64 ulps of the located x are far
    # finer: the growth probes must reach past that resolution to straddle the pole
    for res in both_checks(text, a, b):
        assert sum(abs(p) < 1e-15 for p in res.poles) == 1, (res.check, res.poles)
        assert all(abs(r.x) > 1e-12 for r in res.roots)  # the pole is no root
        if roots is not None:  # closed form: 1/x^2 = 1e8 at x = +-1e-4
            assert [round(r.x, 15) for r in res.roots] == roots
        assert not any(d.code in ("fast_oscillation", "proxy_rough") for d in res.details)


@pytest.mark.parametrize("k", [-290, -200, -150, 0, 150, 280])
def test_touch_found_at_any_scale_of_f(k) -> None:
    # closed form: 10^k (x + 0.461898)(x + 1.460344)^2 (x - 0.15714) has a double root at
    # -1.460344 and two simple ones, for every k. The parabola that tells a positive
    # minimum from a touch squared a difference of values near 1e-160 (underflow to 0:
    # every touch a "positive minimum")
    text = f"1e{k}*((x + 0.461898)*(x + 1.460344)^2*(x - 0.157140))"
    for res in both_checks(text, -4.0, 4.0):
        assert [(round(r.x, 9), r.multiplicity) for r in res.roots] == [
            (-1.460344, 2), (-0.461898, 1), (0.15714, 1)], (res.check, k)


@pytest.mark.parametrize("s", [1e-300, 1e-200, 1.0, 1e200])
def test_touch_found_on_a_range_of_any_width(s) -> None:
    # closed form: the same roots at x = s r. Sampling alone takes a touch from the
    # parabola through three samples, whose slope squared overflowed on a range 1e-200 wide
    def f(x):
        u = x / s
        return (u + 0.461898) * (u + 1.460344) ** 2 * (u - 0.157140)

    res = scan(f, -4 * s, 4 * s, cross_check="off")
    assert [(round(r.x / s, 9), r.multiplicity) for r in res.roots] == [
        (-1.460344, 2), (-0.461898, 1), (0.15714, 1)]


@pytest.mark.parametrize("k", [-290, -200, -160, 160, 200, 290])
def test_power_of_a_scaled_unknown_keeps_its_roots(k) -> None:
    # closed form: ((x 1e-k) - 0.7579)^3 ((x 1e-k) - 2.4579) ((x 1e-k)^2 + 1) has roots at
    # 0.7579e{k} (triple) and 2.4579e{k}. sympy folds (x 1e-k)^2 into 1e-2k x^2, a
    # constant beyond double range (inf or 0 once printed): f was nan (or wrong) on the
    # whole range, and the scan saw one undefined gap
    u = f"(x*1e{-k})"
    text = f"({u} - 0.7579)^3*({u} - 2.4579)*({u}^2 + 1)"
    s = 10.0 ** k
    eq = parse_equation(text, "x")
    assert eq.f(1.0 * s) == pytest.approx((1 - 0.7579) ** 3 * (1 - 2.4579) * 2, rel=1e-12)
    vector = float(eq.f(np.array([s]))[0])  # the numpy path, as the scan calls f
    assert vector == pytest.approx((1 - 0.7579) ** 3 * (1 - 2.4579) * 2, rel=1e-12)
    for res in both_checks(text, 0.0, 3.0 * s):
        assert res.gaps == []
        assert [(round(r.x / s, 9), r.multiplicity) for r in res.roots] == [
            (0.7579, 3), (2.4579, 1)], (res.check, k)


def test_folded_constant_in_the_derivative_stays_in_range() -> None:
    # closed form: d/dx (1e200 x)^3 = 3e600 x^2, which is 3 at x = 1e-200 (sympy folds
    # the constant to 3e600: inf in doubles, so f' was inf there)
    eq = parse_equation("(1e200*x)^3 - 1", "x")
    assert eq.fprime(1e-200) == pytest.approx(3e200, rel=1e-12)
    assert float(eq.fprime(np.array([2e-200]))[0]) == pytest.approx(12e200, rel=1e-12)


@pytest.mark.parametrize("k", [-200, 200, 244])
def test_derivative_of_a_scaled_unknown_in_a_power_of_a_sum(k) -> None:
    # chain rule (closed form): with u = x 1e-k, d/dx [(u^2 - c^2)^3 exp(-u^2)] =
    # 1e-k (6u (u^2 - c^2)^2 - 2u (u^2 - c^2)^3) exp(-u^2). sympy folds 6e-2k into the
    # product; its root may not go inside the power of the sum (u^2 - c^2)^2, of order one,
    # where it underflowed: f' was 0 and the derivative check re-scanned the whole range
    # with 9.5e6 samples, warning of a fast oscillation on a smooth f
    c = 1.5133
    text = f"((x*1e{-k})^2 - {c}^2)^3*exp(-(x*1e{-k})^2)"
    eq = parse_equation(text, "x")
    s = 10.0 ** k
    for u in (0.5, 1.0, 2.0):
        p = u * u - c * c
        exact = 10.0 ** -k * (6 * u * p ** 2 - 2 * u * p ** 3) * math.exp(-u * u)
        assert float(eq.fprime(np.array([u * s]))[0]) == pytest.approx(exact, rel=1e-12)
    res = scan(eq.f, -4 * s, 4 * s, fprime=eq.fprime)
    assert res.details == () and res.samples == 2001
    assert [(round(r.x / s, 9), r.multiplicity) for r in res.roots] == [(-c, 3), (c, 3)]
