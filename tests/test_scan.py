"""solvers.scan: every root on a range, and everything that only looks like one.

Each outside value names its source in a comment beside the check.
"""

from __future__ import annotations

import dataclasses
import math
import tracemalloc
import warnings

import mpmath
import numpy as np
import pytest
import scipy.constants
import scipy.optimize
import scipy.special

from solvers.scan import CHUNK, DEFAULT_SAMPLES, Root, Scan, ScanCancelled, scan
from solvers.scan.crosscheck import chebyshev_roots


def xs(result: Scan) -> list[float]:
    return [r.x for r in result.roots]


def assert_roots(result: Scan, expected, *, rel=1e-12, abs_=1e-14):
    assert len(result.roots) == len(expected), (xs(result), list(expected))
    for got, want in zip(result.roots, expected, strict=True):
        assert got.x == pytest.approx(want, rel=rel, abs=abs_)


# ----------------------------------------------------------------- handbook eigenvalue tables


def test_cantilever_beam_frequency_equation():
    # cos(x) cosh(x) + 1 = 0, clamped-free beam: lambda_i = 1.87510407, 4.69409113,
    # 7.85475744, 10.99554073 (Blevins, Formulas for Natural Frequency and Mode Shape,
    # Table 8-1, clamped-free; values from memory) and mpmath.findroot to full precision.
    result = scan(lambda x: np.cos(x) * np.cosh(x) + 1.0, 0.0, 12.0)
    handbook = [1.87510407, 4.69409113, 7.85475744, 10.99554073]
    assert_roots(result, handbook, rel=1e-8)
    for r in result.roots:
        ref = float(mpmath.findroot(lambda t: mpmath.cos(t) * mpmath.cosh(t) + 1, r.x))
        assert r.x == pytest.approx(ref, rel=4e-15)  # mpmath.findroot reference
        assert r.multiplicity == 1
        assert r.located_by == ("sampling", "chebyshev")
        assert r.confirmed.startswith("sign change, Anderson-Bjorck")
        # the project's Brent on the same sample bracket, built on demand, agrees with the
        # vectorised refinement to the shared stop rule (bracket width <= xtol + 4 eps |x|)
        assert r.run is not None and r.run.method == "brent" and r.run.converged
        assert r.bracket is not None and r.bracket[0] <= r.run.root <= r.bracket[1]
        assert abs(r.run.root - r.x) <= 2 * (1e-3 * 2.2e-16 * 12.0 + 4 * 2.2e-16 * abs(r.x))
    assert result.poles == [] and result.discontinuities == [] and result.warnings == []


@pytest.mark.parametrize(
    ("biot", "table"),
    [
        # xi_n tan(xi_n) = Bi, first four roots (Incropera et al., Fundamentals of Heat and
        # Mass Transfer, Appendix B.3; values from memory, 4 decimals)
        (0.1, [0.3111, 3.1731, 6.2991, 9.4354]),
        (1.0, [0.8603, 3.4256, 6.4373, 9.5293]),
        (10.0, [1.4289, 4.3058, 7.2281, 10.2003]),
    ],
)
def test_plane_wall_conduction_eigenvalues(biot, table):
    # in the tan form the equation has poles at pi/2 + n pi: they must not be roots
    result = scan(lambda x: x * np.tan(x) - biot, 0.0, 10.5)
    assert_roots(result, table, rel=0, abs_=6e-5)
    for r in result.roots:
        ref = float(mpmath.findroot(lambda t: t * mpmath.sin(t) - biot * mpmath.cos(t), r.x))
        assert r.x == pytest.approx(ref, rel=4e-15)  # mpmath.findroot reference
    poles = [math.pi / 2 + n * math.pi for n in range(3)]  # tan's poles (common practice)
    assert result.poles == pytest.approx(poles, rel=1e-14)


# ----------------------------------------------------------------- reference libraries


def test_polynomial_against_numpy_roots():
    coefficients = [1.0, -2.5, -7.75, 13.375, 9.0, -4.5]
    real = sorted(z.real for z in np.roots(coefficients) if abs(z.imag) < 1e-12)  # numpy.roots
    result = scan(lambda x: np.polyval(coefficients, x), -4.0, 5.0)
    assert_roots(result, real, rel=1e-12)
    assert all(r.multiplicity == 1 for r in result.roots)


