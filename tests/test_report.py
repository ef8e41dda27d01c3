"""The calculation sheet (app.documents.report) read back as a checker would read it.

Every check extracts the PDF's text with pypdf and looks for the numbers the
pipeline produced, or reads the CSV files back with the csv module and numpy.
The worksheets are the bundled sample (an invented cooling-water scenario) and
small scenarios of our own below, all with invented numbers.
"""

from __future__ import annotations

import csv
import dataclasses
import hashlib
import math
import os
import re
import shutil
from pathlib import Path

import mpmath
import numpy as np
import pypdf
import pytest
from scipy.optimize import brentq

from app.documents import export
from app.documents.report import CAUTION, NUMERICAL_DERIVATIVE_NOTE, ReportError, write_report
from app.documents.words import REASON_TEXT, method_title, reason_short
from app.documents.worksheet import (
    CalcInfo,
    Parameter,
    Selection,
    Settings,
    Worksheet,
    WorksheetError,
    dumps,
    load,
    save,
)
from solvers import pipeline

NEWTON = method_title("newton")  # the sheet names methods by their titles
SAMPLES = Path(__file__).resolve().parents[1] / "samples"
SAMPLE = SAMPLES / "cooling-water-friction.json"


def handed(ws):
    """What a caller hands the sheet: the worksheet's solution and scan (it never solves)."""
    solution, scan = pipeline.solve_and_scan(ws)
    return {"solution": solution, "scan": scan}


def pages_text(pdf: Path) -> list[str]:
    return [page.extract_text() for page in pypdf.PdfReader(str(pdf)).pages]


def flat(text: str) -> str:
    """Text with line breaks and runs of spaces folded, for phrase searches."""
    return " ".join(text.split())


def r(value: float) -> str:
    """The sheet's and the CSV's spelling of a float: repr of the Python float."""
    return repr(float(value))


def metadata_lines(path: Path) -> int:
    with open(path, encoding="utf-8") as handle:
        return sum(1 for line in handle if line.startswith("#"))


def data_rows(path: Path) -> tuple[list[str], list[list[str]]]:
    with open(path, newline="", encoding="utf-8") as handle:
        rows = [r for r in csv.reader(line for line in handle if not line.startswith("#"))]
    return rows[0], rows[1:]


@pytest.fixture(scope="module")
def sheet(tmp_path_factory):
    """The sample worksheet's sheet and CSVs, written once for the checks below."""
    folder = tmp_path_factory.mktemp("sheet")
    ws_path = folder / "cooling water.json"  # a space in the name, on purpose
    shutil.copyfile(SAMPLE, ws_path)
    ws = load(ws_path)
    fractions: list[float] = []
    solution, scan = pipeline.solve_and_scan(ws)
    result = write_report(
        ws, folder / "calc.pdf", solution=solution, scan=scan, csv_dir=folder / "csv",
        worksheet_path=ws_path, progress=fractions.append,
    )
    texts = pages_text(result.pdf_path)
    return {
        "ws": ws, "ws_path": ws_path, "result": result, "solution": solution,
        "scan": scan, "pages": texts, "text": "\n".join(texts),
        "progress": fractions,
    }


# ------------------------------------------------------------------ sections


def test_every_section_is_present(sheet):
    text = flat(sheet["text"])
    for heading in ("Calculation sheet", "Caution.", "Equation", "Parameters",
                    "Method settings", "Results", "Verification of each root",
                    "Roots in the scan range", "Design value", "Figures", "Iteration tables"):
        assert heading in text, heading


def test_title_block_names_the_calc_the_tool_and_the_worksheet_hash(sheet):
    ws, text = sheet["ws"], flat(sheet["pages"][0])
    assert ws.title in text
    assert "Calc no. ZT-DEMO-001" in text and "Revision A" in text
    assert "Prepared by" in text and "Checked by" in text and "Signature" in text
    assert f"Tool zerotrace {export.tool_version()}" in text
    assert "cooling water.json" in text
    digest = hashlib.sha256(sheet["ws_path"].read_bytes()).hexdigest()
    assert digest in text
    assert sheet["result"].sha256 == digest


def test_calc_number_and_page_n_of_m_on_every_page(sheet):
    pages = sheet["pages"]
    assert sheet["result"].pages == len(pages) >= 3
    for n, text in enumerate(pages, start=1):
        assert "Calc ZT-DEMO-001" in text, f"page {n}"
        assert f"page {n} of {len(pages)}" in text, f"page {n}"


