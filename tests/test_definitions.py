"""Definitions: lines ``name = expression`` before the equation.

Outside references: scipy.optimize.brentq on an independent numpy version of the same
relation (the definitions written out by hand), and numpy for the defined values at the
root. The channel below is an invented scenario (numbers made up for the test); Manning's
formula Q = A R^(2/3) S^(1/2) / n in SI units is common practice.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import scipy.optimize

from solvers import EquationError, parse_equation, solve_system
from solvers.equation import free_names
from solvers.systems import parse_system

CHANNEL = """A = b*y
P = b + 2*y
R = A/P
Q = A*R^(2/3)*sqrt(S)/n"""
CHANNEL_VALUES = {"b": 2.5, "S": 0.0012, "n": 0.014, "Q": 4.2}  # invented channel


def _channel_numpy(y: float) -> float:
    b, s, n, q = 2.5, 0.0012, 0.014, 4.2
    area = b * y
    return q - area * (area / (b + 2 * y)) ** (2 / 3) * math.sqrt(s) / n


def test_definitions_reach_the_root_and_their_values():
    eq = parse_equation(CHANNEL, parameters=CHANNEL_VALUES)
    assert eq.unknown == "y"
    assert eq.definitions == ("A", "P", "R")
    # reference: brentq on the hand-written numpy version
    y_ref = scipy.optimize.brentq(_channel_numpy, 0.05, 5.0, xtol=1e-15)
    from solvers import brent
    run = brent(eq.f, 0.05, 5.0)
    assert run.converged and run.root == pytest.approx(y_ref, rel=1e-12)
    values = eq.definition_values(run.root)
    assert values["A"] == pytest.approx(2.5 * y_ref, rel=1e-12)
    assert values["P"] == pytest.approx(2.5 + 2 * y_ref, rel=1e-12)
    assert values["R"] == pytest.approx(2.5 * y_ref / (2.5 + 2 * y_ref), rel=1e-12)
    arrays = eq.definition_values(np.array([0.5, 1.0]))
    assert arrays["A"].shape == (2,) and arrays["A"][1] == pytest.approx(2.5)


def test_definitions_are_in_si_when_the_unknown_is_solved_in_another_unit():
    """The channel depth asked in millimetres: the root is in mm, the defined area,
    wetted perimeter and hydraulic radius in SI from the depth in metres (1 mm = 1e-3 m
    exactly, NIST SP 811); the same numbers as the solve in metres."""
    values = {k: (f"{v} m" if k == "b" else v) for k, v in CHANNEL_VALUES.items()}
    values["Q"] = "4.2 m^3/s"
    values["n"] = "0.014 s/m^(1/3)"  # Manning's n carries s/m^(1/3) in SI (common practice)
    eq = parse_equation(CHANNEL, parameters=values, unknown_unit="mm")
    y_ref = scipy.optimize.brentq(_channel_numpy, 0.05, 5.0, xtol=1e-15)  # metres
    from solvers import brent
    run = brent(eq.f, 50.0, 5000.0)
    assert run.converged and run.root == pytest.approx(1e3 * y_ref, rel=1e-12)
    at_root = eq.definition_values(run.root)
    assert at_root["A"] == pytest.approx(2.5 * y_ref, rel=1e-12)  # m^2, not mm*m
    assert at_root["P"] == pytest.approx(2.5 + 2 * y_ref, rel=1e-12)
    assert at_root["R"] == pytest.approx(2.5 * y_ref / (2.5 + 2 * y_ref), rel=1e-12)


def test_a_definition_with_the_unknown_is_differentiated_through():
    written_out = "Q = (b*y)*((b*y)/(b + 2*y))^(2/3)*sqrt(S)/n"
    eq = parse_equation(CHANNEL, parameters=CHANNEL_VALUES)
    ref = parse_equation(written_out, parameters=CHANNEL_VALUES)
    for y in (0.3, 0.9, 2.0):
        assert eq.f(y) == pytest.approx(ref.f(y), rel=1e-14)
        assert eq.fprime(y) == pytest.approx(ref.fprime(y), rel=1e-13)
        # the derivative against a central difference of the numpy version (common practice)
        h = 1e-6 * y
        fd = (_channel_numpy(y + h) - _channel_numpy(y - h)) / (2 * h)
        assert eq.fprime(y) == pytest.approx(fd, rel=1e-6)


def test_semicolons_and_line_breaks_give_the_same_equation():
    one = parse_equation("A = b*y; P = b + 2*y; R = A/P; Q = A*R^(2/3)*sqrt(S)/n",
                         parameters=CHANNEL_VALUES)
    two = parse_equation(CHANNEL, parameters=CHANNEL_VALUES)
    assert one.f(0.8) == two.f(0.8)
    assert one.definitions_latex == two.definitions_latex
    assert two.definitions_latex[0] == "A = b y"


@pytest.mark.parametrize("text, one_line", [
    ("1/sqrt(f) = -2*log10(eps/(3.7*D)\n  + 2.51/(Re*sqrt(f)))",
     "1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))"),
    ("42 - 8.5Q - 310Q^2\n  = Hs + ks*Q^1.85", "42 - 8.5Q - 310Q^2 = Hs + ks*Q^1.85"),
    ("Hs + ks*Q^1.85 = 42 - 8.5Q\n  - 310Q^2", "Hs + ks*Q^1.85 = 42 - 8.5Q - 310Q^2"),
    ("Hs + ks*Q^1.85 = 42 - 8.5Q -\n  310Q^2", "Hs + ks*Q^1.85 = 42 - 8.5Q - 310Q^2"),
    ("Hs = 42 - 8.5*Q*(1 +\nQ)\n*ks", "Hs = 42 - 8.5*Q*(1 + Q)*ks"),
    ("Hs = sqrt\n(Q) + ks", "Hs = sqrt(Q) + ks"),
])
def test_one_equation_over_several_lines_is_unchanged(text, one_line):
    values = {"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5, "Hs": 12.0, "ks": 950.0}
    a = parse_equation(text, parameters=values)
    b = parse_equation(one_line, parameters=values)
    assert a.definitions == ()
    assert a.unknown == b.unknown
    assert sp_equal(a.symbolic_expr, b.symbolic_expr)
    assert a.latex == b.latex


def sp_equal(a, b) -> bool:
    return (a - b).expand() == 0


@pytest.mark.parametrize("text, params, where, words", [
    ("v = Q/A\nA = pi*D^2/4\nh = v^2", {"D": 0.2, "h": 1.0}, "A\nA", "later line"),
    ("A = A*2\nh = A*Q", {"h": 1.0}, "A*2", "its own definition"),
    ("D = 0.3\nh = D*Q", {"D": 0.2, "h": 1.0}, "D = 0.3", "parameter"),
    ("pi = 3\nh = pi*Q", {"h": 1.0}, "pi = 3", "constant"),
    ("sin = 3\nh = sin*Q", {"h": 1.0}, "sin = 3", "function"),
    ("A = 1\nA = 2\nh = A*Q", {"h": 1.0}, "A = 2", "twice"),
    ("Q + 1 = 2; h = Q", {"h": 1.0}, "Q + 1", "define a name"),
    ("A = (1; 2)\nh = A*Q", {"h": 1.0}, "; 2)", "inside parentheses"),
    ("A = 2 = 3\nh = A*Q", {"h": 1.0}, "= 3", "second '='"),
])
def test_definition_errors_name_the_line(text, params, where, words):
    with pytest.raises(EquationError) as err:
        parse_equation(text, parameters=params)
    assert words in str(err.value)
    assert err.value.position is not None
    assert text[err.value.position:].startswith(where), (str(err.value), where)
    if "\n" in text:
        assert "line" in str(err.value)  # the position is given as line and column


def test_a_definition_of_the_unknown_is_refused():
    with pytest.raises(EquationError, match="is the unknown") as err:
        parse_equation("Q = 2*k\nh = Q*k", unknown="Q", parameters={"h": 1.0, "k": 2.0})
    assert err.value.position == 0


def test_free_names_leave_out_defined_names():
    assert free_names(CHANNEL) == ("b", "y", "Q", "S", "n")
    assert free_names("Re = rho*V*D/mu") == ("Re", "rho", "V", "D", "mu")


def test_a_definition_of_parameters_only_is_checked_when_bound():
    eq = parse_equation("r = sqrt(a - 1)\nx*r = 1", parameters={"a": 5.0})
    assert eq.f(0.5) == 0.0
    with pytest.raises(EquationError, match="no real value"):
        eq.bind({"a": 0.5})


def test_definitions_in_a_system_are_written_out():
    # an invented pair: two coupled relations with a shared intermediate quantity
    system = parse_system("s = x + y\nx*s = 6\ny*s = 3", unknowns=["x", "y"])
    assert system.definitions == ("s",)
    run = solve_system(system, {"x": 1.0, "y": 1.0})
    assert run.converged
    # by hand: s^2 = 9 so s = 3, x = 2, y = 1
    assert run.root["x"] == pytest.approx(2.0, rel=1e-14)
    assert run.root["y"] == pytest.approx(1.0, rel=1e-14)
    assert system.definition_values([2.0, 1.0]) == {"s": 3.0}


def test_the_calculation_sheet_shows_definitions_and_their_values(tmp_path, capsys):
    import json

    import pypdf

    from app.cli import main

    # an invented orifice: the head h that passes Q through it (v = sqrt(2 g h), by hand)
    sheet = {"format": "zerotrace-worksheet", "version": 1, "title": "Orifice head",
             "equation": "A = pi*d^2/4\nv = Q/(Cd*A)\nv^2 = 2*g*h", "unknown": "h",
             "parameters": [{"name": "d", "value": 0.05}, {"name": "Cd", "value": 0.62},
                            {"name": "Q", "value": 0.004}, {"name": "g", "value": 9.80665}],
             "settings": {"methods": ["newton"], "x0": 1.0}}
    path = tmp_path / "orifice.json"
    path.write_text(json.dumps(sheet))
    pdf = tmp_path / "orifice.pdf"
    assert main(["report", str(path), "--pdf", str(pdf)]) == 0
    text = " ".join(p.extract_text() for p in pypdf.PdfReader(pdf).pages)
    assert "Definitions" in text and "v = Q/(Cd*A)" in text
    v = 0.004 / (0.62 * math.pi * 0.05**2 / 4)
    assert "Definitions at each root" in text
    assert repr(v)[:12] in text


ORIFICE_US = {"d": "2 in", "Cd": 0.62, "Q": "60 gal/min", "g": "9.80665 m/s^2"}
ORIFICE = "A = pi*d^2/4\nv = Q/(Cd*A)\nRe = v*d/nu\nv^2 = 2*g*h"  # invented orifice


def test_defined_quantities_carry_their_si_units():
    """The orifice in US customary inputs: A in m^2, v in m/s, the Reynolds number
    dimensionless (SI base units; 1 in = 0.0254 m and 1 US gal = 3.785411784e-3 m^3
    exactly, NIST SP 811), the values those of the hand calculation in SI."""
    eq = parse_equation(ORIFICE, unknown="h",
                        parameters={**ORIFICE_US, "nu": "1.0e-6 m^2/s"}, unknown_unit="ft")
    assert eq.definition_units() == {"A": "m^2", "v": "m/s", "Re": ""}
    d, q = 2 * 0.0254, 60 * 3.785411784e-3 / 60
    h_m = (q / (0.62 * math.pi * d**2 / 4)) ** 2 / (2 * 9.80665)  # by hand, metres
    values = eq.definition_values(h_m / 0.3048)  # the unknown in feet, as f takes it
    assert values["A"] == pytest.approx(math.pi * d**2 / 4, rel=1e-12)
    assert values["v"] == pytest.approx(q / (0.62 * math.pi * d**2 / 4), rel=1e-12)
    assert values["Re"] == pytest.approx(values["v"] * d / 1.0e-6, rel=1e-12)
    # plain numbers: no unit can be claimed, none is printed
    plain = parse_equation(ORIFICE, unknown="h", parameters={
        "d": 0.05, "Cd": 0.62, "Q": 0.004, "g": 9.80665, "nu": 1e-6})
    assert plain.definition_units() == {}
    # the check switched off: the unknown's dimension is never worked out
    unchecked = parse_equation(ORIFICE, unknown="h", parameters={**ORIFICE_US, "nu": 1e-6},
                               check_dimensions=False)
    assert unchecked.definition_units() == {"A": None, "v": None, "Re": None}


def test_a_systems_defined_quantities_carry_their_si_units():
    """The two-line pump sample with flows in L/s: Q = Q1 + Q2 in m^3/s (1 L = 1e-3 m^3
    exactly, NIST SP 811), the pipe areas in m^2, the line constants in s^2/m^5."""
    from app.documents import worksheet
    from solvers.systems.pipeline import system_of

    root = Path(__file__).resolve().parents[1]
    ws = worksheet.load(root / "samples" / "systems" / "pump-two-parallel-lines-units.json")
    system = system_of(ws)
    assert system.definition_units() == {"Q": "m^3/s", "A1": "m^2", "A2": "m^2",
                                         "k1": "s^2/m^5", "k2": "s^2/m^5"}
    at = system.definition_values([50.0, 50.0, 40.0])  # Q1, Q2 in L/s, H in m
    assert at["Q"] == pytest.approx(0.1, rel=1e-14)


def test_the_terminal_and_json_give_definitions_with_their_units(capsys):
    import json

    from app.cli import main

    args = ["solve", ORIFICE, "--unknown", "h", "--unknown-unit", "ft", "--x0", "3",
            "--method", "newton", *(a for n, v in {**ORIFICE_US, "nu": "1.0e-6 m^2/s"}.items()
                                    for a in ("--param", f"{n}={v}"))]
    assert main(args) == 0
    out = capsys.readouterr().out
    line = next(t for t in out.splitlines() if "definitions at the root" in t)
    assert " m^2, v = " in line and " m/s, Re = " in line
    assert main([*args, "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["runs"][0]["definition_units"] == {"A": "m^2", "v": "m/s", "Re": ""}


@pytest.mark.parametrize("text, params, line", [
    ("A = B*2; B = 3; x*A = 1", {}, 1),
    ("A = 1; D = 2; x*D*A = 1", {"D": 1.0}, 2),
    ("A = 1; x*A = (1", {}, 2),
    ("A = 1; A = 2; x*A = 1", {}, 2),
])
def test_lines_separated_by_semicolons_are_numbered_in_messages(text, params, line):
    with pytest.raises(EquationError) as err:
        parse_equation(text, parameters=params)
    assert str(err.value).startswith(f"line {line}: ")
    assert err.value.position is not None


def test_a_fractional_unit_of_the_unknown_leaves_the_defined_units_unnamed(capsys):
    """Hazen-Williams in SI with C unitless (common practice: the empirical 0.278 carries
    units the text does not show): D comes out in m^1.14.../s^0.38..., which pint cannot
    read back; the defined area then has no unit to claim, and nothing raises (the solve
    once printed its results and then exited 2)."""
    from app.cli import main

    text = "A = pi*D^2/4; Q = 0.278*C*D^2.63*S^0.54"
    eq = parse_equation(text, unknown="D", parameters={"Q": "2 m^3/s", "C": 130, "S": 0.001})
    assert eq.definition_units() == {"A": None}
    d = (2 / (0.278 * 130 * 0.001**0.54)) ** (1 / 2.63)  # by hand
    assert eq.definition_values(d)["A"] == pytest.approx(math.pi * d**2 / 4, rel=1e-12)
    assert main(["solve", text, "--unknown", "D", "--param", "Q=2 m^3/s", "--param", "C=130",
                 "--param", "S=0.001", "--x0", "1", "--method", "newton"]) == 0
    assert "definitions at the root: A = 1.48308940" in capsys.readouterr().out


def test_defined_units_for_people_use_derived_units_and_files_keep_base_units():
    """A heat duty defined as U*A*dT: W for people (W = m^2*kg*s^-3, SI Brochure Table 4),
    kg*m^2/s^3 in files, as every other SI unit the outputs write."""
    eq = parse_equation("q = U*A*dT\nq = m*cp*x", unknown="x",
                        parameters={"U": "500 W/(m^2*K)", "A": "2 m^2", "dT": "10 K",
                                    "m": "0.5 kg/s", "cp": "4180 J/(kg*K)"})
    assert eq.definition_units(derived=True) == {"q": "W"}
    assert eq.definition_units() == {"q": "W"}  # a named unit is the same in files
    heat = parse_equation("h = q/(A*dT)\nh = x", unknown="x",
                          parameters={"q": "10 kW", "A": "2 m^2", "dT": "10 K"})
    assert heat.definition_units(derived=True) == {"h": "W/(m^2*K)"}
    assert heat.definition_units() == {"h": "kg/(s^3*K)"}
    assert heat.definition_values(500.0)["h"] == pytest.approx(500.0, rel=1e-15)


def test_the_solve_csv_carries_the_definitions_at_the_root(tmp_path, capsys):
    # Invented pipe: Darcy-Weisbach written in three lines. Closed form (hand algebra):
    # hf = f L/D v^2/(2g), v = 4Q/(pi D^2)  =>  D^5 = 8 f L Q^2 / (pi^2 g hf).
    import csv

    from app.cli import main

    log = tmp_path / "pipe.csv"
    code = main(["solve", "A = pi*D^2/4; v = Q/A; hf = f*L/D*v^2/(2*g)", "--unknown", "D",
                 "--unknown-unit", "mm", "--param", "Q=20 L/s", "--param", "f=0.02",
                 "--param", "L=300 m", "--param", "g=9.80665 m/s^2", "--param", "hf=5 m",
                 "--x0", "100", "--method", "newton", "--csv", str(log)])
    capsys.readouterr()
    assert code == 0
    d = (8 * 0.02 * 300 * 0.020**2 / (math.pi**2 * 9.80665 * 5.0)) ** 0.2  # m
    lines = [row[0] for row in csv.reader(log.read_text().splitlines()) if row]
    line = next(x for x in lines if x.startswith("# definitions at newton's root:"))
    values = dict(part.split(" = ") for part in line.split(": ", 1)[1].split("; "))
    area, unit = values["A"].split()
    assert unit == "m^2" and float(area) == pytest.approx(math.pi * d**2 / 4, rel=1e-12)
    speed, unit = values["v"].split()
    assert unit == "m/s" and float(speed) == pytest.approx(0.020 / (math.pi * d**2 / 4),
                                                          rel=1e-12)


def test_an_equation_whose_every_name_is_defined_above_says_which_definition_took_the_unknown():
    with pytest.raises(EquationError) as caught:
        parse_equation("x = 1; x = 2")
    message = str(caught.value)
    assert "'x = 2' has no unknown left" in message and "'x' is defined above" in message
    assert caught.value.position == 7  # the equation's line starts there
    # an equation with no names at all, and no definition to blame, keeps the plain words
    with pytest.raises(EquationError, match="contains no names"):
        parse_equation("A = 2; 3 = 4")


def test_methods_whose_definitions_read_alike_share_one_line(capsys):
    # Re = rho v D / mu = 998 * 2 * 0.1 / 1e-3 = 199600 (arithmetic) whatever f is: the
    # methods that converge print it once, together
    from app.cli import main

    assert main(["solve", "Re = rho*v*D/mu; 1/sqrt(f) = -2*log10(2.51/(Re*sqrt(f)))",
                 "--param", "rho=998", "--param", "v=2", "--param", "D=0.1",
                 "--param", "mu=1e-3", "--unknown", "f", "--x0", "0.02",
                 "--method", "newton", "--method", "secant"]) == 0
    lines = [x for x in capsys.readouterr().out.splitlines() if "definitions at" in x]
    assert lines == ["Newton–Raphson and secant, definitions at the root: Re = 199600"]
