"""Benchmark: solvers.scan against a plain baseline measured in the same run.

Baseline (what a throw-away script does): numpy sampling at the same density as the
scan's base grid, then scipy.optimize.brentq on every sign change (tolerances set to
the scan's: xtol = 1e-3 eps max(|a|, |b|), rtol = 4 eps). Ratios are scan time /
baseline time (target <= 1.0), with the Chebyshev cross-check (the default) and without
it, best of several runs interleaved with the baseline's; no time is asserted anywhere.
It first times equations compiled by ``parse_equation`` (the same compiled f given to the
scan and to the baseline; the scan also gets the compiled f' in one column, as the app
passes it): cos x cosh x + 1 on [0, 50], 20 invented sinusoids on [0, 200] and sin(x^2) on
[0, 30], then a double root and a pair 1e-7 apart the baseline misses, and Chebyshev T12
written out (rounding noise near every root).
A summary repeats the ratios at the default density. Also reports what the baseline
gets wrong on a case with poles and double roots, and the peak memory (tracemalloc) of
a 10^7-sample scan. Run: ``.venv/bin/python benchmarks/bench_scan.py``.

Where the floor is: at 2001 samples and 16 roots the baseline is one f call on the grid
plus 16 brentq calls in C, each iterate a scalar call of the compiled f (about 0.2 us):
about 0.16 ms in all. The scan refines few brackets (up to 24) the same way on the scalar
f (Anderson-Bjorck, about 5 evaluations a root through compile.py's float path; all the
brackets in step through the same compiled halves as the vectorised path, f asked a point
at a time: about 40 us for the cantilever's 16 roots, 81 us when the iteration was plain
Python bracket by bracket, less than the baseline's brentq calls), and many brackets
vectorised. What it costs beyond the baseline is what it checks on purpose. Its loops over
the samples and the brackets (the candidate passes, the aliasing check, Anderson-Bjorck's
and golden section's bracket updates, the multiplicity ladder's points and slopes, the
clean-ramp test) are compiled (solvers/scan/passes.py): a few us each where they were
dozens of numpy calls of about 1 us. On the cantilever with f' (about 0.26 ms) what
remains is f itself (f and f' on the grid, about 70 us, f' the dearer; the Newton polish's
calls of f' and f on the 16 roots, about 20 us; the ladder's 29 points a root, about 20 us),
the scalar refinement, and the numpy calls and Python between the steps (a few us each,
spread over dozens of places). With many roots (sin(x^2): 287) the scan is below the
baseline; on the 20 sinusoids f's own cost dominates: a call of that compiled f costs
55-75 us whatever its length (its hundred numpy calls), the scan makes 10 calls with f'
(the baseline 1, and about 600 scalar ones), each waiting on the values of the one before,
and asks 7060 points (the ladder alone 2436, the grid twice with f'), so no compiled loop
brings that ratio to 1 without evaluating f less, which would change results. With f alone
the Chebyshev proxy adds its fits (matrix products), the counting that certifies most
pieces and eigenvalues for the rest (about 3x on the cantilever).

Measured in the round that wrote the refinement in step (profiles of the three compiled
cases in each mode): the records of the roots (about 0.35 us a root after the earlier
rounds) and the per-root Python of the proxy's matching were cut by building them in one
loop and from plain lists (a few % on sin(x^2), nothing visible on 16 roots). Left as they
are: merging the noise look's two calls of f in a touch test (``noise._at_noise``: the
spread over a few ulps, then the noise level where that did not decide) would save one call
of the 20 sinusoids' f (about 60 us of 2.2 ms without a check) at 36 points more a touch
that the spread already decided, and needs care where f raises on some points (the
pointwise fallback then sees other points); the proxy's matching (``_match_proxy``, some 40
numpy calls on 16 roots, about 40 us) compiled would need numba's pow and complex abs to
agree with numpy's to the bit. With hundreds of roots the garbage collector runs about twice
a scan (sin(x^2)), now and then a full collection of everything the process holds (sympy's
objects: several ms): the mean scan time there is far above the best (the ratios here take
the best).

The compiled loops cost a first compilation once per install (numba's cache, beside the
module or in the user's cache directory): about 5-7 s the first time a scan runs, then about
0.6-0.7 s in each new process on its first scan (numba's start: its registries and its
check for scipy's BLAS), nothing on later scans. They are imported on the first scan, so a
process that never scans (`zerotrace solve`) does not load numba.

Measured and not kept: a start at the zero of the cubic Hermite interpolant through f and
f' at a bracket's ends (an error of order h^4), then Newton and secant steps each checked
for a sign change at -/+ a quarter of the tolerance, handing what does not confirm to
Anderson-Bjorck. From a sample bracket Anderson-Bjorck needs about 5 evaluations a root,
the Hermite path at least 3 plus its arithmetic, so on the scalar path it saves next to
nothing; vectorised, its 25 or so numpy calls a step cost more than the calls of f it saves
(in one run: the 84 sinusoid brackets 442 us against Anderson-Bjorck's 428 us, the 286 of
sin(x^2) 244 us against 143 us, the cantilever's 16 at 155 us against 73 us one by one).
Narrowing every bracket to 1e-4 of its width around the Hermite zero before Anderson-Bjorck
saved one call of f in six on the sinusoids (413 us against 447 us) and lost on sin(x^2)
(166 us against 149 us).
"""

