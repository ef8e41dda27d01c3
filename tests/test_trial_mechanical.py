"""A mechanical engineer's first trial of zerotrace: each finding pinned (numbered as in
the trial's list).

Scenarios are invented for this trial: the first forward critical speed of an overhung fan
disc on a shaft stub (gyroscopic stiffening, the speed in rpm), a column on a base plate
acting as a rotational spring (stiffness in kN*m/rad), a tip-mass sensor boom in Hz. The
numbers are checked against outside references named beside each check: unit factors
from NIST SP 811 (1 rpm = 1.047198E-01 rad/s, 1 ft*lbf = 1.355818 J), the disc's
frequency equation, a quadratic in w^2, by numpy.roots; the column's eigen-equation by
scipy.optimize.brentq and its poles by the closed form P = (n pi)^2 E I / L^2.
"""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import numpy as np
import pytest

from app.cli import main
from app.documents import words
from solvers.equation import parse_equation
from solvers.systems import parse_system

# the overhung disc: flexibility coefficients of a cantilevered stub of overhang a (common
# practice, from memory: a^3/3EI, a^2/2EI, a/EI), J = Ip - Id, forward synchronous whirl
DISC = ("a11 = a^3/(3*E*I); a12 = a^2/(2*E*I); a22 = a/(E*I); w = {w}; "
        "(1 - a11*m*w^2)*(1 + a22*J*w^2) + a12^2*m*J*w^4 = 0")
DISC_VALUES = {"a": "320 mm", "E": "207 GPa", "I": "125660 mm^4", "m": "18.5 kg",
               "J": "0.0925 kg*m^2"}
DISC_PARAMS = [arg for n, v in DISC_VALUES.items() for arg in ("--param", f"{n}={v}")]
RPM = 1.047198e-01  # rad/s per rpm, NIST SP 811 (B.9, revolution per minute)


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def disc_critical_rad_s() -> float:
    """The positive root w of the disc's frequency equation, by numpy.roots on its
    quadratic in w^2: 1 + (a22 J - a11 m) w^2 + (a12^2 - a11 a22) m J w^4 = 0."""
    a, E, Ia, m, J = 0.32, 207e9, 125660e-12, 18.5, 0.0925
    a11, a12, a22 = a ** 3 / (3 * E * Ia), a ** 2 / (2 * E * Ia), a / (E * Ia)
    squares = np.roots([(a12 ** 2 - a11 * a22) * m * J, a22 * J - a11 * m, 1.0])
    return math.sqrt(max(s.real for s in squares if s.real > 0))


def codes(remarks) -> list[str]:
    return [r.code for r in remarks]


# 1. A confident wrong answer: with the unknown in rpm, the formula an engineer writes for
#    the number of revolutions, w = 2*pi*N/60, converted N a second time (rpm is 2*pi/60
#    rad/s already) and the solve reported 34,594 rpm where 3,623 rpm is the critical
#    speed, with no word on any output. The product with pi is now remarked on every
#    document; the note on any value in rpm says what the equation sees.

def test_1_rpm_times_pi_is_remarked_on_every_output(capsys, tmp_path):
    code, out, _ = run(capsys, "solve", DISC.format(w="2*pi*N/60"), *DISC_PARAMS,
                       "--unknown", "N", "--unknown-unit", "rpm", "--x0", "3000",
                       "--method", "newton")
    assert code == 0
    assert "'N' is given in a unit that counts turns" in out
    assert "2*pi*N/60" in out and "converts it a second time" in out
    # the number it reports is the double conversion's: 60/(2 pi) times the numpy.roots
    # critical speed in rpm (NIST SP 811's factor), which is why the note is needed
    wrong = disc_critical_rad_s() / RPM * 60 / (2 * math.pi)
    root = float(re.search(r"Newton–Raphson\s+([0-9.]+)", out).group(1))
    assert root == pytest.approx(wrong, rel=1e-5)
    code, out, _ = run(capsys, "solve", DISC.format(w="2*pi*N/60"), *DISC_PARAMS,
                       "--unknown", "N", "--unknown-unit", "rpm", "--x0", "3000",
                       "--method", "newton", "--json")
    notes = json.loads(out)["unit_notes"]
    assert any("converts it a second time" in n for n in notes)
    csv_path = tmp_path / "disc.csv"
    run(capsys, "solve", DISC.format(w="2*pi*N/60"), *DISC_PARAMS, "--unknown", "N",
        "--unknown-unit", "rpm", "--x0", "3000", "--method", "newton", "--csv", str(csv_path))
    assert any(line.lstrip('"').startswith("# units: 'N' is given in a unit that counts")
               for line in csv_path.read_text(encoding="utf-8").splitlines())


