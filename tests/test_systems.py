"""Systems of equations: parse_system, solve_system, the block order, the samples.

Outside references, named beside each check:
* the Moré–Garbow–Hillstrom problems (ACM TOMS 7(1), 1981; tests/mgh_problems.py) from
  their standard starts, against scipy.optimize.root(method="hybr") (MINPACK's hybrd) on
  an independent numpy version of each problem;
* the two engineering samples (invented scenarios) against scipy.optimize.root on numpy
  versions written here from the samples' notes;
* closed forms worked by hand where stated.
"""

from __future__ import annotations

import json
import math
import sys
import warnings
from pathlib import Path

import numpy as np
import pytest
import scipy.optimize

from app.documents import worksheet
from solvers import EquationError, parse_system, solve_system
from solvers.records import CONVERGED_REASONS, REASONS
from solvers.systems import SYSTEM_METHODS, block_order
from solvers.systems.pipeline import solve_worksheet

sys.path.insert(0, str(Path(__file__).resolve().parent))
from mgh_problems import problems  # noqa: E402

SAMPLES = Path(__file__).resolve().parent.parent / "samples" / "systems"
PROBLEMS = problems()


def _small(F_numpy, root: np.ndarray, x0: np.ndarray) -> bool:
    """||F|| small on the problem's own scale: the independent F at the root, against
    1e-8 of its size at the start (or 1e-8 absolute)."""
    return float(np.max(np.abs(F_numpy(root)))) <= 1e-8 * max(1.0, float(
        np.max(np.abs(F_numpy(x0)))))


@pytest.fixture(scope="module")
def mgh_results():
    out = {}
    for p in PROBLEMS:
        system = parse_system(p.text, unknowns=p.unknowns)
        x0 = np.array(p.x0)
        runs = {m: solve_system(system, p.start, method=m) for m in SYSTEM_METHODS}
        hybr = scipy.optimize.root(p.F, x0, method="hybr")
        out[p.name] = (p, system, runs, hybr)
    return out


@pytest.mark.parametrize("p", PROBLEMS, ids=lambda p: p.name)
def test_mgh_text_matches_the_numpy_version(p):
    # the text (our syntax) and the numpy version (scipy's input) are the same function:
    # checked at the standard start and at a perturbed point
    system = parse_system(p.text, unknowns=p.unknowns)
    rng = np.random.default_rng(7)
    for x in (np.array(p.x0), np.array(p.x0) + rng.uniform(0.05, 0.2, p.n)):
        ours, ref = system.F(x), p.F(x)
        assert np.allclose(ours, ref, rtol=1e-12, atol=1e-12 * max(1.0, np.abs(ref).max()))
        # the symbolic Jacobian against central differences of the numpy version
        jac = system.J(x)
        for j in range(p.n):
            h = 1e-6 * max(1.0, abs(x[j]))
            e = np.zeros(p.n)
            e[j] = h
            fd = (p.F(x + e) - p.F(x - e)) / (2 * h)
            assert np.allclose(jac[:, j], fd, rtol=1e-5, atol=1e-5 * max(1.0, np.abs(fd).max()))


def test_mgh_converges_on_at_least_as_many_as_hybr(mgh_results):
    counts = {m: 0 for m in SYSTEM_METHODS}
    hybr_count = 0
    for p, _system, runs, hybr in mgh_results.values():
        x0 = np.array(p.x0)
        hybr_count += bool(hybr.success and _small(p.F, hybr.x, x0))
        for m, run in runs.items():
            counts[m] += run.converged
    for m, count in counts.items():
        assert count >= hybr_count, (m, count, hybr_count)


@pytest.mark.parametrize("name", [p.name for p in PROBLEMS])
def test_mgh_never_converged_where_the_residual_is_not_small(mgh_results, name):
    p, system, runs, hybr = mgh_results[name]
    x0 = np.array(p.x0)
    for run in runs.values():
        assert run.reason in REASONS
        assert run.converged == (run.reason in CONVERGED_REASONS)
        root = np.array([run.root[n] for n in system.unknowns])
        if run.converged:
            assert _small(p.F, root, x0), (run.method, run.reason, p.F(root))
        # the record: every step has every unknown and residual; norms are what they say
        assert run.steps[0].k == 0 and run.steps[0].damping == 0.0
        for step in run.steps:
            assert tuple(step.x) == system.unknowns and len(step.residuals) == p.n
            assert 0.0 <= step.damping <= 1.0 + 1e-12
        assert run.iterations == len(run.steps) - len(system.blocks) or not run.converged
    # where both converge to the same root, they agree (scipy's hybr as the reference)
    if hybr.success and _small(p.F, hybr.x, x0):
        for run in runs.values():
            root = np.array([run.root[n] for n in system.unknowns])
            if run.converged and np.allclose(root, hybr.x, rtol=1e-4, atol=1e-6):
                assert np.allclose(root, hybr.x, rtol=1e-7, atol=1e-9), (run.method, root,
                                                                         hybr.x)


