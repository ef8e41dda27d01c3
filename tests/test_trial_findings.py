"""Defects a new user found in a trial of the CLI, the sheet and the windows, each pinned.

Outside references are named beside each check (numpy.roots for the swept cubic, Python's
csv and json modules reading the files back, pypdf reading the sheet). The equations and
numbers are invented for the tests.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from csv_files import read_results

from app.cli import main
from solvers import parse_equation
from solvers.batch import sweep

CUBIC = "x^3 - x - p"


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def data_rows(path):
    return read_results(path)[1]


# ------------------------------------------------ 1. a root outside --within ends the branch


def test_a_root_outside_the_range_is_not_reported_as_the_branchs_root(tmp_path, capsys):
    # numpy.roots: x^3 - x - 1 has its one real root at 1.3247..., outside [-2, 0]
    real = [r.real for r in np.roots([1, 0, -1, -1]) if abs(r.imag) < 1e-12]
    assert len(real) == 1 and not -2 <= real[0] <= 0
    out = tmp_path / "b.csv"
    code, stdout, err = run(capsys, "sweep", CUBIC, "--vary", "p=-1:1:5", "--x0", "-1.3",
                            "--within", "-2", "0", "--out", str(out))
    assert code == 0, err
    last = data_rows(out)[-1]
    assert last["root"] == "" and last["converged"] == "False"
    assert last["reason"] == "outside_range"
    assert "outside the range" in stdout and " 1.3247" not in stdout.replace("-1.3", "")
    code, stdout, err = run(capsys, "sweep", CUBIC, "--vary", "p=-1:1:5", "--x0", "-1.3",
                            "--within", "-2", "0", "--json")
    row = json.loads(stdout)["rows"][-1]
    assert row["root"] is None and row["converged"] is False
    # the rows inside the range are the branch's roots (numpy.roots, the real one < 0)
    for r in json.loads(stdout)["rows"][:3]:
        inside = [z.real for z in np.roots([1, 0, -1, -r["p"]])
                  if abs(z.imag) < 1e-9 and -2 <= z.real <= 0]
        assert min(abs(r["root"] - z) for z in inside) < 1e-12


def test_the_sweep_itself_records_no_root_outside_the_range():
    equation = parse_equation("x - p", unknown="x", parameters={"p": 1.0})
    batch = sweep(equation, "p", [1.0, 2.0, 5.0], x0=1.0, bounds=(0.0, 3.0))
    assert batch.converged.tolist() == [True, True, False]
    assert np.isnan(batch.root[2]) and batch.reason[2] == "outside_range"
    # the method's own run did converge, out there (x = p = 5: closed form)
    assert batch.run(2).converged and batch.run(2).root == 5.0


# ------------------------------------------------ 4. the sweep described in plain numbers


def test_the_sweep_is_described_in_plain_numbers_and_the_cells_stay_exact(tmp_path, capsys):
    out = tmp_path / "b.csv"
    code, _, err = run(capsys, "sweep", CUBIC, "--vary", "p=-1:1:41", "--x0", "-1.3",
                       "--out", str(out))
    assert code == 0, err
    meta = read_results(out)[0]
    sweep_line = next(x for x in meta if "# sweep:" in x)
    assert "p from -1 to 1 in 41 values" in sweep_line and "np." not in sweep_line
    # the data cells are the values solved for, each read back to the same double
    # (numpy.linspace is the reference for the values)
    cells = [float(r["p"]) for r in data_rows(out)]
    assert cells == np.linspace(-1.0, 1.0, 41).tolist()
    code, stdout, _ = run(capsys, "sweep", CUBIC, "--vary", "p=-1:1:41", "--x0", "-1.3",
                          "--json")
    assert json.loads(stdout)["sweep"].startswith("p from -1 to 1 in 41 values")


# ------------------------------------------------ 7. the caution in every command's help


@pytest.mark.parametrize("command", ["solve", "scan", "report", "batch", "sweep"])
def test_every_commands_help_ends_with_the_caution(capsys, command):
    from app.documents.words import CAUTION

    with pytest.raises(SystemExit):
        main([command, "--help"])
    out = " ".join(capsys.readouterr().out.split())  # argparse wraps the epilog
    assert CAUTION in out


# ------------------------------------------------ 3. a text of several lines on one line

PUMP = "samples/systems/pump-two-parallel-lines-units.json"


def meta_line(path, key):
    return next(x for x in path.read_text(encoding="utf-8").splitlines()
                if x.lstrip('"').startswith(f"# {key}:"))


def test_csv_equation_lines_are_joined_by_semicolons_and_read_back_the_same(tmp_path, capsys):
    from solvers import parse_equation

    text = "A = pi*D^2/4\nv = Q/A\nv - 3"
    out = tmp_path / "s.csv"
    code, _, err = run(capsys, "solve", text, "--unknown", "D", "--param", "Q=0.1", "--x0",
                       "0.2", "--method", "newton", "--csv", str(out))
    assert code == 0, err
    line = meta_line(out, "equation")
    assert line == "# equation: A = pi*D^2/4; v = Q/A; v - 3"
    # the one line is the same equation (closed form: D = sqrt(4 Q / (3 pi)))
    one = parse_equation(line.split(": ", 1)[1], unknown="D", parameters={"Q": 0.1})
    root = (4 * 0.1 / (3 * np.pi)) ** 0.5
    assert abs(one.f(root)) < 1e-12
    system = tmp_path / "sys.csv"
    code, _, err = run(capsys, "solve", "--worksheet", PUMP, "--csv", str(system))
    assert code == 0, err
    assert meta_line(system, "equation").startswith("# equation: Q = Q1 + Q2; A1 = pi*D1^2/4; ")


def test_a_line_broken_inside_an_expression_stays_one_line():
    from solvers.equation import one_line

    # a break after '+' continues the line (solvers.equation.lines): joined by a space
    assert one_line("x^2 +\n  3*x = 4") == "x^2 + 3*x = 4"
    assert one_line("a = 2\nb = a*x\n\nb = 1") == "a = 2; b = a*x; b = 1"


# ------------------------------------------------ 10. a full step's damping is exactly 1


@pytest.mark.parametrize("sample", ["pump-two-parallel-lines-units.json",
                                    "pump-two-parallel-lines.json",
                                    "pipe-junction-three-branches.json"])
def test_a_full_step_records_damping_exactly_one(sample):
    from app.documents.worksheet import load
    from solvers.systems.pipeline import solve_worksheet

    solution = solve_worksheet(load(f"samples/systems/{sample}"))
    for run in solution.runs:
        assert run.converged
        damping = [s.damping for s in run.steps[1:]]
        # a fraction of the full step: a step cut short is clearly short, never 1 - 1e-16
        assert all(d == 1.0 or 0.0 < d <= 1.0 - 1e-6 for d in damping), damping
        # near a regular root the full (Newton or Broyden) step is accepted (common
        # practice: the Armijo test with c = 1e-4 holds there), so the tail reads 1
        assert damping[-2:] == [1.0, 1.0]


# ------------------------------------------------ 11. iterate axes tick whole numbers


def test_convergence_plots_tick_whole_iterates_only():
    from matplotlib.figure import Figure

    from app.documents.figures import draw_convergence
    from app.documents.system_figures import draw_system_convergence
    from app.documents.worksheet import load
    from solvers import run_method
    from solvers.systems.pipeline import solve_worksheet

    # x^2 - 4 from 1.9: Newton is done in a few iterates, where a float locator put
    # ticks at 0.5, 1.5, ...
    short = run_method("newton", lambda x: x * x - 4.0, fprime=lambda x: 2.0 * x, x0=1.9)
    system = solve_worksheet(load("samples/systems/pump-two-parallel-lines.json"))
    for draw, runs in ((draw_convergence, [short]), (draw_system_convergence, system.runs)):
        fig = Figure()
        ax = fig.add_subplot()
        draw(ax, runs)
        lo, hi = ax.get_xlim()
        ticks = [t for t in ax.get_xticks() if lo <= t <= hi]
        assert len(ticks) >= 2 and all(float(t).is_integer() for t in ticks), ticks


# ------------------------------------------------ 14. the JSON message names the unknown


def test_json_message_names_the_unknown_and_its_unit(capsys):
    code, out, err = run(capsys, "solve", "--worksheet",
                         "samples/cooling-line-bore-us-customary.json", "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["unknown"] == "D" and doc["unknown_unit"] == "mm"
    for r in doc["runs"]:
        if r["converged"]:
            assert f"converged to D = {r['root']!r} mm" in r["message"]


# ------------------------------------------------ 5, 6. words for codes; no root for a failure


def table_rows(out: str, first: str) -> list[list[str]]:
    """The rows of the terminal table whose heading starts with ``first``."""
    lines = out.splitlines()
    start = next(i for i, x in enumerate(lines) if x.startswith(first))
    rows = []
    for line in lines[start + 2:]:
        if not line.strip():
            break
        rows.append(line.split())
    return rows


def test_a_run_that_did_not_converge_shows_no_root_and_its_last_iterate_labelled(capsys):
    # x^2 - 4 has the same sign at 3 and 5 (5 and 21): no bracket, no root there
    code, out, err = run(capsys, "solve", "x^2 - 4", "--bracket", "3", "5",
                         "--method", "brent", "--method", "false-position")
    assert code == 0, err
    rows = table_rows(out, "method")
    assert [r[1] for r in rows[:1]] == ["—"] and rows[1][2] == "—"
    assert rows[1][-1] == "false-position"  # the flag's spelling, not false_position
    assert "Brent did not converge: last iterate x = 3.0 (not a root)." in out
    # the JSON contract keeps the number with converged false (README: --json)
    code, out, err = run(capsys, "solve", "x^2 - 4", "--bracket", "3", "5", "--method",
                         "brent", "--json")
    doc = json.loads(out)["runs"][0]
    assert doc["converged"] is False and doc["root"] == 3.0


def test_batch_and_sweep_tables_say_what_each_reason_code_means(capsys):
    from app.documents.words import reason_text

    code, out, err = run(capsys, "sweep", CUBIC, "--vary", "p=-1:1:5", "--x0", "-1.3",
                         "--within", "-2", "0")
    assert code == 0, err
    legend = next(x for x in out.splitlines() if x.startswith("reasons: "))
    for shown in ("x_tolerance", "exact_zero", "max_iterations", "outside_range"):
        assert f"{shown}: {reason_text(shown)}" in legend
    assert "f_tolerance" not in legend  # only the codes that occur


def test_the_sheet_says_stop_reasons_in_words(tmp_path, capsys):
    from pypdf import PdfReader

    from app.documents.words import reason_short

    pdf = tmp_path / "one.pdf"
    code, _, err = run(capsys, "report", "samples/cooling-water-friction.json", "--pdf",
                       str(pdf))
    assert code == 0, err
    text = " ".join(" ".join(p.extract_text() for p in PdfReader(pdf).pages).split())
    assert "stop: x_tolerance" not in text and "stop: exact_zero" not in text
    assert f"stop: {reason_short('exact_zero')}" in text


# ------------------------------------------------ 12. one cell, one iteration


def test_counts_of_one_are_singular(tmp_path, capsys):
    table = tmp_path / "t.csv"
    table.write_text("a,b\n1\n", encoding="utf-8")
    code, _, err = run(capsys, "batch", "x - a*b", "--table", str(table), "--x0", "1")
    assert code == 2 and "has 1 cell;" in err and "1 cells" not in err
    # x - 2 = 0 from x0 = 1: Newton lands on 2 in one step, then f(2) = 0 exactly
    code, out, err = run(capsys, "solve", "x - 2", "--x0", "1", "--method", "newton",
                         "--json")
    message = json.loads(out)["runs"][0]["message"]
    assert "1 iteration," in message and "1 iterations" not in message
    code, out, err = run(capsys, "scan", "x - 2", "--from", "0", "--to", "5")
    assert ": 1 root," in out and "root(s)" not in out


# ------------------------------------------------ 9. blocks counted from 1 everywhere


def test_blocks_are_counted_from_one_in_the_terminal_csv_and_json(tmp_path, capsys):
    # x^2 = 4 alone fixes x (block 1), then x*y = 6 gives y (block 2): closed form x = 2, y = 3
    argv = ["solve", "x^2 = 4; x*y = 6", "--unknown", "x", "--unknown", "y", "--x0", "x=1",
            "--x0", "y=1", "--method", "newton"]
    out_csv = tmp_path / "blk.csv"
    code, out, err = run(capsys, *argv, "--steps", "--csv", str(out_csv))
    assert code == 0, err
    steps = table_rows(out, "k  block")
    assert {r[1] for r in steps} == {"1", "2"}
    assert {r["block"] for r in data_rows(out_csv)} == {"1", "2"}
    code, out, err = run(capsys, *argv, "--json")
    doc = json.loads(out)["runs"][0]
    assert {s["block"] for s in doc["steps"]} == {1, 2}
    assert doc["root"] == {"x": 2.0, "y": 3.0}


# ------------------------------------------------ 13. hints in refusals; ';' tables read

COLEBROOK = "1/sqrt(lam) = -2*log10(rr/3.7 + 2.51/(Re*sqrt(lam)))"


def test_refusals_hint_at_a_decimal_comma_and_a_misspelt_function(capsys):
    code, _, err = run(capsys, "solve", "x - a", "--param", "a=2,5", "--x0", "1")
    assert code == 2 and "(a decimal comma? write 2.5)" in err
    code, _, err = run(capsys, "solve", "sqr(x) - 2", "--x0", "1")
    assert code == 2 and "unknown function 'sqr' (did you mean 'sqrt'?" in err
    # a comma that is no decimal comma gets no such hint
    code, _, err = run(capsys, "solve", "x - 2, 5", "--x0", "1")
    assert code == 2 and "decimal comma" not in err


def test_a_semicolon_table_is_read_as_a_comma_table(tmp_path, capsys):
    import scipy.optimize

    def colebrook(lam, Re, rr):
        return 1 / lam ** 0.5 + 2 * np.log10(rr / 3.7 + 2.51 / (Re * lam ** 0.5))

    semi = tmp_path / "semi.csv"
    semi.write_text("Re;rr\n1.2e5;4.5e-4\n2.4e6;3e-5\n", encoding="utf-8")
    out = tmp_path / "out.csv"
    code, _, err = run(capsys, "batch", COLEBROOK, "--table", str(semi), "--x0", "0.02",
                       "--out", str(out))
    assert code == 0, err
    for row in data_rows(out):  # scipy.optimize.brentq row by row
        ref = scipy.optimize.brentq(colebrook, 1e-3, 0.2, args=(float(row["Re"]),
                                                                float(row["rr"])), xtol=1e-15)
        assert abs(float(row["root"]) - ref) < 1e-13
    decimal = tmp_path / "decimal.csv"
    decimal.write_text("Re;rr\n1.2e5;0,00045\n", encoding="utf-8")
    code, _, err = run(capsys, "batch", COLEBROOK, "--table", str(decimal), "--x0", "0.02")
    assert code == 2 and "(a decimal comma? write 0.00045)" in err
    bars = tmp_path / "bars.csv"
    bars.write_text("Re|rr\n1.2e5|4.5e-4\n", encoding="utf-8")
    code, _, err = run(capsys, "batch", COLEBROOK, "--table", str(bars), "--x0", "0.02")
    assert code == 2 and "separate the columns by commas" in err


# ------------------------------------------------ 2, 15. the sheet's tables: headers over
# their columns; a failed run's values labelled as its last iterate


def placed_text(pdf, page_number):
    """(text, x start, x end, y) of every text run on a page, the end from the font's
    metrics (reportlab's, the fonts the sheet registered)."""
    from pypdf import PdfReader
    from reportlab.pdfbase import pdfmetrics

    fonts = {"DejaVuSans-Bold": "ZT-Sans-Bold", "DejaVuSansMono": "ZT-Mono",
             "DejaVuSans": "ZT-Sans"}
    placed = []

    def visit(text, cm, tm, font, size):
        text = text.strip()
        if not text or font is None:
            return
        base = str(font.get("/BaseFont", "")).split("+")[-1]
        if base not in fonts:
            return
        x = tm[4] * cm[0] + cm[4]
        width = pdfmetrics.stringWidth(text, fonts[base], size * cm[0])
        placed.append((text, x, x + width, round(tm[5] * cm[3] + cm[5], 1)))

    PdfReader(pdf).pages[page_number].extract_text(visitor_text=visit)
    return placed


def test_system_sheet_headers_sit_over_their_right_aligned_numbers(tmp_path, capsys):
    pdf = tmp_path / "sys.pdf"
    code, _, err = run(capsys, "report", PUMP, "--pdf", str(pdf))
    assert code == 0, err
    placed = placed_text(pdf, 2)  # page 3: Root, Residual, Definitions
    heads = [p for p in placed if p[0] in ("Newton–Raphson", "Broyden")]
    assert len(heads) == 6  # two method columns in each of the three tables
    rows = sorted({p[3] for p in heads}, reverse=True)
    for y in rows:
        line = sorted((p for p in placed if p[3] == y), key=lambda p: p[1])
        # adjacent headers never run together (3 pt of padding on each side)
        for a, b in zip(line, line[1:], strict=False):
            assert a[2] + 3 <= b[1], (a, b)
        # each method's numbers end where its header ends: right-aligned under it
        for head in (p for p in line if p[0] in ("Newton–Raphson", "Broyden")):
            below = [p for p in placed if y - 60 < p[3] < y and abs(p[2] - head[2]) < 1.0]
            assert len(below) >= 2, head


def test_sheet_labels_a_failed_runs_definitions_as_its_last_iterate(tmp_path, capsys):
    from pypdf import PdfReader

    sample = json.loads(open("samples/drainage-channel-normal-depth.json").read())
    sample["equation"] = ("A = (b + z*y)*y\nP = b + 2*y*sqrt(1 + z^2)\n"
                          "Q = (1/n)*A^(5/3)/P^(2/3)*sqrt(S)")
    sample["settings"]["max_iter"] = 3  # every method stops on the cap: no root
    ws = tmp_path / "defs.json"
    ws.write_text(json.dumps(sample), encoding="utf-8")
    pdf = tmp_path / "defs.pdf"
    code, _, err = run(capsys, "report", str(ws), "--pdf", str(pdf))
    assert code == 0, err
    text = " ".join(" ".join(p.extract_text() for p in PdfReader(pdf).pages).split())
    table = text[text.index("Definitions at each root"):]
    for title in ("Newton–Raphson", "Secant", "False position"):
        assert f"{title}: last iterate (not a root)" in table
