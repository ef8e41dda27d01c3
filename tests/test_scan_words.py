"""The scan records codes and numbers; app.documents.words says them, the same everywhere.

Every code solvers/scan/ can put in ``Scan.details`` or ``Root.confirmed`` has words, no
sentence for people is built in solvers/scan/, and one scan that warns shows the same
warning sentence in the CLI, the window's roots panel and the calculation sheet.
"""

from __future__ import annotations

import ast
import dataclasses
import json
import re
from pathlib import Path

import pypdf
import pytest
from PySide6.QtCore import Qt

from app.cli import main as cli_main
from app.documents import words, worksheet
from solvers import parse_equation
from solvers.records import Detail
from solvers.scan import scan
from solvers.scan.records import CONFIRMED_CODES, SCAN_DETAIL_CODES

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import SAMPLES, settle  # noqa: E402

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated

SCAN_DIR = Path(__file__).resolve().parents[1] / "solvers" / "scan"

# Invented scenario: a triple root at 1.37 of a cubic typed out in full (its coefficients
# expanded), so f is rounding noise near the root and the scan says so in a warning.
CUBIC = "x^3 - 4.11*x^2 + 5.6307*x - 2.571353"
RANGE = (0.0, 3.1)


def flat(text: str) -> str:
    return " ".join(text.split())


def _source() -> str:
    return "\n".join(p.read_text("utf-8") for p in sorted(SCAN_DIR.glob("*.py")))


def test_every_code_the_scan_records_has_words():
    source = _source()
    details = set(re.findall(r'Detail\(\s*"(\w+)"', source))
    # the codes written in the source are the registered ones (noise_cluster rides on a Root)
    assert details - {"noise_cluster"} == set(SCAN_DETAIL_CODES), details
    assert set(SCAN_DETAIL_CODES) <= set(words.SCAN_DETAIL_TEXT)
    # every one-code tuple literal in solvers/scan/ is a confirmed code or a locator
    literals = set(re.findall(r'\(\s*"(\w+)",\s*\)', source))
    assert literals <= set(CONFIRMED_CODES) | set(words.LOCATOR_LABELS), (
        literals - set(CONFIRMED_CODES) - set(words.LOCATOR_LABELS))
    assert set(CONFIRMED_CODES) <= set(words.CONFIRMED_WORDS)
    assert set(CONFIRMED_CODES) <= literals  # every registered code is recorded somewhere
    # each code's words take its values and give a sentence with no bare code in it
    samples = {
        "many_sign_changes": (5000, 0.0, 1.0, 0.5), "undefined_inside": (0.1, 0.2),
        "zero_run": (0.1, 0.2), "bounded_oscillation": (0.0,),
        "fast_oscillation": (0.1, 0.2), "proxy_rough": (2, 0.1, 0.9),
        "rescanned": ("derivative", 1, 0.1, 0.2), "rescan_budget": ("chebyshev", 3, 0.1, 0.9),
        "proxy_unconfirmed": (0.3, 1e-9), "proxy_only_roots": (0.25, 0.75),
        "sampling_only_root": (0.5, 0.0, 1.0), "pole_dip": (2.0, 1e-9, 0.01),
        "noise_band": (1.0, 1.1, 1e-15, 1.05, 0.05, 3, 2),
    }
    assert set(samples) == set(SCAN_DETAIL_CODES)
    for code, values in samples.items():
        text = words.scan_detail_text(Detail(code, values))
        assert code not in text and len(text) > 30, (code, text)


def test_no_sentence_for_people_is_built_in_the_scan():
    """No f-string in solvers/scan/ outside the ValueErrors of bad arguments (a message to
    the caller, raised, not a record), and no string with three or more words handed to
    append/extend."""
    for path in sorted(SCAN_DIR.glob("*.py")):
        tree = ast.parse(path.read_text("utf-8"))
        raised = {id(n) for r in ast.walk(tree) if isinstance(r, ast.Raise)
                  for n in ast.walk(r)}
        for node in ast.walk(tree):
            if isinstance(node, ast.JoinedStr):
                assert id(node) in raised, f"{path.name}:{node.lineno} builds an f-string"
            if (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute)
                    and node.func.attr in ("append", "extend")):
                for arg in ast.walk(node):
                    if isinstance(arg, ast.Constant) and isinstance(arg.value, str):
                        assert len(arg.value.split()) < 3, (path.name, node.lineno, arg.value)


