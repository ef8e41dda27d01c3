"""A civil/hydraulic and mechanical engineer's first trial of zerotrace: each finding pinned.

Scenarios are invented for this trial (a pump curve against a system curve in US customary
units, supply mains sized by Darcy-Weisbach with the Swamee-Jain friction factor for an
allowed head loss, a trapezoidal canal by Manning, a cylinder barrel's wall by the
thick-wall hoop stress); the numbers are checked against outside references named beside
each check: closed forms (the quadratic formula, the thick-wall formula
ro^2 = ri^2 (S + p)/(S - p), common practice, from memory), scipy.optimize.brentq, and
unit factors from NIST SP 811 (1 in = 0.0254 m, 1 ft = 0.3048 m, 1 lbf = 4.4482216152605 N,
1 US gal = 3.785411784 L, all exact).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import pypdf
import pytest
import scipy.optimize
from csv_files import read_results

from app.cli import main

GALLON = 3.785411784e-3  # m^3, NIST SP 811 (exact)
FOOT = 0.3048  # m, NIST SP 811 (exact)


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def first_main_json(capsys, table: Path) -> str:
    """``zerotrace batch --json`` of the first main (12 L/s, 350 m, 2.5 m of head) written
    to ``table`` with its units in the header, D in mm by Brent; the JSON text."""
    table.write_text("Q [L/s],L [m],hf [m]\n12,350,2.5\n", encoding="utf-8")
    constants = [a for n, (v, u) in MAINS_CONSTANTS.items() for a in ("--param", f"{n}={v} {u}")]
    code, out, err = run(capsys, "batch", MAINS, "--table", str(table), "--unknown", "D",
                         "--unknown-unit", "mm", *constants, "--method", "brent", "--bracket",
                         "20", "1000", "--json")
    assert code == 0, err
    return out


def sheet_text(capsys, tmp_path: Path, ws: dict, name: str) -> str:
    """The worksheet ``ws`` saved as NAME.json, its calculation sheet printed by
    ``zerotrace report --pdf``, and the sheet's text read back (pypdf), spaces collapsed."""
    path = tmp_path / f"{name}.json"
    path.write_text(json.dumps(ws), encoding="utf-8")
    sheet = tmp_path / f"{name}.pdf"
    code, _out, err = run(capsys, "report", str(path), "--pdf", str(sheet))
    assert code == 0, err
    return " ".join(" ".join(p.extract_text().split()) for p in pypdf.PdfReader(str(sheet)).pages)


table_rows = read_results  # ('#' lines, rows)


# 1. One method asked for (--method newton) and converged was told "Only Newton-Raphson
#    converged: no second method to agree with; try other start values": as if others had
#    failed, with advice to change start values that were fine. A method run alone now
#    says so; "only ... converged" is kept for several methods of which one converged.
PUMP = "H0 - a*Q^2 = Hs + k*Q^2"
PUMP_PARAMS = ("--param", "H0=180 ft", "--param", "a=0.00012 ft/(gal/min)^2",
               "--param", "Hs=65 ft", "--param", "k=0.00021 ft/(gal/min)^2")


def test_a_method_run_alone_is_not_told_to_change_its_start_values(capsys):
    code, out, err = run(capsys, "solve", PUMP, *PUMP_PARAMS, "--unknown", "Q",
                         "--unknown-unit", "gal/min", "--x0", "400", "--method", "newton",
                         "--json")
    assert code == 0, err
    doc = json.loads(out)
    # the operating point by the closed form Q = sqrt((H0 - Hs)/(a + k)), in gal/min since
    # the feet cancel (common practice, from memory)
    assert doc["runs"][0]["root"] == pytest.approx(math.sqrt(115 / 0.00033), rel=1e-13)
    code, out, err = run(capsys, "solve", PUMP, *PUMP_PARAMS, "--unknown", "Q",
                         "--unknown-unit", "gal/min", "--x0", "400", "--method", "newton")
    assert "Newton–Raphson alone was run" in out
    assert "try other start values" not in out
    # two methods, one of which fails (no bracket holds a sign change): the old advice stands
    code, out, err = run(capsys, "solve", PUMP, *PUMP_PARAMS, "--unknown", "Q",
                         "--unknown-unit", "gal/min", "--x0", "400", "--method", "newton",
                         "--method", "bisection", "--bracket", "0", "100")
    assert "Only Newton–Raphson converged" in out and "try other start values" in out


# 2. A bed slope typed as a percentage, "S = 0.08 %", was shown as "(= 0.0008 1)" (SI's
#    unit of a ratio, the number 1, written after the value: it reads as 0.00081), and an
#    angle "a = 30 deg" as "(= 0.523598775598299 1)", in the terminal, the CSV's parameters
#    line and the sheet. A ratio now shows its number alone and an angle says rad.
#    1 % = 0.01 and 1 ppm = 1e-6 by definition (NIST SP 811, 7.10.2); 30 deg = pi/6 rad.
def test_a_ratio_shows_its_number_alone_and_an_angle_says_radians(capsys, tmp_path):
    log = tmp_path / "canal.csv"
    code, out, err = run(capsys, "solve", "Q = (1/n)*A*R^(2/3)*sqrt(S)*cos(a)*(1 + e)",
                         "--param", "S=0.08 %", "--param", "n=0.014 s/m^(1/3)",
                         "--param", "A=2 m^2", "--param", "R=0.5 m", "--param", "a=30 deg",
                         "--param", "e=5 ppm", "--unknown", "Q", "--x0", "1",
                         "--method", "newton", "--csv", str(log))
    assert code == 0, err
    assert "S = 0.08 % (= 0.0008)," in out
    assert "e = 5.0 ppm (= 5e-06)" in out
    assert f"a = 30.0 deg (= {math.pi / 6:.15g} rad)" in out  # pi/6 to 15 figures
    meta, _rows = table_rows(log)
    parameters = next(line for line in meta if line.startswith("# parameters:"))
    assert "S=0.08 % (= 0.0008);" in parameters and " 1)" not in parameters
    # the root: Manning's equation written out with the ratios as numbers (closed form)
    last = [r for r in _rows if r["method"] == "newton"][-1]
    expected = (1 / 0.014) * 2 * 0.5 ** (2 / 3) * math.sqrt(0.0008) * math.cos(math.pi / 6) \
        * (1 + 5e-6)
    assert float(last["x [m^3/s]"]) == pytest.approx(expected, rel=1e-14)


