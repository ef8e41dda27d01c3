"""Benchmark of units, printed as ratios against the same equation without units, this run.

The equation (an invented cooling line: Darcy-Weisbach solved for the diameter) is solved
twice, with the same method and start: once with plain SI numbers and x in metres, once with
every parameter given as a value with a unit (``"35 L/s"``) and the diameter asked in mm.

* end to end: parse_equation + Newton-Raphson to full precision (pint's registry already
  built: its one-off cost on first use is printed apart);
* bind + solve: ``Equation.bind`` of new values (unit strings against floats) + Newton;
* per iteration: one scalar call of the compiled f (x in mm against x in m), and a whole
  Newton run on already-bound equations (the iteration loop alone).

Ratios near 1 mean the unit work stays out of the loop. Run:
.venv/bin/python benchmarks/bench_units.py
"""

from __future__ import annotations

import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from solvers import newton, parse_equation  # noqa: E402

DARCY = "hf = fD*L/D*(4*Q/(pi*D^2))^2/(2*g)"
PLAIN = {"hf": 4.5, "fD": 0.02, "L": 250.0, "Q": 0.035, "g": 9.80665}
UNITS = {"hf": "4.5 m", "fD": 0.02, "L": "0.25 km", "Q": "35 L/s", "g": "9.80665 m/s^2"}
PLAIN2 = {"hf": 3.0, "fD": 0.019, "L": 300.0, "Q": 0.04, "g": 9.80665}
UNITS2 = {"hf": "3 m", "fD": 0.019, "L": "300 m", "Q": "40 L/s", "g": "9.80665 m/s^2"}


def paired(fn_units, fn_plain, repeat: int = 9, number: int = 1) -> tuple[float, float]:
    """Best time per call of each, measured alternately (a shared machine's load then
    weighs on both alike)."""
    best = [float("inf"), float("inf")]
    for _ in range(repeat):
        for i, fn in enumerate((fn_units, fn_plain)):
            t0 = time.perf_counter()
            for _ in range(number):
                fn()
            best[i] = min(best[i], (time.perf_counter() - t0) / number)
    return best[0], best[1]


def first_use() -> float:
    code = ("import time; t = time.perf_counter(); from solvers.units import read_unit; "
            "read_unit('mm'); print(time.perf_counter() - t)")
    root = Path(__file__).resolve().parents[1]
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=root, env={"PYTHONPATH": str(root)}, check=True)
    return float(out.stdout)


def main() -> None:
    def plain_solve():
        eq = parse_equation(DARCY, unknown="D", parameters=PLAIN)
        return newton(eq.f, 0.15, fprime=eq.fprime)

    def units_solve():
        eq = parse_equation(DARCY, unknown="D", parameters=UNITS, unknown_unit="mm")
        return newton(eq.f, 150.0, fprime=eq.fprime)

    a, b = plain_solve(), units_solve()  # warm (and pint's registry built)
    assert abs(a.root * 1000 - b.root) <= 1e-12 * b.root, (a.root, b.root)
    t_units, t_plain = paired(units_solve, plain_solve, number=5)
    print(f"end to end (parse + Newton)   units {t_units * 1e3:7.2f} ms   "
          f"plain {t_plain * 1e3:7.2f} ms   ratio {t_units / t_plain:5.2f}")

    eq_plain = parse_equation(DARCY, unknown="D", parameters=PLAIN)
    eq_units = parse_equation(DARCY, unknown="D", parameters=UNITS, unknown_unit="mm")

    def plain_bind():
        e = eq_plain.bind(PLAIN2)
        return newton(e.f, 0.15, fprime=e.fprime)

    def units_bind():
        e = eq_units.bind(UNITS2)
        return newton(e.f, 150.0, fprime=e.fprime)

    t_units, t_plain = paired(units_bind, plain_bind, number=200)
    print(f"bind + Newton                 units {t_units * 1e6:7.1f} us   "
          f"plain {t_plain * 1e6:7.1f} us   ratio {t_units / t_plain:5.2f}")

    n = 20_000
    eq_plain.f(0.15)
    eq_units.f(150.0)
    t_units, t_plain = (t / n for t in paired(lambda: [eq_units.f(150.0) for _ in range(n)],
                                               lambda: [eq_plain.f(0.15) for _ in range(n)]))
    print(f"per iteration: scalar f(x)    units {t_units * 1e6:7.3f} us   "
          f"plain {t_plain * 1e6:7.3f} us   ratio {t_units / t_plain:5.2f}")
    run_p = newton(eq_plain.f, 0.15, fprime=eq_plain.fprime)
    run_u = newton(eq_units.f, 150.0, fprime=eq_units.fprime)
    t_units, t_plain = paired(lambda: newton(eq_units.f, 150.0, fprime=eq_units.fprime),
                              lambda: newton(eq_plain.f, 0.15, fprime=eq_plain.fprime),
                              number=200)
    print(f"per iteration: Newton loop    units {t_units / run_u.iterations * 1e6:7.2f} us   "
          f"plain {t_plain / run_p.iterations * 1e6:7.2f} us   ratio {t_units / t_plain:5.2f}"
          f"   ({run_u.iterations} vs {run_p.iterations} iterations)")
    print(f"first use of units in a process (import pint, build its registry, read 'mm'): "
          f"{first_use() * 1e3:.0f} ms, once")


if __name__ == "__main__":
    main()