def test_caution_in_full(sheet):
    text = flat(sheet["pages"][0])
    assert flat(CAUTION) in text
    for phrase in ("numerical solution of the equation exactly as it was entered", "units",
                   "qualified engineer", "local codes and licensed engineering practice govern"):
        assert phrase in text


def test_equation_unknown_and_parameters_with_values_and_notes(sheet):
    ws, text = sheet["ws"], flat(sheet["text"])
    assert ws.equation in text
    assert "Unknown f" in text
    for p in ws.parameters:
        assert f"{p.name} {r(p.value)} {p.note}" in text, p.name
    # the typeset equation (and derivative) are placed as images on page 1
    first = pypdf.PdfReader(str(sheet["result"].pdf_path)).pages[0]
    assert len(first.images) >= 1


def test_method_settings_are_the_ones_used(sheet):
    s, sv, text = sheet["ws"].settings, sheet["solution"].start, flat(sheet["text"])
    assert f"Initial guess x0 {r(sv.x0)}" in text
    assert f"Bracket [a, b] [{r(sv.bracket[0])}, {r(sv.bracket[1])}]" in text
    assert f"Step tolerance xtol {r(s.xtol)}" in text
    assert f"Relative tolerance rtol {r(s.rtol)}" in text
    assert f"Maximum iterations {s.max_iter}" in text
    assert f"Newton damping {r(s.damping)}" in text


def test_results_row_per_method_with_full_precision_root(sheet):
    text = flat(sheet["text"])
    for run in sheet["solution"].runs:
        order = "—" if run.order is None else f"{run.order:.2f}"
        conv = "yes" if run.converged else "NO"
        # the reason in words in the table ("—" for the root of a run that did not
        # converge); the code and its sentence in the line under it
        root = r(run.root) if run.converged else "—"
        row = (f"{root} {conv} {reason_short(run.reason)} {run.iterations} "
               f"{run.evaluations} {order}")
        assert row in text, run.method
        assert f"{run.reason}: {REASON_TEXT[run.reason]}" in text
        assert REASON_TEXT[run.reason] in text


def test_sheet_root_matches_an_independent_solution(sheet):
    # Colebrook–White, 1/sqrt(f) = -2 log10(eps/(3.7 D) + 2.51/(Re sqrt(f))) (standard form,
    # from memory); reference root by scipy.optimize.brentq on our own numpy expression.
    p = sheet["ws"].parameter_values()

    def colebrook(f):
        return 1 / math.sqrt(f) + 2 * math.log10(p["eps"] / (3.7 * p["D"])
                                                 + 2.51 / (p["Re"] * math.sqrt(f)))

    reference = brentq(colebrook, 0.005, 0.1, xtol=1e-15, rtol=4 * np.finfo(float).eps)
    newton = next(r for r in sheet["solution"].runs if r.method == "newton")
    assert r(newton.root) in sheet["text"]
    assert newton.root == pytest.approx(reference, rel=1e-12)


def test_high_precision_residual_matches_an_independent_mpmath_evaluation(sheet):
    # Reference: our own 50-digit mpmath evaluation of lhs - rhs at the root the sheet shows
    # (mpmath as the reference library; same magnitude whatever the sign convention).
    p = {k: mpmath.mpf(v) for k, v in sheet["ws"].parameter_values().items()}
    newton = next(r for r in sheet["solution"].runs if r.method == "newton")
    # At a root the residual is near 1e-16, so how the typed constants 3.7 and 2.51 are
    # read (as the nearest double, or as exact decimals) shows in the digits: accept either.
    candidates = []
    with mpmath.workdps(50):
        f = mpmath.mpf(newton.root)
        for c37, c251 in ((mpmath.mpf(3.7), mpmath.mpf(2.51)),
                          (mpmath.mpf("3.7"), mpmath.mpf("2.51"))):
            inner = p["eps"] / (c37 * p["D"]) + c251 / (p["Re"] * mpmath.sqrt(f))
            candidates.append(abs(float(1 / mpmath.sqrt(f) + 2 * mpmath.log10(inner))))
    row = re.search(re.escape(NEWTON) + r" (\S+) (\S+) (\S+)",
                    flat(sheet["text"]).split("Verification of each root")[1])
    float_residual, mp_residual, relative_step = row.groups()
    assert float(float_residual) == newton.residual
    assert any(abs(float(mp_residual)) == pytest.approx(c, rel=1e-6) for c in candidates), (
        mp_residual, candidates)
    last = newton.steps[-1]
    assert float(relative_step) == pytest.approx(abs(last.dx) / abs(last.x), rel=1e-3)


