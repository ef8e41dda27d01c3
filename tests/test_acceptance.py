"""Acceptance checks: the headless side used as an engineer would, with invented numbers.

Each test pins a defect found by trying the program on design-style equations (all
numbers below are invented for the test). The outside reference is named beside
each check.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import sympy

from app.cli import main
from solvers import scan


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


# ------------------------------------------------ equations and numbers that start with '-'


def test_an_equation_starting_with_a_minus_sign_is_solved(capsys) -> None:
    # Invented: a bare quadratic typed without spaces, as engineers often do.
    code, out, err = run(capsys, "solve", "-x^2+4", "--x0", "1", "--method", "newton", "--json")
    assert code == 0, err
    root = json.loads(out)["runs"][0]["root"]
    assert root == pytest.approx(math.sqrt(4.0), rel=4e-16)  # math.sqrt reference


def test_cash_flows_starting_with_the_investment_scan_without_spaces(capsys) -> None:
    # Invented project: -100 now, +230 after one year, -132 after two. In y = 1/(1+r) the
    # NPV is -132 y^2 + 230 y - 100, whose roots numpy.roots gives; r = 1/y - 1.
    code, out, err = run(
        capsys, "scan", "-100+230/(1+r)-132/(1+r)^2", "--from", "0", "--to", "1", "--json"
    )
    assert code == 0, err
    expected = sorted(1 / y - 1 for y in np.roots([-132.0, 230.0, -100.0]).real)  # numpy.roots
    found = [r["x"] for r in json.loads(out)["roots"]]
    assert found == pytest.approx(expected, rel=1e-14)


def test_negative_values_in_scientific_notation_are_accepted(capsys) -> None:
    # Invented: two roots a few nanometres either side of zero (a gap dimension in m).
    code, out, err = run(
        capsys, "scan", "(x-1e-9)*(x+2e-9)", "--from", "-1e-8", "--to", "1e-8", "--json"
    )
    assert code == 0, err
    expected = sorted(np.roots([1.0, 1e-9, -2e-18]).real)  # numpy.roots reference
    found = [r["x"] for r in json.loads(out)["roots"]]
    assert found == pytest.approx(expected, rel=1e-12)


def test_negative_bracket_and_start_in_scientific_notation(capsys) -> None:
    # x^3 = -2: the real root is -cbrt(2) (numpy.cbrt reference).
    code, out, err = run(
        capsys, "solve", "x^3 + 2", "--x0", "-1.5e0", "--bracket", "-2e0", "-1e0",
        "--method", "newton", "--method", "brent", "--json",
    )
    assert code == 0, err
    for r in json.loads(out)["runs"]:
        assert r["converged"]
        assert r["root"] == pytest.approx(-float(np.cbrt(2.0)), rel=4e-16)  # numpy.cbrt


def test_an_output_path_starting_with_a_minus_is_a_path(capsys, tmp_path, monkeypatch) -> None:
    monkeypatch.chdir(tmp_path)
    code, _, err = run(capsys, "solve", "x^2 - 2", "--x0", "1", "--csv", "-log.csv")
    assert code == 0, err
    assert (tmp_path / "-log.csv").exists()


# ------------------------------------------------ error lines


def test_an_equation_error_names_its_column_once(capsys) -> None:
    code, _, err = run(capsys, "solve", "x +* 2", "--x0", "1")
    assert code == 2
    line = err.strip()
    assert "\n" not in line
    assert line.count("column 4") == 1, line  # '*' is the 4th character (common practice)


def test_an_empty_csv_path_is_refused_not_ignored(capsys) -> None:
    code, out, err = run(capsys, "solve", "x^2 - 2", "--x0", "1", "--csv", "")
    assert code == 2
    assert out == ""
    assert "--csv" in err and "empty" in err


def test_the_window_without_a_display_is_one_line_exit_2(capsys, monkeypatch) -> None:
    # On Linux with no X or Wayland display and no Qt platform chosen, Qt aborts the
    # process; the command must say so in one line instead.
    monkeypatch.setattr("sys.platform", "linux")
    for name in ("DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM"):
        monkeypatch.delenv(name, raising=False)
    # Never start Qt here (it would abort this test process): the window must not be reached.
    monkeypatch.setattr("app.window.main", lambda argv: pytest.fail("window started"))
    code, _, err = run(capsys)
    assert code == 2
    assert len(err.strip().splitlines()) == 1
    assert "display" in err


# ------------------------------------------------ multiplicity of a root at a range end


@pytest.mark.parametrize(
    ("text", "a", "b", "root"),
    [
        ("x^2", 0.0, 2.0, 0.0),
        ("x*sin(x)", 0.0, 2.0, 0.0),
        ("(x-1)^2", 1.0, 3.0, 1.0),
        ("x^2", -2.0, 0.0, 0.0),
    ],
)
def test_a_double_root_at_the_range_end_is_double(text, a, b, root) -> None:
    # Reference: the first derivative of f that sympy finds non-zero at the root.
    x = sympy.Symbol("x")
    expr = sympy.sympify(text.replace("^", "**"))
    at = sympy.Rational(root)
    expected = next(k for k in range(1, 8) if sympy.diff(expr, x, k).subs(x, at) != 0)
    assert expected == 2
    from solvers import parse_equation

    eq = parse_equation(text)
    found = scan(eq.f, a, b, fprime=eq.fprime)
    at_end = [r for r in found.roots if r.x == root]
    assert len(at_end) == 1
    assert at_end[0].multiplicity == expected


def test_simple_and_triple_roots_at_the_range_end_keep_their_multiplicity() -> None:
    # sin x ~ x (m = 1) and tan x - tanh x ~ 2x^3/3 (m = 3) at 0: Taylor series, from memory.
    from solvers import parse_equation

    for text, expected in (("sin(x)", 1), ("tan(x)-tanh(x)", 3), ("x^3*(x-1)", 3)):
        eq = parse_equation(text)
        found = scan(eq.f, 0.0, 2.0, fprime=eq.fprime)
        assert found.roots[0].x == 0.0
        assert found.roots[0].multiplicity == expected, text


# ------------------------------------------------ scan range limits


def test_a_scan_range_wider_than_the_largest_double_is_one_line_exit_2(capsys) -> None:
    # 1e308 - (-1e308) overflows a double (sys.float_info.max ~ 1.797e308, common practice).
    code, _, err = run(capsys, "scan", "x^2 - 2", "--from", "-1e308", "--to", "1e308")
    assert code == 2
    assert len(err.strip().splitlines()) == 1
    assert "wide" in err
    with pytest.raises(ValueError, match="wide"):
        scan(lambda x: x * x - 2.0, -1e308, 1e308)


# ------------------------------------------------ two roots inside the first sample spacing


@pytest.mark.parametrize("cross_check", [True, False])
def test_two_roots_between_the_range_start_and_the_first_sample_are_found(cross_check) -> None:
    # Invented: |x - 0.2| = 0.05 on [0, 1000]; the default 2001 samples are 0.5 apart, so
    # both roots (0.15 and 0.25, by hand) lie between the first two samples and f has the
    # same sign at both. The kink keeps the Chebyshev cross-check from rescuing them.
    found = scan(lambda x: np.abs(x - 0.2) - 0.05, 0.0, 1000.0, cross_check=cross_check)
    assert [r.x for r in found.roots] == pytest.approx([0.15, 0.25], rel=1e-14)


def test_two_roots_just_before_the_range_end_are_found() -> None:
    # Mirror image at the far end: (x - 999.7)(x - 999.9); roots by construction (the
    # product form is exactly zero at each factor's zero; common practice).
    expected = [999.7, 999.9]
    found = scan(lambda x: (x - 999.7) * (x - 999.9), 0.0, 1000.0, cross_check=False)
    assert [r.x for r in found.roots] == pytest.approx(expected, rel=1e-14)


# ------------------------------------------------ very wide ranges and overflow


@pytest.mark.parametrize(
    ("text", "a", "b"),
    [
        # x^2 overflows to inf beyond ~1.3e154, so every sample but x = 0 is inf here
        ("x^2 - 2", 0.0, 1e160),
        ("x^2 - 2", -1e200, 1e200),
        # no overflow, but the samples are 1e97 apart: both roots must stay apart
        ("x^2 - 2", -1e100, 1e100),
        ("x - 1", -1e300, 1e300),
        # exp overflows past ~709.78 (log of sys.float_info.max): the root sits just before
        ("exp(x) - 1.7e308", 0.0, 1000.0),
    ],
)
def test_roots_of_order_one_in_a_very_wide_range_are_exact(text, a, b) -> None:
    from solvers import parse_equation

    eq = parse_equation(text)
    found = scan(eq.f, a, b, fprime=eq.fprime)
    # References: math.sqrt and math.log (the roots of x^2 = 2 and exp(x) = 1.7e308).
    expected = {
        "x^2 - 2": [r for r in (-math.sqrt(2.0), math.sqrt(2.0)) if a <= r <= b],
        "x - 1": [1.0],
        "exp(x) - 1.7e308": [math.log(1.7e308)],
    }[text]
    assert [r.x for r in found.roots] == pytest.approx(expected, rel=1e-15)
    assert found.poles == []


def test_an_overflow_beside_a_pole_is_still_no_root() -> None:
    # 1/(x-1) sampled exactly at its pole (f = inf there): a pole, never a root (common practice).
    found = scan(lambda x: 1.0 / (x - 1.0), 0.0, 2.0, samples=2001)
    assert found.roots == []
    assert found.poles == pytest.approx([1.0])


# ------------------------------------------------ observed order of convergence


def test_illinois_never_claims_an_order_beyond_any_method_here() -> None:
    from solvers import illinois

    # Invented: a decay constant, exp(-x) = 1e-3, bracketed on [0, 1000]. Illinois converges
    # with order 3^(1/3) ~ 1.44 (Dowell & Jarratt 1971, from memory); its uneven step pattern
    # read 15 here, which no method in the table can reach.
    run_ = illinois(lambda x: math.exp(-x) - 1e-3, 0.0, 1000.0)
    assert run_.converged
    assert run_.root == pytest.approx(math.log(1e3), rel=4e-16)  # math.log reference
    assert run_.order is None or 0.8 <= run_.order <= 3.5


def test_newton_still_shows_cubic_and_quadratic_orders() -> None:
    from solvers import newton

    # Newton is cubic at a root where f'' = 0 (sin at 0) and quadratic at a simple root of
    # x^3 - 2x - 5 (textbook convergence theory, from memory).
    assert newton(math.sin, 0.5, fprime=math.cos).order == pytest.approx(3.0, abs=0.2)
    cubic = newton(lambda x: x**3 - 2 * x - 5, 2.0, fprime=lambda x: 3 * x * x - 2)
    assert cubic.order == pytest.approx(2.0, abs=0.2)


# ------------------------------------------------ a bracket around a pole is not a root


@pytest.mark.parametrize("name", ["brent", "bisection", "illinois", "false_position"])
def test_a_bracketing_method_closing_on_a_pole_does_not_converge(name) -> None:
    import solvers

    # Invented design check: 1/(x - 3) = 0.5 with a bracket [2, 4] the user chose badly.
    # Its only root is x = 5 (by hand); f changes sign in [2, 4] through the pole at 3.
    method = getattr(solvers, name)
    run_ = method(lambda x: 1.0 / (x - 3.0) - 0.5, 2.0, 4.0)
    assert not run_.converged, (run_.root, run_.reason)
    assert run_.reason in ("not_finite", "max_iterations")


def test_the_cli_never_calls_the_pole_of_tan_a_root_of_tan_x_equals_2(capsys) -> None:
    # tan x = 2 from x0 = 1.4: the bracket grown around x0 spans the pole at pi/2
    # (math.pi reference); the root nearest is atan(2) (math.atan reference).
    code, out, err = run(
        capsys, "solve", "tan(x) = 2", "--x0", "1.4", "--method", "brent", "--method",
        "bisection", "--method", "illinois", "--json",
    )
    assert code == 0, err
    for r in json.loads(out)["runs"]:
        if r["converged"]:
            assert math.tan(r["root"]) == pytest.approx(2.0, rel=1e-12)
            assert r["root"] == pytest.approx(math.atan(2.0) + math.pi * round(
                (r["root"] - math.atan(2.0)) / math.pi), rel=1e-14)
        else:
            assert abs(r["root"] - math.pi / 2) < 1e-6
            assert "pole" in r["message"]


def test_a_genuine_root_next_to_a_steep_wall_still_converges() -> None:
    # x tan x = Bi with Bi = 100 (invented): the first root 1.555245... sits close to the
    # pole at pi/2; scipy.optimize.brentq is the reference.
    from scipy.optimize import brentq

    from solvers import brent, illinois

    f = lambda x: x * math.tan(x) - 100.0  # noqa: E731
    expected = brentq(f, 1.0, 1.5707, xtol=1e-15, rtol=4.5e-16 * 2)
    for method in (brent, illinois):
        run_ = method(f, 1.0, 1.5707)
        assert run_.converged
        assert run_.root == pytest.approx(expected, rel=1e-14)


# ------------------------------------------------ a scan with more roots than it can hold


def test_a_scan_with_too_many_roots_stops_refining_and_says_so(monkeypatch) -> None:
    import importlib

    scan_module = importlib.import_module("solvers.scan.driver")
    # sin(1e4 x) on [0, 1000] (3.2e6 roots) took > 2 min and 10 GB; the cap is what bounds
    # it. A small cap keeps this test quick: sin(20 x) has 6367 roots k*pi/20 in [0, 1000].
    monkeypatch.setattr(scan_module, "MAX_ROOTS", 2000)
    found = scan(lambda x: np.sin(20.0 * x), 0.0, 1000.0)
    assert any("narrower range" in w for w in found.warnings)
    assert 2000 <= len(found.roots) < 6367
    k = np.array([r.x for r in found.roots]) * 20.0 / np.pi
    assert np.max(np.abs(k - np.rint(k))) < 1e-9  # every one a true zero (numpy.pi reference)


# ------------------------------------------------ a value given to a built-in constant


@pytest.mark.parametrize("name", ["pi", "deg"])
def test_a_parameter_named_like_a_constant_is_refused_not_ignored(capsys, name) -> None:
    # Invented: a dimensionless group called 'pi' set to 3. The constant pi (math.pi) was
    # used instead and the value 3 dropped without a word.
    from solvers import EquationError, parse_equation

    with pytest.raises(EquationError, match=name):
        parse_equation(f"x - {name}", parameters={name: 3.0})
    code, out, err = run(capsys, "solve", f"x - {name}", "--param", f"{name}=3", "--x0", "1")
    assert code == 2
    assert out == ""
    assert name in err and "constant" in err