# ---------------------------------------------------------------------------- failures


@pytest.mark.parametrize("method", list(SYSTEM_METHODS))
def test_two_circles_that_do_not_meet_are_no_root(method):
    # by hand: unit circles centred 3 apart never meet; ||F|| has its minimum at (1.5, 0)
    system = parse_system("x^2 + y^2 = 1; (x - 3)^2 + y^2 = 1")
    run = solve_system(system, {"x": 1.0, "y": 0.5}, method=method)
    assert not run.converged and run.reason == "zero_derivative"
    assert run.root["x"] == pytest.approx(1.5, abs=1e-6)
    assert run.residual_norm > 1.7


@pytest.mark.parametrize("method", list(SYSTEM_METHODS))
def test_a_singular_inconsistent_linear_system_is_no_root(method):
    system = parse_system("x + y = 1; 2*x + 2*y = 3", unknowns=["x", "y"])
    run = solve_system(system, {"x": 1.0, "y": 0.5}, method=method)
    assert not run.converged and run.reason == "zero_derivative"
    # the least-squares point of the two parallel lines, by hand: x + y = 1.4
    assert run.root["x"] + run.root["y"] == pytest.approx(1.4, abs=1e-6)


@pytest.mark.parametrize("method", list(SYSTEM_METHODS))
def test_a_step_out_of_the_domain_is_cut_back_into_it(method):
    # ln(x1) = 1 - x2 with x2 = 3: x1 = exp(-2) (by hand); the first full Newton step from
    # x1 = 10 lands at a negative x1, where ln is undefined
    system = parse_system("ln(x1) + x2 = 1; x2 = 3")
    run = solve_system(system, {"x1": 10.0, "x2": 0.0}, method=method)
    assert run.converged
    assert run.root["x1"] == pytest.approx(math.exp(-2), rel=1e-14)
    assert any(0 < s.damping < 1 for s in run.steps)
    assert all(math.isfinite(s.residual_norm) for s in run.steps)


def test_no_solution_where_a_curve_ends_is_not_converged():
    # sqrt(x) - x = 2 has no solution (its largest value is 1/4 at x = 1/4, by hand)
    system = parse_system("sqrt(x) + y = 3; x + y = 1")
    for method in SYSTEM_METHODS:
        run = solve_system(system, {"x": 1.0, "y": 0.5}, method=method)
        assert not run.converged
        # Newton meets the singular Jacobian at the fold; Broyden's secant updates may
        # instead creep along the fold until the cap (seen with numpy 2.4.6, not with the
        # build an earlier machine had): both are honest ends, never a converged run
        stops = ("zero_derivative", "not_finite") + (
            ("max_iterations",) if method == "broyden" else ())
        assert run.reason in stops, (method, run.reason)
        # F1 - F2 = sqrt(x) - x - 2 <= -7/4, so ||F|| >= 7/(4 sqrt 2) > 1 (by hand)
        assert run.residual_norm > 1.0


def test_undefined_at_the_start_is_not_finite():
    system = parse_system("ln(x) + y = 1; y = 2")
    run = solve_system(system, {"x": -1.0, "y": 0.0}, by_blocks=False)
    assert run.reason == "not_finite" and not run.converged and run.iterations == 0


@pytest.mark.parametrize("text, unknowns, words", [
    ("x + y = 1; x - y = 0; x*y = 3", ["x", "y"], "1 equation more than unknowns"),
    ("x + y + z = 1; x - y = 0", ["x", "y", "z"], "1 equation fewer than unknowns"),
    ("x + y = 1; a = 2", ["x", "y"], "none of the unknowns"),
    ("x + y = 1; x - y = 0", ["x", "q"], "'q' does not appear"),
    ("x + y = 1; x - y = 0", ["x", "x"], "named twice"),
])
def test_bad_systems_say_what_is_wrong(text, unknowns, words):
    with pytest.raises(EquationError, match=words):
        parse_system(text, unknowns=unknowns, parameters={"a": 1.0})


