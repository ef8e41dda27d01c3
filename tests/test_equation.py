"""Specification of solvers.equation: equation text -> checked expression -> f and f'.

Outside references (each check names its own): Python's math module, numpy, scipy.special,
scipy.constants, mpmath at 50 digits, sympy's own derivative, and a central-difference
numerical derivative. Facts of the trade with no printed source say "common practice".
"""

from __future__ import annotations

import math
import warnings

import mpmath
import numpy as np
import pytest
import scipy.constants
import scipy.optimize
import scipy.special
import sympy as sp

from app.documents.typesetting import mathtext
from app.documents.words import remarks_text
from solvers.equation import (
    MAX_DEPTH,
    MAX_LENGTH,
    Equation,
    EquationError,
    free_names,
    parse_equation,
)
from solvers.equation.typeset import derivative_latex as typeset_derivative
from solvers.equation.typeset import latex as latex_of


def value(text: str, x: float, **parameters: float) -> float:
    """f(x) of an equation whose unknown is x."""
    return parse_equation(text, unknown="x", parameters=parameters).f(x)


def error_of(text: str, **kwargs) -> EquationError:
    with pytest.raises(EquationError) as info:
        parse_equation(text, **kwargs)
    return info.value


# ---------------------------------------------------------------------------------------------
# Forms of an equation
# ---------------------------------------------------------------------------------------------


class TestForms:
    def test_lhs_equals_rhs_means_lhs_minus_rhs(self):
        eq = parse_equation("x^2 = 2")
        assert eq.unknown == "x"
        assert eq.f(3.0) == 7.0  # 9 - 2
        assert eq.latex == "x^{2} = 2"

    def test_bare_expression_means_expression_equals_zero(self):
        eq = parse_equation("x^2 - 2")
        assert eq.f(3.0) == 7.0
        assert eq.latex.endswith("= 0")

    def test_caret_and_double_star_are_both_powers(self):
        assert value("x^3", 2.0) == value("x**3", 2.0) == 8.0

    def test_power_is_right_associative_and_binds_tighter_than_minus(self):
        # common practice (and Python's **): 2^3^2 = 2^(3^2) = 512; -x^2 = -(x^2)
        assert value("2^3^2 - x", 0.0) == 512.0
        assert value("-x^2", 3.0) == -9.0
        assert value("2^-1 - x", 0.0) == 0.5

    def test_several_lines_are_one_equation(self):
        eq = parse_equation("x^2\n  - 4 =\n 0")
        assert eq.f(2.0) == 0.0

    def test_equation_keeps_the_text_as_typed(self):
        text = "  2x = 1  "
        assert parse_equation(text).text == text


class TestImplicitMultiplication:
    @pytest.mark.parametrize(
        ("text", "x", "expected"),
        [
            ("2x", 3.0, 6.0),
            ("3(x+1)", 1.0, 6.0),
            ("2x^2", 3.0, 18.0),  # 2*(x^2), not (2x)^2: common practice
            ("2.5e-3x", 1000.0, 2.5),  # 2.5e-3 is one number
            ("1e5x", 2.0, 2e5),
            ("2pi - x", 0.0, 2 * math.pi),
            ("2sqrt(x)", 4.0, 4.0),
            ("-2x", 1.0, -2.0),
        ],
    )
    def test_a_number_against_a_name_or_parenthesis_multiplies(self, text, x, expected):
        assert value(text, x) == pytest.approx(expected, rel=1e-15)

    def test_2e_minus_x_is_two_e_minus_x(self):
        # 'e' followed by no digit is not an exponent: 2e-x is 2*e - x
        assert value("2e-x", 1.0, e=10.0) == 19.0

    @pytest.mark.parametrize(
        ("text", "column"),
        [
            ("2 x", 2),  # a space breaks it: a lost operator must not become a product
            ("x y", 2),
            ("(x+1)(x-1)", 5),
            ("(x+1)2", 5),
            ("x 2", 2),
        ],
    )
    def test_nothing_riskier_is_a_product(self, text, column):
        err = error_of(text)
        assert "missing operator" in str(err)
        assert err.position == column

    def test_name_before_parenthesis_is_not_a_product(self):
        err = error_of("k(x+1) = 2")
        assert str(err).startswith("unknown function 'k'")
        assert "k*(" in str(err)
        assert err.position == 0

    @pytest.mark.parametrize(
        ("text", "column"), [("1/2x", 2), ("x^2y", 2), ("e^2x", 2), ("x/-3y", 3)]
    )
    def test_ambiguous_implicit_products_are_refused(self, text, column):
        err = error_of(text)
        assert "ambiguous" in str(err)
        assert err.position == column


# ---------------------------------------------------------------------------------------------
# Functions and constants
# ---------------------------------------------------------------------------------------------


