"""The window's document model on its own (no window): what it says, and when.

The numbers are an invented pump-on-system scenario of our own (not from any text).
"""

from __future__ import annotations

from pathlib import Path

import pytest

pytest.importorskip("PySide6")
pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated

from app.documents.worksheet import Parameter, Selection, Settings, Worksheet  # noqa: E402
from app.window.document import Staleness, WorksheetDocument, result_key, scan_key  # noqa: E402
from app.window.equation_strip import analyse  # noqa: E402

PUMP = "42 - 8.5*Q - 310*Q^2 = Hs + ks*Q^1.85"  # invented pump and system curves


def _sheet(**changes) -> Worksheet:
    base = Worksheet(equation=PUMP, unknown="Q",
                     parameters=(Parameter("Hs", 12.0, ""), Parameter("ks", 95.0, "")),
                     settings=Settings(x0=0.2), scan=(0.0, 0.5))
    return base.with_changes(**changes)


class Recorder:
    """Every emission of every signal of a document, in order."""

    NAMES = ("worksheetChanged", "equationChanged", "resultsChanged", "staleChanged",
             "modifiedChanged", "pathChanged", "selectionChanged")

    def __init__(self, doc: WorksheetDocument) -> None:
        self.seen: list[tuple[str, tuple]] = []
        for name in self.NAMES:
            getattr(doc, name).connect(lambda *args, name=name: self.seen.append((name, args)))

    def of(self, name: str) -> list[tuple]:
        return [args for n, args in self.seen if n == name]

    def clear(self) -> None:
        self.seen.clear()


@pytest.fixture
def doc(qtbot) -> WorksheetDocument:
    document = WorksheetDocument()
    document.load(_sheet(), Path("pump.json"))
    document.mark_loaded(_sheet(), modified=False)
    return document


def test_loading_announces_the_worksheet_and_drops_the_old_results(qtbot) -> None:
    doc = WorksheetDocument()
    doc.set_solution(object(), "old")
    seen = Recorder(doc)
    with qtbot.waitSignal(doc.worksheetChanged) as blocker:
        doc.load(_sheet(), Path("pump.json"))
    assert blocker.args == [_sheet()]
    assert seen.of("pathChanged") == [(Path("pump.json"),)]
    assert seen.of("resultsChanged") == [()]
    assert seen.of("staleChanged") == [(Staleness(),)]
    assert doc.solution is None and doc.scan is None and doc.plot_key is None


def test_modified_is_said_once_when_it_changes_and_again_when_undone(doc) -> None:
    seen = Recorder(doc)
    doc.edited(_sheet(), bad_inputs=False)  # touched, but equal to the file
    assert seen.of("modifiedChanged") == []
    edited = _sheet(settings=Settings(x0=0.3))
    doc.edited(edited, bad_inputs=False)
    doc.edited(edited.with_changes(notes="a second edit, still modified"), bad_inputs=False)
    assert seen.of("modifiedChanged") == [(True,)]
    doc.edited(_sheet(), bad_inputs=False)
    assert seen.of("modifiedChanged") == [(True,), (False,)]
    # Text that is not a number yet is unsaved work even when the last good value matches.
    assert doc.is_modified(_sheet(), bad_inputs=True)


def test_parameter_order_is_not_a_modification(doc) -> None:
    reordered = _sheet(parameters=(Parameter("ks", 95.0, ""), Parameter("Hs", 12.0, "")))
    assert not doc.is_modified(reordered, bad_inputs=False)


def test_saving_clears_modified_and_names_the_new_file(doc, tmp_path) -> None:
    doc.edited(_sheet(settings=Settings(x0=0.3)), bad_inputs=False)
    seen = Recorder(doc)
    doc.mark_saved(_sheet(settings=Settings(x0=0.3)), tmp_path / "copy.json")
    assert seen.of("modifiedChanged") == [(False,)]
    assert seen.of("pathChanged") == [(tmp_path / "copy.json",)]
    assert not doc.is_modified(_sheet(settings=Settings(x0=0.3)), bad_inputs=False)


