"""solvers.scan, derivative cross-check: f' sampled with f instead of the Chebyshev proxy.

What it must still find (close pairs, touches, aliased oscillations) and what it must still
refuse (a touch that stops short of zero), plus the choice of check and its one-line errors.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from test_scan_battery import N_CASES, SEED, _make_case, _score

from app.documents.words import scan_warnings
from solvers import parse_equation
from solvers.scan import scan


def complex_step(f):
    """f' by the complex step, Im f(x + i t) / t with t = 1e-200: exact to rounding for
    analytic f (W. Squire and G. Trapp, SIAM Review 40 (1998) 110-112)."""

    def fprime(x):
        x = np.asarray(x, dtype=float)
        with np.errstate(all="ignore"):
            return np.imag(f(x + 1e-200j)) / 1e-200

    return fprime


def test_default_with_fprime_is_the_derivative_check_and_finds_what_sampling_hides():
    # invented: a double root at 1.3 and a pair 1e-7 apart at 2.2 (roots of the factored
    # form, closed form); the plain sample-and-bracket approach misses all but one
    eq = parse_equation("(x - 1.3)^2*(x - 2.2)*(x - 2.2000001)*exp(-x/4)")
    result = scan(eq.f, 0.0, 4.0, fprime=eq.fprime)
    assert result.check == "derivative"
    assert result.cross_checked == [] and result.chebyshev_roots == []
    got = [(r.x, r.multiplicity) for r in result.roots]
    assert len(got) == 3
    for (x, m), (want, mult) in zip(got, [(1.3, 2), (2.2, 1), (2.2000001, 1)], strict=True):
        assert x == pytest.approx(want, rel=1e-9) and m == mult


@pytest.mark.parametrize("offset", [0.0, 0.3, 0.77])
def test_close_pair_between_two_samples_is_found(offset):
    # (x - c)(x - c - 1e-6): both roots inside one sample spacing (4e-3 / 2000 = 2e-3),
    # f of one sign at every sample; roots by construction (closed form)
    h = 4.0 / 2000
    c = 1.0 + (offset + 0.1) * h

    def f(x):
        return (x - c) * (x - c - 1e-6)

    result = scan(f, 0.0, 4.0, fprime=lambda x: 2 * x - 2 * c - 1e-6, cross_check="derivative")
    assert [r.x for r in result.roots] == pytest.approx([c, c + 1e-6], rel=1e-12)


def test_touch_and_near_miss_with_fprime():
    c = 2.00031
    touch = scan(lambda x: (x - c) ** 2, 0.0, 4.0, fprime=lambda x: 2 * (x - c))
    (root,) = touch.roots
    assert root.x == pytest.approx(c, rel=1e-12) and root.multiplicity == 2
    # |f| dips to 1e-20 at c: no root there (a touch that stops short is not one)
    miss = scan(lambda x: (x - c) ** 2 + 1e-20, 0.0, 4.0, fprime=lambda x: 2 * (x - c))
    assert miss.roots == []


def test_aliased_oscillation_is_resampled_from_fprime():
    # sin(1e4 x) on [0, 1]: zeros n pi / 1e4, n = 0..3183 (common practice; numpy.pi). The
    # default grid has 0.8 samples per period; f' contradicts f's differences there
    result = scan(lambda x: np.sin(1e4 * x), 0.0, 1.0, fprime=lambda x: 1e4 * np.cos(1e4 * x))
    expected = np.arange(0, 3184) * math.pi / 1e4
    assert result.check == "derivative"
    assert len(result.roots) == len(expected)
    assert np.allclose([r.x for r in result.roots], expected, rtol=1e-12, atol=1e-15)


def test_troughs_proved_root_free_cost_no_search():
    # 1.001 + cos x on [0, 100]: 16 troughs 1e-3 above zero, none a root (common practice).
    # At the default spacing (0.05) many troughs dip more than 10 % between samples, and
    # sampling alone searches them (golden section until a convex floor proves each, then
    # a noise check); the tangent bound proves each from f and f' at the samples, so the
    # only f calls left are the sampling and the range-end checks
    calls = []

    def f(x):
        calls.append(np.size(x))
        return 1.001 + np.cos(x)

    result = scan(f, 0.0, 100.0, fprime=lambda x: -np.sin(x))
    assert result.roots == [] and result.poles == [] and scan_warnings(result) == []
    proved = len(calls)
    calls.clear()
    assert scan(f, 0.0, 100.0, cross_check=False).roots == []
    assert proved <= 8 < len(calls)


def test_deep_check_with_fprime_runs_the_chebyshev_proxy():
    result = scan(np.sin, 1.0, 10.0, fprime=np.cos, cross_check="deep")
    assert result.check == "chebyshev" and result.cross_checked
    assert [r.x for r in result.roots] == pytest.approx([math.pi, 2 * math.pi, 3 * math.pi],
                                                        rel=1e-15)
    assert all(r.located_by == ("sampling", "chebyshev") for r in result.roots)
    assert scan(np.sin, 1.0, 10.0).check == "chebyshev"  # no f': the proxy by default
    assert scan(np.sin, 1.0, 10.0, cross_check=False).check == "off"


@pytest.mark.parametrize(("kwargs", "words"), [
    ({"cross_check": "derivative"}, "needs fprime"),
    ({"cross_check": "sometimes"}, "cross_check must be"),
    ({"cross_check": None}, "cross_check must be"),
])
def test_bad_cross_check_values_are_one_line_errors(kwargs, words):
    with pytest.raises(ValueError, match=words) as info:
        scan(np.sin, 1.0, 10.0, **kwargs)
    assert "\n" not in str(info.value)


def test_battery_with_the_derivative_check():
    # the generated battery of test_scan_battery (roots, poles, jumps known by construction),
    # f' by the complex step: no miss, no false root, no wrong multiplicity, pole or jump
    rng = np.random.default_rng(SEED)
    bad = []
    for k in range(N_CASES):
        case = _make_case(rng, k)
        result = scan(case["f"], case["a"], case["b"], fprime=complex_step(case["f"]))
        assert result.check == "derivative"
        score = _score(case, result)
        if any(score.values()):
            bad.append((case["kind"], case["a"], case["b"], score))
    assert bad == []


def test_what_64x_finer_sampling_cannot_resolve_is_rescanned():
    # sin(1/x) on [1e-3, 1]: zeros 1/(n pi), n = 1..318 (common practice; numpy.pi). Near
    # 1e-3 they are 3e-6 apart, beyond 64x the default density: f' flags those windows, the
    # stretch is re-scanned with 64x the samples and says so
    result = scan(lambda x: np.sin(1.0 / x), 1e-3, 1.0, fprime=lambda x: -np.cos(1.0 / x) / x**2)
    expected = sorted(1.0 / (n * math.pi) for n in range(1, 319))
    assert len(result.roots) == len(expected)
    assert np.allclose([r.x for r in result.roots], expected, rtol=1e-12)
    assert any("re-scanned" in w and "f' contradicts" in w for w in scan_warnings(result))


def test_poles_are_not_taken_for_an_unresolved_oscillation():
    # x tan x = 0.9 on [0, 12] (plane-wall conduction eigenvalues, Bi = 0.9; an invented
    # Biot number). Across each pole of tan, f' contradicts f's differences as it must:
    # that is the pole, not an oscillation, so no warning and no re-scan. References:
    # scipy.optimize.brentq on (k pi, k pi + pi / 2), one root each (numpy.pi)
    from scipy.optimize import brentq

    eq = parse_equation("x*tan(x) = 0.9")
    result = scan(eq.f, 0.0, 12.0, fprime=eq.fprime)
    assert result.check == "derivative" and scan_warnings(result) == []
    poles = [(2 * k + 1) * math.pi / 2 for k in range(4)]
    assert result.poles == pytest.approx(poles, rel=1e-12)
    refs = [brentq(eq.f, k * math.pi + 1e-9, k * math.pi + math.pi / 2 - 1e-9, xtol=1e-15)
            for k in range(4)]
    assert [r.x for r in result.roots] == pytest.approx(refs, rel=1e-12)


def _typed_out(roots) -> str:
    """The polynomial with these roots, its coefficients typed out in full (numpy.poly)."""
    coefficients = np.poly(roots)
    degree = len(coefficients) - 1
    return " + ".join(f"({float(c)!r})*x^{degree - i}" for i, c in enumerate(coefficients))


def test_a_double_root_within_rounding_of_a_sample_is_found_as_with_the_other_checks():
    # Found by an outside check against numpy.roots: (x - 2.31)^2 typed out,
    # x^2 - 4.62x + 5.3361, on [-3, 3] at 2001 samples (2.31 is a sample). f there is
    # 8.9e-16 and f' 8.9e-16, f is -8.9e-16 beside it; the float coefficients' exact
    # discriminant is +7.2e-16 (mpmath), so there are two real roots 1.3e-8 either side
    # of 2.31, a double root to rounding (numpy.roots: 2.31 +- 3.2e-8 i). The tangent
    # bound "proved" the dip root-free from those rounding values, and the derivative
    # check reported no root while the Chebyshev check and sampling alone report the
    # cluster. The bound must now clear f's rounding noise (64 eps of the typical |f|).
    equation = parse_equation(_typed_out([2.31, 2.31]))
    for mode in ("derivative", "chebyshev", "off"):
        result = scan(equation.f, -3.0, 3.0, fprime=equation.fprime, cross_check=mode)
        assert [r.multiplicity for r in result.roots] == [2], mode
        assert abs(result.roots[0].x - 2.31) <= 1e-7, mode


def test_a_double_root_on_a_sample_where_f_prime_is_zero_is_found():
    # (x - 0.51)(x - 2.01)^2 typed out (numpy.poly): at the sample 2.01 f' is exactly 0.0,
    # so the extremum belonged to neither pair of samples and went unchecked.
    # numpy.roots: 0.51 and the double 2.01.
    equation = parse_equation(_typed_out([0.51, 2.01, 2.01]))
    result = scan(equation.f, -3.0, 3.0, fprime=equation.fprime)
    assert [r.multiplicity for r in result.roots] == [1, 2]
    assert abs(result.roots[0].x - 0.51) <= 1e-12
    assert abs(result.roots[1].x - 2.01) <= 1e-7


def test_double_roots_on_the_grid_are_found_by_every_check():
    # 40 seeded polynomials, typed out, with a double root on a sample of the default grid
    # of [-3, 3] and up to two simple roots (numpy.poly builds them; the roots are the
    # reference): every check finds each root once, the double one with multiplicity 2.
    rng = np.random.default_rng(2)
    grid = np.linspace(-3.0, 3.0, 2001)
    for _ in range(40):
        double = float(np.round(grid[rng.integers(100, 1900)], 3))
        simple = [float(v) for v in np.round(rng.uniform(-2.8, 2.8, rng.integers(0, 3)), 2)
                  if abs(v - double) > 0.2]
        if len(simple) == 2 and abs(simple[0] - simple[1]) < 0.2:
            simple = simple[:1]
        equation = parse_equation(_typed_out([double, double, *simple]))
        expected = sorted([(double, 2), *((s, 1) for s in simple)])
        for mode in ("derivative", "chebyshev"):
            result = scan(equation.f, -3.0, 3.0, fprime=equation.fprime, cross_check=mode)
            found = [(r.x, r.multiplicity) for r in result.roots]
            assert len(found) == len(expected), (mode, double, simple, found)
            for (x, m), (want, m_want) in zip(found, expected, strict=True):
                assert m == m_want and abs(x - want) <= 1e-7, (mode, double, simple, found)


@pytest.mark.parametrize("reach", [1e-5, 1e-6, 1e-7])
def test_a_run_of_zeros_from_cancellation_is_one_double_root_cluster(reach):
    # 1 - cos x = 2 sin^2(x/2) (closed form): a double root at 0. In doubles cos x rounds
    # to 1 for |x| below about 1.05e-8 (IEEE 754 rounding), and beyond it 1 - cos x is a
    # staircase of multiples of 2^-53: a run of exact zeros the sampling met, with f'
    # contradicting f's steps. The scan said "0 roots" (a zero-run warning, and at the
    # narrower ranges "fast oscillation" after millions of samples)
    equation = parse_equation("1 - cos(x)")
    for mode in ("derivative", "chebyshev"):
        result = scan(equation.f, -reach, reach, fprime=equation.fprime, cross_check=mode)
        codes = [d.code for d in result.details]
        assert len(result.roots) == 1 and result.roots[0].multiplicity == 2, (mode, codes)
        assert not {"zero_run", "fast_oscillation"} & set(codes), (mode, codes)
        (band,) = result.noise_bands
        # the stretch where x^2/2 is within a few quanta of 2^-53 holds the root 0
        assert band[0] < 0.0 < band[1] and band[1] - band[0] < 1e-7
        assert band[0] <= result.roots[0].x <= band[1]
        assert result.samples < 200_000  # no re-scan at 64x over the whole staircase


@pytest.mark.parametrize(("a", "b"), [(0.0, 1000.0), (-1000.0, 2000.0)])
def test_a_dead_band_sampled_on_a_coarse_grid_stays_a_run_not_a_root(a, b):
    # max(0, x - 600) + min(0, x - 400), a dead band: exactly 0 on [400, 600] (closed form: every
    # point there a root, no single root at 500). Sampled on a grid of half-integers, f
    # beside the stretch is 12.5, 25, ... exact multiples of 0.5, few bits as rounding
    # has, but each value its own: no staircase of rounding, and the stretch stays a run
    equation = parse_equation("max(0, x - 600) + min(0, x - 400)")
    for mode in ("derivative", "chebyshev"):
        result = scan(equation.f, a, b, fprime=equation.fprime, cross_check=mode)
        codes = [d.code for d in result.details]
        assert "zero_run" in codes, (mode, codes)
        assert not any(400.0 <= r.x <= 600.0 for r in result.roots), (mode, result.roots)
        assert not result.noise_bands, (mode, result.noise_bands)


@pytest.mark.parametrize("levels", [64.0, 1024.0])
def test_a_step_function_oscillating_faster_than_the_samples_is_still_said(levels):
    # round(L sin(1/x))/L on [1e-3, 1]: sin(1/x) has 318 roots there (closed form: 1/(k pi)
    # for k = 1..318) and oscillates faster than any sampling near 1e-3. Its values are
    # few-bit multiples of 1/L, as a rounding staircase's are, but they jump by tens of
    # quanta between samples: the scan must still say f oscillates too fast to resolve
    def f(x):
        return np.round(np.sin(1.0 / x) * levels) / levels

    result = scan(f, 1e-3, 1.0)
    assert "fast_oscillation" in [d.code for d in result.details]


def test_a_run_of_underflow_stays_a_run_and_no_root():
    # exp(-x) - exp(-2x) has its only root at 0 (closed form); on [700, 800] both terms
    # underflow to 0.0 from about x = 745 (IEEE 754 double range): a run of zeros that
    # no rounding of cancelling terms made, so no root
    equation = parse_equation("exp(-x) - exp(-2*x)")
    result = scan(equation.f, 700.0, 800.0, fprime=equation.fprime)
    assert not result.roots
    assert [d.code for d in result.details].count("zero_run") == 1


@pytest.mark.parametrize(("text", "a", "b", "run"), [
    ("1 - cos(x)", -1e-9, 1e-9, (-1e-9, 1e-9)),
    ("exp(x) - 1", -1e-300, 1e-300, (-1e-300, 1e-300)),
    ("min(x, 1) - 1", 0.0, 2.0, (0.999, 2.0)),
])
def test_a_run_of_zeros_is_one_warning_not_an_oscillation(text, a, b, run):
    # f rounds to 0.0 on the whole stretch (cos x = 1 and exp(x) = 1 exactly in doubles
    # for |x| below 1e-8 and 1e-16: IEEE 754 rounding; min(x, 1) - 1 is 0 for x >= 1, closed
    # form) while f' is not 0 there: f' could only disagree with f's differences, and the
    # derivative check called the stretch a fast oscillation and reported the zero run twice.
    # Found by an outside check against the Chebyshev check, which reports the one run.
    equation = parse_equation(text)
    for mode in ("derivative", "chebyshev"):
        result = scan(equation.f, a, b, fprime=equation.fprime, cross_check=mode)
        codes = [d.code for d in result.details]
        assert codes.count("zero_run") == 1 and "fast_oscillation" not in codes, (mode, codes)
        (detail,) = [d for d in result.details if d.code == "zero_run"]
        assert detail.values[:2] == pytest.approx(run, rel=1e-12, abs=1e-12 * abs(b - a))