def test_more_equations_than_unknowns_is_said_with_counts():
    with pytest.raises(EquationError) as err:
        parse_system("x + y = 1; x - y = 0; x*y = 3; x = 2")
    assert "4 equations in 2 unknowns (x, y)" in str(err.value)


def test_bad_starts_are_refused():
    system = parse_system("x + y = 1; x - y = 0")
    with pytest.raises(ValueError, match="no start value for 'y'"):
        solve_system(system, {"x": 1.0})
    with pytest.raises(ValueError, match="not an unknown"):
        solve_system(system, {"x": 1.0, "y": 1.0, "z": 0.0})
    with pytest.raises(ValueError, match="unknown method"):
        solve_system(system, {"x": 1.0, "y": 1.0}, method="secant")


# ---------------------------------------------------------------------------- structure


def test_block_order_of_a_triangular_system():
    # c*b = a needs a and b; a = 2*b needs b; b^2 = 4 needs b alone: solved b, a, c
    system = parse_system("c*b = a; a = 2*b; b^2 = 4", unknowns=["a", "b", "c"])
    order = [tuple(system.unknowns[j] for j in cols) for _, cols in system.blocks]
    assert order == [("b",), ("a",), ("c",)]
    run = solve_system(system, {"a": 1.0, "b": 1.0, "c": 5.0})
    assert run.converged and run.blocks == system.blocks
    # by hand: b = 2 (from b = 1 Newton goes to the positive root), a = 4, c = 2
    assert run.root == pytest.approx({"a": 4.0, "b": 2.0, "c": 2.0}, rel=1e-14)
    assert [s.block for s in run.steps] == sorted(s.block for s in run.steps)


def test_block_order_finds_coupled_blocks_and_the_chain():
    # eq0 uses x0,x1 ; eq1 uses x0,x1 ; eq2 uses x1,x2 ; eq3 uses x3 only
    inc = [[True, True, False, False], [True, True, False, False],
           [False, True, True, False], [False, False, False, True]]
    blocks = block_order(inc)
    assert sorted(blocks) == sorted([((0, 1), (0, 1)), ((2,), (2,)), ((3,), (3,))])
    position = {b: i for i, b in enumerate(blocks)}
    assert position[((0, 1), (0, 1))] < position[((2,), (2,))]
    # structurally singular (x1 in no equation of its own): one block of everything
    assert block_order([[True, False], [True, False]]) == (((0, 1), (0, 1)),)


def test_blocks_against_scipy_strong_components():
    # reference: scipy.sparse.csgraph on the same dependency graph (random sparse systems)
    from scipy.sparse import csr_matrix
    from scipy.sparse.csgraph import connected_components, maximum_bipartite_matching

    rng = np.random.default_rng(11)
    for _ in range(30):
        n = int(rng.integers(2, 9))
        inc = (rng.random((n, n)) < 0.25) | np.eye(n, dtype=bool)[rng.permutation(n)]
        match = maximum_bipartite_matching(csr_matrix(inc.astype(int)), perm_type="column")
        eq_of = {int(j): i for i, j in enumerate(match)}
        dep = np.zeros((n, n), dtype=int)
        for i in range(n):
            for j in np.flatnonzero(inc[i]):
                dep[i, eq_of[int(j)]] = 1
        count, labels = connected_components(csr_matrix(dep), connection="strong")
        blocks = block_order(inc.tolist())
        assert len(blocks) == count
        for eqs, _cols in blocks:
            assert len({labels[i] for i in eqs}) == 1
        # every dependency points to the same or an earlier block
        where = {i: b for b, (eqs, _) in enumerate(blocks) for i in eqs}
        for i in range(n):
            for k in np.flatnonzero(dep[i]):
                assert where[int(k)] <= where[i]


# ---------------------------------------------------------------------------- samples


def _junction_numpy(p):
    """Three-branch junction, written from the sample's notes (numpy, independent)."""
    g, nu, eps = p["g"], p["nu"], p["eps"]

    def loss(q, d, length):
        area = math.pi * d * d / 4
        re = abs(q) * d / (area * nu)
        f = 0.25 / math.log10(eps / (3.7 * d) + 5.74 / re ** 0.9) ** 2  # Swamee-Jain
        return f * length / d * q * abs(q) / (2 * g * area * area)  # Darcy-Weisbach

    def F(v):
        q1, q2, q3, hj = v
        return np.array([p["z1"] - hj - loss(q1, p["D1"], p["L1"]),
                         hj - p["z2"] - loss(q2, p["D2"], p["L2"]),
                         hj - p["z3"] - loss(q3, p["D3"], p["L3"]),
                         q1 - q2 - q3])
    return F