def test_random_polynomials_against_numpy_roots():
    rng = np.random.default_rng(7)
    for _ in range(20):
        coefficients = rng.normal(size=int(rng.integers(3, 9)))
        zs = np.roots(coefficients)  # numpy.roots reference
        real = sorted(z.real for z in zs if abs(z.imag) < 1e-9 and abs(z.real) < 3)
        if any(abs(z.real) > 2.9 and abs(z.real) < 3.1 for z in zs):
            continue  # a root at the range end would make the count ambiguous
        result = scan(lambda x, c=coefficients: np.polyval(c, x), -3.0, 3.0)
        assert_roots(result, real, rel=1e-9, abs_=1e-10)


def test_van_der_waals_compressibility_three_real_roots():
    # van der Waals CO2: a = 0.3640 Pa m^6/mol^2, b = 4.267e-5 m^3/mol (CRC Handbook of
    # Chemistry and Physics, van der Waals constants table; from memory). R from scipy.
    R = scipy.constants.R
    a_vdw, b_vdw = 0.3640, 4.267e-5
    T, P = 280.0, 5.5e6  # below the critical point: liquid, unstable and vapour roots
    A, B = a_vdw * P / (R * T) ** 2, b_vdw * P / (R * T)
    cubic = [1.0, -(1.0 + B), A, -A * B]  # Z^3 - (1 + B) Z^2 + A Z - A B = 0
    reference = sorted(z.real for z in np.roots(cubic))  # numpy.roots reference
    assert all(abs(z.imag) < 1e-12 for z in np.roots(cubic))
    result = scan(lambda z: np.polyval(cubic, z), 0.0, 1.5)
    assert_roots(result, reference, rel=1e-12)
    assert result.roots[0].x > B  # the liquid root lies above the co-volume (common practice)


def test_colebrook_friction_factor_on_a_range_reaching_below_zero():
    # Colebrook-White: 1/sqrt(f) + 2 log10(eps/(3.7 D) + 2.51/(Re sqrt f)) = 0 (common
    # practice); Re = 1e5, eps/D = 1e-4. f < 0 is undefined: a gap, not an error.
    re, rough = 1e5, 1e-4

    def colebrook(f):
        return 1 / np.sqrt(f) + 2 * np.log10(rough / 3.7 + 2.51 / (re * np.sqrt(f)))

    result = scan(colebrook, -0.01, 0.2)
    mpmath.mp.dps = 30
    ref = mpmath.findroot(
        lambda f: 1 / mpmath.sqrt(f) + 2 * mpmath.log10(rough / 3.7 + 2.51 / (re * mpmath.sqrt(f))),
        0.0185,
    )  # mpmath.findroot reference at 30 digits
    mpmath.mp.dps = 15
    assert_roots(result, [float(ref)], rel=1e-14)
    assert result.gaps[0][0] == -0.01 and result.gaps[0][1] == pytest.approx(0.0, abs=1e-15)


def test_internal_rate_of_return_with_a_pole_at_minus_one():
    # NPV(r) = sum C_t / (1 + r)^t (invented cash flows); with v = 1/(1 + r) it is the
    # polynomial sum C_t v^t, whose real roots numpy.roots gives (reference)
    flows = [-1000.0, 300.0, 300.0, 300.0, 300.0, -50.0]
    v = [z.real for z in np.roots(flows[::-1]) if abs(z.imag) < 1e-12 and z.real != 0]
    expected = sorted(r for r in (1 / z - 1 for z in v) if -1.5 < r < 1.0)
    result = scan(lambda r: sum(c / (1 + r) ** t for t, c in enumerate(flows)), -1.5, 1.0)
    assert_roots(result, expected, rel=1e-12)
    assert result.poles == pytest.approx([-1.0], rel=1e-14)


@pytest.mark.parametrize("order", [0, 1, 2])
def test_bessel_zeros(order):
    zeros = scipy.special.jn_zeros(order, 12)  # scipy.special.jn_zeros reference
    result = scan(lambda x: scipy.special.jv(order, x), 0.5, 38.0)
    expected = [z for z in zeros if 0.5 < z < 38.0]
    assert_roots(result, expected, rel=1e-13)


# ----------------------------------------------------------------- elementary cases