def test_a_start_value_makes_the_solution_stale_but_not_the_scan(doc) -> None:
    ws = _sheet()
    doc.set_scan(object(), object(), scan_key(ws))
    doc.set_solution(object(), result_key(ws))
    doc.refresh_stale(ws)
    seen = Recorder(doc)
    doc.edited(_sheet(settings=Settings(x0=0.35)), bad_inputs=False)
    # The plot was last drawn by the solution, so it is stale with it.
    assert seen.of("staleChanged") == [(Staleness(plot=True, solution=True, scan=False),)]
    doc.edited(_sheet(settings=Settings(x0=0.36)), bad_inputs=False)
    assert len(seen.of("staleChanged")) == 1  # no news, no signal
    doc.edited(_sheet(scan=(0.0, 0.6)), bad_inputs=False)
    assert seen.of("staleChanged")[-1] == (Staleness(plot=True, solution=True, scan=True),)
    doc.edited(ws.with_changes(notes="notes and the title block change no result"),
               bad_inputs=False)
    assert seen.of("staleChanged")[-1] == (Staleness(),)
    assert doc.solution_for(ws) is doc.solution and doc.scan_for(ws) is doc.scan
    assert doc.solution_for(_sheet(settings=Settings(x0=0.35))) is None
    assert doc.scan_for(_sheet(settings=Settings(x0=0.35))) is doc.scan


def test_the_parsed_equation_is_handed_out_only_for_exactly_its_worksheet(doc) -> None:
    ws = _sheet()
    analysis = analyse(ws.equation, "Q", ws.parameter_values())
    with_signal = Recorder(doc)
    doc.set_analysis(analysis)
    assert with_signal.of("equationChanged") == [(analysis,)]
    eq = doc.equation_for(ws)
    assert eq is analysis.equation  # parsed once, reused by Solve, Scan and Polish
    # f(Q) = lhs - rhs, checked against plain float arithmetic (common practice).
    q = 0.2
    expected = (42 - 8.5 * q - 310 * q**2) - (12.0 + 95.0 * q**1.85)
    assert float(eq.f(q)) == pytest.approx(expected, rel=1e-14)
    # Other text or another unknown: the job must parse.
    assert doc.equation_for(ws.with_changes(equation=PUMP + " + 1")) is None
    assert doc.equation_for(ws.with_changes(unknown="Hs")) is None
    # Other values: bound late to the same parse; a value missing: the job must parse.
    changed = ws.with_changes(parameters=(Parameter("Hs", 14.0, ""), Parameter("ks", 95.0, "")))
    bound = doc.equation_for(changed)
    expected = (42 - 8.5 * q - 310 * q**2) - (14.0 + 95.0 * q**1.85)
    assert float(bound.f(q)) == pytest.approx(expected, rel=1e-14)
    assert doc.equation_for(ws.with_changes(parameters=(Parameter("Hs", 14.0, ""),))) is None


def test_a_bad_equation_hands_out_nothing_and_keeps_its_column(doc) -> None:
    analysis = analyse("42 - 8.5*Q - = Hs", "Q", {"Hs": 12.0})
    doc.set_analysis(analysis)
    assert not analysis.ok and analysis.position is not None
    assert doc.equation_for(_sheet(equation="42 - 8.5*Q - = Hs")) is None


def test_the_design_value_is_recorded_and_announced(doc) -> None:
    seen = Recorder(doc)
    chosen = Selection(0.2413, "root 1 of 1 found by the scan")
    doc.set_selection(chosen)
    assert doc.record.selection == chosen and doc.touched
    assert seen.of("selectionChanged") == [(chosen,)]
    doc.change_record(doc.record.with_changes(title="pump P-101 duty point"))
    assert seen.of("selectionChanged") == [(chosen,)]  # the title is not the design value