from __future__ import annotations

import math
import sys
import time
import tracemalloc
from pathlib import Path

import numpy as np
from scipy.optimize import brentq

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from solvers import parse_equation  # noqa: E402
from solvers.scan import DEFAULT_SAMPLES, scan  # noqa: E402

EPS = float(np.finfo(float).eps)


def baseline(f, a: float, b: float, n: int) -> list[float]:
    """numpy sampling + brentq on each sign change (and exact zeros at samples)."""
    x = np.linspace(a, b, n)
    with np.errstate(all="ignore"):
        y = f(x)
    xtol = 1e-3 * EPS * max(abs(a), abs(b))
    roots = [float(v) for v in x[y == 0]]
    s = np.sign(y)
    for i in np.nonzero(s[:-1] * s[1:] < 0)[0]:
        roots.append(brentq(f, x[i], x[i + 1], xtol=xtol, rtol=4 * EPS))
    return sorted(roots)


def best_times(fns, repeat: int) -> list[float]:
    """Best wall time of each callable, the callables run interleaved (so load from other
    processes on the machine falls on all of them alike)."""
    best = [math.inf] * len(fns)
    for _ in range(repeat):
        for i, fn in enumerate(fns):
            t0 = time.perf_counter()
            fn()
            best[i] = min(best[i], time.perf_counter() - t0)
    return best


def cantilever(x):
    return np.cos(x) * np.cosh(x) + 1.0


_rng = np.random.default_rng(12345)
_AMPS = _rng.uniform(0.2, 1.0, 20)
_OMEGAS = _rng.uniform(0.05, 2.0, 20)
_PHASES = _rng.uniform(0.0, 2 * math.pi, 20)


def sinusoids(x):
    """20-term sum of sinusoids (invented coefficients, fixed seed)."""
    x = np.asarray(x, dtype=float)
    out = np.zeros_like(x)
    for amp, om, ph in zip(_AMPS, _OMEGAS, _PHASES, strict=True):
        out = out + amp * np.sin(om * x + ph)
    return out


def tricky(x):
    """Double roots at 1 and 4.5, simple root at 3, poles at 2 and 5.5 (invented)."""
    return (x - 1.0) ** 2 * (x - 3.0) * (x - 4.5) ** 2 / ((x - 2.0) * (x - 5.5))


def row(name, f, a, b, n, repeat, expect=None):
    """One table row; returns (ratio with cross-check, ratio without, roots agree)."""
    tb, tx, tn = best_times([lambda: baseline(f, a, b, n),
                             lambda: scan(f, a, b, samples=n, cross_check=True),
                             lambda: scan(f, a, b, samples=n, cross_check=False)], repeat)
    s = scan(f, a, b, samples=n)
    base = baseline(f, a, b, n)
    agree = len(s.roots) == len(base) and np.allclose([r.x for r in s.roots], base,
                                                      rtol=1e-12, atol=1e-12)
    print(f"{name:<28} {n:>8} {len(s.roots):>5} {len(base):>5} {tb * 1e3:>9.2f} "
          f"{tx * 1e3:>9.2f} {tx / tb:>6.2f} {tn * 1e3:>9.2f} {tn / tb:>6.2f}   "
          f"{'yes' if agree else 'NO'}")
    if expect is not None and len(s.roots) != expect:
        print(f"   note: expected {expect} roots, scan found {len(s.roots)}")
    return tx / tb, tn / tb, agree, len(s.roots), len(base)


