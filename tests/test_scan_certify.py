"""solvers.scan.crosscheck: pieces whose proxy provably has exactly the known zeros skip the
eigenvalue work; anything else (a missed root, a hidden pair, a near touch) still goes to
the eigenvalues, so the proxy stays an independent second locator."""

from __future__ import annotations

import math

import numpy as np
import pytest

from solvers.scan.crosscheck import _bernstein, chebyshev_roots


def test_bernstein_matrix_reproduces_the_chebyshev_series():
    # numpy.polynomial.chebyshev.chebval as the reference; Bernstein form by its definition
    rng = np.random.default_rng(7)
    for n in (3, 12, 21):
        c = rng.standard_normal(n + 1)
        b = _bernstein(n)[0] @ c
        t = np.linspace(-1.0, 1.0, 9)
        s = 0.5 * (t + 1.0)
        value = sum(b[j] * math.comb(n, j) * s**j * (1 - s) ** (n - j) for j in range(n + 1))
        np.testing.assert_allclose(value, np.polynomial.chebyshev.chebval(t, c), atol=1e-9)


def test_known_roots_give_the_same_answer_as_the_eigenvalues():
    # sin x on [1, 10]: zeros pi, 2 pi, 3 pi (numpy.pi)
    known = np.array([math.pi, 2 * math.pi, 3 * math.pi])
    plain = chebyshev_roots(np.sin, 1.0, 10.0)
    fast = chebyshev_roots(np.sin, 1.0, 10.0, known=known)
    assert plain.roots == pytest.approx(list(known), rel=1e-12)
    assert fast.roots == pytest.approx(list(known), rel=1e-12)
    assert [(p.a, p.b) for p in fast.pieces] == [(p.a, p.b) for p in plain.pieces]


def test_a_root_the_sampling_missed_is_still_located():
    # only pi and 3 pi "known": the piece holding 2 pi has one more sign variation than known
    # zeros, so it goes to the eigenvalues and 2 pi is reported
    fast = chebyshev_roots(np.sin, 1.0, 10.0, known=np.array([math.pi, 3 * math.pi]))
    assert fast.roots == pytest.approx([math.pi, 2 * math.pi, 3 * math.pi], rel=1e-12)


def test_hidden_pair_and_near_touch_are_still_located():
    # (x - 2)(x - 2.001)(x - 5): a close pair besides the known root 5 (closed form)
    pair = chebyshev_roots(lambda x: (x - 2) * (x - 2.001) * (x - 5), 0.1, 7.3,
                           known=np.array([5.0]))
    assert pair.roots == pytest.approx([2.0, 2.001, 5.0], rel=1e-12)
    # ((x - 3)^2 + 1e-12)(x - 5): zeros 3 +/- 1e-6 i, a near touch beside the known root
    near = chebyshev_roots(lambda x: ((x - 3) ** 2 + 1e-12) * (x - 5), 0.1, 7.3,
                           known=np.array([5.0]))
    assert any(abs(z - (3 + 1e-6j)) < 1e-9 or abs(z - (3 - 1e-6j)) < 1e-9 for z in near.ring)