def test_1_rpm_written_as_the_angular_speed_is_right_and_said_so(capsys):
    eq = parse_equation(DISC.format(w="N"), unknown="N", parameters=DISC_VALUES,
                        unknown_unit="rpm")
    assert codes(eq.remarks).count("turn_units") == 1
    assert "turns_times_pi" not in codes(eq.remarks)
    text = words.remark_text(next(r for r in eq.remarks if r.code == "turn_units"))
    assert "rad/s" in text and "Hz is 1/s" in text
    code, out, _ = run(capsys, "solve", DISC.format(w="N"), *DISC_PARAMS,
                       "--unknown", "N", "--unknown-unit", "rpm", "--x0", "3000",
                       "--method", "newton", "--method", "brent", "--bracket", "500", "20000",
                       "--json")
    runs = json.loads(out)["runs"]
    expected = disc_critical_rad_s() / RPM  # numpy.roots, NIST SP 811
    for r in runs:
        assert r["converged"] and r["root"] == pytest.approx(expected, rel=1e-6)


@pytest.mark.parametrize("text, name, unit", [
    ("v = pi*D*n", "n", "rpm"),  # a peripheral speed written for revolutions
    ("t = 60/(2*pi*n)", "n", "rev/min"),  # the period of one turn
    ("w^2 = (2*pi*n)^2", "n", "rev/s"),
])
def test_1_products_with_pi_of_a_turn_unit_are_named(text, name, unit):
    values = {"D": "250 mm", "v": "3 m/s", "t": "2 s", "w": "4 rad/s", name: f"10 {unit}"}
    unknown = text.split(" =")[0].strip("^2")
    used = {k: v for k, v in values.items() if k in text and k != unknown}
    eq = parse_equation(text, unknown=unknown, parameters=used)
    assert ("turns_times_pi", name) in [(r.code, r.subject) for r in eq.remarks]


def test_1_frequency_in_hz_with_two_pi_is_not_remarked():
    # Hz is 1/s (NIST SP 811: no 2 pi), so w = 2*pi*f is right and says nothing
    eq = parse_equation(DISC.format(w="2*pi*f"), unknown="f", parameters=DISC_VALUES,
                        unknown_unit="Hz")
    assert not {"turn_units", "turns_times_pi"} & set(codes(eq.remarks))


def test_1_a_system_with_a_speed_in_rpm_is_remarked_too():
    system = parse_system("w = 2*pi*N/60; T*w = P; T = k*N", unknowns=["T", "N"],
                          parameters={"P": "15 kW", "k": "0.02 N*m*s"},
                          unknown_units={"N": "rpm"})
    assert ("turns_times_pi", "N") in [(r.code, r.subject) for r in system.remarks]


# 2. Words: a rotational stiffness typed in kN*m/rad was shown in SI as "J", and a speed
#    in rpm as "1/s"; the radian is kept (N*m/rad, rad/s) with the value of NIST SP 811's
#    factors. rev/min, as shaft speeds are written, was unknown ("did you mean 'rhe'?").

