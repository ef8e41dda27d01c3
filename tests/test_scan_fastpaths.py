"""The scan's shortcuts skip work only where it provably finds nothing, and the full
search still runs where it is needed.

Each shortcut has two sides: the cheap case it certifies (the finding stays as the full
search would leave it) and the case that must fall through to the full search (a pole, a
multiple root, a hidden pair), so a shortcut that swallowed it fails here. Reference
values are closed forms (common practice) or scipy's ``brentq`` as named beside each.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from solvers import parse_equation
from solvers.scan import scan

# -------------------------------------------------- bounded peaks versus poles (no sign change)

_POLES = {
    # closed forms, each with a pole at c and no sign change of f across it
    "log": lambda c: (lambda x: np.log(np.abs(x - c))),
    "inverse square": lambda c: (lambda x: 1.0 / (x - c) ** 2),
    "inverse abs": lambda c: (lambda x: 1.0 / np.abs(x - c)),
    "inverse square root": lambda c: (lambda x: 1.0 / np.sqrt(np.abs(x - c))),
    "on an offset": lambda c: (lambda x: 1.0 / (x - c) ** 2 + 1e4),
    "riding on an oscillation": lambda c: (lambda x: np.sin(40 * x) + 1e-3 / np.abs(x - c)),
}


@pytest.mark.parametrize("family", sorted(_POLES))
def test_a_pole_anywhere_between_samples_is_still_searched_to_the_end(family) -> None:
    # the resolved-peak shortcut must never stop at a pole, wherever it falls between the
    # samples (40 positions at random, so also just beside the golden-section points)
    rng = np.random.default_rng(20261202)
    for c in rng.uniform(0.1, 0.9, 40):
        result = scan(_POLES[family](float(c)), 0.0, 1.0)
        assert any(abs(p - c) <= 1e-9 for p in result.poles), (family, c, result.poles)


def test_the_peaks_of_a_sampled_oscillation_are_bounded_not_poles() -> None:
    # sin(x^2) on [0, 30] oscillates with 7 samples per period at the far end, so its sampled
    # peaks look sharp; |sin| <= 1 (closed form): no pole, and every zero sqrt(k pi) is there
    eq = parse_equation("sin(x^2)")
    zeros = np.sqrt(np.pi * np.arange(0, int(900 / np.pi) + 1))
    for kw in ({}, {"fprime": eq.fprime}, {"cross_check": False}):
        result = scan(eq.f, 0.0, 30.0, **kw)
        assert result.poles == [] and result.discontinuities == []
        assert len(result.roots) == len(zeros)
        assert np.max(np.abs(np.array([r.x for r in result.roots]) - zeros)) <= 1e-13 * 30


# ------------------------------------------------------------------ the roots' records


def test_a_root_built_in_bulk_equals_the_one_its_constructor_builds() -> None:
    from solvers.scan.records import Root, _new_root

    built = _new_root(1.5, -2e-16, 3, ("anderson_bjorck",), ("sampling",), (1.0, 2.0), None)
    plain = Root(x=1.5, residual=-2e-16, multiplicity=3, confirmed=("anderson_bjorck",),
                 located_by=("sampling",), bracket=(1.0, 2.0), run=None)
    assert built == plain and hash(built) == hash(plain) and repr(built) == repr(plain)
    assert vars(built) == vars(plain)
    lazy = _new_root(1.5, 0.0, 1, (), ("sampling",), None, lambda: "run built")
    assert lazy.run == "run built"
    with pytest.raises(AttributeError):  # still frozen
        built.x = 2.0  # type: ignore[misc]


def test_roots_built_in_one_loop_equal_the_ones_the_constructor_builds() -> None:
    # the multiplicity of a root found at a domain edge is reported as 1 (records.py's rule)
    from solvers.scan.records import Root, _Found, _new_roots

    found = [_Found(1.5, True, ("anderson_bjorck",), (1.0, 2.0), None),
             _Found(3.0, False, ("domain_edge_zero",), None, None, ("sampling", "chebyshev"))]
    built = _new_roots(found, [1.5, 3.0], [-2e-16, 0.0], [3, 2])
    plain = [Root(x=1.5, residual=-2e-16, multiplicity=3, confirmed=("anderson_bjorck",),
                  located_by=("sampling",), bracket=(1.0, 2.0), run=None),
             Root(x=3.0, residual=0.0, multiplicity=1, confirmed=("domain_edge_zero",),
                  located_by=("sampling", "chebyshev"), bracket=None, run=None)]
    assert built == plain and [vars(r) for r in built] == [vars(r) for r in plain]
    with pytest.raises(AttributeError):  # still frozen
        built[0].x = 2.0  # type: ignore[misc]


# ------------------------------------------- few brackets in Python, many brackets in numpy

_BRACKET_FUNCTIONS = [
    np.sin,
    lambda x: np.cos(x) * np.cosh(x) + 1.0,
    lambda x: (x - 0.3) ** 3,  # a triple root: slow linear phase
    lambda x: 1.0 / (x - 0.3),  # a pole: no convergence to a root
    lambda x: np.where(x < 0.37, -1.0, 1.0),  # a jump
    lambda x: np.sqrt(x - 0.2) - 0.1,  # undefined on part of the bracket
    lambda x: 1e-300 * (x - 0.41),  # tiny values (weights underflow)
    lambda x: x**19 - 1e-5,
    np.tan,
]


@pytest.mark.parametrize("k", range(len(_BRACKET_FUNCTIONS)))
def test_scalar_and_vectorised_bracketing_agree(k, monkeypatch) -> None:
    # the same Anderson-Bjorck iteration on the scalar f (few brackets) and in numpy (many):
    # both converge on the same brackets, each converged one no wider than Brent's stop rule
    # and holding a sign change (or an exact zero); reference: the stop rule itself
    from solvers.scan import kernels
    from solvers.scan.sampling import _Guarded

    eps = float(np.finfo(float).eps)
    with np.errstate(all="ignore"):
        g = _Guarded(_BRACKET_FUNCTIONS[k], None)
        rng = np.random.default_rng(k)
        rows = []
        for _ in range(40):
            a = rng.uniform(-1.0, 0.4)
            xs = np.linspace(a, a + rng.uniform(1e-6, 2.0), 7)
            ys = g(xs)
            rows += [(xs[i], xs[i + 1], ys[i], ys[i + 1]) for i in range(6)
                     if np.isfinite(ys[i]) and np.isfinite(ys[i + 1]) and ys[i] != 0
                     and ys[i + 1] != 0 and (ys[i] < 0) != (ys[i + 1] < 0)]
        br = np.array(rows[:20], dtype=float).reshape(-1, 4)
        assert len(br) >= 1
        monkeypatch.setattr(kernels, "_FEW", 1000)
        each = kernels._bracket_all(g, br, 1e-19)
        monkeypatch.setattr(kernels, "_FEW", -1)
        whole = kernels._bracket_all(g, br, 1e-19)
    assert np.array_equal(each[0], whole[0])
    for done, lo, hi, flo, fhi in (each, whole):
        for i in np.flatnonzero(done):
            assert hi[i] - lo[i] <= 1e-19 + 4 * eps * max(abs(lo[i]), abs(hi[i]))
            assert (lo[i] == hi[i] and flo[i] == 0) or (flo[i] < 0) != (fhi[i] < 0)
        # brackets that did not converge are handed on unchanged, for the classification
        assert np.array_equal(np.column_stack([lo, hi, flo, fhi])[~done], br[~done])


# ------------------------------------------------ the noise look's clean-ramp shortcut


@pytest.mark.parametrize("text, a, b", [
    ("cos(x)*cosh(x) + 1", 0.0, 50.0),  # clean simple roots: the shortcut skips them all
    # Chebyshev T12 written out (numpy.polynomial.chebyshev.cheb2poly): rounding noise
    # near every root, so the noise look must still run and merge each cluster
    ("2048*x^12 - 6144*x^10 + 6912*x^8 - 3584*x^6 + 840*x^4 - 72*x^2 + 1", -1.0, 1.0),
    # (x - 1)^9 multiplied out (binomial theorem): one root cluster in rounding noise
    ("x^9 - 9*x^8 + 36*x^7 - 84*x^6 + 126*x^5 - 126*x^4 + 84*x^3 - 36*x^2 + 9*x - 1",
     0.0, 2.0),
    ("x^3 - 2*x - 5", -3.0, 3.0),
])
def test_clean_ramps_judged_with_the_ladder_change_nothing(text, a, b, monkeypatch) -> None:
    # the clean-ramp test riding on the multiplicity ladder's call of f is the noise look's
    # own first test: with it off (every root examined by the noise look), the scan reports
    # the same roots, multiplicities, noise bands and details
    from solvers.scan import features

    eq = parse_equation(text)
    # (the written-out ninth power with f' takes seconds either way: its noise re-scan)
    for kw in ({},) if "126" in text else ({}, {"fprime": eq.fprime}):
        fast = scan(eq.f, a, b, **kw)
        monkeypatch.setattr(features, "_LOOK_ALL", -1)
        slow = scan(eq.f, a, b, **kw)
        monkeypatch.undo()
        assert [(r.x, r.multiplicity, r.confirmed) for r in fast.roots] == [
            (r.x, r.multiplicity, r.confirmed) for r in slow.roots]
        assert fast.noise_bands == slow.noise_bands
        assert [d.code for d in fast.details] == [d.code for d in slow.details]
    if "6144" in text:  # T12's 12 roots are cos((2k - 1) pi / 24) (closed form)
        want = np.sort(np.cos((2 * np.arange(1, 13) - 1) * np.pi / 24))
        assert np.max(np.abs(np.array([r.x for r in fast.roots]) - want)) <= 1e-12
    if "126" in text:  # the noise look ran: one cluster at 1 of multiplicity 9
        assert fast.noise_bands and [r.multiplicity for r in fast.roots] == [9]
        band = fast.noise_bands[0]
        assert abs(fast.roots[0].x - 1.0) <= 0.5 * (band[1] - band[0])


# ------------------------------------------- the scalar path the refinement calls per value


@pytest.mark.parametrize("text, points, reference", [
    # closed forms through the math module (common practice), and the numpy path of the
    # same compiled equation, which must agree with the float path value for value
    ("cos(x)*cosh(x) + 1", [0.0, 1.875, 7.5, 49.9], lambda x: math.cos(x) * math.cosh(x) + 1),
    ("sqrt(x) - 0.3", [0.09, 4.0, -1.0], lambda x: math.sqrt(x) - 0.3 if x >= 0 else math.nan),
    ("ln(x)", [1.0, 2.5, 0.0, -2.0],
     lambda x: math.log(x) if x > 0 else (-math.inf if x == 0 else math.nan)),
    ("1/(x - 0.5)", [0.25, 0.5, 2.0], lambda x: 1 / (x - 0.5) if x != 0.5 else math.inf),
    ("exp(x) - 1e6", [13.8, 800.0], lambda x: math.exp(x) - 1e6 if x < 709 else math.inf),
    ("2 + 0*x", [1.0, -3.0], lambda x: 2.0),  # no x left: the float path's result is an int
])
def test_the_compiled_float_path_answers_as_the_numpy_path(text, points, reference) -> None:
    # the float path (the math module, tried first) falls back on the numpy path wherever it
    # raises (a domain error) or does not answer a float; each answer is a Python float
    eq = parse_equation(text)
    for x in points:
        value = eq.f(float(x))
        assert value.__class__ is float, (text, x, value)
        vector = float(eq.f(np.array([x]))[0])
        ref = reference(x)
        for got in (value, vector):
            if math.isnan(ref):
                assert math.isnan(got), (text, x, got)
            else:
                assert got == pytest.approx(ref, rel=1e-14, abs=1e-300), (text, x, got, ref)
        # (the math module and numpy's vector loops may differ in the last bit)
        assert math.isnan(value) == math.isnan(vector)


def test_the_guarded_scalar_value_is_total_and_polls_cancel() -> None:
    from solvers.scan.records import ScanCancelled
    from solvers.scan.sampling import _Guarded

    def raising(x):
        if np.any(np.asarray(x) < 0):
            raise ValueError("undefined")  # an f that raises: undefined there, NaN
        return np.sqrt(x)

    cases = [
        (parse_equation("cos(x)*cosh(x) + 1").f, 1.3, math.cos(1.3) * math.cosh(1.3) + 1),
        (np.sin, 0.5, math.sin(0.5)),  # numpy's float64: handed on as a float
        (lambda x: 3, 2.0, 3.0),  # an int: converted like any value
        (lambda x: complex(x, 1.0), 2.0, math.nan),  # complex: undefined
        (lambda x: complex(x, 0.0), 2.0, 2.0),  # ... unless its imaginary part is 0
        (raising, -1.0, math.nan),
        (raising, 4.0, 2.0),
    ]
    for f, x, want in cases:
        g = _Guarded(f, None)
        got = g.fast(x)
        assert isinstance(got, float)
        assert (math.isnan(want) and math.isnan(got)) or got == pytest.approx(want, rel=1e-15)
        same = g.scalar(x)
        assert (math.isnan(got) and math.isnan(same)) or got == same
    asked = []
    g = _Guarded(np.sin, lambda: asked.append(1) or True)
    g._polled = -1e9  # long past the polling interval: the next value asks cancel()
    with pytest.raises(ScanCancelled):
        g.fast(0.5)
    assert asked == [1]


@pytest.mark.parametrize("k", [0, 2, 6, 7])
def test_scalar_bracketing_closes_on_brentq_roots(k) -> None:
    # every converged bracket of the scalar refinement holds the root scipy.optimize.brentq
    # finds on the same sample bracket (functions with one root per bracket), within
    # Brent's stop rule, and holds a sign change
    import scipy.optimize

    from solvers.scan import kernels
    from solvers.scan.sampling import _Guarded

    eps = float(np.finfo(float).eps)
    f = _BRACKET_FUNCTIONS[k]
    g = _Guarded(f, None)
    rng = np.random.default_rng(100 + k)
    rows = []
    for _ in range(30):
        a = rng.uniform(-1.0, 0.4)
        xs = np.linspace(a, a + rng.uniform(1e-3, 0.5), 5)
        ys = f(xs)
        rows += [(xs[i], xs[i + 1], ys[i], ys[i + 1]) for i in range(4)
                 if ys[i] != 0 and ys[i + 1] != 0 and (ys[i] < 0) != (ys[i + 1] < 0)]
    br = np.array(rows[:kernels._FEW], dtype=float).reshape(-1, 4)
    assert len(br) >= 1
    done, lo, hi, flo, fhi = kernels._bracket_all(g, br, 0.0)
    assert done.all()
    for i, row in enumerate(br):
        ref = scipy.optimize.brentq(f, row[0], row[1], xtol=1e-300, rtol=4 * eps, maxiter=2000)
        tol = 4 * eps * max(abs(lo[i]), abs(hi[i]))
        assert hi[i] - lo[i] <= tol
        assert lo[i] - 2 * tol <= ref <= hi[i] + 2 * tol, (k, row, lo[i], hi[i], ref)
        assert (lo[i] == hi[i] and flo[i] == 0) or (flo[i] < 0) != (fhi[i] < 0)


def test_the_typical_size_is_the_median_sampled_magnitude(monkeypatch) -> None:
    # f's typical size (what the noise look compares a noise level with) is taken from the
    # grid only when asked; reference: numpy.median of the finite |f| on the grid (one
    # chunk), and the median of numpy's per-chunk medians (several chunks)
    from solvers.scan import sampling

    f = lambda x: np.where(np.abs(x - 0.3) < 0.01, np.nan, np.sin(7 * x) * np.exp(x))  # noqa: E731
    for n in (2001, 2000):  # odd and even counts of finite values
        cand = sampling._Candidates()
        sampling._sample_grid(sampling._Guarded(f, None), 0.0, 2.0, n, cand, 0, None, (0, 1))
        assert cand.grid is not None and cand.typical == []
        y = f(np.linspace(0.0, 2.0, n))
        assert sampling._typical_size(cand) == pytest.approx(
            float(np.median(np.abs(y[np.isfinite(y)]))), rel=1e-15)
    monkeypatch.setattr(sampling, "CHUNK", 500)
    cand = sampling._Candidates()
    sampling._sample_grid(sampling._Guarded(f, None), 0.0, 2.0, 2001, cand, 0, None, (0, 1))
    assert cand.grid is None and len(cand.typical) == 5
    x = np.linspace(0.0, 2.0, 2001)
    chunks = [np.abs(f(x[max(s - 1, 0): min(s + 500 + 1, 2001)])) for s in range(0, 2001, 500)]
    medians = [float(np.median(c[np.isfinite(c)])) for c in chunks]
    assert sampling._typical_size(cand) == pytest.approx(float(np.median(medians)), rel=1e-15)


# ------------------------------------------- the compiled candidate pass: more than its buffers

def test_a_stretch_with_more_sign_changes_than_the_first_buffers_yields_every_one():
    # the candidate pass stores up to a fixed number per kind at first and asks again with
    # room for all: every sign change between neighbouring samples must come back, as
    # numpy counts them (sign bits of neighbours differ; common practice)
    from solvers.scan.sampling import _CAP, _Candidates, _detect

    x = np.linspace(0.0, 10.0, 20001)
    y = np.sin(200.0 * x + 0.1)
    expected = int(np.count_nonzero(np.signbit(y[:-1]) != np.signbit(y[1:])))
    assert expected > _CAP  # (the case under test: the first buffers overflow)
    found = _Candidates()
    _detect(x, y, 0, len(x), found)
    flips = np.signbit(y[:-1]) != np.signbit(y[1:])
    assert len(found.brackets) == expected
    assert [b[0] for b in found.brackets] == x[:-1][flips].tolist()
    assert [b[1] for b in found.brackets] == x[1:][flips].tolist()
