"""Methods benchmark: function evaluations of Brent on the APS set, Newton's time per solve.

1. Total f calls of ``solvers.methods.brent`` on the 154 Alefeld-Potra-Shi cases
   (``scipy.optimize._tstutils.get_tests("aps")``) against ``scipy.optimize.brentq``
   with the same xtol/rtol, counted by wrapping f (target <= 1.0x); ``toms748`` for
   information. The same count on the 45 Chandrupatla cases (``get_tests("chandrupatla")``,
   multiple roots such as x**19 among them) with a cap of 1000 iterations, for
   information: there brentq's count includes runs that stop on a value that merely
   underflowed to 0 (x*exp(-1/x**2)), which zerotrace's Brent refuses as a root.
2. Wall time per solve of ``solvers.methods.newton`` against ``scipy.optimize.newton``
   on the same plain Python callables (the Colebrook equation written with ``math``,
   with its analytic derivative), same tolerance; best of N repeats with
   ``time.perf_counter`` (target <= 1.5x: we record every iterate). The numerical
   derivative variant is shown for information.

Run: ``.venv/bin/python benchmarks/bench_methods.py``. No asserts: numbers for people.
"""

from __future__ import annotations

import math
import sys
import time
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import scipy.optimize  # noqa: E402
from scipy.optimize._tstutils import get_tests  # noqa: E402

from solvers.methods import DEFAULT_RTOL, DEFAULT_XTOL, brent, newton  # noqa: E402

REPEAT = 7
SOLVES = 2000


class Counted:
    def __init__(self, case):
        self.f, self.args, self.calls = case["f"], case["args"], 0

    def __call__(self, x):
        self.calls += 1
        return self.f(x, *self.args)


def aps_evaluations() -> tuple[int, int, int, int]:
    ours = theirs = toms = 0
    cases = get_tests("aps")
    for case in cases:
        a, b = case["bracket"]
        f = Counted(case)
        brent(f, a, b, xtol=DEFAULT_XTOL, rtol=DEFAULT_RTOL)
        ours += f.calls
        f.calls = 0
        scipy.optimize.brentq(f, a, b, xtol=DEFAULT_XTOL, rtol=DEFAULT_RTOL)
        theirs += f.calls
        f.calls = 0
        scipy.optimize.toms748(f, a, b, xtol=DEFAULT_XTOL, rtol=DEFAULT_RTOL)
        toms += f.calls
    return len(cases), ours, theirs, toms


def chandrupatla_evaluations() -> tuple[int, int, int]:
    ours = theirs = 0
    cases = get_tests("chandrupatla")
    for case in cases:
        a, b = case["bracket"]
        f = Counted({"f": case["f"], "args": ()})
        brent(f, a, b, xtol=DEFAULT_XTOL, rtol=DEFAULT_RTOL, max_iter=1000)
        ours += f.calls
        f.calls = 0
        scipy.optimize.brentq(f, a, b, xtol=DEFAULT_XTOL, rtol=DEFAULT_RTOL, maxiter=1000)
        theirs += f.calls
    return len(cases), ours, theirs


# Colebrook-White for a cooling-water line (invented: Re = 2.4e5, eps/D = 1.5e-4).
REYNOLDS = 2.4e5
ROUGHNESS = 1.5e-4
LN10 = math.log(10.0)


def colebrook(friction: float) -> float:
    return 1.0 / math.sqrt(friction) + 2.0 * math.log10(
        ROUGHNESS / 3.7 + 2.51 / (REYNOLDS * math.sqrt(friction))
    )


def colebrook_prime(friction: float) -> float:
    root = math.sqrt(friction)
    inner = ROUGHNESS / 3.7 + 2.51 / (REYNOLDS * root)
    return -0.5 / (friction * root) - (2.0 / LN10) * (2.51 / REYNOLDS) * 0.5 / (
        friction * root * inner
    )


def best_time(solve) -> float:
    """Best of REPEAT batches of SOLVES solves, seconds per solve."""
    times = []
    for _ in range(REPEAT):
        t0 = time.perf_counter()
        for _ in range(SOLVES):
            solve()
        times.append((time.perf_counter() - t0) / SOLVES)
    return min(times)


