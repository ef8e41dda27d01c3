"""Start-up of `zerotrace solve` against the import floor `python -c "import sympy, numpy"`.

Both are timed as whole processes in the same run (min of N), so the ratio says what zerotrace adds
on top of the two libraries it cannot start without. Target: <= 1.3x.
"""

from __future__ import annotations

import subprocess
import sys
import time

REPEAT = 7


def best_of(argv: list[str]) -> float:
    times = []
    for _ in range(REPEAT):
        t0 = time.perf_counter()
        subprocess.run(argv, check=True, capture_output=True)
        times.append(time.perf_counter() - t0)
    return min(times)


def main() -> None:
    floor = best_of([sys.executable, "-c", "import sympy, numpy"])
    solve = best_of(
        [sys.executable, "-m", "app.cli", "solve", "x^3 - 2x - 5", "--x0", "2",
         "--bracket", "2", "3"]
    )
    print(f"{'measure':44s} {'seconds':>9s}")
    print(f"{'import floor: python -c import sympy, numpy':44s} {floor:9.3f}")
    print(f"{'zerotrace solve (three methods, table out)':44s} {solve:9.3f}")
    print(f"start-up ratio solve / floor = {solve / floor:.2f}x (target <= 1.3x)")


if __name__ == "__main__":
    main()
