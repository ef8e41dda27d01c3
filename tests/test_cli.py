"""The `zerotrace` command as a user and a script see it: tables, JSON, CSV, exit codes."""

from __future__ import annotations

import csv
import json
import math
import subprocess
import sys
from pathlib import Path

import mpmath
import numpy as np
import pytest

from app.cli import main

SAMPLES = Path(__file__).resolve().parent.parent / "samples"


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_default_trio_runs_side_by_side(capsys) -> None:
    code, out, err = run(capsys, "solve", "x^3 - 2x - 5", "--x0", "2", "--bracket", "2", "3")
    assert code == 0, err
    for label in ("newton", "secant", "false position"):
        assert label in out
    assert "Caution" in out
    # The classic cubic x^3 - 2x - 5 has its real root at 2.0945514815423265... (mpmath reference)
    mpmath.mp.dps = 50
    expected = float(mpmath.findroot(lambda x: x**3 - 2 * x - 5, 2))
    assert repr(expected) in out or f"{expected:.17g}" in out


def test_json_follows_the_contract(capsys) -> None:
    code, out, _ = run(
        capsys, "solve", "x^2 = c", "--param", "c=2", "--x0", "1", "--bracket", "0", "2",
        "--method", "newton", "--method", "brent", "--json",
    )
    assert code == 0
    data = json.loads(out)
    assert data["equation"] == "x^2 = c"
    assert data["unknown"] == "x"
    assert [r["method"] for r in data["runs"]] == ["newton", "brent"]
    for r in data["runs"]:
        keys = {"method", "root", "converged", "reason", "iterations", "evaluations", "steps"}
        assert keys <= set(r)
        assert r["converged"] is True
        assert r["root"] == pytest.approx(math.sqrt(2), rel=4e-16)  # math.sqrt reference
        assert {"k", "x", "fx", "dfx", "dx"} <= set(r["steps"][0])


def test_a_failed_run_is_a_result_with_valid_json(capsys) -> None:
    # x^2 + 1 has no real root: every method must fail with a reason, the output still JSON.
    code, out, _ = run(
        capsys, "solve", "x^2 + 1", "--x0", "0.5", "--bracket", "-1", "1", "--method", "newton",
        "--method", "bisection", "--max-iter", "20", "--json",
    )
    assert code == 0
    data = json.loads(out)
    reasons = {r["method"]: r["reason"] for r in data["runs"]}
    assert all(not r["converged"] for r in data["runs"])
    assert reasons["bisection"] == "no_sign_change"
    assert reasons["newton"] in {"max_iterations", "zero_derivative", "not_finite"}


def test_csv_log_reads_back_to_the_same_floats(capsys, tmp_path: Path) -> None:
    path = tmp_path / "log with space é.csv"
    code, out, _ = run(capsys, "solve", "cos(x) = x", "--x0", "1", "--bracket", "0", "1",
                       "--csv", str(path), "--json")
    assert code == 0
    data = json.loads(out)
    lines = path.read_text("utf-8").splitlines()
    meta = [ln for ln in lines if ln.startswith("#")]
    assert any(ln.startswith("# equation: cos(x) = x") for ln in meta)
    assert any(ln.startswith("# tool: zerotrace") for ln in meta)
    rows = list(csv.DictReader(ln for ln in lines if not ln.startswith("#")))
    expected = [(r["method"], s["k"], s["x"], s["fx"]) for r in data["runs"] for s in r["steps"]]
    got = [(r["method"], int(r["k"]), float(r["x"]), float(r["fx"])) for r in rows]
    assert got == expected  # bit-for-bit: repr floats round-trip
    # numpy reads it after the metadata lines (genfromtxt would take a '#' line for the header).
    table = np.genfromtxt(
        path, delimiter=",", skip_header=len(meta), names=True, dtype=None, encoding="utf-8"
    )
    assert np.array_equal(table["x"], [g[2] for g in got])