def test_agreement_sentence(sheet):
    digits = sheet["solution"].agreement_digits
    assert digits is not None
    assert f"agree to {digits} significant figures" in flat(sheet["text"])


def test_scan_roots_listed_and_no_selection_said_so(sheet):
    scan, text = sheet["scan"], flat(sheet["text"])
    assert scan.roots
    assert f"{len(scan.roots)} found" in text
    for i, root in enumerate(scan.roots, start=1):
        assert f"{i} {r(root.x)} {r(root.residual)} {root.multiplicity}" in text
    assert "No root was selected as the design value" in text


def test_figures_are_placed(sheet):
    reader = pypdf.PdfReader(str(sheet["result"].pdf_path))
    page = next(i for i, t in enumerate(sheet["pages"]) if "Figure 2." in t)
    assert len(reader.pages[page].images) >= 1
    assert "Figure 1." in sheet["text"]


def test_iteration_tables_show_every_iterate_in_full(sheet):
    text = sheet["text"]
    for run in sheet["solution"].runs:
        assert f"{len(run.steps)} points recorded, {run.iterations} iterations" in flat(text)
        for step in run.steps:
            assert r(step.x) in text and r(step.fx) in text, (run.method, step.k)


def test_progress_is_reported_from_zero_to_one(sheet):
    fractions = sheet["progress"]
    assert fractions[0] == 0.0 and fractions[-1] == 1.0
    assert fractions == sorted(fractions)


# ----------------------------------------------------------------------- CSV


def test_runs_csv_reproduces_the_sheet_exactly(sheet):
    path = next(p for p in sheet["result"].csv_paths if p.name.endswith("-runs.csv"))
    header, rows = data_rows(path)
    assert header == ["method", "k", "x", "fx", "dfx", "dx", "lo", "hi"]
    steps = [(run.method, s) for run in sheet["solution"].runs for s in run.steps]
    assert len(rows) == len(steps)
    for row, (method, step) in zip(rows, steps, strict=True):
        assert row[0] == method and int(row[1]) == step.k
        assert float(row[2]) == step.x and float(row[3]) == step.fx
        assert row[2] in sheet["text"] and row[3] in sheet["text"]
    # numpy reads the same doubles: skip the '#' lines, take names from the header row
    table = np.genfromtxt(path, delimiter=",", comments="#", skip_header=metadata_lines(path),
                          names=True, dtype=None, encoding="utf-8")
    assert np.array_equal(table["x"], np.array([s.x for _, s in steps]))
    assert np.array_equal(table["fx"], np.array([s.fx for _, s in steps]))
    # the CSV names the sheet it belongs to
    assert f"# worksheet sha256: {sheet['result'].sha256}" in path.read_text(encoding="utf-8")


def test_roots_csv_reproduces_the_scan(sheet):
    path = next(p for p in sheet["result"].csv_paths if p.name.endswith("-roots.csv"))
    _, rows = data_rows(path)
    xs = [float(r[1]) for r in rows if r[0] == "root"]
    assert xs == [root.x for root in sheet["scan"].roots]
    # numpy.loadtxt (it honours the quotes around a 'confirmed' text that holds a comma)
    column = np.loadtxt(path, delimiter=",", comments="#", skiprows=metadata_lines(path) + 1,
                        usecols=(1,), quotechar='"', ndmin=1, encoding="utf-8")
    kinds = [row[0] for row in rows]
    assert [x for x, kind in zip(column.tolist(), kinds, strict=True) if kind == "root"] == xs
    for x in xs:
        assert r(x) in sheet["text"]


# ------------------------------------------------------------ own scenarios


def no_root_worksheet(**settings) -> Worksheet:
    """x^2 + 1 = 0 has no real root: every method must fail (invented test scenario)."""
    return Worksheet(
        equation="x^2 + 1",
        unknown="x",
        settings=Settings(x0=0.5, x1=0.7, bracket=(-1.0, 2.0), max_iter=150, **settings),
        scan=(-2.0, 2.0),
        title="No real root (invented test scenario)",
        calc=CalcInfo(number="ZT-TEST-404", revision="0"),
    )


