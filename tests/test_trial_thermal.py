"""A thermal/process engineer's first trial of zerotrace: each finding pinned.

Scenarios are invented for this trial (a straight aluminium fin sized for 80 % efficiency,
a counterflow water-water exchanger by effectiveness-NTU, a refractory wall with two
unknown surface temperatures); the numbers are checked against outside references named
beside each check: the fin equation tanh(mL)/(mL) = eta by scipy.optimize.brentq, unit
factors from NIST SP 811 (1 Btu_IT = 1055.05585262 J, 1 lb = 0.45359237 kg exactly,
1 kJ = 1000 J by the SI prefix), the exchanger's outlet by the closed form of the
effectiveness-NTU relation for counterflow (common practice, from memory:
eps = (1 - exp(-NTU (1 - Cr))) / (1 - Cr exp(-NTU (1 - Cr))), Q = eps Cmin (Thi - Tci)).
"""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import numpy as np
import pypdf
import pytest
import scipy.optimize
from csv_files import read_results

from app.cli import main

FIN = "m = sqrt(2*h/(k*t)); tanh(m*L)/(m*L) = eta"
FIN_PARAMS = ("--param", "k=205 W/(m*K)", "--param", "t=2 mm", "--param", "eta=0.8")


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def fin_length_mm(h: float, k: float = 205.0, t: float = 0.002, eta: float = 0.8) -> float:
    """The fin length for efficiency eta, by scipy.optimize.brentq on the positive branch."""
    m = math.sqrt(2 * h / (k * t))
    return 1000 * scipy.optimize.brentq(lambda L: math.tanh(m * L) / (m * L) - eta,
                                        1e-6, 10.0, xtol=1e-15)


def peng_robinson_z(R: float, Tc: float, Pc: float, w: float, T: float, P: float
                    ) -> tuple[float, float, list[float]]:
    """Peng-Robinson's a, b and the sorted real roots Z of its cubic (the published form
    of the equation; numpy.roots as the reference)."""
    k = 0.37464 + 1.54226 * w - 0.26992 * w ** 2
    a = 0.45724 * R ** 2 * Tc ** 2 / Pc * (1 + k * (1 - math.sqrt(T / Tc))) ** 2
    b = 0.07780 * R * Tc / Pc
    A, B = a * P / (R * T) ** 2, b * P / (R * T)
    roots = sorted(np.roots([1, -(1 - B), A - 3 * B ** 2 - 2 * B,
                             -(A * B - B ** 2 - B ** 3)]).real)
    return a, b, roots


table_rows = read_results  # ('#' lines, rows)


# 1. A sweep in a unit wrote its column as a bare "h": a checker reading the results file
#    saw h = 10 ... 200 with no unit (only a `# sweep` line further up said W/(m^2*K)).
def test_a_sweep_in_a_unit_heads_its_column_with_that_unit(tmp_path, capsys):
    out = tmp_path / "fin.csv"
    code, stdout, err = run(capsys, "sweep", FIN, "--unknown", "L", "--unknown-unit", "mm",
                            *FIN_PARAMS, "--vary", "h=10:200:5 W/(m^2*K)", "--x0", "100",
                            "--within", "0", "1000", "--out", str(out))
    assert code == 0, err
    assert "h [W/(m^2*K)]" in stdout  # the terminal's table too
    _meta, rows = table_rows(out)
    assert list(rows[0])[0] == "h [W/(m^2*K)]"
    for row in rows:  # the numbers under that heading are in that unit (brentq, in SI)
        h = float(row["h [W/(m^2*K)]"])
        assert float(row["root"]) == pytest.approx(fin_length_mm(h), rel=1e-12)


def _fin_worksheet(tmp_path: Path) -> Path:
    ws = {
        "format": "zerotrace-worksheet", "version": 1,
        "title": "Straight fin for 80 % efficiency (invented trial case)",
        "equation": FIN, "unknown": "L", "unknown_unit": "mm",
        "parameters": [{"name": "h", "value": 45, "unit": "W/(m^2*K)"},
                       {"name": "k", "value": 205, "unit": "W/(m*K)"},
                       {"name": "t", "value": 2, "unit": "mm"},
                       {"name": "eta", "value": 0.8}],
        "settings": {"methods": ["newton"], "x0": 50.0, "bracket": [5, 500]},
        "scan": {"from": 5.0, "to": 500.0},
        "table": {"kind": "sweep", "method": "newton", "x0": 100.0,
                  "columns": [{"name": "h", "unit": "W/(m^2*K)",
                               "values": [10, 57.5, 105, 152.5, 200]}]},
    }
    path = tmp_path / "fin.json"
    path.write_text(json.dumps(ws), encoding="utf-8")
    return path


# 2. `zerotrace report` of a worksheet with a table in units printed the table's column
#    and the design chart's axis as a bare "h", and the table CSV beside the sheet listed
#    "h=45.0 W/(m^2*K)" among its constants: the worksheet's single value for a parameter
#    the table varies, which no row used.
def test_the_sheet_of_a_table_in_units_keeps_the_units_and_lists_only_constants(
        tmp_path, capsys):
    sheet = tmp_path / "fin.pdf"
    code, _out, err = run(capsys, "report", str(_fin_worksheet(tmp_path)), "--pdf",
                          str(sheet), "--csv-dir", str(tmp_path / "csv"))
    assert code == 0, err
    text = " ".join(" ".join(p.extract_text().split())
                    for p in pypdf.PdfReader(str(sheet)).pages)
    assert "h [W/(m^2*K)]" in text  # the table's heading (and the chart's axis label)
    meta, rows = table_rows(tmp_path / "csv" / "fin-table.csv")
    assert list(rows[0])[0] == "h [W/(m^2*K)]"
    parameters = next(line for line in meta if line.startswith("# parameters:"))
    assert "h=" not in parameters.replace("eta=", "")  # the swept h is not a constant
    assert "k=205.0 W/(m*K)" in parameters and "t=2.0 mm" in parameters
    for row in rows:
        assert float(row["root"]) == pytest.approx(
            fin_length_mm(float(row["h [W/(m^2*K)]"])), rel=1e-12)


HX = ("Ch = mh*cp; Cc = mc*cp; Cmin = min(Ch, Cc); Cr = Cmin/max(Ch, Cc); NTU = U*A/Cmin; "
      "eps = (1 - exp(-NTU*(1 - Cr)))/(1 - Cr*exp(-NTU*(1 - Cr))); "
      "Ch*(Thi - Tho) = eps*Cmin*(Thi - Tci)")
HX_CASES = ("mh [kg/s],mc [kg/s],U [W/(m^2*K)],A [m^2],Thi [degC],Tci [degC]\n"
            "1.2,0.9,850,6.5,90,20\n0.8,1.1,600,4.0,120,15\n0.5,0.6,400,2.5,150,30\n")