def test_existing_csv_needs_force(capsys, tmp_path: Path) -> None:
    path = tmp_path / "log.csv"
    path.write_text("keep me")
    code, _, err = run(capsys, "solve", "x - 1", "--x0", "0", "--csv", str(path))
    assert code == 2 and "already exists" in err
    assert path.read_text() == "keep me"
    code, _, _ = run(capsys, "solve", "x - 1", "--x0", "0", "--csv", str(path), "--force")
    assert code == 0 and path.read_text().startswith("#")


def test_scan_json_lists_roots_and_poles(capsys) -> None:
    code, out, err = run(capsys, "scan", "tan(x)", "--from", "0.5", "--to", "7", "--json")
    assert code == 0, err
    data = json.loads(out)
    roots = [r["x"] for r in data["roots"]]
    np.testing.assert_allclose(roots, [math.pi, 2 * math.pi], rtol=1e-14)  # zeros of tan: n*pi
    np.testing.assert_allclose(sorted(data["poles"]), [math.pi / 2, 1.5 * math.pi], rtol=1e-6)
    assert all(r["multiplicity"] == 1 for r in data["roots"])


def test_scan_table_and_csv(capsys, tmp_path: Path) -> None:
    path = tmp_path / "roots.csv"
    code, out, err = run(capsys, "scan", "(x-2)^2*(x+1)", "--from", "-3", "--to", "3",
                         "--csv", str(path))
    assert code == 0, err
    assert "multiplicity" in out
    lines = path.read_text().splitlines()
    rows = list(csv.DictReader(ln for ln in lines if not ln.startswith("#")))
    assert [(r["kind"], float(r["x"]), int(r["multiplicity"])) for r in rows] == [
        ("root", -1.0, 1),
        ("root", pytest.approx(2.0, abs=1e-7), 2),
    ]


def test_worksheet_runs_with_flag_overrides(capsys) -> None:
    sample = SAMPLES / "cooling-water-friction.json"
    code, out, _ = run(capsys, "solve", "--worksheet", str(sample), "--method", "brent", "--json")
    assert code == 0
    data = json.loads(out)
    assert [r["method"] for r in data["runs"]] == ["brent"]
    assert data["parameters"]["Re"] == 1.2e5


BAD = [
    (["solve"], "EQUATION"),
    (["solve", "x^2 - 2", "--x0", "abc"], "not a number"),
    (["solve", "x^2 - 2", "--x0", "nan"], "finite"),
    (["solve", "x^2 - 2", "--method", "magic"], "unknown method"),
    (["solve", "x^2 - 2", "--param", "c"], "NAME=VALUE"),
    (["solve", "x^2 - 2", "--param", "c=two"], "not a number"),
    (["solve", "x^2 - 2", "--max-iter", "0"], "from 1"),
    (["solve", "x^2 - 2", "--damping", "2"], "damping"),
    (["solve", "x^2 - 2", "--bracket", "1"], "expected 2"),
    (["solve", "x^2 - 2", "--bogus"], "unrecognized"),
    (["solve", "x^2 - y"], "x"),  # two unknowns: the message lists the candidates
    (["solve", "x^^2"], "column"),
    (["solve", "__import__('os')"], ""),
    (["solve", "--worksheet", "/no/such/file.json"], "no such file"),
    (["scan", "x - 1"], "--from"),
    (["scan", "x - 1", "--from", "2", "--to", "1"], "less than"),
    (["report", "/no/such.json", "--pdf", "out.pdf"], "no such file"),
    (["frobnicate"], "invalid choice"),
]


@pytest.mark.parametrize(("argv", "says"), BAD, ids=[" ".join(a) for a, _ in BAD])
def test_bad_input_exits_2_with_one_line(capsys, argv: list[str], says: str) -> None:
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert out == ""
    assert len(err.strip().splitlines()) == 1
    assert "Traceback" not in err
    assert says in err