def _pump_numpy(p):
    def k(f, length, d, fittings):
        area = math.pi * d * d / 4
        return (f * length / d + fittings) / (2 * p["g"] * area * area)

    k1 = k(p["f1"], p["L1"], p["D1"], p["K1"])
    k2 = k(p["f2"], p["L2"], p["D2"], p["K2"])

    def F(v):
        q1, q2, h = v
        return np.array([h - (p["H0"] - p["a"] * (q1 + q2) ** 2),
                         h - p["z1"] - k1 * q1 * abs(q1),
                         h - p["z2"] - k2 * q2 * abs(q2)])
    return F


@pytest.mark.parametrize("name, model", [
    ("pipe-junction-three-branches", _junction_numpy),
    ("pump-two-parallel-lines", _pump_numpy),
])
def test_samples_match_scipy_root_on_an_independent_version(name, model):
    ws = worksheet.load(SAMPLES / f"{name}.json")
    assert "invented" in ws.notes
    solution = solve_worksheet(ws)
    F = model(ws.parameter_values())
    x0 = [u.x0 for u in ws.system.unknowns]
    ref = scipy.optimize.root(F, x0, method="hybr")  # hybr's own xtol: 1.49e-8 relative
    assert ref.success
    for run in solution.runs:
        assert run.converged, run.reason
        root = np.array([run.root[u.name] for u in ws.system.unknowns])
        assert np.allclose(root, ref.x, rtol=1e-8, atol=1e-12), (run.method, root, ref.x)
        assert np.max(np.abs(F(root))) < 1e-10
    # the flows obey continuity and run the way the notes say
    root = solution.runs[0].root
    assert all(root[n] > 0 for n in root if n.startswith("Q"))


def test_junction_sample_definitions_at_the_root():
    ws = worksheet.load(SAMPLES / "pipe-junction-three-branches.json")
    solution = solve_worksheet(ws)
    system = solution.system
    run = solution.runs[0]
    values = system.definition_values([run.root[n] for n in system.unknowns])
    p = ws.parameter_values()
    # the head losses add up to the level differences (energy, by hand)
    assert values["h1"] + values["h2"] == pytest.approx(p["z1"] - p["z2"], rel=1e-12)
    assert values["h1"] + values["h3"] == pytest.approx(p["z1"] - p["z3"], rel=1e-12)
    # Reynolds numbers of turbulent flow, friction factors in the usual range
    assert all(values[f"Re{i}"] > 4000 for i in (1, 2, 3))
    assert all(0.008 < values[f"f{i}"] < 0.05 for i in (1, 2, 3))


def test_system_worksheet_round_trips_and_old_files_have_no_system(tmp_path):
    ws = worksheet.load(SAMPLES / "pump-two-parallel-lines.json")
    path = tmp_path / "copy.json"
    worksheet.save(ws, path)
    again = worksheet.load(path)
    assert again == ws and again.system is not None
    for old in sorted((SAMPLES.parent).glob("*.json")):
        assert worksheet.load(old).system is None
        assert "system" not in json.loads(old.read_text())


@pytest.mark.parametrize("change, field", [
    ({"unknowns": []}, "system.unknowns"),
    ({"unknowns": [{"name": "Q1"}]}, 'system unknown "Q1", x0'),
    ({"unknowns": [{"name": "1Q", "x0": 1}]}, "system unknown 1, name"),
    ({"methods": ["secant"]}, "system.methods"),
])
def test_bad_system_fields_are_named(change, field):
    data = json.loads((SAMPLES / "pump-two-parallel-lines.json").read_text())
    data["system"].update(change)
    with pytest.raises(worksheet.WorksheetError) as err:
        worksheet.loads(json.dumps(data))
    assert str(err.value).startswith(field)