def hx_outlet_degC(mh, mc, U, A, Thi, Tci, cp=4190.0):
    """The hot outlet by the closed form (effectiveness-NTU, counterflow; see the module)."""
    Ch, Cc = mh * cp, mc * cp
    Cmin, Cr = min(Ch, Cc), min(Ch, Cc) / max(Ch, Cc)
    ntu = U * A / Cmin
    eps = (1 - math.exp(-ntu * (1 - Cr))) / (1 - Cr * math.exp(-ntu * (1 - Cr)))
    return Thi - eps * Cmin * (Thi - Tci) / Ch  # a difference: the same in K and degC


# 3. `zerotrace batch --json` gave each table column a single "value" and "si_value" under
#    parameter_units (one row's, mh = 1.2 kg/s for a column 1.2, 0.8, 0.5): a script took
#    it for the flow of every case.
def test_batch_json_gives_a_columns_unit_but_no_single_value(tmp_path, capsys):
    cases = tmp_path / "cases.csv"
    cases.write_text(HX_CASES, encoding="utf-8")
    code, out, err = run(capsys, "batch", HX, "--table", str(cases), "--unknown", "Tho",
                         "--unknown-unit", "degC", "--param", "cp=4.19 kJ/(kg*K)",
                         "--method", "brent", "--bracket", "0", "200", "--json")
    assert code == 0, err
    data = json.loads(out)
    units = data["parameter_units"]
    assert units["cp"]["si_value"] == pytest.approx(4190.0, rel=1e-15)  # SI prefix k = 1e3
    for name, unit in (("mh", "kg/s"), ("Thi", "degC"), ("U", "W/(m^2*K)")):
        assert units[name] == {"value": None, "unit": unit, "si_value": None,
                               "si_unit": units[name]["si_unit"], "column": True}
    assert units["Thi"]["si_unit"] == "K"
    for row in data["rows"]:  # each row's own values, and its root by the closed form
        assert row["root"] == pytest.approx(
            hx_outlet_degC(row["mh"], row["mc"], row["U"], row["A"], row["Thi"],
                           row["Tci"]), rel=1e-12)


# 4. A latent heat typed in kJ/kg was shown for people as "(= 2257000.0 m^2/s^2)": a
#    velocity squared, where the engineer wrote an energy per mass. The Stefan-Boltzmann
#    constant, already in SI as W/(m^2*K^4), was "converted" to kg/(s^3*K^4), and a gas
#    constant in J/(mol*K) likewise. The SI text for people now keeps the composition
#    typed, each factor made coherent, wherever every factor is a prefixed SI unit.
@pytest.mark.parametrize("typed, value, shown", [
    # SI prefixes (NIST SP 811, Table 5): k = 1e3, m = 1e-3, M = 1e6
    ("2257 kJ/kg", 2257e3, "2257.0 kJ/kg (= 2257000.0 J/kg)"),
    ("1.2 kW/(m^2*K)", 1200.0, "1.2 kW/(m^2*K) (= 1200.0 W/(m^2*K))"),
    ("0.89 mPa*s", 0.89e-3, "0.89 mPa*s (= 0.00089 Pa*s)"),
    ("-285.83 MJ/kmol", -285.83e3, "-285.83 MJ/kmol (= -285830.0 J/mol)"),
])
def test_si_text_for_people_keeps_the_composition_typed(typed, value, shown):
    from app.documents import words
    from solvers.units import convert_parameters

    converted = convert_parameters({"p": typed})[1]["p"]
    assert converted.si_value == pytest.approx(value, rel=1e-15)
    assert words.measured_text(converted.value, converted) == shown


def test_units_already_coherent_are_not_converted_and_others_fall_back():
    import scipy.constants

    from app.documents import words
    from solvers.units import convert_parameters

    _values, got = convert_parameters({
        "sig": f"{scipy.constants.Stefan_Boltzmann!r} W/(m^2*K^4)",
        "R": f"{scipy.constants.R!r} J/(mol*K)",
        "cp": "1 Btu_it/(lb*delta_degF)", "Q": "3 L/s"})
    assert words.measured_text(got["sig"].value, got["sig"]) == \
        f"{scipy.constants.Stefan_Boltzmann!r} W/(m^2*K^4)"
    assert words.measured_text(got["R"].value, got["R"]) == f"{scipy.constants.R!r} J/(mol*K)"
    # not SI units: the dimension's SI unit as before. NIST SP 811: Btu_IT/(lb*degF) =
    # 4186.8 J/(kg*K) exactly; 1 L = 1e-3 m^3
    assert got["cp"].si_value == pytest.approx(4186.8, rel=1e-15)
    assert words.si_unit_text(got["cp"]) == "J/(kg*K)"
    assert words.measured_text(got["Q"].value, got["Q"]) == "3.0 L/s (= 0.003 m^3/s)"


WALL = ("hi*(Tin - T1) = k/Lw*(T1 - T2); "
        "k/Lw*(T1 - T2) = ho*(T2 - Ta) + em*sig*(T2^4 - Ts^4)")


def _wall_args():
    import scipy.constants

    return ["solve", WALL, "--unknown", "T1", "--unknown", "T2",
            "--unknown-unit", "T1=degC", "--unknown-unit", "T2=degC",
            "--x0", "T1=700", "--x0", "T2=100", "--param", "Tin=850 degC",
            "--param", "Ta=25 degC", "--param", "Ts=25 degC",
            "--param", "hi=60 W/(m^2*K)", "--param", "k=1.1 W/(m*K)",
            "--param", "Lw=230 mm", "--param", "ho=12 W/(m^2*K)", "--param", "em=0.85",
            "--param", f"sig={scipy.constants.Stefan_Boltzmann!r} W/(m^2*K^4)"]


def wall_surfaces_degC() -> tuple[float, float]:
    """The two surface temperatures by scipy.optimize.root (hybr), in kelvin then degC."""
    import scipy.constants

    sig = scipy.constants.Stefan_Boltzmann
    tin, ta = 850 + 273.15, 25 + 273.15

    def F(x):
        t1, t2 = x
        return [60 * (tin - t1) - 1.1 / 0.23 * (t1 - t2),
                1.1 / 0.23 * (t1 - t2) - 12 * (t2 - ta) - 0.85 * sig * (t2 ** 4 - ta ** 4)]

    got = scipy.optimize.root(F, [973.15, 373.15], tol=1e-14)
    assert got.success
    return float(got.x[0] - 273.15), float(got.x[1] - 273.15)


# 5. A system's residual table cut a long equation at 48 characters with nothing to say
#    so ("(2) k/Lw*(T1 - T2) = ho*(T2 - Ta) + em*sig*(T2^4"), and Broyden's one-line
#    account said "12 evaluations of F and J" for a run that never calls J.
def test_a_system_says_where_an_equation_is_cut_and_what_broyden_evaluated(capsys):
    code, out, err = run(capsys, *_wall_args())
    assert code == 0, err
    residual_rows = [line for line in out.splitlines() if line.startswith("(2) ")]
    assert len(residual_rows) == 1 and "(T2^…" in residual_rows[0]
    broyden = next(line for line in out.splitlines()
                   if line.strip().startswith("Broyden converged"))
    assert "of F and J" not in broyden and "evaluations of F (" in broyden
    newton = next(line for line in out.splitlines()
                  if line.strip().startswith("Newton–Raphson converged"))
    assert "evaluations of F and J" in newton
    code, out, err = run(capsys, *_wall_args(), "--json")
    t1, t2 = wall_surfaces_degC()
    for r in json.loads(out)["runs"]:
        assert r["converged"]
        assert r["root"]["T1"] == pytest.approx(t1, rel=1e-12)
        assert r["root"]["T2"] == pytest.approx(t2, rel=1e-12)