def test_console_script_exit_code_and_no_traceback() -> None:
    proc = subprocess.run(
        [sys.executable, "-m", "app.cli", "solve", "x^2 - 2", "--x0", "(1"],
        capture_output=True, text=True, timeout=120,
    )
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr and len(proc.stderr.strip().splitlines()) == 1


def test_numpy_warnings_do_not_leak_and_domain_errors_are_results() -> None:
    # sqrt of a negative and ln of zero inside every method and the scan: results, no warnings.
    proc = subprocess.run(
        [sys.executable, "-W", "default", "-m", "app.cli", "solve", "sqrt(x) + ln(x) - 1",
         "--x0", "-1", "--bracket", "-1", "2", "--method", "newton", "--method", "secant",
         "--method", "brent", "--json"],
        capture_output=True, text=True, timeout=120,
    )
    assert proc.returncode == 0
    assert proc.stderr == ""
    runs = {r["method"]: r for r in json.loads(proc.stdout)["runs"]}
    assert runs["newton"]["reason"] == "not_finite" and not runs["newton"]["converged"]
    scan = subprocess.run(
        [sys.executable, "-W", "default", "-m", "app.cli", "scan", "sqrt(x) + ln(x) - 1",
         "--from", "-1", "--to", "3", "--json"],
        capture_output=True, text=True, timeout=120,
    )
    assert scan.returncode == 0 and scan.stderr == ""
    data = json.loads(scan.stdout)
    # The one root of sqrt(x) + ln(x) = 1 is x = 1 exactly (sqrt(1) + ln(1) = 1; by inspection).
    assert [r["x"] for r in data["roots"]] == [pytest.approx(1.0, abs=1e-15)]
    assert data["gaps"] and data["gaps"][0][0] == -1.0  # undefined for x < 0, said so


def test_unwritable_output_is_one_line_and_exit_2(capsys, tmp_path: Path) -> None:
    code, _, err = run(capsys, "solve", "x - 1", "--x0", "0", "--csv", "/proc/zerotrace-log.csv")
    assert code == 2 and "cannot write" in err and len(err.strip().splitlines()) == 1
    missing = str(tmp_path / "no" / "l.csv")
    code, _, err = run(capsys, "solve", "x - 1", "--x0", "0", "--csv", missing)
    assert code == 2 and "does not exist" in err
    code, _, err = run(capsys, "solve", "x - 1", "--x0", "0", "--csv", str(tmp_path))
    assert code == 2 and "is a folder" in err


def test_a_hostile_worksheet_runs_nothing_and_exits_2(capsys, tmp_path: Path) -> None:
    sentinel = tmp_path / "pwned"
    sheet = json.loads((SAMPLES / "project-irr.json").read_text("utf-8"))
    sheet["equation"] = f"__import__('os').system('touch {sentinel}')"
    sheet["parameters"].append({"name": "__class__", "value": 1.0})
    path = tmp_path / "from a colleague.json"
    path.write_text(json.dumps(sheet), "utf-8")
    code, out, err = run(capsys, "solve", "--worksheet", str(path))
    assert code == 2 and "parameter 9, name: '__class__'" in err  # refused at load, named
    sheet["parameters"].pop()
    path.write_text(json.dumps(sheet), "utf-8")
    code, out, err = run(capsys, "solve", "--worksheet", str(path))
    assert code == 2 and out == "" and len(err.strip().splitlines()) == 1
    code, _, err = run(capsys, "report", str(path), "--pdf", str(tmp_path / "sheet.pdf"))
    assert code == 2
    assert not sentinel.exists() and not (tmp_path / "sheet.pdf").exists()