def test_zeros_of_sin_one_over_x():
    # sin(1/x) = 0 at x = 1/(n pi) (common practice): n = 1..6 lie in [0.05, 1]
    result = scan(lambda x: np.sin(1.0 / x), 0.05, 1.0)
    assert_roots(result, sorted(1 / (n * math.pi) for n in range(1, 7)), rel=1e-13)


def test_sin_one_over_x_closer_to_the_accumulation_point():
    # 1/(n pi) for n = 1..63 in [0.005, 1]: spacing shrinks to 5e-5, below the default
    # sample spacing of 5e-4, so the oscillation check has to refine (common practice)
    result = scan(lambda x: np.sin(1.0 / x), 0.005, 1.0)
    expected = sorted(1 / (n * math.pi) for n in range(1, 64))
    assert_roots(result, expected, rel=1e-12)


def test_oscillation_aliased_by_the_sampling_is_caught_by_the_cross_check():
    # sin(1e4 x) on [0, 1]: zeros at n pi / 1e4, n = 0..3183 (common practice). The default
    # grid (5e-4 spacing, 0.8 samples per period) aliases it; the Chebyshev proxy does not,
    # and the parts it cannot resolve are re-scanned 64x denser.
    result = scan(lambda x: np.sin(1e4 * x), 0.0, 1.0)
    expected = np.arange(0, 3184) * math.pi / 1e4
    assert len(result.roots) == len(expected)
    assert np.allclose(xs(result), expected, rtol=1e-12, atol=1e-15)
    assert any("re-scanned" in w for w in result.warnings)


def test_double_root_touch():
    result = scan(lambda x: (x - 2.00031) ** 2, 0.0, 4.0)
    assert len(result.roots) == 1
    root = result.roots[0]
    assert root.x == pytest.approx(2.00031, rel=1e-12)
    assert root.multiplicity == 2
    assert root.confirmed.startswith("touch")


def test_double_root_with_derivative_uses_brent_on_fprime():
    result = scan(lambda x: (x - 2.00031) ** 2 * np.exp(x), 0.0, 4.0,
                  fprime=lambda x: (x - 2.00031) * (x - 2.00031 + 2.0) * np.exp(x))
    (root,) = result.roots
    assert root.x == pytest.approx(2.00031, rel=1e-14)
    assert root.multiplicity == 2
    assert "f'" in root.confirmed and root.run is not None


def test_expanded_double_root_with_rounding_noise():
    # x^2 - 4.2 x + 4.41 = (x - 2.1)^2 evaluated with cancellation: still one touch
    result = scan(lambda x: (x - 4.2) * x + 4.41, 0.0, 4.0)
    assert len(result.roots) == 1
    assert result.roots[0].x == pytest.approx(2.1, rel=1e-7)
    assert result.roots[0].multiplicity == 2


def test_near_miss_is_not_a_root():
    # (x - 2)^2 + 1e-12 > 0 everywhere (common practice): no root, though |f| dips to 1e-12
    assert scan(lambda x: (x - 2.00031) ** 2 + 1e-12, 0.0, 4.0).roots == []
    assert scan(lambda x: (x - 2.00031) ** 2 + 1e-3, 0.0, 4.0).roots == []


def test_triple_root():
    result = scan(lambda x: (x - 1.0) ** 3, 0.0, 3.0)
    (root,) = result.roots
    assert root.x == pytest.approx(1.0, abs=1e-12)
    assert root.multiplicity == 3


def test_fourth_order_touch():
    result = scan(lambda x: (x - 1.3) ** 4 * np.exp(x), 0.0, 3.0)
    (root,) = result.roots
    assert root.x == pytest.approx(1.3, abs=1e-3)  # eps**(1/4) conditioning (common practice)
    assert root.multiplicity == 4


def test_near_double_roots_are_resolved_not_merged():
    result = scan(lambda x: (x - 1.0) * (x - 1.0 - 1e-6), 0.0, 3.0)
    assert_roots(result, [1.0, 1.0 + 1e-6], rel=1e-12)
    assert [r.multiplicity for r in result.roots] == [1, 1]


