"""Every bundled sample, solved and scanned end to end, checked against outside references.

Each reference is computed independently of zerotrace (plain math + scipy/numpy), so a fault in
parsing, differentiation, the methods or the scan shows up as a disagreement.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np
import pytest
import scipy.constants
from scipy.optimize import brentq

from app.documents import worksheet
from app.documents.words import run_message
from solvers import pipeline

SAMPLES = Path(__file__).resolve().parent.parent / "samples"


def load(name: str) -> worksheet.Worksheet:
    return worksheet.load(SAMPLES / f"{name}.json")


def params(ws: worksheet.Worksheet) -> dict[str, float]:
    return ws.parameter_values()


def ulps_apart(a: float, b: float) -> float:
    return abs(a - b) / math.ulp(max(abs(a), abs(b)))


@pytest.mark.parametrize("path", sorted(SAMPLES.glob("*.json")), ids=lambda p: p.stem)
def test_every_sample_solves_with_newton_and_secant(path: Path) -> None:
    solution = pipeline.solve(worksheet.load(path))
    by_method = {r.method: r for r in solution.runs}
    assert by_method["newton"].converged, run_message(by_method["newton"])
    assert by_method["secant"].converged, run_message(by_method["secant"])
    # Newton and secant land on the same root to (nearly) full precision.
    digits = pipeline.agreement_digits([by_method["newton"], by_method["secant"]])
    assert digits is not None and digits >= 12
    # Every converged method agrees to the digits its step tolerance allows (xtol 1e-12 absolute).
    assert solution.agreement_digits is not None and solution.agreement_digits >= 8


@pytest.mark.parametrize("path", sorted(SAMPLES.glob("*.json")), ids=lambda p: p.stem)
def test_every_sample_scan_contains_the_solved_root(path: Path) -> None:
    ws = worksheet.load(path)
    solution = pipeline.solve(ws)
    result = pipeline.scan_worksheet(ws, solution.equation)
    newton = next(r for r in solution.runs if r.method == "newton")
    assert any(abs(r.x - newton.root) <= 1e-9 * max(1.0, abs(r.x)) for r in result.roots)


def test_colebrook_friction_factor_matches_an_independent_solve() -> None:
    ws = load("cooling-water-friction")
    p = params(ws)

    def colebrook(f: float) -> float:  # the Colebrook–White equation written out in plain math
        rough = p["eps"] / (3.7 * p["D"])
        return 1 / math.sqrt(f) + 2 * math.log10(rough + 2.51 / (p["Re"] * math.sqrt(f)))

    eps = np.finfo(float).eps
    expected = brentq(colebrook, 0.005, 0.1, xtol=1e-15, rtol=4 * eps)  # scipy.optimize
    newton = pipeline.solve(ws).runs[0]
    assert newton.method == "newton"
    assert ulps_apart(newton.root, expected) <= 8
    # Swamee & Jain (1976), J. Hydraulics Div. ASCE 102(5): explicit fit, within about 1 %
    # of Colebrook for 5e3 < Re < 1e8, 1e-6 < eps/D < 1e-2 (stated accuracy from memory).
    swamee_jain = 0.25 / math.log10(p["eps"] / (3.7 * p["D"]) + 5.74 / p["Re"] ** 0.9) ** 2
    assert newton.root == pytest.approx(swamee_jain, rel=0.015)


def test_cooling_water_reynolds_number_follows_from_the_stated_velocity_and_pipe() -> None:
    ws = load("cooling-water-friction")
    p = params(ws)
    note = next(q.note for q in ws.parameters if q.name == "Re")
    velocity = float(re.search(r"V = ([0-9.eE+-]+) m/s", note).group(1))
    nu = float(re.search(r"nu = ([0-9.eE+-]+) m\^2/s", note).group(1))
    assert f"D = {p['D']:g} m" in note  # the note's pipe is the parameter D
    # Re = V D / nu, the definition of the Reynolds number of pipe flow (common practice).
    assert p["Re"] == pytest.approx(velocity * p["D"] / nu, rel=1e-12)
    # Kinematic viscosity of water at 20 °C: 1.004e-6 m^2/s (White, Fluid Mechanics,
    # Table A.1; from memory). The sample's rounded 1.0e-6 is within 1 % of it.
    assert nu == pytest.approx(1.004e-6, rel=0.01)
    assert 4000 < p["Re"]  # turbulent, where Colebrook–White applies (common practice)


# Van der Waals constants of real gases, a in Pa m^6/mol^2 and b in m^3/mol (CRC Handbook
# of Chemistry and Physics, "Van der Waals constants for gases"; from memory).
REAL_GASES = {
    "Ar": (0.1355, 3.201e-5), "CH4": (0.2283, 4.278e-5), "CO2": (0.3640, 4.267e-5),
    "Cl2": (0.6579, 5.622e-5), "C2H4": (0.4530, 5.714e-5), "C2H6": (0.5562, 6.380e-5),
    "C3H8": (0.9385, 9.050e-5), "H2O": (0.5536, 3.049e-5), "H2S": (0.4490, 4.287e-5),
    "HCl": (0.3716, 4.081e-5), "Kr": (0.2318, 3.978e-5), "N2": (0.1370, 3.870e-5),
    "N2O": (0.3832, 4.415e-5), "NH3": (0.4225, 3.707e-5), "NO2": (0.5354, 4.424e-5),
    "O2": (0.1382, 3.186e-5), "SO2": (0.6803, 5.636e-5), "Xe": (0.4250, 5.105e-5),
}


def test_van_der_waals_sample_fluid_is_invented_not_a_real_gas() -> None:
    p = params(load("gas-molar-volume-vdw"))
    for gas, (a, b) in REAL_GASES.items():
        same_a = abs(p["a"] - a) <= 0.05 * a
        same_b = abs(p["b"] - b) <= 0.05 * b
        assert not (same_a and same_b), f"the sample's a, b are those of {gas}"
    # Below the critical temperature T_c = 8a/(27 R b) (van der Waals; common practice), the
    # isotherm can have three real volumes, which the sample is about.
    assert p["T"] < 8 * p["a"] / (27 * p["R"] * p["b"])


def test_van_der_waals_volumes_match_numpy_roots_of_the_cubic() -> None:
    ws = load("gas-molar-volume-vdw")
    p = params(ws)
    assert p["R"] == pytest.approx(scipy.constants.R, rel=1e-9)  # CODATA value via scipy.constants
    P, T, a, b, R = p["P"], p["T"], p["a"], p["b"], p["R"]
    # (P + a/V^2)(V - b) = RT  <=>  P V^3 - (P b + R T) V^2 + a V - a b = 0 (numpy.roots reference)
    cubic = np.roots([P, -(P * b + R * T), a, -a * b])
    expected = sorted(r.real for r in cubic if abs(r.imag) < 1e-12 * abs(r) and r.real > b)
    found = [r.x for r in pipeline.scan_worksheet(ws).roots]
    assert len(found) == 3
    np.testing.assert_allclose(found, expected, rtol=1e-10)


def test_sign_arm_frequencies_match_the_cantilever_eigenvalues() -> None:
    ws = load("sign-arm-natural-frequencies")
    p = params(ws)
    # Cantilever (clamped-free) roots of cos(bL)cosh(bL) = -1: 1.87510407, 4.69409113, 7.85475744
    # (Blevins, Formulas for Natural Frequency and Mode Shape, Table 8-1; from memory).
    beta_l = [1.87510407, 4.69409113, 7.85475744]
    scale = math.sqrt(p["E"] * p["I"] / (p["rho"] * p["A"])) / p["L"] ** 2
    expected = [bl**2 * scale for bl in beta_l]
    found = [r.x for r in pipeline.scan_worksheet(ws).roots]
    assert len(found) == 3
    np.testing.assert_allclose(found, expected, rtol=2e-8)


def test_project_irr_matches_numpy_roots_of_the_cash_flow_polynomial() -> None:
    ws = load("project-irr")
    p = params(ws)
    flows = [-p["C0"]] + [p[f"C{t}"] for t in range(1, 8)]
    # NPV(r) = sum C_t v^t with v = 1/(1+r): a polynomial in v, solved by numpy.roots.
    v = np.roots(flows[::-1])
    expected = sorted(1 / r.real - 1 for r in v if abs(r.imag) < 1e-12 and r.real > 0)
    expected = [r for r in expected if -0.5 <= r <= 1.0]
    found = [r.x for r in pipeline.scan_worksheet(ws).roots]
    np.testing.assert_allclose(found, expected, rtol=1e-10)
    newton = pipeline.solve(ws).runs[0]
    assert newton.root == pytest.approx(expected[0], rel=1e-13)


def test_wall_eigenvalues_and_poles_of_tan() -> None:
    ws = load("wall-conduction-eigenvalues")
    p = params(ws)
    bi = p["h"] * p["L"] / p["k"]
    # One eigenvalue in each (n pi, n pi + pi/2): the classical structure of x tan x = Bi
    # (Incropera, Fundamentals of Heat and Mass Transfer, App. B.3; common practice). scipy brentq.
    expected = [
        brentq(lambda x: x * math.tan(x) - bi, n * math.pi + 1e-12, (n + 0.5) * math.pi - 1e-12)
        for n in range(4)
    ]
    result = pipeline.scan_worksheet(ws)
    found = [r.x for r in result.roots if r.x > 1e-9]  # x = 0 is no root unless Bi = 0
    np.testing.assert_allclose(found, expected, rtol=1e-12)
    poles = [math.pi / 2 + n * math.pi for n in range(4)]
    np.testing.assert_allclose(sorted(result.poles), poles, rtol=1e-6)


def test_rod_eigenvalues_and_the_zeros_of_j0_as_poles() -> None:
    import scipy.special as special

    ws = load("rod-quench-eigenvalues")
    bi = 800.0 * 0.025 / 45.0  # h r / k in SI (NIST SP 811: 1 mm = 1e-3 m exactly)
    # One eigenvalue of x J1(x)/J0(x) = Bi between each zero of J1 (and 0) and the next zero
    # of J0, where the left side rises from 0 to +inf (common practice; the structure of
    # the long-cylinder eigenvalues). scipy brentq on scipy.special.j0/j1, and jn_zeros.
    j0_zeros, j1_zeros = special.jn_zeros(0, 6), np.concatenate([[0.0], special.jn_zeros(1, 6)])
    expected = [brentq(lambda x: x * special.j1(x) / special.j0(x) - bi, j1_zeros[n] + 1e-12,
                       j0_zeros[n] - 1e-12, xtol=1e-15) for n in range(5)]
    result = pipeline.scan_worksheet(ws)
    np.testing.assert_allclose([r.x for r in result.roots], expected, rtol=1e-12)
    np.testing.assert_allclose(sorted(result.poles), j0_zeros[:5], rtol=1e-9)
    solution = pipeline.solve(ws)
    newton = solution.runs[0]
    assert newton.converged and newton.root == pytest.approx(expected[0], rel=1e-13)
    # x0 = 0.9 typed sits on the end of the scan's sign change [0.8625, 0.9] (samples 15/2000
    # apart: arithmetic): the secant's x1 is the other end, not a point an ulp from x0
    (choice,) = [c for c in solution.start.choices if c.code.startswith("x1_")]
    assert choice.code == "x1_scan_far" and choice.numbers[0] == pytest.approx(0.8625)
    secant = next(r for r in solution.runs if r.method == "secant")
    assert abs(secant.steps[1].x - secant.steps[0].x) == pytest.approx(0.0375)
    assert secant.converged and secant.root == pytest.approx(expected[0], rel=1e-13)


def test_channel_normal_depth_matches_an_independent_solve() -> None:
    ws = load("drainage-channel-normal-depth")
    p = params(ws)

    def manning(y: float) -> float:  # Manning's equation, SI, trapezoidal section (common practice)
        area = (p["b"] + p["z"] * y) * y
        perimeter = p["b"] + 2 * y * math.sqrt(1 + p["z"] ** 2)
        return area ** (5 / 3) / perimeter ** (2 / 3) * math.sqrt(p["S"]) / p["n"] - p["Q"]

    expected = brentq(manning, 0.05, 4.0, xtol=1e-15)  # scipy.optimize
    solution = pipeline.solve(ws)
    for run in solution.converged_runs:
        assert run.root == pytest.approx(expected, rel=1e-12), run.method


def test_pump_operating_point_matches_an_independent_solve() -> None:
    ws = load("pump-system-operating-point")
    p = params(ws)
    expected = brentq(
        lambda q: 42 - 8.5 * q - 310 * q**2 - (p["Hs"] + p["ks"] * q**1.85), 0.0, 0.3, xtol=1e-15
    )  # scipy.optimize
    roots = [r.x for r in pipeline.scan_worksheet(ws).roots]
    assert roots == [pytest.approx(expected, rel=1e-12)]