@pytest.mark.parametrize("typed, si_text, factor", [
    ("rpm", "rad/s", RPM),
    ("rev/min", "rad/s", RPM),
    ("kN*m/rad", "N*m/rad", 1000.0),
    ("lbf*ft/deg", "N*m/rad", 1.355818 * 180 / math.pi),  # NIST SP 811: ft*lbf in J
])
def test_2_si_text_keeps_the_radian(typed, si_text, factor):
    from solvers.units import convert_parameters

    _values, converted = convert_parameters({"c": f"30 {typed}"})
    c = converted["c"]
    assert words.si_unit_text(c) == si_text
    assert c.si_value == pytest.approx(30 * factor, rel=1e-6)
    assert words.si_measure_text(c).endswith(f" {si_text}")





# 3. Missing unit: a scan's poles, jumps and gaps were printed as bare numbers under a
#    roots table headed in the unknown's unit (a column's buckling load in kN with the
#    poles of its tan-type eigen-equation at "3254.6").

COLUMN = "lam = L*sqrt(P/(E*I)); R = c*L/(E*I); lam^2 + R*(1 - lam/tan(lam)) = 0"
COLUMN_PARAMS = ("--param", "L=4.2 m", "--param", "E=210 GPa", "--param", "I=2770 cm^4",
                 "--param", "c=1800 kN*m/rad")


def column_roots_kN(count: int) -> list[float]:
    """The buckling loads of a column pinned at the top on a rotational spring c at the
    base (lam^2 sin lam + R (sin lam - lam cos lam) = 0, derived by hand for this trial
    from w'''' + k^2 w'' = 0; R = cL/EI), by scipy.optimize.brentq between the poles."""
    import scipy.optimize

    L, E, Ic, c = 4.2, 210e9, 2770e-8, 1800e3
    R = c * L / (E * Ic)

    def g(lam: float) -> float:
        return lam ** 2 * math.sin(lam) + R * (math.sin(lam) - lam * math.cos(lam))

    lams = [scipy.optimize.brentq(g, n * math.pi + 1e-9, (n + 1) * math.pi - 1e-9,
                                  xtol=1e-15) for n in range(1, count + 1)]
    return [lam ** 2 * E * Ic / L ** 2 / 1e3 for lam in lams]


def test_3_a_scan_names_the_unit_of_its_poles(capsys):
    code, out, _ = run(capsys, "scan", COLUMN, *COLUMN_PARAMS, "--unknown", "P",
                       "--unknown-unit", "kN", "--from", "1", "--to", "40000")
    assert code == 0
    lines = [line for line in out.splitlines() if line.startswith("pole (not a root)")]
    # the poles of cot: P = (n pi)^2 E I / L^2 (closed form), n = 1, 2, 3
    E, Ic, L = 210e9, 2770e-8, 4.2
    assert len(lines) == 3
    for n, line in enumerate(lines, start=1):
        assert line.endswith(" kN")
        value = float(line.split("= ")[1].split()[0])
        assert value == pytest.approx((n * math.pi) ** 2 * E * Ic / L ** 2 / 1e3, rel=1e-6)
    roots = [float(m) for m in re.findall(r"^\d\s+([0-9.]+)", out, flags=re.M)]
    assert roots == pytest.approx(column_roots_kN(3), rel=1e-10)


# 4. Layout: a system of twelve definitions and three equations (a three-pipe loop) had its
#    typeset lines in one table cell, which cannot break across a page: the cell moved
#    whole to page 2 and left half of page 1 blank. Each line is now a row of its own.

LOOP_LINES = [
    "A1 = pi*D1^2/4; A2 = pi*D2^2/4; A3 = pi*D3^2/4",
    "Re1 = abs(Q1)*D1/(A1*nu); Re2 = abs(Q2)*D2/(A2*nu); Re3 = abs(Q3)*D3/(A3*nu)",
    *[f"f{i} = 0.25/log10(eps/(3.7*D{i}) + 5.74/Re{i}^0.9)^2" for i in (1, 2, 3)],
    *[f"h{i} = f{i}*L{i}/D{i}*Q{i}*abs(Q{i})/(2*g*A{i}^2)" for i in (1, 2, 3)],
    "Q1 + Q3 = Qin", "Q1 - Q2 = qB", "h1 + h2 - h3 = 0"]