def test_failed_solve_still_produces_the_sheet_and_says_why(tmp_path):
    ws = no_root_worksheet()
    result = write_report(ws, tmp_path / "fail.pdf", **handed(ws))
    texts = pages_text(result.pdf_path)
    text = flat("\n".join(texts))
    solution = pipeline.solve(ws)
    assert not any(r.converged for r in solution.runs)
    for run in solution.runs:
        assert f"did not converge. Stop reason {run.reason}: {REASON_TEXT[run.reason]}" in text
    assert "No method converged" in text
    assert "0 found" in text
    for n, page in enumerate(texts, start=1):
        assert "Calc ZT-TEST-404" in page and f"page {n} of {len(texts)}" in page


def test_a_long_table_repeats_its_header_on_every_page(tmp_path):
    ws = no_root_worksheet()
    result = write_report(ws, tmp_path / "long.pdf", **handed(ws))
    newton = next(r for r in pipeline.solve(ws).runs if r.method == "newton")
    assert len(newton.steps) > 100  # Newton wanders on x^2 + 1 until the cap
    banner = f"{NEWTON} — {len(newton.steps)} points recorded"
    pages = [flat(t) for t in pages_text(result.pdf_path)]
    holding = [t for t in pages if banner in t]
    assert len(holding) >= 2
    for t in holding:
        assert "k xₖ f(xₖ)" in t  # the column header row came along
    # every k appears once, in order, across the pages
    ks = [int(m) for t in holding for m in re.findall(r"(?<![\d.e-])(\d{1,3}) -?\d+\.\d+", t)]
    assert ks[: len(newton.steps)] == list(range(len(newton.steps)))


def test_selected_design_value_and_reason(tmp_path):
    ws = load(SAMPLE)
    scan = pipeline.scan_worksheet(ws)
    ws = ws.with_changes(selection=Selection(scan.roots[0].x, "turbulent branch (invented)"))
    result = write_report(ws, tmp_path / "sel.pdf", **handed(ws))
    text = flat("\n".join(pages_text(result.pdf_path)))
    assert f"Selected design value: f = {r(scan.roots[0].x)}" in text
    assert "nearest scanned root #1" in text
    assert "Reason: turbulent branch (invented)" in text


def test_numerical_derivative_is_said(tmp_path):
    ws = load(SAMPLE)
    equation = dataclasses.replace(pipeline.equation_of(ws), fprime=None)
    solution = pipeline.solve(ws, equation)
    result = write_report(ws, tmp_path / "num.pdf", solution=solution)
    assert flat(NUMERICAL_DERIVATIVE_NOTE) in flat("\n".join(pages_text(result.pdf_path)))


def test_unsaved_worksheet_hashes_its_canonical_json(tmp_path):
    ws = load(SAMPLE)
    result = write_report(ws, tmp_path / "unsaved.pdf", **handed(ws))
    assert result.sha256 == hashlib.sha256(dumps(ws).encode("utf-8")).hexdigest()
    text = flat(pages_text(result.pdf_path)[0])
    assert result.sha256 in text and "canonical worksheet JSON" in text


def test_user_text_is_printed_literally_not_as_markup(tmp_path):
    ws = load(SAMPLE).with_changes(
        title="Line <b>A</b> & <font size=40>B</font>", notes="Invented: 2 < 3 & 5 > 4 <br/>"
    )
    result = write_report(ws, tmp_path / "odd name ø.pdf", csv_dir=tmp_path / "csv ø",
                          **handed(ws))
    text = flat("\n".join(pages_text(result.pdf_path)))
    assert "Line <b>A</b> & <font size=40>B</font>" in text
    assert "Invented: 2 < 3 & 5 > 4 <br/>" in text
    assert all(p.exists() for p in result.csv_paths)


# ------------------------------------------------------------------ bad input


def test_missing_and_malformed_worksheets_are_refused_in_one_line(tmp_path):
    with pytest.raises(WorksheetError, match="no such file"):
        load(tmp_path / "absent.json")
    broken = tmp_path / "broken.json"
    broken.write_text('{"format": "zerotrace-worksheet", "version": 1, "equation": ', "utf-8")
    with pytest.raises(WorksheetError, match="not valid JSON"):
        load(broken)
    # a worksheet path that vanished before the report hashes it
    with pytest.raises(ReportError) as info:
        write_report(load(SAMPLE), tmp_path / "x.pdf", worksheet_path=tmp_path / "gone.json",
                     **handed(load(SAMPLE)))
    assert "\n" not in str(info.value) and "gone.json" in str(info.value)
    assert not (tmp_path / "x.pdf").exists()