# 3. A pipe length of "1,200" m (a US engineer's one thousand two hundred) in a table cell
#    or a --param was refused with "(a decimal comma? write 1.200)": followed, that hint
#    turns 1200 m into 1.2 m. Three digits after the comma may be either reading; both are
#    now named, and a number with several groups or a decimal point after them is a
#    thousands separator alone. (Both conventions: NIST SP 811, 10.5.2 and 10.5.3.)
@pytest.mark.parametrize("typed, hint", [
    ("1,200", "(a thousands separator? write 1200; or a decimal comma? write 1.200)"),
    ("1,200,000", "(a thousands separator? write 1200000)"),
    ("12,500.5", "(a thousands separator? write 12500.5)"),
    ("12,5", "(a decimal comma? write 12.5)"),
])
def test_a_comma_in_a_number_is_answered_with_every_reading_it_may_have(
        capsys, tmp_path, typed, hint):
    code, _out, err = run(capsys, "solve", "x^2 = L", "--param", f"L={typed}", "--x0", "3")
    assert code == 2 and hint in err
    code, _out, err = run(capsys, "solve", f"x^2 = {typed}", "--x0", "3")
    assert code == 2 and hint in err and "column" in err
    table = tmp_path / "mains.csv"
    table.write_text(f'L [m],hf [m]\n350,2.5\n"{typed}",4.0\n', encoding="utf-8")
    code, _out, err = run(capsys, "batch", "hf = 0.02*L/0.2*x^2/(2*9.80665)", "--table",
                          str(table), "--x0", "1")
    assert code == 2
    assert "row 2 (line 3), column 'L [m]'" in err and hint in err


def test_commas_that_are_no_number_get_no_hint(capsys):
    code, _out, err = run(capsys, "solve", "x^2 = L", "--param", "L=1,2,3", "--x0", "3")
    assert code == 2 and "(a " not in err
    # a comma between a function's arguments is no number at all
    code, out, err = run(capsys, "solve", "x = max(1,200)", "--x0", "3", "--method", "newton",
                         "--json")
    assert code == 0 and json.loads(out)["runs"][0]["root"] == 200.0  # max(1, 200) = 200


# 4. Supply mains sized for an allowed head loss, a table with units in its headers
#    (Q [L/s], L [m], hf [m]) and the bore asked in mm: the terminal headed the roots
#    "D [mm]", but the results file headed them "root" and the residual "residual", the
#    tables window "f(D)" and the sheet's table likewise, with no unit: a checker reading
#    the file saw 126.27 beside L = 350 m with nothing to say it is millimetres. The root
#    and the residual now carry their units in every table of results.
MAINS = ("A = pi*D^2/4; v = Q/A; Re = v*D/nu; fD = 0.25/(log10(eps/(3.7*D) + 5.74/Re^0.9))^2; "
         "hf = fD*L/D*v^2/(2*g)")
MAINS_ROWS = ((12.0, 350.0, 2.5), (25.0, 800.0, 4.0), (60.0, 1500.0, 3.2))
MAINS_CONSTANTS = {"nu": (1.004e-6, "m^2/s"), "eps": (0.045, "mm"), "g": (9.80665, "m/s^2")}


def mains_bore_mm(Q_Ls: float, L: float, hf: float) -> float:
    """The bore by scipy.optimize.brentq on Darcy-Weisbach with the Swamee-Jain friction
    factor (common practice, from memory), every value in SI."""
    Q = Q_Ls / 1000  # L/s -> m^3/s (1 L = 1e-3 m^3, NIST SP 811)

    def f(D: float) -> float:
        v = Q / (math.pi * D * D / 4)
        fD = 0.25 / math.log10(4.5e-5 / (3.7 * D) + 5.74 / (v * D / 1.004e-6) ** 0.9) ** 2
        return hf - fD * L / D * v * v / (2 * 9.80665)

    return 1000 * scipy.optimize.brentq(f, 0.02, 1.0, xtol=1e-16, rtol=1e-15)