def test_three_roots_inside_one_sample_spacing():
    # one sign change between samples, three roots: the two hidden ones are searched for
    result = scan(lambda x: (x - 1.0) * (x - 1.0 - 1e-6) * (x - 1.0 - 2e-6), 0.0, 3.0)
    assert_roots(result, [1.0, 1.0 + 1e-6, 1.0 + 2e-6], rel=1e-12)


def test_double_root_hidden_beside_a_triple_root():
    # (x - 1)^3 (x - 1.0005)^2: one sign change in one sample spacing, two roots
    result = scan(lambda x: (x - 1.0) ** 3 * (x - 1.0005) ** 2, 0.0, 3.0)
    assert_roots(result, [1.0, 1.0005], rel=1e-7)
    assert [r.multiplicity for r in result.roots] == [3, 2]


def test_near_double_roots_straddling_no_sample():
    # 1e-8 apart, both between two samples: found from the local minimum of |f|
    r0 = 1.2345678
    result = scan(lambda x: (x - r0) * (x - r0 - 1e-8) * np.exp(x), 0.0, 3.0)
    assert_roots(result, [r0, r0 + 1e-8], rel=1e-13)


def test_poles_of_tan_are_not_roots():
    result = scan(np.tan, 0.0, 10.0)
    assert_roots(result, [0.0, math.pi, 2 * math.pi, 3 * math.pi], rel=1e-15, abs_=1e-300)
    # poles of tan at pi/2 + n pi (common practice)
    assert result.poles == pytest.approx([math.pi / 2 + n * math.pi for n in range(3)],
                                         rel=1e-15)


@pytest.mark.parametrize("c", [0.3, 0.31234567])
def test_simple_pole_is_a_pole(c):
    result = scan(lambda x: 1.0 / (x - c), 0.0, 1.0)
    assert result.roots == []
    assert result.poles == pytest.approx([c], rel=1e-15)


def test_pole_next_to_a_root():
    result = scan(lambda x: (x - 0.5) / (x - 0.25), 0.0, 1.0)
    assert_roots(result, [0.5])
    assert result.poles == pytest.approx([0.25], rel=1e-15)


def test_logarithmic_singularity_with_sign_change_is_a_pole():
    result = scan(lambda x: np.sign(x - 0.7) * np.log(np.abs(x - 0.7)), 0.0, 1.0)
    assert result.roots == []
    assert result.poles == pytest.approx([0.7], rel=1e-14)


@pytest.mark.parametrize(
    ("f", "a", "b", "roots", "pole"),
    [
        # 1/(x - c)^2 = 5 at x = c +/- 1/sqrt(5) (common practice); pole at c, no sign change
        (lambda x: 1.0 / (x - 0.3123) ** 2 - 5.0, 0.0, 1.0, [0.3123 + 1 / math.sqrt(5)], 0.3123),
        # ln|x - 0.5| = 0 at x = 1.5 (and -0.5, outside); -inf at 0.5 without a sign change
        (lambda x: np.log(np.abs(x - 0.5)), 0.0, 2.0, [1.5], 0.5),
        (lambda x: np.log(np.abs(x - 0.7123)), 0.0, 1.0, [], 0.7123),
    ],
)
def test_poles_without_sign_change(f, a, b, roots, pole):
    result = scan(f, a, b)
    assert_roots(result, roots)
    assert result.poles == pytest.approx([pole], rel=1e-12)


def test_jump_is_a_discontinuity_not_a_root():
    result = scan(lambda x: np.where(x < 0.43, -1.0, 1.0) * (2 + x), 0.0, 1.0)
    assert result.roots == []
    assert result.discontinuities == pytest.approx([0.43], rel=1e-15)


def test_jump_and_root_together():
    result = scan(lambda x: np.where(x < 0.5, x - 0.2, -1.0 - x), 0.0, 1.0)
    assert_roots(result, [0.2])
    assert result.discontinuities == pytest.approx([0.5], rel=1e-15)
    assert result.poles == []


def test_steep_but_continuous_is_a_root():
    result = scan(lambda x: np.tanh(1e7 * (x - 0.4)), 0.0, 1.0)
    assert_roots(result, [0.4])
    assert result.discontinuities == []


# ----------------------------------------------------------------- domains


