"""The one registry of method facts: every front end reads it, the one dispatcher runs it.

Each method of :data:`solvers.methods.METHODS` must have its words (title, summary) and
its colour, must be offered by the worksheet and the CLI, and must run through
:func:`solvers.methods.run_method` from the start values its kind says it needs, to the
root an outside reference finds.
"""

from __future__ import annotations

import json
import math

import pytest
import scipy.optimize

from app.cli import main
from app.documents import figures, words
from app.documents.worksheet import METHOD_NAMES as FILE_METHOD_NAMES
from solvers import parse_equation
from solvers.methods import METHODS, MethodSpec, run_method
from solvers.records import Run
from solvers.worksheet import DEFAULT_METHODS, METHOD_NAMES

# The Colebrook equation for the Darcy friction factor f of turbulent pipe flow
# (C. F. Colebrook, J. Inst. Civil Eng. 11 (1939) 133; the constants 3.7 and 2.51 as
# published, quoted from memory), written as a residual that is zero at f.
COLEBROOK = "1/sqrt(f) + 2*log10(eD/3.7 + 2.51/(Re*sqrt(f)))"
REYNOLDS = 1.0e5  # a scenario of our own: water in a commercial pipe
ROUGHNESS = 1.0e-4  # relative roughness eps/D
# The range of Darcy friction factors on the turbulent part of the friction chart (from
# 0.008 for smooth pipe at Re = 1e8 to 0.1 for very rough pipe): common practice.
BRACKET = (0.008, 0.1)


def colebrook(f: float) -> float:
    return 1 / math.sqrt(f) + 2 * math.log10(ROUGHNESS / 3.7 + 2.51 / (REYNOLDS * math.sqrt(f)))


def haaland() -> float:
    """Haaland's explicit approximation (S. E. Haaland, J. Fluids Eng. 105 (1983) 89),
    within about 2 % of Colebrook over the turbulent range (his stated accuracy, from
    memory): an independent check that the residual above is the published equation."""
    return (-1.8 * math.log10((ROUGHNESS / 3.7) ** 1.11 + 6.9 / REYNOLDS)) ** -2


@pytest.fixture(scope="module")
def reference() -> float:
    # Outside reference: scipy.optimize.brentq on the same equation written with math.
    return scipy.optimize.brentq(colebrook, *BRACKET, xtol=1e-15, rtol=4 * 2.220446049250313e-16)


def start_values(spec: MethodSpec) -> dict[str, object]:
    """Only the start values the method's kind needs: run_method must not need more."""
    x0 = haaland()
    offered: dict[str, object] = {"x0": x0, "x1": 1.1 * x0, "bracket": BRACKET}
    return {need: offered[need] for need in spec.needs}


def test_registry_facts_are_consistent() -> None:
    assert list(METHODS) == list(METHOD_NAMES) == list(FILE_METHOD_NAMES)
    assert set(DEFAULT_METHODS) <= set(METHODS)
    needs = {"open": ("x0",), "two_point": ("x0", "x1"), "bracket": ("bracket",)}
    for name, spec in METHODS.items():
        assert spec.name == name and callable(spec.function)
        assert spec.needs == needs[spec.kind]
        # A method is guaranteed exactly when it keeps a bracket with a sign change.
        assert spec.guaranteed == (spec.kind == "bracket")
    assert {s.kind for s in METHODS.values()} == set(needs)
    with pytest.raises(TypeError):
        METHODS["regula"] = METHODS["brent"]  # type: ignore[index]  # read-only table


def test_every_method_has_its_words_and_colour() -> None:
    assert set(words.METHOD_TITLES) == set(METHODS)
    assert set(words.METHOD_SUMMARIES) == set(METHODS)
    assert set(figures.METHOD_COLORS) == set(METHODS)
    for name in METHODS:
        assert words.method_title(name) and words.method_title(name) != name
        assert words.method_summary(name)
        assert figures.method_color(name).startswith("#")
    # Each method's lane, path and legend entry must be told apart by colour.
    assert len({figures.method_color(m) for m in METHODS}) == len(METHODS)


def test_haaland_agrees_with_the_reference(reference) -> None:
    assert haaland() == pytest.approx(reference, rel=0.02)


@pytest.mark.parametrize("name", list(METHODS))
def test_dispatcher_runs_every_method_to_the_reference_root(name, reference) -> None:
    spec = METHODS[name]
    run = run_method(name, colebrook, **start_values(spec))
    assert isinstance(run, Run) and run.method == name
    assert run.converged, (run.reason, run.detail)
    # Default tolerances: xtol 1e-12 absolute bounds a bracketing method's error.
    assert run.root == pytest.approx(reference, rel=1e-9, abs=2e-12)
    assert abs(run.residual) < 1e-9
    # The record is immutable: a view or a report cannot change what the method found.
    assert isinstance(run.steps, tuple)
    with pytest.raises(TypeError):
        run.settings["xtol"] = 1.0  # type: ignore[index]


@pytest.mark.parametrize("name", list(METHODS))
def test_dispatcher_names_a_missing_start_value(name) -> None:
    spec = METHODS[name]
    for need in spec.needs:
        given = {k: v for k, v in start_values(spec).items() if k != need}
        with pytest.raises(ValueError, match=need if need != "bracket" else "bracket"):
            run_method(name, colebrook, **given)


def test_parsed_equation_runs_every_method_through_the_registry(reference) -> None:
    eq = parse_equation(COLEBROOK, unknown="f", parameters={"eD": ROUGHNESS, "Re": REYNOLDS})
    for name, spec in METHODS.items():
        run = run_method(name, eq.f, fprime=eq.fprime, derivative_source="symbolic",
                         **start_values(spec))
        assert run.converged and run.root == pytest.approx(reference, rel=1e-9, abs=2e-12)


def test_cli_method_choices_come_from_the_registry(capsys, reference) -> None:
    with pytest.raises(SystemExit):
        main(["solve", "--help"])
    shown = " ".join(capsys.readouterr().out.split())
    for name in METHODS:
        assert name.replace("_", "-") in shown
    argv = ["solve", COLEBROOK, "--unknown", "f", "--param", f"eD={ROUGHNESS!r}",
            "--param", f"Re={REYNOLDS!r}", "--x0", repr(haaland()),
            "--bracket", *map(repr, BRACKET), "--json"]
    for name in METHODS:
        argv += ["--method", name.replace("_", "-")]
    assert main(argv) == 0
    runs = json.loads(capsys.readouterr().out)["runs"]
    assert [r["method"] for r in runs] == list(METHODS)
    for r in runs:
        assert r["converged"] and r["root"] == pytest.approx(reference, rel=1e-9, abs=2e-12)
    assert main(["solve", COLEBROOK, "--method", "regula-falsi"]) == 2
    err = capsys.readouterr().err
    assert "unknown method" in err and all(m.replace("_", "-") in err for m in METHODS)
