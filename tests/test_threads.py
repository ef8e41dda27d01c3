"""Threads and long work: no deadlock, one thread at a time in matplotlib, budgets on
typesetting, closing never waits on a runaway job.

Each check that could hang runs in a child process with a timeout, so a deadlock fails
the test instead of hanging the run (no wall-clock assert anywhere: the timeouts are
generous bounds on "ends at all").
"""

from __future__ import annotations

import os
import subprocess
import sys
import textwrap
import threading
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))
pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import solve_and_wait, type_equation  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated
# matplotlib's Qt toolbar asks Qt about a deprecated attribute on every canvas: not ours.
pytestmark = pytest.mark.filterwarnings("ignore:Enum value .*AA_UseHighDpiPixmaps")
ROOT = Path(__file__).resolve().parents[1]


def run_child(code: str, timeout_s: float) -> str:
    """Run ``code`` in a fresh interpreter; fail on a hang (timeout) or a non-zero exit."""
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen", PYTHONFAULTHANDLER="1")
    env["PYTHONPATH"] = os.pathsep.join([str(ROOT), env.get("PYTHONPATH", "")])
    try:
        proc = subprocess.run([sys.executable, "-c", textwrap.dedent(code)], cwd=ROOT, env=env,
                              capture_output=True, text=True, timeout=timeout_s)
    except subprocess.TimeoutExpired as exc:
        pytest.fail(f"hung: no end after {timeout_s:.0f} s\n{(exc.stderr or b'')[-3000:]!r}")
    assert proc.returncode == 0, f"exit {proc.returncode}\n{proc.stderr[-3000:]}"
    return proc.stdout


# ------------------------------------------------------------------ the job runner
def test_thousands_of_short_jobs_end_without_deadlock():
    # Jobs that end at once, submitted faster than they finish, superseded and cancelled
    # at random, in four lanes, while the UI thread keeps making and dropping Python
    # objects (so the garbage collector runs in the middle of job hand-overs). The old
    # runner deleted each finished QThread from the UI thread and hung within ~1,500.
    out = run_child("""
        import gc, random
        from PySide6.QtCore import QCoreApplication, QEventLoop
        from app.window.workers import JobRunner

        app = QCoreApplication([])
        runner = JobRunner()
        rng = random.Random(7)
        ended = {"done": 0, "cancelled": 0, "failed": 0}
        def work_for(i):
            def work(progress, cancel):
                progress(0.5)
                if i % 13 == 0:
                    raise ValueError("bad input %d" % i)
                return [i] * rng.randint(1, 50)
            return work
        lanes = ("preview", "solve", "scan", "report")
        for i in range(4000):
            lane = rng.choice(lanes)
            runner.submit(lane, work_for(i),
                          on_done=lambda r: ended.__setitem__("done", ended["done"] + 1),
                          on_error=lambda m: ended.__setitem__("failed", ended["failed"] + 1),
                          on_cancel=lambda: ended.__setitem__("cancelled",
                                                              ended["cancelled"] + 1),
                          supersede=rng.random() < 0.5)
            if rng.random() < 0.1:
                runner.cancel(rng.choice(lanes))
            junk = [object() for _ in range(rng.randint(0, 300))]
            if rng.random() < 0.05:
                gc.collect()
            app.processEvents(QEventLoop.ProcessEventsFlag.AllEvents, rng.choice((0, 1, 5)))
        while any(runner.is_busy(lane) for lane in lanes):
            app.processEvents(QEventLoop.ProcessEventsFlag.AllEvents, 10)
        print(ended["done"], ended["failed"], ended["cancelled"])
        assert runner.stop() == []
    """, timeout_s=180)
    done, failed, _cancelled = (int(v) for v in out.split())
    assert done > 100 and failed > 0  # results and failures both came through