HX_ONE = ("Ch = mh*cph; Cc = mc*cpc; Cmin = min(Ch, Cc); Cr = Cmin/max(Ch, Cc); "
          "NTU = U*A/Cmin; eps = (1 - exp(-NTU*(1 - Cr)))/(1 - Cr*exp(-NTU*(1 - Cr))); "
          "Ch*(Thi - Tho) = eps*Cmin*(Thi - Tci)")
HX_PARAMS = ("--param", "mh=1.2 kg/s", "--param", "cph=4.19 kJ/(kg*K)",
             "--param", "mc=0.9 kg/s", "--param", "cpc=4.18 kJ/(kg*K)",
             "--param", "A=6.5 m^2", "--param", "Thi=90 degC", "--param", "Tci=20 degC",
             "--unknown", "Tho", "--unknown-unit", "degC", "--x0", "50")


# 6. U typed without its unit (850, meant W/(m^2*K)) was refused only as "the argument of
#    exp must be dimensionless, not s³·K/kg at column 97": where the mismatch shows, not
#    which input causes it. The inputs whose unit alone would make it fit are now named.
#    W/(m^2*K) = kg/(s^3*K) (NIST SP 811, Table 3: W = m^2*kg*s^-3).
def test_a_mismatch_among_the_inputs_names_the_input_whose_unit_would_fit(capsys):
    code, _out, err = run(capsys, "solve", HX_ONE, *HX_PARAMS, "--param", "U=850")
    assert code == 2
    assert "`exp(-NTU*(1 - Cr))`" in err and f"column {HX_ONE.index('exp(-NTU') + 1}" in err
    assert "'U' has no unit; the equation needs 'U' in W/(m²·K)" in err
    # cp typed as a bare number: min() compares a heat capacity rate with a mass flow
    code, _out, err = run(capsys, "solve", HX_ONE,
                          *(a if a != "cph=4.19 kJ/(kg*K)" else "cph=4.19"
                            for a in HX_PARAMS), "--param", "U=850 W/(m^2*K)")
    assert code == 2 and "'cph' has no unit; the equation needs 'cph' in J/(kg·K)" in err
    # with the unit the solve goes through, to the closed form's outlet
    code, out, err = run(capsys, "solve", HX_ONE, *HX_PARAMS, "--param", "U=850 W/(m^2*K)",
                         "--json")
    assert code == 0, err
    Ch, Cc = 1.2 * 4190.0, 0.9 * 4180.0
    Cr, ntu = Cc / Ch, 850 * 6.5 / Cc
    eps = (1 - math.exp(-ntu * (1 - Cr))) / (1 - Cr * math.exp(-ntu * (1 - Cr)))
    expected = 90 - eps * Cc * 70 / Ch
    for r in json.loads(out)["runs"]:
        assert r["root"] == pytest.approx(expected, rel=1e-13)


# 7. A heat transfer coefficient typed as handbooks print it, "850 W/m2K", was refused
#    with "(did you mean 'mK', 'm°K'?)": a millikelvin is no help. A unit with a power
#    glued on is now answered with the text it means (a product after '/' in parentheses:
#    W/m^2*K would be W*K/m^2 by the usual precedence, common practice).
@pytest.mark.parametrize("typed, meant, si", [
    # SI base units of each (NIST SP 811, Table 3: W = m^2*kg*s^-3)
    ("W/m2K", "W/(m^2*K)", "kg/(s^3*K)"), ("kg/m3", "kg/m^3", "kg/m^3"),
    ("m3/h", "m^3/h", "m^3/s"), ("W/(m2*K)", "W/(m^2*K)", "kg/(s^3*K)")])
def test_a_power_glued_to_a_unit_is_answered_with_the_unit_meant(capsys, typed, meant, si):
    from solvers.units.reading import read_unit

    code, _out, err = run(capsys, "solve", "q = mh*U", "--unknown", "q",
                          "--param", "mh=1 kg/s", "--param", f"U=2 {typed}", "--x0", "1")
    assert code == 2
    assert f"(a power is written with ^: {meant}, not {typed})" in err
    assert "did you mean" not in err
    assert read_unit(meant).si_text == si  # what the hint offers reads as the unit meant


def test_the_power_hint_leaves_other_unknown_units_to_close_names(capsys):
    code, _out, err = run(capsys, "solve", "q = mh*U", "--unknown", "q",
                          "--param", "mh=1 kg/s", "--param", "U=2 mmm", "--x0", "1")
    assert code == 2 and "did you mean 'mm'" in err and "power" not in err


# 8. Every f(x) printed (iterates, residuals, the scan's roots) carried no unit: the
#    exchanger's heat balance f = Ch*(Thi - Tho) - eps*Cmin*(Thi - Tci) is in W, and its
#    f' per degC of the outlet, yet the tables said "f(Tho)" and "fx". The residual's unit
#    now heads those columns in the terminal, the CSV (with a "# residual unit" line) and
#    on the sheet (the window's lanes and roots list take the same headings).
def test_the_residual_and_its_derivative_are_headed_with_their_units(tmp_path, capsys):
    log = tmp_path / "hx.csv"
    code, out, err = run(capsys, "solve", HX_ONE, *HX_PARAMS, "--param", "U=850 W/(m^2*K)",
                         "--method", "newton", "--steps", "--csv", str(log))
    assert code == 0, err
    assert "f(Tho) [W]" in out and "f'(Tho) [W/degC]" in out
    meta, rows = table_rows(log)
    assert "# residual unit: W" in meta
    assert list(rows[0]) == ["method", "k", "x [degC]", "fx [W]", "dfx [W/degC]",
                             "dx [degC]", "lo [degC]", "hi [degC]"]
    # the numbers are in those units: f at the start x0 = 50 degC by the closed form (W),
    # and f' = -Ch = -mh*cph (W/K, a kelvin and a degree Celsius of difference alike)
    Ch, Cc = 1.2 * 4190.0, 0.9 * 4180.0
    Cr, ntu = Cc / Ch, 850 * 6.5 / Cc
    eps = (1 - math.exp(-ntu * (1 - Cr))) / (1 - Cr * math.exp(-ntu * (1 - Cr)))
    assert float(rows[0]["fx [W]"]) == pytest.approx(Ch * (90 - 50) - eps * Cc * 70,
                                                     rel=1e-12)
    assert float(rows[0]["dfx [W/degC]"]) == pytest.approx(-Ch, rel=1e-15)
    # a dimensionless f (the fin's efficiency balance) has no unit; its f' is per mm
    code, out, err = run(capsys, "solve", FIN, "--unknown", "L", "--unknown-unit", "mm",
                         *FIN_PARAMS, "--param", "h=45 W/(m^2*K)", "--x0", "30",
                         "--method", "newton", "--steps")
    assert code == 0, err
    heading = next(line for line in out.splitlines() if line.startswith("k  L [mm]"))
    assert "f(L) " in heading and "f(L) [" not in heading and "f'(L) [1/mm]" in heading
    # a scan's roots: the residual column in W
    code, out, err = run(capsys, "scan", HX_ONE, *HX_PARAMS[:-2], "--param",
                         "U=850 W/(m^2*K)", "--from", "0", "--to", "100")
    assert code == 0, err
    assert "residual [W]" in out


