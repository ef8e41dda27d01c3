"""Units in systems of equations: parameters with units converted once to SI, every line
dimensionally checked by the one checker, each unknown in its own unit.

Scenario (invented for these tests, numbers made up): a pump lifts water from a sump into a
header; the header feeds two branch lines to two tanks at different levels. Unknowns: the
two branch flows Q1, Q2 and the head Hj at the header. Pump curve Hj = z0 + H0 - a*Q^2,
Darcy-Weisbach losses with a fixed friction factor in each branch.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy.optimize import root as scipy_root

from solvers.equation import EquationError
from solvers.systems import parse_system, solve_system
from solvers.units import Measured

# NIST SP 811 (appendix B): exact conversion factors
FOOT = 0.3048  # m
INCH = 0.0254  # m
US_GALLON = 3.785411784e-3  # m^3
STANDARD_GRAVITY = 9.80665  # m/s^2 (NIST SP 811, also scipy.constants.g)
GPM = US_GALLON / 60.0  # m^3/s per US gallon per minute

TEXT = """Q = Q1 + Q2
v1 = Q1/(pi*D1^2/4)
v2 = Q2/(pi*D2^2/4)
Hj = z0 + H0 - a*Q^2
Hj - z1 = f*L1/D1*v1^2/(2*g)
Hj - z2 = f*L2/D2*v2^2/(2*g)"""
UNKNOWNS = ["Q1", "Q2", "Hj"]

# the scenario in SI (invented numbers)
SI = {"z0": 2.0, "z1": 25.0, "z2": 18.0, "H0": 40.0, "a": 4000.0, "f": 0.02,
      "L1": 300.0, "L2": 450.0, "D1": 0.15, "D2": 0.125, "g": STANDARD_GRAVITY}


def si_parameters() -> dict:
    units = {"z0": "m", "z1": "m", "z2": "m", "H0": "m", "a": "s^2/m^5", "L1": "m",
             "L2": "m", "D1": "m", "D2": "m", "g": "m/s^2"}
    return {k: (f"{v!r} {units[k]}" if k in units else v) for k, v in SI.items()}


def us_parameters() -> dict:
    """The same scenario in US customary units, converted by the NIST SP 811 factors."""
    ft = {k: SI[k] / FOOT for k in ("z0", "z1", "z2", "H0", "L1", "L2")}
    out: dict = {k: f"{v!r} ft" for k, v in ft.items()}
    out["D1"] = Measured(SI["D1"] / INCH, "in")
    out["D2"] = (SI["D2"] / INCH, "inch")  # a pair (value, unit) is read too
    out["a"] = f"{SI['a'] * GPM ** 2 / FOOT!r} ft/(gal/min)^2"
    out["g"] = f"{STANDARD_GRAVITY / FOOT!r} ft/s^2"
    out["f"] = SI["f"]
    return out


def reference_root() -> np.ndarray:
    """scipy.optimize.root (MINPACK hybrd) on an independent numpy version, in SI."""
    p = SI

    def F(x):
        q1, q2, hj = x
        v1 = q1 / (math.pi * p["D1"] ** 2 / 4)
        v2 = q2 / (math.pi * p["D2"] ** 2 / 4)
        return [hj - (p["z0"] + p["H0"] - p["a"] * (q1 + q2) ** 2),
                hj - p["z1"] - p["f"] * p["L1"] / p["D1"] * v1 ** 2 / (2 * p["g"]),
                hj - p["z2"] - p["f"] * p["L2"] / p["D2"] * v2 ** 2 / (2 * p["g"])]

    sol = scipy_root(F, [0.02, 0.02, 30.0], method="hybr", tol=1e-14)
    assert sol.success
    return sol.x


def test_si_root_matches_scipy_and_units_are_inferred():
    system = parse_system(TEXT, UNKNOWNS, si_parameters())
    # inferred from the equations jointly: Hj from the pump line, Q1 and Q2 from v1, v2
    assert system.unknown_units == {"Q1": "m^3/s", "Q2": "m^3/s", "Hj": "m"}
    assert system.remarks == ()
    run = solve_system(system, {"Q1": 0.02, "Q2": 0.02, "Hj": 30.0})
    assert run.converged
    ref = reference_root()  # scipy.optimize.root, independent equations
    got = np.array([run.root[n] for n in UNKNOWNS])
    np.testing.assert_allclose(got, ref, rtol=1e-10)


def test_us_customary_gives_the_same_physical_root():
    units = {"Q1": "gal/min", "Q2": "gal/min", "Hj": "ft"}
    system = parse_system(TEXT, UNKNOWNS, us_parameters(), unknown_units=units)
    assert system.unknown_units == units
    start = {"Q1": 0.02 / GPM, "Q2": 0.02 / GPM, "Hj": 30.0 / FOOT}
    run = solve_system(system, start)
    assert run.converged
    # back to SI by the NIST SP 811 factors, compared with scipy's root of the SI equations
    got = np.array([run.root["Q1"] * GPM, run.root["Q2"] * GPM, run.root["Hj"] * FOOT])
    np.testing.assert_allclose(got, reference_root(), rtol=1e-9)
    # the SI solve agrees too, and start values in the units were read in those units
    si_run = solve_system(parse_system(TEXT, UNKNOWNS, si_parameters()),
                          {n: start[n] * f for n, f in zip(UNKNOWNS, (GPM, GPM, FOOT),
                                                           strict=True)})
    np.testing.assert_allclose(got, [si_run.root[n] for n in UNKNOWNS], rtol=1e-9)


def test_the_jacobian_is_in_the_unknowns_units():
    """J in the chosen units is the SI Jacobian times each unit's factor (chain rule),
    checked against central differences of F (numpy, common practice)."""
    units = {"Q1": "L/s", "Q2": "L/s", "Hj": "ft"}
    system = parse_system(TEXT, UNKNOWNS, si_parameters(), unknown_units=units)
    x = np.array([20.0, 15.0, 90.0])
    jac = system.J(x)
    h = 1e-6 * np.maximum(np.abs(x), 1.0)
    numeric = np.column_stack([(system.F(x + h[j] * e) - system.F(x - h[j] * e)) / (2 * h[j])
                               for j, e in enumerate(np.eye(3))])
    np.testing.assert_allclose(jac, numeric, rtol=1e-6, atol=1e-9)


def test_a_dimensionally_wrong_system_is_refused_naming_the_line_and_part():
    wrong = TEXT.replace("v2^2/(2*g)", "v2^2/2")  # the 1/g dropped in branch 2
    with pytest.raises(EquationError) as info:
        parse_system(wrong, UNKNOWNS, si_parameters())
    message = str(info.value)
    assert "Hj - z2 = f*L2/D2*v2^2/2" in message  # the part as typed
    assert "the left side is m" in message and "m²/s²" in message  # the two dimensions
    assert "line 6" in message  # the line it stands on
    assert info.value.position == TEXT.index("Hj - z2")


def test_a_dimensionless_argument_is_checked_in_a_definition_too():
    text = "w = exp(L1)\nx + y = L1*w\nx - y = L2"
    with pytest.raises(EquationError, match=r"`exp\(L1\)`: the argument of exp must be "
                                            r"dimensionless, not m"):
        parse_system(text, ["x", "y"], {"L1": "3 m", "L2": "1 m"})


def test_an_unknown_unit_that_does_not_fit_is_refused():
    with pytest.raises(EquationError, match=r"the unknown unit 'gal/min' does not fit 'Hj'"):
        parse_system(TEXT, UNKNOWNS, si_parameters(), unknown_units={"Hj": "gal/min"})
    with pytest.raises(EquationError, match=r"names 'P', which is not an unknown"):
        parse_system(TEXT, UNKNOWNS, si_parameters(), unknown_units={"P": "m"})
    with pytest.raises(EquationError, match=r"unknown unit 'fathum'"):
        parse_system(TEXT, UNKNOWNS, si_parameters(), unknown_units={"Hj": "fathum"})


def test_dimensions_are_solved_jointly_and_an_open_one_is_dimensionless():
    # x + y = L and x - y = L/3: no single line fixes x alone, the two together do
    system = parse_system("x + y = L; x - y = L/3", None, {"L": "1 km"})
    assert system.unknown_units == {"x": "m", "y": "m"}
    run = solve_system(system, {"x": 1.0, "y": 1.0})
    # x = 2L/3, y = L/3 with L = 1000 m (exact arithmetic)
    assert run.root["x"] == pytest.approx(2000 / 3, rel=1e-12)
    assert run.root["y"] == pytest.approx(1000 / 3, rel=1e-12)
    # u and v appear only as their product: their dimensions are left open
    open_system = parse_system("x = L; u*v = 2; x*u*v = L + x", ["x", "u", "v"],
                               {"L": "2 m"})
    assert open_system.unknown_units == {"x": "m", "u": None, "v": None}
    assert {(r.code, r.subject) for r in open_system.remarks} == {
        ("system_dimension_free", "u"), ("system_dimension_free", "v")}


def test_the_check_can_be_switched_off_and_says_so():
    wrong = TEXT.replace("v2^2/(2*g)", "v2^2/2")
    system = parse_system(wrong, UNKNOWNS, si_parameters(), check_dimensions=False)
    assert [r.code for r in system.remarks] == ["dimensions_unchecked"]
    assert system.check_dimensions is False


def test_plain_numbers_behave_as_before():
    plain = parse_system(TEXT, UNKNOWNS, SI)
    assert plain.unknown_units == {"Q1": None, "Q2": None, "Hj": None}
    assert plain.remarks == () and plain.parameter_units == {}
    with_units = parse_system(TEXT, UNKNOWNS, si_parameters())
    x = [0.03, 0.02, 31.0]
    np.testing.assert_allclose(plain.F(x), with_units.F(x), rtol=1e-15)
    # no units, no check: a plain system is never refused for dimensions
    assert parse_system("x + y^2 = 1; x - y = 0").unknowns == ("x", "y")


def _cli(capsys, *argv):
    from app.cli import main

    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def _cli_args(*extra):
    params = [a for k, v in si_parameters().items()
              for a in ("--param", f"{k}={v}")]
    return ["solve", TEXT, *(a for n in UNKNOWNS for a in ("--unknown", n)), *params,
            "--x0", "Q1=20", "--x0", "Q2=20", "--x0", "Hj=100",
            "--unknown-unit", "Q1=L/s", "--unknown-unit", "Q2=L/s",
            "--unknown-unit", "Hj=ft", *extra]


def test_cli_json_has_unknown_units_and_the_root_in_them(capsys):
    code, out, err = _cli(capsys, *_cli_args("--json"))
    assert code == 0, err
    data = json.loads(out)
    assert data["unknown_units"] == {"Q1": "L/s", "Q2": "L/s", "Hj": "ft"}
    assert data["dimension_check"] is True
    assert data["parameter_units"]["D1"]["si_unit"] == "m"
    ref = reference_root()  # scipy.optimize.root in SI; L/s and ft by NIST SP 811
    root = data["runs"][0]["root"]
    np.testing.assert_allclose([root["Q1"] / 1000, root["Q2"] / 1000, root["Hj"] * FOOT],
                               ref, rtol=1e-9)


def test_cli_csv_headers_carry_units_and_the_switch_is_stated(capsys, tmp_path):
    path = tmp_path / "log.csv"
    code, out, err = _cli(capsys, *_cli_args("--csv", str(path), "--no-dimension-check"))
    assert code == 0, err
    lines = path.read_text().splitlines()
    header = next(line for line in lines if line.startswith("method,"))
    assert "Q1 [L/s]" in header and "Hj [ft]" in header
    assert any(line.startswith("# dimensions: not checked") for line in lines)
    code, out, err = _cli(capsys, *_cli_args("--json", "--no-dimension-check"))
    assert json.loads(out)["dimension_check"] is False


def test_cli_refuses_a_unit_that_does_not_fit_in_one_line(capsys):
    code, out, err = _cli(capsys, *_cli_args()[:-2], "--unknown-unit", "Hj=L/s")
    assert code == 2 and "does not fit 'Hj'" in err
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err


def test_a_worksheet_keeps_each_unknowns_unit():
    from app.documents.worksheet import FORMAT, VERSION, dumps, loads

    code_text = json.dumps({"format": FORMAT, "version": VERSION,
                            "equation": "x + y = L; x - y = L/3",
                            "parameters": [{"name": "L", "value": 1.0, "unit": "km"}],
                            "system": {"unknowns": [{"name": "x", "x0": 100, "unit": "ft"},
                                                    {"name": "y", "x0": 100}]}})
    ws = loads(code_text)
    assert ws.system.units() == {"x": "ft"}
    again = loads(dumps(ws))
    assert again.system == ws.system
    from solvers.systems.pipeline import solve_worksheet

    solution = solve_worksheet(ws)
    run = solution.runs[0]
    # x = 2/3 km in feet (NIST SP 811: 1 ft = 0.3048 m)
    assert run.root["x"] == pytest.approx(2000 / 3 / FOOT, rel=1e-12)
    assert solution.system.unknown_units == {"x": "ft", "y": "m"}


def test_the_sample_with_units_has_the_roots_of_the_si_sample(tmp_path, capsys):
    from pathlib import Path

    import pypdf

    from app.documents import worksheet
    from solvers.systems.pipeline import solve_worksheet

    samples = Path(__file__).resolve().parent.parent / "samples" / "systems"
    si = solve_worksheet(worksheet.load(samples / "pump-two-parallel-lines.json"))
    ws = worksheet.load(samples / "pump-two-parallel-lines-units.json")
    assert "invented" in ws.notes
    with_units = solve_worksheet(ws)
    assert with_units.system.unknown_units == {"Q1": "L/s", "Q2": "L/s", "H": "m"}
    for a, b in zip(si.runs, with_units.runs, strict=True):
        # 1 L = 1e-3 m^3 (NIST SP 811, exact)
        assert b.root["Q1"] == pytest.approx(a.root["Q1"] * 1000, rel=1e-12)
        assert b.root["Q2"] == pytest.approx(a.root["Q2"] * 1000, rel=1e-12)
        assert b.root["H"] == pytest.approx(a.root["H"], rel=1e-12)
    from app.cli import main

    pdf = tmp_path / "units.pdf"
    assert main(["report", str(samples / "pump-two-parallel-lines-units.json"),
                 "--pdf", str(pdf)]) == 0
    capsys.readouterr()
    text = " ".join(" ".join(p.extract_text() for p in pypdf.PdfReader(pdf).pages).split())
    for said in ("Q1 [L/s]", "H [m]", "150.0 mm (= 0.15 m)", "52.0 m pump", "checked: both sides"):
        assert said in text, said


def test_chosen_units_settle_the_unknowns_they_are_tied_to():
    # x - y = 0 ties y's dimension to x's; x's chosen unit settles both (no open remark)
    text = "x - y = 0; x*w = 2*y*w; w = 2"
    system = parse_system(text, ["x", "y", "w"], unknown_units={"x": "m"})
    assert system.unknown_units == {"x": "m", "y": "m", "w": None}
    assert system.remarks == ()
    with pytest.raises(EquationError, match=r"`x - y`: m added to s"):
        parse_system(text, ["x", "y", "w"], unknown_units={"x": "m", "y": "s"})


def test_an_equation_equal_to_zero_fits_any_dimension():
    # '= 0' is dimensionless as typed, yet fits a side of any dimension (common practice)
    system = parse_system("x - L = 0; y - x/2 = 0", None, {"L": "3 m"})
    assert system.unknown_units == {"x": "m", "y": "m"}
    from solvers import parse_equation

    assert parse_equation("x - L = 0", "x", {"L": "1 m"}).unknown_unit == "m"