@pytest.mark.parametrize("where", ["missing folder", "file as folder", "folder as file"])
def test_unwritable_output_path_is_refused_before_any_work(tmp_path, where, monkeypatch):
    (tmp_path / "plain.txt").write_text("x", "utf-8")
    (tmp_path / "adir").mkdir()
    target = {
        "missing folder": tmp_path / "nowhere" / "calc.pdf",
        "file as folder": tmp_path / "plain.txt" / "calc.pdf",
        "folder as file": tmp_path / "adir",
    }[where]

    def no_solving(*args, **kwargs):
        raise AssertionError("solved before checking the output path")

    results = handed(load(SAMPLE))  # the caller's results; the sheet must not solve
    monkeypatch.setattr(pipeline, "solve", no_solving)
    with pytest.raises(ReportError) as info:
        write_report(load(SAMPLE), target, **results)
    message = str(info.value)
    assert "\n" not in message and str(target) in message


@pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() == 0,
                    reason="root may write into a read-only folder")
def test_read_only_folder_is_refused(tmp_path):
    folder = tmp_path / "ro"
    folder.mkdir()
    folder.chmod(0o500)
    try:
        with pytest.raises(ReportError, match="cannot write"):
            write_report(load(SAMPLE), folder / "calc.pdf", **handed(load(SAMPLE)))
    finally:
        folder.chmod(0o700)


def test_existing_files_are_kept_unless_overwrite(tmp_path):
    ws = load(SAMPLE)
    pdf = tmp_path / "calc.pdf"
    pdf.write_bytes(b"previous sheet")
    with pytest.raises(ReportError, match="already exists"):
        write_report(ws, pdf, **handed(ws))
    assert pdf.read_bytes() == b"previous sheet"
    (tmp_path / "csv").mkdir()
    (tmp_path / "csv" / "new-runs.csv").write_text("old", "utf-8")
    with pytest.raises(ReportError, match="already exists"):
        write_report(ws, tmp_path / "new.pdf", csv_dir=tmp_path / "csv", **handed(ws))
    assert not (tmp_path / "new.pdf").exists()
    result = write_report(ws, pdf, overwrite=True, **handed(ws))
    assert pdf.read_bytes().startswith(b"%PDF") and result.pages >= 3


