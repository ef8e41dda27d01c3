"""Grab the window at its main states as PNGs (for the README and for looking at the layout).

Run under a real (virtual) display so fonts and the style are those a user sees::

    xvfb-run -s "-screen 0 1280x800x24" .venv/bin/python -m app.gui_screenshots docs/screenshots

Writes solve.png (a sample after Solve), scan.png (a scan with roots and poles),
convergence.png (the convergence view), methods.png (all six methods, start values
seeded from the scan range), error.png (an equation with a typo), and from the system
window system-<sample>.png (each sample of samples/systems solved) and system-error.png
(a system with a bad line), and tables.png (a sweep of the friction-factor sample in the
tables window).
Recovery files and settings go to a temporary folder, never the user's.
"""

from __future__ import annotations

import os
import sys
import tempfile
import time
from pathlib import Path


def _spin(app, condition, timeout: float = 30.0) -> None:
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        app.processEvents()
        if condition():
            break
        time.sleep(0.01)
    for _ in range(20):  # let pending paints and draw_idle calls happen
        app.processEvents()
        time.sleep(0.01)


def main(argv: list[str] | None = None) -> int:
    args = list(sys.argv[1:] if argv is None else argv)
    out = Path(args[0] if args else "docs/screenshots")
    out.mkdir(parents=True, exist_ok=True)
    scratch = Path(tempfile.mkdtemp(prefix="zerotrace-shots-"))
    os.environ["ZEROTRACE_RECOVERY_DIR"] = str(scratch / "recovery")

    from PySide6.QtCore import QSettings
    from PySide6.QtWidgets import QApplication

    app = QApplication.instance() or QApplication(["zerotrace"])
    from app.window import MainWindow

    settings = QSettings(str(scratch / "settings.ini"), QSettings.Format.IniFormat)
    w = MainWindow(settings=settings)
    w.resize(1280, 800)
    w.show()

    def settled() -> bool:
        return w.analysis is not None and w.analysis.text == w.strip.text()

    def idle() -> bool:
        return settled() and not any(w.runner.is_busy(x) for x in ("preview", "solve", "scan"))

    w.load_sample("cooling-water-friction.json")
    _spin(app, settled)
    w.inputs.set_field("x0", 0.008)  # starts far enough away that the paths show
    w.inputs.set_field("x1", 0.009)
    w.start_scan()
    _spin(app, lambda: w.scan_result is not None and idle())
    w.solve()
    _spin(app, lambda: w.solution is not None and idle())
    w.grab().save(str(out / "solve.png"))
    w.plot.setCurrentIndex(1)
    _spin(app, idle)
    w.grab().save(str(out / "convergence.png"))
    w.plot.setCurrentIndex(0)

    # All six methods, start values left blank: seeded from a quick scan of the range.
    w.load_sample("cooling-water-friction.json")
    _spin(app, settled)
    for name in ("illinois", "bisection", "brent"):
        w.inputs.method_boxes[name].setChecked(True)
    for key in ("x0", "x1", "a", "b"):
        w.inputs.set_field(key, None)
    w.solve()
    _spin(app, lambda: w.solution is not None and len(w.solution.runs) == 6 and idle())
    w.grab().save(str(out / "methods.png"))

    w.load_sample("wall-conduction-eigenvalues.json")
    _spin(app, settled)
    w.start_scan()
    _spin(app, lambda: w.scan_result is not None and idle())
    w.solve()
    _spin(app, lambda: w.solution is not None and idle())
    w.plot.select_path("newton")
    _spin(app, idle)
    w.grab().save(str(out / "scan.png"))

    w.strip.set_text("x*tan(x) = h*L/k +")
    _spin(app, lambda: settled() and bool(w.analysis.error))
    w.grab().save(str(out / "error.png"))

    _systems(app, w, out)
    _tables(app, w, out)

    w._saved_text = ""  # nothing to ask about: close without the unsaved-changes prompt
    w.setWindowModified(False)
    w.runner.stop()
    w.recovery.clear()
    print("\n".join(str(p) for p in sorted(out.glob("*.png"))))
    return 0


def _systems(app, w, out: Path) -> None:
    """Each system sample solved in the system window, and a bad line."""
    import app as package

    sw = w.open_system()
    sw.resize(1280, 800)

    def solved() -> bool:
        return sw.solution is not None and not sw.jobs.is_busy("system-solve")

    for path in sorted((package.samples_dir() / "systems").glob("*.json")):
        sw._saved = sw.worksheet()  # a solve changes nothing to save; never a modal here
        w.open_path(path, ask=False, as_copy=True)
        _spin(app, lambda: "equations in" in sw.status.text())
        sw.solution = None
        sw.solve()
        _spin(app, solved)
        sw.grab().save(str(out / f"system-{path.stem}.png"))
    sw.editor.setPlainText("x^2 + y^2 = 4\nx*y = = 1")
    _spin(app, lambda: bool(sw.reading.error))
    sw.grab().save(str(out / "system-error.png"))
    sw._saved = sw.worksheet()  # nothing to ask about when the window closes
    sw.close()


def _tables(app, w, out: Path) -> None:
    """The friction-factor sample swept over the Reynolds number in the tables window, one
    row's full run open beside the design chart."""
    w.load_sample("cooling-water-friction.json")
    _spin(app, lambda: w.analysis is not None and w.analysis.text == w.strip.text())
    w.open_tables()
    t = w.tables
    t.resize(1280, 800)
    t.sweep_name_edit.setText("Re")
    t.sweep_from.setText("4000")
    t.sweep_to.setText("1e8")
    t.sweep_log.setChecked(True)
    t.sweep_count.setValue(60)
    t.make_sweep()
    t.x0_edit.setText("0.02")
    t.run()
    _spin(app, lambda: t.done is not None and not t.runner.is_busy("batch"))
    t.view.selectRow(12)
    t.open_row(12)
    _spin(app, lambda: t.lane is not None and not t.runner.is_busy("batch"))
    t.grab().save(str(out / "tables.png"))
    t.close()


if __name__ == "__main__":
    raise SystemExit(main())