def _sinusoids_text() -> str:
    """The 20 invented sinusoids to 6 decimals, typed as an equation (compiled by
    parse_equation)."""
    return " + ".join(f"{amp:.6f}*sin({om:.6f}*x + {ph:.6f})"
                      for amp, om, ph in zip(_AMPS, _OMEGAS, _PHASES, strict=True))


def compiled_rows() -> dict[str, tuple[float, float, float]]:
    """Scan / baseline on equations compiled by the project (the same f for both).

    Three scans per case: with the compiled f' as the app passes it (the default cross-check
    is then the derivative check), with f alone (the default is then the Chebyshev proxy),
    and with f alone and no cross-check. The baseline gets f alone (brentq has no use for f').
    """
    print("Compiled equations (parse_equation(...).f given to both; the scan also gets .fprime "
          "in 'f+f\'' as the app passes it), default samples, scan / baseline:")
    print(f"  {'case':<30} {'base ms':>8} {'f+fp ms':>8} {'ratio':>6} {'f ms':>8} {'ratio':>6} "
          f"{'off ms':>8} {'ratio':>6}  roots scan/base")
    ratios = {}
    for label, text, a, b, repeat in (
        ("cos x cosh x + 1 on [0, 50]", "cos(x)*cosh(x) + 1", 0.0, 50.0, 40),
        ("20 sinusoids on [0, 200]", _sinusoids_text(), 0.0, 200.0, 25),
        ("sin(x^2) on [0, 30]", "sin(x^2)", 0.0, 30.0, 25),
    ):
        eq = parse_equation(text)
        f, fp = eq.f, eq.fprime
        tb, td, tx, tn = best_times([
            lambda f=f, a=a, b=b: baseline(f, a, b, DEFAULT_SAMPLES),
            lambda f=f, fp=fp, a=a, b=b: scan(f, a, b, fprime=fp),
            lambda f=f, a=a, b=b: scan(f, a, b),
            lambda f=f, a=a, b=b: scan(f, a, b, cross_check=False)], repeat)
        found = len(scan(f, a, b, fprime=fp).roots)
        base = len(baseline(f, a, b, DEFAULT_SAMPLES))
        ratios[label] = (td / tb, tx / tb, tn / tb)
        print(f"  {label:<30} {tb * 1e3:8.2f} {td * 1e3:8.2f} {td / tb:6.2f} {tx * 1e3:8.2f} "
              f"{tx / tb:6.2f} {tn * 1e3:8.2f} {tn / tb:6.2f}  {found}/{base}")
    # what the baseline misses, on a compiled equation: a double root and a pair 1e-7 apart
    text = "(x - 1.3)^2*(x - 2.2)*(x - 2.2000001)*exp(-x/4)"
    eq = parse_equation(text)
    base = baseline(eq.f, 0.0, 4.0, DEFAULT_SAMPLES)
    for how, s in (("f+f'", scan(eq.f, 0.0, 4.0, fprime=eq.fprime)),
                   ("f alone", scan(eq.f, 0.0, 4.0))):
        print(f"  {text} on [0, 4], {how}: scan "
              f"{[(round(r.x, 9), r.multiplicity) for r in s.roots]} ({s.check} check)")
    print(f"  ... baseline {[round(v, 9) for v in base]}")
    # an expanded Chebyshev polynomial: rounding noise near every root
    t12 = ("2048*x^12 - 6144*x^10 + 6912*x^8 - 3584*x^6 + 840*x^4 - 72*x^2 + 1")
    f = parse_equation(t12).f
    (t,) = best_times([lambda: scan(f, -1.0, 1.0)], 3)
    print(f"  T12 written out on [-1, 1]: {len(scan(f, -1.0, 1.0).roots)} roots in "
          f"{t * 1e3:.1f} ms")
    return ratios


