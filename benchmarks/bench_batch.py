"""Tables of inputs benchmark: 10^5 Colebrook–White friction factors in one call.

Rows (seeded, invented pipes): Reynolds number log-uniform in 4e3..1e8, relative
roughness log-uniform in 1e-6..5e-2; the equation parsed once and bound to the arrays.
Every comparison runs on the same compiled callables, evaluated the same way (long arrays
in blocks of 8192 rows, :func:`solvers.equation.compile.in_blocks`, as ``Equation.f`` and
``solve_batch`` do), in the same run: each reference and ours are timed in turn, round
after round, and the best time of each is kept (``race``), so the load other work puts on
the machine falls on both alike.

1. Newton: ``solvers.solve_batch(method="newton")`` against ``scipy.optimize.newton`` with
   an array x0 and the same compiled f and f' (goal <= 1.0x, stretch 0.5x). Start values:
   Haaland's explicit formula (a good start: every row converges), and a fixed 0.02 for
   information (some rough pipes leave f's domain from there). From Haaland's start scipy
   makes 4 calls of f and 4 of f' on every row; solve_batch keeps the scalar method's
   rules: 5 calls of f on the rows still at work (f at the returned root: the fifth on
   23 % of the rows), 4 of f', and the underflow probes beside the 62 % of rows that end
   on an exact 0.0 (1.24 rows' worth of f).
2. Guaranteed bracketing on the bracket [1e-3, 0.2] of every row: zerotrace Brent and
   bisection against ``scipy.optimize.elementwise.find_root`` (Chandrupatla's method,
   scipy >= 1.15) on the same brackets and the same compiled f (goal <= 1.0x).
3. Against a per-row loop of ``scipy.optimize.brentq`` over the equation bound to each
   row (timed on a sample of rows, scaled to 10^5; goal >= 100x faster).
4. Peak memory (tracemalloc: numpy reports its buffers to it) of 10^6 rows, Newton and
   Brent, beyond the input arrays (goal <= 400 MB).
5. Agreement: every row against the Lambert W closed form (scipy.special) and the
   references above, relative difference (goal <= 1e-10).

Newton's race is run twice. In this process, with the C library's allocator as it comes:
arrays of more than 128 kB come from the system as fresh pages whose first touch costs a
page fault each, and glibc moves that threshold as blocks are freed, so how many faults
each solver pays depends on what the process allocated before (the faults per solve are
printed beside the times). Then in a child process with glibc's thresholds fixed high
(``MALLOC_MMAP_THRESHOLD_``, ``MALLOC_TRIM_THRESHOLD_``): every array is reused memory,
no solver faults, and the ratio is the arithmetic and bookkeeping alone. The goal is met
only where both ratios meet it.

Run: ``.venv/bin/python benchmarks/bench_batch.py``. No asserts: numbers for people.
"""

from __future__ import annotations

import math
import os
import resource
import subprocess
import sys
import time
import tracemalloc
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import numpy as np  # noqa: E402
import scipy.optimize  # noqa: E402
import scipy.special  # noqa: E402

from solvers import parse_equation, solve_batch  # noqa: E402
from solvers.equation.compile import in_blocks  # noqa: E402
from solvers.methods.common import DEFAULT_RTOL, DEFAULT_XTOL  # noqa: E402

ROWS = 100_000
BIG = 1_000_000
REPEAT = 5
SAMPLE = 2_000  # rows of the per-row brentq loop
COLEBROOK = "1/sqrt(lam) = -2*log10(rr/3.7 + 2.51/(Re*sqrt(lam)))"
BRACKET = (1e-3, 0.2)


def rows(n: int, seed: int = 20261202) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    Re = 10 ** rng.uniform(math.log10(4e3), 8.0, n)
    rr = 10 ** rng.uniform(-6.0, math.log10(5e-2), n)
    return Re, rr


def haaland(Re: np.ndarray, rr: np.ndarray) -> np.ndarray:
    return (-1.8 * np.log10((rr / 3.7) ** 1.11 + 6.9 / Re)) ** -2


def exact(Re: np.ndarray, rr: np.ndarray) -> np.ndarray:
    """Colebrook–White in closed form: lam = 1/y^2, y = -c ln(b c W(e^t)) (tests/test_batch)."""
    a, b, c = rr / 3.7, 2.51 / Re, 2.0 / math.log(10.0)
    t = a / (b * c) - np.log(b * c)
    return (-c * np.log(b * c * scipy.special.wrightomega(t).real)) ** -2