def test_a_tables_roots_and_residuals_carry_their_units_in_the_results_file(capsys, tmp_path):
    table = tmp_path / "mains.csv"
    table.write_text("Q [L/s],L [m],hf [m]\n" + "".join(f"{q},{L},{h}\n"
                                                         for q, L, h in MAINS_ROWS),
                     encoding="utf-8")
    out = tmp_path / "bores.csv"
    constants = [a for n, (v, u) in MAINS_CONSTANTS.items() for a in ("--param", f"{n}={v} {u}")]
    code, _stdout, err = run(capsys, "batch", MAINS, "--table", str(table), "--unknown", "D",
                             "--unknown-unit", "mm", *constants, "--method", "brent",
                             "--bracket", "20", "1000", "--out", str(out))
    assert code == 0, err
    meta, rows = table_rows(out)
    # the result columns keep the names a program reads them by; their units are the
    # metadata lines above the header
    assert list(rows[0]) == ["Q [L/s]", "L [m]", "hf [m]", "root", "converged", "reason",
                             "iterations", "residual"]
    assert "# unknown unit: mm" in meta and "# residual unit: m" in meta
    for (q, L, h), row in zip(MAINS_ROWS, rows, strict=True):
        assert float(row["root"]) == pytest.approx(mains_bore_mm(q, L, h), rel=1e-13)
    # plain numbers claim no unit: the headers stay as they were
    plain = tmp_path / "plain.csv"
    code, _stdout, err = run(capsys, "sweep", "x^3 - x - p", "--vary", "p=-1:1:3", "--x0",
                             "-1.3", "--out", str(plain))
    assert code == 0, err
    assert list(table_rows(plain)[1][0]) == ["p", "root", "converged", "reason", "iterations",
                                             "residual"]


def test_the_tables_window_and_the_sheet_head_the_residual_with_its_unit(qtbot, tmp_path,
                                                                          capsys):
    import numpy as np
    from PySide6.QtCore import Qt

    from app.window.batch_model import BatchModel
    from solvers.batch import solve_table
    from solvers.units import measured

    q, L, h = (np.array(c) for c in zip(*MAINS_ROWS, strict=True))
    done = solve_table(MAINS, [("Q", measured(q, "L/s")), ("L", measured(L, "m")),
                               ("hf", measured(h, "m"))], unknown="D", unknown_unit="mm",
                       constants={n: f"{v} {u}" for n, (v, u) in MAINS_CONSTANTS.items()},
                       method="brent", bracket=(20.0, 1000.0))
    model = BatchModel()
    model.set_inputs(["Q", "L", "hf"], [q, L, h], ["L/s", "m", "m"])
    model.set_batch(done.batch)
    titles = [model.headerData(c, Qt.Orientation.Horizontal) for c in range(model.columnCount())]
    assert titles == ["Q [L/s]", "L [m]", "hf [m]", "D [mm]", "reason", "iterations", "f(D) [m]"]
    assert done.batch.root == pytest.approx([mains_bore_mm(*r) for r in MAINS_ROWS], rel=1e-13)
    # the sheet's table section, from a worksheet holding the same table
    ws = {"format": "zerotrace-worksheet", "version": 1,
          "title": "Supply mains sized for an allowed head loss (invented trial case)",
          "equation": MAINS, "unknown": "D", "unknown_unit": "mm",
          "parameters": [{"name": n, "value": v, "unit": u}
                         for n, (v, u) in {**MAINS_CONSTANTS, "Q": (12, "L/s"),
                                           "L": (350, "m"), "hf": (2.5, "m")}.items()],
          "settings": {"methods": ["brent"], "x0": 100.0, "bracket": [20, 1000]},
          "scan": {"from": 20.0, "to": 1000.0},
          "table": {"kind": "table", "method": "brent", "bracket": [20, 1000],
                    "columns": [{"name": n, "unit": u, "values": list(map(float, c))}
                                for n, u, c in (("Q", "L/s", q), ("L", "m", L),
                                                ("hf", "m", h))]}}
    text = sheet_text(capsys, tmp_path, ws, "mains")
    assert "D [mm]" in text and "f(D) [m]" in text


# 5. A cylinder barrel's wall in US customary units (bore radius 3.25 in, 4200 psi, an
#    allowable hoop stress of 22.5 ksi: an invented case), on the calculation sheet: the
#    iteration tables headed f(t_k) [Pa], but the "Verification of each root" table gave
#    f(root) 2.98e-08 and the scan's roots "Residual f(x)" 2.98e-08 with no unit, and the
#    agreement "Largest difference between their roots: 0.0" none either.
def test_the_sheets_residuals_and_root_spread_carry_their_units(tmp_path, capsys):
    ws = {"format": "zerotrace-worksheet", "version": 1,
          "title": "Cylinder barrel wall by the thick-wall hoop stress (invented trial case)",
          "equation": "ro = ri + t; Sa = p*(ro^2 + ri^2)/(ro^2 - ri^2)", "unknown": "t",
          "unknown_unit": "in",
          "parameters": [{"name": "ri", "value": 3.25, "unit": "in"},
                         {"name": "p", "value": 4200, "unit": "psi"},
                         {"name": "Sa", "value": 22.5, "unit": "ksi"}],
          "settings": {"methods": ["newton", "brent"], "x0": 0.5, "bracket": [0.05, 3.0]},
          "scan": {"from": 0.01, "to": 4.0}}
    path = tmp_path / "barrel.json"
    path.write_text(json.dumps(ws), encoding="utf-8")
    sheet = tmp_path / "barrel.pdf"
    code, _out, err = run(capsys, "report", str(path), "--pdf", str(sheet), "--csv-dir",
                          str(tmp_path / "csv"))
    assert code == 0, err
    text = " ".join(" ".join(p.extract_text().split()) for p in pypdf.PdfReader(str(sheet)).pages)
    assert "f(root) [Pa], double precision" in text
    assert "f(root) [Pa] evaluated at 50 digits" in text
    assert "Residual f(x) [Pa]" in text
    assert "Largest difference between their roots: 0.0 in." in text
    # the wall by the closed form ro^2 = ri^2 (Sa + p)/(Sa - p); psi and ksi cancel
    wall = math.sqrt(3.25**2 * (22500 + 4200) / (22500 - 4200)) - 3.25
    _meta, rows = table_rows(tmp_path / "csv" / "barrel-roots.csv")
    assert float(rows[0]["x [in]"]) == pytest.approx(wall, rel=1e-14)