def test_results_reach_the_ui_thread_newest_wins(qtbot):
    from app.window.workers import JobRunner

    runner = JobRunner()
    release = threading.Event()
    seen: list[tuple[str, bool]] = []
    ui = threading.get_ident()

    def slow(_p, _c):
        release.wait(30)
        return "old"

    runner.submit("solve", slow, on_done=lambda r: seen.append((r, threading.get_ident() == ui)))
    runner.submit("solve", lambda _p, _c: "middle", on_done=lambda r: seen.append((r, True)))
    runner.submit("solve", lambda _p, _c: "new",
                  on_done=lambda r: seen.append((r, threading.get_ident() == ui)))
    assert runner.is_busy("solve")
    release.set()
    qtbot.waitUntil(lambda: not runner.is_busy("solve"), timeout=10_000)
    # The superseded result is dropped, the queued middle one replaced by the newest,
    # and the callback ran in the UI thread.
    assert seen == [("new", True)]
    assert runner.stop() == []


def test_a_window_process_hands_the_interpreter_back_within_a_millisecond(qtbot):
    # CPython's default switch interval (5 ms) let a computing worker keep the window's
    # thread waiting 120-180 ms at a stretch (benchmarks/bench_gui.py, a heavy scan); the
    # runner of the window's jobs shortens it for the process, and never lengthens it
    from app.window.workers import WINDOW_SWITCH_INTERVAL, JobRunner

    before = sys.getswitchinterval()
    try:
        sys.setswitchinterval(0.005)
        JobRunner().stop()
        assert sys.getswitchinterval() <= WINDOW_SWITCH_INTERVAL <= 0.001
        sys.setswitchinterval(0.0005)  # a process that asked for less keeps it
        JobRunner().stop()
        assert sys.getswitchinterval() == pytest.approx(0.0005)
    finally:
        sys.setswitchinterval(before)


def test_cancel_reaches_the_work_and_reports_cancelled(qtbot):
    from app.window.workers import JobRunner

    runner = JobRunner()
    started = threading.Event()
    outcome: list[str] = []

    def polling(progress, cancelled):
        started.set()
        while not cancelled():
            progress(0.1)
            threading.Event().wait(0.005)
        raise RuntimeError("stopped")  # any exception after a cancel counts as a cancel

    runner.submit("scan", polling, on_done=lambda r: outcome.append("done"),
                  on_error=lambda m: outcome.append("failed"),
                  on_cancel=lambda: outcome.append("cancelled"))
    assert started.wait(10)
    runner.cancel("scan")
    qtbot.waitUntil(lambda: not runner.is_busy("scan"), timeout=10_000)
    assert outcome == ["cancelled"]


def test_closing_never_waits_on_a_runaway_job():
    # A job that ignores cancel and never ends: stop() gives up on it after the bound and
    # the process still exits normally (no abort from a QThread destroyed while running).
    out = run_child("""
        import threading
        from PySide6.QtCore import QCoreApplication
        from app.window.workers import JobRunner

        app = QCoreApplication([])
        runner = JobRunner()
        forever = threading.Event()
        runner.submit("solve", lambda p, c: forever.wait())
        runner.submit("scan", lambda p, c: 1)
        print(sorted(runner.stop(timeout_ms=300)))
        assert not runner.submit("solve", lambda p, c: 2)  # nothing starts after close
    """, timeout_s=60)
    assert out.strip() == "['solve']"