def test_domain_gap_sqrt_one_minus_x_squared():
    result = scan(lambda x: np.sqrt(1.0 - x**2), -2.0, 2.0)
    # roots at the domain edges x = +/-1, where sqrt(1 - x^2) = 0 (common practice)
    assert_roots(result, [-1.0, 1.0])
    assert all(r.confirmed.startswith("domain edge") for r in result.roots)
    assert result.gaps == [(-2.0, -1.0), (1.0, 2.0)]
    assert result.poles == []


def test_natural_log_on_a_range_reaching_below_zero():
    result = scan(np.log, -1.0, 3.0)
    assert_roots(result, [1.0])  # ln(1) = 0 (common practice)
    assert len(result.gaps) == 1
    start, end = result.gaps[0]
    assert start == -1.0 and end == pytest.approx(0.0, abs=1e-15)
    assert result.poles == pytest.approx([0.0], abs=1e-15)  # ln x -> -inf at 0+


def test_root_at_a_domain_edge_sqrt_x():
    # sqrt(x) = 0 at x = 0, the edge of its domain: reported at the edge
    result = scan(np.sqrt, -1.0, 1.0)
    assert_roots(result, [0.0], abs_=1e-15)
    assert result.gaps == [(-1.0, 0.0)]


def test_arcsin_domain_plain_edges():
    result = scan(np.arcsin, -2.0, 2.0)
    assert_roots(result, [0.0], abs_=1e-15)  # arcsin(0) = 0 (common practice)
    assert result.gaps == [(-2.0, -1.0), (1.0, 2.0)]
    assert result.poles == []  # arcsin stays finite (+/- pi/2) at its edges


def test_f_that_raises_is_undefined_there_not_an_error():
    def f(x):
        return np.array([math.sqrt(v) - 0.5 for v in np.atleast_1d(x)])

    result = scan(f, -1.0, 1.0)
    assert_roots(result, [0.25])
    assert result.gaps == [(-1.0, 0.0)]


def test_complex_results_count_as_undefined():
    result = scan(lambda x: np.emath.sqrt(x) - 0.5, -1.0, 1.0)
    assert_roots(result, [0.25])
    assert result.gaps[0][0] == -1.0 and result.gaps[0][1] == pytest.approx(0.0, abs=1e-15)


def test_undefined_everywhere():
    result = scan(lambda x: np.full_like(x, np.nan), 0.0, 1.0)
    assert result.roots == [] and result.gaps == [(0.0, 1.0)]


# ----------------------------------------------------------------- evaluation faults


def test_faults_are_results_and_no_numpy_warning_leaks():
    cases = [
        (lambda x: np.exp(1000 * x) - 2.0, -1.0, 1.0, [math.log(2) / 1000]),  # overflow
        (lambda x: 1e-300 * (x - 0.3), 0.0, 1.0, [0.3]),  # products of neighbours underflow
        (lambda x: 1e308 * (x - 0.3), 0.0, 1.0, [0.3]),
        (lambda x: x / x - 1.0 + (x - 0.25), -1.0, 1.0, [0.25]),  # 0/0 at x = 0
        (lambda x: np.power(x, 0.5) - 0.5, -1.0, 1.0, [0.25]),  # NaN for negative x
    ]
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # any warning reaching the caller fails the test
        for f, a, b, expected in cases:
            result = scan(f, a, b)
            assert_roots(result, expected, rel=1e-12)
            assert all(r.multiplicity == 1 for r in result.roots)


@pytest.mark.parametrize("bad", [None, "text", [1.0, 2.0]])
def test_f_returning_garbage_is_undefined(bad):
    result = scan(lambda x: bad, 0.0, 1.0)
    assert result.roots == [] and result.gaps == [(0.0, 1.0)]


def test_f_identically_zero_is_reported_not_counted():
    result = scan(lambda x: 0.0 * x, 0.0, 1.0)
    assert result.roots == [] and result.poles == []
    assert len(result.warnings) == 1 and "exactly zero" in result.warnings[0]


def test_range_a_few_ulps_wide():
    result = scan(lambda x: x - 1.0, 1.0 - 1e-15, 1.0 + 1e-15)
    assert xs(result) == [1.0]
    assert result.samples < 100  # not thousands of samples on a handful of floats


# ----------------------------------------------------------------- the Chebyshev locator alone