# 6. An irrigation canal's normal depth by Manning (trapezoid 2.4 m wide, side slopes
#    1.5:1, bed slope 0.0008, 6.5 m^3/s: an invented case) with n typed as handbooks print
#    it, a bare 0.016, was refused only with "the left side is m^3/s, the right side is
#    m^(8/3)": no input named, no way out, where a U typed bare in a heat balance names U.
#    The inputs' suspects left out every parameter needing fractional powers, which is
#    exactly what a correlation's hidden unit needs. A bare number needing them is now
#    named when no whole-powered input explains it, with the two ways out; and the same for
#    a Hazen-Williams C with the flow asked in L/s.
CANAL = ("A = (b + z*y)*y; P = b + 2*y*sqrt(1 + z^2); "
         "Q = (1/n)*A*(A/P)^(2/3)*sqrt(S)")
CANAL_PARAMS = ("--param", "Q=6.5 m^3/s", "--param", "b=2.4 m", "--param", "z=1.5",
                "--param", "S=0.0008")
HIDDEN = ("a correlation's constant typed as a bare number often hides such a unit "
          "(Manning's n, a Hazen–Williams C): give it that unit, or switch the dimension "
          "check off")


def canal_depth(n: float = 0.016) -> float:
    """The normal depth by scipy.optimize.brentq on Manning's equation in SI (common
    practice, from memory)."""
    def f(y: float) -> float:
        A, P = (2.4 + 1.5 * y) * y, 2.4 + 2 * y * math.sqrt(1 + 1.5**2)
        return 6.5 - (1 / n) * A * (A / P) ** (2 / 3) * math.sqrt(0.0008)

    return scipy.optimize.brentq(f, 0.05, 5.0, xtol=1e-15, rtol=1e-15)


def test_a_bare_correlation_constant_is_named_with_the_unit_it_hides(capsys):
    code, _out, err = run(capsys, "solve", CANAL, *CANAL_PARAMS, "--param", "n=0.016",
                          "--unknown", "y", "--x0", "1")
    assert code == 2
    assert "'n' has no unit; the equation needs 'n' in s/m^(1/3)" in err and HIDDEN in err
    assert "'S'" not in err  # the slope would fit too, in m^(2/3)/s^2: not the simplest
    # each way out, taken, gives the depth
    for fix in (("--param", "n=0.016 s/m^(1/3)"), ("--param", "n=0.016",
                                                  "--no-dimension-check")):
        code, out, err = run(capsys, "solve", CANAL, *CANAL_PARAMS, *fix, "--unknown", "y",
                             "--x0", "1", "--method", "newton", "--json")
        assert code == 0, err
        assert json.loads(out)["runs"][0]["root"] == pytest.approx(canal_depth(), rel=1e-14)
    # a Hazen-Williams head loss (SI form, from memory) with the flow asked in L/s
    code, _out, err = run(capsys, "solve", "hf = 10.67*L*Q^1.852/(C^1.852*D^4.87)",
                          "--param", "L=420 m", "--param", "C=120", "--param", "D=300 mm",
                          "--param", "hf=3 m", "--unknown", "Q", "--unknown-unit", "L/s",
                          "--x0", "50")
    assert code == 2 and "'C' has no unit; with 'Q' in 'L/s' the equation needs 'C'" in err
    # C^1.852 in m^0.686/s^1.852 makes C's unit m^0.37041/s, a power no unit text holds:
    # only the other way out is offered, and it gives the flow
    assert "(Manning's n, a Hazen–Williams C): switch the dimension check off (no unit " \
           "text holds those powers)" in err
    code, out, err = run(capsys, "solve", "hf = 10.67*L*Q^1.852/(C^1.852*D^4.87)",
                         "--param", "L=420 m", "--param", "C=120", "--param", "D=300 mm",
                         "--param", "hf=3 m", "--unknown", "Q", "--unknown-unit", "L/s",
                         "--x0", "50", "--no-dimension-check", "--json")
    assert code == 0, err
    # Q = (hf C^1.852 D^4.87 / (10.67 L))^(1/1.852) in m^3/s (the closed form), in L/s
    flow = 1000 * (3 * 120**1.852 * 0.3**4.87 / (10.67 * 420)) ** (1 / 1.852)
    assert json.loads(out)["runs"][0]["root"] == pytest.approx(flow, rel=1e-13)


def test_an_input_with_a_unit_is_never_asked_for_fractional_powers(capsys):
    # the canal with n in its unit but the width typed in mm^2 by a slip: a whole-powered
    # suspect (b as a length) is named, and no constant is said to hide a unit
    code, _out, err = run(capsys, "solve", CANAL, "--param", "Q=6.5 m^3/s", "--param",
                          "b=2.4 m^2", "--param", "z=1.5", "--param", "S=0.0008",
                          "--param", "n=0.016 s/m^(1/3)", "--unknown", "y", "--x0", "1")
    assert code == 2 and "'b' in 'm^2'" in err and "hides" not in err


