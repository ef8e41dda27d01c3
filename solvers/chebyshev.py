"""Chebyshev proxy rootfinder: the scan's independent second locator.

Boyd's method (J. P. Boyd, "Computing zeros on a real interval through Chebyshev
expansion and polynomial rootfinding", SIAM J. Numer. Anal. 40 (2002)): on each
subinterval, interpolate f at Chebyshev points with a degree raised until the
coefficients decay; the zeros of the interpolant are the eigenvalues of the
colleague matrix (``numpy.polynomial.chebyshev.chebroots``); real ones in [-1, 1]
are mapped back to x. A subinterval whose coefficients do not decay by the largest
degree is halved; one with non-finite values is halved too, so the defined parts
next to a gap are still covered, down to a depth limit below which it is skipped
(the function is not smooth there: a pole, a jump, a domain edge).

This module only locates. Confirming a root (residual, multiplicity, Brent) is the
scan's job; see :mod:`solvers.scan`.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.polynomial import chebyshev as C

# Degrees tried on a piece, smallest first (Boyd: keep degrees modest, subdivide instead).
DEGREES: tuple[int, ...] = (8, 16, 32)
# Trailing coefficients below this fraction of the largest count as decayed.
DECAY_TOL = 1e-13
# A root of the proxy counts as real when |imag| <= this (in the piece's [-1, 1] units).
IMAG_TOL = 1e-6


@dataclass(frozen=True)
class ChebyshevPiece:
    """One subinterval [a, b] where the proxy was accepted, and its degree."""

    a: float
    b: float
    degree: int


@dataclass(frozen=True)
class ChebyshevRoots:
    """What the proxy located.

    ``roots``: real zeros of the accepted proxies, sorted, in x units.
    ``near_real``: every zero of the proxies inside the pieces with small imaginary
    part, kept as complex numbers (a double root shows up as a close pair, possibly
    complex); the scan uses them to count clusters.
    ``pieces``: the subintervals where the proxy was accepted (f smooth there).
    ``skipped``: subintervals given up (non-finite values or no coefficient decay).
    """

    roots: tuple[float, ...]
    near_real: tuple[complex, ...]
    pieces: tuple[ChebyshevPiece, ...]
    skipped: tuple[tuple[float, float], ...]


@functools.cache
def _nodes(degree: int) -> tuple[np.ndarray, np.ndarray]:
    """Chebyshev points of the first kind on [-1, 1] and the matrix taking values there to
    Chebyshev coefficients (the interpolant numpy's ``chebinterpolate`` builds)."""
    k = np.arange(degree + 1)
    theta = np.pi * (k + 0.5) / (degree + 1)
    matrix = (2.0 / (degree + 1)) * np.cos(np.outer(k, theta))
    matrix[0] *= 0.5
    return np.cos(theta), matrix


def _proxy(f: Callable[[np.ndarray], np.ndarray], a: float, b: float):
    """(coefficients, degree) when f is resolved on [a, b]; "undefined" when f is NaN/inf
    at every node, "nonfinite" when only at some, None when the coefficients do not decay."""
    half, mid = 0.5 * (b - a), 0.5 * (b + a)
    for degree in DEGREES:
        t, matrix = _nodes(degree)
        y = np.asarray(f(mid + half * t), dtype=float)
        finite = np.isfinite(y)
        if not np.all(finite):
            return "undefined" if not np.any(finite) else "nonfinite"
        c = matrix @ y
        scale = float(np.max(np.abs(c)))
        if scale == 0.0:
            return "undefined"  # f vanishes identically here: no isolated zeros to report
        if float(np.max(np.abs(c[-3:]))) <= DECAY_TOL * scale:
            keep = np.nonzero(np.abs(c) > 0.1 * DECAY_TOL * scale)[0]
            return c[: keep[-1] + 1], degree
    return None


def chebyshev_roots(
    f: Callable[[np.ndarray], np.ndarray],
    a: float,
    b: float,
    *,
    pieces: int = 8,
    max_depth: int = 10,
    cancel: Callable[[], bool] | None = None,
    on_cancel: Callable[[], None] | None = None,
) -> ChebyshevRoots:
    """Locate the real zeros of a vectorised f on [a, b] by Chebyshev proxies.

    f takes and returns numpy arrays and must not raise (wrap it first); non-finite
    values mark a piece as unusable. [a, b] is first cut into ``pieces`` equal parts
    (so one proxy never spans a huge dynamic range), each halved up to ``max_depth``
    times when the coefficients of degree 32 do not decay to 1e-13 of the largest.
    ``cancel`` is polled per piece; when it returns True, ``on_cancel`` is called
    (it is expected to raise). Cost: a few f calls of at most 33 points per piece
    and one colleague-matrix eigenvalue problem (degree <= 64) per accepted piece.
    """
    edges = np.linspace(a, b, max(1, pieces) + 1)
    stack = [(float(edges[i]), float(edges[i + 1]), 0) for i in range(len(edges) - 2, -1, -1)]
    accepted: list[ChebyshevPiece] = []
    skipped: list[tuple[float, float]] = []
    real: list[float] = []
    near: list[complex] = []
    while stack:
        if cancel is not None and on_cancel is not None and cancel():
            on_cancel()
        u, v, depth = stack.pop()
        result = _proxy(f, u, v)
        if isinstance(result, tuple):
            c, degree = result
            accepted.append(ChebyshevPiece(u, v, degree))
            if len(c) < 2:
                continue
            t = C.chebroots(c)
            inside = np.abs(t.real) <= 1.0 + 1e-9
            close = inside & (np.abs(t.imag) <= IMAG_TOL)
            half, mid = 0.5 * (v - u), 0.5 * (v + u)
            for z in t[close]:
                near.append(complex(mid + half * z.real, half * z.imag))
            for z in t[close & (np.abs(t.imag) <= 1e-10)]:
                real.append(float(np.clip(mid + half * z.real, u, v)))
        elif depth < max_depth and result != "undefined":
            w = 0.5 * (u + v)
            stack.append((w, v, depth + 1))
            stack.append((u, w, depth + 1))
        else:
            if skipped and skipped[-1][1] == u:
                skipped[-1] = (skipped[-1][0], v)
            else:
                skipped.append((u, v))
    return ChebyshevRoots(
        roots=tuple(sorted(real)),
        near_real=tuple(near),
        pieces=tuple(accepted),
        skipped=tuple(skipped),
    )
