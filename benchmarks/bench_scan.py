"""Benchmark: solvers.scan against a plain baseline measured in the same run.

Baseline (what a throw-away script does): numpy sampling at the same density as the
scan's base grid, then scipy.optimize.brentq on every sign change (tolerances set to
the scan's: xtol = 1e-3 eps max(|a|, |b|), rtol = 4 eps). Ratios are scan time /
baseline time (target <= 1.0); no time is asserted anywhere. Also reports what the
baseline gets wrong on a case with poles and double roots, and the peak memory
(tracemalloc) of a 10^7-sample scan. Run: ``.venv/bin/python benchmarks/bench_scan.py``.
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


def best_time(fn, repeat: int) -> float:
    best = math.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
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
    out = {}
    for label, kw in (("scan", {"cross_check": True}), ("scan, no cross-check",
                                                         {"cross_check": False})):
        t = best_time(lambda kw=kw: scan(f, a, b, samples=n, **kw), repeat)
        out[label] = t
    tb = best_time(lambda: baseline(f, a, b, n), repeat)
    s = scan(f, a, b, samples=n)
    base = baseline(f, a, b, n)
    agree = len(s.roots) == len(base) and np.allclose([r.x for r in s.roots], base,
                                                      rtol=1e-12, atol=1e-12)
    print(f"{name:<34} {n:>9} {len(s.roots):>6} {len(base):>6} {tb * 1e3:>10.2f} "
          f"{out['scan'] * 1e3:>10.2f} {out['scan'] / tb:>7.2f} "
          f"{out['scan, no cross-check'] / tb:>7.2f}   {'yes' if agree else 'NO'}")
    if expect is not None and len(s.roots) != expect:
        print(f"   note: expected {expect} roots, scan found {len(s.roots)}")
    return s, base


def main() -> None:
    print("zerotrace scan benchmark (times: best of several runs, milliseconds)")
    print(f"default samples = {DEFAULT_SAMPLES}; the baseline uses the same count; ratio = "
          "scan / baseline with the Chebyshev cross-check, no-xchk = without it")
    print(f"{'case':<34} {'samples':>9} {'scan#':>6} {'base#':>6} {'base ms':>10} "
          f"{'scan ms':>10} {'ratio':>7} {'no-xchk':>7}   same roots")
    row("cos x cosh x + 1 on [0, 50]", cantilever, 0.0, 50.0, DEFAULT_SAMPLES, 20, expect=16)
    row("cos x cosh x + 1 on [0, 50]", cantilever, 0.0, 50.0, 20001, 10, expect=16)
    row("cos x cosh x + 1 on [0, 50]", cantilever, 0.0, 50.0, 200001, 5, expect=16)
    row("cos x cosh x + 1 on [0, 50]", cantilever, 0.0, 50.0, 2000001, 2, expect=16)
    row("20 sinusoids on [0, 2000]", sinusoids, 0.0, 2000.0, 20001, 3)
    row("20 sinusoids on [0, 2000]", sinusoids, 0.0, 2000.0, 200001, 3)

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
        print(f"sin x on [0, 100], {n:>9} samples: scan {t:6.2f} s, peak {peak / 1e6:7.1f} MB "
              f"({len(s.roots)} roots); baseline {tb:6.2f} s, peak {peak_b / 1e6:7.1f} MB "
              f"({len(base)} roots)   [times under tracemalloc]")


if __name__ == "__main__":
    main()
