"""A calculation sheet with a table of inputs: the table of results (first and last rows
and a summary when long), the notes, the design chart, and the table CSV beside it.

Outside reference: scipy.optimize.brentq row by row for the friction factors printed.
The PDF's text is read back with pypdf. Scenario: the bundled cooling-water sample
(invented) with a table of invented Reynolds numbers.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np
import pypdf
import pytest
import scipy.optimize

from app.documents.report import write_report
from app.documents.report.table_section import SHOWN_ROWS, shown_rows
from app.documents.tables import TableResults
from app.documents.words import CAUTION, batch_summary, reason_short
from app.documents.worksheet import load
from solvers import pipeline
from solvers.batch import solve_sweep, solve_table

SAMPLE = Path(__file__).resolve().parents[1] / "samples" / "cooling-water-friction.json"


def flat(text: str) -> str:
    return " ".join(text.split())


def residual(f, Re, eps, D):
    return 1 / math.sqrt(f) + 2 * math.log10(eps / (3.7 * D) + 2.51 / (Re * math.sqrt(f)))


def test_the_rows_printed_are_all_or_the_first_and_last():
    assert shown_rows(5) == [0, 1, 2, 3, 4]
    long = shown_rows(100)
    assert long[:SHOWN_ROWS] == list(range(SHOWN_ROWS)) and long[SHOWN_ROWS] is None
    assert long[-SHOWN_ROWS:] == list(range(100 - SHOWN_ROWS, 100))


def test_a_sheet_with_a_long_table_prints_its_ends_summary_notes_and_chart(tmp_path):
    ws = load(SAMPLE)
    solution, scan = pipeline.solve_and_scan(ws)
    Re = np.geomspace(5e3, 5e6, 60)
    D = np.full(60, 0.15)
    D[30] = 0.0  # a row whose values divide by zero in eps/(3.7*D): not solved, and noted
    constants = {p.name: p.value for p in ws.parameters if p.name not in ("Re", "D")}
    done = solve_table(ws.equation, [("Re", Re), ("D", D)], unknown="f", constants=constants,
                       method="brent", bracket=(0.005, 0.1), xtol=1e-15)
    cells = ([repr(float(v)) for v in Re], [repr(float(v)) for v in D])
    table = TableResults(("Re", "D"), (Re, D), ("Re", "D"), cells, done)
    pdf = tmp_path / "sheet.pdf"
    result = write_report(ws, pdf, solution=solution, scan=scan, csv_dir=tmp_path / "csv",
                          table=table)
    text = flat(" ".join(p.extract_text() for p in pypdf.PdfReader(str(pdf)).pages))
    assert "Table of inputs and results" in text
    assert flat(batch_summary(done.batch)) in text
    assert "rows left out here" in text
    for i in (0, SHOWN_ROWS - 1, 50, 59):  # first and last rows, every digit
        ref = scipy.optimize.brentq(residual, 0.005, 0.1, args=(Re[i], constants["eps"],
                                    D[i]), xtol=1e-15)  # reference
        printed = float(done.batch.root[i])
        assert abs(printed - ref) <= 1e-10 * ref
        if i != 50:
            assert repr(printed) in text
    assert "Row 31: the row's parameter values give part of the equation" in text
    # the table heads the root with the unknown's name, the residual as F(f) (an unknown
    # called f), and gives each row's reason in words, never the code
    assert "row Re D f reason iter. F(f)" in text
    rows_text = text[text.index("row Re D f reason iter. F(f)"):text.index("rows left out here")]
    shown = {str(c) for c in done.batch.reason[:SHOWN_ROWS]}
    assert all(reason_short(c) in rows_text for c in shown)
    assert not any(c in rows_text for c in shown if c != reason_short(c))
    assert repr(float(done.batch.root[20])) not in text  # left out of the middle
    assert "Figure 3. Design chart" in text
    assert flat(CAUTION)[:60] in text
    csv_path = tmp_path / "csv" / "sheet-table.csv"
    assert csv_path in result.csv_paths
    lines = csv_path.read_text(encoding="utf-8").splitlines()
    rows = list(csv.DictReader(line for line in lines if not line.lstrip('"').startswith("#")))
    assert len(rows) == 60 and rows[30]["converged"] == "False" and rows[30]["root"] == ""
    assert any(line.startswith("# note 1: row 31:") for line in lines)


def test_a_sheet_with_a_sweep_draws_its_branch(tmp_path):
    ws = load(SAMPLE)
    solution, scan = pipeline.solve_and_scan(ws)
    constants = {p.name: p.value for p in ws.parameters if p.name != "Re"}
    values = np.geomspace(4e3, 1e7, 12)
    done = solve_sweep(ws.equation, "Re", values, unknown="f", constants=constants, x0=0.02)
    table = TableResults(("Re",), (values,), ("Re",), ([repr(float(v)) for v in values],),
                         done, kind="sweep")
    pdf = tmp_path / "sweep.pdf"
    write_report(ws, pdf, solution=solution, scan=scan, table=table)
    text = flat(" ".join(p.extract_text() for p in pypdf.PdfReader(str(pdf)).pages))
    assert "a sweep of Re" in text and "12 rows: 12 converged" in text
    assert "rows left out here" not in text
    assert all(repr(float(v)) in text for v in done.batch.root)


@pytest.mark.parametrize("kind", ["table", "sweep"])
def test_the_design_chart_marks_failed_rows_and_branch_ends(kind):
    from matplotlib.figure import Figure

    from app.documents import figures
    from solvers import parse_equation, sweep

    equation = parse_equation("x^3 - x - p", unknown="x", parameters={"p": 0.0})
    values = np.linspace(-1.0, 1.0, 21)
    batch = sweep(equation, "p", values, x0=-1.3)
    x, y, failed, ends = figures.design_chart_data(values, batch)
    assert x.size == 21 and failed.size == 0 and len(ends) == 1
    turning = 2.0 / (3.0 * math.sqrt(3.0))  # where the lowest branch folds (x^3 - x)
    assert ends[0] > turning and ends[0] - turning < 0.1
    ax = Figure().add_subplot()
    drawn = figures.draw_design_chart(ax, values, batch, name="p", unknown="x",
                                      line=kind == "sweep")
    assert drawn == 21 and ax.get_xlabel() == "p" and ax.get_ylabel() == "x"
    assert any(line.get_linestyle() == ":" for line in ax.lines)


def test_a_table_is_saved_with_the_worksheet_and_read_back_exactly(tmp_path):
    from app.documents.worksheet import TableInputs, WorksheetError, loads, save

    ws = load(SAMPLE)
    inputs = TableInputs(columns=(("Re", (5e4, 2e5, 1.0000000000000002e6)),), method="brent",
                         bracket=(0.005, 0.1))
    path = tmp_path / "with-table.json"
    save(ws.with_changes(table=inputs), path)
    again = load(path)
    assert again.table == inputs  # every double read back identical (repr in JSON)
    assert load(SAMPLE).table is None
    text = path.read_text(encoding="utf-8")
    bad = text.replace('"name": "Re",\n        "values"', '"name": "R e",\n        "values"')
    assert bad != text
    with pytest.raises(WorksheetError, match=r"^table column 1, name: 'R e' is not a valid"):
        loads(bad)
    uneven = path.read_text(encoding="utf-8").replace(
        '"kind": "table"', '"kind": "sweep"').replace(
        '"columns": [', '"columns": [{"name": "D", "values": [0.1]}, ')
    with pytest.raises(WorksheetError, match="a sweep has one column"):
        loads(uneven)


def test_zerotrace_report_prints_the_worksheets_table(tmp_path, capsys):
    from app.cli import main
    from app.documents.worksheet import TableInputs, save

    ws = load(SAMPLE).with_changes(table=TableInputs(
        columns=(("Re", (5e4, 2e5, 1e6)),), method="brent", bracket=(0.005, 0.1)))
    path = tmp_path / "ws.json"
    save(ws, path)
    pdf = tmp_path / "sheet.pdf"
    code = main(["report", str(path), "--pdf", str(pdf), "--csv-dir", str(tmp_path / "c")])
    out, err = capsys.readouterr()
    assert code == 0, err
    text = flat(" ".join(p.extract_text() for p in pypdf.PdfReader(str(pdf)).pages))
    assert "Table of inputs and results" in text and "3 rows: 3 converged" in text
    constants = {p.name: p.value for p in ws.parameters}
    printed = []
    for word in text.split():
        try:
            printed.append(float(word))
        except ValueError:
            continue
    for Re in (5e4, 2e5, 1e6):
        ref = scipy.optimize.brentq(residual, 0.005, 0.1, args=(Re, constants["eps"],
                                    constants["D"]), xtol=1e-15)  # reference
        assert any(abs(value - ref) <= 1e-10 * ref for value in printed)
    assert (tmp_path / "c" / "sheet-table.csv").exists()