LOOP_VALUES = [("D1", 150, "mm"), ("D2", 100, "mm"), ("D3", 125, "mm"), ("L1", 420, "m"),
               ("L2", 310, "m"), ("L3", 560, "m"), ("eps", 0.045, "mm"),
               ("nu", 1.0e-6, "m^2/s"), ("g", 9.80665, "m/s^2"), ("Qin", 38, "L/s"),
               ("qB", 14, "L/s")]


def loop_flows_L_s() -> list[float]:
    """The loop's flows by scipy.optimize.root (hybr) on the same equations in SI, Darcy-
    Weisbach with the Swamee-Jain friction factor (published form, from memory)."""
    import scipy.optimize

    D, L = (0.15, 0.1, 0.125), (420.0, 310.0, 560.0)

    def head(Q: float, i: int) -> float:
        A = math.pi * D[i] ** 2 / 4
        Re = abs(Q) * D[i] / (A * 1e-6)
        f = 0.25 / math.log10(4.5e-5 / (3.7 * D[i]) + 5.74 / Re ** 0.9) ** 2
        return f * L[i] / D[i] * Q * abs(Q) / (2 * 9.80665 * A ** 2)

    def F(q):
        return [q[0] + q[2] - 0.038, q[0] - q[1] - 0.014,
                head(q[0], 0) + head(q[1], 1) - head(q[2], 2)]

    sol = scipy.optimize.root(F, [0.02, 0.006, 0.018], method="hybr", tol=1e-14)
    assert sol.success
    return [1000 * q for q in sol.x]


def test_4_a_long_system_typesets_from_page_one(capsys, tmp_path):
    import pypdf

    worksheet = {
        "format": "zerotrace-worksheet", "version": 1,
        "title": "Three-pipe loop of a cooling-water ring main (invented)",
        "notes": "Invented for a trial.", "equation": "\n".join(LOOP_LINES), "unknown": None,
        "parameters": [{"name": n, "value": v, "unit": u} for n, v, u in LOOP_VALUES],
        "settings": {"methods": ["newton"]}, "scan": None, "selection": None,
        "system": {"unknowns": [{"name": f"Q{i}", "x0": x0, "unit": "L/s"}
                                for i, x0 in ((1, 20), (2, 6), (3, 18))],
                   "methods": ["newton", "broyden"]}}
    path = tmp_path / "loop.json"
    path.write_text(json.dumps(worksheet), encoding="utf-8")
    code, out, _ = run(capsys, "solve", "--worksheet", str(path), "--json")
    assert code == 0
    expected = loop_flows_L_s()
    for r in json.loads(out)["runs"]:
        assert r["converged"]
        assert [r["root"][f"Q{i}"] for i in (1, 2, 3)] == pytest.approx(expected, rel=1e-10)
    pdf = tmp_path / "loop.pdf"
    code, _out, _err = run(capsys, "report", str(path), "--pdf", str(pdf))
    assert code == 0
    pages = [p.extract_text() for p in pypdf.PdfReader(pdf).pages]
    assert "Typeset" in pages[0]  # the typeset lines start under the text as entered
    assert "Equations" in pages[1] and "Typeset" not in pages[1]


# 5. A confident wrong answer: Newton's second law as US texts write it, F = m*a/gc, with
#    m in lbm and gc typed as the bare 32.174, passed the dimensional check (gc is then a
#    number) and solved to 1.74 lbf for 150 lbm at 12 ft/s^2, where 55.9 lbf is meant:
#    lbm and lbf reach the equation as kg and N, where g_c is 1. A bare g_c (a parameter
#    or a number typed in the equation) is now named on every output; with its unit the
#    answer is the closed form's.

