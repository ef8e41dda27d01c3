"""Parse once, bind late: Equation.bind gives new parameter values without parsing again.

Outside references (each check names its own): a fresh parse_equation of the same text
(the behaviour bind replaces), numpy written out by hand, numpy.roots for the cubic
equation of state, scipy.optimize.brentq and scipy.optimize.newton for roots, and a
central-difference derivative. Scenarios are invented (pipes, gas states, plates).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.optimize
import sympy as sp

import solvers.equation.parser as parser_module
import solvers.equation.parsing as parsing_module
from solvers import EquationError, parse_equation

COLEBROOK = "1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))"
VDW = "(p + a/v^2)*(v - b) = R*T"  # van der Waals equation of state, solved for v
PLATE = "x*tan(x) = Bi"  # conduction eigenvalue equation of a plane wall (Biot number Bi)

CASES = [
    (COLEBROOK, "f", {"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5},
     {"eps": 1.5e-6, "D": 0.05, "Re": 2.4e6}, (0.008, 0.02, 0.05)),
    (VDW, "v", {"p": 2e6, "a": 0.3640, "b": 4.267e-5, "R": 8.314, "T": 300.0},
     {"p": 5e6, "a": 0.1382, "b": 3.19e-5, "R": 8.314, "T": 250.0}, (1e-4, 5e-4, 1e-3)),
    (PLATE, "x", {"Bi": 0.9}, {"Bi": 7.5}, (0.3, 0.8, 1.4)),
]


def colebrook(f, eps, D, Re):
    """The Colebrook residual written out with numpy (independent of the parser)."""
    return 1 / np.sqrt(f) + 2 * np.log10(eps / (3.7 * D) + 2.51 / (Re * np.sqrt(f)))


@pytest.mark.parametrize(("text", "unknown", "first", "second", "points"), CASES,
                         ids=["colebrook", "van-der-waals", "plane-wall"])
def test_bind_gives_the_values_of_a_fresh_parse(text, unknown, first, second, points):
    eq = parse_equation(text, unknown=unknown, parameters=first)
    rebound = eq.bind(second)
    fresh = parse_equation(text, unknown=unknown, parameters=second)  # reference: a new parse
    for x in points:
        assert rebound.f(x) == fresh.f(x)
        assert rebound.fprime(x) == fresh.fprime(x)
        # central difference as an independent derivative (step ~ cube root of eps * x)
        h = 1e-6 * x
        numeric = (rebound.f(x + h) - rebound.f(x - h)) / (2 * h)
        assert rebound.fprime(x) == pytest.approx(numeric, rel=1e-6)
    assert rebound.parameters == second
    assert rebound.expr == fresh.expr and rebound.derivative == fresh.derivative
    assert rebound.latex == fresh.latex and rebound.remarks == fresh.remarks
    assert eq.f(points[1]) == parse_equation(text, unknown=unknown, parameters=first).f(points[1])


def test_bound_colebrook_matches_numpy_written_out():
    eq = parse_equation(COLEBROOK, parameters={"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5})
    values = {"eps": 2.6e-4, "D": 0.3, "Re": 8e5}  # invented cast-iron main
    rebound = eq.bind(values)
    for f in (0.01, 0.02, 0.04):
        assert rebound.f(f) == pytest.approx(colebrook(f, **values), rel=1e-13)


def test_bound_cubic_roots_agree_with_numpy_roots():
    eq = parse_equation(VDW, unknown="v",
                        parameters={"p": 2e6, "a": 0.3640, "b": 4.267e-5, "R": 8.314, "T": 300.0})
    # invented constants of a gas below its critical temperature (8a/(27Rb) ~ 304 K):
    # three real volumes; R in J/(mol K) from memory (scipy.constants.R = 8.314462618)
    values = {"p": 4e6, "a": 0.3640, "b": 4.267e-5, "R": 8.314, "T": 270.0}
    rebound = eq.bind(values)
    p, a, b, R, T = (values[k] for k in "pabRT")
    # p v^3 - (p b + R T) v^2 + a v - a b = 0 (the same equation times v^2); numpy.roots
    reference = sorted(r.real for r in np.roots([p, -(p * b + R * T), a, -a * b])
                       if abs(r.imag) < 1e-12 * abs(r))
    assert len(reference) == 3
    for v in reference:
        root = scipy.optimize.newton(rebound.f, v * (1 + 1e-3), fprime=rebound.fprime,
                                     tol=1e-16, maxiter=100)
        assert root == pytest.approx(v, rel=1e-10)


def test_bind_neither_parses_nor_compiles(monkeypatch):
    eq = parse_equation(COLEBROOK, parameters={"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5})
    # warm-up: the math-module paths are compiled once, at their first scalar use
    warm = eq.bind({"eps": 2e-5, "D": 0.2, "Re": 2e5})
    warm.f(0.02), warm.fprime(0.02)
    calls = []

    def counting(name, original):
        def wrapper(*args, **kwargs):
            calls.append(name)
            return original(*args, **kwargs)
        return wrapper

    monkeypatch.setattr(parsing_module, "read_lines", counting("read", parsing_module.read_lines))
    monkeypatch.setattr(parser_module._Parser, "equation",
                        counting("parse", parser_module._Parser.equation))
    monkeypatch.setattr(sp, "lambdify", counting("lambdify", sp.lambdify))
    for k in range(10):
        rebound = eq.bind({"eps": 1e-5 * (k + 1), "D": 0.1, "Re": 5e5})
        assert math.isfinite(rebound.f(0.02)) and math.isfinite(rebound.fprime(0.02))
        assert rebound.f(np.array([0.01, 0.03])).shape == (2,)
    assert calls == []
    parse_equation(COLEBROOK, parameters={"eps": 1e-5, "D": 0.1, "Re": 5e5})
    assert "read" in calls and "lambdify" in calls  # the counters do see a parse


def _pipe_rows(n: int) -> dict[str, np.ndarray]:
    rng = np.random.default_rng(20261202)  # invented pipes: roughness, bore, Reynolds number
    return {"eps": rng.uniform(1e-6, 5e-4, n), "D": rng.uniform(0.02, 1.0, n),
            "Re": 10 ** rng.uniform(3.7, 7.5, n)}


def test_array_parameters_broadcast_in_one_call():
    eq = parse_equation(COLEBROOK, parameters={"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5})
    rows = _pipe_rows(100_000)
    calls = {"n": 0}
    vector = eq._core.f_code.vector

    def counted(*args):
        calls["n"] += 1
        return vector(*args)

    eq._core.f_code.vector = counted
    try:
        table = eq.bind(rows)
        y = table.f(0.02)
    finally:
        eq._core.f_code.vector = vector
    assert calls["n"] == 1 and y.shape == (100_000,) and y.dtype == np.float64
    # a Python loop of scalar binds on a sample of rows gives the same values
    for i in range(0, 100_000, 997):
        row = eq.bind({k: float(v[i]) for k, v in rows.items()})
        assert y[i] == pytest.approx(row.f(0.02), rel=1e-14)
        assert table.fprime(0.02)[i] == pytest.approx(row.fprime(0.02), rel=1e-14)
    # numpy by hand; the two terms are ~7 in size, so near a root agreement is absolute, to
    # a few units in the last place of the terms
    np.testing.assert_allclose(y, colebrook(0.02, **rows), rtol=1e-13, atol=1e-14)
    # x broadcasts against the rows too: a column of x against a row of values
    grid = table.f(np.array([[0.01], [0.03]]))
    assert grid.shape == (2, 100_000)
    # a parameter that is a row vector against one that is a column: an outer table
    outer = eq.bind({"eps": np.array([1e-6, 1e-4]), "D": np.array([[0.1], [0.2], [0.4]]),
                     "Re": 1e5})
    assert outer.f(0.02).shape == (3, 2)
    assert outer.f(0.02)[2, 1] == eq.bind({"eps": 1e-4, "D": 0.4, "Re": 1e5}).f(0.02)


def test_newton_on_bound_rows_agrees_with_brentq_per_row():
    eq = parse_equation(COLEBROOK, parameters={"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5})
    rows = _pipe_rows(100_000)
    table = eq.bind(rows)
    # start values: the Swamee-Jain explicit approximation (published 1976; from memory)
    start = 0.25 / np.log10(rows["eps"] / (3.7 * rows["D"]) + 5.74 / rows["Re"] ** 0.9) ** 2
    # scipy.optimize.newton iterates every row at once with an array start value
    roots = scipy.optimize.newton(table.f, start, fprime=table.fprime, tol=1e-15, maxiter=100)
    assert np.all(np.isfinite(roots))
    for i in range(0, 100_000, 1999):
        values = {k: float(v[i]) for k, v in rows.items()}
        # reference: scipy.optimize.brentq on the residual written out with numpy
        reference = scipy.optimize.brentq(lambda f, v=values: colebrook(f, **v), 1e-3, 0.5,
                                          xtol=1e-16, rtol=1e-15)
        assert roots[i] == pytest.approx(reference, rel=1e-10)


def test_plane_wall_eigenvalues_per_biot_number():
    eq = parse_equation(PLATE, unknown="x", parameters={"Bi": 1.0})
    bi = np.array([0.1, 1.0, 10.0, 100.0])
    table = eq.bind({"Bi": bi})
    # from the right of the first root, where x tan x - Bi is increasing and convex, Newton's
    # steps stay in the first branch (0, pi/2)
    start = np.full(4, math.pi / 2 * (1 - 1e-3))
    roots = scipy.optimize.newton(table.f, start, fprime=table.fprime, tol=1e-15, maxiter=100)
    for b, root in zip(bi, roots, strict=True):
        # reference: scipy.optimize.brentq on x tan x - Bi in the first branch (0, pi/2)
        reference = scipy.optimize.brentq(lambda x, b=b: x * math.tan(x) - b, 1e-9,
                                          math.pi / 2 - 1e-12, xtol=1e-16, rtol=1e-15)
        assert root == pytest.approx(reference, rel=1e-10)


@pytest.mark.parametrize(
    ("values", "named"),
    [
        ({"eps": 1e-5, "D": 0.1, "Re": 1e5, "L": 3.0}, "'L'"),  # not in the equation
        ({"eps": 1e-5, "D": 0.1, "Re": 1e5, "f": 0.02}, "'f'"),  # the unknown
        ({"eps": 1e-5, "D": 0.1, "Re": math.nan}, "'Re'"),
        ({"eps": 1e-5, "D": math.inf, "Re": 1e5}, "'D'"),
        ({"eps": 1e-5, "D": 0.1, "Re": np.array([1e5, np.inf])}, "'Re'"),
        ({"eps": "1e-5", "D": 0.1, "Re": 1e5}, "'eps'"),
        ({"eps": np.array([1 + 1j]), "D": 0.1, "Re": 1e5}, "'eps'"),
    ],
)
def test_bind_refuses_names_and_values_it_cannot_use(values, named):
    eq = parse_equation(COLEBROOK, parameters={"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5})
    with pytest.raises(EquationError) as info:
        eq.bind(values)
    message = str(info.value)
    assert named in message and "\n" not in message


def test_parse_without_values_then_bind_gives_a_full_parse():
    """Parse once, bind late: with the unknown named, the parameters can wait for bind.
    Reference: a fresh parse with the values, and the residual written out in numpy."""
    eq = parse_equation(COLEBROOK, unknown="f")
    assert eq.unbound == ("eps", "D", "Re") and eq.parameters == {}
    values = {"eps": 4.5e-5, "D": 0.15, "Re": np.array([4e3, 1.2e5, 3e7])}
    bound, fresh = eq.bind(values), parse_equation(COLEBROOK, parameters=values)
    x = np.array([0.04, 0.02, 0.01])
    assert bound.unbound == ()
    np.testing.assert_array_equal(bound.f(x), fresh.f(x))
    np.testing.assert_allclose(bound.f(x), colebrook(x, 4.5e-5, 0.15, values["Re"]), rtol=1e-13)


def test_an_unbound_equation_names_the_missing_values_when_used():
    eq = parse_equation(COLEBROOK, unknown="f", parameters={"D": 0.15})
    assert eq.unbound == ("eps", "Re")
    for use in (eq.f, eq.fprime):
        with pytest.raises(EquationError, match="no value for 'eps', 'Re'"):
            use(0.02)
    defined = parse_equation("A = pi*D^2/4; Q = A*v", unknown="v", parameters={"D": 0.15})
    with pytest.raises(EquationError, match="no value for 'Q'"):
        defined.definition_values(1.0)
    with pytest.raises(EquationError, match="'Re'"):  # bind must complete the values
        eq.bind({"eps": 1e-5})
    # without a named unknown the parse cannot tell which name is the unknown: refused
    with pytest.raises(EquationError, match="cannot tell the unknown"):
        parse_equation(COLEBROOK, parameters={"D": 0.15})
    # the front ends ask for every value at parse time, with the name's column
    with pytest.raises(EquationError, match="no value for 'eps'") as info:
        parse_equation(COLEBROOK, unknown="f", parameters={"D": 0.15}, require_values=True)
    assert info.value.position == COLEBROOK.index("eps")


def test_bind_keeps_the_values_it_is_not_given_with_their_units():
    """bind replaces the values given and keeps the others (units included). Reference:
    v = sqrt(2 g h) in closed form, 3 ft = 0.9144 m exactly (NIST SP 811), standard
    gravity 9.80665 m/s^2 (scipy.constants.g)."""
    import scipy.constants

    eq = parse_equation("h = v^2/(2*g)", unknown="v", parameters={"h": "3 ft"})
    assert eq.unbound == ("g",)
    bound = eq.bind({"g": f"{scipy.constants.g} m/s^2"})
    assert bound.unknown_unit == "m/s" and bound.units["h"].unit == "ft"
    root = scipy.optimize.brentq(bound.f, 0.1, 100.0, xtol=1e-14)
    assert root == pytest.approx(math.sqrt(2 * scipy.constants.g * 0.9144), rel=1e-12)
    again = bound.bind({"h": "2 m"})  # g kept from the bind before
    assert again.parameters["g"] == scipy.constants.g
    assert scipy.optimize.brentq(again.f, 0.1, 100.0, xtol=1e-14) == pytest.approx(
        math.sqrt(2 * scipy.constants.g * 2.0), rel=1e-12)


def test_rows_that_do_not_broadcast_are_refused_naming_them():
    eq = parse_equation(COLEBROOK, parameters={"eps": 4.5e-5, "D": 0.15, "Re": 1.2e5})
    with pytest.raises(EquationError) as info:
        eq.bind({"eps": np.full(3, 1e-5), "D": np.full(4, 0.1), "Re": 1e5})
    assert "eps (3,)" in str(info.value) and "D (4,)" in str(info.value)


def test_bind_checks_parts_with_parameters_only_like_a_parse():
    eq = parse_equation("x = sqrt(a) + 1/(b - 2)", parameters={"a": 1.0, "b": 3.0})
    with pytest.raises(EquationError) as info:
        eq.bind({"a": -1.0, "b": 3.0})
    assert "no real value" in str(info.value) and info.value.position == 4
    with pytest.raises(EquationError) as info:
        eq.bind({"a": 1.0, "b": 2.0})
    assert "division by zero" in str(info.value) and info.value.position == 16
    # in rows, the message names the first bad row
    with pytest.raises(EquationError) as info:
        eq.bind({"a": np.array([1.0, 4.0, -2.0]), "b": 3.0})
    assert "row 2" in str(info.value)
    # the same refusal as a fresh parse with those values
    with pytest.raises(EquationError) as fresh:
        parse_equation("x = sqrt(a) + 1/(b - 2)", parameters={"a": -1.0, "b": 3.0})
    with pytest.raises(EquationError) as bound:
        eq.bind({"a": -1.0, "b": 3.0})
    assert str(fresh.value) == str(bound.value)


@pytest.mark.parametrize(
    ("text", "kwargs"),
    [
        ("sin(30deg)*x = 1", {}),
        ("sin(x) = 0.5", {}),
        ("abs(x - 1) = 2", {}),
        ("x - x + 1", {}),
        ("e*x = 2e3", {"parameters": {"e": 2.0}}),
        ("a*x = 1", {"unknown": "x", "parameters": {"a": 2.0, "x": 5.0}}),
        ("0^x + x", {}),
        ("*".join(f"sin({k}x)" for k in range(1, 120)), {}),
    ],
)
def test_remarks_are_codes_and_every_code_has_words(text, kwargs):
    from app.documents.words import remarks_text

    eq = parse_equation(text, **kwargs)
    assert eq.remarks and all(r.code.isidentifier() for r in eq.remarks)
    # every code has its own sentence (an unknown code would fall back to the code itself)
    for remark, sentence in zip(eq.remarks, remarks_text(eq.remarks), strict=True):
        assert sentence and sentence != remark.code.replace("_", " "), remark
    # a binding keeps the remarks of the text (a parse's value remarks are its own)
    assert set(eq.bind(dict(eq.parameters)).remarks) <= set(eq.remarks)


def test_pipeline_binds_the_kept_equation_instead_of_parsing(monkeypatch):
    from app.documents.worksheet import Parameter, Settings, Worksheet
    from solvers import pipeline

    # an invented pipe; the worksheet is what the window and the CLI hand to the pipeline
    ws = Worksheet(equation=COLEBROOK, unknown="f",
                   parameters=(Parameter("eps", 4.5e-5), Parameter("D", 0.15),
                               Parameter("Re", 1.2e5)),
                   settings=Settings(x0=0.02, bracket=(0.005, 0.1), xtol=1e-14, max_iter=60))
    kept = pipeline.equation_of(ws)
    changed = ws.with_changes(parameters=(Parameter("eps", 2.6e-4), Parameter("D", 0.3),
                                          Parameter("Re", 8e5)))
    fresh = pipeline.solve(changed)  # parses

    def refuse(*args, **kwargs):
        raise AssertionError("parsed again")

    monkeypatch.setattr(parsing_module, "read_lines", refuse)
    bound = pipeline.solve(changed, pipeline.equation_of(changed, kept))
    assert [r.root for r in bound.runs] == [r.root for r in fresh.runs]
    # reference: scipy.optimize.brentq on the residual written out with numpy
    reference = scipy.optimize.brentq(lambda f: colebrook(f, 2.6e-4, 0.3, 8e5), 1e-3, 0.5,
                                      xtol=1e-16, rtol=1e-15)
    assert all(r.root == pytest.approx(reference, rel=1e-12) for r in bound.runs if r.converged)
    assert any(r.converged for r in bound.runs)


@pytest.mark.parametrize(
    ("text", "values"),
    [
        ("atan2(a*x, max(-x, b*x))", {"a": 1.0, "b": 1.0}),
        ("atan2(min(x, c), -a)", {"a": 0.0, "c": 0.0}),
        ("sqrt(x - c) + ln(a*x)", {"a": 2.0, "c": 1.0}),
        ("x^n - c", {"n": 0.5, "c": 3.0}),
    ],
)
def test_scalar_and_array_paths_agree_after_bind_signed_zeros_included(text, values):
    eq = parse_equation(text, unknown="x", parameters=values).bind(values)
    for x in (-0.0, 0.0, -1.5, 0.25, 2.0):
        one, row = eq.f(x), eq.f(np.array([x]))[0]
        # bitwise agreement (nan == nan), as in test_honesty_methods for unbound equations
        assert np.array_equal(np.array([one]), np.array([row]), equal_nan=True)
        assert math.copysign(1.0, one) == math.copysign(1.0, row) or math.isnan(one)
