"""Soak test: thousands of seeded random user actions on the real window, in a subprocess.

The driver (run as ``python tests/test_soak.py --actions N --seed S``) opens the window
offscreen and plays random actions with real mouse and key events on the real widgets:
typing equations (valid, invalid, deeply nested, long), editing characters, Solve, Scan
range, Cancel, switching the plot tabs, choosing digits, saving, opening samples and
saved files, a new document, CSV exports and now and then a calculation sheet. Modal
dialogs get scripted answers so nothing blocks. Between actions it lets the event loop
run for a random few milliseconds, so jobs finish, get superseded and cancelled at every
stage. At the end it closes the window (which waits on running jobs) and prints one JSON
line: actions played, unhandled exceptions, RSS after warm-up and at the end.

Why a subprocess: a hang (a deadlock between the UI thread and a worker) would hang the
test run itself. The parent gives the child a generous timeout and fails on it; the
child also arms ``faulthandler`` so a hang leaves every thread's stack in the log.

``make soak`` runs a longer version (see the Makefile).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

# Memory: the process must end within this factor of its size after warm-up.
GROWTH_LIMIT = 1.3


def run_soak(actions: int, seed: int, timeout_s: float) -> dict:
    """Run the driver in a child process; fail the test on a hang, a crash or bad output."""
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen", PYTHONFAULTHANDLER="1")
    env["PYTHONPATH"] = os.pathsep.join([str(ROOT), env.get("PYTHONPATH", "")])
    try:
        proc = subprocess.run(
            [sys.executable, str(Path(__file__).resolve()), "--actions", str(actions),
             "--seed", str(seed)],
            capture_output=True, text=True, timeout=timeout_s, cwd=ROOT, env=env)
    except subprocess.TimeoutExpired as exc:
        tail = (exc.stderr or b"")[-4000:]
        pytest.fail(f"soak hung: no end after {timeout_s:.0f} s (seed {seed}).\n{tail!r}")
    lines = [ln for ln in proc.stdout.splitlines() if ln.startswith("{")]
    assert lines, (  # the driver's own verdict (exit 1) is checked field by field below
        f"soak process failed (exit {proc.returncode}, seed {seed}):\n{proc.stderr[-4000:]}")
    return json.loads(lines[-1])


def test_soak_2000_random_actions_no_hang_no_exception_no_leak():
    figures = run_soak(actions=2000, seed=20261202, timeout_s=420)
    print("soak figures:", json.dumps(figures))
    assert figures["actions"] == 2000
    assert figures["unhandled_exceptions"] == [], figures["unhandled_exceptions"][:5]
    assert figures["abandoned_at_close"] == []
    assert figures["preview_current"]  # the typeset preview caught up with the last edit
    assert figures["rss_end_mib"] <= GROWTH_LIMIT * figures["rss_warm_mib"], figures
    # The window kept answering: every settled edit got its analysis.
    assert figures["analyses"] > 0 and figures["solves_done"] > 0 and figures["scans"] > 0


# ----------------------------------------------------------------------------- the driver
# Equations of our own (invented for this test), with the values they need. Some are
# wrong on purpose, some deep or long enough to test the typesetting budget.
_DEEP_EXP = "exp(-" * 14 + "x" + ")" * 14 + " - 0.3"
_CHAIN = "".join(f"{fn}(" for fn in ["sin", "cos", "tanh", "atan", "sqrt", "cosh"] * 15)
_CHAIN = _CHAIN + "x" + ")" * 90 + " - 0.5"
EQUATIONS = [
    "x^3 - 4*x + 1", "exp(-x) = x", "cos(x) - x/3", "x*tanh(x) - 0.8", "ln(x) + x - 2",
    "sqrt(x + 4) - x", "tan(x) - 2", "1/(x - 1) - 3", "abs(x - 0.7) - 0.2", "x^2 = 9.5",
    "sin(3*x)*exp(-x/4)", "q*x - cos(x)", "x^(1/3) - 1.2", "x*exp(x) - 5",
    _DEEP_EXP, _CHAIN, "(x - 2)^2", "x^3 - 3*x^2 + 3*x - 1.000001",
    "x + ", "sin(x", "2**", "x = = 1", "import os", "", "y*y - 2 + z",
]
FIELDS = {"x0": [0.5, 1.0, -2.0, 3.0], "x1": [1.5, 2.0, 0.1], "a": [0.0, -1.0, 0.2],
          "b": [2.0, 4.0, 1.1], "from": [-5.0, 0.0, -1.0], "to": [5.0, 10.0, 3.0]}
TEXT_KEYS = list("x+-*/^()0123456789. ") + ["exp(", "sin(", "ln("]


def _rss_mib() -> float:
    try:
        with open("/proc/self/status") as fh:
            for line in fh:
                if line.startswith("VmRSS:"):
                    return int(line.split()[1]) / 1024
    except OSError:
        pass
    import resource

    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def main(argv: list[str]) -> int:  # noqa: C901 - one scripted session, read top to bottom
    import argparse
    import faulthandler
    import gc
    import random
    import tempfile
    import threading
    import time
    import traceback

    parser = argparse.ArgumentParser()
    parser.add_argument("--actions", type=int, default=2000)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--warmup", type=int, default=0, help="default: a fifth of the actions")
    parser.add_argument("--hang-seconds", type=float, default=60.0)
    parser.add_argument("--trace", action="store_true",
                        help="print the Python allocations that grew after warm-up (slow)")
    args = parser.parse_args(argv)
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    tmp = Path(tempfile.mkdtemp(prefix="zerotrace-soak-"))
    os.environ["ZEROTRACE_RECOVERY_DIR"] = str(tmp / "recovery")

    from PySide6.QtCore import QObject, QSettings, Qt
    from PySide6.QtTest import QTest
    from PySide6.QtWidgets import QApplication, QFileDialog, QMessageBox

    errors: list[str] = []

    def excepthook(kind, value, tb):  # noqa: ANN001 - the hook's own signature
        errors.append("".join(traceback.format_exception(kind, value, tb))[-1500:])
        print(errors[-1], file=sys.stderr, flush=True)

    sys.excepthook = excepthook
    threading.excepthook = lambda a: excepthook(a.exc_type, a.exc_value, a.exc_traceback)

    rng = random.Random(args.seed)
    save_names = [str(tmp / f"sheet{i}.json") for i in range(3)]
    answers = {"save": save_names[0]}
    QMessageBox.question = staticmethod(lambda *a, **k: rng.choice(
        [QMessageBox.StandardButton.Discard, QMessageBox.StandardButton.Yes,
         QMessageBox.StandardButton.Cancel]))
    QMessageBox.warning = staticmethod(lambda *a, **k: QMessageBox.StandardButton.Ok)
    QMessageBox.critical = QMessageBox.warning
    QMessageBox.information = QMessageBox.warning
    QFileDialog.getSaveFileName = staticmethod(lambda *a, **k: (answers["save"], ""))
    QFileDialog.getOpenFileName = staticmethod(lambda *a, **k: (rng.choice(save_names), ""))

    app = QApplication.instance() or QApplication([])
    from app.window import MainWindow
    from app.window.main_window import samples_dir
    from app.window.recovery import RecoveryStore

    settings = QSettings(str(tmp / "settings.ini"), QSettings.Format.IniFormat)
    w = MainWindow(settings=settings, recovery=RecoveryStore(tmp / "recovery"))
    w.resize(1200, 760)
    w.show()
    QTest.qWaitForWindowExposed(w)
    samples = sorted(p.name for p in samples_dir().glob("*.json"))
    counts = {"analyses": 0, "solves_done": 0, "scans": 0}
    original_on_analysis, original_on_solved = w._on_analysis, w._on_solved

    def on_analysis(analysis):  # noqa: ANN001
        counts["analyses"] += 1
        original_on_analysis(analysis)

    def on_solved(*a):  # noqa: ANN002
        counts["solves_done"] += 1
        return original_on_solved(*a)

    w._on_analysis, w._on_solved = on_analysis, on_solved

    def click(button) -> None:  # noqa: ANN001
        if button.isVisible() and button.isEnabled():
            QTest.mouseClick(button, Qt.MouseButton.LeftButton)

    def type_equation() -> None:
        editor = w.strip.editor
        editor.setFocus()
        QTest.keyClick(editor, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
        QTest.keyClick(editor, Qt.Key.Key_Delete)
        text = rng.choice(EQUATIONS)
        if len(text) > 40:  # long ones are pasted, as a user would (and typing is slow)
            QApplication.clipboard().setText(text)
            QTest.keyClick(editor, Qt.Key.Key_V, Qt.KeyboardModifier.ControlModifier)
        else:
            QTest.keyClicks(editor, text)

    def edit_text() -> None:
        editor = w.strip.editor
        editor.setFocus()
        for _ in range(rng.randint(1, 4)):
            if rng.random() < 0.3:
                QTest.keyClick(editor, Qt.Key.Key_Backspace)
            else:
                QTest.keyClicks(editor, rng.choice(TEXT_KEYS))

    def set_field() -> None:
        key = rng.choice(list(FIELDS))
        field = w.inputs.fields[key]
        field.setFocus()
        QTest.keyClick(field, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
        QTest.keyClicks(field, repr(rng.choice(FIELDS[key])))

    def scan() -> None:
        counts["scans"] += 1
        click(w.inputs.scan_button)

    def save() -> None:
        answers["save"] = rng.choice(save_names)
        w.save_action.trigger() if rng.random() < 0.5 else w.save_as_action.trigger()

    def export_csv() -> None:
        answers["save"] = str(tmp / "export.csv")
        (w.export_runs_action if rng.random() < 0.5 else w.export_roots_action).trigger()

    def export_report() -> None:
        answers["save"] = str(tmp / "sheet.pdf")
        w.export_pdf_action.trigger()

    def switch_tab() -> None:
        bar = w.plot.tabBar()
        index = rng.randrange(bar.count())
        QTest.mouseClick(bar, Qt.MouseButton.LeftButton, pos=bar.tabRect(index).center())

    def digits() -> None:
        w.more_digits_action.trigger() if rng.random() < 0.5 else w.fewer_digits_action.trigger()

    actions = {  # name: (action, weight)
        "type_equation": (type_equation, 16), "edit_text": (edit_text, 14),
        "set_field": (set_field, 8), "solve": (lambda: click(w.inputs.solve_button), 16),
        "scan": (scan, 5), "cancel": (lambda: click(w.cancel_button), 6),
        "switch_tab": (switch_tab, 3), "digits": (digits, 3),
        "open_sample": (lambda: w.load_sample(rng.choice(samples)), 5), "save": (save, 3),
        "open_file": (lambda: w.open_file(), 2), "new_document": (lambda: w.new_document(), 2),
        "export_csv": (export_csv, 2), "export_report": (export_report, 0.4),
    }
    names = list(actions)
    weights = [weight for _action, weight in actions.values()]
    spent: dict[str, float] = {}
    warmup = args.warmup or max(1, args.actions // 5)
    rss_warm = float("nan")
    objects_warm = (0, 0)
    samples_rss: list[float] = []  # every tenth of the run, for the slope
    started = time.perf_counter()
    for i in range(args.actions):
        # A hang anywhere from here on dumps every thread's stack and ends the process.
        faulthandler.dump_traceback_later(args.hang_seconds, exit=True)
        if i == warmup:
            gc.collect()
            rss_warm = _rss_mib()
            objects_warm = (len(w.findChildren(QObject)), len(gc.get_objects()))
            if args.trace:
                import tracemalloc

                tracemalloc.start(12)
                snapshot = tracemalloc.take_snapshot()
        if i % max(1, args.actions // 10) == 0:
            samples_rss.append(round(_rss_mib(), 1))
        name = rng.choices(names, weights)[0]
        began = time.perf_counter()
        try:
            actions[name][0]()
        except Exception:  # an action that raised in the driver itself is a finding too
            errors.append(traceback.format_exc()[-1500:])
        QTest.qWait(rng.choice((0, 0, 1, 2, 5, 10, 20)))
        spent[name] = spent.get(name, 0.0) + time.perf_counter() - began
    faulthandler.dump_traceback_later(args.hang_seconds, exit=True)
    # Let the last jobs end the way a user pausing would, then measure and close.
    deadline = time.perf_counter() + 30
    while time.perf_counter() < deadline and any(
            w.runner.is_busy(lane) for lane in ("preview", "solve", "scan", "report")):
        QTest.qWait(20)
    # The preview caught up with the last edit (no stale typeset form left on screen).
    QTest.qWait(400)  # past the edit debounce, then until the analysis lands
    deadline = time.perf_counter() + 30
    while time.perf_counter() < deadline and (
            w.runner.is_busy("preview") or w.strip.editor.toPlainText() != (
                w.analysis.text if w.analysis is not None else None)):
        QTest.qWait(20)
    preview_current = w.analysis is not None and w.analysis.text == w.strip.text()
    gc.collect()
    rss_end = _rss_mib()
    objects_end = (len(w.findChildren(QObject)), len(gc.get_objects()))
    if args.trace:
        grown = tracemalloc.take_snapshot().compare_to(snapshot, "traceback")
        for stat in grown[:12]:
            print(stat, *stat.traceback.format()[-12:], sep="\n  ", file=sys.stderr)
    closing = time.perf_counter()
    abandoned = w.runner.stop()  # what closing does first; returns the jobs it gave up on
    QMessageBox.question = staticmethod(lambda *a, **k: QMessageBox.StandardButton.Discard)
    w.close()
    close_s = time.perf_counter() - closing
    faulthandler.cancel_dump_traceback_later()
    print(json.dumps({
        "actions": args.actions, "seed": args.seed, "hangs": 0,
        "unhandled_exceptions": errors, "rss_warm_mib": round(rss_warm, 1),
        "rss_end_mib": round(rss_end, 1), "warmup_actions": warmup,
        "seconds": round(time.perf_counter() - started, 1), "close_seconds": round(close_s, 2),
        "abandoned_at_close": abandoned, "rss_samples_mib": samples_rss, **counts,
        "preview_current": preview_current,
        "qt_objects_warm_end": [objects_warm[0], objects_end[0]],
        "python_objects_warm_end": [objects_warm[1], objects_end[1]],
        "seconds_by_action": {k: round(v, 1) for k, v in sorted(spent.items())},
    }), flush=True)
    app.processEvents()
    healthy = (not errors and not abandoned and preview_current
               and rss_end <= GROWTH_LIMIT * rss_warm)
    return 0 if healthy else 1


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
