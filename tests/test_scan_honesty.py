"""A converged result is always a root: the scan's honesty under rounding noise.

Each check names its outside reference: numpy.polynomial (Gauss-Legendre nodes, Chebyshev
points), closed forms, scipy.optimize.brentq. Polynomials are typed as the user would type
them, with exact integer coefficients (expanded by sympy), so they are evaluated with the
cancellation that makes their values rounding noise near the roots.
"""

from __future__ import annotations

import json
import math
import time

import numpy as np
import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.polynomial import chebyshev, legendre
from scipy.optimize import brentq

from app.cli import main
from app.documents.words import confirmed_text
from solvers import parse_equation
from solvers.scan import ScanCancelled, scan
from solvers.scan.noise import noise_level

X = sympy.Symbol("x")


def expanded(expr: sympy.Expr) -> str:
    """The polynomial written out with integer coefficients, in the equation syntax."""
    return str(sympy.expand(expr)).replace("**", "^")


def total_multiplicity(result) -> int:
    return sum(r.multiplicity for r in result.roots)


def assert_matches(result, reference, *, tol: float) -> None:
    """Every reference root has exactly one scan root within tol (or its stated uncertainty)."""
    xs = np.array([r.x for r in result.roots])
    assert len(xs) == len(reference), (xs, reference)
    for got, want in zip(np.sort(xs), np.sort(reference), strict=True):
        assert abs(got - want) <= tol, (got, want)


# ----------------------------------------------------------------- f' in touch refinement