# ------------------------------------------------------------------ matplotlib
def test_three_threads_typeset_and_draw_through_the_one_lock():
    # The strip's typesetting, the report's formulas and figures and the equation's
    # mathtext check, from three threads at once (the UI thread draws a canvas meanwhile).
    # Without the lock this raised spurious mathtext parse errors or corrupted the heap.
    out = run_child("""
        import threading
        import time
        from PySide6.QtWidgets import QApplication
        from app.window.equation_strip import render_png
        from solvers import parse_equation
        from app.documents import figures, report
        from app.documents.typesetting import mathtext
        from matplotlib.figure import Figure
        from matplotlib.backends.backend_agg import FigureCanvasAgg

        app = QApplication([])
        eq = parse_equation("x*exp(-x/2) - sin(3*x)/4")
        tex = eq.latex
        dtex = r"\\frac{df}{dx} = " + eq.derivative_latex
        errors = []
        def loop(body):
            def run():
                try:
                    for i in range(40):
                        body(i)
                except Exception as exc:
                    errors.append(repr(exc))
            return threading.Thread(target=run)
        def strip(i):
            assert render_png(dtex if i % 2 else tex, dpi=90 + i) is not None
        def sheet(i):
            assert report.typeset._math(tex + " + %d" % i, 400.0) is not None
            if i % 8 == 0:
                report.typeset._figure(lambda ax: figures.draw_function(ax, eq.f, -1.0, 6.0),
                                       300, 200)
        def check(i):
            assert mathtext(tex, "plain").startswith("$")
        threads = [loop(strip), loop(sheet), loop(check)]
        for t in threads:
            t.start()
        fig = Figure()
        canvas = FigureCanvasAgg(fig)
        ax = fig.add_subplot()
        while any(t.is_alive() for t in threads):
            with figures.MATPLOTLIB_LOCK:
                ax.clear()
                ax.set_title(r"$\\alpha_{%d} = x^{2}$" % len(errors))
                canvas.draw()
            # A UI thread idles between paints; redrawing in a tight loop would take the
            # lock straight back and starve the other threads (the lock is not fair).
            time.sleep(0.002)
        print(len(errors), errors[:3])
    """, timeout_s=240)
    assert out.startswith("0 "), out


def test_typesetting_waits_for_the_lock(qapp):
    from app.documents.figures import MATPLOTLIB_LOCK
    from app.window.equation_strip import render_png

    result: list[bytes | None] = []
    with MATPLOTLIB_LOCK:
        worker = threading.Thread(target=lambda: result.append(render_png("x^{2} = 1")))
        worker.start()
        worker.join(0.5)
        held_off = worker.is_alive() and not result  # it cannot render while we hold it
    worker.join(30)
    assert held_off
    assert result and result[0] is not None and result[0].startswith(b"\x89PNG")


# ------------------------------------------------------------------ budgets
DEEP_EXP = "exp(-" * 14 + "x" + ")" * 14 + " - 0.3"
# 90 functions in a 517-character chain
CHAIN = "".join(f"{fn}(" for fn in ["sin", "cos", "tanh", "atan", "sqrt", "cosh"] * 15)
CHAIN = CHAIN + "x" + ")" * 90 + " - 0.3"


def test_deep_exponential_derivative_typesets_quickly():
    # d/dx of exp(-exp(-...(x))) nested 14 deep: its LaTeX took 133 s (the printer's sign
    # questions simplified every exponent). It must come out, and match f' numerically.
    out = run_child(f"""
        from solvers import parse_equation
        from app.window.equation_strip import analyse, TOO_LARGE_DERIVATIVE
        eq = parse_equation({DEEP_EXP!r})
        d = eq.derivative_latex
        assert d and d.count("e^{{") >= 14, d
        a = analyse({DEEP_EXP!r}, None, {{}}, dpi=100)
        assert a.ok and a.equation_png and a.derivative_png
        print(len(d))
    """, timeout_s=120)
    assert int(out) > 100