def race(*fns, repeat: int = REPEAT) -> list[float]:
    """The best time of each of ``fns``, run in turn (interleaved) ``repeat`` times: the
    machine's load at any moment falls on every one of them alike."""
    times = [math.inf] * len(fns)
    for _ in range(repeat):
        for i, fn in enumerate(fns):
            t0 = time.perf_counter()
            fn()
            times[i] = min(times[i], time.perf_counter() - t0)
    return times


def worst_relative(a: np.ndarray, b: np.ndarray) -> float:
    both = np.isfinite(a) & np.isfinite(b)
    return float(np.max(np.abs(a[both] - b[both]) / np.abs(b[both]))) if both.any() else math.nan


def line(label: str, seconds: float, reference: float, goal: str = "") -> None:
    print(f"  {label:52s} {seconds * 1e3:9.2f} ms {seconds / reference:8.3f}  {goal}")


def faults(fn, repeat: int = 5) -> float:
    """Page faults (minor: first touches of fresh pages) per call of ``fn``."""
    before = resource.getrusage(resource.RUSAGE_SELF).ru_minflt
    for _ in range(repeat):
        fn()
    return (resource.getrusage(resource.RUSAGE_SELF).ru_minflt - before) / repeat


STEADY_HEAP = {"MALLOC_MMAP_THRESHOLD_": str(2**30), "MALLOC_TRIM_THRESHOLD_": str(2**31)}


def newton_races(eq, x0, truth, tol, starts) -> None:
    """Newton against scipy.optimize.newton with an array x0, same compiled f and f'."""

    def scipy_newton(start):
        return scipy.optimize.newton(eq.f, start, fprime=eq.fprime, tol=DEFAULT_XTOL,
                                     rtol=DEFAULT_RTOL, maxiter=100)

    for label, start in starts:
        ref_root = scipy_newton(start)
        ours = solve_batch(eq, method="newton", x0=start, **tol)
        t_ref, t_ours = race(lambda start=start: scipy_newton(start),
                             lambda start=start: solve_batch(eq, method="newton", x0=start,
                                                             **tol), repeat=3 * REPEAT)
        f_ref = faults(lambda start=start: scipy_newton(start))
        f_ours = faults(lambda start=start: solve_batch(eq, method="newton", x0=start, **tol))
        print(f" Newton, {label}: {int(ours.converged.sum())} rows converged; worst relative "
              f"difference {worst_relative(ours.root, ref_root):.1e} vs scipy, "
              f"{worst_relative(ours.root, truth):.1e} vs Lambert W")
        line(f"scipy.optimize.newton, array x0 ({f_ref:.0f} faults)", t_ref, t_ref)
        line(f"zerotrace solve_batch newton ({f_ours:.0f} faults)", t_ours, t_ref,
             "(goal <= 1.0, stretch 0.5)" if start is x0 else "")


