"""The special functions an equation may call: erf, erfc and the Bessel functions of orders
0 and 1 (J0, J1, Y0, Y1, I0, I1, K0, K1), for transient conduction into a semi-infinite
solid, cylindrical conduction eigenvalues, fins and circular plates.

Outside references named beside each check: scipy.special (jn_zeros, yn_zeros, erfcinv, the
ufuncs themselves), mpmath at 50 digits (values and derivatives), Abramowitz & Stegun
Table 9.5 (zeros of J0 and J1), scipy.optimize.brentq, and one handbook value from memory.
"""

from __future__ import annotations

import math

import mpmath
import numpy as np
import pytest
import scipy.special as special
from scipy.optimize import brentq

from solvers import parse_equation, scan, solve_batch
from solvers.methods import brent, newton

# name -> the mpmath function of x (the reference for values and slopes)
MPMATH = {
    "erf": mpmath.erf, "erfc": mpmath.erfc,
    "J0": lambda x: mpmath.besselj(0, x), "J1": lambda x: mpmath.besselj(1, x),
    "Y0": lambda x: mpmath.bessely(0, x), "Y1": lambda x: mpmath.bessely(1, x),
    "I0": lambda x: mpmath.besseli(0, x), "I1": lambda x: mpmath.besseli(1, x),
    "K0": lambda x: mpmath.besselk(0, x), "K1": lambda x: mpmath.besselk(1, x),
}
POINTS = (0.05, 0.7, 1.3, 4.9, 11.2)


@pytest.mark.parametrize("name", sorted(MPMATH))
def test_values_and_symbolic_slopes_agree_with_mpmath(name):
    eq = parse_equation(f"{name}(x)")
    assert eq.fprime is not None  # f' is symbolic, not a difference
    for x in POINTS:
        # (erf(11.2) is 1 - 1e-56: its slope needs the digits)
        with mpmath.workdps(150 if name.startswith("erf") else 40):
            value = MPMATH[name](mpmath.mpf(x))
            slope = mpmath.diff(MPMATH[name], mpmath.mpf(x))
        assert eq.f(x) == pytest.approx(float(value), rel=1e-13, abs=1e-300)
        assert eq.fprime(x) == pytest.approx(float(slope), rel=1e-12, abs=1e-300)
        # the scalar path and the array path give the same bits
        assert eq.f(x) == eq.f(np.array([x]))[0]
        assert eq.fprime(x) == eq.fprime(np.array([x]))[0]
        assert float(eq.residual_mp(x, dps=30)) == pytest.approx(float(value), rel=1e-25)


def test_the_scan_finds_the_zeros_of_j0_j1_and_y0_as_tabulated():
    # scipy.special.jn_zeros / yn_zeros (A&S Table 9.5: 2.404825557695773, 5.520078110286311)
    for text, zeros in (("J0(x)", special.jn_zeros(0, 10)),
                        ("J1(x)", special.jn_zeros(1, 10)),
                        ("Y0(x)", special.yn_zeros(0, 10))):
        expected = zeros[(zeros > 0.5) & (zeros < 20.0)]
        eq = parse_equation(text)
        found = scan(eq.f, 0.5, 20.0, fprime=eq.fprime)
        assert [r.multiplicity for r in found.roots] == [1] * len(expected), text
        np.testing.assert_allclose([r.x for r in found.roots], expected, rtol=1e-13)


@pytest.mark.parametrize("bi", [0.1, 1.0, 10.0])
def test_cylinder_conduction_eigenvalue_matches_brentq_and_the_handbook(bi):
    # Transient conduction in a long cylinder: the first root of x J1(x)/J0(x) = Bi lies
    # below the first zero of J0. Reference: brentq on scipy.special.j1/j0; for Bi = 1 the
    # tabulated zeta_1 = 1.2558 (heat-transfer textbook table of one-term coefficients,
    # from memory).
    eq = parse_equation("x*J1(x)/J0(x) = Bi", unknown="x", parameters={"Bi": bi})
    first_zero = special.jn_zeros(0, 1)[0]
    reference = brentq(lambda x: x * special.j1(x) / special.j0(x) - bi, 1e-6,
                       first_zero - 1e-9, xtol=1e-14)
    for run in (brent(eq.f, 1e-6, first_zero - 1e-9),
                newton(eq.f, 0.9 * reference, fprime=eq.fprime)):
        assert run.converged and run.root == pytest.approx(reference, rel=1e-12)
    if bi == 1.0:
        assert round(reference, 4) == 1.2558


def test_semi_infinite_solid_depth_matches_the_inverse_error_function():
    # T(x, t) - Ts = (Ti - Ts) erf(x / (2 sqrt(alpha t))): the depth where the temperature
    # ratio reaches 0.3 after an hour in an invented material (alpha = 1.1e-6 m^2/s) is
    # x = 2 sqrt(alpha t) erfinv(0.3) (closed form, scipy.special.erfinv)
    eq = parse_equation("erf(x/(2*sqrt(alpha*t))) = 0.3", unknown="x",
                        parameters={"alpha": "1.1e-6 m^2/s", "t": "1 h"})
    expected = 2 * math.sqrt(1.1e-6 * 3600) * special.erfinv(0.3)
    run = newton(eq.f, 0.01, fprime=eq.fprime)
    assert run.converged and run.root == pytest.approx(expected, rel=1e-12)
    assert eq.unknown_unit == "m"


