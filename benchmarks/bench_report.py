"""Benchmark: time to write the calculation sheet against the time to solve alone.

For a bundled sample (invented scenario), the best of N runs of

* ``pipeline.solve(ws)``: parse and run the worksheet's methods (the reference), and
* the sheet as the CLI writes it: ``pipeline.solve_and_scan(ws)`` (solve and scan),
  then ``report.write_report(ws, ..., solution=, scan=)`` (draw both figures, lay out
  and write the PDF and its CSV files),

printed with their ratio. No asserts: the numbers are for people (``make bench``).
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from app.documents.report import write_report  # noqa: E402
from app.documents.worksheet import load  # noqa: E402
from solvers import pipeline  # noqa: E402

SAMPLE = ROOT / "samples" / "cooling-water-friction.json"
REPEATS = 5


def best_of(n: int, action) -> float:
    best = float("inf")
    for _ in range(n):
        start = time.perf_counter()
        action()
        best = min(best, time.perf_counter() - start)
    return best


def main() -> None:
    ws = load(SAMPLE)
    with tempfile.TemporaryDirectory() as folder:
        out = Path(folder)
        def sheet_of(**options):
            solution, scan = pipeline.solve_and_scan(ws)
            return write_report(ws, out / "calc.pdf", solution=solution, scan=scan,
                                overwrite=True, **options)

        sheet_of()  # the first call registers fonts and imports mathtext
        solve = best_of(REPEATS * 4, lambda: pipeline.solve(ws))
        sheet = best_of(REPEATS, lambda: sheet_of(csv_dir=out / "csv", worksheet_path=SAMPLE))
        pages = sheet_of().pages
    print(f"sample: {SAMPLE.name} ({pages} pages)")
    print(f"solve alone (pipeline.solve), best of {REPEATS * 4}: {solve * 1e3:9.2f} ms")
    print(f"calculation sheet + CSVs,      best of {REPEATS}: {sheet * 1e3:9.2f} ms")
    print(f"ratio sheet / solve: {sheet / solve:.0f}x")


if __name__ == "__main__":
    main()