def test_plain_numbers_claim_no_residual_unit(tmp_path, capsys):
    log = tmp_path / "plain.csv"
    code, _out, err = run(capsys, "solve", "x^3 - 2*x - 5", "--x0", "2", "--method",
                          "newton", "--csv", str(log))
    assert code == 0, err
    meta, rows = table_rows(log)
    assert list(rows[0])[:5] == ["method", "k", "x", "fx", "dfx"]
    assert not any(line.startswith("# residual unit") for line in meta)
    # the root against numpy.roots' real root of x^3 - 2x - 5 (outside reference)
    import numpy as np

    real = [r.real for r in np.roots([1, 0, -2, -5]) if abs(r.imag) < 1e-12]
    assert float(rows[-1]["x"]) == pytest.approx(real[0], rel=1e-14)


def test_the_function_figure_names_the_residuals_unit_on_its_y_axis():
    """The sheet's Figure 1 and the window's plot share figures.draw_function: f's axis
    says f(Tho) [W] as the tables do (the curve itself against the closed form)."""
    import numpy as np
    from matplotlib.figure import Figure

    from app.documents import figures
    from solvers.equation import parse_equation

    eq = parse_equation(HX_ONE, unknown="Tho", unknown_unit="degC", parameters={
        "mh": "1.2 kg/s", "cph": "4.19 kJ/(kg*K)", "mc": "0.9 kg/s",
        "cpc": "4.18 kJ/(kg*K)", "A": "6.5 m^2", "Thi": "90 degC", "Tci": "20 degC",
        "U": "850 W/(m^2*K)"})
    ax = Figure().add_subplot()
    with figures.MATPLOTLIB_LOCK:
        drawn = figures.draw_function(ax, eq.f, 0.0, 100.0, unknown="Tho", unit="degC",
                                      f_unit=eq.residual_unit(derived=True))
    assert ax.get_ylabel() == "f(Tho) [W]" and ax.get_xlabel() == "Tho [degC]"
    Ch, Cc = 1.2 * 4190.0, 0.9 * 4180.0
    Cr, ntu = Cc / Ch, 850 * 6.5 / Cc
    eps = (1 - math.exp(-ntu * (1 - Cr))) / (1 - Cr * math.exp(-ntu * (1 - Cr)))
    x = np.asarray(drawn.x, dtype=float)
    finite = np.isfinite(np.asarray(drawn.y, dtype=float))
    np.testing.assert_allclose(np.asarray(drawn.y, dtype=float)[finite],
                               (Ch * (90 - x) - eps * Cc * 70)[finite], rtol=1e-9, atol=1e-6)


# ---------------------------------------------------------------- a second trial
# Invented scenarios of a second thermal/process trial: a steam-heated water heater (heat
# balance + rate equation in degC and degF), a benzene-toluene bubble point with Antoine
# constants in degC and mmHg, a Peng-Robinson compressibility factor; findings numbered 2.N.

HEATER = ("dT1 = Ts - Ti; dT2 = Ts - To; Q = m*cp*(To - Ti); "
          "Q = U*A*(dT1 - dT2)/ln(dT1/dT2)")
HEATER_PARAMS = ("--param", "m=1.5 kg/s", "--param", "cp=4.18 kJ/(kg*K)",
                 "--param", "Ti=20 degC", "--param", "Ts=110 degC",
                 "--param", "U=1.2 kW/(m^2*K)", "--param", "A=8 m^2",
                 "--unknown", "Q", "--unknown", "To", "--unknown-unit", "Q=kW")


def heater_outlet_degC() -> tuple[float, float]:
    """The closed form for a stream heated by a condensing vapour (common practice, from
    memory): To = Ts - (Ts - Ti) exp(-UA/(m cp)); Q = m cp (To - Ti), in degC and kW."""
    c = 1.5 * 4180.0
    to = 110.0 - 90.0 * math.exp(-1200.0 * 8.0 / c)
    return to, c * (to - 20.0) / 1000.0


# 2.1. An unknown of a system in degC or degF (an offset unit) lost every residual's and
#    definition's unit: the terminal's "unit (SI)" column said "—" where both equations
#    are heat rates in W, and --json gave residual_units [null, null], because the units
#    were read from the equations after To_SI = To + 273.15 went in (a bare number added
#    to a temperature has no dimension). In K the same system said W.
@pytest.mark.parametrize("unit, x0, to_unit", [
    ("degC", "70", lambda c: c),
    ("degF", "160", lambda c: c * 1.8 + 32.0),  # NIST SP 811: t/degF = 1.8 t/degC + 32
    ("K", "340", lambda c: c + 273.15)])
