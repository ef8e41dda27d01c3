"""What zerotrace hands over: plots, the derivative as printed, CSV and JSON, the caution,
the command's behaviour in a pipe and when the window's system libraries are missing.

Outside references are named beside each check (mpmath, Python's csv module, the ELF
loader's own report via ldd, matplotlib's measured text extents). The equations are
invented scenarios of our own.
"""

from __future__ import annotations

import csv
import io
import json
import math
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import mpmath
import numpy as np
import pypdf
import pytest
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from app import cli, qt_libraries
from app.documents import export, figures, printing, report, worksheet
from app.documents.words import CAUTION
from solvers import parse_equation, pipeline

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "samples"


def handed(ws):
    """What a caller hands the sheet: the worksheet's solution and scan (it never solves)."""
    solution, scan = pipeline.solve_and_scan(ws)
    return {"solution": solution, "scan": scan}


def flat(text: str) -> str:
    return " ".join(text.split())


# ----------------------------------------------------------------- the printer

# Invented equations covering every function the parser knows, powers with exact and
# floating exponents, parameters, and the kinks (abs, min, max) whose derivatives bring in
# sign and the unit step.
ROUND_TRIP = [
    ("1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))",
     {"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5}, (0.005, 0.1)),
    ("(P + a/V^2)*(V - b) = R*T",
     {"P": 5e6, "a": 0.61, "b": 4.7e-5, "R": 8.314462618, "T": 400.0}, (6e-5, 1e-3)),
    ("cos(L*(rho*A*w^2/(E*I))^0.25)*cosh(L*(rho*A*w^2/(E*I))^0.25) + 1",
     {"L": 3.2, "rho": 7850.0, "A": 1.492e-3, "E": 2e11, "I": 1.688e-6}, (1.0, 1500.0)),
    ("x^(3/2) - sqrt(x)^3/2 + atan2(x, 2) + log2(x) + ln(x) + exp(-x)*cosh(x) + x^-1.5",
     {}, (0.1, 9.0)),
    ("sin(30deg)*tan(x) + asin(x/4) + acos(x/5) + atan(x) + sinh(x) - tanh(x) + asinh(x)"
     " + acosh(x + 1) + atanh(x/6) - 2^x + 10^(-x) + pi", {}, (0.05, 3.0)),
    ("abs(x - 1) + max(x, 2) - min(x, 3, 2x) + q*x^2", {"q": 0.3}, (0.0, 5.0)),
    ("42 - 8.5*Q - 310*Q^2 = Hs + ks*Q^1.85", {"Hs": 12.0, "ks": 950.0}, (0.0, 0.3)),
]


@pytest.mark.parametrize("text, params, span", ROUND_TRIP, ids=lambda v: str(v)[:24])
def test_printed_expression_and_derivative_parse_back_to_the_same_values(text, params, span):
    eq = parse_equation(text, parameters=params)
    x = np.linspace(*span, 397)[1:-1]
    for expr, compiled in ((eq.expr, eq.f), (eq.derivative, eq.fprime)):
        assert expr is not None and compiled is not None
        printed = printing.equation_text(expr)
        for foreign in ("**", "log(", "Abs(", "Heaviside", "sign(", "Min(", "Max(", "E*"):
            assert foreign not in printed, (foreign, printed)
        for shown in (printed, printing.breakable(printed)):
            back = parse_equation(shown, unknown=eq.unknown)
            want, got = compiled(x), back.f(x)
            both = np.isfinite(want) & np.isfinite(got)
            assert np.array_equal(np.isfinite(want), np.isfinite(got)), shown
            # The parser folds constant parts (ln(10), 3.7*0.15) into one double as it
            # reads, so values agree to rounding, not always to the bit.
            np.testing.assert_allclose(got[both], want[both], rtol=1e-12, atol=1e-300)


def test_printed_derivative_uses_our_syntax_and_matches_an_independent_derivative():
    eq = parse_equation("1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))",
                        parameters={"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5})
    printed = printing.equation_text(eq.derivative)
    assert "ln(10)" in printed and "f^(3/2)" in printed and "^" in printed
    back = parse_equation(printed, unknown="f")
    mpmath.mp.dps = 30

    def colebrook(f):  # written out independently; mpmath.diff is the reference derivative
        return 1 / mpmath.sqrt(f) + 2 * mpmath.log10(
            4.5e-5 / (mpmath.mpf("3.7") * mpmath.mpf("0.15"))
            + mpmath.mpf("2.51") / (mpmath.mpf("1.2e5") * mpmath.sqrt(f)))

    for f in (0.008, 0.019, 0.05):
        assert back.f(f) == pytest.approx(float(mpmath.diff(colebrook, f)), rel=1e-12)


def test_printed_numbers_read_back_exactly_and_are_never_split():
    value = 2.0916666666666666e-05
    eq = parse_equation(f"{value!r}/sqrt(x) + 1e-300*x + 123456789.125*x^2")
    printed = printing.breakable(printing.equation_text(eq.expr))
    numbers = re.findall(r"\d+\.?\d*(?:e[+-]?\d+)?", printed)
    assert repr(value) in numbers and "1e-300" in numbers and "123456789.125" in numbers
    # A number's own minus sign (e-05) is no operator: nothing is spaced inside it.
    assert "e - " not in printed and "e-05" in printed


# ----------------------------------------------------------------- the calculation sheet


@pytest.fixture(scope="module")
def sheets(tmp_path_factory):
    out = {}
    for name in ("cooling-water-friction", "gas-molar-volume-vdw"):
        ws = worksheet.load(SAMPLES / f"{name}.json")
        pdf = tmp_path_factory.mktemp(name) / "sheet.pdf"
        report.write_report(ws, pdf, **handed(ws))
        out[name] = (ws, [p.extract_text() for p in pypdf.PdfReader(str(pdf)).pages])
    return out


def test_sheet_prints_the_derivative_in_our_syntax_with_every_number_whole(sheets):
    ws, pages = sheets["cooling-water-friction"]
    eq = pipeline.equation_of(ws)
    text = pages[0] + pages[1]
    assert "ln(10)" in flat(text) and "log(10)" not in text and "**" not in text
    lines = text.splitlines()
    for number in re.findall(r"\d+\.\d+e[+-]\d+|\d+\.\d+", printing.equation_text(eq.derivative)):
        # Each number of f' stands whole on one line of the page (pypdf's text lines).
        assert any(number in line for line in lines), number


def test_sheet_figures_name_the_unknown(sheets):
    _ws, pages = sheets["gas-molar-volume-vdw"]
    text = flat(" ".join(pages))
    assert "|f(V_k)|" in text and "|f(x_k)|" not in text


def test_a_long_typeset_derivative_is_set_over_lines_not_shrunk():
    eq = parse_equation("cos(L*(rho*A*w^2/(E*I))^0.25)*cosh(L*(rho*A*w^2/(E*I))^0.25) + 1",
                        parameters={"L": 3.2, "rho": 7850.0, "A": 1.492e-3, "E": 2e11,
                                    "I": 1.688e-6})
    terms = printing.latex_terms(eq.symbolic_derivative)
    assert len(terms) == 2 and terms[1].startswith(("+ ", "- "))
    width = 300.0  # points: narrower than the derivative on one line at 12 pt
    one_line = report._math_png(r"\frac{df}{dw} = " + " ".join(terms))
    assert one_line is not None and one_line[1] > width
    images = report._math_lines(r"\frac{df}{dw} =", terms, width)
    assert images is not None and len(images) >= 2
    full_height = report._math_png(terms[1])[2]
    for image in images:
        assert image.drawWidth <= width + 1e-6
        assert image.drawHeight >= report.MATH_MIN_SCALE * full_height * 0.99


# ----------------------------------------------------------------- plots


def _visible_span_near_roots(c: figures.Curve, roots, frac=0.02):
    lo, hi = c.ylim
    width = c.x[-1] - c.x[0]
    spans = []
    for r in roots:
        near = (np.abs(c.x - r) <= frac * width) & np.isfinite(c.y)
        y = np.clip(c.y[near], lo, hi)
        spans.append((y.max() - y.min()) / (hi - lo))
    return spans


@pytest.mark.parametrize("name", ["gas-molar-volume-vdw", "sign-arm-natural-frequencies",
                                  "wall-conduction-eigenvalues", "project-irr"])
def test_plot_y_range_shows_every_root_as_a_crossing(name):
    ws = worksheet.load(SAMPLES / f"{name}.json")
    eq = pipeline.equation_of(ws)
    result = pipeline.scan_worksheet(ws, eq)
    roots = [r.x for r in result.roots]
    c = figures.curve(eq.f, *ws.scan, breaks=list(result.poles), roots=roots)
    lo, hi = c.ylim
    assert lo < 0 < hi
    # Near each root (2 % of the range either side) the curve crosses a tenth or more of
    # the visible height: a crossing, not a flat line on the axis.
    for r, span in zip(roots, _visible_span_near_roots(c, roots), strict=True):
        assert span >= 0.1, (r, span, c.ylim)
    # The sign change at each root is in view: samples on both sides within the frame.
    for r in roots:
        near = (np.abs(c.x - r) <= 0.02 * (c.x[-1] - c.x[0])) & np.isfinite(c.y)
        inside = c.y[near][(c.y[near] > lo) & (c.y[near] < hi)]
        assert inside.min() < 0 < inside.max(), r


def test_symmetric_log_axis_shows_the_whole_curve_linear_near_the_roots():
    ws = worksheet.load(SAMPLES / "sign-arm-natural-frequencies.json")
    eq = pipeline.equation_of(ws)
    result = pipeline.scan_worksheet(ws, eq)
    fig = Figure()
    ax = fig.add_subplot()
    c = figures.draw_function(ax, eq.f, *ws.scan, scan=result, unknown="w", symlog=True)
    assert ax.get_yscale() == "symlog"
    assert ax.get_ylim() == pytest.approx(c.full_ylim)
    finite = c.y[np.isfinite(c.y)]
    assert c.full_ylim[0] <= finite.min() and finite.max() <= c.full_ylim[1]
    threshold = ax.yaxis.get_transform().linthresh
    assert math.log10(threshold) == round(math.log10(threshold))  # a whole decade
    assert ax.get_xlabel() == "w" and ax.get_ylabel() == "f(w)"


def test_fast_oscillation_is_drawn_as_its_band_not_a_false_slow_wave():
    # sin(100 x) on [0, 1000]: 15 915 periods across 2000 pixel columns, 8 per column.
    c = figures.curve(lambda x: np.sin(100 * x), 0.0, 1000.0, n=2000)
    assert c.envelope
    # Every stretch of 5 columns reaches near both +1 and -1 (numpy.sin is the reference);
    # a sampled line with a false slow wave sags far below that in places.
    edges = np.linspace(0.0, 1000.0, 401)
    for a, b in zip(edges[:-1], edges[1:], strict=True):
        y = c.y[(c.x >= a) & (c.x < b)]
        assert y.max() > 0.9 and y.min() < -0.9, (a, y.max(), y.min())
    # A slowly turning function is no band, and its samples are points of f itself.
    smooth = figures.curve(np.cos, 0.0, 10.0, n=500)
    assert not smooth.envelope
    np.testing.assert_array_equal(smooth.y, np.cos(smooth.x))


@pytest.mark.parametrize("name", ["gas-molar-volume-vdw", "project-irr", "cooling-water-friction"])
def test_x_tick_labels_neither_collide_nor_leave_the_figure(name):
    ws = worksheet.load(SAMPLES / f"{name}.json")
    eq = pipeline.equation_of(ws)
    for size in ((3.4, 2.4), (6.0, 3.2)):
        fig = Figure(figsize=size, dpi=100, layout="constrained")
        canvas = FigureCanvasAgg(fig)
        ax = fig.add_subplot()
        figures.draw_function(ax, eq.f, *ws.scan, unknown=eq.unknown)
        canvas.draw()
        renderer = canvas.get_renderer()
        boxes = [t.get_window_extent(renderer) for t in ax.get_xticklabels()
                 if t.get_visible() and t.get_text()
                 and ax.get_xlim()[0] <= t.get_position()[0] <= ax.get_xlim()[1]]
        assert len(boxes) >= 3
        boxes.sort(key=lambda bb: bb.x0)
        for left, right in zip(boxes, boxes[1:], strict=False):
            assert left.x1 < right.x0, (name, size)
        width = fig.bbox.width
        assert all(bb.x0 >= 0 and bb.x1 <= width for bb in boxes), (name, size)


# ----------------------------------------------------------------- CSV, JSON, caution


def test_csv_metadata_lines_start_with_hash_and_carry_the_full_caution():
    """Every metadata line begins with '#' in the file itself, commas and quotes in its
    value included (a reader skipping comment lines, e.g. comment='#', then sees the header
    first; a quoted line would begin with '"' and be read as the header), and holds its
    value whole. Reference: Python's csv module reading the lines after the '#' ones."""
    eq = parse_equation("atan2(y, 1) + min(y, 2, 3) = 0.5")
    result = pipeline.scan_worksheet(worksheet.Worksheet(equation=eq.text, scan=(-1.0, 1.0)),
                                     eq)
    meta = export.metadata(equation=eq.text, unknown="y", parameters={"a": 1.5, "b": 2.0},
                           settings={"bracket": [0.1, 0.2], "methods": ["newton", "brent"]},
                           extra={"warnings": "one, two, and \"three\""})
    buffer = io.StringIO()
    export.roots_csv(result, buffer, meta=meta)
    lines = buffer.getvalue().splitlines()
    header = next(i for i, line in enumerate(lines) if not line.startswith("#"))
    assert header == len(meta) + 1  # every metadata line one line ("range" added)
    rows = list(csv.reader(lines[header:]))
    assert rows[0] == list(export.ROOT_COLUMNS)
    cells = dict(line[2:].split(": ", 1) for line in lines[:header])
    assert cells["equation"] == eq.text
    assert cells["warnings"] == 'one, two, and "three"'
    assert cells["caution"] == CAUTION


def test_json_documents_carry_the_caution(capsys):
    assert cli.main(["solve", "42 - 8.5Q - 310Q^2 = 12 + 950*Q^1.85", "--x0", "0.1",
                     "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["caution"] == CAUTION
    assert cli.main(["scan", "42 - 8.5Q - 310Q^2 = 12 + 950*Q^1.85", "--from", "0", "--to",
                     "0.3", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["caution"] == CAUTION and len(data["roots"]) == 1


def test_one_caution_text_everywhere():
    from app.window import dialogs

    assert flat(CAUTION) in flat((ROOT / "README.md").read_text(encoding="utf-8"))
    assert report.CAUTION is CAUTION
    assert CAUTION in cli.caution()
    assert CAUTION in dialogs.HELP_HTML and CAUTION in dialogs.ABOUT_HTML
    assert "," not in CAUTION  # so its CSV line stays a plain '# caution:' line
    # No other copy of caution wording in the code: only the words package's own file
    # (app/documents/words/__init__.py) holds it.
    for path in [*ROOT.glob("solvers/**/*.py"), *ROOT.glob("app/**/*.py")]:
        if path.relative_to(ROOT).as_posix() != "app/documents/words/__init__.py":
            assert "qualified engineer" not in path.read_text(encoding="utf-8"), path


# ----------------------------------------------------------------- the command


def test_output_cut_short_by_its_reader_ends_quietly():
    cmd = [sys.executable, "-m", "app.cli", "scan", "sin(x)", "--from", "0", "--to", "6000"]
    proc = subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE, cwd=ROOT)
    first = proc.stdout.readline()
    proc.stdout.close()  # like `| head -1`: the reader goes away with output still coming
    err = proc.stderr.read()
    code = proc.wait(timeout=120)
    assert first.startswith(b"scan of [0, 6000]")
    assert code == 0 and err == b"", err.decode(errors="replace")


def test_a_closed_standard_output_ends_as_a_gone_reader_does(tmp_path):
    """`zerotrace solve ... >&-` (stdout closed by the caller): Python has no stdout at
    all, and the final flush was an AttributeError reported as a defect (exit 1). Now it
    ends as output cut short does, and the CSV asked for is written (its root against
    sqrt(2), by hand). With stderr closed too, bad input still exits 2."""
    out = tmp_path / "log.csv"

    def closed(*fds: int):
        return lambda: [os.close(fd) for fd in fds]

    cmd = [sys.executable, "-m", "app.cli", "solve", "x^2 - 2", "--x0", "1", "--method",
           "newton", "--csv", str(out)]
    proc = subprocess.run(cmd, stderr=subprocess.PIPE, cwd=ROOT, timeout=120,
                          preexec_fn=closed(1))
    assert proc.returncode == 0 and proc.stderr == b"", proc.stderr.decode(errors="replace")
    iterates = [float(row[2]) for row in csv.reader(out.read_text().splitlines())
                if row and row[0] == "newton"]
    assert iterates[-1] == pytest.approx(math.sqrt(2), rel=1e-15)
    bad = subprocess.run([sys.executable, "-m", "app.cli", "solve", "x^2 -"], cwd=ROOT,
                         timeout=120, preexec_fn=closed(1, 2))
    assert bad.returncode == 2


def test_missing_system_libraries_are_named_in_one_line(tmp_path):
    gcc = shutil.which("gcc") or shutil.which("cc")
    if gcc is None or shutil.which("ldd") is None or not sys.platform.startswith("linux"):
        pytest.skip("needs a C compiler and ldd to build a library with a missing dependency")
    (tmp_path / "stub.c").write_text("int zt_stub(void) { return 1; }\n")
    (tmp_path / "probe.c").write_text("int zt_stub(void);\nint zt_probe(void) "
                                      "{ return zt_stub(); }\n")
    subprocess.run([gcc, "-shared", "-fPIC", "-o", "libztabsent.so",
                    "-Wl,-soname,libztabsent.so.1", "stub.c"], cwd=tmp_path, check=True)
    subprocess.run([gcc, "-shared", "-fPIC", "-o", "probe.so", "probe.c", "-L.",
                    "-Wl,--no-as-needed", "-lztabsent"], cwd=tmp_path, check=True)
    (tmp_path / "libztabsent.so").unlink()  # now the loader cannot find the dependency
    missing = qt_libraries.missing_system_libraries([str(tmp_path / "probe.so")])
    assert missing == ["libztabsent.so.1"]
    message = qt_libraries.missing_libraries_message(["libxcb-keysyms.so.1", "libxcb-icccm.so.4"])
    assert "\n" not in message
    assert "libxcb-keysyms.so.1" in message and "libxcb-icccm4 libxcb-keysyms1" in message


def test_every_library_of_the_xcb_platform_is_listed_in_readme_and_ci():
    ldd = shutil.which("ldd")
    plugins = list(ROOT.glob(".venv/lib/python3*/site-packages/PySide6/Qt/plugins/platforms/"
                             "libqxcb.so"))
    if ldd is None or not plugins:
        pytest.skip("needs ldd and PySide6's xcb platform plugin")
    out = subprocess.run([ldd, str(plugins[0])], capture_output=True, text=True).stdout
    system = {line.split("=>")[0].strip() for line in out.splitlines() if "=>" in line
              and "PySide6" not in line.split("=>")[1]}
    # The loader's own list (ldd), less the C runtime every Linux has.
    runtime = re.compile(r"^(libc|libm|libdl|libpthread|librt|libgcc_s|libstdc\+\+|ld-linux)")
    needed = {name for name in system if not runtime.match(name)}
    x_and_gl = {name for name in needed if name.startswith(("libxcb", "libX11", "libxkb",
                                                           "libGL", "libEGL", "libOpenGL"))}
    known = set(qt_libraries.QT_SYSTEM_LIBRARIES)
    assert x_and_gl <= known, x_and_gl - known
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    for package in set(qt_libraries.QT_SYSTEM_LIBRARIES.values()):
        assert re.search(rf"(?<![\w-]){re.escape(package)}(?![\w-])", readme), package
        assert re.search(rf"(?<![\w-]){re.escape(package)}(?![\w-])", ci), package


def test_window_command_names_missing_libraries_instead_of_aborting(monkeypatch):
    # The window on an X display (the xcb platform), as `make run` opens it on a desktop.
    monkeypatch.delenv("QT_QPA_PLATFORM", raising=False)
    monkeypatch.delenv("WAYLAND_DISPLAY", raising=False)
    monkeypatch.setenv("DISPLAY", ":97")
    missing = qt_libraries.missing_system_libraries()
    if not missing:
        pytest.skip("every library Qt's xcb window needs is installed here")
    env = dict(os.environ)
    proc = subprocess.run([sys.executable, "-m", "app.cli"], capture_output=True, text=True,
                          cwd=ROOT, env=env, timeout=60)
    assert proc.returncode == 2
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and all(name in lines[0] for name in missing)
