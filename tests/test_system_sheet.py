"""The calculation sheet of a system: what a checker reads on it, read back with pypdf."""

from __future__ import annotations

import csv
import dataclasses
from pathlib import Path

import pypdf
import pytest

from app.cli import main
from app.documents import worksheet
from app.documents.words import CAUTION, SYSTEM_REASON_TEXT

SAMPLES = Path(__file__).resolve().parent.parent / "samples" / "systems"


def flat(text: str) -> str:
    return " ".join(text.split())


def sheet_text(path: Path) -> str:
    return flat(" ".join(page.extract_text() for page in pypdf.PdfReader(path).pages))


def test_junction_sheet_holds_equations_structure_roots_and_residuals(tmp_path, capsys):
    ws_path = SAMPLES / "pipe-junction-three-branches.json"
    pdf = tmp_path / "junction.pdf"
    code = main(["report", str(ws_path), "--pdf", str(pdf), "--csv-dir", str(tmp_path / "c")])
    out, err = capsys.readouterr()
    assert code == 0, err
    text = sheet_text(pdf)
    for words in ("Equations and definitions", "Structure of the Jacobian",
                  "Residual of each equation at the root", "Definitions at the root",
                  "Iteration tables", "Convergence", flat(CAUTION), "ZT-DEMO-008"):
        assert words in text, words
    for eq in ("z1 - HJ = h1", "HJ - z2 = h2", "HJ - z3 = h3", "Q1 = Q2 + Q3"):
        assert eq in text
    # the roots on the sheet are the CSV's floats, digit for digit
    rows = [r for r in csv.reader((tmp_path / "c" / "junction-runs.csv").open())
            if r and not r[0].startswith("#")]
    header, body = rows[0], rows[1:]
    last = {}
    for r in body:
        last[r[0]] = dict(zip(header, r, strict=True))
    for method in ("newton", "broyden"):
        for name in ("Q1", "Q2", "Q3", "HJ"):
            assert last[method][name] in text.replace(" ", ""), (method, name)
    pages = len(pypdf.PdfReader(pdf).pages)
    assert f"page {pages} of {pages}" in text


def test_a_system_that_fails_says_so_on_the_sheet(tmp_path, capsys):
    ws = worksheet.load(SAMPLES / "pump-two-parallel-lines.json")
    # an iteration cap of 1: both methods stop before the tolerances are met, and a run
    # that did not converge is reported on the sheet, never raised
    ws = dataclasses.replace(ws, settings=dataclasses.replace(ws.settings, max_iter=1))
    path = tmp_path / "pump.json"
    worksheet.save(ws, path)
    pdf = tmp_path / "pump.pdf"
    assert main(["report", str(path), "--pdf", str(pdf)]) == 0
    text = sheet_text(pdf)
    assert "did not converge" in text
    assert flat(SYSTEM_REASON_TEXT["max_iterations"]) in text


def test_the_sheet_refuses_an_existing_file_before_solving(tmp_path, capsys):
    pdf = tmp_path / "x.pdf"
    pdf.write_bytes(b"old")
    code = main(["report", str(SAMPLES / "pump-two-parallel-lines.json"), "--pdf", str(pdf)])
    _, err = capsys.readouterr()
    assert code == 2 and "already exists" in err
    assert pdf.read_bytes() == b"old"


@pytest.mark.parametrize("name", ["pipe-junction-three-branches", "pump-two-parallel-lines",
                                  "pump-two-parallel-lines-units"])
def test_every_system_sample_makes_a_sheet(tmp_path, name, capsys):
    assert main(["report", str(SAMPLES / f"{name}.json"), "--pdf",
                 str(tmp_path / "s.pdf")]) == 0


def test_the_sheet_typesets_every_line_and_numbers_the_equations(tmp_path, capsys):
    """Each definition and equation is set as typed (common practice on a calc sheet: the
    formula as a reader writes it beside the text as entered); the equations carry the
    numbers of the residual tables, the definitions none."""
    from solvers.equation.typeset import lines_latex

    ws = worksheet.load(SAMPLES / "pump-two-parallel-lines-units.json")
    lines = lines_latex(ws.equation)
    assert [line for line, _tex in lines] == ws.equation.splitlines()
    assert all(tex for _line, tex in lines)
    assert lines[1][1] == r"A_{1} = \frac{\pi D_{1}^{2}}{4}"
    assert lines_latex("x^2 + y^2 = 4; x*y = 1") == (("x^2 + y^2 = 4", "x^{2} + y^{2} = 4"),
                                                      ("x*y = 1", "x y = 1"))
    pdf = tmp_path / "pump.pdf"
    assert main(["report", str(SAMPLES / "pump-two-parallel-lines-units.json"), "--pdf",
                 str(pdf)]) == 0
    capsys.readouterr()
    text = sheet_text(pdf)
    typeset = text[text.index("Typeset"):text.index("Equations (1)")]
    assert "(1) (2) (3)" in typeset  # three equations numbered, five definitions not
    assert "(4)" not in typeset
    page = pypdf.PdfReader(pdf).pages[0]
    assert len(page.images) >= 8  # one picture per line


def test_equations_typed_with_odd_spacing_keep_their_numbers(tmp_path, capsys):
    """A double space and an equation broken over two lines are still equations (1) and (2)
    beside their typeset form (a review found them left unnumbered). By hand: x = 2, y = 1."""
    import json

    sheet = {"format": "zerotrace-worksheet", "version": 1, "title": "Spacing",
             "equation": "s = x + y\nx +  y = 3\nx - y +\n 0 = 1",
             "system": {"unknowns": [{"name": "x", "x0": 1.0}, {"name": "y", "x0": 1.0}],
                        "methods": ["newton"]}}
    path = tmp_path / "spacing.json"
    path.write_text(json.dumps(sheet), encoding="utf-8")
    pdf = tmp_path / "spacing.pdf"
    assert main(["report", str(path), "--pdf", str(pdf)]) == 0
    capsys.readouterr()
    text = sheet_text(pdf)
    typeset = text[text.index("Typeset"):text.index("Equations (1)")]
    assert "(1) (2)" in typeset and "(3)" not in typeset


def test_a_line_past_the_typesetting_budget_stays_text():
    """Each line keeps the one equation's budget (MAX_TYPESET_CHARS of LaTeX): a line of
    hundreds of terms is left as typed rather than set in type too small to read."""
    from solvers.equation.typeset import MAX_TYPESET_CHARS, lines_latex

    long_line = "y = " + " + ".join(f"a{i}*x^{i}" for i in range(400))
    ((line, tex), (_short, short_tex)) = lines_latex(long_line + "\nx*y = 1")
    assert line == long_line and tex == "" and len(long_line) > MAX_TYPESET_CHARS / 4
    assert short_tex == "x y = 1"