# 7. A booster pump on its system curve in US customary units (shut-off head 180 ft, static
#    head 65 ft: an invented case), with the flow in gpm as every pump curve prints it:
#    "unknown unit 'gpm' (did you mean 'rpm', 'ppm'?)", and "cfs" likewise; "cfm" was read
#    as a centi-fermi (1e-17 m). The trade's abbreviations are now units, defined from the
#    exact US gallon, foot and pound (NIST SP 811).
@pytest.mark.parametrize("unit, si", [
    ("gpm", GALLON / 60),  # US gal per minute
    ("cfs", FOOT**3),  # cubic foot per second
    ("cfm", FOOT**3 / 60),
    ("MGD", 1e6 * GALLON / 86400),  # million US gallons per day
    ("lbm", 0.45359237),  # pound mass, kg (NIST SP 811, exact)
])
def test_the_trades_flow_and_mass_abbreviations_are_units(unit, si):
    from solvers.units import read_unit

    got = read_unit(unit)
    assert got.factor == pytest.approx(si, rel=1e-15) and got.offset == 0.0


@pytest.mark.parametrize("typed, token", [
    ("ac*ft", "ac"),  # an acre-foot as often abbreviated: pint reads atto x speed of light
    ("mc", "mc"),  # milli x speed of light
    ("ke", "ke"),  # kilo x elementary charge
])
def test_a_prefix_on_a_physical_constant_is_refused_as_a_slip(typed, token):
    from solvers import EquationError
    from solvers.units import read_unit

    with pytest.raises(EquationError) as caught:
        read_unit(typed)
    message = str(caught.value)
    assert f"unit '{token}'" in message and "physical constant" in message
    assert "acre" in message  # the full name that reads as meant
    # the acre-foot by its full name: NIST SP 811 (Appendix B.9, the value from memory)
    # gives 1.233 489 E+03 m^3 for the survey acre-foot; pint's acre is the survey acre,
    # times the international foot here: 2 ppm apart
    assert read_unit("acre*ft").factor == pytest.approx(1233.489, rel=2e-6)
    # a unit of its own name that pint reads so is never refused: cc is a cubic
    # centimetre (1e-6 m^3, exact by definition), not centi x speed of light
    assert read_unit("cc").factor == pytest.approx(1e-6, rel=1e-15)