def test_chebyshev_proxy_locates_bessel_zeros_on_its_own():
    zeros = scipy.special.jn_zeros(0, 12)  # scipy.special.jn_zeros reference
    found = chebyshev_roots(lambda x: scipy.special.jv(0, x), 0.5, 38.0)
    assert found.skipped == () and found.undefined == ()
    assert np.allclose(found.roots, zeros[zeros < 38.0], rtol=1e-11)


def test_chebyshev_proxy_skips_eigenproblems_only_where_no_zero_can_be_near():
    # a piece is skipped when |c0| > 1.002^n sum|ck|; numpy.polynomial.chebyshev.chebroots
    # (the reference) must then find no zero with |Re| <= 1 + 1e-9 and |Im| <= 1e-6
    from numpy.polynomial import chebyshev as cheb

    from solvers.scan.crosscheck import _zeros

    rng = np.random.default_rng(3)
    skipped = 0
    for _ in range(400):
        n = int(rng.integers(3, 40))
        c = rng.normal(size=n + 1) * 0.7 ** np.arange(n + 1)
        c[0] = rng.choice([-1, 1]) * rng.uniform(0.5, 1.5) * np.sum(np.abs(c[1:]))
        ours = _zeros([c])[0]
        ref = cheb.chebroots(c)
        near = ref[(np.abs(ref.real) <= 1 + 1e-9) & (np.abs(ref.imag) <= 1e-6)]
        if len(ours) == 0:
            skipped += 1
            assert len(near) == 0
        else:
            assert np.allclose(np.sort_complex(ours), np.sort_complex(ref), atol=1e-8)
    assert 50 < skipped < 400  # both branches exercised
    # no zero at all: x^2 + 1 (common practice)
    found = chebyshev_roots(lambda x: x**2 + 1.0, -3.0, 3.0)
    assert found.roots == () and found.near_real == () and len(found.pieces) > 0


def test_chebyshev_proxy_skips_poles_and_gaps():
    found = chebyshev_roots(np.tan, 0.0, 10.0)
    # zeros of tan at n pi (common practice); pieces holding the poles are given up
    assert np.allclose(found.roots, [0.0, math.pi, 2 * math.pi, 3 * math.pi], atol=1e-11)
    for n in range(3):
        pole = math.pi / 2 + n * math.pi
        assert any(u <= pole <= v for u, v in found.skipped)
        assert not any(p.a <= pole <= p.b for p in found.pieces)
    gap = chebyshev_roots(lambda x: np.sqrt(1.0 - x**2) - 0.5, -2.0, 2.0)
    assert any(u <= -1.5 and v >= -1.5 for u, v in gap.undefined)
    # sqrt(1 - x^2) = 1/2 at x = +/- sqrt(3)/2 (common practice)
    assert np.allclose(gap.roots, [-math.sqrt(3) / 2, math.sqrt(3) / 2], rtol=1e-10)


# ----------------------------------------------------------------- contract of the result


def test_result_record():
    result = scan(lambda x: (x - 1) * (x - 2) * (x + 0.5), -1.0, 3.0)
    assert isinstance(result, Scan) and all(isinstance(r, Root) for r in result.roots)
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.a = 5.0  # type: ignore[misc]
    assert xs(result) == sorted(xs(result))
    for r in result.roots:
        assert r.residual == (r.x - 1) * (r.x - 2) * (r.x + 0.5)  # residual is f(root)
    assert result.a == -1.0 and result.b == 3.0
    assert result.samples >= DEFAULT_SAMPLES


def test_root_record_fields_and_brent_run_built_on_first_read():
    calls = {"f": 0}

    def f(x):
        calls["f"] += 1
        return (x - 1.2345678) * (x - 2.1234567) * (x + 0.4567891)

    result = scan(f, -1.0, 3.0, cross_check=False)
    assert [fl.name for fl in dataclasses.fields(Root)] == [
        "x", "residual", "multiplicity", "confirmed", "located_by", "bracket", "run"]
    root = result.roots[0]
    with pytest.raises(dataclasses.FrozenInstanceError):
        root.run = None  # type: ignore[misc]
    before = calls["f"]
    run = root.run  # Brent runs now, on first read (it evaluates f)
    assert calls["f"] > before
    assert run is not None and run.method == "brent" and run.converged
    assert run.steps[0].x == root.bracket[0] and run.steps[1].x == root.bracket[1]
    after = calls["f"]
    assert root.run is run and calls["f"] == after  # built once, then kept
    assert run.root == pytest.approx(-0.4567891, rel=4e-15)  # root of the product
    assert Root(1.0, 0.0).run is None  # the field's default


