"""Units: parameters with units, the dimensional check and the unknown in its own unit.

Outside references named beside each check: NIST SP 811 (2008), Appendix B, for the exact
definitions of customary units; scipy.constants (CODATA values and the same exact
definitions); closed forms of the equations solved (algebra, stated where used).
The hydraulic and gas scenarios are invented for these tests.
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from app.cli import main
from app.documents import words
from app.documents.worksheet import Parameter, Worksheet, dumps, loads
from solvers import EquationError, brent, newton, parse_equation, pipeline
from solvers.units import Measured, measured, read_unit

ULP = 4 * 2.220446049250313e-16  # pint multiplies definitions: a few ulps, never more


# ---------------------------------------------------------------- conversion factors


@pytest.mark.parametrize(("text", "si"), [
    ("ft", 0.3048),  # NIST SP 811 B.8: international foot = 0.3048 m exactly
    ("inch", 0.0254),  # NIST SP 811: inch = 2.54 cm exactly
    ("lb", 0.45359237),  # NIST SP 811: pound (avoirdupois) = 0.45359237 kg exactly
    ("gallon", 3.785411784e-3),  # NIST SP 811: US gallon = 3.785411784 L exactly
    ("g_0", 9.80665),  # NIST SP 811 / CGPM 1901: standard gravity 9.80665 m/s^2 exactly
    ("atm", 101325.0),  # NIST SP 811: standard atmosphere = 101 325 Pa exactly
    ("mPa*s", 1e-3),  # SI prefix milli (NIST SP 811 Table 5)
    ("km/h", 1000 / 3600),  # SI: 1 h = 3600 s
])
def test_conversion_factors_match_exact_definitions(text, si):
    unit = read_unit(text)
    assert unit.offset == 0.0
    assert unit.factor == pytest.approx(si, rel=ULP)


@pytest.mark.parametrize(("text", "reference"), [
    ("ft", sc.foot), ("lb", sc.pound), ("gallon", sc.gallon), ("psi", sc.psi),
    ("lbf", sc.pound_force), ("mile", sc.mile), ("hp", sc.horsepower), ("bar", sc.bar),
    ("deg", sc.degree), ("Btu_it", sc.Btu_IT),  # scipy.constants values (SI)
])
def test_conversion_factors_match_scipy_constants(text, reference):
    assert read_unit(text).factor == pytest.approx(reference, rel=1e-9)


def test_a_parameter_with_a_unit_reaches_f_in_si_base_units():
    eq = parse_equation("x = a", parameters={"a": "1 ft"})
    assert eq.f(0.0) == pytest.approx(-0.3048, rel=ULP)  # NIST SP 811: 1 ft = 0.3048 m
    assert eq.units["a"].value == 1.0 and eq.units["a"].unit == "ft"
    assert eq.units["a"].si_unit == "m"
    assert eq.unknown_unit == "m"  # inferred: x is what a is


@pytest.mark.parametrize(("typed", "shown"), [
    ("lbf*ft", "N*m"), ("ft*lbf", "N*m"), ("kgf*cm", "N*m"), ("kN*m", "N*m"),
    ("Btu", "J"), ("kJ", "J"), ("lbf", "N"), ("lbf/ft", "N/m"),
])
def test_a_force_times_a_length_is_shown_in_newton_metres_not_joules(typed, shown):
    # a torque typed in lbf*ft has an energy's dimension; SI Brochure (9th ed., Table 4):
    # J = N m, and a torque is written N m (common practice). NIST SP 811 B.9: 1 lbf*ft =
    # 1.355818 N*m; 65 lbf*ft is 88.128 N*m
    from app.documents.words import si_unit_text

    eq = parse_equation("x = a", parameters={"a": f"65 {typed}"})
    assert si_unit_text(eq.units["a"]) == shown
    if typed == "lbf*ft":
        assert eq.units["a"].si_value == pytest.approx(65 * 1.355818, rel=1e-6)


# ---------------------------------------------------------------- the same physics in two systems


def _pipe_diameter_closed_form(f_d, length, flow, g, head):
    # Darcy-Weisbach with v = 4Q/(pi D^2): hf = fD L/D * 8 Q^2/(pi^2 g D^4), so
    # D^5 = 8 fD L Q^2 / (pi^2 g hf) (algebra)
    return (8 * f_d * length * flow**2 / (math.pi**2 * g * head)) ** 0.2


DARCY = "hf = fD*L/D*(4*Q/(pi*D^2))^2/(2*g)"


def test_darcy_weisbach_in_si_and_us_customary_gives_one_physical_diameter():
    # Invented scenario: a cooling-water line of 250 m taking 35 L/s with 4.5 m of head loss.
    si = parse_equation(DARCY, unknown="D", unknown_unit="mm", parameters={
        "hf": "4.5 m", "fD": 0.02, "L": "250 m", "Q": "35 L/s", "g": "9.80665 m/s^2"})
    # The same line in US customary units (values converted by NIST SP 811's exact foot and
    # gallon: 1 ft = 0.3048 m, 1 gal = 3.785411784 L), the diameter asked in inches.
    ft, gal = 0.3048, 3.785411784e-3
    us = parse_equation(DARCY, unknown="D", unknown_unit="in", parameters={
        "hf": f"{4.5 / ft!r} ft", "fD": 0.02, "L": f"{250 / ft!r} ft",
        "Q": f"{0.035 / gal * 60!r} gal/min", "g": f"{9.80665 / ft!r} ft/s^2"})
    root_mm = newton(si.f, 150.0, fprime=si.fprime).root
    root_in = brent(us.f, 2.0, 20.0).root
    expected_m = _pipe_diameter_closed_form(0.02, 250.0, 0.035, 9.80665, 4.5)
    assert root_mm / 1000 == pytest.approx(expected_m, rel=1e-13)
    assert root_in * 0.0254 == pytest.approx(expected_m, rel=1e-12)  # NIST: 1 in = 25.4 mm
    assert si.unknown_unit == "mm" and us.unknown_unit == "in"


def test_ideal_gas_molar_volume_at_25_degC_matches_scipy_constants():
    eq = parse_equation("p*V = n*R*T", unknown="V", unknown_unit="L", parameters={
        "p": "101.325 kPa", "n": "1 mol", "R": f"{sc.R!r} J/(mol*K)", "T": "25 degC"})
    root = newton(eq.f, 20.0, fprime=eq.fprime).root
    # scipy.constants: R (CODATA, exact since 2019), zero_Celsius = 273.15 K, atm = 101325 Pa
    expected_litres = sc.R * (sc.zero_Celsius + 25) / sc.atm * 1000
    assert root == pytest.approx(expected_litres, rel=1e-13)
    assert any(r.code == "absolute_temperature" and r.subject == "T" for r in eq.remarks)


# ---------------------------------------------------------------- offset temperatures


def test_offset_temperature_rule():
    def root(value, unit):
        eq = parse_equation("x = T", parameters={"T": value}, unknown_unit=unit)
        return newton(eq.f, 1.0).root

    # alone, degC and degF are absolute (scipy.constants.zero_Celsius = 273.15 K)
    assert root("25 degC", "K") == pytest.approx(sc.zero_Celsius + 25, rel=1e-15)
    assert root("77 degF", "K") == pytest.approx(298.15, rel=1e-14)  # (77 + 459.67) * 5/9
    assert root("25 degC", "degC") == pytest.approx(25.0, abs=1e-12)  # unknown with offset
    assert root("0 degC", "degF") == pytest.approx(32.0, abs=1e-12)  # freezing point
    # a difference is typed delta_degC: 5 K, never 278.15 K
    assert root("5 delta_degC", "K") == pytest.approx(5.0, rel=1e-15)
    assert root("9 delta_degF", "K") == pytest.approx(5.0, rel=1e-14)
    # in a compound unit degC is a difference (pint's reading): J/(kg*degC) = J/(kg*K)
    assert read_unit("J/(kg*degC)").factor == 1.0 and read_unit("J/(kg*degC)").offset == 0.0


def test_absolute_temperature_is_said_in_words():
    eq = parse_equation("x = T", parameters={"T": "25 degC"})
    text = " ".join(words.remarks_text(eq.remarks))
    assert "absolute temperature" in text and "delta_degC" in text


# ---------------------------------------------------------------- refusals, with the part named


def _error(text, parameters, **kw) -> EquationError:
    with pytest.raises(EquationError) as info:
        parse_equation(text, parameters=parameters, **kw)
    return info.value


def test_a_sum_of_different_dimensions_is_refused_naming_the_term():
    err = _error("H = Q + D", {"Q": "0.35 m^3/s", "D": "150 mm"}, unknown="H")
    assert "`Q + D`" in str(err) and "m³/s added to m" in str(err)
    assert err.position == 4  # column of the sum as typed


def test_sides_of_different_dimensions_are_refused():
    err = _error("Q*x = D", {"Q": "0.35 m^3/s", "D": "150 mm"}, unknown_unit="s")
    assert "'s' does not fit 'x'" in str(err)
    err = _error("Q = D + E*x", {"Q": "1 m^3/s", "D": "1 m", "E": "1 m"}, unknown="x")
    assert "left side is m³/s" in str(err) and "right side is m" in str(err)


@pytest.mark.parametrize("function", ["ln", "exp", "log10", "sin", "cosh"])
def test_a_dimensioned_argument_of_a_function_is_refused(function):
    err = _error(f"x = {function}(D)", {"D": "150 mm"})
    assert f"`{function}(D)`" in str(err) and "dimensionless" in str(err) and "m" in str(err)
    assert err.position == 4


def test_a_ratio_inside_ln_and_an_angle_in_degrees_are_fine():
    eq = parse_equation("x = ln(D/E) + sin(a)", parameters={
        "D": "300 mm", "E": "1 ft", "a": "30 deg"})
    # ln(0.3/0.3048) + sin(pi/6): NIST foot; sin 30 deg = 1/2 (exact trigonometry)
    assert -eq.f(0.0) == pytest.approx(math.log(0.3 / 0.3048) + 0.5, rel=1e-14)
    assert eq.unknown_unit is None  # dimensionless


def test_an_exponent_with_a_dimension_is_refused():
    err = _error("x = 2^D", {"D": "1 m"})
    assert "`2^D`" in str(err) and "exponent" in str(err)


def test_an_incompatible_unknown_unit_is_refused_naming_the_part():
    err = _error("Q = pi*D^2/4*v", {"Q": "0.35 m^3/s", "v": "2 m/s"}, unknown="D",
                 unknown_unit="kg")
    assert "'kg'" in str(err) and "`Q = pi*D^2/4*v`" in str(err) and "makes it m" in str(err)


def test_an_unknown_unit_is_named_with_close_names():
    err = _error("x = D", {"D": "150 mmm"})
    assert "'mmm'" in str(err) and "'mm'" in str(err) and "'D'" in str(err)


@pytest.mark.parametrize("unit", [
    "__import__('os')", "m; import os", "m\nos", "exec(m)", "m" * 80, "m^99", "m**(10**10)",
    "lambda: 0", "m[0]", "m{}", "${HOME}",
    # resource bombs: pint computes powers of numbers exactly (9^9^9^9 would never end)
    "9^9^9^9", "2**2**2**2**2**m", "m^99999999999", "((((9*m)^12)^12)^12)^12", "m^(1/3)^3",
])
def test_code_like_or_oversized_unit_text_is_refused(unit):
    with pytest.raises(EquationError):
        read_unit(unit)
    with pytest.raises(EquationError):
        parse_equation("x = a", parameters={"a": Measured(1.0, unit)})


def test_a_number_string_without_a_unit_stays_refused():
    with pytest.raises(EquationError, match="without a unit"):
        parse_equation("g*x = 1", parameters={"g": "9.81"})


# ---------------------------------------------------------------- hidden-unit correlations


MANNING = "Q = 1/n*A*R^(2/3)*S^0.5"


def test_manning_with_a_unit_on_n_infers_an_area():
    # Invented channel; n for a concrete lining with its SI unit s/m^(1/3) (common practice)
    eq = parse_equation(MANNING, unknown="A", parameters={
        "Q": "10 m^3/s", "n": "0.013 s/m^(1/3)", "R": "0.8 m", "S": 0.001})
    assert eq.unknown_unit == "m^2"
    root = newton(eq.f, 1.0, fprime=eq.fprime).root
    assert root == pytest.approx(10 * 0.013 / (0.8 ** (2 / 3) * 0.001**0.5), rel=1e-14)  # algebra


def test_switching_the_check_off_is_said_never_silent():
    eq = parse_equation("x = Q + D", parameters={"Q": "1 m^3/s", "D": "1 m"},
                        check_dimensions=False)
    assert any(r.code == "dimensions_unchecked" for r in eq.remarks)
    assert "not checked" in " ".join(words.remarks_text(eq.remarks))
    assert eq.f(0.0) == -2.0  # the conversion still happens


# ---------------------------------------------------------------- bind, arrays, plain worksheets


def test_bind_converts_units_and_rechecks_dimensions():
    eq = parse_equation("Q = pi*D^2/4*v", unknown="D", unknown_unit="mm",
                        parameters={"Q": "0.35 m^3/s", "v": "2 m/s"})
    other = eq.bind({"Q": "5.55 L/s", "v": "0.5 m/s"})
    # D = sqrt(4Q/(pi v)) (algebra), in mm
    assert newton(other.f, 100.0, fprime=other.fprime).root == pytest.approx(
        1000 * math.sqrt(4 * 5.55e-3 / (math.pi * 0.5)), rel=1e-13)
    with pytest.raises(EquationError, match="does not fit"):
        eq.bind({"Q": "0.35 kg/s", "v": "2 m/s"})


def test_a_column_with_a_unit_binds_as_an_array():
    eq = parse_equation("Q = pi*D^2/4*v", unknown="v", parameters={"Q": "30 L/s", "D": 0.1})
    rows = eq.bind({"Q": "30 L/s", "D": measured(np.array([100.0, 150.0, 200.0]), "mm")})
    d = np.array([0.1, 0.15, 0.2])
    v = 4 * 0.03 / (math.pi * d**2)  # v = 4Q/(pi D^2) (algebra)
    np.testing.assert_allclose(rows.f(v), 0.0, atol=1e-15)
    assert rows.units["D"].si_unit == "m"


def test_an_unknown_unit_of_the_si_base_compiles_to_the_plain_code():
    plain = parse_equation("x^2 - a", parameters={"a": 2.0})
    metres = parse_equation("x^2 - a", parameters={"a": "2 m^2"}, unknown_unit="m")
    assert metres.symbolic_expr == plain.symbolic_expr  # no scale multiplied in


def test_without_units_nothing_changes():
    eq = parse_equation("x^2 - a", parameters={"a": 2.0})
    assert eq.unknown_unit is None and eq.units == {}
    assert not any(r.code in words.UNIT_REMARKS for r in eq.remarks)


def test_worksheet_json_keeps_units_and_plain_files_stay_as_they_were():
    plain = Worksheet("x^2 = a", parameters=(Parameter("a", 2.0),))
    assert "unit" not in dumps(plain)
    ws = Worksheet(DARCY, unknown="D", unknown_unit="mm", dimension_check=False,
                   parameters=(Parameter("hf", 4.5, "head loss", "m"), Parameter("fD", 0.02)))
    back = loads(dumps(ws))
    assert back == ws
    data = json.loads(dumps(ws))
    assert data["unknown_unit"] == "mm" and data["dimension_check"] is False
    assert data["parameters"][0]["unit"] == "m" and "unit" not in data["parameters"][1]


def test_worksheet_with_an_unknown_unit_names_the_field():
    text = dumps(Worksheet("x = a", parameters=(Parameter("a", 2.0),))).replace(
        '"value": 2.0', '"value": 2.0, "unit": "mmm"')
    with pytest.raises(ValueError, match=r"parameter \"a\", unit: unknown unit 'mmm'"):
        loads(text)


def test_pipeline_solves_a_worksheet_with_units():
    ws = Worksheet(DARCY, unknown="D", unknown_unit="mm", parameters=(
        Parameter("hf", 4.5, "", "m"), Parameter("fD", 0.02), Parameter("L", 250, "", "m"),
        Parameter("Q", 35, "", "L/s"), Parameter("g", 9.80665, "", "m/s^2")))
    solution = pipeline.solve(ws.with_changes(settings=ws.settings.__class__(
        methods=("newton", "brent"), x0=150.0, bracket=(50.0, 500.0))))
    expected_mm = 1000 * _pipe_diameter_closed_form(0.02, 250.0, 0.035, 9.80665, 4.5)
    for run in solution.runs:
        assert run.converged and run.root == pytest.approx(expected_mm, rel=1e-12)


# ---------------------------------------------------------------- the command line


def test_cli_param_with_unit_json_and_csv_headers(capsys, tmp_path):
    out_csv = tmp_path / "log.csv"
    code = main(["solve", "Q = pi*D^2/4*v", "--unknown", "D", "--param", "Q=0.35 m^3/s",
                 "--param", "v=2 ft/s", "--unknown-unit", "in", "--x0", "20", "--method",
                 "newton", "--json", "--csv", str(out_csv)])
    out, err = capsys.readouterr()
    assert code == 0, err
    data = json.loads(out)
    assert data["unknown_unit"] == "in"
    assert data["parameter_units"]["v"] == {"value": 2.0, "unit": "ft/s",
                                            "si_value": pytest.approx(0.6096, rel=ULP),
                                            "si_unit": "m/s"}
    # D = sqrt(4Q/(pi v)) with v = 2 ft = 0.6096 m/s (NIST foot), in inches (25.4 mm)
    expected_in = math.sqrt(4 * 0.35 / (math.pi * 0.6096)) / 0.0254
    assert data["runs"][0]["root"] == pytest.approx(expected_in, rel=1e-14)
    lines = out_csv.read_text().splitlines()
    header = next(row for row in csv.reader(lines) if not row[0].startswith("#"))
    assert header[2] == "x [in]" and "dx [in]" in header
    assert "# unknown unit: in" in lines


def test_cli_scan_range_is_in_the_unknown_unit(capsys):
    code = main(["scan", "Q = pi*D^2/4*v", "--unknown", "D", "--param", "Q=0.35 m^3/s",
                 "--param", "v=2 m/s", "--unknown-unit", "mm", "--from", "10", "--to",
                 "1000", "--json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    data = json.loads(out)
    assert data["unknown_unit"] == "mm"
    expected_mm = 1000 * math.sqrt(4 * 0.35 / (math.pi * 2))  # algebra
    assert [r["x"] for r in data["roots"]] == [pytest.approx(expected_mm, rel=1e-12)]


def test_cli_no_dimension_check_is_printed(capsys, tmp_path):
    out_csv = tmp_path / "log.csv"
    code = main(["solve", "Q = k*D^2.63", "--unknown", "D", "--param", "Q=0.05 m^3/s",
                 "--param", "k=3.1", "--no-dimension-check", "--x0", "0.2", "--method",
                 "newton", "--csv", str(out_csv)])
    out, err = capsys.readouterr()
    assert code == 0, err
    assert "dimensions not checked" in out
    assert any(line.startswith("# dimensions: not checked")
               for line in out_csv.read_text().splitlines())


@pytest.mark.parametrize(("argv", "named"), [
    (["--param", "D=150 mmm"], "'mmm'"),
    (["--param", "D=150 m;ls"], "';'"),
    (["--param", "D=150 mm", "--unknown-unit", "furlong_per_x"], "furlong_per_x"),
    (["--param", "D=150 kg", "--unknown-unit", "m/s"], "'m/s' does not fit 'v'"),
])
def test_cli_bad_units_exit_2_with_one_line(capsys, argv, named):
    # (D once per run: a --param given twice is itself refused)
    code = main(["solve", "Q = pi*D^2/4*v", "--unknown", "v", "--param", "Q=0.35 m^3/s",
                 *argv])
    out, err = capsys.readouterr()
    assert code == 2
    assert len(err.strip().splitlines()) == 1 and named in err


def test_the_us_customary_sample_bore_matches_its_closed_form():
    from app.documents.worksheet import load

    ws = load(Path(__file__).resolve().parent.parent / "samples"
              / "cooling-line-bore-us-customary.json")
    solution = pipeline.solve(ws)
    # the sample's inputs converted by NIST SP 811's exact foot (0.3048 m) and US gallon
    # (3.785411784 L); D from the closed form above, in mm
    ft, gal = 0.3048, 3.785411784e-3
    expected_mm = 1000 * _pipe_diameter_closed_form(0.018, 800 * ft, 450 * gal / 60,
                                                    32.174 * ft, 15 * ft)
    assert solution.equation.unknown_unit == "mm"
    for run in solution.runs:
        assert run.converged and run.root == pytest.approx(expected_mm, rel=1e-13)


def test_the_calculation_sheet_gives_units_as_entered_and_in_si(capsys, tmp_path):
    import pypdf

    sample = (Path(__file__).resolve().parent.parent / "samples"
              / "cooling-line-bore-us-customary.json")
    pdf, folder = tmp_path / "bore.pdf", tmp_path / "csv"
    assert main(["report", str(sample), "--pdf", str(pdf), "--csv-dir", str(folder)]) == 0
    text = " ".join(page.extract_text() for page in pypdf.PdfReader(pdf).pages)
    assert "In SI units" in text and "gal/min" in text and "Root x [mm]" in text
    # 800 ft at NIST SP 811's 0.3048 m, to the 15 figures people read (the double the
    # conversion returns, 243.83999999999997 here, stays in the JSON)
    assert "243.84 m" in text and "243.83999999999997" not in text
    runs = next(folder.glob("*runs.csv")).read_text().splitlines()
    # f = hf - (...) is a head in m, and f' is per mm of the bore
    assert "method,k,x [mm],fx [m],dfx [m/mm],dx [mm],lo [mm],hi [mm]" in runs
    assert "# residual unit: m" in runs


def test_a_hidden_unit_shows_as_fractional_powers_and_is_said():
    # Manning with n typed as a bare number: the area comes out in m^(7/3)/s, which no
    # engineer means; the remark points at the constant (or the switch)
    eq = parse_equation(MANNING, unknown="A", parameters={
        "Q": "10 m^3/s", "n": 0.013, "R": "0.8 m", "S": 0.001})
    assert eq.unknown_unit == "m^(7/3)/s"
    assert any(r.code == "unknown_dimension_fractional" for r in eq.remarks)
    assert "hides its unit" in " ".join(words.remarks_text(eq.remarks))


# --- A wrong input unit named (found by a new-user trial) ----------------------------------
# Darcy-Weisbach: the head loss h is a length (h = f L/D v^2/(2g); common practice). Typed
# as a pressure, the bore D comes out in m^(7/5)*s^(2/5)/kg^(1/5) (D^5 ~ L^6/[h]).
_DARCY = "h = f*L/D*(4*Q/(pi*D^2))^2/(2*g)"
_DARCY_PARAMS = {"h": "3 psi", "L": "100 ft", "Q": "85 gal/min", "f": 0.021,
                 "g": "32.174 ft/s^2"}


def test_a_wrong_unit_on_the_unknown_is_named_not_the_inputs():
    """With every input right (h a head in ft) and the bore asked in psi, the equation
    makes D a plain length: the unit given for D is the slip, and no input is blamed (a
    review found L and g named, with absurd units)."""
    with pytest.raises(EquationError) as info:
        parse_equation(_DARCY, unknown="D", unknown_unit="psi",
                       parameters={**_DARCY_PARAMS, "h": "3 ft"})
    message = str(info.value)
    assert "the unknown unit 'psi' does not fit 'D'" in message and "makes it m," in message
    assert "check the unit given for 'D'" in message and "most likely" not in message


def test_a_unit_that_does_not_fit_names_the_input_most_likely_wrong():
    with pytest.raises(EquationError) as info:
        parse_equation(_DARCY, unknown="D", unknown_unit="mm", parameters=_DARCY_PARAMS)
    message = str(info.value)
    assert "the unknown unit 'mm' does not fit 'D'" in message
    # the pascal is kg/(m*s^2) (NIST SP 811, Table 3: Pa = N/m^2 = m^-1*kg*s^-2)
    assert ("most likely an input's unit is wrong: 'h' in 'psi' is a pressure (Pa); with "
            "'D' in 'mm' the equation needs 'h' as a length (m)") in message
    assert "'L'" not in message and "'g'" not in message  # they would need odd units
    # the control: h as a head in ft is what the equation needs, and it solves
    eq = parse_equation(_DARCY, unknown="D", unknown_unit="mm",
                        parameters={**_DARCY_PARAMS, "h": "3 ft"})
    assert eq.unknown_unit == "mm"


def test_a_fractional_unknown_dimension_names_the_suspect_input():
    eq = parse_equation(_DARCY, unknown="D", parameters=_DARCY_PARAMS)
    assert eq.unknown_unit == "m^(7/5)*s^(2/5)/kg^(1/5)"
    said = words.remarks_text(eq.remarks)
    assert [r.subject for r in eq.remarks if r.code == "unit_suspect"] == ["h"]
    assert ("most likely the unit of 'h' is wrong: it is a pressure (Pa); with the unknown "
            "as a length (m) the equation needs 'h' as a length (m)") in said


def test_a_hidden_constant_unit_blames_no_input():
    # Manning's n typed bare: only n's own (fractional) unit would fit, so no input is
    # blamed and the remark about hidden constants stands alone
    eq = parse_equation(MANNING, unknown="A", parameters={
        "Q": "10 m^3/s", "n": 0.013, "R": "0.8 m", "S": 0.001})
    assert not any(r.code == "unit_suspect" for r in eq.remarks)


def test_a_system_unit_that_does_not_fit_names_the_input(capsys):
    code = main(["solve", _DARCY + "; Q = v*pi*D^2/4", "--unknown", "D", "--unknown", "v",
                 *[a for n, v in _DARCY_PARAMS.items()
                   for a in ("--param", f"{n}={v}")],
                 "--x0", "D=50", "--x0", "v=1", "--unknown-unit", "D=mm"])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert "'h' in 'psi' is a pressure (Pa)" in err and "needs 'h' as a length (m)" in err


def test_a_kinematic_viscosity_for_a_dynamic_one_is_named():
    # Hagen-Poiseuille dp = 32 mu L v / D^2 needs mu in Pa*s (common practice); m^2/s is a
    # kinematic viscosity. L could also be "fixed" (kg/m^2) but that is the less likely unit.
    with pytest.raises(EquationError) as info:
        parse_equation("dp = 32*mu*L*v/D^2", unknown="D", unknown_unit="mm", parameters={
            "dp": "3 psi", "mu": "1.2 m^2/s", "L": "10 m", "v": "1 m/s"})
    message = str(info.value)
    assert ("'mu' in 'm^2/s' is a kinematic viscosity (m²/s); with 'D' in 'mm' the equation "
            "needs 'mu' as a dynamic viscosity (Pa·s)") in message
    assert "'L'" not in message and "'dp'" not in message


# SI derived units (SI Brochure, 9th ed., Table 4; NIST SP 811, Table 3): W = m^2*kg*s^-3,
# J = m^2*kg*s^-2, N = m*kg*s^-2, Pa = m^-1*kg*s^-2, V = W/A, ohm = V/A; the compositions
# are ones NIST SP 811 Table 4 lists (W/(m^2*K) heat transfer coefficient, J/(kg*K)
# specific heat, Pa*s dynamic viscosity, W/(m*K) thermal conductivity, N/m surface
# tension, W/m^2 heat flux) and common practice (W/m^3 a volumetric heat source, W/K a
# conductance UA); every other dimension stays in base units (a review found a search
# writing W/m^3 as "Pa/s" and a mass flux as "Pa*s/m").
@pytest.mark.parametrize(("typed", "base", "people"), [
    ("W/(m^2*K)", "kg/(s^3*K)", "W/(m^2*K)"),
    ("J/(kg*K)", "m^2/(s^2*K)", "J/(kg*K)"),
    ("Pa*s", "kg/(m*s)", "Pa*s"),
    ("W/(m*K)", "kg*m/(s^3*K)", "W/(m*K)"),
    ("N/m", "kg/s^2", "N/m"),
    ("J/kg", "m^2/s^2", "m^2/s^2"),  # also a velocity squared: left in base units
    ("N*s", "kg*m/s", "kg*m/s"),
    ("W/m^3", "kg/(m*s^3)", "W/m^3"),
    ("W/K", "kg*m^2/(s^3*K)", "W/K"),
    ("J/K", "kg*m^2/(s^2*K)", "J/K"),
    ("V", "kg*m^2/(s^3*A)", "V"),
    ("ohm", "kg*m^2/(s^3*A^2)", "ohm"),
    ("kg/(m^2*s)", "kg/(m^2*s)", "kg/(m^2*s)"),
    ("kg/(m^3*s)", "kg/(m^3*s)", "kg/(m^3*s)"),
    ("W/m^2", "kg/s^3", "W/m^2"),
    ("1/Pa", "m*s^2/kg", "1/Pa"),
    ("psi", "Pa", "Pa"),
    # no derived unit where it gains nothing or would bring kg into a kinematic quantity
    ("m/s^2", "m/s^2", "m/s^2"),
    ("kg*m^2", "kg*m^2", "kg*m^2"),
    ("kg/m^3", "kg/m^3", "kg/m^3"),
    ("m^2/s", "m^2/s", "m^2/s"),
    ("gal/min", "m^3/s", "m^3/s"),
])
def test_si_units_for_people_use_derived_units_where_simpler(typed, base, people):
    from solvers.units.si_text import unit_text

    unit = read_unit(typed)
    assert unit.si_text == base  # what files and JSON keep: base units, unchanged
    assert unit_text(unit.dimension, derived=True) == people


def test_si_equivalents_printed_for_people_use_derived_units(capsys, tmp_path):
    # 4.18 J/(g*K) = 4180 J/(kg*K) (SI prefix g = 10^-3 kg); 1.2 cP = 0.0012 Pa*s (NIST SP
    # 811, B.8: centipoise = 1.0 E-03 Pa*s)
    out_csv = tmp_path / "log.csv"
    code = main(["solve", "q = m*cp*dT + 0*mu", "--unknown", "dT", "--param", "q=10 kW",
                 "--param", "m=0.5 kg/s", "--param", "cp=4.18 J/(g*K)", "--param",
                 "mu=1.2 cP", "--x0", "1", "--method", "newton", "--json", "--csv",
                 str(out_csv)])
    out, err = capsys.readouterr()
    assert code == 0, err
    data = json.loads(out)
    assert data["parameter_units"]["cp"]["si_unit"] == "m^2/(s^2*K)"  # machine: base units
    code = main(["solve", "q = m*cp*dT + 0*mu", "--unknown", "dT", "--param", "q=10 kW",
                 "--param", "m=0.5 kg/s", "--param", "cp=4.18 J/(g*K)", "--param",
                 "mu=1.2 cP", "--x0", "1", "--method", "newton"])
    out, err = capsys.readouterr()
    assert code == 0, err
    assert "cp = 4.18 J/(g*K) (= 4180.0 J/(kg*K))" in out
    assert "mu = 1.2 cP (= 0.0012 Pa*s)" in out
    assert "q = 10.0 kW (= 10000.0 W)" in out


_UNIT_ALPHABET = "mskgKAlLnNPaJWhzµ°%ΩdegCF_0123456789 */^().-e"


@settings(max_examples=400, deadline=None,
          suppress_health_check=[HealthCheck.too_slow])
@given(st.text(alphabet=_UNIT_ALPHABET, max_size=60))
def test_any_unit_text_is_read_or_refused_in_one_line(text):
    # property: whatever the text, a Unit with a finite non-zero factor or an EquationError
    # with one line, never another exception and never a hang (the suite's timeout)
    try:
        unit = read_unit(text)
    except EquationError as err:
        assert "\n" not in str(err)
    else:
        assert math.isfinite(unit.factor) and unit.factor != 0.0
        assert all(abs(e) <= 12 for _n, e in unit.dimension)


def test_an_angle_unknown_in_degrees_and_a_value_unit_pair():
    eq = parse_equation("sin(x) = a/b", unknown_unit="deg",
                        parameters={"a": (np.array([1.0, 0.5]), "m"),
                                    "b": (np.array([200.0, 100.0]), "cm")})
    # sin x = 1 m / 2 m and 0.5 m / 1 m: x = 30 deg (exact trigonometry), in degrees
    root = newton(lambda x: eq.bind({"a": (1.0, "m"), "b": (2.0, "m")}).f(x), 20.0).root
    assert root == pytest.approx(30.0, rel=1e-14)
    np.testing.assert_allclose(eq.f(30.0), [0.0, 0.0], atol=1e-15)


@pytest.mark.parametrize("parameters, unit", [
    ({"L": "4 m"}, "m^(1/2)"),
    ({"L": "4 m", "t": "2 m^4"}, "m^(5/2)"),
])
def test_a_half_exponent_names_no_suspect_input(parameters, unit):
    """x^2 = L (times t): x in m^(1/2) or m^(5/2) is half-way between two whole exponents,
    so no 'meant' dimension can be guessed and no input is blamed (a review found m^(1/2)
    read as dimensionless by round-half-even); the fractional unit is still noted."""
    text = "x^2 = L" if "t" not in parameters else "x^2 = L*t"
    eq = parse_equation(text, unknown="x", parameters=parameters)
    codes = [r.code for r in eq.remarks]
    assert eq.unknown_unit == unit and "unknown_dimension_fractional" in codes
    assert "unit_suspect" not in codes


def test_si_equivalents_for_people_carry_no_conversion_noise(capsys):
    """15 ft = 4.572 m and 800 ft = 243.84 m exactly (international foot 0.3048 m, NIST SP
    811); the double nearest each product prints as 4.571999999999999 and
    243.83999999999997, which a checker would read as a conversion error. People see 15
    significant figures; the JSON keeps the double the solve used."""
    args = ["solve", "h = f*L/D*v^2/(2*g)", "--unknown", "D", "--param", "h=15 ft",
            "--param", "L=800 ft", "--param", "f=0.02", "--param", "v=2 m/s",
            "--param", "g=9.80665 m/s^2", "--x0", "1", "--method", "newton"]
    assert main(args) == 0
    out = capsys.readouterr().out
    assert "h = 15.0 ft (= 4.572 m)" in out and "L = 800.0 ft (= 243.84 m)" in out
    assert main([*args, "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    si = data["parameter_units"]["h"]["si_value"]  # the double the solve used, as pint gave it
    assert abs(si - 4.572) <= 4 * 2.2e-16 * 4.572  # within a few ulps of the exact 4.572


def test_a_unit_mismatch_blamed_on_the_unknown_also_names_the_input_whose_unit_would_fit():
    # An invented drum of gas by a two-constant cubic equation of state, the molar volume
    # v asked in L/mol, the co-volume b typed in cm^3 (per mole forgotten): `v - b` then
    # makes v a volume, and the message names b beside the unknown's unit.
    text = "p = R*T/(v - b) - a/v^2"
    values = {"p": "8 bar", "R": "8.314462618 J/(mol*K)", "T": "320 K",
              "a": "1.4 Pa*m^6/mol^2"}
    with pytest.raises(EquationError) as caught:
        parse_equation(text, unknown="v", unknown_unit="L/mol",
                       parameters={**values, "b": "60 cm^3"})
    message = str(caught.value)
    assert "check the unit given for 'v'" in message
    assert "'b' in 'cm^3' is a volume" in message and "needs 'b' in m³/mol" in message
    # with b per mole the equation reads: its largest root is the vapour's molar volume,
    # the largest real root of p v^3 - (p b + R T) v^2 + a v - a b = 0 (numpy.roots)
    eq = parse_equation(text, unknown="v", unknown_unit="L/mol",
                        parameters={**values, "b": "60 cm^3/mol"})
    p, RT, a, b = 8e5, sc.R * 320.0, 1.4, 60e-6  # R: CODATA via scipy.constants
    vapour = max(r.real for r in np.roots([p, -(p * b + RT), a, -a * b]) if abs(r.imag) < 1e-12)
    x = 1e3 * vapour  # in L/mol
    assert abs(eq.f(x)) <= 1e-9 * p