def test_a_change_of_values_alone_binds_the_parsed_text_instead_of_parsing(doc, monkeypatch):
    """Neither the live reading nor Solve parses again when only a parameter value
    changed: the values are bound to the parse (Equation.bind)."""
    from solvers import equation as equation_module

    first = analyse(PUMP, "Q", {"Hs": 12.0, "ks": 95.0})
    parses: list[str] = []
    bound: list[dict] = []
    real_parse, real_bind = equation_module.parse_equation, equation_module.Equation.bind
    monkeypatch.setattr(equation_module, "parse_equation",
                        lambda text, **kw: parses.append(text) or real_parse(text, **kw))
    monkeypatch.setattr(equation_module.Equation, "bind",
                        lambda self, values: bound.append(dict(values)) or real_bind(self, values))
    again = analyse(PUMP, "Q", {"Hs": 14.0, "ks": 95.0}, parsed=first)
    assert again.ok and parses == [] and bound == [{"Hs": 14.0, "ks": 95.0}]
    q = 0.2
    expected = (42 - 8.5 * q - 310 * q**2) - (14.0 + 95.0 * q**1.85)  # plain float arithmetic
    assert float(again.equation.f(q)) == pytest.approx(expected, rel=1e-14)
    other_text = analyse(PUMP + " + 0", "Q", {"Hs": 14.0, "ks": 95.0}, parsed=first)
    assert parses == [PUMP + " + 0"] and other_text.ok  # new text: parsed, not bound
    missing = analyse(PUMP, "Q", {"Hs": 14.0, "ks": None}, parsed=first)
    assert not missing.ok and "ks" in missing.error  # the parser's own words for it
    parsed_so_far = list(parses)
    doc.set_analysis(first)
    changed = _sheet(parameters=(Parameter("Hs", 14.0, ""), Parameter("ks", 95.0, "")))
    eq = doc.equation_for(changed)
    assert float(eq.f(q)) == pytest.approx(expected, rel=1e-14)
    assert len(bound) == 2 and parses == parsed_so_far


# ---------------------------------------------------------------------- in the window

def test_the_window_solves_and_scans_with_the_equation_it_read_while_typing(
        qtbot, window, monkeypatch) -> None:
    """Solve and Scan take the document's parse; a new value is bound to it, not parsed.

    The roots are checked against numpy.roots of the same quadratic (outside reference).
    """
    import numpy as np
    from gui_helpers import idle, settle, type_equation
    from PySide6.QtCore import Qt

    from solvers import equation as equation_module
    from solvers import pipeline

    type_equation(qtbot, window, "(x - a)*(x - 3.25)")  # invented: roots a and 3.25
    model = window.inputs.parameters
    model.setData(model.index(0, 1), "1.5")
    for key, value in (("x0", 1.0), ("x1", 1.2), ("a", 0.0), ("b", 2.0),
                       ("from", 0.0), ("to", 5.0)):
        window.inputs.set_field(key, value)
    settle(qtbot, window)
    qtbot.waitUntil(lambda: window.analysis.ok
                    and window.analysis.equation.parameters == {"a": 1.5}, timeout=10_000)
    idle(qtbot, window)
    parses: list[str] = []
    real_parse = pipeline.parse_equation
    for module in (pipeline, equation_module):  # the jobs' parser and the live reading's
        monkeypatch.setattr(module, "parse_equation",
                            lambda text, **kw: parses.append(text) or real_parse(text, **kw))
    parsed = window.analysis.equation

    qtbot.keyClick(window.strip.editor, Qt.Key.Key_Return, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: window.solution is not None and not window.runner.is_busy("solve"),
                    timeout=20_000)
    assert window.solution.equation is parsed and parses == []
    qtbot.mouseClick(window.inputs.scan_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: window.scan_result is not None and not window.runner.is_busy("scan"),
                    timeout=30_000)
    assert window.document.scan_equation is parsed and parses == []
    reference = sorted(np.roots([1.0, -(1.5 + 3.25), 1.5 * 3.25]).real)  # numpy.roots
    assert [r.x for r in window.scan_result.roots] == pytest.approx(reference, abs=1e-12)

    # A new value is bound to the same parse: a new reading, and still no parse.
    model.setData(model.index(0, 1), "1.75")
    qtbot.waitUntil(lambda: window.analysis.equation is not parsed
                    and window.analysis.equation.parameters == {"a": 1.75}, timeout=10_000)
    idle(qtbot, window)
    assert parses == []
    assert window.document.stale.scan and not window.roots_view.isEnabled()
    before = window.solution
    qtbot.keyClick(window.strip.editor, Qt.Key.Key_Return, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: window.solution is not before and not window.runner.is_busy("solve"),
                    timeout=20_000)
    assert window.solution.equation is window.analysis.equation and parses == []
    newton = next(r for r in window.solution.runs if r.method == "newton")
    assert newton.converged and newton.root == pytest.approx(1.75, abs=1e-12)