def test_a_failed_write_leaves_no_half_file(tmp_path, monkeypatch):
    ws = load(SAMPLE)
    pdf = tmp_path / "calc.pdf"
    pdf.write_bytes(b"previous sheet")

    def disk_full(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", disk_full)
    with pytest.raises(ReportError, match="No space left"):
        write_report(ws, pdf, overwrite=True, **handed(ws))
    assert pdf.read_bytes() == b"previous sheet"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["calc.pdf"]  # no temp left


def test_saved_sample_round_trip_keeps_the_hash_stable(tmp_path):
    # Saving the loaded sample again and reporting from that file hashes the new file's bytes.
    ws = load(SAMPLE)
    path = tmp_path / "copy.json"
    save(ws, path)
    result = write_report(ws, tmp_path / "copy.pdf", worksheet_path=path, **handed(ws))
    assert result.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert result.sha256 == hashlib.sha256(dumps(ws).encode("utf-8")).hexdigest()


def test_a_scan_of_many_roots_is_cut_on_the_sheet_but_whole_in_the_csv(tmp_path, monkeypatch):
    """A scan of a wide range finds up to 100,000 roots, and reportlab took tens of minutes
    over a table that long (0.5 cosh(tan(x/700)) = sin(x) on [-5, 1e6] ran for over a
    quarter of an hour). The sheet shows the first and last MAX_TABLE_ROWS / 2 roots,
    poles and jumps and says how many it left out; the roots CSV holds them all. tan x on
    [0.5, 200]: roots k pi, k = 1..63, poles (k + 1/2) pi, k = 0..63 (by hand)."""
    from app.documents import report

    monkeypatch.setattr(report.sections, "MAX_TABLE_ROWS", 40)  # small caps: a quick test
    monkeypatch.setattr(report.sections, "MAX_LISTED", 40)
    ws = Worksheet(equation="tan(x)", unknown="x",
                   settings=Settings(methods=("newton",), x0=3.0), scan=(0.5, 200.0))
    given = handed(ws)
    roots, poles = given["scan"].roots, given["scan"].poles
    assert [x.x for x in roots] == pytest.approx([k * math.pi for k in range(1, 64)],
                                                 rel=1e-14)
    assert list(poles) == pytest.approx([(k + 0.5) * math.pi for k in range(64)], rel=1e-12)
    result = write_report(ws, tmp_path / "many.pdf", csv_dir=tmp_path, **given)
    text = flat("\n".join(pages_text(result.pdf_path)))
    assert "… 23 roots left out here; the roots CSV holds every one" in text
    assert "… 24 poles left out here; the roots CSV holds every one" in text
    for root in roots[:20] + roots[-20:]:
        assert r(root.x) in text
    for root in roots[20:-20]:
        assert r(root.x) not in text
    path = next(p for p in result.csv_paths if p.name.endswith("-roots.csv"))
    _, rows = data_rows(path)
    assert [float(row[1]) for row in rows if row[0] == "root"] == [x.x for x in roots]
    assert [float(row[1]) for row in rows if row[0] == "pole"] == list(poles)


def test_a_scan_of_many_gaps_is_one_band_collection_and_a_short_list(tmp_path, monkeypatch):
    """log10(cos x) is undefined where cos x <= 0: on [0, 700], 112 gaps, the first
    (pi/2, 3 pi/2) (by hand). On a range 1e200 wide the scan found 34,000, drawn as as
    many patches and listed in one table cell: the sheet took minutes. The figure holds
    them in one collection, the sheet lists the first and last MAX_LISTED / 2."""
    from matplotlib.collections import PolyCollection
    from matplotlib.figure import Figure

    from app.documents import figures, report

    monkeypatch.setattr(report.sections, "MAX_LISTED", 20)
    ws = Worksheet(equation="log10(cos(x)) = -0.1", unknown="x",
                   settings=Settings(methods=("newton",), x0=0.3), scan=(0.0, 700.0))
    given = handed(ws)
    gaps = given["scan"].gaps
    assert len(gaps) == 112
    assert gaps[0] == pytest.approx((math.pi / 2, 3 * math.pi / 2), rel=1e-9)
    ax = Figure().add_subplot()
    figures.draw_function(ax, pipeline.equation_of(ws).f, 0.0, 700.0, scan=given["scan"])
    bands = [c for c in ax.collections if c.get_label() == "f undefined"]
    assert len(bands) == 1 and isinstance(bands[0], PolyCollection)
    assert len(bands[0].get_paths()) == 112
    result = write_report(ws, tmp_path / "gaps.pdf", **given)
    text = flat("\n".join(pages_text(result.pdf_path)))
    assert "… 92 gaps left out here; zerotrace scan --json lists every one" in text


def test_parameters_table_handles_many_parameters(tmp_path):
    # 60 invented parameters: the table flows over a page break and loses none.
    params = tuple(Parameter(f"p{i}", i * 0.1, f"invented parameter {i}") for i in range(60))
    ws = Worksheet(equation="x - p1", unknown="x", parameters=params,
                   settings=Settings(x0=0.0, bracket=(-1.0, 1.0)),
                   title="Many parameters (invented)")
    result = write_report(ws, tmp_path / "many.pdf", **handed(ws))
    text = flat("\n".join(pages_text(result.pdf_path)))
    for p in params:
        assert f"{p.name} {r(p.value)} {p.note}" in text


def test_a_huge_run_is_cut_on_the_sheet_but_whole_in_the_csv(tmp_path, monkeypatch):
    from app.documents import report

    monkeypatch.setattr(report.tables, "MAX_TABLE_ROWS", 40)  # small cap, so the test stays quick
    ws = no_root_worksheet().with_changes(settings=Settings(methods=("newton",), x0=0.5,
                                                            max_iter=150))
    result = write_report(ws, tmp_path / "cut.pdf", csv_dir=tmp_path, **handed(ws))
    newton = pipeline.solve(ws).runs[0]
    left_out = len(newton.steps) - 40
    text = flat("\n".join(pages_text(result.pdf_path)))
    assert f"… {left_out} iterates left out here; the runs CSV holds every one" in text
    for step in newton.steps[:20] + newton.steps[-20:]:
        assert r(step.x) in text
    for step in newton.steps[20:-20]:
        assert r(step.x) not in text
    _, rows = data_rows(result.csv_paths[0])
    assert [float(row[2]) for row in rows] == [s.x for s in newton.steps]