def test_scan_json_of_a_hard_case_is_valid_and_samples_can_be_raised(capsys) -> None:
    # sin(1/x) has its zeros at 1/(n pi) (elementary); near 1e-4 they are closer than any
    # default sampling, so the scan must warn, and stay valid JSON (sample counts are ints).
    code, out, _ = run(capsys, "scan", "sin(1/x)", "--from", "1e-3", "--to", "1", "--json")
    assert code == 0
    coarse = json.loads(out)
    assert isinstance(coarse["samples"], int)
    code, out, _ = run(capsys, "scan", "sin(1/x)", "--from", "1e-3", "--to", "1",
                       "--samples", "100001", "--json")
    fine = json.loads(out)
    expected = sorted(1 / (n * math.pi) for n in range(1, 319))  # 1/(n pi) in [1e-3, 1]
    assert fine["samples"] > coarse["samples"]
    np.testing.assert_allclose([r["x"] for r in fine["roots"]], expected, rtol=1e-12)
    code, _, err = run(capsys, "scan", "x", "--from", "0", "--to", "1", "--samples", "2")
    assert code == 2 and "from 3" in err


def test_an_internal_defect_is_one_line_not_a_traceback(capsys, monkeypatch) -> None:
    import app.cli

    def broken(args):
        raise TypeError("something we did not foresee")

    monkeypatch.setitem(app.cli.COMMANDS, "solve", broken)
    code, out, err = run(capsys, "solve", "x - 1")
    assert code == 1 and out == ""
    assert err.strip().splitlines() == [
        "internal error (TypeError: something we did not foresee); please report it with the "
        "command line"
    ]


# --- Parameter names (found by a new-user trial) -------------------------------------------


def test_a_parameter_name_in_the_wrong_case_is_named(capsys) -> None:
    code, _out, err = run(capsys, "solve", "x^2 = a", "--unknown", "x", "--param", "A=4",
                          "--x0", "1")
    assert code == 2
    assert "no value for 'a'" in err
    assert "did you mean 'a'? 'A' is not in the equation" in err
    # The same hint when the unknown is to be inferred, and in a system.
    code, _out, err = run(capsys, "solve", "x^2 = eps", "--param", "esp=4", "--x0", "1")
    assert code == 2 and "did you mean 'eps'? 'esp' is not in the equation" in err
    code, _out, err = run(capsys, "solve", "x + y = a; x - y = 1", "--unknown", "x",
                          "--unknown", "y", "--param", "A=3", "--x0", "x=1", "--x0", "y=1")
    assert code == 2 and "did you mean 'a'?" in err


def test_a_name_the_equation_uses_is_never_called_a_misspelling(capsys) -> None:
    """h is in the equation beside hf: the hint must not say "'h' is not in the equation"
    (a review found it did); likewise a with A both in the text."""
    code, _out, err = run(capsys, "solve", "hf = f*L/D*V^2/(2*g) + h", "--unknown", "D",
                          "--param", "h=1", "--param", "f=0.02", "--param", "L=10",
                          "--param", "V=1", "--param", "g=9.8", "--x0", "1")
    assert code == 2 and "no value for 'hf'" in err and "did you mean" not in err
    code, _out, err = run(capsys, "solve", "x = a + A", "--unknown", "x", "--param", "a=1",
                          "--x0", "1")
    assert code == 2 and "no value for 'A'" in err and "did you mean" not in err


def test_an_unused_parameter_is_noted_and_the_run_goes_on(capsys) -> None:
    code, out, err = run(capsys, "solve", "x^2 = a", "--param", "a=4", "--param", "b=3",
                         "--x0", "1", "--method", "newton", "--json")
    assert code == 0
    assert "note: parameter 'b' is not used by the equation" in err
    assert json.loads(out)["runs"][0]["root"] == pytest.approx(2.0, rel=1e-15)  # sqrt(4)
    _code, _out, err = run(capsys, "solve", "x^2 = a", "--param", "a=4", "--x0", "1")
    assert "not used" not in err


@pytest.mark.parametrize("command", [["solve", "x^2 = a"],
                                     ["sweep", "x^2 = a*b", "--vary", "b=1:2:3"]])
