"""Benchmark of solvers.equation, printed as ratios against references measured in this run.

* parse: parse_equation (checks, two sympy builds, derivative, two numpy compiles) against
  sympy's own parse_expr + diff + two lambdify calls on the same (trusted, ours) text;
* scalar f(x): our compiled f on a Python float against a hand-written math-module function
  (the floor) and against sympy's lambdify-to-numpy called on a float under np.errstate
  (what a plain lambdify user would get with the same never-warn guarantee);
* array f(x): our f on 100,000 points against lambdify-to-numpy on the same array;
* bind: ``Equation.bind`` of new parameter values against ``parse_equation`` of the same
  text with those values (the re-parse it replaces); the ratio parse/bind is printed;
* rows: f over 100,000 rows of bound parameter arrays (one vectorised call) against a
  Python loop of scalar binds and calls, per row.

Ratios below 1 mean zerotrace is faster. Run: .venv/bin/python benchmarks/bench_equation.py
"""

from __future__ import annotations

import math
import sys
import time
from pathlib import Path

import numpy as np
import sympy as sp
from sympy.parsing.sympy_parser import parse_expr

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from solvers.equation import parse_equation  # noqa: E402

COLEBROOK = "1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))"
PARAMS = {"eps": 4.5e-5, "D": 0.1, "Re": 1e5}  # invented pipe
# The same equation in sympy syntax, with the parameter values written in (reference only).
REFERENCE = "1/sqrt(f) + 2*log(4.5e-5/(3.7*0.1) + 2.51/(1e5*sqrt(f)), 10)"


def best_of(fn, repeat: int = 5, number: int = 1) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        for _ in range(number):
            fn()
        times.append((time.perf_counter() - t0) / number)
    return min(times)


def main() -> None:
    parse_equation("x^2 - 2")  # warm imports
    f_sym = sp.Symbol("f")

    def reference_parse():
        expr = parse_expr(REFERENCE, local_dict={"f": f_sym})
        d = sp.diff(expr, f_sym)
        sp.lambdify(f_sym, expr, "numpy")
        sp.lambdify(f_sym, d, "numpy")

    ours_parse = best_of(lambda: parse_equation(COLEBROOK, parameters=PARAMS), number=10)
    ref_parse = best_of(reference_parse, number=10)
    print(f"parse+differentiate+compile  ours {ours_parse * 1e3:7.2f} ms   "
          f"sympy parse_expr+diff+lambdify {ref_parse * 1e3:7.2f} ms   "
          f"ratio {ours_parse / ref_parse:5.2f}")

    eq = parse_equation(COLEBROOK, parameters=PARAMS)
    eq.f(0.02)  # compile the scalar path

    def hand(f: float) -> float:
        return 1 / math.sqrt(f) + 2 * math.log10(4.5e-5 / 0.37 + 2.51e-5 / math.sqrt(f))

    plain = sp.lambdify(f_sym, parse_expr(REFERENCE, local_dict={"f": f_sym}), "numpy")

    def plain_guarded(x: float) -> float:
        with np.errstate(all="ignore"):
            return float(plain(x))

    n = 20_000
    ours_call = best_of(lambda: [eq.f(0.02) for _ in range(n)]) / n
    hand_call = best_of(lambda: [hand(0.02) for _ in range(n)]) / n
    plain_call = best_of(lambda: [plain_guarded(0.02) for _ in range(n)]) / n
    print(f"scalar f(x)                  ours {ours_call * 1e6:7.3f} us   "
          f"hand-written math {hand_call * 1e6:7.3f} us (ratio {ours_call / hand_call:5.2f})   "
          f"lambdify numpy {plain_call * 1e6:7.3f} us (ratio {ours_call / plain_call:5.2f})")

    x = np.linspace(0.005, 0.1, 100_000)
    ours_arr = best_of(lambda: eq.f(x), number=5)
    with np.errstate(all="ignore"):
        ref_arr = best_of(lambda: plain(x), number=5)
    print(f"array f(x), 1e5 points       ours {ours_arr * 1e3:7.2f} ms   "
          f"lambdify numpy {ref_arr * 1e3:7.2f} ms   ratio {ours_arr / ref_arr:5.2f}")
    assert np.allclose(eq.f(x), plain(x), rtol=1e-14)  # same function, or the ratios mean nothing

    # Bind against re-parse: the same text and values, on the same compiled code.
    other = {"eps": 1.5e-6, "D": 0.2, "Re": 3e5}
    bind = best_of(lambda: eq.bind(other), number=200)
    parse = best_of(lambda: parse_equation(COLEBROOK, parameters=other), number=10)
    assert eq.bind(other).f(0.02) == parse_equation(COLEBROOK, parameters=other).f(0.02)
    print(f"bind new values              ours {bind * 1e6:7.1f} us   "
          f"parse_equation {parse * 1e3:7.2f} ms   parse/bind ratio {parse / bind:7.0f}")

    # 1e5 rows of parameter values: one vectorised call against scalar binds row by row.
    rng = np.random.default_rng(7)
    rows = {"eps": rng.uniform(1e-6, 1e-4, 100_000), "D": rng.uniform(0.05, 0.5, 100_000),
            "Re": rng.uniform(4e3, 1e7, 100_000)}
    table = eq.bind(rows)
    vector_rows = best_of(lambda: table.f(0.02), number=5)
    sample = range(0, 100_000, 100)

    def row_loop():
        for i in sample:
            eq.bind({k: float(v[i]) for k, v in rows.items()}).f(0.02)

    loop_rows = best_of(row_loop, repeat=3) / len(sample)
    print(f"f over 1e5 bound rows        ours {vector_rows * 1e3:7.2f} ms (one call)   "
          f"scalar bind+f per row {loop_rows * 1e6:7.1f} us   "
          f"ratio per row {vector_rows / 1e5 / loop_rows:7.4f}")


if __name__ == "__main__":
    main()