def main() -> None:
    warnings.simplefilter("ignore")
    Re, rr = rows(ROWS)
    eq = parse_equation(COLEBROOK, unknown="lam", parameters={"Re": Re, "rr": rr})
    truth = exact(Re, rr)
    x0 = haaland(Re, rr)
    tol = {"xtol": DEFAULT_XTOL, "rtol": DEFAULT_RTOL}
    if "--steady-heap" in sys.argv:  # the child process: Newton's race alone
        newton_races(eq, x0, truth, tol, (("Haaland start, steady heap", x0),))
        return
    print(f"{ROWS} Colebrook-White rows, xtol={DEFAULT_XTOL:g}, rtol={DEFAULT_RTOL:.3g}")
    print(f"  {'solver':52s} {'time':>12s} {'ratio':>8s}")

    # 1. Newton, in this process (the allocator as it comes), then with no page faults
    newton_races(eq, x0, truth, tol, (("Haaland start", x0),
                                      ("x0 = 0.02 (info)", np.full(ROWS, 0.02))))
    if sys.platform.startswith("linux"):  # glibc's thresholds: a child with them fixed
        child = subprocess.run([sys.executable, __file__, "--steady-heap"], text=True,
                               capture_output=True, env={**os.environ, **STEADY_HEAP})
        print(child.stdout, end="")

    # 2. Guaranteed bracketing against scipy's element-wise find_root, same brackets
    a, b = np.full(ROWS, BRACKET[0]), np.full(ROWS, BRACKET[1])
    reference = None
    try:
        from scipy.optimize.elementwise import find_root

        core = eq._core  # the same compiled f, with its parameter parts as arguments:
        hoisted = core.bind_code.vector(*(eq.parameters[n] for n in core.parameter_names))
        hoisted = tuple(np.asarray(h, dtype=np.float64) for h in hoisted[:core.n_hoisted])

        def compiled(x, *h):  # evaluated as solve_batch and Equation.f evaluate it
            return in_blocks(core.f_code.vector, x, h)

        def scipy_find_root():
            return find_root(compiled, (a, b), args=hoisted,
                             tolerances={"xatol": DEFAULT_XTOL, "xrtol": DEFAULT_RTOL})

        reference = scipy_find_root()
    except (ImportError, AttributeError, TypeError) as exc:
        print(f" (scipy.optimize.elementwise.find_root not usable here: {exc}; "
              "bracketing is timed against brent itself)")

        def scipy_find_root():
            return solve_batch(eq, method="brent", bracket=BRACKET, **tol)
    print(" Bracketing on [1e-3, 0.2] in every row")
    methods = ("brent", "bisection", "illinois")
    t_ref, *t_methods = race(scipy_find_root, *(
        lambda method=method: solve_batch(eq, method=method, bracket=BRACKET, **tol)
        for method in methods))
    if reference is not None:
        print(f"  ({int(np.sum(reference.success))} rows converged in find_root)")
        line("scipy.optimize.elementwise.find_root (reference)", t_ref, t_ref)
    results = {}
    for method, t in zip(methods, t_methods, strict=True):
        results[method] = solve_batch(eq, method=method, bracket=BRACKET, **tol)
        agree = (f"; vs find_root {worst_relative(results[method].root, reference.x):.1e}"
                 if reference is not None else "")
        line(f"zerotrace solve_batch {method}", t, t_ref,
             "(goal <= 1.0)" if method == "brent" else "")
        print(f"    {int(results[method].converged.sum())} converged; worst relative "
              f"difference vs Lambert W {worst_relative(results[method].root, truth):.1e}"
              f"{agree}")

    # 3. A per-row brentq loop over the equation bound to each row
    def per_row() -> list[float]:
        out = []
        for i in range(SAMPLE):
            row = eq.bind({"Re": float(Re[i]), "rr": float(rr[i])})
            out.append(scipy.optimize.brentq(row.f, *BRACKET, xtol=DEFAULT_XTOL,
                                             rtol=DEFAULT_RTOL))
        return out

    loop_roots = np.array(per_row())
    t_loop, t_brent = race(per_row, lambda: solve_batch(eq, method="brent", bracket=BRACKET,
                                                        **tol), repeat=3)
    t_loop *= ROWS / SAMPLE
    print(f" Per-row brentq loop ({SAMPLE} rows timed, scaled to {ROWS}); worst relative "
          f"difference {worst_relative(results['brent'].root[:SAMPLE], loop_roots):.1e}")
    line("brentq row by row (reference)", t_loop, t_loop)
    line("zerotrace solve_batch brent", t_brent, t_loop,
         f"= {t_loop / t_brent:.0f}x faster (goal >= 100x)")

    # 4. Peak memory of 10^6 rows beyond the inputs
    Re_big, rr_big = rows(BIG, seed=7)
    big = parse_equation(COLEBROOK, unknown="lam", parameters={"Re": Re_big, "rr": rr_big})
    start_big = haaland(Re_big, rr_big)
    print(f" {BIG} rows: peak memory beyond the inputs (tracemalloc), goal <= 400 MB")
    for method, kwargs in (("newton", {"x0": start_big}), ("brent", {"bracket": BRACKET})):
        tracemalloc.start()
        t0 = time.perf_counter()
        result = solve_batch(big, method=method, **kwargs, **tol)
        elapsed = time.perf_counter() - t0
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        print(f"  {method:8s} {peak / 2**20:8.1f} MB  {elapsed:6.2f} s  "
              f"{int(result.converged.sum())} converged")


if __name__ == "__main__":
    main()