def test_a_parameter_given_twice_exits_2_naming_it(capsys, command) -> None:
    code, out, err = run(capsys, *command, "--param", "a=1", "--param", "a=4", "--x0", "1")
    assert code == 2 and out == ""
    assert err.strip() == "error: --param a is given more than once; give each parameter once"


def test_figures_asked_for_are_all_printed_trailing_zeros_included(capsys) -> None:
    # x^2 = 6.25: the root 2.5 (closed form) to 6 significant figures is 2.50000
    assert main(["solve", "x^2 = 6.25", "--x0", "2", "--method", "newton", "--figures",
                 "6"]) == 0
    row = next(line for line in capsys.readouterr().out.splitlines()
               if line.startswith("Newton"))
    assert row.split()[1] == "2.50000"


def _help(capsys, command: str) -> str:
    with pytest.raises(SystemExit):
        main([command, "--help"])
    return " ".join(capsys.readouterr().out.split())


def test_help_offers_systems_only_where_a_system_is_solved(capsys) -> None:
    # Outside reference: the README's usage ("Systems of equations": `solve` with --unknown
    # repeated, --x0 NAME=VALUE, --method newton / broyden; scan, batch and sweep take one
    # equation in one unknown). Each command's --help must say the same.
    solve_help = _help(capsys, "solve")
    assert "repeat for a system" in solve_help
    assert "NAME=U for an unknown of a system" in solve_help
    assert "for a system newton, broyden" in solve_help
    for command in ("scan", "batch", "sweep"):
        shown = _help(capsys, command)
        assert "system" not in shown, f"{command} --help offers a system it refuses"
        assert "--unknown X the name to solve for" in shown


def test_scan_refuses_a_system_by_saying_where_systems_are_solved(capsys) -> None:
    # scan samples f of one unknown: two unknowns, or a worksheet that holds a system, are
    # refused (exit 2, one line) with the command that solves them, never an unrelated
    # complaint about definitions (README: "bad input exits 2 with one line on stderr").
    code, _, err = run(capsys, "scan", "x^2 + y^2 = 4; x*y = 1", "--unknown", "x",
                       "--unknown", "y", "--from", "0", "--to", "3")
    assert code == 2 and "zerotrace solve" in err and len(err.strip().splitlines()) == 1
    system = SAMPLES / "systems" / "pump-two-parallel-lines.json"
    code, _, err = run(capsys, "scan", "--worksheet", str(system), "--from", "0", "--to", "1")
    assert code == 2 and "holds a system of equations" in err and "zerotrace solve" in err


@pytest.mark.parametrize("flag, value, words", [
    ("--xtol", "-1", "'-1' must not be negative"),
    ("--max-iter", "-3", "'-3' must be a whole number"),
])
def test_a_refused_negative_setting_is_quoted_as_typed(capsys, flag, value, words) -> None:
    # A value beginning with '-' is marked internally so that argparse does not take it for
    # an option; the refusal must quote what the user typed (common practice: an error
    # message repeats the input verbatim), not the marked form with a leading space.
    code, _, err = run(capsys, "solve", "x^2 - 2", "--x0", "1", flag, value)
    assert code == 2 and words in err and f"' {value}'" not in err


def test_a_function_near_the_largest_double_prints_no_numpy_warning(capsys, tmp_path) -> None:
    """1e300 x = 1e308 sampled over [-5, 5]: the start-value look multiplied neighbouring
    samples (|f| ~ 1e300 each) and the sheet's plot and axis ticks overflowed, each a
    RuntimeWarning with a line of source on the user's terminal. The solve and the sheet
    say what they found and nothing else; the root is 1e8 (1e308 / 1e300, by hand)."""
    import warnings

    sheet = tmp_path / "large.json"
    sheet.write_text(json.dumps({"format": "zerotrace-worksheet", "version": 1,
                                 "equation": "1e300*x = 1e308", "unknown": "x",
                                 "settings": {"methods": ["newton", "secant"]},
                                 "scan": {"from": -5, "to": 5}}), encoding="utf-8")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        code, out, err = run(capsys, "solve", "--worksheet", str(sheet), "--json")
        assert code == 0, err
        runs = json.loads(out)["runs"]
        assert any(r["converged"] and r["root"] == pytest.approx(1e8, rel=1e-12)
                   for r in runs), runs
        code, _, err = run(capsys, "report", str(sheet), "--pdf", str(tmp_path / "large.pdf"))
        assert code == 0, err
    assert [str(w.message) for w in caught if issubclass(w.category, RuntimeWarning)] == []