@pytest.mark.parametrize(("text", "a", "b", "expected"), [
    # closed forms: x^8 = 0 only at 0 (multiplicity 8); (x-1)^10 (x+2) at 1 (10) and -2 (1)
    ("x^8", -1.3, 4.1, [(0.0, 8)]),
    ("(x-1)^10*(x+2)", -3.1, 2.9, [(-2.0, 1), (1.0, 10)]),
])
def test_touch_refinement_with_fprime_is_scale_free(capsys, text, a, b, expected) -> None:
    eq = parse_equation(text)
    result = scan(eq.f, a, b, fprime=eq.fprime)
    assert [(round(r.x, 6) + 0.0, r.multiplicity) for r in result.roots] == expected
    code = main(["scan", text, "--from", str(a), "--to", str(b), "--json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    assert [r["multiplicity"] for r in json.loads(out)["roots"]] == [m for _, m in expected]


# ----------------------------------------------------------------- rounding noise


def test_legendre_20_scaled_has_its_20_roots() -> None:
    # 2^20 P20 written out (coefficients up to 1.4e11): roots are the Gauss-Legendre nodes
    # of numpy.polynomial.legendre.leggauss(20)
    eq = parse_equation(expanded(2**20 * sympy.legendre(20, X)))
    result = scan(eq.f, -1.0, 1.0, fprime=eq.fprime)
    nodes, _ = legendre.leggauss(20)
    assert_matches(result, nodes, tol=1e-9)
    assert all(r.multiplicity == 1 for r in result.roots)
    assert result.poles == [] and result.discontinuities == []


@pytest.mark.parametrize("degree", [12, 16])
def test_chebyshev_polynomials_written_out(degree) -> None:
    # T_n written out: roots are the Chebyshev points of the first kind
    # (numpy.polynomial.chebyshev.chebpts1, and chebroots of the unit series)
    eq = parse_equation(expanded(sympy.chebyshevt(degree, X)))
    result = scan(eq.f, -1.0, 1.0)
    reference = chebyshev.chebpts1(degree)
    np.testing.assert_allclose(np.sort(chebyshev.chebroots([0] * degree + [1])), reference,
                               atol=1e-12)
    assert_matches(result, reference, tol=1e-9)
    assert total_multiplicity(result) == degree  # never more roots than the degree
    assert result.poles == [] and result.discontinuities == []


def test_expanded_ninth_power_is_one_cluster() -> None:
    # (x - 1)^9 multiplied out: one root at 1 of multiplicity 9 (closed form); its values
    # within ~0.04 of 1 are rounding noise, which must not become roots, poles or jumps
    eq = parse_equation(expanded((X - 1) ** 9))
    result = scan(eq.f, 0.0, 2.0)
    (root,) = result.roots
    assert root.multiplicity == 9
    assert result.poles == [] and result.discontinuities == []
    (band,) = result.noise_bands
    assert band[0] < 1.0 < band[1] and band[1] - band[0] < 0.2
    assert abs(root.x - 1.0) <= 0.5 * (band[1] - band[0])  # within the stated uncertainty
    assert "uncertain" in confirmed_text(root)
    # the noise the band rests on is the noise of f there (common practice: eps * sum |c_k|)
    sigma = noise_level(eq.f, np.array([1.0]), 1.0)[0]
    assert 1e-17 < sigma < 512 * 8 * np.finfo(float).eps


def test_high_multiplicity_is_not_capped() -> None:
    # (x - 1.234)^13 changes sign at 1.234 (closed form): multiplicity 13, odd
    result = scan(lambda x: (x - 1.234) ** 13, 0.0, 2.0)
    (root,) = result.roots
    assert root.multiplicity == 13
    assert root.x == pytest.approx(1.234, abs=1e-6)


# ----------------------------------------------------------------- near-roots and oscillation


def test_touch_that_stops_short_of_zero_is_not_a_root() -> None:
    # x^2 + 1e-20 >= 1e-20 > 0 everywhere (closed form)
    eq = parse_equation("x^2 + 1e-20")
    assert scan(eq.f, -1.0, 1.0, fprime=eq.fprime).roots == []
    assert scan(eq.f, -1.0, 1.0).roots == []


@pytest.mark.parametrize("a", [0.01, 0.001])
def test_bounded_oscillation_is_no_pole(a) -> None:
    # sin(1/x) is bounded by 1: no pole anywhere; its zeros are x = 1/(k pi) (closed form)
    eq = parse_equation("sin(1/x)")
    result = scan(eq.f, a, 1.0, fprime=eq.fprime)
    assert result.poles == []
    zeros = 1.0 / (np.pi * np.arange(1, int(1 / (np.pi * a)) + 1))
    for r in result.roots:
        assert np.min(np.abs(zeros - r.x)) <= 1e-12 * max(r.x, 1e-3) + 1e-15
    if a == 0.01:
        assert_matches(result, zeros[zeros >= a], tol=1e-12)


# ----------------------------------------------------------------- roots beside poles


def test_liquid_root_beside_the_covolume_pole() -> None:
    # A cubic equation of state in its pressure form, Z = PV/RT (invented coefficients):
    # f(Z) = Z/(Z - B) - A Z/(Z^2 + 2BZ - B^2) - 1 has a pole at Z = B and, with A chosen so,
    # a liquid root 2.6e-4 above it; reference roots by scipy.optimize.brentq
    b_ = 0.0523
    z_liquid = b_ + 2.6e-4
    a_ = (z_liquid / (z_liquid - b_) - 1) * (z_liquid**2 + 2 * b_ * z_liquid - b_**2) / z_liquid

    def f(z):
        return z / (z - b_) - a_ * z / (z**2 + 2 * b_ * z - b_**2) - 1

    ref = brentq(f, b_ + 1e-6, b_ + 1e-3, xtol=1e-16, rtol=4 * np.finfo(float).eps)
    # at 301 samples (spacing 19x the gap) no sample even shows the pole: the cross-check
    # finds f not smooth there and the scan refines until it has both
    for samples, cross_check in ((301, True), (2001, True), (2001, False)):
        result = scan(f, 0.01, 1.5, samples=samples, cross_check=cross_check)
        assert any(abs(r.x - ref) <= 1e-12 for r in result.roots), samples
        assert any(abs(p - b_) <= 1e-12 for p in result.poles), samples


@pytest.mark.parametrize("gap", [2.6e-4, 1e-6, 1e-9])
def test_root_hidden_beside_a_pole_on_an_offset(gap) -> None:
    # 1/(x - p) - 1/gap: pole at p, root at p + gap (closed form); both samples around them
    # have the same sign and |f| barely bumps over the 1/gap offset
    for p in np.linspace(0.3, 0.7, 7):
        result = scan(lambda x, p=p: 1.0 / (x - p) - 1.0 / gap, 0.0, 1.5, cross_check=False)
        assert [r.x for r in result.roots] == pytest.approx([p + gap], rel=1e-12)
        assert result.poles == pytest.approx([p], rel=1e-14)


# ----------------------------------------------------------------- property: scaled, noisy


def _hash_noise(x: np.ndarray) -> np.ndarray:
    """Deterministic noise in [-0.5, 0.5) from the bits of x (behaves like rounding)."""
    bits = np.asarray(x, dtype=float).view(np.uint64)
    mixed = (bits * np.uint64(0x9E3779B97F4A7C15)) >> np.uint64(40)
    return mixed.astype(float) / 2.0**24 - 0.5


@settings(max_examples=40, deadline=None)
@given(
    roots=st.lists(st.floats(-0.9, 0.9), min_size=1, max_size=3, unique=True),
    scale_exp=st.integers(-300, 300),
    noise=st.sampled_from([0.0, 1e-15, 1e-13, 1e-9, 1e-6]),
    stretch=st.sampled_from([1e-6, 1.0, 1e6]),
)
def test_scaled_and_noisy_functions_give_no_false_root(roots, scale_exp, noise, stretch):
    # f = 10^s * (prod (u - r_i) + noise * h(u)) * (1 + u^2/4), u = x / stretch: the true
    # roots are r_i stretch up to the noise's displacement (closed form); no other root may
    # be reported, and no scan may raise
    roots = sorted(roots)
    if any(q - r < 0.05 for r, q in zip(roots, roots[1:], strict=False)):
        roots = roots[:1]
    scale = 10.0**scale_exp

    def f(x):
        u = np.asarray(x, dtype=float) / stretch
        p = np.ones_like(u)
        for r in roots:
            p = p * (u - r)
        return scale * (p + noise * _hash_noise(x)) * (1 + u * u / 4)

    result = scan(f, -stretch, stretch)
    expected = np.array(roots) * stretch
    # a simple root moves by at most noise / |f'| (f' >= 0.05^2 here): common practice
    tol = stretch * max(1e-9, 1e3 * noise)
    for r in result.roots:
        assert np.min(np.abs(expected - r.x)) <= tol, (r.x, expected)
    for want in expected:
        assert any(abs(r.x - want) <= tol for r in result.roots), (want, result.roots)
    assert total_multiplicity(result) <= len(roots)  # a polynomial factor of that degree
    assert result.poles == [] and result.discontinuities == []



def test_sign_change_closed_in_noise_is_a_root_not_a_jump():
    # the input hypothesis found: a simple root at x = 0 (a sample, f(0) = -5e-7 is the noise
    # itself) whose bracket [-1000, 0] bisection closes where the noise flips sign. |f| at
    # the bracket's ends is then rounding noise, not 1e-6 of the sampled |f|: a root (one
    # noise cluster), never a jump, and never lost. Closed form: roots -0.25, 0, 0.5 times
    # the stretch 1e6, displaced by at most stretch * 1e3 * noise = 1000 (common practice,
    # as in the property test above)
    roots, noise, stretch = [-0.25, 0.0, 0.5], 1e-6, 1e6

    def f(x):
        u = np.asarray(x, dtype=float) / stretch
        p = np.ones_like(u)
        for r in roots:
            p = p * (u - r)
        return (p + noise * _hash_noise(x)) * (1 + u * u / 4)

    result = scan(f, -stretch, stretch, cross_check="off")
    found = [r.x for r in result.roots]
    assert len(found) == 3, found
    assert np.allclose(found, np.array(roots) * stretch, rtol=0, atol=stretch * 1e3 * noise)
    assert all(r.multiplicity == 1 for r in result.roots)
    assert result.poles == [] and result.discontinuities == []


# ----------------------------------------------------------------- cancel


class _SlowF:
    """sin x taking 25 ms per call (a slow model), counting calls."""

    def __init__(self) -> None:
        self.calls = 0
        self.flip_at: int | None = None
        self.after_flip = 0

    def __call__(self, x):
        self.calls += 1
        if self.flip_at is not None and self.calls > self.flip_at:
            self.after_flip += 1
        time.sleep(0.025)
        return np.sin(x)

    def cancel(self) -> bool:
        return self.flip_at is not None and self.calls >= self.flip_at


@pytest.mark.parametrize("fraction", [0.1, 0.5, 0.9])
def test_cancel_takes_effect_at_the_next_evaluation(fraction) -> None:
    # a scan polls cancel at least once per 20 ms of work, whatever loop it is in
    # (sampling, refinement, cross-check): with a 25 ms f, at most one more call runs
    probe = _SlowF()
    scan(probe, 0.0, 20.0)
    slow = _SlowF()
    slow.flip_at = max(2, int(fraction * probe.calls))
    assert slow.flip_at < probe.calls  # the flip point lies inside a scan
    with pytest.raises(ScanCancelled):
        scan(slow, 0.0, 20.0, cancel=slow.cancel)
    assert slow.after_flip <= 1
    assert math.isfinite(slow.calls)


def test_written_out_polynomials_keep_their_roots_and_multiplicities() -> None:
    # products of (x - r)^m with r = (5k + 1)/5, multiplied out (sympy) and typed with
    # exact coefficients: roots and multiplicities by construction (closed form); the scan
    # must report each once with its multiplicity, within its stated uncertainty, and no
    # more roots than the degree, no pole, no jump
    rng = np.random.default_rng(20261202)
    for case in range(24):
        ks = sorted(set(rng.integers(-3, 4, int(rng.integers(1, 4))).tolist()))
        mult = [int(rng.integers(1, 6)) for _ in ks]
        factor = int(rng.choice([1, 7, 1000]))
        expr = factor * sympy.prod([(X - sympy.Rational(5 * k + 1, 5)) ** m
                                    for k, m in zip(ks, mult, strict=True)])
        eq = parse_equation(expanded(expr))
        result = scan(eq.f, -3.9, 3.7, fprime=eq.fprime if case % 2 else None)
        assert result.poles == [] and result.discontinuities == [], case
        assert total_multiplicity(result) == sum(mult), case
        for k, m in zip(ks, mult, strict=True):
            r = (5 * k + 1) / 5
            (near,) = [root for root in result.roots if abs(root.x - r) < 0.3]
            assert near.multiplicity == m, (case, r, m, near)
            band = [bd for bd in result.noise_bands if bd[0] <= near.x <= bd[1]]
            allowed = band[0][1] - band[0][0] if band else 1e-5
            assert abs(near.x - r) <= allowed, (case, r, near.x, band)


def test_one_noise_cluster_is_reported_once_with_no_oscillations_inside_it():
    # (x - 23/10)^5 typed out with exact coefficients (sympy's expand: the closed form is
    # the reference): f is rounding noise near 2.3, where the derivative check finds f'
    # contradicting f's differences and re-scans 64x finer. Everything the looks found in
    # that stretch is the one root cluster: one root of multiplicity 5, one noise-band
    # detail (the last look's, the one the root reports), no oscillation or zero run.
    x = sympy.Symbol("x")
    text = str(sympy.expand((x - sympy.Rational(23, 10)) ** 5)).replace("**", "^")
    eq = parse_equation(text)
    found = scan(eq.f, 0.0, 5.0, fprime=eq.fprime)
    assert len(found.roots) == 1 and found.roots[0].multiplicity == 5
    assert abs(found.roots[0].x - 2.3) < 0.01 and not found.poles
    codes = [d.code for d in found.details]
    assert codes.count("noise_band") == 1
    assert not {"bounded_oscillation", "fast_oscillation", "zero_run"} & set(codes)
    band = next(d for d in found.details if d.code == "noise_band")
    assert any(u == band.values[0] and v == band.values[1] for u, v in found.noise_bands)
    assert band.values[0] < 2.3 < band.values[1]