def test_a_pump_curve_in_gpm_and_feet_meets_its_system_curve(capsys):
    code, out, err = run(capsys, "solve", PUMP, "--param", "H0=180 ft",
                         "--param", "a=0.00012 ft/gpm^2", "--param", "Hs=65 ft",
                         "--param", "k=0.00021 ft/gpm^2", "--unknown", "Q",
                         "--unknown-unit", "gpm", "--x0", "400", "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["unknown_unit"] == "gpm"
    # Q = sqrt((H0 - Hs)/(a + k)): feet cancel, the flow comes out in gpm (closed form)
    for r in doc["runs"]:
        assert r["converged"] and r["root"] == pytest.approx(math.sqrt(115 / 0.00033),
                                                             rel=1e-13)
    # the coefficient in SI: ft/gpm^2 = 0.3048 m / (gal/60 s)^2 (NIST SP 811 factors)
    assert doc["parameter_units"]["a"]["si_value"] == pytest.approx(
        0.00012 * FOOT / (GALLON / 60) ** 2, rel=1e-14)


# 8. A spreadsheet's headers as engineers often write them, "Q (L/s),L (m),hf (m)", were
#    refused with "'Q (L/s)' is not NAME or NAME [unit]" and nothing more: the unit in
#    parentheses is now answered with the header meant.
def test_a_unit_in_parentheses_is_answered_with_the_header_in_square_brackets(capsys,
                                                                             tmp_path):
    table = tmp_path / "mains.csv"
    table.write_text("Q (L/s),L (m),hf (m)\n12,350,2.5\n", encoding="utf-8")
    code, _out, err = run(capsys, "batch", MAINS, "--table", str(table), "--unknown", "D",
                          "--x0", "0.1")
    assert code == 2
    assert "header (line 1), column 1: 'Q (L/s)' is not NAME or NAME [unit]; a unit goes in " \
           "square brackets: 'Q [L/s]'" in err
    # the header it suggests is read, and gives the bore of the first main (brentq above)
    out = first_main_json(capsys, table)
    assert json.loads(out)["rows"][0]["root"] == pytest.approx(mains_bore_mm(12, 350, 2.5),
                                                               rel=1e-13)


# 9. The CSV files say what every residual is in ("# residual unit: Pa", "fx [Pa]"), but
#    the --json documents of solve, scan and batch did not: a script reading the barrel's
#    "residual": 2.98e-08 could not tell pascals from psi. They now carry "residual_unit"
#    (null where no unit can be claimed, as for plain numbers; a system's equations each
#    have their own and claim none).
BARREL = "ro = ri + t; Sa = p*(ro^2 + ri^2)/(ro^2 - ri^2)"
BARREL_PARAMS = ("--param", "ri=3.25 in", "--param", "p=4200 psi", "--param", "Sa=22.5 ksi",
                 "--unknown", "t", "--unknown-unit", "in")


def test_every_json_document_says_what_its_residuals_are_in(capsys, tmp_path):
    wall = math.sqrt(3.25**2 * (22500 + 4200) / (22500 - 4200)) - 3.25  # closed form, in
    code, out, err = run(capsys, "solve", BARREL, *BARREL_PARAMS, "--x0", "0.5", "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["residual_unit"] == "Pa" and doc["unknown_unit"] == "in"
    assert doc["runs"][0]["root"] == pytest.approx(wall, rel=1e-14)
    code, out, err = run(capsys, "scan", BARREL, *BARREL_PARAMS, "--from", "0.01", "--to", "4",
                         "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["residual_unit"] == "Pa" and doc["roots"][0]["x"] == pytest.approx(wall,
                                                                                 rel=1e-14)
    table = tmp_path / "mains.csv"
    out = first_main_json(capsys, table)
    assert json.loads(out)["residual_unit"] == "m"
    code, out, err = run(capsys, "solve", "x^2 = 2", "--x0", "1", "--json")
    assert code == 0 and json.loads(out)["residual_unit"] is None  # plain numbers: no claim


# 10. A two-loop distribution network by Hazen-Williams (five pipes, 120 L/s in at A, 30 and
#     50 L/s out at B and C: an invented case) with the flows asked in L/s: the residual
#     table printed "(1) QAB + QAD = Qin  -6.94e-18" beside flows of 68.5 L/s, and the CSV
#     headed it "residual_1": nothing said the junction's residual is in m^3/s. Each
#     equation's residual now carries its SI unit in the terminal, the CSV, the JSON and
#     on the sheet.
PIPES = {"AB": (420, 300), "BC": (380, 200), "DC": (450, 200), "AD": (510, 250),
         "BD": (600, 150)}  # length m, bore mm
NETWORK = "\n".join([*(f"r{k} = 10.67*L{k}/(C^1.852*D{k}^4.87)" for k in PIPES),
                     "QAB + QAD = Qin", "QAB = qB + QBC + QBD", "QBC + QDC = qC",
                     "rAB*QAB*abs(QAB)^0.852 + rBD*QBD*abs(QBD)^0.852 "
                     "- rAD*QAD*abs(QAD)^0.852 = 0",
                     "rBC*QBC*abs(QBC)^0.852 - rDC*QDC*abs(QDC)^0.852 "
                     "- rBD*QBD*abs(QBD)^0.852 = 0"])
FLOWS = ("QAB", "QBC", "QDC", "QAD", "QBD")


def network_flows_Ls() -> list[float]:
    """The same network by scipy.optimize.root (hybr) in SI, each head loss
    10.67 L Q|Q|^0.852 / (C^1.852 D^4.87) (Hazen-Williams in SI, from memory)."""
    r = {k: 10.67 * L / (120**1.852 * (D / 1000) ** 4.87) for k, (L, D) in PIPES.items()}

    def h(k: str, q: float) -> float:
        return r[k] * q * abs(q) ** 0.852

    def F(x):
        ab, bc, dc, ad, bd = x
        return [ab + ad - 0.12, ab - 0.03 - bc - bd, bc + dc - 0.05,
                h("AB", ab) + h("BD", bd) - h("AD", ad), h("BC", bc) - h("DC", dc) - h("BD", bd)]

    found = scipy.optimize.root(F, [0.03] * 5, method="hybr", options={"xtol": 1e-14})
    return [1000 * q for q in found.x]


def test_a_systems_residuals_carry_each_equations_unit(capsys, tmp_path):
    params = ["--param", "C=120", "--param", "Qin=120 L/s", "--param", "qB=30 L/s",
              "--param", "qC=50 L/s"]
    for k, (L, D) in PIPES.items():
        params += ["--param", f"L{k}={L} m", "--param", f"D{k}={D} mm"]
    flags = [*params, *(a for q in FLOWS for a in ("--unknown", q, "--unknown-unit",
                                                     f"{q}=L/s")), "--x0", "30"]
    log = tmp_path / "network.csv"
    code, out, err = run(capsys, "solve", NETWORK, *flags, "--csv", str(log))
    assert code == 0, err
    line = next(t for t in out.splitlines() if t.startswith("(1) QAB + QAD = Qin"))
    assert "m^3/s" in line
    loop = next(t for t in out.splitlines() if t.startswith("(4) "))
    # r in 1/m^3.87 times Q^1.852 in (m^3/s)^1.852: m^1.686/s^1.852
    assert "m^1.686/s^1.852" in loop
    _meta, rows = table_rows(log)
    assert [h for h in rows[0] if h.startswith("residual_") and h != "residual_norm"] == [
        "residual_1 [m^3/s]", "residual_2 [m^3/s]", "residual_3 [m^3/s]",
        "residual_4 [m^1.686/s^1.852]", "residual_5 [m^1.686/s^1.852]"]
    code, out, err = run(capsys, "solve", NETWORK, *flags, "--json")
    doc = json.loads(out)
    assert doc["residual_units"][:3] == ["m^3/s"] * 3
    reference = network_flows_Ls()
    for run_ in doc["runs"]:
        assert [run_["root"][q] for q in FLOWS] == pytest.approx(reference, rel=1e-10)
    # a system of plain numbers claims no unit
    code, out, err = run(capsys, "solve", "x^2 + y^2 = 4; x*y = 1", "--unknown", "x",
                         "--unknown", "y", "--x0", "x=2", "--x0", "y=0.3", "--json")
    assert code == 0 and json.loads(out)["residual_units"] == [None, None]


# 11. The pump swept over its static head with the unit where it seemed natural:
#     --vary "Hs=5:35:7m" was "COUNT '7m' is not a whole number", --vary "Hs=5 m:35 m:7"
#     "'5 m' is not a number", and --x0 "1.2 m" or --bracket 0.5m 3m "is not a number",
#     none saying where the unit goes. Each now says it.
SWEEP_PUMP = ("H0 - a*Q - b*Q^2 = Hs + k*Q^2", "--param", "H0=48 m", "--param", "a=95 s/m^2",
              "--param", "b=21000 s^2/m^5", "--param", "k=14500 s^2/m^5", "--unknown", "Q",
              "--unknown-unit", "L/s", "--x0", "30")


@pytest.mark.parametrize("vary, said", [
    ("Hs=5:35:7m", "COUNT '7m' is not a whole number (a unit after COUNT is set apart by a "
                   "space: Hs=5:35:7 m)"),
    ("Hs=5 m:35 m:7", "'5 m' is not a finite number (the unit goes once, after COUNT: "
                      "Hs=5:35:7 m)"),
])
def test_a_sweeps_unit_typed_in_the_wrong_place_is_shown_where_it_goes(capsys, vary, said):
    code, _out, err = run(capsys, "sweep", *SWEEP_PUMP, "--vary", vary)
    assert code == 2 and said in err
    # the form it shows is read: each operating point by the quadratic formula
    # Q = (-a + sqrt(a^2 + 4 (b + k)(H0 - Hs))) / (2 (b + k)), in L/s
    code, out, err = run(capsys, "sweep", *SWEEP_PUMP, "--vary", "Hs=5:35:7 m", "--json")
    assert code == 0, err
    for row in json.loads(out)["rows"]:
        A = 21000 + 14500
        Q = (-95 + math.sqrt(95**2 + 4 * A * (48 - row["Hs"]))) / (2 * A)
        assert row["root"] == pytest.approx(1000 * Q, rel=1e-13)


def test_a_start_value_typed_with_a_unit_is_told_the_unknowns_unit_holds(capsys):
    for flags in (("--x0", "1.2 m"), ("--bracket", "0.5m", "3m")):
        code, _out, err = run(capsys, "solve", "y^2 = L", "--param", "L=4 m^2", *flags)
        assert code == 2 and "in the unknown's unit, which --unknown-unit gives" in err
    code, _out, err = run(capsys, "solve", "y^2 = L", "--param", "L=4 m^2", "--xtol", "abc")
    assert code == 2 and "'abc' is not a number" in err and "--unknown-unit" not in err


# 12. The sheet's answer, its "Selected design value: t = 0.6757", gave the wall thickness
#     without its unit (the window's design value says "in"): a checker reading the sheet
#     alone could take it for metres. The design value and its difference from the
#     nearest scanned root are now in the unknown's unit, and so are the scan's range
#     and its rows of poles, jumps and gaps.
def test_the_sheets_design_value_is_in_the_unknowns_unit(tmp_path, capsys):
    wall = math.sqrt(3.25**2 * (22500 + 4200) / (22500 - 4200)) - 3.25  # closed form, in
    ws = {"format": "zerotrace-worksheet", "version": 1,
          "title": "Cylinder barrel wall (invented trial case)", "equation": BARREL,
          "unknown": "t", "unknown_unit": "in",
          "parameters": [{"name": "ri", "value": 3.25, "unit": "in"},
                         {"name": "p", "value": 4200, "unit": "psi"},
                         {"name": "Sa", "value": 22.5, "unit": "ksi"}],
          "settings": {"methods": ["newton"], "x0": 0.5},
          "scan": {"from": 0.01, "to": 4.0},
          "selection": {"root": wall, "reason": "the one root of the range"}}
    text = sheet_text(capsys, tmp_path, ws, "barrel")
    assert f"Selected design value: t = {wall!r} in." in text
    assert "It is nearest scanned root #1 (difference" in text
    # where the scan looked, and the rows of what it found, say the unit too
    assert "The range [0.01 in, 4.0 in] was scanned" in text
    assert "Poles [in] none" in text and "Gaps (f undefined) [in] none" in text
    difference = text.split("(difference ", 1)[1].split(")", 1)[0]
    assert difference.endswith(" in") and abs(float(difference[:-3])) <= 4e-16 * wall


# 13. The notes on start values the program chose ("x1 = 0.66835: the end nearer x0 of the
#     scan's sign change [0.66835, 0.678325]", "bracket [0.5, 0.7]: grown around x0") gave
#     values of the barrel's wall with no unit, in the terminal, the CSV, the JSON and on
#     the sheet, beside settings headed "[in]". They now say it.
def test_the_notes_on_chosen_start_values_say_the_unknowns_unit(capsys, tmp_path):
    code, out, err = run(capsys, "solve", BARREL, *BARREL_PARAMS, "--x0", "0.5", "--csv",
                         str(tmp_path / "log.csv"))
    assert code == 0, err
    notes = [line for line in out.splitlines() if line.startswith("note:")]
    assert any("bracket [0.5, 0.7] in: grown around x0" in n for n in notes)
    assert any(n.endswith("x1 = 0.50015 in: x0 moved away from 0 by 1e-4 of itself plus "
                          "1e-4 in") for n in notes)
    meta, _rows = table_rows(tmp_path / "log.csv")
    assert any("# start values: bracket [0.5, 0.7] in:" in line for line in meta)
    code, out, err = run(capsys, "solve", BARREL, *BARREL_PARAMS, "--x0", "0.5", "--json")
    assert "x1 = 0.50015 in: x0 moved away from 0 by 1e-4 of itself plus 1e-4 in" in \
        json.loads(out)["start"]["notes"]
    # plain numbers: no unit to say
    code, out, err = run(capsys, "solve", "x^2 = 2", "--x0", "1", "--method", "secant",
                         "--json")
    assert json.loads(out)["start"]["notes"] == [
        "x1 = 1.0002: x0 moved away from 0 by 1e-4 of itself plus 1e-4"]


# 14. That note said "x1 = 1.0002: x0 nudged by 1e-4 (relative)" for x0 = 1, a nudge of
#     2e-4: the rule is x0 (1 + 1e-4) + 1e-4 (away from 0), relative and absolute both.
#     The words now say the rule the numbers follow, checked here on both signs.
@pytest.mark.parametrize("x0", [1.0, 0.5, 250.0, -3.0, 0.0])
def test_the_secants_second_point_is_described_by_the_rule_it_follows(capsys, x0):
    code, out, err = run(capsys, "solve", "x^3 = 2*x + c", "--param", "c=5", "--x0", repr(x0),
                         "--method", "secant", "--json")
    start = json.loads(out)["start"]
    # the rule as the note states it, written out independently
    assert start["x1"] == x0 * (1 + 1e-4) + (1e-4 if x0 >= 0 else -1e-4)
    assert start["notes"][-1].endswith("x0 moved away from 0 by 1e-4 of itself plus 1e-4")


# 15. The part-full sewer's central angle solved in degrees (--unknown-unit deg; a 600 mm
#     pipe at 0.25 m^3/s, an invented case) came with the note "sin, cos and tan take
#     radians (multiply by deg for degrees)": advice for plain numbers. Followed here it
#     converts twice, th*deg with th already in radians, and gives the wrong angle. Where
#     an angle carries its unit the note now says it is converted already.
SEWER = "A = D^2/8*(th - sin(th)); P = D*th/2; Q = (1/n)*A*(A/P)^(2/3)*sqrt(S)"
SEWER_PARAMS = ("--param", "D=600 mm", "--param", "n=0.013 s/m^(1/3)", "--param", "S=0.004",
                "--param", "Q=0.25 m^3/s", "--unknown", "th")


def test_an_angle_with_its_unit_is_not_told_to_be_multiplied_by_deg(capsys):
    def f(th: float) -> float:  # Manning for a part-full circular pipe (from memory), SI
        A, P = 0.36 / 8 * (th - math.sin(th)), 0.6 * th / 2
        return 0.25 - (1 / 0.013) * A * (A / P) ** (2 / 3) * math.sqrt(0.004)

    angle = math.degrees(scipy.optimize.brentq(f, 0.2, 5.0, xtol=1e-15))  # brentq reference
    code, out, err = run(capsys, "solve", SEWER, *SEWER_PARAMS, "--unknown-unit", "deg",
                         "--x0", "180", "--bracket", "10", "300", "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["runs"][0]["root"] == pytest.approx(angle, rel=1e-13)
    code, out, err = run(capsys, "solve", SEWER, *SEWER_PARAMS, "--unknown-unit", "deg",
                         "--x0", "180", "--bracket", "10", "300")
    assert "multiply by deg" not in out
    assert "'th' given in an angle unit: converted to radians for sin, cos and tan" in out
    # a parameter in deg likewise; plain numbers keep the advice
    code, out, err = run(capsys, "solve", "x = L*sin(a)", "--param", "a=30 deg", "--param",
                         "L=2 m", "--x0", "1", "--json")
    assert json.loads(out)["runs"][0]["root"] == pytest.approx(1.0, rel=1e-15)  # 2 sin 30°
    code, out, err = run(capsys, "solve", "x = L*sin(a)", "--param", "a=30 deg", "--param",
                         "L=2 m", "--x0", "1")
    assert "'a' given in an angle unit" in out and "multiply by deg" not in out
    code, out, err = run(capsys, "solve", "x = L*sin(a)", "--param", "a=0.5", "--param", "L=2",
                         "--x0", "1")
    assert "sin, cos and tan take radians (multiply by deg for degrees)" in out


# 16. A head loss with g typed into the equation as handbooks print it,
#     "hf = f*L/D*v^2/(2*9.81 m/s^2)", was refused with "missing operator between '9.81'
#     and 'm'": true, and no help to someone who meant a unit. A number followed by a unit
#     name now says where units go; a number before a name that is no unit is as before.
def test_a_unit_typed_into_the_equation_is_told_where_units_go(capsys):
    code, _out, err = run(capsys, "solve", "hf = f*L/D*v^2/(2*9.81 m/s^2)", "--param",
                          "f=0.02", "--param", "L=100 m", "--param", "D=0.2 m", "--param",
                          "v=2 m/s", "--unknown", "hf", "--x0", "1")
    assert code == 2
    assert "missing operator between '9.81' and 'm' ('m' is also a unit: if a unit was " \
           "meant, a number with a unit goes in as a parameter's value, never in the " \
           "equation) at column 24" in err
    code, _out, err = run(capsys, "solve", "y = 2 Q", "--unknown", "y", "--x0", "1")
    assert code == 2 and "missing operator between '2' and 'Q' at column 7" in err
    # written tight, 2.5mm reads as the product 2.5*mm and mm has no value: the same hint
    code, _out, err = run(capsys, "solve", "h = 2.5mm + x", "--unknown", "x", "--x0", "1")
    assert code == 2 and "no value for 'h', 'mm' (the unknown is 'x')" in err
    assert "('mm' right after 2.5 is read as a product; 'mm' is also a unit" in err
    code, _out, err = run(capsys, "solve", "y = 2x + c", "--unknown", "y", "--x0", "1")
    assert code == 2 and "also a unit" not in err  # x is no unit
    # given as a parameter it reads: Darcy-Weisbach hf = f L v^2 / (2 g D) (closed form)
    code, out, err = run(capsys, "solve", "hf = f*L/D*v^2/(2*g)", "--param", "f=0.02",
                         "--param", "L=100 m", "--param", "D=0.2 m", "--param", "v=2 m/s",
                         "--param", "g=9.81 m/s^2", "--unknown", "hf", "--x0", "1", "--json")
    assert json.loads(out)["runs"][0]["root"] == pytest.approx(0.02 * 100 / 0.2 * 4 / 19.62,
                                                               rel=1e-14)