def test_long_chain_parses_solves_and_reports_within_budget(tmp_path):
    # A 517-character chain of 90 functions: parse, solve, preview and calculation sheet
    # all end; the derivative is over the typesetting budget and said so.
    assert len(CHAIN) >= 517
    out = run_child(f"""
        import math
        from pathlib import Path
        from solvers import parse_equation, newton, pipeline
        from app.documents import worksheet
        from solvers.equation import MAX_TYPESET_CHARS
        from app.documents.report import write_report
        from app.window.equation_strip import analyse, TOO_LARGE_DERIVATIVE
        eq = parse_equation({CHAIN!r})
        run = newton(eq.f, 0.5, fprime=eq.fprime)
        a = analyse({CHAIN!r}, None, {{}}, dpi=100)
        assert a.ok
        assert len(eq.derivative_latex) <= MAX_TYPESET_CHARS
        # Its derivative is over the compile limit: Newton differentiates numerically.
        assert eq.fprime is None and not eq.derivative_too_large and not a.derivative_note
        ws = worksheet.Worksheet(equation={CHAIN!r}, unknown="x", settings=worksheet.Settings(
            x0=0.5, x1=0.6, bracket=(0.0, 2.0)))
        solution, scan = pipeline.solve_and_scan(ws)  # the sheet is handed results
        write_report(ws, Path({str(tmp_path / "chain.pdf")!r}), solution=solution, scan=scan)
        print(run.reason)
    """, timeout_s=240)
    assert out.strip()
    assert (tmp_path / "chain.pdf").stat().st_size > 1000


def test_derivative_over_the_budget_says_too_large():
    # 30 levels: the derivative is compiled (Newton uses it) but its LaTeX is over the
    # typesetting budget, so the strip says "too large to typeset" instead of drawing it.
    text = "exp(-" * 30 + "x" + ")" * 30 + " - 0.3"
    out = run_child(f"""
        from app.window.equation_strip import analyse, TOO_LARGE_DERIVATIVE
        a = analyse({text!r}, None, {{}}, dpi=100)
        assert a.ok and a.equation.fprime is not None
        assert a.equation.derivative_too_large and a.derivative_latex == ""
        assert a.derivative_note == TOO_LARGE_DERIVATIVE and a.derivative_png is None
        assert a.latex  # (mathtext may refuse 30 nested levels: the text is shown then)
        print("ok")
    """, timeout_s=120)
    assert out.strip() == "ok"


def test_oversize_latex_is_not_typeset(qapp):
    from app.window.equation_strip import render_png
    from solvers.equation import MAX_TYPESET_CHARS

    long = " + ".join(["x^{2}"] * (MAX_TYPESET_CHARS // 5))
    assert len(long) > MAX_TYPESET_CHARS
    assert render_png(long) is None
    assert render_png("x^{2}") is not None


# ------------------------------------------------------------------ the window
def test_window_typesets_off_the_ui_thread_and_says_too_large(qtbot, window, monkeypatch):
    import app.window.equation_strip as strip_module
    from app.window.equation_strip import TOO_LARGE_DERIVATIVE

    ui = threading.get_ident()
    calls: list[bool] = []
    real = strip_module.render_png

    def recording(*args, **kwargs):
        calls.append(threading.get_ident() == ui)
        return real(*args, **kwargs)

    monkeypatch.setattr(strip_module, "render_png", recording)
    type_equation(qtbot, window, "x*exp(-x/3) - 0.4")
    assert window.analysis.ok and window.analysis.derivative_png
    assert calls and not any(calls)  # every typesetting ran in the worker
    assert not window.strip.derivative_view.label.pixmap().isNull()

    # 30 nested levels: the derivative is over the typesetting budget; the strip says so
    # and Solve still works with the compiled derivative. The root is the fixed point of
    # exp(-x), the omega constant W(1).
    calls.clear()
    type_equation(qtbot, window, "exp(-" * 30 + "x" + ")" * 30 + " - x")
    assert window.strip.derivative_view.label.text() == TOO_LARGE_DERIVATIVE
    assert not any(calls)
    solution = solve_and_wait(qtbot, window)
    converged = [r for r in solution.runs if r.converged]
    assert converged
    # Reference: the omega constant W(1) from scipy.special.lambertw.
    from scipy.special import lambertw

    assert all(abs(r.root - lambertw(1).real) < 1e-12 for r in converged)