def test_residuals_that_underflowed_to_zero_are_no_root():
    # exp(-x) - 2 exp(-2x) = 0 has its root at ln 2 (by hand); at x = 800 every term is
    # below the smallest double and F is exactly 0.0 there and all around
    system = parse_system("exp(-x) - 2*exp(-2*x) = 0; y = 2*x", unknowns=["x", "y"])
    run = solve_system(system, {"x": 800.0, "y": 0.0})  # x's block first: F = 0.0 there
    assert not run.converged and run.reason == "not_finite"
    run = solve_system(system, {"x": 800.0, "y": 0.0}, by_blocks=False)
    assert not run.converged
    run = solve_system(system, {"x": 1.0, "y": 0.0})
    assert run.converged and run.root["x"] == pytest.approx(math.log(2), rel=1e-15)
    # exp(-x) = 0 has no root at all: never converged, whatever the start
    system = parse_system("exp(-x) = 0; y = 2", unknowns=["x", "y"])
    for method in SYSTEM_METHODS:
        run = solve_system(system, {"x": 1.0, "y": 0.0}, method=method, by_blocks=False)
        assert not run.converged


def test_records_follow_the_contract_types():
    system = parse_system("x + y = 3; x - y = 1")
    run = solve_system(system, [1.0, 1.0])  # a sequence in the order of system.unknowns
    assert isinstance(run.root, dict) and json.loads(json.dumps(run.root)) == run.root
    assert run.root == pytest.approx({"x": 2.0, "y": 1.0}, rel=1e-15)  # by hand
    assert isinstance(run.steps[-1].x, dict)
    assert system.F(np.array([2.0, 1.0])).shape == (2,)
    assert system.J([2.0, 1.0]).tolist() == [[1.0, 1.0], [1.0, -1.0]]
    with pytest.raises(ValueError, match="one start value per unknown"):
        solve_system(system, [1.0])


@pytest.mark.parametrize("p", PROBLEMS, ids=lambda p: p.name)
def test_mgh_from_ten_times_the_start_is_never_falsely_converged(p):
    # the source's harder start (10 x the standard one; x_j = 10 where that is 0)
    system = parse_system(p.text, unknowns=p.unknowns)
    x0 = np.array(p.x0) * 10 if any(p.x0) else np.full(p.n, 10.0)
    for method in SYSTEM_METHODS:
        run = solve_system(system, dict(zip(p.unknowns, x0, strict=True)), method=method)
        root = np.array([run.root[n] for n in system.unknowns])
        if run.converged:
            assert _small(p.F, root, x0), (method, run.reason)


@pytest.mark.parametrize("method", list(SYSTEM_METHODS))
def test_a_jacobian_near_the_largest_double_is_a_result_not_an_overflow(method):
    """g = 1e-300 m/s^2 typed into the units sample puts 1/(2 g A^2) near 1e304 in J: the
    regularised direction squared ||J|| (an OverflowError out of the solve) and its
    products warned on the terminal. Now every run ends with one of the stop reasons and
    nothing is printed."""
    data = json.loads((SAMPLES / "pump-two-parallel-lines-units.json").read_text())
    for p in data["parameters"]:
        if p["name"] == "g":
            p["value"] = 1e-300
    data["system"]["methods"] = [method]
    ws = worksheet.from_dict(data)
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # a RuntimeWarning fails the test
        solution = solve_worksheet(ws)
    (run,) = solution.runs
    assert run.reason in REASONS
    # where it says converged, the residuals are small beside the heads (common practice)
    assert not run.converged or max(abs(r) for r in run.residuals) < 1e-6


def test_the_regularised_direction_is_steepest_descent_in_the_limit_of_a_huge_f():
    """-(J^T J + mu I)^-1 J^T F with mu = sqrt(eps)||J||^2 + ||J^T F|| tends to
    -J^T F / ||J^T F|| as F grows (mu dominates; by hand); at 1e300 it was inf/nan."""
    from solvers.systems.iterate import _levenberg

    jac = np.array([[2.0, 1.0], [1.0, -1.0]])
    for size in (1e300, 1.7e308):
        f = np.array([size, -0.5 * size])
        g = jac.T @ (f / size)
        d = _levenberg(jac, f)
        np.testing.assert_allclose(d, -g / np.linalg.norm(g), rtol=1e-12)
    # a moderate case keeps the formula as written (numpy.linalg.solve, same inputs)
    f = np.array([0.3, -0.2])
    g = jac.T @ f
    mu = math.sqrt(np.finfo(float).eps) * np.linalg.norm(jac, 2) ** 2 + np.linalg.norm(g)
    np.testing.assert_allclose(_levenberg(jac, f),
                               np.linalg.solve(jac.T @ jac + mu * np.eye(2), -g), rtol=1e-15)
