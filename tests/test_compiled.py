"""The core's compiled loops (solvers.compiled.kernel): IEEE arithmetic in the written
order, numpy's rules for division by zero, and a kernel that still works where numba
cannot keep a cache."""

from __future__ import annotations

import math

import numpy as np

import solvers.compiled as compiled


def _sum_of_products(a, b):
    total = 0.0
    for i in range(len(a)):
        total += a[i] * b[i]
    return total


def _ratio(u, v):
    return u / v


def test_a_kernel_gives_the_bits_of_the_same_python_arithmetic():
    # reference: the same loop run by CPython (IEEE 754 doubles, no fused multiply-add,
    # no reordering): no fast-math in a kernel
    rng = np.random.default_rng(7)
    a, b = rng.standard_normal(1001) * 1e3, rng.standard_normal(1001) * 1e-3
    assert compiled.kernel(_sum_of_products)(a, b) == _sum_of_products(a.tolist(),
                                                                        b.tolist())


def test_division_by_zero_gives_infinity_or_nan_as_numpy_does():
    ratio = compiled.kernel(_ratio)
    with np.errstate(divide="ignore", invalid="ignore"):
        assert ratio(1.0, 0.0) == np.float64(1.0) / np.float64(0.0) == math.inf
        assert math.isnan(ratio(0.0, 0.0))


def test_without_a_writable_cache_a_kernel_is_compiled_in_memory(monkeypatch):
    asked = []

    def refuse(loop):  # what numba raises when no cache folder can be written
        asked.append(loop.__name__)
        raise RuntimeError(f"cannot cache function {loop.__name__!r}: no locator available")

    monkeypatch.setattr(compiled, "_CACHED", refuse)
    loop = compiled.kernel(_sum_of_products)
    assert asked == ["_sum_of_products"]
    assert loop(np.ones(4), np.full(4, 0.5)) == 2.0  # compiled, and right
    assert loop.signatures  # a numba dispatcher that compiled, not the Python function