GC_US = 150 * 12 / 32.174  # lbf: F = m a / g_c in lbm, ft/s^2 (closed form)


def test_5_a_bare_gc_beside_lbm_is_named_on_every_output(capsys, tmp_path):
    args = ("solve", "F = m*a/gc", "--param", "m=150 lbm", "--param", "a=12 ft/s^2",
            "--param", "gc=32.174", "--unknown", "F", "--unknown-unit", "lbf",
            "--method", "newton")
    code, out, _ = run(capsys, *args)
    assert code == 0 and "'gc' = 32.174 has no unit: is it g_c?" in out
    assert "32.174 lbm*ft/(lbf*s^2)" in out
    code, out, _ = run(capsys, *args, "--json")
    assert any("is it g_c?" in n for n in json.loads(out)["unit_notes"])
    # the number it gives is the closed form divided by g_c again: why the note is needed
    assert json.loads(out)["runs"][0]["root"] == pytest.approx(GC_US / 32.174, rel=1e-4)
    csv_path = tmp_path / "gc.csv"
    code, _out, _ = run(capsys, *args, "--csv", str(csv_path))
    assert any(line.lstrip('"').startswith("# units: 'gc' = 32.174 has no unit")
               for line in csv_path.read_text(encoding="utf-8").splitlines())


def test_5_a_number_typed_in_the_equation_is_named_too():
    eq = parse_equation("F = m*a/32.2", unknown="F",
                        parameters={"m": "150 lbm", "a": "12 ft/s^2"}, unknown_unit="lbf")
    assert ("bare_gravity_constant", "32.2") in [(r.code, r.subject) for r in eq.remarks]


def test_5_gc_with_its_unit_gives_the_closed_form_and_no_note():
    eq = parse_equation("F = m*a/gc", unknown="F", unknown_unit="lbf",
                        parameters={"m": "150 lbm", "a": "12 ft/s^2",
                                    "gc": "32.174 lbm*ft/(lbf*s^2)"})
    assert "bare_gravity_constant" not in codes(eq.remarks)
    from solvers.methods import run_method

    run = run_method("newton", eq.f, fprime=eq.fprime, x0=1.0)
    assert run.converged
    # NIST SP 811: 32.174 lbm*ft/(lbf*s^2) is 0.99999849 (g_n = 32.17405 ft/s^2), so the
    # closed form in US numbers agrees to 2e-6
    assert run.root == pytest.approx(GC_US, rel=2e-6)


@pytest.mark.parametrize("values", [
    {"m": 150.0, "a": 12.0, "gc": 32.174},  # no units anywhere: numbers as typed
    {"m": "150 lbm", "a": "12 ft/s^2", "gc": 32.0},  # not g_c
])
def test_5_no_note_without_units_or_away_from_gc(values):
    unit = "lbf" if isinstance(values["m"], str) else None
    eq = parse_equation("F = m*a/gc", unknown="F", parameters=values, unknown_unit=unit)
    assert "bare_gravity_constant" not in codes(eq.remarks)


# 6. Clarity: a modulus typed 200 GPa was shown in SI as "200000000000.0 Pa" (the terminal,
#    the sheet's parameters, the window's notes), twelve digits whose zeros a checker must
#    count; from 1e9 up the SI value keeps every digit with its power of ten.

@pytest.mark.parametrize("typed, shown", [
    ("200 GPa", "2e+11 Pa"),
    ("30 Mpsi", "2.06842718795051e+11 Pa"),  # NIST SP 811: 1 psi = 6894.757293168 Pa
    ("150 mm", "0.15 m"),  # small values as before
])
def test_6_large_si_values_carry_their_power_of_ten(typed, shown):
    from solvers.units import convert_parameters

    _values, converted = convert_parameters({"E": typed})
    text = words.si_measure_text(converted["E"])
    assert text == shown
    number = float(text.split()[0])
    assert number == pytest.approx(converted["E"].si_value, rel=1e-15)