class TestFunctions:
    @pytest.mark.parametrize(
        ("name", "reference", "x"),
        [
            # references: Python's math module and numpy
            ("sqrt", math.sqrt, 2.0),
            ("exp", math.exp, 1.3),
            ("ln", math.log, 7.0),
            ("log10", math.log10, 250.0),
            ("log2", math.log2, 10.0),
            ("sin", math.sin, 0.7),
            ("cos", math.cos, 0.7),
            ("tan", math.tan, 0.7),
            ("asin", math.asin, 0.3),
            ("acos", math.acos, 0.3),
            ("atan", math.atan, 3.0),
            ("sinh", math.sinh, 1.5),
            ("cosh", math.cosh, 1.5),
            ("tanh", math.tanh, 0.5),
            ("asinh", np.arcsinh, 2.0),
            ("acosh", np.arccosh, 2.0),
            ("atanh", np.arctanh, 0.5),
            ("abs", abs, -2.5),
        ],
    )
    def test_each_function_matches_its_reference(self, name, reference, x):
        got = value(f"{name}(x)", x)
        assert isinstance(got, float)
        assert got == pytest.approx(float(reference(x)), rel=4e-16, abs=0)

    def test_two_argument_functions(self):
        # math.atan2(y, x) order: atan2(y, x)
        assert value("atan2(x, -1)", 1.0) == math.atan2(1.0, -1.0)
        assert value("min(x, 2)", 3.0) == 2.0
        assert value("max(x, 2)", 3.0) == 3.0
        assert value("max(x, 2, 7)", 3.0) == 7.0

    def test_pi_and_deg(self):
        assert value("pi - x", 0.0) == math.pi
        # deg = pi/180: sin(30 degrees) = 1/2 (exact trigonometry, common practice)
        assert value("sin(30deg) - x", 0.0) == pytest.approx(0.5, rel=1e-15)
        assert value("cos(x*deg)", 60.0) == pytest.approx(0.5, rel=1e-15)
        eq = parse_equation("sin(x*deg) = 0.5")
        assert any("deg" in note for note in remarks_text(eq.remarks))
        assert r"\mathrm{deg}" in eq.latex

    def test_bare_log_is_refused_with_both_spellings_offered(self):
        err = error_of("1/sqrt(f) = -2*log(2.51/(Re*sqrt(f)))", parameters={"Re": 1e5})
        message = str(err)
        assert "ln(" in message and "log10(" in message
        assert err.position == 15

    def test_ln_is_typeset_as_ln(self):
        assert parse_equation("ln(x) = 1").latex == r"\ln\left(x\right) = 1"

    @pytest.mark.parametrize(
        ("text", "message", "column"),
        [
            ("x + foo(x)", "unknown function 'foo'", 4),
            ("factorial(x)", "unknown function 'factorial'", 0),
            ("sin x", "'sin' is a function", 0),
            ("sqrt(x, 2)", "sqrt() takes 1 argument, got 2", 0),
            ("atan2(x)", "atan2() takes 2 arguments, got 1", 0),
            ("max(x)", "max() takes at least 2 arguments, got 1", 0),
            ("pi(x)", "'pi' is a constant", 0),
            ("sin()", "sin() takes 1 argument, got 0", 0),
            ("sin(x,)", "missing argument", 6),
        ],
    )
    def test_function_misuse_names_the_function_and_column(self, text, message, column):
        err = error_of(text)
        assert message in str(err)
        assert err.position == column


class TestNames:
    @pytest.mark.parametrize("letter", list("egRkEISNQCO"))
    def test_engineering_letters_are_plain_parameters(self, letter):
        # sympy's parse_expr would read E, I, S, N, Q, O as special objects; here they are names
        eq = parse_equation(f"{letter}*x = 6", parameters={letter: 2.0})
        assert eq.unknown == "x"
        assert eq.parameters == {letter: 2.0}
        assert eq.f(3.0) == 0.0

    def test_engineering_letters_can_be_the_unknown(self):
        for letter in "eEINOQS":
            eq = parse_equation(f"{letter}^2 = 9")
            assert eq.unknown == letter
            assert eq.f(3.0) == 0.0

    def test_names_with_digits_and_underscores(self):
        eq = parse_equation("D_h*x1 = 2", parameters={"D_h": 0.5})
        assert eq.unknown == "x1" and eq.f(4.0) == 0.0

    def test_names_in_order_unknown_first(self):
        eq = parse_equation("a*x + b = x*c", parameters={"a": 1, "b": 2, "c": 3})
        assert eq.names == ("x", "a", "b", "c")

    def test_free_names_in_order_of_appearance(self):
        assert free_names("Re = rho*V*D/mu") == ("Re", "rho", "V", "D", "mu")
        assert free_names("sin(x*deg) + pi = y") == ("x", "y")  # functions/constants excluded

    def test_free_names_raises_on_bad_text(self):
        with pytest.raises(EquationError):
            free_names("x + (")

    @pytest.mark.parametrize(
        ("text", "column"),
        [("lambda*x", 0), ("x + import", 4), ("_x + 1", 0), ("x__y", 0), ("None = x", 0)],
    )
    def test_reserved_and_dunder_names_are_refused(self, text, column):
        assert error_of(text).position == column


