"""Systems benchmark: the Moré–Garbow–Hillstrom problems from their standard starts.

For each problem (tests/mgh_problems.py: the equation text zerotrace parses and an
independent numpy version) this runs zerotrace's Newton (line search on ||F||^2) and
Broyden on the parsed system, and ``scipy.optimize.root(method="hybr")`` (MINPACK's
hybrd, differences) on the numpy version, from the same start. A run counts as solved when
it says so *and* the numpy F at its answer is below 1e-8 of its size at the start. Printed:
solved counts, F (+J) evaluations per problem, and the wall time of Newton against hybr
with the analytic Jacobian (``jac=system.J``) on the same compiled callables, best of
REPEAT. No asserts: numbers for people.

Run: ``.venv/bin/python benchmarks/bench_systems.py``.
"""

from __future__ import annotations

import sys
import time
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))

import numpy as np  # noqa: E402
import scipy.optimize  # noqa: E402
from mgh_problems import problems  # noqa: E402

from solvers import parse_system, solve_system  # noqa: E402

REPEAT = 5


def solved(F, x, x0) -> bool:
    return bool(np.max(np.abs(F(x))) <= 1e-8 * max(1.0, float(np.max(np.abs(F(x0))))))


def best(fn) -> float:
    times = []
    for _ in range(REPEAT):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def main() -> None:
    warnings.simplefilter("ignore")
    rows = []
    totals = {"newton": [0, 0], "broyden": [0, 0], "hybr": [0, 0]}
    t_ours = t_ref = 0.0
    for p in problems():
        system = parse_system(p.text, unknowns=p.unknowns)
        x0 = np.array(p.x0)
        row = [p.name]
        for method in ("newton", "broyden"):
            run = solve_system(system, p.start, method=method)
            root = np.array([run.root[n] for n in system.unknowns])
            ok = run.converged and solved(p.F, root, x0)
            totals[method][0] += ok
            totals[method][1] += run.evaluations
            row.append(f"{'yes' if ok else 'no ':3s} {run.evaluations:5d}")
        hybr = scipy.optimize.root(p.F, x0, method="hybr")
        ok = bool(hybr.success and solved(p.F, hybr.x, x0))
        totals["hybr"][0] += ok
        totals["hybr"][1] += hybr.nfev
        row.append(f"{'yes' if ok else 'no ':3s} {hybr.nfev:5d}")
        rows.append(row)
        t_ours += best(lambda s=system, p=p: solve_system(s, p.start, method="newton"))
        t_ref += best(lambda s=system, x0=x0: scipy.optimize.root(s.F, x0, jac=s.J,
                                                                  method="hybr"))
    n = len(rows)
    print(f"Moré–Garbow–Hillstrom systems, standard starts ({n} problems; Watson's left out)")
    print(f"{'problem':34s} {'newton':>10s} {'broyden':>10s} {'hybr':>10s}   (solved, evals)")
    for row in rows:
        print(f"{row[0]:34s} {row[1]:>10s} {row[2]:>10s} {row[3]:>10s}")
    for name, (count, evals) in totals.items():
        print(f"  {name:8s} solved {count}/{n}, {evals} evaluations of F (and J) in all")
    far = {"newton": 0, "broyden": 0, "hybr": 0}
    cases = 0
    for p in problems():  # the source's harder starts: 10 and 100 times the standard one
        system = parse_system(p.text, unknowns=p.unknowns)
        for factor in (10.0, 100.0):
            x0 = np.array(p.x0) * factor if any(p.x0) else np.full(p.n, factor)
            cases += 1
            for method in ("newton", "broyden"):
                run = solve_system(system, dict(zip(p.unknowns, x0, strict=True)),
                                   method=method)
                root = np.array([run.root[n] for n in system.unknowns])
                far[method] += bool(run.converged and solved(p.F, root, x0))
            hybr = scipy.optimize.root(p.F, x0, method="hybr")
            far["hybr"] += bool(hybr.success and solved(p.F, hybr.x, x0))
    print(f"from 10x and 100x the standard starts ({cases} cases): "
          + ", ".join(f"{k} solved {v}" for k, v in far.items()))
    print(f"Newton wall time vs scipy hybr with jac=system.J, same callables: "
          f"{t_ours / t_ref:.2f}x ({t_ours * 1e3:.1f} ms vs {t_ref * 1e3:.1f} ms, "
          f"all {n} problems, best of {REPEAT}; zerotrace records every iterate)")


if __name__ == "__main__":
    main()