# 7. A misleading refusal: a bolt preload typed "5000 lb" (the pound mass, where US
#    drawings mean the pound-force) in T = K*d*F was refused naming the bare nut factor K
#    ("the equation needs 'K' as an acceleration"), and "lb-in" was answered "write
#    lb*in", a mass times a length. The refusal now names F and the pound-force, and the
#    hyphen's answer is lbf*in.

def test_7_a_force_typed_in_lb_is_named_with_lbf(capsys):
    args = ("solve", "T = K*d*F", "--param", "K=0.2", "--param", "d=0.5 in",
            "--unknown", "T", "--unknown-unit", "lbf*in")
    code, _out, err = run(capsys, *args, "--param", "F=5000 lb")
    assert code == 2
    assert "'F' in 'lb' is a mass" in err and "type lbf for the pound-force" in err
    assert "'K' has no unit" not in err
    code, out, _ = run(capsys, *args, "--param", "F=5000 lbf", "--json")
    # the short-form torque T = K d F in US numbers (common practice, from memory)
    assert code == 0
    for r in json.loads(out)["runs"]:
        assert r["root"] == pytest.approx(0.2 * 0.5 * 5000, rel=1e-12)


@pytest.mark.parametrize("typed, meant", [("lb-in", "lbf*in"), ("ft-lb", "ft*lbf"),
                                          ("Btu/lb-degF", "Btu/(lb*degF)")])
def test_7_a_hyphenated_pound_length_is_answered_with_lbf(capsys, typed, meant):
    code, _out, err = run(capsys, "solve", "T = 2*c", "--param", f"c=3 {typed}",
                          "--unknown", "T")
    assert code == 2 and f"write {meant}" in err


# 8. A confident wrong answer, the converse of 1: a single-degree spring-mass frequency
#    written for the angular frequency, k - m*w^2 = 0, with the unknown w in Hz, solved to
#    84.16 "Hz" (omega's number: Hz is 1/s, cycles per second, no 2*pi) where the natural
#    frequency is 13.39 Hz. A name in Hz used as an angular frequency (squared, or inside
#    sin or exp) and never multiplied by pi is now named; 2*pi*f, and f in v = f*lam,
#    stay quiet.

def test_8_hz_used_as_an_angular_frequency_is_named(capsys):
    args = ("solve", "k - m*w^2 = 0", "--param", "k=850 N/mm", "--param", "m=120 kg",
            "--unknown", "w", "--unknown-unit", "Hz", "--x0", "10", "--method", "newton")
    code, out, _ = run(capsys, *args)
    assert code == 0 and "'w' given in Hz reaches the equation as cycles per second" in out
    code, out, _ = run(capsys, *args, "--json")
    omega = math.sqrt(850e3 / 120)  # closed form, rad/s
    assert json.loads(out)["runs"][0]["root"] == pytest.approx(omega, rel=1e-12)
    assert any("2*pi times too large" in n for n in json.loads(out)["unit_notes"])


@pytest.mark.parametrize("text, unknown, values", [
    ("k - m*(2*pi*f)^2 = 0", "f", {"k": "850 N/mm", "m": "120 kg"}),
    ("v = f*lam", "lam", {"v": "340 m/s", "f": "1 kHz"}),
])
def test_8_hz_with_two_pi_or_as_a_plain_rate_is_quiet(text, unknown, values):
    eq = parse_equation(text, unknown=unknown, parameters=values,
                        unknown_unit="Hz" if unknown == "f" else None)
    assert "hertz_without_pi" not in codes(eq.remarks)
    if unknown == "f":
        from solvers.methods import run_method

        run = run_method("brent", eq.f, bracket=(1.0, 50.0))
        # closed form f = sqrt(k/m) / (2 pi)
        assert run.root == pytest.approx(math.sqrt(850e3 / 120) / (2 * math.pi), rel=1e-12)