def main() -> None:
    print("zerotrace scan benchmark (times: best of several interleaved runs, milliseconds)")
    compiled = compiled_rows()
    print()
    print(f"default samples = {DEFAULT_SAMPLES}; the baseline samples at the same count. "
          "ratio = scan / baseline; 'xchk' = with the Chebyshev cross-check (the default), "
          "'plain' = cross_check=False. Target: ratio <= 1.0.")
    print(f"{'case':<28} {'samples':>8} {'scan#':>5} {'base#':>5} {'base ms':>9} "
          f"{'xchk ms':>9} {'ratio':>6} {'plain ms':>9} {'ratio':>6}   same roots")
    summary = {}
    summary["cantilever"] = row("cos x cosh x + 1 on [0, 50]", cantilever, 0.0, 50.0,
                                DEFAULT_SAMPLES, 40, expect=16)
    row("cos x cosh x + 1 on [0, 50]", cantilever, 0.0, 50.0, 20001, 20, expect=16)
    row("cos x cosh x + 1 on [0, 50]", cantilever, 0.0, 50.0, 200001, 5, expect=16)
    row("cos x cosh x + 1 on [0, 50]", cantilever, 0.0, 50.0, 2000001, 3, expect=16)
    summary["sinusoids"] = row("20 sinusoids on [0, 2000]", sinusoids, 0.0, 2000.0,
                               DEFAULT_SAMPLES, 5)
    row("20 sinusoids on [0, 2000]", sinusoids, 0.0, 2000.0, 20001, 5)
    row("20 sinusoids on [0, 2000]", sinusoids, 0.0, 2000.0, 200001, 3)
    print()
    print(f"At the default density ({DEFAULT_SAMPLES} samples), scan / baseline:")
    for label, key in (("cos x cosh x + 1, 16 roots", "cantilever"),
                       ("20 sinusoids, [0, 2000]", "sinusoids")):
        rx, rn, agree, found, found_base = summary[key]
        print(f"  {label:<28} {rx:5.2f}x with the cross-check, {rn:5.2f}x without"
              + ("" if agree else f"   (the baseline found {found_base} roots, the scan "
                                  f"{found}: sampling alone aliases there)"))

    for label, (rd, rx, rn) in compiled.items():
        print(f"  compiled {label:<28} {rd:5.2f}x with f' (derivative check), {rx:5.2f}x f alone "
              f"(Chebyshev check), {rn:5.2f}x no check")

    print()
    print("What the baseline gets wrong: (x-1)^2 (x-3) (x-4.5)^2 / ((x-2)(x-5.5)) on [0, 7]")
    s = scan(tricky, 0.0, 7.0)
    base = baseline(tricky, 0.0, 7.0, DEFAULT_SAMPLES)
    print(f"  baseline roots: {[round(v, 9) for v in base]}")
    print(f"  scan roots    : {[(round(r.x, 9), r.multiplicity) for r in s.roots]}")
    print(f"  scan poles    : {[round(p, 12) for p in s.poles]}")
    missed = [r for r in (1.0, 4.5) if not any(abs(v - r) < 1e-6 for v in base)]
    fake = [v for v in base if any(abs(v - p) < 1e-6 for p in (2.0, 5.5))]
    print(f"  baseline missed double roots {missed}; reported poles {fake} as roots")

    print()
    print("Peak memory (tracemalloc; times under tracemalloc), sin x on [0, 100], cross-check on:")
    for n in (10**6, 10**7):
        tracemalloc.start()
        t0 = time.perf_counter()
        s = scan(np.sin, 0.0, 100.0, samples=n)
        t = time.perf_counter() - t0
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        tracemalloc.start()
        t0 = time.perf_counter()
        base = baseline(np.sin, 0.0, 100.0, n)
        tb = time.perf_counter() - t0
        peak_b = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        print(f"  {n:>9} samples: scan {t:6.2f} s, peak {peak / 1e6:7.1f} MB "
              f"({len(s.roots)} roots); baseline {tb:6.2f} s, peak {peak_b / 1e6:7.1f} MB "
              f"({len(base)} roots)")


if __name__ == "__main__":
    main()