class TestUnknown:
    def test_inferred_when_exactly_one_name_has_no_value(self):
        eq = parse_equation("h = g*t^2/2", parameters={"h": 20.0, "g": 9.81})
        assert eq.unknown == "t"

    def test_ambiguous_unknown_lists_the_candidates(self):
        err = error_of("a*x + b*y = c", parameters={"a": 1, "b": 2, "c": 3})
        assert "'x', 'y'" in str(err)

    def test_e_as_a_second_unknown_gets_a_hint(self):
        assert "exp(" in str(error_of("e^x = 3"))

    def test_no_unknown_when_everything_has_a_value(self):
        err = error_of("a + b", parameters={"a": 1, "b": 2})
        assert "a, b" in str(err)

    def test_no_names_at_all(self):
        assert "no unknown" in str(error_of("2 + 3 = 5"))

    def test_named_unknown_must_appear(self):
        assert "'z'" in str(error_of("x + 1", unknown="z"))

    def test_named_unknown_with_missing_parameter_points_at_it(self):
        # the front ends ask for every value at parse time
        err = error_of("a*x + b", unknown="x", parameters={"a": 1}, require_values=True)
        assert "'b'" in str(err) and err.position == 6
        # from Python the value may wait for bind; f says what it lacks until then
        eq = parse_equation("a*x + b", unknown="x", parameters={"a": 1})
        assert eq.unbound == ("b",)
        with pytest.raises(EquationError, match="no value for 'b'"):
            eq.f(1.0)
        assert eq.bind({"b": 2.0}).f(1.0) == 3.0

    def test_unused_parameters_are_fine_and_not_reported(self):
        eq = parse_equation("x = a", parameters={"a": 1.0, "zz": 5.0, "__class__": 1.0})
        assert eq.parameters == {"a": 1.0}

    def test_a_parameter_for_the_unknown_is_ignored_with_a_note(self):
        eq = parse_equation("x - a", unknown="x", parameters={"x": 9.0, "a": 1.0})
        assert eq.f(1.0) == 0.0
        assert any("'x' is the unknown" in n for n in remarks_text(eq.remarks))

    @pytest.mark.parametrize("bad", [float("nan"), float("inf"), "9.81", 1j, None, True])
    def test_parameter_values_must_be_finite_real_numbers(self, bad):
        with pytest.raises(EquationError):
            parse_equation("g*x = 1", parameters={"g": bad})

    def test_numpy_and_integer_parameter_values(self):
        eq = parse_equation("g*x = 1", parameters={"g": np.float32(2.0)})
        assert eq.f(0.5) == 0.0
        eq = parse_equation("g*x = 1", parameters={"g": np.int64(4)})
        assert eq.f(0.25) == 0.0


# ---------------------------------------------------------------------------------------------
# Error positions
# ---------------------------------------------------------------------------------------------