def main() -> None:
    warnings.simplefilter("ignore")
    n, ours, theirs, toms = aps_evaluations()
    print(f"APS set ({n} cases), total f evaluations, xtol={DEFAULT_XTOL:g}, "
          f"rtol={DEFAULT_RTOL:.3g}")
    print(f"  {'solver':34s} {'evaluations':>11s} {'ratio':>7s}")
    print(f"  {'scipy.optimize.brentq (reference)':34s} {theirs:11d} {1.0:7.3f}")
    print(f"  {'zerotrace brent':34s} {ours:11d} {ours / theirs:7.3f}   (target <= 1.0)")
    print(f"  {'scipy.optimize.toms748 (info)':34s} {toms:11d} {toms / theirs:7.3f}")
    n, ours, theirs = chandrupatla_evaluations()
    print(f"Chandrupatla set ({n} cases), total f evaluations, cap 1000 iterations (info)")
    print(f"  {'scipy.optimize.brentq (reference)':34s} {theirs:11d} {1.0:7.3f}")
    print(f"  {'zerotrace brent':34s} {ours:11d} {ours / theirs:7.3f}")

    x0 = 0.02
    ours_run = newton(colebrook, x0, fprime=colebrook_prime)
    ref_root = scipy.optimize.newton(colebrook, x0, fprime=colebrook_prime, tol=DEFAULT_XTOL,
                                     rtol=DEFAULT_RTOL)
    t_scipy = best_time(lambda: scipy.optimize.newton(
        colebrook, x0, fprime=colebrook_prime, tol=DEFAULT_XTOL, rtol=DEFAULT_RTOL))
    t_ours = best_time(lambda: newton(colebrook, x0, fprime=colebrook_prime))
    t_numeric = best_time(lambda: newton(colebrook, x0))
    print()
    print(f"Newton on Colebrook (Re={REYNOLDS:g}, eps/D={ROUGHNESS:g}), x0={x0}: "
          f"root {ours_run.root:.15g} (scipy {ref_root:.15g}), "
          f"{ours_run.iterations} iterations, {ours_run.evaluations} evaluations")
    print(f"  {'solver':40s} {'us/solve':>9s} {'ratio':>7s}")
    print(f"  {'scipy.optimize.newton, fprime (reference)':40s} {t_scipy * 1e6:9.2f} "
          f"{1.0:7.3f}")
    print(f"  {'zerotrace newton, fprime':40s} {t_ours * 1e6:9.2f} {t_ours / t_scipy:7.3f}"
          f"   (target <= 1.5)")
    print(f"  {'zerotrace newton, numerical f (info)':40s} {t_numeric * 1e6:9.2f} "
          f"{t_numeric / t_scipy:7.3f}")
    compiled_equation(x0)


def compiled_equation(x0: float) -> None:
    """The same Colebrook line through parse_equation's compiled f and f'."""
    try:
        from solvers.equation import parse_equation

        eq = parse_equation(
            "1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))", unknown="f",
            parameters={"eps": ROUGHNESS * 0.1, "D": 0.1, "Re": REYNOLDS},
        )
        f, fprime = eq.f, eq.fprime
        f(x0)
    except Exception as exc:  # the equation module is someone else's; report, do not fail
        print(f"  (compiled equation skipped: {type(exc).__name__}: {exc})")
        return
    t_scipy = best_time(lambda: scipy.optimize.newton(
        f, x0, fprime=fprime, tol=DEFAULT_XTOL, rtol=DEFAULT_RTOL))
    t_ours = best_time(lambda: newton(f, x0, fprime=fprime))
    print(f"  {'scipy.optimize.newton, parsed f, fprime':40s} {t_scipy * 1e6:9.2f} {1.0:7.3f}")
    print(f"  {'zerotrace newton, parsed f, fprime':40s} {t_ours * 1e6:9.2f} "
          f"{t_ours / t_scipy:7.3f}   (target <= 1.5)")


if __name__ == "__main__":
    main()
