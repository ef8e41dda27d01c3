"""Findings of an adversarial review of the scan, each reduced to its smallest case.

Every check names its outside reference (closed forms; mpmath at 50 digits). The equations
are typed as a user types them and compiled by ``parse_equation``; each runs with f' (the
derivative cross-check, as the app runs it) and without (the Chebyshev cross-check).
The generator that found them is ``benchmarks/scan_adversary.py``.
"""

from __future__ import annotations

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