class TestErrorPositions:
    @pytest.mark.parametrize(
        ("text", "column", "words"),
        [
            ("x + (y", 4, "never closed"),
            ("x + y)", 5, "without a matching '('"),
            ("x = 1 = 2", 6, "second '='"),
            ("= x", 0, "nothing before '='"),
            ("x =", 2, "nothing after '='"),
            ("x +", 2, "nothing after '+'"),
            ("x * * 2", 4, "cannot follow"),
            ("(x = 1)", 3, "'=' inside parentheses"),
            ("x, 1", 1, "',' outside a function call"),
            ("x + ()", 4, "empty parentheses"),
            ("x + 3 [2]", 6, "'['"),
            ("x.real", 1, "no attribute access"),
            ("x\u22121", 1, "type '-'"),  # minus sign pasted from a document
            ("2\u00d7x", 1, "type '*'"),
            ("x\u00b2 = 4", 1, "type '^2'"),
            ("\u0430 = 1", 0, "CYRILLIC"),
            ("x = 1e400", 4, "beyond double precision"),
            ("x = 1e-400", 4, "underflows"),
            ("x/0", 2, "division by zero"),
            ("x + sqrt(-1)", 4, "no real value"),
            ("x + 10^400", 4, "overflows"),
            ("x + ln(0)", 4, "no real value"),
        ],
    )
    def test_message_and_zero_based_column(self, text, column, words):
        err = error_of(text)
        assert err.position == column, str(err)
        assert words in str(err)
        # messages count columns from 1, as editors do
        assert f"column {column + 1}" in str(err)
        assert "\n" not in str(err)

    def test_multi_line_text_names_line_and_column(self):
        err = error_of("x^2 +\n  foo(x)")
        assert err.position == 8
        assert "line 2, column 3" in str(err)

    def test_is_a_value_error(self):
        assert isinstance(error_of(")"), ValueError)

    def test_limits_are_stated(self):
        err = error_of("x+" * (MAX_LENGTH // 2) + "x")
        assert str(MAX_LENGTH) in str(err)
        err = error_of("(" * (MAX_DEPTH + 1) + "x" + ")" * (MAX_DEPTH + 1))
        assert err.position == MAX_DEPTH and "nesting" in str(err)

    def test_nesting_up_to_the_limit_is_accepted(self):
        text = "(" * (MAX_DEPTH - 1) + "x" + ")" * (MAX_DEPTH - 1)
        assert parse_equation(text).f(2.0) == 2.0
        text = "sin(" * 60 + "x" + ")" * 60
        eq = parse_equation(text)
        reference = 0.5  # iterate math.sin 60 times (the definition)
        for _ in range(60):
            reference = math.sin(reference)
        assert eq.f(0.5) == pytest.approx(reference, rel=1e-14)


# ---------------------------------------------------------------------------------------------
# Big numbers and powers
# ---------------------------------------------------------------------------------------------


class TestBigNumbers:
    def test_large_integer_exponent_of_the_unknown_is_fine(self):
        eq = parse_equation("(x+1)^1000000 - 2")
        assert eq.f(0.0) == -1.0
        assert eq.f(1.0) == math.inf  # 2^1000000 overflows double: inf, not an exception
        # d/dx (x+1)^n = n (x+1)^(n-1)  (power rule)
        assert eq.fprime(0.0) == 1e6

    def test_exact_constants_stay_exact_in_the_typeset_form(self):
        eq = parse_equation("x = 2^10/3")
        assert eq.latex == r"x = \frac{2^{10}}{3}"
        assert eq.f(0.0) == pytest.approx(-1024 / 3, rel=1e-15)

    def test_huge_power_of_a_constant_is_refused_not_computed(self):
        err = error_of("x = 2^10000")
        assert "overflows" in str(err) and err.position == 4

    def test_powers_just_inside_double_range(self):
        # 2^1023 is the largest power of two in IEEE 754 double (IEEE 754-2008, binary64)
        assert value("x - 2^1023", 0.0) == -(2.0**1023)
        assert value("x - 10^308", 0.0) == -1e308

    def test_large_exponent_on_a_fraction_is_floating_point(self):
        # (1/2)^2000 underflows to 0 in double; refused? no: it is a finite value
        assert value("x + 0.5^2000", 1.0) == 1.0

    def test_parameter_values_are_checked_like_constants(self):
        err = error_of("x = n^n^n", parameters={"n": 10.0})
        assert "with the given parameter values" in str(err)
        err = error_of("x = sqrt(a)", parameters={"a": -1.0})
        assert "no real value" in str(err)

    def test_parameter_doubles_are_used_exactly(self):
        # sympy's lambdify prints Floats with 15 digits; a value needs 17 to round-trip
        a = 1.2345678901234567
        assert value("x + a", 0.0, a=a) == a
        assert value("x + 0.1 + 0.2", 0.0) == 0.1 + 0.2


# ---------------------------------------------------------------------------------------------
# Evaluation: vectorised, real-valued, never raising
# ---------------------------------------------------------------------------------------------


class TestEvaluation:
    def test_float_in_float_out(self):
        eq = parse_equation("x^3 - 2*x - 5")
        for x in (2.0, 2, np.float64(2.0), np.float32(2.0), np.int32(2)):
            out = eq.f(x)
            assert type(out) is float and out == -1.0
            assert type(eq.fprime(x)) is float

    def test_array_in_array_out_same_shape(self):
        eq = parse_equation("x^3 - 2*x - 5")
        x = np.linspace(-3, 3, 12).reshape(3, 4)
        y = eq.f(x)
        assert isinstance(y, np.ndarray) and y.shape == (3, 4) and y.dtype == np.float64
        np.testing.assert_array_equal(y, x**3 - 2 * x - 5)  # reference: numpy directly
        assert eq.fprime(x).shape == (3, 4)
        assert eq.f([1.0, 2.0]).shape == (2,)

    def test_constant_equation_broadcasts(self):
        eq = parse_equation("x - x + 1")
        assert any("does not depend" in n for n in remarks_text(eq.remarks))
        assert eq.f(np.zeros(5)).shape == (5,)
        assert eq.f(3.0) == 1.0

    @pytest.mark.parametrize(
        ("text", "x", "expected"),
        [
            ("sqrt(x)", -1.0, math.nan),  # real arithmetic: no complex results
            ("x^0.5", -4.0, math.nan),
            ("x^(1/3)", -8.0, math.nan),  # principal real power undefined for x < 0
            ("ln(x)", 0.0, -math.inf),  # IEEE 754: log(0) = -inf
            ("ln(x)", -1.0, math.nan),
            ("1/x", 0.0, math.inf),
            ("acos(x)", 2.0, math.nan),
            ("atanh(x)", 1.0, math.inf),
            ("exp(x)", 1000.0, math.inf),  # overflow
            ("x^x", 1e10, math.inf),
            ("abs(sqrt(x))", -1.0, math.nan),  # a nan stays nan through abs
            ("min(sqrt(x), 1)", -1.0, math.nan),
            ("sin(x)", math.inf, math.nan),
            ("x^2", -3.0, 9.0),  # integer powers of negatives are real
            ("x^3", -2.0, -8.0),
        ],
    )
    def test_domain_errors_give_nan_or_inf_never_an_exception(self, text, x, expected):
        eq = parse_equation(text)
        with warnings.catch_warnings():
            warnings.simplefilter("error")  # numpy warnings must not leak either
            got = eq.f(x)
            arr = eq.f(np.array([x, x]))
        assert type(got) is float
        np.testing.assert_array_equal([got, *arr], [expected] * 3)

    def test_scalar_and_array_paths_agree(self):
        text = ("sqrt(abs(sin(x)^2 - cos(x)^3)) + atan2(x, 2) - min(x, max(x^2, 1)) "
                "+ ln(x)/log10(x) + tanh(asinh(x)) + x^1.7 + exp(-x)")
        eq = parse_equation(text)
        xs = np.concatenate([np.linspace(-5, 5, 101), [0.0, 1.0, -1.0]])
        arr = eq.f(xs)
        one_by_one = np.array([eq.f(float(x)) for x in xs])
        np.testing.assert_allclose(one_by_one, arr, rtol=1e-14, atol=0, equal_nan=True)
        np.testing.assert_allclose([eq.fprime(float(x)) for x in xs], eq.fprime(xs),
                                   rtol=1e-13, atol=0, equal_nan=True)

    def test_values_against_scipy_special_references(self):
        # scipy.special.exprel(x) = (exp(x) - 1)/x ; scipy.special.log1p
        assert value("(exp(x) - 1)/x", 0.3) == pytest.approx(scipy.special.exprel(0.3),
                                                            rel=1e-14)
        assert value("ln(1 + x)", 0.25) == pytest.approx(scipy.special.log1p(0.25), rel=1e-15)
        # scipy.special.sindg: sine of an angle in degrees
        assert value("sin(x*deg)", 37.0) == pytest.approx(scipy.special.sindg(37.0), rel=1e-14)

    def test_physical_constant_passed_as_a_parameter(self):
        # Free fall from rest, h = g t^2 / 2 (Galileo's law; common practice), with standard
        # gravity g from scipy.constants (9.80665 m/s^2, CGPM 1901). Solve for the time to
        # fall 20 m and compare with the closed form t = sqrt(2 h / g).
        g = scipy.constants.g
        eq = parse_equation("h = g*t^2/2", parameters={"h": 20.0, "g": g})
        root = scipy.optimize.brentq(eq.f, 0.1, 10.0, xtol=1e-15, rtol=8.9e-16)
        assert root == pytest.approx(math.sqrt(2 * 20.0 / g), rel=1e-14)
        # Newton with the compiled derivative (scipy.optimize.newton as the reference solver)
        newton_root = scipy.optimize.newton(eq.f, 1.0, fprime=eq.fprime, tol=1e-15)
        assert newton_root == pytest.approx(math.sqrt(2 * 20.0 / g), rel=1e-14)

    def test_colebrook_friction_factor_against_its_closed_form(self):
        # The Colebrook equation y = -2 log10(a + b y), y = 1/sqrt(f), a = eps/(3.7 D),
        # b = 2.51/Re, has a closed form through the Wright omega function
        # (scipy.special.wrightomega solves w + ln w = z): with c = 2/ln 10,
        # y = (b c omega(z) - a)/b where z = a/(b c) - ln(b c).
        eps, D, Re = 4.5e-5, 0.1, 1e5  # invented pipe (commercial steel roughness)
        eq = parse_equation("1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))",
                            parameters={"eps": eps, "D": D, "Re": Re})
        a, b, c = eps / (3.7 * D), 2.51 / Re, 2 / math.log(10)
        z = a / (b * c) - math.log(b * c)
        y = (b * c * scipy.special.wrightomega(z).real - a) / b
        closed_form = 1 / y**2
        ours = scipy.optimize.brentq(eq.f, 0.005, 0.1, xtol=1e-16, rtol=8.9e-16)
        assert ours == pytest.approx(closed_form, rel=1e-13)
        assert abs(eq.f(closed_form)) < 1e-12
        # Moody-chart magnitude for Re = 1e5, eps/D = 4.5e-4: f ~ 0.0205 (from memory)
        assert 0.019 < ours < 0.022


# ---------------------------------------------------------------------------------------------
# Derivative
# ---------------------------------------------------------------------------------------------


def central_difference(f, x: float, h: float = 1e-6) -> float:
    return (f(x + h) - f(x - h)) / (2 * h)


class TestDerivative:
    @pytest.mark.parametrize(
        ("text", "x", "reference"),
        [
            # references: calculus tables (common practice), evaluated with math/numpy
            ("sin(x)", 0.7, math.cos(0.7)),
            ("exp(2x)", 0.3, 2 * math.exp(0.6)),
            ("ln(x)", 4.0, 0.25),
            ("log10(x)", 4.0, 1 / (4.0 * math.log(10))),
            ("log2(x)", 4.0, 1 / (4.0 * math.log(2))),
            ("sqrt(x)", 4.0, 0.25),
            ("atan(x)", 2.0, 1 / 5),
            ("asinh(x)", 2.0, 1 / math.sqrt(5)),
            ("x^x", 2.0, 4 * (math.log(2) + 1)),
            ("abs(x)", -3.0, -1.0),  # sign(x) away from the kink
            ("max(x, 1)", 3.0, 1.0),
            ("max(x, 1)", 0.0, 0.0),
            ("atan2(x, 2)", 1.0, 2 / 5),
        ],
    )
    def test_symbolic_derivative_values(self, text, x, reference):
        eq = parse_equation(text)
        assert eq.fprime is not None
        assert eq.fprime(x) == pytest.approx(reference, rel=1e-14)

    @pytest.mark.parametrize(
        "text",
        [
            "1/sqrt(x) + 2*log10(1e-4/3.7 + 2.51/(1e5*sqrt(x)))",
            "x^3 - 2*x - 5",
            "cos(x)*cosh(x) + 1",
            "tan(x) - x",
            "exp(-x^2)*sin(3x)",
            "(1 + x)^(-12) - 0.5",
        ],
    )
    def test_derivative_matches_a_central_difference(self, text):
        eq = parse_equation(text)
        for x in (0.3, 0.9, 1.4):
            # central difference with h = 1e-6: truncation ~h^2, rounding ~eps/h (common practice)
            assert eq.fprime(x) == pytest.approx(central_difference(eq.f, x), rel=1e-7, abs=1e-8)

    @pytest.mark.parametrize(
        "text",
        [
            "exp(sin(x)) * ln(x) / (1 + x^2)",
            "asin(x/3) + acos(x/4) + atan(x) + atanh(x/5)",
            "sinh(x)*cosh(x) - tanh(x)^3 + asinh(x) + acosh(x + 2)",
            "log10(x) + log2(x) + sqrt(x)^3 + x^x + 2^x",
            "atan2(x^2, 1 + x) + tan(x)",
            "x^(1/3) + (x + 1)^-2.5",
        ],
    )
    def test_chain_rule_matches_sympy_diff(self, text):
        eq = parse_equation(text)
        x = sp.Symbol("x", real=True)
        reference = sp.lambdify(x, sp.diff(eq.expr, x), "mpmath")  # sympy's own diff, mpmath
        for point in (0.4, 0.9, 1.7):
            assert eq.fprime(point) == pytest.approx(float(reference(point)), rel=1e-13)

    def test_kinks_differentiate_through_nested_functions(self):
        # sympy's diff of abs(asin(...)) goes through re/im/conjugate; ours stays real
        eq = parse_equation("abs(asin(x/2) - 0.3) + max(acosh(x + 1), x)")
        assert eq.fprime is not None
        for point in (0.1, 0.9):
            assert eq.fprime(point) == pytest.approx(central_difference(eq.f, point), rel=1e-7)
        # at a tie max(a, b)' is the mean of the one-sided slopes (H(0) = 1/2)
        assert parse_equation("max(x, 2 - x)").fprime(1.0) == 0.0

    def test_derivative_is_sympys(self):
        eq = parse_equation("a*x^3 + sin(b*x)", parameters={"a": 2.0, "b": 3.0})
        x = sp.Symbol("x", real=True)
        reference = sp.lambdify(x, sp.diff(2 * x**3 + sp.sin(3 * x), x))  # sympy's derivative
        for point in (-1.3, 0.2, 2.7):
            assert eq.fprime(point) == pytest.approx(reference(point), rel=1e-15)
        a, b = sp.symbols("a b", real=True)
        by_hand = 3 * a * x**2 + b * sp.cos(b * x)  # d/dx (a x^3 + sin(b x)), calculus tables
        difference = eq.symbolic_derivative - by_hand
        assert difference.subs({a: 2, b: 3, x: 0.7}) == pytest.approx(0, abs=1e-14)

    def test_expression_keeps_parameters_as_symbols(self):
        eq = parse_equation("a*x = b", parameters={"a": 2.0, "b": 3.0})
        assert {str(s) for s in eq.symbolic_expr.free_symbols} == {"a", "b", "x"}
        assert {str(s) for s in eq.expr.free_symbols} == {"x"}
        assert eq.f(1.5) == 0.0

    def test_unusable_derivative_gives_no_fprime_and_a_note(self):
        eq = parse_equation("0^x + x")  # d/dx 0^x has log(0) in it
        assert eq.fprime is None and eq.derivative is None
        assert any("numerical" in n for n in remarks_text(eq.remarks))
        assert eq.f(2.0) == 2.0

    def test_oversized_derivative_is_skipped_quickly(self):
        text = "*".join(f"sin({k}x)" for k in range(1, 120))
        eq = parse_equation(text)
        assert eq.fprime is None
        assert any("numerical" in n for n in remarks_text(eq.remarks))

    def test_domain_errors_in_the_derivative_give_nan(self):
        eq = parse_equation("sqrt(x)")
        assert math.isnan(eq.fprime(-1.0))
        assert eq.fprime(0.0) == math.inf


# ---------------------------------------------------------------------------------------------
# Typeset form and high-precision residual
# ---------------------------------------------------------------------------------------------

TYPESET = [
    "1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))",
    "Q = (1/n)*A*(A/P)^(2/3)*sqrt(S)",
    "(p + a/v^2)*(v - b) = R*T",
    "cos(x)*cosh(x) + 1",
    "atan2(y, x) + asinh(x) + acosh(x) + atanh(x/2) + abs(x) + min(x, 1) + max(x, y)",
    "log2(x) + ln(x) + exp(-x) + sinh(x) + tanh(x) + tan(x*deg) + pi",
    "sum_k - C_0*(1 + r)^(-N)",
    "m*cp*(Thi - T) = U*A*LMTD/Re^(3/2)",
]


class TestTypeset:
    @pytest.mark.parametrize("text", TYPESET)
    def test_latex_renders_with_matplotlib_mathtext(self, text):
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure

        names = free_names(text)
        unknown = names[0]
        eq = parse_equation(text, unknown=unknown,
                            parameters={n: 1.5 for n in names if n != unknown})
        for tex in (eq.latex, eq.derivative_latex):
            assert tex and "operatorname" not in tex
            assert mathtext(tex, "plain") == f"${tex}$"  # mathtext parses it
        fig = Figure()
        FigureCanvasAgg(fig)
        fig.text(0.1, 0.5, f"${eq.latex}$")
        fig.text(0.1, 0.2, f"${eq.derivative_latex}$")
        fig.canvas.draw()  # raises if mathtext cannot lay it out

    def test_parameters_are_shown_by_name(self):
        eq = parse_equation("E*I*x = w*L^4", parameters={"E": 2e11, "I": 1e-6, "w": 1.0,
                                                           "L": 2.0})
        assert eq.latex == "E I x = w L^{4}"

    def test_typeset_follows_the_typed_order(self):
        assert parse_equation("x - 2*y = 0", unknown="x",
                              parameters={"y": 1}).latex == "x - 2 y = 0"
        assert parse_equation("-x^2/2 + 1").latex == r"- \frac{x^{2}}{2} + 1 = 0"

    def test_mathtext_fallback_is_the_plain_text(self):
        assert mathtext(r"\begin{cases} x \end{cases}", "x = 1 $") == r"x = 1 \$"
        eq = parse_equation("2x = 1")
        assert mathtext(eq.latex, eq.text) == "$2 x = 1$"


class TestHighPrecisionResidual:
    def test_residual_at_a_root_in_fifty_digits(self):
        eq = parse_equation("x^2 = 2")
        with mpmath.workdps(60):
            reference = mpmath.mpf(1.4142135623730951) ** 2 - 2  # mpmath directly
        r = eq.residual_mp(1.4142135623730951, dps=50)
        assert isinstance(r, mpmath.mpf)
        assert abs(r - reference) < mpmath.mpf(10) ** -45

    def test_constants_and_parameters_are_the_doubles_f_uses(self):
        # The residual checks the equation that was solved: pi and 0.1 as doubles.
        eq = parse_equation("x - a", parameters={"a": 0.1})
        assert eq.residual_mp(0.1) == 0
        with mpmath.workdps(50):
            # 0.3 - 0.1 in 50 digits is not the double 0.3 - 0.1 (mpmath as reference)
            assert eq.residual_mp(0.3) == mpmath.mpf(0.3) - mpmath.mpf(0.1)
        assert parse_equation("x - pi").residual_mp(math.pi) == 0

    def test_not_real_gives_nan(self):
        eq = parse_equation("sqrt(x)")
        assert mpmath.isnan(eq.residual_mp(-1.0))
        assert mpmath.isnan(parse_equation("1/x").residual_mp(0.0))


def test_equation_is_the_public_record():
    eq = parse_equation("x = 1")
    assert isinstance(eq, Equation)
    with pytest.raises(AttributeError):
        eq.unknown = "y"  # frozen


def test_parsing_in_worker_threads_gives_the_same_results():
    # The window parses in worker threads: results must not depend on concurrency.
    from concurrent.futures import ThreadPoolExecutor

    texts = ["x^2 - a", "sin(x) = b*x", "1/sqrt(x) + 2*log10(c + 2.51/(d*sqrt(x)))",
             "abs(x - 1) + max(x, a)"] * 10
    params = {"a": 2.0, "b": 0.3, "c": 1e-4, "d": 1e5}

    def job(text):
        eq = parse_equation(text, parameters=params)
        return eq.latex, eq.derivative_latex, eq.f(0.7), eq.fprime(0.7)

    serial = [job(t) for t in texts]
    with ThreadPoolExecutor(4) as pool:
        assert list(pool.map(job, texts)) == serial


def test_typeset_derivative_shows_folded_constants_to_six_figures() -> None:
    # 1/3.7 is folded to 0.27027027027027 while differentiating; the reader sees 0.27027.
    eq = parse_equation(
        "1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))",
        parameters={"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5},
    )
    assert "0.27027 " in eq.derivative_latex
    assert "0.2702702" not in eq.derivative_latex
    # The derivative used for numbers keeps full precision: check it against a central difference.
    h = 1e-7
    numeric = (eq.f(0.02 + h) - eq.f(0.02 - h)) / (2 * h)
    assert eq.fprime(0.02) == pytest.approx(numeric, rel=1e-6)


# --- Typeset products and numbers (found by a new-user trial) -----------------------------
# The convention (ours): a name of several letters is one upright symbol (\mathrm{cp});
# a product holding one separates its factors by \cdot, so "m cp" cannot read as m*c*p.


def test_multi_letter_names_are_one_symbol_and_set_apart_in_products() -> None:
    eq = parse_equation("m*cp*(Thi - T) = U*A*LMTD", unknown="T",
                        parameters=dict(m=2.0, cp=4180.0, Thi=350.0, U=500.0, A=2.0,
                                        LMTD=10.0))
    assert eq.latex == (r"m \cdot \mathrm{cp} \cdot \left(\mathrm{Thi} - T\right)"
                        r" = U \cdot A \cdot \mathrm{LMTD}")
    # Its derivative -m*cp, printed by sympy's printer with the same convention.
    assert eq.derivative_latex == r"- \mathrm{cp} \cdot m"
    # One-letter products stay juxtaposed; Greek names and split subscripts keep their form.
    assert parse_equation("E*I*x = w*L^4", parameters={"E": 2.0, "I": 1.0, "w": 1.0,
                                                       "L": 2.0}).latex == "E I x = w L^{4}"
    assert parse_equation("alpha*x_1 = 2", unknown="x_1",
                          parameters={"alpha": 1.0}).latex == r"\alpha x_{1} = 2"


def test_friction_factor_derivative_separates_re_from_f() -> None:
    eq = parse_equation("1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))",
                        parameters={"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5})
    assert r"\mathrm{Re} \cdot f^{\frac{3}{2}}" in eq.derivative_latex
    assert "Re f" not in eq.derivative_latex and r"\mathrm{eps}" in eq.derivative_latex


def test_unit_scale_one_is_not_printed_as_a_coefficient() -> None:
    # T in degC enters f as 1.0*T + 273.15 (SI kelvin); the typeset derivative is in the
    # quantities as typed, so it shows neither that "1" nor the offset, and -1*x as -x:
    # the same formula as the equation given in plain SI numbers.
    text = "m*cp*(Thi - T) = U*A*((T-Tci)-(Thi-Tco))/ln((T-Tci)/(Thi-Tco))"
    eq = parse_equation(
        text, unknown="T", unknown_unit="degC",
        parameters=dict(m="2 kg/s", cp="4180 J/(kg*K)", Thi="80 degC", U="500 W/(m^2*K)",
                        A="2 m^2", Tco="30 degC", Tci="20 degC"))
    tex = eq.derivative_latex
    assert "1 " not in tex and "1.0" not in tex and r"1 \cdot" not in tex
    assert "273.15" not in tex and tex.endswith(r"- \mathrm{cp} \cdot m")
    plain = parse_equation(text, unknown="T", parameters=dict(
        m=2.0, cp=4180.0, Thi=353.15, U=500.0, A=2.0, Tco=303.15, Tci=293.15))
    assert tex == plain.derivative_latex
    assert mathtext(tex, "plain") == f"${tex}$"
    # f' itself (what Newton evaluates) still takes T in degC: the offset is in it.
    assert "273.15" in str(eq.symbolic_derivative)


def test_typeset_numbers_are_not_padded_with_zeros() -> None:
    # hf = fD*(L/D)*(4Q/(pi D^2))^2/(2g) with D in mm: f'(D) = 40/pi^2 * 10^15 L Q^2 fD /
    # (D^6 g) (closed form, D_SI = D/1000). repr wrote 4052850000000000.0 (16 digits, 10
    # of them padding); six significant figures are shown as mantissa and power.
    eq = parse_equation("hf = fD*(L/D)*(4*Q/(pi*D^2))^2/(2*g)", unknown="D",
                        unknown_unit="mm",
                        parameters=dict(hf="15 ft", fD=0.018, L="800 ft", Q="450 gal/min",
                                        g="32.174 ft/s^2"))
    mantissa = f"{40 / math.pi ** 2:.6g}"  # 4.05285
    in_mm = typeset_derivative(eq.symbolic_derivative)  # f' of D's number in mm
    assert in_mm.startswith(rf"\frac{{{mantissa} \cdot 10^{{15}} \cdot L")
    assert "0000" not in in_mm
    # The strip's derivative is in the quantities as typed: no 10^15 of the mm.
    assert eq.derivative_latex.startswith(rf"\frac{{{mantissa} \cdot L")


@pytest.mark.parametrize(("value", "tex"), [
    (4.05285e15, r"4.05285 \cdot 10^{15}"), (1e-6, "10^{-6}"), (-2.5e-7, r"-2.5 \cdot 10^{-7}"),
    (273.15, "273.15"), (2.0, "2"), (123456.0, "123456"), (0.1, "0.1"), (1e6, "10^{6}"),
    (2.5e14, r"2.5 \cdot 10^{14}"),
])
def test_float_constants_print_shortest_digits(value: float, tex: str) -> None:
    # Shortest round-trip digits (Python's repr, the common practice for doubles).
    assert latex_of(sp.Float(value)) == tex
    mantissa, _, power = tex.partition(r" \cdot 10^{")
    back = float(mantissa) * 10.0 ** int(power[:-1]) if power else None
    assert back is None or back == pytest.approx(value, rel=1e-15)