def test_a_systems_residual_units_survive_an_unknown_in_an_offset_unit(capsys, unit, x0,
                                                                        to_unit):
    args = ("solve", HEATER, *HEATER_PARAMS, "--unknown-unit", f"To={unit}",
            "--x0", "Q=300", "--x0", f"To={x0}")
    code, out, err = run(capsys, *args, "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["residual_units"] == ["W", "W"]
    to, q = heater_outlet_degC()
    for r in doc["runs"]:
        assert r["converged"]
        assert r["root"]["To"] == pytest.approx(to_unit(to), rel=1e-11)
        assert r["root"]["Q"] == pytest.approx(q, rel=1e-11)
    code, out, err = run(capsys, *args)
    rows = [line.split() for line in out.splitlines() if line.startswith(("(1)", "(2)"))]
    assert [row[-3] for row in rows] == ["W", "W"]
    assert "dT1 = 90 K" in out  # a definition's unit too: 110 degC - 20 degC


# Antoine constants for benzene and toluene, log10(p/mmHg) = A - B/(C + t/degC): from
# memory of the handbook tables (benzene 6.90565, 1211.033, 220.790; toluene 6.95464,
# 1344.8, 219.482). An invented liquid of 40 mol-% benzene at 760 mmHg.
BUBBLE = ("Pb = p0*10^(Ab - Bb/(Cb + T)); Pt = p0*10^(At - Bt/(Ct + T)); "
          "xb*Pb + (1 - xb)*Pt = P")


def bubble_args(cb: str, ct: str, *more: str) -> tuple[str, ...]:
    return ("solve", BUBBLE, "--unknown", "T", "--unknown-unit", "degC",
            "--param", "Ab=6.90565", "--param", "Bb=1211.033 delta_degC",
            "--param", f"Cb={cb}", "--param", "At=6.95464",
            "--param", "Bt=1344.8 delta_degC", "--param", f"Ct={ct}",
            "--param", "xb=0.4", "--param", "P=760 mmHg", "--param", "p0=1 mmHg",
            "--x0", "90", *more)


def bubble_point_degC() -> float:
    """The bubble point by scipy.optimize.brentq on the Antoine form in degC and mmHg."""
    def f(t: float) -> float:
        return (0.4 * 10 ** (6.90565 - 1211.033 / (220.790 + t))
                + 0.6 * 10 ** (6.95464 - 1344.8 / (219.482 + t)) - 760.0)
    return scipy.optimize.brentq(f, 50.0, 150.0, xtol=1e-14)


# 2.2. Antoine's C typed as a temperature difference beside T in degC (as the unit rule
#    for differences suggests) converged, every method agreeing, to -178.008 degC: the
#    equation takes T in kelvin, so C + T read 220.79 + 368.15 where 220.79 + 95 was
#    meant, 273.15 K off, and nothing said so. Such a sum is now remarked, in one
#    sentence for every sum it finds; the constants less 273.15 give the bubble point.
def test_a_constant_added_to_a_temperature_in_degc_is_remarked(capsys):
    code, out, err = run(capsys, *bubble_args("220.790 delta_degC", "219.482 delta_degC",
                                              "--json"))
    assert code == 0, err
    wrong = json.loads(out)["runs"][0]["root"]
    assert wrong == pytest.approx(bubble_point_degC() - 273.15, rel=1e-9)  # what it meant
    code, out, err = run(capsys, *bubble_args("220.790 delta_degC", "219.482 delta_degC"))
    notes = [line for line in out.splitlines() if "273.15 K off" in line]
    assert len(notes) == 1 and "`Cb + T` and `Ct + T` add a constant" in notes[0]
    code, out, err = run(capsys, *bubble_args(f"{220.790 - 273.15!r} K",
                                              f"{219.482 - 273.15!r} K", "--json"))
    assert code == 0, err
    doc = json.loads(out)
    for r in doc["runs"]:
        assert r["converged"]
        assert r["root"] == pytest.approx(bubble_point_degC(), rel=1e-12)
    # the advice followed (each constant for kelvin, typed in K): nothing more to say
    assert not any("273.15 K off" in n for n in doc["unit_notes"])


@pytest.mark.parametrize("equation, params", [
    # balances and differences: a shift of the temperature scale cancels
    ("Q = m*cp*(To - Ti)", ("--param", "Q=300 kW", "--param", "m=1.5 kg/s",
                            "--param", "cp=4.18 kJ/(kg*K)", "--param", "Ti=20 degC")),
    ("To = Ti + dT", ("--param", "Ti=20 degC", "--param", "dT=8 delta_degC")),
    ("To = Ti + dT", ("--param", "Ti=20 degC", "--param", "dT=8 K")),
    ("q = h*(Tw - To)", ("--param", "q=800 W/m^2", "--param", "Tw=350 K",
                         "--param", "h=20 W/(m^2*K)")),
    # kelvin is what physics asks for in a ratio or a power: left alone
    ("q = sig*(To^4 - Ti^4)", ("--param", "q=800 W/m^2", "--param", "Ti=20 degC",
                                "--param", "sig=5.670374419e-8 W/(m^2*K^4)")),
    ("(To/Ti)^0.4 = r", ("--param", "r=1.02", "--param", "Ti=20 degC")),
])
def test_balances_and_kelvin_formulas_in_degc_are_not_remarked(capsys, equation, params):
    code, out, err = run(capsys, "solve", equation, "--unknown", "To",
                         "--unknown-unit", "degC", "--x0", "50", *params)
    assert code == 0, err
    assert "273.15 K off" not in out


def test_a_balance_with_the_unknown_in_kelvin_is_not_remarked(capsys):
    """To solved for in K (no unit chosen) beside Ti in degC: `To - Ti` is a difference
    of two temperatures, not a constant added to one; To = Ti + Q/(m cp) (closed form)."""
    code, out, err = run(capsys, "solve", "Q = m*cp*(To - Ti)", "--unknown", "To",
                         "--param", "Q=200 kW", "--param", "m=2 kg/s",
                         "--param", "cp=4.18 kJ/(kg*K)", "--param", "Ti=20 degC",
                         "--x0", "300", "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert not any("273.15 K off" in n for n in doc["unit_notes"])
    assert doc["runs"][0]["root"] == pytest.approx(293.15 + 200e3 / (2 * 4180.0), rel=1e-13)


def test_a_systems_constant_added_to_a_temperature_is_remarked(capsys):
    """The same sum in a system (the heater's outlet from an Antoine-like line, invented)
    is remarked once; the heater itself, balances only, is not."""
    code, out, err = run(capsys, "solve", HEATER, *HEATER_PARAMS, "--unknown-unit",
                         "To=degC", "--x0", "Q=300", "--x0", "To=70")
    assert code == 0, err
    assert "273.15 K off" not in out
    code, out, err = run(capsys, "solve", "x = 1/(C + To); 2*x = k",
                         "--unknown", "x", "--unknown", "To", "--unknown-unit", "To=degC",
                         "--param", "C=200 delta_degC", "--param", "k=0.001 1/K",
                         "--x0", "x=0.001", "--x0", "To=300")
    assert code == 0, err
    assert sum("`C + To` adds a constant" in line for line in out.splitlines()) == 1
    # 2/(C + To_K) = k: To_K = 2/k - C = 1800 K, less 273.15 in degC (closed form)
    assert re.search(r"To \[degC\]\s+1526\.85", out)


# 2.3. An expansion coefficient typed as handbooks print it, "--param 'k=0.001 1/K'", was
#    refused as "missing operator between '0.001' and '1'", though zerotrace itself
#    writes such a value's SI unit as "1/K". A reciprocal unit after a space (or "*") is
#    read; "21/s" is still no number followed by a unit. 1/degC is 1/K (NIST SP 811: a
#    Celsius interval is a kelvin).
@pytest.mark.parametrize("typed, si", [("0.001 1/K", 0.001), ("0.001 1/degC", 0.001),
                                       ("0.00055 1/degF", 0.00055 * 1.8),
                                       ("3.6 * 1/h", 3.6 / 3600.0)])
def test_a_reciprocal_unit_after_a_value_is_read(capsys, typed, si):
    code, out, err = run(capsys, "solve", "x = k*dT", "--param", f"k={typed}",
                         "--param", "dT=10 K", "--x0", "1", "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["parameter_units"]["k"]["si_value"] == pytest.approx(si, rel=1e-15)
    assert doc["runs"][0]["root"] == pytest.approx(si * 10.0, rel=1e-14)


def test_a_number_glued_to_a_reciprocal_is_not_split(capsys):
    code, _out, err = run(capsys, "solve", "x = k*dT", "--param", "k=21/s",
                          "--param", "dT=10 K", "--x0", "1")
    assert code == 2 and "'21/s'" in err


# 2.5. The note of finding 2.2 reached the terminal of `solve`, the window and the sheet but
#     not the files a checker is handed: the CSV files (solve --csv, batch --out) had no
#     line for it, no --json document carried any of the unit notes (degC converted with
#     the offset either), and `batch` printed none of the equation's notes at all. Now a
#     '# temperatures:' line, a "unit_notes" list, and batch's notes as solve's.
def test_the_files_and_the_batch_carry_the_note_on_a_constant_added_to_degc(tmp_path,
                                                                           capsys):
    feeds = tmp_path / "feeds.csv"
    feeds.write_text("xb,P [mmHg]\n0.4,760\n0.9,760\n", encoding="utf-8")
    out = tmp_path / "bubble.csv"
    args = ("batch", BUBBLE, "--unknown", "T", "--unknown-unit", "degC",
            "--param", "Ab=6.90565", "--param", "Bb=1211.033 K",
            "--param", f"Cb={220.790 - 273.15!r} delta_degC", "--param", "At=6.95464",
            "--param", "Bt=1344.8 K", "--param", f"Ct={219.482 - 273.15!r} delta_degC",
            "--param", "p0=1 mmHg", "--table", str(feeds), "--method", "brent",
            "--bracket", "0", "150")
    code, stdout, err = run(capsys, *args, "--out", str(out))
    assert code == 0, err
    assert any(line.startswith("note: `Cb + T` and `Ct + T` add a constant")
               for line in stdout.splitlines())
    meta, rows = table_rows(out)
    assert any("# temperatures: `Cb + T` and `Ct + T`" in line for line in meta)
    assert float(rows[0]["root"]) == pytest.approx(bubble_point_degC(), rel=1e-11)
    code, stdout, err = run(capsys, *args, "--json")
    assert any("273.15 K off" in n for n in json.loads(stdout)["unit_notes"])
    log = tmp_path / "log.csv"
    code, stdout, err = run(capsys, *bubble_args("220.790 delta_degC", "219.482 delta_degC",
                                                 "--csv", str(log)))
    assert code == 0, err
    assert "# temperatures: `Cb + T` and `Ct + T`" in log.read_text(encoding="utf-8")
    code, stdout, err = run(capsys, "solve", "x = 1/(C + To); 2*x = k", "--unknown", "x",
                            "--unknown", "To", "--unknown-unit", "To=degC",
                            "--param", "C=200 delta_degC", "--param", "k=0.001 1/K",
                            "--x0", "x=0.001", "--x0", "To=300", "--json")
    assert code == 0, err
    assert any("`C + To` adds a constant" in n for n in json.loads(stdout)["unit_notes"])


# 2.6. A film coefficient solved for without a unit of its own came out as "h
#     [kg/(s^3*K)]" in the terminal, the window and the files: SI base units no engineer
#     reads as a heat transfer coefficient, where a pressure already came out in Pa. The
#     inferred unit is now the derived one, W/(m^2*K) (NIST SP 811, Table 3: W = kg m^2
#     s^-3, so W/(m^2*K) = kg/(s^3*K): the same coherent unit, factor 1).
def test_an_inferred_unknown_unit_is_the_derived_one(capsys):
    code, out, err = run(capsys, "solve", "q = h*(Ts - Tf)", "--param", "q=5 kW/m^2",
                         "--param", "Ts=80 degC", "--param", "Tf=20 degC", "--x0", "10",
                         "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["unknown_unit"] == "W/(m^2*K)"
    assert doc["runs"][0]["root"] == pytest.approx(5000.0 / 60.0, rel=1e-15)  # q/(Ts - Tf)
    code, out, err = run(capsys, "solve", HEATER.replace("U*A", "UA"), "--param",
                         "m=1.5 kg/s", "--param", "cp=4.18 kJ/(kg*K)", "--param",
                         "Ti=20 degC", "--param", "Ts=110 degC", "--param", "To=90 degC",
                         "--unknown", "Q", "--unknown", "UA", "--x0", "Q=3e5",
                         "--x0", "UA=5000", "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["unknown_units"] == {"Q": "W", "UA": "W/K"}
    # closed form: UA = m cp ln((Ts - Ti)/(Ts - To)) for a condensing-vapour heater
    ua = 1.5 * 4180.0 * math.log(90.0 / 20.0)
    assert doc["runs"][0]["root"]["UA"] == pytest.approx(ua, rel=1e-11)


# 2.7. A pressure typed as a process datasheet marks it: 'psig' and 'barg' were "unknown
#     unit (did you mean 'psi', 'µpsi', 'upsi'?)", pointing at psi as if the two were the
#     same; 'kPa(g)' was read by pint as kPa times a gram and 'bar(a)' as bar times a
#     year (the check off: silently a wrong number). A gauge mark is refused with what to
#     type (absolute = gauge + the local atmosphere); psia and bara are psi and bar.
#     NIST SP 811: 1 psi = 6894.757293168 Pa (lbf/in^2 from 0.45359237 kg, 9.80665 m/s^2,
#     0.0254 m), 1 bar = 1e5 Pa; 1 atm = 101325 Pa = 14.696 psi.
@pytest.mark.parametrize("typed, unit", [("psig", "psi"), ("barg", "bar"),
                                         ("kPa(g)", "kPa"), ("MPag", "MPa")])
def test_a_gauge_pressure_is_refused_with_what_to_type(capsys, typed, unit):
    for check in ((), ("--no-dimension-check",)):
        code, _out, err = run(capsys, "solve", "p = rho*g*H + p0", "--unknown", "p",
                              "--param", "rho=1000 kg/m^3", "--param", "g=9.80665 m/s^2",
                              "--param", "H=10 m", "--param", f"p0=12 {typed}",
                              "--x0", "1e5", *check)
        assert code == 2
        assert f"'{typed}' is a gauge pressure" in err
        assert f"absolute pressure in {unit}" in err and "14.696 psi" in err
    assert 101325.0 / (0.45359237 * 9.80665 / 0.0254 ** 2) == pytest.approx(14.696, abs=5e-4)


@pytest.mark.parametrize("typed, si", [("psia", 0.45359237 * 9.80665 / 0.0254 ** 2),
                                       ("bara", 1e5)])
def test_psia_and_bara_are_absolute_pressures(capsys, typed, si):
    code, out, err = run(capsys, "solve", "p = rho*g*H + p0", "--unknown", "p",
                         "--param", "rho=1000 kg/m^3", "--param", "g=9.80665 m/s^2",
                         "--param", "H=10 m", "--param", f"p0=2 {typed}", "--x0", "1e5",
                         "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["parameter_units"]["p0"]["si_value"] == pytest.approx(2 * si, rel=1e-15)
    assert doc["runs"][0]["root"] == pytest.approx(1000 * 9.80665 * 10 + 2 * si, rel=1e-14)


def test_a_pressure_marked_absolute_in_parentheses_says_to_type_the_unit(capsys):
    code, _out, err = run(capsys, "solve", "p = p0", "--unknown", "p",
                          "--param", "p0=2 bar(a)", "--x0", "1e5")
    assert code == 2 and "a pressure in bar is absolute already; type bar" in err


# 2.8. A specific heat typed as handbooks print it, "4.18 kJ/kg.K" (or kJ/kg*K, kJ/kg K),
#      was read by pint as kJ*K/kg, and with Q the unknown the solve went ahead with Q in
#      "kg*m^2*K^2/s^3"; "W/m^2.K" was refused as "a power must be a unit to a small
#      number". A product after '/' is now refused with how it reads and the text meant.
@pytest.mark.parametrize("typed, reads, meant", [
    ("kJ/kg.K", "kJ*K/kg", "kJ/(kg*K)"), ("kJ/kg*K", "kJ*K/kg", "kJ/(kg*K)"),
    ("kJ/kg K", "kJ*K/kg", "kJ/(kg*K)"), ("W/m^2.K", "W*K/m^2", "W/(m^2*K)"),
    ("Btu/h*ft^2*degF", "Btu*ft^2*degF/h", "Btu/(h*ft^2*degF)")])
def test_a_product_after_a_slash_is_refused_with_the_text_meant(capsys, typed, reads, meant):
    code, _out, err = run(capsys, "solve", "Q = m*cp*(To - Ti)", "--unknown", "Q",
                          "--param", "m=2 kg/s", "--param", f"cp=4.18 {typed}",
                          "--param", "Ti=20 degC", "--param", "To=30 degC", "--x0", "1")
    assert code == 2
    assert f"it reads as {reads}" in err and f"write {meant} if it is below too" in err


@pytest.mark.parametrize("typed, si", [
    ("kJ/(kg*K)", 4180.0), ("kJ/kg/K", 4180.0),
    # NIST SP 811: Btu_IT/(lb*degF) = 4186.8 J/(kg*K) exactly
    ("Btu_it/(lb*degF)", 4.18 * 4186.8)])
def test_the_units_meant_give_the_heat_rate(capsys, typed, si):
    code, out, err = run(capsys, "solve", "Q = m*cp*(To - Ti)", "--unknown", "Q",
                         "--param", "m=2 kg/s", "--param", f"cp=4.18 {typed}",
                         "--param", "Ti=20 degC", "--param", "To=30 degC", "--x0", "1",
                         "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["unknown_unit"] == "W"
    assert doc["runs"][0]["root"] == pytest.approx(2 * si * 10, rel=1e-12)  # m cp dT


# 2.9. US process and HVAC units: 'lbmol' (the gas constant 10.7316 ft^3*psi/(lbmol*degR))
#      was "unknown unit (did you mean 'mol', 'lbm'?)"; 'MBtu/h' was read by pint as mega-
#      Btu, where US practice often means a thousand Btu (MMBtu a million), a factor 1000
#      silently; 'TR' (a ton of refrigeration) was refused as tera x the gas constant.
#      Now lbmol, MMBtu, MBH and TR are read, and MBtu is refused with what to type.
#      NIST SP 811: 1 lb = 0.45359237 kg, so 1 lbmol = 453.59237 mol; 1 ton of
#      refrigeration = 12 000 Btu_IT/h = 3516.853 W (from memory: 3.516 853 kW).
@pytest.mark.parametrize("typed, si", [
    ("lbmol", 453.59237), ("lbmol/h", 453.59237 / 3600.0),
    ("MMBtu", 1e6 * 1055.056), ("MBH", 1000 * 1055.056 / 3600.0),
    ("TR", 12000 * 1055.05585262 / 3600.0)])
def test_us_process_units_are_read(capsys, typed, si):
    code, out, err = run(capsys, "solve", "x = a", "--unknown", "x", "--param", f"a=1 {typed}",
                         "--x0", "1", "--json")
    assert code == 0, err
    assert json.loads(out)["parameter_units"]["a"]["si_value"] == pytest.approx(si, rel=1e-6)


def test_the_gas_constant_in_us_units_gives_the_peng_robinson_roots(capsys):
    """An invented CO2-like state in US units: the three roots of the Peng-Robinson cubic
    against numpy.roots in SI (R = 10.731577 ft^3*psi/(lbmol*degR) is 8.3144626 J/(mol*K)
    to 7 figures, from memory of the handbook value)."""
    pr = ("kappa = 0.37464 + 1.54226*w - 0.26992*w^2; alpha = (1 + kappa*(1 - sqrt(T/Tc)))^2; "
          "a = 0.45724*R^2*Tc^2/Pc*alpha; b = 0.07780*R*Tc/Pc; A = a*P/(R*T)^2; "
          "B = b*P/(R*T); Z^3 - (1 - B)*Z^2 + (A - 3*B^2 - 2*B)*Z - (A*B - B^2 - B^3) = 0")
    code, out, err = run(capsys, "scan", pr, "--unknown", "Z", "--param", "Tc=547.43 degR",
                         "--param", "Pc=1070 psia", "--param", "w=0.22394",
                         "--param", "R=10.731577 ft^3*psi/(lbmol*degR)",
                         "--param", "T=44 degF", "--param", "P=514.7 psia",
                         "--from", "0", "--to", "1.2", "--json")
    assert code == 0, err
    psi, lbmol_R = 0.45359237 * 9.80665 / 0.0254 ** 2, 453.59237 * 5 / 9
    R = 10.731577 * 0.3048 ** 3 * psi / lbmol_R
    _a, _b, expected = peng_robinson_z(R, 547.43 * 5 / 9, 1070 * psi, 0.22394,
                                       (44 + 459.67) * 5 / 9, 514.7 * psi)
    got = [r["x"] for r in json.loads(out)["roots"]]
    assert got == pytest.approx(expected, rel=1e-10)


def test_mbtu_is_refused_as_ambiguous(capsys):
    code, _out, err = run(capsys, "solve", "x = a", "--unknown", "x",
                          "--param", "a=150 MBtu/h", "--x0", "1")
    assert code == 2
    assert "'MBtu'" in err and "kBtu" in err and "MMBtu" in err


# 2.11. Refused for `Cb + T` with Cb a bare number and T in degC, the next thing to try
#       is Antoine's C typed in degC as well: both then read in kelvin, C + T is 546.3 K
#       too large, and the solve converged with no word. Two degC temperatures summed
#       with weights that make no mean (1 + 1) are noted too; a mean (1/2 + 1/2) is not.
def test_antoines_c_typed_in_degc_is_noted_and_a_mean_temperature_is_not(capsys):
    code, out, err = run(capsys, *bubble_args("220.790 degC", "219.482 degC", "--json"))
    assert code == 0, err
    doc = json.loads(out)
    assert any("`Cb + T` and `Ct + T` add a constant" in n for n in doc["unit_notes"])
    # what it converged to: the degC form with C + 2*273.15 (brentq), not the bubble point
    def f(t: float) -> float:
        return (0.4 * 10 ** (6.90565 - 1211.033 / (220.790 + 2 * 273.15 + t))
                + 0.6 * 10 ** (6.95464 - 1344.8 / (219.482 + 2 * 273.15 + t)) - 760.0)
    wrong = scipy.optimize.brentq(f, -600.0, -300.0, xtol=1e-13)
    assert doc["runs"][0]["root"] == pytest.approx(wrong, rel=1e-10)
    # k(Tm) linear in the mean temperature (invented): k = k0 (1 + b (Tm - Tr))
    code, out, err = run(capsys, "solve", "Tm = (Ti + To)/2; k = k0*(1 + b*(Tm - Tr))",
                         "--unknown", "To", "--unknown-unit", "degC",
                         "--param", "Ti=20 degC", "--param", "Tr=0 degC",
                         "--param", "k0=0.56 W/(m*K)", "--param", "b=0.002 1/K",
                         "--param", "k=0.62 W/(m*K)", "--x0", "50", "--json")
    assert code == 0, err
    doc = json.loads(out)
    assert not any("273.15 K off" in n for n in doc["unit_notes"])
    # closed form: Tm = Tr + (k/k0 - 1)/b, To = 2 Tm - Ti (in degC)
    assert doc["runs"][0]["root"] == pytest.approx(2 * ((0.62 / 0.56 - 1) / 0.002) - 20,
                                                   rel=1e-12)


# 2.12. That solve (Antoine's C in degC) converged to -451.16 degC, every method
#       agreeing, with nothing said of a temperature below absolute zero. The agreement
#       line (the terminal's, the window's and the sheet's) now says so, in the unit
#       asked and in K (NIST SP 811: T/K = t/degC + 273.15 = (t/degF + 459.67)/1.8).
@pytest.mark.parametrize("unit, to_unit", [("degC", lambda k: k - 273.15),
                                           ("degF", lambda k: k * 1.8 - 459.67),
                                           ("K", lambda k: k)])
def test_a_root_below_absolute_zero_is_said_to_be_no_temperature(capsys, unit, to_unit):
    args = list(bubble_args("220.790 degC", "219.482 degC"))
    args[args.index("--unknown-unit") + 1] = unit
    args[args.index("--x0") + 1] = repr(to_unit(363.15))
    code, out, err = run(capsys, *args, "--json")
    assert code == 0, err
    root = json.loads(out)["runs"][0]["root"]

    def f(t: float) -> float:  # brentq on the same sums, in degC
        return (0.4 * 10 ** (6.90565 - 1211.033 / (220.790 + 2 * 273.15 + t))
                + 0.6 * 10 ** (6.95464 - 1344.8 / (219.482 + 2 * 273.15 + t)) - 760.0)
    kelvin = scipy.optimize.brentq(f, -600.0, -300.0, xtol=1e-13) + 273.15
    assert kelvin < 0 and root == pytest.approx(to_unit(kelvin), rel=1e-10)
    code, out, err = run(capsys, *args)
    line = next(x for x in out.splitlines() if "agree to" in x)
    assert "is below absolute zero: no temperature" in line
    assert bool(re.search(r"\(-178\.008\d* K\)", line)) == (unit != "K")


def test_a_temperature_above_absolute_zero_says_nothing_of_it(capsys):
    code, out, err = run(capsys, *bubble_args(f"{220.790 - 273.15!r} K",
                                              f"{219.482 - 273.15!r} K"))
    assert code == 0, err
    assert "absolute zero" not in out


# 2.15. A Peng-Robinson worksheet (an invented CO2-like state: 280 K, 3.5 MPa; critical
#       constants from memory of the handbook tables) printed its attraction parameter
#       as "a = 0.41930623 kg*m^5/(s^2*mol^2)": base units where the trade writes
#       Pa*m^6/mol^2 (the same coherent unit: Pa = kg/(m*s^2), NIST SP 811 Table 3).
#       Molar units are now written as engineers write them (J/mol, J/(K*mol), the
#       cubic's a); the three roots against numpy.roots.
def test_a_cubic_equation_of_states_parameters_are_in_the_trades_units(capsys):
    pr = ("kappa = 0.37464 + 1.54226*w - 0.26992*w^2; alpha = (1 + kappa*(1 - sqrt(T/Tc)))^2; "
          "a = 0.45724*R^2*Tc^2/Pc*alpha; b = 0.07780*R*Tc/Pc; A = a*P/(R*T)^2; "
          "B = b*P/(R*T); Z^3 - (1 - B)*Z^2 + (A - 3*B^2 - 2*B)*Z - (A*B - B^2 - B^3) = 0")
    params = ("--param", "Tc=304.13 K", "--param", "Pc=7.3773 MPa", "--param", "w=0.22394",
              "--param", "R=8.314462618 J/(mol*K)", "--param", "T=280 K",
              "--param", "P=3.5 MPa")
    a, b, expected = peng_robinson_z(8.314462618, 304.13, 7.3773e6, 0.22394, 280.0, 3.5e6)
    code, out, err = run(capsys, "solve", pr, "--unknown", "Z", *params, "--x0", "1",
                         "--method", "newton", "--figures", "8")
    assert code == 0, err
    line = next(x for x in out.splitlines() if "definitions at the root" in x)
    shown = re.search(r"a = (\S+) Pa\*m\^6/mol\^2, b = (\S+) m\^3/mol", line)
    assert shown, line
    assert float(shown.group(1)) == pytest.approx(a, rel=1e-7)
    assert float(shown.group(2)) == pytest.approx(b, rel=1e-7)
    code, out, err = run(capsys, "scan", pr, "--unknown", "Z", *params, "--from", "0",
                         "--to", "1.2", "--json")
    assert [r["x"] for r in json.loads(out)["roots"]] == pytest.approx(expected, rel=1e-12)


# 2.16. US texts print products with a hyphen: ft-lbf, Btu/lb-degF, Btu/hr-ft^2-degF.
#       Each was refused as only "cannot be read as a unit". The refusal now gives the
#       text meant (a product after '/' put under it, as in finding 2.8); a negative
#       exponent (s^-2) is no product. 1 Btu_IT/(h*ft^2*degF) = 5.678263 W/(m^2*K)
#       (NIST SP 811, Appendix B.9).
@pytest.mark.parametrize("typed, meant", [
    ("ft-lbf", "ft*lbf"), ("Btu/lb-degF", "Btu/(lb*degF)"),
    ("Btu_it/hr-ft^2-degF", "Btu_it/(hr*ft^2*degF)"), ("kJ/kg-K", "kJ/(kg*K)")])
def test_a_hyphen_between_units_is_answered_with_the_product_meant(capsys, typed, meant):
    code, _out, err = run(capsys, "solve", "x = a", "--unknown", "x",
                          "--param", f"a=1 {typed}", "--x0", "1", "--no-dimension-check")
    assert code == 2
    assert f"a hyphen is no product sign; write {meant}" in err
    code, out, err = run(capsys, "solve", "x = a", "--unknown", "x",
                         "--param", f"a=1 {meant}", "--x0", "1", "--no-dimension-check",
                         "--json")
    assert code == 0, err
    if meant.startswith("Btu_it/(hr"):
        si = json.loads(out)["parameter_units"]["a"]["si_value"]
        assert si == pytest.approx(5.678263, rel=1e-6)


def test_a_negative_exponent_is_no_hyphen(capsys):
    code, out, err = run(capsys, "solve", "x = a", "--unknown", "x",
                         "--param", "a=3 kg*m^-3", "--x0", "1", "--json")
    assert code == 0, err
    assert json.loads(out)["runs"][0]["root"] == pytest.approx(3.0, rel=1e-15)