def test_8_the_sensor_boom_in_hz_with_two_pi_says_nothing_of_hz():
    eq = parse_equation("w = 2*pi*f; b = L*(rho*A*w^2/(E*I))^0.25; "
                        "1 + cos(b)*cosh(b) + M/(rho*A*L)*b*(cos(b)*sinh(b) - sin(b)*cosh(b))"
                        " = 0", unknown="f", unknown_unit="Hz",
                        parameters={"L": "850 mm", "E": "200 GPa", "I": "21300 mm^4",
                                    "A": "175.9 mm^2", "rho": "7850 kg/m^3", "M": "1.2 kg"})
    assert "hertz_without_pi" not in codes(eq.remarks)


def sheet_text(capsys, path: Path, worksheet: dict) -> str:
    """The worksheet written to ``path``, its calculation sheet made by `zerotrace report`
    beside it, and the sheet's text (pypdf) with runs of white space as one space."""
    import pypdf

    path.write_text(json.dumps(worksheet), encoding="utf-8")
    pdf = path.with_suffix(".pdf")
    code, _out, err = run(capsys, "report", str(path), "--pdf", str(pdf))
    assert code == 0, err
    return " ".join(" ".join(p.extract_text().split()) for p in pypdf.PdfReader(pdf).pages)


def test_1_the_sheet_names_rpm_converted_twice(capsys, tmp_path):
    worksheet = {
        "format": "zerotrace-worksheet", "version": 1,
        "title": "First forward critical speed of an overhung fan disc (invented)",
        "equation": DISC.format(w="2*pi*N/60"), "unknown": "N", "unknown_unit": "rpm",
        "parameters": [{"name": n, "value": float(v.split()[0]), "unit": v.split()[1]}
                       for n, v in DISC_VALUES.items()],
        "settings": {"methods": ["newton"], "x0": 3000.0}, "scan": {"from": 100.0,
                                                                   "to": 60000.0}}
    text = sheet_text(capsys, tmp_path / "disc.json", worksheet)
    assert "converts it a second time" in text


# 9. Words: a table of columns whose brackets closed on a pole of the eigen-equation
#    (scipy.optimize.brentq returns the pole, P = pi^2 E I / L^2, as its "root") stopped
#    "on not finite", "domain error or overflow", with no word of a pole. The reason now
#    names it.

def test_9_a_table_row_closed_on_a_pole_says_pole(capsys, tmp_path):
    table = tmp_path / "columns.csv"
    table.write_text("c [kN*m/rad],bracket_a,bracket_b\n1800,3300,13000\n1800,3000,3600\n",
                     encoding="utf-8")
    code, out, _ = run(capsys, "batch", COLUMN, "--table", str(table),
                       *COLUMN_PARAMS[:6], "--unknown", "P", "--unknown-unit", "kN",
                       "--method", "brent", "--json")
    assert code == 0
    data = json.loads(out)
    first, second = data["rows"][0], data["rows"][1]
    assert first["root"] == pytest.approx(column_roots_kN(1)[0], rel=1e-10)  # brentq
    assert not second["converged"] and second["reason"] == "not_finite"
    assert "closed on a pole" in data["reasons"]["not_finite"]


# 10. Typesetting: the derivative of a four-bar linkage's closure equation, with the ground
#     link named d (K1 = d/a), was set "d sin(t4)/a" on the sheet and in the window: the
#     differential d(sin t4) to the eye (ISO 80000-2 writes the differential as d). A
#     product holding d is now set apart by a dot, as one holding a multi-letter name.