def test_confirmed_words_keep_the_numbers_of_a_noise_cluster():
    eq = parse_equation(CUBIC)
    result = scan(eq.f, *RANGE, fprime=eq.fprime)
    (root,) = result.roots
    # 1.37 is the triple root by construction (the cubic is (x - 1.37)^3 expanded)
    assert abs(root.x - 1.37) < 1e-3 and root.multiplicity == 3
    assert root.confirmed == ("noise_cluster",) and root.detail.code == "noise_cluster"
    level, u, v, half = root.detail.values
    assert u < 1.37 < v and half > 0 and level > 0
    text = words.confirmed_text(root)
    assert f"on [{words.number(u, 12)}, {words.number(v, 12)}]" in text
    assert f"x uncertain by +/-{words.number(half, 3)}" in text
    (warning,) = words.scan_warnings(result)
    assert warning.startswith(f"f is rounding noise on [{words.number(u, 12)}, ")
    assert "multiplicity 3" in warning


@pytest.fixture
def cubic_file(tmp_path: Path) -> Path:
    ws = worksheet.load(SAMPLES / "pump-system-operating-point.json")
    ws = dataclasses.replace(
        ws, equation=CUBIC, unknown="x", parameters=(), scan=RANGE,
        title="Triple root of a cubic typed out in full (invented)",
        notes="Invented for zerotrace's tests: (x - 1.37)^3 with its coefficients expanded.",
        settings=dataclasses.replace(ws.settings, x0=1.0, bracket=(0.0, 3.1)),
        selection=None)
    path = tmp_path / "cubic.json"
    worksheet.save(ws, path)
    return path


def test_cli_roots_panel_and_sheet_show_the_same_scan_warning(
        qtbot, window, dialogs, cubic_file, tmp_path, capsys):
    ws = worksheet.load(cubic_file)
    eq = parse_equation(ws.equation, ws.unknown)
    (warning,) = words.scan_warnings(scan(eq.f, *RANGE, fprime=eq.fprime))
    assert "rounding noise" in warning

    # The CLI: the scan's text output and its JSON.
    assert cli_main(["scan", "--worksheet", str(cubic_file)]) == 0
    printed = capsys.readouterr().out
    assert f"warning: {warning}" in printed
    assert "root cluster within rounding noise" in printed  # the confirmed column, in words
    assert cli_main(["scan", "--worksheet", str(cubic_file), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["warnings"] == [warning]
    assert [d["code"] for d in data["details"]] == ["noise_band"]
    assert set(data["roots"][0]) >= {"x", "residual", "multiplicity"}

    # The sheet, written by the CLI.
    pdf = tmp_path / "cubic.pdf"
    assert cli_main(["report", str(cubic_file), "--pdf", str(pdf)]) == 0
    capsys.readouterr()
    sheet = flat(" ".join(p.extract_text() for p in pypdf.PdfReader(str(pdf)).pages))
    assert flat(warning) in sheet

    # The window: open the file with Ctrl+O, scan with the Scan button.
    dialogs.open_name = str(cubic_file)
    window.activateWindow()
    qtbot.keyClick(window, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: window.strip.text() == CUBIC, timeout=10_000)
    settle(qtbot, window)
    before = window.scan_result
    qtbot.mouseClick(window.inputs.scan_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: window.scan_result is not before
                    and not window.runner.is_busy("scan"), timeout=30_000)
    assert f"⚠ {warning}" in window.roots_summary.text()
    model = window.roots_model
    column = [c.title for c in model.columns].index("confirmed")
    shown = model.data(model.index(0, column), Qt.ItemDataRole.DisplayRole)
    assert shown == words.confirmed_text(window.scan_result.roots[0])
    assert shown.startswith("root cluster within rounding noise")
