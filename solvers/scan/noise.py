"""How much rounding moves f: an empirical estimate of f's evaluation noise.

A function typed as an expanded polynomial with large exact coefficients (a Legendre or
Chebyshev polynomial written out, (x - 1)^9 multiplied out) is evaluated with heavy
cancellation: near its roots the computed f is rounding noise of size about
eps * sum |c_k x^k|, and its sign flips at random. Below that level nothing about f's
sign or size can be trusted; a root finder that believes every sign flip reports dozens
of roots, poles and jumps where there is one root cluster.

The estimate is the one of J. J. More and S. M. Wild, "Estimating computational noise",
SIAM J. Sci. Comput. 33 (2011): sample f at 2k + 1 points a tiny step apart (the smooth
part of f is then a polynomial of low degree to many digits), take the k-th differences,
which remove that smooth part, and scale by the variance an independent noise of standard
deviation sigma gives them, C(2k, k) sigma^2. Noise does not depend on the step, the smooth
part of f showing through does: estimates at two steps a factor 8 apart must agree, or
they measured the smooth part and give no estimate. Noise below 8 eps of the values
themselves is only their own rounding (no cancellation) and counts as 0. Works on any
vectorised callable; no access to the formula is needed.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

__all__ = ["NOISE_POINTS", "noise_level"]

_ORDER = 4  # k-th differences: the smooth part up to a cubic drops out
NOISE_POINTS = 4 * (2 * _ORDER + 1)  # evaluations of f per point estimated
_GAMMA = math.comb(2 * _ORDER, _ORDER)  # variance of the k-th difference of unit noise
# relative steps between the points, in pairs a factor 8 apart: 2^-30 (independent rounding,
# smooth part flat to many digits) and 2^-24 (so a value quantised to the ulp of a larger
# intermediate still moves). Noise does not depend on the step; the smooth part of f that
# shows through the differences grows at least as step^4 (4096-fold per factor 8), so a pair
# whose two estimates differ more than 16-fold measured the smooth part, not noise.
_PAIRS = ((2.0**-30, 2.0**-27), (2.0**-24, 2.0**-21))
_STEPS = tuple(step for pair in _PAIRS for step in pair)
_AGREE = 16.0
_EPS = float(np.finfo(float).eps)


def noise_level(
    f: Callable[[np.ndarray], np.ndarray], x: np.ndarray, floor: float
) -> np.ndarray:
    """Standard deviation of f's rounding noise near each x (same units as f).

    Parameters
    ----------
    f : vectorised callable, numpy array in, array out (NaN where undefined).
    x : points (any shape is flattened).
    floor : the least |x| the relative step refers to (points near 0 use
        ``2^-30 * floor`` as their step), in x units.

    Returns
    -------
    numpy.ndarray
        sigma >= 0 per point; 0 where f is computed exactly (or constant) there; NaN where
        f is undefined at some of the points; the larger of the estimates at two step
        sizes that each agree with the estimate at 8 times their step. One call of f with
        ``36 len(x)`` points.
    """
    x = np.asarray(x, dtype=float).reshape(-1)
    if x.size == 0:
        return np.zeros(0)
    base = np.maximum(np.abs(x), floor)
    offsets = np.arange(-_ORDER, _ORDER + 1, dtype=float)
    stencils = []
    for rel in _STEPS:
        # a power-of-2 step: x + k step is exact (away from a power of 2), so the differences
        # see f's noise, not the rounding of the points; x keeps all its bits (points on a
        # coarse grid would make a polynomial with integer coefficients exact there). Near
        # 0, where the step exceeds |x|/64, the centre moves onto the step's grid instead.
        step = np.exp2(np.floor(np.log2(rel * base)))
        centre = np.where(np.abs(x) >= 64 * step, x / step, np.round(x / step))
        stencils.append((centre[:, None] + offsets[None, :]) * step[:, None])
    pts = np.concatenate(stencils, axis=1)
    y = np.asarray(f(pts.reshape(-1)), dtype=float).reshape(len(x), len(_STEPS), -1)
    with np.errstate(all="ignore"):
        d = np.diff(y, n=_ORDER, axis=2)
        # one estimate per step; scaled by the largest difference so that squares of tiny
        # values (f near 1e-160) do not underflow
        big = np.max(np.abs(d), axis=2, keepdims=True)
        unit = np.where(big > 0, d / np.where(big > 0, big, 1.0), 0.0)
        sigma = big[..., 0] * np.sqrt(np.mean(unit * unit, axis=2) / _GAMMA)
        # rounding of the values themselves (a few eps of |f|) is no cancellation noise
        own = 8 * _EPS * np.max(np.abs(y), axis=2)
        sigma = np.where(sigma > own, sigma, 0.0)
        best = np.zeros(len(x))
        for i in range(0, len(_STEPS), 2):
            fine, coarse = sigma[:, i], sigma[:, i + 1]
            agree = (fine > 0) & (coarse <= _AGREE * fine) & (fine <= _AGREE * coarse)
            best = np.maximum(best, np.where(agree, np.maximum(fine, coarse), 0.0))
        return np.where(np.isnan(y).any(axis=(1, 2)), np.nan, best)