def test_10_a_product_with_d_is_dotted_in_the_typeset_derivative():
    from solvers.equation.typeset import lines_latex

    eq = parse_equation("K1 = d/a; K1*cos(t4) - K2*cos(t2) + K3 = cos(t2 - t4)",
                        unknown="t4", parameters={"d": 100.0, "a": 40.0, "K2": 1.25,
                                                  "K3": 1.1, "t2": 0.61})
    tex = eq.derivative_latex
    assert r"d \cdot \mathrm{sin}" in tex
    assert "d \\mathrm{sin}" not in tex
    (_line, typed), = lines_latex("d*x = 1")  # the equation as typed, dotted alike
    assert r"d \cdot x" in typed
    (_line, typed), = lines_latex("A = pi*d^2/4")  # a diameter squared is no differential
    assert typed == r"A = \frac{\pi d^{2}}{4}"
    # the derivative itself is unchanged: against a central difference of f at t4 = 1
    # (common practice) and its closed form
    h = 1e-6
    numeric = (eq.f(1.0 + h) - eq.f(1.0 - h)) / (2 * h)
    assert eq.fprime(1.0) == pytest.approx(numeric, rel=1e-7)
    assert eq.fprime(1.0) == pytest.approx(-2.5 * math.sin(1.0) - math.sin(0.61 - 1.0),
                                           rel=1e-12)  # closed form


def test_5_a_system_names_a_bare_gc_too():
    # a hoist's rope force and the load's acceleration (invented): F = m*a/gc, F = k*x
    system = parse_system("F = m*a/gc; F = k*x", unknowns=["F", "a"],
                          parameters={"m": "150 lbm", "gc": 32.174, "k": "40 lbf/in",
                                      "x": "1.5 in"},
                          unknown_units={"F": "lbf", "a": "ft/s^2"})
    assert ("bare_gravity_constant", "gc") in [(r.code, r.subject) for r in system.remarks]
    plain = parse_system("F = m*a/gc; F = k*x", unknowns=["F", "a"],
                         parameters={"m": 150.0, "gc": 32.174, "k": 40.0, "x": 1.5})
    assert "bare_gravity_constant" not in codes(plain.remarks)


def test_3_the_sheet_gives_the_figure_range_in_the_unknowns_unit(capsys, tmp_path):
    worksheet = {
        "format": "zerotrace-worksheet", "version": 1,
        "title": "Buckling load of a column on a rotational spring (invented)",
        "equation": COLUMN, "unknown": "P", "unknown_unit": "kN",
        "parameters": [{"name": "L", "value": 4.2, "unit": "m"},
                       {"name": "E", "value": 210.0, "unit": "GPa"},
                       {"name": "I", "value": 2770.0, "unit": "cm^4"},
                       {"name": "c", "value": 1800.0, "unit": "kN*m/rad"}],
        "settings": {"methods": ["brent"], "bracket": [3300.0, 13000.0]},
        "scan": {"from": 1.0, "to": 40000.0}}
    text = sheet_text(capsys, tmp_path / "column.json", worksheet)
    assert "over the scan range [1.0, 40000.0] kN" in text
    # the sheet's roots: brentq between the poles
    shown = re.findall(r"Brent (\d+\.\d+)", text)
    assert float(shown[0]) == pytest.approx(column_roots_kN(1)[0], rel=1e-12)


# 11. Converting a speed between turns and cycles (the window's unit box, rpm to Hz) gave
#     3000 rpm as 314.16 Hz; a revolution is now one cycle: 3000 rev/min is 50 Hz.

@pytest.mark.parametrize("source, target, value, expected", [
    ("rpm", "Hz", 3000.0, 50.0),  # NIST SP 811: 1 r/min = (1/60) r/s
    ("Hz", "rpm", 50.0, 3000.0),
    ("deg/s", "Hz", 360.0, 1.0),  # one turn a second
    ("rpm", "rad/s", 3000.0, 3000.0 * RPM),  # NIST SP 811's rad/s per rpm, unchanged
    ("Hz", "kHz", 50.0, 0.05),
])
def test_11_speed_conversions_count_a_revolution_as_a_cycle(source, target, value, expected):
    from solvers.units import converter

    assert converter(source, target)(value) == pytest.approx(expected, rel=1e-6)