def test_rows_of_a_bessel_equation_solve_as_brentq_does_row_by_row():
    # the cylinder eigenvalue for 200 Biot numbers from 0.01 to 100 (scipy brentq per row)
    bi = np.geomspace(0.01, 100.0, 200)
    eq = parse_equation("x*J1(x)/J0(x) = Bi", unknown="x", parameters={"Bi": 1.0})
    first_zero = special.jn_zeros(0, 1)[0]
    batch = solve_batch(eq, method="brent", bracket=(1e-6, first_zero - 1e-9),
                        parameters={"Bi": bi})
    assert batch.converged.all()
    expected = [brentq(lambda x, b=b: x * special.j1(x) / special.j0(x) - b, 1e-6,
                       first_zero - 1e-9, xtol=1e-14) for b in bi]
    np.testing.assert_allclose(batch.root, expected, rtol=1e-11)


def test_dimensions_names_and_typesetting_speak_of_the_function_as_typed():
    from solvers import EquationError

    with pytest.raises(EquationError, match="argument of J0 must be dimensionless"):
        parse_equation("y = J0(D)", unknown="y", parameters={"D": "1 m"})
    with pytest.raises(EquationError, match="did you mean 'J0' or 'J1'"):
        parse_equation("besselj(0, x) = 0.2")
    with pytest.raises(EquationError, match=r"takes 1 argument"):
        parse_equation("J0(1, x) = 0.2")
    eq = parse_equation("x*J1(x) = erfc(x)")
    assert r"J_{1}" in eq.latex and r"\mathrm{erfc}" in eq.latex
    # a constant argument folds to the double the compiled code computes (scipy's kv)
    folded = parse_equation("x = K0(2)")
    assert folded.f(0.0) == -special.kv(0.0, 2.0)
    assert folded.f(0.0) == pytest.approx(-special.k0(2.0), rel=1e-15)


def test_the_printed_derivative_reads_back_to_the_same_values():
    # the calculation sheet prints f' in our syntax (J0, J1, erfc ...): typed back in, it
    # gives f' again (compared with mpmath's derivative of the same f at 40 digits)
    from app.documents.printing import equation_text

    eq = parse_equation("x*J1(x)/J0(x) + K0(x)*erfc(x) - I1(x)*Y0(x)")
    text = equation_text(eq.derivative)
    again = parse_equation(text)
    for x in (0.4, 1.3, 2.0):
        with mpmath.workdps(40):
            slope = mpmath.diff(lambda t: t * mpmath.besselj(1, t) / mpmath.besselj(0, t)
                                + mpmath.besselk(0, t) * mpmath.erfc(t)
                                - mpmath.besseli(1, t) * mpmath.bessely(0, t), x)
        assert again.f(x) == pytest.approx(float(slope), rel=1e-12)
        assert again.f(x) == pytest.approx(eq.fprime(x), rel=1e-13)


def test_names_engineers_give_quantities_stay_names_unless_called():
    # K1, K2 are the equilibrium ratios of a flash (Rachford-Rice), J0 a moment of inertia,
    # I1 a current: as names they are parameters like any other; K1(...) is the function.
    # Reference: the Rachford-Rice root for two invented components, by brentq.
    from solvers import EquationError
    from solvers.systems import parse_system

    text = "z1*(K1 - 1)/(1 + V*(K1 - 1)) + z2*(K2 - 1)/(1 + V*(K2 - 1)) = 0"
    values = {"z1": 0.4, "K1": 3.1, "z2": 0.6, "K2": 0.4}
    eq = parse_equation(text, unknown="V", parameters=values)
    reference = brentq(lambda v: sum(z * (k - 1) / (1 + v * (k - 1)) for z, k in
                                     ((0.4, 3.1), (0.6, 0.4))), 0.0, 1.0, xtol=1e-15)
    run = brent(eq.f, 0.0, 1.0)
    assert run.converged and run.root == pytest.approx(reference, rel=1e-12)
    assert parse_equation("K1 = 3.1; y = K1*J0", unknown="y",
                          parameters={"J0": 2.0}).f(0.0) == pytest.approx(-6.2)
    system = parse_system("K1*x + y = 3; x - y = J0(1)", parameters={"K1": 2.0})
    assert system.unknowns == ("x", "y")
    for bad in ("K1*J0(x) = K1(x)", "J0(x) + J0 = 1", "K1 = 2; K1(x) = 1"):
        with pytest.raises(EquationError, match="used both as the function"):
            parse_equation(bad, unknown="x")
    with pytest.raises(EquationError, match=r"'K1' is given a value, but K1\(\.\.\.\)"):
        parse_equation("K1(x) = 1", parameters={"K1": 2.0})