@pytest.mark.parametrize("argv", [
    ["solve", "x^2 - 2", "--x0", "1_0"],
    ["solve", "x^2 - 2", "--bracket", "0", "1_0"],
    ["solve", "x^2 - 2", "--xtol", "1_0"],
    ["solve", "x^2 - 2", "--x0", "\u0661"],  # ARABIC-INDIC DIGIT ONE: float() reads 1
    ["scan", "x^2 - 2", "--from", "1_0", "--to", "20"],
    ["scan", "x^2 - 2", "--from", "0", "--to", "3", "--samples", "1_000"],
    ["batch", "x^2 - a", "--table", "t.csv", "--x0", "1_0"],
    ["sweep", "x^2 - a", "--vary", "a=1_0:20:3", "--x0", "1"],
    ["sweep", "x^2 - a", "--vary", "a=1:2:3", "--x0", "1", "--within", "0", "1_0"],
])
def test_every_number_flag_takes_the_fields_rule_not_floats(capsys, argv) -> None:
    """float() reads '1_0' as 10 and '\u0661' as 1: `scan --from 1_0` scanned [10, 20] where
    the window's fields and --param refuse the same text. Every number on the command
    line is a plain number now (ASCII digits, point, exponent), refused in one line."""
    code, _, err = run(capsys, *argv)
    assert code == 2 and err.count("\n") == 1, err
    assert "is not a" in err and ("1_0" in err or "1_000" in err or "\u0661" in err), err


def test_a_typographic_minus_is_read_as_the_fields_read_it(capsys) -> None:
    # x^2 = 2 from -1.5 (typed with U+2212): Newton goes to -sqrt(2) (by hand)
    code, out, err = run(capsys, "solve", "x^2 - 2", "--x0", "\u22121.5", "--method",
                         "newton", "--json")
    assert code == 0, err
    assert json.loads(out)["runs"][0]["root"] == pytest.approx(-math.sqrt(2), rel=1e-15)


@pytest.mark.parametrize("command, extra, advice", [
    ("solve", [], "give each a start value (--x0 x=VALUE --x0 y=VALUE)"),
    ("scan", ["--from", "0", "--to", "3"], "zerotrace solve solves systems"),
])
def test_several_equations_without_their_unknowns_are_named_a_system(capsys, command, extra,
                                                                      advice):
    # x^2 + y^2 = 4 and x*y = 1 typed without --unknown twice read as one equation with
    # definitions before it, and the refusal said only that a line must define a name;
    # it now says the text is a system in x and y, and what to type (README: Systems).
    code, _, err = run(capsys, command, "x^2 + y^2 = 4; x*y = 1", *extra)
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert "a system of 2 equations in x, y" in err and advice in err
    # with the start values named, solve gives the root (closed form: x^2 + 1/x^2 = 4,
    # x = sqrt(2 + sqrt 3) from x = 2, y = 1/x)
    if command == "solve":
        code, out, err = run(capsys, "solve", "x^2 + y^2 = 4; x*y = 1", "--x0", "x=2",
                             "--x0", "y=0.3", "--json")
        assert code == 0, err
        root = json.loads(out)["runs"][0]["root"]
        assert root["x"] == pytest.approx(math.sqrt(2 + math.sqrt(3)), rel=1e-12)
        assert root["y"] == pytest.approx(1 / math.sqrt(2 + math.sqrt(3)), rel=1e-12)
