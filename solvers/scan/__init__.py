"""Every root of f on [a, b]: locate, classify, refine, cross-check.

How a scan works
----------------
1. **Sample** f (vectorised) at ``samples`` equally spaced points (default
   ``DEFAULT_SAMPLES`` = 2001, never more than there are floats in [a, b]), in chunks
   of ``CHUNK`` points so memory stays bounded for any sample count. Between chunks
   ``progress(fraction)`` is called and ``cancel()`` polled. Each chunk yields only
   *candidates*: sign changes between neighbouring samples, samples where f is
   exactly 0, local minima of |f| that may touch zero, sharp local maxima of |f|,
   and edges between defined and undefined (NaN) samples. Windows of 32 samples
   where f turns more than 8 times are resampled 8x finer (twice at most, so up to
   64x) before candidates are taken.
2. **Refine and classify** every sign-change bracket (up to 24 on the scalar f, a
   point at a time, where numpy's per-call overhead would dominate; more on the
   vectorised f, one call per iteration for all brackets; both in step, all brackets
   per iteration): Anderson–Björck false position, safeguarded
   by bisection and a least step of half the tolerance, until each bracket is no
   wider than xtol + rtol |x| (rtol = 4 eps, xtol = 1e-3 eps min(max(|a|, |b|), 1):
   Brent's stop rule, full double precision for a simple root, in any range). A sign
   change from a finite sample into one where f overflows to +-inf is narrowed by
   bisection until a finite value of the far sign brackets the root. A converged bracket whose
   ends' |f| fell to 1e-6 of the sampled |f| is a root; the end of smaller |f| is
   taken, then one Newton step with ``fprime`` when given and it lowers |f|.
3. Every other bracket is **bisected** from its sample ends (all at once): |f|
   growing 1000-fold (or steadily, like a logarithm) down to adjacent floats means a
   **pole**; |f| staying put means a **discontinuity** (a jump), unless |f| at the
   closed bracket's ends is within f's rounding noise measured beside it (then it is a
   root bisection met in noise, confirmed ``bracket_in_noise``, and joins its noise
   cluster in step 6a). Poles and jumps are never reported as roots. ``Root.run``,
   the project's Brent (:func:`solvers.methods.brent`) on a root's sample bracket with the same
   tolerances, is built when first read (few callers want every root's iterates).
4. **Touches** (even multiplicity, no sign change): every local minimum of |f|
   that a parabola through the three samples says dips at least 10 % toward zero,
   or whose lowest value is within the parabola's curvature scale (c h^2) of zero,
   is searched by a vectorised golden-section minimisation of |f| down to sqrt(eps)
   (a minimum is located no better). If the search finds the opposite sign, two
   close roots were hidden between samples: both brackets go to step 2 (close roots
   are resolved, not merged). A parabola whose vertex stays above half the least |f|
   is a positive minimum, no root. Otherwise the minimum is a root only when |f|
   there is indistinguishable from zero: no more than 16x the spread of f over a few
   steps of the minimiser's resolution, or within 8 standard deviations of f's
   rounding noise (:mod:`solvers.scan.noise`). A touch that stops short of zero
   (x^2 + 1e-20) is not a root. With ``fprime`` the touch point is then refined by
   bracketing f' (scale-free: only ratios of f' values are used).
5. **Poles without a sign change** (1/(x - c)^2, ln|x - c|): a sharp local maximum
   of |f| (at least 10 % above its lower neighbour, or a kink: its second difference
   8x that two samples away, as for a pole riding on a large offset) is searched by
   golden section for the largest |f|; at least twice the sampled peak (or infinite)
   and |f| still growing through the last 20 halvings of the distance before float
   resolution is a pole. The search stops early on a peak proved bounded: |f| concave
   through the search's four points, its ceiling below twice the sampled peak, and |f|
   where the outer chords meet strictly below them (|f| is convex on each side of a
   pole, so a pole never passes; the peaks of a sampled oscillation, sin(x^2), do). A
   bounded oscillation (sin(1/x) near 0) is not, and a sign change whose bisection looked
   like a pole is checked the same way. Beside every pole the stretch to the neighbouring
   samples is probed at distances halving down to a few ulps: each sign change there
   brackets a root no sample pair showed (a liquid root 1e-4 of a spacing from an
   equation of state's co-volume pole), and a dip without one is reported as a place
   where a pair of roots may hide.
6. **Multiplicity** m from f ~ c (x - r)^m: the slope of log|f(r +/- d)| against
   log d for d shrinking fourfold from the sample spacing (or 0.3 of the distance
   to the next feature) down to the noise level, rounded to the integer of the
   right parity (odd for a sign change, even for a touch), with no upper cap. When
   the slopes are not those of one power (an odd cluster of roots inside one sample
   spacing shows as one sign change), both sides of the refined root are searched
   for more roots.
6a. **Rounding noise**: f typed with cancellation (a polynomial written out with
   large integer coefficients) is noise near its roots, and noise changes sign at
   random. Findings close together (roots, "poles", "jumps", runs of exact zeros)
   are examined: where |f| stays within 8 standard deviations of f's own rounding
   noise (estimated from f itself, :func:`solvers.scan.noise.noise_level`) on a stretch
   that overlaps several of them, they are one root cluster, reported once at the
   middle of the stretch with ``confirmed=("noise_cluster",)`` and ``Root.detail``
   holding the stretch and the uncertainty,
   the multiplicity the slope of log|f| just outside supports (odd across a sign
   change), and the stretch in ``Scan.noise_bands``. A "noise level" above 1e-3 of
   f's typical sampled size is f itself, not rounding, and is never used.
7. **Domains**: runs of undefined samples are **gaps**; their edges are located
   by bisection. A domain edge where f tends to 0 (sqrt(x) at 0, sqrt(1 - x^2) at
   +/-1) is reported as a root at the last defined point (multiplicity 1,
   confirmed ``("domain_edge_zero",)`` or ``("domain_edge_limit",)``); one where |f|
   grows without bound (ln x at 0) is a pole; otherwise (arcsin at +/-1) it is only a gap end.
8. **Cross-check**, derivative (the default when ``fprime`` is given, see :func:`scan`):
   f' sampled with f. Between neighbouring samples of one sign of f across which f'
   changes sign toward zero lies an extremum that may hide two roots; where the secant
   slope lies between the two f' values (f' monotone there, as the mean value theorem
   demands) and the tangent lines at both samples meet above zero by more than f's
   rounding noise (64 eps of f's typical sampled |f|), f is convex there and
   cannot reach zero: proved root-free, no evaluation spent. Every other such pair goes
   to the touch search of step 4 (these extrema replace the sampled minima of |f| where
   f' is finite). Windows where f' contradicts f's differences are resampled (step 1);
   what is still unresolved at 64x is re-scanned with 64x the samples (as in 8a) and a
   warning says so.
8a. **Cross-check**, Chebyshev (the default without ``fprime``, or
   ``cross_check="chebyshev"``): the Chebyshev proxy rootfinder of
   :mod:`solvers.scan.crosscheck` runs independently on the smooth parts. Roots both
   found list ``located_by=("sampling", "chebyshev")``; a proxy root the sampling
   missed is confirmed locally and added (``located_by=("chebyshev",)``) or, when it
   cannot be confirmed, reported in ``details``, as is a sampled root on a smooth
   piece the proxy did not see. Roots closer than 1e-4 of a piece's width are matched
   as one cluster (the proxy cannot separate them reliably): the cluster counts as
   located when the proxy has zeros within eps^(1/m) of it, m the cluster's total
   multiplicity. Where the proxy finds f not smooth and no pole, jump or gap
   explains it (typically an oscillation the sampling aliased), that part is
   re-scanned with 64x the samples (up to 2e6 samples in all) and a warning says so.
   A piece whose coefficients fall to f's noise floor counts as smooth (an expanded
   polynomial), so noise alone never triggers the re-scan.

``cancel()`` is polled on every f call once 20 ms of work went by since the last poll,
and between batches of the cross-check's eigenvalue work, so a cancel takes effect
within about that much work wherever the scan is.

f must take and return numpy arrays. It may return NaN/inf where it is undefined;
if it raises, the points are treated as undefined (evaluated one by one so the
defined ones survive). Floating-point warnings are suppressed during the scan.

The scan records codes and numbers, never sentences: ``Root.confirmed`` holds codes of
:data:`~solvers.scan.records.CONFIRMED_CODES`, ``Scan.details`` holds
:class:`~solvers.records.Detail` records with codes of
:data:`~solvers.scan.records.SCAN_DETAIL_CODES`; :mod:`app.documents.words` words them.

Modules: :mod:`~solvers.scan.records` (what a scan returns), :mod:`~solvers.scan.sampling`
(step 1), :mod:`~solvers.scan.kernels` (steps 2-3 and the searches), :mod:`~solvers.scan.passes`
(their loops over samples and brackets, compiled), :mod:`~solvers.scan.features`
(steps 4-7), :mod:`~solvers.scan.noise` (step 6a), :mod:`~solvers.scan.crosscheck` (step 8a)
and :mod:`~solvers.scan.driver` (:func:`scan` itself).
"""

from __future__ import annotations

from solvers.scan.driver import MAX_ROOTS, scan
from solvers.scan.records import Root, Scan, ScanCancelled
from solvers.scan.sampling import CHUNK, DEFAULT_SAMPLES

__all__ = [
    "CHUNK",
    "DEFAULT_SAMPLES",
    "MAX_ROOTS",
    "Root",
    "Scan",
    "ScanCancelled",
    "scan",
]