def test_all_brackets_refined_at_once_agree_with_scipy_brentq():
    # 20-term sum of sinusoids (invented coefficients): every root from the vectorised
    # refinement matches scipy.optimize.brentq on the same sign change to rtol 4 eps
    rng = np.random.default_rng(7)
    amp, om, ph = rng.uniform(0.2, 1.0, 20), rng.uniform(0.05, 2.0, 20), rng.uniform(0, 6, 20)

    def f(x):
        x = np.asarray(x, dtype=float)
        return (amp * np.sin(np.multiply.outer(x, om) + ph)).sum(axis=-1)

    result = scan(f, 0.0, 300.0, samples=20001, cross_check=False)
    grid = np.linspace(0.0, 300.0, 200001)
    y = f(grid)
    k = np.flatnonzero(np.signbit(y[:-1]) != np.signbit(y[1:]))
    eps = np.finfo(float).eps
    ref = [scipy.optimize.brentq(f, grid[i], grid[i + 1], xtol=1e-3 * eps * 300.0,
                                 rtol=4 * eps) for i in k]  # scipy.optimize reference
    assert len(result.roots) == len(ref) > 50
    for r, want in zip(result.roots, ref, strict=True):
        assert r.multiplicity == 1
        assert abs(r.x - want) <= 2 * (1e-3 * eps * 300.0 + 4 * eps * abs(want))


def test_cross_check_off_reports_sampling_only():
    result = scan(np.sin, 1.0, 10.0, cross_check=False)
    assert_roots(result, [math.pi, 2 * math.pi, 3 * math.pi])
    assert all(r.located_by == ("sampling",) for r in result.roots)
    assert result.cross_checked == [] and result.chebyshev_roots == []


def test_cross_check_covers_smooth_parts_only():
    result = scan(np.tan, 0.0, 10.0)
    assert result.cross_checked, "the proxy should run away from the poles"
    for u, v in result.cross_checked:
        assert not any(u <= p <= v for p in result.poles)


@pytest.mark.parametrize(
    ("a", "b", "samples"),
    [(1.0, 0.0, None), (0.0, math.inf, None), (0.0, 1.0, 2), (0.0, 1.0, 2.5), ("x", 1.0, None)],
)
def test_bad_range_or_samples_is_a_one_line_value_error(a, b, samples):
    with pytest.raises(ValueError) as info:
        scan(np.sin, a, b, samples=samples)
    assert "\n" not in str(info.value)


# ----------------------------------------------------------------- progress, cancel, memory


def test_progress_is_reported_between_chunks_and_ends_at_one():
    seen: list[float] = []
    scan(np.sin, 0.0, 100.0, samples=5 * CHUNK, progress=seen.append)
    assert len(seen) >= 5
    assert seen == sorted(seen)
    assert seen[-1] == 1.0 and all(0.0 <= s <= 1.0 for s in seen)


def test_cancel_during_sampling_raises():
    polls = []

    def cancel():
        polls.append(1)
        return len(polls) > 2

    with pytest.raises(ScanCancelled):
        scan(np.sin, 0.0, 100.0, samples=10 * CHUNK, cancel=cancel)
    assert len(polls) == 3  # stopped at the first True


def test_cancel_during_refinement_raises():
    state = {"sampled": False}

    def progress(fraction):
        state["sampled"] = fraction >= 0.8

    def cancel():
        return state["sampled"]

    with pytest.raises(ScanCancelled):
        scan(np.sin, 0.0, 100.0, progress=progress, cancel=cancel)


def test_never_cancelled_scan_completes():
    result = scan(np.sin, 0.5, 10.0, cancel=lambda: False)
    assert len(result.roots) == 3


def test_ten_million_samples_in_bounded_memory():
    # functional bound only (generous): chunks keep memory far below full 10^7 arrays
    tracemalloc.start()
    try:
        result = scan(np.sin, 0.0, 100.0, samples=10**7, cross_check=False)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert result.samples == 10**7
    assert len(result.roots) == 32  # n pi for n = 0..31 in [0, 100] (common practice)
    assert peak < 200e6
