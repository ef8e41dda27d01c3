"""The CLI, the window and the calculation sheet say the same things the same way.

One worksheet (an invented pump operating point, samples/pump-system-operating-point.json,
with a bracket that holds no sign change so that one method fails) goes through all
three front ends: the CLI (`zerotrace solve` and `zerotrace report`, through main()),
the window (real widgets, real key events, offscreen) and the sheet (its text read
back from the PDF with pypdf). Each must show the same method titles, the same stop
reason wording (and the failed run's detail), and the same root to the significant
figures the user chose.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pypdf
import pytest
from PySide6.QtCore import Qt

from app.cli import main as cli_main
from app.documents import words, worksheet
from solvers import pipeline

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import SAMPLES, settle  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated

FIGURES = 7  # not the window's default, so the setting must travel


def flat(text: str) -> str:
    return " ".join(text.split())


@pytest.fixture
def sheet_file(tmp_path: Path) -> Path:
    ws = worksheet.load(SAMPLES / "pump-system-operating-point.json")
    # Bisection from a bracket with no sign change fails (no_sign_change): a failed run
    # must read the same everywhere too.
    settings = dataclasses.replace(ws.settings, methods=("newton", "secant", "bisection"),
                                   bracket=(0.2, 0.3))
    path = tmp_path / "pump.json"
    worksheet.save(dataclasses.replace(ws, settings=settings), path)
    return path


def test_cli_window_and_sheet_print_the_same_names_reasons_and_roots(
        qtbot, window, dialogs, sheet_file, tmp_path, capsys):
    solution = pipeline.solve(worksheet.load(sheet_file))
    runs = solution.runs
    assert [r.converged for r in runs] == [True, True, False]
    failed = runs[2]
    assert failed.reason == "no_sign_change" and failed.detail is not None

    # The CLI, at the chosen figures.
    assert cli_main(["solve", "--worksheet", str(sheet_file), "--figures", str(FIGURES)]) == 0
    printed = capsys.readouterr().out
    shell = flat(printed)
    table_rows = [line for line in printed.splitlines() if line.endswith(
        tuple(f"  {r.method}" for r in runs))]  # the last column: the --method name

    # The sheet, written by the CLI.
    pdf = tmp_path / "pump.pdf"
    assert cli_main(["report", str(sheet_file), "--pdf", str(pdf)]) == 0
    capsys.readouterr()
    sheet = flat(" ".join(p.extract_text() for p in pypdf.PdfReader(str(pdf)).pages))

    # The window: open the file with Ctrl+O, choose the figures, solve with Ctrl+Return.
    dialogs.open_name = str(sheet_file)
    window.activateWindow()
    qtbot.keyClick(window, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: window.strip.text() == solution.worksheet.equation, timeout=10_000)
    settle(qtbot, window)
    box = window.lanes.digits
    box.setFocus()
    box.lineEdit().selectAll()
    qtbot.keyClicks(box, str(FIGURES))
    qtbot.keyClick(box, Qt.Key.Key_Return)
    assert box.value() == FIGURES
    before = window.solution
    window.strip.editor.setFocus()
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_Return, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: window.solution is not None and window.solution is not before,
                    timeout=20_000)
    assert [r.root for r in window.solution.runs] == [r.root for r in runs]

    for run in runs:
        lane = window.lanes.lanes[run.method]
        shown = f"{lane.title.text()} {lane.verdict.text()} {lane.verdict.toolTip()} " \
                f"{lane.summary.text()}"
        title = words.method_title(run.method)
        reason = words.reason_text(run.reason)
        for name, text in (("CLI", shell), ("window", shown), ("sheet", sheet)):
            assert title in text, (name, title)
            assert reason in flat(text), (name, reason)
        # The title names the method in the CLI's table and on the lane, not its code name.
        assert lane.title.text() == title
        assert any(row.startswith(f"{title} ") for row in table_rows), (title, table_rows)
        if run.converged:
            at_figures = words.number(run.root, FIGURES)
            assert at_figures in shell and at_figures in lane.summary.text()
            # The sheet gives every digit: rounded to the chosen figures it reads the same.
            assert words.exact(run.root) in sheet
            assert words.number(float(words.exact(run.root)), FIGURES) == at_figures
    detail = words.detail_text(failed.detail)
    # the lane shows its verdict in two lines, ending in "…" where longer; its hover
    # holds the whole of it, record included
    lane = window.lanes.lanes["bisection"]
    assert detail in shell and detail in lane.verdict.toolTip()
    assert lane.verdict.text().rstrip("…") in lane.verdict.full_text()
    assert detail in sheet
    agreement = words.agreement_text(solution)
    assert agreement in shell and agreement in flat(window.lanes.agreement.text())
    assert agreement in sheet


def test_every_code_the_core_records_has_words():
    """Each Detail, StartChoice and stop-reason code written in solvers/ has its sentence in
    app.documents.words (a code without words would reach the user as a bare code)."""
    import re

    from solvers.records import REASONS

    root = Path(__file__).resolve().parents[1] / "solvers"
    files = [*sorted((root / "methods").glob("*.py")), root / "pipeline.py", root / "records.py"]
    source = "\n".join(path.read_text("utf-8") for path in files)
    details = set(re.findall(r'Detail\(\s*"(\w+)"', source))
    details |= {f"{what}_small" for what in re.findall(r'_step_detail\(\s*"(\w+)"', source)}
    starts = set(re.findall(r'StartChoice\(\s*"(\w+)"', source))
    assert {"raised", "jump", "pole", "step_small", "width_small", "no_bracket"} <= details
    assert details <= set(words.DETAIL_TEXT), details - set(words.DETAIL_TEXT)
    assert starts and starts <= set(words.START_TEXT), starts - set(words.START_TEXT)
    assert set(REASONS) <= set(words.REASON_TEXT)
    assert set(REASONS) <= set(words.REASON_SHORT)  # a table cell's few words
    for name in ("newton", "secant", "false_position", "illinois", "bisection", "brent"):
        assert words.method_title(name) != name and words.method_summary(name)


def test_a_root_that_is_not_the_last_iterate_is_pointed_to_in_every_front_end():
    # Brent returns the end of its closed bracket where |f| is smaller; its last row can be
    # the step that closed the bracket. The words say which row the root is, once, for the
    # terminal's stop line and the one-line message the window and the sheet show.
    from scipy.optimize import brentq  # reference root

    from solvers import brent, newton

    f = lambda x: x**3 - 2 * x - 5  # noqa: E731 (scipy's own brentq test function)
    run = brent(f, 2.0, 3.0)
    assert run.converged and run.steps[-1].x != run.root
    assert run.root == pytest.approx(brentq(f, 2.0, 3.0, xtol=1e-14), abs=1e-12)
    row = next(s for s in reversed(run.steps) if s.x == run.root)
    assert all(abs(row.fx) <= abs(s.fx) for s in run.steps if s.k > row.k)
    said = f"the root is iterate k = {row.k}"
    assert said in words.run_message(run) and said.capitalize() in words.stop_line(run)
    last = newton(f, 2.0, fprime=lambda x: 3 * x**2 - 2)  # its root is its last row
    assert last.steps[-1].x == last.root and words.root_row_text(last) == ""
